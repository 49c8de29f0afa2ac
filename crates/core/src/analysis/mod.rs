//! The analysis pipeline: from clean levels or spacings to a [`Report`], as a short sequence of
//! stages, each a module:
//!
//! 1. validate the data and settings, sort by v, build the fit data and its covariance (here);
//! 2. fit G(v) of orders 1 … cap, choose the order ([`crate::dunham`]), fix the effective data
//!    covariance and the σ policy, build the estimators' context (`prepare`);
//! 3. run every extrapolation at the nominal data, with gradients for σ (`estimators`: one
//!    module per method behind one trait, one registry, one runner);
//! 4. redraw the data and refit every estimator on the same draws ([`crate::montecarlo`]), and
//! 5. decide what is admitted and recommend ([`crate::recommend`]) (`assess`);
//! 6. assemble estimates, constants, Morse parameters, plot series, warnings and assumptions
//!    (`assemble`).

mod assemble;
mod assess;
mod estimators;
mod prepare;

use nalgebra::DMatrix;

use crate::data::{Level, Spacing};
use crate::dunham::{self, DataKind, FitData};
use crate::report::*;
use crate::settings::{AnalysisSettings, SigmaScaling};
use crate::sorting::sort_by_key;
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

/// A whole number with its digits in groups of three (`1 000 000`).
fn grouped(n: u32) -> String {
    let d = n.to_string();
    let mut out = String::new();
    for (i, c) in d.chars().enumerate() {
        if i > 0 && (d.len() - i).is_multiple_of(3) {
            out.push(' ');
        }
        out.push(c);
    }
    out
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
    if s.mc_samples > crate::montecarlo::MAX_SAMPLES {
        return Err(Error::parameter(
            "Monte Carlo samples",
            format!(
                "{} is more than the limit of {}",
                s.mc_samples,
                grouped(crate::montecarlo::MAX_SAMPLES)
            ),
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
    if let Some(re) = s.re_angstrom
        && !(re.is_finite() && (0.1..=100.0).contains(&re))
    {
        return Err(Error::parameter(
            "equilibrium distance",
            "must be a distance between 0.1 and 100 Å",
        ));
    }
    if let Some(d) = s.asymptote_cm1
        && !(d.is_finite() && d.abs() <= crate::intake::MAX_ABS_ENERGY_CM1)
    {
        return Err(Error::parameter(
            "asymptote",
            format!(
                "the asymptote must be a number of at most {} cm⁻¹ in size",
                crate::intake::MAX_ABS_ENERGY_CM1
            ),
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

/// The analysis as a sequence of stages, each in its own module.
fn run(
    data: FitData,
    source: SigmaSource,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    bv: &[(f64, f64)],
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Report> {
    let mut warnings: Vec<String> = Vec::new();
    let mut prepared = prepare::prepare(data, source, mu_u, settings, &mut warnings)?;
    prepared.be_for_re = be_of_lowest(bv);
    prepared.bv = bv.to_vec();
    let mut works = estimators::run_all(&prepared, &mut warnings);
    let scales = assess::scales(&prepared, &works, &mut warnings);
    let mc = assess::monte_carlo(&prepared, &mut works, &scales, progress, &mut warnings);
    let assessment = assess::assess(&prepared, &works, &scales, &mut warnings);
    let outcome = assemble::Outcome {
        works,
        scales,
        mc,
        assessment,
        warnings,
    };
    Ok(assemble::report(prepared, outcome, bv))
}

/// B_e at v = −½ from the B_v of the lowest (up to six) levels: a line through two or three, a
/// parabola in (v + ½) through more (the lowest levels, where B_v is smooth in v).
fn be_of_lowest(bv: &[(f64, f64)]) -> Option<f64> {
    let mut low = bv.to_vec();
    low.sort_by(|a, b| a.0.total_cmp(&b.0));
    low.truncate(6);
    if low.len() < 2 {
        return None;
    }
    let cols = if low.len() > 3 { 3 } else { 2 };
    let d = DMatrix::from_fn(low.len(), cols, |i, j| (low[i].0 + 0.5).powi(j as i32));
    let y: Vec<f64> = low.iter().map(|b| b.1).collect();
    let f = crate::lsq::fit(&d, &y, crate::lsq::Weights::Unit).ok()?;
    (f.params[0] > 0.0).then_some(f.params[0])
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
