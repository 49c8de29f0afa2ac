//! Choosing among the estimates by evidence: which are admitted, the recommended D0, σ_model,
//! and the interval [low, high] for D0, v_D and the number of bound levels.
//!
//! One rule, applied in four steps (common practice, no source, except where a source is named):
//! 1. **Admission.** An estimate enters the defensible set when the data support it:
//!    - it gives a finite limit and its own fit converged (a fit that stopped on an iteration
//!      limit or on the edge of its domain is no evidence);
//!    - its own fit describes the data it was fitted to: the χ² of that fit against the data σ
//!      has a probability of at least [`FIT_P_MIN`] (χ² distribution with its degrees of
//!      freedom). When no method passes, the estimates whose χ²_ν lies within a factor
//!      [`MISFIT_SLACK`] of the best are kept, with a warning that no model describes the data;
//!    - its parameters are physical: D0 not below the observed sum of spacings (a hard lower
//!      bound for a correct numbering) by more than 2σ of the difference, a fitted n within the
//!      range of long-range exponents, a fitted C_n within a factor 2 of a given theoretical one;
//!    - its curvature agrees with the data: a near-dissociation form has spacings that curve
//!      upward toward the limit, so it is not admitted while the top observed spacings still
//!      curve downward by more than 2σ.
//! 2. **Preferred value.** When a near-dissociation expansion fitted to all levels is admitted,
//!    the models of all levels (the expansions and the polynomials in v, fitted to the same data
//!    with the same σ) are compared by their AICc and the lowest is preferred (Hurvich & Tsai,
//!    Biometrika 76, 297 (1989), from memory). Otherwise: when the observed spacings have shrunk
//!    to at most [`NEAR_RATIO`] of their largest value (the levels approach the limit, judged
//!    from the data alone), the admitted near-dissociation estimate is preferred; else the
//!    admitted polynomial extrapolation (curved when the order selection supports curvature,
//!    else linear). Without an admitted estimate of the preferred family, the admitted estimate
//!    with the smallest χ²_ν of its own fit is used. The recommended D0 is never below the
//!    observed sum.
//! 3. **σ_model** is half the range of D0 over the admitted estimates (over every estimate that
//!    passes the physical checks when no fit describes the data: fit quality then cannot choose
//!    among the models, and the value comes from the least bad one), and never less than half
//!    the extrapolated part, ½ (D0 − observed sum): LeRoy and Bernstein (J. Chem. Phys. 52,
//!    3869 (1970)) state that their extrapolation predicts the levels above the highest one
//!    measured with uncertainties no larger than the binding energy of that level, and no
//!    extrapolation of ours is credited with more than that. So a lone admitted method still
//!    has a model σ.
//! 4. **Interval.** low = max(observed sum, min(min admitted D0, D0 − 2σ_model) − 2σ_stat),
//!    high = max(max admitted D0, D0 + 2σ_model) + 2σ_stat: it holds every admitted estimate
//!    with its statistical error and may be asymmetric. v_D follows the same rule (its model σ
//!    at least half the distance from the top observed level to v_D, and never below that
//!    level), and the number of bound levels is the integer range ⌊v_D⌋ + 1 over the v_D
//!    interval.
//!
//! σ_stat is the Monte Carlo 16–84 % half-width of the recommended estimate when available,
//! else its covariance σ. Pairs of admitted estimates that differ by more than 2σ of their
//! difference (computed with the data covariance, so correlation is accounted for) raise a
//! warning.

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use crate::extrapolate::Lin;
use crate::format::significant;

/// Smallest χ² probability of an estimate's own fit for the estimate to be admitted.
pub const FIT_P_MIN: f64 = 1e-3;
/// When no fit passes [`FIT_P_MIN`], estimates within this factor of the best χ²_ν are kept.
pub const MISFIT_SLACK: f64 = 2.0;
/// Top observed spacing over the largest observed spacing at or below which the levels count as
/// approaching the limit.
pub const NEAR_RATIO: f64 = 0.25;
/// Largest fitted long-range exponent n an n-free fit may return and still be admitted
/// (ion pair 1 … dispersion 10, with room for fitting error).
pub const N_FREE_PLAUSIBLE_MAX: f64 = 12.0;

/// Family of an estimate, as far as the recommendation is concerned.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Family {
    /// The telescoped observed sum (a lower bound).
    ObservedSum,
    /// Linear Birge–Sponer.
    LinearBs,
    /// Curved Birge–Sponer; `significant` when the selected order is ≥ 3.
    CurvedBs {
        /// Whether the curvature is supported by the order selection.
        significant: bool,
    },
    /// A near-dissociation fit; `primary` for n fixed with the default level subset.
    NearDissociation {
        /// Whether this is the primary (n fixed) fit.
        primary: bool,
    },
    /// A near-dissociation expansion fitted to all levels (same data as the polynomials).
    Expansion,
    /// A potential curve fitted to all levels through the radial Schrödinger equation.
    PotentialFit,
}

