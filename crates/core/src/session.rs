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

use serde::{Deserialize, Serialize};

use crate::constants::CODATA_YEAR;
use crate::error::{Error, Result};
use crate::intake::{DataSet, IntakeOptions, read_table};
use crate::settings::{AnalysisSettings, MassSpec};

/// Schema name written into every session document.
pub const SESSION_SCHEMA: &str = "rungs-session";
/// Version of the session document this build writes and reads.
pub const SESSION_VERSION: u32 = 1;

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
        if let Some(MassSpec::ReducedMass { mu_u }) = &self.settings.mass {
            finite("mass.mu_u", *mu_u)?;
        }
        serde_json::to_string_pretty(self).map_err(|e| Error::Document {
            message: format!("cannot be written: {e}"),
        })
    }

    /// Opens what a user hands over as one file: a session document, an exported analysis
    /// report that embeds its session, or a plain table (which starts a new session with the
    /// default reading and settings).
    pub fn open(name: Option<String>, text: &str) -> Result<Session> {
        let head = text.trim_start_matches('\u{feff}').trim_start();
        if head.starts_with('{') {
            let value: serde_json::Value =
                serde_json::from_str(head).map_err(|e| Error::Document {
                    message: format!(
                        "looks like JSON but is not valid (line {}, column {}): {e}",
                        e.line(),
                        e.column()
                    ),
                })?;
            if value.get("schema").is_some() {
                return Session::from_json(head);
            }
            if let Some(session) = value.get("session").filter(|s| !s.is_null()) {
                return Session::from_json(&session.to_string());
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

    /// Reads a document, checking its schema name and version first.
    pub fn from_json(text: &str) -> Result<Session> {
        let value: serde_json::Value = serde_json::from_str(text).map_err(|e| Error::Document {
            message: format!(
                "not valid JSON (line {}, column {}): {e}",
                e.line(),
                e.column()
            ),
        })?;
        let schema = value.get("schema").and_then(|s| s.as_str());
        if schema != Some(SESSION_SCHEMA) {
            return Err(Error::Document {
                message: match schema {
                    Some(other) => format!("schema '{other}' is not '{SESSION_SCHEMA}'"),
                    None => format!("no 'schema' field: not a {SESSION_SCHEMA} document"),
                },
            });
        }
        match value.get("version").and_then(serde_json::Value::as_u64) {
            Some(v) if v == u64::from(SESSION_VERSION) => {}
            Some(v) if v > u64::from(SESSION_VERSION) => {
                return Err(Error::Document {
                    message: format!(
                        "version {v} was written by a newer Rungs; this one reads version \
                         {SESSION_VERSION}"
                    ),
                });
            }
            Some(v) => {
                return Err(Error::Document {
                    message: format!("unknown version {v}"),
                });
            }
            None => {
                return Err(Error::Document {
                    message: "no 'version' field".into(),
                });
            }
        }
        serde_json::from_str(text).map_err(|e| Error::Document {
            message: format!("{SESSION_SCHEMA} {SESSION_VERSION}: {e}"),
        })
    }
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
            ("{".to_string(), "not valid JSON"),
            (
                "{\"schema\": \"rungs-session\", \"version\": 1}".to_string(),
                "missing field",
            ),
        ] {
            let e = Session::from_json(&bad).expect_err(fragment).to_string();
            assert!(e.contains(fragment), "{fragment}: {e}");
        }
        let mut s2 = s.clone();
        s2.settings.lb_n = f64::NAN;
        assert!(s2.to_json().expect_err("nan").to_string().contains("lb_n"));
    }
}
