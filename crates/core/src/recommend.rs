//! Choosing among the estimates: which are defensible, the recommended D0, and σ_model.
//!
//! The regime decides (domain.md §1.5, §3.3 trade facts, common practice):
//! - when the near-dissociation (LeRoy–Bernstein, n fixed) fit says the levels reach at least
//!   the configured fraction of the well (default 90 %), that fit is preferred and the other
//!   near-dissociation variants (n free, another level subset, C_n fixed) make up the model
//!   spread; polynomial extrapolations are set aside there, because the long-range tail bends
//!   the spacings upward near the limit and a polynomial extrapolation is biased low;
//! - otherwise the levels are far from the limit, the near-dissociation form does not apply,
//!   and the polynomial (Birge–Sponer) extrapolations are the defensible set: the curved one is
//!   preferred when the selected order shows significant curvature, else the linear one.
//!
//! σ_model is half the range of D0 over the defensible estimates; σ_stat is the Monte Carlo
//! 16–84 % half-width of the recommended estimate when available, else its covariance σ.
//! Pairs of defensible estimates that differ by more than 2σ of their difference (computed with
//! the data covariance, so correlation is accounted for) raise a warning.

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use crate::extrapolate::Lin;

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
}

/// One estimate as seen by the recommendation.
#[derive(Debug, Clone)]
pub struct Candidate {
    /// Method name (JSON `method`).
    pub method: String,
    /// Family.
    pub family: Family,
    /// D0 with its gradient, `None` when the method gives no limit.
    pub d0: Option<Lin>,
    /// De value when there is a limit.
    pub de: Option<f64>,
    /// Extrapolated fraction when there is a limit.
    pub extrapolated_fraction: Option<f64>,
    /// Covariance σ of D0.
    pub sigma_cov: Option<f64>,
    /// Monte Carlo 16–84 % half-width of D0.
    pub sigma_mc: Option<f64>,
    /// A reason to keep this estimate out of the recommendation whatever the regime.
    pub veto: Option<String>,
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
    /// Model σ: half the range of D0 over the defensible estimates, cm⁻¹ (null with fewer than two).
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
    /// Smallest number of bound levels consistent with the interval of v_D.
    #[serde(default)]
    pub n_bound_min: Option<u64>,
    /// Largest number of bound levels consistent with the interval of v_D.
    #[serde(default)]
    pub n_bound_max: Option<u64>,
    /// Methods whose D0 make up σ_model.
    pub spread_methods: Vec<String>,
    /// One-line reason.
    pub reason: String,
}

