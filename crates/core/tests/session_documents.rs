//! Session documents within stated limits, and messages about them in the document's own terms.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::time::{Duration, Instant};

use rungs_core::intake::{IntakeOptions, MAX_TABLE_LINES};
use rungs_core::session::{
    MAX_DOCUMENT_BYTES, MAX_NAMED_ENTRIES, MAX_ROW_CHOICES, Session, settings_from_json,
};
use rungs_core::settings::AnalysisSettings;

/// A small valid document (SYNTHETIC levels) as JSON text.
fn document() -> String {
    let text = "v,E\n0,495\n1,1465\n2,2415\n3,3345\n4,4255\n";
    Session::new(
        text,
        Some("t.csv".into()),
        IntakeOptions::default(),
        AnalysisSettings::default(),
    )
    .to_json()
    .unwrap()
}

/// `document()` with `key` of the object at the dotted place `under` (the top when empty) set
/// to the JSON `value`.
fn with(under: &str, key: &str, value: &str) -> String {
    let mut doc: serde_json::Value = serde_json::from_str(&document()).unwrap();
    let target = if under.is_empty() {
        &mut doc
    } else {
        under.split('.').fold(&mut doc, |v, k| &mut v[k])
    };
    let parsed: serde_json::Value = serde_json::from_str(value).unwrap();
    target[key] = parsed;
    doc.to_string()
}

fn refusal(text: &str) -> String {
    Session::from_json(text).unwrap_err().to_string()
}

/// Words of the JSON reader and of Rust that must never reach a user (common practice, no
/// source: messages in the user's terms).
fn assert_plain(message: &str) {
    for internal in [
        "invalid type",
        "invalid value",
        "expected u32",
        "expected f64",
        "unknown variant",
        "missing field",
        "at line 1 column",
        "`",
        "struct ",
        "Option",
        "usize",
    ] {
        assert!(!message.contains(internal), "'{internal}' in: {message}");
    }
}

/// The three messages quoted in the issue, each now naming the key as the document writes it,
/// what it is for, and the allowed values.
#[test]
fn reading_errors_name_the_key_and_the_allowed_values() {
    let m = refusal(&with("settings", "mc_samples", "1e300"));
    assert_plain(&m);
    assert!(m.contains("\"mc_samples\" under \"settings\""), "{m}");
    assert!(m.contains("Monte Carlo"), "{m}");
    assert!(m.contains("whole number from 0 to"), "{m}");
    assert!(m.contains("1e+300"), "{m}");

    let m = refusal(&with("intake", "kind", "\"foo\""));
    assert_plain(&m);
    assert!(m.contains("\"kind\" under \"intake\""), "{m}");
    assert!(m.contains("\"foo\""), "{m}");
    assert!(m.contains("levels, spacings or bands"), "{m}");

    let mut doc: serde_json::Value = serde_json::from_str(&document()).unwrap();
    doc.as_object_mut().unwrap().remove("input");
    let m = refusal(&doc.to_string());
    assert_plain(&m);
    assert!(m.contains("no \"input\" (the table)"), "{m}");
}

/// Keys inside lists and nested objects are placed by their entry number and enclosing keys.
#[test]
fn nested_and_listed_keys_are_placed() {
    let m = refusal(&with(
        "intake",
        "exclusions",
        r#"[{"row": 2, "reason": "a"}, {"row": -1, "reason": "b"}]"#,
    ));
    assert_plain(&m);
    assert!(
        m.contains("\"row\" in entry 2 of \"exclusions\" under \"intake\""),
        "{m}"
    );
    assert!(m.contains("-1"), "{m}");

    let m = refusal(&with(
        "settings",
        "mass",
        r#"{"kind": "reduced_mass", "mu_u": "heavy"}"#,
    ));
    assert_plain(&m);
    assert!(m.contains("\"mu_u\" under \"mass\""), "{m}");
    assert!(m.contains("heavy"), "{m}");

    let m = refusal(&with("settings", "sigma_scaling", "\"sometimes\""));
    assert_plain(&m);
    assert!(m.contains("never, when-above-one or always"), "{m}");

    let m = refusal(&with("intake", "header", "\"maybe\""));
    assert_plain(&m);
    assert!(m.contains("true or false"), "{m}");
}

/// Text that is not JSON, or is cut off, says so with the place, without the reader's words.
#[test]
fn broken_json_is_described_plainly() {
    let doc = document();
    let m = refusal(&doc[..doc.len() / 2]);
    assert_plain(&m);
    assert!(m.contains("cut off"), "{m}");
    let m = refusal(&doc.replacen(':', ";", 1));
    assert_plain(&m);
    assert!(m.contains("not valid JSON") && m.contains("line"), "{m}");
}

