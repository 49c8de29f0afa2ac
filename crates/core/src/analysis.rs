//! The analysis pipeline: from clean levels or spacings to a [`Report`].
//!
//! 1. validate the data and settings, sort by v, build the fit data and its covariance;
//! 2. fit G(v) of orders 1 … cap and choose the order ([`crate::dunham`]);
//! 3. fix the effective data covariance (σ as given, scaled by √χ²_ν when the policy says so,
//!    or estimated from the scatter when no σ were given);
//! 4. run every extrapolation at the nominal data, with gradients for σ ([`crate::extrapolate`]);
//! 5. redraw the data and refit every model ([`crate::montecarlo`]);
//! 6. decide what is defensible and recommend ([`crate::recommend`]);
//! 7. assemble constants, Morse parameters, plot series, warnings and assumptions.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::{DMatrix, DVector};

use crate::constants::CODATA_YEAR;
use crate::data::{Level, Spacing};
use crate::dunham::{self, DataKind, FitData, PolyFit};
use crate::extrapolate::nde;
use crate::extrapolate::near_dissociation::{self as nd, LbFit, LbOutcome, LbVariant};
use crate::extrapolate::polynomial::{self as poly, PolyMethod};
use crate::extrapolate::{Context, Limit, Lin, LinearEstimator, Nominal, Redraw};
use crate::montecarlo::{self, McResult};
use crate::recommend::{self, Candidate, Evidence, Family, FitEvidence};
use crate::report::*;
use crate::settings::{AnalysisSettings, SigmaScaling};
use crate::sorting::sort_by_key;
use crate::spacings::{LevelView, spacings_from_levels};
use crate::{Error, Result};

/// Analyse level energies G(v) (any common origin), optionally with their full covariance
/// (levels from a term-value fit are correlated; the matrix follows the order of `levels`).
pub fn analyze_levels(
    levels: &[Level],
    covariance: Option<&DMatrix<f64>>,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
) -> Result<Report> {
    analyze_levels_with_progress(levels, covariance, mu_u, settings, &mut |_, _| {})
}

/// [`analyze_levels`], calling `progress(done, total)` as the Monte Carlo draws advance.
pub fn analyze_levels_with_progress(
    levels: &[Level],
    covariance: Option<&DMatrix<f64>>,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Report> {
    check_settings(settings, mu_u)?;
    if levels.len() < 2 {
        return Err(Error::TooFewPoints {
            what: "a vibrational analysis".into(),
            have: levels.len(),
            need: 2,
        });
    }
    check_isotopologues(levels.iter().map(|l| l.isotopologue.as_deref()))?;
    let mut idx: Vec<usize> = (0..levels.len()).collect();
    sort_by_key(&mut idx, |&i| levels[i].v);
    for w in idx.windows(2) {
        if levels[w[0]].v == levels[w[1]].v {
            return Err(Error::parameter(
                "levels",
                format!("v = {} appears more than once", levels[w[0]].v),
            ));
        }
    }
    for l in levels {
        if !l.energy_cm1.is_finite() {
            return Err(Error::parameter(
                "levels",
                format!("energy of v = {} is not a finite number", l.v),
            ));
        }
    }
    let sig: Vec<Option<f64>> = idx.iter().map(|&i| levels[i].sigma_cm1).collect();
    let labels: Vec<u32> = idx.iter().map(|&i| levels[i].v).collect();
    let (cov, source) = build_cov(&sig, &labels, covariance, &idx, "v")?;
    let v: Vec<f64> = idx.iter().map(|&i| levels[i].v as f64).collect();
    let y: Vec<f64> = idx.iter().map(|&i| levels[i].energy_cm1).collect();
    let data = FitData::new(
        DataKind::Levels,
        v,
        y,
        cov,
        source != SigmaSource::EstimatedFromScatter,
    )?;
    let bv: Vec<(f64, f64)> = idx
        .iter()
        .filter_map(|&i| levels[i].b_cm1.map(|b| (levels[i].v as f64, b)))
        .collect();
    run(data, source, mu_u, settings, &bv, progress)
}

/// Analyse spacings ΔG_{v+½} (keyed by the lower level), fitted with the exact finite-difference
/// rows. Spacings given directly are taken as independent unless a covariance is supplied.
pub fn analyze_spacings(
    spacings: &[Spacing],
    covariance: Option<&DMatrix<f64>>,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
) -> Result<Report> {
    analyze_spacings_with_progress(spacings, covariance, mu_u, settings, &mut |_, _| {})
}

/// [`analyze_spacings`], calling `progress(done, total)` as the Monte Carlo draws advance.
pub fn analyze_spacings_with_progress(
    spacings: &[Spacing],
    covariance: Option<&DMatrix<f64>>,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Report> {
    check_settings(settings, mu_u)?;
    if spacings.len() < 2 {
        return Err(Error::TooFewPoints {
            what: "a vibrational analysis of spacings".into(),
            have: spacings.len(),
            need: 2,
        });
    }
    check_isotopologues(spacings.iter().map(|l| l.isotopologue.as_deref()))?;
    let mut idx: Vec<usize> = (0..spacings.len()).collect();
    sort_by_key(&mut idx, |&i| spacings[i].v_lower);
    for w in idx.windows(2) {
        if spacings[w[0]].v_lower == spacings[w[1]].v_lower {
            return Err(Error::parameter(
                "spacings",
                format!(
                    "the spacing above v = {} appears more than once",
                    spacings[w[0]].v_lower
                ),
            ));
        }
    }
    for s in spacings {
        if !s.spacing_cm1.is_finite() {
            return Err(Error::parameter(
                "spacings",
                format!("spacing above v = {} is not a finite number", s.v_lower),
            ));
        }
    }
    let sig: Vec<Option<f64>> = idx.iter().map(|&i| spacings[i].sigma_cm1).collect();
    let labels: Vec<u32> = idx.iter().map(|&i| spacings[i].v_lower).collect();
    let (cov, source) = build_cov(&sig, &labels, covariance, &idx, "v_lower")?;
    let v: Vec<f64> = idx.iter().map(|&i| spacings[i].v_lower as f64).collect();
    let y: Vec<f64> = idx.iter().map(|&i| spacings[i].spacing_cm1).collect();
    let data = FitData::new(
        DataKind::Spacings,
        v,
        y,
        cov,
        source != SigmaSource::EstimatedFromScatter,
    )?;
    run(data, source, mu_u, settings, &[], progress)
}

fn policy_text(p: SigmaScaling) -> &'static str {
    match p {
        SigmaScaling::Never => "never scale",
        SigmaScaling::WhenAboveOne => "scale by √χ²_ν when χ²_ν > 1",
        SigmaScaling::Always => "always scale by √χ²_ν",
    }
}

pub(crate) fn check_settings(s: &AnalysisSettings, mu_u: Option<f64>) -> Result<()> {
    if !(s.lb_n.is_finite() && s.lb_n > 2.0 && s.lb_n <= 50.0) {
        return Err(Error::parameter(
            "lb_n",
            format!(
                "{} is outside (2, 50]: the near-dissociation form needs n > 2",
                s.lb_n
            ),
        ));
    }
    if let Some(k) = s.lb_top_levels
        && k < 4
    {
        return Err(Error::parameter(
            "lb_top_levels",
            format!("{k}: the near-dissociation fit needs at least 4 levels"),
        ));
    }
    if s.max_order == 0 || s.max_order as usize > dunham::MAX_SUPPORTED_ORDER {
        return Err(Error::parameter(
            "max_order",
            format!(
                "{} is outside 1..={}",
                s.max_order,
                dunham::MAX_SUPPORTED_ORDER
            ),
        ));
    }
    if let Some(o) = s.order
        && (o == 0 || o as usize > dunham::MAX_SUPPORTED_ORDER)
    {
        return Err(Error::parameter(
            "order",
            format!("{o} is outside 1..={}", dunham::MAX_SUPPORTED_ORDER),
        ));
    }
    if s.mc_samples > 1_000_000 {
        return Err(Error::parameter(
            "mc_samples",
            format!("{} is more than 1 000 000", s.mc_samples),
        ));
    }
    if !(s.curved_max_extrapolation.is_finite() && s.curved_max_extrapolation > 0.0) {
        return Err(Error::parameter(
            "curved_max_extrapolation",
            "must be a positive number",
        ));
    }
    if !(s.near_dissociation_coverage > 0.0 && s.near_dissociation_coverage <= 1.0) {
        return Err(Error::parameter(
            "near_dissociation_coverage",
            "must lie in (0, 1]",
        ));
    }
    if !(s.outlier_threshold.is_finite() && s.outlier_threshold > 0.0) {
        return Err(Error::parameter(
            "outlier_threshold",
            "must be a positive number",
        ));
    }
    if let Some(c) = s.lb_cn_cm1_an
        && !(c.is_finite() && c > 0.0)
    {
        return Err(Error::parameter(
            "lb_cn_cm1_an",
            "C_n must be a positive number",
        ));
    }
    if let Some(m) = mu_u
        && !(m.is_finite() && m > 0.0)
    {
        return Err(Error::parameter(
            "mu_u",
            format!("reduced mass {m} u is not a positive number"),
        ));
    }
    Ok(())
}

fn check_isotopologues<'a>(tags: impl Iterator<Item = Option<&'a str>>) -> Result<()> {
    let mut seen: Vec<&str> = Vec::new();
    for t in tags.flatten() {
        if !seen.contains(&t) {
            seen.push(t);
        }
    }
    if seen.len() > 1 {
        return Err(Error::parameter(
            "isotopologue",
            format!(
                "the data mix isotopologues ({}); analyse one at a time",
                seen.join(", ")
            ),
        ));
    }
    Ok(())
}

