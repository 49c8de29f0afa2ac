//! The coverage benchmark's data sets and scoring, shared by the benchmark runner
//! (`examples/coverage.rs`) and the regression tests (`tests/coverage.rs`).
//!
//! SOURCE of the truth: `tests/coverage/*.json`, exact bound levels (J = 0) of synthetic
//! potentials invented for this project, computed by an independent SciPy solver in
//! `scripts/oracles/coverage_levels.py`.
//!
//! Data sets built from each potential:
//! - **truncations**: the levels v = 0 … v_k whose term value lies at or below 50, 75, 90, 97 and
//!   99.5 % of the true D0 (the usual case of a spectrum observed up to some level);
//! - **near-threshold**: only the last 6 or 10 bound levels, given as energies below the
//!   asymptote (photoassociation-like data); what is scored is the asymptote above the highest
//!   level given, since no v = 0 is observed.
//!
//! Every set is given a stated σ per level and Gaussian noise of that σ drawn with a stated seed
//! (ChaCha8 from `rand`, seeded from the set's name), so each run of the benchmark sees exactly
//! the same data.

#![allow(dead_code)] // each including crate uses a different part

use std::path::{Path, PathBuf};

use rand::SeedableRng;
use rand::rngs::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal};
use rungs_core::data::Level;
use rungs_core::settings::{AnalysisSettings, MassSpec};
use rungs_core::{Report, analyze_levels};
use serde::Deserialize;

/// One fixture written by the oracle script.
#[derive(Debug, Clone, Deserialize)]
pub struct Potential {
    pub name: String,
    pub class: String,
    pub mu_u: f64,
    pub long_range: LongRange,
    pub de_cm1: f64,
    pub d0_cm1: f64,
    pub bound_levels: u64,
    pub levels: Vec<ExactLevel>,
}

/// The leading long-range term, when the potential has a power-law tail.
#[derive(Debug, Clone, Deserialize)]
pub struct LongRange {
    pub n: Option<u32>,
    pub cn_cm1_an: Option<f64>,
}

/// One exact level.
#[derive(Debug, Clone, Deserialize)]
pub struct ExactLevel {
    pub v: u32,
    pub term_cm1: f64,
    pub binding_cm1: f64,
}

/// Truncation fractions of D0 (the classes).
pub const TRUNCATIONS: [f64; 5] = [0.50, 0.75, 0.90, 0.97, 0.995];
/// Numbers of last levels in the near-threshold sets.
pub const NEAR_THRESHOLD_COUNTS: [usize; 2] = [6, 10];
/// Stated σ (and noise) of the levels, cm⁻¹: a careful and a rough measurement.
pub const NOISE_CM1: [f64; 2] = [0.01, 0.1];

/// What kind of data set a case is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SetKind {
    /// Levels from v = 0 up to this fraction of D0.
    Truncated(f64),
    /// Only the last this-many bound levels.
    NearThreshold(usize),
}

impl SetKind {
    /// Class label used in the benchmark table.
    pub fn class(&self) -> String {
        match self {
            SetKind::Truncated(f) => format!("to {:.1} % of D0", f * 100.0),
            SetKind::NearThreshold(k) => format!("last {k} levels"),
        }
    }
}

/// Whether the analysis is told the theoretical C_n.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Knowledge {
    /// Only the long-range exponent n (when the potential has a power tail).
    ExponentOnly,
    /// n and the theoretical C_n.
    WithCn,
}

/// One data set with its truth.
#[derive(Debug, Clone)]
pub struct Case {
    pub potential: String,
    pub kind: SetKind,
    pub noise_cm1: f64,
    pub seed: u64,
    pub levels: Vec<Level>,
    pub mu_u: f64,
    pub n: Option<u32>,
    pub cn_cm1_an: Option<f64>,
    pub true_d0_cm1: f64,
    /// True binding energy of the highest level given (asymptote above it), cm⁻¹.
    pub true_above_top_cm1: f64,
    pub true_bound_levels: u64,
}

/// Directory of the fixtures, from the crate's manifest directory.
pub fn fixture_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../tests/coverage")
}

/// Read every fixture, sorted by name.
pub fn load_all() -> Vec<Potential> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(fixture_dir())
        .expect("tests/coverage exists")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    paths.sort();
    paths.iter().map(|p| load(p)).collect()
}

