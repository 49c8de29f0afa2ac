//! Stages 4–5 of the analysis: each estimate's σ factor, the Monte Carlo over every estimator on
//! the same draws, and the assessment (admission, preference, σ_model, interval) by
//! [`crate::recommend`].

use super::SigmaSource;
use super::estimators::Work;
use super::prepare::Prepared;
use crate::extrapolate::{Lin, Nominal, Redraw};
use crate::montecarlo;
use crate::recommend::{self, Assessment, Candidate, Evidence, Family, FitEvidence};
use crate::spacings::LevelView;

/// Each estimate's σ factor.
pub(super) struct Scales {
    /// Square of the factor applied to the data σ for this estimate (its own fit's χ²_ν under
    /// the policy; 1 for the observed sum; the common factor with σ from the scatter).
    pub own_factor2: Vec<f64>,
    /// The factor in the effective covariance's terms: it scales the Monte Carlo draws and the
    /// detail σ.
    pub rel: Vec<f64>,
    /// The factor for the nominal gradients (1 for prescaled estimates, which already carry
    /// every part's own factor).
    pub lin_rel: Vec<f64>,
}

/// Each estimate's statistical σ follows its own fit; say so when any is scaled up.
pub(super) fn scales(p: &Prepared, works: &[Work], warnings: &mut Vec<String>) -> Scales {
    let own_factor2: Vec<f64> = works
        .iter()
        .map(|w| {
            if !p.per_method {
                return p.factor2;
            }
            match w.family {
                Family::ObservedSum => 1.0,
                _ => w.fit.own_chi2r.map_or(1.0, |c| p.policy(c)),
            }
        })
        .collect();
    let rel: Vec<f64> = own_factor2
        .iter()
        .map(|f| {
            if p.factor2 > 0.0 {
                (f / p.factor2).sqrt()
            } else {
                1.0
            }
        })
        .collect();
    let lin_rel: Vec<f64> = works
        .iter()
        .zip(&rel)
        .map(|(w, r)| if w.fit.prescaled { 1.0 } else { *r })
        .collect();
    if p.per_method {
        let scaled: Vec<String> = works
            .iter()
            .zip(&own_factor2)
            .filter(|(w, f)| **f > 1.0 && matches!(w.fit.nominal, Nominal::Limit(_)))
            .map(|(w, f)| format!("{} ×{:.3}", w.method, f.sqrt()))
            .collect();
        if !scaled.is_empty() {
            warnings.push(format!(
                "statistical σ scaled by √χ²_ν of each estimate's own fit (the data scatter more than their σ, or the model does not describe them): {}",
                scaled.join(", ")
            ));
        }
    }
    Scales {
        own_factor2,
        rel,
        lin_rel,
    }
}

/// Redraw the data and refit every estimator that gave a limit; returns whether it ran and
/// a note saying how (or why not).
pub(super) fn monte_carlo(
    p: &Prepared,
    works: &mut [Work],
    scales: &Scales,
    progress: &mut dyn FnMut(usize, usize),
    warnings: &mut Vec<String>,
) -> (bool, String) {
    let samples = p.settings.mc_samples as usize;
    if samples == 0 {
        return (false, "Monte Carlo disabled (0 samples)".into());
    }
    if !p.estimable {
        return (
            false,
            "not run: statistical uncertainties are not estimable for these data".into(),
        );
    }
    let mut refs: Vec<&mut dyn Redraw> = Vec::new();
    let mut which: Vec<usize> = Vec::new();
    let mut draw_scales: Vec<f64> = Vec::new();
    for (i, w) in works.iter_mut().enumerate() {
        if let (Some(e), Nominal::Limit(_)) = (w.fit.redraw.as_mut(), &w.fit.nominal) {
            refs.push(e.as_mut());
            which.push(i);
            draw_scales.push(scales.rel[i]);
        }
    }
    let results = montecarlo::run(
        &p.data.y,
        &p.cov_eff,
        samples,
        p.settings.seed,
        &mut refs,
        &draw_scales,
        progress,
    );
    drop(refs);
    match results {
        Ok(results) => {
            for (i, r) in which.into_iter().zip(results) {
                let bad = r.d0.failed as f64 / samples as f64;
                if bad > 0.05 {
                    warnings.push(format!("{}: {:.1} % of the Monte Carlo refits failed; its distribution is less reliable", works[i].method, 100.0 * bad));
                }
                works[i].mc = Some(r);
            }
            (true, "every model was refitted on each draw of the data (y* = y + Lz, L the Cholesky factor of the data covariance) with its choices held fixed: polynomial order, level subset and, where fixed, n; draws without a limit count as D0 = +∞".into())
        }
        Err(e) => (false, format!("not run: {e}").trim().to_string()),
    }
}

/// The recommendation's view of each estimate, and the rule applied to them.
pub(super) fn assess(
    p: &Prepared,
    works: &[Work],
    scales: &Scales,
    warnings: &mut Vec<String>,
) -> Assessment {
    let cov_opt = p.cov_opt();
    let scaled = |x: &Lin, r: f64| x.grad_scaled(r);
    let observed = works
        .iter()
        .zip(&scales.lin_rel)
        .find(|(w, _)| w.family == Family::ObservedSum)
        .and_then(|(w, r)| match &w.fit.nominal {
            Nominal::Limit(l) => Some(scaled(&l.d0, *r)),
            _ => None,
        });
    // With σ estimated from the selected fit's scatter, every fit's χ² is judged against that
    // estimate.
    let chi2_unit = if p.source == SigmaSource::EstimatedFromScatter && p.factor2 > 0.0 {
        p.factor2
    } else {
        1.0
    };
    let cands: Vec<Candidate> = works
        .iter()
        .zip(&scales.lin_rel)
        .map(|(w, r)| {
            let (d0, de, ext, v_d) = match &w.fit.nominal {
                Nominal::Limit(l) => (
                    Some(scaled(&l.d0, *r)),
                    Some(l.de.value),
                    Some(p.ctx.extrapolated_fraction(l.d0.value)),
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
                fit: w.fit.own_fit.map(|f| FitEvidence {
                    chi2: f.chi2 / chi2_unit,
                    ..f
                }),
                n_fitted: w.fit.n_fitted,
                cn_fitted: w.fit.cn_fitted,
            }
        })
        .collect();
    let (top_curvature, spacing_ratio) = p.view.as_ref().map_or((None, None), spacing_evidence);
    let evidence = Evidence {
        observed,
        top_curvature,
        spacing_ratio,
        v_top: p.ctx.v_top,
        v_bottom: p.ctx.v_bottom,
        e0_observed: p.ctx.e0_observed,
        e_top: p.top_x.as_ref().map(|t| t.value),
        cn_theory: p.settings.lb_cn_cm1_an,
        lb_n: p.settings.lb_n,
        selected_order: p.k_sel,
    };
    let assessment = recommend::assess(&cands, cov_opt, &evidence);
    warnings.extend(assessment.warnings.iter().cloned());
    assessment
}

/// What the observed levels say on their own about the approach to the limit: the curvature of
/// the top spacings (third difference of the top four levels, when they are consecutive) and the
/// top spacing over the largest spacing between consecutive levels.
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
