//! First-order RKR turning points from G(v) and B(v), and the potential curve built on them.
//!
//! With x = v + ½ and energies from the potential minimum (domain notes §1.9):
//!
//! f(v) = (r₊ − r₋)/2 = √(C_u/μ) ∫_{v_min}^{v} dv′ [G(v) − G(v′)]^{−½},
//! g(v) = (1/r₋ − 1/r₊)/2 = √(μ/C_u) ∫_{v_min}^{v} B(v′) dv′ [G(v) − G(v′)]^{−½},
//! r± = √(f² + f/g) ± f, and v_min solves G(v_min) = 0.
//!
//! The end-point singularity is removed by the substitution v′ = v − u² (domain notes §1.9 (b)):
//! ∫ dv′ (…)^{−½} = ∫₀^{√L} 2 du / √P(v, v − u²), where P(x, y) = (G(x) − G(y))/(x − y) is
//! evaluated as a divided difference of the polynomial (Σ_k Y_k0 Σ_j x^j y^{k−1−j}), so there is
//! no cancellation and the integrand is smooth; Gauss–Legendre in u then converges
//! exponentially. The node count is doubled until two rules agree to 1e-13 relative.
//!
//! The potential ([`RkrPotential`]) interpolates the turning points on a fine v grid by a cubic
//! spline in r and extends the walls ([`OuterWall`]). An inner-wall turnover (r₋ no longer
//! decreasing with v, a classic symptom of inconsistent G and B) is detected and reported; the
//! inner branch is then cut below the turnover and continued exponentially.

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use super::analytic::Morse;
use super::pointwise::PointwisePotential;
use super::quadrature::gauss_legendre;
use super::walls::OuterWall;
use super::{Potential, WellMinimum};
use crate::constants::C_U_CM1_U_A2;
use crate::lsq::{Weights, fit};
use crate::{Error, Result};

/// Source of the rotational constant B(v).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind", content = "values")]
pub enum RotationInput {
    /// Dunham-style coefficients Y_k1 (cm⁻¹): B(v) = Σ_k Y_k1 (v+½)^k, i.e. [Be, −αe, γe, …].
    Dunham(Vec<f64>),
    /// Per-level values (v, B_v in cm⁻¹). They are smoothed by an unweighted least-squares
    /// polynomial in (v+½) before integration: degree min(n − 1, 3) for n < 20 values, 6 from 20
    /// values on (a cubic is too stiff for B_v over a wide range of v — see the closing-the-loop
    /// test on Morse levels — while a high degree on few values wiggles at the ends).
    PerLevel(Vec<(f64, f64)>),
}

/// Everything first-order RKR needs.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RkrInput {
    /// Dunham-style Y_k0 (cm⁻¹), index k: G(v) = Σ_k Y_k0 (v+½)^k, i.e. [Y00, ωe, −ωexe, ωeye, …].
    pub g_cm1: Vec<f64>,
    /// B(v).
    pub rotation: RotationInput,
    /// Reduced mass, u.
    pub mu_u: f64,
}

/// Turning points at one v.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RkrPoint {
    /// Vibrational quantum number (may be fractional).
    pub v: f64,
    /// G(v) from the potential minimum, cm⁻¹.
    pub energy_cm1: f64,
    /// B(v), cm⁻¹.
    pub b_cm1: f64,
    /// Klein f = (r₊ − r₋)/2, Å.
    pub f_angstrom: f64,
    /// Klein g = (1/r₋ − 1/r₊)/2, 1/Å.
    pub g_per_angstrom: f64,
    /// Inner turning point r₋, Å.
    pub r_inner_angstrom: f64,
    /// Outer turning point r₊, Å.
    pub r_outer_angstrom: f64,
    /// Estimated relative error of the f and g quadratures.
    pub quadrature_rel_error: f64,
}

