//! The band-analysis document (`rungs-band-analysis`): both states, the array, the global fit,
//! the numbering check and the isotopologue predictions, serialisable and renderable as text.
//!
//! Documented field by field in `crates/core/REPORT_FORMAT.md` ("Band lists").

use serde::{Deserialize, Serialize};

use super::array::DeslandresArray;
use super::global::GlobalOrderSelection;
use super::numbering::NumberingCheck;
use crate::intake::BandPositions;
use crate::report::{Constants, Report, RowsSummary, ValueSigma, render_text};
use crate::settings::AnalysisSettings;

/// Name of the band-analysis document format.
pub const BAND_REPORT_FORMAT: &str = "rungs-band-analysis";
/// Version of the band-analysis document format.
pub const BAND_REPORT_FORMAT_VERSION: u32 = 2;

/// One isotopologue of the data (or a predicted one).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct IsotopologueOut {
    /// Tag as in the data (null for untagged rows).
    pub tag: Option<String>,
    /// First atom (label or mass as typed), when known.
    pub a: Option<String>,
    /// Second atom.
    pub b: Option<String>,
    /// Reduced mass, u, when known.
    pub mu_u: Option<f64>,
    /// Where the mass came from: `"tag"`, `"settings"` (bands.isotopologues), `"mass-setting"`
    /// (the molecule's mass, for untagged rows), or null when unknown.
    pub mass_from: Option<String>,
    /// ρ = (μ_ref/μ)^½ (null without a mass).
    pub rho: Option<f64>,
    /// Whether this is the reference isotopologue (the per-state analyses are its).
    pub reference: bool,
    /// Bands of this isotopologue.
    pub n_bands: usize,
    /// Whether its bands entered the joint (global) fit.
    pub in_joint_fit: bool,
    /// Its T00 = Te + G′(0) − G″(0) from the joint fit, cm⁻¹.
    pub t00_cm1: Option<ValueSigma>,
}

/// Residual of one band in the global fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandResidual {
    /// v′.
    pub v_upper: u32,
    /// v″.
    pub v_lower: u32,
    /// Isotopologue tag.
    pub isotopologue: Option<String>,
    /// Band origin used, cm⁻¹.
    pub position_cm1: f64,
    /// Fitted position, cm⁻¹.
    pub calc_cm1: f64,
    /// Observed − fitted, cm⁻¹.
    pub residual_cm1: f64,
    /// σ as used, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// Residual / (σ √(1 − leverage) √variance factor).
    pub studentized: Option<f64>,
    /// |studentized| above the threshold.
    pub outlier: bool,
}

/// The Dunham-constrained global fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GlobalFitOut {
    /// Table of order pairs and the choice.
    pub order_selection: GlobalOrderSelection,
    /// K′ used.
    pub order_upper: usize,
    /// K″ used.
    pub order_lower: usize,
    /// Whether both orders were forced by the settings.
    pub forced: bool,
    /// Bands fitted.
    pub n_bands: usize,
    /// Bands of the list left out of this fit, by isotopologue, with why (absent when none).
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub left_out: Vec<LeftOut>,
    /// Parameters.
    pub n_params: usize,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ² (residual sum of squares, cm⁻², without band σ).
    pub chi2: f64,
    /// χ²_ν.
    pub chi2_reduced: Option<f64>,
    /// Factor multiplying every band σ in the propagated uncertainties (null: not estimable).
    pub scale_factor: Option<f64>,
    /// The σ policy in words.
    pub uncertainty_note: String,
    /// Upper-state constants of the reference isotopologue (null when K′ = 0).
    pub upper: Option<Constants>,
    /// Lower-state constants.
    pub lower: Option<Constants>,
    /// T00 of the reference isotopologue.
    pub t00_cm1: ValueSigma,
    /// Te = T00 − G′(0) + G″(0).
    pub te_cm1: ValueSigma,
    /// Range of x = ρ(v′ + ½) covered (mass-reduced vibrational number of the upper state).
    pub upper_x_range: [f64; 2],
    /// Range of x = ρ(v″ + ½) covered.
    pub lower_x_range: [f64; 2],
    /// Residual of every band.
    pub residuals: Vec<BandResidual>,
}

