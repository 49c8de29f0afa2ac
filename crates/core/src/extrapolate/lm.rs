//! A small Levenberg–Marquardt solver for the few-parameter near-dissociation fits.
//!
//! Why not a general crate: these fits run thousands of times inside the Monte Carlo loop, so
//! the solver works on fixed-size `P × P` normal equations (nalgebra `SMatrix`), reuses one
//! workspace for every draw (no heap traffic per iteration), and treats the model's domain
//! (v_D above every fitted level, n > 2, X0 > 0) as a rejected step rather than a NaN. It is the
//! textbook damped Gauss–Newton iteration with Marquardt's diagonal scaling and the gain-ratio
//! update of the damping (H. B. Nielsen 1999; K. Madsen, H. B. Nielsen and O. Tingleff,
//! "Methods for non-linear least squares problems", DTU 2004 — both from memory); its results
//! are checked against `scipy.optimize.least_squares` in the tests.
//!
//! Residuals are whitened: r = W (e − f(θ)), with W = L⁻¹ from the Cholesky factor of the data
//! covariance (diagonal 1/σ in the common case). The covariance of θ at the solution is
//! (J_wᵀ J_w)⁻¹, and the first-order sensitivity of θ to the data is (J_wᵀJ_w)⁻¹ J_wᵀ W.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::{DMatrix, SMatrix, SVector};
use serde::{Deserialize, Serialize};

/// Why the iteration stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Termination {
    /// The parameter step fell below the relative tolerance.
    ParametersConverged,
    /// χ² stopped decreasing by more than the relative tolerance.
    ChiSquareConverged,
    /// The gradient is orthogonal to the residuals within tolerance.
    GradientConverged,
    /// χ² reached zero to rounding (exact data).
    ExactFit,
    /// Iteration limit reached before convergence.
    MaxIterations,
    /// No step could reduce χ² (damping exhausted).
    NoProgress,
    /// The starting point lies outside the model's domain.
    InvalidStart,
}

impl Termination {
    /// Whether the fit converged.
    pub fn converged(self) -> bool {
        matches!(
            self,
            Termination::ParametersConverged
                | Termination::ChiSquareConverged
                | Termination::GradientConverged
                | Termination::ExactFit
        )
    }
}

/// A model f(θ; v) with P parameters.
pub trait LmModel<const P: usize> {
    /// Value and gradient ∂f/∂θ at abscissa v.
    fn eval(&self, theta: &[f64; P], v: f64) -> (f64, [f64; P]);
    /// Whether θ is inside the model's domain for every abscissa in `v`.
    fn valid(&self, theta: &[f64; P], v: &[f64]) -> bool;
}

/// Whitening of the residuals.
#[derive(Debug, Clone)]
pub enum Whitener {
    /// Independent data: multiply by 1/σ_i.
    Diagonal(Vec<f64>),
    /// Correlated data: multiply by L⁻¹ (lower triangular, m × m).
    Full(DMatrix<f64>),
}

impl Whitener {
    /// Build from a covariance (`None` if it is not positive definite).
    pub fn from_cov(cov: &DMatrix<f64>) -> Option<Self> {
        let m = cov.nrows();
        let diag = (0..m).all(|i| (0..m).all(|j| i == j || cov[(i, j)] == 0.0));
        if diag {
            let w: Option<Vec<f64>> = (0..m)
                .map(|i| {
                    let c = cov[(i, i)];
                    (c > 0.0 && c.is_finite()).then(|| 1.0 / c.sqrt())
                })
                .collect();
            return w.map(Whitener::Diagonal);
        }
        let chol = nalgebra::Cholesky::new(cov.clone())?;
        let l = chol.l();
        let linv = l.solve_lower_triangular(&DMatrix::identity(m, m))?;
        Some(Whitener::Full(linv))
    }

    /// out = W x.
    pub fn apply(&self, x: &[f64], out: &mut [f64]) {
        match self {
            Whitener::Diagonal(w) => {
                for i in 0..x.len() {
                    out[i] = w[i] * x[i];
                }
            }
            Whitener::Full(l) => {
                for i in 0..x.len() {
                    let mut acc = 0.0;
                    for j in 0..=i {
                        acc += l[(i, j)] * x[j];
                    }
                    out[i] = acc;
                }
            }
        }
    }

