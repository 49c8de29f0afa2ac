//! LeRoy–Bernstein fits of the top levels, G(v) = D − X0 (v_D − v)^{2n/(n−2)}: n fixed (the
//! primary fit), n free, another choice of top levels, and C_n fixed from theory.

use super::{Estimator, Fitted, sample, vs};
use crate::analysis::prepare::Prepared;
use crate::constants::BOHR_ANGSTROM;
use crate::extrapolate::near_dissociation::{self as nd, LbFit, LbOutcome, LbVariant};
use crate::extrapolate::{Context, Limit, Lin, Nominal};
use crate::recommend::{Family, FitEvidence};
use crate::report::{Curve, LbDetails, ValueSigma};

/// One LeRoy–Bernstein fit of the top `levels` levels.
pub(super) struct LeroyBernstein {
    method: &'static str,
    label: String,
    primary: bool,
    variant: LbVariant,
    levels: usize,
}

/// The fits the settings call for: n fixed always; n free when asked; a second choice of top
/// levels when there are enough; C_n fixed when a C_n and the reduced mass are given.
pub(super) fn instances(p: &Prepared, warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    let s = p.settings;
    let n_levels = p.view.as_ref().map(|w| w.v.len()).unwrap_or(0);
    let k_auto = 4usize.max(n_levels.div_ceil(3)).min(n_levels);
    let k_top = s.lb_top_levels.map(|k| k as usize).unwrap_or(k_auto);
    let fit = |method, label, primary, variant, levels| -> Box<dyn Estimator> {
        Box::new(LeroyBernstein {
            method,
            label,
            primary,
            variant,
            levels,
        })
    };
    let mut all = vec![fit(
        "leroy-bernstein",
        format!(
            "LeRoy–Bernstein near-dissociation fit, n = {} fixed",
            s.lb_n
        ),
        true,
        LbVariant::FixedN { n: s.lb_n },
        k_top,
    )];
    if s.lb_fit_n_free {
        all.push(fit(
            "leroy-bernstein-n-free",
            "LeRoy–Bernstein fit with n free".into(),
            false,
            LbVariant::FreeN { n_start: s.lb_n },
            k_top.max(5),
        ));
    }
    let k_alt = if n_levels > k_top {
        n_levels.min(k_top + (k_top / 2).max(2))
    } else {
        k_top.saturating_sub(1)
    };
    if k_alt >= 4 && k_alt != k_top {
        all.push(fit(
            "leroy-bernstein-alt-levels",
            format!(
                "LeRoy–Bernstein, n = {} fixed, top {k_alt} levels instead of {k_top}",
                s.lb_n
            ),
            false,
            LbVariant::FixedN { n: s.lb_n },
            k_alt,
        ));
    }
    if let Some(d) = s.asymptote_cm1 {
        all.push(fit(
            "leroy-bernstein-known-asymptote",
            format!(
                "LeRoy–Bernstein, n = {} fixed, asymptote held at {d} cm⁻¹ (given)",
                s.lb_n
            ),
            false,
            LbVariant::KnownD { n: s.lb_n, d },
            k_top.max(3),
        ));
    }
    if let Some(cn) = s.lb_cn_cm1_an {
        match p.mu_u {
            Some(mu) => all.push(fit(
                "leroy-bernstein-cn-fixed",
                format!("LeRoy–Bernstein, n = {} and C_n = {cn} cm⁻¹Åⁿ fixed", s.lb_n),
                false,
                LbVariant::FixedX0 {
                    n: s.lb_n,
                    x0: nd::x0_from_cn(s.lb_n, cn, mu),
                },
                k_top.max(3),
            )),
            None => warnings.push("a C_n was given but no reduced mass: the fit with C_n fixed needs μ and was skipped".into()),
        }
    }
    all
}

