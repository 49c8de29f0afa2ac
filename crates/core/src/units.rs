//! Units of energy, frequency and wavelength, and their conversion to vacuum wavenumbers (cm⁻¹).
//!
//! Inside core every energy is a vacuum wavenumber in cm⁻¹. This module converts the units that
//! spectroscopic tables arrive in: cm⁻¹, eV, meV, GHz, MHz, THz, kJ/mol, kcal/mol
//! (thermochemical calorie, 4.184 J), K (energy / Boltzmann constant), hartree, and wavelengths in
//! nm or Å measured in vacuum or in standard air.
//!
//! Every factor is derived from [`crate::constants`] (CODATA [`crate::constants::CODATA_YEAR`]);
//! none is typed in here.
//!
//! ## Air wavelengths
//! Air wavelengths are converted to vacuum with the dispersion formula of **B. Edlén, "The
//! refractive index of air", Metrologia 2, 71–80 (1966)** for standard air (dry air at 15 °C,
//! 101 325 Pa, 0.03 % CO₂) — as far as we recall (from memory) also the form behind the IAU
//! air/vacuum convention:
//!
//! (n − 1)·10⁸ = 8342.54 + 2 406 147 / (130 − σ²) + 15 998 / (38.9 − σ²),
//!
//! with σ the **vacuum** wavenumber in µm⁻¹ (coefficients from memory; checked in the tests against
//! tabulated air and vacuum wavelengths of the sodium D lines and Hα, also from memory).
//! Because σ is the vacuum wavenumber, λ_vac = n(σ_vac)·λ_air is solved by fixed-point iteration.
//! By convention [common practice, no source] wavelengths below 200 nm are quoted in vacuum, and
//! the formula was fitted to data above about 200 nm; air wavelengths below 200 nm are refused.

use std::fmt;

use serde::{Deserialize, Serialize};

use crate::constants::{
    AVOGADRO_PER_MOL, BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, HARTREE_CM1, PLANCK_J_S,
    SPEED_OF_LIGHT_M_S,
};
use crate::error::{Error, Result};

/// The thermochemical calorie, J (exact by definition; the 4.1868 J "IT" calorie is not used).
pub const CALORIE_THERMOCHEMICAL_J: f64 = 4.184;

/// hc in J·cm: converts an energy in J to a wavenumber in cm⁻¹ by division.
const HC_J_CM: f64 = PLANCK_J_S * SPEED_OF_LIGHT_M_S * 100.0;

/// Shortest air wavelength accepted, in Å (200 nm; see the module documentation).
pub const AIR_WAVELENGTH_MIN_ANGSTROM: f64 = 2000.0;

/// Where a wavelength was measured.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Medium {
    /// In vacuum.
    Vacuum,
    /// In standard air (Edlén 1966).
    Air,
}

/// A unit in which an energy, a frequency or a wavelength is given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(try_from = "String", into = "String")]
pub enum Unit {
    /// Wavenumber, cm⁻¹ (the unit of core).
    Cm1,
    /// Electronvolt.
    ElectronVolt,
    /// Millielectronvolt.
    MilliElectronVolt,
    /// Frequency, GHz (E = hν).
    Gigahertz,
    /// Frequency, MHz.
    Megahertz,
    /// Frequency, THz.
    Terahertz,
    /// Energy per mole, kJ/mol.
    KilojoulePerMole,
    /// Energy per mole, kcal/mol (thermochemical calorie).
    KilocaloriePerMole,
    /// Energy expressed as a temperature, K (E/k_B).
    Kelvin,
    /// Hartree (atomic unit of energy).
    Hartree,
    /// Wavelength in nm, in the given medium.
    Nanometre(Medium),
    /// Wavelength in Å, in the given medium.
    Angstrom(Medium),
}

