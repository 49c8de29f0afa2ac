//! Direct potential fit: an MLR curve ([`super::mlr`]) fitted to observed vibrational levels by
//! solving the radial Schrödinger equation inside the fit.
//!
//! Weighted least squares of the data (level energies on any origin, with one fitted offset, or
//! spacings ΔG_{v+½}) over De, β_0 … β_N and, optionally, a common factor λ of the long-range
//! coefficients (fitted as ln λ). re, p, q, r_ref and the powers m are held fixed: vibrational
//! levels alone fix the width of the well as a function of energy, not its position, so re comes
//! from rotational constants or from the user (Le Roy et al., J. Chem. Phys. 131, 204309 (2009),
//! from memory).
//!
//! The eigenvalue derivatives are Hellmann–Feynman expectation values ∂E_v/∂θ = ⟨ψ_v|∂V/∂θ|ψ_v⟩
//! on the solver's wavefunctions ([`super::solver::solve_levels_probed`]). The iteration is
//! damped Gauss–Newton (Levenberg–Marquardt with Marquardt's diagonal scaling; the textbook
//! algorithm, as in [`crate::extrapolate::lm`], written here for a parameter count known only at
//! run time and a model that is one eigenvalue solve per evaluation). The number of β terms is
//! chosen by AICc among the converged fits, as every other order in the project is.
//!
//! The fit's sensitivity to the data, S = (J_wᵀJ_w)⁻¹ J_wᵀ W, gives every derived quantity
//! (De, D0 = De − E(v = 0)) as a linear function of the data for σ and for Monte Carlo draws.

use nalgebra::{DMatrix, DVector};
use serde::{Deserialize, Serialize};

use super::Potential;
use super::mlr::{LongRangeTerm, Mlr};
use super::solver::{Probe, SolverSettings, solve_levels, solve_levels_probed};
use crate::constants::C_U_CM1_U_A2;
use crate::dunham::DataKind;
use crate::extrapolate::lm::{Termination, Whitener};

/// Most evaluations (eigenvalue solves) of the fit of each number of β terms in the scan; its χ²
/// then ranks it (an upper bound of its minimum) and starts the next.
const SCAN_EVALUATIONS: usize = 400;
/// J of the second solve whose Hellmann–Feynman derivatives, less those at J = 0 and divided by
/// J(J + 1), give ∂B_v/∂θ: large enough that the difference stands well above the grids'
/// discretisation, small enough that centrifugal distortion (a relative 4B²J(J+1)/ωe², about
/// 10⁻⁴ for typical constants) does not matter.
const B_DIFFERENCE_J: u32 = 10;
/// Most evaluations of the whole scan: beyond it no further β term is tried (bounded work on any
/// input).
const MAX_SCAN_TOTAL: usize = 1200;
/// Most evaluations of the final fit of the chosen number of terms before it stops as not
/// converged.
const MAX_EVALUATIONS: usize = 400;

/// What is held fixed in a direct fit, and how far the β polynomial may grow.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DpfSpec {
    /// Reduced mass, u.
    pub mu_u: f64,
    /// Equilibrium distance held fixed, Å.
    pub re_angstrom: f64,
    /// Power p.
    pub p: u32,
    /// Power q.
    pub q: u32,
    /// Reference distance r_ref, Å.
    pub r_ref_angstrom: f64,
    /// Long-range terms (their C_m are starting values when `fit_tail`).
    pub tail: Vec<LongRangeTerm>,
    /// Tang–Toennies damping range, 1/Å (`None`: undamped).
    pub damping_b_per_angstrom: Option<f64>,
    /// Fit a common factor of the long-range coefficients (otherwise they are held fixed).
    pub fit_tail: bool,
    /// Most β terms tried.
    pub max_beta: usize,
}

