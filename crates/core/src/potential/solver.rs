//! All bound levels of a radial potential for one J: energies, B_v, turning points, wavefunctions.
//!
//! # Equation
//! −(C_u/μ) ψ″ + [V(r) + (C_u/μ) J(J+1)/r²] ψ = E ψ on [r_a, r_b] with ψ(r_a) = ψ(r_b) = 0
//! (domain notes §1.10), r in Å, energies in cm⁻¹, μ in u.
//!
//! # Method
//! Numerov discretisation on a grid uniform in a coordinate x. For curves with a dissociation
//! limit, when all levels up to it are wanted, x counts local wavelengths at the limit
//! (dr/dx ∝ 1/k(r), blended smoothly into a uniform step inside the well), so the step grows
//! with r through the long-range tail: near-threshold levels get a long box at little cost.
//! Otherwise the grid is uniform in r. With ψ(r) = √(r′(x)) φ(x) the equation keeps Numerov
//! form, φ″ = [r′² (μ/C_u)(V_J − E) − ½ {r, x}] φ ({r, x} the Schwarzian derivative of the map:
//! the Liouville transformation).
//!
//! With T_i = h² Q̃_i/12 and F_i = (1 − T_i) φ_i the scheme reads F_{i+1} − U_i F_i + F_{i−1} = 0,
//! U_i = (2 + 10 T_i)/(1 − T_i): a symmetric tridiagonal matrix M(E) = tridiag(−1, U_i, −1) that
//! decreases monotonically with E, so the number of its negative pivots is the number of
//! Numerov eigenvalues below E (a Sturm count). One sweep at a trial E runs the three-term
//! recursion outward to the match point m (the outer turning point) and inward to m (the two
//! interleaved, rescaled against overflow); sign changes give the pivots of this twisted
//! factorisation, the pivot γ_m at m gives the mismatch, and the same pass accumulates Σ w φ²
//! and ⟨1/r²⟩.
//!
//! For level v the energy is bracketed by the count and refined by the Cooley–Newton correction
//! ΔE = γ_m / (12 Σ w_i φ_i²) with φ_m = 1, w_i = ∂T_i/∂(−E) (the Newton step for the zero
//! eigenvalue of the symmetric pencil), falling back to bisection whenever a step leaves the
//! bracket or the trial function has the wrong number of nodes. Guesses come from extrapolating
//! the levels below, so a level typically costs two or three sweeps.
//!
//! # Accuracy control
//! Numerov eigenvalues carry an error c·h⁴ + O(h⁶). Every level is solved on three nested grids
//! (steps 2h, h, h/2; the coarsest is every other point of the first grid, nearly free). The
//! reported energy is the Richardson value R = (16 E_{h/2} − E_h)/15 and `error_estimate_cm1` is
//! the larger of |E_{h/2} − E_h|/15 (the error of E_{h/2} in the asymptotic regime, a
//! conservative bound for R) and |R − R′|, the change from the Richardson value R′ of the two
//! coarser grids, which stays small only once the grids are in the asymptotic regime. Levels
//! whose estimate exceeds `tolerance_cm1` are refined again (step halved, the triple moves on),
//! up to `max_refinements` times. B_v is extrapolated like E. The tests check the levels against
//! closed forms (harmonic, Morse: 1500 random constant sets in the property test) and against
//! an independent dense sinc-DVR (Lennard-Jones), and check that the actual error stays within
//! twice the estimate. The points of the mapped grid come from an RK4 integration of the map;
//! their small inconsistency puts a floor of about 10⁻¹⁰ of the well depth under the accuracy.
//! Iterations stop at 10⁻⁴ of the tolerance.
//!
//! The first step resolves the shortest local wavelength 2π/√(μ(E_max − V_min)/C_u) by
//! `points_per_wavelength` points. The box: r_a lies inside the inner wall where the WKB decay
//! exponent ∫κ dr from the inner turning point at E_max reaches `tail_decay`; r_b likewise beyond
//! the outer turning point of an energy 10⁻⁶ (mapped grid; 10⁻⁴ uniform) of the well depth below
//! the limit, or of E_max when one is given. Each level is integrated only as far out as its own
//! decay requires. Levels whose wavefunction has not decayed by `tail_decay`/2 at r_b are
//! flagged `boundary_limited` (their energies are raised by the box; widen `r_max_angstrom`).
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
    /// Grid points per shortest local de Broglie wavelength on the first grid (the coarser of
    /// the Richardson pair).
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
    /// Use a grid whose step follows the local wavelength (for curves with a dissociation limit
    /// when all levels up to it are wanted); otherwise, or when false, the grid is uniform.
    pub mapped_grid: bool,
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
            mapped_grid: true,
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
    /// Whether the step follows the local wavelength (mapped) or is uniform.
    pub mapped: bool,
    /// Points of the first grid (the Richardson pair is this grid and its halving).
    pub points_coarse: usize,
    /// Step of the first grid at the potential minimum, Å.
    pub step_coarse_angstrom: f64,
    /// Step of the finest grid used for any level at the potential minimum, Å.
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
    /// Which work limit stopped the solver early, if one did (the levels found are kept).
    #[serde(default)]
    pub limit_reached: Option<String>,
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
        })
    }

    fn v(&self, r: f64) -> f64 {
        self.pot.energy_cm1(r)
    }

    fn vj(&self, r: f64) -> f64 {
        self.pot.energy_cm1(r) + self.cent / (r * r)
    }

    /// Local wavenumber √(|ΔE|/(C_u/μ)), 1/Å.
    fn kappa(&self, diff: f64) -> f64 {
        (diff.abs() / self.kin).sqrt()
    }
}

/// C∞ step: 0 for t ≤ 0, 1 for t ≥ 1.
fn smooth_step(t: f64) -> f64 {
    if t <= 0.0 {
        0.0
    } else if t >= 1.0 {
        1.0
    } else {
        let a = (-1.0 / t).exp();
        let b = (-1.0 / (1.0 - t)).exp();
        a / (a + b)
    }
}

/// The coordinate map r(x): x counts local wavelengths, dx/dr = ρ(r) = k(r)/(2π) with
/// k(r)² = (μ/C_u) K(r). Uniform: K = the well depth. Mapped: K = depth + δ for r ≤ r_e, then a
/// C∞ blend (r_e … r₁) into E_max + δ − V(r) + (C_u/μ) Λ²/r². The first part makes the step
/// follow the local wavelength at the ceiling out into the long-range tail; the Λ²/r² floor
/// keeps the step below 2π r/(Λ ppw), so the decaying tail of a weakly bound level is resolved
/// (κ·step ≲ 2π/ppw) as long as its amplitude matters (decay ≲ Λ), and makes the far grid
/// geometric (step ∝ r), so a long box costs few points.
#[derive(Clone, Copy)]
struct Map {
    mapped: bool,
    k0: f64,
    e_top: f64,
    /// (C_u/μ) Λ², cm⁻¹ Å².
    floor: f64,
    re: f64,
    r1: f64,
    /// √(μ/C_u)/(2π).
    coef: f64,
}

