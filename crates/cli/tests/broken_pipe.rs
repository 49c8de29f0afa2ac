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