impl Family {
    fn is_polynomial(self) -> bool {
        matches!(self, Family::LinearBs | Family::CurvedBs { .. })
    }
    fn is_near_dissociation(self) -> bool {
        matches!(self, Family::NearDissociation { .. })
    }
    /// Fitted to every level, so comparable by AICc with the other models of all levels.
    fn fits_all_levels(self) -> bool {
        self.is_polynomial() || self.reaches_the_limit()
    }
    /// A model of all levels that rises all the way to a limit (expansion, potential fit).
    fn reaches_the_limit(self) -> bool {
        matches!(self, Family::Expansion | Family::PotentialFit)
    }
}

/// How well an estimate's own fit describes the data it was fitted to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FitEvidence {
    /// χ² against the data σ as given.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Number of data the fit describes (degrees of freedom plus fitted parameters).
    pub points: usize,
    /// Whether the fit converged.
    pub converged: bool,
}

impl FitEvidence {
    /// χ²_ν, `None` without degrees of freedom.
    pub fn chi2_reduced(&self) -> Option<f64> {
        (self.dof > 0).then(|| self.chi2 / self.dof as f64)
    }
    /// AICc = χ² + 2k + 2k(k+1)/(m − k − 1) with k = points − dof parameters (Hurvich & Tsai,
    /// Biometrika 76, 297 (1989), from memory); `None` when m ≤ k + 1.
    pub fn aicc(&self) -> Option<f64> {
        let k = self.points.checked_sub(self.dof)?;
        (self.points > k + 1).then(|| {
            let kf = k as f64;
            self.chi2 + 2.0 * kf + 2.0 * kf * (kf + 1.0) / (self.points - k - 1) as f64
        })
    }
    /// Probability of a χ² at least this large for a correct model (1 without dof).
    pub fn p_value(&self) -> f64 {
        if self.dof == 0 || !self.chi2.is_finite() {
            return if self.chi2.is_finite() { 1.0 } else { 0.0 };
        }
        statrs::function::gamma::checked_gamma_ur(self.dof as f64 / 2.0, self.chi2.max(0.0) / 2.0)
            .unwrap_or(0.0)
    }
}

/// One estimate as seen by the recommendation.
#[derive(Debug, Clone)]
pub struct Candidate {
    /// Method name (JSON `method`).
    pub method: String,
    /// The method's name for people.
    pub label: String,
    /// Family.
    pub family: Family,
    /// D0 with its gradient, `None` when the method gives no limit.
    pub d0: Option<Lin>,
    /// De value when there is a limit.
    pub de: Option<f64>,
    /// v_D and its σ, when the method gives one.
    pub v_d: Option<(f64, Option<f64>)>,
    /// Extrapolated fraction when there is a limit.
    pub extrapolated_fraction: Option<f64>,
    /// Covariance σ of D0.
    pub sigma_cov: Option<f64>,
    /// Monte Carlo 16–84 % half-width of D0.
    pub sigma_mc: Option<f64>,
    /// The estimate's own fit, `None` without one (the observed sum).
    pub fit: Option<FitEvidence>,
    /// Fitted long-range exponent, for fits with n free.
    pub n_fitted: Option<f64>,
    /// Fitted C_n (cm⁻¹Åⁿ), for fits where C_n is free and μ is known.
    pub cn_fitted: Option<f64>,
}

/// What the data say beyond any one model.
#[derive(Debug, Clone, Default)]
pub struct Evidence {
    /// The observed sum of spacings G(v_top) − G(0) with its gradient.
    pub observed: Option<Lin>,
    /// Third difference of the top four consecutive levels (the curvature of the top spacings),
    /// with its gradient: positive when the spacings curve upward.
    pub top_curvature: Option<Lin>,
    /// Top observed spacing over the largest observed spacing.
    pub spacing_ratio: Option<f64>,
    /// Highest observed vibrational level.
    pub v_top: f64,
    /// Lowest observed vibrational level.
    pub v_bottom: f64,
    /// Whether v = 0 is observed.
    pub e0_observed: bool,
    /// Energy of the highest observed level on the data's scale, cm⁻¹.
    pub e_top: Option<f64>,
    /// A theoretical C_n given by the user (cm⁻¹Åⁿ).
    pub cn_theory: Option<f64>,
    /// The long-range exponent the near-dissociation fits assume.
    pub lb_n: f64,
    /// The order selected for G(v).
    pub selected_order: usize,
}