/// The term values of one isotopologue from the model-free fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TermValuesOut {
    /// Isotopologue tag.
    pub isotopologue: Option<String>,
    /// The lower level held at T″ = 0.
    pub fixed_lower_v: u32,
    /// Upper levels: T′(v′) above the fixed lower level.
    pub upper: Vec<TermLevel>,
    /// Lower levels: T″(v″) above the fixed lower level.
    pub lower: Vec<TermLevel>,
    /// Bands used (the main connected part of the array).
    pub n_bands: usize,
    /// Parameters (levels − 1).
    pub n_params: usize,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ².
    pub chi2: f64,
    /// χ²_ν.
    pub chi2_reduced: Option<f64>,
    /// Factor multiplying the covariance below (√ of the variance factor): the band σ scaled
    /// by the σ policy, or the scatter when the bands had no σ; null when not estimable.
    pub scale_factor: Option<f64>,
    /// Labels of the covariance rows: `"T'(v)"`, `"T''(v)"` (the fixed level excluded).
    pub covariance_labels: Vec<String>,
    /// Full covariance of the free term values (row-major, scaled as `scale_factor` says), cm⁻².
    pub covariance: Vec<Vec<f64>>,
}

/// One term value.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TermLevel {
    /// v.
    pub v: u32,
    /// Term value, cm⁻¹.
    pub energy_cm1: f64,
    /// σ, cm⁻¹ (0 for the fixed level; null when not estimable).
    pub sigma_cm1: Option<f64>,
}

/// Both states' single-state analyses.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct States {
    /// The upper state's analysis of its term values (null: see `upper_note`).
    pub upper: Option<Report>,
    /// The lower state's analysis.
    pub lower: Option<Report>,
    /// Why the upper analysis is missing, or what its levels are.
    pub upper_note: String,
    /// Why the lower analysis is missing, or what its levels are.
    pub lower_note: String,
}

/// The upper state's convergence limit and the lower state's D0″ from an energy cycle.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConvergenceLimit {
    /// E_lim = T00 + D0′ above the lower v″ = 0, cm⁻¹ (σ statistical).
    pub upper_limit_cm1: Option<ValueSigma>,
    /// σ_model of E_lim (that of D0′), cm⁻¹.
    pub upper_limit_sigma_model_cm1: Option<f64>,
    /// Method of the D0′ used (the upper state's recommendation).
    pub d0_upper_method: Option<String>,
    /// The atomic excitation energy typed by the user, cm⁻¹.
    pub atomic_excitation_cm1: Option<f64>,
    /// D0″ = E_lim − E_atom, cm⁻¹.
    pub d0_lower_cm1: Option<ValueSigma>,
    /// σ_model of D0″, cm⁻¹.
    pub d0_lower_sigma_model_cm1: Option<f64>,
    /// The lower state's own recommended D0″ from its levels, for comparison, cm⁻¹.
    pub d0_lower_from_levels_cm1: Option<f64>,
    /// How the numbers were formed, or why they are missing.
    pub note: String,
}

/// A predicted level.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PredictedLevel {
    /// v.
    pub v: u32,
    /// G(v) above the potential minimum, cm⁻¹.
    pub energy_cm1: f64,
    /// σ, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// ρ(v + ½) lies outside the range the fit covered.
    pub extrapolated: bool,
}

/// A predicted band.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PredictedBand {
    /// v′.
    pub v_upper: u32,
    /// v″.
    pub v_lower: u32,
    /// Band origin, cm⁻¹.
    pub position_cm1: f64,
    /// σ, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// Either level lies outside the fitted range.
    pub extrapolated: bool,
}