/// A set of RKR turning points with its checks.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RkrCurve {
    /// v_min, where G(v_min) = 0 (−½ when Y00 = 0).
    pub v_min: f64,
    /// Equilibrium distance √(C_u/(μ B(v_min))), Å.
    pub re_angstrom: f64,
    /// Turning points in increasing v.
    pub points: Vec<RkrPoint>,
    /// The lowest v at which r₋ stops decreasing (inner-wall turnover), if any.
    pub inner_turnover_v: Option<f64>,
    /// The lowest v at which r₊ stops increasing, if any.
    pub outer_turnover_v: Option<f64>,
    /// Plain-language warnings.
    pub warnings: Vec<String>,
}

/// Polynomials of G and B in x = v + ½, prepared for the integrals.
struct Prepared {
    g: Vec<f64>,
    b: Vec<f64>,
    mu: f64,
    x_min: f64,
}

fn horner(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &a| acc * x + a)
}

fn horner_d(c: &[f64], x: f64) -> f64 {
    c.iter()
        .enumerate()
        .skip(1)
        .rev()
        .fold(0.0, |acc, (k, &a)| acc * x + k as f64 * a)
}

impl Prepared {
    fn new(input: &RkrInput) -> Result<Self> {
        let mu = input.mu_u;
        if !(mu.is_finite() && mu > 0.0) {
            return Err(Error::parameter(
                "mu",
                format!("must be positive, got {mu}"),
            ));
        }
        if input.g_cm1.len() < 2 || input.g_cm1[1].is_nan() || input.g_cm1[1] <= 0.0 {
            return Err(Error::parameter("G(v)", "needs ωe = Y10 > 0"));
        }
        if input.g_cm1.iter().any(|c| !c.is_finite()) {
            return Err(Error::parameter("G(v)", "coefficients must be finite"));
        }
        let mut g = input.g_cm1.clone();
        while g.len() > 2 && g[g.len() - 1] == 0.0 {
            g.pop();
        }
        let b = match &input.rotation {
            RotationInput::Dunham(c) => {
                if c.is_empty() || c.iter().any(|x| !x.is_finite()) {
                    return Err(Error::parameter(
                        "B(v)",
                        "needs finite Y_k1, starting with Be",
                    ));
                }
                c.clone()
            }
            RotationInput::PerLevel(vals) => fit_b_levels(vals)?,
        };
        // v_min: Newton on G(x) = 0 from x = −Y00/Y10.
        let mut x = -g[0] / g[1];
        for _ in 0..100 {
            let d = horner_d(&g, x);
            if d.is_nan() || d <= 0.0 {
                return Err(Error::numerical(
                    "RKR",
                    "G(v) is not increasing near its minimum",
                ));
            }
            let dx = horner(&g, x) / d;
            x -= dx;
            if dx.abs() < 1e-15 * (1.0 + x.abs()) {
                break;
            }
        }
        if horner(&g, x).abs() > 1e-9 * g[1] {
            return Err(Error::numerical("RKR", "could not solve G(v_min) = 0"));
        }
        let prepared = Self { g, b, mu, x_min: x };
        if prepared.b_at(x).is_nan() || prepared.b_at(x) <= 0.0 {
            return Err(Error::parameter("B(v)", "B(v_min) must be positive"));
        }
        Ok(prepared)
    }

    fn g_at(&self, x: f64) -> f64 {
        horner(&self.g, x)
    }

    fn b_at(&self, x: f64) -> f64 {
        horner(&self.b, x)
    }

    /// (G(x) − G(y))/(x − y) without cancellation.
    fn divided_difference(&self, x: f64, y: f64) -> f64 {
        // h_k = Σ_{j<k} x^j y^{k−1−j}, h_1 = 1, h_k = x h_{k−1} + y^{k−1}.
        let mut h = 1.0;
        let mut ypow = 1.0;
        let mut sum = self.g[1];
        for &c in &self.g[2..] {
            ypow *= y;
            h = x * h + ypow;
            sum += c * h;
        }
        sum
    }

