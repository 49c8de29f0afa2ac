//! Extrapolations of the vibrational levels to the dissociation limit.
//!
//! Every estimate is computed as a function of the data vector y (levels or spacings), together
//! with its gradient ∂/∂y, so that its statistical uncertainty is σ² = gᵀ Σ g with the full data
//! covariance Σ, and so that the correlation between any two estimates is known. The same
//! estimators are re-run on every Monte Carlo draw through [`Redraw`].
//!
//! - [`polynomial`]: linear and curved Birge–Sponer in the convention-free form v_D: G′(v_D) = 0,
//!   D0 = G(v_D) − G(0), with the envelope-theorem gradient (domain.md §1.5–1.6);
//! - [`near_dissociation`]: LeRoy–Bernstein fits of the top levels (n fixed, n free, C_n fixed);
//! - [`lm`]: the small Levenberg–Marquardt solver under the near-dissociation fits.

pub mod lm;
pub mod nde;
pub mod near_dissociation;
pub mod polynomial;

use nalgebra::{DMatrix, DVector};

/// A quantity that depends (to first order linearly) on the data: value and gradient ∂/∂y.
#[derive(Debug, Clone, PartialEq)]
pub struct Lin {
    /// Value at the nominal data.
    pub value: f64,
    /// Gradient with respect to the data vector.
    pub grad: DVector<f64>,
}

impl Lin {
    /// A constant (zero gradient) for data of size n.
    pub fn constant(value: f64, n: usize) -> Self {
        Self {
            value,
            grad: DVector::zeros(n),
        }
    }

    /// Standard uncertainty √(gᵀ Σ g).
    pub fn sigma(&self, cov: &DMatrix<f64>) -> f64 {
        self.covariance_with(self, cov).max(0.0).sqrt()
    }

    /// Covariance gᵀ Σ h with another quantity.
    pub fn covariance_with(&self, other: &Lin, cov: &DMatrix<f64>) -> f64 {
        (self.grad.transpose() * cov * &other.grad)[(0, 0)]
    }

    /// Value at shifted data y0 + dy, to first order (exact for linear quantities).
    pub fn at(&self, dy: &[f64]) -> f64 {
        self.value + self.grad.iter().zip(dy).map(|(g, d)| g * d).sum::<f64>()
    }

    /// The same value with its sensitivity to the data multiplied by `k`: the part of a result
    /// whose data σ are to be scaled by `k` (a fit's own √χ²_ν).
    pub fn grad_scaled(&self, k: f64) -> Lin {
        Lin {
            value: self.value,
            grad: &self.grad * k,
        }
    }

    /// self + other.
    pub fn plus(&self, other: &Lin) -> Lin {
        Lin {
            value: self.value + other.value,
            grad: &self.grad + &other.grad,
        }
    }

    /// self − other.
    pub fn minus(&self, other: &Lin) -> Lin {
        Lin {
            value: self.value - other.value,
            grad: &self.grad - &other.grad,
        }
    }
}

/// What every estimator needs to know about the data set as a whole.
#[derive(Debug, Clone)]
pub struct Context {
    /// Energy of v = 0 on the data's energy scale (observed, or extrapolated down by the
    /// selected polynomial from the lowest observed level).
    pub e0: Lin,
    /// Whether v = 0 was observed.
    pub e0_observed: bool,
    /// Zero-point energy G(0) above the minimum from the selected polynomial: P(0) − P(−½).
    pub zero_point: Lin,
    /// Observed span E(v_top) − E(v_bottom), cm⁻¹ (no model involved).
    pub observed_span: f64,
    /// Lowest level with data.
    pub v_bottom: f64,
    /// Highest level with data.
    pub v_top: f64,
}

impl Context {
    /// Fraction of D0 not covered by observed levels: 1 − span/D0, clipped at 0.
    pub fn extrapolated_fraction(&self, d0: f64) -> f64 {
        if d0 > 0.0 {
            (1.0 - self.observed_span / d0).max(0.0)
        } else {
            1.0
        }
    }
}

/// A dissociation limit found by one method at the nominal data.
#[derive(Debug, Clone)]
pub struct Limit {
    /// D0 relative to v = 0, cm⁻¹.
    pub d0: Lin,
    /// De = D0 + G(0), cm⁻¹.
    pub de: Lin,
    /// v_D (non-integer effective vibrational index of the limit); `None` for the observed sum.
    pub v_d: Option<Lin>,
}

/// Nominal outcome of a method.
#[derive(Debug, Clone)]
pub enum Nominal {
    /// A finite limit.
    Limit(Limit),
    /// No limit within this model, with the reason.
    NoLimit(String),
}

/// Outcome of one Monte Carlo draw.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DrawValue {
    /// A finite estimate (v_d NaN when the method has none).
    Value {
        /// D0, cm⁻¹.
        d0: f64,
        /// De, cm⁻¹.
        de: f64,
        /// v_D.
        v_d: f64,
    },
    /// The redrawn data give no finite limit within the model (counted as D0 = +∞).
    NoLimit,
    /// The refit failed numerically (excluded from the statistics, counted).
    Failed,
}

/// An estimator that can be re-run on redrawn data.
pub trait Redraw {
    /// Evaluate on y = y0 + dy, where dy is this estimator's draw (the common draw `dy_base`
    /// times its own σ scale). Parts of an estimate that come from elsewhere (observed levels,
    /// the selected polynomial) are evaluated on `dy_base` with their own factors folded in.
    fn draw(&mut self, y: &[f64], dy: &[f64], dy_base: &[f64]) -> DrawValue;
}

/// An estimator that is linear in the data (the observed sum): exact under redraws.
#[derive(Debug, Clone)]
pub struct LinearEstimator {
    /// D0 as a linear function of the data.
    pub d0: Lin,
    /// De as a linear function of the data.
    pub de: Lin,
}

impl Redraw for LinearEstimator {
    fn draw(&mut self, _y: &[f64], _dy: &[f64], dy_base: &[f64]) -> DrawValue {
        DrawValue::Value {
            d0: self.d0.at(dy_base),
            de: self.de.at(dy_base),
            v_d: f64::NAN,
        }
    }
}