/// Λ of the map's tail floor (decay exponent over which weakly bound tails stay resolved).
const TAIL_RESOLUTION: f64 = 12.0;

/// At most this many levels are solved in one call; above it the lowest ones are kept and a
/// note says so. Far more than any bound state of a real molecule holds.
pub const MAX_LEVELS: usize = 1000;

/// At most this many points on any grid (the first one and every halving), checked before the
/// grid is allocated.
pub const MAX_GRID_POINTS: usize = 1_000_000;

/// At most this many level × grid-point products over all solves of one call (the work);
/// refinement stops, with a note, before it would exceed this.
pub const MAX_WORK: usize = 400_000_000;

/// The error of a grid that would exceed [`MAX_GRID_POINTS`].
fn too_many_points() -> Error {
    Error::numerical(
        "level solver",
        format!(
            "the grid would need more than {MAX_GRID_POINTS} points (the limit): the reduced \
             mass is too large for this curve, or narrow r_min … r_max"
        ),
    )
}

impl Map {
    fn k_energy(&self, problem: &Problem<'_>, r: f64) -> f64 {
        if !self.mapped || r <= self.re {
            return self.k0;
        }
        let s = smooth_step((r - self.re) / (self.r1 - self.re));
        self.k0 * (1.0 - s) + s * (self.e_top - problem.v(r) + self.floor / (r * r))
    }

    fn rho(&self, problem: &Problem<'_>, r: f64) -> f64 {
        self.coef * self.k_energy(problem, r).max(1e-300).sqrt()
    }

    /// V_J, r′ = 1/ρ and the Schwarzian {r, x} = (1.5 ρ′² − ρ ρ″)/ρ⁴ at r, with one evaluation
    /// of V and two of V′. With ρ = c √K: {r, x} = [⅝ (K′/K)² − ½ K″/K]/(c² K); K′ and K″ follow
    /// from V′, V″ (V″ by a central difference of V′, relative step 10⁻⁴) and the blend.
    fn local(&self, problem: &Problem<'_>, r: f64) -> (f64, f64, f64) {
        let v = problem.v(r);
        let vj = v + problem.cent / (r * r);
        if !self.mapped || r <= self.re {
            return (vj, 1.0 / (self.coef * self.k0.sqrt()), 0.0);
        }
        let len = self.r1 - self.re;
        let t = (r - self.re) / len;
        let pot = problem.pot;
        let eps = 1e-4 * len.max(r - self.re);
        let d1 = pot.derivative_cm1_per_angstrom(r);
        let d2 = (pot.derivative_cm1_per_angstrom(r + eps)
            - pot.derivative_cm1_per_angstrom(r - eps))
            / (2.0 * eps);
        let (r2, r3) = (r * r, r * r * r);
        let w0 = self.e_top - v + self.floor / r2;
        let w1 = -d1 - 2.0 * self.floor / r3;
        let w2 = -d2 + 6.0 * self.floor / (r2 * r2);
        let (k, k1, k2) = if t >= 1.0 {
            (w0, w1, w2)
        } else {
            // s = 1/(1 + e^{−u}), u = 1/(1 − t) − 1/t (the C∞ step), derivatives in r.
            let s = smooth_step(t);
            let q = s * (1.0 - s);
            let (ut, utt) = (
                1.0 / (t * t) + 1.0 / ((1.0 - t) * (1.0 - t)),
                -2.0 / (t * t * t) + 2.0 / ((1.0 - t) * (1.0 - t) * (1.0 - t)),
            );
            let s1 = if q > 0.0 { q * ut / len } else { 0.0 };
            let s2 = if q > 0.0 {
                q * (utt + (1.0 - 2.0 * s) * ut * ut) / (len * len)
            } else {
                0.0
            };
            (
                self.k0 * (1.0 - s) + s * w0,
                s1 * (w0 - self.k0) + s * w1,
                s2 * (w0 - self.k0) + 2.0 * s1 * w1 + s * w2,
            )
        };
        let k = k.max(1e-300);
        let schw = (0.625 * (k1 / k) * (k1 / k) - 0.5 * k2 / k) / (self.coef * self.coef * k);
        (vj, 1.0 / (self.coef * k.sqrt()), schw)
    }

    /// r after a step dx from r (dr/dx = 1/ρ) by classical RK4 with at least `n` substeps, more
    /// where ρ changes quickly (|Δ ln ρ| ≤ 0.02 per substep), so the points sit on the map to
    /// far better than the Numerov error.
    fn advance(&self, problem: &Problem<'_>, r: f64, dx: f64, n: usize) -> f64 {
        if !self.mapped {
            return r + dx / self.coef / self.k0.sqrt();
        }
        let f = |r: f64| 1.0 / self.rho(problem, r);
        let k1 = f(r);
        let change = (f(r + dx * k1) / k1).ln().abs();
        let n = n.max((change / 0.02).ceil() as usize).min(4096);
        let hs = dx / n as f64;
        let mut r = r;
        let mut k1 = k1;
        for step in 0..n {
            if step > 0 {
                k1 = f(r);
            }
            let k2 = f(r + 0.5 * hs * k1);
            let k3 = f(r + 0.5 * hs * k2);
            let k4 = f(r + hs * k3);
            r += hs * (k1 + 2.0 * k2 + 2.0 * k3 + k4) / 6.0;
        }
        r
    }
}

/// A grid uniform in x; indices 0 and n−1 carry the Dirichlet conditions.
///
/// With ψ(r) = √(r′(x)) φ(x) the radial equation becomes φ″ = Q̃ φ with
/// Q̃ = r′² (μ/C_u)(V_J − E) − ½ {r, x} (Liouville transformation), so Numerov's
/// T_i = h² Q̃_i/12 = a_i − E w_i.
pub(crate) struct Grid {
    h: f64,
    r: Vec<f64>,
    vj: Vec<f64>,
    /// r′(x_i) = 1/ρ(r_i).
    jac: Vec<f64>,
    /// Schwarzian of the map at r_i.
    schw: Vec<f64>,
    w: Vec<f64>,
    /// w_i / r_i² (for ⟨1/r²⟩).
    wr2: Vec<f64>,
    a: Vec<f64>,
    imin: usize,
}

