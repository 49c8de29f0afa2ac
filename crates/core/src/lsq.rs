//! Weighted and generalised linear least squares: the engine under every linear fit in Rungs.
//!
//! Solves min (y − Xβ)ᵀ Σ⁻¹ (y − Xβ) for a design matrix X, data y and data covariance Σ
//! (diagonal from per-point σ, full when the data are correlated, e.g. levels from a
//! term-value fit). The system is whitened (Cholesky of Σ), its columns are equilibrated, and
//! it is solved by singular value decomposition, so ill-conditioned designs such as powers of
//! (v + ½) lose as little precision as the data allow and rank deficiency is detected rather
//! than silently producing garbage.
//!
//! The result is data: parameters, the unscaled covariance (XᵀΣ⁻¹X)⁻¹, χ², degrees of freedom,
//! residuals, leverages and the condition number. Whether the covariance is scaled by χ²_ν is
//! the caller's choice; both are available.

use nalgebra::{DMatrix, DVector};
use serde::{Deserialize, Serialize};

use crate::{Error, Result};

/// How the data points are weighted.
#[derive(Debug, Clone, Copy)]
pub enum Weights<'a> {
    /// No uncertainties known: unit weights. Only the χ²_ν-scaled covariance is meaningful.
    Unit,
    /// Independent points with one-standard-deviation uncertainties σ_i (all > 0).
    Sigma(&'a [f64]),
    /// Full, symmetric positive-definite data covariance Σ (n × n).
    Covariance(&'a DMatrix<f64>),
}

/// The outcome of a linear least-squares fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LinearFit {
    /// Fitted parameters β.
    pub params: Vec<f64>,
    /// Unscaled parameter covariance (XᵀΣ⁻¹X)⁻¹, row-major p × p.
    pub covariance: Vec<f64>,
    /// Number of parameters p.
    pub n_params: usize,
    /// Number of data points n.
    pub n_points: usize,
    /// χ² = rᵀΣ⁻¹r at the solution.
    pub chi2: f64,
    /// Residuals y − Xβ in data units.
    pub residuals: Vec<f64>,
    /// Whitened residuals (for diagonal Σ: r_i/σ_i).
    pub normalized_residuals: Vec<f64>,
    /// Diagonal of the hat matrix in the whitened problem (leverage of each point, 0…1).
    pub leverage: Vec<f64>,
    /// Condition number of the column-equilibrated, whitened design (largest/smallest singular value).
    pub condition_number: f64,
    /// Whether the data carried uncertainties (false for [`Weights::Unit`]).
    pub weighted: bool,
}

impl LinearFit {
    /// Degrees of freedom n − p.
    pub fn dof(&self) -> usize {
        self.n_points - self.n_params
    }

    /// Reduced χ², χ²/(n − p); `None` when there are no degrees of freedom.
    pub fn chi2_reduced(&self) -> Option<f64> {
        (self.dof() > 0).then(|| self.chi2 / self.dof() as f64)
    }

    /// Element (i, j) of the unscaled covariance.
    pub fn cov(&self, i: usize, j: usize) -> f64 {
        self.covariance[i * self.n_params + j]
    }

    /// Unscaled covariance as a matrix.
    pub fn covariance_matrix(&self) -> DMatrix<f64> {
        DMatrix::from_row_slice(self.n_params, self.n_params, &self.covariance)
    }

    /// Standard uncertainties from the unscaled covariance (trusting the data's σ).
    pub fn sigma_unscaled(&self) -> Vec<f64> {
        (0..self.n_params)
            .map(|i| self.cov(i, i).max(0.0).sqrt())
            .collect()
    }

    /// Standard uncertainties scaled by √χ²_ν; `None` when there are no degrees of freedom.
    pub fn sigma_scaled(&self) -> Option<Vec<f64>> {
        let s = self.chi2_reduced()?.sqrt();
        Some(self.sigma_unscaled().into_iter().map(|x| x * s).collect())
    }

    /// Internally studentized residuals r̃_i / √((1 − h_i) χ²_ν), when estimable.
    pub fn studentized_residuals(&self) -> Option<Vec<f64>> {
        let s2 = self.chi2_reduced()?;
        if s2 <= 0.0 {
            return None;
        }
        Some(
            self.normalized_residuals
                .iter()
                .zip(&self.leverage)
                .map(|(r, h)| {
                    let d = (1.0 - h).max(0.0) * s2;
                    if d > 0.0 { r / d.sqrt() } else { 0.0 }
                })
                .collect(),
        )
    }
}

