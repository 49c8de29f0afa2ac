//! Analytic potential forms with known answers: harmonic, Morse and Lennard-Jones (n, m).
//!
//! They serve as test cases for the solver (closed-form levels and turning points), as quick
//! models from ωe and ωexe, and as synthetic examples on the page.

use serde::{Deserialize, Serialize};

use super::{Potential, WellMinimum};
use crate::constants::C_U_CM1_U_A2;
use crate::{Error, Result};

fn positive(name: &str, value: f64) -> Result<f64> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(Error::parameter(
            name,
            format!("must be a positive number, got {value}"),
        ))
    }
}

/// Equilibrium distance r_e = √(C_u/(μ B_e)) in Å from B_e (cm⁻¹) and μ (u).
pub fn re_from_be(be_cm1: f64, mu_u: f64) -> Result<f64> {
    positive("Be", be_cm1)?;
    positive("mu", mu_u)?;
    Ok((C_U_CM1_U_A2 / (mu_u * be_cm1)).sqrt())
}

/// Harmonic oscillator V(r) = ½ k (r − r_e)², minimum 0 at r_e, no dissociation limit.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Harmonic {
    /// Force constant k, cm⁻¹/Å².
    pub k_cm1_per_angstrom2: f64,
    /// Equilibrium distance, Å.
    pub re_angstrom: f64,
}

impl Harmonic {
    /// From the force constant k (cm⁻¹/Å²) and r_e (Å).
    pub fn new(k_cm1_per_angstrom2: f64, re_angstrom: f64) -> Result<Self> {
        Ok(Self {
            k_cm1_per_angstrom2: positive("k", k_cm1_per_angstrom2)?,
            re_angstrom: positive("re", re_angstrom)?,
        })
    }

    /// From the harmonic wavenumber ωe (cm⁻¹), μ (u) and r_e (Å): k = μ ωe²/(2 C_u), so that the
    /// levels are ωe (v + ½).
    pub fn from_we(we_cm1: f64, mu_u: f64, re_angstrom: f64) -> Result<Self> {
        positive("we", we_cm1)?;
        positive("mu", mu_u)?;
        Self::new(mu_u * we_cm1 * we_cm1 / (2.0 * C_U_CM1_U_A2), re_angstrom)
    }

    /// Harmonic wavenumber ωe = √(2 C_u k/μ) in cm⁻¹ for reduced mass μ (u).
    pub fn we_cm1(&self, mu_u: f64) -> f64 {
        (2.0 * C_U_CM1_U_A2 * self.k_cm1_per_angstrom2 / mu_u).sqrt()
    }
}

impl Potential for Harmonic {
    fn energy_cm1(&self, r: f64) -> f64 {
        let x = r - self.re_angstrom;
        0.5 * self.k_cm1_per_angstrom2 * x * x
    }

    fn derivative_cm1_per_angstrom(&self, r: f64) -> f64 {
        self.k_cm1_per_angstrom2 * (r - self.re_angstrom)
    }

    fn minimum(&self) -> WellMinimum {
        WellMinimum {
            r_angstrom: self.re_angstrom,
            energy_cm1: 0.0,
        }
    }

    fn asymptote_cm1(&self) -> Option<f64> {
        None
    }
}

/// Morse potential V(r) = D_e [1 − e^{−a(r − r_e)}]², minimum 0 at r_e, limit D_e.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Morse {
    /// Well depth D_e, cm⁻¹.
    pub de_cm1: f64,
    /// Range parameter a, 1/Å.
    pub a_per_angstrom: f64,
    /// Equilibrium distance r_e, Å.
    pub re_angstrom: f64,
}

impl Morse {
    /// From D_e (cm⁻¹), a (1/Å) and r_e (Å).
    pub fn new(de_cm1: f64, a_per_angstrom: f64, re_angstrom: f64) -> Result<Self> {
        Ok(Self {
            de_cm1: positive("De", de_cm1)?,
            a_per_angstrom: positive("a", a_per_angstrom)?,
            re_angstrom: positive("re", re_angstrom)?,
        })
    }

    /// From ωe, ωexe (cm⁻¹), μ (u) and r_e (Å): D_e = ωe²/(4 ωexe), a = √(μ ωexe / C_u)
    /// (domain notes §1.8).
    pub fn from_constants(we_cm1: f64, wexe_cm1: f64, mu_u: f64, re_angstrom: f64) -> Result<Self> {
        positive("we", we_cm1)?;
        positive("wexe", wexe_cm1)?;
        positive("mu", mu_u)?;
        Self::new(
            we_cm1 * we_cm1 / (4.0 * wexe_cm1),
            (mu_u * wexe_cm1 / C_U_CM1_U_A2).sqrt(),
            re_angstrom,
        )
    }

