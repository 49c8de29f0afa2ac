//! The benchmark problems, shared by the criterion benchmarks and by
//! `examples/bench_values.rs` (which prints the numbers `scripts/bench` checks against the
//! NumPy/SciPy reference in `scripts/bench_reference.py`, on exactly these inputs).
#![allow(dead_code, clippy::unwrap_used)]

use rungs_core::data::Level;
use rungs_core::potential::{LennardJones, RkrInput, RotationInput, SolverSettings};
use rungs_core::session::Session;

/// Rows of the generated table of the parsing benchmark.
pub const TABLE_ROWS: usize = 100_000;

/// A SYNTHETIC band table (v′, v″, ν, σ) with `rows` rows: v′ = i / 1000, v″ = i mod 1000,
/// ν = 20000 + 150.123 v′ − 12.345 v″ + (7919 i mod 1000)/1000 cm⁻¹, σ = (i mod 50 + 1)/1000 cm⁻¹.
/// Written in integer thousandths so that `scripts/bench_reference.py` produces the identical
/// text byte for byte.
pub fn bands_table(rows: usize) -> String {
    let mut s = String::with_capacity(rows * 32);
    s.push_str(
        "# SYNTHETIC band table generated for the parsing benchmark (not a real molecule)\n",
    );
    s.push_str("v_upper,v_lower,wavenumber_cm1,sigma_cm1\n");
    for i in 0..rows {
        let (vu, vl) = (i / 1000, i % 1000);
        let milli =
            20_000_000 + 150_123 * vu as i64 - 12_345 * vl as i64 + (7919 * i as i64) % 1000;
        let sigma = i % 50 + 1;
        s.push_str(&format!(
            "{vu},{vl},{}.{:03},0.{sigma:03}\n",
            milli / 1000,
            milli % 1000
        ));
    }
    s
}

/// The page's demo session: SYNTHETIC molecule Qz2, levels v = 0…38 (what the page analyses on
/// load), with its reduced mass.
pub fn qz2_session() -> Session {
    rungs_core::examples::example("qz2-levels")
        .expect("the demo example exists")
        .session()
}

/// The top twelve levels (v = 11…22) of the SYNTHETIC Lennard-Jones molecule of
/// tests/analysis/lennard_jones.json, σ = 0.01 cm⁻¹.
pub fn lj12_levels() -> Vec<Level> {
    let text = include_str!("../../../../tests/analysis/lennard_jones.json");
    let j: serde_json::Value = serde_json::from_str(text).expect("fixture is JSON");
    j["levels"]
        .as_array()
        .expect("levels")
        .iter()
        .map(|l| Level {
            v: l["v"].as_u64().expect("v") as u32,
            energy_cm1: l["energy_cm1"].as_f64().expect("energy"),
            sigma_cm1: Some(0.01),
            b_cm1: None,
            isotopologue: None,
        })
        .filter(|l| l.v >= 11)
        .collect()
}

/// Reduced mass of the Lennard-Jones molecule of the 12-level analysis, u.
pub const LJ12_MU_U: f64 = 16.0;

/// Reduced mass of the Lennard-Jones well of the level-solver benchmark, u.
pub const LJ_MU_U: f64 = 20.0;

/// The SYNTHETIC Lennard-Jones (12,6) well holding 40 levels (D_e 1500 cm⁻¹, r_e 4 Å; the curve
/// of `scripts/oracles/lj_dvr.py`).
pub fn lj40() -> LennardJones {
    LennardJones::twelve_six(1500.0, 4.0).unwrap()
}

/// Solver settings of the headline case: every level to 0.01 cm⁻¹, energies only.
pub fn lj40_settings() -> SolverSettings {
    SolverSettings {
        tolerance_cm1: 0.01,
        wavefunction_points: 0,
        ..Default::default()
    }
}

/// Highest v of the RKR benchmark.
pub const RKR_V_MAX: f64 = 40.0;

/// SYNTHETIC constants of the RKR benchmark: ωe 1000, ωexe 10 cm⁻¹, Be 0.42, αe 0.003 cm⁻¹, μ 10 u.
pub fn rkr_input() -> RkrInput {
    RkrInput {
        g_cm1: vec![0.0, 1000.0, -10.0],
        rotation: RotationInput::Dunham(vec![0.42, -0.003]),
        mu_u: 10.0,
    }
}
