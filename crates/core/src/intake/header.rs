//! Reading a header cell: the column's role, and a unit or air/vacuum word written with it.
//!
//! A header cell is `name`, optionally with a unit: `E (eV)`, `E [eV]`, `E/eV`, `E in eV`,
//! `E_eV`, `E eV`, `lambda_air/nm`, `λ (nm, air)`. A cell that is only a unit (`cm-1`) marks a
//! value column of whatever kind the table is. Names are matched without regard to case, spaces,
//! underscores and hyphens; primes may be `'`, `′`, `’`, and `''`, `″`, `"`.

use super::{BandPositions, Role};
use crate::units::{Medium, UnitText, parse_unit_text};

/// What the name of a column says it holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum HeaderRole {
    /// A definite role.
    Role(Role),
    /// The value of the table's kind (level energy, spacing or band position), not said which.
    Value,
    /// A column that is deliberately not read (calculated values, residuals, notes).
    Skip,
    /// A name Rungs does not know.
    Unrecognised,
}

/// Everything read from one header cell.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct HeaderInfo {
    pub role: HeaderRole,
    pub unit: Option<UnitText>,
    /// Text in the unit position that is not a known unit (e.g. `E (kcal)`).
    pub unknown_unit: Option<String>,
    pub medium: Option<Medium>,
    /// Both "air" and "vacuum" were written.
    pub medium_conflict: bool,
    /// The name says band heads or band origins.
    pub positions: Option<BandPositions>,
    /// The name says wavelength (λ, lambda, wavelength, wl).
    pub wavelength_name: bool,
    /// The name says binding energies below the asymptote (`E_b`, `Eb`, `binding energy`).
    pub binding: bool,
}

/// Reads a header cell.
pub(crate) fn analyse(header: &str) -> HeaderInfo {
    let h = header.trim();
    let mut info = HeaderInfo {
        role: HeaderRole::Unrecognised,
        unit: None,
        unknown_unit: None,
        medium: None,
        medium_conflict: false,
        positions: None,
        wavelength_name: false,
        binding: false,
    };
    if h.is_empty() {
        return info;
    }
    // Words "air" / "vac" / "vacuum" anywhere.
    let lower = h.to_lowercase();
    let words: Vec<&str> = lower
        .split(|c: char| !c.is_alphanumeric())
        .filter(|w| !w.is_empty())
        .collect();
    let air = words.contains(&"air");
    let vac = words.iter().any(|w| *w == "vac" || *w == "vacuum");
    info.medium_conflict = air && vac;
    info.medium = match (air, vac) {
        (true, false) => Some(Medium::Air),
        (false, true) => Some(Medium::Vacuum),
        _ => None,
    };
    // A cell that is only a unit.
    if let Some(u) = parse_unit_text(h) {
        info.unit = Some(u);
        info.role = HeaderRole::Value;
        return info;
    }
    let (name, unit_text) = split_unit(h);
    if let Some(ut) = unit_text {
        match parse_unit_text(ut) {
            Some(u) => info.unit = Some(u),
            None => info.unknown_unit = Some(ut.trim().to_string()),
        }
    }
    let n = normalise(name);
    info.wavelength_name = ["λ", "lambda", "wavelength", "wl", "lam"]
        .iter()
        .any(|p| n.starts_with(p));
    if n.contains("head") {
        info.positions = Some(BandPositions::Heads);
    } else if n.contains("origin") || n == "ν0" || n == "nu0" {
        info.positions = Some(BandPositions::Origins);
    }
    info.binding = n.starts_with("binding") || matches!(n.as_str(), "eb" | "ebind" | "ebinding");
    info.role = role_of(&n);
    info
}

