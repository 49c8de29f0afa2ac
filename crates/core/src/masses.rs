//! Atomic masses of nuclides, nuclide labels, and the reduced mass of a diatomic molecule.
//!
//! Masses are the AME 2020 atomic masses (neutral atoms, in u), taken from the generated table
//! the generated `masses_table` module (written by `scripts/gen_masses.py` from the `periodictable` package).
//! It holds, for H … Xe, Cs, Hg, Pb and U, every nuclide with a natural abundance and every
//! radionuclide with a half-life of at least one day (half-lives from the `radioactivedecay`
//! package: ICRP 107 / NUBASE 2020), e.g. ³H, ¹⁴C, ⁹⁹Tc, ¹²⁹I, ¹³⁷Cs, ²³⁵U; shorter-lived
//! nuclides are refused as unknown. By convention the reduced mass of a neutral molecule is
//! formed from atomic (not nuclear) masses [common practice].
//!
//! ## Nuclide labels
//! A label names one atom; spaces around it are ignored and element symbols (or English names)
//! are matched without regard to case:
//!
//! | form | examples | meaning |
//! |---|---|---|
//! | mass number, then symbol | `35Cl`, `³⁵Cl`, `^35Cl`, `35-Cl`, `1H` | that isotope |
//! | symbol, hyphen, mass number | `Cl-35`, `U-235`, `chlorine-35` | that isotope |
//! | symbol, then a mass number of two or more digits | `Cl35`, `C13`, `U235` | that isotope |
//! | `D`, `T` | `D`, `T` | ²H, ³H |
//! | symbol alone | `H`, `Na`, `I`, `Cs` | ¹H for `H`; otherwise only for elements with a single natural isotope |
//! | a mass in u with a decimal point (only where a mass is asked for) | `34.96885` | that mass |
//!
//! A symbol followed directly by a single digit (`H2`, `Li7`, `O2`) is refused: it reads like a
//! molecular formula. A bare integer (`35`) is refused as well: it looks like a mass number.

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};
use crate::masses_table::{ELEMENTS, NUCLIDES};
use crate::settings::MassSpec;
use crate::sorting::sort_by;

/// Where the mass table comes from (for reports and exports).
pub const MASS_SOURCE: &str = crate::masses_table::SOURCE;

/// Largest mass in u accepted when a mass is typed as a number.
pub const MAX_MASS_U: f64 = 300.0;

/// One nuclide of the mass table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Nuclide {
    /// Atomic number Z.
    pub z: u8,
    /// Mass number A.
    pub a: u16,
    /// Element symbol, e.g. `Cl`.
    pub symbol: String,
    /// Atomic mass (neutral atom), u.
    pub mass_u: f64,
    /// Natural abundance, % (0 when none is listed).
    pub abundance_percent: f64,
}

impl Nuclide {
    /// Canonical label: mass number then symbol (`35Cl`, `2H`).
    pub fn label(&self) -> String {
        format!("{}{}", self.a, self.symbol)
    }
}

fn element_by_symbol_or_name(text: &str) -> Option<(u8, &'static str)> {
    ELEMENTS
        .iter()
        .find(|(_, sym, name)| sym.eq_ignore_ascii_case(text) || name.eq_ignore_ascii_case(text))
        .map(|(z, sym, _)| (*z, *sym))
}

fn lookup(z: u8, symbol: &str, a: u16) -> Option<Nuclide> {
    NUCLIDES
        .iter()
        .find(|(zz, aa, _, _)| *zz == z && *aa == a)
        .map(|&(z, a, mass_u, ab)| Nuclide {
            z,
            a,
            symbol: symbol.to_string(),
            mass_u,
            abundance_percent: ab,
        })
}

/// The natural isotopes of element `z` (abundance > 0), most abundant first.
fn natural_isotopes(z: u8) -> Vec<(u16, f64)> {
    let mut v: Vec<(u16, f64)> = NUCLIDES
        .iter()
        .filter(|n| n.0 == z && n.3 > 0.0)
        .map(|n| (n.1, n.3))
        .collect();
    sort_by(&mut v, |x, y| y.1.total_cmp(&x.1));
    v
}

fn superscript_to_ascii(c: char) -> char {
    match c {
        '⁰' => '0',
        '¹' => '1',
        '²' => '2',
        '³' => '3',
        '⁴' => '4',
        '⁵' => '5',
        '⁶' => '6',
        '⁷' => '7',
        '⁸' => '8',
        '⁹' => '9',
        other => other,
    }
}

fn label_error(label: &str, why: &str) -> Error {
    Error::parameter(
        "nuclide",
        format!(
            "'{label}' {why}; write e.g. 35Cl, 1H, D, T, Cl-35 (or a symbol alone for H and \
             single-isotope elements)"
        ),
    )
}

