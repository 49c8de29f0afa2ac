//! The direct potential fit as an estimator: a Morse/long-range curve fitted to all the levels
//! (or spacings) by solving the radial Schrödinger equation in it ([`crate::potential::dpf`]);
//! D0 = De − E(v = 0) of the fitted curve.
//!
//! Levels alone do not fix the position of the well: r_e is the user's value, held fixed, or is
//! fitted with the given B_v (from a start √(C_u/(μ B_e)), B_e extrapolated from the lowest B_v);
//! without either the estimate is listed with that reason and no value. The tail is C_n/rⁿ with n the
//! long-range exponent of the analysis; C_n is held at a given theoretical value, or fitted (as a
//! factor on a start that puts β∞ = 1). σ and Monte Carlo draws use the fit's sensitivity to the
//! data: a draw is the first-order (Gauss–Newton) refit, exact to first order in the data errors.

use super::{Estimator, Fitted, vs};
use crate::analysis::prepare::Prepared;
use crate::constants::C_U_CM1_U_A2;
use crate::dunham::DataKind;
use crate::extrapolate::lm::Whitener;
use crate::extrapolate::{Limit, Lin, LinearEstimator, Nominal};
use crate::potential::dpf::{self, DpfData, DpfFit, DpfSpec};
use crate::potential::{LongRangeTerm, SolverSettings, solve_levels};
use crate::recommend::{Family, FitEvidence};
use crate::report::{Curve, FittedParameter, PotentialFitDetails, PotentialFitRow, ValueSigma};

/// The direct fit, with C_n fitted or held at a given value.
pub(super) struct PotentialFit {
    n: u32,
    cn_given: Option<f64>,
    re_angstrom: f64,
    re_source: String,
    mu_u: f64,
}

/// One instance when the fit is switched on, a mass is known and n is a whole number; without
/// r_e or B_v it gives no value and says what it needs.
pub(super) fn instances(p: &Prepared, _warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    let s = p.settings;
    if !s.potential_fit {
        return Vec::new();
    }
    let Some(mu_u) = p.mu_u else {
        return Vec::new();
    };
    let n = s.lb_n;
    if n.fract() != 0.0 || !(1.0..=12.0).contains(&n) || p.data.v.iter().any(|v| v.fract() != 0.0) {
        return Vec::new();
    }
    let re = match (s.re_angstrom, p.be_for_re) {
        (Some(re), _) => Some((re, "re given by the user, held fixed".to_string())),
        (None, Some(be)) if be > 0.0 => Some((
            (C_U_CM1_U_A2 / (mu_u * be)).sqrt(),
            format!(
                "re fitted with the given B_v (weighted with σ = {B_RELATIVE_SIGMA:e} × B_v, as no uncertainty is given for them), from a start √(C_u/(μ B_e)) with B_e = {be:.6} cm⁻¹ extrapolated from the lowest B_v"
            ),
        )),
        _ => None,
    };
    let (re_angstrom, re_source) = re.unwrap_or((f64::NAN, String::new()));
    vec![Box::new(PotentialFit {
        n: n as u32,
        cn_given: s.lb_cn_cm1_an,
        re_angstrom,
        re_source,
        mu_u,
    })]
}

