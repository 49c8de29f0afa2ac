//! LeRoy–Bernstein near-dissociation fits of the highest levels.
//!
//! For a potential whose long-range part is D − C_n/Rⁿ, the levels near the limit follow
//! G(v) = D − X0 (v_D − v)^{2n/(n−2)}, with X0 = [((n−2)/(2n)) K̄_n]^{2n/(n−2)} and
//! K̄_n = P_n/(μ^{½} C_n^{1/n}), P_n = F_n √(4π C_u), F_n = nΓ(1+1/n)/Γ(½+1/n)
//! (domain.md §1.5; cm⁻¹, Å, u). The fit is of the levels themselves, not of spacings.
//!
//! Three variants: n fixed (D, v_D, X0 free), n free (D, v_D, X0, n free; strongly correlated)
//! and C_n fixed from theory (D, v_D free; needs μ). The start comes from a scan of the profile
//! χ²(v_D) (D and X0 enter linearly), then the Levenberg–Marquardt solver of [`super::lm`]
//! polishes. A best fit that runs off to v_D → ∞, or needs X0 ≤ 0, means the top spacings do
//! not shrink the way the model needs: that is reported as "no limit within this model".
//!
//! Monte Carlo refits with n free (and independent data) use variable projection: D and X0
//! enter linearly, so for given (v_D, n) they are solved exactly, and the Levenberg–Marquardt
//! iteration runs on (v_D, n) alone with Kaufman's Jacobian of the projected residual
//! (Golub & Pereyra 1973; Kaufman 1975; from memory). The minimum is the same χ² minimum as the full
//! four-parameter fit; warm-started at the nominal solution it is reached in fewer iterations
//! (the full fit converges only linearly when the residuals are large).

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::DMatrix;

use super::lm::{self, LmModel, LmOptions, LmWorkspace, Termination, Whitener};
use super::{Context, DrawValue, Lin, Redraw};
use crate::constants::{BOHR_ANGSTROM, C_U_CM1_U_A2, HARTREE_CM1};

/// F_n = nΓ(1+1/n)/Γ(½+1/n).
pub fn f_n(n: f64) -> f64 {
    use statrs::function::gamma::gamma;
    n * gamma(1.0 + 1.0 / n) / gamma(0.5 + 1.0 / n)
}

/// P_n = F_n √(4π C_u), cm⁻¹-Å-u units (K̄_n = P_n/(μ^{½}C_n^{1/n})).
pub fn p_n(n: f64) -> f64 {
    f_n(n) * (4.0 * std::f64::consts::PI * C_U_CM1_U_A2).sqrt()
}

/// Exponent 2n/(n−2) of the integrated near-dissociation expression.
pub fn exponent(n: f64) -> f64 {
    2.0 * n / (n - 2.0)
}

/// K̄_n from C_n (cm⁻¹Åⁿ) and μ (u).
pub fn kbar_from_cn(n: f64, cn: f64, mu_u: f64) -> f64 {
    p_n(n) / (mu_u.sqrt() * cn.powf(1.0 / n))
}

/// X0 (cm⁻¹) from C_n (cm⁻¹Åⁿ) and μ (u).
pub fn x0_from_cn(n: f64, cn: f64, mu_u: f64) -> f64 {
    ((n - 2.0) / (2.0 * n) * kbar_from_cn(n, cn, mu_u)).powf(exponent(n))
}

/// C_n (cm⁻¹Åⁿ) from X0 (cm⁻¹) and μ (u): the inverse of [`x0_from_cn`].
pub fn cn_from_x0(n: f64, x0: f64, mu_u: f64) -> f64 {
    let kbar = 2.0 * n / (n - 2.0) * x0.powf((n - 2.0) / (2.0 * n));
    (p_n(n) / (mu_u.sqrt() * kbar)).powf(n)
}

/// C_n converted from cm⁻¹Åⁿ to atomic units E_h a0ⁿ (CODATA constants of [`crate::constants`]).
pub fn cn_to_atomic_units(n: f64, cn_cm1_an: f64) -> f64 {
    cn_cm1_an / (HARTREE_CM1 * BOHR_ANGSTROM.powf(n))
}

/// Mean scattering length ā of a −C_n/Rⁿ tail, Å: ā = cos(π/(n−2)) [√(μC_n/C_u)/(n−2)]^{2/(n−2)}
/// Γ((n−3)/(n−2))/Γ((n−1)/(n−2)) (Gribakin & Flambaum, Phys. Rev. A 48, 546 (1993), from memory);
/// √(μC_n/C_u) = √(2μC_n)/ħ in Å^{(n−2)/2} with μ in u and C_n in cm⁻¹Åⁿ. Needs n > 3.
pub fn mean_scattering_length_angstrom(n: f64, cn_cm1_an: f64, mu_u: f64) -> f64 {
    use statrs::function::gamma::gamma;
    let k = n - 2.0;
    let x = (mu_u * cn_cm1_an / C_U_CM1_U_A2).sqrt() / k;
    (std::f64::consts::PI / k).cos() * x.powf(2.0 / k) * gamma((n - 3.0) / k) / gamma((n - 1.0) / k)
}

