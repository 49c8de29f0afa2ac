//! The session document: one versioned JSON file holding everything needed to redo an analysis.
//!
//! Schema name `rungs-session`, version 1. Fields:
//!
//! | field | type | meaning |
//! |---|---|---|
//! | `schema` | string | always `"rungs-session"` |
//! | `version` | integer | document version, `1` |
//! | `written_by` | string | program and version that wrote it, e.g. `"rungs 0.1.0"` |
//! | `codata_year` | integer | CODATA adjustment of the constants used (2022) |
//! | `input` | object | `name` (optional file name) and `text` (the table exactly as given) |
//! | `intake` | object | [`IntakeOptions`]: kind, band positions, header, delimiter, default unit, per-column roles and units, user exclusions with reasons |
//! | `settings` | object | [`AnalysisSettings`], including the mass specification |
//!
//! The input is stored as text, not as parsed rows, so that reading the document reproduces the
//! [`DataSet`] through the same intake path; with the column mapping stored explicitly (see
//! [`Session::from_dataset`]) the reading does not depend on detection rules. Writing then
//! reading a document gives back an equal value (floats round-trip exactly).
//!
//! ## Limits
//!
//! What a document can make the program allocate is bounded. Each limit is checked before the
//! memory for it is taken, and a document over a limit is refused with a message naming it:
//!
//! | what | limit |
//! |---|---|
//! | a session document (file, share link, or settings text) | [`MAX_DOCUMENT_BYTES`] bytes of JSON (64 MiB), checked before parsing |
//! | an exported analysis opened for its session | [`MAX_REPORT_BYTES`] bytes (256 MiB), checked before parsing; only its session is kept |
//! | the stored table | [`crate::intake::MAX_TABLE_BYTES`] bytes and [`crate::intake::MAX_TABLE_LINES`] lines, checked before it is read (as for any table) |
//! | excluded rows, σ edits | [`MAX_ROW_CHOICES`] entries each; reading stops at the first entry over it |
//! | column choices, isotopologue atoms, predictions | [`MAX_NAMED_ENTRIES`] entries each, likewise |
//! | a reason, file name, tag or atom label | [`MAX_TEXT_CHARS`] characters |
//!
//! Nesting is bounded by the JSON reader (128 levels). A document that cannot be read gets a
//! message naming its key as the document writes it (`"mc_samples" under "settings"`), what the
//! key is for and the values it allows.

use serde::{Deserialize, Serialize};

use crate::constants::CODATA_YEAR;
use crate::error::{Error, Result};
use crate::intake::{DataSet, IntakeOptions, read_table};
use crate::settings::{AnalysisSettings, MassSpec};

/// Schema name written into every session document.
pub const SESSION_SCHEMA: &str = "rungs-session";
/// Version of the session document this build writes and reads.
pub const SESSION_VERSION: u32 = 1;

/// Longest session document read, in bytes of JSON text: 64 MiB, four times the longest table
/// it can hold ([`crate::intake::MAX_TABLE_BYTES`]), leaving room for the reading choices.
/// Checked before the text is parsed.
pub const MAX_DOCUMENT_BYTES: usize = 64 * 1024 * 1024;

/// Longest exported analysis opened for the session it embeds, in bytes: 256 MiB (an analysis
/// of the longest table lists every row, level and residual beside the session). Checked
/// before parsing; everything but the session is skipped without being kept.
pub const MAX_REPORT_BYTES: usize = 256 * 1024 * 1024;

pub use crate::reading::{MAX_NAMED_ENTRIES, MAX_ROW_CHOICES};

/// Longest reason, file name, isotopologue tag or atom label in a document, in characters.
pub const MAX_TEXT_CHARS: usize = 10_000;

/// The input table of a session.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SessionInput {
    /// File name the table came from, if any.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub name: Option<String>,
    /// The table text exactly as given.
    pub text: String,
}

/// A session document (see the module documentation).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Session {
    /// Always [`SESSION_SCHEMA`].
    pub schema: String,
    /// Document version ([`SESSION_VERSION`]).
    pub version: u32,
    /// Program and version that wrote the document.
    pub written_by: String,
    /// CODATA year of the constants used.
    pub codata_year: u32,
    /// The input table.
    pub input: SessionInput,
    /// How the table is read, and the rows the user excluded.
    pub intake: IntakeOptions,
    /// Every analysis setting.
    #[serde(default)]
    pub settings: AnalysisSettings,
}