    /// Checks that G rises and B stays positive on [x_min, x_max].
    fn check_range(&self, x_max: f64) -> Result<()> {
        let steps = 400;
        for i in 0..=steps {
            let x = self.x_min + (x_max - self.x_min) * i as f64 / steps as f64;
            let slope = horner_d(&self.g, x);
            if slope.is_nan() || slope <= 0.0 {
                return Err(Error::parameter(
                    "v_max",
                    format!(
                        "G(v) stops rising near v = {:.3}: RKR turning points exist only below it",
                        x - 0.5
                    ),
                ));
            }
            let b = self.b_at(x);
            if b.is_nan() || b <= 0.0 {
                return Err(Error::parameter(
                    "B(v)",
                    format!("B(v) is not positive near v = {:.3}", x - 0.5),
                ));
            }
        }
        Ok(())
    }

    /// Klein integrals ∫ dv′/√(G−G′) and ∫ B dv′/√(G−G′) at x with n nodes.
    fn integrals(&self, x: f64, nodes: &(Vec<f64>, Vec<f64>)) -> Result<(f64, f64)> {
        let l = x - self.x_min;
        let sl = l.sqrt();
        let (mut i_f, mut i_g) = (0.0, 0.0);
        for (t, w) in nodes.0.iter().zip(&nodes.1) {
            let u = 0.5 * sl * (t + 1.0);
            let y = x - u * u;
            let p = self.divided_difference(x, y);
            if p.is_nan() || p <= 0.0 {
                return Err(Error::numerical(
                    "RKR",
                    format!("G(v) is not increasing below v = {:.3}", x - 0.5),
                ));
            }
            let inv = 1.0 / p.sqrt();
            i_f += w * inv;
            i_g += w * self.b_at(y) * inv;
        }
        Ok((sl * i_f, sl * i_g))
    }

    /// The k-th Gauss–Legendre rule (24·2^k nodes), computed once.
    fn rule(rules: &mut Vec<(Vec<f64>, Vec<f64>)>, k: usize) -> &(Vec<f64>, Vec<f64>) {
        while rules.len() <= k {
            rules.push(gauss_legendre(24usize << rules.len()));
        }
        &rules[k]
    }

    fn point(&self, v: f64, rules: &mut Vec<(Vec<f64>, Vec<f64>)>) -> Result<RkrPoint> {
        let x = v + 0.5;
        let energy = self.g_at(x);
        let b = self.b_at(x);
        if x <= self.x_min {
            let re = (C_U_CM1_U_A2 / (self.mu * b)).sqrt();
            return Ok(RkrPoint {
                v,
                energy_cm1: 0.0,
                b_cm1: b,
                f_angstrom: 0.0,
                g_per_angstrom: 0.0,
                r_inner_angstrom: re,
                r_outer_angstrom: re,
                quadrature_rel_error: 0.0,
            });
        }
        let mut k = 0;
        let (mut i_f, mut i_g) = self.integrals(x, Self::rule(rules, 0))?;
        let rel = loop {
            k += 1;
            let (a, c) = self.integrals(x, Self::rule(rules, k))?;
            let rel = ((a - i_f) / a).abs().max(((c - i_g) / c).abs());
            (i_f, i_g) = (a, c);
            if rel < 1e-13 || k >= 6 {
                break rel;
            }
        };
        let f = (C_U_CM1_U_A2 / self.mu).sqrt() * i_f;
        let g = (self.mu / C_U_CM1_U_A2).sqrt() * i_g;
        let root = (f * f + f / g).sqrt();
        Ok(RkrPoint {
            v,
            energy_cm1: energy,
            b_cm1: b,
            f_angstrom: f,
            g_per_angstrom: g,
            r_inner_angstrom: root - f,
            r_outer_angstrom: root + f,
            quadrature_rel_error: rel,
        })
    }
}