/// The recommended value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Recommended {
    /// Method of the recommended estimate; null when none is defensible.
    pub method: Option<String>,
    /// D0, cm⁻¹.
    pub d0_cm1: Option<f64>,
    /// Statistical σ of D0, cm⁻¹.
    pub sigma_stat_cm1: Option<f64>,
    /// Model σ, cm⁻¹: half the range of D0 over the admitted estimates, at least half the
    /// extrapolated part.
    pub sigma_model_cm1: Option<f64>,
    /// De of the recommended estimate, cm⁻¹.
    pub de_cm1: Option<f64>,
    /// `"monte-carlo"` (16–84 % half-width) or `"covariance"`.
    pub sigma_stat_source: Option<String>,
    /// Lower end of the stated interval for D0, cm⁻¹ (never below the observed sum).
    #[serde(default)]
    pub d0_low_cm1: Option<f64>,
    /// Upper end of the stated interval for D0, cm⁻¹ (the interval may be asymmetric).
    #[serde(default)]
    pub d0_high_cm1: Option<f64>,
    /// v_D of the recommended estimate.
    #[serde(default)]
    pub v_d: Option<f64>,
    /// Lower end of the interval for v_D.
    #[serde(default)]
    pub v_d_low: Option<f64>,
    /// Upper end of the interval for v_D.
    #[serde(default)]
    pub v_d_high: Option<f64>,
    /// Smallest number of bound levels consistent with the interval of v_D.
    #[serde(default)]
    pub n_bound_min: Option<u64>,
    /// Largest number of bound levels consistent with the interval of v_D.
    #[serde(default)]
    pub n_bound_max: Option<u64>,
    /// Methods whose D0 make up σ_model and the interval: the admitted estimates, or every
    /// estimate with physical parameters when no fit describes the data.
    pub spread_methods: Vec<String>,
    /// One-line reason.
    pub reason: String,
    /// Binding energy of the highest observed level, D0 − observed sum = D − E(v_top): what the
    /// levels say about the limit without G(0), cm⁻¹.
    #[serde(default)]
    pub above_top_cm1: Option<f64>,
    /// Lower end of its interval (never below 0), cm⁻¹.
    #[serde(default)]
    pub above_top_low_cm1: Option<f64>,
    /// Upper end of its interval, cm⁻¹.
    #[serde(default)]
    pub above_top_high_cm1: Option<f64>,
    /// Its statistical and model σ (those of D0, which it shares), cm⁻¹.
    #[serde(default)]
    pub above_top_sigma_stat_cm1: Option<f64>,
    /// See `above_top_sigma_stat_cm1`.
    #[serde(default)]
    pub above_top_sigma_model_cm1: Option<f64>,
    /// The asymptote on the data's energy scale, E(v_top) + `above_top_cm1`, cm⁻¹.
    #[serde(default)]
    pub asymptote_cm1: Option<f64>,
    /// Whether D0 and De are stated: false when G(0) would be a long extrapolation below the
    /// lowest level (the levels start farther above v = 0 than they span).
    #[serde(default = "yes")]
    pub d0_determined: bool,
}

fn yes() -> bool {
    true
}

/// Verdict for every candidate plus the recommendation and warnings.
#[derive(Debug, Clone)]
pub struct Assessment {
    /// (admitted, why) per candidate, in input order.
    pub defensible: Vec<(bool, String)>,
    /// The recommendation.
    pub recommended: Recommended,
    /// Disagreements and impossibilities.
    pub warnings: Vec<String>,
}

fn pct(x: f64) -> String {
    let p = 100.0 * x;
    if !(1.0..99.0).contains(&p) {
        format!("{p:.2} %")
    } else {
        format!("{p:.1} %")
    }
}

fn sig(x: &Lin, cov: Option<&DMatrix<f64>>) -> f64 {
    cov.map_or(0.0, |c| x.sigma(c))
}

/// Step 1 for one candidate: `Err(reason)` when it is not admitted on hard grounds, `Ok(p)` with
/// its fit probability otherwise (the fit-quality test is applied across candidates).
fn admit_one(c: &Candidate, ev: &Evidence, cov: Option<&DMatrix<f64>>) -> Result<f64, String> {
    let Some(d0) = &c.d0 else {
        return Err("no limit from this method".into());
    };
    if let Some(f) = &c.fit
        && !f.converged
    {
        return Err("its fit did not converge, so it is no evidence".into());
    }
    if let Some(n) = c.n_fitted
        && !(n > 2.0 && n <= N_FREE_PLAUSIBLE_MAX)
    {
        return Err(format!(
            "the fitted n = {n:.1} lies outside the range of long-range exponents of real molecules (n ≤ {N_FREE_PLAUSIBLE_MAX:.0}): these levels do not determine n"
        ));
    }
    if let (Some(cn), Some(th)) = (c.cn_fitted, ev.cn_theory)
        && (cn / th).ln().abs() > 2f64.ln()
    {
        return Err(format!(
            "its fitted C_n is {:.3} times the theoretical value given: the levels it fits are not yet in the long-range region",
            cn / th
        ));
    }
    if let Some(obs) = &ev.observed {
        let diff = d0.minus(obs);
        if diff.value < -2.0 * sig(&diff, cov).max(1e-12 * obs.value.abs()) {
            return Err("it lies below the observed sum of spacings, which is impossible for a correct numbering".into());
        }
    }
    if c.family.is_near_dissociation()
        && let Some(curv) = &ev.top_curvature
        && curv.value < -2.0 * sig(curv, cov)
    {
        return Err("the top observed spacings still curve downward, so the levels have not reached the region where the near-dissociation law holds".into());
    }
    Ok(c.fit.map_or(1.0, |f| f.p_value()))
}

