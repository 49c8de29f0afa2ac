//! `--exclude` of a row the table does not have is an error naming that row, in `rungs check`
//! and `rungs analyze` alike; a row that exists is excluded as before.

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

#[test]
fn excluding_a_row_that_does_not_exist_is_an_error_naming_it() {
    let demo = demo();
    for args in [
        vec![
            "analyze",
            &demo,
            "--mu",
            "14.5",
            "--mc",
            "0",
            "--exclude",
            "999",
        ],
        vec!["check", &demo, "--exclude", "999"],
    ] {
        let o = rungs(&args);
        assert_eq!(o.status.code(), Some(2), "{}: exit 2", args[0]);
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains("999"), "{}: {err}", args[0]);
    }
    // A row that exists is excluded as before (line 6 is v = 0 of the demo).
    let o = rungs(&[
        "analyze",
        &demo,
        "--mu",
        "14.5",
        "--mc",
        "0",
        "--exclude",
        "10=test",
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("38 levels"),
        "{}",
        &text[..600.min(text.len())]
    );
}
