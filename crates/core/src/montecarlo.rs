//! Seeded Monte Carlo propagation of the data uncertainty through every estimator.
//!
//! Each draw is y* = y + L z with L the Cholesky factor of the (effective) data covariance and
//! z ~ N(0, 1) (domain.md §1.6); every estimator is then refitted on y* with its model choices
//! held fixed (polynomial order, level subset, n when fixed). The generator is ChaCha8 from
//! `rand` (a documented, platform-independent stream for a given seed) and normal deviates come
//! from `rand_distr`'s `StandardNormal`, so a seed reproduces the same numbers natively and in
//! the browser. The seed is recorded in every report.
//!
//! Draws in which a method finds no limit count as D0 = +∞ (an infinitely deep well is what
//! "no limit" means), so an upper percentile can be unbounded; draws in which a refit fails
//! numerically are excluded and counted.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::DMatrix;
use rand::SeedableRng;
use rand::rngs::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use serde::{Deserialize, Serialize};

use crate::extrapolate::{DrawValue, Redraw};
use crate::{Error, Result};

/// Most Monte Carlo samples an analysis accepts: each draw refits every estimator, so the
/// cap bounds the work a typed number can ask for.
pub const MAX_SAMPLES: u32 = 1_000_000;

/// Name of the generator, as recorded in reports.
pub const GENERATOR: &str = "ChaCha8 (rand 0.10) with StandardNormal (rand_distr 0.6)";

/// Distribution summary of one quantity over the draws.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct McSummary {
    /// Draws that gave a finite value.
    pub finite: usize,
    /// Draws without a limit (counted as +∞).
    pub no_limit: usize,
    /// Draws whose refit failed (excluded).
    pub failed: usize,
    /// Median; null if it falls among the unbounded draws.
    pub median: Option<f64>,
    /// 16th percentile.
    pub p16: Option<f64>,
    /// 84th percentile; null when unbounded.
    pub p84: Option<f64>,
    /// Mean of the draws (only when every counted draw is finite).
    pub mean: Option<f64>,
    /// Standard deviation of the draws (only when every counted draw is finite).
    pub sd: Option<f64>,
}

impl McSummary {
    /// Half the 16–84 % interval, when both ends are finite.
    pub fn half_width(&self) -> Option<f64> {
        Some(0.5 * (self.p84? - self.p16?))
    }

    /// Summarise values (+∞ for no limit, NaN for failures).
    pub fn of(values: &mut [f64]) -> Self {
        let failed = values.iter().filter(|x| x.is_nan()).count();
        let no_limit = values.iter().filter(|x| **x == f64::INFINITY).count();
        let mut v: Vec<f64> = values.iter().copied().filter(|x| !x.is_nan()).collect();
        v.sort_by(f64::total_cmp);
        let finite = v.len() - no_limit;
        let q = |p: f64| -> Option<f64> {
            if v.is_empty() {
                return None;
            }
            let h = (v.len() - 1) as f64 * p;
            let lo = h.floor() as usize;
            let hi = (lo + 1).min(v.len() - 1);
            let frac = h - lo as f64;
            let a = v[lo];
            let b = v[hi];
            if !a.is_finite() || (frac > 0.0 && !b.is_finite()) {
                return None;
            }
            Some(if frac > 0.0 { a + frac * (b - a) } else { a })
        };
        let (mean, sd) = if no_limit == 0 && finite >= 2 {
            let m = v.iter().sum::<f64>() / finite as f64;
            let var = v.iter().map(|x| (x - m) * (x - m)).sum::<f64>() / (finite - 1) as f64;
            (Some(m), Some(var.sqrt()))
        } else {
            (None, None)
        };
        Self {
            finite,
            no_limit,
            failed,
            median: q(0.5),
            p16: q(0.16),
            p84: q(0.84),
            mean,
            sd,
        }
    }
}

/// Monte Carlo results of one estimator.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct McResult {
    /// D0 over the draws.
    pub d0: McSummary,
    /// De over the draws.
    pub de: McSummary,
    /// v_D over the draws (empty when the method has no v_D).
    pub v_d: McSummary,
}

/// How many draws pass between two calls of the progress hook.
pub const PROGRESS_EVERY: usize = 100;

