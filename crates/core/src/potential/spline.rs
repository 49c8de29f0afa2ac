//! Cubic interpolating spline with not-a-knot end conditions.
//!
//! Used for potentials given point by point (user tables, RKR turning points). The spline is
//! C² (smooth enough for the O(h⁴) Numerov solver) and, with not-a-knot ends, is exact for any
//! cubic and fourth-order accurate right up to the end intervals (a natural spline would force
//! V″ = 0 at the ends, which is badly wrong on a steep inner wall). Second derivatives M_i at
//! the knots solve a tridiagonal system (the two not-a-knot rows are folded into the first and
//! last interior rows, keeping it diagonally dominant), so construction is O(n).

use serde::{Deserialize, Serialize};

use crate::{Error, Result};

/// A C² cubic spline through (x_i, y_i), x strictly increasing, at least 4 knots.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CubicSpline {
    x: Vec<f64>,
    y: Vec<f64>,
    /// Second derivatives at the knots.
    m: Vec<f64>,
}

impl CubicSpline {
    /// Build the not-a-knot spline. `x` must be strictly increasing and finite, `y` finite,
    /// both of the same length ≥ 4.
    pub fn new(x: &[f64], y: &[f64]) -> Result<Self> {
        let n = x.len();
        if y.len() != n {
            return Err(Error::parameter("spline", "x and y differ in length"));
        }
        if n < 4 {
            return Err(Error::TooFewPoints {
                what: "a cubic spline".into(),
                have: n,
                need: 4,
            });
        }
        for i in 0..n {
            if !x[i].is_finite() || !y[i].is_finite() {
                return Err(Error::parameter(
                    "spline",
                    format!("point {} is not finite", i + 1),
                ));
            }
            if i > 0 && x[i] <= x[i - 1] {
                return Err(Error::parameter(
                    "spline",
                    format!("abscissae must increase strictly (point {})", i + 1),
                ));
            }
        }
        let h: Vec<f64> = (0..n - 1).map(|i| x[i + 1] - x[i]).collect();
        let d: Vec<f64> = (1..n - 1)
            .map(|i| 6.0 * ((y[i + 1] - y[i]) / h[i] - (y[i] - y[i - 1]) / h[i - 1]))
            .collect();
        // Tridiagonal system for M_1 … M_{n−2} (index k = i − 1).
        let size = n - 2;
        let mut sub = vec![0.0; size];
        let mut diag = vec![0.0; size];
        let mut sup = vec![0.0; size];
        for k in 0..size {
            let i = k + 1;
            sub[k] = h[i - 1];
            diag[k] = 2.0 * (h[i - 1] + h[i]);
            sup[k] = h[i];
        }
        // Not-a-knot at x_1: M_0 = ((h0 + h1) M_1 − h0 M_2)/h1, folded into row 0.
        let (h0, h1) = (h[0], h[1]);
        diag[0] += h0 * (h0 + h1) / h1;
        sup[0] -= h0 * h0 / h1;
        // Not-a-knot at x_{n−2}: M_{n−1} = ((a + b) M_{n−2} − b M_{n−3})/a, a = h_{n−3}, b = h_{n−2}.
        let (a, b) = (h[n - 3], h[n - 2]);
        diag[size - 1] += b * (a + b) / a;
        sub[size - 1] -= b * b / a;
        // For n = 4 the two rows are the whole system; the folding above is still correct
        // because each row only touches its own neighbours.
        let inner = solve_tridiagonal(&sub, &diag, &sup, &d)?;
        let mut m = vec![0.0; n];
        m[1..n - 1].copy_from_slice(&inner);
        m[0] = ((h0 + h1) * m[1] - h0 * m[2]) / h1;
        m[n - 1] = ((a + b) * m[n - 2] - b * m[n - 3]) / a;
        Ok(Self {
            x: x.to_vec(),
            y: y.to_vec(),
            m,
        })
    }

    /// Knot abscissae.
    pub fn x(&self) -> &[f64] {
        &self.x
    }

    /// Knot ordinates.
    pub fn y(&self) -> &[f64] {
        &self.y
    }

    fn interval(&self, t: f64) -> usize {
        let n = self.x.len();
        let k = self.x.partition_point(|&xi| xi <= t);
        k.clamp(1, n - 1) - 1
    }