/// Step 1 across candidates.
struct Admission {
    /// Admitted flag and reason per candidate.
    flags: Vec<(bool, String)>,
    /// Whether no fit passed the fit-quality test (the least bad were kept).
    fallback: bool,
    /// Candidates that pass every check except fit quality.
    physical: Vec<usize>,
}

fn admit(cands: &[Candidate], ev: &Evidence, cov: Option<&DMatrix<f64>>) -> Admission {
    let hard: Vec<Result<f64, String>> = cands
        .iter()
        .map(|c| match c.family {
            Family::ObservedSum => {
                Err("a lower bound to D0 (sum of observed spacings, no extrapolation)".to_string())
            }
            _ => admit_one(c, ev, cov),
        })
        .collect();
    let any_pass = hard
        .iter()
        .any(|h| h.as_ref().is_ok_and(|p| *p >= FIT_P_MIN));
    let best_chi2r = cands
        .iter()
        .zip(&hard)
        .filter(|(_, h)| h.is_ok())
        .filter_map(|(c, _)| c.fit.and_then(|f| f.chi2_reduced()))
        .fold(f64::INFINITY, f64::min);
    let physical = (0..cands.len()).filter(|&i| hard[i].is_ok()).collect();
    let flags = cands
        .iter()
        .zip(hard)
        .map(|(c, h)| match h {
            Err(why) => (false, why),
            Ok(p) if p >= FIT_P_MIN => (true, admitted_reason(c)),
            Ok(_) if !any_pass => {
                let r = c.fit.and_then(|f| f.chi2_reduced()).unwrap_or(f64::INFINITY);
                if r <= MISFIT_SLACK * best_chi2r {
                    (true, format!("kept although its fit misses the data (χ²/ν = {}): no method describes these data within their uncertainties", significant(r, 3)))
                } else {
                    (false, format!("its fit misses the data (χ²/ν = {}) more than the best method's", significant(r, 3)))
                }
            }
            Ok(_) => {
                let r = c.fit.and_then(|f| f.chi2_reduced()).unwrap_or(f64::NAN);
                (false, format!("its fit misses the data it was fitted to (χ²/ν = {}, probability below {FIT_P_MIN}) while other methods describe them", significant(r, 3)))
            }
        })
        .collect();
    Admission {
        flags,
        fallback: !any_pass,
        physical,
    }
}

fn admitted_reason(c: &Candidate) -> String {
    let q = c
        .fit
        .and_then(|f| f.chi2_reduced())
        .map(|r| format!(" (χ²/ν = {})", significant(r, 3)))
        .unwrap_or_default();
    match c.family {
        Family::NearDissociation { .. } => format!(
            "its near-dissociation fit describes the top levels{q}, with physical parameters"
        ),
        Family::Expansion => format!(
            "its expansion describes all the levels{q}, and its levels rise and its spacings shrink all the way to the limit"
        ),
        Family::PotentialFit => format!(
            "the levels of its potential curve describe all the observed levels{q}, and the curve reaches the limit along its long-range tail"
        ),
        _ => format!(
            "its polynomial describes the levels{q} and its limit lies above the observed sum"
        ),
    }
}

/// Step 2: the preferred estimate among the admitted ones.
/// On what grounds the recommended estimate was chosen.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Basis {
    /// Lowest AICc among the admitted models of all levels.
    Aicc,
    /// The family expected for these data.
    Family,
    /// The preferred family was not admitted: smallest χ²_ν.
    BestFit,
}

fn prefer(
    cands: &[Candidate],
    admitted: &[(bool, String)],
    ev: &Evidence,
) -> Option<(usize, Basis)> {
    let ok = |i: usize| admitted[i].0;
    let near = ev.spacing_ratio.is_some_and(|r| r <= NEAR_RATIO);
    let first =
        |pred: &dyn Fn(&Candidate) -> bool| (0..cands.len()).find(|&i| ok(i) && pred(&cands[i]));
    let aicc = |i: usize| cands[i].fit.and_then(|f| f.aicc());
    // Models of all levels are compared on the same data by AICc.
    let by_aicc = (0..cands.len())
        .filter(|&i| ok(i) && cands[i].family.fits_all_levels() && aicc(i).is_some())
        .min_by(|&a, &b| {
            aicc(a)
                .unwrap_or(f64::INFINITY)
                .total_cmp(&aicc(b).unwrap_or(f64::INFINITY))
        });
    let has_expansion = by_aicc.is_some() && first(&|c| c.family.reaches_the_limit()).is_some();
    if has_expansion {
        return by_aicc.map(|i| (i, Basis::Aicc));
    }
    let by_family = if near {
        first(&|c| c.family == Family::NearDissociation { primary: true })
            .or_else(|| first(&|c| c.family.is_near_dissociation()))
    } else {
        first(&|c| c.family == Family::CurvedBs { significant: true })
            .or_else(|| first(&|c| c.family == Family::LinearBs))
            .or_else(|| first(&|c| c.family.is_polynomial()))
    };
    let by_family = by_family.map(|i| (i, Basis::Family));
    by_family.or_else(|| {
        let best = (0..cands.len()).filter(|&i| ok(i)).min_by(|&a, &b| {
            let r = |i: usize| {
                cands[i]
                    .fit
                    .and_then(|f| f.chi2_reduced())
                    .unwrap_or(f64::INFINITY)
            };
            r(a).total_cmp(&r(b))
        });
        best.map(|i| (i, Basis::BestFit))
    })
}

