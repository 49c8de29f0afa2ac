//! All bound levels of a radial potential for one J: energies, B_v, turning points, wavefunctions.
//!
//! # Equation
//! −(C_u/μ) ψ″ + [V(r) + (C_u/μ) J(J+1)/r²] ψ = E ψ on [r_a, r_b] with ψ(r_a) = ψ(r_b) = 0
//! (domain notes §1.10), r in Å, energies in cm⁻¹, μ in u.
//!
//! # Method
//! Numerov discretisation on a uniform grid, written for F_i = (1 − T_i) ψ_i with
//! T_i = h² μ (V_i − E)/(12 C_u): F_{i+1} − U_i F_i + F_{i−1} = 0, U_i = (2 + 10 T_i)/(1 − T_i).
//! This is a symmetric tridiagonal matrix M(E) = tridiag(−1, U_i, −1) that decreases
//! monotonically with E, so the number of its negative pivots equals the number of Numerov
//! eigenvalues below E (a Sturm count, here computed by a twisted factorisation: ratios
//! R_i = F_{i+1}/F_i swept outward to the match point m, ratios F_{i−1}/F_i swept inward, and the
//! pivot γ_m at m). The ratio form never overflows in classically forbidden regions.
//!
//! For level v the energy is bracketed by the count and refined by the Cooley–Newton correction
//! ΔE = (C_u/μ) γ_m / (h² Σ ψ_i²) with F_m = 1 (the Newton step for the smallest eigenvalue of the
//! symmetric pencil), falling back to bisection whenever a step leaves the bracket or the trial
//! function has the wrong number of nodes. Each level is converged to 1e-10 of the well depth.
//!
//! # Accuracy control
//! Numerov eigenvalues carry an error c·h⁴ + O(h⁶). Every level is solved on a grid and on the
//! grid with half the step; the reported energy is the Richardson value (16 E_{h/2} − E_h)/15 and
//! the reported `error_estimate_cm1` is |E_{h/2} − E_h|/15, the estimated error of E_{h/2} (a
//! conservative bound for the extrapolated value, whose error is O(h⁶)). Levels whose estimate
//! exceeds `tolerance_cm1` are refined again (step halved), up to `max_refinements` times. The
//! tests check the estimate against closed-form Morse and harmonic levels.
//!
//! The initial step resolves the shortest local wavelength 2π/√(μ(E_max − V_min)/C_u) by
//! `points_per_wavelength` points. The box: r_a lies inside the inner wall where the WKB decay
//! exponent ∫κ dr from the inner turning point at E_max reaches `tail_decay`; r_b likewise beyond
//! the outer turning point of an energy 10⁻⁴ of the well depth below the limit (or of E_max when
//! one is given). Each level is integrated only as far out as its own decay requires. Levels
//! whose wavefunction has not decayed by `tail_decay`/2 at r_b are flagged `boundary_limited`
//! (their energies are raised by the box; widen `r_max_angstrom`).
//!
//! Everything is single-threaded and allocation-light, so it runs the same in WebAssembly.

use serde::{Deserialize, Serialize};

use super::{Potential, WellMinimum};
use crate::constants::C_U_CM1_U_A2;
use crate::{Error, Result};

/// Controls of the level solver. Every field has a default.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct SolverSettings {
    /// Rotational quantum number J (the centrifugal term (C_u/μ) J(J+1)/r² is added to V).
    pub j: u32,
    /// Highest energy of interest, cm⁻¹ above the potential minimum. Default: the dissociation
    /// limit (required for curves without one, e.g. harmonic).
    pub energy_max_cm1: Option<f64>,
    /// At most this many levels (v = 0, 1, …).
    pub max_levels: Option<usize>,
    /// Target accuracy of every level energy, cm⁻¹.
    pub tolerance_cm1: f64,
    /// Grid points per shortest local de Broglie wavelength on the first (coarsest) grid.
    pub points_per_wavelength: f64,
    /// Maximum number of step halvings after the first Richardson pair.
    pub max_refinements: u32,
    /// Inner end of the grid, Å; default from the inner-wall decay.
    pub r_min_angstrom: Option<f64>,
    /// Outer end of the grid, Å; default from the outer decay of near-threshold levels.
    pub r_max_angstrom: Option<f64>,
    /// WKB decay exponent ∫κ dr required beyond each turning point (ψ ∝ e^{−tail_decay}).
    pub tail_decay: f64,
    /// Points per wavefunction returned for plotting (0: none).
    pub wavefunction_points: usize,
}

impl Default for SolverSettings {
    fn default() -> Self {
        Self {
            j: 0,
            energy_max_cm1: None,
            max_levels: None,
            tolerance_cm1: 1e-3,
            points_per_wavelength: 12.0,
            max_refinements: 5,
            r_min_angstrom: None,
            r_max_angstrom: None,
            tail_decay: 36.0,
            wavefunction_points: 300,
        }
    }
}