/// Splits `name (unit)`, `name [unit]`, `name/unit`, `name in unit`, `name_unit`, `name unit`.
/// Bracketed text that is not a unit but a qualifier (`G(v)`, `E (obs)`) stays in the name;
/// short bracketed text that is neither is returned as a unit text (so it can be refused).
fn split_unit(h: &str) -> (&str, Option<&str>) {
    for (open, close) in [('(', ')'), ('[', ']')] {
        if h.ends_with(close)
            && let Some(pos) = h.rfind(open)
        {
            let inner = &h[pos + open.len_utf8()..h.len() - close.len_utf8()];
            let before = h[..pos].trim_end();
            if before.is_empty() {
                return (h, None);
            }
            if parse_unit_text(inner).is_some() {
                return (before, Some(inner));
            }
            let q = normalise(inner);
            let qualifier = q.starts_with('v')
                || q.starts_with('j')
                || matches!(
                    q.as_str(),
                    "obs"
                        | "observed"
                        | "calc"
                        | "exp"
                        | "expt"
                        | "air"
                        | "vac"
                        | "vacuum"
                        | "fit"
                        | "lit"
                        | "ref"
                        | "meas"
                        | "measured"
                );
            if q.contains("calc") || q.contains("fit") {
                return (h, None);
            }
            if qualifier || inner.trim().contains(' ') || inner.chars().count() > 12 {
                return (before, None);
            }
            return (before, Some(inner));
        }
    }
    for (i, c) in h.char_indices() {
        if c == '/' {
            let rest = &h[i + 1..];
            if parse_unit_text(rest).is_some() && !h[..i].trim().is_empty() {
                return (h[..i].trim_end(), Some(rest));
            }
        }
    }
    if let Some(pos) = h.to_lowercase().find(" in ") {
        // Lowercasing keeps byte positions for ASCII " in "; guard for safety.
        if h.is_char_boundary(pos) && h.is_char_boundary(pos + 4) {
            let rest = &h[pos + 4..];
            if parse_unit_text(rest).is_some() {
                return (h[..pos].trim_end(), Some(rest));
            }
        }
    }
    if let Some(pos) = h.rfind(['_', ' ', ',']) {
        let rest = &h[pos + 1..];
        let single_letter = rest.chars().count() == 1 && rest != "K";
        if !single_letter && parse_unit_text(rest).is_some() && !h[..pos].trim().is_empty() {
            return (h[..pos].trim_end(), Some(rest));
        }
    }
    (h, None)
}

/// Lower case, primes unified, medium words and separators removed.
pub(crate) fn normalise(name: &str) -> String {
    let lower = name.trim().to_lowercase();
    let mut s = String::with_capacity(lower.len());
    for c in lower.chars() {
        match c {
            '′' | '’' | '‘' | '´' | '`' => s.push('\''),
            '″' | '"' | '”' | '“' => s.push_str("''"),
            c if c.is_whitespace() => s.push(' '),
            c => s.push(c),
        }
    }
    let s = s
        .replace("+/-", "±")
        .replace("+-", "±")
        .replace("o-c", "oc")
        .replace("obs-calc", "oc");
    let mut out = String::with_capacity(s.len());
    for word in s.split([' ', '_', '-', ',']) {
        if matches!(word, "air" | "vac" | "vacuum" | "in") {
            continue;
        }
        out.extend(
            word.chars()
                .filter(|c| !matches!(c, '.' | '{' | '}' | '(' | ')' | '[' | ']' | ':')),
        );
    }
    out
}

