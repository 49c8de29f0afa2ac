//! The analysis report: one serialisable document shared by the CLI (text and JSON) and the page.
//!
//! Field names are part of a versioned format ([`REPORT_FORMAT`], [`REPORT_FORMAT_VERSION`]),
//! documented field by field in `crates/core/REPORT_FORMAT.md`. Numbers a method cannot give
//! are `null`, never NaN, and every such place carries a `reason`. [`render_text`] turns a
//! report into a plain-text page for people.

use serde::{Deserialize, Serialize};

use crate::dunham::{DataKind, OrderSelection};
use crate::extrapolate::lm::Termination;
use crate::montecarlo::McResult;
use crate::morse::MorseParams;
use crate::potential::compare::LoopCheck;
use crate::potential::rkr::RkrPoint;
use crate::recommend::Recommended;
use crate::settings::{AnalysisSettings, SigmaScaling};
pub use crate::value::ValueSigma;

/// Name of the document format.
pub const REPORT_FORMAT: &str = "rungs-analysis";
/// Version of the document format; bumped on any incompatible change of field names or meaning.
pub const REPORT_FORMAT_VERSION: u32 = 2;

/// A level of the potential with its wavefunction samples (for the figure).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelOfCurve {
    /// Vibrational quantum number.
    pub v: u32,
    /// Energy above the potential minimum, cm⁻¹.
    pub energy_cm1: f64,
    /// B_v = (C_u/μ)⟨1/r²⟩, cm⁻¹.
    pub b_v_cm1: f64,
    /// Inner turning point, Å.
    pub r_inner_angstrom: f64,
    /// Outer turning point, Å.
    pub r_outer_angstrom: f64,
    /// Estimated numerical error of the energy, cm⁻¹.
    pub error_estimate_cm1: f64,
    /// (r in Å, ψ in Å^−½) samples, for a few levels only.
    pub wavefunction: Option<Vec<[f64; 2]>>,
}

/// The potential built from the analysis and its check against the data.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PotentialOut {
    /// How the curve was built.
    pub method: String,
    /// What the curve and the check rest on.
    pub note: String,
    /// Equilibrium distance √(C_u/(μ B(v_min))), Å.
    pub re_angstrom: f64,
    /// RKR turning points at the observed v.
    pub turning_points: Vec<RkrPoint>,
    /// (r in Å, V in cm⁻¹ above the minimum) samples of the curve, extensions included.
    pub curve: Vec<[f64; 2]>,
    /// Levels found by the solver.
    pub levels: Vec<LevelOfCurve>,
    /// Observed − calculated levels and B_v.
    pub check: LoopCheck,
    /// The lowest v at which the inner wall turns over (a sign of an inconsistent G or B).
    pub inner_turnover_v: Option<f64>,
    /// Warnings from the RKR construction.
    pub warnings: Vec<String>,
}

/// A methods paragraph and its references.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Methods {
    /// One paragraph of prose.
    pub paragraph: String,
    /// References cited in the paragraph, numbered in order of citation (`[1]`, `[2]`, …).
    pub references: Vec<String>,
}

/// A fitted constant with its uncertainty in the three readings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Constant {
    /// Value, cm⁻¹.
    pub value: f64,
    /// σ used throughout the report (see `uncertainty`).
    pub sigma: Option<f64>,
    /// σ from the data's σ alone (null when no σ were given).
    pub sigma_unscaled: Option<f64>,
    /// σ scaled by √χ²_ν of the fit (null without degrees of freedom).
    pub sigma_scaled: Option<f64>,
}

/// A Dunham coefficient Y_k0.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DunhamCoefficient {
    /// Name, e.g. `"Y10"`.
    pub name: String,
    /// Power k of (v + ½).
    pub k: usize,
    /// Value and σ, cm⁻¹.
    #[serde(flatten)]
    pub constant: Constant,
}

/// Vibrational constants from the selected fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Constants {
    /// Order of the fit they come from.
    pub order: usize,
    /// ωe = Y10.
    pub we_cm1: Option<Constant>,
    /// ωexe = −Y20.
    pub wexe_cm1: Option<Constant>,
    /// ωeye = Y30.
    pub weye_cm1: Option<Constant>,
    /// ωeze = Y40.
    pub weze_cm1: Option<Constant>,
    /// Every Y_k0, k = 1..order (higher orders Y50, Y60 … are only here).
    pub dunham: Vec<DunhamCoefficient>,
    /// Zero-point energy G(0) above the minimum of the polynomial (v = −½), cm⁻¹.
    pub zero_point_cm1: ValueSigma,
    /// Correlation matrix of the Y_k0 (row-major order × order).
    pub correlation: Vec<Vec<f64>>,
}

/// Where the data's uncertainties came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum SigmaSource {
    /// Per-point σ given with the data.
    Given,
    /// A full covariance given with the data.
    Covariance,
    /// No σ given: unit weights, σ estimated from the scatter about the selected fit.
    EstimatedFromScatter,
}

/// What was analysed.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct InputSummary {
    /// Levels or spacings.
    pub kind: DataKind,
    /// Number of data points.
    pub n_points: usize,
    /// Lowest level involved.
    pub v_min: f64,
    /// Highest level involved.
    pub v_max: f64,
    /// Whether v = 0 is among the data (levels) or the lowest spacing starts at v = 0.
    pub v0_observed: bool,
    /// Reduced mass, u (when given).
    pub mu_u: Option<f64>,
    /// Source of the uncertainties.
    pub sigma_source: SigmaSource,
}

/// How σ were obtained and scaled.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct UncertaintyInfo {
    /// Scaling policy in force.
    pub policy: SigmaScaling,
    /// Factor multiplying every data σ for all propagated uncertainties (√ of the variance factor).
    pub scale_factor: Option<f64>,
    /// χ²_ν of the selected fit.
    pub chi2_reduced: Option<f64>,
    /// Whether statistical uncertainties could be estimated at all.
    pub estimable: bool,
    /// Plain explanation.
    pub note: String,
}