/// s-wave scattering length from v_D, Å, in the semiclassical form of Gribakin & Flambaum (1993,
/// from memory): a = ā [1 − tan(π/(n−2)) tan(Φ − π/(2(n−2)))] with Φ = π(v_D + ½). It depends on
/// v_D only through v_D mod 1, so an integer shift of the numbering leaves it unchanged.
pub fn scattering_length_angstrom(n: f64, cn_cm1_an: f64, mu_u: f64, v_d: f64) -> f64 {
    use std::f64::consts::PI;
    let k = n - 2.0;
    let phi = PI * (v_d + 0.5);
    mean_scattering_length_angstrom(n, cn_cm1_an, mu_u)
        * (1.0 - (PI / k).tan() * (phi - PI / (2.0 * k)).tan())
}

/// Which near-dissociation fit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LbVariant {
    /// n fixed: D, v_D, X0 fitted.
    FixedN {
        /// Long-range exponent.
        n: f64,
    },
    /// n fitted too (start value given).
    FreeN {
        /// Starting and fallback n.
        n_start: f64,
    },
    /// X0 fixed from a theoretical C_n and μ: D, v_D fitted.
    FixedX0 {
        /// Long-range exponent.
        n: f64,
        /// X0 from C_n and μ, cm⁻¹.
        x0: f64,
    },
    /// The asymptote D known (binding energies below it, or an asymptote from atomic data):
    /// v_D and X0 fitted.
    KnownD {
        /// Long-range exponent.
        n: f64,
        /// The asymptote on the data's energy scale, cm⁻¹.
        d: f64,
    },
}

impl LbVariant {
    /// Number of fitted parameters.
    pub fn n_params(&self) -> usize {
        match self {
            LbVariant::FixedN { .. } => 3,
            LbVariant::FreeN { .. } => 4,
            LbVariant::FixedX0 { .. } | LbVariant::KnownD { .. } => 2,
        }
    }
}

/// u^p, with an exact integer power when p is an integer (n = 3, 4, 6 give p = 6, 4, 3).
#[inline]
fn pow(u: f64, p: f64) -> f64 {
    if p == 3.0 {
        u * u * u
    } else if p == 4.0 {
        let u2 = u * u;
        u2 * u2
    } else if p == 6.0 {
        let u3 = u * u * u;
        u3 * u3
    } else {
        u.powf(p)
    }
}

struct FixedN {
    p: f64,
}
struct FreeN;
struct FixedX0 {
    p: f64,
    x0: f64,
}
/// θ = (v_D, X0) with D known.
struct KnownD {
    p: f64,
    d: f64,
}

fn above(vd: f64, v: &[f64]) -> bool {
    v.iter().all(|&x| vd - x > 1e-9)
}

impl LmModel<3> for FixedN {
    fn eval(&self, t: &[f64; 3], v: f64) -> (f64, [f64; 3]) {
        let u = t[1] - v;
        let up = pow(u, self.p);
        (t[0] - t[2] * up, [1.0, -t[2] * self.p * up / u, -up])
    }
    fn valid(&self, t: &[f64; 3], v: &[f64]) -> bool {
        t[2] > 0.0 && above(t[1], v)
    }
}

impl LmModel<4> for FreeN {
    fn eval(&self, t: &[f64; 4], v: f64) -> (f64, [f64; 4]) {
        let n = t[3];
        let p = exponent(n);
        let dp = -4.0 / ((n - 2.0) * (n - 2.0));
        let u = t[1] - v;
        let lu = u.ln();
        let up = (p * lu).exp();
        (
            t[0] - t[2] * up,
            [1.0, -t[2] * p * up / u, -up, -t[2] * up * lu * dp],
        )
    }
    fn valid(&self, t: &[f64; 4], v: &[f64]) -> bool {
        t[2] > 0.0 && t[3] > 2.05 && t[3] < 60.0 && above(t[1], v)
    }
}

impl LmModel<2> for FixedX0 {
    fn eval(&self, t: &[f64; 2], v: f64) -> (f64, [f64; 2]) {
        let u = t[1] - v;
        let up = pow(u, self.p);
        (t[0] - self.x0 * up, [1.0, -self.x0 * self.p * up / u])
    }
    fn valid(&self, t: &[f64; 2], v: &[f64]) -> bool {
        above(t[1], v)
    }
}

