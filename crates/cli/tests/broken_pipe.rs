//! Writing into a pipe whose reader has gone (`rungs check FILE | head`) ends quietly.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::io::Read;
use std::process::{Command, Stdio};

/// A levels table with 5000 extra, long-named columns: `check` lists every column, so its
/// report (about 450 KB) is far larger than a pipe's buffer and the writer must meet the
/// closed pipe. Expected (common practice, no source): no panic, exit 0 or death by SIGPIPE.
#[test]
fn check_into_a_closed_pipe_ends_quietly() {
    let mut text = String::from("v,E");
    for i in 0..5000 {
        text.push_str(&format!(
            ",extra_column_with_a_rather_long_name_number_{i:05}"
        ));
    }
    text.push('\n');
    for v in 0..6 {
        let x = f64::from(v) + 0.5;
        text.push_str(&format!("{v},{}", 1000.0 * x - 10.0 * x * x));
        text.push_str(&",x".repeat(5000));
        text.push('\n');
    }
    let path = std::env::temp_dir().join(format!("rungs-pipe-test-{}.csv", std::process::id()));
    std::fs::write(&path, text).unwrap();
    let mut child = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(["check", path.to_str().unwrap()])
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Read the first bytes like `head -c 100`, then close the pipe.
    let mut first = [0u8; 100];
    child.stdout.take().unwrap().read_exact(&mut first).unwrap();
    let mut err = String::new();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut err)
        .unwrap();
    let status = child.wait().unwrap();
    std::fs::remove_file(&path).ok();
    assert!(first.starts_with(b"rungs check: "));
    assert!(!err.contains("panicked"), "{err}");
    assert!(err.is_empty(), "{err}");
    assert_eq!(status.code(), Some(0), "{status:?}");
}

/// A SYNTHETIC Morse curve r/Å, V/cm⁻¹ (D_e 25 000 cm⁻¹, a = 2 Å⁻¹, r_e = 2 Å) for `levels`.
fn morse_table() -> std::path::PathBuf {
    let mut text = String::from("r,V\n");
    for i in 0..800 {
        let r = 1.45 + 0.01 * f64::from(i);
        let v = 25_000.0 * (1.0 - (-2.0 * (r - 2.0)).exp()).powi(2);
        text.push_str(&format!("{r},{v}\n"));
    }
    let path = std::env::temp_dir().join(format!("rungs-pipe-morse-{}.csv", std::process::id()));
    std::fs::write(&path, text).unwrap();
    path
}

/// Runs `rungs ARGS` with standard output (or, with `on_stderr`, standard error) a pipe whose
/// reading end is already closed, so the first write meets the closed pipe whatever its size.
/// Returns the exit code (`None`: killed by a signal) and what went to the other stream.
fn into_closed_pipe(args: &[&str], on_stderr: bool) -> (Option<i32>, String) {
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let mut command = Command::new(env!("CARGO_BIN_EXE_rungs"));
    command.args(args);
    if on_stderr {
        command.stderr(writer).stdout(Stdio::piped());
    } else {
        command.stdout(writer).stderr(Stdio::piped());
    }
    let out = command.output().unwrap();
    let other = if on_stderr { out.stdout } else { out.stderr };
    (
        out.status.code(),
        String::from_utf8_lossy(&other).into_owned(),
    )
}

/// Every command, its output written into a closed pipe: no panic (Rust's panic exit code is
/// 101), nothing on standard error, exit 0 (common practice, no source: `cmd | head` is the
/// reader's choice to stop, not a failure).
#[test]
fn every_command_into_a_closed_pipe_ends_quietly() {
    let demo = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../core/data/demo/qz2-levels.csv"
    );
    let morse = morse_table();
    let morse = morse.to_str().unwrap();
    let cases: [&[&str]; 7] = [
        &["version"],
        &["check", demo],
        &["analyze", demo, "--mc", "0"],
        &["analyze", demo, "--mc", "0", "--format", "json"],
        &[
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
        ],
        &["levels", morse, "--mu", "10"],
        &["levels", morse, "--mu", "10", "--format", "json"],
    ];
    for args in cases {
        let (code, err) = into_closed_pipe(args, false);
        assert!(!err.contains("panicked"), "{args:?}: {err}");
        assert_ne!(code, Some(101), "{args:?}: {err}");
        assert_eq!(code, Some(0), "{args:?}: {err}");
        assert!(err.is_empty(), "{args:?}: {err}");
    }
    std::fs::remove_file(morse).ok();
}

/// A message for standard error written into a closed pipe (`rungs check missing.csv 2>&1 |
/// head -c0`) does not turn into a panic either: the command keeps its own exit code, 2.
#[test]
fn a_message_into_a_closed_pipe_keeps_the_exit_code() {
    let missing = std::env::temp_dir().join("rungs-pipe-test-no-such-file.csv");
    let missing = missing.to_str().unwrap();
    let cases: [&[&str]; 4] = [
        &["check", missing],
        &["analyze", missing],
        &["levels", missing, "--mu", "10"],
        &[
            "potential",
            "--we",
            "-1",
            "--wexe",
            "10",
            "--be",
            "1",
            "--alphae",
            "0",
            "--mu",
            "10",
        ],
    ];
    for args in cases {
        let (code, out) = into_closed_pipe(args, true);
        assert_ne!(code, Some(101), "{args:?}: {out}");
        assert_eq!(code, Some(2), "{args:?}: {out}");
    }
}
