//! `rungs check` and `rungs analyze` agree on a table where one σ cell is empty among given σ:
//! both go on, and both name the row that takes the median of the given σ.

use std::path::PathBuf;
use std::process::{Command, Output};

/// Levels of an invented oscillator (ωe ≈ 1000, ωexe ≈ 10 cm⁻¹, a little noise typed in), σ on
/// every row but line 5 (v = 3).
const TABLE: &str =
    "v,E,sigma\n0,0,0.1\n1,980.3,0.3\n2,1939.8,0.2\n3,2880.2,\n4,3799.9,0.5\n5,4700.1,0.4\n";

/// The table in a file of its own per test (tests run in parallel: one writing the file while
/// another reads it made the reader see an empty table now and then).
fn table_file(name: &str) -> PathBuf {
    let path =
        PathBuf::from(env!("CARGO_TARGET_TMPDIR")).join(format!("one_missing_sigma_{name}.csv"));
    std::fs::write(&path, TABLE).expect("write the table");
    path
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

#[test]
fn check_names_the_row_that_takes_the_median() {
    let path = table_file("check");
    let o = rungs(&["check", path.to_str().unwrap()]);
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{out}\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(out.contains("6 usable"), "{out}");
    assert!(
        out.lines()
            .any(|l| l.contains("row 5") && l.contains("median")),
        "{out}"
    );
}

#[test]
fn analyze_goes_on_and_says_which_row_took_the_median() {
    let path = table_file("analyze");
    let o = rungs(&["analyze", path.to_str().unwrap(), "--mc", "0"]);
    let out = String::from_utf8_lossy(&o.stdout);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{out}\n{}",
        String::from_utf8_lossy(&o.stderr)
    );
    assert!(
        out.lines()
            .any(|l| l.contains("row 5") && l.contains("median")),
        "{out}"
    );
    let o = rungs(&[
        "analyze",
        path.to_str().unwrap(),
        "--mc",
        "0",
        "--format",
        "json",
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).expect("JSON");
    assert_eq!(v["rows"]["used"], 6, "{}", v["rows"]);
    let warned = v["warnings"]
        .as_array()
        .expect("warnings")
        .iter()
        .filter_map(|w| w.as_str())
        .any(|w| w.contains("row 5") && w.contains("median"));
    assert!(warned, "{}", v["warnings"]);
}
