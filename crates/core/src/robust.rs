//! Points far outside the rest: a robust polynomial fit of a smooth progression (levels G(v) or
//! spacings ΔG) that a gross error (a typo, a wrong assignment) cannot pull towards itself, and
//! the points it leaves far out.
//!
//! Least squares lets one point 450 cm⁻¹ off bend the whole curve and inflate the scatter it is
//! judged against, so the analysis scales every σ instead of naming the point. Here each point is
//! compared with what its neighbours predict for it — a cubic through up to three points on each
//! side, the point itself left out — the typical size of those differences is measured by the
//! median absolute deviation, and the point farthest out is flagged when it exceeds [`CUTOFF`]
//! robust standard deviations and a quarter of the step between its neighbours; it then leaves the neighbourhoods and the search repeats, one
//! point at a time. A smooth progression, however curved towards dissociation, is followed
//! closely by such local cubics; a gross error is not. Nothing is excluded here: the caller
//! reports the points and the user decides.
//!
//! Basis (from memory, common practice): leave-one-out (deleted) residuals; the median absolute
//! deviation scaled by 1.4826 as a consistent estimate of σ for normal errors (Hampel, J. Am.
//! Stat. Assoc. 69, 383 (1974)); the cut at 3.5 robust standard deviations of the modified
//! z-score (Iglewicz & Hoaglin, "How to Detect and Handle Outliers", ASQC 1993); one point
//! removed at a time as in the generalized ESD procedure (Rosner, Technometrics 25, 165 (1983)).

use nalgebra::DMatrix;

use crate::lsq::{Weights, fit};
use crate::sorting::sort_by;

/// Consistency factor of the median absolute deviation for normal errors.
pub const MAD_TO_SIGMA: f64 = 1.4826;
/// A point is far outside the rest beyond this many robust standard deviations.
pub const CUTOFF: f64 = 3.5;
/// Neighbours on each side that predict a point.
const SIDE: usize = 3;
/// A point must also lie this fraction of the step between its neighbours off: real structure of
/// a progression (a change of curvature where the potential changes form) can stand out from the
/// measurement scatter by many σ, but it never moves one point by a sizeable part of a step,
/// which is what a typo or a wrong assignment does. Smaller departures are the least-squares
/// residuals' business (their studentized-residual warning). Our choice, no source.
pub const STEP_FRACTION: f64 = 0.25;
/// Fewest points that give a verdict.
pub const MIN_POINTS: usize = 7;

/// A point far outside the rest.
#[derive(Debug, Clone, PartialEq)]
pub struct FarPoint {
    /// Index of the point in the data given.
    pub index: usize,
    /// Observed − predicted by its neighbours, in the data's units (cm⁻¹).
    pub residual: f64,
    /// |residual| over the robust scatter of all points' residuals (σ-weighted when σ given).
    pub ratio: f64,
}

/// The points of (x, y) (x ascending) farther than [`CUTOFF`] robust standard deviations, and
/// [`STEP_FRACTION`] of a step, from what their neighbours predict, found one at a time, at most a quarter of the points. `sigma`
/// (one per point, > 0) puts the differences in units of each point's σ when given. Fewer than
/// [`MIN_POINTS`] points give no verdict: an empty list.
pub fn far_points(x: &[f64], y: &[f64], sigma: Option<&[f64]>) -> Vec<FarPoint> {
    let n = x.len();
    let bad_sigma =
        sigma.is_some_and(|s| s.len() != n || s.iter().any(|s| !(s.is_finite() && *s > 0.0)));
    if y.len() != n || n < MIN_POINTS || bad_sigma {
        return Vec::new();
    }
    let unit = vec![1.0; n];
    let sigma = sigma.unwrap_or(&unit);
    // A scatter at rounding level (exact model data) must not make rounding an outlier.
    let span = y.iter().fold(0.0_f64, |m, v| m.max(v.abs()));
    let floor = 1e-9 * span / sigma.iter().copied().fold(f64::INFINITY, f64::min);
    let mut kept: Vec<usize> = (0..n).collect();
    let mut far = Vec::new();
    while far.len() < n / 4 && kept.len() >= MIN_POINTS {
        let Some(local) = (0..kept.len())
            .map(|at| predicted(x, y, &kept, at))
            .collect::<Option<Vec<(f64, f64)>>>()
        else {
            break;
        };
        let resid: Vec<f64> = kept.iter().zip(&local).map(|(&i, l)| y[i] - l.0).collect();
        let z: Vec<f64> = kept
            .iter()
            .zip(&resid)
            .map(|(&i, r)| r / sigma[i])
            .collect();
        let scale = (MAD_TO_SIGMA * median_abs(&z)).max(floor);
        let (at, worst) = (0..kept.len())
            .filter(|&k| resid[k].abs() > STEP_FRACTION * local[k].1)
            .fold((0, 0.0_f64), |b, k| {
                if z[k].abs() > b.1 { (k, z[k].abs()) } else { b }
            });
        if !(scale > 0.0 && worst / scale > CUTOFF) {
            break;
        }
        far.push(FarPoint {
            index: kept[at],
            residual: resid[at],
            ratio: worst / scale,
        });
        kept.remove(at);
    }
    far
}

