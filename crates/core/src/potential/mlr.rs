//! The Morse/long-range (MLR) potential: a Morse-like well whose outer wall becomes the
//! physical long-range tail De − u_LR(r) (Le Roy, Huang & Jary, J. Chem. Phys. 125, 164310
//! (2006); Le Roy et al., J. Chem. Phys. 131, 204309 (2009)).
//!
//! V(r) = De·[1 − (u_LR(r)/u_LR(re))·exp(−β(r)·y_p^eq(r))]², with
//! y_p^x(r) = (r^p − x^p)/(r^p + x^p), β(r) = β∞·y_p^ref(r) + [1 − y_p^ref(r)]·Σ_i β_i·y_q^ref(r)^i,
//! β∞ = ln(2De/u_LR(re)), and u_LR(r) = Σ_m D_m(r)·C_m/r^m. The damping D_m is optional: the
//! Tang–Toennies form D_m(r) = 1 − e^{−br}·Σ_{k=0}^{m} (br)^k/k! (K. T. Tang and J. P. Toennies,
//! J. Chem. Phys. 80, 3726 (1984), from memory).
//!
//! The energy zero is the minimum V(re) = 0 and the asymptote is De. [`Mlr::parameter_derivatives`]
//! gives ∂V/∂De, ∂V/∂β_i and ∂V/∂ln λ (λ a common factor of every C_m) in closed form, for
//! Hellmann–Feynman eigenvalue derivatives in the direct potential fit.

use serde::{Deserialize, Serialize};

use super::{Potential, WellMinimum};
use crate::{Error, Result};

/// Most β coefficients accepted.
pub const MAX_BETA: usize = 12;

/// One long-range term C_m/r^m.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct LongRangeTerm {
    /// Power m.
    pub m: u32,
    /// C_m, cm⁻¹·Å^m.
    pub c_cm1_angstrom_m: f64,
}

/// An MLR curve as plain data (see the module docs for the formula).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Mlr {
    /// Well depth De, cm⁻¹ (the asymptote above the minimum).
    pub de_cm1: f64,
    /// Equilibrium distance re, Å.
    pub re_angstrom: f64,
    /// Power p of the radial variable of the exponent's switching function.
    pub p: u32,
    /// Power q of the radial variable of the β polynomial.
    pub q: u32,
    /// Reference distance r_ref of the β polynomial, Å.
    pub r_ref_angstrom: f64,
    /// Coefficients β_0, β_1, … of the exponent polynomial.
    pub beta: Vec<f64>,
    /// The long-range terms, ascending in m.
    pub tail: Vec<LongRangeTerm>,
    /// Tang–Toennies damping range parameter b, 1/Å (`None`: undamped).
    #[serde(default)]
    pub damping_b_per_angstrom: Option<f64>,
}

/// The radial variable y_k^x(r) = (r^k − x^k)/(r^k + x^k) of the MLR form.
pub fn radial_variable(r: f64, x: f64, k: u32) -> f64 {
    let (a, b) = (r.powi(k as i32), x.powi(k as i32));
    (a - b) / (a + b)
}

/// Radial variables and parts of V at one r (shared by V and its derivatives).
struct Parts {
    /// A(r) = (u/u_e)·exp(−β y_p^eq).
    a: f64,
    y_eq: f64,
    y_ref: f64,
    y_q: f64,
}

impl Mlr {
    /// Check the parameters: De, re, r_ref and every C_m positive and finite, p and q ≥ 1,
    /// p > m_last − m_first (so that the tail is u_LR to leading order), 1 … [`MAX_BETA`] β.
    pub fn validate(&self) -> Result<()> {
        let pos = |name: &str, x: f64| {
            if x.is_finite() && x > 0.0 {
                Ok(())
            } else {
                Err(Error::parameter(
                    name,
                    format!("must be a positive number, got {x}"),
                ))
            }
        };
        pos("well depth De", self.de_cm1)?;
        pos("equilibrium distance re", self.re_angstrom)?;
        pos("reference distance", self.r_ref_angstrom)?;
        if self.tail.is_empty() || self.tail.len() > 4 {
            return Err(Error::parameter(
                "long-range terms",
                "give one to four terms C_m/r^m",
            ));
        }
        for t in &self.tail {
            pos("long-range coefficient C_m", t.c_cm1_angstrom_m)?;
            if !(1..=20).contains(&t.m) {
                return Err(Error::parameter(
                    "long-range power m",
                    "must be a whole number from 1 to 20",
                ));
            }
        }
        let span = self.tail.last().map_or(0, |t| t.m) - self.tail[0].m;
        if self.p == 0 || self.q == 0 || self.p > 20 || self.q > 20 || self.p <= span {
            return Err(Error::parameter(
                "powers p and q",
                format!(
                    "must be whole numbers from 1 to 20 with p larger than the spread of the long-range powers ({span})"
                ),
            ));
        }
        if self.beta.is_empty()
            || self.beta.len() > MAX_BETA
            || self.beta.iter().any(|b| !b.is_finite())
        {
            return Err(Error::parameter(
                "exponent coefficients β",
                format!("give 1 to {MAX_BETA} finite numbers"),
            ));
        }
        if let Some(b) = self.damping_b_per_angstrom {
            pos("damping range b", b)?;
        }
        Ok(())
    }

