//! The document an analysis produces: one state's [`Report`] for levels and spacings, or the
//! two-state [`BandReport`] for band lists.

use serde::{Deserialize, Serialize};

use crate::Result;
use crate::bands::{BandReport, render_band_text};
use crate::report::{Report, RowsSummary, render_text};
use crate::session::Session;

/// The result of `analyze_session`. Serialised without a wrapper: a levels or spacings analysis
/// is the `rungs-analysis` document, a band analysis the `rungs-band-analysis` document
/// (tell them apart by `format`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Analysis {
    /// One state: levels or spacings.
    Levels(Box<Report>),
    /// Two states: a band list.
    Bands(Box<BandReport>),
}

impl Analysis {
    /// Pretty JSON of the document.
    pub fn to_json(&self) -> Result<String> {
        match self {
            Analysis::Levels(r) => r.to_json(),
            Analysis::Bands(r) => r.to_json(),
        }
    }

    /// Plain-text rendering for people.
    pub fn render_text(&self) -> String {
        match self {
            Analysis::Levels(r) => render_text(r),
            Analysis::Bands(r) => render_band_text(r),
        }
    }

    /// The input rows not used, with reasons.
    pub fn rows(&self) -> Option<&RowsSummary> {
        match self {
            Analysis::Levels(r) => r.rows.as_ref(),
            Analysis::Bands(r) => r.rows.as_ref(),
        }
    }

    /// The session that produced the document.
    pub fn session(&self) -> Option<&Session> {
        match self {
            Analysis::Levels(r) => r.session.as_ref(),
            Analysis::Bands(r) => r.session.as_ref(),
        }
    }

    /// Warnings of the document (for bands: the band-level ones; each state has its own).
    pub fn warnings(&self) -> &[String] {
        match self {
            Analysis::Levels(r) => &r.warnings,
            Analysis::Bands(r) => &r.warnings,
        }
    }

    /// The single-state report, when this is one.
    pub fn as_levels(&self) -> Option<&Report> {
        match self {
            Analysis::Levels(r) => Some(r),
            Analysis::Bands(_) => None,
        }
    }

    /// The band report, when this is one.
    pub fn as_bands(&self) -> Option<&BandReport> {
        match self {
            Analysis::Levels(_) => None,
            Analysis::Bands(r) => Some(r),
        }
    }
}
