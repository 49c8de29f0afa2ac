//! Stage 6 of the analysis: the [`Report`] — every estimate with its σ, the constants, Morse
//! parameters, residuals, levels and spacings, the figures' series, and what the numbers rest on.

use nalgebra::DMatrix;

use super::estimators::{Work, sample, vs};
use super::prepare::Prepared;
use super::{SigmaSource, fit_be};
use crate::constants::CODATA_YEAR;
use crate::dunham::DataKind;
use crate::extrapolate::Nominal;
use crate::extrapolate::near_dissociation as nd;
use crate::montecarlo;
use crate::recommend::{Assessment, Family};
use crate::report::*;
use crate::settings::SigmaScaling;
use crate::spacings::spacings_from_levels;

use super::assess::Scales;

/// The figures' curves of the estimates, and the LeRoy–Bernstein line to linearise.
struct EstimateCurves {
    spacing: Vec<Curve>,
    level: Vec<Curve>,
    lb_line: Option<(String, (f64, f64, f64, f64))>,
}

/// Every estimate as the document states it, with its σ scaled by its own factor.
fn estimates(
    p: &Prepared,
    works: Vec<Work>,
    scales: &Scales,
    assessment: &Assessment,
) -> (Vec<Estimate>, EstimateCurves) {
    let cov_opt = p.cov_opt();
    let mut out = Vec::new();
    let mut curves = EstimateCurves {
        spacing: Vec::new(),
        level: Vec::new(),
        lb_line: None,
    };
    for (i, w) in works.into_iter().enumerate() {
        let (def, def_reason) = assessment.defensible[i].clone();
        let (r, r_lin) = (scales.rel[i], scales.lin_rel[i]);
        let mut f = w.fit;
        let rescale = |x: &mut Option<ValueSigma>| {
            if let Some(v) = x.as_mut() {
                v.sigma = v.sigma.map(|s| s * r);
            }
        };
        if let Some(bs) = f.bs.as_mut() {
            rescale(&mut bs.line_intercept_cm1);
            rescale(&mut bs.line_slope_cm1);
        }
        if let Some(lb) = f.lb.as_mut() {
            if lb.n_fitted {
                lb.n.sigma = lb.n.sigma.map(|s| s * r);
            }
            rescale(&mut lb.d_cm1);
            rescale(&mut lb.scattering_length_angstrom);
            rescale(&mut lb.scattering_length_a0);
            if !lb.cn_fixed {
                rescale(&mut lb.x0_cm1);
                rescale(&mut lb.cn_cm1_an);
                rescale(&mut lb.cn_au);
            }
            // top_binding_cm1 was built from the prescaled parts.
        }
        let mut e = Estimate {
            method: w.method.into(),
            label: w.label,
            order: f.order,
            d0_cm1: None,
            d0_sigma_cm1: None,
            de_cm1: None,
            de_sigma_cm1: None,
            v_d: None,
            v_d_sigma: None,
            n_bound: None,
            extrapolated_fraction: None,
            reason: String::new(),
            defensible: def,
            defensible_reason: def_reason,
            sigma_scale: p.estimable.then(|| scales.own_factor2[i].sqrt()),
            monte_carlo: w.mc,
            birge_sponer: f.bs,
            leroy_bernstein: f.lb,
            expansion: f.expansion,
            potential_fit: f.potential_fit,
        };
        match &f.nominal {
            Nominal::Limit(l) => {
                e.d0_cm1 = Some(l.d0.value);
                e.d0_sigma_cm1 = cov_opt.map(|c| l.d0.sigma(c) * r_lin);
                e.de_cm1 = Some(l.de.value);
                e.de_sigma_cm1 = cov_opt.map(|c| l.de.sigma(c) * r_lin);
                e.extrapolated_fraction = Some(p.ctx.extrapolated_fraction(l.d0.value));
                if let Some(v) = &l.v_d {
                    e.v_d = Some(v.value);
                    e.v_d_sigma = cov_opt.map(|c| v.sigma(c) * r_lin);
                    e.n_bound = Some(v.value.floor().max(0.0) as u64 + 1);
                }
                e.reason = w.what;
                if let Some(lb) = &f.lb_line
                    && w.family == (Family::NearDissociation { primary: true })
                {
                    curves.lb_line = Some((w.method.to_string(), *lb));
                }
            }
            Nominal::NoLimit(why) => {
                e.reason = why.clone();
            }
        }
        curves.spacing.extend(f.curve);
        curves.level.extend(f.level_curve);
        out.push(e);
    }
    (out, curves)
}