impl LmModel<2> for KnownD {
    fn eval(&self, t: &[f64; 2], v: f64) -> (f64, [f64; 2]) {
        let u = t[0] - v;
        let up = pow(u, self.p);
        (self.d - t[1] * up, [-t[1] * self.p * up / u, -up])
    }
    fn valid(&self, t: &[f64; 2], v: &[f64]) -> bool {
        t[1] > 0.0 && above(t[0], v)
    }
}

/// A converged near-dissociation fit, every parameter as a function of the data.
#[derive(Debug, Clone)]
pub struct LbFit {
    /// Asymptote D on the data's energy scale, cm⁻¹.
    pub d: Lin,
    /// v_D.
    pub v_d: Lin,
    /// X0, cm⁻¹ (constant when fixed from C_n).
    pub x0: Lin,
    /// n (constant unless fitted).
    pub n: Lin,
    /// Whitened χ² with the data covariance used for weighting.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Unscaled covariance of the fitted parameters (order D, v_D, X0, n as fitted).
    pub cov_unscaled: DMatrix<f64>,
    /// Why the solver stopped.
    pub termination: Termination,
    /// Iterations used.
    pub iterations: usize,
}

/// Outcome of a near-dissociation fit.
#[derive(Debug, Clone)]
pub enum LbOutcome {
    /// Converged, with a finite limit.
    Fit(Box<LbFit>),
    /// No limit within the model (or no convergence), with the reason and the termination.
    NoLimit {
        /// Why.
        reason: String,
        /// Solver termination, when the solver ran.
        termination: Option<Termination>,
    },
}

/// The levels a near-dissociation fit uses, as functions of the data.
#[derive(Debug, Clone)]
pub struct LbInput {
    /// Vibrational quantum numbers of the fitted levels.
    pub v: Vec<f64>,
    /// Their energies.
    pub e: Vec<f64>,
    /// E = map · y (k × N).
    pub map: DMatrix<f64>,
    /// Covariance of the fitted levels used for weighting.
    pub cov: DMatrix<f64>,
}

const DELTA_MIN: f64 = 1e-4;
const DELTA_MAX: f64 = 1e4;
const GRID_PER_DECADE: usize = 15;

fn delta_grid() -> impl Iterator<Item = f64> {
    let n = 8 * GRID_PER_DECADE;
    (0..=n).map(move |i| DELTA_MIN * 10f64.powf(i as f64 / GRID_PER_DECADE as f64))
}

/// Profile fit at fixed (v_D, p): D and X0 by weighted linear least squares (or D alone when X0
/// is fixed). Returns (D, X0, χ²).
fn profile(
    v: &[f64],
    ew: &[f64],
    w: &Whitener,
    p: f64,
    vd: f64,
    fixed: Fixed,
    buf: &mut [Vec<f64>; 3],
) -> Option<(f64, f64, f64)> {
    let m = v.len();
    let [ones, col, tmp] = buf;
    for i in 0..m {
        tmp[i] = 1.0;
    }
    w.apply(tmp, ones);
    for i in 0..m {
        tmp[i] = -pow(vd - v[i], p);
    }
    w.apply(tmp, col);
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let (d, x0) = match fixed {
        Fixed::X0(x0) => {
            let r: Vec<f64> = (0..m).map(|i| ew[i] - x0 * col[i]).collect();
            (dot(ones, &r) / dot(ones, ones), x0)
        }
        Fixed::D(d) => {
            let r: Vec<f64> = (0..m).map(|i| ew[i] - d * ones[i]).collect();
            let cc = dot(col, col);
            if cc.is_nan() || cc <= 1e-300 {
                return None;
            }
            (d, dot(col, &r) / cc)
        }
        Fixed::Neither => {
            let (a11, a12, a22) = (dot(ones, ones), dot(ones, col), dot(col, col));
            let (b1, b2) = (dot(ones, ew), dot(col, ew));
            let det = a11 * a22 - a12 * a12;
            if det.is_nan() || det.abs() <= 1e-300 {
                return None;
            }
            ((a22 * b1 - a12 * b2) / det, (a11 * b2 - a12 * b1) / det)
        }
    };
    let chi2: f64 = (0..m)
        .map(|i| (ew[i] - d * ones[i] - x0 * col[i]).powi(2))
        .sum();
    chi2.is_finite().then_some((d, x0, chi2))
}

/// What the profile holds fixed besides n.
#[derive(Clone, Copy)]
enum Fixed {
    Neither,
    X0(f64),
    D(f64),
}