/// The interval [lo, hi] of step 4 around `best` for values `vals` of the admitted estimates.
fn interval(best: f64, vals: &[f64], sigma_model: f64, sigma_stat: f64) -> (f64, f64) {
    let lo = vals
        .iter()
        .copied()
        .fold(best - 2.0 * sigma_model, f64::min);
    let hi = vals
        .iter()
        .copied()
        .fold(best + 2.0 * sigma_model, f64::max);
    (lo - 2.0 * sigma_stat, hi + 2.0 * sigma_stat)
}

fn reason_for(c: &Candidate, ev: &Evidence, basis: Basis, lone: bool) -> String {
    let coverage = 1.0 - c.extrapolated_fraction.unwrap_or(1.0);
    let near = ev.spacing_ratio.is_some_and(|r| r <= NEAR_RATIO);
    let mut s = match c.family {
        _ if basis == Basis::Aicc => format!(
            "of the admitted models of all the levels (polynomials, the near-dissociation expansion and the fitted potential), this one has the lowest AICc, so it is preferred; the levels reach {} of the well",
            pct(coverage)
        ),
        Family::NearDissociation { .. } if near => format!(
            "the observed spacings shrink to {} of their largest value, so the levels approach the limit and the near-dissociation (LeRoy–Bernstein, n = {}) fit is preferred; the levels reach {} of the well",
            pct(ev.spacing_ratio.unwrap_or(0.0)),
            ev.lb_n,
            pct(coverage)
        ),
        Family::CurvedBs { .. } if !near => format!(
            "the levels reach {} of the well and the spacings curve significantly (order {} selected), so the curved Birge–Sponer extrapolation is preferred; {} of D0 rests on the polynomial beyond the data",
            pct(coverage),
            ev.selected_order,
            pct(1.0 - coverage)
        ),
        Family::LinearBs if !near => format!(
            "the levels reach {} of the well and the spacings are linear within their errors (order {} selected), so the linear Birge–Sponer extrapolation is used; from low levels it typically overestimates De of covalent molecules and underestimates that of ionic ones",
            pct(coverage),
            ev.selected_order
        ),
        _ => format!(
            "the method expected for these data was not admitted, so the admitted estimate whose own fit describes the data best is used; the levels reach {} of the well",
            pct(coverage)
        ),
    };
    if lone {
        s.push_str("; it is the only admitted estimate, so its model uncertainty is half its extrapolated part");
    }
    s
}

/// Decide admission, recommend, state the interval, and warn (the rule of the module docs).
pub fn assess(cands: &[Candidate], cov_eff: Option<&DMatrix<f64>>, ev: &Evidence) -> Assessment {
    let adm = admit(cands, ev, cov_eff);
    let defensible = adm.flags;
    let mut warnings = Vec::new();
    if adm.fallback && defensible.iter().any(|d| d.0) {
        warnings.push("no method's own fit describes the data within their uncertainties: the value comes from the least bad fit, and the interval spans every estimate with physical parameters".into());
    }
    let spread: Vec<usize> = (0..cands.len()).filter(|&i| defensible[i].0).collect();
    // When no model describes the data, fit quality cannot choose among them: the model
    // uncertainty spans every estimate that is physical, admitted or not.
    let model_set = if adm.fallback { &adm.physical } else { &spread };
    let mut recommended = match prefer(cands, &defensible, ev) {
        None => none_recommended(),
        Some((i, basis)) => recommend_from(cands, model_set, (i, basis), ev),
    };
    near_threshold_view(&mut recommended, ev);
    if let Some(cov) = cov_eff {
        disagreement_warnings(cands, &spread, cov, &mut warnings);
    }
    Assessment {
        defensible,
        recommended,
        warnings,
    }
}

fn none_recommended() -> Recommended {
    Recommended {
        method: None,
        d0_cm1: None,
        sigma_stat_cm1: None,
        sigma_model_cm1: None,
        de_cm1: None,
        sigma_stat_source: None,
        d0_low_cm1: None,
        d0_high_cm1: None,
        v_d: None,
        v_d_low: None,
        v_d_high: None,
        n_bound_min: None,
        n_bound_max: None,
        spread_methods: vec![],
        reason: "no method gives a defensible dissociation limit for these data (see each estimate's reason)".into(),
        above_top_cm1: None,
        above_top_low_cm1: None,
        above_top_high_cm1: None,
        above_top_sigma_stat_cm1: None,
        above_top_sigma_model_cm1: None,
        asymptote_cm1: None,
        d0_determined: true,
    }
}

