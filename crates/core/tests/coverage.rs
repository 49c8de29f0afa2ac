//! Regression cases from the coverage benchmark (`examples/coverage.rs`, `scripts/coverage`):
//! the stated interval of the recommendation holds the true value.
//!
//! SOURCE of every true value: exact bound levels of synthetic potentials computed by an
//! independent SciPy sinc-DVR (`scripts/oracles/coverage_levels.py` → `tests/coverage/*.json`).
#![allow(clippy::unwrap_used, clippy::expect_used)]

mod coverage_support;

use coverage_support::{Knowledge, SetKind, case, load_named, run};

fn check(name: &str, kind: SetKind, noise_cm1: f64, knowledge: Knowledge) {
    let p = load_named(name);
    let c = case(&p, kind, noise_cm1).expect("enough levels for this set");
    let o = run(&c, knowledge, 200);
    assert!(o.error.is_none(), "{name} {kind:?}: {:?}", o.error);
    assert!(
        o.covered,
        "{name} {kind:?} σ={noise_cm1}: true {} outside [{:?}, {:?}] (estimate {:?}, {:?})",
        o.truth_cm1, o.low_cm1, o.high_cm1, o.estimate_cm1, o.method
    );
    assert!(
        o.bound_hit,
        "{name} {kind:?}: {:?} vs {}",
        o.n_bound, c.true_bound_levels
    );
}

#[test]
fn dispersion_tail_to_97_percent_is_covered() {
    check(
        "dispersion_deep",
        SetKind::Truncated(0.97),
        0.01,
        Knowledge::ExponentOnly,
    );
}

#[test]
fn dispersion_tail_from_half_the_well_is_covered() {
    check(
        "dispersion_deep",
        SetKind::Truncated(0.50),
        0.1,
        Knowledge::WithCn,
    );
}

#[test]
fn morse_to_90_percent_is_covered() {
    check(
        "morse",
        SetKind::Truncated(0.90),
        0.1,
        Knowledge::ExponentOnly,
    );
}

#[test]
fn dispersion_last_levels_asymptote_is_covered() {
    check(
        "dispersion_deep",
        SetKind::NearThreshold(10),
        0.01,
        Knowledge::ExponentOnly,
    );
}
