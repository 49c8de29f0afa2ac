//! `rungs analyze` as a working instrument: the text report opens with a short summary, and a
//! forced G(v) order is called forced wherever an order is named.

use std::path::PathBuf;
use std::process::{Command, Output};

fn demo() -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../crates/core/data/demo/qz2-levels.csv")
        .to_string_lossy()
        .into_owned()
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

fn ok_text(o: &Output) -> String {
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    String::from_utf8(o.stdout.clone()).expect("UTF-8")
}

/// The first number after `key` on a line starting (after spaces) with `key`.
fn number_after(text: &str, key: &str) -> f64 {
    let line = text
        .lines()
        .find(|l| l.trim_start().starts_with(key))
        .unwrap_or_else(|| panic!("no line starting with '{key}' in\n{text}"));
    let rest = &line.trim_start()[key.len()..];
    let start = rest
        .find(|c: char| c.is_ascii_digit() || c == '-')
        .expect("a number");
    let end = rest[start..]
        .find(|c: char| !(c.is_ascii_digit() || c == '.' || c == '-'))
        .map_or(rest.len(), |e| start + e);
    rest[start..end].parse().expect("a number")
}

#[test]
fn the_text_report_opens_with_a_summary() {
    let text = ok_text(&rungs(&["analyze", &demo(), "--mu", "14.5", "--mc", "200"]));
    let json: serde_json::Value = serde_json::from_slice(
        &rungs(&[
            "analyze",
            &demo(),
            "--mu",
            "14.5",
            "--mc",
            "200",
            "--format",
            "json",
        ])
        .stdout,
    )
    .expect("JSON");
    let summary_at = text.find("Summary").expect("a summary");
    let detail_at = text.find("Order selection").expect("the detail");
    assert!(
        summary_at < detail_at,
        "the summary comes before the detail"
    );
    let summary = &text[summary_at..detail_at];
    // The summary quotes the same numbers as the document, rounded.
    let rec = &json["recommended"];
    let d0 = number_after(summary, "D0");
    assert!(
        (d0 - rec["d0_cm1"].as_f64().unwrap()).abs() < 1.0,
        "{summary}"
    );
    let de = number_after(summary, "De");
    assert!(
        (de - rec["de_cm1"].as_f64().unwrap()).abs() < 1.0,
        "{summary}"
    );
    let lo = number_after(summary, "interval");
    assert!(
        (lo - rec["d0_low_cm1"].as_f64().unwrap()).abs() < 1.0,
        "{summary}"
    );
    let we = number_after(summary, "ωe ");
    assert!((we - json["constants"]["we_cm1"]["value"].as_f64().unwrap()).abs() < 0.1);
    let wexe = number_after(summary, "ωexe");
    assert!((wexe - json["constants"]["wexe_cm1"]["value"].as_f64().unwrap()).abs() < 0.01);
    for key in ["ωe ", "ωexe"] {
        let line = summary
            .lines()
            .find(|l| l.trim_start().starts_with(key))
            .unwrap();
        assert!(line.contains('±'), "{key} with its σ: {line}");
    }
    let warnings = json["warnings"].as_array().unwrap().len();
    assert!(
        summary.contains(&format!("warnings: {warnings}")),
        "{warnings} warnings counted: {summary}"
    );
    assert!(summary.contains("chosen by the data"), "{summary}");
}

#[test]
fn a_forced_order_is_reported_as_forced() {
    let text = ok_text(&rungs(&[
        "analyze",
        &demo(),
        "--mu",
        "14.5",
        "--mc",
        "0",
        "--order",
        "3",
    ]));
    let summary = &text[..text.find("Order selection").expect("detail")];
    assert!(summary.contains("order 3, forced"), "{summary}");
    // No estimate built on the forced order calls it the selected one.
    assert!(!text.contains("the selected order"), "{text}");
    assert!(
        text.contains("order-3 G(v), the order forced by the settings"),
        "{text}"
    );
    assert!(
        text.contains("Vibrational constants (order-3 fit, the order forced by the settings)"),
        "{text}"
    );
}

#[test]
fn the_band_text_report_opens_with_a_summary() {
    let session = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../crates/core/data/demo/qz2-bands.session.json")
        .to_string_lossy()
        .into_owned();
    let text = ok_text(&rungs(&["analyze", &session, "--mc", "100"]));
    let json: serde_json::Value = serde_json::from_slice(
        &rungs(&["analyze", &session, "--mc", "100", "--format", "json"]).stdout,
    )
    .expect("JSON");
    let summary_at = text.find("Summary").expect("a summary");
    let detail_at = text.find("Data:").expect("the detail");
    assert!(
        summary_at < detail_at,
        "the summary comes before the detail"
    );
    let summary = &text[summary_at..detail_at];
    let t00 = number_after(summary, "T00");
    assert!(
        (t00 - json["t00_cm1"]["value"].as_f64().unwrap()).abs() < 0.01,
        "{summary}"
    );
    for (state, prime) in [("upper", "′"), ("lower", "″")] {
        let line = summary
            .lines()
            .find(|l| l.trim_start().starts_with(&format!("{state} state:")))
            .unwrap_or_else(|| panic!("{state} state in {summary}"));
        let d0 = json["states"][state]["recommended"]["d0_cm1"]
            .as_f64()
            .unwrap();
        let shown = number_after(line, &format!("{state} state: D0{prime} ="));
        assert!((shown - d0).abs() < 1.0, "{line} vs {d0}");
        assert!(
            line.contains(&format!("ωe{prime} = ")) && line.contains(&format!("ωexe{prime} = ")),
            "{line}"
        );
    }
    assert!(summary.contains("E_lim"), "{summary}");
    let n = json["warnings"].as_array().unwrap().len();
    assert!(
        summary.contains(&format!("warnings: {n} for the band list")),
        "{summary}"
    );
}

/// A SYNTHETIC Morse progression (ωe = 230, ωexe = 3 cm⁻¹, closed form, common practice, no
/// source) with the energy of v = 10 typed 450 cm⁻¹ too high.
fn typo_table() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("rungs-typo-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("a temporary folder");
    let mut t = String::from("v,E,sigma\n");
    for v in 0..25 {
        let h = f64::from(v) + 0.5;
        let e = 230.0 * h - 3.0 * h * h + if v == 10 { 450.0 } else { 0.0 };
        t.push_str(&format!("{v},{e:.2},0.05\n"));
    }
    let path = dir.join("typo.csv");
    std::fs::write(&path, t).expect("the table written");
    path
}

#[test]
fn a_typo_is_named_before_the_summary_with_its_row() {
    let path = typo_table();
    let text = ok_text(&rungs(&["analyze", path.to_str().unwrap(), "--mc", "0"]));
    let check = text.find("Check first").expect("a notice of the far point");
    let summary = text.find("Summary").expect("a summary");
    assert!(check < summary, "the notice comes first:\n{text}");
    // v = 10 is on line 12 (header on line 1, v = 0 on line 2).
    let line = text[check..summary]
        .lines()
        .find(|l| l.contains("v = 10"))
        .unwrap_or_else(|| panic!("v = 10 named:\n{text}"));
    assert!(
        line.contains("row 12") && line.contains("450 cm⁻¹ above"),
        "{line}"
    );
    // The demo flags nothing.
    assert!(!ok_text(&rungs(&["analyze", &demo(), "--mc", "0"])).contains("Check first"));
}