/// Every unit, in the order shown to users.
pub const ALL_UNITS: [Unit; 14] = [
    Unit::Cm1,
    Unit::ElectronVolt,
    Unit::MilliElectronVolt,
    Unit::Gigahertz,
    Unit::Megahertz,
    Unit::Terahertz,
    Unit::KilojoulePerMole,
    Unit::KilocaloriePerMole,
    Unit::Kelvin,
    Unit::Hartree,
    Unit::Nanometre(Medium::Vacuum),
    Unit::Nanometre(Medium::Air),
    Unit::Angstrom(Medium::Vacuum),
    Unit::Angstrom(Medium::Air),
];

/// What a unit text said: a complete unit, or a wavelength whose medium was not stated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UnitText {
    /// A complete unit.
    Unit(Unit),
    /// nm or Å with no air/vacuum word: the medium must come from elsewhere.
    WavelengthNoMedium {
        /// True for Å, false for nm.
        angstrom: bool,
    },
}

impl Unit {
    /// The canonical ASCII token, used on the command line, in JSON and in the docs.
    pub fn token(self) -> &'static str {
        match self {
            Unit::Cm1 => "cm-1",
            Unit::ElectronVolt => "eV",
            Unit::MilliElectronVolt => "meV",
            Unit::Gigahertz => "GHz",
            Unit::Megahertz => "MHz",
            Unit::Terahertz => "THz",
            Unit::KilojoulePerMole => "kJ/mol",
            Unit::KilocaloriePerMole => "kcal/mol",
            Unit::Kelvin => "K",
            Unit::Hartree => "hartree",
            Unit::Nanometre(Medium::Vacuum) => "nm-vac",
            Unit::Nanometre(Medium::Air) => "nm-air",
            Unit::Angstrom(Medium::Vacuum) => "A-vac",
            Unit::Angstrom(Medium::Air) => "A-air",
        }
    }

    /// A typographic label for people (e.g. `cm⁻¹`, `nm (air)`).
    pub fn label(self) -> &'static str {
        match self {
            Unit::Cm1 => "cm⁻¹",
            Unit::ElectronVolt => "eV",
            Unit::MilliElectronVolt => "meV",
            Unit::Gigahertz => "GHz",
            Unit::Megahertz => "MHz",
            Unit::Terahertz => "THz",
            Unit::KilojoulePerMole => "kJ/mol",
            Unit::KilocaloriePerMole => "kcal/mol (thermochemical)",
            Unit::Kelvin => "K",
            Unit::Hartree => "hartree",
            Unit::Nanometre(Medium::Vacuum) => "nm (vacuum)",
            Unit::Nanometre(Medium::Air) => "nm (standard air)",
            Unit::Angstrom(Medium::Vacuum) => "Å (vacuum)",
            Unit::Angstrom(Medium::Air) => "Å (standard air)",
        }
    }

    /// True for wavelength units (converted by 1/λ, not by a factor).
    pub fn is_wavelength(self) -> bool {
        matches!(self, Unit::Nanometre(_) | Unit::Angstrom(_))
    }

    /// The value of one of this unit in cm⁻¹, for units proportional to energy; `None` for
    /// wavelengths. Derived from the CODATA constants of [`crate::constants`].
    pub fn cm1_per_unit(self) -> Option<f64> {
        let f = match self {
            Unit::Cm1 => 1.0,
            Unit::ElectronVolt => ELEMENTARY_CHARGE_C / HC_J_CM,
            Unit::MilliElectronVolt => 1e-3 * ELEMENTARY_CHARGE_C / HC_J_CM,
            Unit::Gigahertz => 1e9 / (SPEED_OF_LIGHT_M_S * 100.0),
            Unit::Megahertz => 1e6 / (SPEED_OF_LIGHT_M_S * 100.0),
            Unit::Terahertz => 1e12 / (SPEED_OF_LIGHT_M_S * 100.0),
            Unit::KilojoulePerMole => 1e3 / (AVOGADRO_PER_MOL * HC_J_CM),
            Unit::KilocaloriePerMole => {
                1e3 * CALORIE_THERMOCHEMICAL_J / (AVOGADRO_PER_MOL * HC_J_CM)
            }
            Unit::Kelvin => BOLTZMANN_J_K / HC_J_CM,
            Unit::Hartree => HARTREE_CM1,
            Unit::Nanometre(_) | Unit::Angstrom(_) => return None,
        };
        Some(f)
    }

    /// Converts an energy, frequency or wavelength to a vacuum wavenumber in cm⁻¹.
    ///
    /// Wavelengths must be positive (and, in air, at least 200 nm); other units accept any
    /// finite value. Errors name the parameter `value`.
    pub fn to_cm1(self, value: f64) -> Result<f64> {
        if !value.is_finite() {
            return Err(Error::parameter(
                "value",
                format!("{value} is not a finite number"),
            ));
        }
        if let Some(f) = self.cm1_per_unit() {
            return Ok(value * f);
        }
        let lambda_vac_a = self.vacuum_angstrom(value)?;
        Ok(1e8 / lambda_vac_a)
    }

    /// Converts a vacuum wavenumber in cm⁻¹ to this unit (inverse of [`Unit::to_cm1`]).
    pub fn from_cm1(self, cm1: f64) -> Result<f64> {
        if !cm1.is_finite() {
            return Err(Error::parameter(
                "value",
                format!("{cm1} cm⁻¹ is not a finite number"),
            ));
        }
        if let Some(f) = self.cm1_per_unit() {
            return Ok(cm1 / f);
        }
        if cm1 <= 0.0 {
            return Err(Error::parameter(
                "value",
                format!("{cm1} cm⁻¹ has no wavelength (a wavelength needs a positive wavenumber)"),
            ));
        }
        let vac_a = 1e8 / cm1;
        let a = match self {
            Unit::Nanometre(Medium::Vacuum) | Unit::Angstrom(Medium::Vacuum) => vac_a,
            _ => vacuum_to_air_angstrom(vac_a)?,
        };
        Ok(match self {
            Unit::Nanometre(_) => a / 10.0,
            _ => a,
        })
    }

    /// Converts a one-standard-deviation uncertainty `sigma` of `value` (both in this unit) to
    /// cm⁻¹. For wavelengths the uncertainty is propagated through 1/λ (and the air dispersion)
    /// by a central difference of width ±σ: σ_ν = |ν(λ−σ) − ν(λ+σ)|/2.
    pub fn sigma_to_cm1(self, value: f64, sigma: f64) -> Result<f64> {
        if !sigma.is_finite() {
            return Err(Error::parameter(
                "sigma",
                format!("{sigma} is not a finite number"),
            ));
        }
        if let Some(f) = self.cm1_per_unit() {
            return Ok(sigma * f);
        }
        if sigma >= value {
            return Err(Error::parameter(
                "sigma",
                format!("uncertainty {sigma} is not smaller than the wavelength {value}"),
            ));
        }
        let lo = self.to_cm1(value - sigma)?;
        let hi = self.to_cm1(value + sigma)?;
        Ok((lo - hi).abs() / 2.0)
    }

    /// Vacuum wavelength in Å of a wavelength given in this (wavelength) unit.
    fn vacuum_angstrom(self, value: f64) -> Result<f64> {
        if value <= 0.0 {
            return Err(Error::parameter(
                "value",
                format!("a wavelength must be positive, got {value}"),
            ));
        }
        match self {
            Unit::Nanometre(Medium::Vacuum) => Ok(value * 10.0),
            Unit::Angstrom(Medium::Vacuum) => Ok(value),
            Unit::Nanometre(Medium::Air) => air_to_vacuum_angstrom(value * 10.0),
            Unit::Angstrom(Medium::Air) => air_to_vacuum_angstrom(value),
            _ => Err(Error::parameter(
                "unit",
                format!("{} is not a wavelength", self.label()),
            )),
        }
    }

    /// Reads a unit written by a person or a program: `cm-1`, `cm^-1`, `cm⁻¹`, `1/cm`, `eV`,
    /// `meV`, `GHz`, `MHz`, `THz`, `kJ/mol`, `kJ mol-1`, `kcal/mol`, `K`, `hartree`, `Eh`, and
    /// wavelengths `nm`/`Å`/`A`/`angstrom` with a medium word (`nm-air`, `nm air`, `Å (vac)`,
    /// `nm, vacuum`). Case is ignored except that `MeV` (mega-electronvolt) is refused.
    ///
    /// A wavelength without a medium is an error here (the result would be ambiguous by about
    /// 3 parts in 10⁴); use [`parse_unit_text`] to accept it partially.
    pub fn parse(text: &str) -> Result<Unit> {
        match parse_unit_text(text) {
            Some(UnitText::Unit(u)) => Ok(u),
            Some(UnitText::WavelengthNoMedium { angstrom }) => {
                let (a, b) = if angstrom {
                    ("A-air", "A-vac")
                } else {
                    ("nm-air", "nm-vac")
                };
                Err(Error::parameter(
                    "unit",
                    format!(
                        "'{}' is a wavelength unit: say whether it was measured in air or in \
                         vacuum (e.g. {a} or {b})",
                        text.trim()
                    ),
                ))
            }
            None => Err(Error::parameter(
                "unit",
                format!(
                    "'{}' is not a unit Rungs knows; known units: {}",
                    text.trim(),
                    unit_list()
                ),
            )),
        }
    }
}