/// ωe, ωexe, … and every Y_k0 of the selected fit with σ, their correlation and G(0).
fn constants(p: &Prepared) -> Constants {
    let (y, cov_y) = p.sel.dunham();
    let k_sel = p.k_sel;
    let sigma_known = p.source != SigmaSource::EstimatedFromScatter;
    let constant = |k: usize, sign: f64| -> Constant {
        let c = cov_y[(k, k)].max(0.0);
        Constant {
            value: sign * y[k],
            sigma: p.estimable.then(|| (c * p.factor2).sqrt()),
            sigma_unscaled: sigma_known.then(|| c.sqrt()),
            sigma_scaled: p.chi2r.map(|x| (c * x).sqrt()),
        }
    };
    let dunham: Vec<DunhamCoefficient> = (0..k_sel)
        .map(|k| DunhamCoefficient {
            name: format!("Y{}0", k + 1),
            k: k + 1,
            constant: constant(k, 1.0),
        })
        .collect();
    let correlation: Vec<Vec<f64>> = (0..k_sel)
        .map(|i| {
            (0..k_sel)
                .map(|j| {
                    let d = (cov_y[(i, i)] * cov_y[(j, j)]).sqrt();
                    if d > 0.0 { cov_y[(i, j)] / d } else { 0.0 }
                })
                .collect()
        })
        .collect();
    Constants {
        order: k_sel,
        we_cm1: Some(constant(0, 1.0)),
        wexe_cm1: (k_sel >= 2).then(|| constant(1, -1.0)),
        weye_cm1: (k_sel >= 3).then(|| constant(2, 1.0)),
        weze_cm1: (k_sel >= 4).then(|| constant(3, 1.0)),
        dunham,
        zero_point_cm1: vs(&p.ctx.zero_point, p.cov_opt()),
        correlation,
    }
}

/// Morse parameters from ωe and ωexe of the selected fit (and Be from the given B_v).
fn morse(p: &Prepared, bv: &[(f64, f64)]) -> (Option<crate::morse::MorseParams>, Option<String>) {
    let k_sel = p.k_sel;
    if k_sel < 2 {
        return (
            None,
            Some("the selected order is 1: no ωexe, no Morse parameters".into()),
        );
    }
    let (y, cov_y) = p.sel.dunham();
    let f2 = p.factor2;
    let c = [
        [cov_y[(0, 0)] * f2, -cov_y[(0, 1)] * f2],
        [-cov_y[(1, 0)] * f2, cov_y[(1, 1)] * f2],
    ];
    match crate::morse::from_constants(
        y[0],
        -y[1],
        c,
        p.mu_u,
        fit_be(bv),
        &format!("ωe, ωexe of the order-{k_sel} fit"),
    ) {
        Ok(m) => (
            Some(m),
            (p.mu_u.is_none()).then(|| "a, k_e and re need the reduced mass μ".to_string()),
        ),
        Err(why) => (None, Some(why)),
    }
}