fn recommend_from(
    cands: &[Candidate],
    model_set: &[usize],
    (i, basis): (usize, Basis),
    ev: &Evidence,
) -> Recommended {
    let c = &cands[i];
    let (sigma, source) = match (c.sigma_mc, c.sigma_cov) {
        (Some(s), _) => (Some(s), Some("monte-carlo".to_string())),
        (None, Some(s)) => (Some(s), Some("covariance".to_string())),
        _ => (None, None),
    };
    let observed = ev.observed.as_ref().map(|o| o.value);
    let raw = c.d0.as_ref().map_or(f64::NAN, |d| d.value);
    let d0 = observed.map_or(raw, |o| raw.max(o));
    let d0s: Vec<f64> = model_set
        .iter()
        .filter_map(|&j| cands[j].d0.as_ref().map(|d| d.value))
        .collect();
    let half_range = |v: &[f64]| {
        let lo = v.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        if v.len() >= 2 { 0.5 * (hi - lo) } else { 0.0 }
    };
    let extrapolated = observed.map_or(d0 * c.extrapolated_fraction.unwrap_or(1.0), |o| d0 - o);
    let sigma_model = half_range(&d0s).max(0.5 * extrapolated.max(0.0));
    let s_stat = sigma.unwrap_or(0.0);
    let (lo, hi) = interval(d0, &d0s, sigma_model, s_stat);
    let lo = observed.map_or(lo, |o| lo.max(o));
    let (v_d, v_lo, v_hi) = match c.v_d {
        Some((v, s)) => {
            let vds: Vec<f64> = model_set
                .iter()
                .filter_map(|&j| cands[j].v_d.map(|x| x.0))
                .collect();
            let model = half_range(&vds).max(0.5 * (v - ev.v_top).max(0.0));
            let (a, b) = interval(v, &vds, model, s.unwrap_or(0.0));
            (Some(v), Some(a.max(ev.v_top)), Some(b))
        }
        None => (None, None, None),
    };
    let count = |x: f64| x.floor().max(0.0) as u64 + 1;
    Recommended {
        method: Some(c.method.clone()),
        d0_cm1: Some(d0),
        sigma_stat_cm1: sigma,
        sigma_model_cm1: Some(sigma_model),
        de_cm1: c.de.map(|de| de + (d0 - raw)),
        sigma_stat_source: source,
        d0_low_cm1: Some(lo),
        d0_high_cm1: Some(hi),
        v_d,
        v_d_low: v_lo,
        v_d_high: v_hi,
        n_bound_min: v_lo.map(count),
        n_bound_max: v_hi.map(count),
        spread_methods: model_set.iter().map(|&j| cands[j].method.clone()).collect(),
        reason: reason_for(c, ev, basis, d0s.len() < 2),
        // The near-threshold view is filled in afterwards.
        ..none_recommended()
    }
}

/// The binding energy of the top level and the asymptote (G(0) cancels from D0 − observed sum),
/// and — when G(0) would be extrapolated farther below the lowest level than the levels span —
/// D0 and De withdrawn: the data do not determine them.
fn near_threshold_view(rec: &mut Recommended, ev: &Evidence) {
    if let (Some(obs), Some(d0)) = (&ev.observed, rec.d0_cm1) {
        rec.above_top_cm1 = Some(d0 - obs.value);
        rec.above_top_low_cm1 = rec.d0_low_cm1.map(|l| (l - obs.value).max(0.0));
        rec.above_top_high_cm1 = rec.d0_high_cm1.map(|h| h - obs.value);
        rec.above_top_sigma_stat_cm1 = rec.sigma_stat_cm1;
        rec.above_top_sigma_model_cm1 = rec.sigma_model_cm1;
        rec.asymptote_cm1 = ev.e_top.map(|e| e + d0 - obs.value);
    }
    let span = ev.v_top - ev.v_bottom;
    if ev.e0_observed || ev.v_bottom <= span || rec.d0_cm1.is_none() {
        return;
    }
    rec.d0_determined = false;
    rec.d0_cm1 = None;
    rec.de_cm1 = None;
    rec.sigma_stat_cm1 = None;
    rec.sigma_model_cm1 = None;
    rec.sigma_stat_source = None;
    rec.d0_low_cm1 = None;
    rec.d0_high_cm1 = None;
    rec.reason = format!(
        "D0 and De are not determined by these data: the levels start at v = {}, farther above v = 0 than they span, so G(0) would be the fitted polynomial extrapolated over {} levels; the binding energy of the highest level and the asymptote do not need G(0). Method: {}",
        ev.v_bottom, ev.v_bottom, rec.reason
    );
}