/// Scan the profile χ² over v_D (and n when free). Returns the best (D, v_D, X0, n) or why not.
fn start(input: &LbInput, w: &Whitener, variant: LbVariant) -> Result<[f64; 4], String> {
    let m = input.v.len();
    let v_max = input.v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let mut ew = vec![0.0; m];
    w.apply(&input.e, &mut ew);
    let mut buf = [vec![0.0; m], vec![0.0; m], vec![0.0; m]];
    let ns: Vec<f64> = match variant {
        LbVariant::FixedN { n } | LbVariant::FixedX0 { n, .. } | LbVariant::KnownD { n, .. } => {
            vec![n]
        }
        LbVariant::FreeN { n_start } => {
            let mut g = vec![
                2.5, 3.0, 3.5, 4.0, 4.5, 5.0, 5.5, 6.0, 7.0, 8.0, 9.0, 10.0, 12.0, 14.0, 16.0, 20.0,
            ];
            g.push(n_start);
            g
        }
    };
    let fixed = match variant {
        LbVariant::FixedX0 { x0, .. } => Fixed::X0(x0),
        LbVariant::KnownD { d, .. } => Fixed::D(d),
        _ => Fixed::Neither,
    };
    let last = delta_grid().count() - 1;
    let mut best: Option<(f64, [f64; 4], usize)> = None;
    for &n in &ns {
        let p = exponent(n);
        for (i, delta) in delta_grid().enumerate() {
            let vd = v_max + delta;
            if let Some((d, x0, chi2)) = profile(&input.v, &ew, w, p, vd, fixed, &mut buf)
                && x0 > 0.0
                && best.as_ref().is_none_or(|b| chi2 < b.0)
            {
                best = Some((chi2, [d, vd, x0, n], i));
            }
        }
    }
    match best {
        None => Err("the top levels need X0 ≤ 0 (spacings that do not shrink toward the top): no dissociation limit within the near-dissociation model".into()),
        Some((_, _, i)) if i == last => Err(format!(
            "the near-dissociation model fits best with the limit receding without bound (v_D − v_top > {DELTA_MAX:.0}): the top spacings do not shrink toward a limit; no dissociation limit within this model"
        )),
        Some((_, t, _)) => Ok(t),
    }
}

fn no_limit(reason: impl Into<String>, termination: Option<Termination>) -> LbOutcome {
    LbOutcome::NoLimit {
        reason: reason.into(),
        termination,
    }
}

/// Fit the near-dissociation model to the given levels.
pub fn fit(input: &LbInput, variant: LbVariant) -> LbOutcome {
    let m = input.v.len();
    let p_count = variant.n_params();
    if m < p_count {
        return no_limit(
            format!("{m} levels for a {p_count}-parameter near-dissociation fit: too few"),
            None,
        );
    }
    let Some(w) = Whitener::from_cov(&input.cov) else {
        return no_limit(
            "the covariance of the top levels is not positive definite",
            None,
        );
    };
    let t0 = match start(input, &w, variant) {
        Ok(t) => t,
        Err(why) => return no_limit(why, None),
    };
    let mut ws = LmWorkspace::default();
    let opts = LmOptions::default();
    let (theta, chi2, termination, iterations, jtj): (
        Vec<f64>,
        f64,
        Termination,
        usize,
        DMatrix<f64>,
    ) = match variant {
        LbVariant::FixedN { n } => {
            let o = lm::solve(
                &FixedN { p: exponent(n) },
                &input.v,
                &input.e,
                &w,
                [t0[0], t0[1], t0[2]],
                opts,
                &mut ws,
            );
            (
                o.theta.to_vec(),
                o.chi2,
                o.termination,
                o.iterations,
                DMatrix::from_iterator(3, 3, o.jtj.iter().copied()),
            )
        }
        LbVariant::FreeN { .. } => {
            let o = lm::solve(&FreeN, &input.v, &input.e, &w, t0, opts, &mut ws);
            (
                o.theta.to_vec(),
                o.chi2,
                o.termination,
                o.iterations,
                DMatrix::from_iterator(4, 4, o.jtj.iter().copied()),
            )
        }
        LbVariant::FixedX0 { n, x0 } => {
            let o = lm::solve(
                &FixedX0 { p: exponent(n), x0 },
                &input.v,
                &input.e,
                &w,
                [t0[0], t0[1]],
                opts,
                &mut ws,
            );
            (
                o.theta.to_vec(),
                o.chi2,
                o.termination,
                o.iterations,
                DMatrix::from_iterator(2, 2, o.jtj.iter().copied()),
            )
        }
        LbVariant::KnownD { n, d } => {
            let o = lm::solve(
                &KnownD { p: exponent(n), d },
                &input.v,
                &input.e,
                &w,
                [t0[1], t0[2]],
                opts,
                &mut ws,
            );
            // Laid out as the other variants: (D, v_D, X0).
            (
                vec![d, o.theta[0], o.theta[1]],
                o.chi2,
                o.termination,
                o.iterations,
                DMatrix::from_iterator(2, 2, o.jtj.iter().copied()),
            )
        }
    };
    if !termination.converged() {
        let at_edge =
            matches!(variant, LbVariant::FreeN { .. }) && (theta[3] > 50.0 || theta[3] < 2.2);
        let why = if at_edge {
            format!(
                "the near-dissociation fit with n free did not converge: n runs to the edge of its range (n = {:.2} after {iterations} iterations; {termination:?}); the levels do not determine n (n → ∞ means Morse-like, quadratic levels)",
                theta[3]
            )
        } else {
            format!(
                "the near-dissociation fit did not converge ({termination:?} after {iterations} iterations)"
            )
        };
        return no_limit(why, Some(termination));
    }
    let v_max = input.v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if theta[1] - v_max > DELTA_MAX {
        return no_limit(
            "the near-dissociation fit runs to v_D → ∞: no dissociation limit within this model",
            Some(termination),
        );
    }
    let Some(cov) = jtj.clone().try_inverse() else {
        return no_limit(
            "the near-dissociation fit is degenerate (singular JᵀJ)",
            Some(termination),
        );
    };
    // Sensitivity dθ/dy = (JᵀJ)⁻¹ J_wᵀ W M.
    let jw = DMatrix::from_row_slice(m, p_count, ws.whitened_jacobian());
    let sens = &cov * jw.transpose() * w.matrix() * &input.map;
    let n_data = input.map.ncols();
    // Row of θ in the sensitivity (KnownD fits θ = (v_D, X0) only).
    let row_of = |k: usize| match variant {
        LbVariant::KnownD { .. } => k - 1,
        _ => k,
    };
    let lin = |k: usize| Lin {
        value: theta[k],
        grad: sens.row(row_of(k)).transpose(),
    };
    let (d, x0, n) = match variant {
        LbVariant::FixedN { n } => (lin(0), lin(2), Lin::constant(n, n_data)),
        LbVariant::FreeN { .. } => (lin(0), lin(2), lin(3)),
        LbVariant::FixedX0 { n, x0 } => {
            (lin(0), Lin::constant(x0, n_data), Lin::constant(n, n_data))
        }
        LbVariant::KnownD { n, d } => (Lin::constant(d, n_data), lin(2), Lin::constant(n, n_data)),
    };
    LbOutcome::Fit(Box::new(LbFit {
        d,
        v_d: lin(1),
        x0,
        n,
        chi2,
        dof: m - p_count,
        cov_unscaled: cov,
        termination,
        iterations,
    }))
}