impl Estimator for PotentialFit {
    fn method(&self) -> &'static str {
        if self.cn_given.is_some() {
            "potential-fit-mlr-cn-fixed"
        } else {
            "potential-fit-mlr"
        }
    }

    fn label(&self) -> String {
        match self.cn_given {
            Some(c) => format!(
                "direct fit of an MLR potential, n = {}, C_n = {c} cm⁻¹Åⁿ fixed",
                self.n
            ),
            None => format!("direct fit of an MLR potential, n = {}, C_n fitted", self.n),
        }
    }

    fn family(&self) -> Family {
        Family::PotentialFit
    }

    fn assumption(&self, _p: &Prepared) -> Option<String> {
        self.re_angstrom.is_finite().then(|| format!(
            "the direct potential fit assumes the levels are those of one Morse/long-range curve whose outer wall becomes De − C_n/rⁿ with n = {}, its exponent a polynomial in a radial variable; {}",
            self.n, self.re_source
        ))
    }

    fn what(&self, _p: &Prepared) -> String {
        "D0 = De − E(v = 0) of the Morse/long-range curve whose levels, from the radial Schrödinger equation, fit the data; σ from the fit's sensitivity to the data".into()
    }

    fn fit(&self, p: &Prepared, _warnings: &mut Vec<String>) -> Fitted {
        let failed = |reason: String| Fitted {
            prescaled: true,
            ..Fitted::no_limit(reason)
        };
        if !self.re_angstrom.is_finite() {
            return failed("a potential curve needs the equilibrium distance r_e or rotational constants B_v (a B column) to fix the position of the well: vibrational levels alone fix only its width".into());
        }
        let Some(whitener) = Whitener::from_cov(&p.data.cov) else {
            return failed("the data covariance is not positive definite".into());
        };
        let sigma_min = (0..p.n())
            .map(|i| (p.data.cov[(i, i)] * p.factor2.max(1e-300)).sqrt())
            .fold(f64::INFINITY, f64::min);
        let data = DpfData::new(
            p.data.kind,
            p.data.v.iter().map(|v| *v as u32).collect(),
            p.data.y.clone(),
            whitener,
            sigma_min,
        )
        .with_rotation(self.rotation(p));
        let (spec, de0, b0) = self.start(p);
        let f = match dpf::fit(&spec, &data, de0, b0) {
            Ok(f) => f,
            Err(why) => return failed(why),
        };
        let own_chi2r = (f.dof > 0).then(|| f.chi2 / f.dof as f64);
        let rel = p.rel_of(p.policy(own_chi2r.unwrap_or(1.0)));
        let lin = |g: Vec<f64>, value: f64| Lin {
            value,
            grad: f.data_gradient(&g) * rel,
        };
        let d0 = lin(f.d0_grad(), f.d0_cm1());
        let de = lin(f.de_grad(), f.mlr.de_cm1);
        let nominal = Nominal::Limit(Limit {
            d0: d0.clone(),
            de: de.clone(),
            v_d: None,
        });
        let (curve, level_curve) = self.curves(p, &f);
        Fitted {
            order: Some(f.mlr.beta.len()),
            nominal,
            potential_fit: Some(self.details(p, &data, &f, rel)),
            redraw: Some(Box::new(LinearEstimator { d0, de })),
            curve,
            level_curve,
            own_fit: Some(FitEvidence {
                chi2: f.chi2,
                dof: f.dof,
                points: data.v.len(),
                converged: f.termination.converged(),
            }),
            own_chi2r,
            cn_fitted: self
                .cn_given
                .is_none()
                .then(|| f.mlr.tail[0].c_cm1_angstrom_m),
            prescaled: true,
            ..Fitted::no_limit("")
        }
    }
}

/// Relative σ given to B_v in the fit when the data carry no uncertainty for them (common
/// practice, no source: rotational constants from band analyses are rarely better than 10⁻⁴).
const B_RELATIVE_SIGMA: f64 = 1e-3;

impl PotentialFit {
    /// The given B_v as fit data (v, B_v, σ), when r_e is not the user's: they fix the position of
    /// the well, so r_e is fitted with them.
    fn rotation(&self, p: &Prepared) -> Vec<(u32, f64, f64)> {
        if p.settings.re_angstrom.is_some() || p.data.kind != DataKind::Levels {
            return Vec::new();
        }
        p.bv.iter()
            .filter(|(v, b)| v.fract() == 0.0 && *v >= 0.0 && b.is_finite() && *b > 0.0)
            .map(|&(v, b)| (v as u32, b, B_RELATIVE_SIGMA * b))
            .collect()
    }

    /// The fixed parts and the starting De and β_0 from ωe, ωexe of the selected polynomial.
    fn start(&self, p: &Prepared) -> (DpfSpec, f64, f64) {
        let (y, _) = p.sel.dunham();
        let we = y.get(1).copied().unwrap_or(0.0);
        let wexe = -y.get(2).copied().unwrap_or(0.0);
        let top_above_min = p
            .top_x
            .as_ref()
            .map_or(p.ctx.observed_span, |t| t.value - p.ctx.e0.value)
            + p.ctx.zero_point.value;
        let re = self.re_angstrom;
        let guess_de = (1.1 * top_above_min).max(1.0);
        // Without a given C_n the start puts β∞ = ln(2De/u(re)) at 1.
        let cn = self
            .cn_given
            .unwrap_or(2.0 * guess_de * re.powi(self.n as i32) / std::f64::consts::E);
        let tail = vec![LongRangeTerm {
            m: self.n,
            c_cm1_angstrom_m: cn,
        }];
        let spec = DpfSpec::defaults(self.mu_u, re, tail, self.cn_given.is_none());
        let (de0, b0) = dpf::start(&spec, we, wexe, top_above_min);
        (spec, de0, b0)
    }

