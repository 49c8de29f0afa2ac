//! The text report speaks the user's words: no names of internal notes or section references
//! to them, no method ids, snake_case field names, Rust type names, parser messages or values
//! lost on the way ("± —"). The same patterns are checked on the page by
//! `tests/browser/workflow.test.mjs`.

use std::path::PathBuf;
use std::process::Command;

fn file(rel: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../..")
        .join(rel)
        .to_string_lossy()
        .into_owned()
}

const METHOD_IDS: &[&str] = &[
    "observed-sum",
    "birge-sponer-linear",
    "birge-sponer-curved",
    "leroy-bernstein",
    "leroy-bernstein-n-free",
    "leroy-bernstein-alt-levels",
    "near-dissociation-expansion",
    "potential-fit-mlr",
    "potential-fit-mlr-cn-fixed",
    "monte-carlo",
];

const PHRASES: &[&str] = &[
    "domain.md",
    ".md ",
    "§",
    "expected u32",
    "expected f64",
    "at line ",
    "invalid type",
    "unknown variant",
    "missing field",
    "nullnull",
    "undefined",
    "NaN",
    "± —",
];

/// Words made of letters, digits, `_`, `.` and `-` (hyphenated ids stay whole).
fn tokens(line: &str) -> impl Iterator<Item = &str> {
    line.split(|c: char| !(c.is_ascii_alphanumeric() || matches!(c, '_' | '.' | '-')))
        .map(|t| t.trim_matches(|c| c == '.' || c == '-'))
        .filter(|t| !t.is_empty())
}

/// `sigma_scale`, `bands.head_sigma_cm1`: lower-case words joined by `_`, the first of two
/// letters or more (so notation such as `r_e`, `v_top` or `k_e` is not taken for a field name).
fn is_field_name(t: &str) -> bool {
    let last = t.rsplit('.').next().unwrap_or(t);
    let mut parts = last.split('_');
    let first = parts.next().unwrap_or("");
    last.contains('_')
        && first.len() >= 2
        && first.chars().all(|c| c.is_ascii_lowercase())
        && last
            .chars()
            .all(|c| c.is_ascii_lowercase() || c.is_ascii_digit() || c == '_')
}

/// `MaxIterations`, `StandardNormal`: a capital, small letters, another capital (not "LeRoy").
fn is_type_name(t: &str) -> bool {
    let c: Vec<char> = t.chars().collect();
    t != "LeRoy"
        && c.iter().all(char::is_ascii_alphabetic)
        && c.first().is_some_and(char::is_ascii_uppercase)
        && c.windows(2)
            .skip(1)
            .any(|w| w[0].is_ascii_lowercase() && w[1].is_ascii_uppercase())
}

/// Every finding, as "line: what: text".
fn findings(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    for (n, line) in text.lines().enumerate() {
        for p in PHRASES {
            if line.contains(p) {
                out.push(format!("{}: '{p}': {line}", n + 1));
            }
        }
        for t in tokens(line) {
            if METHOD_IDS.contains(&t) {
                out.push(format!("{}: method id '{t}': {line}", n + 1));
            } else if is_field_name(t) {
                out.push(format!("{}: field name '{t}': {line}", n + 1));
            } else if is_type_name(t) {
                out.push(format!("{}: type name '{t}': {line}", n + 1));
            }
        }
    }
    out
}

/// The scan finds what it looks for (and leaves plain words alone).
#[test]
fn the_scan_finds_planted_internal_words() {
    for planted in [
        "see domain.md §1.5",
        "birge-sponer-linear ×5173",
        "scaled (its sigma_scale)",
        "widened (bands.head_sigma_cm1)",
        "stopped: MaxIterations",
        "expected u32 at line 1 column 16",
        "nullnull",
        "D0 = 12 ± —",
    ] {
        assert!(!findings(planted).is_empty(), "not found in '{planted}'");
    }
    assert_eq!(
        findings(
            "LeRoy–Bernstein D0 = 4385 ± 12 cm⁻¹ from G(v_top) − G(0); r_e = 2.39 Å; CODATA 2022"
        ),
        Vec::<String>::new()
    );
}

fn text_report(args: &[&str]) -> String {
    let o = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs");
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout).expect("UTF-8")
}

#[test]
fn the_levels_text_report_uses_the_users_words() {
    let demo = file("crates/core/data/demo/qz2-levels.csv");
    let text = text_report(&["analyze", &demo, "--mu", "14.5", "--mc", "200"]);
    assert!(text.contains("LeRoy"), "{text}");
    let found = findings(&text);
    assert!(found.is_empty(), "{}", found.join("\n"));
}

#[test]
fn the_spacings_text_report_uses_the_users_words() {
    let demo = file("crates/core/data/demo/qz2-spacings.csv");
    let found = findings(&text_report(&["analyze", &demo, "--mc", "200"]));
    assert!(found.is_empty(), "{}", found.join("\n"));
}

#[test]
fn the_band_text_report_and_the_low_levels_report_use_the_users_words() {
    let bands = file("crates/core/data/demo/qz2-bands.session.json");
    let found = findings(&text_report(&["analyze", &bands, "--mc", "100"]));
    assert!(found.is_empty(), "bands:\n{}", found.join("\n"));
    let low = file("crates/core/data/demo/qz2-low-levels.csv");
    let found = findings(&text_report(&["analyze", &low, "--mc", "100"]));
    assert!(found.is_empty(), "low levels:\n{}", found.join("\n"));
}