/// Re-runs a near-dissociation fit on redrawn data (level subset and variant held fixed).
#[derive(Debug, Clone)]
pub struct LbEstimator {
    variant: LbVariant,
    v: Vec<f64>,
    /// The non-zero entries of E = map · y, row by row: (row, column, coefficient). For level
    /// data the map selects rows of y (one entry per level), so a draw costs k products, not k·N.
    map: Vec<(usize, usize, f64)>,
    w: Whitener,
    theta: [f64; 4],
    e0: Lin,
    zero_point: Lin,
    e: Vec<f64>,
    ws: LmWorkspace,
    proj: Projected,
    active: bool,
}

/// Variable-projection refit of the n-free model for independent data (see the module
/// documentation): buffers reused across draws.
#[derive(Debug, Clone, Default)]
struct Projected {
    u: Vec<f64>,
    lu: Vec<f64>,
    up: Vec<f64>,
    r: Vec<f64>,
    j: Vec<[f64; 2]>,
}

/// One evaluation of the projected problem at φ = (v_D, n).
struct ProjEval {
    chi2: f64,
    d: f64,
    x0: f64,
}

impl Projected {
    /// Residuals (and with `jac` the Kaufman Jacobian) at φ; `None` outside the domain
    /// (n ∉ (2.05, 60), v_D not above every level, X0 ≤ 0, a singular linear part).
    fn eval(
        &mut self,
        v: &[f64],
        ew: &[f64],
        w: &[f64],
        phi: [f64; 2],
        jac: bool,
    ) -> Option<ProjEval> {
        let (vd, n) = (phi[0], phi[1]);
        if !(n > 2.05 && n < 60.0 && vd.is_finite() && above(vd, v)) {
            return None;
        }
        let m = v.len();
        let p = exponent(n);
        // Whitened columns a1 = w, a2 = −w uᵖ; normal equations of the linear part.
        let (mut s11, mut s12, mut s22, mut b1, mut b2) = (0.0, 0.0, 0.0, 0.0, 0.0);
        for i in 0..m {
            let u = vd - v[i];
            let lu = u.ln();
            let up = (p * lu).exp();
            self.u[i] = u;
            self.lu[i] = lu;
            self.up[i] = up;
            let (a1, a2) = (w[i], -w[i] * up);
            s11 += a1 * a1;
            s12 += a1 * a2;
            s22 += a2 * a2;
            b1 += a1 * ew[i];
            b2 += a2 * ew[i];
        }
        let det = s11 * s22 - s12 * s12;
        if !(det.is_finite() && det > 1e-300) {
            return None;
        }
        let d = (s22 * b1 - s12 * b2) / det;
        let x0 = (s11 * b2 - s12 * b1) / det;
        if !(x0 > 0.0 && d.is_finite()) {
            return None;
        }
        let mut chi2 = 0.0;
        for i in 0..m {
            let r = ew[i] - w[i] * (d - x0 * self.up[i]);
            self.r[i] = r;
            chi2 += r * r;
        }
        if jac {
            // (∂A/∂φ_k) c for k = v_D, n, then J_k = −(I − A (AᵀA)⁻¹ Aᵀ)(∂A/∂φ_k) c.
            let dp = -4.0 / ((n - 2.0) * (n - 2.0));
            let (mut t1, mut t2) = ([0.0f64; 2], [0.0f64; 2]); // Aᵀ d_k
            for i in 0..m {
                let dv = -w[i] * x0 * p * self.up[i] / self.u[i];
                let dn = -w[i] * x0 * self.up[i] * self.lu[i] * dp;
                self.j[i] = [dv, dn];
                let (a1, a2) = (w[i], -w[i] * self.up[i]);
                t1[0] += a1 * dv;
                t2[0] += a2 * dv;
                t1[1] += a1 * dn;
                t2[1] += a2 * dn;
            }
            for k in 0..2 {
                // coefficients (AᵀA)⁻¹ Aᵀ d_k
                let c1 = (s22 * t1[k] - s12 * t2[k]) / det;
                let c2 = (s11 * t2[k] - s12 * t1[k]) / det;
                for i in 0..m {
                    let proj = c1 * w[i] - c2 * w[i] * self.up[i];
                    self.j[i][k] = -(self.j[i][k] - proj);
                }
            }
        }
        Some(ProjEval { chi2, d, x0 })
    }

