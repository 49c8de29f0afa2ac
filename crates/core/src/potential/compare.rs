//! Closing the loop: observed levels against the levels of a potential, with a verdict.
//!
//! Observed energies may be on any origin (relative to v = 0, term values T(v), …), while the
//! solver measures from the potential minimum. The default [`Alignment::FitOffset`] therefore
//! fits one common offset c (the σ-weighted mean of obs − calc; unit weights when any σ is
//! missing) and reports obs − (calc + c); this uses every level symmetrically instead of giving
//! v = 0 a special role, and costs one degree of freedom. [`Alignment::Absolute`] compares as
//! given (observed energies already from the potential minimum).
//!
//! B_v residuals are reported when observed B values are given; they carry no σ in the data
//! model and so enter the summary as a relative rms, not the χ².
//!
//! The verdict uses χ²_ν: consistent when χ²_ν ≤ 1 + 3√(2/ν) (χ²_ν has standard deviation
//! √(2/ν); common practice, no source). It is worded as a statement about the model at these
//! levels, not as proof.

use serde::{Deserialize, Serialize};

use super::solver::BoundLevel;
use crate::data::Level;
use crate::{Error, Result};

/// How observed and calculated energies are put on a common origin.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Alignment {
    /// Fit one common offset (weighted mean of obs − calc).
    #[default]
    FitOffset,
    /// Observed energies are already measured from the potential minimum.
    Absolute,
}

/// One observed level against the calculation.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LoopRow {
    /// Vibrational quantum number.
    pub v: u32,
    /// Observed energy as given, cm⁻¹.
    pub observed_cm1: f64,
    /// Calculated energy on the observed origin (calc + offset), cm⁻¹.
    pub calculated_cm1: f64,
    /// obs − calc, cm⁻¹.
    pub residual_cm1: f64,
    /// Observed σ, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// (obs − calc)/σ.
    pub normalized_residual: Option<f64>,
    /// Observed B_v, cm⁻¹.
    pub b_observed_cm1: Option<f64>,
    /// Calculated B_v, cm⁻¹.
    pub b_calculated_cm1: f64,
    /// B_v obs − calc, cm⁻¹, when B was observed.
    pub b_residual_cm1: Option<f64>,
}

/// The overall judgement.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// χ²_ν within the expected range.
    Consistent,
    /// χ²_ν too large: the potential does not reproduce the data within their σ.
    Inconsistent,
    /// No (or incomplete) uncertainties: only deviations can be reported.
    NoUncertainties,
    /// Too few matched levels for a test.
    TooFewLevels,
}

/// Observed − calculated levels with χ² and a verdict.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LoopCheck {
    /// Alignment used.
    pub alignment: Alignment,
    /// Matched levels.
    pub rows: Vec<LoopRow>,
    /// Observed v with no bound level in the potential.
    pub unmatched_v: Vec<u32>,
    /// Offset c added to the calculated energies, cm⁻¹ (0 for absolute alignment).
    pub offset_cm1: f64,
    /// χ² = Σ ((obs − calc)/σ)², when every matched level has a σ.
    pub chi2: Option<f64>,
    /// Degrees of freedom (matched levels minus the fitted offset).
    pub dof: usize,
    /// χ²/ν.
    pub chi2_reduced: Option<f64>,
    /// Root-mean-square obs − calc, cm⁻¹.
    pub rms_cm1: f64,
    /// Root-mean-square relative B_v deviation (obs − calc)/obs, when B values were observed.
    pub b_rms_relative: Option<f64>,
    /// The judgement.
    pub verdict: Verdict,
    /// The judgement in plain language.
    pub summary: String,
}