    /// ωe = 2 a √(C_u D_e / μ), cm⁻¹.
    pub fn we_cm1(&self, mu_u: f64) -> f64 {
        2.0 * self.a_per_angstrom * (C_U_CM1_U_A2 * self.de_cm1 / mu_u).sqrt()
    }

    /// ωexe = a² C_u / μ, cm⁻¹.
    pub fn wexe_cm1(&self, mu_u: f64) -> f64 {
        self.a_per_angstrom * self.a_per_angstrom * C_U_CM1_U_A2 / mu_u
    }

    /// Closed-form term value G(v) = ωe (v+½) − ωexe (v+½)² above the minimum (full-line Morse).
    pub fn level_energy_cm1(&self, v: f64, mu_u: f64) -> f64 {
        let x = v + 0.5;
        self.we_cm1(mu_u) * x - self.wexe_cm1(mu_u) * x * x
    }

    /// Number of bound levels of the full-line Morse oscillator, ⌊v_D⌋ + 1 with
    /// v_D = ωe/(2 ωexe) − ½.
    pub fn level_count(&self, mu_u: f64) -> usize {
        let vd = self.we_cm1(mu_u) / (2.0 * self.wexe_cm1(mu_u)) - 0.5;
        if vd < 0.0 { 0 } else { vd.floor() as usize + 1 }
    }

    /// Classical turning points (r₋, r₊) in Å at energy E (cm⁻¹ above the minimum, 0 ≤ E < D_e):
    /// r± = r_e − ln(1 ∓ √(E/D_e))/a. `None` outside that range.
    pub fn turning_points(&self, energy_cm1: f64) -> Option<(f64, f64)> {
        if !(0.0..self.de_cm1).contains(&energy_cm1) {
            return None;
        }
        let s = (energy_cm1 / self.de_cm1).sqrt();
        let a = self.a_per_angstrom;
        Some((
            self.re_angstrom - (1.0 + s).ln() / a,
            self.re_angstrom - (1.0 - s).ln() / a,
        ))
    }
}

impl Potential for Morse {
    fn energy_cm1(&self, r: f64) -> f64 {
        let y = 1.0 - (-self.a_per_angstrom * (r - self.re_angstrom)).exp();
        self.de_cm1 * y * y
    }

    fn derivative_cm1_per_angstrom(&self, r: f64) -> f64 {
        let e = (-self.a_per_angstrom * (r - self.re_angstrom)).exp();
        2.0 * self.de_cm1 * self.a_per_angstrom * (1.0 - e) * e
    }

    fn minimum(&self) -> WellMinimum {
        WellMinimum {
            r_angstrom: self.re_angstrom,
            energy_cm1: 0.0,
        }
    }

    fn asymptote_cm1(&self) -> Option<f64> {
        Some(self.de_cm1)
    }
}

/// Lennard-Jones (n, m) potential V(r) = D_e/(n − m) [m (r_e/r)ⁿ − n (r_e/r)^m], n > m > 0:
/// minimum −D_e at r_e, limit 0, long-range tail −C_m/r^m with C_m = n D_e r_e^m/(n − m).
/// The familiar (12, 6) form is D_e [(r_e/r)¹² − 2 (r_e/r)⁶].
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LennardJones {
    /// Well depth D_e, cm⁻¹.
    pub de_cm1: f64,
    /// Equilibrium distance r_e, Å.
    pub re_angstrom: f64,
    /// Repulsive exponent n.
    pub n: f64,
    /// Attractive exponent m (the long-range power).
    pub m: f64,
}

impl LennardJones {
    /// From D_e (cm⁻¹), r_e (Å) and the exponents n > m > 0.
    pub fn new(de_cm1: f64, re_angstrom: f64, n: f64, m: f64) -> Result<Self> {
        positive("De", de_cm1)?;
        positive("re", re_angstrom)?;
        positive("m", m)?;
        if !(n.is_finite() && n > m) {
            return Err(Error::parameter(
                "n",
                format!("must exceed m = {m}, got {n}"),
            ));
        }
        Ok(Self {
            de_cm1,
            re_angstrom,
            n,
            m,
        })
    }

    /// The (12, 6) form.
    pub fn twelve_six(de_cm1: f64, re_angstrom: f64) -> Result<Self> {
        Self::new(de_cm1, re_angstrom, 12.0, 6.0)
    }

