//! The error type of core: every failure a user can provoke, with the context needed to fix it.
//!
//! Core never panics on user input; anything that can go wrong with data or settings comes back
//! as an [`Error`] whose message names the row, column or parameter involved.

use thiserror::Error as ThisError;

/// Result alias used throughout core.
pub type Result<T> = std::result::Result<T, Error>;

/// A failure of a core computation, readable by a person as is.
#[derive(Debug, Clone, PartialEq, ThisError)]
pub enum Error {
    /// The input text could not be read as a table.
    #[error("line {line}: {message}")]
    Parse {
        /// 1-based line number in the input text.
        line: usize,
        /// What went wrong.
        message: String,
    },
    /// A value in a named column of a row is unusable.
    #[error("row {row}, column '{column}': {message}")]
    Cell {
        /// 1-based data row number (as a person counts rows in the file).
        row: usize,
        /// Column name as written in the header, or its role if there was no header.
        column: String,
        /// What went wrong.
        message: String,
    },
    /// A whole column cannot be used as it stands (unknown unit, missing air/vacuum, …).
    #[error("column {index} ('{name}'): {message}")]
    Column {
        /// 1-based column number.
        index: usize,
        /// Column name as written in the header (or its role when there is no header).
        name: String,
        /// What went wrong and how to fix it.
        message: String,
    },
    /// The input as a whole cannot be used (empty, no recognisable columns, …).
    #[error("{message}")]
    Input {
        /// What went wrong and how to fix it.
        message: String,
    },
    /// A saved document (session) cannot be read.
    #[error("{message}")]
    Document {
        /// What went wrong.
        message: String,
    },
    /// Too few usable data points for the requested analysis.
    #[error("too few usable data points for {what}: {have} usable, at least {need} needed")]
    TooFewPoints {
        /// The analysis that was asked for.
        what: String,
        /// Usable points available.
        have: usize,
        /// Points required.
        need: usize,
    },
    /// A setting or parameter is out of its valid range. Shown as the setting's name in the
    /// user's words ([`setting_in_words`]), then the message.
    #[error("{}: {message}", setting_in_words(name))]
    Parameter {
        /// The setting's name as the code knows it (a settings key such as `lb_n`); shown to
        /// people only through [`setting_in_words`].
        name: String,
        /// What is wrong with it.
        message: String,
    },
    /// A numerical procedure could not produce a result.
    #[error("{what}: {message}")]
    Numerical {
        /// The computation that failed.
        what: String,
        /// Why.
        message: String,
    },
}

impl Error {
    /// Shorthand for [`Error::Parameter`].
    pub fn parameter(name: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Parameter {
            name: name.into(),
            message: message.into(),
        }
    }

    /// The message without its context (row, column or setting): for a caller that names the
    /// context itself.
    pub fn detail(&self) -> String {
        match self {
            Error::Parse { message, .. }
            | Error::Cell { message, .. }
            | Error::Column { message, .. }
            | Error::Input { message }
            | Error::Document { message }
            | Error::Parameter { message, .. }
            | Error::Numerical { message, .. } => message.clone(),
            e @ Error::TooFewPoints { .. } => e.to_string(),
        }
    }

    /// Shorthand for [`Error::Numerical`].
    pub fn numerical(what: impl Into<String>, message: impl Into<String>) -> Self {
        Error::Numerical {
            what: what.into(),
            message: message.into(),
        }
    }
}

/// Every setting name the code gives [`Error::parameter`] that is not already in words, with the
/// words a user reads for it (the page's labels where the page has the setting). A name missing
/// here is shown as written, so `tests::every_named_setting_has_words` reads the sources and
/// fails on any name that is a single word or holds `_` or `.` and is missing.
const SETTING_WORDS: &[(&str, &str)] = &[
    ("lb_n", "LeRoy–Bernstein n"),
    ("lb_top_levels", "Top levels for LeRoy–Bernstein"),
    ("lb_cn_cm1_an", "Theoretical C_n"),
    ("max_order", "Highest order tried"),
    ("order", "G(v) order"),
    ("Monte Carlo samples", "Monte Carlo samples"),
    (
        "curved_max_extrapolation",
        "Longest extrapolation of a curved Birge–Sponer fit",
    ),
    ("near_dissociation_coverage", "Near-dissociation coverage"),
    ("outlier_threshold", "Outlier threshold"),
    ("asymptote", "Dissociation asymptote"),
    ("asymptote_cm1", "Dissociation asymptote"),
    ("mu_u", "Reduced mass"),
    ("mu", "Reduced mass"),
    ("mass", "Mass"),
    ("mass.mu_u", "Reduced mass"),
    ("mass.a", "First atom"),
    ("mass.b", "Second atom"),
    ("m_a", "Mass of the first atom"),
    ("m_b", "Mass of the second atom"),
    ("nuclide", "Nuclide"),
    ("isotopologue", "Isotopologue"),
    // The command line's own options, named as the user typed them.
    ("--header", "--header"),
    ("--column", "--column"),
    ("--exclude", "--exclude"),
    ("column", "Column"),
    ("columns", "Columns"),
    ("role", "Column role"),
    ("kind", "Kind of data"),
    ("delimiter", "Delimiter"),
    ("value", "Value"),
    ("sigma", "Uncertainty σ"),
    ("unit", "Unit"),
    ("wavelength", "Wavelength"),
    ("covariance", "Data covariance"),
    ("levels", "Levels"),
    ("spacings", "Spacings"),
    ("table", "Table"),
    ("bands", "Band list"),
    ("bands.reference", "Reference isotopologue"),
    ("bands.rotation", "Rotational constants"),
    ("bands.head_sigma_cm1", "Band-head uncertainty"),
    ("bands.atomic_excitation_cm1", "Atomic excitation energy"),
    ("bands.rotation.upper.be_cm1", "Upper Be"),
    ("bands.rotation.upper.alpha_e_cm1", "Upper αe"),
    ("bands.rotation.lower.be_cm1", "Lower Be"),
    ("bands.rotation.lower.alpha_e_cm1", "Lower αe"),
    ("bands.upper_order", "Upper-state G(v) order"),
    ("bands.lower_order", "Lower-state G(v) order"),
    ("offset", "Numbering offset"),
    ("tolerance", "Energy tolerance"),
    ("points per wavelength", "Grid points per wavelength"),
    ("tail decay", "Decay of the wavefunction tail"),
    ("energy_max", "Highest energy"),
    ("r_min", "Shortest distance"),
    ("r_max", "Longest distance"),
    ("r", "Distance"),
    ("grid", "Distance grid"),
    ("halvings", "Grid halvings"),
    ("spline", "Interpolated curve"),
    ("limit", "Dissociation limit"),
    ("n", "Long-range power n"),
    ("m", "Repulsive power m"),
    ("Be", "Be"),
    ("k", "Force constant k"),
    ("re", "Equilibrium distance re"),
    ("we", "ωe"),
    ("wexe", "ωexe"),
    ("De", "Well depth De"),
    ("a", "Morse range parameter a"),
    ("G(v)", "Vibrational terms G(v)"),
    ("B(v)", "Rotational constants B(v)"),
    ("v_max", "Highest v"),
    ("v", "v"),
];