/// Read one fixture.
pub fn load(path: &Path) -> Potential {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    serde_json::from_str(&text).unwrap_or_else(|e| panic!("{path:?}: {e}"))
}

/// Read one fixture by name.
pub fn load_named(name: &str) -> Potential {
    load(&fixture_dir().join(format!("{name}.json")))
}

/// A seed from the set's description (FNV-1a), so every set has its own stated seed.
fn seed_of(text: &str) -> u64 {
    text.bytes().fold(0xcbf2_9ce4_8422_2325, |h, b| {
        (h ^ b as u64).wrapping_mul(0x0100_0000_01b3)
    })
}

/// Build one case, or `None` when the potential has too few levels for this kind of set.
pub fn case(p: &Potential, kind: SetKind, noise_cm1: f64) -> Option<Case> {
    let chosen: Vec<&ExactLevel> = match kind {
        SetKind::Truncated(f) => p
            .levels
            .iter()
            .filter(|l| l.term_cm1 <= f * p.d0_cm1)
            .collect(),
        SetKind::NearThreshold(k) => {
            if p.levels.len() < k + 3 {
                return None;
            }
            p.levels[p.levels.len() - k..].iter().collect()
        }
    };
    if chosen.len() < 4 {
        return None;
    }
    let label = format!("{} {} {noise_cm1}", p.name, kind.class());
    let seed = seed_of(&label);
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let levels = chosen
        .iter()
        .map(|l| {
            let z: f64 = StandardNormal.sample(&mut rng);
            let energy = match kind {
                SetKind::Truncated(_) => l.term_cm1,
                SetKind::NearThreshold(_) => -l.binding_cm1,
            };
            Level {
                v: l.v,
                energy_cm1: energy + noise_cm1 * z,
                sigma_cm1: Some(noise_cm1),
                b_cm1: None,
                isotopologue: None,
            }
        })
        .collect();
    Some(Case {
        potential: p.name.clone(),
        kind,
        noise_cm1,
        seed,
        levels,
        mu_u: p.mu_u,
        n: p.long_range.n,
        cn_cm1_an: p.long_range.cn_cm1_an,
        true_d0_cm1: p.d0_cm1,
        true_above_top_cm1: chosen.last().expect("non-empty").binding_cm1,
        true_bound_levels: p.bound_levels,
    })
}

/// Every case of one potential.
pub fn cases(p: &Potential) -> Vec<Case> {
    let kinds = TRUNCATIONS.iter().map(|&f| SetKind::Truncated(f)).chain(
        NEAR_THRESHOLD_COUNTS
            .iter()
            .map(|&k| SetKind::NearThreshold(k)),
    );
    kinds
        .flat_map(|k| NOISE_CM1.iter().filter_map(move |&s| case(p, k, s)))
        .collect()
}

/// The settings a spectroscopist would give: the mass, the long-range exponent of the state
/// when its tail is a power law (the default otherwise), and C_n when told.
pub fn settings(c: &Case, knowledge: Knowledge, mc_samples: u32) -> AnalysisSettings {
    let mut s = AnalysisSettings {
        mc_samples,
        mass: Some(MassSpec::ReducedMass { mu_u: c.mu_u }),
        ..AnalysisSettings::default()
    };
    if let Some(n) = c.n {
        s.lb_n = n as f64;
    }
    if knowledge == Knowledge::WithCn {
        s.lb_cn_cm1_an = c.cn_cm1_an;
    }
    s
}

/// How one case came out.
#[derive(Debug, Clone)]
pub struct Outcome {
    pub method: Option<String>,
    /// Estimate and interval of the scored quantity (D0, or the asymptote above the top level
    /// for near-threshold sets), cm⁻¹.
    pub estimate_cm1: Option<f64>,
    pub low_cm1: Option<f64>,
    pub high_cm1: Option<f64>,
    pub sigma_total_cm1: Option<f64>,
    /// The true value of the scored quantity, cm⁻¹.
    pub truth_cm1: f64,
    /// The part of the truth that is extrapolated (above the highest level given), cm⁻¹.
    pub extrapolated_cm1: f64,
    pub covered: bool,
    pub within_two_sigma: bool,
    pub n_bound: Option<(u64, u64)>,
    pub bound_hit: bool,
    pub error: Option<String>,
    /// Every estimate: method, scored value, admitted, why.
    pub estimates: Vec<(String, Option<f64>, bool, String)>,
}

