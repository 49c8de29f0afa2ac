//! Checking the absolute vibrational numbering of the upper state.
//!
//! Trial offsets k = −3 … +3 renumber every upper level v′ → v′ + k (the lower state's
//! numbering is taken as given). For each, the global fit ([`super::global`]) is repeated at the
//! same orders and the offsets are ranked by χ² (domain.md §1.3).
//!
//! **With isotopologues** the mass scaling G^(i)(v) = P(ρ_i (v + ½)) ties the isotope shifts to
//! the distance of each level from the potential minimum, so a wrong offset cannot fit every
//! isotopologue at once. Δχ² between the best and the next offset (divided by χ²_ν of the best
//! fit when that exceeds 1, or always when the bands have no σ) gives the verdict:
//! Δχ² ≥ [`DECISIVE_DELTA_CHI2`] — "numbering fixed by isotope shifts";
//! [`FAVOURED_DELTA_CHI2`] ≤ Δχ² < 9 — favoured, not fixed; below — "cannot be decided from
//! these data". For two fits with the same number of parameters, Δχ² = 9 is a likelihood ratio
//! of e^4.5 ≈ 90 (the thresholds are our choice: common practice, no source).
//!
//! **With one isotopologue** a shift of the numbering is absorbed exactly: a polynomial of order
//! K in v′ + k is a polynomial of order K in v′, and T00 takes up the constant. χ² is the same
//! for every offset and the bands cannot decide. The zero-point test (G must reach 0 at
//! v ≈ −½) is built into the polynomial (no Y00), so it only rules out offsets under which the
//! fitted G′(v) would stop rising somewhere between v = −½ and the lowest observed level.

use serde::{Deserialize, Serialize};

use super::global::{GlobalBand, GlobalFit, fit_global};
use crate::Result;
use crate::sorting::sort_by;

/// The trial offsets.
pub const OFFSETS: std::ops::RangeInclusive<i32> = -3..=3;
/// Δχ² from which the numbering counts as fixed.
pub const DECISIVE_DELTA_CHI2: f64 = 9.0;
/// Δχ² from which an offset counts as favoured.
pub const FAVOURED_DELTA_CHI2: f64 = 4.0;

/// What the isotope shifts say.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Verdict {
    /// Δχ² ≥ 9 between the best and the next offset.
    FixedByIsotopeShifts,
    /// 4 ≤ Δχ² < 9.
    FavouredByIsotopeShifts,
    /// Δχ² < 4, or one isotopologue only.
    CannotBeDecided,
}

/// One trial offset.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct OffsetRow {
    /// k (v′ → v′ + k).
    pub offset: i32,
    /// False when v′ + k would be negative for an observed level.
    pub possible: bool,
    /// Lowest observed upper level under this numbering.
    pub lowest_v_upper: i64,
    /// χ² of the joint fit.
    pub chi2: Option<f64>,
    /// χ²_ν.
    pub chi2_reduced: Option<f64>,
    /// χ² − χ² of the best offset (raw).
    pub delta_chi2: Option<f64>,
    /// ωe′ under this numbering, cm⁻¹.
    pub we_upper_cm1: Option<f64>,
    /// ωexe′, cm⁻¹.
    pub wexe_upper_cm1: Option<f64>,
    /// Te under this numbering, cm⁻¹.
    pub te_cm1: Option<f64>,
    /// G′(0) under this numbering, cm⁻¹.
    pub zero_point_upper_cm1: Option<f64>,
    /// Whether G′(v) rises all the way from v = −½ to the lowest observed level.
    pub zero_point_ok: Option<bool>,
    /// Plain remark.
    pub note: String,
}

/// The numbering check and its verdict.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NumberingCheck {
    /// Every trial offset.
    pub offsets: Vec<OffsetRow>,
    /// Isotopologues in the joint fit.
    pub isotopologues: usize,
    /// Offset with the lowest χ² (null with one isotopologue: all are equal).
    pub best_offset: Option<i32>,
    /// Runner-up.
    pub next_offset: Option<i32>,
    /// χ²(next) − χ²(best), divided by `delta_chi2_scale`.
    pub delta_chi2: Option<f64>,
    /// The divisor: χ²_ν of the best fit when above 1 (always, without band σ), else 1.
    pub delta_chi2_scale: Option<f64>,
    /// Verdict.
    pub verdict: Verdict,
    /// `"numbering fixed by isotope shifts"`, `"numbering favoured by isotope shifts, not fixed"`
    /// or `"cannot be decided from these data"`.
    pub verdict_text: String,
    /// Why.
    pub why: String,
    /// What these data can decide.
    pub decidable: Vec<String>,
    /// What they cannot.
    pub not_decidable: Vec<String>,
}