/// The known unit tokens, comma-separated, for messages.
pub fn unit_list() -> String {
    ALL_UNITS
        .iter()
        .map(|u| u.token())
        .collect::<Vec<_>>()
        .join(", ")
}

impl fmt::Display for Unit {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.token())
    }
}

impl From<Unit> for String {
    fn from(u: Unit) -> String {
        u.token().to_string()
    }
}

/// Read from documents: the message alone, since the document reader names the key itself.
impl TryFrom<String> for Unit {
    type Error = String;
    fn try_from(s: String) -> std::result::Result<Unit, String> {
        Unit::parse(&s).map_err(|e| e.detail())
    }
}

impl std::str::FromStr for Unit {
    type Err = Error;
    fn from_str(s: &str) -> Result<Unit> {
        Unit::parse(s)
    }
}

/// Reads a unit text leniently (see [`Unit::parse`]); `None` when it is not a unit at all.
pub fn parse_unit_text(text: &str) -> Option<UnitText> {
    let squeezed: String = text.chars().filter(|c| !c.is_whitespace()).collect();
    if squeezed == "MeV" || squeezed.is_empty() {
        return None;
    }
    let mut s = squeezed
        .to_lowercase()
        .replace(['−', '–'], "-")
        .replace("⁻¹", "-1")
        .replace("**", "")
        .replace(['^', '{', '}', '·', '*'], "");
    // Medium words, for wavelengths.
    let mut medium = None;
    for (word, m) in [
        ("vacuum", Medium::Vacuum),
        ("vac", Medium::Vacuum),
        ("air", Medium::Air),
    ] {
        if let Some(pos) = s.find(word) {
            if medium.is_some_and(|old| old != m) {
                return None;
            }
            medium = Some(m);
            s.replace_range(pos..pos + word.len(), "");
        }
    }
    if medium.is_some() {
        s = s.replace("in", "");
        s.retain(|c| !matches!(c, ',' | '(' | ')' | '[' | ']' | '_' | '-' | '.' | ';' | ':'));
    }
    let wavelength = match s.as_str() {
        "nm" | "nanometre" | "nanometer" | "nanometres" | "nanometers" => Some(false),
        "å" | "a" | "angstrom" | "ångström" | "ang" | "angstroms" => Some(true),
        _ => None,
    };
    if let Some(angstrom) = wavelength {
        return Some(match (angstrom, medium) {
            (false, Some(m)) => UnitText::Unit(Unit::Nanometre(m)),
            (true, Some(m)) => UnitText::Unit(Unit::Angstrom(m)),
            (a, None) => UnitText::WavelengthNoMedium { angstrom: a },
        });
    }
    if medium.is_some() {
        return None;
    }
    let unit = match s.as_str() {
        "cm-1" | "cm1" | "1/cm" | "/cm" => Unit::Cm1,
        "ev" | "electronvolt" | "electronvolts" => Unit::ElectronVolt,
        "mev" | "millielectronvolt" => Unit::MilliElectronVolt,
        "ghz" => Unit::Gigahertz,
        "mhz" => Unit::Megahertz,
        "thz" => Unit::Terahertz,
        "kj/mol" | "kjmol-1" | "kj/mole" | "kjpermol" => Unit::KilojoulePerMole,
        "kcal/mol" | "kcalmol-1" | "kcal/mole" | "kcalpermol" => Unit::KilocaloriePerMole,
        "k" | "kelvin" => Unit::Kelvin,
        "hartree" | "hartrees" | "eh" | "e_h" => Unit::Hartree,
        _ => return None,
    };
    Some(UnitText::Unit(unit))
}