/// Resolves a nuclide label (see the module documentation for the grammar).
pub fn nuclide(label: &str) -> Result<Nuclide> {
    let raw = label.trim();
    let s: String = raw.chars().map(superscript_to_ascii).collect();
    let s = s.trim_start_matches('^').replace(['{', '}'], "");
    if s.is_empty() {
        return Err(label_error(raw, "is empty"));
    }
    if s == "D" || s == "d" || s == "T" || s == "t" {
        let a = if s.eq_ignore_ascii_case("d") { 2 } else { 3 };
        return lookup(1, "H", a).ok_or_else(|| label_error(raw, "is missing from the table"));
    }
    let lead_digits: String = s.chars().take_while(|c| c.is_ascii_digit()).collect();
    let (symbol_part, mass_text) = if !lead_digits.is_empty() {
        let rest = s[lead_digits.len()..].trim_start_matches('-').trim();
        if rest.is_empty() {
            return Err(label_error(raw, "has a mass number but no element"));
        }
        (rest.to_string(), Some(lead_digits))
    } else {
        let trail: String = s
            .chars()
            .rev()
            .take_while(|c| c.is_ascii_digit())
            .collect::<Vec<_>>()
            .into_iter()
            .rev()
            .collect();
        if trail.is_empty() {
            (s.clone(), None)
        } else {
            let head = &s[..s.len() - trail.len()];
            if let Some(sym) = head.strip_suffix('-') {
                (sym.trim().to_string(), Some(trail))
            } else if trail.len() >= 2 {
                (head.trim().to_string(), Some(trail))
            } else {
                return Err(label_error(
                    raw,
                    "reads like a molecular formula (a single digit after the symbol)",
                ));
            }
        }
    };
    if matches!(symbol_part.as_str(), "D" | "d" | "T" | "t") {
        return Err(label_error(
            raw,
            "gives a mass number to D or T, which already name ²H and ³H",
        ));
    }
    let Some((z, symbol)) = element_by_symbol_or_name(&symbol_part) else {
        return Err(label_error(
            raw,
            &format!("names no element Rungs has masses for ('{symbol_part}')"),
        ));
    };
    match mass_text {
        Some(m) => {
            let a: u16 = m
                .parse()
                .map_err(|_| label_error(raw, "has an unreadable mass number"))?;
            lookup(z, symbol, a).ok_or_else(|| {
                label_error(
                    raw,
                    &format!("is not an isotope in the mass table ({symbol}-{a})"),
                )
            })
        }
        None => {
            if z == 1 {
                return lookup(1, "H", 1)
                    .ok_or_else(|| label_error(raw, "is missing from the table"));
            }
            let natural = natural_isotopes(z);
            match natural.as_slice() {
                [(a, ab)] if *ab >= 99.999 => lookup(z, symbol, *a)
                    .ok_or_else(|| label_error(raw, "is missing from the table")),
                [] => Err(label_error(
                    raw,
                    &format!("needs a mass number ({symbol} has no natural abundances listed)"),
                )),
                list => {
                    let shown: Vec<String> = list
                        .iter()
                        .map(|(a, ab)| format!("{a}{symbol} {ab} %"))
                        .collect();
                    Err(label_error(
                        raw,
                        &format!("is ambiguous: give a mass number ({})", shown.join(", ")),
                    ))
                }
            }
        }
    }
}

/// The mass in u of one atom given as a nuclide label or as a number in u (with a decimal point).
pub fn atom_mass_u(label: &str) -> Result<f64> {
    let t = label.trim();
    let looks_numeric = t.contains('.') || t.contains(['e', 'E']);
    if looks_numeric && let Ok(m) = t.parse::<f64>() {
        if m.is_finite() && m > 0.0 && m <= MAX_MASS_U {
            return Ok(m);
        }
        return Err(Error::parameter(
            "mass",
            format!("'{t}': a mass in u must be positive and at most {MAX_MASS_U}"),
        ));
    }
    if !t.is_empty() && t.chars().all(|c| c.is_ascii_digit()) {
        return Err(Error::parameter(
            "mass",
            format!(
                "'{t}' looks like a mass number: add the element (e.g. {t}Cl) or give the mass in \
                 u with a decimal point"
            ),
        ));
    }
    nuclide(t).map(|n| n.mass_u)
}

/// Reduced mass μ = m_A m_B / (m_A + m_B) in u of two masses in u.
pub fn reduced_mass_u(m_a_u: f64, m_b_u: f64) -> Result<f64> {
    for (name, m) in [("m_a", m_a_u), ("m_b", m_b_u)] {
        if !(m.is_finite() && m > 0.0) {
            return Err(Error::parameter(
                name,
                format!("mass {m} u must be positive and finite"),
            ));
        }
    }
    Ok(m_a_u * m_b_u / (m_a_u + m_b_u))
}

/// Reduced mass in u of the molecule described by a [`MassSpec`] (labels or μ itself).
pub fn reduced_mass_of(spec: &MassSpec) -> Result<f64> {
    match spec {
        MassSpec::ReducedMass { mu_u } => {
            if mu_u.is_finite() && *mu_u > 0.0 && *mu_u <= MAX_MASS_U {
                Ok(*mu_u)
            } else {
                Err(Error::parameter(
                    "mass.mu_u",
                    format!("reduced mass {mu_u} u must be positive and at most {MAX_MASS_U}"),
                ))
            }
        }
        MassSpec::Nuclides { a, b } => {
            let ma = atom_mass_u(a).map_err(|e| rename_parameter(e, "mass.a"))?;
            let mb = atom_mass_u(b).map_err(|e| rename_parameter(e, "mass.b"))?;
            reduced_mass_u(ma, mb)
        }
    }
}