impl DpfSpec {
    /// Defaults for one tail C_n/rⁿ: p = n − … chosen as max(5, spread + 1) with the spread of the
    /// long-range powers, q = 3, r_ref = 1.3 re (common practice, no source: p above the spread of
    /// the powers is required by the form; q ≈ 2–4 and r_ref a little beyond re are usual).
    pub fn defaults(mu_u: f64, re_angstrom: f64, tail: Vec<LongRangeTerm>, fit_tail: bool) -> Self {
        let spread = tail.last().map_or(0, |t| t.m) - tail.first().map_or(0, |t| t.m);
        DpfSpec {
            mu_u,
            re_angstrom,
            p: (spread + 1).max(5),
            q: 3,
            r_ref_angstrom: 1.3 * re_angstrom,
            tail,
            damping_b_per_angstrom: None,
            fit_tail,
            max_beta: 12,
        }
    }

    fn curve(&self, de: f64, beta: &[f64], ln_lambda: f64) -> Mlr {
        self.curve_at(de, beta, ln_lambda, self.re_angstrom)
    }

    fn curve_at(&self, de: f64, beta: &[f64], ln_lambda: f64, re: f64) -> Mlr {
        Mlr {
            de_cm1: de,
            re_angstrom: re,
            p: self.p,
            q: self.q,
            r_ref_angstrom: self.r_ref_angstrom,
            beta: beta.to_vec(),
            tail: self.tail.clone(),
            damping_b_per_angstrom: self.damping_b_per_angstrom,
        }
        .with_tail_scaled(ln_lambda.exp())
    }
}

/// The observations of a direct fit.
#[derive(Debug, Clone)]
pub struct DpfData {
    /// Levels (one offset fitted) or spacings keyed by the lower level.
    pub kind: DataKind,
    /// Vibrational quantum numbers (whole numbers ≥ 0).
    pub v: Vec<u32>,
    /// Energies or spacings, cm⁻¹.
    pub y: Vec<f64>,
    /// Whitening of the residuals (from the data covariance).
    pub whitener: Whitener,
    /// Level accuracy asked of the solver, cm⁻¹.
    pub solver_tolerance_cm1: f64,
    /// χ² changes below this are the solver's noise, not progress.
    pub noise_chi2: f64,
    /// Rotational constants fitted with the levels: (v, B_v, σ) in cm⁻¹. With them r_e is fitted
    /// too (B_v fix the position of the well).
    pub rotation: Vec<(u32, f64, f64)>,
}

impl DpfData {
    /// The data with the solver accuracy set from the smallest σ: a fiftieth of it (within
    /// 10⁻⁵ … 10⁻³ cm⁻¹), so that the solver's errors add less than 10⁻³ to χ² per datum.
    pub fn new(
        kind: DataKind,
        v: Vec<u32>,
        y: Vec<f64>,
        whitener: Whitener,
        sigma_min_cm1: f64,
    ) -> Self {
        let tol = (0.02 * sigma_min_cm1).clamp(1e-5, 1e-3);
        let noise = 1e-3 * v.len() as f64;
        DpfData {
            kind,
            v,
            y,
            whitener,
            solver_tolerance_cm1: tol,
            noise_chi2: noise,
            rotation: Vec::new(),
        }
    }

    /// The same data with rotational constants (v, B_v, σ) fitted beside them.
    pub fn with_rotation(mut self, rotation: Vec<(u32, f64, f64)>) -> Self {
        self.rotation = rotation;
        self
    }

    /// Number of fitted values: levels or spacings, then B_v.
    fn len(&self) -> usize {
        self.v.len() + self.rotation.len()
    }
}

/// One number of β terms tried.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BetaOrder {
    /// Number of β coefficients.
    pub terms: usize,
    /// χ² of the fit.
    pub chi2: Option<f64>,
    /// AICc of a converged fit.
    pub aicc: Option<f64>,
    /// Why it was not usable, when it was not.
    pub refused: Option<String>,
}