/// A level used in the analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LevelOut {
    /// Vibrational quantum number.
    pub v: u32,
    /// Energy, cm⁻¹ (on the input's origin; rebuilt levels start at 0).
    pub energy_cm1: f64,
    /// σ as given (or propagated for rebuilt levels), cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// True when rebuilt from given spacings.
    pub derived: bool,
}

/// A spacing ΔG_{v+½}.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SpacingOut {
    /// Lower level v.
    pub v_lower: u32,
    /// Abscissa x = v + ½.
    pub x: f64,
    /// ΔG_{v+½}, cm⁻¹.
    pub spacing_cm1: f64,
    /// σ, cm⁻¹ (as used: including any scaling).
    pub sigma_cm1: Option<f64>,
    /// Correlation with the next spacing (v+1) when both exist.
    pub correlation_with_next: Option<f64>,
    /// True when derived from levels (false when given).
    pub derived: bool,
}

/// A residual of the selected fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ResidualOut {
    /// Level v (levels) or lower level (spacings).
    pub v: f64,
    /// Observed − fitted, cm⁻¹.
    pub residual_cm1: f64,
    /// σ as used, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// Externally studentized residual: whitened residual over √((1 − leverage)·variance
    /// factor), the factor re-estimated without this point where it comes from the scatter.
    pub studentized: Option<f64>,
    /// |studentized| above the threshold.
    pub outlier: bool,
}

/// Summary of the selected polynomial fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FitSummary {
    /// Order.
    pub order: usize,
    /// Whether the order was forced by the settings.
    pub forced: bool,
    /// Parameters.
    pub n_params: usize,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ² (RSS in cm⁻² with unit weights).
    pub chi2: f64,
    /// χ²/dof.
    pub chi2_reduced: Option<f64>,
    /// Residuals.
    pub residuals: Vec<ResidualOut>,
    /// Outlier threshold on |studentized|.
    pub outlier_threshold: f64,
}

/// Linear Birge–Sponer details.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BsDetails {
    /// A: value of the spacing line at x = 0, cm⁻¹ (order 2 only).
    pub line_intercept_cm1: Option<ValueSigma>,
    /// B: decrease of ΔG per quantum, cm⁻¹ (order 2 only).
    pub line_slope_cm1: Option<ValueSigma>,
    /// Zero crossing A/B (= v_D) of the line.
    pub x_intercept: Option<f64>,
    /// Area A²/(2B) under the line from x = 0 (= D0), cm⁻¹.
    pub area_cm1: Option<f64>,
    /// Where a refused curved extrapolation would have put v_D.
    pub refused_root_v: Option<f64>,
}

/// Near-dissociation (LeRoy–Bernstein) details.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LbDetails {
    /// Long-range exponent n (σ when fitted).
    pub n: ValueSigma,
    /// Whether n was fitted.
    pub n_fitted: bool,
    /// Whether X0 was fixed from a given C_n.
    pub cn_fixed: bool,
    /// Levels used in the fit.
    pub levels_used: Vec<u32>,
    /// Asymptote D on the data's energy scale, cm⁻¹.
    pub d_cm1: Option<ValueSigma>,
    /// X0, cm⁻¹.
    pub x0_cm1: Option<ValueSigma>,
    /// C_n, cm⁻¹ Åⁿ (needs μ).
    pub cn_cm1_an: Option<ValueSigma>,
    /// C_n, E_h a0ⁿ (needs μ).
    pub cn_au: Option<ValueSigma>,
    /// D − G(v_top): binding energy of the highest level (numbering-free), cm⁻¹.
    pub top_binding_cm1: Option<ValueSigma>,
    /// χ² of the fit (with the data covariance).
    pub chi2: Option<f64>,
    /// Degrees of freedom.
    pub dof: Option<usize>,
    /// Solver termination.
    pub termination: Option<Termination>,
    /// Solver iterations.
    pub iterations: Option<usize>,
    /// The asymptote was given (held fixed), not fitted.
    #[serde(default)]
    pub asymptote_known: bool,
    /// v_D mod 1: unchanged by an integer shift of the numbering.
    #[serde(default)]
    pub v_d_fraction: Option<f64>,
    /// s-wave scattering length from v_D and C_6, Å (n = 6, needs μ).
    #[serde(default)]
    pub scattering_length_angstrom: Option<ValueSigma>,
    /// The same in bohr (a0).
    #[serde(default)]
    pub scattering_length_a0: Option<ValueSigma>,
}

/// One correction order tried by the near-dissociation expansion.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExpansionOrder {
    /// Correction order L.
    pub order: usize,
    /// AICc of its fit (null when the order was not used, or too few levels for it).
    pub aicc: Option<f64>,
    /// Why it was not acceptable (null when it was).
    pub rejected: Option<String>,
}

/// Near-dissociation expansion details.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExpansionDetails {
    /// Long-range exponent n (given).
    pub n: f64,
    /// Whether X0 was fixed from a given C_n.
    pub cn_fixed: bool,
    /// Chosen correction order L.
    pub order: usize,
    /// Asymptote D on the data's energy scale, cm⁻¹.
    pub d_cm1: ValueSigma,
    /// v_D.
    pub v_d: ValueSigma,
    /// X0, cm⁻¹ (σ null when fixed).
    pub x0_cm1: ValueSigma,
    /// C_n from X0, cm⁻¹ Åⁿ (needs μ; σ null when fixed).
    pub cn_cm1_an: Option<ValueSigma>,
    /// C_n from X0, E_h a0ⁿ (needs μ).
    pub cn_au: Option<ValueSigma>,
    /// Correction coefficients p1 … pL of x = v_D − v.
    pub p: Vec<f64>,
    /// χ² of the fit (with the data covariance).
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Every order tried, with its AICc and why it was rejected.
    pub orders: Vec<ExpansionOrder>,
}

