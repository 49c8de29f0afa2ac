//! Potential-energy curves of a diatomic molecule and the radial Schrödinger equation on them.
//!
//! This module closes the loop from fitted constants back to levels:
//!
//! - [`analytic`]: test forms with known answers — [`Harmonic`], [`Morse`], [`LennardJones`];
//! - [`rkr`]: first-order RKR turning points from G(v) and B(v) (Klein f and g integrals), the
//!   [`RkrPotential`] built on them with both walls extended, and
//!   [`potential_from_constants`] (RKR + Morse turning points from ωe, ωexe, Be, αe, … with the
//!   RKR curve solved back);
//! - [`pointwise`]: a potential given point by point (e.g. from a quantum-chemistry
//!   calculation), interpolated by a cubic spline and extended beyond its ends;
//! - [`solver`]: all bound levels of any [`Potential`] for a given J (energies, B_v, turning
//!   points, wavefunctions), by Numerov on a wavelength-mapped grid with Sturm counting, Cooley
//!   correction and Richardson extrapolation in the step, with an error estimate per level;
//! - [`compare`]: observed − calculated levels and B_v, χ² and a plain-language verdict
//!   ([`rkr_loop_check`] does constants → RKR → levels → verdict in one call);
//! - [`mlr`]: the Morse/long-range form with its closed-form parameter derivatives, and [`dpf`]:
//!   the direct fit of it to observed levels (Hellmann–Feynman derivatives from the solver);
//! - [`fcf`]: Franck–Condon factors between the levels of two potentials;
//! - [`PotentialSpec`]: any of these curves as plain (serde) data, built with `build()`.
//!
//! Units throughout: r in Å, V and energies in cm⁻¹, μ in u. The kinetic operator is
//! −(C_u/μ) d²/dr² with C_u = [`C_U_CM1_U_A2`](crate::constants::C_U_CM1_U_A2).

pub mod analytic;
pub mod compare;
pub mod dpf;
pub mod fcf;
pub mod mlr;
pub mod pointwise;
mod quadrature;
pub mod rkr;
pub mod solver;
pub mod spline;
pub mod walls;

pub use analytic::{Harmonic, LennardJones, Morse};
pub use compare::{Alignment, LoopCheck, LoopRow, Verdict, compare_levels, rkr_loop_check};
pub use fcf::{FcfSettings, FcfTable, franck_condon_factors};
pub use mlr::{LongRangeTerm, Mlr};
pub use pointwise::{EnergyUnit, LengthUnit, PointwisePotential, parse_two_column};
pub use rkr::{
    ConstantsLevel, ConstantsPotential, DiatomicConstants, MAX_V_MAX, RkrCurve, RkrInput, RkrPoint,
    RkrPotential, RotationInput, potential_from_constants, rkr_turning_points,
};
pub use solver::{BoundLevel, GridInfo, LevelSet, SolverSettings, Wavefunction, solve_levels};
pub use walls::{OuterWall, WallFit};

use serde::{Deserialize, Serialize};

/// Position and depth of the bottom of a potential well.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct WellMinimum {
    /// Equilibrium distance r_e, Å.
    pub r_angstrom: f64,
    /// Potential energy at the minimum, cm⁻¹ (on the potential's own energy scale).
    pub energy_cm1: f64,
}

/// A radial potential-energy curve V(r) of a diatomic molecule.
///
/// V is in cm⁻¹ on the curve's own energy scale (Morse: 0 at the minimum; Lennard-Jones: 0 at
/// dissociation; a pointwise curve: whatever the user gave). Everything reported by the solver
/// is measured from [`Potential::minimum`].
pub trait Potential {
    /// V(r) in cm⁻¹ at r in Å (r > 0).
    fn energy_cm1(&self, r_angstrom: f64) -> f64;

    /// dV/dr in cm⁻¹/Å. The default is a central difference; analytic forms override it.
    fn derivative_cm1_per_angstrom(&self, r_angstrom: f64) -> f64 {
        let h = 1e-5 * r_angstrom.abs().max(1e-3);
        (self.energy_cm1(r_angstrom + h) - self.energy_cm1(r_angstrom - h)) / (2.0 * h)
    }

    /// The bottom of the well (the global minimum for r > 0).
    fn minimum(&self) -> WellMinimum;

    /// V(r → ∞) in cm⁻¹ when the curve dissociates to a finite limit; `None` when it rises
    /// without bound (harmonic) or its long-range behaviour is not known.
    fn asymptote_cm1(&self) -> Option<f64>;
}

/// A potential curve described as plain data (for session documents and the page): build it
/// with [`PotentialSpec::build`].
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum PotentialSpec {
    /// ½ k (r − r_e)².
    Harmonic(Harmonic),
    /// D_e [1 − e^{−a(r−r_e)}]².
    Morse(Morse),
    /// D_e/(n − m) [m (r_e/r)ⁿ − n (r_e/r)^m].
    LennardJones(LennardJones),
    /// Morse/long-range: a Morse-like well with the long-range tail De − Σ C_m/r^m.
    Mlr(Mlr),
    /// A table (r Å, V cm⁻¹) interpolated by a cubic spline, walls extended.
    Pointwise {
        /// The points.
        points: Vec<(f64, f64)>,
        /// Outer-wall extension.
        #[serde(default)]
        outer: OuterWall,
    },
    /// First-order RKR from G(v) and B(v), up to `v_max`.
    Rkr {
        /// G(v), B(v) and μ.
        input: RkrInput,
        /// Highest v of the turning points.
        v_max: f64,
        /// Outer-wall extension.
        #[serde(default)]
        outer: OuterWall,
    },
}

impl PotentialSpec {
    /// Validate the parameters and build the curve.
    pub fn build(&self) -> crate::Result<Box<dyn Potential>> {
        Ok(match self {
            PotentialSpec::Harmonic(h) => {
                Box::new(Harmonic::new(h.k_cm1_per_angstrom2, h.re_angstrom)?)
            }
            PotentialSpec::Morse(m) => {
                Box::new(Morse::new(m.de_cm1, m.a_per_angstrom, m.re_angstrom)?)
            }
            PotentialSpec::LennardJones(l) => {
                Box::new(LennardJones::new(l.de_cm1, l.re_angstrom, l.n, l.m)?)
            }
            PotentialSpec::Mlr(m) => {
                m.validate()?;
                Box::new(m.clone())
            }
            PotentialSpec::Pointwise { points, outer } => {
                Box::new(PointwisePotential::new(points, *outer)?)
            }
            PotentialSpec::Rkr {
                input,
                v_max,
                outer,
            } => Box::new(RkrPotential::new(input, *v_max, *outer)?),
        })
    }
}