/// Residuals of the selected fit, externally studentized, with outliers flagged.
fn residuals(p: &Prepared, warnings: &mut Vec<String>) -> Vec<ResidualOut> {
    let (sel, settings, k_sel) = (&p.sel, p.settings, p.k_sel);
    let stud = &sel.lsq.normalized_residuals;
    let out: Vec<ResidualOut> = (0..p.n())
        .map(|i| {
            // Externally studentized: the variance factor is re-estimated without point i
            // wherever it is estimated from the scatter at all (an outlier must not hide by
            // inflating the scale it is judged against).
            let h = sel.lsq.leverage[i];
            let dof = sel.lsq.dof() as f64;
            let deleted = (dof > 1.0 && h < 1.0)
                .then(|| ((sel.lsq.chi2 - stud[i] * stud[i] / (1.0 - h)) / (dof - 1.0)).max(0.0));
            let f2 = match (p.source, settings.sigma_scaling, deleted) {
                (SigmaSource::EstimatedFromScatter, _, Some(d)) => d,
                (SigmaSource::EstimatedFromScatter, _, None) => p.factor2,
                (_, SigmaScaling::Never, _) => 1.0,
                (_, SigmaScaling::WhenAboveOne, Some(d)) => d.max(1.0),
                (_, SigmaScaling::Always, Some(d)) => d,
                (_, _, None) => p.factor2,
            };
            let d = (1.0 - h) * f2;
            let s = (p.estimable && d > 0.0).then(|| stud[i] / d.sqrt());
            ResidualOut {
                v: p.data.v[i],
                residual_cm1: sel.lsq.residuals[i],
                sigma_cm1: p.estimable.then(|| p.cov_eff[(i, i)].sqrt()),
                studentized: s,
                outlier: s.is_some_and(|s| s.abs() > settings.outlier_threshold),
            }
        })
        .collect();
    let list: Vec<String> = out
        .iter()
        .filter(|r| r.outlier)
        .map(|r| format!("{}", r.v))
        .collect();
    if !list.is_empty() {
        warnings.push(format!(
            "possible outlier(s) at v = {} (|studentized residual| > {} in the order-{k_sel} fit): check the assignment, a perturbation, or a typo",
            list.join(", "),
            settings.outlier_threshold
        ));
    }
    if sel.lsq.condition_number > 1e10 {
        warnings.push(format!("the order-{k_sel} design is poorly conditioned ({:.2e}): constants are strongly correlated", sel.lsq.condition_number));
    }
    out
}

/// The points of the data (levels or spacings, as given) far outside what their neighbours
/// predict ([`crate::robust`]), whatever order the least-squares selection chose (a gross error
/// can drive that choice).
fn far_points(p: &Prepared) -> Vec<FarPointOut> {
    let data = &p.data;
    let sigma: Option<Vec<f64>> = data
        .sigma_known
        .then(|| (0..p.n()).map(|i| data.cov[(i, i)].sqrt()).collect());
    let what = match data.kind {
        DataKind::Levels => "level",
        DataKind::Spacings => "spacing",
    };
    crate::robust::far_points(&data.v, &data.y, sigma.as_deref())
        .into_iter()
        .map(|f| FarPointOut {
            v: data.v[f.index],
            row: None,
            residual_cm1: f.residual,
            ratio: f.ratio,
            reason: format!(
                "far outside the rest: this {what} lies {} cm⁻¹ {} what its neighbours predict \
                 ({} the typical difference); a typo or a wrong assignment?",
                crate::format::significant(f.residual.abs(), 3),
                if f.residual > 0.0 { "above" } else { "below" },
                if f.ratio >= 1000.0 {
                    "more than 1000 times".to_string()
                } else {
                    format!("about {} times", crate::format::significant(f.ratio, 2))
                }
            ),
        })
        .collect()
}

/// The levels (given or rebuilt from spacings) and the spacings (given or derived) with σ.
fn levels_and_spacings(p: &Prepared) -> (Vec<LevelOut>, Vec<SpacingOut>) {
    let data = &p.data;
    let sigma_known = p.source != SigmaSource::EstimatedFromScatter;
    let sig_given = |i: usize| sigma_known.then(|| data.cov[(i, i)].sqrt());
    let levels: Vec<LevelOut> = match (&p.view, data.kind) {
        (Some(w), DataKind::Levels) => (0..w.v.len())
            .map(|i| LevelOut {
                v: w.v[i] as u32,
                energy_cm1: w.e[i],
                sigma_cm1: sig_given(i),
                derived: false,
            })
            .collect(),
        (Some(w), DataKind::Spacings) => {
            let c = &w.map * &data.cov * w.map.transpose();
            (0..w.v.len())
                .map(|i| LevelOut {
                    v: w.v[i] as u32,
                    energy_cm1: w.e[i],
                    sigma_cm1: sigma_known.then(|| c[(i, i)].max(0.0).sqrt()),
                    derived: true,
                })
                .collect()
        }
        (None, _) => vec![],
    };
    let (sp_v, sp_y, sp_cov, derived): (Vec<f64>, Vec<f64>, DMatrix<f64>, bool) = match data.kind {
        DataKind::Levels => {
            let d = spacings_from_levels(&data.v, &data.y, &p.cov_eff);
            (d.v_lower, d.values, d.cov, true)
        }
        DataKind::Spacings => (data.v.clone(), data.y.clone(), p.cov_eff.clone(), false),
    };
    let spacings: Vec<SpacingOut> = (0..sp_v.len())
        .map(|i| {
            let corr =
                (i + 1 < sp_v.len() && sp_v[i + 1] - sp_v[i] == 1.0 && p.estimable).then(|| {
                    let d = (sp_cov[(i, i)] * sp_cov[(i + 1, i + 1)]).sqrt();
                    if d > 0.0 { sp_cov[(i, i + 1)] / d } else { 0.0 }
                });
            SpacingOut {
                v_lower: sp_v[i] as u32,
                x: sp_v[i] + 0.5,
                spacing_cm1: sp_y[i],
                sigma_cm1: p.estimable.then(|| sp_cov[(i, i)].max(0.0).sqrt()),
                correlation_with_next: corr,
                derived,
            }
        })
        .collect();
    (levels, spacings)
}