fn role_of(n: &str) -> HeaderRole {
    use HeaderRole::{Role as R, Skip, Unrecognised, Value};
    if n.is_empty() {
        return Unrecognised;
    }
    if n.contains("calc") || n == "oc" || n.starts_with("resid") || n.contains("fit") {
        return Skip;
    }
    let starts = |ps: &[&str]| ps.iter().any(|p| n.starts_with(p));
    let exact = |ps: &[&str]| ps.contains(&n);
    if starts(&["σ", "sigma", "unc", "err", "±", "std", "esd"]) || exact(&["sd", "δ", "delta", "u"])
    {
        return R(Role::Sigma);
    }
    if exact(&["v+1/2", "v+½", "v+05", "vhalf", "v½"]) {
        return R(Role::VHalf);
    }
    if exact(&["v'", "vu", "vup", "vupper", "upper", "upperv", "vprime"]) {
        return R(Role::VUpper);
    }
    if exact(&[
        "v''",
        "vl",
        "vlo",
        "vlow",
        "vlower",
        "lower",
        "lowerv",
        "vdoubleprime",
        "vpp",
    ]) {
        return R(Role::VLower);
    }
    if exact(&[
        "v",
        "vib",
        "vibrational",
        "vibrationalquantumnumber",
        "vquantumnumber",
        "vlevel",
    ]) {
        return R(Role::V);
    }
    if starts(&["δg", "dg", "deltag", "spacing", "vibrationalspacing"]) || exact(&["interval"]) {
        return R(Role::Spacing);
    }
    if exact(&["b", "bv", "brot", "b0"]) || starts(&["rotationalconstant", "rotconst"]) {
        return R(Role::B);
    }
    if starts(&[
        "ν",
        "nu",
        "wavenumber",
        "position",
        "line",
        "bandorigin",
        "bandhead",
        "bandcent",
        "origin",
        "head",
        "freq",
        "λ",
        "lambda",
        "wavelength",
        "transition",
    ]) || exact(&["wn", "pos", "f", "wl", "lam"])
    {
        return R(Role::Position);
    }
    if n.contains("energ")
        || starts(&["term", "binding"])
        || exact(&["e", "t", "tv", "g", "gv", "ev", "eb", "e0", "g0"])
    {
        return R(Role::Energy);
    }
    if starts(&["iso", "species", "molecule"]) || exact(&["mol"]) {
        return R(Role::Isotopologue);
    }
    if exact(&["obs", "observed", "value", "val", "y"]) {
        return Value;
    }
    Unrecognised
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Unit;

    fn role(h: &str) -> HeaderRole {
        analyse(h).role
    }

    /// SOURCE: header spellings of the trade [common practice, no source].
    #[test]
    fn roles() {
        use HeaderRole::Role as R;
        for (h, r) in [
            ("v", R(Role::V)),
            ("v'", R(Role::VUpper)),
            ("v′", R(Role::VUpper)),
            ("v_upper", R(Role::VUpper)),
            ("Upper", R(Role::VUpper)),
            ("v''", R(Role::VLower)),
            ("v\"", R(Role::VLower)),
            ("v″", R(Role::VLower)),
            ("v lower", R(Role::VLower)),
            ("v+1/2", R(Role::VHalf)),
            ("E", R(Role::Energy)),
            ("Energy (cm-1)", R(Role::Energy)),
            ("G(v)", R(Role::Energy)),
            ("T_v", R(Role::Energy)),
            ("term value", R(Role::Energy)),
            ("ΔG", R(Role::Spacing)),
            ("ΔG_{v+1/2} (cm-1)", R(Role::Spacing)),
            ("dG", R(Role::Spacing)),
            ("spacing", R(Role::Spacing)),
            ("wavenumber", R(Role::Position)),
            ("ν", R(Role::Position)),
            ("nu0", R(Role::Position)),
            ("band head", R(Role::Position)),
            ("lambda_air/nm", R(Role::Position)),
            ("σ", R(Role::Sigma)),
            ("sigma", R(Role::Sigma)),
            ("unc.", R(Role::Sigma)),
            ("err", R(Role::Sigma)),
            ("+/-", R(Role::Sigma)),
            ("±", R(Role::Sigma)),
            ("iso", R(Role::Isotopologue)),
            ("Isotopologue", R(Role::Isotopologue)),
            ("species", R(Role::Isotopologue)),
            ("B", R(Role::B)),
            ("Bv", R(Role::B)),
            ("B_v (cm-1)", R(Role::B)),
            ("E_calc", HeaderRole::Skip),
            ("o-c", HeaderRole::Skip),
            ("cm-1", HeaderRole::Value),
            ("note", HeaderRole::Unrecognised),
        ] {
            assert_eq!(role(h), r, "{h}");
        }
    }

    #[test]
    fn units_in_headers() {
        let u = |h: &str| analyse(h).unit;
        assert_eq!(u("E (eV)"), Some(UnitText::Unit(Unit::ElectronVolt)));
        assert_eq!(u("E [meV]"), Some(UnitText::Unit(Unit::MilliElectronVolt)));
        assert_eq!(u("E/cm-1"), Some(UnitText::Unit(Unit::Cm1)));
        assert_eq!(u("E/kJ/mol"), Some(UnitText::Unit(Unit::KilojoulePerMole)));
        assert_eq!(u("energy in GHz"), Some(UnitText::Unit(Unit::Gigahertz)));
        assert_eq!(u("E_K"), Some(UnitText::Unit(Unit::Kelvin)));
        assert_eq!(u("nu cm-1"), Some(UnitText::Unit(Unit::Cm1)));
        assert_eq!(u("G(v)"), None);
        assert_eq!(u("E (relative to v = 0)"), None);
        assert_eq!(
            role("E (relative to v = 0)"),
            HeaderRole::Role(Role::Energy)
        );
        assert_eq!(role("E (calc)"), HeaderRole::Skip);
        assert_eq!(role("E (obs)"), HeaderRole::Role(Role::Energy));
        let a = analyse("lambda_air/nm");
        assert_eq!(
            a.unit,
            Some(UnitText::WavelengthNoMedium { angstrom: false })
        );
        assert_eq!(a.medium, Some(Medium::Air));
        assert!(a.wavelength_name);
        assert_eq!(
            u("λ (nm, vac)"),
            Some(UnitText::Unit(Unit::Nanometre(Medium::Vacuum)))
        );
        assert_eq!(analyse("E (kcal)").unknown_unit.as_deref(), Some("kcal"));
        assert!(analyse("λ air vac (nm)").medium_conflict);
        assert_eq!(analyse("band head").positions, Some(BandPositions::Heads));
        assert_eq!(analyse("origin").positions, Some(BandPositions::Origins));
    }
}