fn disagreement_warnings(
    cands: &[Candidate],
    spread: &[usize],
    cov: &DMatrix<f64>,
    warnings: &mut Vec<String>,
) {
    for (x, &i) in spread.iter().enumerate() {
        for &j in &spread[x + 1..] {
            let (Some(a), Some(b)) = (&cands[i].d0, &cands[j].d0) else {
                continue;
            };
            let diff = a.minus(b);
            let s = diff.sigma(cov);
            if s > 0.0 && diff.value.abs() > 2.0 * s {
                warnings.push(format!(
                    "{} and {} differ by {:.4} cm⁻¹ = {:.1} σ of their difference: the models disagree by more than their statistical errors",
                    cands[i].label,
                    cands[j].label,
                    diff.value.abs(),
                    diff.value.abs() / s
                ));
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DVector;

    fn lin(v: f64) -> Lin {
        Lin {
            value: v,
            grad: DVector::from_column_slice(&[1.0, 0.0]),
        }
    }

    fn cand(method: &str, family: Family, d0: f64, chi2: f64, dof: usize) -> Candidate {
        Candidate {
            method: method.into(),
            label: method.into(),
            family,
            d0: Some(lin(d0)),
            de: Some(d0 + 10.0),
            v_d: Some((20.0, Some(0.1))),
            extrapolated_fraction: Some(0.1),
            sigma_cov: Some(1.0),
            sigma_mc: None,
            fit: Some(FitEvidence {
                chi2,
                dof,
                points: dof + 3,
                converged: true,
            }),
            n_fitted: None,
            cn_fitted: None,
        }
    }

    fn evidence(observed: f64, ratio: f64) -> Evidence {
        Evidence {
            observed: Some(lin(observed)),
            top_curvature: None,
            spacing_ratio: Some(ratio),
            v_top: 18.0,
            v_bottom: 0.0,
            e0_observed: true,
            e_top: None,
            cn_theory: None,
            lb_n: 6.0,
            selected_order: 3,
        }
    }

    /// SOURCE: scipy.stats.chi2.sf (scipy 1.17.1): sf(10, 5) = 0.07523524614651217,
    /// sf(30, 4) = 4.894437128029217e-06, sf(3.2, 1) = 0.07363827012030258.
    #[test]
    fn fit_probability_matches_scipy() {
        for (chi2, dof, p) in [
            (10.0, 5, 0.07523524614651217),
            (30.0, 4, 4.894437128029217e-06),
            (3.2, 1, 0.07363827012030258),
        ] {
            let f = FitEvidence {
                chi2,
                dof,
                points: dof + 3,
                converged: true,
            };
            assert!(
                (f.p_value() - p).abs() < 1e-12 * p.max(1e-300) + 1e-15,
                "{chi2} {dof}"
            );
        }
    }

    /// A lone admitted estimate keeps a model σ of half its extrapolated part (the rule's floor,
    /// after LeRoy & Bernstein 1970: uncertainty no larger than the top level's binding energy),
    /// and the interval starts at the observed sum.
    #[test]
    fn lone_estimate_keeps_a_model_sigma() {
        let c = vec![cand(
            "ld",
            Family::NearDissociation { primary: true },
            1000.0,
            3.0,
            3,
        )];
        let a = assess(&c, None, &evidence(980.0, 0.1));
        let r = &a.recommended;
        assert_eq!(r.sigma_model_cm1, Some(10.0));
        assert_eq!(r.d0_low_cm1, Some(980.0), "clipped at the observed sum");
        assert_eq!(r.d0_high_cm1, Some(1000.0 + 20.0 + 2.0));
        // v_D: model σ ½(20 − 18) = 1, σ 0.1 → [18, 22.2] → 19 … 23 bound levels.
        assert_eq!((r.n_bound_min, r.n_bound_max), (Some(19), Some(23)));
        assert!(r.reason.contains("only admitted"));
    }

    /// The observed sum is a hard lower bound (common practice, no source): an estimate below it
    /// is not admitted and the recommendation never lies below it.
    #[test]
    fn below_observed_sum_is_not_admitted() {
        let c = vec![
            cand(
                "low",
                Family::NearDissociation { primary: true },
                900.0,
                3.0,
                3,
            ),
            cand("lin", Family::LinearBs, 1000.0, 3.0, 3),
        ];
        let a = assess(&c, None, &evidence(950.0, 0.1));
        assert!(!a.defensible[0].0, "{}", a.defensible[0].1);
        assert_eq!(a.recommended.method.as_deref(), Some("lin"));
        assert!(a.recommended.d0_low_cm1.unwrap() >= 950.0);
    }

    /// A fit whose χ² is improbable for correct σ (p < 1e-3; scipy chi2.sf(30, 4) = 4.9e-6) is
    /// not admitted while another fits; when none fits, the least bad are kept with a warning.
    #[test]
    fn misfit_is_not_evidence() {
        let c = vec![
            cand(
                "bad",
                Family::NearDissociation { primary: true },
                1000.0,
                30.0,
                4,
            ),
            cand(
                "good",
                Family::CurvedBs { significant: true },
                990.0,
                4.0,
                4,
            ),
        ];
        let a = assess(&c, None, &evidence(950.0, 0.1));
        assert!(!a.defensible[0].0 && a.defensible[1].0);
        assert_eq!(a.recommended.method.as_deref(), Some("good"));
        let c = vec![
            cand("a", Family::LinearBs, 1000.0, 3000.0, 10),
            cand(
                "b",
                Family::CurvedBs { significant: true },
                1010.0,
                4000.0,
                10,
            ),
            cand(
                "c",
                Family::NearDissociation { primary: true },
                1020.0,
                9000.0,
                10,
            ),
        ];
        let a = assess(&c, None, &evidence(950.0, 0.5));
        assert!(a.defensible[0].0 && a.defensible[1].0 && !a.defensible[2].0);
        assert!(!a.warnings.is_empty());
        // No fit describes the data, so the one left out on fit quality alone still bounds the
        // model uncertainty: "b" (1010) is recommended, σ_model = (1020 − 1000)/2 = 10 rather
        // than the 5.5 of half the extrapolated part, and the interval reaches 1010 + 2·10.
        let r = assess(&c, None, &evidence(999.0, 0.5)).recommended;
        assert_eq!(r.method.as_deref(), Some("b"));
        assert_eq!(r.spread_methods, vec!["a", "b", "c"]);
        assert!((r.sigma_model_cm1.unwrap() - 10.0).abs() < 1e-9);
        assert!(r.d0_high_cm1.unwrap() >= 1030.0 - 1e-9);
    }

    /// Which family is preferred is judged from the observed spacings alone.
    #[test]
    fn preference_follows_the_spacings() {
        let c = vec![
            cand("lin", Family::LinearBs, 990.0, 3.0, 3),
            cand(
                "ld",
                Family::NearDissociation { primary: true },
                1000.0,
                3.0,
                3,
            ),
        ];
        let near = assess(&c, None, &evidence(950.0, 0.1));
        assert_eq!(near.recommended.method.as_deref(), Some("ld"));
        let far = assess(&c, None, &evidence(950.0, 0.6));
        assert_eq!(far.recommended.method.as_deref(), Some("lin"));
        // the interval holds both admitted estimates either way
        for a in [near, far] {
            let r = a.recommended;
            assert!(r.d0_low_cm1.unwrap() <= 990.0 && r.d0_high_cm1.unwrap() >= 1000.0);
        }
    }

    /// AICc by hand: χ² = 10, m = 20 points, k = 3 parameters → 10 + 6 + 2·3·4/16 = 17.5
    /// (the closed form of Hurvich & Tsai, Biometrika 76, 297 (1989), from memory).
    #[test]
    fn aicc_matches_the_closed_form() {
        let f = FitEvidence {
            chi2: 10.0,
            dof: 17,
            points: 20,
            converged: true,
        };
        assert!((f.aicc().unwrap() - 17.5).abs() < 1e-12);
        let saturated = FitEvidence {
            chi2: 0.0,
            dof: 1,
            points: 3,
            converged: true,
        };
        assert_eq!(saturated.aicc(), None);
    }

    /// With an admitted expansion, the all-level model of lowest AICc is preferred whichever
    /// family it belongs to; a near-dissociation fit of the top levels does not take part.
    #[test]
    fn an_admitted_expansion_is_weighed_by_aicc() {
        let ev = evidence(950.0, 0.1);
        let mut c = vec![
            cand(
                "curved",
                Family::CurvedBs { significant: true },
                990.0,
                12.0,
                12,
            ),
            cand("nde", Family::Expansion, 1000.0, 10.0, 12),
            cand(
                "ld",
                Family::NearDissociation { primary: true },
                1005.0,
                1.0,
                3,
            ),
        ];
        let a = assess(&c, None, &ev);
        assert_eq!(a.recommended.method.as_deref(), Some("nde"));
        c[1].fit.as_mut().unwrap().chi2 = 14.0;
        let a = assess(&c, None, &ev);
        assert_eq!(a.recommended.method.as_deref(), Some("curved"));
    }

    /// An n-free fit at an implausible n, or one that did not converge, is no evidence.
    #[test]
    fn unphysical_or_unconverged_fits_are_out() {
        let mut c = vec![
            cand(
                "ld",
                Family::NearDissociation { primary: true },
                1000.0,
                3.0,
                3,
            ),
            cand(
                "free",
                Family::NearDissociation { primary: false },
                1100.0,
                3.0,
                3,
            ),
            cand(
                "stuck",
                Family::NearDissociation { primary: false },
                1200.0,
                3.0,
                3,
            ),
        ];
        c[1].n_fitted = Some(40.0);
        c[2].fit.as_mut().unwrap().converged = false;
        let a = assess(&c, None, &evidence(950.0, 0.1));
        assert!(a.defensible[0].0 && !a.defensible[1].0 && !a.defensible[2].0);
        assert_eq!(a.recommended.spread_methods, vec!["ld".to_string()]);
    }
}