fn build_cov(
    sig: &[Option<f64>],
    labels: &[u32],
    covariance: Option<&DMatrix<f64>>,
    idx: &[usize],
    what: &str,
) -> Result<(DMatrix<f64>, SigmaSource)> {
    let n = sig.len();
    if let Some(c) = covariance {
        if c.shape() != (n, n) {
            return Err(Error::parameter(
                "covariance",
                format!("{}×{} matrix for {n} data points", c.nrows(), c.ncols()),
            ));
        }
        let p = DMatrix::from_fn(n, n, |i, j| c[(idx[i], idx[j])]);
        return Ok((p, SigmaSource::Covariance));
    }
    let given = sig.iter().filter(|s| s.is_some()).count();
    if given == 0 {
        return Ok((DMatrix::identity(n, n), SigmaSource::EstimatedFromScatter));
    }
    if given < n {
        let i = sig.iter().position(|s| s.is_none()).unwrap_or(0);
        return Err(Error::parameter(
            "sigma",
            format!(
                "{what} = {} has no uncertainty while others do: give σ for all points or for none",
                labels[i]
            ),
        ));
    }
    let mut d = DMatrix::zeros(n, n);
    for (i, s) in sig.iter().enumerate() {
        let s = s.unwrap_or(f64::NAN);
        if !(s.is_finite() && s > 0.0) {
            return Err(Error::parameter(
                "sigma",
                format!(
                    "{what} = {}: uncertainty {s} must be a positive number",
                    labels[i]
                ),
            ));
        }
        d[(i, i)] = s * s;
    }
    Ok((d, SigmaSource::Given))
}

fn shape_row(fit: &PolyFit, v: f64) -> Vec<f64> {
    let mut r = vec![0.0; fit.order];
    fit.basis.row(v, &mut r, None);
    r
}

fn lin_of_shape(fit: &PolyFit, row: &[f64]) -> Lin {
    let value = row.iter().zip(&fit.coeffs).map(|(a, b)| a * b).sum();
    Lin {
        value,
        grad: fit.operator.transpose() * DVector::from_column_slice(row),
    }
}

/// Everything known about one method during the pipeline.
struct Work {
    method: &'static str,
    label: String,
    family: Family,
    order: Option<usize>,
    nominal: Nominal,
    bs: Option<BsDetails>,
    lb: Option<LbDetails>,
    expansion: Option<ExpansionDetails>,
    estimator: Option<Box<dyn Redraw>>,
    mc: Option<McResult>,
    curve: Option<Curve>,
    level_curve: Option<Curve>,
    lb_line: Option<(f64, f64, f64, f64)>, // (n, x0, v_d, first level v)
    /// The estimate's own fit (χ², dof, convergence) as evidence for the recommendation.
    own_fit: Option<FitEvidence>,
    /// Fitted n (n-free fits) and fitted C_n (fits with C_n free and μ known).
    n_fitted: Option<f64>,
    cn_fitted: Option<f64>,
    /// χ²_ν of the estimate's own fit (the polynomial it extrapolates, or its near-dissociation
    /// fit), which sets its σ scaling; `None` without a fit of its own (the observed sum).
    own_chi2r: Option<f64>,
    /// The nominal limit's gradients already carry each part's σ factor (observed sum,
    /// near-dissociation fits), so the estimate-wide factor is not applied to them again.
    prescaled: bool,
}

fn vs(x: &Lin, cov: Option<&DMatrix<f64>>) -> ValueSigma {
    ValueSigma::new(x.value, cov.map(|c| x.sigma(c)))
}

fn sample(a: f64, b: f64, n: usize, f: impl Fn(f64) -> f64) -> Vec<[f64; 2]> {
    (0..n)
        .map(|i| {
            let x = a + (b - a) * i as f64 / (n - 1) as f64;
            [x, f(x)]
        })
        .filter(|p| p[1].is_finite())
        .collect()
}