/// y at `kept[at]` as predicted by a least-squares cubic (lower when fewer neighbours) through
/// up to [`SIDE`] kept neighbours on each side, the point itself left out; and the mean step
/// |Δy| between those neighbours.
fn predicted(x: &[f64], y: &[f64], kept: &[usize], at: usize) -> Option<(f64, f64)> {
    // At an end, the missing neighbours come from the other side.
    let span = (2 * SIDE).min(kept.len() - 1);
    let lo = at.saturating_sub(SIDE).min(kept.len() - 1 - span);
    let hi = lo + span;
    let near: Vec<usize> = (lo..=hi).filter(|&k| k != at).map(|k| kept[k]).collect();
    let degree = 3.min(near.len().saturating_sub(2));
    let x0 = x[kept[at]];
    let width = near
        .iter()
        .map(|&i| (x[i] - x0).abs())
        .fold(0.0_f64, f64::max)
        .max(f64::MIN_POSITIVE);
    let design = DMatrix::from_fn(near.len(), degree + 1, |r, c| {
        ((x[near[r]] - x0) / width).powi(c as i32)
    });
    let rhs: Vec<f64> = near.iter().map(|&i| y[i]).collect();
    let step = near
        .windows(2)
        .map(|w| (y[w[1]] - y[w[0]]).abs())
        .sum::<f64>()
        / (near.len() - 1) as f64;
    // The value at x0 is the constant term.
    fit(&design, &rhs, Weights::Unit)
        .ok()
        .map(|f| (f.params[0], step))
}

/// Median of |z| (z not empty).
fn median_abs(z: &[f64]) -> f64 {
    let mut a: Vec<f64> = z.iter().map(|v| v.abs()).collect();
    sort_by(&mut a, f64::total_cmp);
    let m = a.len() / 2;
    if a.len() % 2 == 1 {
        a[m]
    } else {
        (a[m - 1] + a[m]) / 2.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// An invented anharmonic progression G(v) = 230 (v+½) − 3 (v+½)² + 0.01 (v+½)³ cm⁻¹ with a
    /// small deterministic scatter (SYNTHETIC).
    fn progression(n: usize) -> (Vec<f64>, Vec<f64>) {
        let x: Vec<f64> = (0..n).map(|v| v as f64 + 0.5).collect();
        let y = x
            .iter()
            .enumerate()
            .map(|(i, h)| {
                230.0 * h - 3.0 * h * h + 0.01 * h * h * h + 0.05 * ((i * 7 % 5) as f64 - 2.0)
            })
            .collect();
        (x, y)
    }

    #[test]
    fn a_typo_far_off_is_found_and_nothing_else() {
        // One level typed 450 cm⁻¹ too high; the rest scatter by at most 0.1 cm⁻¹.
        let (x, mut y) = progression(30);
        y[10] += 450.0;
        let far = far_points(&x, &y, Some(&vec![0.05; 30]));
        assert_eq!(far.iter().map(|f| f.index).collect::<Vec<_>>(), vec![10]);
        // The residual is the typo itself, within the scatter (common practice, no source:
        // a robust fit is not pulled by the point).
        assert!((far[0].residual - 450.0).abs() < 1.0, "{far:?}");
    }

    #[test]
    fn clean_data_and_too_few_points_flag_nothing() {
        let (x, y) = progression(30);
        assert!(far_points(&x, &y, Some(&vec![0.05; 30])).is_empty());
        assert!(far_points(&x, &y, None).is_empty());
        let (x, mut y) = progression(6);
        y[3] += 450.0;
        assert!(
            far_points(&x, &y, None).is_empty(),
            "six points give no verdict"
        );
    }

    #[test]
    fn exact_model_data_flag_no_rounding() {
        let x: Vec<f64> = (0..20).map(|v| f64::from(v) + 0.5).collect();
        let y: Vec<f64> = x.iter().map(|h| 1000.0 * h - 10.0 * h * h).collect();
        assert!(far_points(&x, &y, None).is_empty());
    }
}