/// One fitted parameter of the direct potential fit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FittedParameter {
    /// Its name (De, β0, β1, …, C6).
    pub name: String,
    /// Its unit (empty for pure numbers).
    pub unit: String,
    /// Value and σ (scaled as the estimate's D0 is).
    pub value: ValueSigma,
}

/// One datum of the direct potential fit: observed and calculated.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PotentialFitRow {
    /// Vibrational level (the lower level for a spacing).
    pub v: u32,
    /// Observed level energy or spacing, cm⁻¹.
    pub observed_cm1: f64,
    /// The fitted curve's value, cm⁻¹ (levels: on the data's energy scale).
    pub calculated_cm1: f64,
    /// Observed B_v when it was fitted, cm⁻¹.
    #[serde(default)]
    pub b_observed_cm1: Option<f64>,
    /// The fitted curve's B_v, cm⁻¹.
    #[serde(default)]
    pub b_calculated_cm1: Option<f64>,
}

/// Direct fit of a Morse/long-range potential to the levels.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PotentialFitDetails {
    /// The fitted curve, in the form `rungs levels` and the page accept.
    pub curve: crate::potential::Mlr,
    /// Fitted parameters with σ.
    pub parameters: Vec<FittedParameter>,
    /// C_n of the tail, cm⁻¹ Åⁿ (σ null when held fixed).
    pub cn_cm1_an: ValueSigma,
    /// Whether C_n was held at a given value.
    pub cn_fixed: bool,
    /// Where the fixed re came from, in words.
    pub re_source: String,
    /// Number of β coefficients chosen by AICc.
    pub beta_terms: usize,
    /// Every number of β terms tried.
    pub orders: Vec<crate::potential::dpf::BetaOrder>,
    /// χ² against the data σ.
    pub chi2: f64,
    /// Degrees of freedom.
    pub dof: usize,
    /// Whether the fit converged.
    pub converged: bool,
    /// Eigenvalue solves used.
    pub evaluations: usize,
    /// Bound levels of the fitted curve (J = 0).
    pub bound_levels: Option<usize>,
    /// E(v = 0) above the minimum of the fitted curve, cm⁻¹.
    pub e0_cm1: f64,
    /// Observed and calculated value of every datum.
    pub rows: Vec<PotentialFitRow>,
}

/// One estimate of the dissociation limit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Estimate {
    /// Method: `observed-sum`, `birge-sponer-linear`, `birge-sponer-curved`, `leroy-bernstein`,
    /// `leroy-bernstein-n-free`, `leroy-bernstein-alt-levels`, `leroy-bernstein-cn-fixed`,
    /// `near-dissociation-expansion`, `near-dissociation-expansion-cn-fixed`.
    pub method: String,
    /// Human-readable label.
    pub label: String,
    /// Polynomial order (Birge–Sponer methods).
    pub order: Option<usize>,
    /// D0 from v = 0, cm⁻¹ (for observed-sum: the lower bound G(v_top) − G(0)).
    pub d0_cm1: Option<f64>,
    /// Statistical σ of D0 from the covariance, cm⁻¹.
    pub d0_sigma_cm1: Option<f64>,
    /// De = D0 + G(0), cm⁻¹.
    pub de_cm1: Option<f64>,
    /// σ of De, cm⁻¹.
    pub de_sigma_cm1: Option<f64>,
    /// v_D.
    pub v_d: Option<f64>,
    /// σ of v_D.
    pub v_d_sigma: Option<f64>,
    /// Bound levels ⌊v_D⌋ + 1.
    pub n_bound: Option<u64>,
    /// Fraction of D0 above the observed span.
    pub extrapolated_fraction: Option<f64>,
    /// What the number is, or why there is none.
    pub reason: String,
    /// Whether the estimate enters the recommendation and σ_model.
    pub defensible: bool,
    /// Why (not).
    pub defensible_reason: String,
    /// Factor multiplying the data σ for this estimate's statistical σ and Monte Carlo draws:
    /// √χ²_ν of its own fit under the scaling policy (1 = σ as given); null when not estimable.
    #[serde(default)]
    pub sigma_scale: Option<f64>,
    /// Monte Carlo distribution (null when not run).
    pub monte_carlo: Option<McResult>,
    /// Birge–Sponer details.
    pub birge_sponer: Option<BsDetails>,
    /// Near-dissociation details.
    pub leroy_bernstein: Option<LbDetails>,
    /// Near-dissociation expansion details.
    #[serde(default)]
    pub expansion: Option<ExpansionDetails>,
    /// Direct potential fit details (`potential-fit-mlr`).
    #[serde(default)]
    pub potential_fit: Option<PotentialFitDetails>,
}

/// Monte Carlo settings as run.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct McInfo {
    /// Whether it ran.
    pub ran: bool,
    /// Number of draws.
    pub samples: u32,
    /// Seed.
    pub seed: u64,
    /// Generator.
    pub generator: String,
    /// What was held fixed, or why it did not run.
    pub note: String,
}

/// A point with an error bar.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PlotPoint {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// Error bar (1σ), when known.
    pub sigma: Option<f64>,
}

/// A sampled model curve.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Curve {
    /// Method it belongs to.
    pub method: String,
    /// Legend text.
    pub label: String,
    /// (x, y) samples.
    pub points: Vec<[f64; 2]>,
    /// v_D of the method, when it has one.
    pub v_d: Option<f64>,
}

/// The linearised near-dissociation plot: (ΔG)^{(n−2)/(n+2)} against x = v + ½.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Linearised {
    /// Method whose line is drawn.
    pub method: String,
    /// n.
    pub n: f64,
    /// Exponent (n−2)/(n+2).
    pub exponent: f64,
    /// Data points (positive spacings only); σ propagated to first order.
    pub points: Vec<PlotPoint>,
    /// The model line (dG/dv)^{exponent} = slope·(v_D − x).
    pub line: Vec<[f64; 2]>,
}