impl Estimator for LeroyBernstein {
    fn method(&self) -> &'static str {
        self.method
    }

    fn label(&self) -> String {
        self.label.clone()
    }

    fn family(&self) -> Family {
        Family::NearDissociation {
            primary: self.primary,
        }
    }

    fn assumption(&self, p: &Prepared) -> Option<String> {
        Some(format!(
            "the near-dissociation fits assume the fitted top levels lie where the potential is D − C_n/Rⁿ with n = {} (unless n is fitted)",
            p.settings.lb_n
        ))
    }

    fn what(&self, _p: &Prepared) -> String {
        "D0 = D − G(0) with D the asymptote of the near-dissociation fit; σ from its Jacobian"
            .into()
    }

    fn fit(&self, p: &Prepared, warnings: &mut Vec<String>) -> Fitted {
        let (variant, k) = (self.variant, self.levels);
        let Some(w) = &p.view else {
            return Fitted::no_limit("no levels can be rebuilt from spacings with a gap");
        };
        let n_levels = w.v.len();
        let need = variant.n_params() + 1;
        if k > n_levels || k < need {
            return Fitted::no_limit(format!(
                "needs {} levels (at least {need} for this variant); {n_levels} available",
                k.max(need)
            ));
        }
        let Some(input) = nd::top_input(w, k, &p.data.cov) else {
            return Fitted::no_limit(format!("needs {k} levels; {n_levels} available"));
        };
        let (n_val, n_fitted, cn_fixed) = match variant {
            LbVariant::FixedN { n } => (n, false, false),
            LbVariant::FreeN { n_start } => (n_start, true, false),
            LbVariant::FixedX0 { n, .. } => (n, false, true),
            LbVariant::KnownD { n, .. } => (n, false, false),
        };
        let mut details = LbDetails {
            n: ValueSigma::new(n_val, None),
            n_fitted,
            cn_fixed,
            levels_used: input.v.iter().map(|v| *v as u32).collect(),
            d_cm1: None,
            x0_cm1: None,
            cn_cm1_an: None,
            cn_au: None,
            top_binding_cm1: None,
            chi2: None,
            dof: None,
            termination: None,
            iterations: None,
            asymptote_known: matches!(variant, LbVariant::KnownD { .. }),
            v_d_fraction: None,
            scattering_length_angstrom: None,
            scattering_length_a0: None,
        };
        let f = match nd::fit(&input, variant) {
            LbOutcome::NoLimit {
                reason,
                termination,
            } => {
                details.termination = termination;
                return Fitted {
                    lb: Some(details),
                    ..Fitted::no_limit(reason)
                };
            }
            LbOutcome::Fit(f) => f,
        };
        // The asymptote D and v_D carry this fit's own σ factor; G(0) (e0_x) and the zero point
        // theirs.
        let cov_opt = p.cov_opt();
        let own_chi2r = (f.dof > 0).then(|| f.chi2 / f.dof as f64);
        let rel_lb = p.rel_of(own_chi2r.map_or(1.0, |c| p.policy(c)));
        let d_x = f.d.grad_scaled(rel_lb);
        let d0 = d_x.minus(&p.e0_x);
        fill_details(p, &f, &d_x, &mut details);
        if n_fitted
            && cov_opt.is_some()
            && let Some(s) = details.n.sigma
            && (details.n.value - n_val).abs() > 2.0 * s
        {
            warnings.push(format!(
                "the near-dissociation fit with n free gives n = {:.3} ± {:.3}, more than 2σ from the fixed n = {}: check n, or the choice of top levels",
                details.n.value, s, n_val
            ));
        }
        let x_first = input.v[0];
        let (dv, vdv, x0v, nv) = (f.d.value, f.v_d.value, f.x0.value, f.n.value);
        let nominal = if d0.value > 0.0 {
            let de = d0.plus(&p.ctx.zero_point);
            Nominal::Limit(Limit {
                d0,
                de,
                v_d: Some(f.v_d.grad_scaled(rel_lb)),
            })
        } else {
            Nominal::NoLimit(
                "the near-dissociation asymptote lies below the energy of v = 0".into(),
            )
        };
        let ctx_x = Context {
            e0: p.e0_x.clone(),
            ..p.ctx.clone()
        };
        let est = nd::LbEstimator::new(&input, variant, Some(&f), &ctx_x);
        let points = sample(x_first + 0.5, (vdv - 0.5).max(x_first + 0.5), 101, |x| {
            nd::model_value(dv, vdv, x0v, nv, x + 0.5) - nd::model_value(dv, vdv, x0v, nv, x - 0.5)
        });
        let lpoints = sample(x_first, vdv, 101, |v| nd::model_value(dv, vdv, x0v, nv, v));
        let cn_fitted = details
            .cn_cm1_an
            .as_ref()
            .filter(|_| !cn_fixed)
            .map(|c| c.value);
        let curve = |points| Curve {
            method: self.method.into(),
            label: self.label.clone(),
            points,
            v_d: Some(vdv),
        };
        Fitted {
            order: None,
            nominal,
            bs: None,
            lb: Some(details),
            expansion: None,
            potential_fit: None,
            redraw: Some(Box::new(est)),
            curve: Some(curve(points)),
            level_curve: Some(curve(lpoints)),
            lb_line: Some((nv, x0v, vdv, x_first)),
            own_fit: Some(FitEvidence {
                chi2: f.chi2,
                dof: f.dof,
                points: input.v.len(),
                converged: f.termination.converged(),
            }),
            n_fitted: n_fitted.then_some(nv),
            cn_fitted,
            own_chi2r,
            prescaled: true,
        }
    }
}