/// A wavefunction sampled for plotting: ψ normalised to ∫ψ² dr = 1 (units Å^{−½}), positive in
/// its innermost lobe, on the part of the grid where |ψ| exceeds 10⁻⁵ of its maximum.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Wavefunction {
    /// Distances, Å.
    pub r_angstrom: Vec<f64>,
    /// ψ(r), Å^{−½}.
    pub psi: Vec<f64>,
}

/// One bound level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoundLevel {
    /// Vibrational quantum number (number of nodes).
    pub v: u32,
    /// Energy above the potential minimum (of the J = 0 curve), cm⁻¹.
    pub energy_cm1: f64,
    /// Binding energy below the dissociation limit, cm⁻¹, when the curve has one.
    pub binding_cm1: Option<f64>,
    /// B_v = (C_u/μ) ⟨1/r²⟩, cm⁻¹.
    pub b_v_cm1: f64,
    /// Inner classical turning point of V + centrifugal term at this energy, Å.
    pub r_inner_angstrom: f64,
    /// Outer classical turning point, Å.
    pub r_outer_angstrom: f64,
    /// Estimated error of `energy_cm1` (Richardson difference, see the module docs), cm⁻¹.
    pub error_estimate_cm1: f64,
    /// The wavefunction reaches the outer end of the grid (energy raised by the box).
    pub boundary_limited: bool,
    /// The wavefunction for plotting, when asked for.
    pub wavefunction: Option<Wavefunction>,
}

/// The grid actually used.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct GridInfo {
    /// Inner end, Å.
    pub r_min_angstrom: f64,
    /// Outer end, Å.
    pub r_max_angstrom: f64,
    /// Step of the first grid, Å.
    pub step_coarse_angstrom: f64,
    /// Step of the finest grid used for any level, Å.
    pub step_finest_angstrom: f64,
    /// Number of step halvings used (1 = the basic Richardson pair).
    pub halvings: u32,
}

/// All bound levels of a potential for one J.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelSet {
    /// Reduced mass, u.
    pub mu_u: f64,
    /// Rotational quantum number.
    pub j: u32,
    /// The potential minimum all energies are measured from.
    pub minimum: WellMinimum,
    /// Dissociation limit above the minimum, cm⁻¹, when the curve has one.
    pub limit_cm1: Option<f64>,
    /// The energy ceiling used, cm⁻¹ above the minimum.
    pub energy_max_cm1: f64,
    /// The levels, v = 0, 1, … in order.
    pub levels: Vec<BoundLevel>,
    /// Grid facts.
    pub grid: GridInfo,
    /// Whether every level's error estimate is within the tolerance.
    pub converged: bool,
    /// Plain-language notes (grid limits, box effects, unconverged levels).
    pub notes: Vec<String>,
}

/// The radial problem: potential, mass, centrifugal term.
pub(crate) struct Problem<'a> {
    pot: &'a dyn Potential,
    /// C_u/μ.
    kin: f64,
    /// (C_u/μ) J(J+1).
    cent: f64,
    mu: f64,
}

impl<'a> Problem<'a> {
    pub(crate) fn new(pot: &'a dyn Potential, mu: f64, j: u32) -> Result<Self> {
        if !(mu.is_finite() && mu > 0.0) {
            return Err(Error::parameter(
                "mu",
                format!("must be a positive mass in u, got {mu}"),
            ));
        }
        let kin = C_U_CM1_U_A2 / mu;
        let jj = j as f64 * (j as f64 + 1.0);
        Ok(Self {
            pot,
            kin,
            cent: kin * jj,
            mu,
        })
    }

    fn vj(&self, r: f64) -> f64 {
        self.pot.energy_cm1(r) + self.cent / (r * r)
    }

    /// Local wavenumber κ or k for |V − E|, 1/Å.
    fn kappa(&self, diff: f64) -> f64 {
        (diff.abs() / self.kin).sqrt()
    }
}

/// A uniform grid with V_J tabulated; indices 0 and n−1 carry the Dirichlet conditions.
pub(crate) struct Grid {
    r0: f64,
    h: f64,
    vj: Vec<f64>,
    /// h² μ/(12 C_u).
    q: f64,
    /// Index of the lowest V_J.
    imin: usize,
}

impl Grid {
    fn new(problem: &Problem<'_>, r0: f64, r1: f64, intervals: usize) -> Result<Self> {
        let h = (r1 - r0) / intervals as f64;
        let vj: Vec<f64> = (0..=intervals)
            .map(|i| problem.vj(r0 + i as f64 * h))
            .collect();
        Self::from_values(problem, r0, h, vj)
    }