impl Grid {
    fn point_values(problem: &Problem<'_>, map: &Map, r: f64) -> (f64, f64, f64) {
        map.local(problem, r)
    }

    /// Step h (in wavelengths) from r_a until r ≥ r_b, RK4 with at least `substeps` per step.
    fn new(
        problem: &Problem<'_>,
        map: &Map,
        r_a: f64,
        r_b: f64,
        h: f64,
        substeps: usize,
    ) -> Result<Self> {
        let mut r = vec![r_a];
        let mut x = r_a;
        while x < r_b {
            x = map.advance(problem, x, h, substeps);
            if !x.is_finite() || r.len() >= MAX_GRID_POINTS {
                return Err(too_many_points());
            }
            r.push(x);
        }
        if r.len() < 8 {
            // Too short to be useful: subdivide.
            return Self::new(problem, map, r_a, r_b, h / 4.0, substeps);
        }
        let mut vj = Vec::with_capacity(r.len());
        let mut jac = Vec::with_capacity(r.len());
        let mut schw = Vec::with_capacity(r.len());
        for &ri in &r {
            let (v, j, s) = Self::point_values(problem, map, ri);
            vj.push(v);
            jac.push(j);
            schw.push(s);
        }
        Self::finish(problem, h, r, vj, jac, schw)
    }

    fn finish(
        problem: &Problem<'_>,
        h: f64,
        r: Vec<f64>,
        vj: Vec<f64>,
        jac: Vec<f64>,
        schw: Vec<f64>,
    ) -> Result<Self> {
        if let Some(i) = vj.iter().position(|v| !v.is_finite()) {
            return Err(Error::numerical(
                "level solver",
                format!("the potential is not finite at r = {:.6} Å", r[i]),
            ));
        }
        let c = h * h / 12.0;
        let w: Vec<f64> = jac.iter().map(|j| c * j * j / problem.kin).collect();
        let a: Vec<f64> = (0..r.len())
            .map(|i| w[i] * vj[i] - 0.5 * c * schw[i])
            .collect();
        let wr2: Vec<f64> = (0..r.len()).map(|i| w[i] / (r[i] * r[i])).collect();
        let imin = (1..vj.len() - 1)
            .min_by(|&p, &q| vj[p].total_cmp(&vj[q]))
            .unwrap_or(1);
        Ok(Self {
            h,
            r,
            vj,
            jac,
            schw,
            w,
            wr2,
            a,
            imin,
        })
    }

    /// The same x range with half the step (even points reused exactly).
    fn refine(&self, problem: &Problem<'_>, map: &Map) -> Result<Self> {
        let n = self.len();
        let m = 2 * n - 1;
        if m > MAX_GRID_POINTS {
            return Err(too_many_points());
        }
        let (mut r, mut vj, mut jac, mut schw) = (
            Vec::with_capacity(m),
            Vec::with_capacity(m),
            Vec::with_capacity(m),
            Vec::with_capacity(m),
        );
        for i in 0..n {
            r.push(self.r[i]);
            vj.push(self.vj[i]);
            jac.push(self.jac[i]);
            schw.push(self.schw[i]);
            if i + 1 < n {
                let x = map.advance(problem, self.r[i], 0.5 * self.h, 1);
                let (v, j, s) = Self::point_values(problem, map, x);
                r.push(x);
                vj.push(v);
                jac.push(j);
                schw.push(s);
            }
        }
        Self::finish(problem, 0.5 * self.h, r, vj, jac, schw)
    }

    /// Every other point: the same map with twice the step.
    fn coarsen(&self, problem: &Problem<'_>) -> Result<Self> {
        let pick = |v: &[f64]| v.iter().step_by(2).copied().collect::<Vec<f64>>();
        Self::finish(
            problem,
            2.0 * self.h,
            pick(&self.r),
            pick(&self.vj),
            pick(&self.jac),
            pick(&self.schw),
        )
    }

    fn len(&self) -> usize {
        self.vj.len()
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

    /// WKB decay increment κ Δr at point i for energy e.
    fn decay_step(&self, i: usize, e: f64) -> f64 {
        (12.0 * self.w[i] * (self.vj[i] - e).max(0.0)).sqrt()
    }

    /// Whether the WKB decay exponent from the outer turning point to index `end` reaches
    /// `target`.
    fn decays_by(&self, e: f64, end: usize, target: f64) -> bool {
        let t = self.outer_turning_index(e);
        let mut s = 0.0;
        for i in t..end.min(self.len() - 1) {
            s += self.decay_step(i, e);
            if s >= target {
                return true;
            }
        }
        false
    }

    /// Index where the decay exponent beyond the outer turning point reaches `decay`.
    fn tail_end(&self, e: f64, decay: f64) -> usize {
        let n = self.len();
        let mut i = self.outer_turning_index(e);
        let mut s = 0.0;
        while i < n - 1 && s < decay {
            s += self.decay_step(i, e);
            i += 1;
        }
        (i + 2).min(n - 1)
    }
}

/// Outcome of one sweep at a trial energy.
struct Sweep {
    /// Numerov eigenvalues below e (Sturm count).
    count: usize,
    /// Nodes of the matched trial function.
    nodes: usize,
    /// Pivot at the match point (mismatch of the two solutions).
    gamma: f64,
    /// Σ w_i φ_i² with φ_m = 1 (for the Cooley step).
    norm: f64,
    /// ⟨1/r²⟩ of the trial function.
    inv_r2: f64,
}

const RESCALE: f64 = 1e100;

/// One pass at energy e over indices 0 … end (φ_0 = φ_end = 0): the outward solution F up to the
/// match point m, the inward one G down to m, by the three-term recursion
/// F_{i+1} = U_i F_i − F_{i−1} (rescaled against overflow). Sign changes of consecutive values
/// are the negative pivots of the twisted factorisation.
fn sweep(grid: &Grid, e: f64, end: usize) -> Sweep {
    let m = match_index(grid, e, end);
    let mut out = Chain::start(grid, e, 1);
    let mut inw = Chain::start(grid, e, end - 1);
    // The two recursions are independent: interleaving them hides the latency of each.
    let (n_out, n_in) = (m - 1, end - 1 - m);
    let both = n_out.min(n_in);
    for k in 0..both {
        out.step(grid, e, 2 + k, true);
        inw.step(grid, e, end - 2 - k, end - 2 - k > m);
    }
    for k in both..n_out {
        out.step(grid, e, 2 + k, true);
    }
    for k in both..n_in {
        inw.step(grid, e, end - 2 - k, end - 2 - k > m);
    }
    // out: x = F_m, x_prev = F_{m−1}; inw: x = G_m, x_prev = G_{m+1}.
    let d_m = d_factor(grid, e, m);
    let gamma = (12.0 * d_m - 10.0) - out.x_prev / out.x - inw.x_prev / inw.x;
    let (fo, gi) = (out.x * out.x, inw.x * inw.x);
    let norm = out.sum / fo + inw.sum / gi;
    Sweep {
        count: out.neg + inw.neg + usize::from(gamma < 0.0),
        nodes: out.neg + inw.neg,
        gamma,
        norm,
        inv_r2: (out.sum2 / fo + inw.sum2 / gi) / norm,
    }
}

/// The match point: the last classically allowed point, kept inside (2, end − 2).
fn match_index(grid: &Grid, e: f64, end: usize) -> usize {
    grid.outer_turning_index(e)
        .saturating_sub(1)
        .clamp(2, end - 2)
}

/// d_i = 1/(1 − T_i), so that φ_i = d_i F_i and U_i = 12 d_i − 10. T is capped at 0.9 (reached
/// only deep in forbidden regions on coarse grids), which keeps M(E) monotone in E.
#[inline(always)]
fn d_factor(grid: &Grid, e: f64, i: usize) -> f64 {
    1.0 / (1.0 - (grid.a[i] - e * grid.w[i]).min(0.9))
}

/// One direction of the three-term recursion x_next = U_i x − x_prev, with its sign changes and
/// the running sums Σ w φ², Σ w φ²/r² (φ = d x).
struct Chain {
    x_prev: f64,
    x: f64,
    /// d at the current point.
    d: f64,
    sum: f64,
    sum2: f64,
    neg: usize,
}

impl Chain {
    /// x = 1 at `first` (the neighbour of a boundary where x = 0).
    #[inline(always)]
    fn start(grid: &Grid, e: f64, first: usize) -> Self {
        let d = d_factor(grid, e, first);
        Self {
            x_prev: 0.0,
            x: 1.0,
            d,
            sum: grid.w[first] * d * d,
            sum2: grid.wr2[first] * d * d,
            neg: 0,
        }
    }