fn run(
    data: FitData,
    source: SigmaSource,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    bv: &[(f64, f64)],
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Report> {
    let mut warnings: Vec<String> = Vec::new();
    let n = data.len();
    let (selection, fits) = dunham::select_order(&data, settings.max_order as usize)?;
    let forced = settings.order.is_some();
    let k_sel = settings
        .order
        .map(|o| o as usize)
        .unwrap_or(selection.recommended_order);
    let get_fit = |k: usize| -> Result<PolyFit> {
        match fits.get(k - 1) {
            Some(f) => Ok(f.clone()),
            None => dunham::fit_poly(&data, k),
        }
    };
    let sel = get_fit(k_sel)?;

    // Effective data covariance.
    let chi2r = sel.chi2_reduced();
    let (factor2, estimable, note) = match (source, chi2r) {
        (SigmaSource::EstimatedFromScatter, Some(c)) if c > 0.0 => (
            c,
            true,
            format!(
                "no uncertainties were given: σ = {:.4e} cm⁻¹ per point estimated from the scatter about the order-{k_sel} fit (RSS/dof)",
                c.sqrt()
            ),
        ),
        (SigmaSource::EstimatedFromScatter, _) => (
            0.0,
            false,
            format!(
                "no uncertainties were given and the order-{k_sel} fit leaves no scatter to estimate them from: statistical uncertainties are not estimable"
            ),
        ),
        (_, Some(c)) => {
            let f2 = match settings.sigma_scaling {
                SigmaScaling::Never => 1.0,
                SigmaScaling::WhenAboveOne => c.max(1.0),
                SigmaScaling::Always => c,
            };
            let what = if f2 == 1.0 {
                format!(
                    "vibrational constants: data σ used as given (χ²_ν = {c:.3} of the order-{k_sel} fit; scaling policy: {}); each dissociation estimate's σ follows its own fit's χ²_ν under the same policy (its sigma_scale)",
                    policy_text(settings.sigma_scaling)
                )
            } else {
                format!(
                    "vibrational constants: data σ scaled by √χ²_ν = {:.4} of the order-{k_sel} fit (scaling policy: {}); each dissociation estimate's σ follows its own fit's χ²_ν under the same policy (its sigma_scale)",
                    f2.sqrt(),
                    policy_text(settings.sigma_scaling)
                )
            };
            (f2, f2 > 0.0, what)
        }
        (_, None) => (
            1.0,
            true,
            format!(
                "data σ used as given (the order-{k_sel} fit has no degrees of freedom to check them)"
            ),
        ),
    };
    let cov_eff = &data.cov * factor2;
    let cov_opt = estimable.then_some(&cov_eff);

    // σ scaling per estimate: each part of an estimate carries the σ factor of the fit it comes
    // from, √policy(χ²_ν) — a model's misfit widens its own σ and no other's. Observed levels
    // (the observed sum, G(0) when v = 0 is observed) keep the data σ as given: no model can tell
    // noise from misfit for them. The vibrational constants and G(0) extrapolated by the
    // selected polynomial keep that fit's factor, which `cov_eff` already carries; `rel_of`
    // converts a factor to cov_eff's terms. With σ estimated from the scatter, that one estimate
    // applies to everything.
    let policy = |c: f64| match settings.sigma_scaling {
        SigmaScaling::Never => 1.0,
        SigmaScaling::WhenAboveOne => c.max(1.0),
        SigmaScaling::Always => c,
    };
    let per_method = estimable && factor2 > 0.0 && source != SigmaSource::EstimatedFromScatter;
    let rel_of = |own2: f64| {
        if per_method {
            (own2 / factor2).sqrt()
        } else {
            1.0
        }
    };
    let rel_obs = rel_of(1.0);

    // Level view, context.
    let view = LevelView::of(&data);
    let (v_bottom, v_top) = data.level_range();
    let r_b = shape_row(&sel, v_bottom);
    let r_t = shape_row(&sel, v_top);
    let r_0 = shape_row(&sel, 0.0);
    let r_m = shape_row(&sel, -0.5);
    let zp_row: Vec<f64> = r_0.iter().zip(&r_m).map(|(a, b)| a - b).collect();
    let zero_point = lin_of_shape(&sel, &zp_row);
    let e0_observed = view.as_ref().is_some_and(|w| w.v.first() == Some(&0.0));
    // e0 and the top level as they enter the estimates, each part with its own σ factor (`_x`).
    let (e0, e0_x, observed_span, top_lin) = match &view {
        Some(w) => {
            let row = |i: usize| Lin {
                value: w.e[i],
                grad: w.map.row(i).transpose(),
            };
            let last = w.v.len() - 1;
            let (e0, e0_x) = if e0_observed {
                (row(0), row(0).grad_scaled(rel_obs))
            } else {
                let down: Vec<f64> = r_b.iter().zip(&r_0).map(|(a, b)| a - b).collect();
                let down = lin_of_shape(&sel, &down);
                (
                    row(0).minus(&down),
                    row(0).grad_scaled(rel_obs).minus(&down),
                )
            };
            (e0, e0_x, w.e[last] - w.e[0], Some(row(last)))
        }
        None => {
            let span: Vec<f64> = r_t.iter().zip(&r_b).map(|(a, b)| a - b).collect();
            warnings.push("the spacings have a gap: no levels can be rebuilt across it, so the observed sum and the near-dissociation fits are not available; the observed span is taken from the fit".into());
            let zero = Lin::constant(0.0, n);
            (zero.clone(), zero, lin_of_shape(&sel, &span).value, None)
        }
    };
    let top_x = top_lin.as_ref().map(|t| t.grad_scaled(rel_obs));
    if !e0_observed && view.is_some() {
        warnings.push(format!(
            "v = 0 is not among the data: G(0), and with it every D0, use the order-{k_sel} polynomial extrapolated down from v = {v_bottom}"
        ));
    }
    if data.kind == DataKind::Spacings && source == SigmaSource::Given {
        warnings.push("spacings given directly are treated as independent; spacings that share a level are in fact anticorrelated — give levels, or the spacings' covariance, when available".into());
    }
    let ctx = Context {
        e0: e0.clone(),
        e0_observed,
        zero_point: zero_point.clone(),
        observed_span,
        v_bottom,
        v_top,
    };

    let mut works: Vec<Work> = Vec::new();

    // Observed sum.
    if let Some(top) = &top_x {
        let d0 = top.minus(&e0_x);
        let de = d0.plus(&zero_point);
        let label = "Observed sum of spacings (lower bound)".to_string();
        works.push(Work {
            method: "observed-sum",
            label,
            family: Family::ObservedSum,
            order: None,
            nominal: Nominal::Limit(Limit {
                d0: d0.clone(),
                de: de.clone(),
                v_d: None,
            }),
            bs: None,
            lb: None,
            expansion: None,
            estimator: Some(Box::new(LinearEstimator { d0, de })),
            mc: None,
            curve: None,
            level_curve: None,
            lb_line: None,
            own_fit: None,
            n_fitted: None,
            cn_fitted: None,
            own_chi2r: None,
            prescaled: true,
        });
    }

    // Polynomial extrapolations.
    let min_points = |k: usize| data.n_params(k);
    let poly_work =
        |method: &'static str, label: String, family: Family, k: usize, pm: PolyMethod| -> Work {
            if n < min_points(k) {
                return Work {
                    method,
                    label,
                    family,
                    order: Some(k),
                    nominal: Nominal::NoLimit(format!(
                        "an order-{k} fit needs at least {} data points; {n} given",
                        min_points(k)
                    )),
                    bs: None,
                    lb: None,
                    expansion: None,
                    estimator: None,
                    mc: None,
                    curve: None,
                    level_curve: None,
                    lb_line: None,
                    own_fit: None,
                    n_fitted: None,
                    cn_fitted: None,
                    own_chi2r: None,
                    prescaled: false,
                };
            }
            let fit = match get_fit(k) {
                Ok(f) => f,
                Err(e) => {
                    return Work {
                        method,
                        label,
                        family,
                        order: Some(k),
                        nominal: Nominal::NoLimit(format!("the order-{k} fit failed: {e}")),
                        bs: None,
                        lb: None,
                        expansion: None,
                        estimator: None,
                        mc: None,
                        curve: None,
                        level_curve: None,
                        lb_line: None,
                        own_fit: None,
                        n_fitted: None,
                        cn_fitted: None,
                        own_chi2r: None,
                        prescaled: false,
                    };
                }
            };
            let (pe, est) =
                poly::extrapolate(&fit, pm, &ctx, &cov_eff, settings.curved_max_extrapolation);
            let v_d = match &pe.nominal {
                Nominal::Limit(l) => l.v_d.as_ref().map(|x| x.value),
                _ => None,
            };
            let x_end = v_d.unwrap_or(v_top + 0.5 + 0.2 * (v_top - v_bottom).max(1.0));
            let b = fit.basis;
            let a = fit.coeffs.clone();
            let points = sample(0.0, x_end, 101, |x| {
                b.eval(&a, x + 0.5).0 - b.eval(&a, x - 0.5).0
            });
            let bs = Some(BsDetails {
                line_intercept_cm1: pe.line.as_ref().map(|l| vs(&l.intercept, cov_opt)),
                line_slope_cm1: pe.line.as_ref().map(|l| vs(&l.slope, cov_opt)),
                x_intercept: pe.line.as_ref().and(v_d),
                area_cm1: match (&pe.line, &pe.nominal) {
                    (Some(l), Nominal::Limit(_)) => {
                        Some(l.intercept.value.powi(2) / (2.0 * l.slope.value))
                    }
                    _ => None,
                },
                refused_root_v: pe.refused_root_v,
            });
            let has = v_d.is_some();
            Work {
                method,
                label: label.clone(),
                family,
                order: Some(k),
                nominal: pe.nominal,
                bs,
                lb: None,
                expansion: None,
                estimator: has.then(|| Box::new(est) as Box<dyn Redraw>),
                mc: None,
                curve: Some(Curve {
                    method: method.into(),
                    label,
                    points,
                    v_d,
                }),
                level_curve: None,
                lb_line: None,
                own_fit: Some(FitEvidence {
                    chi2: fit.lsq.chi2,
                    dof: fit.lsq.dof(),
                    points: fit.lsq.n_points,
                    converged: true,
                }),
                n_fitted: None,
                cn_fitted: None,
                own_chi2r: fit.chi2_reduced(),
                prescaled: false,
            }
        };
    works.push(poly_work(
        "birge-sponer-linear",
        "Linear Birge–Sponer (order-2 G(v))".into(),
        Family::LinearBs,
        2,
        PolyMethod::Linear,
    ));
    let k_c = k_sel.max(3);
    let curved_label = if k_sel >= 3 {
        format!("Curved Birge–Sponer (order-{k_c} G(v), the selected order)")
    } else {
        format!("Curved Birge–Sponer (order-{k_c} G(v); curvature not selected by the data)")
    };
    works.push(poly_work(
        "birge-sponer-curved",
        curved_label,
        Family::CurvedBs {
            significant: k_sel >= 3,
        },
        k_c,
        PolyMethod::Curved,
    ));

    // Near-dissociation fits.
    let n_levels = view.as_ref().map(|w| w.v.len()).unwrap_or(0);
    let k_auto = 4usize.max(n_levels.div_ceil(3)).min(n_levels);
    let k_top = settings.lb_top_levels.map(|k| k as usize).unwrap_or(k_auto);
    let mut lb_specs: Vec<(&'static str, String, bool, LbVariant, usize)> = vec![(
        "leroy-bernstein",
        format!(
            "LeRoy–Bernstein near-dissociation fit, n = {} fixed",
            settings.lb_n
        ),
        true,
        LbVariant::FixedN { n: settings.lb_n },
        k_top,
    )];
    if settings.lb_fit_n_free {
        lb_specs.push((
            "leroy-bernstein-n-free",
            "LeRoy–Bernstein fit with n free".into(),
            false,
            LbVariant::FreeN {
                n_start: settings.lb_n,
            },
            k_top.max(5),
        ));
    }
    let k_alt = if n_levels > k_top {
        n_levels.min(k_top + (k_top / 2).max(2))
    } else {
        k_top.saturating_sub(1)
    };
    if k_alt >= 4 && k_alt != k_top {
        lb_specs.push((
            "leroy-bernstein-alt-levels",
            format!(
                "LeRoy–Bernstein, n = {} fixed, top {k_alt} levels instead of {k_top}",
                settings.lb_n
            ),
            false,
            LbVariant::FixedN { n: settings.lb_n },
            k_alt,
        ));
    }
    if let Some(cn) = settings.lb_cn_cm1_an {
        match mu_u {
            Some(mu) => lb_specs.push((
                "leroy-bernstein-cn-fixed",
                format!("LeRoy–Bernstein, n = {} and C_n = {cn} cm⁻¹Åⁿ fixed", settings.lb_n),
                false,
                LbVariant::FixedX0 { n: settings.lb_n, x0: nd::x0_from_cn(settings.lb_n, cn, mu) },
                k_top.max(3),
            )),
            None => warnings.push("a C_n was given but no reduced mass: the fit with C_n fixed needs μ and was skipped".into()),
        }
    }
    let mut lb_fits: Vec<Option<LbFit>> = Vec::new();
    for (method, label, primary, variant, k) in lb_specs {
        let family = Family::NearDissociation { primary };
        let (n_val, n_fitted, cn_fixed) = match variant {
            LbVariant::FixedN { n } => (n, false, false),
            LbVariant::FreeN { n_start } => (n_start, true, false),
            LbVariant::FixedX0 { n, .. } => (n, false, true),
        };
        let Some(w) = &view else {
            works.push(Work {
                method,
                label,
                family,
                order: None,
                nominal: Nominal::NoLimit(
                    "no levels can be rebuilt from spacings with a gap".into(),
                ),
                bs: None,
                lb: None,
                expansion: None,
                estimator: None,
                mc: None,
                curve: None,
                level_curve: None,
                lb_line: None,
                own_fit: None,
                n_fitted: None,
                cn_fitted: None,
                own_chi2r: None,
                prescaled: false,
            });
            lb_fits.push(None);
            continue;
        };
        let need = variant.n_params() + 1;
        if k > n_levels || k < need {
            let why = format!(
                "needs {} levels (at least {need} for this variant); {n_levels} available",
                k.max(need)
            );
            works.push(Work {
                method,
                label,
                family,
                order: None,
                nominal: Nominal::NoLimit(why),
                bs: None,
                lb: None,
                expansion: None,
                estimator: None,
                mc: None,
                curve: None,
                level_curve: None,
                lb_line: None,
                own_fit: None,
                n_fitted: None,
                cn_fitted: None,
                own_chi2r: None,
                prescaled: false,
            });
            lb_fits.push(None);
            continue;
        }
        let Some(input) = nd::top_input(w, k, &data.cov) else {
            lb_fits.push(None);
            continue;
        };
        let levels_used: Vec<u32> = input.v.iter().map(|v| *v as u32).collect();
        let outcome = nd::fit(&input, variant);
        let mut details = LbDetails {
            n: ValueSigma::new(n_val, None),
            n_fitted,
            cn_fixed,
            levels_used,
            d_cm1: None,
            x0_cm1: None,
            cn_cm1_an: None,
            cn_au: None,
            top_binding_cm1: None,
            chi2: None,
            dof: None,
            termination: None,
            iterations: None,
        };
        match outcome {
            LbOutcome::NoLimit {
                reason,
                termination,
            } => {
                details.termination = termination;
                works.push(Work {
                    method,
                    label,
                    family,
                    order: None,
                    nominal: Nominal::NoLimit(reason),
                    bs: None,
                    lb: Some(details),
                    expansion: None,
                    estimator: None,
                    mc: None,
                    curve: None,
                    level_curve: None,
                    lb_line: None,
                    own_fit: None,
                    n_fitted: None,
                    cn_fitted: None,
                    own_chi2r: None,
                    prescaled: false,
                });
                lb_fits.push(None);
            }
            LbOutcome::Fit(f) => {
                // The asymptote D and v_D carry this fit's own σ factor; G(0) (e0_x) and the
                // zero point theirs.
                let own_chi2r = (f.dof > 0).then(|| f.chi2 / f.dof as f64);
                let rel_lb = rel_of(own_chi2r.map_or(1.0, policy));
                let d_x = f.d.grad_scaled(rel_lb);
                let d0 = d_x.minus(&e0_x);
                details.n = if n_fitted {
                    vs(&f.n, cov_opt)
                } else {
                    ValueSigma::new(f.n.value, None)
                };
                details.d_cm1 = Some(vs(&f.d, cov_opt));
                details.x0_cm1 = Some(if cn_fixed {
                    ValueSigma::new(f.x0.value, None)
                } else {
                    vs(&f.x0, cov_opt)
                });
                details.chi2 = Some(f.chi2);
                details.dof = Some(f.dof);
                details.termination = Some(f.termination);
                details.iterations = Some(f.iterations);
                if let Some(top) = &top_x {
                    details.top_binding_cm1 = Some(vs(&d_x.minus(top), cov_opt));
                }
                if let Some(mu) = mu_u {
                    let nn = f.n.value;
                    let cn = nd::cn_from_x0(nn, f.x0.value, mu);
                    // gradient: dC/dX0 · gX0 + dC/dn · gn (n-derivative numerically)
                    let dcdx = -(nn - 2.0) / 2.0 * cn / f.x0.value;
                    let h = 1e-6 * nn;
                    let dcdn = (nd::cn_from_x0(nn + h, f.x0.value, mu)
                        - nd::cn_from_x0(nn - h, f.x0.value, mu))
                        / (2.0 * h);
                    let g = &f.x0.grad * dcdx + &f.n.grad * dcdn;
                    let cl = Lin { value: cn, grad: g };
                    let s = if cn_fixed {
                        None
                    } else {
                        cov_opt.map(|c| cl.sigma(c))
                    };
                    details.cn_cm1_an = Some(ValueSigma::new(cn, s));
                    let au = nd::cn_to_atomic_units(nn, 1.0);
                    details.cn_au = Some(ValueSigma::new(cn * au, s.map(|x| x * au)));
                }
                let x_first = input.v[0];
                let (dv, vdv, x0v, nv) = (f.d.value, f.v_d.value, f.x0.value, f.n.value);
                let nominal = if d0.value > 0.0 {
                    let de = d0.plus(&zero_point);
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
                    e0: e0_x.clone(),
                    ..ctx.clone()
                };
                let est = nd::LbEstimator::new(&input, variant, Some(&f), &ctx_x);
                let points = sample(x_first + 0.5, (vdv - 0.5).max(x_first + 0.5), 101, |x| {
                    nd::model_value(dv, vdv, x0v, nv, x + 0.5)
                        - nd::model_value(dv, vdv, x0v, nv, x - 0.5)
                });
                let lpoints = sample(x_first, vdv, 101, |v| nd::model_value(dv, vdv, x0v, nv, v));
                let cn_fitted = details
                    .cn_cm1_an
                    .as_ref()
                    .filter(|_| !cn_fixed)
                    .map(|c| c.value);
                works.push(Work {
                    method,
                    label: label.clone(),
                    family,
                    order: None,
                    nominal,
                    bs: None,
                    lb: Some(details),
                    expansion: None,
                    estimator: Some(Box::new(est)),
                    mc: None,
                    curve: Some(Curve {
                        method: method.into(),
                        label: label.clone(),
                        points,
                        v_d: Some(vdv),
                    }),
                    level_curve: Some(Curve {
                        method: method.into(),
                        label,
                        points: lpoints,
                        v_d: Some(vdv),
                    }),
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
                });
                lb_fits.push(Some(*f));
            }
        }
    }
    if let Some(w) = &view {
        let scale_of = |chi2r: f64| rel_of(policy(chi2r));
        let nde = NdeSetup {
            view: w,
            data_cov: &data.cov,
            n: settings.lb_n,
            cn_mu: settings.lb_cn_cm1_an.zip(mu_u),
            e0_x: &e0_x,
            ctx: &ctx,
            zero_point: &zero_point,
            scale_of: &scale_of,
            cov: cov_opt,
            mu_u,
        };
        works.extend(nde_works(&nde));
    }
    if let (Some(Some(fixed)), Some(free)) = (
        lb_fits.first(),
        works.iter().find(|w| w.method == "leroy-bernstein-n-free"),
    ) && let (Some(lb), Some(c)) = (&free.lb, cov_opt)
        && lb.n_fitted
        && let Some(s) = lb.n.sigma
        && lb.d_cm1.is_some()
        && (lb.n.value - fixed.n.value).abs() > 2.0 * s
    {
        let _ = c;
        warnings.push(format!(
            "the near-dissociation fit with n free gives n = {:.3} ± {:.3}, more than 2σ from the fixed n = {}: check n, or the choice of top levels",
            lb.n.value, s, fixed.n.value
        ));
    }

    // Each estimate's statistical σ follows its own fit (see `rel_of` above); the factors below
    // report it, scale each estimator's Monte Carlo draws and its detail σ.
    let own_factor2: Vec<f64> = works
        .iter()
        .map(|w| {
            if !per_method {
                return factor2;
            }
            match w.family {
                Family::ObservedSum => 1.0,
                _ => w.own_chi2r.map_or(1.0, policy),
            }
        })
        .collect();
    // `rel` scales an estimator's Monte Carlo draws and its detail σ; `lin_rel` its nominal
    // gradients, which for prescaled estimates already carry every part's own factor.
    let rel: Vec<f64> = own_factor2
        .iter()
        .map(|f| {
            if factor2 > 0.0 {
                (f / factor2).sqrt()
            } else {
                1.0
            }
        })
        .collect();
    let lin_rel: Vec<f64> = works
        .iter()
        .zip(&rel)
        .map(|(w, r)| if w.prescaled { 1.0 } else { *r })
        .collect();
    if per_method {
        let scaled: Vec<String> = works
            .iter()
            .zip(&own_factor2)
            .filter(|(w, f)| **f > 1.0 && matches!(w.nominal, Nominal::Limit(_)))
            .map(|(w, f)| format!("{} ×{:.3}", w.method, f.sqrt()))
            .collect();
        if !scaled.is_empty() {
            warnings.push(format!(
                "statistical σ scaled by √χ²_ν of each estimate's own fit (the data scatter more than their σ, or the model does not describe them): {}",
                scaled.join(", ")
            ));
        }
    }

    // Monte Carlo.
    let samples = settings.mc_samples as usize;
    let mut mc_note;
    let mut mc_ran = false;
    if samples == 0 {
        mc_note = "Monte Carlo disabled (0 samples)".to_string();
    } else if !estimable {
        mc_note = "not run: statistical uncertainties are not estimable for these data".to_string();
    } else {
        let mut refs: Vec<&mut dyn Redraw> = Vec::new();
        let mut which: Vec<usize> = Vec::new();
        let mut draw_scales: Vec<f64> = Vec::new();
        for (i, w) in works.iter_mut().enumerate() {
            if let (Some(e), Nominal::Limit(_)) = (w.estimator.as_mut(), &w.nominal) {
                refs.push(e.as_mut());
                which.push(i);
                draw_scales.push(rel[i]);
            }
        }
        match montecarlo::run(
            &data.y,
            &cov_eff,
            samples,
            settings.seed,
            &mut refs,
            &draw_scales,
            progress,
        ) {
            Ok(results) => {
                drop(refs);
                for (i, r) in which.into_iter().zip(results) {
                    let bad = r.d0.failed as f64 / samples as f64;
                    if bad > 0.05 {
                        warnings.push(format!("{}: {:.1} % of the Monte Carlo refits failed; its distribution is less reliable", works[i].method, 100.0 * bad));
                    }
                    works[i].mc = Some(r);
                }
                mc_ran = true;
                mc_note = "every model was refitted on each draw of the data (y* = y + Lz, L the Cholesky factor of the data covariance) with its choices held fixed: polynomial order, level subset and, where fixed, n; draws without a limit count as D0 = +∞".to_string();
            }
            Err(e) => {
                mc_note = format!("not run: {e}");
            }
        }
    }
    if !mc_ran {
        mc_note = mc_note.trim().to_string();
    }

    // Recommendation.
    let scaled = |x: &Lin, r: f64| Lin {
        value: x.value,
        grad: &x.grad * r,
    };
    let observed = works
        .iter()
        .zip(&lin_rel)
        .find(|(w, _)| w.method == "observed-sum")
        .and_then(|(w, r)| match &w.nominal {
            Nominal::Limit(l) => Some(scaled(&l.d0, *r)),
            _ => None,
        });
    // With σ estimated from the selected fit's scatter, every fit's χ² is judged against that
    // estimate.
    let chi2_unit = if source == SigmaSource::EstimatedFromScatter && factor2 > 0.0 {
        factor2
    } else {
        1.0
    };
    let cands: Vec<Candidate> = works
        .iter()
        .zip(&lin_rel)
        .map(|(w, r)| {
            let (d0, de, ext, v_d) = match &w.nominal {
                Nominal::Limit(l) => (
                    Some(scaled(&l.d0, *r)),
                    Some(l.de.value),
                    Some(ctx.extrapolated_fraction(l.d0.value)),
                    l.v_d
                        .as_ref()
                        .map(|v| (v.value, cov_opt.map(|c| v.sigma(c) * r))),
                ),
                _ => (None, None, None, None),
            };
            Candidate {
                method: w.method.into(),
                label: w.label.clone(),
                family: w.family,
                sigma_cov: d0.as_ref().and_then(|d| cov_opt.map(|c| d.sigma(c))),
                sigma_mc: w.mc.as_ref().and_then(|m| m.d0.half_width()),
                d0,
                de,
                v_d,
                extrapolated_fraction: ext,
                fit: w.own_fit.map(|f| FitEvidence {
                    chi2: f.chi2 / chi2_unit,
                    ..f
                }),
                n_fitted: w.n_fitted,
                cn_fitted: w.cn_fitted,
            }
        })
        .collect();
    let (top_curvature, spacing_ratio) = view.as_ref().map_or((None, None), spacing_evidence);
    let evidence = Evidence {
        observed,
        top_curvature,
        spacing_ratio,
        v_top,
        cn_theory: settings.lb_cn_cm1_an,
        lb_n: settings.lb_n,
        selected_order: k_sel,
    };
    let assessment = recommend::assess(&cands, cov_opt, &evidence);
    warnings.extend(assessment.warnings.iter().cloned());

    // Estimates out.
    let mut estimates = Vec::new();
    let mut plot_curves = Vec::new();
    let mut level_curves = Vec::new();
    let mut lin_plot: Option<(String, (f64, f64, f64, f64))> = None;
    for (i, mut w) in works.into_iter().enumerate() {
        let (def, def_reason) = assessment.defensible[i].clone();
        let r = rel[i];
        let r_lin = lin_rel[i];
        let rescale = |x: &mut Option<ValueSigma>| {
            if let Some(v) = x.as_mut() {
                v.sigma = v.sigma.map(|s| s * r);
            }
        };
        if let Some(bs) = w.bs.as_mut() {
            rescale(&mut bs.line_intercept_cm1);
            rescale(&mut bs.line_slope_cm1);
        }
        if let Some(lb) = w.lb.as_mut() {
            if lb.n_fitted {
                lb.n.sigma = lb.n.sigma.map(|s| s * r);
            }
            rescale(&mut lb.d_cm1);
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
            order: w.order,
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
            sigma_scale: estimable.then(|| own_factor2[i].sqrt()),
            monte_carlo: w.mc,
            birge_sponer: w.bs,
            leroy_bernstein: w.lb,
            expansion: w.expansion,
        };
        match &w.nominal {
            Nominal::Limit(l) => {
                e.d0_cm1 = Some(l.d0.value);
                e.d0_sigma_cm1 = cov_opt.map(|c| l.d0.sigma(c) * r_lin);
                e.de_cm1 = Some(l.de.value);
                e.de_sigma_cm1 = cov_opt.map(|c| l.de.sigma(c) * r_lin);
                e.extrapolated_fraction = Some(ctx.extrapolated_fraction(l.d0.value));
                if let Some(v) = &l.v_d {
                    e.v_d = Some(v.value);
                    e.v_d_sigma = cov_opt.map(|c| v.sigma(c) * r_lin);
                    e.n_bound = Some(v.value.floor().max(0.0) as u64 + 1);
                }
                e.reason = match w.family {
                    Family::ObservedSum => {
                        if e0_observed {
                            "G(v_top) − G(0): the telescoped sum of observed spacings, a lower bound to D0 (no extrapolation; σ from the two end levels and their correlation)".into()
                        } else {
                            "G(v_top) − G(0) with G(0) from the polynomial below the lowest level: a lower bound to D0 up to that extrapolation".into()
                        }
                    }
                    Family::LinearBs | Family::CurvedBs { .. } => "v_D from dG/dv = 0 of the fitted G(v); D0 = G(v_D) − G(0); σ by the envelope theorem".into(),
                    Family::NearDissociation { .. } => "D0 = D − G(0) with D the asymptote of the near-dissociation fit; σ from its Jacobian".into(),
                    Family::Expansion => "D0 = D − G(0) with D the asymptote of the near-dissociation expansion fitted to all levels; σ from its Gauss–Newton sensitivity".into(),
                };
                if let Some(lb) = &w.lb_line
                    && w.family == (Family::NearDissociation { primary: true })
                {
                    lin_plot = Some((w.method.to_string(), *lb));
                }
            }
            Nominal::NoLimit(why) => {
                e.reason = why.clone();
            }
        }
        if let Some(c) = w.curve {
            plot_curves.push(c);
        }
        if let Some(c) = w.level_curve {
            level_curves.push(c);
        }
        estimates.push(e);
    }

    // Constants.
    let (y, cov_y) = sel.dunham();
    let sigma_known = source != SigmaSource::EstimatedFromScatter;
    let constant = |k: usize, sign: f64| -> Constant {
        let c = cov_y[(k, k)].max(0.0);
        Constant {
            value: sign * y[k],
            sigma: estimable.then(|| (c * factor2).sqrt()),
            sigma_unscaled: sigma_known.then(|| c.sqrt()),
            sigma_scaled: chi2r.map(|x| (c * x).sqrt()),
        }
    };
    let dunham_list: Vec<DunhamCoefficient> = (0..k_sel)
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
    let constants = Constants {
        order: k_sel,
        we_cm1: Some(constant(0, 1.0)),
        wexe_cm1: (k_sel >= 2).then(|| constant(1, -1.0)),
        weye_cm1: (k_sel >= 3).then(|| constant(2, 1.0)),
        weze_cm1: (k_sel >= 4).then(|| constant(3, 1.0)),
        dunham: dunham_list,
        zero_point_cm1: vs(&zero_point, cov_opt),
        correlation,
    };

    // Morse.
    let be = fit_be(bv);
    let (morse, morse_note) = if k_sel >= 2 {
        let c = [
            [cov_y[(0, 0)] * factor2, -cov_y[(0, 1)] * factor2],
            [-cov_y[(1, 0)] * factor2, cov_y[(1, 1)] * factor2],
        ];
        match crate::morse::from_constants(
            y[0],
            -y[1],
            c,
            mu_u,
            be,
            &format!("ωe, ωexe of the order-{k_sel} fit"),
        ) {
            Ok(m) => (
                Some(m),
                (mu_u.is_none()).then(|| "a, k_e and re need the reduced mass μ".to_string()),
            ),
            Err(why) => (None, Some(why)),
        }
    } else {
        (
            None,
            Some("the selected order is 1: no ωexe, no Morse parameters".into()),
        )
    };

    // Residuals.
    let stud = sel.lsq.normalized_residuals.clone();
    let sigma_eff: Vec<f64> = (0..n).map(|i| (cov_eff[(i, i)]).sqrt()).collect();
    let residuals: Vec<ResidualOut> = (0..n)
        .map(|i| {
            // Externally studentized: the variance factor is re-estimated without point i
            // wherever it is estimated from the scatter at all (an outlier must not hide by
            // inflating the scale it is judged against).
            let h = sel.lsq.leverage[i];
            let dof = sel.lsq.dof() as f64;
            let deleted = (dof > 1.0 && h < 1.0)
                .then(|| ((sel.lsq.chi2 - stud[i] * stud[i] / (1.0 - h)) / (dof - 1.0)).max(0.0));
            let f2 = match (source, settings.sigma_scaling, deleted) {
                (SigmaSource::EstimatedFromScatter, _, Some(d)) => d,
                (SigmaSource::EstimatedFromScatter, _, None) => factor2,
                (_, SigmaScaling::Never, _) => 1.0,
                (_, SigmaScaling::WhenAboveOne, Some(d)) => d.max(1.0),
                (_, SigmaScaling::Always, Some(d)) => d,
                (_, _, None) => factor2,
            };
            let d = (1.0 - h) * f2;
            let s = (estimable && d > 0.0).then(|| stud[i] / d.sqrt());
            ResidualOut {
                v: data.v[i],
                residual_cm1: sel.lsq.residuals[i],
                sigma_cm1: estimable.then_some(sigma_eff[i]),
                studentized: s,
                outlier: s.is_some_and(|s| s.abs() > settings.outlier_threshold),
            }
        })
        .collect();
    let n_out = residuals.iter().filter(|r| r.outlier).count();
    if n_out > 0 {
        let list: Vec<String> = residuals
            .iter()
            .filter(|r| r.outlier)
            .map(|r| format!("{}", r.v))
            .collect();
        warnings.push(format!(
            "possible outlier(s) at v = {} (|studentized residual| > {} in the order-{k_sel} fit): check the assignment, a perturbation, or a typo",
            list.join(", "),
            settings.outlier_threshold
        ));
    }
    if sel.lsq.condition_number > 1e10 {
        warnings.push(format!("the order-{k_sel} design is poorly conditioned ({:.2e}): constants are strongly correlated", sel.lsq.condition_number));
    }

    // Levels and spacings out.
    let sig_given =
        |i: usize| (source != SigmaSource::EstimatedFromScatter).then(|| data.cov[(i, i)].sqrt());
    let levels_out: Vec<LevelOut> = match (&view, data.kind) {
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
    let (sp_v, sp_y, sp_cov, derived) = match data.kind {
        DataKind::Levels => {
            let d = spacings_from_levels(&data.v, &data.y, &cov_eff);
            (d.v_lower, d.values, d.cov, true)
        }
        DataKind::Spacings => (data.v.clone(), data.y.clone(), cov_eff.clone(), false),
    };
    let spacings_out: Vec<SpacingOut> = (0..sp_v.len())
        .map(|i| {
            let corr =
                (i + 1 < sp_v.len() && sp_v[i + 1] - sp_v[i] == 1.0 && estimable).then(|| {
                    let d = (sp_cov[(i, i)] * sp_cov[(i + 1, i + 1)]).sqrt();
                    if d > 0.0 { sp_cov[(i, i + 1)] / d } else { 0.0 }
                });
            SpacingOut {
                v_lower: sp_v[i] as u32,
                x: sp_v[i] + 0.5,
                spacing_cm1: sp_y[i],
                sigma_cm1: estimable.then(|| sp_cov[(i, i)].max(0.0).sqrt()),
                correlation_with_next: corr,
                derived,
            }
        })
        .collect();

    // Plot series.
    let sel_offset = match data.kind {
        DataKind::Levels => sel.lsq.params[0],
        DataKind::Spacings => -sel.eval(v_bottom).0,
    };
    let sel_curve = {
        let b = sel.basis;
        let a = sel.coeffs.clone();
        Curve {
            method: "selected-fit".into(),
            label: format!("order-{k_sel} fit of G(v)"),
            points: sample(v_bottom, v_top, 101, |v| sel_offset + b.eval(&a, v).0),
            v_d: None,
        }
    };
    let mut all_level_curves = vec![sel_curve];
    all_level_curves.extend(level_curves);
    let lb_linearised = lin_plot.map(|(method, (nn, x0, vd, x_first))| {
        let (ex, slope) = nd::linearised(nn, x0);
        let points = spacings_out
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
    let plot = PlotData {
        spacings: spacings_out
            .iter()
            .map(|s| PlotPoint {
                x: s.x,
                y: s.spacing_cm1,
                sigma: s.sigma_cm1,
            })
            .collect(),
        spacing_curves: plot_curves,
        levels: levels_out
            .iter()
            .map(|l| PlotPoint {
                x: l.v as f64,
                y: l.energy_cm1,
                sigma: l.sigma_cm1,
            })
            .collect(),
        level_curves: all_level_curves,
        residuals: residuals
            .iter()
            .map(|r| PlotPoint {
                x: r.v,
                y: r.residual_cm1,
                sigma: r.sigma_cm1,
            })
            .collect(),
        lb_linearised,
    };

    let conventions = vec![
        "energies are vacuum wavenumbers in cm⁻¹".to_string(),
        "ΔG_{v+½} = G(v+1) − G(v), plotted at x = v + ½ (v = lower level) on a vibrational-number axis".to_string(),
        "G(v) = Σ_k Y_k0 (v+½)^k with ωe = Y10, ωexe = −Y20, ωeye = Y30, ωeze = Y40 (no Y00 term; level data carry a free offset)".to_string(),
        "linear Birge–Sponer: ΔG_{v+½} = A − B·x; the zero crossing x = A/B is v_D and the area from x = 0 to v_D is D0; in general a polynomial model gives v_D from dG/dv = 0 and D0 = G(v_D) − G(0)".to_string(),
        "D0 is measured from v = 0; De = D0 + G(0) with G(0) the zero-point energy above the minimum at v = −½; number of bound levels = ⌊v_D⌋ + 1".to_string(),
        format!("LeRoy–Bernstein: G(v) = D − X0 (v_D − v)^(2n/(n−2)); C_n in cm⁻¹Åⁿ and E_h a0ⁿ (CODATA {CODATA_YEAR})"),
        "extrapolated fraction = 1 − [G(v_top) − G(v_bottom)]/D0 over the observed levels".to_string(),
    ];
    let assumptions = vec![
        "the vibrational numbering is as given: D0, G(0), De, v_D and the bound-level count depend on it (the near-dissociation asymptote D and the top-level binding energy do not)".to_string(),
        "all data belong to one isotopologue and one electronic state; D0 refers to its v = 0 level and to the asymptote the levels converge to".to_string(),
        "each polynomial extrapolation assumes G(v) keeps the fitted polynomial form up to the limit".to_string(),
        format!("the near-dissociation fits assume the fitted top levels lie where the potential is D − C_n/Rⁿ with n = {} (unless n is fitted)", settings.lb_n),
        format!("G(0) and the zero-point energy come from the order-{k_sel} polynomial; Y00 is neglected"),
        "statistical σ describe only the data's scatter (first-order propagation of the covariance, and Monte Carlo redraws); σ_model, the spread between defensible models, is a rough and incomplete measure of the model error".to_string(),
    ];

    let v0_obs = match data.kind {
        DataKind::Levels => data.v[0] == 0.0,
        DataKind::Spacings => data.v[0] == 0.0,
    };
    Ok(Report {
        format: REPORT_FORMAT.into(),
        format_version: REPORT_FORMAT_VERSION,
        software_version: crate::VERSION.into(),
        codata_year: CODATA_YEAR,
        statement: "All results are model-dependent estimates: every dissociation limit below assumes a form for the levels beyond the data, and different defensible forms give different answers. Statistical uncertainties cover the data's scatter only.".into(),
        conventions,
        assumptions,
        input: InputSummary { kind: data.kind, n_points: n, v_min: v_bottom, v_max: v_top, v0_observed: v0_obs, mu_u, sigma_source: source },
        settings: settings.clone(),
        uncertainty: UncertaintyInfo {
            policy: settings.sigma_scaling,
            scale_factor: estimable.then(|| factor2.sqrt()),
            chi2_reduced: chi2r,
            estimable,
            note,
        },
        levels: levels_out,
        spacings: spacings_out,
        order_selection: selection,
        fit: FitSummary {
            order: k_sel,
            forced,
            n_params: sel.lsq.n_params,
            dof: sel.lsq.dof(),
            chi2: sel.lsq.chi2,
            chi2_reduced: chi2r,
            residuals,
            outlier_threshold: settings.outlier_threshold,
        },
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
        plot,
        potential: None,
        potential_note: None,
        rows: None,
        input_sha256: None,
        methods: None,
        session: None,
    })
}

/// What the observed levels say on their own about the approach to the limit: the curvature of
/// the top spacings (third difference of the top four levels, when they are consecutive) and the
/// top spacing over the largest spacing between consecutive levels.
/// What the near-dissociation expansion needs from the analysis.
struct NdeSetup<'a> {
    view: &'a LevelView,
    data_cov: &'a DMatrix<f64>,
    n: f64,
    cn_mu: Option<(f64, f64)>,
    e0_x: &'a Lin,
    ctx: &'a Context,
    zero_point: &'a Lin,
    /// σ factor of an estimate from its own χ²_ν, in the effective covariance's terms.
    scale_of: &'a dyn Fn(f64) -> f64,
    /// The effective covariance of the data vector (`None` when σ is not estimable).
    cov: Option<&'a DMatrix<f64>>,
    /// Reduced mass, u (for C_n from X0).
    mu_u: Option<f64>,
}

/// The near-dissociation expansion fitted to all levels: X0 free, and X0 fixed from a given C_n.
fn nde_works(s: &NdeSetup) -> Vec<Work> {
    let mut variants: Vec<(&'static str, String, Option<f64>)> = vec![(
        "near-dissociation-expansion",
        format!("near-dissociation expansion, n = {}, all levels", s.n),
        None,
    )];
    if let Some((cn, mu)) = s.cn_mu {
        variants.push((
            "near-dissociation-expansion-cn-fixed",
            format!(
                "near-dissociation expansion, n = {} and C_n = {cn} cm⁻¹Åⁿ fixed, all levels",
                s.n
            ),
            Some(nd::x0_from_cn(s.n, cn, mu)),
        ));
    }
    let Some(input) = nd::top_input(s.view, s.view.v.len(), s.data_cov) else {
        return Vec::new();
    };
    // A limit needs spacings that shrink: per unit of v, the top spacing must be smaller than
    // the first (levels with constant or growing spacings have no limit in this model).
    let (v, e) = (&s.view.v, &s.view.e);
    let m = v.len();
    let shrinking = m >= 3 && {
        let first = (e[1] - e[0]) / (v[1] - v[0]);
        let top = (e[m - 1] - e[m - 2]) / (v[m - 1] - v[m - 2]);
        top < first
    };
    variants
        .into_iter()
        .map(|(method, label, x0)| {
            let family = Family::Expansion;
            let mut work = Work {
                method,
                label: label.clone(),
                family,
                order: None,
                nominal: Nominal::NoLimit(String::new()),
                bs: None,
                lb: None,
                expansion: None,
                estimator: None,
                mc: None,
                curve: None,
                level_curve: None,
                lb_line: None,
                own_fit: None,
                n_fitted: None,
                cn_fitted: None,
                own_chi2r: None,
                prescaled: true,
            };
            if !shrinking {
                work.nominal = Nominal::NoLimit(
                    "the spacings do not shrink toward the top, so there is no dissociation limit within this model".into(),
                );
                return work;
            }
            let f = match nde::fit(&input, s.n, x0) {
                Ok(f) => f,
                Err(why) => {
                    work.nominal = Nominal::NoLimit(why);
                    return work;
                }
            };
            let own_chi2r = (f.fit.dof > 0).then(|| f.fit.chi2 / f.fit.dof as f64);
            let rel = (s.scale_of)(own_chi2r.unwrap_or(1.0));
            let d0 = f.d.grad_scaled(rel).minus(s.e0_x);
            work.order = Some(f.order);
            work.own_fit = Some(FitEvidence {
                chi2: f.fit.chi2,
                dof: f.fit.dof,
                points: input.v.len(),
                converged: true,
            });
            work.own_chi2r = own_chi2r;
            work.nominal = if d0.value > 0.0 {
                Nominal::Limit(Limit {
                    de: d0.plus(s.zero_point),
                    d0,
                    v_d: Some(f.v_d.grad_scaled(rel)),
                })
            } else {
                Nominal::NoLimit("the expansion's asymptote lies below the energy of v = 0".into())
            };
            let ctx_x = Context {
                e0: s.e0_x.clone(),
                ..s.ctx.clone()
            };
            work.expansion = Some(expansion_details(s, &f, rel));
            work.estimator = nde::NdeEstimator::new(&input, s.n, &f, x0, &ctx_x)
                .map(|e| Box::new(e) as Box<dyn Redraw>);
            let (d, vd, x0v, p) = (f.fit.d_cm1, f.fit.v_d, f.fit.x0_cm1, f.fit.p.clone());
            let g = move |v: f64| {
                let x = vd - v;
                let corr = 1.0 + p.iter().rev().fold(0.0, |acc, c| (acc + c) * x);
                d - x0v * x.powf(nd::exponent(s.n)) * corr
            };
            let first = input.v[0];
            work.level_curve = Some(Curve {
                method: method.into(),
                label: label.clone(),
                points: sample(first, vd, 101, &g),
                v_d: Some(vd),
            });
            work.curve = Some(Curve {
                method: method.into(),
                label,
                points: sample(first + 0.5, (vd - 0.5).max(first + 0.5), 101, |x| {
                    g(x + 0.5) - g(x - 0.5)
                }),
                v_d: Some(vd),
            });
            work
        })
        .collect()
}