/// The figures' series: points with σ, the selected fit and every estimate's curves.
fn plot(
    p: &Prepared,
    curves: EstimateCurves,
    levels: &[LevelOut],
    spacings: &[SpacingOut],
    residuals: &[ResidualOut],
) -> PlotData {
    let (sel, k_sel) = (&p.sel, p.k_sel);
    let (v_bottom, v_top) = (p.ctx.v_bottom, p.ctx.v_top);
    let sel_offset = match p.data.kind {
        DataKind::Levels => sel.lsq.params[0],
        DataKind::Spacings => -sel.eval(v_bottom).0,
    };
    let b = sel.basis;
    let a = sel.coeffs.clone();
    let mut level_curves = vec![Curve {
        method: "selected-fit".into(),
        label: format!("order-{k_sel} fit of G(v)"),
        points: sample(v_bottom, v_top, 101, |v| sel_offset + b.eval(&a, v).0),
        v_d: None,
    }];
    level_curves.extend(curves.level);
    let lb_linearised = curves.lb_line.map(|(method, (nn, x0, vd, x_first))| {
        let (ex, slope) = nd::linearised(nn, x0);
        let points = spacings
            .iter()
            .filter(|s| s.spacing_cm1 > 0.0)
            .map(|s| PlotPoint {
                x: s.x,
                y: s.spacing_cm1.powf(ex),
                sigma: s.sigma_cm1.map(|sg| ex * s.spacing_cm1.powf(ex - 1.0) * sg),
            })
            .collect();
        let line = sample(x_first.min(v_bottom), vd, 51, |x| slope * (vd - x).max(0.0));
        Linearised {
            method,
            n: nn,
            exponent: ex,
            points,
            line,
        }
    });
    let point = |x: f64, y: f64, sigma: Option<f64>| PlotPoint { x, y, sigma };
    PlotData {
        spacings: spacings
            .iter()
            .map(|s| point(s.x, s.spacing_cm1, s.sigma_cm1))
            .collect(),
        spacing_curves: curves.spacing,
        levels: levels
            .iter()
            .map(|l| point(l.v as f64, l.energy_cm1, l.sigma_cm1))
            .collect(),
        level_curves,
        residuals: residuals
            .iter()
            .map(|r| point(r.v, r.residual_cm1, r.sigma_cm1))
            .collect(),
        lb_linearised,
    }
}

fn conventions() -> Vec<String> {
    vec![
        "energies are vacuum wavenumbers in cm⁻¹".to_string(),
        "ΔG_{v+½} = G(v+1) − G(v), plotted at x = v + ½ (v = lower level) on a vibrational-number axis".to_string(),
        "G(v) = Σ_k Y_k0 (v+½)^k with ωe = Y10, ωexe = −Y20, ωeye = Y30, ωeze = Y40 (no Y00 term; level data carry a free offset)".to_string(),
        "linear Birge–Sponer: ΔG_{v+½} = A − B·x; the zero crossing x = A/B is v_D and the area from x = 0 to v_D is D0; in general a polynomial model gives v_D from dG/dv = 0 and D0 = G(v_D) − G(0)".to_string(),
        "D0 is measured from v = 0; De = D0 + G(0) with G(0) the zero-point energy above the minimum at v = −½; number of bound levels = ⌊v_D⌋ + 1".to_string(),
        format!("LeRoy–Bernstein: G(v) = D − X0 (v_D − v)^(2n/(n−2)); C_n in cm⁻¹Åⁿ and E_h a0ⁿ (CODATA {CODATA_YEAR})"),
        "extrapolated fraction = 1 − [G(v_top) − G(v_bottom)]/D0 over the observed levels".to_string(),
    ]
}

