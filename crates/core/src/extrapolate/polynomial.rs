//! Birge–Sponer extrapolations from a polynomial G(v): linear (order 2) and curved (order ≥ 3).
//!
//! Convention-free form (domain.md §1.5): v_D solves G′(v_D) = 0 (the first maximum of G above
//! the lowest observed level) and D0 = G(v_D) − G(0). For order 2 this is exactly the linear
//! Birge–Sponer construction: the spacings ΔG_{v+½} = A − B·x plotted at x = v + ½ cross zero at
//! x = A/B = v_D and enclose the area A²/(2B) = D0 from x = 0.
//!
//! Uncertainty: because G′(v_D) = 0, the envelope theorem gives ∂D0/∂a_j = φ_j(v_D) − φ_j(0)
//! and ∂v_D/∂a_j = −φ_j′(v_D)/G″(v_D) (domain.md §1.6); with a = S y these become gradients
//! with respect to the data.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::DVector;

use super::{Context, DrawValue, Limit, Lin, Nominal, Redraw};
use crate::dunham::{ChebBasis, PolyFit};

/// Which Birge–Sponer variant.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PolyMethod {
    /// Order-2 G(v): straight spacing line.
    Linear,
    /// Order ≥ 3 G(v): curved spacing line.
    Curved,
}

/// The straight Birge–Sponer line ΔG_{v+½} = A − B·x at x = v + ½ (order-2 fits only).
#[derive(Debug, Clone, PartialEq)]
pub struct BsLine {
    /// A: the line's value at x = 0, cm⁻¹.
    pub intercept: Lin,
    /// B: the decrease of the spacing per vibrational quantum, cm⁻¹ (positive when spacings shrink).
    pub slope: Lin,
}

/// Nominal result of a polynomial extrapolation.
#[derive(Debug, Clone)]
pub struct PolyEstimate {
    /// Polynomial order used.
    pub order: usize,
    /// Limit or the reason there is none.
    pub nominal: Nominal,
    /// The Birge–Sponer line (order 2 only).
    pub line: Option<BsLine>,
    /// Where the limit would lie when it was refused as too far beyond the data.
    pub refused_root_v: Option<f64>,
    /// G(0) above the minimum for this polynomial.
    pub zero_point: Lin,
}

/// Re-runs a polynomial extrapolation on redrawn data (order held fixed).
#[derive(Debug, Clone)]
pub struct PolyEstimator {
    basis: ChebBasis,
    /// Row-major K × N solution operator (a = S y).
    operator: Vec<f64>,
    v_bottom: f64,
    v_top: f64,
    search_end: f64,
    nominal_vd: f64,
    a: Vec<f64>,
    order: usize,
}

/// Result of searching for the first maximum of P above a starting point.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Root {
    Found(f64),
    StartsNonPositive,
    NotFound,
}

fn refine(basis: &ChebBasis, a: &[f64], mut lo: f64, mut hi: f64) -> f64 {
    let mut x = 0.5 * (lo + hi);
    for _ in 0..200 {
        let (_, d1, d2) = basis.eval(a, x);
        if d1 > 0.0 {
            lo = x;
        } else {
            hi = x;
        }
        let newton = if d2 != 0.0 { x - d1 / d2 } else { f64::NAN };
        let next = if newton > lo && newton < hi {
            newton
        } else {
            0.5 * (lo + hi)
        };
        let done =
            (next - x).abs() <= 1e-15 * (1.0 + x.abs()) || hi - lo <= 1e-14 * (1.0 + x.abs());
        x = next;
        if done {
            break;
        }
    }
    x
}

fn first_root(basis: &ChebBasis, a: &[f64], v_start: f64, v_end: f64) -> Root {
    let (_, s0, _) = basis.eval(a, v_start);
    if s0 <= 0.0 {
        return Root::StartsNonPositive;
    }
    if a.len() == 2 {
        let (_, _, c) = basis.eval(a, v_start);
        if c >= 0.0 {
            return Root::NotFound;
        }
        let r = v_start - s0 / c;
        return if r <= v_end {
            Root::Found(r)
        } else {
            Root::NotFound
        };
    }
    let step = (0.1 * basis.half_width / 10.0).clamp(0.01, 0.25);
    let n_steps = (((v_end - v_start) / step).ceil() as usize).min(200_000);
    let mut prev = v_start;
    for i in 1..=n_steps {
        let v = (v_start + i as f64 * step).min(v_end);
        let (_, s, _) = basis.eval(a, v);
        if s <= 0.0 {
            return Root::Found(refine(basis, a, prev, v));
        }
        prev = v;
    }
    Root::NotFound
}

