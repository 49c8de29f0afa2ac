//! Benchmarks of the full vibrational analysis: order selection, every extrapolation (linear and
//! curved Birge–Sponer, LeRoy–Bernstein with n fixed, n free and another level subset) and
//! 2000 Monte Carlo redraws with every model refitted.
//!
//! - `full analysis, 12 levels, 2000 MC samples`: the top twelve levels (v = 11…22) of the
//!   SYNTHETIC Lennard-Jones molecule of tests/analysis/lennard_jones.json;
//! - `full analysis, Qz2 demo (39 levels), 2000 MC samples`: the page's demo session (SYNTHETIC
//!   molecule Qz2), through the same entry point the page and the CLI use.
//!
//! `scripts/bench` runs these beside the NumPy/SciPy reference (scripts/bench_reference.py).

#[path = "common/mod.rs"]
mod common;

use criterion::{Criterion, criterion_group, criterion_main};
use rungs_core::settings::AnalysisSettings;

fn bench(c: &mut Criterion) {
    let levels = common::lj12_levels();
    assert_eq!(levels.len(), 12);
    let settings = AnalysisSettings::default();
    assert_eq!(settings.mc_samples, 2000);
    c.bench_function("full analysis, 12 levels, 2000 MC samples", |b| {
        b.iter(|| {
            rungs_core::analyze_levels(
                std::hint::black_box(&levels),
                None,
                Some(common::LJ12_MU_U),
                &settings,
            )
            .expect("analysis runs")
        })
    });
    let session = common::qz2_session();
    assert_eq!(session.settings.mc_samples, 2000);
    c.bench_function(
        "full analysis, Qz2 demo (39 levels), 2000 MC samples",
        |b| {
            b.iter(|| {
                rungs_core::analyze_session(std::hint::black_box(&session), &mut |_, _| {})
                    .expect("analysis runs")
            })
        },
    );
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(30);
    targets = bench
}
criterion_main!(benches);