/// Everything the page needs to draw.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct PlotData {
    /// Spacings at x = v + ½ with σ.
    pub spacings: Vec<PlotPoint>,
    /// Model spacing curves ΔG(x) of each estimate with a model.
    pub spacing_curves: Vec<Curve>,
    /// Level data G(v) with σ.
    pub levels: Vec<PlotPoint>,
    /// Model level curves G(v).
    pub level_curves: Vec<Curve>,
    /// Residuals of the selected fit at v with σ.
    pub residuals: Vec<PlotPoint>,
    /// Linearised near-dissociation plot.
    pub lb_linearised: Option<Linearised>,
}

/// The full analysis report.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Report {
    /// Always [`REPORT_FORMAT`].
    pub format: String,
    /// [`REPORT_FORMAT_VERSION`].
    pub format_version: u32,
    /// `rungs-core` version that produced it.
    pub software_version: String,
    /// CODATA adjustment of the constants used.
    pub codata_year: u32,
    /// Plain statement that the results are model-dependent estimates.
    pub statement: String,
    /// Conventions the numbers follow.
    pub conventions: Vec<String>,
    /// Assumptions the numbers rest on.
    pub assumptions: Vec<String>,
    /// What was analysed.
    pub input: InputSummary,
    /// Settings in force.
    pub settings: AnalysisSettings,
    /// How uncertainties were obtained.
    pub uncertainty: UncertaintyInfo,
    /// Levels used.
    pub levels: Vec<LevelOut>,
    /// Spacings (derived or given).
    pub spacings: Vec<SpacingOut>,
    /// Order-selection table.
    pub order_selection: OrderSelection,
    /// Selected fit.
    pub fit: FitSummary,
    /// Vibrational constants.
    pub constants: Constants,
    /// Every estimate.
    pub estimates: Vec<Estimate>,
    /// The recommended value.
    pub recommended: Recommended,
    /// Morse parameters from ωe, ωexe.
    pub morse: Option<MorseParams>,
    /// Why there are no Morse parameters.
    pub morse_note: Option<String>,
    /// Monte Carlo settings.
    pub monte_carlo: McInfo,
    /// Warnings.
    pub warnings: Vec<String>,
    /// Points a robust fit puts far outside the rest ([`crate::robust`]), each with the reason an
    /// exclusion would carry. Shown first; the analysis never excludes them itself.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub far_points: Vec<FarPointOut>,
    /// Plot series.
    pub plot: PlotData,
    /// The potential curve of the closed loop, its levels, and the observed − calculated check
    /// (from [`crate::pipeline`]; see [`crate::closing`]): the potential fitted directly to the
    /// levels when there is one, else the RKR curve built from the constants and the given B_v.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub potential: Option<PotentialOut>,
    /// The RKR curve as a comparison, when `potential` is the fitted one.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub potential_comparison: Option<PotentialOut>,
    /// Why there is no potential curve.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub potential_note: Option<String>,
    /// Every input row that was not used, with its reason (from [`crate::pipeline`]).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rows: Option<RowsSummary>,
    /// SHA-256 of the input text (hex), so a result can be tied to the exact data it came from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub input_sha256: Option<String>,
    /// A methods paragraph naming the published methods used, with references.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub methods: Option<Methods>,
    /// The session that produced this report: input text, reading choices, settings. Present
    /// when the analysis started from a session, so the document can be re-imported.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub session: Option<crate::session::Session>,
}

/// A point far outside the rest (see [`crate::robust::far_points`]).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FarPointOut {
    /// Level v (levels) or lower level of the spacing (spacings).
    pub v: f64,
    /// The input row it came from (from [`crate::pipeline`]; `None` when analysed without rows).
    pub row: Option<usize>,
    /// Observed − robust fit, cm⁻¹.
    pub residual_cm1: f64,
    /// |observed − robust fit| in robust standard deviations of the other points.
    pub ratio: f64,
    /// The reason an exclusion of this point would carry, in words.
    pub reason: String,
}

/// What happened to the rows of the input table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RowsSummary {
    /// Data rows in the input.
    pub total: usize,
    /// Rows the analysis used.
    pub used: usize,
    /// Rows not used, each with its row number (input line) and reason.
    pub excluded: Vec<ExcludedRow>,
}

/// One row that was not used.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ExcludedRow {
    /// Row number: line of the input.
    pub row: usize,
    /// `"input"` when the row could not be used as read, `"user"` when the user excluded it.
    pub by: String,
    /// Why.
    pub reason: String,
}

impl Report {
    /// Serialise as pretty JSON.
    pub fn to_json(&self) -> crate::Result<String> {
        serde_json::to_string_pretty(self).map_err(|e| {
            crate::Error::numerical("report", format!("JSON serialisation failed: {e}"))
        })
    }
}

fn num(x: Option<f64>, prec: usize) -> String {
    match x {
        Some(v) => format!("{v:.prec$}"),
        None => "—".into(),
    }
}

fn pm(value: Option<f64>, sigma: Option<f64>, prec: usize) -> String {
    match (value, sigma) {
        (Some(v), Some(s)) => format!("{v:.prec$} ± {s:.prec$}"),
        (Some(v), None) => format!("{v:.prec$}"),
        _ => "—".into(),
    }
}

fn gsig(x: f64) -> String {
    if x == 0.0 {
        "0".into()
    } else if x.abs() >= 1e-3 && x.abs() < 1e6 {
        format!("{x:.6}")
    } else {
        format!("{x:.6e}")
    }
}

