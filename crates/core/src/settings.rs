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

/// How the reduced mass of the molecule is given.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
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
    /// Number of top levels used by the near-dissociation fit; `None` chooses automatically.
    pub lb_top_levels: Option<u32>,
    /// Force this polynomial order for G(v); `None` uses the recommended order.
    pub order: Option<u32>,
    /// The molecule's mass, when known (needed for C_n, Morse a, potentials).
    pub mass: Option<MassSpec>,
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
        }
    }
}