/// Refractive index of standard air at a vacuum wavenumber `sigma_um_inv` (µm⁻¹), by Edlén (1966)
/// (see the module documentation).
pub fn refractive_index_standard_air(sigma_um_inv: f64) -> f64 {
    let s2 = sigma_um_inv * sigma_um_inv;
    1.0 + (8342.54 + 2_406_147.0 / (130.0 - s2) + 15_998.0 / (38.9 - s2)) * 1e-8
}

/// Converts a wavelength measured in standard air (Å) to vacuum (Å): λ_vac = n(σ_vac)·λ_air,
/// solved by fixed-point iteration (converges in a few steps since n − 1 ≈ 3·10⁻⁴).
pub fn air_to_vacuum_angstrom(lambda_air_a: f64) -> Result<f64> {
    if !lambda_air_a.is_finite() || lambda_air_a < AIR_WAVELENGTH_MIN_ANGSTROM {
        return Err(Error::parameter(
            "wavelength",
            format!(
                "air wavelength {lambda_air_a} Å is outside the range of the air dispersion \
                 formula (at least {} nm; shorter wavelengths are quoted in vacuum)",
                AIR_WAVELENGTH_MIN_ANGSTROM / 10.0
            ),
        ));
    }
    let mut vac = lambda_air_a;
    for _ in 0..50 {
        let next = lambda_air_a * refractive_index_standard_air(1e4 / vac);
        if (next - vac).abs() <= 1e-15 * next {
            return Ok(next);
        }
        vac = next;
    }
    Ok(vac)
}