    /// Advance to point `j` (a neighbour of the current one); add it to the sums if `include`.
    #[inline(always)]
    fn step(&mut self, grid: &Grid, e: f64, j: usize, include: bool) {
        let mut next = (12.0 * self.d - 10.0) * self.x - self.x_prev;
        if next == 0.0 {
            next = 1e-300 * self.x.signum();
        }
        self.neg += usize::from((next < 0.0) != (self.x < 0.0));
        self.x_prev = self.x;
        self.x = next;
        self.d = d_factor(grid, e, j);
        if include {
            let phi = self.d * next;
            let p2 = phi * phi;
            self.sum += grid.w[j] * p2;
            self.sum2 += grid.wr2[j] * p2;
        }
        if next.abs() > RESCALE {
            let s = 1.0 / RESCALE;
            self.x *= s;
            self.x_prev *= s;
            self.sum *= s * s;
            self.sum2 *= s * s;
        }
    }
}

/// [`sweep`] done sequentially, also writing φ_i (φ_m = 1) to `st[0..=end]`.
fn sweep_store(grid: &Grid, e: f64, end: usize, st: &mut Vec<f64>) -> Sweep {
    let m = match_index(grid, e, end);
    let (w, wr2) = (&grid.w, &grid.wr2);
    let d_of = |i: usize| d_factor(grid, e, i);
    st.clear();
    st.resize(end + 1, 0.0);
    let mut neg = 0usize;
    // Outward.
    let (mut f_prev, mut f) = (0.0f64, 1.0f64);
    let mut d = d_of(1);
    let mut sum = w[1] * d * d;
    let mut sum2 = wr2[1] * d * d;
    st[1] = d;
    for i in 1..m {
        let u = 12.0 * d - 10.0;
        let mut f_next = u * f - f_prev;
        if f_next == 0.0 {
            f_next = 1e-300 * f.signum();
        }
        neg += usize::from((f_next < 0.0) != (f < 0.0));
        f_prev = f;
        f = f_next;
        d = d_of(i + 1);
        let phi = d * f;
        sum += w[i + 1] * phi * phi;
        sum2 += wr2[i + 1] * phi * phi;
        st[i + 1] = phi;
        if f.abs() > RESCALE {
            let s = 1.0 / RESCALE;
            f *= s;
            f_prev *= s;
            sum *= s * s;
            sum2 *= s * s;
            st[..=i + 1].iter_mut().for_each(|x| *x *= s);
        }
    }
    let d_m = d;
    let out_ratio = f_prev / f;
    let sum_out = sum / (f * f);
    let sum2_out = sum2 / (f * f);
    let s = 1.0 / f;
    st[..=m].iter_mut().for_each(|x| *x *= s);
    // Inward.
    let (mut g_next, mut g) = (0.0f64, 1.0f64);
    let mut d = d_of(end - 1);
    let mut sum = w[end - 1] * d * d;
    let mut sum2 = wr2[end - 1] * d * d;
    st[end - 1] = d;
    for i in (m + 1..end).rev() {
        let u = 12.0 * d - 10.0;
        let mut g_prev = u * g - g_next;
        if g_prev == 0.0 {
            g_prev = 1e-300 * g.signum();
        }
        neg += usize::from((g_prev < 0.0) != (g < 0.0));
        g_next = g;
        g = g_prev;
        if i - 1 > m {
            d = d_of(i - 1);
            let phi = d * g;
            sum += w[i - 1] * phi * phi;
            sum2 += wr2[i - 1] * phi * phi;
            st[i - 1] = phi;
        }
        if g.abs() > RESCALE {
            let s = 1.0 / RESCALE;
            g *= s;
            g_next *= s;
            sum *= s * s;
            sum2 *= s * s;
            st[(i - 1).max(m + 1)..end].iter_mut().for_each(|x| *x *= s);
        }
    }
    let in_ratio = g_next / g;
    let s = 1.0 / g;
    st[m + 1..end].iter_mut().for_each(|x| *x *= s);
    let gamma = (12.0 * d_m - 10.0) - out_ratio - in_ratio;
    let norm = sum_out + sum / (g * g);
    Sweep {
        count: neg + usize::from(gamma < 0.0),
        nodes: neg,
        gamma,
        norm,
        inv_r2: (sum2_out + sum2 / (g * g)) / norm,
    }
}

/// Converge level v on `grid` inside the bracket from `guess`, integrating to index `end`.
///
/// Returns the energy and ⟨1/r²⟩ of the converged state. With `energy_only`, a Newton (Cooley)
/// step is accepted without a confirming sweep once the predicted error after it, K Δ² (K from
/// successive steps, at first 2/`gap` with `gap` the expected level spacing), is below `tol`;
/// ⟨1/r²⟩ is then that of the last trial function and not accurate.
#[allow(clippy::too_many_arguments)]
fn converge(
    grid: &Grid,
    v: usize,
    guess: f64,
    bracket: (f64, f64),
    end: usize,
    tol: f64,
    gap: f64,
    energy_only: bool,
) -> Option<(f64, f64)> {
    let (mut lo, mut hi) = bracket;
    let mut e = if guess > lo && guess < hi {
        guess
    } else {
        0.5 * (lo + hi)
    };
    let mut k_newton = 2.0 / gap.abs().max(1e-300);
    let mut last_step: Option<f64> = None;
    for _ in 0..400 {
        let sw = sweep(grid, e, end);
        if sw.count > v {
            hi = hi.min(e);
        } else {
            lo = lo.max(e);
        }
        let mut next = f64::NAN;
        if sw.nodes == v {
            // Cooley–Newton: ΔE = γ_m / (12 Σ w_i φ_i²) with φ_m = 1.
            let delta = sw.gamma / (12.0 * sw.norm);
            if delta.is_finite() {
                if let Some(d_prev) = last_step
                    && d_prev > 0.0
                {
                    k_newton = k_newton.max(delta.abs() / (d_prev * d_prev));
                }
                if delta.abs() < tol || (energy_only && k_newton * delta * delta < tol) {
                    return Some((e + delta, sw.inv_r2));
                }
                last_step = Some(delta.abs());
                next = e + delta;
            }
        }
        if !(next > lo && next < hi) {
            next = 0.5 * (lo + hi);
            last_step = None;
        }
        if hi - lo < tol {
            let mid = 0.5 * (lo + hi);
            return Some((mid, sweep(grid, mid, end).inv_r2));
        }
        e = next;
    }
    None
}

/// Everything fixed before solving: ceiling, box, map, coarse step.
pub(crate) struct Plan {
    v_min: f64,
    ceiling: f64,
    r_a: f64,
    r_b: f64,
    /// Coarse step in x (wavelengths).
    hx: f64,
    map: Map,
    omega: f64,
    limit: Option<f64>,
    notes: Vec<String>,
}

/// Root of f in [a, b] (f(a), f(b) of opposite signs) to 1e-13 relative.
fn bisect(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> f64 {
    let fa = f(a);
    for _ in 0..200 {
        let c = 0.5 * (a + b);
        if (b - a).abs() <= 1e-13 * c.abs() {
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

pub(crate) fn plan(problem: &Problem<'_>, s: &SolverSettings, allow_map: bool) -> Result<Plan> {
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
    let to_limit = limit == Some(ceiling);
    let coef = 1.0 / (problem.kin.sqrt() * 2.0 * std::f64::consts::PI);
    let hx = 1.0 / s.points_per_wavelength;
    let h0 = hx / (coef * depth.sqrt()); // coarse step in r at the bottom, Å
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
            let mut steps = 0usize;
            // On coarse grids a steep wall gives T > 0.9 near r_a; the sweeps cap T there
            // (ψ is negligible), keeping the count monotone.
            while acc < s.tail_decay && r - h0 > 0.5 * h0 {
                steps += 1;
                if steps > MAX_GRID_POINTS {
                    return Err(too_many_points());
                }
                let vv = problem.vj(r - h0);
                r -= h0;
                acc += h0 * problem.kappa(vv - ceiling);
            }
            r
        }
    };
    // Near-threshold levels need a long box; a mapped grid makes it cheap.
    let binding_out = if to_limit {
        if allow_map && s.mapped_grid {
            1e-6
        } else {
            1e-4
        }
    } else {
        0.0
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
            let e_out = ceiling - binding_out * depth;
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
            let mut steps = 0usize;
            while acc < s.tail_decay && r < cap {
                steps += 1;
                if steps > MAX_GRID_POINTS {
                    return Err(too_many_points());
                }
                let step = h0
                    .max(1e-2 * r)
                    .min(0.5 / problem.kappa(problem.vj(r) - e_out).max(1e-12));
                let step = step.max(h0);
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
    let mut map = Map {
        mapped: false,
        k0: depth,
        e_top: ceiling,
        floor: 0.0,
        re,
        r1: re,
        coef,
    };
    if allow_map && s.mapped_grid && to_limit {
        let delta = 1e-7 * depth;
        let half = v_min + 0.9 * depth;
        let mut hi = 1.05 * re;
        while problem.v(hi) < half && hi < r_b {
            hi *= 1.1;
        }
        if hi < r_b {
            let r1 = bisect(|r| problem.v(r) - half, re, hi);
            let trial = Map {
                mapped: true,
                k0: depth + delta,
                e_top: ceiling + delta,
                floor: problem.kin * TAIL_RESOLUTION * TAIL_RESOLUTION,
                re,
                r1,
                coef,
            };
            // The map needs E_max + δ − V > 0 beyond r_e: V must stay below the limit.
            let samples = 400;
            let ok = (1..=samples).all(|i| {
                let r = re * (r_b / re).powf(i as f64 / samples as f64);
                trial.k_energy(problem, r) > 0.5 * delta
            });
            if ok {
                map = trial;
            } else {
                notes.push(
                    "the curve rises above its limit beyond r_e: a uniform grid is used".into(),
                );
            }
        }
    }
    Ok(Plan {
        v_min,
        ceiling,
        r_a,
        r_b,
        hx,
        map,
        omega,
        limit,
        notes,
    })
}

/// A level converged on one grid.
#[derive(Clone, Copy)]
struct Found {
    e: f64,
    end: usize,
    inv_r2: f64,
}

/// How far to integrate and how tightly to converge.
#[derive(Clone, Copy)]
struct Accuracy {
    /// Decay exponent beyond the outer turning point.
    decay: f64,
    /// Iteration tolerance on the energy, cm⁻¹.
    tol: f64,
    /// ⟨1/r²⟩ not needed (allows accepting a final Newton step unchecked).
    energy_only: bool,
}

/// Levels `wanted` (ascending v) on one grid: energies (raw scale) and integration ends.
fn solve_grid(
    grid: &Grid,
    plan: &Plan,
    wanted: &[usize],
    guesses: Option<&[f64]>,
    acc: Accuracy,
) -> Result<Vec<Found>> {
    let Accuracy {
        decay,
        tol,
        energy_only,
    } = acc;
    let n = grid.len();
    let mut out: Vec<Found> = Vec::with_capacity(wanted.len());
    let vmin_j = grid.vj[grid.imin];
    let mut prev: Vec<f64> = Vec::new();
    for (k, &v) in wanted.iter().enumerate() {
        let consecutive = k > 0 && wanted[k - 1] + 1 == v;
        let lo = if consecutive {
            out[k - 1].e
        } else {
            plan.v_min.min(vmin_j) - 1.0
        };
        let l = prev.len();
        let spacing = match l {
            0 => plan.omega,
            1 => plan.omega.min(prev[0] - vmin_j).max(1e-12),
            _ => (prev[l - 1] - prev[l - 2]).max(1e-12),
        };
        let guess = match guesses {
            Some(g) => g[k],
            None => match l {
                0 => vmin_j + 0.5 * plan.omega,
                1 | 2 => prev[l - 1] + spacing,
                _ => {
                    // Quadratic extrapolation of the last three levels, kept below the ceiling.
                    let q = 3.0 * prev[l - 1] - 3.0 * prev[l - 2] + prev[l - 3];
                    if q > prev[l - 1] {
                        q
                    } else {
                        prev[l - 1] + spacing
                    }
                }
            },
        };
        let probe = match guesses {
            Some(_) => guess + 1e-3 * spacing,
            None => guess + 2.0 * spacing,
        }
        .min(plan.ceiling);
        let mut end = grid.tail_end(probe, decay).max(grid.imin + 4).min(n - 1);
        let mut found = None;
        for attempt in 0..2 {
            if let Some((e, inv_r2)) = converge(
                grid,
                v,
                guess,
                (lo, plan.ceiling),
                end,
                tol,
                spacing,
                energy_only,
            ) {
                let ok = e < plan.ceiling && (end == n - 1 || grid.decays_by(e, end, 0.9 * decay));
                if ok {
                    found = Some((e, inv_r2));
                    break;
                }
            }
            if attempt == 0 {
                end = n - 1;
            }
        }
        let Some((e, inv_r2)) = found else {
            return Err(Error::numerical(
                "level solver",
                format!("level v = {v} did not converge below the energy ceiling"),
            ));
        };
        prev.push(e);
        out.push(Found { e, end, inv_r2 });
    }
    Ok(out)
}

/// Normalised physical ψ_i = √r′ φ_i / √(h Σ r′² φ²) into `psi`; returns ⟨1/r²⟩.
fn level_state(grid: &Grid, e: f64, end: usize, psi: &mut Vec<f64>) -> f64 {
    sweep_store(grid, e, end, psi);
    let (mut norm, mut inv_r2) = (0.0, 0.0);
    for i in 1..end {
        let p2 = grid.jac[i] * grid.jac[i] * psi[i] * psi[i];
        norm += p2;
        inv_r2 += p2 / (grid.r[i] * grid.r[i]);
    }
    let scale = 1.0 / (norm * grid.h).sqrt();
    for i in 1..end {
        psi[i] *= scale * grid.jac[i].sqrt();
    }
    inv_r2 / norm
}

/// Count of levels below the ceiling on the full grid.
fn count_levels(grid: &Grid, ceiling: f64) -> usize {
    sweep(grid, ceiling, grid.len() - 1).count
}

/// Error estimate of the Richardson value from energies on three successive grids (steps 4h,
/// 2h, h): the larger of |E_h − E_2h|/15 (the error of E_h in the asymptotic h⁴ regime) and the
/// change of the Richardson value itself, |R(2h, h) − R(4h, 2h)|, which stays small only once
/// the grids are in the asymptotic regime. Without the coarsest energy the full |E_h − E_2h|.
/// Differences below `noise` (iteration accuracy) are taken as they are.
fn richardson_error(older: Option<f64>, prev: f64, last: f64, noise: f64) -> f64 {
    let d = prev - last;
    let base = d.abs() / 15.0;
    if d.abs() <= noise {
        return base;
    }
    match older {
        Some(o) => {
            let r_new = (16.0 * last - prev) / 15.0;
            let r_old = (16.0 * prev - o) / 15.0;
            base.max((r_new - r_old).abs())
        }
        None => d.abs(),
    }
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
    solve(potential, mu_u, settings, None).map(|(set, _)| set)
}

/// Functions f_k(r) whose expectation values ⟨ψ_v|f_k|ψ_v⟩ are wanted for every level: `count`
/// of them, written by `eval(r, out)` into `out[..count]`.
pub struct Probe<'a> {
    /// Number of functions.
    pub count: usize,
    /// Their values at r (Å).
    pub eval: &'a dyn Fn(f64, &mut [f64]),
}

/// [`solve_levels`], and for every level the expectation values ⟨ψ_v|f_k|ψ_v⟩ of the probe's
/// functions (for Hellmann–Feynman derivatives ∂E_v/∂p = ⟨ψ_v|∂V/∂p|ψ_v⟩), computed on the
/// finest grid the level was solved on.
pub fn solve_levels_probed(
    potential: &dyn Potential,
    mu_u: f64,
    settings: &SolverSettings,
    probe: &Probe<'_>,
) -> Result<(LevelSet, Vec<Vec<f64>>)> {
    solve(potential, mu_u, settings, Some(probe))
}

/// ∫ψ² f_k dr = h Σ J_i ψ_i² f_k(r_i) on `grid` for the normalised ψ of [`level_state`]; the
/// probe values of the grid are evaluated once and kept in `cache`.
fn expectations(
    grid: &Grid,
    psi: &[f64],
    end: usize,
    probe: &Probe<'_>,
    cache: &mut Vec<f64>,
) -> Vec<f64> {
    let k = probe.count;
    if cache.len() != k * grid.len() {
        cache.clear();
        cache.resize(k * grid.len(), 0.0);
        for (i, &r) in grid.r.iter().enumerate() {
            (probe.eval)(r, &mut cache[i * k..(i + 1) * k]);
        }
    }
    let mut out = vec![0.0; k];
    for i in 1..end {
        let w = grid.h * grid.jac[i] * psi[i] * psi[i];
        for (o, f) in out.iter_mut().zip(&cache[i * k..(i + 1) * k]) {
            *o += w * f;
        }
    }
    out
}

fn solve(
    potential: &dyn Potential,
    mu_u: f64,
    settings: &SolverSettings,
    probe: Option<&Probe<'_>>,
) -> Result<(LevelSet, Vec<Vec<f64>>)> {
    let problem = Problem::new(potential, mu_u, settings.j)?;
    let mut plan = plan(&problem, settings, true)?;
    let tol = settings.tolerance_cm1;
    let tol_e = (1e-4 * tol).max(1e-13 * (plan.ceiling - plan.v_min));
    let decay = settings.tail_decay;
    // grids[1]: the first grid; grids[2]: half its step (built first, the others are its even
    // points); grids[0]: twice the step (for the asymptotic check). Halvings are appended.
    let g2 = Grid::new(&problem, &plan.map, plan.r_a, plan.r_b, 0.5 * plan.hx, 1)?;
    let g1 = g2.coarsen(&problem)?;
    let g0 = g1.coarsen(&problem)?;
    let mut grids = vec![g0, g1, g2];
    let c1 = count_levels(&grids[1], plan.ceiling);
    let c2 = count_levels(&grids[2], plan.ceiling);
    let mut n_levels = c1.min(c2);
    if c1 != c2 {
        plan.notes.push(format!(
            "the two finest grids disagree on the number of bound levels ({c1} vs {c2}); the \
             top one is kept only if both find it"
        ));
    }
    if let Some(mx) = settings.max_levels {
        n_levels = n_levels.min(mx);
    }
    // Bounded work: at most MAX_LEVELS levels, and few enough that the first solves on the
    // three starting grids (3.5 × the first grid's points each) stay within MAX_WORK / 4.
    let by_work = MAX_WORK / 4 / (4 * grids[1].len()).max(1);
    let cap = MAX_LEVELS.min(by_work);
    let mut limit_reached = None;
    if n_levels > cap {
        let why = if cap == MAX_LEVELS {
            format!("the limit of {MAX_LEVELS} levels")
        } else {
            format!("the work limit ({MAX_WORK} level × grid-point steps)")
        };
        let note = format!(
            "stopped at {why}: the lowest {cap} of {n_levels} levels are given; lower the energy \
             ceiling to see the rest"
        );
        plan.notes.push(note.clone());
        limit_reached = Some(note);
        n_levels = cap;
    }
    let mut work = 4 * n_levels * grids[1].len();
    let all: Vec<usize> = (0..n_levels).collect();
    let acc = Accuracy {
        decay,
        tol: tol_e,
        energy_only: false,
    };
    // Level v on `grid`, starting from `base[v]` moved by the previous level's shift.
    let follow = |grid: usize, base: &[f64], strict: bool| -> Result<Vec<Option<Found>>> {
        let mut out = Vec::with_capacity(base.len());
        let mut shift = 0.0;
        for (v, &b) in base.iter().enumerate() {
            let acc = Accuracy {
                energy_only: !strict,
                ..acc
            };
            match solve_grid(&grids[grid], &plan, &[v], Some(&[b + shift]), acc) {
                Ok(f) => {
                    shift = f[0].e - b;
                    out.push(Some(f[0]));
                }
                Err(e) if strict => return Err(e),
                Err(_) => out.push(None),
            }
        }
        Ok(out)
    };
    // The search (bracketing from extrapolated guesses) runs on the cheap coarsest grid when it
    // holds all the levels; the finer grids then start from its energies.
    let energy_only = Accuracy {
        energy_only: true,
        ..acc
    };
    let search = (count_levels(&grids[0], plan.ceiling) >= n_levels)
        .then(|| solve_grid(&grids[0], &plan, &all, None, energy_only).ok())
        .flatten();
    let (coarse, first) = match search {
        Some(c) => {
            let base: Vec<f64> = c.iter().map(|f| f.e).collect();
            let first: Vec<Found> = follow(1, &base, true)?.into_iter().flatten().collect();
            (c.into_iter().map(Some).collect::<Vec<_>>(), first)
        }
        None => {
            let first = solve_grid(&grids[1], &plan, &all, None, acc)?;
            let base: Vec<f64> = first.iter().map(|f| f.e).collect();
            (follow(0, &base, false)?, first)
        }
    };
    let base: Vec<f64> = first.iter().map(|f| f.e).collect();
    let fine = follow(2, &base, true)?;
    let mut psi = Vec::new();
    let solved = |f: &Found, grid: usize| Solved {
        e: f.e,
        inv_r2: f.inv_r2,
        grid,
        end: f.end,
    };
    // Per level: the energies on three successive grids (coarsest first).
    let mut older: Vec<Option<f64>> = coarse.iter().map(|f| f.map(|f| f.e)).collect();
    let mut prev: Vec<Solved> = first.iter().map(|f| solved(f, 1)).collect();
    let mut last: Vec<Solved> = fine.iter().flatten().map(|f| solved(f, 2)).collect();
    let noise = 100.0 * tol_e;
    let err = |o: Option<f64>, a: &Solved, b: &Solved| richardson_error(o, a.e, b.e, noise);
    let mut halvings = 1u32;
    loop {
        let todo: Vec<usize> = (0..n_levels)
            .filter(|&v| err(older[v], &prev[v], &last[v]) > tol)
            .collect();
        if todo.is_empty() || halvings > settings.max_refinements {
            break;
        }
        let g = grids.len() - 1;
        let next_len = 2 * grids[g].len() - 1;
        if next_len > MAX_GRID_POINTS || work + todo.len() * next_len > MAX_WORK {
            let note = format!(
                "refinement stopped at the limit of {MAX_GRID_POINTS} grid points or \
                 {MAX_WORK} level × grid-point steps; see the error estimates"
            );
            plan.notes.push(note.clone());
            limit_reached.get_or_insert(note);
            break;
        }
        work += todo.len() * next_len;
        let next = grids[g].refine(&problem, &plan.map)?;
        grids.push(next);
        let guesses: Vec<f64> = todo
            .iter()
            .map(|&v| (16.0 * last[v].e - prev[v].e) / 15.0)
            .collect();
        let found = solve_grid(&grids[g + 1], &plan, &todo, Some(&guesses), acc)?;
        for (k, &v) in todo.iter().enumerate() {
            older[v] = Some(prev[v].e);
            prev[v] = last[v];
            last[v] = solved(&found[k], g + 1);
        }
        halvings += 1;
    }
    let mut levels = Vec::with_capacity(n_levels);
    let mut probed = Vec::with_capacity(if probe.is_some() { n_levels } else { 0 });
    let mut caches: Vec<Vec<f64>> = vec![Vec::new(); grids.len()];
    let mut converged = true;
    for v in 0..n_levels {
        let (a, b) = (prev[v], last[v]);
        let e = (16.0 * b.e - a.e) / 15.0;
        let inv_r2 = (16.0 * b.inv_r2 - a.inv_r2) / 15.0;
        let error = err(older[v], &a, &b);
        if error > tol {
            converged = false;
        }
        let grid = &grids[b.grid];
        let boundary_limited = !grid.decays_by(e, grid.len() - 1, 0.5 * decay);
        let (r_in, r_out) = turning_points(&problem, grid, e);
        let wants_state = settings.wavefunction_points > 0 || probe.is_some();
        if wants_state {
            level_state(grid, b.e, b.end, &mut psi);
        }
        if let Some(pr) = probe {
            let cache = &mut caches[b.grid];
            probed.push(expectations(grid, &psi, b.end, pr, cache));
        }
        let wavefunction = (settings.wavefunction_points > 0)
            .then(|| sample_wavefunction(grid, &psi[..=b.end], settings.wavefunction_points));
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
    let step_at_min = |g: &Grid| g.h * g.jac[g.imin];
    let set = LevelSet {
        mu_u,
        j: settings.j,
        minimum: potential.minimum(),
        limit_cm1: plan.limit.map(|l| l - plan.v_min),
        energy_max_cm1: plan.ceiling - plan.v_min,
        levels,
        grid: GridInfo {
            r_min_angstrom: plan.r_a,
            r_max_angstrom: grids[1].r[grids[1].len() - 1],
            mapped: plan.map.mapped,
            points_coarse: grids[1].len(),
            step_coarse_angstrom: step_at_min(&grids[1]),
            step_finest_angstrom: grids.last().map_or(0.0, step_at_min),
            halvings,
        },
        converged,
        limit_reached,
        notes: plan.notes,
    };
    Ok((set, probed))
}

/// Classical turning points of V_J at e (continuous curve, bracketed on the grid).
fn turning_points(problem: &Problem<'_>, grid: &Grid, e: f64) -> (f64, f64) {
    let f = |r: f64| problem.vj(r) - e;
    let i = grid.inner_turning_index(e);
    let r_in = if grid.vj[i] >= e && i < grid.imin {
        bisect(f, grid.r[i], grid.r[i + 1])
    } else {
        grid.r[i]
    };
    let o = grid.outer_turning_index(e);
    let r_out = if grid.vj[o] >= e && o > grid.imin {
        bisect(f, grid.r[o - 1], grid.r[o])
    } else {
        grid.r[o]
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
        r.push(grid.r[i]);
        p.push(sign * psi[i]);
        i += stride;
    }
    if (last - first) % stride != 0 {
        r.push(grid.r[last]);
        p.push(sign * psi[last]);
    }
    Wavefunction {
        r_angstrom: r,
        psi: p,
    }
}

/// Normalised wavefunctions of the levels of one curve on a common uniform grid.
pub(crate) struct CommonGridStates {
    pub(crate) energies: Vec<f64>,
    pub(crate) psi: Vec<Vec<f64>>,
}

/// Solve several problems on one uniform grid (union of their boxes, finest step / 2^halvings);
/// returns their states and the step in Å.
pub(crate) fn common_grid_states(
    problems: &[(&Problem<'_>, &SolverSettings)],
    halvings: u32,
) -> Result<(Vec<CommonGridStates>, f64)> {
    let plans = problems
        .iter()
        .map(|(p, s)| plan(p, s, false))
        .collect::<Result<Vec<_>>>()?;
    let r_a = plans.iter().map(|p| p.r_a).fold(f64::INFINITY, f64::min);
    let r_b = plans.iter().map(|p| p.r_b).fold(0.0, f64::max);
    let h = plans
        .iter()
        .map(|p| p.hx / (p.map.coef * p.map.k0.sqrt()))
        .fold(f64::INFINITY, f64::min)
        / f64::from(1u32 << halvings);
    if (r_b - r_a) / h > 4e6 {
        return Err(Error::parameter(
            "grid",
            "too many points for a common grid",
        ));
    }
    let mut out = Vec::new();
    for ((problem, s), plan) in problems.iter().zip(&plans) {
        // A uniform map with this problem's constant, stepping h Å per point.
        let map = Map {
            mapped: false,
            k0: 1.0,
            e_top: 0.0,
            floor: 0.0,
            re: 0.0,
            r1: 0.0,
            coef: 1.0,
        };
        let grid = Grid::new(problem, &map, r_a, r_b, h, 1)?;
        let mut n = count_levels(&grid, plan.ceiling);
        if let Some(mx) = s.max_levels {
            n = n.min(mx);
        }
        let all: Vec<usize> = (0..n).collect();
        let tol = (1e-4 * s.tolerance_cm1).max(1e-13 * (plan.ceiling - plan.v_min));
        let acc = Accuracy {
            decay: s.tail_decay,
            tol,
            energy_only: false,
        };
        let found = solve_grid(&grid, plan, &all, None, acc)?;
        let mut psi = Vec::with_capacity(n);
        let mut buf = Vec::new();
        for f in &found {
            level_state(&grid, f.e, f.end, &mut buf);
            let mut full = vec![0.0; grid.len()];
            full[1..f.end].copy_from_slice(&buf[1..f.end]);
            psi.push(full);
        }
        out.push(CommonGridStates {
            energies: found.iter().map(|f| f.e - plan.v_min).collect(),
            psi,
        });
    }
    Ok((out, h))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::potential::{Harmonic, Morse};

    /// A well holding about 25 000 levels below the ceiling (ωe = 4 cm⁻¹, E_max = 10⁵ cm⁻¹)
    /// stops early at a stated limit instead of running unbounded; the levels it keeps are
    /// right. SOURCE: closed form G(v) = ωe(v+½) for the harmonic oscillator (textbook).
    #[test]
    fn a_huge_level_count_stops_at_a_stated_limit() {
        let h = Harmonic::from_we(4.0, 1e6, 1.5).unwrap();
        let s = SolverSettings {
            energy_max_cm1: Some(1e5),
            wavefunction_points: 0,
            ..Default::default()
        };
        let set = solve_levels(&h, 1e6, &s).unwrap();
        let why = set.limit_reached.as_deref().unwrap();
        assert!(why.contains("limit"), "{why}");
        assert!(set.notes.iter().any(|n| n == why));
        assert!(!set.levels.is_empty() && set.levels.len() <= MAX_LEVELS);
        for l in set.levels.iter().take(5) {
            let g = 4.0 * (f64::from(l.v) + 0.5);
            assert!(
                (l.energy_cm1 - g).abs() < 1e-3,
                "v={}: {}",
                l.v,
                l.energy_cm1 - g
            );
        }
    }

    /// An absurd reduced mass (10³⁰⁰ u) is refused at the grid-size limit, quickly, with a
    /// message naming the limit (common practice, no source).
    #[test]
    fn an_absurd_mass_is_refused_at_the_grid_limit() {
        let m = Morse::new(25_000.0, 2.0, 2.0).unwrap();
        let e = solve_levels(&m, 1e300, &SolverSettings::default()).unwrap_err();
        let text = e.to_string();
        assert!(text.contains(&MAX_GRID_POINTS.to_string()), "{text}");
        assert!(text.contains("limit"), "{text}");
    }

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