    fn from_values(problem: &Problem<'_>, r0: f64, h: f64, vj: Vec<f64>) -> Result<Self> {
        if let Some(i) = vj.iter().position(|v| !v.is_finite()) {
            return Err(Error::numerical(
                "level solver",
                format!(
                    "the potential is not finite at r = {:.6} Å",
                    r0 + i as f64 * h
                ),
            ));
        }
        let imin = (1..vj.len() - 1)
            .min_by(|&a, &b| vj[a].total_cmp(&vj[b]))
            .unwrap_or(1);
        Ok(Self {
            r0,
            h,
            q: h * h * problem.mu / (12.0 * C_U_CM1_U_A2),
            vj,
            imin,
        })
    }

    /// The same interval with half the step (even points reused).
    fn refine(&self, problem: &Problem<'_>) -> Result<Self> {
        let n = self.vj.len();
        let h = self.h / 2.0;
        let mut vj = Vec::with_capacity(2 * n - 1);
        for i in 0..n {
            vj.push(self.vj[i]);
            if i + 1 < n {
                vj.push(problem.vj(self.r0 + (2 * i + 1) as f64 * h));
            }
        }
        Self::from_values(problem, self.r0, h, vj)
    }

    fn len(&self) -> usize {
        self.vj.len()
    }

    fn r(&self, i: usize) -> f64 {
        self.r0 + i as f64 * self.h
    }

    /// First index beyond the minimum where V_J ≥ e (the outer turning point), or the last.
    fn outer_turning_index(&self, e: f64) -> usize {
        let n = self.len();
        let mut i = self.imin;
        while i < n - 1 && self.vj[i] < e {
            i += 1;
        }
        i
    }

    /// Last index below the minimum where V_J ≥ e (the inner turning point), or 0.
    fn inner_turning_index(&self, e: f64) -> usize {
        let mut i = self.imin;
        while i > 0 && self.vj[i] < e {
            i -= 1;
        }
        i
    }

    /// WKB decay exponent from the outer turning point to index `end`.
    fn outer_decay(&self, e: f64, end: usize) -> f64 {
        let t = self.outer_turning_index(e);
        let c = (12.0 * self.q).sqrt();
        (t..end.min(self.len() - 1))
            .map(|i| c * (self.vj[i] - e).max(0.0).sqrt())
            .sum()
    }

    /// Index where the decay exponent beyond the outer turning point reaches `decay`.
    fn tail_end(&self, e: f64, decay: f64) -> usize {
        let n = self.len();
        let mut i = self.outer_turning_index(e);
        let c = (12.0 * self.q).sqrt();
        let mut s = 0.0;
        while i < n - 1 && s < decay {
            s += c * (self.vj[i] - e).max(0.0).sqrt();
            i += 1;
        }
        (i + 2).min(n - 1)
    }
}

/// Scratch buffers reused across sweeps.
#[derive(Default)]
pub(crate) struct Workspace {
    out: Vec<f64>,
    inw: Vec<f64>,
    psi: Vec<f64>,
}

struct Sweep {
    count: usize,
    nodes: usize,
    gamma: f64,
    m: usize,
}

#[inline]
fn u_of(q: f64, v: f64, e: f64) -> f64 {
    let t = (q * (v - e)).min(0.9);
    (2.0 + 10.0 * t) / (1.0 - t)
}

#[inline]
fn guard(x: f64) -> f64 {
    if x == 0.0 { 1e-300 } else { x }
}

/// Twisted-factorisation sweep at energy e over indices 1 … end−1 (ψ_end = 0).
fn sweep(grid: &Grid, e: f64, end: usize, ws: &mut Workspace) -> Sweep {
    let n = grid.len();
    if ws.out.len() < n {
        ws.out.resize(n, 0.0);
        ws.inw.resize(n, 0.0);
        ws.psi.resize(n, 0.0);
    }
    let m = grid
        .outer_turning_index(e)
        .saturating_sub(1)
        .clamp(2, end - 2);
    let q = grid.q;
    let vj = &grid.vj;
    let mut neg = 0usize;
    // Outward: R_i = U_i − 1/R_{i−1}, 1/R_0 = 0.
    let mut inv = 0.0;
    for i in 1..m {
        let r = guard(u_of(q, vj[i], e) - inv);
        if r < 0.0 {
            neg += 1;
        }
        ws.out[i] = r;
        inv = 1.0 / r;
    }
    let inv_out = inv;
    // Inward: S_i = U_i − 1/S_{i+1}, 1/S_end = 0.
    let mut inv = 0.0;
    for i in (m + 1..end).rev() {
        let s = guard(u_of(q, vj[i], e) - inv);
        if s < 0.0 {
            neg += 1;
        }
        ws.inw[i] = s;
        inv = 1.0 / s;
    }
    let gamma = u_of(q, vj[m], e) - inv_out - inv;
    Sweep {
        count: neg + usize::from(gamma < 0.0),
        nodes: neg,
        gamma,
        m,
    }
}

