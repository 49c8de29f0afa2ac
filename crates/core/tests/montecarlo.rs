//! Monte Carlo propagation: determinism for a seed, and agreement with the covariance σ for an
//! estimator that is linear in the data.

use nalgebra::DMatrix;
use proptest::prelude::*;
use rungs_core::analyze_levels;
use rungs_core::data::Level;
use rungs_core::settings::{AnalysisSettings, SigmaScaling};

fn morse_levels(we: f64, wexe: f64, n: u32, sigma: &[f64], noise: &[f64]) -> Vec<Level> {
    (0..n)
        .map(|v| {
            let x = v as f64 + 0.5;
            Level {
                v,
                energy_cm1: we * x - wexe * x * x + noise[v as usize] * sigma[v as usize],
                sigma_cm1: Some(sigma[v as usize]),
                b_cm1: None,
                isotopologue: None,
            }
        })
        .collect()
}

/// Determinism (common practice, no source): the same seed reproduces the same report bit for
/// bit; another seed changes the Monte Carlo percentiles but no nominal number.
#[test]
fn seeded_monte_carlo_is_deterministic() {
    let sigma = [0.05, 0.04, 0.06, 0.05, 0.05, 0.07, 0.05, 0.06];
    let noise = [0.3, -1.1, 0.7, 0.2, -0.4, 1.3, -0.8, 0.1];
    let levels = morse_levels(1500.0, 12.0, 8, &sigma, &noise);
    let s = AnalysisSettings {
        mc_samples: 500,
        ..AnalysisSettings::default()
    };
    let a = analyze_levels(&levels, None, Some(9.0), &s).expect("a");
    let b = analyze_levels(&levels, None, Some(9.0), &s).expect("b");
    assert_eq!(a.to_json().expect("json"), b.to_json().expect("json"));
    let c =
        analyze_levels(&levels, None, Some(9.0), &AnalysisSettings { seed: 7, ..s }).expect("c");
    let (ea, ec) = (&a.estimates[1], &c.estimates[1]);
    assert_eq!(ea.method, "birge-sponer-linear");
    assert_eq!(ea.d0_cm1, ec.d0_cm1);
    let (ma, mc) = (
        ea.monte_carlo.as_ref().expect("mc"),
        ec.monte_carlo.as_ref().expect("mc"),
    );
    assert_ne!(ma.d0.p16, mc.d0.p16);
    assert_eq!(a.monte_carlo.seed, s.seed);
}

/// Per-estimate σ scaling reaches the Monte Carlo draws (sampling theory, common practice, no
/// source): cubic levels with an ωeye term are misfitted by the linear Birge–Sponer quadratic,
/// so its own χ²_ν ≫ 1 and its draws are widened by √χ²_ν; its Monte Carlo sd must then match
/// its scaled covariance σ, and the observed sum (no fit, scale 1) must match the unscaled
/// closed form √(σ²_top + σ²_0). 4000 draws: relative standard error of an sd ≈ 1.1 %; we allow
/// 8 %.
#[test]
fn per_estimate_scaling_reaches_the_draws() {
    let n = 10u32;
    let sigma = vec![0.05; n as usize];
    let noise = [0.3, -1.1, 0.7, 0.2, -0.4, 1.3, -0.8, 0.1, 0.5, -0.6];
    let mut levels = morse_levels(1500.0, 12.0, n, &sigma, &noise);
    for l in levels.iter_mut() {
        let x = l.v as f64 + 0.5;
        l.energy_cm1 += 0.08 * x * x * x;
    }
    let s = AnalysisSettings {
        mc_samples: 4000,
        sigma_scaling: SigmaScaling::WhenAboveOne,
        lb_fit_n_free: false,
        ..AnalysisSettings::default()
    };
    let r = analyze_levels(&levels, None, None, &s).expect("analysis");
    let bs = r
        .estimates
        .iter()
        .find(|e| e.method == "birge-sponer-linear")
        .expect("linear");
    let scale = bs.sigma_scale.expect("scale");
    assert!(
        scale > 3.0,
        "the quadratic should misfit cubic levels (scale {scale})"
    );
    let sd = bs.monte_carlo.as_ref().expect("mc").d0.sd.expect("sd");
    let sigma_cov = bs.d0_sigma_cm1.expect("σ");
    assert!(
        (sd / sigma_cov - 1.0).abs() < 0.08,
        "linear BS: MC sd {sd} vs scaled σ {sigma_cov}"
    );
    let obs = r
        .estimates
        .iter()
        .find(|e| e.method == "observed-sum")
        .expect("observed sum");
    assert_eq!(obs.sigma_scale, Some(1.0));
    let closed = (2.0f64 * 0.05 * 0.05).sqrt();
    assert!((obs.d0_sigma_cm1.expect("σ") - closed).abs() <= 1e-12);
    let sd_obs = obs.monte_carlo.as_ref().expect("mc").d0.sd.expect("sd");
    assert!(
        (sd_obs / closed - 1.0).abs() < 0.08,
        "observed sum: MC sd {sd_obs} vs {closed}"
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 6, .. ProptestConfig::default() })]

    /// Property (sampling theory, common practice): for the observed sum, which is linear in the
    /// data, the Monte Carlo standard deviation over 2000 draws estimates the covariance σ
    /// √(gᵀΣg) with relative standard error 1/√(2·1999) ≈ 1.6 %; we allow 10 % (6 standard
    /// errors). The data covariance is a random AR(1) correlation with random σ, so the
    /// telescoped σ uses the end levels' correlation (domain.md §1.6).
    #[test]
    fn mc_sigma_matches_covariance_for_linear_estimator(
        we in 300.0f64..3000.0,
        ratio in 0.003f64..0.02,
        n in 5u32..12,
        rho in -0.5f64..0.8,
        sig in proptest::collection::vec(0.01f64..1.0, 12),
        noise in proptest::collection::vec(-2.0f64..2.0, 12),
        seed in 0u64..1_000_000,
    ) {
        let levels = morse_levels(we, we * ratio, n, &sig, &noise);
        let k = n as usize;
        let cov = DMatrix::from_fn(k, k, |i, j| rho.powi((i as i32 - j as i32).abs()) * sig[i] * sig[j]);
        let s = AnalysisSettings {
            mc_samples: 2000,
            seed,
            sigma_scaling: SigmaScaling::Never,
            lb_fit_n_free: false,
            ..AnalysisSettings::default()
        };
        let r = analyze_levels(&levels, Some(&cov), None, &s).expect("analysis");
        let obs = r.estimates.iter().find(|e| e.method == "observed-sum").expect("observed sum");
        let sd = obs.monte_carlo.as_ref().expect("mc").d0.sd.expect("sd");
        let cov_sigma = obs.d0_sigma_cm1.expect("σ");
        let closed = (cov[(k - 1, k - 1)] + cov[(0, 0)] - 2.0 * cov[(0, k - 1)]).sqrt();
        prop_assert!((cov_sigma - closed).abs() <= 1e-12 * closed);
        prop_assert!((sd / cov_sigma - 1.0).abs() < 0.10, "MC sd {} vs covariance σ {}", sd, cov_sigma);
    }
}