/// What the numbers rest on: the numbering and the state, each estimator's own assumption (once
/// per wording), G(0), and what the σ cover.
fn assumptions(p: &Prepared, works: &[Work]) -> Vec<String> {
    let mut out = vec![
        "the vibrational numbering is as given: D0, G(0), De, v_D and the bound-level count depend on it (the near-dissociation asymptote D and the top-level binding energy do not)".to_string(),
        "all data belong to one isotopologue and one electronic state; D0 refers to its v = 0 level and to the asymptote the levels converge to".to_string(),
    ];
    for a in works.iter().filter_map(|w| w.assumption.as_ref()) {
        if !out.contains(a) {
            out.push(a.clone());
        }
    }
    out.push(format!(
        "G(0) and the zero-point energy come from the order-{} polynomial; Y00 is neglected",
        p.k_sel
    ));
    out.push("statistical σ describe only the data's scatter (first-order propagation of the covariance, and Monte Carlo redraws); σ_model, the spread between defensible models, is a rough and incomplete measure of the model error".to_string());
    out
}

/// Everything the later stages produced, for [`report`].
pub(super) struct Outcome {
    pub works: Vec<Work>,
    pub scales: Scales,
    pub mc: (bool, String),
    pub assessment: Assessment,
    pub warnings: Vec<String>,
}

/// The document.
pub(super) fn report(p: Prepared, o: Outcome, bv: &[(f64, f64)]) -> Report {
    let Outcome {
        works,
        scales,
        mc: (mc_ran, mc_note),
        assessment,
        mut warnings,
    } = o;
    let assumptions = assumptions(&p, &works);
    let (estimates, curves) = estimates(&p, works, &scales, &assessment);
    let constants = constants(&p);
    let (morse, morse_note) = morse(&p, bv);
    let residuals = residuals(&p, &mut warnings);
    let far_points = far_points(&p);
    let (levels, spacings) = levels_and_spacings(&p);
    let plot = plot(&p, curves, &levels, &spacings, &residuals);
    let settings = p.settings;
    let (v_bottom, v_top) = (p.ctx.v_bottom, p.ctx.v_top);
    Report {
        format: REPORT_FORMAT.into(),
        format_version: REPORT_FORMAT_VERSION,
        software_version: crate::VERSION.into(),
        codata_year: CODATA_YEAR,
        statement: "All results are model-dependent estimates: every dissociation limit below assumes a form for the levels beyond the data, and different defensible forms give different answers. Statistical uncertainties cover the data's scatter only.".into(),
        conventions: conventions(),
        assumptions,
        input: InputSummary {
            kind: p.data.kind,
            n_points: p.n(),
            v_min: v_bottom,
            v_max: v_top,
            v0_observed: p.data.v[0] == 0.0,
            mu_u: p.mu_u,
            sigma_source: p.source,
        },
        settings: settings.clone(),
        uncertainty: UncertaintyInfo {
            policy: settings.sigma_scaling,
            scale_factor: p.estimable.then(|| p.factor2.sqrt()),
            chi2_reduced: p.chi2r,
            estimable: p.estimable,
            note: p.note.clone(),
        },
        levels,
        spacings,
        fit: FitSummary {
            order: p.k_sel,
            forced: p.forced,
            n_params: p.sel.lsq.n_params,
            dof: p.sel.lsq.dof(),
            chi2: p.sel.lsq.chi2,
            chi2_reduced: p.chi2r,
            residuals,
            outlier_threshold: settings.outlier_threshold,
        },
        order_selection: p.selection,
        constants,
        estimates,
        recommended: assessment.recommended,
        morse,
        morse_note,
        monte_carlo: McInfo {
            ran: mc_ran,
            samples: settings.mc_samples,
            seed: settings.seed,
            generator: montecarlo::GENERATOR.into(),
            note: mc_note,
        },
        warnings,
        far_points,
        plot,
        potential: None,
        potential_comparison: None,
        potential_note: None,
        rows: None,
        input_sha256: None,
        methods: None,
        session: None,
    }
}
