//! Franck–Condon factors |⟨v′|v″⟩|² between the bound levels of two potential curves.
//!
//! Both curves are solved on one common uniform grid (the union of their boxes, the finer of
//! their steps halved `halvings` times) by the Numerov solver of [`solver`](super::solver), and
//! the overlaps are the grid sums h Σ ψ′_i ψ″_i of the normalised wavefunctions (the rectangle
//! rule, spectrally accurate for functions that vanish at both ends). Intended for intensity
//! patterns (e.g. checks of the vibrational numbering), not for absolute band strengths: no
//! r-dependence of the transition moment is included.

use serde::{Deserialize, Serialize};

use super::Potential;
use super::solver::{Problem, SolverSettings, common_grid_states};
use crate::{Error, Result};

/// Controls of a Franck–Condon calculation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct FcfSettings {
    /// Settings for the upper state (J, energy ceiling, level cap, box, decay).
    pub upper: SolverSettings,
    /// Settings for the lower state.
    pub lower: SolverSettings,
    /// Step halvings below the finer of the two default steps (2 gives ≥ 48 points per
    /// shortest wavelength with the default 12).
    pub halvings: u32,
}

impl Default for FcfSettings {
    fn default() -> Self {
        Self {
            upper: SolverSettings::default(),
            lower: SolverSettings::default(),
            halvings: 2,
        }
    }
}

/// Franck–Condon factors between two sets of levels.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FcfTable {
    /// Upper-state level energies from their potential minimum, cm⁻¹ (index v′).
    pub upper_energies_cm1: Vec<f64>,
    /// Lower-state level energies from their potential minimum, cm⁻¹ (index v″).
    pub lower_energies_cm1: Vec<f64>,
    /// Overlap integrals ⟨v′|v″⟩ (signs follow the wavefunction convention: ψ positive in its
    /// innermost lobe), `overlaps[v′][v″]`.
    pub overlaps: Vec<Vec<f64>>,
    /// Franck–Condon factors |⟨v′|v″⟩|², `factors[v′][v″]`.
    pub factors: Vec<Vec<f64>>,
    /// Common grid step, Å.
    pub step_angstrom: f64,
}

/// Franck–Condon factors between the bound levels of `upper` and `lower` (same reduced mass
/// `mu_u`, u).
pub fn franck_condon_factors(
    upper: &dyn Potential,
    lower: &dyn Potential,
    mu_u: f64,
    settings: &FcfSettings,
) -> Result<FcfTable> {
    if settings.halvings > 6 {
        return Err(Error::parameter("halvings", "at most 6"));
    }
    let pu = Problem::new(upper, mu_u, settings.upper.j)?;
    let pl = Problem::new(lower, mu_u, settings.lower.j)?;
    let (states, h) = common_grid_states(
        &[(&pu, &settings.upper), (&pl, &settings.lower)],
        settings.halvings,
    )?;
    let (su, sl) = (&states[0], &states[1]);
    let sign = |psi: &[f64]| {
        let max = psi.iter().fold(0.0f64, |m, p| m.max(p.abs()));
        let first = psi
            .iter()
            .find(|p| p.abs() > 1e-5 * max)
            .copied()
            .unwrap_or(1.0);
        if first < 0.0 { -1.0 } else { 1.0 }
    };
    let su_sign: Vec<f64> = su.psi.iter().map(|p| sign(p)).collect();
    let sl_sign: Vec<f64> = sl.psi.iter().map(|p| sign(p)).collect();
    let mut overlaps = Vec::with_capacity(su.psi.len());
    for (a, sa) in su.psi.iter().zip(&su_sign) {
        let row: Vec<f64> = sl
            .psi
            .iter()
            .zip(&sl_sign)
            .map(|(b, sb)| sa * sb * h * a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>())
            .collect();
        overlaps.push(row);
    }
    let factors = overlaps
        .iter()
        .map(|row| row.iter().map(|o| o * o).collect())
        .collect();
    Ok(FcfTable {
        upper_energies_cm1: su.energies.clone(),
        lower_energies_cm1: sl.energies.clone(),
        overlaps,
        factors,
        step_angstrom: h,
    })
}