/// Compare observed levels with calculated ones (index = v). See the module docs.
pub fn compare_levels(
    observed: &[Level],
    calculated: &[BoundLevel],
    alignment: Alignment,
) -> Result<LoopCheck> {
    if let Some(i) = observed.iter().position(|l| !l.energy_cm1.is_finite()) {
        return Err(Error::Cell {
            row: i + 1,
            column: "energy".into(),
            message: "not a finite number".into(),
        });
    }
    if let Some(i) = observed
        .iter()
        .position(|l| l.sigma_cm1.is_some_and(|s| !(s.is_finite() && s > 0.0)))
    {
        return Err(Error::Cell {
            row: i + 1,
            column: "sigma".into(),
            message: "uncertainty must be positive".into(),
        });
    }
    let by_v = |v: u32| calculated.iter().find(|c| c.v == v);
    let matched: Vec<(&Level, &BoundLevel)> = observed
        .iter()
        .filter_map(|o| by_v(o.v).map(|c| (o, c)))
        .collect();
    let mut unmatched_v: Vec<u32> = observed
        .iter()
        .filter(|o| by_v(o.v).is_none())
        .map(|o| o.v)
        .collect();
    unmatched_v.sort_unstable();
    unmatched_v.dedup();
    let all_sigma = !matched.is_empty() && matched.iter().all(|(o, _)| o.sigma_cm1.is_some());
    let weight = |o: &Level| {
        if all_sigma {
            o.sigma_cm1.map_or(1.0, |s| 1.0 / (s * s))
        } else {
            1.0
        }
    };
    let offset = match alignment {
        Alignment::Absolute => 0.0,
        Alignment::FitOffset if matched.is_empty() => 0.0,
        Alignment::FitOffset => {
            let (sw, swd) = matched.iter().fold((0.0, 0.0), |(a, b), (o, c)| {
                let w = weight(o);
                (a + w, b + w * (o.energy_cm1 - c.energy_cm1))
            });
            swd / sw
        }
    };
    let rows: Vec<LoopRow> = matched
        .iter()
        .map(|(o, c)| {
            let calc = c.energy_cm1 + offset;
            let res = o.energy_cm1 - calc;
            LoopRow {
                v: o.v,
                observed_cm1: o.energy_cm1,
                calculated_cm1: calc,
                residual_cm1: res,
                sigma_cm1: o.sigma_cm1,
                normalized_residual: o.sigma_cm1.map(|s| res / s),
                b_observed_cm1: o.b_cm1,
                b_calculated_cm1: c.b_v_cm1,
                b_residual_cm1: o.b_cm1.map(|b| b - c.b_v_cm1),
            }
        })
        .collect();
    let n = rows.len();
    let fitted = usize::from(alignment == Alignment::FitOffset);
    let dof = n.saturating_sub(fitted);
    let rms = if n > 0 {
        (rows
            .iter()
            .map(|r| r.residual_cm1 * r.residual_cm1)
            .sum::<f64>()
            / n as f64)
            .sqrt()
    } else {
        0.0
    };
    let b_rel: Vec<f64> = rows
        .iter()
        .filter_map(|r| r.b_observed_cm1.map(|b| (b - r.b_calculated_cm1) / b))
        .collect();
    let b_rms_relative = (!b_rel.is_empty())
        .then(|| (b_rel.iter().map(|x| x * x).sum::<f64>() / b_rel.len() as f64).sqrt());
    let chi2 = all_sigma.then(|| {
        rows.iter()
            .filter_map(|r| r.normalized_residual)
            .map(|z| z * z)
            .sum::<f64>()
    });
    let chi2_reduced = chi2.filter(|_| dof > 0).map(|c| c / dof as f64);
    let worst = rows.iter().max_by(|a, b| {
        let key = |r: &LoopRow| r.normalized_residual.unwrap_or(r.residual_cm1).abs();
        key(a).total_cmp(&key(b))
    });
    let (verdict, mut summary) = if dof == 0 {
        (
            Verdict::TooFewLevels,
            format!(
                "Only {n} observed level(s) match bound levels of the potential: too few for a \
                 test{}.",
                if fitted == 1 {
                    " once the common offset is fitted"
                } else {
                    ""
                }
            ),
        )
    } else if let (Some(c2), Some(c2n)) = (chi2, chi2_reduced) {
        let limit = 1.0 + 3.0 * (2.0 / dof as f64).sqrt();
        if c2n <= limit {
            (
                Verdict::Consistent,
                format!(
                    "The potential reproduces the {n} observed levels within their stated \
                     uncertainties (χ² = {c2:.3}, ν = {dof}, χ²/ν = {c2n:.3}; rms obs − calc \
                     {rms:.4} cm⁻¹). This supports the curve near these levels; it does not \
                     prove it elsewhere."
                ),
            )
        } else {
            let w = worst.map_or(String::new(), |r| {
                format!(
                    " Largest deviation: v = {}, obs − calc = {:.4} cm⁻¹ ({:.1} σ).",
                    r.v,
                    r.residual_cm1,
                    r.normalized_residual.unwrap_or(f64::NAN)
                )
            });
            (
                Verdict::Inconsistent,
                format!(
                    "The potential does not reproduce the observed levels within their stated \
                     uncertainties (χ²/ν = {c2n:.3} for ν = {dof}, expected ≲ {limit:.2}).{w} \
                     Possible causes: constants that do not describe this range, the limits of \
                     first-order RKR, a wrong vibrational numbering, or underestimated σ."
                ),
            )
        }
    } else {
        let w = worst.map_or(String::new(), |r| {
            format!(
                ", largest |obs − calc| {:.4} cm⁻¹ at v = {}",
                r.residual_cm1.abs(),
                r.v
            )
        });
        (
            Verdict::NoUncertainties,
            format!(
                "Not every level has an uncertainty, so no statistical verdict is possible: rms \
                 obs − calc {rms:.4} cm⁻¹ over {n} levels{w}."
            ),
        )
    };
    if let Some(b) = b_rms_relative {
        summary.push_str(&format!(
            " B_v: rms relative deviation {:.3} % over {} levels.",
            100.0 * b,
            b_rel.len()
        ));
    }
    if !unmatched_v.is_empty() {
        summary.push_str(&format!(
            " Observed v with no bound level in the potential: {:?}.",
            unmatched_v
        ));
    }
    Ok(LoopCheck {
        alignment,
        rows,
        unmatched_v,
        offset_cm1: offset,
        chi2,
        dof,
        chi2_reduced,
        rms_cm1: rms,
        b_rms_relative,
        verdict,
        summary,
    })
}

/// Closing the loop in one call: build the RKR curve of `input` up to `v_max` (outer wall
/// `outer`), solve its levels (J = 0, default solver settings, as many levels as observed v
/// need) and compare them with the observations. Returns the levels and the check.
pub fn rkr_loop_check(
    observed: &[Level],
    input: &super::rkr::RkrInput,
    v_max: f64,
    outer: super::walls::OuterWall,
    alignment: Alignment,
) -> Result<(super::solver::LevelSet, LoopCheck)> {
    use super::Potential;
    use super::rkr::RkrPotential;
    use super::solver::{SolverSettings, solve_levels};
    let pot = RkrPotential::new(input, v_max, outer)?;
    let top_v = observed.iter().map(|l| l.v).max().unwrap_or(0);
    let top_g = pot.curve.points.last().map_or(0.0, |p| p.energy_cm1);
    let settings = SolverSettings {
        max_levels: Some(top_v as usize + 1),
        energy_max_cm1: pot.asymptote_cm1().is_none().then_some(1.5 * top_g + 1.0),
        ..Default::default()
    };
    let set = solve_levels(&pot, input.mu_u, &settings)?;
    let check = compare_levels(observed, &set.levels, alignment)?;
    Ok((set, check))
}