impl Session {
    /// A new document stamped with this build's version and constants year.
    pub fn new(
        text: impl Into<String>,
        name: Option<String>,
        intake: IntakeOptions,
        settings: AnalysisSettings,
    ) -> Session {
        Session {
            schema: SESSION_SCHEMA.to_string(),
            version: SESSION_VERSION,
            written_by: format!("rungs {}", crate::VERSION),
            codata_year: CODATA_YEAR,
            input: SessionInput {
                name,
                text: text.into(),
            },
            intake,
            settings,
        }
    }

    /// A document holding `text` read as `data` was read, with every detected choice made
    /// explicit ([`DataSet::resolved_options`]).
    pub fn from_dataset(
        text: impl Into<String>,
        name: Option<String>,
        data: &DataSet,
        settings: AnalysisSettings,
    ) -> Session {
        Session::new(text, name, data.resolved_options(), settings)
    }

    /// Reads the stored table again.
    pub fn data(&self) -> Result<DataSet> {
        read_table(&self.input.text, &self.intake)
    }

    /// Writes the document as pretty-printed JSON. Fails (naming the setting) if a setting is
    /// not a finite number, since JSON cannot hold NaN or infinity.
    pub fn to_json(&self) -> Result<String> {
        let finite = |name: &str, x: f64| {
            if x.is_finite() {
                Ok(())
            } else {
                Err(Error::parameter(
                    name,
                    format!("{x} cannot be saved: not a finite number"),
                ))
            }
        };
        let st = &self.settings;
        finite("lb_n", st.lb_n)?;
        finite("curved_max_extrapolation", st.curved_max_extrapolation)?;
        finite("near_dissociation_coverage", st.near_dissociation_coverage)?;
        finite("outlier_threshold", st.outlier_threshold)?;
        finite("bands.head_sigma_cm1", st.bands.head_sigma_cm1)?;
        if let Some(e) = st.bands.atomic_excitation_cm1 {
            finite("bands.atomic_excitation_cm1", e)?;
        }
        if let Some(r) = &st.bands.rotation {
            finite("bands.rotation.upper.be_cm1", r.upper.be_cm1)?;
            finite("bands.rotation.upper.alpha_e_cm1", r.upper.alpha_e_cm1)?;
            finite("bands.rotation.lower.be_cm1", r.lower.be_cm1)?;
            finite("bands.rotation.lower.alpha_e_cm1", r.lower.alpha_e_cm1)?;
        }
        if let Some(cn) = st.lb_cn_cm1_an {
            finite("lb_cn_cm1_an", cn)?;
        }
        if let Some(d) = st.asymptote_cm1 {
            finite("asymptote_cm1", d)?;
        }
        if let Some(MassSpec::ReducedMass { mu_u }) = &self.settings.mass {
            finite("mass.mu_u", *mu_u)?;
        }
        serde_json::to_string_pretty(self).map_err(|e| Error::Document {
            message: format!("the session cannot be written: {e}"),
        })
    }

    /// Opens what a user hands over as one file: a session document, an exported analysis
    /// report that embeds its session, or a plain table (which starts a new session with the
    /// default reading and settings).
    pub fn open(name: Option<String>, text: &str) -> Result<Session> {
        let head = text.trim_start_matches('\u{feff}').trim_start();
        if head.starts_with('{') {
            if head.len() > MAX_REPORT_BYTES {
                return Err(too_long("the JSON document", head.len(), MAX_REPORT_BYTES));
            }
            // First pass: only the type of document, everything else skipped unkept.
            let probe: Probe = serde_json::from_str(head).map_err(|e| {
                let full =
                    crate::reading::read::<serde::de::IgnoredAny>(head, "the JSON file", None);
                full.err().unwrap_or_else(|| Error::Document {
                    message: format!(
                        "the JSON file is neither a {SESSION_SCHEMA} document nor an analysis \
                         report with its session ({})",
                        plain_probe_error(&e)
                    ),
                })
            })?;
            if probe.schema.is_some() {
                return Session::from_json(head);
            }
            if let Some(inner) = probe.session {
                check_kind(
                    inner.schema.as_deref(),
                    inner.version,
                    "the session in the analysis",
                )?;
                let wrapped: Wrapped = crate::reading::read(head, "the analysis file", None)?;
                wrapped.session.check_limits()?;
                return Ok(wrapped.session);
            }
            return Err(Error::Document {
                message: format!(
                    "a JSON file that is neither a {SESSION_SCHEMA} document nor an analysis \
                     report with its session"
                ),
            });
        }
        Ok(Session::new(
            text,
            name,
            IntakeOptions::default(),
            AnalysisSettings::default(),
        ))
    }

