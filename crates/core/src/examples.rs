//! Built-in SYNTHETIC example data sets, so every method can be tried before trusting it.
//!
//! All examples describe the invented molecule "Qz2" (it does not exist): levels computed from an
//! invented Morse-plus-C6-tail potential by `scripts/make_demo.py`, with Gaussian noise. The
//! files carry their true D0 and De in their header comments, so a user can see how far each
//! method lands from the truth on data of each kind.

use crate::intake::IntakeOptions;
use crate::session::Session;
use crate::settings::{AnalysisSettings, MassSpec};

/// One built-in example.
#[derive(Debug, Clone, Copy)]
pub struct Example {
    /// Stable identifier.
    pub id: &'static str,
    /// Short title for menus.
    pub title: &'static str,
    /// One or two sentences on what it shows.
    pub description: &'static str,
    /// File name it is offered under.
    pub file_name: &'static str,
    /// The table text (with its SYNTHETIC header comments).
    pub text: &'static str,
    /// Reduced mass of the invented molecule, u.
    pub mu_u: f64,
    /// Analysis settings (a JSON object) to use instead of the reduced mass alone, for examples
    /// that need more settings, such as isotopologue masses. The table itself is always `text`,
    /// so the module does not carry it twice.
    pub settings_json: Option<&'static str>,
}

/// Reduced mass of the invented Qz2 (u).
const QZ2_MU_U: f64 = 14.5;

/// Every built-in example; the first is the page's opening demo. A `static`, not a `const`: a
/// const is copied into every place that uses it, and with it the embedded tables.
pub static EXAMPLES: [Example; 4] = [
    Example {
        id: "qz2-levels",
        title: "Qz2 (synthetic): levels up to 99.7 % of the well",
        description: "Levels v = 0–38 of 43 bound ones: the near-dissociation fit applies, and the \
                      methods' spread shows the model uncertainty.",
        file_name: "qz2-levels.csv",
        text: include_str!("../data/demo/qz2-levels.csv"),
        mu_u: QZ2_MU_U,
        settings_json: None,
    },
    Example {
        id: "qz2-low-levels",
        title: "Qz2 (synthetic): the bottom of the well only",
        description: "Levels v = 0–10: more than half of D0 must be extrapolated, and a \
                      near-dissociation fit does not apply.",
        file_name: "qz2-low-levels.csv",
        text: include_str!("../data/demo/qz2-low-levels.csv"),
        mu_u: QZ2_MU_U,
        settings_json: None,
    },
    Example {
        id: "qz2-spacings",
        title: "Qz2 (synthetic): spacings ΔG",
        description: "Spacings ΔG_{v+½} for v = 0–23, fitted with exact finite-difference rows.",
        file_name: "qz2-spacings.csv",
        text: include_str!("../data/demo/qz2-spacings.csv"),
        mu_u: QZ2_MU_U,
        settings_json: None,
    },
    Example {
        id: "qz2-bands",
        title: "Qz2 (synthetic): band positions of two isotopologues",
        description: "Band origins ν(v′, v″) of an invented band system in two invented \
                      isotopologues: both states' constants and limits, the numbering check \
                      by isotope shifts, and D0″ by the energy cycle.",
        file_name: "qz2-bands.csv",
        text: include_str!("../data/demo/qz2-bands.csv"),
        mu_u: QZ2_MU_U,
        settings_json: Some(include_str!("../data/demo/qz2-bands.settings.json")),
    },
];

/// The example with identifier `id`.
pub fn example(id: &str) -> Option<&'static Example> {
    EXAMPLES.iter().find(|e| e.id == id)
}

impl Example {
    /// A fresh session holding this example with its reduced mass set (or with the example's
    /// own settings, when it has them).
    pub fn session(&self) -> Session {
        let settings = self
            .settings_json
            .and_then(settings_from_json)
            .unwrap_or_else(|| AnalysisSettings {
                mass: Some(MassSpec::ReducedMass { mu_u: self.mu_u }),
                ..AnalysisSettings::default()
            });
        Session::new(
            self.text,
            Some(self.file_name.into()),
            IntakeOptions::default(),
            settings,
        )
    }
}

/// Reads settings the way session documents are read (straight from the text), so the module
/// carries one settings reader rather than two.
fn settings_from_json(json: &str) -> Option<AnalysisSettings> {
    crate::session::settings_from_json(json).ok()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every example reads, is usable, and says it is synthetic.
    #[test]
    fn examples_are_usable_and_marked_synthetic() {
        for e in &EXAMPLES {
            if let Some(j) = e.settings_json {
                assert!(settings_from_json(j).is_some(), "{}: settings read", e.id);
            }
            assert!(e.text.starts_with("# SYNTHETIC"), "{}", e.id);
            let data = e.session().data().unwrap();
            data.check_usable().unwrap();
            assert_eq!(data.excluded_rows().count(), 0, "{}", e.id);
        }
    }

    /// The band example is the demo session document shipped beside it (the same table, name,
    /// reading and settings), rebuilt from the CSV and the settings alone. SOURCE: both files
    /// are written by scripts/make_band_demo.py; only `written_by` differs.
    #[test]
    fn band_example_matches_the_demo_session_document() {
        let doc = Session::from_json(include_str!("../data/demo/qz2-bands.session.json"))
            .expect("demo session document");
        let e = example("qz2-bands").expect("band example");
        let s = e.session();
        assert_eq!(s.input, doc.input);
        assert_eq!(s.intake, doc.intake);
        assert_eq!(s.settings, doc.settings);
        assert!(s.settings.mass.is_none());
    }
}