    /// The fitted curve's spacings and levels (on the data's energy scale) for the figures.
    fn curves(&self, p: &Prepared, f: &DpfFit) -> (Option<Curve>, Option<Curve>) {
        let s = SolverSettings {
            wavefunction_points: 0,
            ..SolverSettings::default()
        };
        let Ok(set) = solve_levels(&f.mlr, self.mu_u, &s) else {
            return (None, None);
        };
        let e: Vec<f64> = set.levels.iter().map(|l| l.energy_cm1).collect();
        let origin = match p.data.kind {
            DataKind::Levels => f.theta[f.theta.len() - 1],
            DataKind::Spacings => p.ctx.e0.value - f.e0_cm1,
        };
        let mk = |points: Vec<[f64; 2]>| Curve {
            method: self.method().into(),
            label: self.label(),
            points,
            v_d: None,
        };
        let spacing = e
            .windows(2)
            .enumerate()
            .map(|(v, w)| [v as f64 + 0.5, w[1] - w[0]])
            .collect();
        let mut levels: Vec<[f64; 2]> = e
            .iter()
            .enumerate()
            .map(|(v, x)| [v as f64, origin + x])
            .collect();
        levels.push([e.len() as f64, origin + f.mlr.de_cm1]);
        (Some(mk(spacing)), Some(mk(levels)))
    }

    fn details(&self, p: &Prepared, data: &DpfData, f: &DpfFit, rel: f64) -> PotentialFitDetails {
        let cov = p.cov_opt();
        let param = |k: usize| {
            let mut g = vec![0.0; f.theta.len()];
            g[k] = 1.0;
            vs(
                &Lin {
                    value: f.theta[k],
                    grad: f.data_gradient(&g) * rel,
                },
                cov,
            )
        };
        let nb = f.mlr.beta.len();
        let mut parameters = vec![FittedParameter {
            name: "De".into(),
            unit: "cm⁻¹".into(),
            value: param(0),
        }];
        for i in 0..nb {
            parameters.push(FittedParameter {
                name: format!("β{i}"),
                unit: String::new(),
                value: param(1 + i),
            });
        }
        let cn = if self.cn_given.is_none() {
            // C_n = C_start·λ: its relative σ is that of ln λ.
            let l = param(1 + nb);
            let c = f.mlr.tail[0].c_cm1_angstrom_m;
            let c_vs = ValueSigma::new(c, l.sigma.map(|s| s * c));
            parameters.push(FittedParameter {
                name: format!("C{}", self.n),
                unit: format!("cm⁻¹ Å{}", superscript(self.n)),
                value: c_vs.clone(),
            });
            c_vs
        } else {
            ValueSigma::new(f.mlr.tail[0].c_cm1_angstrom_m, None)
        };
        if f.re_fitted.is_some() {
            parameters.push(FittedParameter {
                name: "re".into(),
                unit: "Å".into(),
                value: param(1 + nb + usize::from(self.cn_given.is_none())),
            });
        }
        let b_of: std::collections::BTreeMap<u32, (f64, f64)> = data
            .rotation
            .iter()
            .zip(&f.b_calc)
            .map(|(r, c)| (r.0, (r.1, *c)))
            .collect();
        let rows = data
            .v
            .iter()
            .zip(data.y.iter().zip(&f.calc))
            .map(|(&v, (&o, &c))| PotentialFitRow {
                v,
                observed_cm1: o,
                calculated_cm1: c,
                b_observed_cm1: b_of.get(&v).map(|b| b.0),
                b_calculated_cm1: b_of.get(&v).map(|b| b.1),
            })
            .collect();
        PotentialFitDetails {
            curve: f.mlr.clone(),
            parameters,
            cn_cm1_an: cn,
            cn_fixed: self.cn_given.is_some(),
            re_source: self.re_source.clone(),
            beta_terms: nb,
            orders: f.orders.clone(),
            chi2: f.chi2,
            dof: f.dof,
            converged: f.termination.converged(),
            evaluations: f.evaluations,
            bound_levels: f.bound_levels,
            e0_cm1: f.e0_cm1,
            rows,
        }
    }
}

fn superscript(n: u32) -> String {
    const D: [char; 10] = ['⁰', '¹', '²', '³', '⁴', '⁵', '⁶', '⁷', '⁸', '⁹'];
    n.to_string()
        .chars()
        .map(|c| D[c.to_digit(10).unwrap_or(0) as usize])
        .collect()
}
