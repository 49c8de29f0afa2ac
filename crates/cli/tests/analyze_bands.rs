//! `rungs analyze` on a band list: detected, both states reported, band options applied.
//!
//! SOURCE: the SYNTHETIC demo band list crates/core/data/demo/qz2-bands.csv (invented molecule
//! Qz2, scripts/make_band_demo.py), whose true upper numbering is the one in the file.

use std::path::PathBuf;
use std::process::{Command, Output};

fn demo(name: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../core/data/demo")
        .join(name)
        .to_str()
        .expect("path")
        .to_string()
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

#[test]
fn band_list_reports_both_states_and_the_numbering() {
    let file = demo("qz2-bands.csv");
    let o = rungs(&[
        "analyze",
        &file,
        "--mc",
        "0",
        "--isotopologue",
        "29Qz2=29.0,29.0",
        "--isotopologue",
        "29Qz31Qz=29.0,31.0",
        "--isotopologue",
        "31Qz2=31.0,31.0",
        "--predict",
        "31Qz2",
        "--atomic-excitation",
        "22499.912",
    ]);
    let out = String::from_utf8_lossy(&o.stdout);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{out}{err}");
    for fragment in [
        "Rungs band analysis",
        "Deslandres array, isotopologue 29Qz2",
        "NUMBERING FIXED BY ISOTOPE SHIFTS",
        "D0″ = T00 + D0′ − E_atom",
        "Prediction for 31Qz2",
        "UPPER STATE",
        "LOWER STATE",
    ] {
        assert!(out.contains(fragment), "missing {fragment:?} in\n{out}");
    }

    // Without the isotopologues' atoms the joint fit is impossible: one isotopologue, undecided.
    let o = rungs(&["analyze", &file, "--mc", "0", "--format", "json"]);
    assert_eq!(o.status.code(), Some(0));
    let j: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert_eq!(j["format"], "rungs-band-analysis");
    assert!(j["t00_cm1"]["value"].is_f64() && j["te_cm1"]["sigma"].is_f64());
    assert!(j["states"]["upper"]["recommended"].is_object());
    assert!(j["states"]["lower"]["levels"].is_array());
    assert_eq!(
        j["numbering"]["verdict_text"],
        "cannot be decided from these data"
    );
    assert!(
        j["warnings"]
            .as_array()
            .expect("warnings")
            .iter()
            .any(|w| w.as_str().is_some_and(|w| w.contains("for want of masses")))
    );
}

#[test]
fn bad_band_options_exit_2() {
    let file = demo("qz2-bands.csv");
    let o = rungs(&["analyze", &file, "--isotopologue", "29Qz2"]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("TAG=A,B"));
    let o = rungs(&["analyze", &file, "--b-upper", "0.8,x", "--b-lower", "1.4"]);
    assert_eq!(o.status.code(), Some(2));
}