/// The outcome of a direct fit.
#[derive(Debug, Clone)]
pub struct DpfFit {
    /// The fitted curve.
    pub mlr: Mlr,
    /// Parameter values (De, β_0…, then ln λ, r_e and the offset when fitted).
    pub theta: Vec<f64>,
    /// Names of the parameters.
    pub names: Vec<String>,
    /// Unscaled parameter covariance (J_wᵀJ_w)⁻¹.
    pub cov: DMatrix<f64>,
    /// Sensitivity ∂θ/∂y (P × m).
    pub sensitivity: DMatrix<f64>,
    /// χ² against the data σ.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Why the iteration stopped.
    pub termination: Termination,
    /// Calculated values of the data (same kind and order as the data).
    pub calc: Vec<f64>,
    /// Calculated B_v of the rotational data, in their order.
    pub b_calc: Vec<f64>,
    /// r_e of the fitted curve and its σ (fitted with B_v; σ `None` when held fixed), Å.
    pub re_fitted: Option<f64>,
    /// E(v = 0) above the minimum, cm⁻¹, and its gradient ∂/∂θ.
    pub e0_cm1: f64,
    /// ∂E(v = 0)/∂θ.
    pub e0_grad: Vec<f64>,
    /// Number of bound levels of the fitted curve (J = 0).
    pub bound_levels: Option<usize>,
    /// Every number of β terms tried.
    pub orders: Vec<BetaOrder>,
    /// Eigenvalue solves used in all.
    pub evaluations: usize,
}

/// Model values and Jacobian at one θ.
struct Eval {
    /// Model values: levels or spacings, then B_v.
    f: Vec<f64>,
    /// Their Jacobian (unwhitened).
    jac: DMatrix<f64>,
    e0: f64,
    e0_grad: Vec<f64>,
}

/// Layout of θ for `nb` β terms.
#[derive(Clone, Copy)]
struct Layout {
    nb: usize,
    tail: bool,
    re: bool,
    offset: bool,
}

impl Layout {
    /// θ = (De, β_0 … β_{nb−1}, [ln λ], [r_e], [offset]).
    fn len(&self) -> usize {
        1 + self.nb + usize::from(self.tail) + usize::from(self.re) + usize::from(self.offset)
    }
    fn ln_lambda(&self, th: &[f64]) -> f64 {
        if self.tail { th[1 + self.nb] } else { 0.0 }
    }
    fn re_index(&self) -> usize {
        1 + self.nb + usize::from(self.tail)
    }
    fn re(&self, spec: &DpfSpec, th: &[f64]) -> f64 {
        if self.re {
            th[self.re_index()]
        } else {
            spec.re_angstrom
        }
    }
    fn curve(&self, spec: &DpfSpec, th: &[f64]) -> Mlr {
        spec.curve_at(
            th[0],
            &th[1..1 + self.nb],
            self.ln_lambda(th),
            self.re(spec, th),
        )
    }
}

fn solver_settings(levels: usize, tolerance_cm1: f64) -> SolverSettings {
    SolverSettings {
        max_levels: Some(levels),
        tolerance_cm1,
        wavefunction_points: 0,
        ..SolverSettings::default()
    }
}