/// Rebuild ψ (F_m = 1) after a sweep into ws.psi[0..=end]; returns Σψ².
fn reconstruct(grid: &Grid, e: f64, sw: &Sweep, end: usize, ws: &mut Workspace) -> f64 {
    let q = grid.q;
    let m = sw.m;
    let mut sum = 0.0;
    ws.psi[0] = 0.0;
    ws.psi[end] = 0.0;
    let psi_of = |f: f64, v: f64| f / (1.0 - (q * (v - e)).min(0.9));
    let mut f = 1.0;
    let p = psi_of(f, grid.vj[m]);
    ws.psi[m] = p;
    sum += p * p;
    for i in (1..m).rev() {
        f /= ws.out[i];
        let p = psi_of(f, grid.vj[i]);
        ws.psi[i] = p;
        sum += p * p;
    }
    let mut f = 1.0;
    for i in m + 1..end {
        f /= ws.inw[i];
        let p = psi_of(f, grid.vj[i]);
        ws.psi[i] = p;
        sum += p * p;
    }
    sum
}

/// Result of converging one level on one grid.
struct Found {
    e: f64,
    end: usize,
}

/// Converge level v on `grid` inside (lo, hi) from `guess`, integrating to index `end`.
fn converge(
    grid: &Grid,
    v: usize,
    guess: f64,
    bracket: (f64, f64),
    end: usize,
    tol: f64,
    ws: &mut Workspace,
) -> Option<f64> {
    let (mut lo, mut hi) = bracket;
    let mut e = if guess > lo && guess < hi {
        guess
    } else {
        0.5 * (lo + hi)
    };
    for _ in 0..400 {
        let sw = sweep(grid, e, end, ws);
        if sw.count > v {
            hi = hi.min(e);
        } else {
            lo = lo.max(e);
        }
        let mut next = f64::NAN;
        if sw.nodes == v {
            let s = reconstruct(grid, e, &sw, end, ws);
            let delta = sw.gamma / (12.0 * grid.q * s);
            if delta.is_finite() {
                if delta.abs() < tol {
                    return Some(e + delta);
                }
                next = e + delta;
            }
        }
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
        }
        if hi - lo < tol {
            return Some(0.5 * (lo + hi));
        }
        e = next;
    }
    None
}

/// Everything fixed before solving: ceiling, box, coarse step.
pub(crate) struct Plan {
    pub(crate) v_min: f64,
    pub(crate) ceiling: f64,
    pub(crate) r_a: f64,
    pub(crate) r_b: f64,
    pub(crate) h0: f64,
    pub(crate) omega: f64,
    pub(crate) limit: Option<f64>,
    pub(crate) notes: Vec<String>,
}

fn bisect(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    let fa = f(a);
    for _ in 0..200 {
        let c = 0.5 * (a + b);
        if c == a || c == b {
            break;
        }
        if (f(c) > 0.0) == (fa > 0.0) {
            a = c;
        } else {
            b = c;
        }
    }
    0.5 * (a + b)
}