/// Predictions for an isotopologue (usually one that was not measured).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Prediction {
    /// The isotopologue.
    pub isotopologue: IsotopologueOut,
    /// T00 = Te + G′(0) − G″(0).
    pub t00_cm1: ValueSigma,
    /// Upper-state constants Y_k0 ρ^k (ωe, ωexe …).
    pub upper: Option<Constants>,
    /// Lower-state constants.
    pub lower: Option<Constants>,
    /// Upper levels G′(v′) above the minimum.
    pub upper_levels: Vec<PredictedLevel>,
    /// Lower levels G″(v″) above the minimum.
    pub lower_levels: Vec<PredictedLevel>,
    /// Band origins for every (v′, v″) observed in any isotopologue.
    pub bands: Vec<PredictedBand>,
    /// Model and caveats.
    pub note: String,
}

/// Plot-ready series beyond the arrays.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandPlot {
    /// Global-fit residuals against v′, one series per isotopologue.
    pub residuals_by_upper: Vec<ResidualSeries>,
    /// Global-fit residuals against v″, one series per isotopologue.
    pub residuals_by_lower: Vec<ResidualSeries>,
}

/// Residuals of one isotopologue.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResidualSeries {
    /// Isotopologue tag.
    pub isotopologue: Option<String>,
    /// Points (x = v, y = residual, σ).
    pub points: Vec<crate::report::PlotPoint>,
}

/// What was analysed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandInput {
    /// Bands given.
    pub n_bands: usize,
    /// Band origins or heads.
    pub positions: BandPositions,
    /// Whether heads were corrected to origins with the rotational constants.
    pub heads_corrected: bool,
    /// σ added in quadrature to heads used as origins (0 when not applicable), cm⁻¹.
    pub head_sigma_added_cm1: f64,
    /// Whether the bands carried σ.
    pub sigma_given: bool,
    /// Range of v′.
    pub v_upper_range: [u32; 2],
    /// Range of v″.
    pub v_lower_range: [u32; 2],
}

/// The band-analysis document.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandReport {
    /// Always [`BAND_REPORT_FORMAT`].
    pub format: String,
    /// [`BAND_REPORT_FORMAT_VERSION`].
    pub format_version: u32,
    /// `rungs-core` version.
    pub software_version: String,
    /// CODATA adjustment of the constants used.
    pub codata_year: u32,
    /// Plain statement that the results are model-dependent estimates.
    pub statement: String,
    /// Conventions.
    pub conventions: Vec<String>,
    /// Assumptions.
    pub assumptions: Vec<String>,
    /// What was analysed.
    pub input: BandInput,
    /// Settings in force.
    pub settings: AnalysisSettings,
    /// T00 of the reference isotopologue (global fit), cm⁻¹.
    pub t00_cm1: ValueSigma,
    /// Te = T00 − G′(0) + G″(0) (global fit), cm⁻¹.
    pub te_cm1: ValueSigma,
    /// Both states' analyses of their term values.
    pub states: States,
    /// The numbering check.
    pub numbering: NumberingCheck,
    /// The upper state's convergence limit and D0″ by the energy cycle.
    pub convergence: ConvergenceLimit,
    /// The Dunham-constrained global fit.
    pub global_fit: GlobalFitOut,
    /// Model-free term values per isotopologue.
    pub term_values: Vec<TermValuesOut>,
    /// Deslandres arrays per isotopologue.
    pub arrays: Vec<DeslandresArray>,
    /// Isotopologues of the data.
    pub isotopologues: Vec<IsotopologueOut>,
    /// Predictions for the isotopologues asked for in the settings.
    pub predictions: Vec<Prediction>,
    /// Warnings.
    pub warnings: Vec<String>,
    /// Plot series.
    pub plot: BandPlot,
    /// Every input row not used, with its reason.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rows: Option<RowsSummary>,
    /// SHA-256 of the input text (hex), so a result can be tied to the exact data it came from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub input_sha256: Option<String>,
    /// A methods paragraph naming the published methods used, with references.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub methods: Option<crate::report::Methods>,
    /// The session that produced this document.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub session: Option<crate::session::Session>,
}

impl BandReport {
    /// Serialise as pretty JSON.
    pub fn to_json(&self) -> crate::Result<String> {
        serde_json::to_string_pretty(self).map_err(|e| {
            crate::Error::numerical("report", format!("JSON serialisation failed: {e}"))
        })
    }
}