/// The near-dissociation expansion's parameters and the correction orders it tried.
/// The direct potential fit's parameters, its fit and where its fixed parts came from.
fn render_potential_fit(s: &mut String, x: &PotentialFitDetails) {
    use std::fmt::Write;
    let params: Vec<String> = x
        .parameters
        .iter()
        .map(|p| {
            let unit = if p.unit.is_empty() {
                String::new()
            } else {
                format!(" {}", p.unit)
            };
            format!(
                "{} = {}{unit}",
                p.name,
                pm(Some(p.value.value), p.value.sigma, 6)
            )
        })
        .collect();
    let _ = writeln!(s, "      {}", params.join(";  "));
    let _ = writeln!(
        s,
        "      {} β terms (by AICc); χ² = {:.3} for ν = {}{}; {} radial-equation solves; {} bound levels; {}",
        x.beta_terms,
        x.chi2,
        x.dof,
        if x.converged {
            ""
        } else {
            " (did not converge)"
        },
        x.evaluations,
        x.bound_levels.map_or("—".to_string(), |n| n.to_string()),
        x.re_source
    );
    let c = &x.curve;
    let _ = writeln!(
        s,
        "      p = {}, q = {}, r_ref = {:.4} Å{}",
        c.p,
        c.q,
        c.r_ref_angstrom,
        if x.cn_fixed {
            "; C_n held at the given value"
        } else {
            ""
        }
    );
}

fn render_expansion(s: &mut String, x: &ExpansionDetails) {
    use std::fmt::Write;
    let _ = writeln!(
        s,
        "      n = {} (given), correction order L = {}{}",
        x.n,
        x.order,
        if x.cn_fixed {
            ", X0 fixed from the given C_n"
        } else {
            ""
        }
    );
    let _ = writeln!(
        s,
        "      D (asymptote, data scale) = {}   v_D = {}   X0 = {}",
        pm(Some(x.d_cm1.value), x.d_cm1.sigma, 4),
        pm(Some(x.v_d.value), x.v_d.sigma, 4),
        pm(Some(x.x0_cm1.value), x.x0_cm1.sigma, 6)
    );
    if let Some(c) = &x.cn_cm1_an {
        let _ = writeln!(
            s,
            "      C_n = {} cm⁻¹Åⁿ = {} E_h a0ⁿ",
            pm(Some(c.value), c.sigma, 1),
            x.cn_au
                .as_ref()
                .map(|a| pm(Some(a.value), a.sigma, 3))
                .unwrap_or("—".into())
        );
    }
    let tried: Vec<String> = x
        .orders
        .iter()
        .map(|o| match (&o.rejected, o.aicc) {
            (Some(why), _) => format!("L={} not used ({why})", o.order),
            (None, Some(a)) => format!("L={} AICc {a:.2}", o.order),
            (None, None) => format!("L={}", o.order),
        })
        .collect();
    let _ = writeln!(s, "      orders tried: {}", tried.join("; "));
}

/// The points far outside the rest, before anything else: every number below includes them.
fn far_points_text(s: &mut String, far: &[FarPointOut]) {
    use std::fmt::Write;
    if far.is_empty() {
        return;
    }
    let _ = writeln!(
        s,
        "Check first: {} far outside the rest (every result below still includes {})",
        if far.len() == 1 {
            "one point lies"
        } else {
            "points lie"
        },
        if far.len() == 1 { "it" } else { "them" }
    );
    for f in far {
        let row = f
            .row
            .map(|r| format!(" (row {r}; exclude row {r} to leave it out)"))
            .unwrap_or_default();
        let _ = writeln!(s, "  v = {}{row}: {}", f.v, f.reason);
    }
    let _ = writeln!(s);
}

/// The answer first: recommended D0 with its interval, De, ωe, ωexe, order, warning count.
fn text_summary(s: &mut String, r: &Report) {
    use std::fmt::Write;
    // The answer first: the recommended D0 with its interval, De, ωe, ωexe, the order used and
    // how many warnings follow; every number rounded to its σ as the page shows it.
    {
        use crate::format::{pm as pm_sig, value_sigma};
        let rec = &r.recommended;
        far_points_text(s, &r.far_points);
        let _ = writeln!(s, "Summary");
        match (rec.d0_cm1, &rec.method) {
            (Some(d0), Some(m)) => {
                let model = rec
                    .sigma_model_cm1
                    .and_then(|sm| value_sigma(d0, Some(sm), 6).1)
                    .map(|sm| format!(" ± {sm} (model)"))
                    .unwrap_or_default();
                let stat = if rec.sigma_stat_cm1.is_some() {
                    " (stat)"
                } else {
                    ""
                };
                let _ = writeln!(
                    s,
                    "  D0   = {}{stat}{model} cm⁻¹   ({})",
                    pm_sig(d0, rec.sigma_stat_cm1, 6),
                    crate::words::method_name(m)
                );
                if let (Some(lo), Some(hi)) = (rec.d0_low_cm1, rec.d0_high_cm1) {
                    let _ = writeln!(
                        s,
                        "         interval {} … {} cm⁻¹",
                        value_sigma(lo, rec.sigma_stat_cm1, 6).0,
                        value_sigma(hi, rec.sigma_stat_cm1, 6).0
                    );
                }
                if let Some(de) = rec.de_cm1 {
                    let _ = writeln!(
                        s,
                        "  De   = {} cm⁻¹",
                        value_sigma(de, rec.sigma_stat_cm1, 6).0
                    );
                }
            }
            (None, Some(_)) if !rec.d0_determined => {
                let _ = writeln!(
                    s,
                    "  D0, De: not determined by these data (they start far above v = 0)"
                );
                if let (Some(b), Some(lo), Some(hi)) = (
                    rec.above_top_cm1,
                    rec.above_top_low_cm1,
                    rec.above_top_high_cm1,
                ) {
                    let _ = writeln!(
                        s,
                        "  binding energy of the highest level = {b:.4} cm⁻¹, interval {lo:.4} … {hi:.4} cm⁻¹"
                    );
                }
            }
            _ => {
                let _ = writeln!(s, "  D0: no recommended value (see Recommended below)");
            }
        }
        for (name, c) in [("ωe", &r.constants.we_cm1), ("ωexe", &r.constants.wexe_cm1)] {
            if let Some(c) = c {
                let _ = writeln!(s, "  {name:<4} = {} cm⁻¹", pm_sig(c.value, c.sigma, 6));
            }
        }
        let _ = writeln!(
            s,
            "  G(v) order {}{}",
            r.fit.order,
            if r.fit.forced {
                format!(
                    ", forced by the settings (the data alone recommend order {})",
                    r.order_selection.recommended_order
                )
            } else {
                ", chosen by the data".to_string()
            }
        );
        let _ = writeln!(
            s,
            "  warnings: {}{}",
            r.warnings.len(),
            if r.warnings.is_empty() {
                ""
            } else {
                " (listed under Warnings below)"
            }
        );
        let _ = writeln!(s);
    }
}