pub(crate) fn plan(problem: &Problem<'_>, s: &SolverSettings) -> Result<Plan> {
    if !(s.tolerance_cm1.is_finite() && s.tolerance_cm1 > 0.0) {
        return Err(Error::parameter(
            "tolerance",
            "must be a positive number of cm⁻¹",
        ));
    }
    if !(s.points_per_wavelength.is_finite() && s.points_per_wavelength >= 4.0) {
        return Err(Error::parameter(
            "points per wavelength",
            "must be at least 4",
        ));
    }
    if !(s.tail_decay.is_finite() && s.tail_decay >= 5.0) {
        return Err(Error::parameter("tail decay", "must be at least 5"));
    }
    let pot = problem.pot;
    let min = pot.minimum();
    let (re, v_min) = (min.r_angstrom, min.energy_cm1);
    if !(re.is_finite() && re > 0.0 && v_min.is_finite()) {
        return Err(Error::numerical(
            "level solver",
            "the potential has no usable minimum",
        ));
    }
    let limit = pot.asymptote_cm1();
    let ceiling = match (s.energy_max_cm1, limit) {
        (Some(em), Some(l)) => (v_min + em).min(l),
        (Some(em), None) => v_min + em,
        (None, Some(l)) => l,
        (None, None) => {
            return Err(Error::parameter(
                "energy_max",
                "this curve has no dissociation limit: give the highest energy of interest",
            ));
        }
    };
    if ceiling.is_nan() || ceiling <= v_min {
        return Err(Error::parameter(
            "energy_max",
            "must lie above the potential minimum",
        ));
    }
    let depth = ceiling - v_min;
    let mut notes = Vec::new();
    let k_max = problem.kappa(depth);
    let h0 = 2.0 * std::f64::consts::PI / k_max / s.points_per_wavelength;
    // Harmonic estimate ω = √(2 C_u k / μ) from the curvature of V_J at r_e (for guesses only).
    let dr = 1e-3 * re;
    let curv = (problem.vj(re + dr) - 2.0 * problem.vj(re) + problem.vj(re - dr)) / (dr * dr);
    let omega = (2.0 * problem.kin * curv.max(0.0)).sqrt().max(1e-6 * depth);
    let r_a = match s.r_min_angstrom {
        Some(r) if r > 0.0 && r < re => r,
        Some(r) => {
            return Err(Error::parameter(
                "r_min",
                format!("must lie in (0, r_e = {re:.4}) Å, got {r}"),
            ));
        }
        None => {
            // Inner turning point at the ceiling, then inwards until the decay is reached.
            let mut lo = 0.5 * re;
            while problem.vj(lo) <= ceiling {
                lo *= 0.5;
                if lo < 1e-6 * re {
                    return Err(Error::numerical(
                        "level solver",
                        "the inner wall never rises above the energy ceiling",
                    ));
                }
            }
            let rt = bisect(|r| problem.vj(r) - ceiling, lo, re);
            let mut r = rt;
            let mut acc = 0.0;
            let q0 = h0 * h0 * problem.mu / (12.0 * C_U_CM1_U_A2);
            while acc < s.tail_decay && r - h0 > 0.5 * h0 {
                let vv = problem.vj(r - h0);
                if q0 * (vv - v_min) > 0.5 {
                    notes.push(format!(
                        "the inner wall is steep on the grid scale near r = {:.4} Å (decay {acc:.1})",
                        r - h0
                    ));
                    break;
                }
                r -= h0;
                acc += h0 * problem.kappa(vv - ceiling);
            }
            r
        }
    };
    let r_b = match s.r_max_angstrom {
        Some(r) if r > re => r,
        Some(r) => {
            return Err(Error::parameter(
                "r_max",
                format!("must exceed r_e = {re:.4} Å, got {r}"),
            ));
        }
        None => {
            let e_out = if s.energy_max_cm1.is_none() || Some(ceiling) == limit {
                ceiling - 1e-4 * depth
            } else {
                ceiling
            };
            let cap = 1000.0 * re;
            let mut hi = 1.5 * re;
            while problem.vj(hi) < e_out && hi < cap {
                hi *= 1.5;
            }
            let rt = if hi >= cap {
                cap
            } else {
                bisect(|r| problem.vj(r) - e_out, re, hi)
            };
            let mut r = rt;
            let mut acc = 0.0;
            let step = h0.max(1e-3 * rt);
            while acc < s.tail_decay && r < cap {
                r += step;
                acc += step * problem.kappa(problem.vj(r) - e_out);
            }
            if r >= cap {
                notes.push(format!("the grid was capped at r = {cap:.1} Å"));
            }
            r
        }
    };
    if r_b.is_nan() || r_b <= r_a {
        return Err(Error::parameter("r_max", "must exceed r_min"));
    }
    Ok(Plan {
        v_min,
        ceiling,
        r_a,
        r_b,
        h0,
        omega,
        limit,
        notes,
    })
}

