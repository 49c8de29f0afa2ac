//! Isotopologue tags, their reduced masses, and the mass scaling of vibrational constants.
//!
//! ## Tags
//! A row's isotopologue tag names the molecule's two atoms. It is read, in this order:
//! 1. from [`BandSettings::isotopologues`](crate::settings::BandSettings) when the tag is listed
//!    there (atoms as nuclide labels, or masses in u written with a decimal point);
//! 2. as two nuclide labels (grammar of [`crate::masses`]) joined by `-`, `/`, `:`, `+` or a
//!    space: `1H-35Cl`, `2H/35Cl`, `Cl-35-Cl-37`, `35Cl 37Cl`;
//! 3. as two nuclide labels written together: `1H35Cl`, `D35Cl`, `HD`;
//! 4. as one nuclide label followed by `2` (or `₂`) for a homonuclear molecule: `35Cl2`, `H2`, `D2`.
//!
//! A tag that can be read in two different ways is refused as ambiguous; a tag that names no
//! two atoms (e.g. `main`, or an invented element) has no mass until it is listed in the settings.
//!
//! ## Mass scaling (domain.md §1.11)
//! Within the Born–Oppenheimer approximation Y_k0^(i) = Y_k0 ρ^k with ρ = (μ/μ_i)^½ (μ of the
//! reference isotopologue). Equivalently G^(i)(v) = P(ρ (v + ½)) with P(x) = Σ_k Y_k0 x^k the
//! reference polynomial. Y00 and Born–Oppenheimer-breakdown terms are neglected.

use crate::masses::{Nuclide, atom_mass_u, nuclide, reduced_mass_u};
use crate::settings::IsotopologueMasses;
use crate::{Error, Result};

/// Characters accepted between the two atoms of a tag.
const SEPARATORS: [char; 6] = ['-', '/', ':', '+', ' ', '–'];

/// Reads a tag as two nuclides (see the module documentation); the two may be equal.
pub fn parse_tag(tag: &str) -> Result<(Nuclide, Nuclide)> {
    let s = tag.trim();
    if s.is_empty() {
        return Err(tag_error(tag, "is empty"));
    }
    let mut found: Vec<(Nuclide, Nuclide)> = Vec::new();
    let mut push = |a: Nuclide, b: Nuclide| {
        let key = |x: &Nuclide, y: &Nuclide| {
            let (p, q) = ((x.z, x.a), (y.z, y.a));
            if p <= q { (p, q) } else { (q, p) }
        };
        if !found.iter().any(|(x, y)| key(x, y) == key(&a, &b)) {
            found.push((a, b));
        }
    };
    // Two labels joined by a separator, or written together: try every split point.
    for (i, ch) in s.char_indices() {
        if i == 0 {
            continue;
        }
        let (left, right) = s.split_at(i);
        if SEPARATORS.contains(&ch) {
            let right = &right[ch.len_utf8()..];
            if let (Ok(a), Ok(b)) = (nuclide(left), nuclide(right)) {
                push(a, b);
            }
        } else if ch.is_ascii_digit() || ch.is_uppercase() || is_superscript_digit(ch) {
            let prev = left.chars().last().unwrap_or(' ');
            // A split between two digits would cut a mass number in two.
            let digit = |c: char| c.is_ascii_digit() || is_superscript_digit(c);
            if SEPARATORS.contains(&prev) || (digit(prev) && digit(ch)) {
                continue;
            }
            if let (Ok(a), Ok(b)) = (nuclide(left), nuclide(right)) {
                push(a, b);
            }
        }
    }
    // Homonuclear: one label followed by 2.
    for suffix in ["2", "₂"] {
        if let Some(head) = s.strip_suffix(suffix)
            && !head.is_empty()
            && !head.ends_with(|c: char| c.is_ascii_digit() || SEPARATORS.contains(&c))
            && let Ok(a) = nuclide(head)
        {
            push(a.clone(), a);
        }
    }
    match found.len() {
        1 => Ok(found.swap_remove(0)),
        0 => Err(tag_error(
            tag,
            "does not name two atoms Rungs has masses for",
        )),
        _ => {
            let shown: Vec<String> = found
                .iter()
                .map(|(a, b)| format!("{}-{}", a.label(), b.label()))
                .collect();
            Err(tag_error(
                tag,
                &format!("is ambiguous ({})", shown.join(" or ")),
            ))
        }
    }
}

fn is_superscript_digit(c: char) -> bool {
    matches!(c, '⁰' | '¹' | '²' | '³' | '⁴' | '⁵' | '⁶' | '⁷' | '⁸' | '⁹')
}

fn tag_error(tag: &str, why: &str) -> Error {
    Error::parameter(
        "isotopologue",
        format!(
            "tag '{}' {why}: write two nuclide labels such as 1H-35Cl, 2H-35Cl, 35Cl-37Cl or \
             35Cl2, or list the tag with its two atoms (the setting \"Isotopologue atoms\" on the \
             page; on the command line --isotopologue TAG=A,B)",
            tag.trim()
        ),
    )
}

/// The atoms of one isotopologue and its reduced mass.
#[derive(Debug, Clone, PartialEq)]
pub struct Resolved {
    /// First atom (canonical nuclide label, or the mass as typed).
    pub a: String,
    /// Second atom.
    pub b: String,
    /// Reduced mass, u.
    pub mu_u: f64,
    /// Where the atoms came from: `"settings"` or `"tag"`.
    pub from: &'static str,
}