    /// Value, first and second derivative at `t` (the end cubics are continued outside).
    pub fn eval(&self, t: f64) -> (f64, f64, f64) {
        let i = self.interval(t);
        let (x0, x1) = (self.x[i], self.x[i + 1]);
        let (y0, y1) = (self.y[i], self.y[i + 1]);
        let (m0, m1) = (self.m[i], self.m[i + 1]);
        let h = x1 - x0;
        let a = x1 - t;
        let b = t - x0;
        let value = m0 * a * a * a / (6.0 * h)
            + m1 * b * b * b / (6.0 * h)
            + (y0 / h - m0 * h / 6.0) * a
            + (y1 / h - m1 * h / 6.0) * b;
        let d1 =
            -m0 * a * a / (2.0 * h) + m1 * b * b / (2.0 * h) + (y1 - y0) / h - (m1 - m0) * h / 6.0;
        let d2 = (m0 * a + m1 * b) / h;
        (value, d1, d2)
    }

    /// Value at `t`.
    pub fn value(&self, t: f64) -> f64 {
        self.eval(t).0
    }
}

/// Thomas algorithm for a tridiagonal system (sub[0] and sup[last] unused).
fn solve_tridiagonal(sub: &[f64], diag: &[f64], sup: &[f64], rhs: &[f64]) -> Result<Vec<f64>> {
    let n = diag.len();
    let mut c = vec![0.0; n];
    let mut d = vec![0.0; n];
    let mut denom = diag[0];
    if denom == 0.0 || !denom.is_finite() {
        return Err(Error::numerical("spline", "singular system"));
    }
    c[0] = sup[0] / denom;
    d[0] = rhs[0] / denom;
    for i in 1..n {
        denom = diag[i] - sub[i] * c[i - 1];
        if denom == 0.0 || !denom.is_finite() {
            return Err(Error::numerical("spline", "singular system"));
        }
        c[i] = sup[i] / denom;
        d[i] = (rhs[i] - sub[i] * d[i - 1]) / denom;
    }
    let mut out = vec![0.0; n];
    out[n - 1] = d[n - 1];
    for i in (0..n - 1).rev() {
        out[i] = d[i] - c[i] * out[i + 1];
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: property of not-a-knot cubic splines (exact for cubic polynomials; de Boor,
    /// "A Practical Guide to Splines", from memory). Tolerance 1e-9 absolute.
    #[test]
    fn reproduces_a_cubic_exactly() {
        let f = |x: f64| 2.0 - 3.0 * x + 0.5 * x * x + 0.25 * x * x * x;
        let x = [0.0, 0.3, 1.1, 1.7, 2.0, 3.4];
        let y: Vec<f64> = x.iter().map(|&t| f(t)).collect();
        let s = CubicSpline::new(&x, &y).unwrap();
        for t in [0.1, 0.77, 1.9, 2.5, 3.3] {
            let (v, d1, d2) = s.eval(t);
            assert!((v - f(t)).abs() < 1e-9, "{t}: {v} vs {}", f(t));
            assert!((d1 - (-3.0 + t + 0.75 * t * t)).abs() < 1e-9);
            assert!((d2 - (1.0 + 1.5 * t)).abs() < 1e-9);
        }
    }

    /// SOURCE: sin is smooth; a cubic spline's error is O(h⁴) (common practice, no source):
    /// 41 knots on [0, π] keep |s − sin| below 1e-5.
    #[test]
    fn interpolates_a_smooth_function() {
        let x: Vec<f64> = (0..=40)
            .map(|i| i as f64 * std::f64::consts::PI / 40.0)
            .collect();
        let y: Vec<f64> = x.iter().map(|t| t.sin()).collect();
        let s = CubicSpline::new(&x, &y).unwrap();
        for i in 0..400 {
            let t = i as f64 * std::f64::consts::PI / 400.0;
            assert!((s.value(t) - t.sin()).abs() < 1e-5);
        }
    }

    /// Bad input is an error, not a panic (common practice, no source).
    #[test]
    fn rejects_unsorted_and_short_input() {
        assert!(CubicSpline::new(&[0.0, 1.0, 1.0, 2.0], &[0.0; 4]).is_err());
        assert!(CubicSpline::new(&[0.0, 1.0, 2.0], &[0.0; 3]).is_err());
        assert!(CubicSpline::new(&[0.0, 1.0, f64::NAN, 2.0], &[0.0; 4]).is_err());
    }
}