/// Solve the curve of θ and differentiate the data's model values: levels by Hellmann–Feynman,
/// B_v = ∂E_v/∂[J(J+1)] by the difference of the Hellmann–Feynman derivatives at J = [`B_DIFFERENCE_J`] and J = 0
/// (first order in J(J+1); centrifugal distortion enters at the next).
fn evaluate(spec: &DpfSpec, data: &DpfData, lay: Layout, th: &[f64]) -> Option<Eval> {
    let de = th[0];
    if !(de.is_finite() && de > 0.0) || th.iter().any(|x| !x.is_finite()) {
        return None;
    }
    let mlr = lay.curve(spec, th);
    mlr.validate().ok()?;
    let re = mlr.re_angstrom;
    let h = 1e-6 * re;
    let (up, down) = (
        Mlr {
            re_angstrom: re + h,
            ..mlr.clone()
        },
        Mlr {
            re_angstrom: re - h,
            ..mlr.clone()
        },
    );
    let v_max = data
        .v
        .iter()
        .chain(data.rotation.iter().map(|b| &b.0))
        .max()
        .copied()? as usize
        + usize::from(data.kind == DataKind::Spacings);
    // Probe: ∂V/∂De, ∂V/∂β_i, ∂V/∂ln λ (closed forms), ∂V/∂r_e (central difference).
    let np = lay.nb + 3;
    let eval = |r: f64, out: &mut [f64]| {
        mlr.parameter_derivatives(r, &mut out[..np - 1]);
        out[np - 1] = (up.energy_cm1(r) - down.energy_cm1(r)) / (2.0 * h);
    };
    let probe = Probe {
        count: np,
        eval: &eval,
    };
    let mut settings = solver_settings(v_max + 1, data.solver_tolerance_cm1);
    let (set, ex) = solve_levels_probed(&mlr, spec.mu_u, &settings, &probe).ok()?;
    if set.levels.len() <= v_max {
        return None;
    }
    let ex1 = if data.rotation.is_empty() {
        Vec::new()
    } else {
        settings.j = B_DIFFERENCE_J;
        solve_levels_probed(&mlr, spec.mu_u, &settings, &probe)
            .ok()?
            .1
    };
    let e: Vec<f64> = set.levels.iter().map(|l| l.energy_cm1).collect();
    // A probe row in θ's layout (offset excluded).
    let layout_of = |x: &[f64]| -> Vec<f64> {
        let mut g = vec![0.0; lay.len()];
        g[..1 + lay.nb].copy_from_slice(&x[..1 + lay.nb]);
        if lay.tail {
            g[1 + lay.nb] = x[1 + lay.nb];
        }
        if lay.re {
            g[lay.re_index()] = x[np - 1];
        }
        g
    };
    let grad = |v: usize| layout_of(&ex[v]);
    let m = data.v.len();
    let mut f = vec![0.0; data.len()];
    let mut jac = DMatrix::zeros(data.len(), lay.len());
    let off = lay.len() - 1;
    for (i, &v) in data.v.iter().enumerate() {
        let v = v as usize;
        let (val, g) = match data.kind {
            DataKind::Levels => (if lay.offset { th[off] } else { 0.0 } + e[v], grad(v)),
            DataKind::Spacings => {
                let (a, b) = (grad(v + 1), grad(v));
                (
                    e[v + 1] - e[v],
                    a.iter().zip(&b).map(|(x, y)| x - y).collect(),
                )
            }
        };
        f[i] = val;
        for (k, gk) in g.iter().enumerate() {
            jac[(i, k)] = *gk;
        }
        if lay.offset {
            jac[(i, off)] = 1.0;
        }
    }
    for (i, &(v, _, _)) in data.rotation.iter().enumerate() {
        let v = v as usize;
        f[m + i] = set.levels[v].b_v_cm1;
        // A level that the second J no longer binds keeps a zero row (its B_v still counts in χ²).
        if let Some(x1) = ex1.get(v) {
            let x = f64::from(B_DIFFERENCE_J * (B_DIFFERENCE_J + 1));
            let d: Vec<f64> = x1.iter().zip(&ex[v]).map(|(a, b)| (a - b) / x).collect();
            for (k, gk) in layout_of(&d).iter().enumerate() {
                jac[(m + i, k)] = *gk;
            }
        }
    }
    Some(Eval {
        f,
        jac,
        e0: e[0],
        e0_grad: grad(0),
    })
}

/// The whitened Jacobian: levels by the data's whitening, B_v by 1/σ.
fn whitened(data: &DpfData, w: &DMatrix<f64>, jac: &DMatrix<f64>) -> DMatrix<f64> {
    let m = data.v.len();
    let mut out = DMatrix::zeros(jac.nrows(), jac.ncols());
    out.rows_mut(0, m).copy_from(&(w * jac.rows(0, m)));
    for (i, b) in data.rotation.iter().enumerate() {
        for k in 0..jac.ncols() {
            out[(m + i, k)] = jac[(m + i, k)] / b.2;
        }
    }
    out
}

/// Whitened residuals and χ².
fn residuals(data: &DpfData, f: &[f64]) -> (Vec<f64>, f64) {
    let m = data.v.len();
    let d: Vec<f64> = data.y.iter().zip(f).map(|(y, f)| y - f).collect();
    let mut r = vec![0.0; data.len()];
    data.whitener.apply(&d, &mut r[..m]);
    for (i, b) in data.rotation.iter().enumerate() {
        r[m + i] = (b.1 - f[m + i]) / b.2;
    }
    let chi2 = r.iter().map(|x| x * x).sum();
    (r, chi2)
}