    /// Levenberg–Marquardt on φ = (v_D, n) with the tolerances and damping rules of
    /// [`lm::solve`]. Returns (D, v_D, X0, n) when converged.
    fn solve(
        &mut self,
        v: &[f64],
        e: &[f64],
        w: &[f64],
        phi0: [f64; 2],
        opts: &LmOptions,
    ) -> Option<[f64; 4]> {
        let m = v.len();
        for buf in [&mut self.u, &mut self.lu, &mut self.up, &mut self.r] {
            buf.resize(m, 0.0);
        }
        self.j.resize(m, [0.0; 2]);
        let ew: Vec<f64> = (0..m).map(|i| w[i] * e[i]).collect();
        let scale0 = ew.iter().map(|x| x.abs()).fold(0.0, f64::max);
        let exact_floor = |c: f64| c <= m as f64 * (4e-16 * scale0).powi(2);
        let mut phi = phi0;
        let mut cur = self.eval(v, &ew, w, phi, true)?;
        let normal = |s: &Self| {
            let (mut a, mut g) = ([[0.0f64; 2]; 2], [0.0f64; 2]);
            for i in 0..m {
                let j = s.j[i];
                for k in 0..2 {
                    g[k] -= j[k] * s.r[i];
                    for l in 0..2 {
                        a[k][l] += j[k] * j[l];
                    }
                }
            }
            (a, g)
        };
        let (mut a, mut g) = normal(self);
        if exact_floor(cur.chi2) {
            return Some([cur.d, phi[0], cur.x0, phi[1]]);
        }
        let mut lambda = opts.lambda0;
        let mut nu = 2.0;
        for _ in 0..opts.max_iter {
            let gmax = (0..2)
                .map(|k| {
                    let d = (a[k][k] * cur.chi2).sqrt();
                    if d > 0.0 { g[k].abs() / d } else { 0.0 }
                })
                .fold(0.0, f64::max);
            if gmax <= opts.gtol {
                return Some([cur.d, phi[0], cur.x0, phi[1]]);
            }
            let dg = [a[0][0].max(1e-300), a[1][1].max(1e-300)];
            let (m11, m12, m22) = (a[0][0] + lambda * dg[0], a[0][1], a[1][1] + lambda * dg[1]);
            let det = m11 * m22 - m12 * m12;
            if !(det > 0.0 && det.is_finite()) {
                lambda *= nu;
                nu *= 2.0;
                if lambda > 1e32 {
                    return None;
                }
                continue;
            }
            let delta = [
                (m22 * g[0] - m12 * g[1]) / det,
                (m11 * g[1] - m12 * g[0]) / det,
            ];
            let small = (0..2).all(|k| delta[k].abs() <= opts.xtol * (phi[k].abs() + opts.xtol));
            let trial = [phi[0] + delta[0], phi[1] + delta[1]];
            let next = self.eval(v, &ew, w, trial, true);
            let chi2_new = next.as_ref().map_or(f64::INFINITY, |t| t.chi2);
            let pred: f64 = (0..2)
                .map(|k| delta[k] * (g[k] + lambda * dg[k] * delta[k]))
                .sum();
            let rho = if pred > 0.0 && chi2_new.is_finite() {
                (cur.chi2 - chi2_new) / pred
            } else {
                -1.0
            };
            if let (true, Some(next)) = (rho > 0.0, next) {
                let old = cur.chi2;
                phi = trial;
                cur = next;
                (a, g) = normal(self);
                lambda *= (1.0f64 / 3.0).max(1.0 - (2.0 * rho - 1.0).powi(3));
                nu = 2.0;
                if exact_floor(cur.chi2) || small || old - cur.chi2 <= opts.ftol * cur.chi2 {
                    return Some([cur.d, phi[0], cur.x0, phi[1]]);
                }
            } else {
                if small {
                    // No improvement is possible within the tolerance: at the minimum.
                    return Some([cur.d, phi[0], cur.x0, phi[1]]);
                }
                lambda *= nu;
                nu *= 2.0;
                if lambda > 1e32 {
                    return None;
                }
            }
        }
        None
    }
}

