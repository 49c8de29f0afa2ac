//! Unit factors and masses against outside references.
//!
//! SOURCE: tests/intake/units_oracle.json, written by scripts/oracles/units.py from
//! scipy.constants (SciPy 1.17.1, CODATA 2022) and periodictable 2.1.0 (AME 2020 masses).

use std::path::PathBuf;

use rungs_core::masses::{atom_mass_u, nuclide, reduced_mass_of};
use rungs_core::settings::MassSpec;
use rungs_core::units::Unit;
use serde_json::Value;

fn oracle() -> Value {
    let path =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/intake/units_oracle.json");
    let text = std::fs::read_to_string(&path).expect("oracle fixture");
    serde_json::from_str(&text).expect("oracle JSON")
}

/// Every unit factor against scipy.constants; tolerance 1e-14 relative (the exact SI constants
/// give the same numbers up to rounding; hartree and u-based values are CODATA 2022 in both).
#[test]
fn unit_factors_match_scipy_codata_2022() {
    let o = oracle();
    assert_eq!(
        o["codata_year"].as_u64(),
        Some(u64::from(rungs_core::constants::CODATA_YEAR))
    );
    let factors = o["cm1_per_unit"].as_object().expect("factors");
    assert_eq!(factors.len(), 10);
    for (token, expected) in factors {
        let expected = expected.as_f64().expect("number");
        let unit = Unit::parse(token).expect("token");
        let got = unit.cm1_per_unit().expect("linear unit");
        assert!(
            ((got - expected) / expected).abs() < 1e-14,
            "{token}: {got} vs scipy {expected}"
        );
        let converted = unit.to_cm1(2.5).expect("convert");
        assert!(
            ((converted - 2.5 * expected) / (2.5 * expected)).abs() < 1e-14,
            "{token}"
        );
    }
    for (token, expected) in o["cm1_per_unit_codata_relationships"]
        .as_object()
        .expect("rel")
    {
        let expected = expected.as_f64().expect("number");
        let got = Unit::parse(token)
            .expect("token")
            .cm1_per_unit()
            .expect("linear");
        assert!(
            ((got - expected) / expected).abs() < 1e-14,
            "{token}: {got} vs {expected}"
        );
    }
}

/// Nuclide masses through the label grammar against periodictable; tolerance 1e-12 u
/// (the table is generated from the same package, so this checks generation and lookup).
#[test]
fn masses_match_periodictable() {
    let o = oracle();
    let masses = o["masses_u"].as_object().expect("masses");
    assert!(masses.len() >= 12);
    for (label, expected) in masses {
        let expected = expected.as_f64().expect("number");
        let got = atom_mass_u(label).unwrap_or_else(|e| panic!("{label}: {e}"));
        assert!(
            (got - expected).abs() < 1e-12,
            "{label}: {got} vs {expected}"
        );
    }
}

/// Reduced masses against μ computed by the oracle script from periodictable masses;
/// tolerance 1e-12 relative.
#[test]
fn reduced_masses_match_oracle() {
    let o = oracle();
    for case in o["reduced_masses"].as_array().expect("pairs") {
        let a = case["a"].as_str().expect("a").to_string();
        let b = case["b"].as_str().expect("b").to_string();
        let expected = case["mu_u"].as_f64().expect("mu");
        let got = reduced_mass_of(&MassSpec::Nuclides {
            a: a.clone(),
            b: b.clone(),
        })
        .expect("mu");
        assert!(
            ((got - expected) / expected).abs() < 1e-12,
            "{a}-{b}: {got} vs {expected}"
        );
    }
}

/// SOURCE: AME 2020 atomic masses as quoted in shared/domain.md §3.2 (from memory there);
/// tolerance 2e-6 u (periodictable's rounded AME table differs from the full table by up to
/// 1.2e-6 u, e.g. 127I).
#[test]
fn masses_match_ame2020_values_quoted_from_memory() {
    for (label, ame) in [
        ("1H", 1.007_825_031_898),
        ("D", 2.014_101_777_844),
        ("13C", 13.003_354_835_34),
        ("16O", 15.994_914_619_257),
        ("35Cl", 34.968_852_694),
        ("37Cl", 36.965_902_584),
        ("127I", 126.904_471_9),
        ("7Li", 7.016_003_434),
        ("87Rb", 86.909_180_531),
        ("133Cs", 132.905_451_961),
    ] {
        let got = nuclide(label).expect(label).mass_u;
        assert!((got - ame).abs() < 2e-6, "{label}: {got} vs {ame}");
    }
}

/// SOURCE: reduced masses of shared/domain.md §3.1 (computed there from AME 2020 masses):
/// H35Cl 0.979 592 539 u, 12C16O 6.856 208 638 u; tolerance 1e-6 u.
#[test]
fn reduced_masses_match_domain_table() {
    for (a, b, mu) in [("1H", "35Cl", 0.979_592_539), ("12C", "16O", 6.856_208_638)] {
        let got = reduced_mass_of(&MassSpec::Nuclides {
            a: a.into(),
            b: b.into(),
        })
        .expect("mu");
        assert!((got - mu).abs() < 1e-6, "{a}{b}: {got}");
    }
}