    /// u_LR(r) = Σ D_m(r) C_m/r^m.
    pub fn u_lr(&self, r: f64) -> f64 {
        self.tail
            .iter()
            .map(|t| self.damping(t.m, r) * t.c_cm1_angstrom_m / r.powi(t.m as i32))
            .sum()
    }

    /// Tang–Toennies D_m(r) (1 without damping).
    fn damping(&self, m: u32, r: f64) -> f64 {
        let Some(b) = self.damping_b_per_angstrom else {
            return 1.0;
        };
        let x = b * r;
        let (mut term, mut sum) = (1.0, 1.0);
        for k in 1..=m {
            term *= x / f64::from(k);
            sum += term;
        }
        (1.0 - (-x).exp() * sum).max(0.0)
    }

    /// β∞ = ln(2De/u_LR(re)).
    pub fn beta_inf(&self) -> f64 {
        (2.0 * self.de_cm1 / self.u_lr(self.re_angstrom)).ln()
    }

    fn parts(&self, r: f64) -> Parts {
        let y = |x: f64, k: u32| radial_variable(r, x, k);
        let y_eq = y(self.re_angstrom, self.p);
        let y_ref = y(self.r_ref_angstrom, self.p);
        let y_q = y(self.r_ref_angstrom, self.q);
        let poly = self.beta.iter().rev().fold(0.0, |acc, b| acc * y_q + b);
        let beta = self.beta_inf() * y_ref + (1.0 - y_ref) * poly;
        let a = self.u_lr(r) / self.u_lr(self.re_angstrom) * (-beta * y_eq).exp();
        Parts {
            a,
            y_eq,
            y_ref,
            y_q,
        }
    }

    /// ∂V/∂p at r for p = (De, β_0 … β_N, ln λ), λ a common factor of every C_m, into `out`
    /// (length `beta.len() + 2`). Closed forms from differentiating the module's formula:
    /// ∂V/∂De = (1 − A)² + 2(1 − A)A·y_eq·y_ref, ∂V/∂β_i = 2De(1 − A)A·y_eq·(1 − y_ref)·y_q^i,
    /// ∂V/∂ln λ = −2De(1 − A)A·y_eq·y_ref (λ enters only through β∞).
    pub fn parameter_derivatives(&self, r: f64, out: &mut [f64]) {
        let s = self.parts(r);
        let w = (1.0 - s.a) * s.a * s.y_eq;
        out[0] = (1.0 - s.a).powi(2) + 2.0 * w * s.y_ref;
        let mut yq = 1.0;
        for i in 0..self.beta.len() {
            out[1 + i] = 2.0 * self.de_cm1 * w * (1.0 - s.y_ref) * yq;
            yq *= s.y_q;
        }
        out[1 + self.beta.len()] = -2.0 * self.de_cm1 * w * s.y_ref;
    }

    /// The same curve with every C_m multiplied by λ.
    pub fn with_tail_scaled(&self, lambda: f64) -> Mlr {
        let mut m = self.clone();
        for t in &mut m.tail {
            t.c_cm1_angstrom_m *= lambda;
        }
        m
    }
}

/// The MLR curve in a JSON text: either the curve itself (`{"de_cm1": …, "beta": […], …}`) or
/// an analysis document, whose fitted potential is taken (the recommended estimate's when it is
/// one, else the first). Checked with [`Mlr::validate`].
pub fn curve_from_json(text: &str) -> Result<Mlr> {
    let doc: serde_json::Value = serde_json::from_str(text)
        .map_err(|_| Error::parameter("potential curve", "the file is not a JSON document"))?;
    let curve = if let Some(estimates) = doc.get("estimates").and_then(|e| e.as_array()) {
        let rec = doc.pointer("/recommended/method").and_then(|m| m.as_str());
        let fitted = |e: &&serde_json::Value| e.pointer("/potential_fit/curve").is_some();
        let chosen = estimates
            .iter()
            .filter(fitted)
            .find(|e| e.get("method").and_then(|m| m.as_str()) == rec)
            .or_else(|| estimates.iter().find(fitted))
            .ok_or_else(|| {
                Error::parameter(
                    "potential curve",
                    "the analysis has no fitted potential (it needs μ and r_e or a B column)",
                )
            })?;
        chosen["potential_fit"]["curve"].clone()
    } else {
        doc
    };
    let m: Mlr = serde_json::from_value(curve).map_err(|_| {
        Error::parameter(
            "potential curve",
            "expected a Morse/long-range curve with de_cm1, re_angstrom, p, q, r_ref_angstrom, beta and tail",
        )
    })?;
    m.validate()?;
    Ok(m)
}