fn pm(v: &ValueSigma, prec: usize) -> String {
    match v.sigma {
        Some(s) => format!("{:.prec$} ± {s:.prec$}", v.value),
        None => format!("{:.prec$}", v.value),
    }
}

fn opt(x: Option<f64>, prec: usize) -> String {
    x.map(|x| format!("{x:.prec$}")).unwrap_or("—".into())
}

fn constants_lines(s: &mut String, name: &str, c: &Option<Constants>) {
    use std::fmt::Write;
    let Some(c) = c else {
        let _ = writeln!(s, "  {name}: no vibrational terms (one level)");
        return;
    };
    let mut parts = Vec::new();
    for (n, x) in [
        ("ωe", &c.we_cm1),
        ("ωexe", &c.wexe_cm1),
        ("ωeye", &c.weye_cm1),
        ("ωeze", &c.weze_cm1),
    ] {
        if let Some(x) = x {
            parts.push(format!(
                "{n} = {}",
                pm(&ValueSigma::new(x.value, x.sigma), 5)
            ));
        }
    }
    let _ = writeln!(s, "  {name} (order {}): {}", c.order, parts.join(", "));
    let _ = writeln!(s, "      G(0) = {}", pm(&c.zero_point_cm1, 4));
}

fn render_array(s: &mut String, a: &DeslandresArray) {
    use std::fmt::Write;
    let tag = a.isotopologue.as_deref().unwrap_or("(untagged)");
    let _ = writeln!(
        s,
        "Deslandres array, isotopologue {tag} (rows v″, columns v′; * = breaks two chains, ? = inconsistent, ~ = not connected)"
    );
    if a.v_upper.len() <= 16 {
        let _ = write!(s, "  {:>5}", "v″\\v′");
        for v in &a.v_upper {
            let _ = write!(s, " {v:>11}");
        }
        let _ = writeln!(s);
        for (r, row) in a.cells.iter().enumerate() {
            let _ = write!(s, "  {:>5}", a.v_lower[r]);
            for cell in row {
                match cell {
                    Some(c) => {
                        let mark = if c.flags.contains(&super::array::CellFlag::BreaksTwoChains) {
                            '*'
                        } else if c.flags.contains(&super::array::CellFlag::Inconsistent) {
                            '?'
                        } else if c.flags.contains(&super::array::CellFlag::NotConnected) {
                            '~'
                        } else {
                            ' '
                        };
                        let _ = write!(s, " {:>10.2}{mark}", c.position_cm1);
                    }
                    None => {
                        let _ = write!(s, " {:>11}", "·");
                    }
                }
            }
            let _ = writeln!(s);
        }
    } else {
        let _ = writeln!(
            s,
            "  ({} columns: too wide to print; see the JSON document)",
            a.v_upper.len()
        );
    }
    let _ = writeln!(s, "  {}", a.note);
    if a.connected_parts > 1 {
        let _ = writeln!(
            s,
            "  {} separate parts: bands outside the largest are not placed by the term-value fit",
            a.connected_parts
        );
    }
    for f in &a.flagged {
        let _ = writeln!(
            s,
            "  ! v′ = {}, v″ = {}: {}",
            f.v_upper, f.v_lower, f.reason
        );
    }
}

