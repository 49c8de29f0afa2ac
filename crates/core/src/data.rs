//! Clean observation types: what the analyses consume once intake has validated a table.
//!
//! Intake (`crate::intake`) turns text into rows with a status; the rows that are usable become
//! these plain values, all energies already converted to vacuum wavenumbers (cm⁻¹).

use serde::{Deserialize, Serialize};

/// One vibrational level energy G(v) or T(v), in cm⁻¹.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Level {
    /// Vibrational quantum number as assigned by the user.
    pub v: u32,
    /// Level energy (relative to any fixed origin; the fits carry a free offset), cm⁻¹.
    pub energy_cm1: f64,
    /// One-standard-deviation uncertainty, cm⁻¹; `None` when the table gave none.
    pub sigma_cm1: Option<f64>,
    /// Rotational constant B_v of this level, cm⁻¹, when given.
    pub b_cm1: Option<f64>,
    /// Isotopologue tag (e.g. `"1H-35Cl"`), when given.
    pub isotopologue: Option<String>,
}

/// One vibrational spacing ΔG_{v+½} = G(v+1) − G(v), in cm⁻¹, keyed by the lower level v.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Spacing {
    /// Lower level of the pair; the spacing is plotted at x = v + ½.
    pub v_lower: u32,
    /// ΔG_{v+½}, cm⁻¹.
    pub spacing_cm1: f64,
    /// One-standard-deviation uncertainty, cm⁻¹; `None` when the table gave none.
    pub sigma_cm1: Option<f64>,
    /// Isotopologue tag, when given.
    pub isotopologue: Option<String>,
}

/// One band position ν(v′, v″) in cm⁻¹ (vacuum wavenumber).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Band {
    /// Upper-state vibrational quantum number v′.
    pub v_upper: u32,
    /// Lower-state vibrational quantum number v″.
    pub v_lower: u32,
    /// Band origin (or head, if the data set says so), cm⁻¹.
    pub position_cm1: f64,
    /// One-standard-deviation uncertainty, cm⁻¹; `None` when the table gave none.
    pub sigma_cm1: Option<f64>,
    /// Isotopologue tag, when given.
    pub isotopologue: Option<String>,
}