fn rename_parameter(e: Error, name: &str) -> Error {
    match e {
        Error::Parameter { message, .. } => Error::parameter(name, message),
        other => other,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grammar_forms_resolve_to_the_same_isotope() {
        for label in [
            "35Cl",
            "³⁵Cl",
            "^35Cl",
            "^{35}Cl",
            "35-Cl",
            "Cl-35",
            "Cl35",
            " cl35 ",
            "chlorine-35",
        ] {
            let n = nuclide(label).unwrap_or_else(|e| panic!("{label}: {e}"));
            assert_eq!(
                (n.z, n.a, n.label()),
                (17, 35, "35Cl".to_string()),
                "{label}"
            );
        }
        assert_eq!(nuclide("D").expect("D").label(), "2H");
        assert_eq!(nuclide("T").expect("T").label(), "3H");
        assert_eq!(nuclide("H").expect("H").label(), "1H");
        assert_eq!(nuclide("Na").expect("Na").label(), "23Na");
        assert_eq!(nuclide("I").expect("I").label(), "127I");
        assert_eq!(nuclide("Cs").expect("Cs").label(), "133Cs");
        assert_eq!(nuclide("U-235").expect("U").a, 235);
    }

    /// The table keeps every element issue 3 asks for, the nuclides found in nature and the
    /// long-lived radionuclides, and drops short-lived ones (see `scripts/gen_masses.py`).
    /// SOURCE: half-lives from NUBASE 2020 (from memory, as a rough guide: ³H 12.3 a, ¹⁴C 5.7 ka,
    /// ⁹⁹Tc 0.21 Ma, ¹²⁹I 16 Ma, ¹³¹I 8.0 d, ¹³⁷Cs 30 a, ²¹⁰Pb 22 a, ²³⁵U 0.70 Ga, ²³⁸U 4.5 Ga;
    /// ¹¹C 20 min, ¹³N 10 min, ¹⁸F 110 min, ¹²⁸I 25 min, ²³⁹U 23 min); masses AME 2020 via
    /// periodictable 2.1.0 (³H 3.01604928132 u, ²³⁵U 235.0439281 u).
    #[test]
    fn table_keeps_natural_and_long_lived_nuclides() {
        for z in (1..=54).chain([55, 80, 82, 92]) {
            assert!(NUCLIDES.iter().any(|n| n.0 == z), "element Z = {z}");
        }
        for label in [
            "3H", "14C", "99Tc", "129I", "131I", "137Cs", "210Pb", "235U", "238U", "40K",
        ] {
            assert!(nuclide(label).is_ok(), "{label} kept");
        }
        for label in ["11C", "13N", "18F", "128I", "239U"] {
            let e = nuclide(label).expect_err(label).to_string();
            assert!(
                e.contains("not an isotope in the mass table"),
                "{label}: {e}"
            );
        }
        assert_eq!(nuclide("T").expect("T").mass_u, 3.01604928132);
        assert_eq!(nuclide("235U").expect("235U").mass_u, 235.0439281);
    }

    #[test]
    fn refusals_say_why() {
        let cases = [
            ("Cl", "ambiguous"),
            ("H2", "molecular formula"),
            ("Li7", "molecular formula"),
            ("2D", "already name"),
            ("35", "no element"),
            ("35Xx", "names no element"),
            ("999Cl", "not an isotope"),
            ("", "empty"),
            ("Tc", "no natural abundances"),
        ];
        for (label, fragment) in cases {
            let e = nuclide(label).expect_err(label).to_string();
            assert!(e.contains(fragment), "{label}: {e}");
        }
        assert!(
            atom_mass_u("35")
                .expect_err("int")
                .to_string()
                .contains("mass number")
        );
        assert!(atom_mass_u("-3.5").is_err());
        assert!(atom_mass_u("1e9").is_err());
    }

    #[test]
    fn numbers_are_masses() {
        assert_eq!(atom_mass_u("34.968852694").expect("number"), 34.968852694);
    }

    /// SOURCE: closed form μ = m m /(2 m) = m/2 for a homonuclear molecule.
    #[test]
    fn homonuclear_reduced_mass_is_half() {
        let mu = reduced_mass_of(&MassSpec::Nuclides {
            a: "35Cl".into(),
            b: "Cl-35".into(),
        })
        .expect("mu");
        assert!((mu - nuclide("35Cl").expect("Cl").mass_u / 2.0).abs() < 1e-12);
        assert!(reduced_mass_of(&MassSpec::ReducedMass { mu_u: -1.0 }).is_err());
        let e = reduced_mass_of(&MassSpec::Nuclides {
            a: "1H".into(),
            b: "Cl".into(),
        })
        .expect_err("ambiguous");
        // The second atom is named in words (common practice, no source).
        assert!(e.to_string().starts_with("Second atom: "), "{e}");
    }
}
