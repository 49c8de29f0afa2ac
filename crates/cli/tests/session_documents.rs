//! `rungs analyze DOCUMENT` on hostile session documents: plain messages, bounded memory.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::process::Command;

/// A small valid session document (SYNTHETIC levels), written by `rungs` itself from a table.
fn document() -> serde_json::Value {
    let dir = std::env::temp_dir().join(format!("rungs-docs-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let table = dir.join("t.csv");
    std::fs::write(&table, "v,E\n0,495\n1,1465\n2,2415\n3,3345\n4,4255\n").unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args([
            "analyze",
            table.to_str().unwrap(),
            "--mc",
            "0",
            "--format",
            "json",
        ])
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    report["session"].clone()
}

/// Runs `rungs analyze` on `doc` written to a file, in a shell limited to `memory_mib` of
/// address space (`ulimit -v`); returns the exit code (`None`: killed) and standard error.
fn analyze(doc: &str, name: &str, memory_mib: u64) -> (Option<i32>, String) {
    let path = std::env::temp_dir().join(format!("rungs-doc-{name}-{}.json", std::process::id()));
    std::fs::write(&path, doc).unwrap();
    let out = Command::new("sh")
        .arg("-c")
        .arg(format!(
            "ulimit -v {}; exec \"$0\" analyze \"$1\" --mc 0",
            memory_mib * 1024
        ))
        .arg(env!("CARGO_BIN_EXE_rungs"))
        .arg(&path)
        .output()
        .unwrap();
    std::fs::remove_file(&path).ok();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Parser words that must not reach users (common practice, no source).
fn assert_plain(message: &str) {
    for internal in [
        "invalid type",
        "unknown variant",
        "missing field",
        "expected u32",
        "column 1",
        "`",
        "panicked",
    ] {
        assert!(!message.contains(internal), "'{internal}' in: {message}");
    }
}

/// The three messages, through the command line.
#[test]
fn document_errors_reach_the_user_in_the_documents_terms() {
    let mut doc = document();
    doc["settings"]["mc_samples"] = serde_json::json!(1e300);
    let (code, err) = analyze(&doc.to_string(), "mc", 1024);
    assert_eq!(code, Some(2), "{err}");
    assert_plain(&err);
    assert!(err.contains("\"mc_samples\" under \"settings\""), "{err}");

    let mut doc = document();
    doc["intake"]["kind"] = serde_json::json!("foo");
    let (code, err) = analyze(&doc.to_string(), "kind", 1024);
    assert_eq!(code, Some(2), "{err}");
    assert_plain(&err);
    assert!(err.contains("levels, spacings or bands"), "{err}");

    let mut doc = document();
    doc.as_object_mut().unwrap().remove("input");
    let (code, err) = analyze(&doc.to_string(), "input", 1024);
    assert_eq!(code, Some(2), "{err}");
    assert_plain(&err);
    assert!(err.contains("no \"input\""), "{err}");
}

/// A million exclusion entries (a 30 MB document) are refused with the limit named, within
/// 400 MiB of address space (the issue measured 1.6 GB used).
#[test]
fn a_million_exclusions_are_refused_within_bounded_memory() {
    let mut doc = document();
    let entries: Vec<serde_json::Value> = (0..1_000_000)
        .map(|i| serde_json::json!({"row": i, "reason": "x"}))
        .collect();
    doc["intake"]["exclusions"] = serde_json::Value::Array(entries);
    let (code, err) = analyze(&doc.to_string(), "million", 400);
    assert_eq!(code, Some(2), "{err}");
    assert_plain(&err);
    assert!(err.contains("100000") && err.contains("limit"), "{err}");
}