/// The issue's case: a million exclusion entries. Refused, quickly, with the limit named; the
/// reader stops at the entry over the limit (SOURCE: the limit stated in the session module).
#[test]
fn a_million_exclusions_are_refused_at_the_limit() {
    let entries: Vec<String> = (0..1_000_000)
        .map(|i| format!("{{\"row\":{i},\"reason\":\"x\"}}"))
        .collect();
    let doc = with("intake", "exclusions", &format!("[{}]", entries.join(",")));
    assert!(
        doc.len() < MAX_DOCUMENT_BYTES,
        "the size limit is not what stops it"
    );
    let start = Instant::now();
    let m = refusal(&doc);
    assert!(
        start.elapsed() < Duration::from_secs(20),
        "{:?}",
        start.elapsed()
    );
    assert_plain(&m);
    assert!(m.contains(&MAX_ROW_CHOICES.to_string()), "{m}");
    assert!(m.contains("\"exclusions\"") && m.contains("limit"), "{m}");
}

/// At the limit a document is read; one entry more is refused (σ edits, column choices).
#[test]
fn lists_are_read_up_to_their_limit() {
    let sigmas = |n: usize| {
        let e: Vec<String> = (0..n)
            .map(|i| format!("{{\"row\":{},\"sigma\":0.5}}", i + 2))
            .collect();
        with("intake", "sigmas", &format!("[{}]", e.join(",")))
    };
    let read = Session::from_json(&sigmas(MAX_ROW_CHOICES)).unwrap();
    assert_eq!(read.intake.sigmas.len(), MAX_ROW_CHOICES);
    let m = refusal(&sigmas(MAX_ROW_CHOICES + 1));
    assert!(m.contains("\"sigmas\"") && m.contains("limit"), "{m}");

    let predictions: Vec<String> = (0..=MAX_NAMED_ENTRIES)
        .map(|i| format!("\"t{i}\""))
        .collect();
    let doc = with(
        "settings.bands",
        "predict",
        &format!("[{}]", predictions.join(",")),
    );
    let m = refusal(&doc);
    assert_plain(&m);
    assert!(m.contains("\"predict\"") && m.contains("limit"), "{m}");
}

/// A document longer than the size limit is refused before it is parsed.
#[test]
fn an_over_long_document_is_refused_by_its_size() {
    let mut doc = document();
    doc.push_str(&" ".repeat(MAX_DOCUMENT_BYTES));
    let start = Instant::now();
    let m = refusal(&doc);
    assert!(
        start.elapsed() < Duration::from_secs(5),
        "{:?}",
        start.elapsed()
    );
    assert!(m.contains("64 MiB") && m.contains("limit"), "{m}");
}

/// The stored table is bounded in lines like any table; a long reason is refused.
#[test]
fn the_table_and_the_texts_are_bounded() {
    let table = "v,E\n".to_string() + &"0,1\n".repeat(MAX_TABLE_LINES);
    let session = Session::from_json(&with(
        "input",
        "text",
        &serde_json::to_string(&table).unwrap(),
    ))
    .unwrap();
    let m = session.data().unwrap_err().to_string();
    assert!(
        m.contains(&MAX_TABLE_LINES.to_string()) && m.contains("limit"),
        "{m}"
    );

    let reason = "r".repeat(20_000);
    let m = refusal(&with(
        "intake",
        "exclusions",
        &format!(r#"[{{"row": 2, "reason": "{reason}"}}]"#),
    ));
    assert!(m.contains("row 2") && m.contains("characters"), "{m}");
}

/// An exported analysis still opens for its session; settings alone get the same messages.
#[test]
fn analyses_and_settings_read_through_the_same_rules() {
    let session = Session::from_json(&with("settings", "mc_samples", "0")).unwrap();
    let report = rungs_core::analyze_session(&session, &mut |_, _| {}).unwrap();
    let back = Session::open(None, &report.to_json().unwrap()).unwrap();
    assert_eq!(back, session);
    let m = settings_from_json(r#"{"max_order": "six"}"#)
        .unwrap_err()
        .to_string();
    assert_plain(&m);
    assert!(m.contains("\"max_order\" under \"settings\""), "{m}");
    assert!(m.contains("from 1 to 12"), "{m}");
    let s = settings_from_json(r#"{"mc_samples": 10}"#).unwrap();
    assert_eq!(s.mc_samples, 10);
}