/// Levels below the ceiling on one grid: energies (raw scale) and the integration ends.
fn solve_grid(
    grid: &Grid,
    plan: &Plan,
    wanted: &[usize],
    guesses: Option<&[f64]>,
    decay: f64,
    ws: &mut Workspace,
) -> Result<Vec<Found>> {
    let n = grid.len();
    let tol = 1e-10 * (plan.ceiling - plan.v_min);
    let mut out: Vec<Found> = Vec::with_capacity(wanted.len());
    let vmin_j = grid.vj[grid.imin];
    let mut prev: Vec<f64> = Vec::new();
    for (k, &v) in wanted.iter().enumerate() {
        let lo = if k > 0 && wanted[k - 1] + 1 == v {
            out[k - 1].e
        } else {
            plan.v_min.min(vmin_j) - 1.0
        };
        let spacing = match prev.len() {
            0 => plan.omega,
            1 => plan.omega.min(prev[0] - vmin_j).max(1e-9),
            l => (prev[l - 1] - prev[l - 2]).max(1e-9),
        };
        let guess = match guesses {
            Some(g) => g[k],
            None => match prev.last() {
                Some(&p) => p + spacing,
                None => vmin_j + 0.5 * plan.omega,
            },
        };
        let probe = match guesses {
            Some(_) => (guess + 1e-3 * spacing).min(plan.ceiling),
            None => (guess + 2.0 * spacing).min(plan.ceiling),
        };
        let mut end = grid.tail_end(probe, decay).max(grid.imin + 4).min(n - 1);
        let mut found = None;
        for attempt in 0..2 {
            let e = converge(grid, v, guess, (lo, plan.ceiling), end, tol, ws);
            if let Some(e) = e {
                let sw = sweep(grid, e, end, ws);
                let ok = e < plan.ceiling
                    && (sw.nodes == v || sw.count == v || sw.count == v + 1)
                    && (end == n - 1 || grid.outer_decay(e, end) >= 0.9 * decay);
                if ok {
                    found = Some(e);
                    break;
                }
            }
            if attempt == 0 {
                end = n - 1;
            }
        }
        let Some(e) = found else {
            return Err(Error::numerical(
                "level solver",
                format!("level v = {v} did not converge below the energy ceiling"),
            ));
        };
        prev.push(e);
        out.push(Found { e, end });
    }
    Ok(out)
}

/// Normalised ψ on the grid (ws.psi[0..=end]) and Σψ²/r² ⟨1/r²⟩ for a converged level.
fn level_state(grid: &Grid, e: f64, end: usize, ws: &mut Workspace) -> f64 {
    let sw = sweep(grid, e, end, ws);
    let s = reconstruct(grid, e, &sw, end, ws);
    let norm = 1.0 / (s * grid.h).sqrt();
    let mut inv_r2 = 0.0;
    for i in 1..end {
        ws.psi[i] *= norm;
        let r = grid.r(i);
        inv_r2 += ws.psi[i] * ws.psi[i] / (r * r);
    }
    inv_r2 * grid.h
}

/// Count of levels below the ceiling on a full grid.
fn count_levels(grid: &Grid, ceiling: f64, ws: &mut Workspace) -> usize {
    sweep(grid, ceiling, grid.len() - 1, ws).count
}

/// A solved level on one grid with its expectation value.
#[derive(Clone, Copy)]
struct Solved {
    e: f64,
    inv_r2: f64,
    grid: usize,
    end: usize,
}

