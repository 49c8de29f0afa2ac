//! Reading JSON documents (session documents, settings) within bounds, with messages in the
//! document's own terms.
//!
//! Two jobs, shared by every reader of a document in core:
//! - [`at_most_row_choices`] and [`at_most_names`] read a list field and stop with an error as
//!   soon as the list is longer than its limit ([`MAX_ROW_CHOICES`], [`MAX_NAMED_ENTRIES`],
//!   stated with the other limits in the session module), so a document cannot make the reader
//!   allocate more than the limit's worth of entries;
//! - [`read`] parses a document and, when that fails, turns the parser's report ("invalid type:
//!   floating point `1e+300`, expected u32 at line 1 column 1690") into a sentence that names
//!   the document's own key and its enclosing key, says what the key is for, what the document
//!   holds there and which values are allowed.

use std::fmt;
use std::marker::PhantomData;

use serde::Deserialize;
use serde::de::{DeserializeOwned, Deserializer, Error as _, SeqAccess, Visitor};

use crate::error::{Error, Result};

/// Most entries in the list of excluded rows, and in the list of σ edits: 100 000, half the
/// lines a table may have (`intake::MAX_TABLE_LINES`); a person excluding rows one by one never
/// comes near it.
pub const MAX_ROW_CHOICES: usize = 100_000;

/// Most entries in the list of column choices, of isotopologue atoms and of predictions:
/// 10 000 (a saved reading lists every column of the table; tables with thousands of columns
/// are read).
pub const MAX_NAMED_ENTRIES: usize = 10_000;

/// Reads a list of at most `limit` entries; a longer one fails at entry `limit + 1`.
fn bounded<'de, D, T>(d: D, limit: usize) -> std::result::Result<Vec<T>, D::Error>
where
    D: Deserializer<'de>,
    T: Deserialize<'de>,
{
    struct Bounded<T> {
        limit: usize,
        item: PhantomData<T>,
    }
    impl<'de, T: Deserialize<'de>> Visitor<'de> for Bounded<T> {
        type Value = Vec<T>;
        fn expecting(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
            write!(f, "a list")
        }
        fn visit_seq<A: SeqAccess<'de>>(self, mut seq: A) -> std::result::Result<Vec<T>, A::Error> {
            let mut out = Vec::new();
            while let Some(x) = seq.next_element()? {
                if out.len() == self.limit {
                    return Err(A::Error::custom(format_args!("{LIMIT_MARK}{}", self.limit)));
                }
                out.push(x);
            }
            Ok(out)
        }
    }
    d.deserialize_seq(Bounded {
        limit,
        item: PhantomData,
    })
}

/// Marks the error of a list over its limit (followed by the limit), for [`read`] to recognise.
const LIMIT_MARK: &str = "list longer than its limit of ";

/// A list of row choices (exclusions, σ edits): at most [`MAX_ROW_CHOICES`] entries.
pub(crate) fn at_most_row_choices<'de, D, T>(d: D) -> std::result::Result<Vec<T>, D::Error>
where
    D: Deserializer<'de>,
    T: Deserialize<'de>,
{
    bounded(d, MAX_ROW_CHOICES)
}

/// A list of named entries (column choices, isotopologues, predictions): at most
/// [`MAX_NAMED_ENTRIES`] entries.
pub(crate) fn at_most_names<'de, D, T>(d: D) -> std::result::Result<Vec<T>, D::Error>
where
    D: Deserializer<'de>,
    T: Deserialize<'de>,
{
    bounded(d, MAX_NAMED_ENTRIES)
}

/// Parses `text` as a `T`. `what` names the document for messages ("the session document");
/// `outer` is the key the document's top level stands under, if it is itself part of a larger
/// document (`"settings"` for settings read alone), so keys are described in full.
pub(crate) fn read<T: DeserializeOwned>(text: &str, what: &str, outer: Option<&str>) -> Result<T> {
    let mut de = serde_json::Deserializer::from_str(text);
    let value: T = serde_path_to_error::deserialize(&mut de).map_err(|e| Error::Document {
        message: explain(what, &keys_of(e.path(), outer), e.inner()),
    })?;
    // Only blanks may follow the document.
    de.end().map_err(|e| Error::Document {
        message: explain(what, &[], &e),
    })?;
    Ok(value)
}