/// Relative singular-value threshold below which the design counts as rank deficient.
const RANK_TOL: f64 = 1e-13;

/// Fit y ≈ Xβ by weighted least squares.
#[allow(clippy::needless_range_loop)] // index loops mirror the matrix algebra
///
/// `design` is n × p with n ≥ p. Fails (never panics) on mismatched sizes, non-finite input,
/// non-positive σ, a covariance that is not positive definite, or a rank-deficient design
/// (parameters not determined by the data).
pub fn fit(design: &DMatrix<f64>, y: &[f64], weights: Weights<'_>) -> Result<LinearFit> {
    let (n, p) = design.shape();
    if y.len() != n {
        return Err(Error::numerical(
            "least squares",
            format!("{} rows in design but {} data", n, y.len()),
        ));
    }
    if p == 0 {
        return Err(Error::numerical("least squares", "no parameters to fit"));
    }
    if n < p {
        return Err(Error::TooFewPoints {
            what: format!("a {p}-parameter fit"),
            have: n,
            need: p,
        });
    }
    if design.iter().chain(y.iter()).any(|x| !x.is_finite()) {
        return Err(Error::numerical(
            "least squares",
            "non-finite value in the data or design",
        ));
    }
    let yv = DVector::from_column_slice(y);

    // Whitening: A_w = W^{1/2} X, y_w = W^{1/2} y.
    let (xw, yw, weighted) = match weights {
        Weights::Unit => (design.clone(), yv.clone(), false),
        Weights::Sigma(sigma) => {
            if sigma.len() != n {
                return Err(Error::numerical(
                    "least squares",
                    format!("{} σ for {} data", sigma.len(), n),
                ));
            }
            if let Some(i) = sigma.iter().position(|s| !(s.is_finite() && *s > 0.0)) {
                return Err(Error::numerical(
                    "least squares",
                    format!(
                        "uncertainty of point {} is {} (must be finite and > 0)",
                        i + 1,
                        sigma[i]
                    ),
                ));
            }
            let mut xw = design.clone();
            let mut yw = yv.clone();
            for i in 0..n {
                let w = 1.0 / sigma[i];
                xw.row_mut(i).scale_mut(w);
                yw[i] *= w;
            }
            (xw, yw, true)
        }
        Weights::Covariance(cov) => {
            if cov.shape() != (n, n) {
                return Err(Error::numerical(
                    "least squares",
                    "data covariance has the wrong size",
                ));
            }
            let chol = nalgebra::Cholesky::new(cov.clone()).ok_or_else(|| {
                Error::numerical("least squares", "data covariance is not positive definite")
            })?;
            let l = chol.l();
            let xw = l
                .solve_lower_triangular(design)
                .ok_or_else(|| Error::numerical("least squares", "singular data covariance"))?;
            let yw = l
                .solve_lower_triangular(&yv)
                .ok_or_else(|| Error::numerical("least squares", "singular data covariance"))?;
            (xw, yw, true)
        }
    };

    // Column equilibration: A = X_w D with unit-norm columns.
    let mut scale = vec![0.0; p];
    let mut a = xw.clone();
    for j in 0..p {
        let norm = xw.column(j).norm();
        if !(norm > 0.0 && norm.is_finite()) {
            return Err(Error::numerical(
                "least squares",
                format!("parameter {} is not constrained by any data point", j + 1),
            ));
        }
        scale[j] = 1.0 / norm;
        a.column_mut(j).scale_mut(scale[j]);
    }

    let svd = a.clone().svd(true, true);
    let (Some(u), Some(v_t)) = (svd.u.as_ref(), svd.v_t.as_ref()) else {
        return Err(Error::numerical(
            "least squares",
            "singular value decomposition failed",
        ));
    };
    let s = &svd.singular_values;
    let s_max = s.max();
    let s_min = s.min();
    if s_min.is_nan() || s_min <= RANK_TOL * s_max {
        return Err(Error::numerical(
            "least squares",
            format!(
                "the data do not determine all {p} parameters (design rank deficient, condition number {:.3e})",
                if s_min > 0.0 {
                    s_max / s_min
                } else {
                    f64::INFINITY
                }
            ),
        ));
    }

    // β_a = V S⁻¹ Uᵀ y_w ;  Cov_a = V S⁻² Vᵀ ; then undo the column scaling.
    let uty = u.transpose() * &yw;
    let mut beta = vec![0.0; p];
    let mut cov = vec![0.0; p * p];
    for j in 0..p {
        let mut acc = 0.0;
        for k in 0..p {
            acc += v_t[(k, j)] * uty[k] / s[k];
        }
        beta[j] = acc * scale[j];
    }
    for i in 0..p {
        for j in 0..=i {
            let mut acc = 0.0;
            for k in 0..p {
                acc += v_t[(k, i)] * v_t[(k, j)] / (s[k] * s[k]);
            }
            let c = acc * scale[i] * scale[j];
            cov[i * p + j] = c;
            cov[j * p + i] = c;
        }
    }

    let beta_v = DVector::from_column_slice(&beta);
    let residuals = &yv - design * &beta_v;
    let rw = &yw - &xw * &beta_v;
    let chi2 = rw.norm_squared();
    let leverage = (0..n).map(|i| u.row(i).norm_squared().min(1.0)).collect();

    Ok(LinearFit {
        params: beta,
        covariance: cov,
        n_params: p,
        n_points: n,
        chi2,
        residuals: residuals.iter().copied().collect(),
        normalized_residuals: rw.iter().copied().collect(),
        leverage,
        condition_number: s_max / s_min,
        weighted,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Closed form (common practice, no source): a straight line through exact data is recovered
    /// exactly and its χ² is zero.
    #[test]
    fn exact_line() {
        let x = [0.0, 1.0, 2.0, 3.0];
        let y: Vec<f64> = x.iter().map(|x| 2.0 - 0.5 * x).collect();
        let d = DMatrix::from_fn(4, 2, |i, j| if j == 0 { 1.0 } else { x[i] });
        let f = fit(&d, &y, Weights::Sigma(&[1.0; 4])).unwrap();
        assert!((f.params[0] - 2.0).abs() < 1e-14 && (f.params[1] + 0.5).abs() < 1e-14);
        assert!(f.chi2 < 1e-26);
    }

    /// Closed form for the weighted mean (common practice, no source): fitting a constant gives
    /// Σ(y/σ²)/Σ(1/σ²) with variance 1/Σ(1/σ²).
    #[test]
    fn weighted_mean() {
        let y = [1.0, 2.0, 4.0];
        let s = [1.0, 2.0, 0.5];
        let d = DMatrix::from_element(3, 1, 1.0);
        let f = fit(&d, &y, Weights::Sigma(&s)).unwrap();
        let w: Vec<f64> = s.iter().map(|s| 1.0 / (s * s)).collect();
        let sw: f64 = w.iter().sum();
        let mean = y.iter().zip(&w).map(|(y, w)| y * w).sum::<f64>() / sw;
        assert!((f.params[0] - mean).abs() < 1e-14);
        assert!((f.cov(0, 0) - 1.0 / sw).abs() < 1e-14);
    }

    /// A full covariance that is diagonal gives the same answer as per-point σ.
    #[test]
    fn diagonal_covariance_equals_sigma() {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [1.0, 2.9, 5.2, 7.1, 8.8];
        let s = [0.1, 0.2, 0.1, 0.3, 0.2];
        let d = DMatrix::from_fn(5, 2, |i, j| if j == 0 { 1.0 } else { x[i] });
        let c = DMatrix::from_diagonal(&DVector::from_iterator(5, s.iter().map(|s| s * s)));
        let a = fit(&d, &y, Weights::Sigma(&s)).unwrap();
        let b = fit(&d, &y, Weights::Covariance(&c)).unwrap();
        for k in 0..2 {
            assert!((a.params[k] - b.params[k]).abs() < 1e-12);
        }
        assert!((a.chi2 - b.chi2).abs() < 1e-10);
    }

    #[test]
    fn rank_deficient_is_an_error_not_a_panic() {
        let d = DMatrix::from_fn(4, 2, |_, _| 1.0);
        let e = fit(&d, &[1.0, 2.0, 3.0, 4.0], Weights::Unit).unwrap_err();
        assert!(e.to_string().contains("do not determine"), "{e}");
    }

    #[test]
    fn bad_sigma_is_an_error() {
        let d = DMatrix::from_element(2, 1, 1.0);
        assert!(fit(&d, &[1.0, 2.0], Weights::Sigma(&[1.0, 0.0])).is_err());
        assert!(fit(&d, &[1.0, f64::NAN], Weights::Unit).is_err());
    }
}