    /// The whitening matrix W as a dense matrix.
    pub fn matrix(&self) -> DMatrix<f64> {
        match self {
            Whitener::Diagonal(w) => {
                DMatrix::from_diagonal(&nalgebra::DVector::from_column_slice(w))
            }
            Whitener::Full(l) => l.clone(),
        }
    }
}

/// Tolerances and limits.
#[derive(Debug, Clone, Copy)]
pub struct LmOptions {
    /// Maximum number of iterations (accepted or rejected steps).
    pub max_iter: usize,
    /// Relative parameter-step tolerance.
    pub xtol: f64,
    /// Relative χ²-decrease tolerance.
    pub ftol: f64,
    /// Gradient (cosine) tolerance.
    pub gtol: f64,
    /// Initial damping λ relative to diag(JᵀJ) (small for a warm start).
    pub lambda0: f64,
    /// Re-evaluate the Jacobian at the final point (needed for the covariance).
    pub final_jacobian: bool,
}

impl Default for LmOptions {
    fn default() -> Self {
        Self {
            max_iter: 400,
            xtol: 1e-13,
            ftol: 1e-15,
            gtol: 1e-13,
            lambda0: 1e-3,
            final_jacobian: true,
        }
    }
}

/// Result of an LM fit.
#[derive(Debug, Clone, Copy)]
pub struct LmOutcome<const P: usize> {
    /// Final parameters.
    pub theta: [f64; P],
    /// χ² at `theta` (whitened).
    pub chi2: f64,
    /// Iterations used.
    pub iterations: usize,
    /// Why it stopped.
    pub termination: Termination,
    /// J_wᵀJ_w at `theta` (its inverse is the unscaled covariance).
    pub jtj: SMatrix<f64, P, P>,
}

/// Reusable buffers (allocated once per problem size).
#[derive(Debug, Clone, Default)]
pub struct LmWorkspace {
    f: Vec<f64>,
    diff: Vec<f64>,
    r: Vec<f64>,
    jac: Vec<f64>,
    jw: Vec<f64>,
    col: Vec<f64>,
    colw: Vec<f64>,
}

impl LmWorkspace {
    fn ensure(&mut self, m: usize, p: usize) {
        if self.f.len() != m || self.jac.len() != m * p {
            self.f = vec![0.0; m];
            self.diff = vec![0.0; m];
            self.r = vec![0.0; m];
            self.jac = vec![0.0; m * p];
            self.jw = vec![0.0; m * p];
            self.col = vec![0.0; m];
            self.colw = vec![0.0; m];
        }
    }

    /// Whitened Jacobian J_w (row-major m × P) from the last evaluation.
    pub fn whitened_jacobian(&self) -> &[f64] {
        &self.jw
    }
}

/// Evaluate residuals (and optionally the Jacobian) at θ; returns χ².
fn evaluate<M: LmModel<P>, const P: usize>(
    model: &M,
    v: &[f64],
    e: &[f64],
    w: &Whitener,
    theta: &[f64; P],
    ws: &mut LmWorkspace,
    with_jac: bool,
) -> f64 {
    let m = v.len();
    if let Whitener::Diagonal(wd) = w {
        // Fused loop for independent data (the common case).
        let mut chi2 = 0.0;
        for i in 0..m {
            let (f, g) = model.eval(theta, v[i]);
            let r = wd[i] * (e[i] - f);
            ws.r[i] = r;
            chi2 += r * r;
            if with_jac {
                for k in 0..P {
                    ws.jw[i * P + k] = wd[i] * g[k];
                }
            }
        }
        return chi2;
    }
    for i in 0..m {
        let (f, g) = model.eval(theta, v[i]);
        ws.f[i] = f;
        ws.diff[i] = e[i] - f;
        if with_jac {
            ws.jac[i * P..(i + 1) * P].copy_from_slice(&g);
        }
    }
    let (diff, r) = (&ws.diff, &mut ws.r);
    w.apply(diff, r);
    if with_jac {
        for k in 0..P {
            for i in 0..m {
                ws.col[i] = ws.jac[i * P + k];
            }
            let (col, colw) = (&ws.col, &mut ws.colw);
            w.apply(col, colw);
            for i in 0..m {
                ws.jw[i * P + k] = ws.colw[i];
            }
        }
    }
    ws.r.iter().map(|x| x * x).sum()
}