/// The answer first: T00, each state's recommended D0 and ωe, ωexe (from the global fit), the
/// convergence limit, the orders and how many warnings follow; numbers rounded to their σ.
fn render_band_summary(s: &mut String, r: &BandReport) {
    use crate::format::{pm, value_sigma};
    use std::fmt::Write;
    let _ = writeln!(s, "Summary");
    let _ = writeln!(
        s,
        "  T00 = {} cm⁻¹",
        pm(r.t00_cm1.value, r.t00_cm1.sigma, 6)
    );
    let g = &r.global_fit;
    for (name, prime, state, constants) in [
        ("upper", "′", &r.states.upper, &g.upper),
        ("lower", "″", &r.states.lower, &g.lower),
    ] {
        let mut parts = Vec::new();
        match state.as_ref().map(|st| &st.recommended) {
            Some(rec) => match (rec.d0_cm1, &rec.method) {
                (Some(d0), Some(m)) => {
                    let model = rec
                        .sigma_model_cm1
                        .and_then(|sm| value_sigma(d0, Some(sm), 6).1)
                        .map(|sm| format!(" ± {sm} (model)"))
                        .unwrap_or_default();
                    parts.push(format!(
                        "D0{prime} = {}{}{model} cm⁻¹ ({})",
                        pm(d0, rec.sigma_stat_cm1, 6),
                        if rec.sigma_stat_cm1.is_some() {
                            " (stat)"
                        } else {
                            ""
                        },
                        crate::words::method_name(m)
                    ));
                }
                _ => parts.push(format!("D0{prime}: no recommended value")),
            },
            None => parts.push(format!("D0{prime}: not analysed")),
        }
        if let Some(c) = constants {
            for (sym, x) in [("ωe", &c.we_cm1), ("ωexe", &c.wexe_cm1)] {
                if let Some(x) = x {
                    parts.push(format!("{sym}{prime} = {} cm⁻¹", pm(x.value, x.sigma, 6)));
                }
            }
        }
        let _ = writeln!(s, "  {name} state: {}", parts.join("; "));
    }
    if let Some(lim) = &r.convergence.upper_limit_cm1 {
        let _ = writeln!(
            s,
            "  upper-state limit above v″ = 0: E_lim = T00 + D0′ = {} cm⁻¹",
            pm(lim.value, lim.sigma, 6)
        );
    }
    let _ = writeln!(
        s,
        "  global fit orders ({}, {}), {}",
        g.order_upper,
        g.order_lower,
        if g.forced {
            "forced by the settings"
        } else {
            "chosen by the data"
        }
    );
    let state_warnings: usize = [&r.states.upper, &r.states.lower]
        .into_iter()
        .flatten()
        .map(|st| st.warnings.len())
        .sum();
    let _ = writeln!(
        s,
        "  warnings: {} for the band list, {state_warnings} for the two states (listed below)",
        r.warnings.len()
    );
    let _ = writeln!(s);
}

/// Bands of one isotopologue that a fit left out.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeftOut {
    /// The isotopologue's tag as written.
    pub isotopologue: String,
    /// Bands left out.
    pub n_bands: usize,
    /// Why, in words.
    pub reason: String,
}

/// The bands a fit left out, in words for a count: "38 left out: 29Qz31Qz, 38 bands — why".
pub fn left_out_words(left_out: &[LeftOut]) -> String {
    let n: usize = left_out.iter().map(|l| l.n_bands).sum();
    let each: Vec<String> = left_out
        .iter()
        .map(|l| format!("{}, {} bands — {}", l.isotopologue, l.n_bands, l.reason))
        .collect();
    format!("{n} left out: {}", each.join("; "))
}

