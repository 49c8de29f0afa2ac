//! `rungs check` end to end: exit codes and what it prints.
//!
//! SOURCE: the SYNTHETIC tables under tests/intake (values typed by hand); the expected output
//! names the rows and columns where the faults were typed.

use std::path::PathBuf;
use std::process::{Command, Output};

fn data(rel: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/intake")
        .join(rel)
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

fn text(o: &Output) -> (String, String) {
    (
        String::from_utf8_lossy(&o.stdout).into_owned(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn usable_table_exits_0_and_says_what_was_read() {
    let o = rungs(&["check", data("good/levels.csv").to_str().expect("path")]);
    let (out, err) = text(&o);
    assert_eq!(o.status.code(), Some(0), "{out}{err}");
    for fragment in [
        "kind:      levels (detected from the columns)",
        "header on line 2",
        "level energy, from the header; unit cm⁻¹, from the header",
        "uncertainty σ, from the header; unit cm⁻¹, as its value column",
        "not read: name not recognised",
        "5 usable, 1 excluded",
        "row 7, column 2 ('E (cm-1)'): the level energy is missing ('n/a')",
        "constants: CODATA 2022",
        "usable:    yes",
    ] {
        assert!(out.contains(fragment), "missing {fragment:?} in\n{out}");
    }
}

#[test]
fn too_few_rows_exit_2_with_the_count_needed() {
    let o = rungs(&[
        "check",
        data("bad/31_too_few_levels.csv").to_str().expect("path"),
    ]);
    let (out, err) = text(&o);
    assert_eq!(o.status.code(), Some(2));
    assert!(out.contains("usable:    no"), "{out}");
    assert!(err.contains("2 usable, at least 3 needed"), "{err}");
}

#[test]
fn unreadable_column_exits_2_naming_it_and_unit_option_fixes_it() {
    let f = data("bad/07_wavelength_no_medium.csv");
    let f = f.to_str().expect("path");
    let o = rungs(&["check", f]);
    let (_, err) = text(&o);
    assert_eq!(o.status.code(), Some(2));
    assert!(
        err.contains("column 3 ('lambda (nm)')") && err.contains("air or in vacuum"),
        "{err}"
    );
    let o = rungs(&["check", f, "--unit", "nm-air", "--kind", "bands", "--heads"]);
    let (out, err) = text(&o);
    assert_eq!(o.status.code(), Some(0), "{out}{err}");
    assert!(out.contains("unit nm (standard air), from --unit"), "{out}");
    assert!(out.contains("positions: band heads (chosen)"), "{out}");
    assert!(out.contains("kind:      bands (chosen)"), "{out}");
}

#[test]
fn column_option_assigns_roles() {
    let f = data("bad/04_unknown_columns.csv");
    let o = rungs(&[
        "check",
        f.to_str().expect("path"),
        "--column",
        "1=v",
        "--column",
        "2=energy:eV",
    ]);
    let (out, err) = text(&o);
    assert_eq!(o.status.code(), Some(0), "{out}{err}");
    assert!(
        out.contains("level energy, chosen; unit eV, chosen"),
        "{out}"
    );
}

#[test]
fn bad_arguments_and_missing_files_exit_2() {
    let f = data("good/levels.csv");
    let f = f.to_str().expect("path");
    for (args, fragment) in [
        (
            vec!["check", f, "--unit", "furlong"],
            "'furlong' is not a unit",
        ),
        (vec!["check", f, "--kind", "potatoes"], "not a kind of data"),
        (vec!["check", f, "--column", "x=v"], "not a column number"),
        (
            vec!["check", f, "--column", "9=v"],
            "column 9 does not exist",
        ),
        (
            vec!["check", "/nonexistent/table.csv"],
            "cannot read the file",
        ),
    ] {
        let o = rungs(&args);
        let (_, err) = text(&o);
        assert_eq!(o.status.code(), Some(2), "{args:?}");
        assert!(err.contains(fragment), "{args:?}: {err}");
    }
}

#[test]
fn a_session_document_is_checked_with_its_choices() {
    let dir = std::env::temp_dir().join(format!("rungs-check-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("temp dir");
    let table = std::fs::read_to_string(data("good/levels.csv")).expect("levels");
    let mut options = rungs_core::intake::IntakeOptions::default();
    options.exclude(3, "SYNTHETIC: suspect calibration");
    let s = rungs_core::session::Session::new(
        table,
        Some("levels.csv".into()),
        options,
        Default::default(),
    );
    let path = dir.join("session.json");
    std::fs::write(&path, s.to_json().expect("json")).expect("write");
    let o = rungs(&["check", path.to_str().expect("path")]);
    let (out, err) = text(&o);
    std::fs::remove_dir_all(&dir).ok();
    assert_eq!(o.status.code(), Some(0), "{out}{err}");
    assert!(
        out.contains("row 3: excluded by the user: SYNTHETIC: suspect calibration"),
        "{out}"
    );
    assert!(out.contains("4 usable, 2 excluded"), "{out}");
}
