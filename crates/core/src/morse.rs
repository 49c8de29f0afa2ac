//! Morse-oscillator parameters from vibrational constants (domain.md §1.8).
//!
//! V(r) = De[1 − e^{−a(r−re)}]² has exactly G(v) = ωe(v+½) − ωexe(v+½)², so from ωe and ωexe:
//! De = ωe²/(4ωexe), D0 = (ωe − ωexe)²/(4ωexe), v_D = ωe/(2ωexe) − ½, a = √(μ ωexe/C_u)
//! (Å⁻¹, μ in u), force constant k_e = 4π²c²μωe², and re = √(C_u/(μ Be)) from Be.
//! These are model numbers: real potentials are not Morse, and De from low-v constants is
//! typically too large for covalent and too small for ionic molecules (domain.md §3.3).

use serde::{Deserialize, Serialize};

use crate::constants::{ATOMIC_MASS_KG, C_U_CM1_U_A2, SPEED_OF_LIGHT_M_S};
use crate::value::ValueSigma;

/// Morse De = ωe²/(4ωexe), cm⁻¹; `None` unless ωexe > 0.
pub fn de_cm1(we_cm1: f64, wexe_cm1: f64) -> Option<f64> {
    (wexe_cm1 > 0.0).then(|| we_cm1 * we_cm1 / (4.0 * wexe_cm1))
}

/// Morse D0 = (ωe − ωexe)²/(4ωexe), cm⁻¹; `None` unless ωexe > 0.
pub fn d0_cm1(we_cm1: f64, wexe_cm1: f64) -> Option<f64> {
    (wexe_cm1 > 0.0).then(|| (we_cm1 - wexe_cm1).powi(2) / (4.0 * wexe_cm1))
}

/// Morse range parameter a = √(μ ωexe / C_u), Å⁻¹.
pub fn a_per_angstrom(mu_u: f64, wexe_cm1: f64) -> f64 {
    (mu_u * wexe_cm1 / C_U_CM1_U_A2).sqrt()
}

/// Harmonic force constant k_e = 4π²c²μωe², N/m.
pub fn force_constant_n_per_m(mu_u: f64, we_cm1: f64) -> f64 {
    let omega = 2.0 * std::f64::consts::PI * SPEED_OF_LIGHT_M_S * 100.0 * we_cm1;
    mu_u * ATOMIC_MASS_KG * omega * omega
}

/// Equilibrium distance from the rotational constant, re = √(C_u/(μ Be)), Å.
pub fn re_angstrom(mu_u: f64, be_cm1: f64) -> f64 {
    (C_U_CM1_U_A2 / (mu_u * be_cm1)).sqrt()
}

/// Morse parameters derived from ωe, ωexe (and μ, Be when known), each with σ.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MorseParams {
    /// Where ωe, ωexe came from.
    pub source: String,
    /// De = ωe²/(4ωexe), cm⁻¹.
    pub de_cm1: ValueSigma,
    /// D0 = (ωe − ωexe)²/(4ωexe), cm⁻¹.
    pub d0_cm1: ValueSigma,
    /// v_D = ωe/(2ωexe) − ½.
    pub v_d: f64,
    /// Number of bound levels ⌊v_D⌋ + 1.
    pub n_bound: u64,
    /// Range parameter a, Å⁻¹ (needs μ).
    pub a_per_angstrom: Option<ValueSigma>,
    /// Force constant k_e, N/m (needs μ).
    pub force_constant_n_per_m: Option<ValueSigma>,
    /// Force constant k_e, mdyn/Å (= N/m ÷ 100; needs μ).
    pub force_constant_mdyn_per_angstrom: Option<ValueSigma>,
    /// Be from the levels' B_v values, cm⁻¹ (when at least two were given).
    pub be_cm1: Option<ValueSigma>,
    /// re = √(C_u/(μ Be)), Å (needs μ and Be).
    pub re_angstrom: Option<ValueSigma>,
}