/// What was read, where σ came from, and the table of polynomial orders.
fn text_data_and_orders(s: &mut String, r: &Report) {
    use std::fmt::Write;
    let kind = match r.input.kind {
        DataKind::Levels => "levels",
        DataKind::Spacings => "spacings",
    };
    let _ = writeln!(
        s,
        "Data: {} {kind}, v = {} … {}{}; σ: {}",
        r.input.n_points,
        r.input.v_min,
        r.input.v_max,
        r.input
            .mu_u
            .map(|m| format!(", μ = {m} u"))
            .unwrap_or_default(),
        match r.input.sigma_source {
            SigmaSource::Given => "given per point",
            SigmaSource::Covariance => "full covariance given",
            SigmaSource::EstimatedFromScatter => "not given (estimated from the scatter)",
        }
    );
    let _ = writeln!(s, "Uncertainty: {}", r.uncertainty.note);
    let _ = writeln!(s);

    let _ = writeln!(s, "Order selection for G(v) = Σ Y_k (v+½)^k");
    let _ = writeln!(
        s,
        "  {:>5} {:>4} {:>12} {:>9} {:>12} {:>12} {:>9} {:>8} {:>8}",
        "order", "dof", "chi2", "chi2/dof", "AICc", "BIC", "F", "p(F)", "|Y|/σ"
    );
    for row in &r.order_selection.rows {
        let _ = writeln!(
            s,
            "  {:>5} {:>4} {:>12} {:>9} {:>12} {:>12} {:>9} {:>8} {:>8}{}",
            row.order,
            row.dof,
            gsig(row.chi2),
            num(row.chi2_reduced, 3),
            num(row.aicc, 2),
            num(row.bic, 2),
            num(row.f_statistic, 2),
            num(row.f_p_value, 4),
            num(row.top_significance, 1),
            if row.order == r.fit.order {
                "  ← used"
            } else {
                ""
            }
        );
    }
    let _ = writeln!(
        s,
        "  Recommended order {}: {}",
        r.order_selection.recommended_order, r.order_selection.reason
    );
    if r.fit.forced {
        let _ = writeln!(s, "  Order {} forced by the settings.", r.fit.order);
    }
    let _ = writeln!(s);
}

/// Vibrational constants, Dunham coefficients and residuals of the selected fit.
fn text_constants(s: &mut String, r: &Report) {
    use std::fmt::Write;
    let _ = writeln!(
        s,
        "Vibrational constants (order-{} fit{}), cm⁻¹",
        r.constants.order,
        if r.fit.forced {
            ", the order forced by the settings"
        } else {
            ""
        }
    );
    let names = [
        ("ωe", &r.constants.we_cm1),
        ("ωexe", &r.constants.wexe_cm1),
        ("ωeye", &r.constants.weye_cm1),
        ("ωeze", &r.constants.weze_cm1),
    ];
    for (n, c) in names {
        if let Some(c) = c {
            let _ = writeln!(s, "  {:<6} {}", n, pm(Some(c.value), c.sigma, 6));
        }
    }
    for d in r.constants.dunham.iter().filter(|d| d.k > 4) {
        let _ = writeln!(
            s,
            "  {:<6} {}",
            d.name,
            pm(Some(d.constant.value), d.constant.sigma, 9)
        );
    }
    let _ = writeln!(
        s,
        "  G(0)   {}  (zero-point energy above the polynomial minimum)",
        pm(
            Some(r.constants.zero_point_cm1.value),
            r.constants.zero_point_cm1.sigma,
            4
        )
    );
    let _ = writeln!(s);

    let _ = writeln!(
        s,
        "Residuals of the order-{} fit (χ²/dof = {}, dof = {})",
        r.fit.order,
        num(r.fit.chi2_reduced, 3),
        r.fit.dof
    );
    let _ = writeln!(
        s,
        "  {:>6} {:>12} {:>10} {:>8}",
        "v", "obs−calc", "σ", "stud."
    );
    for x in &r.fit.residuals {
        let _ = writeln!(
            s,
            "  {:>6} {:>12.5} {:>10} {:>8}{}",
            x.v,
            x.residual_cm1,
            num(x.sigma_cm1, 5),
            num(x.studentized, 2),
            if x.outlier { "  OUTLIER?" } else { "" }
        );
    }
    let _ = writeln!(s);
}