fn normal_eqs<const P: usize>(ws: &LmWorkspace, m: usize) -> (SMatrix<f64, P, P>, SVector<f64, P>) {
    let mut a = SMatrix::<f64, P, P>::zeros();
    let mut g = SVector::<f64, P>::zeros();
    for i in 0..m {
        let row = &ws.jw[i * P..(i + 1) * P];
        for k in 0..P {
            g[k] += row[k] * ws.r[i];
            for l in 0..=k {
                a[(k, l)] += row[k] * row[l];
            }
        }
    }
    for k in 0..P {
        for l in 0..k {
            a[(l, k)] = a[(k, l)];
        }
    }
    (a, g)
}

/// Solve A x = b for a small symmetric positive-definite A by Cholesky (in-line: the generic
/// decomposition costs more than the rest of an iteration at these sizes). `None` if A is not
/// positive definite.
fn chol_solve<const P: usize>(
    a: &SMatrix<f64, P, P>,
    b: &SVector<f64, P>,
) -> Option<SVector<f64, P>> {
    let mut l = [[0.0f64; P]; P];
    for i in 0..P {
        for j in 0..=i {
            let mut s = a[(i, j)];
            for k in 0..j {
                s -= l[i][k] * l[j][k];
            }
            if i == j {
                if !(s > 0.0 && s.is_finite()) {
                    return None;
                }
                l[i][i] = s.sqrt();
            } else {
                l[i][j] = s / l[j][j];
            }
        }
    }
    let mut y = [0.0f64; P];
    for i in 0..P {
        let mut s = b[i];
        for k in 0..i {
            s -= l[i][k] * y[k];
        }
        y[i] = s / l[i][i];
    }
    let mut x = SVector::<f64, P>::zeros();
    for i in (0..P).rev() {
        let mut s = y[i];
        for k in i + 1..P {
            s -= l[k][i] * x[k];
        }
        x[i] = s / l[i][i];
    }
    Some(x)
}

