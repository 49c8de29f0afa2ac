//! A gross error among smooth levels is named, with its row and a reason ready for an exclusion,
//! instead of being absorbed by scaling every σ; clean progressions flag nothing.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use rungs_core::intake::IntakeOptions;
use rungs_core::session::Session;
use rungs_core::settings::AnalysisSettings;
use rungs_core::{Analysis, analyze_session};

/// A SYNTHETIC Morse progression of an invented molecule: G(v) = ωe (v+½) − ωexe (v+½)² with
/// ωe = 230, ωexe = 3 cm⁻¹ (closed form, common practice, no source), rounded to 0.01 cm⁻¹,
/// σ = 0.05 cm⁻¹, v = 0 … 24; `typo` adds to the energy of v = 10.
fn table(typo: f64) -> String {
    let mut t = String::from("# SYNTHETIC: invented Morse levels\nv,E,sigma\n");
    for v in 0..25 {
        let h = f64::from(v) + 0.5;
        let e = 230.0 * h - 3.0 * h * h + if v == 10 { typo } else { 0.0 };
        t.push_str(&format!("{v},{e:.2},0.05\n"));
    }
    t
}

fn analyse(text: &str) -> rungs_core::Report {
    let s = Session::new(
        text,
        Some("typo.csv".into()),
        IntakeOptions::default(),
        AnalysisSettings {
            mc_samples: 0,
            ..AnalysisSettings::default()
        },
    );
    match analyze_session(&s, &mut |_, _| {}).unwrap() {
        Analysis::Levels(r) => *r,
        Analysis::Bands(_) => panic!("levels expected"),
    }
}

#[test]
fn a_typo_450_cm1_off_is_named_with_its_row_and_reason() {
    let r = analyse(&table(450.0));
    assert_eq!(r.far_points.len(), 1, "{:?}", r.far_points);
    let f = &r.far_points[0];
    assert_eq!(f.v, 10.0);
    // Row 13: two comment/header lines, then v = 0 on line 3.
    assert_eq!(f.row, Some(13));
    // The residual is the typo: the neighbours are exact Morse levels (closed form above).
    assert!((f.residual_cm1 - 450.0).abs() < 0.5, "{f:?}");
    assert!(f.reason.starts_with("far outside the rest"), "{}", f.reason);
    assert!(f.reason.contains("450 cm⁻¹ above"), "{}", f.reason);
    // Nothing is excluded silently: the row is still used.
    assert_eq!(r.rows.as_ref().unwrap().used, 25);
    // The JSON document carries it (REPORT_FORMAT.md, far_points).
    let doc: serde_json::Value = serde_json::from_str(&r.to_json().unwrap()).unwrap();
    assert_eq!(doc["far_points"][0]["row"], 13);
}

#[test]
fn a_clean_progression_and_the_demo_flag_nothing() {
    assert!(analyse(&table(0.0)).far_points.is_empty());
    let demo = include_str!("../data/demo/qz2-levels.csv");
    assert!(analyse(demo).far_points.is_empty());
    let doc = analyse(demo).to_json().unwrap();
    assert!(
        !doc.contains("far_points"),
        "an empty list is left out of the document"
    );
}
