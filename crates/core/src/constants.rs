//! Physical constants (CODATA 2022) and the derived constants of vibrational spectroscopy.
//!
//! One place for every constant, so that reports can state which set was used
//! ([`CODATA_YEAR`]). Exact SI-defining constants are exact; the rest carry CODATA 2022 values
//! and are checked against `scipy.constants` (SciPy 1.17, CODATA 2022) in `tests/oracles`.

/// Year of the CODATA adjustment all constants come from; printed in every export.
pub const CODATA_YEAR: u32 = 2022;

/// Speed of light in vacuum, m/s (exact).
pub const SPEED_OF_LIGHT_M_S: f64 = 299_792_458.0;
/// Planck constant, J s (exact).
pub const PLANCK_J_S: f64 = 6.626_070_15e-34;
/// Elementary charge, C (exact).
pub const ELEMENTARY_CHARGE_C: f64 = 1.602_176_634e-19;
/// Boltzmann constant, J/K (exact).
pub const BOLTZMANN_J_K: f64 = 1.380_649e-23;
/// Avogadro constant, 1/mol (exact).
pub const AVOGADRO_PER_MOL: f64 = 6.022_140_76e23;
/// Atomic mass constant (1 u), kg (CODATA 2022).
pub const ATOMIC_MASS_KG: f64 = 1.660_539_068_92e-27;
/// Electron mass, u (CODATA 2022).
pub const ELECTRON_MASS_U: f64 = 5.485_799_090_441e-4;
/// Hartree energy expressed as a wavenumber, cm⁻¹ (CODATA 2022).
pub const HARTREE_CM1: f64 = 219_474.631_363_14;
/// Bohr radius, Å (CODATA 2022).
pub const BOHR_ANGSTROM: f64 = 0.529_177_210_544;

/// ħ²/(2 u Å² hc) in cm⁻¹ u Å²: the one constant of vibrational spectroscopy.
///
/// With it B = C_U/(μ r²), the radial kinetic operator is −(C_U/μ) d²/dr², and 2μ/ħ² is μ/C_U
/// (μ in u, r in Å, energies in cm⁻¹). Value 16.857 629 17 for CODATA 2022.
pub const C_U_CM1_U_A2: f64 = PLANCK_J_S
    / (8.0
        * std::f64::consts::PI
        * std::f64::consts::PI
        * SPEED_OF_LIGHT_M_S
        * 100.0
        * ATOMIC_MASS_KG
        * 1e-20);

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: ../shared/domain.md §0 (computed there with scipy/pycodata): C_u = 16.857 629 17
    /// for CODATA 2022; also scipy.constants h/(8π²c·u·Å²) = 16.857629168087765. Tolerance 1e-12 rel.
    #[test]
    fn c_u_matches_codata_2022() {
        let expected = 16.857_629_168_087_765;
        assert!(
            (C_U_CM1_U_A2 - expected).abs() / expected < 1e-12,
            "{C_U_CM1_U_A2}"
        );
    }
}
