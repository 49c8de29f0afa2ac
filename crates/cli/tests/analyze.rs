//! `rungs analyze` end to end: exit codes, the JSON document's stable fields, the text report,
//! and that it reads the documents it writes.

use std::path::PathBuf;
use std::process::{Command, Output};

fn file(rel: &str) -> String {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../..")
        .join(rel)
        .to_string_lossy()
        .into_owned()
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

fn json(o: &Output) -> serde_json::Value {
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    serde_json::from_slice(&o.stdout).expect("valid JSON")
}

/// SOURCE: closed form of the Morse oscillator (domain notes §2.1, vector A: ωe = 1000,
/// ωexe = 10 cm⁻¹): linear Birge–Sponer gives v_D = 49.5 and D0 = 24 502.5 cm⁻¹ exactly, 50 bound
/// levels; the input file holds exact levels, so the tolerance is the 1e-6 rounding of the file.
#[test]
fn morse_levels_give_the_closed_form_limit_in_the_json() {
    let v = json(&rungs(&[
        "analyze",
        &file("tests/cli/morse_vector_a_levels.csv"),
        "--format",
        "json",
        "--mc",
        "200",
    ]));
    assert_eq!(v["format"], "rungs-analysis");
    let est = v["estimates"].as_array().expect("estimates");
    let bs = est
        .iter()
        .find(|e| e["method"] == "birge-sponer-linear")
        .expect("linear BS");
    assert!((bs["v_d"].as_f64().unwrap() - 49.5).abs() < 1e-6, "{bs}");
    assert!(
        (bs["d0_cm1"].as_f64().unwrap() - 24_502.5).abs() < 1e-4,
        "{bs}"
    );
    assert_eq!(bs["n_bound"], 50);
    assert!(
        bs["d0_sigma_cm1"].as_f64().is_some() && bs["extrapolated_fraction"].as_f64().is_some()
    );
    for m in ["observed-sum", "birge-sponer-curved", "leroy-bernstein"] {
        let e = est
            .iter()
            .find(|e| e["method"] == m)
            .unwrap_or_else(|| panic!("{m} listed"));
        for field in [
            "d0_cm1",
            "d0_sigma_cm1",
            "de_cm1",
            "v_d",
            "n_bound",
            "extrapolated_fraction",
            "reason",
        ] {
            assert!(e.get(field).is_some(), "{m} has {field}");
        }
    }
    let k = &v["constants"];
    assert!((k["we_cm1"]["value"].as_f64().unwrap() - 1000.0).abs() < 1e-6);
    assert!((k["wexe_cm1"]["value"].as_f64().unwrap() - 10.0).abs() < 1e-7);
    assert!(k["we_cm1"]["sigma"].as_f64().is_some());
    for field in ["method", "d0_cm1", "sigma_stat_cm1", "sigma_model_cm1"] {
        assert!(v["recommended"].get(field).is_some(), "recommended.{field}");
    }
    let levels = v["levels"].as_array().expect("levels");
    assert_eq!(levels.len(), 21);
    assert_eq!(levels[3]["v"], 3);
    assert!(
        levels[3]["energy_cm1"].as_f64().is_some() && levels[3]["sigma_cm1"].as_f64().is_some()
    );
}

/// The exported document re-imports: analysing the JSON it printed gives the same numbers
/// (it embeds its session: input text, reading choices, settings).
#[test]
fn exported_analysis_reimports_to_the_same_result() {
    let dir = std::env::temp_dir().join(format!("rungs-cli-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let first = rungs(&[
        "analyze",
        &file("crates/core/data/demo/qz2-levels.csv"),
        "--format",
        "json",
        "--mu",
        "14.5",
        "--mc",
        "300",
        "--seed",
        "7",
        "--exclude",
        "20=suspected blend",
    ]);
    let a = json(&first);
    assert_eq!(a["rows"]["excluded"][0]["row"], 20);
    assert_eq!(a["rows"]["excluded"][0]["reason"], "suspected blend");
    let path = dir.join("exported.json");
    std::fs::write(&path, &first.stdout).unwrap();
    let b = json(&rungs(&[
        "analyze",
        path.to_str().unwrap(),
        "--format",
        "json",
    ]));
    assert_eq!(a["estimates"], b["estimates"]);
    assert_eq!(a["recommended"], b["recommended"]);
    assert_eq!(b["settings"]["seed"], 7);
}

#[test]
fn text_report_states_the_limits_and_conventions() {
    let o = rungs(&[
        "analyze",
        &file("crates/core/data/demo/qz2-levels.csv"),
        "--mc",
        "0",
    ]);
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(o.status.code(), Some(0));
    for fragment in [
        "model-dependent estimates",
        "Recommended",
        "ΔG_{v+½} = G(v+1) − G(v)",
        "Assumptions",
    ] {
        assert!(out.contains(fragment), "missing '{fragment}'");
    }
}

#[test]
fn unusable_input_exits_2_with_a_reason() {
    let o = rungs(&["analyze", &file("tests/intake/bad/01_empty.csv")]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("rungs analyze:"));
    let o = rungs(&[
        "analyze",
        &file("tests/cli/morse_vector_a_levels.csv"),
        "--masses",
        "1H",
    ]);
    assert_eq!(o.status.code(), Some(2));
}