/// Verdict for every candidate plus the recommendation and warnings.
#[derive(Debug, Clone)]
pub struct Assessment {
    /// (defensible, why) per candidate, in input order.
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

/// Decide defensibility, recommend, and warn.
///
/// `near_coverage` is the fraction of the well the levels must reach for the near-dissociation
/// regime; `lb_n` labels the reason; `selected_order` is the order chosen for G(v);
/// `observed` is the observed sum (lower bound) when available.
pub fn assess(
    cands: &[Candidate],
    cov_eff: Option<&DMatrix<f64>>,
    near_coverage: f64,
    lb_n: f64,
    selected_order: usize,
    observed: Option<&Lin>,
) -> Assessment {
    let primary = cands
        .iter()
        .position(|c| c.family == Family::NearDissociation { primary: true } && c.d0.is_some());
    let lb_cov = primary
        .and_then(|i| cands[i].extrapolated_fraction)
        .map(|f| 1.0 - f);
    let near = lb_cov.is_some_and(|c| c >= near_coverage);
    let mut defensible = Vec::with_capacity(cands.len());
    for c in cands {
        let cov = c.extrapolated_fraction.map(|f| 1.0 - f);
        let v = match (c.family, &c.d0) {
            (Family::ObservedSum, _) => (
                false,
                "a lower bound to D0 (sum of observed spacings, no extrapolation)".to_string(),
            ),
            (_, None) => (false, "no limit from this method".to_string()),
            _ if c.veto.is_some() => (false, c.veto.clone().unwrap_or_default()),
            (Family::NearDissociation { .. }, Some(_)) if near => (
                true,
                format!(
                    "near-dissociation regime: the levels reach {} of the well",
                    pct(lb_cov.unwrap_or(0.0))
                ),
            ),
            (Family::NearDissociation { .. }, Some(_)) => (
                false,
                format!(
                    "the levels reach only {} of the well by the near-dissociation fit (regime needs {}): the model holds only for levels in the long-range region",
                    pct(lb_cov.or(cov).unwrap_or(0.0)),
                    pct(near_coverage)
                ),
            ),
            (Family::LinearBs | Family::CurvedBs { .. }, Some(_)) if near => (
                false,
                format!(
                    "levels reach {} of the well: a polynomial extrapolation ignores the long-range tail that bends the spacings upward near the limit (biased low, domain.md §1.5)",
                    pct(lb_cov.unwrap_or(0.0))
                ),
            ),
            (Family::CurvedBs { significant: false }, Some(_)) => (
                false,
                format!(
                    "the curvature of the spacings is not significant (order {selected_order} selected)"
                ),
            ),
            (Family::LinearBs | Family::CurvedBs { .. }, Some(_)) => (
                true,
                "levels far from the limit: polynomial extrapolation".to_string(),
            ),
        };
        defensible.push(v);
    }
    let choice = if near {
        primary
    } else {
        let curved = cands
            .iter()
            .enumerate()
            .position(|(i, c)| matches!(c.family, Family::CurvedBs { .. }) && defensible[i].0);
        let linear = cands
            .iter()
            .enumerate()
            .position(|(i, c)| c.family == Family::LinearBs && defensible[i].0);
        curved.or(linear)
    };
    let spread: Vec<usize> = (0..cands.len()).filter(|&i| defensible[i].0).collect();
    let d0s: Vec<f64> = spread
        .iter()
        .filter_map(|&i| cands[i].d0.as_ref().map(|d| d.value))
        .collect();
    let sigma_model = (d0s.len() >= 2).then(|| {
        let lo = d0s.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = d0s.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        0.5 * (hi - lo)
    });
    let recommended = match choice {
        None => Recommended {
            method: None,
            d0_cm1: None,
            sigma_stat_cm1: None,
            sigma_model_cm1: None,
            de_cm1: None,
            sigma_stat_source: None,
            d0_low_cm1: None,
            d0_high_cm1: None,
            n_bound_min: None,
            n_bound_max: None,
            spread_methods: vec![],
            reason: "no method gives a defensible dissociation limit for these data (see each estimate's reason)".into(),
        },
        Some(i) => {
            let c = &cands[i];
            let (sigma, source) = match (c.sigma_mc, c.sigma_cov) {
                (Some(s), _) => (Some(s), Some("monte-carlo".to_string())),
                (None, Some(s)) => (Some(s), Some("covariance".to_string())),
                _ => (None, None),
            };
            let coverage = 1.0 - c.extrapolated_fraction.unwrap_or(1.0);
            let reason = match c.family {
                Family::NearDissociation { .. } => format!(
                    "levels reach {} of the well (extrapolated fraction {}), so the near-dissociation (LeRoy–Bernstein, n = {lb_n}) fit is preferred",
                    pct(coverage),
                    pct(1.0 - coverage)
                ),
                Family::CurvedBs { .. } => format!(
                    "levels reach {} of the well and the spacings curve significantly (order {selected_order} selected), so the curved Birge–Sponer extrapolation is preferred; {} of D0 rests on the polynomial beyond the data",
                    pct(coverage),
                    pct(1.0 - coverage)
                ),
                _ => format!(
                    "levels reach {} of the well and the spacings are linear within their errors (order {selected_order} selected), so the linear Birge–Sponer extrapolation is used; from low levels it typically overestimates De of covalent molecules (domain.md §1.5, common practice)",
                    pct(coverage)
                ),
            };
            let reason = if sigma_model.is_none() {
                format!("{reason}; only one defensible estimate, so no model spread is available")
            } else {
                reason
            };
            Recommended {
                method: Some(c.method.clone()),
                d0_cm1: c.d0.as_ref().map(|d| d.value),
                sigma_stat_cm1: sigma,
                sigma_model_cm1: sigma_model,
                de_cm1: c.de,
                sigma_stat_source: source,
                d0_low_cm1: None,
                d0_high_cm1: None,
                n_bound_min: None,
                n_bound_max: None,
                spread_methods: spread.iter().map(|&i| cands[i].method.clone()).collect(),
                reason,
            }
        }
    };
    let mut warnings = Vec::new();
    if let Some(cov) = cov_eff {
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
                        cands[i].method,
                        cands[j].method,
                        diff.value.abs(),
                        diff.value.abs() / s
                    ));
                }
            }
        }
        if let Some(obs) = observed {
            for c in cands {
                let Some(d) = &c.d0 else { continue };
                if c.family == Family::ObservedSum {
                    continue;
                }
                let diff = d.minus(obs);
                let s = diff.sigma(cov);
                if diff.value < -2.0 * s.max(1e-12 * obs.value.abs()) {
                    warnings.push(format!(
                        "{} gives D0 below the observed sum of spacings by {:.4} cm⁻¹ ({:.1} σ): impossible if the numbering and the data are right",
                        c.method,
                        -diff.value,
                        if s > 0.0 { -diff.value / s } else { f64::INFINITY }
                    ));
                }
            }
        }
    }
    Assessment {
        defensible,
        recommended,
        warnings,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use nalgebra::DVector;

    fn cand(method: &str, family: Family, d0: f64, ext: f64) -> Candidate {
        Candidate {
            method: method.into(),
            family,
            d0: Some(Lin {
                value: d0,
                grad: DVector::from_column_slice(&[1.0, 0.0]),
            }),
            de: Some(d0 + 10.0),
            extrapolated_fraction: Some(ext),
            sigma_cov: Some(1.0),
            sigma_mc: None,
            veto: None,
        }
    }

    /// A vetoed estimate is shown but neither recommended nor part of the spread.
    #[test]
    fn vetoed_estimate_is_not_defensible() {
        let mut c = vec![
            cand(
                "leroy-bernstein",
                Family::NearDissociation { primary: true },
                1000.0,
                0.01,
            ),
            cand(
                "leroy-bernstein-n-free",
                Family::NearDissociation { primary: false },
                900.0,
                0.01,
            ),
        ];
        c[1].veto = Some("n out of range".into());
        let a = assess(&c, None, 0.9, 6.0, 2, None);
        assert!(a.defensible[0].0 && !a.defensible[1].0);
        assert_eq!(a.defensible[1].1, "n out of range");
    }

    /// Rule check (common practice, domain.md §3.3 trade facts): with levels reaching 99 % of the
    /// well the near-dissociation fit is recommended and the polynomial ones are set aside.
    #[test]
    fn near_dissociation_regime() {
        let c = vec![
            cand("birge-sponer-linear", Family::LinearBs, 90.0, 0.05),
            cand(
                "leroy-bernstein",
                Family::NearDissociation { primary: true },
                100.0,
                0.01,
            ),
            cand(
                "leroy-bernstein-n-free",
                Family::NearDissociation { primary: false },
                102.0,
                0.01,
            ),
        ];
        let a = assess(&c, None, 0.9, 6.0, 4, None);
        assert_eq!(a.recommended.method.as_deref(), Some("leroy-bernstein"));
        assert!(!a.defensible[0].0 && a.defensible[1].0 && a.defensible[2].0);
        assert_eq!(a.recommended.sigma_model_cm1, Some(1.0));
    }

    #[test]
    fn low_coverage_prefers_polynomials() {
        let c = vec![
            cand("birge-sponer-linear", Family::LinearBs, 90.0, 0.5),
            cand(
                "birge-sponer-curved",
                Family::CurvedBs { significant: false },
                80.0,
                0.5,
            ),
            cand(
                "leroy-bernstein",
                Family::NearDissociation { primary: true },
                100.0,
                0.4,
            ),
        ];
        let a = assess(&c, None, 0.9, 6.0, 2, None);
        assert_eq!(a.recommended.method.as_deref(), Some("birge-sponer-linear"));
        assert_eq!(a.recommended.sigma_model_cm1, None);
        assert!(a.recommended.reason.contains("only one defensible"));
    }
}