/// All bound levels of `potential` for reduced mass `mu_u` (u) and the given settings.
///
/// Energies are measured from the minimum of the J = 0 curve; see the module docs for the
/// method and the meaning of the error estimates.
pub fn solve_levels(
    potential: &dyn Potential,
    mu_u: f64,
    settings: &SolverSettings,
) -> Result<LevelSet> {
    let problem = Problem::new(potential, mu_u, settings.j)?;
    let mut plan = plan(&problem, settings)?;
    let intervals = ((plan.r_b - plan.r_a) / plan.h0).ceil().max(8.0) as usize;
    if intervals > 4_000_000 {
        return Err(Error::parameter(
            "grid",
            format!(
                "{intervals} points would be needed; narrow r_min … r_max or lower points per wavelength"
            ),
        ));
    }
    let mut ws = Workspace::default();
    let mut grids = vec![Grid::new(&problem, plan.r_a, plan.r_b, intervals)?];
    grids.push(grids[0].refine(&problem)?);
    let c0 = count_levels(&grids[0], plan.ceiling, &mut ws);
    let c1 = count_levels(&grids[1], plan.ceiling, &mut ws);
    let mut n_levels = c0.min(c1);
    if c0 != c1 {
        plan.notes.push(format!(
            "the two finest grids disagree on the number of bound levels ({c0} vs {c1}); the \
             top one is kept only if both find it"
        ));
    }
    if let Some(mx) = settings.max_levels {
        n_levels = n_levels.min(mx);
    }
    let all: Vec<usize> = (0..n_levels).collect();
    let decay = settings.tail_decay;
    let coarse = solve_grid(&grids[0], &plan, &all, None, decay, &mut ws)?;
    let guesses: Vec<f64> = coarse.iter().map(|f| f.e).collect();
    let fine = solve_grid(&grids[1], &plan, &all, Some(&guesses), decay, &mut ws)?;
    let mut prev: Vec<Solved> = coarse
        .iter()
        .map(|f| Solved {
            e: f.e,
            inv_r2: level_state(&grids[0], f.e, f.end, &mut ws),
            grid: 0,
            end: f.end,
        })
        .collect();
    let mut last: Vec<Solved> = fine
        .iter()
        .map(|f| Solved {
            e: f.e,
            inv_r2: level_state(&grids[1], f.e, f.end, &mut ws),
            grid: 1,
            end: f.end,
        })
        .collect();
    let tol = settings.tolerance_cm1;
    let err = |a: &Solved, b: &Solved| (b.e - a.e).abs() / 15.0;
    let mut halvings = 1u32;
    loop {
        let todo: Vec<usize> = (0..n_levels)
            .filter(|&v| err(&prev[v], &last[v]) > tol)
            .collect();
        if todo.is_empty() || halvings > settings.max_refinements {
            break;
        }
        let g = grids.len() - 1;
        let next = grids[g].refine(&problem)?;
        grids.push(next);
        let guesses: Vec<f64> = todo
            .iter()
            .map(|&v| (16.0 * last[v].e - prev[v].e) / 15.0)
            .collect();
        let found = solve_grid(&grids[g + 1], &plan, &todo, Some(&guesses), decay, &mut ws)?;
        for (k, &v) in todo.iter().enumerate() {
            let f = &found[k];
            let inv_r2 = level_state(&grids[g + 1], f.e, f.end, &mut ws);
            prev[v] = last[v];
            last[v] = Solved {
                e: f.e,
                inv_r2,
                grid: g + 1,
                end: f.end,
            };
        }
        halvings += 1;
    }
    let mut levels = Vec::with_capacity(n_levels);
    let mut converged = true;
    for v in 0..n_levels {
        let (a, b) = (prev[v], last[v]);
        let e = (16.0 * b.e - a.e) / 15.0;
        let inv_r2 = (16.0 * b.inv_r2 - a.inv_r2) / 15.0;
        let error = err(&a, &b);
        if error > tol {
            converged = false;
        }
        let grid = &grids[b.grid];
        let boundary_limited = grid.outer_decay(e, grid.len() - 1) < 0.5 * decay;
        let (r_in, r_out) = turning_points(&problem, grid, e);
        let wavefunction = (settings.wavefunction_points > 0).then(|| {
            level_state(grid, b.e, b.end, &mut ws);
            sample_wavefunction(grid, &ws.psi[..=b.end], settings.wavefunction_points)
        });
        levels.push(BoundLevel {
            v: v as u32,
            energy_cm1: e - plan.v_min,
            binding_cm1: plan.limit.map(|l| l - e),
            b_v_cm1: problem.kin * inv_r2,
            r_inner_angstrom: r_in,
            r_outer_angstrom: r_out,
            error_estimate_cm1: error,
            boundary_limited,
            wavefunction,
        });
    }
    if !converged {
        plan.notes.push(format!(
            "some levels did not reach the tolerance {tol:e} cm⁻¹ after {halvings} halvings; see \
             their error estimates"
        ));
    }
    if levels.iter().any(|l| l.boundary_limited) {
        plan.notes.push(
            "the highest level(s) reach the outer end of the grid: their energies are raised by \
             the finite box; increase r_max"
                .into(),
        );
    }
    let finest = grids.last().map_or(plan.h0, |g| g.h);
    Ok(LevelSet {
        mu_u,
        j: settings.j,
        minimum: potential.minimum(),
        limit_cm1: plan.limit.map(|l| l - plan.v_min),
        energy_max_cm1: plan.ceiling - plan.v_min,
        levels,
        grid: GridInfo {
            r_min_angstrom: plan.r_a,
            r_max_angstrom: plan.r_b,
            step_coarse_angstrom: grids[0].h,
            step_finest_angstrom: finest,
            halvings,
        },
        converged,
        notes: plan.notes,
    })
}

/// Classical turning points of V_J at e (continuous curve, bracketed on the grid).
fn turning_points(problem: &Problem<'_>, grid: &Grid, e: f64) -> (f64, f64) {
    let f = |r: f64| problem.vj(r) - e;
    let i = grid.inner_turning_index(e);
    let r_in = if grid.vj[i] >= e && i < grid.imin {
        bisect(f, grid.r(i), grid.r(i + 1))
    } else {
        grid.r(i)
    };
    let o = grid.outer_turning_index(e);
    let r_out = if grid.vj[o] >= e && o > grid.imin {
        bisect(f, grid.r(o - 1), grid.r(o))
    } else {
        grid.r(o)
    };
    (r_in, r_out)
}

fn sample_wavefunction(grid: &Grid, psi: &[f64], points: usize) -> Wavefunction {
    let max = psi.iter().fold(0.0f64, |m, p| m.max(p.abs()));
    let thr = 1e-5 * max;
    let first = psi.iter().position(|p| p.abs() > thr).unwrap_or(0);
    let last = psi
        .iter()
        .rposition(|p| p.abs() > thr)
        .unwrap_or(psi.len().saturating_sub(1));
    let sign = if psi.get(first).copied().unwrap_or(1.0) < 0.0 {
        -1.0
    } else {
        1.0
    };
    let span = last.saturating_sub(first) + 1;
    let stride = span.div_ceil(points.max(2)).max(1);
    let mut r = Vec::with_capacity(span / stride + 2);
    let mut p = Vec::with_capacity(span / stride + 2);
    let mut i = first;
    while i <= last {
        r.push(grid.r(i));
        p.push(sign * psi[i]);
        i += stride;
    }
    if (last - first) % stride != 0 {
        r.push(grid.r(last));
        p.push(sign * psi[last]);
    }
    Wavefunction {
        r_angstrom: r,
        psi: p,
    }
}

