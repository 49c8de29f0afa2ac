//! `rungs levels` on inputs that would need unbounded work stops at a stated limit.
#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use std::io::Read;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Runs `rungs` and kills it after a generous 120 s (only to detect a hang).
fn rungs_bounded(args: &[&str]) -> (i32, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_rungs"))
        .args(args)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let start = Instant::now();
    let status = loop {
        if let Some(s) = child.try_wait().unwrap() {
            break s;
        }
        if start.elapsed() > Duration::from_secs(120) {
            child.kill().unwrap();
            panic!("rungs {args:?} still running after 120 s");
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    let (mut out, mut err) = (String::new(), String::new());
    child
        .stdout
        .take()
        .unwrap()
        .read_to_string(&mut out)
        .unwrap();
    child
        .stderr
        .take()
        .unwrap()
        .read_to_string(&mut err)
        .unwrap();
    (status.code().unwrap_or(-1), out, err)
}

/// Writes a SYNTHETIC two-column table r/Å, V/cm⁻¹ of `v(r)` on 1.45 … 9.44 Å.
fn table(name: &str, v: impl Fn(f64) -> f64) -> std::path::PathBuf {
    let mut text = String::from("r,V\n");
    for i in 0..800 {
        let r = 1.45 + 0.01 * f64::from(i);
        text.push_str(&format!("{r},{}\n", v(r)));
    }
    let path = std::env::temp_dir().join(format!("rungs-{name}-{}.csv", std::process::id()));
    std::fs::write(&path, text).unwrap();
    path
}

/// A Morse curve (D_e 25 000 cm⁻¹) with μ = 300 000 u holds thousands of levels: the lowest
/// are printed with a note naming the limit reached, exit 0 (common practice, no source).
#[test]
fn a_huge_mass_keeps_the_lowest_levels_and_names_the_limit() {
    let path = table("limits-morse", |r| {
        25_000.0 * (1.0 - (-2.0 * (r - 2.0)).exp()).powi(2)
    });
    let (code, out, err) = rungs_bounded(&["levels", path.to_str().unwrap(), "--mu", "300000"]);
    std::fs::remove_file(&path).ok();
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("note: stopped at") && out.contains("limit"),
        "{out}"
    );
    assert!(out.contains("\n   0 "), "the lowest level is kept: {out}");
}

/// μ = 10³⁰⁰ u cannot be resolved on any grid: refused at once with the grid limit, exit 2.
#[test]
fn an_absurd_mass_is_refused_with_the_grid_limit() {
    let path = table("limits-absurd", |r| {
        25_000.0 * (1.0 - (-2.0 * (r - 2.0)).exp()).powi(2)
    });
    let (code, _, err) = rungs_bounded(&["levels", path.to_str().unwrap(), "--mu", "1e300"]);
    std::fs::remove_file(&path).ok();
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("1000000 points (the limit)"), "{err}");
    assert!(!err.contains("panicked"), "{err}");
}

/// A harmonic well with μ = 10⁶ u up to 10⁵ cm⁻¹ (tens of thousands of levels) stops at a
/// stated limit, exit 0.
#[test]
fn a_harmonic_well_with_a_huge_mass_stops_at_a_limit() {
    let path = table("limits-harmonic", |r| 5.0e5 * (r - 5.0) * (r - 5.0));
    let (code, out, err) = rungs_bounded(&[
        "levels",
        path.to_str().unwrap(),
        "--mu",
        "1e6",
        "--energy-max",
        "1e5",
    ]);
    std::fs::remove_file(&path).ok();
    assert_eq!(code, 0, "{err}");
    assert!(
        out.contains("note: stopped at") && out.contains("limit"),
        "{out}"
    );
}

/// A curve file longer than any table may be (16 MiB) is refused before it is read, and a curve
/// of more lines than a table may have (200 000) before its points are kept; both name the
/// limit, exit 2.
#[test]
fn an_over_long_curve_file_is_refused_by_its_size() {
    let long = std::env::temp_dir().join(format!("rungs-curve-long-{}.csv", std::process::id()));
    let mut text = String::from("r,V\n");
    let line = format!("2.0,{}\n", "1".repeat(1000));
    while text.len() <= 16 * 1024 * 1024 {
        text.push_str(&line);
    }
    std::fs::write(&long, &text).unwrap();
    let (code, _, err) = rungs_bounded(&["levels", long.to_str().unwrap(), "--mu", "10"]);
    std::fs::remove_file(&long).ok();
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("16 MiB") && err.contains("not read"), "{err}");

    let many = std::env::temp_dir().join(format!("rungs-curve-many-{}.csv", std::process::id()));
    std::fs::write(&many, "r,V\n".to_string() + &"2,0\n".repeat(200_001)).unwrap();
    let (code, _, err) = rungs_bounded(&["levels", many.to_str().unwrap(), "--mu", "10"]);
    std::fs::remove_file(&many).ok();
    assert_eq!(code, 2, "{err}");
    assert!(err.contains("200000") && err.contains("limit"), "{err}");
}
