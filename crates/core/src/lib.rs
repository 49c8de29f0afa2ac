//! # rungs-core: the numerics of Rungs
//!
//! Everything Rungs computes lives here: reading spectroscopic tables from text, unit and mass
//! handling, weighted least-squares fits of vibrational term values, the extrapolations to the
//! dissociation limit (Birge–Sponer, LeRoy–Bernstein), their statistical and model uncertainty,
//! potentials (Morse, RKR) and the radial Schrödinger solver.
//!
//! Architecture invariants (see DEVELOPERS.md):
//! - core does no IO: it takes text or values and returns values;
//! - core never panics on user data: failures are [`Error`] values, non-convergence is a result;
//! - core knows nothing of JavaScript, the DOM or the terminal;
//! - energies are in cm⁻¹, distances in Å and masses in u inside core; names carry the unit.

pub mod analysis;
pub mod bands;
pub mod closing;
pub mod constants;
pub mod data;
pub mod document;
pub mod dunham;
pub mod error;
pub mod examples;
pub mod export;
pub mod extrapolate;
pub mod format;
pub mod intake;
pub mod lsq;
pub mod masses;
mod masses_table;
pub mod methods;
pub mod montecarlo;
pub mod morse;
pub mod pipeline;
pub mod potential;
mod reading;
pub mod recommend;
pub mod report;
pub mod robust;
pub mod session;
pub mod settings;
mod sorting;
pub mod spacings;
pub mod summary;
pub mod units;
pub mod value;
pub mod words;

pub use analysis::{analyze_levels, analyze_spacings};
pub use bands::{BandReport, analyze_bands, render_band_text};
pub use error::{Error, Result, setting_in_words};
pub use pipeline::{Analysis, analyze_session};
pub use report::{Report, render_text};

/// Version of the Rungs numerics, stamped into every report and exported document.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");