/// Minimise |W(e − f(θ; v))|² from θ0.
pub fn solve<M: LmModel<P>, const P: usize>(
    model: &M,
    v: &[f64],
    e: &[f64],
    w: &Whitener,
    theta0: [f64; P],
    opts: LmOptions,
    ws: &mut LmWorkspace,
) -> LmOutcome<P> {
    let m = v.len();
    ws.ensure(m, P);
    let mut theta = theta0;
    if !model.valid(&theta, v) || theta.iter().any(|x| !x.is_finite()) {
        return LmOutcome {
            theta,
            chi2: f64::INFINITY,
            iterations: 0,
            termination: Termination::InvalidStart,
            jtj: SMatrix::zeros(),
        };
    }
    let mut chi2 = evaluate(model, v, e, w, &theta, ws, true);
    w.apply(e, &mut ws.col);
    let scale0: f64 = ws.col.iter().map(|x| x.abs()).fold(0.0, f64::max);
    let (mut a, mut g) = normal_eqs::<P>(ws, m);
    // Damping relative to the diagonal of JᵀJ (Marquardt scaling), so λ is dimensionless.
    let mut lambda = opts.lambda0;
    let mut nu = 2.0;
    let mut termination = Termination::MaxIterations;
    let mut it = 0;
    // Exact data: whitened residuals at the rounding level of the whitened data.
    let exact_floor = |c: f64| c <= m as f64 * (4e-16 * scale0).powi(2);
    if exact_floor(chi2) {
        termination = Termination::ExactFit;
    } else {
        while it < opts.max_iter {
            it += 1;
            // gradient test
            let gmax = (0..P)
                .map(|k| {
                    let d = (a[(k, k)] * chi2).sqrt();
                    if d > 0.0 { g[k].abs() / d } else { 0.0 }
                })
                .fold(0.0, f64::max);
            if gmax <= opts.gtol {
                termination = Termination::GradientConverged;
                break;
            }
            let mut damped = a;
            for k in 0..P {
                damped[(k, k)] += lambda * a[(k, k)].max(1e-300);
            }
            let Some(delta) = chol_solve(&damped, &g) else {
                lambda *= nu;
                nu *= 2.0;
                if lambda > 1e32 {
                    termination = Termination::NoProgress;
                    break;
                }
                continue;
            };

            let small = (0..P).all(|k| delta[k].abs() <= opts.xtol * (theta[k].abs() + opts.xtol));
            let mut trial = theta;
            for k in 0..P {
                trial[k] += delta[k];
            }
            let ok = trial.iter().all(|x| x.is_finite()) && model.valid(&trial, v);
            // The trial is evaluated with its Jacobian: when it is accepted (the common case)
            // nothing needs evaluating again; when it is rejected, the next step is solved from
            // the matrices already built at θ, so overwriting the workspace does no harm.
            let chi2_new = if ok {
                evaluate(model, v, e, w, &trial, ws, true)
            } else {
                f64::INFINITY
            };
            let mut pred = 0.0;
            for k in 0..P {
                pred += delta[k] * (g[k] + lambda * a[(k, k)].max(1e-300) * delta[k]);
            }
            let rho = if pred > 0.0 && chi2_new.is_finite() {
                (chi2 - chi2_new) / pred
            } else {
                -1.0
            };
            if rho > 0.0 {
                let old = chi2;
                theta = trial;
                chi2 = chi2_new;
                (a, g) = normal_eqs::<P>(ws, m);
                lambda *= (1.0f64 / 3.0).max(1.0 - (2.0 * rho - 1.0).powi(3));
                nu = 2.0;
                if exact_floor(chi2) {
                    termination = Termination::ExactFit;
                    break;
                }
                if small {
                    termination = Termination::ParametersConverged;
                    break;
                }
                if old - chi2 <= opts.ftol * chi2 {
                    termination = Termination::ChiSquareConverged;
                    break;
                }
            } else {
                if small {
                    // No improvement is possible within the tolerance: at the minimum.
                    termination = Termination::ParametersConverged;
                    break;
                }
                lambda *= nu;
                nu *= 2.0;
                if lambda > 1e32 {
                    termination = Termination::NoProgress;
                    break;
                }
            }
        }
    }
    if !opts.final_jacobian {
        return LmOutcome {
            theta,
            chi2,
            iterations: it,
            termination,
            jtj: a,
        };
    }
    // Make sure the workspace holds the Jacobian at the final θ.
    let chi2 = evaluate(model, v, e, w, &theta, ws, true);
    let (jtj, _) = normal_eqs::<P>(ws, m);
    LmOutcome {
        theta,
        chi2,
        iterations: it,
        termination,
        jtj,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    struct Expo;
    impl LmModel<2> for Expo {
        fn eval(&self, t: &[f64; 2], v: f64) -> (f64, [f64; 2]) {
            let e = (-t[1] * v).exp();
            (t[0] * e, [e, -t[0] * v * e])
        }
        fn valid(&self, _t: &[f64; 2], _v: &[f64]) -> bool {
            true
        }
    }

    /// Closed form (common practice, no source): exact data of y = 3 e^{−0.7 v} are recovered
    /// from a distant start.
    #[test]
    fn recovers_exact_exponential() {
        let v: Vec<f64> = (0..8).map(|i| i as f64 * 0.5).collect();
        let e: Vec<f64> = v.iter().map(|v| 3.0 * (-0.7 * v).exp()).collect();
        let w = Whitener::Diagonal(vec![100.0; 8]);
        let mut ws = LmWorkspace::default();
        let out = solve(&Expo, &v, &e, &w, [1.0, 0.1], LmOptions::default(), &mut ws);
        assert!(out.termination.converged(), "{:?}", out.termination);
        assert!((out.theta[0] - 3.0).abs() < 1e-10 && (out.theta[1] - 0.7).abs() < 1e-10);
    }

    #[test]
    fn invalid_start_is_reported() {
        struct Never;
        impl LmModel<1> for Never {
            fn eval(&self, t: &[f64; 1], _v: f64) -> (f64, [f64; 1]) {
                (t[0], [1.0])
            }
            fn valid(&self, _t: &[f64; 1], _v: &[f64]) -> bool {
                false
            }
        }
        let mut ws = LmWorkspace::default();
        let w = Whitener::Diagonal(vec![1.0]);
        let out = solve(
            &Never,
            &[0.0],
            &[1.0],
            &w,
            [0.0],
            LmOptions::default(),
            &mut ws,
        );
        assert_eq!(out.termination, Termination::InvalidStart);
    }
}