impl Potential for Mlr {
    fn energy_cm1(&self, r: f64) -> f64 {
        let a = self.parts(r).a;
        self.de_cm1 * (1.0 - a) * (1.0 - a)
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

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Mlr {
        // SYNTHETIC: u = C6/r⁶ with C6 = 10⁶ cm⁻¹ Å⁶, De = 5000, re = 3, p = 5, q = 3,
        // r_ref = 3.5, β = (0.1, −0.3, 0.05).
        Mlr {
            de_cm1: 5000.0,
            re_angstrom: 3.0,
            p: 5,
            q: 3,
            r_ref_angstrom: 3.5,
            beta: vec![0.1, -0.3, 0.05],
            tail: vec![LongRangeTerm {
                m: 6,
                c_cm1_angstrom_m: 1.0e6,
            }],
            damping_b_per_angstrom: None,
        }
    }

    /// SOURCE: closed form — V(re) = 0 and V → De − u_LR(r) as r → ∞, the relative deviation
    /// falling as r^−p (β → β∞ as y_p^ref → 1). The deviations −3.2127297e−2, −1.0018059e−3,
    /// −3.1333417e−5 at 10, 20, 40 Å were recomputed with NumPy from the published formula (a
    /// five-line script evaluating the module docs' expression, by hand).
    #[test]
    fn minimum_and_long_range_limit() {
        let m = sample();
        m.validate().unwrap();
        assert!(m.energy_cm1(3.0).abs() < 1e-9);
        let numpy = [
            (10.0, -3.2127297e-2),
            (20.0, -1.0018059e-3),
            (40.0, -3.1333417e-5),
        ];
        let mut rel = Vec::new();
        for (r, want) in numpy {
            let u = m.u_lr(r);
            let got = (m.energy_cm1(r) - (m.de_cm1 - u)) / u;
            assert!(
                (got - want).abs() < 1e-6 * want.abs(),
                "r = {r}: {got} vs {want}"
            );
            rel.push(got);
        }
        let ratio = rel[1] / rel[2];
        assert!((28.0..36.0).contains(&ratio), "r^-5 decay: ratio {ratio}");
    }

    /// SOURCE: closed form — the analytic parameter derivatives equal central differences of V.
    #[test]
    fn parameter_derivatives_match_differences() {
        let m = sample();
        let mut d = vec![0.0; 5];
        for r in [2.5, 3.0, 3.4, 4.5, 8.0] {
            m.parameter_derivatives(r, &mut d);
            let fd = |f: &dyn Fn(f64) -> Mlr, x: f64, h: f64| {
                (f(x + h).energy_cm1(r) - f(x - h).energy_cm1(r)) / (2.0 * h)
            };
            let de = fd(
                &|x| Mlr {
                    de_cm1: x,
                    ..m.clone()
                },
                m.de_cm1,
                1e-3,
            );
            assert!((d[0] - de).abs() < 1e-6 * (1.0 + de.abs()), "De at {r}");
            for i in 0..3 {
                let b = fd(
                    &|x| {
                        let mut c = m.clone();
                        c.beta[i] = x;
                        c
                    },
                    m.beta[i],
                    1e-6,
                );
                assert!((d[1 + i] - b).abs() < 1e-5 * (1.0 + b.abs()), "β{i} at {r}");
            }
            let l = fd(&|x| m.with_tail_scaled(x.exp()), 0.0, 1e-6);
            assert!((d[4] - l).abs() < 1e-5 * (1.0 + l.abs()), "ln λ at {r}");
        }
    }

    /// SOURCE: closed form — Tang–Toennies damping tends to 1 at long range and to 0 at r → 0.
    #[test]
    fn damping_limits() {
        let m = Mlr {
            damping_b_per_angstrom: Some(3.0),
            ..sample()
        };
        assert!((m.damping(6, 30.0) - 1.0).abs() < 1e-12);
        assert!(m.damping(6, 0.05) < 1e-6);
        assert!(m.energy_cm1(3.0).abs() < 1e-9);
    }

    /// A curve written as JSON reads back equal, directly and from an analysis document.
    #[test]
    fn curves_read_back_from_json() {
        let m = sample();
        let text = serde_json::to_string(&m).unwrap();
        assert_eq!(curve_from_json(&text).unwrap(), m);
        let doc = format!(
            r#"{{"recommended":{{"method":"x"}},"estimates":[{{"method":"y"}},{{"method":"z","potential_fit":{{"curve":{text}}}}}]}}"#
        );
        assert_eq!(curve_from_json(&doc).unwrap(), m);
        let e = curve_from_json(r#"{"estimates":[]}"#)
            .unwrap_err()
            .to_string();
        assert!(e.contains("no fitted potential"), "{e}");
    }

    /// SOURCE: common practice, no source — p must exceed the spread of the long-range powers.
    #[test]
    fn p_too_small_is_refused_in_words() {
        let mut m = sample();
        m.tail.push(LongRangeTerm {
            m: 12,
            c_cm1_angstrom_m: 1e8,
        });
        let e = m.validate().unwrap_err().to_string();
        assert!(e.contains("p larger"), "{e}");
    }
}
