//! Option values that begin with `-` (negative numbers, `-1,-1`) are values, not flags.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::process::Command;

fn rungs(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .unwrap();
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

/// A negative αe (it is negative for some states; common practice, no source) is read as the
/// value of `--alphae`, and the command runs.
#[test]
fn a_negative_number_is_an_option_value() {
    let (code, out, err) = rungs(&[
        "potential",
        "--we",
        "1000",
        "--wexe",
        "10",
        "--be",
        "1",
        "--alphae",
        "-0.01",
        "--mu",
        "10",
        "--v-max",
        "3",
    ]);
    assert!(!err.contains("unexpected argument"), "{err}");
    assert_eq!(code, 0, "{err}");
    assert!(out.contains("RKR"), "{out}");
}

/// `--b-lower -1,-1` reaches the command's own check of the value instead of being taken for
/// a flag.
#[test]
fn a_list_beginning_with_a_minus_is_an_option_value() {
    let path = std::env::temp_dir().join(format!("rungs-hyphen-test-{}.csv", std::process::id()));
    std::fs::write(&path, "v,E\n0,495\n1,1465\n2,2415\n3,3345\n4,4255\n").unwrap();
    let (_, _, err) = rungs(&[
        "analyze",
        path.to_str().unwrap(),
        "--b-upper",
        "1,-0.01",
        "--b-lower",
        "-1,-1",
    ]);
    std::fs::remove_file(&path).ok();
    assert!(!err.contains("unexpected argument"), "{err}");
    assert!(!err.contains("panicked"), "{err}");
}

/// Negative numbers given to whole-number options (and to --exclude and --column) reach the
/// option's own check ("invalid value" from the argument reader, or the command's message)
/// instead of being taken for a flag ("unexpected argument").
#[test]
fn a_negative_number_reaches_the_options_own_check() {
    let path = std::env::temp_dir().join(format!("rungs-hyphen-neg-{}.csv", std::process::id()));
    std::fs::write(&path, "v,E\n0,495\n1,1465\n2,2415\n3,3345\n4,4255\n").unwrap();
    let file = path.to_str().unwrap();
    let constants = [
        "potential",
        "--we",
        "1000",
        "--wexe",
        "10",
        "--be",
        "1",
        "--alphae",
        "0.01",
        "--mu",
        "10",
    ];
    let cases: Vec<Vec<&str>> = vec![
        vec!["analyze", file, "--mc", "-1"],
        vec!["analyze", file, "--seed", "-1"],
        vec!["analyze", file, "--order", "-2"],
        vec!["analyze", file, "--max-order", "-2"],
        vec!["analyze", file, "--lb-top", "-3"],
        vec!["analyze", file, "--upper-order", "-1"],
        vec!["check", file, "--exclude", "-1"],
        vec!["check", file, "--column", "-1"],
        vec!["levels", file, "--mu", "10", "--j", "-1"],
        vec![
            "levels", file, "--mu", "10", "--limit", "1", "--tail-n", "-6",
        ],
        [&constants[..], &["--v-max", "-1"]].concat(),
        [&constants[..], &["--limit", "1", "--tail-n", "-6"]].concat(),
    ];
    for args in cases {
        let (code, _, err) = rungs(&args);
        assert!(!err.contains("unexpected argument"), "{args:?}: {err}");
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert_eq!(code, 2, "{args:?}: {err}");
    }
    std::fs::remove_file(&path).ok();
}