/// The fitted parameters with σ (unscaled: the report applies the estimate's own factor), v_D
/// mod 1, the top level's binding energy, and with μ the C_n and (n = 6) the scattering length.
fn fill_details(p: &Prepared, f: &LbFit, d_x: &Lin, details: &mut LbDetails) {
    let cov_opt = p.cov_opt();
    let (n_fitted, cn_fixed) = (details.n_fitted, details.cn_fixed);
    details.n = if n_fitted {
        vs(&f.n, cov_opt)
    } else {
        ValueSigma::new(f.n.value, None)
    };
    details.d_cm1 = Some(if details.asymptote_known {
        ValueSigma::new(f.d.value, None)
    } else {
        vs(&f.d, cov_opt)
    });
    details.v_d_fraction = Some(f.v_d.value - f.v_d.value.floor());
    details.x0_cm1 = Some(if cn_fixed {
        ValueSigma::new(f.x0.value, None)
    } else {
        vs(&f.x0, cov_opt)
    });
    details.chi2 = Some(f.chi2);
    details.dof = Some(f.dof);
    details.termination = Some(f.termination);
    details.iterations = Some(f.iterations);
    if let Some(top) = &p.top_x {
        details.top_binding_cm1 = Some(vs(&d_x.minus(top), cov_opt));
    }
    if let Some(mu) = p.mu_u {
        let cn = cn_of(&f.n, &f.x0, mu);
        let s = if cn_fixed {
            None
        } else {
            cov_opt.map(|c| cn.sigma(c))
        };
        details.cn_cm1_an = Some(ValueSigma::new(cn.value, s));
        let au = nd::cn_to_atomic_units(f.n.value, 1.0);
        details.cn_au = Some(ValueSigma::new(cn.value * au, s.map(|x| x * au)));
        if f.n.value == 6.0
            && let Some(a) = scattering_length(&f.v_d, &cn, mu)
        {
            let sa = cov_opt.map(|c| a.sigma(c));
            details.scattering_length_angstrom = Some(ValueSigma::new(a.value, sa));
            let b = 1.0 / BOHR_ANGSTROM;
            details.scattering_length_a0 = Some(ValueSigma::new(a.value * b, sa.map(|x| x * b)));
        }
    }
}

/// C_n from X0 and n as a function of the data: the gradient dC/dX0 · gX0 + dC/dn · gn (the
/// n-derivative by a central difference).
fn cn_of(n: &Lin, x0: &Lin, mu_u: f64) -> Lin {
    let nn = n.value;
    let cn = nd::cn_from_x0(nn, x0.value, mu_u);
    let dcdx = -(nn - 2.0) / 2.0 * cn / x0.value;
    let h = 1e-6 * nn;
    let dcdn = (nd::cn_from_x0(nn + h, x0.value, mu_u) - nd::cn_from_x0(nn - h, x0.value, mu_u))
        / (2.0 * h);
    Lin {
        value: cn,
        grad: &x0.grad * dcdx + &n.grad * dcdn,
    }
}

/// The n = 6 scattering length from v_D and C_6 as a function of the data (`None` at a pole):
/// ∂a/∂v_D = −π ā sec²(Φ − π/8), ∂a/∂C_6 = a/(4 C_6) (ā ∝ C_6^{1/4}).
fn scattering_length(v_d: &Lin, c6: &Lin, mu_u: f64) -> Option<Lin> {
    use std::f64::consts::PI;
    let a = nd::scattering_length_angstrom(6.0, c6.value, mu_u, v_d.value);
    let abar = nd::mean_scattering_length_angstrom(6.0, c6.value, mu_u);
    let c = (PI * (v_d.value + 0.5) - PI / 8.0).cos();
    let da_dvd = -PI * abar / (c * c);
    let da_dc6 = a / (4.0 * c6.value);
    let grad = &v_d.grad * da_dvd + &c6.grad * da_dc6;
    (a.is_finite() && grad.iter().all(|g| g.is_finite())).then_some(Lin { value: a, grad })
}