/// Renders a band analysis as readable plain text (both states' single-state reports included).
pub fn render_band_text(r: &BandReport) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Rungs band analysis  (format {} v{}, rungs-core {}, CODATA {})",
        r.format, r.format_version, r.software_version, r.codata_year
    );
    let _ = writeln!(s, "{}", "=".repeat(78));
    let _ = writeln!(s, "{}", r.statement);
    let _ = writeln!(s);
    render_band_summary(&mut s, r);
    let _ = writeln!(
        s,
        "Data: {} bands, v′ = {} … {}, v″ = {} … {}; {}{}; σ {}",
        r.input.n_bands,
        r.input.v_upper_range[0],
        r.input.v_upper_range[1],
        r.input.v_lower_range[0],
        r.input.v_lower_range[1],
        match r.input.positions {
            BandPositions::Origins => "band origins",
            BandPositions::Heads => "band heads",
        },
        if r.input.heads_corrected {
            " corrected to origins with B′, B″".to_string()
        } else if r.input.head_sigma_added_cm1 > 0.0 {
            format!(
                " used as origins, σ widened by {} cm⁻¹",
                r.input.head_sigma_added_cm1
            )
        } else {
            String::new()
        },
        if r.input.sigma_given {
            "given"
        } else {
            "not given (estimated from the scatter)"
        }
    );
    for i in &r.isotopologues {
        let _ = writeln!(
            s,
            "  isotopologue {}: {} bands, μ = {} u{}{}{}",
            i.tag.as_deref().unwrap_or("(untagged)"),
            i.n_bands,
            opt(i.mu_u, 6),
            i.rho.map(|x| format!(", ρ = {x:.6}")).unwrap_or_default(),
            if i.reference { ", reference" } else { "" },
            if i.in_joint_fit {
                ""
            } else {
                ", not in the joint fit"
            }
        );
    }
    let _ = writeln!(s);
    for a in &r.arrays {
        render_array(&mut s, a);
        let _ = writeln!(s);
    }
    for t in &r.term_values {
        let _ = writeln!(
            s,
            "Term values, isotopologue {} (model-free; T″(v″ = {}) = 0; {} bands, χ²_ν = {})",
            t.isotopologue.as_deref().unwrap_or("(untagged)"),
            t.fixed_lower_v,
            t.n_bands,
            opt(t.chi2_reduced, 3)
        );
        let line = |lv: &[TermLevel]| {
            lv.iter()
                .map(|l| match l.sigma_cm1 {
                    Some(sg) => format!("{}: {:.4}({:.4})", l.v, l.energy_cm1, sg),
                    None => format!("{}: {:.4}", l.v, l.energy_cm1),
                })
                .collect::<Vec<_>>()
                .join("  ")
        };
        let _ = writeln!(s, "  T′  {}", line(&t.upper));
        let _ = writeln!(s, "  T″  {}", line(&t.lower));
    }
    let _ = writeln!(s);
    let g = &r.global_fit;
    let _ = writeln!(
        s,
        "Global fit ν = T00 + [G′(v′) − G′(0)] − [G″(v″) − G″(0)]{}: orders ({}, {}), {} bands{}, χ²_ν = {}",
        if r.isotopologues.iter().filter(|i| i.in_joint_fit).count() > 1 {
            " with mass-scaled constants"
        } else {
            ""
        },
        g.order_upper,
        g.order_lower,
        g.n_bands,
        if g.left_out.is_empty() {
            String::new()
        } else {
            format!(" of {} ({})", r.input.n_bands, left_out_words(&g.left_out))
        },
        opt(g.chi2_reduced, 3)
    );
    let _ = writeln!(s, "  order choice: {}", g.order_selection.reason);
    let _ = writeln!(s, "  {}", g.uncertainty_note);
    constants_lines(&mut s, "upper state", &g.upper);
    constants_lines(&mut s, "lower state", &g.lower);
    let _ = writeln!(s, "  T00 = {} cm⁻¹", pm(&r.t00_cm1, 4));
    let _ = writeln!(
        s,
        "  Te  = {} cm⁻¹  (Te = T00 − G′(0) + G″(0))",
        pm(&r.te_cm1, 4)
    );
    let out: Vec<String> = g
        .residuals
        .iter()
        .filter(|x| x.outlier)
        .map(|x| format!("({}, {})", x.v_upper, x.v_lower))
        .collect();
    if !out.is_empty() {
        let _ = writeln!(s, "  possible outliers (v′, v″): {}", out.join(", "));
    }
    let _ = writeln!(s);

    let n = &r.numbering;
    let _ = writeln!(
        s,
        "Numbering of the upper state: {}",
        n.verdict_text.to_uppercase()
    );
    let _ = writeln!(
        s,
        "  {:>6} {:>9} {:>12} {:>10} {:>12} {:>10} {:>12}",
        "offset", "lowest v′", "chi2", "Δchi2", "ωe′", "ωexe′", "Te"
    );
    for o in &n.offsets {
        let _ = writeln!(
            s,
            "  {:>+6} {:>9} {:>12} {:>10} {:>12} {:>10} {:>12}{}",
            o.offset,
            o.lowest_v_upper,
            opt(o.chi2, 3),
            opt(o.delta_chi2, 3),
            opt(o.we_upper_cm1, 3),
            opt(o.wexe_upper_cm1, 4),
            opt(o.te_cm1, 2),
            if o.note.is_empty() {
                String::new()
            } else {
                format!("  {}", o.note)
            }
        );
    }
    let _ = writeln!(s, "  {}", n.why);
    let _ = writeln!(s, "  These data decide:");
    for d in &n.decidable {
        let _ = writeln!(s, "    + {d}");
    }
    if !n.not_decidable.is_empty() {
        let _ = writeln!(s, "  They do not decide:");
        for d in &n.not_decidable {
            let _ = writeln!(s, "    - {d}");
        }
    }
    let _ = writeln!(s);

    let c = &r.convergence;
    let _ = writeln!(s, "Convergence limit");
    match &c.upper_limit_cm1 {
        Some(e) => {
            let _ = writeln!(
                s,
                "  upper state's limit above the lower v″ = 0: T00 + D0′ = {} (stat) ± {} (model) cm⁻¹",
                pm(e, 3),
                opt(c.upper_limit_sigma_model_cm1, 3)
            );
        }
        None => {
            let _ = writeln!(s, "  upper state's limit: not available");
        }
    }
    if let Some(d) = &c.d0_lower_cm1 {
        let _ = writeln!(
            s,
            "  D0″ = T00 + D0′ − E_atom = {} (stat) ± {} (model) cm⁻¹ (E_atom = {} cm⁻¹){}",
            pm(d, 3),
            opt(c.d0_lower_sigma_model_cm1, 3),
            opt(c.atomic_excitation_cm1, 3),
            c.d0_lower_from_levels_cm1
                .map(|x| format!("; from the lower levels alone: {x:.3}"))
                .unwrap_or_default()
        );
    }
    let _ = writeln!(s, "  {}", c.note);
    let _ = writeln!(s);

    for p in &r.predictions {
        let _ = writeln!(
            s,
            "Prediction for {} (μ = {} u, ρ = {}): T00 = {} cm⁻¹",
            p.isotopologue.tag.as_deref().unwrap_or("?"),
            opt(p.isotopologue.mu_u, 6),
            opt(p.isotopologue.rho, 6),
            pm(&p.t00_cm1, 3)
        );
        constants_lines(&mut s, "upper state", &p.upper);
        constants_lines(&mut s, "lower state", &p.lower);
        let bands: Vec<String> = p
            .bands
            .iter()
            .take(40)
            .map(|b| {
                format!(
                    "({},{}) {:.3}{}",
                    b.v_upper,
                    b.v_lower,
                    b.position_cm1,
                    if b.extrapolated { "†" } else { "" }
                )
            })
            .collect();
        let _ = writeln!(s, "  bands: {}", bands.join("  "));
        let _ = writeln!(s, "  {}", p.note);
        let _ = writeln!(s);
    }

    if !r.warnings.is_empty() {
        let _ = writeln!(s, "Warnings");
        for w in &r.warnings {
            let _ = writeln!(s, "  ! {w}");
        }
        let _ = writeln!(s);
    }
    let _ = writeln!(s, "Conventions");
    for c in &r.conventions {
        let _ = writeln!(s, "  - {c}");
    }
    let _ = writeln!(s, "Assumptions");
    for a in &r.assumptions {
        let _ = writeln!(s, "  - {a}");
    }
    for (name, rep, note) in [
        ("UPPER STATE", &r.states.upper, &r.states.upper_note),
        ("LOWER STATE", &r.states.lower, &r.states.lower_note),
    ] {
        let _ = writeln!(s);
        let _ = writeln!(s, "{}", "#".repeat(78));
        let _ = writeln!(s, "{name}: {note}");
        let _ = writeln!(s, "{}", "#".repeat(78));
        if let Some(rep) = rep {
            s.push_str(&render_text(rep));
        }
    }
    s
}