/// One Levenberg–Marquardt run from θ; returns θ, its evaluation, χ², the termination and the
/// number of evaluations.
fn levenberg_marquardt(
    spec: &DpfSpec,
    data: &DpfData,
    lay: Layout,
    mut th: Vec<f64>,
    budget: usize,
) -> (Vec<f64>, Option<Eval>, f64, Termination, usize) {
    let w = data.whitener.matrix();
    let Some(mut cur) = evaluate(spec, data, lay, &th) else {
        return (th, None, f64::INFINITY, Termination::InvalidStart, 1);
    };
    let (mut r, mut chi2) = residuals(data, &cur.f);
    let mut evals = 1;
    let mut damping = 1e-3;
    loop {
        let jw = whitened(data, &w, &cur.jac);
        let a = jw.transpose() * &jw;
        let g = jw.transpose() * DVector::from_column_slice(&r);
        if g.amax() <= 1e-12 * (1.0 + chi2) {
            return (th, Some(cur), chi2, Termination::GradientConverged, evals);
        }
        // The decrease of χ² a full Gauss–Newton step promises, gᵀA⁻¹g: when it is below the
        // solver's own noise in χ² there is nothing left to gain.
        let promised = a.clone().cholesky().map(|c| g.dot(&c.solve(&g)));
        if promised.is_some_and(|p| p <= 1e-7 * chi2 + data.noise_chi2) {
            return (th, Some(cur), chi2, Termination::ChiSquareConverged, evals);
        }
        let mut accepted = false;
        while evals < budget {
            let mut ad = a.clone();
            for k in 0..ad.nrows() {
                ad[(k, k)] += damping * a[(k, k)].max(1e-12);
            }
            let Some(step) = ad.cholesky().map(|c| c.solve(&g)) else {
                // A normal matrix that no damping makes positive definite (non-finite entries)
                // ends the run instead of raising the damping for ever.
                damping *= 10.0;
                if damping > 1e12 {
                    return (th, Some(cur), chi2, Termination::NoProgress, evals);
                }
                continue;
            };

            let trial: Vec<f64> = th.iter().zip(step.iter()).map(|(t, s)| t + s).collect();
            evals += 1;
            match evaluate(spec, data, lay, &trial) {
                Some(e) => {
                    let (rt, ct) = residuals(data, &e.f);
                    if ct < chi2 {
                        let small_step = step
                            .iter()
                            .zip(&th)
                            .all(|(s, t)| s.abs() <= 1e-7 * (1.0 + t.abs()));
                        let small_gain = chi2 - ct <= 1e-7 * chi2;
                        th = trial;
                        cur = e;
                        r = rt;
                        chi2 = ct;
                        damping = (damping / 10.0).max(1e-12);
                        if small_step {
                            return (th, Some(cur), chi2, Termination::ParametersConverged, evals);
                        }
                        if small_gain {
                            return (th, Some(cur), chi2, Termination::ChiSquareConverged, evals);
                        }
                        accepted = true;
                        break;
                    }
                    damping *= 10.0;
                }
                None => damping *= 10.0,
            }
            if damping > 1e12 {
                // No step lowers χ² any more: at a minimum to the solver's accuracy.
                let term = if chi2 <= 1e-8 * data.y.len() as f64 {
                    Termination::ExactFit
                } else {
                    Termination::NoProgress
                };
                return (th, Some(cur), chi2, term, evals);
            }
        }
        if !accepted {
            return (th, Some(cur), chi2, Termination::MaxIterations, evals);
        }
    }
}