impl LbEstimator {
    /// Prepare from the nominal fit (inactive when there was none).
    pub fn new(input: &LbInput, variant: LbVariant, fit: Option<&LbFit>, ctx: &Context) -> Self {
        let w =
            Whitener::from_cov(&input.cov).unwrap_or(Whitener::Diagonal(vec![1.0; input.v.len()]));
        let (theta, active) = match fit {
            Some(f) => ([f.d.value, f.v_d.value, f.x0.value, f.n.value], true),
            None => ([0.0; 4], false),
        };
        Self {
            variant,
            v: input.v.clone(),
            map: (0..input.map.nrows())
                .flat_map(|r| (0..input.map.ncols()).map(move |c| (r, c)))
                .filter_map(|(r, c)| {
                    let x = input.map[(r, c)];
                    (x != 0.0).then_some((r, c, x))
                })
                .collect(),
            w,
            theta,
            e0: ctx.e0.clone(),
            zero_point: ctx.zero_point.clone(),
            e: vec![0.0; input.v.len()],
            ws: LmWorkspace::default(),
            proj: Projected::default(),
            active,
        }
    }
}

impl Redraw for LbEstimator {
    fn draw(&mut self, y: &[f64], _dy: &[f64], dy_base: &[f64]) -> DrawValue {
        if !self.active {
            return DrawValue::Failed;
        }
        // Same sums as the dense product (the skipped terms are exact zeros).
        self.e.fill(0.0);
        for &(r, c, x) in &self.map {
            self.e[r] += x * y[c];
        }
        // Statistical tolerances: a gradient cosine of 1e-6 leaves parameter errors ~1e-6 σ, and
        // a relative step of 1e-8 in D or v_D is far below any σ a draw can resolve.
        let opts = LmOptions {
            max_iter: 100,
            xtol: 1e-8,
            ftol: 1e-9,
            gtol: 1e-6,
            lambda0: 1e-6,
            final_jacobian: false,
        };
        let t = self.theta;
        let (d, vd, conv) = match self.variant {
            LbVariant::FixedN { n } => {
                let o = lm::solve(
                    &FixedN { p: exponent(n) },
                    &self.v,
                    &self.e,
                    &self.w,
                    [t[0], t[1], t[2]],
                    opts,
                    &mut self.ws,
                );
                (o.theta[0], o.theta[1], o.termination.converged())
            }
            LbVariant::FreeN { .. } => match &self.w {
                Whitener::Diagonal(wd) => {
                    match self.proj.solve(&self.v, &self.e, wd, [t[1], t[3]], &opts) {
                        Some(th) => (th[0], th[1], true),
                        None => (f64::NAN, f64::NAN, false),
                    }
                }
                Whitener::Full(_) => {
                    let o = lm::solve(&FreeN, &self.v, &self.e, &self.w, t, opts, &mut self.ws);
                    (o.theta[0], o.theta[1], o.termination.converged())
                }
            },
            LbVariant::FixedX0 { n, x0 } => {
                let o = lm::solve(
                    &FixedX0 { p: exponent(n), x0 },
                    &self.v,
                    &self.e,
                    &self.w,
                    [t[0], t[1]],
                    opts,
                    &mut self.ws,
                );
                (o.theta[0], o.theta[1], o.termination.converged())
            }
            LbVariant::KnownD { n, d } => {
                let o = lm::solve(
                    &KnownD { p: exponent(n), d },
                    &self.v,
                    &self.e,
                    &self.w,
                    [t[1], t[2]],
                    opts,
                    &mut self.ws,
                );
                (d, o.theta[0], o.termination.converged())
            }
        };
        if !conv {
            return DrawValue::Failed;
        }
        let v_max = self.v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        if vd - v_max > DELTA_MAX {
            return DrawValue::NoLimit;
        }
        let d0 = d - self.e0.at(dy_base);
        if d0 <= 0.0 {
            return DrawValue::Failed;
        }
        DrawValue::Value {
            d0,
            de: d0 + self.zero_point.at(dy_base),
            v_d: vd,
        }
    }
}