/// Run `samples` draws from N(y, cov) through every estimator. Estimator `e` sees its draws
/// with the perturbation multiplied by `scales[e]` (its own σ scaling; 1 leaves the draw as is),
/// and the unscaled perturbation beside it for parts of its estimate that carry other factors,
/// so every estimator is fed the same standard-normal numbers. `progress(done, total)` is called
/// every [`PROGRESS_EVERY`] draws and once at the end (the page shows a progress bar).
pub fn run(
    y: &[f64],
    cov: &DMatrix<f64>,
    samples: usize,
    seed: u64,
    estimators: &mut [&mut dyn Redraw],
    scales: &[f64],
    progress: &mut dyn FnMut(usize, usize),
) -> Result<Vec<McResult>> {
    if scales.len() != estimators.len() {
        return Err(Error::numerical(
            "Monte Carlo",
            "one σ scale per estimator is needed",
        ));
    }
    let n = y.len();
    let chol = nalgebra::Cholesky::new(cov.clone()).ok_or_else(|| {
        Error::numerical(
            "Monte Carlo",
            "the data covariance is not positive definite",
        )
    })?;
    let l = chol.l();
    // The non-zero entries of the lower triangle, row by row, for a tight inner loop (a
    // diagonal covariance, the common case, leaves n of them; skipped terms are exact zeros).
    let mut lp: Vec<(usize, f64)> = Vec::with_capacity(n * (n + 1) / 2);
    let mut row_end = Vec::with_capacity(n);
    for i in 0..n {
        for j in 0..=i {
            if l[(i, j)] != 0.0 {
                lp.push((j, l[(i, j)]));
            }
        }
        row_end.push(lp.len());
    }
    let m = estimators.len();
    let mut d0 = vec![vec![0.0; samples]; m];
    let mut de = vec![vec![0.0; samples]; m];
    let mut vd = vec![vec![0.0; samples]; m];
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut z = vec![0.0; n];
    let mut dy = vec![0.0; n];
    let mut ys = vec![0.0; n];
    let mut dy_k = vec![0.0; n];
    let mut ys_k = vec![0.0; n];
    for s in 0..samples {
        for zi in z.iter_mut() {
            *zi = StandardNormal.sample(&mut rng);
        }
        let mut start = 0;
        for i in 0..n {
            let mut acc = 0.0;
            for &(j, lij) in &lp[start..row_end[i]] {
                acc += lij * z[j];
            }
            start = row_end[i];
            dy[i] = acc;
            ys[i] = y[i] + acc;
        }
        for (e, est) in estimators.iter_mut().enumerate() {
            let k = scales[e];
            let value = if k == 1.0 {
                est.draw(&ys, &dy, &dy)
            } else {
                for i in 0..n {
                    dy_k[i] = k * dy[i];
                    ys_k[i] = y[i] + dy_k[i];
                }
                est.draw(&ys_k, &dy_k, &dy)
            };
            let (a, b, c) = match value {
                DrawValue::Value { d0, de, v_d } => (d0, de, v_d),
                DrawValue::NoLimit => (f64::INFINITY, f64::INFINITY, f64::INFINITY),
                DrawValue::Failed => (f64::NAN, f64::NAN, f64::NAN),
            };
            d0[e][s] = a;
            de[e][s] = b;
            vd[e][s] = c;
        }
        if (s + 1) % PROGRESS_EVERY == 0 || s + 1 == samples {
            progress(s + 1, samples);
        }
    }
    Ok((0..m)
        .map(|e| McResult {
            d0: McSummary::of(&mut d0[e]),
            de: McSummary::of(&mut de[e]),
            v_d: McSummary::of(&mut vd[e]),
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: definition of the type-7 sample quantile (numpy.percentile default, linear
    /// interpolation): for 1..=5 the 16th percentile is 1 + 0.64 = 1.64 and the median 3. Exact.
    #[test]
    fn percentiles_type7() {
        let mut v = vec![5.0, 1.0, 3.0, 2.0, 4.0];
        let s = McSummary::of(&mut v);
        assert!((s.p16.unwrap() - 1.64).abs() < 1e-12);
        assert_eq!(s.median, Some(3.0));
        assert!((s.p84.unwrap() - 4.36).abs() < 1e-12);
    }

    #[test]
    fn unbounded_upper_percentile_is_null() {
        let mut v = vec![1.0, 2.0, f64::INFINITY, f64::INFINITY, f64::NAN];
        let s = McSummary::of(&mut v);
        assert_eq!((s.no_limit, s.failed, s.finite), (2, 1, 2));
        assert_eq!(s.p84, None);
        assert_eq!(s.mean, None);
    }
}
