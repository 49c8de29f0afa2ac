//! The Morse/long-range form and the direct potential fit against an independent solver:
//! levels of SYNTHETIC MLR wells from a dense sinc-DVR in SciPy (scripts/oracles/mlr_dvr.py,
//! fixture tests/potential/mlr_dvr.json) are reproduced by the Rust curve and level solver, and
//! fitted back to the parameters they came from.

#![allow(clippy::unwrap_used)] // a test crate: a failed unwrap is a failed test

use rungs_core::dunham::DataKind;
use rungs_core::extrapolate::lm::Whitener;
use rungs_core::potential::dpf::{self, DpfData, DpfSpec};
use rungs_core::potential::{LongRangeTerm, Mlr, Potential, SolverSettings, solve_levels};
use serde_json::Value;

fn fixture() -> Value {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/../../tests/potential/mlr_dvr.json"
    );
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn f(v: &Value) -> f64 {
    v.as_f64().unwrap()
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array().unwrap().iter().map(f).collect()
}

fn tail(w: &Value) -> Vec<LongRangeTerm> {
    w["tail"]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| LongRangeTerm {
            m: t[0].as_u64().unwrap() as u32,
            c_cm1_angstrom_m: f(&t[1]),
        })
        .collect()
}

fn curve(w: &Value) -> Mlr {
    Mlr {
        de_cm1: f(&w["de_cm1"]),
        re_angstrom: f(&w["re_angstrom"]),
        p: w["p"].as_u64().unwrap() as u32,
        q: w["q"].as_u64().unwrap() as u32,
        r_ref_angstrom: f(&w["r_ref_angstrom"]),
        beta: floats(&w["beta"]),
        tail: tail(w),
        damping_b_per_angstrom: None,
    }
}

fn spec_of(w: &Value) -> DpfSpec {
    let m = curve(w);
    DpfSpec {
        p: m.p,
        q: m.q,
        r_ref_angstrom: m.r_ref_angstrom,
        ..DpfSpec::defaults(f(&w["mu_u"]), m.re_angstrom, m.tail.clone(), false)
    }
}

fn data_of(levels: &[f64], sigma: f64) -> DpfData {
    DpfData::new(
        DataKind::Levels,
        (0..levels.len() as u32).collect(),
        levels.iter().map(|e| e - levels[0]).collect(),
        Whitener::Diagonal(vec![1.0 / sigma; levels.len()]),
        sigma,
    )
}

/// SOURCE: scripts/oracles/mlr_dvr.py — its own NumPy evaluation of the published MLR form
/// (Le Roy, Huang & Jary 2006) at 25 distances; the Rust curve agrees to rounding.
#[test]
fn the_curve_matches_the_reference_formula() {
    for w in fixture()["wells"].as_array().unwrap() {
        let m = curve(w);
        m.validate().unwrap();
        for p in w["curve"].as_array().unwrap() {
            let (r, v) = (f(&p[0]), f(&p[1]));
            assert!(
                (m.energy_cm1(r) - v).abs() < 1e-9 * (1.0 + v.abs()),
                "{} r = {r}",
                w["name"]
            );
        }
    }
}

/// SOURCE: scripts/oracles/mlr_dvr.py — sinc-DVR levels (converged to 1e−9 cm⁻¹ between two
/// steps); the Numerov solver reproduces them within its 10⁻³ cm⁻¹ tolerance.
#[test]
fn the_solver_reproduces_the_dvr_levels() {
    for w in fixture()["wells"].as_array().unwrap() {
        let want = floats(&w["levels_cm1"]);
        let s = SolverSettings {
            max_levels: Some(want.len()),
            wavefunction_points: 0,
            ..SolverSettings::default()
        };
        let got = solve_levels(&curve(w), f(&w["mu_u"]), &s).unwrap();
        for (l, e) in got.levels.iter().zip(&want) {
            assert!(
                (l.energy_cm1 - e).abs() < 1e-3,
                "{} v = {}: {} vs {e}",
                w["name"],
                l.v,
                l.energy_cm1
            );
        }
    }
}

