//! Analysis settings: every choice a user can make about how the data are analysed.
//!
//! Settings are plain data, serialised into the session document so a result can be
//! regenerated exactly. Every field has a default, and documents missing a field read as
//! the default (forward-compatible within a document version).

use serde::{Deserialize, Serialize};

/// Default Monte Carlo sample count.
pub const DEFAULT_MC_SAMPLES: u32 = 2000;
/// Default Monte Carlo seed (recorded in every report).
pub const DEFAULT_SEED: u64 = 20_261_201;
/// Default highest polynomial order tried for G(v).
pub const DEFAULT_MAX_ORDER: u32 = 6;

/// When the statistical uncertainties are scaled by √χ²_ν of the selected G(v) fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "kebab-case")]
pub enum SigmaScaling {
    /// Trust the data's σ as given (unscaled covariance).
    Never,
    /// Scale by √χ²_ν only when χ²_ν > 1 (the data scatter more than their σ): never shrinks σ.
    #[default]
    WhenAboveOne,
    /// Always scale by √χ²_ν.
    Always,
}

/// How the reduced mass of the molecule is given.
///
/// JSON: `{"kind": "reduced_mass", "mu_u": 14.5}` or `{"kind": "nuclides", "a": "1H", "b": "35Cl"}`.
/// Read through a flat helper struct rather than serde's internally tagged enums, which buffer
/// the whole object and cost a lot of code in the browser module.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind", try_from = "MassSpecFields")]
pub enum MassSpec {
    /// Reduced mass in u.
    ReducedMass {
        /// μ in unified atomic mass units.
        mu_u: f64,
    },
    /// Two nuclide labels such as `"35Cl"`, `"1H"`, `"D"`, resolved through the mass table.
    Nuclides {
        /// First atom.
        a: String,
        /// Second atom.
        b: String,
    },
}

/// The flat form [`MassSpec`] is read through.
#[derive(Deserialize)]
struct MassSpecFields {
    kind: String,
    mu_u: Option<f64>,
    a: Option<String>,
    b: Option<String>,
}

impl TryFrom<MassSpecFields> for MassSpec {
    type Error = String;
    fn try_from(f: MassSpecFields) -> Result<Self, String> {
        match (f.kind.as_str(), f.mu_u, f.a, f.b) {
            ("reduced_mass", Some(mu_u), None, None) => Ok(MassSpec::ReducedMass { mu_u }),
            ("nuclides", None, Some(a), Some(b)) => Ok(MassSpec::Nuclides { a, b }),
            ("reduced_mass", ..) => Err("mass of kind 'reduced_mass' needs exactly 'mu_u'".into()),
            ("nuclides", ..) => Err("mass of kind 'nuclides' needs exactly 'a' and 'b'".into()),
            (other, ..) => Err(format!(
                "mass kind '{other}' is neither 'reduced_mass' nor 'nuclides'"
            )),
        }
    }
}

/// Every user choice that shapes an analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct AnalysisSettings {
    /// Monte Carlo samples for the uncertainty of every estimate (0 disables Monte Carlo).
    pub mc_samples: u32,
    /// Seed of the Monte Carlo generator.
    pub seed: u64,
    /// Long-range exponent n of the near-dissociation (LeRoy–Bernstein) model.
    pub lb_n: f64,
    /// Number of top levels used by the near-dissociation fit; `None` chooses automatically
    /// (max(4, ⌈N/3⌉) of the N levels).
    pub lb_top_levels: Option<u32>,
    /// Force this polynomial order for G(v); `None` uses the recommended order.
    pub order: Option<u32>,
    /// The molecule's mass, when known (needed for C_n, Morse a, potentials).
    pub mass: Option<MassSpec>,
    /// Highest polynomial order of G(v) tried in the order-selection table (the data may cap it lower).
    #[serde(default = "default_max_order")]
    pub max_order: u32,
    /// Also fit the near-dissociation model with the exponent n free (needs ≥ 5 top levels).
    #[serde(default = "default_true")]
    pub lb_fit_n_free: bool,
    /// Theoretical C_n (cm⁻¹ Åⁿ) for a near-dissociation fit with C_n held fixed; needs μ.
    #[serde(default)]
    pub lb_cn_cm1_an: Option<f64>,
    /// The dissociation asymptote on the data's energy scale (cm⁻¹) when it is known — from
    /// atomic data, or 0 for binding energies below it: the near-dissociation fit with the
    /// asymptote held there gives v_D and C_n without extrapolating the limit.
    #[serde(default)]
    pub asymptote_cm1: Option<f64>,
    /// When statistical uncertainties are scaled by √χ²_ν.
    #[serde(default)]
    pub sigma_scaling: SigmaScaling,
    /// A curved (order ≥ 3) polynomial extrapolation is refused when its limit lies more than this
    /// multiple of the observed v-range above the highest observed level.
    #[serde(default = "default_curved_max_extrapolation")]
    pub curved_max_extrapolation: f64,
    /// No longer used: read from older documents only. The recommendation now judges the
    /// approach to the limit from the observed spacings (see `recommend`).
    #[serde(default = "default_near_dissociation_coverage")]
    pub near_dissociation_coverage: f64,
    /// |studentized residual| above which a point is flagged as a possible outlier.
    #[serde(default = "default_outlier_threshold")]
    pub outlier_threshold: f64,
    /// Fit a Morse/long-range potential curve directly to the levels (needs μ and r_e or B_v).
    #[serde(default = "default_true")]
    pub potential_fit: bool,
    /// Equilibrium distance r_e (Å) held fixed in the direct potential fit; `None` takes it
    /// from the B_v of the lowest levels when the data have them.
    #[serde(default)]
    pub re_angstrom: Option<f64>,
    /// Choices that apply to band lists only (see [`BandSettings`]).
    #[serde(default)]
    pub bands: BandSettings,
}