/// The sentence for a failed parse of the value at `keys`.
fn explain(what: &str, keys: &[Step], e: &serde_json::Error) -> String {
    use serde_json::error::Category;
    match e.classify() {
        Category::Io | Category::Syntax => format!(
            "{what} is not valid JSON: the text breaks off or is malformed near line {}, \
             column {}",
            e.line(),
            e.column()
        ),
        Category::Eof => format!(
            "{what} ends too early (at line {}, column {}): it looks cut off",
            e.line(),
            e.column()
        ),
        Category::Data => explain_data(what, keys, &without_position(e)),
    }
}

/// The serde message without serde_json's " at line L column C" (the key is named instead).
fn without_position(e: &serde_json::Error) -> String {
    let full = e.to_string();
    let suffix = format!(" at line {} column {}", e.line(), e.column());
    full.strip_suffix(&suffix).unwrap_or(&full).to_string()
}

/// One step of the way to the failing value, in the document's terms.
#[derive(Debug, Clone)]
enum Step {
    Key(String),
    Index(usize),
}

fn keys_of(path: &serde_path_to_error::Path, outer: Option<&str>) -> Vec<Step> {
    use serde_path_to_error::Segment;
    let mut steps: Vec<Step> = outer
        .map(|k| Step::Key(k.to_string()))
        .into_iter()
        .collect();
    for s in path.iter() {
        match s {
            Segment::Map { key } => steps.push(Step::Key(key.clone())),
            Segment::Seq { index } => steps.push(Step::Index(*index)),
            Segment::Enum { .. } | Segment::Unknown => {}
        }
    }
    steps
}

/// Where a key stands, as a reader of the document would say it: `"reason" in entry 3 of
/// "exclusions"`, `"mc_samples" under "settings"`.
fn place(keys: &[Step]) -> String {
    let mut parts = Vec::new();
    let mut i = keys.len();
    // The key itself, then at most two enclosing steps: enough to find it in the document.
    while i > 0 && parts.len() < 3 {
        i -= 1;
        match &keys[i] {
            Step::Key(k) => parts.push(format!("\"{k}\"")),
            Step::Index(n) => {
                let Some(Step::Key(list)) = i.checked_sub(1).and_then(|j| keys.get(j)) else {
                    parts.push(format!("entry {}", n + 1));
                    continue;
                };
                parts.push(format!("entry {} of \"{list}\"", n + 1));
                i -= 1;
            }
        }
    }
    let mut text = String::new();
    for (n, p) in parts.iter().enumerate() {
        if n > 0 {
            text.push_str(if p.starts_with("entry") {
                " in "
            } else {
                " under "
            });
        }
        text.push_str(p);
    }
    text
}

/// The key a value stands under and the key that holds it (skipping list indices).
fn key_and_parent(keys: &[Step]) -> (Option<&str>, Option<&str>) {
    let mut names = keys.iter().rev().filter_map(|s| match s {
        Step::Key(k) => Some(k.as_str()),
        Step::Index(_) => None,
    });
    let key = names.next();
    (key, names.next())
}