/// Least-squares polynomial B(x) through per-level values.
fn fit_b_levels(vals: &[(f64, f64)]) -> Result<Vec<f64>> {
    if vals.is_empty() {
        return Err(Error::TooFewPoints {
            what: "B(v) from levels".into(),
            have: 0,
            need: 1,
        });
    }
    if let Some(i) = vals
        .iter()
        .position(|(v, b)| !(v.is_finite() && b.is_finite() && *b > 0.0))
    {
        return Err(Error::Cell {
            row: i + 1,
            column: "B".into(),
            message: "B_v must be a positive number".into(),
        });
    }
    // Cubic for fewer than 20 values, sextic from 20 on (a wide v range needs the freedom).
    let degree = if vals.len() < 20 { 3 } else { 6 };
    let p = (vals.len() - 1).min(degree) + 1;
    let design = DMatrix::from_fn(vals.len(), p, |i, k| (vals[i].0 + 0.5).powi(k as i32));
    let y: Vec<f64> = vals.iter().map(|v| v.1).collect();
    Ok(fit(&design, &y, Weights::Unit)?.params)
}

impl RkrInput {
    /// v_min, where G(v_min) = 0.
    pub fn v_min(&self) -> Result<f64> {
        Ok(Prepared::new(self)?.x_min - 0.5)
    }

    /// The highest v (searched up to v = 1000) below which G(v) keeps rising and B(v) stays
    /// positive; RKR exists only below it.
    pub fn v_rising_limit(&self) -> Result<f64> {
        let p = Prepared::new(self)?;
        let mut x = p.x_min;
        let step = 0.01;
        while x < 1000.0 {
            if !(horner_d(&p.g, x + step) > 0.0 && p.b_at(x + step) > 0.0) {
                break;
            }
            x += step;
        }
        Ok(x - 0.5)
    }

    /// A sensible default top level for RKR: the highest integer v (at most 200) at which the
    /// slope G′(v) is still at least 10 % of its value at v_min and B(v) is positive (near the
    /// top of a Dunham G(v) the Klein integrals lose meaning).
    pub fn default_v_max(&self) -> Result<u32> {
        let p = Prepared::new(self)?;
        let slope0 = horner_d(&p.g, p.x_min);
        let mut v_max = None;
        for v in 0..=200u32 {
            let x = f64::from(v) + 0.5;
            if x <= p.x_min {
                continue;
            }
            let ok = (0..=20).all(|k| {
                let xx = p.x_min + (x - p.x_min) * f64::from(k) / 20.0;
                horner_d(&p.g, xx) >= 0.1 * slope0 && p.b_at(xx) > 0.0
            });
            if !ok {
                break;
            }
            v_max = Some(v);
        }
        v_max.ok_or_else(|| Error::parameter("v_max", "G(v) does not rise up to v = 0"))
    }

    /// G(v) = Σ Y_k0 (v+½)^k as given, cm⁻¹ (from the minimum when Y00 is the Dunham Y00).
    pub fn g_cm1_at(&self, v: f64) -> f64 {
        horner(&self.g_cm1, v + 0.5)
    }
}