/// Default σ (cm⁻¹) added in quadrature to band heads used as origins when no rotational
/// constants are given (see [`BandSettings::head_sigma_cm1`]).
pub const DEFAULT_HEAD_SIGMA_CM1: f64 = 1.0;

/// Rotational constants of one electronic state: B_v = Be − αe (v + ½), for the reference
/// isotopologue (other isotopologues scale as Be ρ², αe ρ³).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StateRotation {
    /// Be, cm⁻¹.
    pub be_cm1: f64,
    /// αe, cm⁻¹ (0 when not given).
    #[serde(default)]
    pub alpha_e_cm1: f64,
}

/// Rotational constants of both states of a band system, used to correct band heads to origins.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BandRotation {
    /// Upper state.
    pub upper: StateRotation,
    /// Lower state.
    pub lower: StateRotation,
}

/// The two atoms of an isotopologue tag, as nuclide labels (`35Cl`, `D`) or masses in u written
/// with a decimal point (`29.0`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct IsotopologueMasses {
    /// The tag as it appears in the isotopologue column (or a new one, for predictions).
    pub tag: String,
    /// First atom.
    pub a: String,
    /// Second atom.
    pub b: String,
}

/// Choices that apply to band lists (ν(v′, v″) of one band system, possibly several
/// isotopologues). Every field has a default; documents without them read as the defaults.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct BandSettings {
    /// Rotational constants of both states; with band heads, they turn heads into origins.
    pub rotation: Option<BandRotation>,
    /// σ (cm⁻¹) added in quadrature to every band head used as an origin when no rotational
    /// constants are given.
    pub head_sigma_cm1: f64,
    /// Excitation energy (cm⁻¹) of the atomic asymptote of the upper state above the lower
    /// state's asymptote; gives the lower state's D0″ from the upper state's convergence limit.
    pub atomic_excitation_cm1: Option<f64>,
    /// Atoms of isotopologue tags that are not written as two nuclide labels.
    #[serde(deserialize_with = "crate::reading::at_most_names")]
    pub isotopologues: Vec<IsotopologueMasses>,
    /// Isotopologues to predict levels and band positions for (tags, resolved like data tags).
    #[serde(deserialize_with = "crate::reading::at_most_names")]
    pub predict: Vec<String>,
    /// Reference isotopologue (its tag); `None`: the one with the most bands.
    pub reference: Option<String>,
    /// Force the order of the upper state's G′(v) (global fit and level analysis).
    pub upper_order: Option<u32>,
    /// Force the order of the lower state's G″(v) (global fit and level analysis).
    pub lower_order: Option<u32>,
}

impl Default for BandSettings {
    fn default() -> Self {
        Self {
            rotation: None,
            head_sigma_cm1: DEFAULT_HEAD_SIGMA_CM1,
            atomic_excitation_cm1: None,
            isotopologues: Vec::new(),
            predict: Vec::new(),
            reference: None,
            upper_order: None,
            lower_order: None,
        }
    }
}

fn default_max_order() -> u32 {
    DEFAULT_MAX_ORDER
}
fn default_true() -> bool {
    true
}
fn default_curved_max_extrapolation() -> f64 {
    1.0
}
fn default_near_dissociation_coverage() -> f64 {
    0.9
}
fn default_outlier_threshold() -> f64 {
    3.0
}

impl Default for AnalysisSettings {
    fn default() -> Self {
        Self {
            mc_samples: DEFAULT_MC_SAMPLES,
            seed: DEFAULT_SEED,
            lb_n: 6.0,
            lb_top_levels: None,
            order: None,
            mass: None,
            max_order: DEFAULT_MAX_ORDER,
            lb_fit_n_free: true,
            lb_cn_cm1_an: None,
            asymptote_cm1: None,
            sigma_scaling: SigmaScaling::WhenAboveOne,
            curved_max_extrapolation: default_curved_max_extrapolation(),
            near_dissociation_coverage: default_near_dissociation_coverage(),
            outlier_threshold: default_outlier_threshold(),
            potential_fit: true,
            re_angstrom: None,
            bands: BandSettings::default(),
        }
    }
}
