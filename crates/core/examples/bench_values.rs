//! The numbers behind the benchmarks, as JSON on stdout, for `scripts/bench` to check against the
//! NumPy/SciPy reference (`scripts/bench_reference.py`): a speed figure only counts when both
//! sides agree on the answer. Same problems as the criterion benchmarks (benches/common).
//!
//! Usage: `cargo run --release -p rungs-core --example bench_values -- TABLE.csv`, where TABLE.csv
//! is the generated band table written by the reference script (checked here to be byte for
//! byte the table the parsing benchmark reads).
#![allow(clippy::unwrap_used)]

#[path = "../benches/common/mod.rs"]
mod common;

use rungs_core::Report;
use rungs_core::intake::{IntakeOptions, Observation, read_table};
use rungs_core::potential::{OuterWall, RkrPotential, solve_levels};
use rungs_core::settings::AnalysisSettings;
use serde_json::{Value, json};

fn analysis_values(report: &Report) -> Value {
    let methods: serde_json::Map<String, Value> = report
        .estimates
        .iter()
        .map(|e| {
            let mc = e.monte_carlo.as_ref().map(|m| {
                json!({
                    "median": m.d0.median, "p16": m.d0.p16, "p84": m.d0.p84,
                    "finite": m.d0.finite, "no_limit": m.d0.no_limit, "failed": m.d0.failed,
                })
            });
            (
                e.method.clone(),
                json!({
                    "d0_cm1": e.d0_cm1, "d0_sigma_cm1": e.d0_sigma_cm1, "de_cm1": e.de_cm1,
                    "v_d": e.v_d, "monte_carlo": mc, "sigma_scale": e.sigma_scale,
                    "n": e.leroy_bernstein.as_ref().map(|l| l.n.value),
                    "levels_used": e.leroy_bernstein.as_ref().map(|l| l.levels_used.clone()),
                }),
            )
        })
        .collect();
    json!({
        "n_levels": report.levels.len(),
        "order": report.fit.order,
        "scale_factor": report.uncertainty.scale_factor,
        "mc_samples": report.monte_carlo.samples,
        "mc_ran": report.monte_carlo.ran,
        "recommended": report.recommended.method, "recommended_d0_cm1": report.recommended.d0_cm1,
        "methods": methods,
    })
}

fn main() {
    let path = std::env::args()
        .nth(1)
        .expect("usage: bench_values TABLE.csv");
    let text = std::fs::read_to_string(&path).expect("read the table");
    let data = read_table(&text, &IntakeOptions::default()).expect("the table reads");
    let (mut n, mut sum_nu, mut sum_sigma) = (0usize, 0.0f64, 0.0f64);
    for row in data.usable_rows() {
        if let Some(Observation::Band(b)) = &row.observation {
            n += 1;
            sum_nu += b.position_cm1;
            sum_sigma += b.sigma_cm1.unwrap_or(f64::NAN);
        }
    }
    let table = json!({
        "identical_to_benchmark_input": text == common::bands_table(common::TABLE_ROWS),
        "kind": format!("{:?}", data.kind),
        "rows": data.rows.len(),
        "usable_bands": n,
        "sum_wavenumber_cm1": sum_nu,
        "sum_sigma_cm1": sum_sigma,
    });

    let qz2 = match rungs_core::analyze_session(&common::qz2_session(), &mut |_, _| {}).unwrap() {
        rungs_core::Analysis::Levels(r) => *r,
        rungs_core::Analysis::Bands(_) => panic!("the Qz2 demo is a level list"),
    };
    let lj12 = rungs_core::analyze_levels(
        &common::lj12_levels(),
        None,
        Some(common::LJ12_MU_U),
        &AnalysisSettings::default(),
    )
    .unwrap();

    let set = solve_levels(&common::lj40(), common::LJ_MU_U, &common::lj40_settings()).unwrap();
    let levels: Vec<Value> = set
        .levels
        .iter()
        .map(|l| json!({"v": l.v, "binding_cm1": l.binding_cm1, "error_estimate_cm1": l.error_estimate_cm1}))
        .collect();

    let rkr = RkrPotential::new(
        &common::rkr_input(),
        common::RKR_V_MAX,
        OuterWall::Automatic,
    )
    .unwrap();
    let points: Vec<Value> = rkr
        .curve
        .points
        .iter()
        .map(|p| json!({"v": p.v, "r_inner_angstrom": p.r_inner_angstrom, "r_outer_angstrom": p.r_outer_angstrom}))
        .collect();

    let out = json!({
        "table": table,
        "analysis": {"qz2_demo": analysis_values(&qz2), "lj12": analysis_values(&lj12)},
        "solver": {
            "mu_u": common::LJ_MU_U,
            "tolerance_cm1": common::lj40_settings().tolerance_cm1,
            "converged": set.converged,
            "levels": levels,
        },
        "rkr": {"v_max": common::RKR_V_MAX, "v_min": rkr.curve.v_min, "points": points},
    });
    println!("{}", serde_json::to_string_pretty(&out).unwrap());
}