fn zero_point_ok(fit: &GlobalFit, lowest: f64) -> Option<bool> {
    if fit.k_upper == 0 {
        return None;
    }
    let a = &fit.lsq.params[1..1 + fit.k_upper];
    let mut v = -0.5;
    while v <= lowest + 1e-9 {
        if fit.upper_basis.eval(a, v).1 <= 0.0 {
            return Some(false);
        }
        v += 0.25;
    }
    Some(true)
}

/// Runs the offset scan at orders (K′, K″); `n_isotopologues` is the number of isotopologues in
/// `bands`, `sigma_known` whether they carry σ.
pub fn check(
    bands: &[GlobalBand],
    k_upper: usize,
    k_lower: usize,
    n_isotopologues: usize,
) -> Result<NumberingCheck> {
    let v_min = bands.iter().map(|b| b.v_upper).min().unwrap_or(0);
    let mut rows = Vec::new();
    let mut fits: Vec<Option<GlobalFit>> = Vec::new();
    for k in OFFSETS {
        let lowest = i64::from(v_min) + i64::from(k);
        if lowest < 0 {
            rows.push(OffsetRow {
                offset: k,
                possible: false,
                lowest_v_upper: lowest,
                chi2: None,
                chi2_reduced: None,
                delta_chi2: None,
                we_upper_cm1: None,
                wexe_upper_cm1: None,
                te_cm1: None,
                zero_point_upper_cm1: None,
                zero_point_ok: None,
                note: format!("impossible: the lowest observed upper level would be v′ = {lowest}"),
            });
            fits.push(None);
            continue;
        }
        match fit_global(bands, k_upper, k_lower, k) {
            Ok(f) => {
                let (y, _) = f.dunham(true);
                let zp_ok = zero_point_ok(&f, lowest as f64);
                rows.push(OffsetRow {
                    offset: k,
                    possible: true,
                    lowest_v_upper: lowest,
                    chi2: Some(f.lsq.chi2),
                    chi2_reduced: f.lsq.chi2_reduced(),
                    delta_chi2: None,
                    we_upper_cm1: y.first().copied(),
                    wexe_upper_cm1: y.get(1).map(|x| -x),
                    te_cm1: Some(f.te().value),
                    zero_point_upper_cm1: Some(f.zero_point(true, 1.0).value),
                    zero_point_ok: zp_ok,
                    note: if zp_ok == Some(false) {
                        "G′(v) would stop rising below the lowest observed level: implausible"
                            .into()
                    } else {
                        String::new()
                    },
                });
                fits.push(Some(f));
            }
            Err(e) => {
                rows.push(OffsetRow {
                    offset: k,
                    possible: true,
                    lowest_v_upper: lowest,
                    chi2: None,
                    chi2_reduced: None,
                    delta_chi2: None,
                    we_upper_cm1: None,
                    wexe_upper_cm1: None,
                    te_cm1: None,
                    zero_point_upper_cm1: None,
                    zero_point_ok: None,
                    note: format!("fit failed: {e}"),
                });
                fits.push(None);
            }
        }
    }
    let mut ranked: Vec<(i32, f64, Option<f64>, bool)> = rows
        .iter()
        .filter_map(|r| {
            r.chi2
                .map(|c| (r.offset, c, r.chi2_reduced, r.zero_point_ok != Some(false)))
        })
        .collect();
    sort_by(&mut ranked, |a, b| a.1.total_cmp(&b.1));
    let best_chi2 = ranked.first().map(|r| r.1);
    for r in &mut rows {
        if let (Some(c), Some(b)) = (r.chi2, best_chi2) {
            r.delta_chi2 = Some(c - b);
        }
    }
    let sigma_known = bands.iter().all(|b| b.sigma_cm1.is_some());
    let mut decidable = vec![
        "the relative numbering within each state: spacings ΔG′ and ΔG″ and their difference chains".to_string(),
        "the upper state's convergence limit above the lower v″ = 0 (T00 + D0′ does not depend on the upper numbering), and from it D0″ given the atomic excitation energy".to_string(),
        "the near-dissociation asymptote of each state and the binding energy of its highest level".to_string(),
    ];
    let mut not_decidable: Vec<String> = Vec::new();
    let zp_bad: Vec<String> = rows
        .iter()
        .filter(|r| r.zero_point_ok == Some(false))
        .map(|r| format!("{:+}", r.offset))
        .collect();
    let impossible: Vec<String> = rows
        .iter()
        .filter(|r| !r.possible)
        .map(|r| format!("{:+}", r.offset))
        .collect();
    let mut exclusions = String::new();
    if !impossible.is_empty() {
        exclusions.push_str(&format!(
            " Offsets {} are impossible (negative v′).",
            impossible.join(", ")
        ));
    }
    if !zp_bad.is_empty() {
        exclusions.push_str(&format!(
            " Under offsets {} the fitted G′(v) would stop rising below the lowest observed level (zero-point test).",
            zp_bad.join(", ")
        ));
    }
    if n_isotopologues < 2 {
        not_decidable.push("the absolute numbering of the upper state, and with it ωe′, ωexe′, G′(0), Te, T00 (as ν of the level called v′ = 0), D0′ and De′".into());
        not_decidable.push("the zero-point test: the polynomial G′(v) has no Y00 and reaches 0 at v = −½ by construction, so it only rules out offsets that make G′ turn over below the data".into());
        let why = format!(
            "one isotopologue: renumbering the upper state (v′ → v′ + k) changes the polynomial constants and T00 but not a single fitted band position, so χ² is the same for every offset.{exclusions} Isotope shifts (bands of a second isotopologue), rotational constants (Y00), or a Franck–Condon intensity pattern would fix it."
        );
        return Ok(NumberingCheck {
            offsets: rows,
            isotopologues: n_isotopologues,
            best_offset: None,
            next_offset: None,
            delta_chi2: None,
            delta_chi2_scale: None,
            verdict: Verdict::CannotBeDecided,
            verdict_text: "cannot be decided from these data".into(),
            why,
            decidable,
            not_decidable,
        });
    }
    let (best, next) = match (ranked.first(), ranked.get(1)) {
        (Some(b), Some(n)) => (*b, *n),
        _ => {
            return Ok(NumberingCheck {
                offsets: rows,
                isotopologues: n_isotopologues,
                best_offset: ranked.first().map(|r| r.0),
                next_offset: None,
                delta_chi2: None,
                delta_chi2_scale: None,
                verdict: Verdict::CannotBeDecided,
                verdict_text: "cannot be decided from these data".into(),
                why: "fewer than two trial offsets could be fitted".into(),
                decidable,
                not_decidable: vec!["the absolute numbering of the upper state".into()],
            });
        }
    };
    let scale = match best.2 {
        Some(c) if !sigma_known => c,
        Some(c) => c.max(1.0),
        None => 1.0,
    };
    let scale = if scale > 0.0 { scale } else { 1.0 };
    let d = (next.1 - best.1) / scale;
    let (verdict, text) = if d >= DECISIVE_DELTA_CHI2 {
        (
            Verdict::FixedByIsotopeShifts,
            "numbering fixed by isotope shifts",
        )
    } else if d >= FAVOURED_DELTA_CHI2 {
        (
            Verdict::FavouredByIsotopeShifts,
            "numbering favoured by isotope shifts, not fixed",
        )
    } else {
        (
            Verdict::CannotBeDecided,
            "cannot be decided from these data",
        )
    };
    let shift_word = |k: i32| {
        if k == 0 {
            "the numbering as given (offset 0)".to_string()
        } else {
            format!("offset {k:+} (v′ → v′ {k:+})")
        }
    };
    let scale_note = if scale != 1.0 {
        format!(" (divided by χ²_ν = {scale:.3} of the best fit)")
    } else {
        String::new()
    };
    let mut why = match verdict {
        Verdict::FixedByIsotopeShifts | Verdict::FavouredByIsotopeShifts => format!(
            "{} fits the {n_isotopologues} isotopologues jointly best; the next, {}, is worse by Δχ² = {d:.2}{scale_note} ({} for 'fixed', ≥ {} for 'favoured').",
            shift_word(best.0),
            shift_word(next.0),
            if d >= DECISIVE_DELTA_CHI2 {
                "≥ 9 needed and met"
            } else {
                "< 9"
            },
            FAVOURED_DELTA_CHI2
        ),
        Verdict::CannotBeDecided => format!(
            "the mass-scaled joint fits of offsets {} and {} differ by Δχ² = {d:.2}{scale_note} only (< {FAVOURED_DELTA_CHI2}): the isotope shifts of these bands do not tell them apart; a larger isotope effect, more bands, smaller σ or higher levels would help.",
            best.0, next.0
        ),
    };
    if !best.3 {
        why.push_str(" The best offset fails the zero-point test: treat the verdict with caution.");
    }
    why.push_str(&exclusions);
    why.push_str(" Mass scaling assumes the Born–Oppenheimer approximation (no Y00, no breakdown terms); for hydrides these neglected terms are near 0.1 % of ωe.");
    if verdict == Verdict::CannotBeDecided {
        not_decidable.push("the absolute numbering of the upper state, and with it ωe′, ωexe′, G′(0), Te, T00, D0′ and De′".into());
    } else {
        decidable.push(format!(
            "the absolute numbering of the upper state: {}",
            shift_word(best.0)
        ));
    }
    Ok(NumberingCheck {
        offsets: rows,
        isotopologues: n_isotopologues,
        best_offset: Some(best.0),
        next_offset: Some(next.0),
        delta_chi2: Some(d),
        delta_chi2_scale: Some(scale),
        verdict,
        verdict_text: text.into(),
        why,
        decidable,
        not_decidable,
    })
}
