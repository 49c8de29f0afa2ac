//! Benchmark of the full vibrational analysis: order selection, every extrapolation (linear and
//! curved Birge–Sponer, LeRoy–Bernstein with n fixed, n free and another level subset) and
//! 2000 Monte Carlo redraws with every model refitted, on a 12-level data set: the top twelve
//! levels (v = 11…22) of the SYNTHETIC Lennard-Jones molecule of tests/analysis/lennard_jones.json.

use criterion::{Criterion, criterion_group, criterion_main};
use rungs_core::data::Level;
use rungs_core::settings::AnalysisSettings;

fn levels() -> Vec<Level> {
    let text = include_str!("../../../tests/analysis/lennard_jones.json");
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

fn bench(c: &mut Criterion) {
    let levels = levels();
    assert_eq!(levels.len(), 12);
    let settings = AnalysisSettings::default();
    assert_eq!(settings.mc_samples, 2000);
    c.bench_function("full analysis, 12 levels, 2000 MC samples", |b| {
        b.iter(|| {
            rungs_core::analyze_levels(std::hint::black_box(&levels), None, Some(16.0), &settings)
                .expect("analysis runs")
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30);
    targets = bench
}
criterion_main!(benches);