/// Coarser search for redraws: the observed range in 40 steps, then geometrically growing steps
/// beyond the highest level.
fn quick_root(basis: &ChebBasis, a: &[f64], v_bottom: f64, v_top: f64, v_end: f64) -> Root {
    let (_, s0, _) = basis.eval(a, v_bottom);
    if s0 <= 0.0 {
        return Root::StartsNonPositive;
    }
    let span = (v_top - v_bottom).max(1.0);
    let mut prev = v_bottom;
    let mut step = span / 40.0;
    let mut v = v_bottom;
    for _ in 0..2000 {
        v = (v + step).min(v_end);
        let (_, s, _) = basis.eval(a, v);
        if s <= 0.0 {
            return Root::Found(refine(basis, a, prev, v));
        }
        if v >= v_end {
            break;
        }
        prev = v;
        if v >= v_top {
            step *= 1.15;
        }
    }
    Root::NotFound
}

fn shape_lin(op: &nalgebra::DMatrix<f64>, row: &[f64], a: &[f64]) -> Lin {
    let value = row.iter().zip(a).map(|(r, a)| r * a).sum();
    let g = DVector::from_column_slice(row);
    Lin {
        value,
        grad: op.transpose() * g,
    }
}

fn rows_at(basis: &ChebBasis, k: usize, v: f64) -> (Vec<f64>, Vec<f64>) {
    let mut r = vec![0.0; k];
    let mut d = vec![0.0; k];
    basis.row(v, &mut r, Some(&mut d));
    (r, d)
}

/// Run a Birge–Sponer extrapolation on a fitted polynomial.
///
/// `cov_eff` is the effective data covariance (for the significance test of the linear slope);
/// `max_extrapolation` is the curved-model refusal threshold in multiples of the observed v-range.
pub fn extrapolate(
    fit: &PolyFit,
    method: PolyMethod,
    ctx: &Context,
    cov_eff: &nalgebra::DMatrix<f64>,
    max_extrapolation: f64,
) -> (PolyEstimate, PolyEstimator) {
    let k = fit.order;
    let basis = fit.basis;
    let a = &fit.coeffs;
    let op = &fit.operator;
    let span = (ctx.v_top - ctx.v_bottom).max(1.0);
    let (r0, _) = rows_at(&basis, k, 0.0);
    let (rm, _) = rows_at(&basis, k, -0.5);
    let zp_row: Vec<f64> = r0.iter().zip(&rm).map(|(x, y)| x - y).collect();
    let zero_point = shape_lin(op, &zp_row, a);
    let search_end = match method {
        PolyMethod::Linear => f64::INFINITY,
        PolyMethod::Curved => ctx.v_top + (10.0 * max_extrapolation * span).max(10.0),
    };
    let mut est = PolyEstimator {
        basis,
        operator: (0..k)
            .flat_map(|j| op.row(j).iter().copied().collect::<Vec<_>>())
            .collect(),
        v_bottom: ctx.v_bottom,
        v_top: ctx.v_top,
        search_end,
        nominal_vd: f64::NAN,
        a: vec![0.0; k],
        order: k,
    };
    let mut out = PolyEstimate {
        order: k,
        nominal: Nominal::NoLimit(String::new()),
        line: None,
        refused_root_v: None,
        zero_point: zero_point.clone(),
    };
    if k == 1 {
        out.nominal = Nominal::NoLimit(
            "order-1 (harmonic) G(v): constant spacings, no dissociation limit within this model"
                .into(),
        );
        return (out, est);
    }
    if method == PolyMethod::Linear {
        // ΔG(x) = P(x+½) − P(x−½) = A − B x; for order 2, B = −P″ (constant).
        let (rp, _) = rows_at(&basis, k, 0.5);
        let a_row: Vec<f64> = rp.iter().zip(&rm).map(|(x, y)| x - y).collect();
        let h = basis.half_width;
        let mut b_row = vec![0.0; k];
        b_row[1] = -4.0 / (h * h);
        let line = BsLine {
            intercept: shape_lin(op, &a_row, a),
            slope: shape_lin(op, &b_row, a),
        };
        let (aa, bb) = (line.intercept.value, line.slope.value);
        let sb = line.slope.sigma(cov_eff);
        out.line = Some(line);
        if bb.abs() * span <= 1e-9 * aa.abs() {
            out.nominal = Nominal::NoLimit(format!(
                "the spacings are constant to rounding precision (slope {bb:.3e} cm⁻¹): harmonic levels, no dissociation limit within this model"
            ));
            return (out, est);
        }
        if bb <= 0.0 {
            out.nominal = Nominal::NoLimit(format!(
                "the spacings grow with v (Birge–Sponer slope {:.4} cm⁻¹ per quantum): no dissociation limit within this model",
                -bb
            ));
            return (out, est);
        }
        if sb > 0.0 && bb < 2.0 * sb {
            out.nominal = Nominal::NoLimit(format!(
                "the decrease of the spacings is not significant (B = {bb:.4} ± {sb:.4} cm⁻¹, < 2σ): no dissociation limit can be extrapolated within this model"
            ));
            return (out, est);
        }
    }
    let v_end = search_end;
    let root = first_root(&basis, a, ctx.v_bottom, v_end);
    let name = if method == PolyMethod::Linear {
        "straight spacing line"
    } else {
        "spacing curve"
    };
    let v_d = match root {
        Root::StartsNonPositive => {
            out.nominal = Nominal::NoLimit(format!(
                "the order-{k} fit gives dG/dv ≤ 0 already at the lowest level: no dissociation limit within this model"
            ));
            return (out, est);
        }
        Root::NotFound => {
            let (_, _, c_top) = basis.eval(a, ctx.v_top);
            let why = if c_top >= 0.0 {
                format!(
                    "the order-{k} {name} turns upward and never reaches zero (checked to v = {v_end:.1}): no dissociation limit within this model"
                )
            } else {
                format!(
                    "the order-{k} {name} does not reach zero by v = {v_end:.1}: no dissociation limit within reach of this model"
                )
            };
            out.nominal = Nominal::NoLimit(why);
            return (out, est);
        }
        Root::Found(r) => r,
    };
    if v_d < ctx.v_top {
        out.nominal = Nominal::NoLimit(format!(
            "the order-{k} {name} reaches zero inside the observed range (v = {v_d:.3} < {}): the model does not describe the data there",
            ctx.v_top
        ));
        return (out, est);
    }
    if method == PolyMethod::Curved && v_d > ctx.v_top + max_extrapolation * span {
        out.refused_root_v = Some(v_d);
        out.nominal = Nominal::NoLimit(format!(
            "refused: the order-{k} spacing curve reaches zero only at v = {v_d:.2}, {:.1} times the observed v-range above the highest level (limit {max_extrapolation}); a curved polynomial is not trusted that far",
            (v_d - ctx.v_top) / span
        ));
        return (out, est);
    }
    let (rd, dd) = rows_at(&basis, k, v_d);
    let (_, _, c) = basis.eval(a, v_d);
    let d0_row: Vec<f64> = rd.iter().zip(&r0).map(|(x, y)| x - y).collect();
    let d0 = shape_lin(op, &d0_row, a);
    if d0.value <= 0.0 {
        out.nominal = Nominal::NoLimit(format!(
            "the order-{k} model puts its maximum below the energy of v = 0: no dissociation limit within this model"
        ));
        return (out, est);
    }
    let vd_row: Vec<f64> = dd.iter().map(|d| -d / c).collect();
    let mut v_d_lin = shape_lin(op, &vd_row, a);
    v_d_lin.value = v_d;
    let de = d0.plus(&zero_point);
    est.nominal_vd = v_d;
    out.nominal = Nominal::Limit(Limit {
        d0,
        de,
        v_d: Some(v_d_lin),
    });
    (out, est)
}