/// Resolves a tag to its atoms and reduced mass: the settings list first, then the tag grammar.
pub fn resolve(tag: &str, listed: &[IsotopologueMasses]) -> Result<Resolved> {
    if let Some(m) = listed.iter().find(|m| m.tag.trim() == tag.trim()) {
        let ma = atom_mass_u(&m.a)?;
        let mb = atom_mass_u(&m.b)?;
        return Ok(Resolved {
            a: m.a.trim().to_string(),
            b: m.b.trim().to_string(),
            mu_u: reduced_mass_u(ma, mb)?,
            from: "settings",
        });
    }
    let (a, b) = parse_tag(tag)?;
    Ok(Resolved {
        a: a.label(),
        b: b.label(),
        mu_u: reduced_mass_u(a.mass_u, b.mass_u)?,
        from: "tag",
    })
}

/// ρ = (μ_ref/μ_i)^½ of an isotopologue of reduced mass `mu_u` against the reference `mu_ref_u`.
pub fn rho(mu_ref_u: f64, mu_u: f64) -> Result<f64> {
    if !(mu_ref_u.is_finite() && mu_ref_u > 0.0 && mu_u.is_finite() && mu_u > 0.0) {
        return Err(Error::parameter(
            "isotopologue",
            format!("reduced masses {mu_ref_u} u and {mu_u} u must be positive"),
        ));
    }
    Ok((mu_ref_u / mu_u).sqrt())
}

/// Mass-scaled Dunham constants: `y[k−1]` is Y_k0 of the reference; returns Y_k0 ρ^k.
pub fn scale_dunham(y: &[f64], rho: f64) -> Vec<f64> {
    y.iter()
        .enumerate()
        .map(|(i, yk)| yk * rho.powi(i as i32 + 1))
        .collect()
}

/// Isotope shift ν^(i) − ν of the band (v′, v″) (domain.md §1.3, Born–Oppenheimer, ΔTe = 0):
/// Σ_k (ρ^k − 1) [Y′_k0 (v′+½)^k − Y″_k0 (v″+½)^k], with `y_upper[k−1]` = Y′_k0 and
/// `y_lower[k−1]` = Y″_k0 of the reference isotopologue (ωe = Y10, ωexe = −Y20, ωeye = Y30).
pub fn isotope_shift_cm1(
    y_upper: &[f64],
    y_lower: &[f64],
    rho: f64,
    v_upper: f64,
    v_lower: f64,
) -> f64 {
    let term = |y: &[f64], v: f64| -> f64 {
        y.iter()
            .enumerate()
            .map(|(i, yk)| {
                let k = i as i32 + 1;
                (rho.powi(k) - 1.0) * yk * (v + 0.5).powi(k)
            })
            .sum()
    };
    term(y_upper, v_upper) - term(y_lower, v_lower)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pair(tag: &str) -> (String, String) {
        let (a, b) = parse_tag(tag).unwrap_or_else(|e| panic!("{tag}: {e}"));
        (a.label(), b.label())
    }

    /// Tag grammar (our own design, no source): every spelling of a pair resolves to it.
    #[test]
    fn tags_name_two_atoms() {
        let hcl = ("1H".to_string(), "35Cl".to_string());
        for t in [
            "1H-35Cl",
            "1H/35Cl",
            "1H 35Cl",
            "1H35Cl",
            "H35Cl",
            "H-Cl-35",
            "¹H³⁵Cl",
        ] {
            assert_eq!(pair(t), hcl, "{t}");
        }
        assert_eq!(pair("D35Cl"), ("2H".into(), "35Cl".into()));
        assert_eq!(pair("Cl-35-Cl-37"), ("35Cl".into(), "37Cl".into()));
        assert_eq!(pair("35Cl2"), ("35Cl".into(), "35Cl".into()));
        assert_eq!(pair("H2"), ("1H".into(), "1H".into()));
        assert_eq!(pair("D2"), ("2H".into(), "2H".into()));
        assert_eq!(pair("HD"), ("1H".into(), "2H".into()));
        assert_eq!(pair("HT"), ("1H".into(), "3H".into()));
        assert_eq!(pair("127I2"), ("127I".into(), "127I".into()));
        for bad in ["", "main", "HCl", "Qz2", "29Qz-31Qz", "35"] {
            let e = parse_tag(bad).expect_err(bad).to_string();
            // The setting is named as the page labels it (common practice, no source).
            assert!(
                e.contains("Isotopologue atoms") && !e.contains("bands."),
                "{bad}: {e}"
            );
        }
    }

    #[test]
    fn listed_tags_win_and_take_masses() {
        let listed = vec![IsotopologueMasses {
            tag: "Qz2-a".into(),
            a: "29.0".into(),
            b: "31.0".into(),
        }];
        let r = resolve("Qz2-a", &listed).expect("listed");
        assert_eq!(r.from, "settings");
        assert!((r.mu_u - 29.0 * 31.0 / 60.0).abs() < 1e-12);
        assert_eq!(resolve("1H-35Cl", &listed).expect("tag").from, "tag");
        assert!(resolve("Qz2-b", &listed).is_err());
    }

    /// SOURCE: algebra — the shift formula is G^(i) − G with G^(i)(v) = Σ Y_k ρ^k (v+½)^k, so
    /// for ρ = 1 it vanishes and for a single harmonic term it is (ρ − 1) ωe (v′ − v″).
    #[test]
    fn shift_formula_limits() {
        assert_eq!(
            isotope_shift_cm1(&[1000.0, -10.0], &[500.0], 1.0, 3.0, 2.0),
            0.0
        );
        let s = isotope_shift_cm1(&[800.0], &[800.0], 0.9, 5.0, 2.0);
        assert!((s - (0.9 - 1.0) * 800.0 * 3.0).abs() < 1e-9);
        assert_eq!(scale_dunham(&[2.0, -3.0, 4.0], 0.5), vec![1.0, -0.75, 0.5]);
    }
}