impl Outcome {
    /// |estimate − truth| / true D0.
    pub fn relative_error(&self, true_d0: f64) -> Option<f64> {
        self.estimate_cm1
            .map(|e| (e - self.truth_cm1).abs() / true_d0)
    }

    /// Interval width as a multiple of the extrapolated part.
    pub fn width_over_extrapolated(&self) -> Option<f64> {
        match (self.low_cm1, self.high_cm1) {
            (Some(l), Some(h)) if self.extrapolated_cm1 > 0.0 => {
                Some((h - l) / self.extrapolated_cm1)
            }
            _ => None,
        }
    }
}

/// The observed-sum estimate of a report (the energy of the top level above the model's v = 0).
fn observed_sum(r: &Report) -> Option<f64> {
    r.estimates
        .iter()
        .find(|e| e.method == "observed-sum")
        .and_then(|e| e.d0_cm1)
}

/// Run the analysis on one case and score it.
pub fn run(c: &Case, knowledge: Knowledge, mc_samples: u32) -> Outcome {
    let top = c.levels.last().expect("non-empty");
    let top_term = top.energy_cm1 - c.levels[0].energy_cm1;
    let (truth, extrapolated) = match c.kind {
        SetKind::Truncated(_) => (c.true_d0_cm1, c.true_d0_cm1 - top_term),
        SetKind::NearThreshold(_) => (c.true_above_top_cm1, c.true_above_top_cm1),
    };
    let mut out = Outcome {
        method: None,
        estimate_cm1: None,
        low_cm1: None,
        high_cm1: None,
        sigma_total_cm1: None,
        truth_cm1: truth,
        extrapolated_cm1: extrapolated,
        covered: false,
        within_two_sigma: false,
        n_bound: None,
        bound_hit: false,
        error: None,
        estimates: Vec::new(),
    };
    let s = settings(c, knowledge, mc_samples);
    let r = match analyze_levels(&c.levels, None, Some(c.mu_u), &s) {
        Ok(r) => r,
        Err(e) => {
            out.error = Some(e.to_string());
            return out;
        }
    };
    let rec = &r.recommended;
    // Near-threshold sets: the scored quantity is D0 minus the observed sum, on the same origin.
    let shift = match c.kind {
        SetKind::Truncated(_) => 0.0,
        SetKind::NearThreshold(_) => match observed_sum(&r) {
            Some(o) => o,
            None => {
                out.error = Some("no observed sum".into());
                return out;
            }
        },
    };
    out.estimates = r
        .estimates
        .iter()
        .map(|e| {
            let v = e.d0_cm1.map(|d| d - shift);
            (
                e.method.clone(),
                v,
                e.defensible,
                e.defensible_reason.clone(),
            )
        })
        .collect();
    out.method = rec.method.clone();
    (out.estimate_cm1, out.low_cm1, out.high_cm1) = match c.kind {
        SetKind::Truncated(_) => (rec.d0_cm1, rec.d0_low_cm1, rec.d0_high_cm1),
        // The binding energy of the top level as the recommendation states it (D0 is withdrawn
        // when G(0) would be a long extrapolation, as it is for these sets).
        SetKind::NearThreshold(_) => (
            rec.above_top_cm1,
            rec.above_top_low_cm1,
            rec.above_top_high_cm1,
        ),
    };
    let sigmas = match c.kind {
        SetKind::Truncated(_) => (rec.sigma_stat_cm1, rec.sigma_model_cm1),
        SetKind::NearThreshold(_) => (rec.above_top_sigma_stat_cm1, rec.above_top_sigma_model_cm1),
    };
    out.sigma_total_cm1 = match sigmas {
        (Some(a), Some(b)) => Some(a + b),
        _ => None,
    };
    out.covered =
        matches!((out.low_cm1, out.high_cm1), (Some(l), Some(h)) if l <= truth && truth <= h);
    out.within_two_sigma = matches!((out.estimate_cm1, out.sigma_total_cm1),
        (Some(e), Some(s)) if (e - truth).abs() <= 2.0 * s);
    out.n_bound = rec.n_bound_min.zip(rec.n_bound_max);
    out.bound_hit = matches!(out.n_bound, Some((lo, hi)) if lo <= c.true_bound_levels && c.true_bound_levels <= hi);
    out
}