impl PolyEstimator {
    fn newton(&self, a: &[f64]) -> Option<f64> {
        let mut x = self.nominal_vd;
        for _ in 0..40 {
            let (_, d1, d2) = self.basis.eval(a, x);
            if d2 >= 0.0 {
                return None;
            }
            let nx = x - d1 / d2;
            if !nx.is_finite() {
                return None;
            }
            if (nx - x).abs() <= 1e-12 * (1.0 + x.abs()) {
                return Some(nx);
            }
            x = nx;
        }
        None
    }
}

impl Redraw for PolyEstimator {
    fn draw(&mut self, y: &[f64], _dy: &[f64], _dy_base: &[f64]) -> DrawValue {
        if !self.nominal_vd.is_finite() {
            return DrawValue::Failed;
        }
        let n = y.len();
        for j in 0..self.order {
            let row = &self.operator[j * n..(j + 1) * n];
            self.a[j] = row.iter().zip(y).map(|(s, y)| s * y).sum();
        }
        let a = &self.a;
        let (_, s_bottom, _) = self.basis.eval(a, self.v_bottom);
        if s_bottom <= 0.0 {
            return DrawValue::Failed;
        }
        let root = if self.order == 2 {
            let (_, s, c) = self.basis.eval(a, self.v_bottom);
            if c >= 0.0 {
                return DrawValue::NoLimit;
            }
            Some(self.v_bottom - s / c)
        } else {
            let (_, s_top, _) = self.basis.eval(a, self.v_top);
            match self.newton(a) {
                Some(r) if r >= self.v_top && s_top > 0.0 => Some(r),
                _ => match quick_root(&self.basis, a, self.v_bottom, self.v_top, self.search_end) {
                    Root::Found(r) => Some(r),
                    Root::NotFound => None,
                    Root::StartsNonPositive => return DrawValue::Failed,
                },
            }
        };
        let Some(v_d) = root else {
            return DrawValue::NoLimit;
        };
        if v_d < self.v_top || v_d > self.search_end {
            return if v_d > self.search_end {
                DrawValue::NoLimit
            } else {
                DrawValue::Failed
            };
        }
        let d0 = self.basis.eval(a, v_d).0 - self.basis.eval(a, 0.0).0;
        if d0 <= 0.0 {
            return DrawValue::Failed;
        }
        let zp = self.basis.eval(a, 0.0).0 - self.basis.eval(a, -0.5).0;
        DrawValue::Value {
            d0,
            de: d0 + zp,
            v_d,
        }
    }
}