    /// Long-range coefficient C_m = n D_e r_e^m/(n − m), cm⁻¹ Å^m.
    pub fn c_m(&self) -> f64 {
        self.n * self.de_cm1 * self.re_angstrom.powf(self.m) / (self.n - self.m)
    }

    /// x^p; small non-negative integer powers by repeated squaring (inlined, exact to rounding).
    #[inline]
    fn pow(x: f64, p: f64) -> f64 {
        if p.fract() == 0.0 && (0.0..64.0).contains(&p) {
            let (mut base, mut n, mut acc) = (x, p as u32, 1.0);
            while n > 0 {
                if n & 1 == 1 {
                    acc *= base;
                }
                base *= base;
                n >>= 1;
            }
            acc
        } else {
            x.powf(p)
        }
    }
}

impl Potential for LennardJones {
    fn energy_cm1(&self, r: f64) -> f64 {
        let x = self.re_angstrom / r;
        self.de_cm1 / (self.n - self.m)
            * (self.m * Self::pow(x, self.n) - self.n * Self::pow(x, self.m))
    }

    fn derivative_cm1_per_angstrom(&self, r: f64) -> f64 {
        let x = self.re_angstrom / r;
        self.de_cm1 * self.n * self.m / ((self.n - self.m) * r)
            * (Self::pow(x, self.m) - Self::pow(x, self.n))
    }

    fn minimum(&self) -> WellMinimum {
        WellMinimum {
            r_angstrom: self.re_angstrom,
            energy_cm1: -self.de_cm1,
        }
    }

    fn asymptote_cm1(&self) -> Option<f64> {
        Some(0.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: domain.md §2.1 vector A: ωe = 1000, ωexe = 10, μ = 10 u → D_e = 25 000 cm⁻¹,
    /// a = 2.435 576 Å⁻¹, 50 levels [V-calc there]. Tolerance 1e-6 relative (a is given to 7 digits).
    #[test]
    fn morse_from_constants_vector_a() {
        let m = Morse::from_constants(1000.0, 10.0, 10.0, 2.0).unwrap();
        assert!((m.de_cm1 - 25_000.0).abs() < 1e-9);
        assert!(
            (m.a_per_angstrom - 2.435_576).abs() / 2.435_576 < 1e-6,
            "{}",
            m.a_per_angstrom
        );
        assert_eq!(m.level_count(10.0), 50);
        assert!((m.we_cm1(10.0) - 1000.0).abs() < 1e-9);
        assert!((m.wexe_cm1(10.0) - 10.0).abs() < 1e-12);
    }

    /// SOURCE: domain.md §2.1 vector B (H2-like): D_e 39 913.149, a 1.904 42 Å⁻¹, 18 levels
    /// [V-calc there]. Tolerance: the digits quoted.
    #[test]
    fn morse_from_constants_vector_b() {
        let m = Morse::from_constants(4401.21, 121.33, 0.503_912_516, 0.7414).unwrap();
        assert!((m.de_cm1 - 39_913.149).abs() < 1e-3, "{}", m.de_cm1);
        assert!(
            (m.a_per_angstrom - 1.904_42).abs() < 1e-5,
            "{}",
            m.a_per_angstrom
        );
        assert_eq!(m.level_count(0.503_912_516), 18);
    }

    /// SOURCE: closed forms (V(r_e) = −D_e, V′(r_e) = 0, C_6 = 2 D_e r_e⁶ for (12,6):
    /// domain.md §2.4(b) gives C6 = 4.096e6 for D_e = 500, r_e = 4). Tolerance 1e-9 relative.
    #[test]
    fn lennard_jones_shape() {
        let lj = LennardJones::twelve_six(500.0, 4.0).unwrap();
        assert!((lj.energy_cm1(4.0) + 500.0).abs() < 1e-9);
        assert!(lj.derivative_cm1_per_angstrom(4.0).abs() < 1e-9);
        assert!((lj.c_m() - 4.096e6).abs() / 4.096e6 < 1e-12);
        let r: f64 = 5.3;
        let numeric = (lj.energy_cm1(r + 1e-6) - lj.energy_cm1(r - 1e-6)) / 2e-6;
        assert!((lj.derivative_cm1_per_angstrom(r) - numeric).abs() < 1e-5 * numeric.abs());
    }

    /// Invalid parameters are errors, not panics (common practice, no source).
    #[test]
    fn bad_parameters_are_errors() {
        assert!(Morse::new(-1.0, 1.0, 1.0).is_err());
        assert!(Harmonic::from_we(f64::NAN, 1.0, 1.0).is_err());
        assert!(LennardJones::new(100.0, 3.0, 6.0, 6.0).is_err());
        assert!(re_from_be(0.0, 1.0).is_err());
    }
}