/// What a key of a session document is for, and which values it takes, as (meaning, allowed);
/// `None` for a key this table does not know.
fn describe(key: &str, parent: Option<&str>) -> Option<(&'static str, &'static str)> {
    const WHOLE: &str = "a whole number from 0 to 4294967295";
    const WHOLE_OR_NULL: &str = "a whole number from 0 to 4294967295, or null";
    const NUMBER: &str = "a number";
    const NUMBER_OR_NULL: &str = "a number, or null";
    const TEXT: &str = "text in quotes";
    Some(match (parent, key) {
        (None, "schema") => ("the document type", "\"rungs-session\""),
        (None, "version") => ("the document version", "1"),
        (None, "written_by") => ("the program that wrote the document", TEXT),
        (None, "codata_year") => ("the year of the physical constants", WHOLE),
        (None, "input") => ("the table", "an object with \"text\" (and \"name\")"),
        (None, "intake") => ("how the table is read", "an object"),
        (None, "settings") => ("the analysis settings", "an object"),
        (Some("input"), "name") => ("the file name of the table", TEXT),
        (Some("input"), "text") => ("the table text", TEXT),
        (Some("intake"), "kind") => ("the kind of data", "levels, spacings or bands"),
        (Some("intake"), "band_positions") => ("what the band positions are", "origins or heads"),
        (Some("intake"), "header") => ("whether the first row is a header", "true or false"),
        (Some("intake"), "delimiter") => {
            ("the cell separator", "comma, tab, semicolon or whitespace")
        }
        (Some("intake" | "columns"), "unit") => (
            "a unit",
            "a unit such as cm-1, eV, meV, GHz, kJ/mol, K, hartree, nm-air or nm-vac",
        ),
        (Some("intake"), "columns") => (
            "the column choices",
            "a list of {\"column\", \"role\", \"unit\"}",
        ),
        (Some("columns"), "column") => ("a column number", "a whole number from 1"),
        (Some("columns"), "role") => (
            "a column role",
            "v, v_upper, v_lower, v_half, energy, spacing, position, sigma, isotopologue, b or ignore",
        ),
        (Some("intake"), "exclusions") => {
            ("the rows you excluded", "a list of {\"row\", \"reason\"}")
        }
        (Some("intake"), "sigmas") => (
            "the uncertainties you set",
            "a list of {\"row\", \"sigma\"}",
        ),
        (Some("exclusions" | "sigmas"), "row") => {
            ("a row number (line of the table)", "a whole number from 1")
        }
        (Some("exclusions"), "reason") => ("why the row is excluded", TEXT),
        (Some("sigmas"), "sigma") => (
            "an uncertainty in the value column's unit",
            "a number above 0",
        ),
        (Some("settings"), "mc_samples") => (
            "the number of Monte Carlo samples",
            "a whole number from 0 to 1000000",
        ),
        (Some("settings"), "seed") => (
            "the Monte Carlo seed",
            "a whole number from 0 to 18446744073709551615",
        ),
        (Some("settings"), "lb_n") => ("the long-range exponent n", NUMBER),
        (Some("settings"), "lb_top_levels") => (
            "the number of top levels of the near-dissociation fit",
            WHOLE_OR_NULL,
        ),
        (Some("settings"), "order") => ("the forced polynomial order of G(v)", WHOLE_OR_NULL),
        (Some("settings"), "max_order") => (
            "the highest polynomial order tried",
            "a whole number from 1 to 12",
        ),
        (Some("settings"), "lb_fit_n_free") => ("whether n is also fitted free", "true or false"),
        (Some("settings"), "lb_cn_cm1_an") => ("the fixed C_n (cm⁻¹ Åⁿ)", NUMBER_OR_NULL),
        (Some("settings"), "asymptote_cm1") => {
            ("the known dissociation asymptote (cm⁻¹)", NUMBER_OR_NULL)
        }
        (Some("settings"), "sigma_scaling") => (
            "when uncertainties are scaled by the fit quality",
            "never, when-above-one or always",
        ),
        (Some("settings"), "curved_max_extrapolation") => {
            ("the longest curved extrapolation", NUMBER)
        }
        (Some("settings"), "near_dissociation_coverage") => {
            ("an old setting no longer used", NUMBER)
        }
        (Some("settings"), "outlier_threshold") => ("the outlier threshold", NUMBER),
        (Some("settings"), "mass") => (
            "the molecule's mass",
            "{\"kind\": \"reduced_mass\", \"mu_u\": …} or {\"kind\": \"nuclides\", \"a\": …, \"b\": …}, or null",
        ),
        (Some("mass"), "kind") => ("how the mass is given", "reduced_mass or nuclides"),
        (Some("mass"), "mu_u") => ("the reduced mass in u", NUMBER),
        (Some("mass"), "a" | "b") => ("an atom", "a nuclide label in quotes, such as \"35Cl\""),
        (Some("settings"), "bands") => ("the band-list settings", "an object"),
        (Some("bands"), "rotation") => (
            "the rotational constants of both states",
            "{\"upper\": …, \"lower\": …}, or null",
        ),
        (Some("rotation"), "upper" | "lower") => (
            "one state's rotational constants",
            "{\"be_cm1\": …, \"alpha_e_cm1\": …}",
        ),
        (Some("upper" | "lower"), "be_cm1") => ("Be in cm⁻¹", NUMBER),
        (Some("upper" | "lower"), "alpha_e_cm1") => ("αe in cm⁻¹", NUMBER),
        (Some("bands"), "head_sigma_cm1") => ("the σ added to band heads (cm⁻¹)", NUMBER),
        (Some("bands"), "atomic_excitation_cm1") => {
            ("the atomic excitation energy (cm⁻¹)", NUMBER_OR_NULL)
        }
        (Some("bands"), "isotopologues") => (
            "the atoms of isotopologue tags",
            "a list of {\"tag\", \"a\", \"b\"}",
        ),
        (Some("isotopologues"), "tag") => ("an isotopologue tag", TEXT),
        (Some("isotopologues"), "a" | "b") => {
            ("an atom", "a nuclide label or a mass in u, in quotes")
        }
        (Some("bands"), "predict") => ("the isotopologues to predict", "a list of tags in quotes"),
        (Some("bands"), "reference") => ("the reference isotopologue", "a tag in quotes, or null"),
        (Some("bands"), "upper_order" | "lower_order") => {
            ("a forced polynomial order", WHOLE_OR_NULL)
        }
        _ => return None,
    })
}