/// The expansion's parameters with σ (scaled by the fit's own χ²_ν as its D0 is) and the orders
/// tried. C_n ∝ X0^{−(n−2)/2} (inverting X0 of LeRoy & Bernstein 1970, from memory), so its
/// relative σ is (n − 2)/2 times that of X0.
fn expansion_details(s: &NdeSetup, f: &nde::NdeFit, rel: f64) -> ExpansionDetails {
    let sig = |l: &Lin| vs(&l.grad_scaled(rel), s.cov);
    let x0 =
        f.x0.as_ref()
            .map_or(ValueSigma::new(f.fit.x0_cm1, None), sig);
    let cn = s.mu_u.filter(|_| f.fit.x0_cm1 > 0.0).map(|mu| {
        let c = nd::cn_from_x0(s.n, f.fit.x0_cm1, mu);
        let rel_x0 = x0.sigma.map(|sx| sx / f.fit.x0_cm1);
        ValueSigma::new(c, rel_x0.map(|r| 0.5 * (s.n - 2.0) * r * c))
    });
    let au = nd::cn_to_atomic_units(s.n, 1.0);
    ExpansionDetails {
        n: s.n,
        cn_fixed: f.x0_fixed,
        order: f.order,
        d_cm1: sig(&f.d),
        v_d: sig(&f.v_d),
        x0_cm1: x0,
        cn_au: cn
            .as_ref()
            .map(|c| ValueSigma::new(c.value * au, c.sigma.map(|x| x * au))),
        cn_cm1_an: cn,
        p: f.fit.p.clone(),
        chi2: f.fit.chi2,
        dof: f.fit.dof,
        orders: f
            .orders
            .iter()
            .map(|(order, aicc, why)| ExpansionOrder {
                order: *order,
                aicc: *aicc,
                rejected: why.clone(),
            })
            .collect(),
    }
}