    /// Opens the bytes of a file as [`Session::open`] does, after checking their length
    /// against [`MAX_REPORT_BYTES`] (the longest document read) and decoding them
    /// ([`crate::intake::decode`]: UTF-8, UTF-16 with a byte-order mark, else Latin-1).
    /// Returns the session and the encoding found. The command line and the Python package
    /// both read files through this.
    pub fn open_bytes(name: Option<String>, bytes: &[u8]) -> Result<(Session, &'static str)> {
        if bytes.len() > MAX_REPORT_BYTES {
            return Err(too_long("the file", bytes.len(), MAX_REPORT_BYTES));
        }
        let (text, encoding) = crate::intake::decode(bytes);
        Ok((Session::open(name, &text)?, encoding))
    }

    /// Reads a document, checking its size first, then its schema name and version; every
    /// limit of the module documentation applies.
    pub fn from_json(text: &str) -> Result<Session> {
        if text.len() > MAX_DOCUMENT_BYTES {
            return Err(too_long(
                "the session document",
                text.len(),
                MAX_DOCUMENT_BYTES,
            ));
        }
        let head: Head = serde_json::from_str(text).map_err(|e| match e.classify() {
            serde_json::error::Category::Data => Error::Document {
                message: format!(
                    "the document is not a {SESSION_SCHEMA} document: \"schema\" must be \"{SESSION_SCHEMA}\" \
                     and \"version\" a whole number"
                ),
            },
            _ => crate::reading::read::<serde::de::IgnoredAny>(text, "the session document", None)
                .err()
                .unwrap_or_else(|| Error::Document {
                    message: "the session document cannot be read".into(),
                }),
        })?;
        check_kind(head.schema.as_deref(), head.version, "the session document")?;
        let session: Session = crate::reading::read(text, "the session document", None)?;
        session.check_limits()?;
        Ok(session)
    }

    /// Refuses text fields longer than [`MAX_TEXT_CHARS`] (the lists are bounded as they are
    /// read, the table when it is read).
    fn check_limits(&self) -> Result<()> {
        let long = |what: &str, t: &str| -> Result<()> {
            if t.len() > MAX_TEXT_CHARS && t.chars().count() > MAX_TEXT_CHARS {
                return Err(Error::Document {
                    message: format!(
                        "{what} is longer than {MAX_TEXT_CHARS} characters, the limit for such \
                         text in a document"
                    ),
                });
            }
            Ok(())
        };
        if let Some(n) = &self.input.name {
            long("the file name (\"name\" under \"input\")", n)?;
        }
        long("\"written_by\"", &self.written_by)?;
        for e in &self.intake.exclusions {
            long(
                &format!("the reason given for excluding row {}", e.row),
                &e.reason,
            )?;
        }
        let b = &self.settings.bands;
        for i in &b.isotopologues {
            long(
                "an isotopologue tag or atom (\"isotopologues\" under \"bands\")",
                &i.tag,
            )?;
            long(
                "an isotopologue tag or atom (\"isotopologues\" under \"bands\")",
                &i.a,
            )?;
            long(
                "an isotopologue tag or atom (\"isotopologues\" under \"bands\")",
                &i.b,
            )?;
        }
        for t in b.predict.iter().chain(&b.reference) {
            long(
                "an isotopologue tag (\"predict\" or \"reference\" under \"bands\")",
                t,
            )?;
        }
        if let Some(MassSpec::Nuclides { a, b }) = &self.settings.mass {
            long("an atom of the mass (\"a\" or \"b\" under \"mass\")", a)?;
            long("an atom of the mass (\"a\" or \"b\" under \"mass\")", b)?;
        }
        Ok(())
    }
}

