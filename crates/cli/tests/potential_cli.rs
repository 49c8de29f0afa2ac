//! The `potential` and `levels` commands end to end: arguments in, text and JSON out.
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

/// SOURCE: domain.md §2.2 (Morse turning points r± = r_e − ln(1 ∓ √(G/D_e))/a) and §2.1 vector A
/// (ωe 1000, ωexe 10, μ 10 u, D_e 25 000 cm⁻¹). The JSON carries `levels` with v, energy_cm1,
/// b_v_cm1 and both turning points; the RKR half-width equals the Morse one (f depends on G
/// only). Tolerance 1e-9 Å.
#[test]
fn potential_json_has_levels_with_turning_points() {
    let (code, out, err) = rungs(&[
        "potential",
        "--we",
        "1000",
        "--wexe",
        "10",
        "--be",
        "0.4214",
        "--alphae",
        "0.004",
        "--mu",
        "10",
        "--v-max",
        "10",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
    let levels = doc["levels"].as_array().unwrap();
    assert_eq!(levels.len(), 11);
    let m = &doc["morse"];
    assert!((m["de_cm1"].as_f64().unwrap() - 25_000.0).abs() < 1e-9);
    for l in levels {
        for key in [
            "v",
            "energy_cm1",
            "b_v_cm1",
            "r_inner_angstrom",
            "r_outer_angstrom",
        ] {
            assert!(l.get(key).is_some(), "missing {key}");
        }
        let g = l["energy_cm1"].as_f64().unwrap();
        let (a, re) = (
            m["a_per_angstrom"].as_f64().unwrap(),
            m["re_angstrom"].as_f64().unwrap(),
        );
        let s = (g / 25_000.0).sqrt();
        let morse_width = ((1.0 + s).ln() - (1.0 - s).ln()) / a;
        let rkr_width =
            l["r_outer_angstrom"].as_f64().unwrap() - l["r_inner_angstrom"].as_f64().unwrap();
        assert!(
            (rkr_width - morse_width).abs() < 1e-9,
            "{rkr_width} vs {morse_width}"
        );
        let mi = l["morse_r_inner_angstrom"].as_f64().unwrap();
        assert!((mi - (re - (1.0 + s).ln() / a)).abs() < 1e-12);
    }
}

/// Bad input gives exit code 2 and a message, not a crash (common practice, no source).
#[test]
fn potential_rejects_a_falling_g() {
    let (code, _, err) = rungs(&[
        "potential",
        "--we",
        "1000",
        "--wexe",
        "10",
        "--be",
        "0.42",
        "--alphae",
        "0.004",
        "--mu",
        "10",
        "--v-max",
        "80",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("G(v) stops rising"), "{err}");
}

/// SOURCE: closed-form Morse levels G(v) = ωe(v+½) − ωexe(v+½)² (domain.md §2.1 vector A) from a
/// SYNTHETIC table of the Morse curve in bohr and hartree (units converted with CODATA 2022
/// a₀ and E_h). Tolerance 0.01 cm⁻¹ for v ≤ 40 (spline interpolation of the table).
#[test]
fn levels_of_a_pointwise_table() {
    let (de, a, re): (f64, f64, f64) = (25_000.0, 2.435_576_1, 2.0);
    let (bohr, hartree) = (0.529_177_210_544, 219_474.631_363_14);
    let mut text = String::from("# SYNTHETIC Morse curve (vector A), r/bohr V/hartree\nr V\n");
    for i in 0..800 {
        let r = 1.45 + 0.01 * i as f64;
        let v = de * (1.0 - (-a * (r - re)).exp()).powi(2);
        text.push_str(&format!("{:.10} {:.12e}\n", r / bohr, v / hartree));
    }
    let path = std::env::temp_dir().join(format!("rungs-levels-test-{}.txt", std::process::id()));
    std::fs::write(&path, text).unwrap();
    let (code, out, err) = rungs(&[
        "levels",
        path.to_str().unwrap(),
        "--mu",
        "10",
        "--r-unit",
        "bohr",
        "--v-unit",
        "hartree",
        "--format",
        "json",
    ]);
    std::fs::remove_file(&path).ok();
    assert_eq!(code, 0, "{err}");
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
    let levels = doc["levels"].as_array().unwrap();
    assert!(levels.len() >= 45, "{}", levels.len());
    // a here is √(μ ωexe/C_u) for ωexe = 10 to 8 digits, so ωe, ωexe follow from D_e and a.
    let wexe = a * a * 16.857_629_17 / 10.0;
    let we = 2.0 * (de * wexe).sqrt();
    for l in levels.iter().take(41) {
        let v = l["v"].as_f64().unwrap();
        let x = v + 0.5;
        let g = we * x - wexe * x * x;
        let e = l["energy_cm1"].as_f64().unwrap();
        assert!((e - g).abs() < 0.01, "v={v}: {}", e - g);
        for key in ["b_v_cm1", "r_inner_angstrom", "r_outer_angstrom"] {
            assert!(l[key].as_f64().is_some(), "missing {key}");
        }
    }
}

/// A missing file is exit code 2 with the path in the message.
#[test]
fn levels_reports_a_missing_file() {
    let (code, _, err) = rungs(&["levels", "/nonexistent/curve.csv", "--mu", "10"]);
    assert_eq!(code, 2);
    assert!(err.contains("/nonexistent/curve.csv"), "{err}");
}

/// `--v-max 1000000000` (gigabytes of levels) is refused before anything is allocated, naming
/// the option and its allowed range, for anharmonic and harmonic constants (common practice,
/// no source).
#[test]
fn a_huge_v_max_is_refused_with_its_range() {
    for wexe in ["10", "0"] {
        let (code, _, err) = rungs(&[
            "potential",
            "--we",
            "1000",
            "--wexe",
            wexe,
            "--be",
            "1",
            "--alphae",
            "0.01",
            "--mu",
            "10",
            "--v-max",
            "1000000000",
        ]);
        assert_eq!(code, 2, "{err}");
        assert!(err.contains("--v-max"), "{err}");
        assert!(err.contains("0..=1000"), "{err}");
        assert!(!err.contains("memory allocation"), "{err}");
    }
}

/// SOURCE: scripts/oracles/mlr_dvr.py (sinc-DVR levels of a SYNTHETIC Morse/long-range well,
/// tests/potential/mlr_dvr.json). `rungs levels --mlr` reads the curve as JSON — the form an
/// analysis document carries its fitted potential in — and gives those levels within 10⁻³ cm⁻¹.
#[test]
fn levels_of_an_mlr_curve_match_the_dvr() {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/potential/mlr_dvr.json"
    );
    let fx: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap();
    let w = &fx["wells"][0];
    let curve = serde_json::json!({
        "de_cm1": w["de_cm1"], "re_angstrom": w["re_angstrom"], "p": w["p"], "q": w["q"],
        "r_ref_angstrom": w["r_ref_angstrom"], "beta": w["beta"],
        "tail": w["tail"].as_array().unwrap().iter()
            .map(|t| serde_json::json!({"m": t[0], "c_cm1_angstrom_m": t[1]})).collect::<Vec<_>>(),
    });
    let dir = std::env::temp_dir().join(format!("rungs-mlr-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("curve.json");
    std::fs::write(&file, curve.to_string()).unwrap();
    let mu = w["mu_u"].as_f64().unwrap().to_string();
    let (code, out, err) = rungs(&[
        "levels",
        file.to_str().unwrap(),
        "--mlr",
        "--mu",
        &mu,
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let doc: serde_json::Value = serde_json::from_str(&out).unwrap();
    let want = w["levels_cm1"].as_array().unwrap();
    let got = doc["levels"].as_array().unwrap();
    for (g, e) in got.iter().zip(want) {
        let (g, e) = (g["energy_cm1"].as_f64().unwrap(), e.as_f64().unwrap());
        assert!((g - e).abs() < 1e-3, "{g} vs {e}");
    }
    let (code, _, err) = rungs(&["levels", path, "--mlr", "--mu", "20"]);
    assert_eq!(code, 2);
    assert!(err.contains("Morse/long-range curve"), "{err}");
    std::fs::remove_dir_all(&dir).ok();
}