/// Every estimate of the limit with its details.
fn text_estimates(s: &mut String, r: &Report) {
    use std::fmt::Write;
    let _ = writeln!(
        s,
        "Dissociation limit by each method (cm⁻¹; σ from the data covariance, data σ scaled per method as marked; MC = Monte Carlo median [16 %, 84 %])"
    );
    for e in &r.estimates {
        let _ = writeln!(
            s,
            "  {}{}",
            e.label,
            if e.defensible {
                ""
            } else {
                "  (not in the recommendation)"
            }
        );
        match e.d0_cm1 {
            Some(_) => {
                let _ = writeln!(
                    s,
                    "      D0 = {}   De = {}{}",
                    pm(e.d0_cm1, e.d0_sigma_cm1, 3),
                    pm(e.de_cm1, e.de_sigma_cm1, 3),
                    match e.sigma_scale {
                        Some(k) if k != 1.0 => format!("   (data σ ×{k:.3}: √χ²_ν of its own fit)"),
                        _ => String::new(),
                    }
                );
                if e.v_d.is_some() {
                    let _ = writeln!(
                        s,
                        "      v_D = {}   bound levels = {}   extrapolated fraction = {}",
                        pm(e.v_d, e.v_d_sigma, 4),
                        e.n_bound.map(|n| n.to_string()).unwrap_or("—".into()),
                        e.extrapolated_fraction
                            .map(|f| format!("{:.2} %", 100.0 * f))
                            .unwrap_or("—".into())
                    );
                }
                if let Some(mc) = &e.monte_carlo {
                    let _ = writeln!(
                        s,
                        "      MC D0: {} [{}, {}]  ({} finite, {} without limit, {} failed)",
                        num(mc.d0.median, 3),
                        num(mc.d0.p16, 3),
                        mc.d0
                            .p84
                            .map(|x| format!("{x:.3}"))
                            .unwrap_or("unbounded".into()),
                        mc.d0.finite,
                        mc.d0.no_limit,
                        mc.d0.failed
                    );
                }
            }
            None => {
                let _ = writeln!(s, "      no limit");
            }
        }
        if let Some(lb) = &e.leroy_bernstein {
            let levels: Vec<String> = lb.levels_used.iter().map(|v| v.to_string()).collect();
            let _ = writeln!(
                s,
                "      n = {}{}  levels v = {}",
                pm(Some(lb.n.value), lb.n.sigma, 3),
                if lb.n_fitted { " (fitted)" } else { " (fixed)" },
                levels.join(",")
            );
            if let Some(d) = &lb.d_cm1 {
                let _ = writeln!(
                    s,
                    "      D (asymptote, data scale) = {}   X0 = {}",
                    pm(Some(d.value), d.sigma, 4),
                    lb.x0_cm1
                        .as_ref()
                        .map(|x| pm(Some(x.value), x.sigma, 6))
                        .unwrap_or("—".into())
                );
            }
            if let Some(c) = &lb.cn_cm1_an {
                let _ = writeln!(
                    s,
                    "      C_n = {} cm⁻¹Åⁿ = {} E_h a0ⁿ",
                    pm(Some(c.value), c.sigma, 1),
                    lb.cn_au
                        .as_ref()
                        .map(|x| pm(Some(x.value), x.sigma, 3))
                        .unwrap_or("—".into())
                );
            }
            if lb.asymptote_known {
                let _ = writeln!(s, "      asymptote held at the given value");
            }
            if let Some(fr) = lb.v_d_fraction {
                let _ = writeln!(
                    s,
                    "      v_D mod 1 = {fr:.4} (unchanged by an integer shift of the numbering)"
                );
            }
            if let Some(a) = &lb.scattering_length_a0 {
                let _ = writeln!(
                    s,
                    "      s-wave scattering length (from v_D and C_6) = {} a0 = {} Å",
                    pm(Some(a.value), a.sigma, 2),
                    lb.scattering_length_angstrom
                        .as_ref()
                        .map(|x| pm(Some(x.value), x.sigma, 3))
                        .unwrap_or("—".into())
                );
            }
            if let Some(b) = &lb.top_binding_cm1 {
                let _ = writeln!(
                    s,
                    "      binding energy of the highest level = {}",
                    pm(Some(b.value), b.sigma, 4)
                );
            }
        }
        if let Some(x) = &e.expansion {
            render_expansion(s, x);
        }
        if let Some(x) = &e.potential_fit {
            render_potential_fit(s, x);
        }
        if let Some(bs) = &e.birge_sponer
            && let (Some(a), Some(b)) = (&bs.line_intercept_cm1, &bs.line_slope_cm1)
        {
            let _ = writeln!(
                s,
                "      line ΔG = A − B·x: A = {}, B = {}",
                pm(Some(a.value), a.sigma, 4),
                pm(Some(b.value), b.sigma, 5)
            );
        }
        let _ = writeln!(s, "      {}", e.reason);
        let _ = writeln!(s, "      {}", e.defensible_reason);
    }
    let _ = writeln!(s);
}