fn spacing_evidence(w: &LevelView) -> (Option<Lin>, Option<f64>) {
    let m = w.v.len();
    let level = |i: usize| Lin {
        value: w.e[i],
        grad: w.map.row(i).transpose(),
    };
    let consecutive = |i: usize| w.v[i + 1] - w.v[i] == 1.0;
    let curvature = (m >= 4 && (m - 4..m - 1).all(consecutive)).then(|| {
        let (a, b, c, d) = (level(m - 1), level(m - 2), level(m - 3), level(m - 4));
        let three_b = b.grad_scaled(3.0);
        let three_c = c.grad_scaled(3.0);
        let value = a.value - 3.0 * b.value + 3.0 * c.value - d.value;
        Lin {
            value,
            grad: &a.grad - &three_b.grad + &three_c.grad - &d.grad,
        }
    });
    let gaps: Vec<f64> = (0..m.saturating_sub(1))
        .filter(|&i| consecutive(i))
        .map(|i| w.e[i + 1] - w.e[i])
        .collect();
    let largest = gaps.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let ratio = (m >= 2 && consecutive(m - 2) && largest > 0.0)
        .then(|| (w.e[m - 1] - w.e[m - 2]) / largest);
    (curvature, ratio)
}

/// Be (and σ when estimable) from B_v = Be − αe(v+½) by unweighted least squares.
fn fit_be(bv: &[(f64, f64)]) -> Option<(f64, Option<f64>)> {
    if bv.len() < 2 {
        return None;
    }
    let d = DMatrix::from_fn(bv.len(), 2, |i, j| if j == 0 { 1.0 } else { bv[i].0 + 0.5 });
    let y: Vec<f64> = bv.iter().map(|b| b.1).collect();
    let f = crate::lsq::fit(&d, &y, crate::lsq::Weights::Unit).ok()?;
    let s = f.sigma_scaled().map(|s| s[0]);
    Some((f.params[0], s))
}