/// Build the Morse parameters; `Err(reason)` when ωexe ≤ 0 (no Morse well).
///
/// `cov` is the 2 × 2 covariance of (ωe, ωexe); `be` is Be with its σ when known.
pub fn from_constants(
    we: f64,
    wexe: f64,
    cov: [[f64; 2]; 2],
    mu_u: Option<f64>,
    be: Option<(f64, Option<f64>)>,
    source: &str,
) -> Result<MorseParams, String> {
    if !(wexe > 0.0 && we > 0.0) {
        return Err(format!(
            "ωexe = {wexe:.5} cm⁻¹ is not positive: the spacings do not shrink, so there is no Morse well"
        ));
    }
    let prop = |g: [f64; 2]| -> f64 {
        (g[0] * g[0] * cov[0][0] + 2.0 * g[0] * g[1] * cov[0][1] + g[1] * g[1] * cov[1][1])
            .max(0.0)
            .sqrt()
    };
    let de = we * we / (4.0 * wexe);
    let d0 = (we - wexe).powi(2) / (4.0 * wexe);
    let v_d = we / (2.0 * wexe) - 0.5;
    let mut out = MorseParams {
        source: source.to_string(),
        de_cm1: ValueSigma::new(de, Some(prop([we / (2.0 * wexe), -de / wexe]))),
        d0_cm1: ValueSigma::new(
            d0,
            Some(prop([
                (we - wexe) / (2.0 * wexe),
                -(we - wexe) / (2.0 * wexe) - d0 / wexe,
            ])),
        ),
        v_d,
        n_bound: v_d.floor().max(0.0) as u64 + 1,
        a_per_angstrom: None,
        force_constant_n_per_m: None,
        force_constant_mdyn_per_angstrom: None,
        be_cm1: be.map(|(b, s)| ValueSigma::new(b, s)),
        re_angstrom: None,
    };
    if let Some(mu) = mu_u {
        let a = a_per_angstrom(mu, wexe);
        out.a_per_angstrom = Some(ValueSigma::new(a, Some(prop([0.0, a / (2.0 * wexe)]))));
        let k = force_constant_n_per_m(mu, we);
        let sk = prop([2.0 * k / we, 0.0]);
        out.force_constant_n_per_m = Some(ValueSigma::new(k, Some(sk)));
        out.force_constant_mdyn_per_angstrom = Some(ValueSigma::new(k / 100.0, Some(sk / 100.0)));
        if let Some((b, sb)) = be
            && b > 0.0
        {
            let r = re_angstrom(mu, b);
            out.re_angstrom = Some(ValueSigma::new(r, sb.map(|s| r * s / (2.0 * b))));
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: domain.md §1.8 — a = 0.2435576 √(μ ωexe) Å⁻¹ and k_e = 5.891830e-5 μ ωe² N/m
    /// (CODATA-derived factors, 7 digits); tolerance 1e-6 relative.
    #[test]
    fn factors_of_domain_notes() {
        let a = a_per_angstrom(7.0, 13.0);
        assert!((a / (0.2435576 * (7.0f64 * 13.0).sqrt()) - 1.0).abs() < 1e-6);
        let k = force_constant_n_per_m(7.0, 2000.0);
        assert!((k / (5.891830e-5 * 7.0 * 2000.0 * 2000.0) - 1.0).abs() < 1e-6);
    }

    /// SOURCE: domain.md §3.1 internal-consistency list — re = √(C_u/(μBe)) for CO (μ 6.856208638,
    /// Be 1.93128087) is 1.128323 Å; tolerance 1e-6 relative.
    #[test]
    fn re_of_co() {
        assert!((re_angstrom(6.856_208_638, 1.931_280_87) / 1.128323 - 1.0).abs() < 1e-6);
    }

    #[test]
    fn negative_wexe_has_no_well() {
        assert!(from_constants(500.0, -2.0, [[0.0; 2]; 2], None, None, "test").is_err());
    }
}