/// Wavefunctions of the lowest levels of each potential on one common grid (for overlaps).
pub(crate) struct CommonGridStates {
    pub(crate) energies: Vec<f64>,
    pub(crate) psi: Vec<Vec<f64>>,
    pub(crate) v_min: f64,
}

pub(crate) fn common_grid_states(
    problems: &[(&Problem<'_>, &SolverSettings)],
    halvings: u32,
) -> Result<(Vec<CommonGridStates>, f64)> {
    let plans = problems
        .iter()
        .map(|(p, s)| plan(p, s))
        .collect::<Result<Vec<_>>>()?;
    let r_a = plans.iter().map(|p| p.r_a).fold(f64::INFINITY, f64::min);
    let r_b = plans.iter().map(|p| p.r_b).fold(0.0, f64::max);
    let h = plans.iter().map(|p| p.h0).fold(f64::INFINITY, f64::min) / f64::from(1u32 << halvings);
    let intervals = ((r_b - r_a) / h).ceil() as usize;
    if intervals > 4_000_000 {
        return Err(Error::parameter(
            "grid",
            "too many points for a common grid",
        ));
    }
    let mut ws = Workspace::default();
    let mut out = Vec::new();
    for ((problem, s), plan) in problems.iter().zip(&plans) {
        let grid = Grid::new(problem, r_a, r_b, intervals)?;
        let mut n = count_levels(&grid, plan.ceiling, &mut ws);
        if let Some(mx) = s.max_levels {
            n = n.min(mx);
        }
        let all: Vec<usize> = (0..n).collect();
        let found = solve_grid(&grid, plan, &all, None, s.tail_decay, &mut ws)?;
        let mut psi = Vec::with_capacity(n);
        for f in &found {
            // Full-length ψ with zeros beyond the level's integration end.
            level_state(&grid, f.e, f.end, &mut ws);
            let mut full = vec![0.0; grid.len()];
            full[..=f.end].copy_from_slice(&ws.psi[..=f.end]);
            psi.push(full);
        }
        out.push(CommonGridStates {
            energies: found.iter().map(|f| f.e - plan.v_min).collect(),
            psi,
            v_min: plan.v_min,
        });
    }
    Ok((out, h))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::potential::{Harmonic, Morse};

    /// SOURCE: closed form G(v) = ωe(v+½) (domain.md §2.3). Tolerance 1e-4 cm⁻¹ (issue 6).
    #[test]
    fn harmonic_levels_are_exact() {
        let h = Harmonic::from_we(1000.0, 10.0, 3.0).unwrap();
        let s = SolverSettings {
            energy_max_cm1: Some(15_000.0),
            tolerance_cm1: 1e-5,
            ..Default::default()
        };
        let set = solve_levels(&h, 10.0, &s).unwrap();
        assert_eq!(set.levels.len(), 15);
        for l in &set.levels {
            let exact = 1000.0 * (l.v as f64 + 0.5);
            assert!(
                (l.energy_cm1 - exact).abs() < 1e-4,
                "v={} {}",
                l.v,
                l.energy_cm1 - exact
            );
        }
    }

    /// SOURCE: closed form G(v) = ωe(v+½) − ωexe(v+½)², domain.md §2.1 vector A (ωe 1000,
    /// ωexe 10, μ 10 u → 50 levels). r_e = 2 Å is our choice (a r_e = 4.9, so the half-line
    /// correction is negligible, domain.md §2.1). Tolerance 1e-4 cm⁻¹ (issue 6).
    #[test]
    fn morse_vector_a_levels() {
        let m = Morse::from_constants(1000.0, 10.0, 10.0, 2.0).unwrap();
        let s = SolverSettings {
            tolerance_cm1: 1e-5,
            ..Default::default()
        };
        let set = solve_levels(&m, 10.0, &s).unwrap();
        assert_eq!(set.levels.len(), 50);
        for l in &set.levels {
            let x = l.v as f64 + 0.5;
            let exact = 1000.0 * x - 10.0 * x * x;
            assert!(
                (l.energy_cm1 - exact).abs() < 1e-4,
                "v={} {}",
                l.v,
                l.energy_cm1 - exact
            );
        }
    }
}