/// Converts a vacuum wavelength (Å) to standard air (Å): λ_air = λ_vac / n(σ_vac).
pub fn vacuum_to_air_angstrom(lambda_vac_a: f64) -> Result<f64> {
    if !lambda_vac_a.is_finite() || lambda_vac_a <= 0.0 {
        return Err(Error::parameter(
            "wavelength",
            format!("vacuum wavelength {lambda_vac_a} Å must be positive"),
        ));
    }
    let air = lambda_vac_a / refractive_index_standard_air(1e4 / lambda_vac_a);
    if air < AIR_WAVELENGTH_MIN_ANGSTROM {
        return Err(Error::parameter(
            "wavelength",
            format!(
                "vacuum wavelength {lambda_vac_a} Å is below {} nm, where wavelengths are not \
                 quoted in air",
                AIR_WAVELENGTH_MIN_ANGSTROM / 10.0
            ),
        ));
    }
    Ok(air)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: tabulated wavelengths of the sodium D lines and hydrogen Hα, from memory:
    /// Na D2 5889.950 Å (air) / 5891.583 Å (vacuum); Na D1 5895.924 Å (air) / 5897.558 Å (vac);
    /// Hα 6562.80 Å (air) / 6564.61 Å (vacuum). Tolerance: half a unit of the last quoted digit
    /// plus 0.5 mÅ for the rounding of the tabulated pair (≤ 0.002 Å for D, 0.011 Å for Hα).
    #[test]
    fn air_to_vacuum_matches_tabulated_lines() {
        for (air, vac, tol) in [
            (5889.950, 5891.583, 0.002),
            (5895.924, 5897.558, 0.002),
            (6562.80, 6564.61, 0.011),
        ] {
            let got = air_to_vacuum_angstrom(air).expect("in range");
            assert!(
                (got - vac).abs() < tol,
                "air {air} -> {got}, expected {vac}"
            );
            let back = vacuum_to_air_angstrom(got).expect("in range");
            assert!((back - air).abs() < 1e-9, "round trip {air} -> {back}");
        }
    }

    /// SOURCE: the D-line air/vacuum differences above imply n − 1 ≈ 2.77·10⁻⁴ near 589 nm
    /// (1.633 Å / 5889.95 Å, from memory); tolerance 1 % of n − 1.
    #[test]
    fn refractive_index_near_sodium_d() {
        let n = refractive_index_standard_air(1e4 / 5891.583);
        assert!(((n - 1.0) / 2.772e-4 - 1.0).abs() < 0.01, "n = {n}");
    }

    #[test]
    fn air_below_200_nm_is_refused() {
        assert!(air_to_vacuum_angstrom(1999.0).is_err());
        assert!(Unit::Nanometre(Medium::Air).to_cm1(150.0).is_err());
        assert!(Unit::Nanometre(Medium::Vacuum).to_cm1(150.0).is_ok());
    }

    /// SOURCE: definition ν̃ = 1/λ (closed form): 500 nm in vacuum is 20 000 cm⁻¹ exactly
    /// (to rounding, 1e-12 relative).
    #[test]
    fn vacuum_wavelength_is_reciprocal() {
        let v = Unit::Nanometre(Medium::Vacuum).to_cm1(500.0).expect("ok");
        assert!((v - 20_000.0).abs() < 2e-8);
        let a = Unit::Angstrom(Medium::Vacuum).to_cm1(5000.0).expect("ok");
        assert!((a - 20_000.0).abs() < 2e-8);
    }

    /// SOURCE: closed form — for ν = 1e7/λ, dν/dλ = −1e7/λ²; at 500 nm, σ_λ = 0.01 nm gives
    /// σ_ν = 0.4 cm⁻¹ (to 1e-6 relative; the central difference is exact to O(σ²/λ²)).
    #[test]
    fn wavelength_sigma_propagates_through_reciprocal() {
        let s = Unit::Nanometre(Medium::Vacuum)
            .sigma_to_cm1(500.0, 0.01)
            .expect("ok");
        assert!((s - 0.4).abs() < 0.4e-6, "{s}");
        assert!(
            Unit::Nanometre(Medium::Vacuum)
                .sigma_to_cm1(1.0, 2.0)
                .is_err()
        );
    }

    #[test]
    fn every_token_parses_back_to_its_unit() {
        for u in ALL_UNITS {
            assert_eq!(
                Unit::parse(u.token()).expect("token parses"),
                u,
                "{}",
                u.token()
            );
            let x = 5432.1;
            let back = u.from_cm1(u.to_cm1(x).expect("to")).expect("from");
            assert!((back - x).abs() < 1e-9 * x, "{u}: {back}");
        }
    }

    #[test]
    fn lenient_spellings() {
        let cases = [
            ("cm^-1", Unit::Cm1),
            ("cm⁻¹", Unit::Cm1),
            ("1/cm", Unit::Cm1),
            ("CM-1", Unit::Cm1),
            ("ev", Unit::ElectronVolt),
            ("meV", Unit::MilliElectronVolt),
            ("kJ mol-1", Unit::KilojoulePerMole),
            ("kJ·mol⁻¹", Unit::KilojoulePerMole),
            ("kcal/mol", Unit::KilocaloriePerMole),
            ("Eh", Unit::Hartree),
            ("nm, air", Unit::Nanometre(Medium::Air)),
            ("Å (vac)", Unit::Angstrom(Medium::Vacuum)),
            ("air nm", Unit::Nanometre(Medium::Air)),
            ("nm in vacuum", Unit::Nanometre(Medium::Vacuum)),
            ("A_air", Unit::Angstrom(Medium::Air)),
        ];
        for (text, unit) in cases {
            assert_eq!(Unit::parse(text).expect(text), unit, "{text}");
        }
        assert!(Unit::parse("MeV").is_err());
        assert!(Unit::parse("furlong").is_err());
        let e = Unit::parse("nm").expect_err("no medium");
        assert!(e.to_string().contains("air or in vacuum"), "{e}");
        assert!(parse_unit_text("nm air vac").is_none());
    }
}