/// Allowed values in plain words from serde's "expected …" text, for keys [`describe`] does not
/// know.
fn plain_expected(expected: &str) -> String {
    let e = expected.trim();
    match e {
        "u8" | "u16" | "u32" | "u64" | "usize" => "a whole number from 0".into(),
        "i32" | "i64" => "a whole number".into(),
        "f64" | "f32" => "a number".into(),
        "a string" | "a borrowed string" => "text in quotes".into(),
        "a boolean" => "true or false".into(),
        "a sequence" | "a list" => "a list".into(),
        _ if e.starts_with("struct ") || e == "a map" => "an object".into(),
        _ if e.starts_with("one of ") => e.trim_start_matches("one of ").replace('`', ""),
        _ if e.starts_with("option") => "a value, or null".into(),
        _ => e.replace('`', ""),
    }
}

/// What the document holds, from serde's description of the unexpected value
/// ("floating point `1e+300`", "string \"abc\"", "map").
fn plain_found(found: &str) -> String {
    let f = found.trim();
    if let Some(start) = f.find('`')
        && let Some(len) = f[start + 1..].find('`')
    {
        return f[start + 1..start + 1 + len].to_string();
    }
    if let Some(s) = f.strip_prefix("string ") {
        return s.to_string();
    }
    match f {
        "map" => "an object".into(),
        "sequence" => "a list".into(),
        "unit value" | "null" => "null".into(),
        _ => f.to_string(),
    }
}

fn explain_data(what: &str, keys: &[Step], raw: &str) -> String {
    // A key missing from an object: the key named is the missing one, inside `keys`.
    if let Some(rest) = raw.strip_prefix("missing field `") {
        let missing = rest.trim_end_matches('`');
        let mut inner = keys.to_vec();
        inner.push(Step::Key(missing.to_string()));
        let (_, parent) = key_and_parent(&inner);
        let meaning = describe(missing, parent)
            .map(|(m, _)| format!(" ({m})"))
            .unwrap_or_default();
        return format!("{what} has no {}{meaning}, which it needs", place(&inner));
    }
    let (key, parent) = key_and_parent(keys);
    let where_ = if keys.is_empty() {
        "the document".to_string()
    } else {
        place(keys)
    };
    let known = key.and_then(|k| describe(k, parent));
    let meaning = known.map(|(m, _)| format!(" ({m})")).unwrap_or_default();
    if let Some(limit) = raw.strip_prefix(LIMIT_MARK) {
        return format!(
            "{what}: {where_}{meaning} has more than {limit} entries, the limit; a document \
             over the limit is not read"
        );
    }
    if let Some(rest) = raw.strip_prefix("unknown variant `") {
        let (found, expected) = rest.split_once("`, expected ").unwrap_or((rest, ""));
        let allowed = known.map_or_else(|| plain_expected(expected), |(_, a)| a.to_string());
        return format!("{what}: {where_}{meaning} is \"{found}\": use {allowed}");
    }
    for prefix in ["invalid type: ", "invalid value: "] {
        if let Some(rest) = raw.strip_prefix(prefix)
            && let Some((found, expected)) = rest.split_once(", expected ")
        {
            let allowed = known.map_or_else(|| plain_expected(expected), |(_, a)| a.to_string());
            return format!(
                "{what}: {where_}{meaning} must be {allowed}; the document has {}",
                plain_found(found)
            );
        }
    }
    if let Some(rest) = raw.strip_prefix("invalid length ") {
        let n = rest.split(',').next().unwrap_or(rest);
        return format!("{what}: {where_}{meaning} has the wrong number of entries ({n})");
    }
    if let Some(rest) = raw.strip_prefix("duplicate field `") {
        return format!(
            "{what}: \"{}\" appears twice in {where_}",
            rest.trim_end_matches('`')
        );
    }
    // A check of the value itself (a unit, a mass): its message is already in plain words, and
    // names no setting (the place above does).
    format!("{what}: {where_}{meaning}: {raw}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn places_read_like_the_document() {
        let keys = vec![
            Step::Key("intake".into()),
            Step::Key("exclusions".into()),
            Step::Index(2),
            Step::Key("reason".into()),
        ];
        assert_eq!(
            place(&keys),
            "\"reason\" in entry 3 of \"exclusions\" under \"intake\""
        );
        assert_eq!(
            place(&[Step::Key("settings".into()), Step::Key("seed".into())]),
            "\"seed\" under \"settings\""
        );
    }
}