/// RKR turning points at the given v (each > v_min, G rising and B positive up to the largest).
pub fn rkr_turning_points(input: &RkrInput, v_values: &[f64]) -> Result<RkrCurve> {
    let p = Prepared::new(input)?;
    let mut vs: Vec<f64> = v_values.to_vec();
    if let Some(bad) = vs.iter().find(|v| !v.is_finite()) {
        return Err(Error::parameter("v", format!("not a finite number: {bad}")));
    }
    vs.sort_by(f64::total_cmp);
    vs.dedup();
    let v_min = p.x_min - 0.5;
    if let Some(&v0) = vs.first()
        && v0 < v_min
    {
        return Err(Error::parameter(
            "v",
            format!("v = {v0} lies below v_min = {v_min:.6}"),
        ));
    }
    if let Some(&vmax) = vs.last() {
        p.check_range(vmax + 0.5)?;
    }
    let mut rules = Vec::new();
    let points = vs
        .iter()
        .map(|&v| p.point(v, &mut rules))
        .collect::<Result<Vec<_>>>()?;
    let re = (C_U_CM1_U_A2 / (p.mu * p.b_at(p.x_min))).sqrt();
    let inner_turnover_v = points
        .windows(2)
        .find(|w| w[1].r_inner_angstrom >= w[0].r_inner_angstrom)
        .map(|w| w[1].v);
    let outer_turnover_v = points
        .windows(2)
        .find(|w| w[1].r_outer_angstrom <= w[0].r_outer_angstrom)
        .map(|w| w[1].v);
    let mut warnings = Vec::new();
    if let Some(v) = inner_turnover_v {
        warnings.push(format!(
            "inner-wall turnover: r₋ stops decreasing at v ≈ {v:.2}; G(v) and B(v) are not \
             consistent with a single-minimum potential there (check the constants or B values)"
        ));
    }
    if let Some(v) = outer_turnover_v {
        warnings.push(format!(
            "outer turning point stops increasing at v ≈ {v:.2}"
        ));
    }
    if let Some(worst) = points
        .iter()
        .map(|p| p.quadrature_rel_error)
        .reduce(f64::max)
        && worst > 1e-8
    {
        warnings.push(format!(
            "Klein integrals converged only to {worst:.1e} relative (G(v) nearly flat at the top)"
        ));
    }
    Ok(RkrCurve {
        v_min,
        re_angstrom: re,
        points,
        inner_turnover_v,
        outer_turnover_v,
        warnings,
    })
}

/// A potential curve built from RKR turning points.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RkrPotential {
    /// The turning points used (a fine v grid up to v_max) and their checks.
    pub curve: RkrCurve,
    /// Number of inner-branch points kept (all of them unless there was a turnover).
    pub inner_points_used: usize,
    /// Number of outer-branch points kept.
    pub outer_points_used: usize,
    curve_fit: PointwisePotential,
}

impl RkrPotential {
    /// Turning points on a fine v grid from v_min to `v_max` (denser near the bottom, about four
    /// per unit v at the top), interpolated by a cubic spline; walls extended as in
    /// [`PointwisePotential`], the outer one by `outer`.
    pub fn new(input: &RkrInput, v_max: f64, outer: OuterWall) -> Result<Self> {
        let v_min = input.v_min()?;
        if !(v_max.is_finite() && v_max > v_min + 0.25) {
            return Err(Error::parameter(
                "v_max",
                format!("must exceed v_min + ¼ = {:.4}, got {v_max}", v_min + 0.25),
            ));
        }
        let span = v_max - v_min;
        let k_count = ((8.0 * span).ceil() as usize).clamp(24, 4000);
        let vs: Vec<f64> = (1..=k_count)
            .map(|k| v_min + span * (k as f64 / k_count as f64).powi(2))
            .collect();
        let curve = rkr_turning_points(input, &vs)?;
        let inner_points_used = curve
            .points
            .windows(2)
            .position(|w| w[1].r_inner_angstrom >= w[0].r_inner_angstrom)
            .map_or(curve.points.len(), |i| i + 1);
        let outer_points_used = curve
            .points
            .windows(2)
            .position(|w| w[1].r_outer_angstrom <= w[0].r_outer_angstrom)
            .map_or(curve.points.len(), |i| i + 1);
        let mut pts: Vec<(f64, f64)> =
            Vec::with_capacity(inner_points_used + outer_points_used + 1);
        pts.extend(
            curve.points[..inner_points_used]
                .iter()
                .map(|p| (p.r_inner_angstrom, p.energy_cm1)),
        );
        pts.push((curve.re_angstrom, 0.0));
        pts.extend(
            curve.points[..outer_points_used]
                .iter()
                .map(|p| (p.r_outer_angstrom, p.energy_cm1)),
        );
        let curve_fit = PointwisePotential::new(&pts, outer)?;
        Ok(Self {
            curve,
            inner_points_used,
            outer_points_used,
            curve_fit,
        })
    }

    /// The interpolated curve with its wall extensions.
    pub fn as_pointwise(&self) -> &PointwisePotential {
        &self.curve_fit
    }
}

