//! Benchmarks of the radial level solver and RKR.
//!
//! The headline case (issue 6): all bound levels of a Lennard-Jones (12,6) well holding 40
//! levels (the SYNTHETIC curve of `scripts/oracles/lj_dvr.py`: D_e 1500 cm⁻¹, r_e 4 Å, μ 20 u) to
//! 0.01 cm⁻¹. The same script times a dense sinc-DVR in SciPy at the same accuracy (every level
//! but the last within 0.01 cm⁻¹) for the side-by-side comparison; its figure is stored in
//! `tests/potential/lj_dvr.json`. Run: `cargo bench -p rungs-core --bench solver`.
#![allow(missing_docs, clippy::unwrap_used)]

use std::hint::black_box;

use criterion::{Criterion, criterion_group, criterion_main};
use rungs_core::potential::{
    LennardJones, Morse, OuterWall, RkrInput, RkrPotential, RotationInput, SolverSettings,
    solve_levels,
};

fn lennard_jones(c: &mut Criterion) {
    let lj = LennardJones::twelve_six(1500.0, 4.0).unwrap();
    let energies_only = SolverSettings {
        tolerance_cm1: 0.01,
        wavefunction_points: 0,
        ..Default::default()
    };
    assert_eq!(
        solve_levels(&lj, 20.0, &energies_only)
            .unwrap()
            .levels
            .len(),
        40
    );
    c.bench_function("lj40_all_levels_0.01cm1", |b| {
        b.iter(|| solve_levels(black_box(&lj), 20.0, &energies_only).unwrap())
    });
    let with_psi = SolverSettings {
        tolerance_cm1: 0.01,
        ..Default::default()
    };
    c.bench_function("lj40_all_levels_0.01cm1_with_wavefunctions", |b| {
        b.iter(|| solve_levels(black_box(&lj), 20.0, &with_psi).unwrap())
    });
    let tight = SolverSettings {
        tolerance_cm1: 1e-5,
        wavefunction_points: 0,
        ..Default::default()
    };
    c.bench_function("lj40_all_levels_1e-5cm1", |b| {
        b.iter(|| solve_levels(black_box(&lj), 20.0, &tight).unwrap())
    });
}

fn morse_and_rkr(c: &mut Criterion) {
    let m = Morse::from_constants(1000.0, 10.0, 10.0, 2.0).unwrap();
    let s = SolverSettings {
        wavefunction_points: 0,
        ..Default::default()
    };
    c.bench_function("morse50_all_levels_1e-3cm1", |b| {
        b.iter(|| solve_levels(black_box(&m), 10.0, &s).unwrap())
    });
    let input = RkrInput {
        g_cm1: vec![0.0, 1000.0, -10.0],
        rotation: RotationInput::Dunham(vec![0.42, -0.003]),
        mu_u: 10.0,
    };
    c.bench_function("rkr_curve_to_v40", |b| {
        b.iter(|| RkrPotential::new(black_box(&input), 40.0, OuterWall::Automatic).unwrap())
    });
}

criterion_group!(benches, lennard_jones, morse_and_rkr);
criterion_main!(benches);