/// A starting curve: De from the data (the larger of 1.1 × the top level above the minimum and
/// ωe²/4ωexe), β_0 so that the harmonic wavenumber at re is ωe (k = 2De·a², ωe = 2a√(C_u De/μ),
/// with a = −d ln A/dr at re), the long-range coefficients as given.
pub fn start(spec: &DpfSpec, we_cm1: f64, wexe_cm1: f64, top_above_min_cm1: f64) -> (f64, f64) {
    let bs = if wexe_cm1 > 0.0 {
        we_cm1 * we_cm1 / (4.0 * wexe_cm1)
    } else {
        0.0
    };
    let de = (1.1 * top_above_min_cm1).max(bs).max(1.0);
    let probe = spec.curve(de, &[0.0], 0.0);
    let re = spec.re_angstrom;
    let h = 1e-5 * re;
    let n_eff = -re * (probe.u_lr(re + h).ln() - probe.u_lr(re - h).ln()) / (2.0 * h);
    let a = we_cm1 / (2.0 * (C_U_CM1_U_A2 * de / spec.mu_u).sqrt());
    let beta_re = (a - n_eff / re) * 2.0 * re / f64::from(spec.p);
    let y_ref = super::mlr::radial_variable(re, spec.r_ref_angstrom, spec.p);
    let beta0 = (beta_re - probe.beta_inf() * y_ref) / (1.0 - y_ref);
    (de, beta0)
}

/// Scan 1 … `spec.max_beta` β terms from the start (De, β_0), each from where the previous one
/// ended and each with a bounded number of solves; rank them by the AICc of the χ² they
/// reach (an upper bound of each one's own minimum), stop after two terms that do not lower it,
/// and fit the best to convergence. `Err` with the reason when none can be solved.
pub fn fit(spec: &DpfSpec, data: &DpfData, de0: f64, beta0: f64) -> Result<DpfFit, String> {
    let m = data.v.len();
    let points = data.len();
    let offset = data.kind == DataKind::Levels;
    let fit_re = !data.rotation.is_empty();
    let mut orders = Vec::new();
    let mut best: Option<(f64, Layout, Vec<f64>, Eval, f64, Termination)> = None;
    let mut prev: Vec<f64> = vec![de0, beta0];
    if spec.fit_tail {
        prev.push(0.0);
    }
    if fit_re {
        prev.push(spec.re_angstrom);
    }
    if offset {
        prev.push(0.0);
    }
    let mut evaluations = 0;
    let mut worse = 0;
    for nb in 1..=spec.max_beta {
        let lay = Layout {
            nb,
            tail: spec.fit_tail,
            re: fit_re,
            offset,
        };
        if points <= lay.len() + 1 {
            break;
        }
        // θ for nb terms: the previous optimum with β_{nb−1} = 0.
        let mut th = prev.clone();
        if nb > 1 {
            th.insert(nb, 0.0);
        }
        if offset && nb == 1 {
            // The offset starts at its least-squares value for the starting curve.
            if let Some(e) = evaluate(
                spec,
                data,
                Layout {
                    offset: false,
                    ..lay
                },
                &th[..lay.len() - 1],
            ) {
                let o = data
                    .y
                    .iter()
                    .zip(&e.f[..m])
                    .map(|(y, f)| y - f)
                    .sum::<f64>()
                    / m as f64;
                *th.last_mut().unwrap_or(&mut 0.0) = o;
            }
        }
        let (th, ev, chi2, term, n) = levenberg_marquardt(spec, data, lay, th, SCAN_EVALUATIONS);
        evaluations += n;
        let Some(ev) = ev else {
            orders.push(BetaOrder {
                terms: nb,
                chi2: None,
                aicc: None,
                refused: Some("the starting curve could not be solved".into()),
            });
            break;
        };
        let aicc = aicc_of(chi2, lay.len(), points);
        orders.push(BetaOrder {
            terms: nb,
            chi2: Some(chi2),
            aicc,
            refused: None,
        });
        prev = th.clone();
        if let Some(a) = aicc {
            match &best {
                Some((b, ..)) if a >= *b => worse += 1,
                _ => {
                    worse = 0;
                    best = Some((a, lay, th, ev, chi2, term));
                }
            }
        }
        // Two more terms that do not lower AICc end the search; so do an exact fit and the work
        // limit.
        if worse >= 2 || chi2 <= 1e-10 * m as f64 || evaluations >= MAX_SCAN_TOTAL {
            break;
        }
    }
    let Some((_, lay, th, ev, chi2, term)) = best else {
        return Err("no number of β terms gave a fit that could be solved".into());
    };
    // The chosen number of terms is fitted to convergence from where the scan left it.
    let (th, ev, chi2, term) = if term.converged() {
        (th, ev, chi2, term)
    } else {
        let (t, e, c, tm, n) = levenberg_marquardt(spec, data, lay, th, MAX_EVALUATIONS);
        evaluations += n;
        match e {
            Some(e) => (t, e, c, tm),
            None => return Err("the chosen curve could not be solved again".into()),
        }
    };
    if let Some(o) = orders.iter_mut().find(|o| o.terms == lay.nb) {
        o.chi2 = Some(chi2);
        o.aicc = aicc_of(chi2, lay.len(), points);
        o.refused = (!term.converged())
            .then(|| "the fit did not converge within its iteration limit".into());
    }
    finish(spec, data, lay, th, ev, chi2, term, orders, evaluations)
}