/// The words a user reads for a setting the code names `name` (one table in this module; a name not in it is shown as written).
pub fn setting_in_words(name: &str) -> &str {
    SETTING_WORDS
        .iter()
        .find(|(key, _)| *key == name)
        .map_or(name, |(_, words)| words)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Names given to [`Error::parameter`] in the sources of core and the command line: the first
    /// string literal after each call of a function that builds a parameter error.
    fn named_settings() -> Vec<String> {
        let root = concat!(env!("CARGO_MANIFEST_DIR"), "/..");
        let mut files = Vec::new();
        let mut dirs = vec![
            std::path::PathBuf::from(root).join("core/src"),
            std::path::PathBuf::from(root).join("cli/src"),
        ];
        while let Some(d) = dirs.pop() {
            for e in std::fs::read_dir(d).unwrap().flatten() {
                let p = e.path();
                if p.is_dir() {
                    dirs.push(p);
                } else if p.extension().is_some_and(|x| x == "rs") && !p.ends_with("error.rs") {
                    files.push(p);
                }
            }
        }
        let mut names = Vec::new();
        for f in files {
            let text = std::fs::read_to_string(&f).unwrap();
            // Calls naming the setting first: Error::parameter, and the small checks that pass
            // their name on to it (positive, finite, rename_parameter) or loop over pairs.
            for opener in [
                "Error::parameter(",
                "positive(\"",
                "finite(\"",
                "rename_parameter(e, \"",
                "for (name, m) in [(\"",
                "), (\"",
                "(\"bands.",
                "format!(\"bands.rotation.{name}.",
            ] {
                for (at, _) in text.match_indices(opener) {
                    let rest = &text[at + opener.len()..];
                    // An opener ending inside the literal: the name starts there.
                    let (lead, lit) = match opener.rsplit_once('"') {
                        Some(_) if opener.starts_with("format!") => ("", rest),
                        Some((_, after)) => (after, rest),
                        None => match rest.trim_start().strip_prefix('"') {
                            Some(lit) => ("", lit),
                            None => continue,
                        },
                    };
                    let Some(end) = lit.find('"') else { continue };
                    let name = format!("{lead}{}", &lit[..end]);
                    let partial = name.contains('{') || name.ends_with('.');
                    if partial || (opener.starts_with("), (") && !name.starts_with("m_")) {
                        continue;
                    }
                    if opener.starts_with("format!") {
                        for side in ["upper", "lower"] {
                            names.push(format!("bands.rotation.{side}.{name}"));
                        }
                    } else {
                        names.push(name);
                    }
                }
            }
        }
        names
    }

    #[test]
    fn every_named_setting_has_words() {
        // A user reads a setting's name in words, never a settings key such as lb_n or
        // bands.head_sigma_cm1 (common practice, no source: messages in the user's terms).
        let names = named_settings();
        assert!(
            names.iter().any(|n| n == "lb_n"),
            "the scan found {names:?}"
        );
        let missing: Vec<_> = names
            .iter()
            // A name already in words (several words, no key punctuation) may stand as it is.
            .filter(|n| n.contains('_') || n.contains('.') || !n.contains(' '))
            .filter(|n| !SETTING_WORDS.iter().any(|(k, _)| k == n))
            .collect();
        assert!(missing.is_empty(), "settings without words: {missing:?}");
        for (key, words) in SETTING_WORDS {
            assert!(
                !words.contains('_') || words.contains("C_n"),
                "{key} reads as {words}"
            );
            assert!(!words.contains('.'), "{key} reads as {words}");
        }
    }

    #[test]
    fn parameter_errors_read_in_words() {
        // The LeRoy–Bernstein exponent is shown by its name on the page, not by its settings key
        // (common practice, no source).
        let e = Error::parameter("lb_n", "1 is outside (2, 50]");
        assert_eq!(e.to_string(), "LeRoy–Bernstein n: 1 is outside (2, 50]");
        assert!(!e.to_string().contains("parameter '"));
        assert_eq!(e.detail(), "1 is outside (2, 50]");
    }
}