impl Potential for RkrPotential {
    fn energy_cm1(&self, r: f64) -> f64 {
        self.curve_fit.energy_cm1(r)
    }

    fn derivative_cm1_per_angstrom(&self, r: f64) -> f64 {
        self.curve_fit.derivative_cm1_per_angstrom(r)
    }

    fn minimum(&self) -> WellMinimum {
        self.curve_fit.minimum()
    }

    fn asymptote_cm1(&self) -> Option<f64> {
        self.curve_fit.asymptote_cm1()
    }
}

/// Vibration–rotation constants of one electronic state (cm⁻¹), as a fit or a table gives them.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
#[serde(default)]
pub struct DiatomicConstants {
    /// Y00 (usually 0), cm⁻¹.
    pub y00_cm1: f64,
    /// ωe, cm⁻¹.
    pub we_cm1: f64,
    /// ωexe, cm⁻¹ (G = ωe(v+½) − ωexe(v+½)² + ωeye(v+½)³ + ωeze(v+½)⁴).
    pub wexe_cm1: f64,
    /// ωeye, cm⁻¹.
    pub weye_cm1: f64,
    /// ωeze, cm⁻¹.
    pub weze_cm1: f64,
    /// Be, cm⁻¹.
    pub be_cm1: f64,
    /// αe, cm⁻¹ (B = Be − αe(v+½) + γe(v+½)²).
    pub alphae_cm1: f64,
    /// γe, cm⁻¹.
    pub gammae_cm1: f64,
}

impl DiatomicConstants {
    /// The RKR input these constants define, for reduced mass μ (u).
    pub fn rkr_input(&self, mu_u: f64) -> RkrInput {
        RkrInput {
            g_cm1: vec![
                self.y00_cm1,
                self.we_cm1,
                -self.wexe_cm1,
                self.weye_cm1,
                self.weze_cm1,
            ],
            rotation: RotationInput::Dunham(vec![self.be_cm1, -self.alphae_cm1, self.gammae_cm1]),
            mu_u,
        }
    }
}

/// One row of [`ConstantsPotential`]: a level's RKR and Morse turning points and, when the RKR
/// curve was solved, the level recomputed from it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConstantsLevel {
    /// Vibrational quantum number.
    pub v: u32,
    /// G(v) from the potential minimum, cm⁻¹.
    pub energy_cm1: f64,
    /// B(v) from the constants, cm⁻¹.
    pub b_v_cm1: f64,
    /// RKR inner turning point, Å.
    pub r_inner_angstrom: f64,
    /// RKR outer turning point, Å.
    pub r_outer_angstrom: f64,
    /// Morse turning points (r₋, r₊) at the same energy, Å, when below the Morse D_e.
    pub morse_turning_points_angstrom: Option<(f64, f64)>,
    /// Level of the RKR curve (Numerov solver), cm⁻¹ from its minimum.
    pub solved_energy_cm1: Option<f64>,
    /// B_v of the RKR curve, cm⁻¹.
    pub solved_b_v_cm1: Option<f64>,
}

/// RKR and Morse curves from a set of constants, with the closing-the-loop check.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ConstantsPotential {
    /// Reduced mass, u.
    pub mu_u: f64,
    /// v_min (G(v_min) = 0).
    pub v_min: f64,
    /// r_e from B(v_min), Å.
    pub re_angstrom: f64,
    /// The Morse curve from ωe, ωexe and r_e (None when ωexe ≤ 0).
    pub morse: Option<Morse>,
    /// Integer levels v = 0 … v_max.
    pub levels: Vec<ConstantsLevel>,
    /// RKR warnings (inner-wall turnover, …) and solver notes.
    pub warnings: Vec<String>,
}

/// Highest v accepted for the turning points of [`potential_from_constants`]: far more levels
/// than any bound state holds, and small enough that every table of v stays a few hundred kB.
pub const MAX_V_MAX: u32 = 1000;

