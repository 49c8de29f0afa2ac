//! Band heads to band origins.
//!
//! Within one band, ignoring centrifugal distortion, the lines lie at
//! ν = ν0 + (B′ + B″) m + (B′ − B″) m² (m = J + 1 in the R branch, m = −J in the P branch;
//! domain.md §1.2). The parabola turns at m_h = −(B′ + B″)/[2(B′ − B″)], the band head, and
//! ν_head − ν0 = −(B′ + B″)²/[4(B′ − B″)].
//!
//! **Which head.** With B′ < B″ (the upper state is the larger molecule, the usual case for an
//! excited state) m_h > 0: the head is formed in the **R branch**, above the origin, and the band
//! is shaded to the red. With B′ > B″, m_h < 0: a **P-branch** head below the origin, shaded to
//! the violet. The sign of B′ − B″ decides the side; the formula covers both.
//!
//! **Discrete J.** Lines exist at integer m only, so the highest (R) or lowest (P) line lies
//! within |B′ − B″|/4 of the continuous turning point, always on the origin's side. We take the
//! continuous value and add the σ of a uniform spread over that width, |B′ − B″|/(4√12), in
//! quadrature (for |B′ − B″| = 0.2 cm⁻¹ that is 0.014 cm⁻¹).
//!
//! B_v = Be ρ² − αe ρ³ (v + ½) for an isotopologue with ρ = (μ_ref/μ)^½ (domain.md §1.11).

use serde::{Deserialize, Serialize};

use crate::settings::StateRotation;
use crate::{Error, Result};

/// The branch that forms the head.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum HeadSide {
    /// R-branch head above the origin (B′ < B″; band shaded to the red).
    R,
    /// P-branch head below the origin (B′ > B″; band shaded to the violet).
    P,
}

/// Where the head lies relative to the origin.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct HeadOffset {
    /// ν_head − ν0, cm⁻¹ (positive for an R head).
    pub head_minus_origin_cm1: f64,
    /// m of the head (continuous turning point).
    pub m_head: f64,
    /// Branch forming the head.
    pub side: HeadSide,
    /// σ from taking the continuous turning point for the discrete head, |B′ − B″|/(4√12), cm⁻¹.
    pub discreteness_sigma_cm1: f64,
}

/// Head–origin offset of a band with rotational constants `b_upper_cm1` = B′_v′ and
/// `b_lower_cm1` = B″_v″.
pub fn head_offset(b_upper_cm1: f64, b_lower_cm1: f64) -> Result<HeadOffset> {
    if !(b_upper_cm1.is_finite()
        && b_upper_cm1 > 0.0
        && b_lower_cm1.is_finite()
        && b_lower_cm1 > 0.0)
    {
        return Err(Error::parameter(
            "bands.rotation",
            format!(
                "B′ = {b_upper_cm1} cm⁻¹ and B″ = {b_lower_cm1} cm⁻¹ must both be positive (B_v = Be − αe(v+½) turns negative at high v when αe is large)"
            ),
        ));
    }
    let sum = b_upper_cm1 + b_lower_cm1;
    let diff = b_upper_cm1 - b_lower_cm1;
    if diff.abs() <= 1e-9 * sum {
        return Err(Error::parameter(
            "bands.rotation",
            "B′ = B″: the branches do not turn, there is no band head",
        ));
    }
    Ok(HeadOffset {
        head_minus_origin_cm1: -sum * sum / (4.0 * diff),
        m_head: -sum / (2.0 * diff),
        side: if diff < 0.0 { HeadSide::R } else { HeadSide::P },
        discreteness_sigma_cm1: diff.abs() / (4.0 * 12f64.sqrt()),
    })
}

/// B_v of one state for an isotopologue with mass factor `rho`.
pub fn b_v(rot: &StateRotation, v: f64, rho: f64) -> f64 {
    rot.be_cm1 * rho * rho - rot.alpha_e_cm1 * rho.powi(3) * (v + 0.5)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: closed form — the head is the turning point of ν(m) = ν0 + (B′+B″)m + (B′−B″)m²
    /// (domain.md §1.2); checked against a dense scan of the parabola (tolerance 1e-9 cm⁻¹).
    #[test]
    fn head_is_the_turning_point_of_the_branch() {
        for (bu, bl) in [(0.8190, 1.4456), (0.029, 0.0373), (1.9, 1.5)] {
            let h = head_offset(bu, bl).expect("head");
            let nu = |m: f64| (bu + bl) * m + (bu - bl) * m * m;
            let ext = if bu < bl {
                (0..2_000_001)
                    .map(|i| nu(i as f64 * 1e-3))
                    .fold(f64::MIN, f64::max)
            } else {
                (0..2_000_001)
                    .map(|i| nu(-(i as f64) * 1e-3))
                    .fold(f64::MAX, f64::min)
            };
            assert!((h.head_minus_origin_cm1 - ext).abs() < 1e-6, "{bu} {bl}");
            assert_eq!(h.side, if bu < bl { HeadSide::R } else { HeadSide::P });
        }
        assert!(head_offset(1.0, 1.0).is_err());
        assert!(head_offset(-1.0, 1.0).is_err());
    }
}