/// The fitted levels for the top `k` levels of a level view.
pub fn top_input(
    view: &crate::spacings::LevelView,
    k: usize,
    data_cov: &DMatrix<f64>,
) -> Option<LbInput> {
    let n = view.v.len();
    if k == 0 || k > n {
        return None;
    }
    let rows: Vec<usize> = (n - k..n).collect();
    Some(LbInput {
        v: rows.iter().map(|&r| view.v[r]).collect(),
        e: rows.iter().map(|&r| view.e[r]).collect(),
        map: view.map.select_rows(&rows),
        cov: view.cov_of(&rows, data_cov),
    })
}

/// The linearised LeRoy–Bernstein line for plotting: (dG/dv)^{(n−2)/(n+2)} = slope·(v_D − v),
/// slope = (p X0)^{(n−2)/(n+2)} with p = 2n/(n−2). Returns (exponent, slope).
pub fn linearised(n: f64, x0: f64) -> (f64, f64) {
    let e = (n - 2.0) / (n + 2.0);
    (e, (exponent(n) * x0).powf(e))
}

/// Value of the near-dissociation model at v.
pub fn model_value(d: f64, v_d: f64, x0: f64, n: f64, v: f64) -> f64 {
    let u = (v_d - v).max(0.0);
    d - x0 * u.powf(exponent(n))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: closed form G(v) = D − X0 (v_D − v)^{2n/(n−2)} (tests/analysis/pure_tail.json,
    /// n = 6 case, written by scripts/oracles/analysis.py): the variable-projection refit of the
    /// Monte Carlo draws recovers D, v_D, X0 and n of exact levels from a start off by 0.4 in v_D
    /// and 1.5 in n. Tolerance 1e-7 relative (the data are exact to ~1e-12 relative).
    #[test]
    fn projected_refit_recovers_a_pure_tail() {
        let fx: serde_json::Value =
            serde_json::from_str(include_str!("../../../../tests/analysis/pure_tail.json"))
                .unwrap();
        let case = fx["cases"]
            .as_array()
            .unwrap()
            .iter()
            .find(|c| c["n"] == 6)
            .unwrap();
        let lv = case["levels"].as_array().unwrap();
        let v: Vec<f64> = lv.iter().map(|l| l["v"].as_f64().unwrap()).collect();
        let e: Vec<f64> = lv
            .iter()
            .map(|l| l["energy_cm1"].as_f64().unwrap())
            .collect();
        let w: Vec<f64> = lv
            .iter()
            .map(|l| 1.0 / l["sigma_cm1"].as_f64().unwrap())
            .collect();
        let x = &case["expected"];
        let (d, vd, x0) = (
            x["d_cm1"].as_f64().unwrap(),
            x["v_d"].as_f64().unwrap(),
            x["x0_cm1"].as_f64().unwrap(),
        );
        let opts = LmOptions {
            max_iter: 200,
            xtol: 1e-12,
            ftol: 1e-15,
            gtol: 1e-12,
            lambda0: 1e-3,
            final_jacobian: false,
        };
        let th = Projected::default()
            .solve(&v, &e, &w, [vd + 0.4, 7.5], &opts)
            .expect("converges");
        for (got, want) in th.iter().zip([d, vd, x0, 6.0]) {
            assert!(
                (got - want).abs() <= 1e-7 * want.abs(),
                "{th:?} vs {:?}",
                [d, vd, x0, 6.0]
            );
        }
    }

    /// Outside the domain (n ≤ 2.05, v_D below a level) the projected problem refuses to
    /// evaluate rather than return NaN (common practice, no source).
    #[test]
    fn projected_refit_refuses_invalid_points() {
        let v = [10.0, 11.0, 12.0, 13.0, 14.0];
        let ew = [1.0; 5];
        let w = [1.0; 5];
        let mut p = Projected {
            u: vec![0.0; 5],
            lu: vec![0.0; 5],
            up: vec![0.0; 5],
            r: vec![0.0; 5],
            j: vec![[0.0; 2]; 5],
        };
        assert!(p.eval(&v, &ew, &w, [20.0, 2.0], true).is_none());
        assert!(p.eval(&v, &ew, &w, [13.5, 6.0], true).is_none());
    }
}