/// The recommendation with its interval and reason.
fn text_recommended(s: &mut String, r: &Report) {
    use std::fmt::Write;
    let rec = &r.recommended;
    let _ = writeln!(s, "Recommended");
    match (&rec.method, rec.d0_cm1) {
        (Some(m), Some(d0)) => {
            let _ = writeln!(
                s,
                "  D0 = {d0:.3} ± {} (stat, {}) ± {} (model) cm⁻¹   ({})",
                num(rec.sigma_stat_cm1, 3),
                match rec.sigma_stat_source.as_deref() {
                    Some("monte-carlo") => "Monte Carlo",
                    Some("covariance") => "from the fit's covariance",
                    Some(other) => other,
                    None => "—",
                },
                num(rec.sigma_model_cm1, 3),
                crate::words::method_name(m)
            );
            if let (Some(lo), Some(hi)) = (rec.d0_low_cm1, rec.d0_high_cm1) {
                let _ = writeln!(
                    s,
                    "  interval for D0: {lo:.3} … {hi:.3} cm⁻¹ (every admitted estimate with 2σ; never below the observed sum)"
                );
            }
            if let Some(de) = rec.de_cm1 {
                let _ = writeln!(s, "  De = D0 + G(0) = {de:.3} cm⁻¹");
            }
            if let (Some(v), Some(lo), Some(hi)) = (rec.v_d, rec.v_d_low, rec.v_d_high) {
                let count = match (rec.n_bound_min, rec.n_bound_max) {
                    (Some(a), Some(b)) if a == b => format!("{a}"),
                    (Some(a), Some(b)) => format!("{a} to {b}"),
                    _ => "—".into(),
                };
                let _ = writeln!(
                    s,
                    "  v_D = {v:.3} (interval {lo:.3} … {hi:.3}); bound levels: {count}"
                );
            }
            let admitted: Vec<&str> = rec
                .spread_methods
                .iter()
                .map(|m| crate::words::method_name(m))
                .collect();
            let _ = writeln!(s, "  admitted estimates: {}", admitted.join(", "));
        }
        (Some(m), None) if !rec.d0_determined => {
            let _ = writeln!(
                s,
                "  D0, De: not determined by these data (see the reason)   ({})",
                crate::words::method_name(m)
            );
            if let (Some(b), Some(lo), Some(hi)) = (
                rec.above_top_cm1,
                rec.above_top_low_cm1,
                rec.above_top_high_cm1,
            ) {
                let _ = writeln!(
                    s,
                    "  binding energy of the highest level: {b:.4} cm⁻¹ (interval {lo:.4} … {hi:.4})"
                );
            }
            if let Some(a) = rec.asymptote_cm1 {
                let _ = writeln!(s, "  asymptote on the data's energy scale: {a:.4} cm⁻¹");
            }
            if let (Some(v), Some(lo), Some(hi)) = (rec.v_d, rec.v_d_low, rec.v_d_high) {
                let _ = writeln!(s, "  v_D = {v:.3} (interval {lo:.3} … {hi:.3})");
            }
            let admitted: Vec<&str> = rec
                .spread_methods
                .iter()
                .map(|m| crate::words::method_name(m))
                .collect();
            let _ = writeln!(s, "  admitted estimates: {}", admitted.join(", "));
        }
        _ => {
            let _ = writeln!(s, "  none");
        }
    }
    let _ = writeln!(s, "  Reason: {}", rec.reason);
    let _ = writeln!(s);
}

/// Morse parameters, the potential check, Monte Carlo, warnings, conventions, assumptions.
fn text_closing(s: &mut String, r: &Report) {
    use std::fmt::Write;
    if let Some(m) = &r.morse {
        let _ = writeln!(s, "Morse parameters ({})", m.source);
        let _ = writeln!(
            s,
            "  De = {} cm⁻¹, D0 = {} cm⁻¹, v_D = {:.4}, bound levels = {}",
            pm(Some(m.de_cm1.value), m.de_cm1.sigma, 3),
            pm(Some(m.d0_cm1.value), m.d0_cm1.sigma, 3),
            m.v_d,
            m.n_bound
        );
        if let Some(a) = &m.a_per_angstrom {
            let _ = writeln!(s, "  a = {} Å⁻¹", pm(Some(a.value), a.sigma, 6));
        }
        if let Some(k) = &m.force_constant_n_per_m {
            let _ = writeln!(s, "  k_e = {} N/m", pm(Some(k.value), k.sigma, 4));
        }
        if let Some(re) = &m.re_angstrom {
            let _ = writeln!(s, "  re = {} Å (from Be)", pm(Some(re.value), re.sigma, 6));
        }
        let _ = writeln!(s);
    } else if let Some(n) = &r.morse_note {
        let _ = writeln!(s, "Morse parameters: {n}");
        let _ = writeln!(s);
    }

    if let Some(p) = &r.potential {
        let _ = writeln!(s, "Closing the loop: potential and levels");
        let _ = writeln!(s, "  {}; r_e = {:.5} Å", p.method, p.re_angstrom);
        let _ = writeln!(s, "  {}", p.note);
        let _ = writeln!(s, "  {}", p.check.summary);
        let _ = writeln!(
            s,
            "  {:>6} {:>14} {:>14} {:>12} {:>10} {:>12}",
            "v", "observed", "calculated", "obs−calc", "/σ", "B obs−calc"
        );
        for row in &p.check.rows {
            let _ = writeln!(
                s,
                "  {:>6} {:>14.4} {:>14.4} {:>12.4} {:>10} {:>12}",
                row.v,
                row.observed_cm1,
                row.calculated_cm1,
                row.residual_cm1,
                num(row.normalized_residual, 2),
                row.b_residual_cm1
                    .map(|b| format!("{b:.2e}"))
                    .unwrap_or("—".into())
            );
        }
        for w in &p.warnings {
            let _ = writeln!(s, "  ! {w}");
        }
        let _ = writeln!(s);
    } else if let Some(n) = &r.potential_note {
        let _ = writeln!(s, "Closing the loop: {n}");
        let _ = writeln!(s);
    }

    let _ = writeln!(
        s,
        "Monte Carlo: {} (seed {}, {} samples; the same seed and version give the same draws)",
        if r.monte_carlo.ran { "ran" } else { "not run" },
        r.monte_carlo.seed,
        r.monte_carlo.samples
    );
    let _ = writeln!(s, "  {}", r.monte_carlo.note);
    let _ = writeln!(s);

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
}

/// Render a report as readable plain text.
pub fn render_text(r: &Report) -> String {
    use std::fmt::Write;
    let mut s = String::new();
    let _ = writeln!(
        s,
        "Rungs vibrational analysis  (format {} v{}, rungs-core {}, CODATA {})",
        r.format, r.format_version, r.software_version, r.codata_year
    );
    let _ = writeln!(s, "{}", "=".repeat(78));
    let _ = writeln!(s, "{}", r.statement);
    let _ = writeln!(s);

    text_summary(&mut s, r);
    text_data_and_orders(&mut s, r);
    text_constants(&mut s, r);
    text_estimates(&mut s, r);
    text_recommended(&mut s, r);
    text_closing(&mut s, r);
    s
}