/// RKR turning points for v = 0 … `v_max` (integers), Morse turning points at the same energies,
/// and the levels of the RKR curve (walls extended, outer wall by `outer`) solved back, so the
/// user sees how well the curve returns the G(v) it came from.
pub fn potential_from_constants(
    constants: &DiatomicConstants,
    mu_u: f64,
    v_max: u32,
    outer: OuterWall,
) -> Result<ConstantsPotential> {
    use super::analytic::re_from_be;
    use super::solver::{SolverSettings, solve_levels};
    // Checked before anything is allocated for the levels.
    if v_max > MAX_V_MAX {
        return Err(Error::parameter(
            "v_max",
            format!("{v_max} is more than {MAX_V_MAX}: give a highest v from 0 to {MAX_V_MAX}"),
        ));
    }
    let input = constants.rkr_input(mu_u);
    let vs: Vec<f64> = (0..=v_max).map(f64::from).collect();
    let curve = rkr_turning_points(&input, &vs)?;
    let re = re_from_be(constants.be_cm1, mu_u)?;
    let morse = if constants.wexe_cm1 > 0.0 {
        Some(Morse::from_constants(
            constants.we_cm1,
            constants.wexe_cm1,
            mu_u,
            re,
        )?)
    } else {
        None
    };
    let mut warnings = curve.warnings.clone();
    let solved = match RkrPotential::new(&input, f64::from(v_max) + 0.5, outer) {
        Ok(pot) => {
            let top = curve.points.last().map_or(0.0, |p| p.energy_cm1);
            let settings = SolverSettings {
                max_levels: Some(v_max as usize + 1),
                energy_max_cm1: (pot.asymptote_cm1().is_none()).then_some(top * 1.2 + 1.0),
                wavefunction_points: 0,
                ..Default::default()
            };
            match solve_levels(&pot, mu_u, &settings) {
                Ok(set) => {
                    warnings.extend(set.notes.iter().cloned());
                    Some(set.levels)
                }
                Err(e) => {
                    warnings.push(format!("the RKR curve could not be solved: {e}"));
                    None
                }
            }
        }
        Err(e) => {
            warnings.push(format!("no RKR curve could be built for solving: {e}"));
            None
        }
    };
    let levels = curve
        .points
        .iter()
        .map(|p| {
            let v = p.v as u32;
            let s = solved.as_ref().and_then(|l| l.get(v as usize));
            ConstantsLevel {
                v,
                energy_cm1: p.energy_cm1,
                b_v_cm1: p.b_cm1,
                r_inner_angstrom: p.r_inner_angstrom,
                r_outer_angstrom: p.r_outer_angstrom,
                morse_turning_points_angstrom: morse
                    .as_ref()
                    .and_then(|m| m.turning_points(p.energy_cm1)),
                solved_energy_cm1: s.map(|l| l.energy_cm1),
                solved_b_v_cm1: s.map(|l| l.b_v_cm1),
            }
        })
        .collect();
    Ok(ConstantsPotential {
        mu_u,
        v_min: curve.v_min,
        re_angstrom: curve.re_angstrom,
        morse,
        levels,
        warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A typed v_max far beyond any bound state (10⁹, which would need gigabytes) is refused
    /// with the allowed range before anything is allocated, for an anharmonic and a harmonic
    /// set of constants (common practice, no source).
    #[test]
    fn a_huge_v_max_is_refused_before_allocating() {
        for wexe_cm1 in [10.0, 0.0] {
            let constants = DiatomicConstants {
                we_cm1: 1000.0,
                wexe_cm1,
                be_cm1: 1.0,
                alphae_cm1: 0.01,
                ..Default::default()
            };
            let e = potential_from_constants(&constants, 10.0, 1_000_000_000, OuterWall::Automatic);
            let Err(Error::Parameter { name, message }) = e else {
                panic!("expected a parameter error");
            };
            assert_eq!(name, "v_max");
            assert!(message.contains("0 to 1000"), "{message}");
        }
    }
}
