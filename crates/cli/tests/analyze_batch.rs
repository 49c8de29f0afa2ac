//! `rungs analyze A B … --summary FILE`: one summary row per file, a file that fails is a row
//! with its message and does not stop the run, and the numbers of each row are the ones the
//! single-file `--format json` document of that file holds (the reference).

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn demo(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../crates/core/data/demo")
        .join(name)
}

fn rungs(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .output()
        .expect("run rungs")
}

fn json_of(file: &Path) -> serde_json::Value {
    let o = rungs(&[
        "analyze",
        &file.to_string_lossy(),
        "--format",
        "json",
        "--mc",
        "100",
    ]);
    assert_eq!(
        o.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    serde_json::from_slice(&o.stdout).expect("JSON")
}

/// Splits one CSV line of the summary (quoted cells may hold commas).
fn cells(line: &str) -> Vec<String> {
    let mut out = vec![String::new()];
    let mut quoted = false;
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '"' if quoted && chars.peek() == Some(&'"') => {
                chars.next();
                out.last_mut().expect("cell").push('"');
            }
            '"' => quoted = !quoted,
            ',' if !quoted => out.push(String::new()),
            _ => out.last_mut().expect("cell").push(c),
        }
    }
    out
}

#[test]
fn a_folder_with_a_bad_file_gives_one_row_per_file_and_the_documents_numbers() {
    let dir = std::env::temp_dir().join(format!("rungs-batch-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("dir");
    std::fs::write(dir.join("=bad.csv"), "v,E (MeV)\n0,0\n1,200\n2,400\n").expect("write");
    let levels = demo("qz2-levels.csv");
    let spacings = demo("qz2-spacings.csv");
    // Run in the folder, so the bad file is named as it is written, starting with '='.
    let o = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .current_dir(&dir)
        .args([
            "analyze",
            &levels.to_string_lossy(),
            "=bad.csv",
            &spacings.to_string_lossy(),
            "--mc",
            "100",
            "--summary",
            "summary.csv",
        ])
        .output()
        .expect("run rungs");
    // A file failed: exit code 2, but only after every file is in the summary.
    assert_eq!(
        o.status.code(),
        Some(2),
        "{}",
        String::from_utf8_lossy(&o.stderr)
    );
    let text = std::fs::read_to_string(dir.join("summary.csv")).expect("summary written");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 4, "{text}");
    let header = cells(lines[0]);
    let col = |name: &str| header.iter().position(|h| h == name).expect(name);
    for (line, file) in [(lines[1], &levels), (lines[3], &spacings)] {
        let row = cells(line);
        assert_eq!(row[col("status")], "ok", "{line}");
        let doc = json_of(file);
        let rec = &doc["recommended"];
        let d0: f64 = row[col("d0_cm1")].parse().expect("D0");
        assert_eq!(Some(d0), rec["d0_cm1"].as_f64(), "{line}");
        let low: f64 = row[col("d0_low_cm1")].parse().expect("low");
        assert_eq!(Some(low), rec["d0_low_cm1"].as_f64());
        let we: f64 = row[col("we_cm1")].parse().expect("we");
        assert_eq!(Some(we), doc["constants"]["we_cm1"]["value"].as_f64());
        let warnings: usize = row[col("warnings")].parse().expect("count");
        assert_eq!(warnings, doc["warnings"].as_array().expect("list").len());
    }
    let row = cells(lines[2]);
    assert_eq!(row[col("status")], "failed");
    // The file name starts with '=': written as text, not as a formula.
    assert!(row[col("file")].starts_with("'="), "{}", lines[2]);
    assert!(
        row[col("message")].contains("column 2 ('E (MeV)')"),
        "{}",
        lines[2]
    );
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn several_files_without_a_summary_are_refused_with_a_hint() {
    let a = demo("qz2-levels.csv");
    let o = rungs(&["analyze", &a.to_string_lossy(), &a.to_string_lossy()]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("--summary"));
}