fn fitted(w: &Value, levels: &[f64], sigma: f64) -> dpf::DpfFit {
    let spec = spec_of(w);
    let data = data_of(levels, sigma);
    // Start as the analysis does: ωe, ωexe from the two lowest spacings, the top level.
    let (d1, d2) = (levels[1] - levels[0], levels[2] - levels[1]);
    let wexe = (d1 - d2) / 2.0;
    let we = d1 + 2.0 * wexe;
    let top = levels[levels.len() - 1] - levels[0] + 0.5 * d1;
    let (de0, b0) = dpf::start(&spec, we, wexe, top);
    dpf::fit(&spec, &data, de0, b0).unwrap()
}

/// SOURCE: scripts/oracles/mlr_dvr.py — noise-free DVR levels of each SYNTHETIC well (below 90–92 %
/// of De, C_n held at its true value) are fitted back: De within 0.01 cm⁻¹ (the target),
/// β to 10⁻³, and the number of β terms chosen by AICc is the generating one.
#[test]
fn noise_free_levels_give_back_the_curve() {
    for w in fixture()["wells"].as_array().unwrap() {
        let truth = curve(w);
        let fit = fitted(w, &floats(&w["levels_cm1"]), 1e-3);
        assert!(
            fit.termination.converged(),
            "{}: {:?}",
            w["name"],
            fit.termination
        );
        assert!(
            (fit.mlr.de_cm1 - truth.de_cm1).abs() < 0.01,
            "{}: De {}",
            w["name"],
            fit.mlr.de_cm1
        );
        assert_eq!(
            fit.mlr.beta.len(),
            truth.beta.len(),
            "{}: {:?}",
            w["name"],
            fit.orders
        );
        for (a, b) in fit.mlr.beta.iter().zip(&truth.beta) {
            assert!((a - b).abs() < 1e-3, "{}: β {a} vs {b}", w["name"]);
        }
    }
}

/// SOURCE: scripts/oracles/mlr_dvr.py — the same levels with Gaussian noise σ = 0.02 cm⁻¹ (seed in
/// the fixture): De and every β lie within 2σ of the truth (a 95 % check per parameter), and the
/// true D0 within 2σ of the fitted D0 = De − E(0).
#[test]
fn noisy_levels_give_parameters_within_their_sigma() {
    let fx = fixture();
    let sigma = f(&fx["noise_sigma_cm1"]);
    for w in fx["wells"].as_array().unwrap() {
        let truth = curve(w);
        let fit = fitted(w, &floats(&w["noisy_levels_cm1"]), sigma);
        assert!(fit.termination.converged(), "{}", w["name"]);
        let s = |k: usize| fit.cov[(k, k)].sqrt();
        assert!(
            (fit.mlr.de_cm1 - truth.de_cm1).abs() < 2.0 * s(0),
            "{}: De {} ± {}",
            w["name"],
            fit.mlr.de_cm1,
            s(0)
        );
        if fit.mlr.beta.len() == truth.beta.len() {
            for (i, (a, b)) in fit.mlr.beta.iter().zip(&truth.beta).enumerate() {
                assert!(
                    (a - b).abs() < 2.0 * s(1 + i),
                    "{}: β{i} {a} ± {} vs {b}",
                    w["name"],
                    s(1 + i)
                );
            }
        }
        let d0_true = truth.de_cm1 - floats(&w["levels_cm1"])[0];
        let g = fit.data_gradient(&fit.d0_grad());
        let sd = (g.iter().map(|x| (x * sigma).powi(2)).sum::<f64>()).sqrt();
        assert!(
            (fit.d0_cm1() - d0_true).abs() < 2.0 * sd,
            "{}: D0 {} ± {sd} vs {d0_true}",
            w["name"],
            fit.d0_cm1()
        );
    }
}