/// Analysis settings alone, as JSON text (missing keys take their defaults), with the limits
/// and messages of a session document's `settings`.
pub fn settings_from_json(text: &str) -> Result<AnalysisSettings> {
    if text.len() > MAX_DOCUMENT_BYTES {
        return Err(too_long("the settings", text.len(), MAX_DOCUMENT_BYTES));
    }
    crate::reading::read(text, "the settings", Some("settings"))
}

/// The refusal of a text longer than its limit.
fn too_long(what: &str, len: usize, limit: usize) -> Error {
    Error::Document {
        message: format!(
            "{what} is {:.1} MiB long, more than the limit of {} MiB; it is not read",
            len as f64 / 1_048_576.0,
            limit / 1_048_576
        ),
    }
}

/// Checks the schema name and version found by a first pass.
fn check_kind(schema: Option<&str>, version: Option<u64>, what: &str) -> Result<()> {
    if schema != Some(SESSION_SCHEMA) {
        return Err(Error::Document {
            message: match schema {
                Some(other) => format!("{what} has schema '{other}', not '{SESSION_SCHEMA}'"),
                None => format!("{what} has no 'schema' field: not a {SESSION_SCHEMA} document"),
            },
        });
    }
    match version {
        Some(v) if v == u64::from(SESSION_VERSION) => Ok(()),
        Some(v) if v > u64::from(SESSION_VERSION) => Err(Error::Document {
            message: format!(
                "{what} has version {v}, written by a newer Rungs; this one reads version \
                 {SESSION_VERSION}"
            ),
        }),
        Some(v) => Err(Error::Document {
            message: format!(
                "{what} has unknown version {v}: this Rungs reads version {SESSION_VERSION}"
            ),
        }),
        None => Err(Error::Document {
            message: format!("{what} has no 'version' field"),
        }),
    }
}

/// A parse error of the first pass in plain words (its position only).
fn plain_probe_error(e: &serde_json::Error) -> String {
    format!("line {}, column {}", e.line(), e.column())
}

/// The first pass over a session document: its type only (other keys are skipped unkept).
#[derive(Deserialize)]
struct Head {
    schema: Option<String>,
    version: Option<u64>,
}

/// The first pass over any JSON file opened: a session document has `schema`, an exported
/// analysis `session` (null when it was exported without one).
#[derive(Deserialize)]
struct Probe {
    schema: Option<serde::de::IgnoredAny>,
    #[serde(default)]
    session: Option<Head>,
}

/// An exported analysis read for its session only.
#[derive(Deserialize)]
struct Wrapped {
    session: Session,
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::intake::DataKind;

    #[test]
    fn write_read_and_redo() {
        let text = "v,E\n0,0\n1,100\n2,195\n";
        let data = read_table(text, &IntakeOptions::default()).expect("read");
        let mut s = Session::from_dataset(
            text,
            Some("a.csv".into()),
            &data,
            AnalysisSettings::default(),
        );
        s.intake.exclude(3, "suspect");
        let json = s.to_json().expect("json");
        assert!(json.contains("\"schema\": \"rungs-session\""));
        let back = Session::from_json(&json).expect("read back");
        assert_eq!(back, s);
        let d = back.data().expect("data");
        assert_eq!(d.kind, DataKind::Levels);
        assert_eq!(d.usable_count(), 2);
    }

    #[test]
    fn refusals() {
        let s = Session::new(
            "v,E\n",
            None,
            IntakeOptions::default(),
            AnalysisSettings::default(),
        );
        let json = s.to_json().expect("json");
        for (bad, fragment) in [
            (json.replace("rungs-session", "other"), "schema 'other'"),
            (json.replace("\"version\": 1", "\"version\": 2"), "newer"),
            (json.replace("\"version\": 1,", ""), "no 'version'"),
            ("{".to_string(), "ends too early"),
            ("{]".to_string(), "not valid JSON"),
            (
                "{\"schema\": \"rungs-session\", \"version\": 1}".to_string(),
                "has no \"written_by\"",
            ),
        ] {
            let e = Session::from_json(&bad).expect_err(fragment).to_string();
            assert!(e.contains(fragment), "{fragment}: {e}");
        }
        let mut s2 = s.clone();
        s2.settings.lb_n = f64::NAN;
        // Named as the page labels the setting (common practice, no source).
        let e = s2.to_json().expect_err("nan").to_string();
        assert!(e.starts_with("LeRoy–Bernstein n: "), "{e}");
    }
}