/// AICc = χ² + 2k + 2k(k+1)/(m − k − 1) (Hurvich & Tsai, Biometrika 76, 297 (1989), from
/// memory), `None` when m ≤ k + 1.
fn aicc_of(chi2: f64, k: usize, m: usize) -> Option<f64> {
    (m > k + 1).then(|| {
        let kf = k as f64;
        chi2 + 2.0 * kf + 2.0 * kf * (kf + 1.0) / (m - k - 1) as f64
    })
}

#[allow(clippy::too_many_arguments)]
fn finish(
    spec: &DpfSpec,
    data: &DpfData,
    lay: Layout,
    th: Vec<f64>,
    ev: Eval,
    chi2: f64,
    termination: Termination,
    orders: Vec<BetaOrder>,
    evaluations: usize,
) -> Result<DpfFit, String> {
    let w = data.whitener.matrix();
    let m = data.v.len();
    let jw = whitened(data, &w, &ev.jac);
    let cov = (jw.transpose() * &jw)
        .try_inverse()
        .ok_or("the fitted parameters are not determined by the data (singular normal matrix)")?;
    // ∂θ/∂y for the levels (or spacings); the B_v are held at their values in redraws.
    let sensitivity = &cov * jw.rows(0, m).transpose() * &w;
    let mlr = lay.curve(spec, &th);
    let re_fitted = lay.re.then(|| th[lay.re_index()]);
    let bound_levels = solve_levels(
        &mlr,
        spec.mu_u,
        &SolverSettings {
            wavefunction_points: 0,
            ..SolverSettings::default()
        },
    )
    .ok()
    .map(|s| s.levels.len());
    let mut names = vec!["De".to_string()];
    names.extend((0..lay.nb).map(|i| format!("β{i}")));
    if lay.tail {
        names.push("ln λ (factor of the long-range coefficients)".into());
    }
    if lay.re {
        names.push("re".into());
    }
    if lay.offset {
        names.push("energy of the potential minimum on the data's scale".into());
    }
    Ok(DpfFit {
        mlr,
        theta: th,
        names,
        cov,
        sensitivity,
        chi2,
        dof: data.len() - lay.len(),
        termination,
        re_fitted,
        b_calc: ev.f[m..].to_vec(),
        calc: ev.f[..m].to_vec(),
        e0_cm1: ev.e0,
        e0_grad: ev.e0_grad,
        bound_levels,
        orders,
        evaluations,
    })
}

impl DpfFit {
    /// ∂q/∂y for a quantity q with gradient `dq` in θ.
    pub fn data_gradient(&self, dq: &[f64]) -> DVector<f64> {
        self.sensitivity.transpose() * DVector::from_column_slice(dq)
    }

    /// Gradient of De in θ.
    pub fn de_grad(&self) -> Vec<f64> {
        let mut g = vec![0.0; self.theta.len()];
        g[0] = 1.0;
        g
    }

    /// Gradient of D0 = De − E(v = 0) in θ.
    pub fn d0_grad(&self) -> Vec<f64> {
        let mut g: Vec<f64> = self.e0_grad.iter().map(|x| -x).collect();
        g[0] += 1.0;
        g
    }

    /// D0 = De − E(v = 0), cm⁻¹.
    pub fn d0_cm1(&self) -> f64 {
        self.mlr.de_cm1 - self.e0_cm1
    }

    /// V at r of the fitted curve.
    pub fn energy_cm1(&self, r: f64) -> f64 {
        self.mlr.energy_cm1(r)
    }
}
