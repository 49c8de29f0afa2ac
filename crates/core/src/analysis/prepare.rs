//! Stages 1–2 of the analysis: fit G(v) of every order and choose one, fix the effective data
//! covariance and the σ policy, and gather what every estimator needs to know about the data set
//! as a whole ([`Prepared`]).

use nalgebra::{DMatrix, DVector};

use super::{SigmaSource, policy_text};
use crate::Result;
use crate::dunham::{self, DataKind, FitData, OrderSelection, PolyFit};
use crate::extrapolate::{Context, Lin};
use crate::settings::{AnalysisSettings, SigmaScaling};
use crate::spacings::LevelView;

/// The data, the selected fit of G(v) and the σ policy, as every later stage reads them.
pub(super) struct Prepared<'a> {
    /// The fit data (levels or spacings) with their covariance as given.
    pub data: FitData,
    /// Where the data σ came from.
    pub source: SigmaSource,
    /// Reduced mass, u.
    pub mu_u: Option<f64>,
    /// Every user choice.
    pub settings: &'a AnalysisSettings,
    /// The table of orders and the recommended order.
    pub selection: OrderSelection,
    /// The fits of orders 1 … cap (index k − 1).
    fits: Vec<PolyFit>,
    /// The order in force (forced or selected).
    pub k_sel: usize,
    /// Whether the order was forced by the settings.
    pub forced: bool,
    /// The fit of order `k_sel`.
    pub sel: PolyFit,
    /// χ²_ν of the selected fit.
    pub chi2r: Option<f64>,
    /// Factor of the effective covariance over the data covariance.
    pub factor2: f64,
    /// Whether statistical σ are estimable at all.
    pub estimable: bool,
    /// Where σ came from and how they were scaled, in words.
    pub note: String,
    /// The effective data covariance (data covariance × `factor2`).
    pub cov_eff: DMatrix<f64>,
    /// Whether each estimate's σ follows its own fit's χ²_ν (σ given and estimable).
    pub per_method: bool,
    /// The levels, rebuilt from spacings when needed (`None` across a gap).
    pub view: Option<LevelView>,
    /// Energy of v = 0, the zero point, the observed span and range.
    pub ctx: Context,
    /// G(0) as it enters an estimate, each part with its own σ factor.
    pub e0_x: Lin,
    /// The top observed level with the data σ as given (`None` across a gap).
    pub top_x: Option<Lin>,
    /// B_e extrapolated from the lowest given B_v (for r_e of a potential), cm⁻¹.
    pub be_for_re: Option<f64>,
    /// The given rotational constants (v, B_v), cm⁻¹.
    pub bv: Vec<(f64, f64)>,
}

impl Prepared<'_> {
    /// Number of data points.
    pub fn n(&self) -> usize {
        self.data.len()
    }

    /// The effective covariance when σ are estimable.
    pub fn cov_opt(&self) -> Option<&DMatrix<f64>> {
        self.estimable.then_some(&self.cov_eff)
    }

    /// The scaling policy applied to a χ²_ν: the square of the σ factor it calls for.
    pub fn policy(&self, chi2r: f64) -> f64 {
        policy_factor2(self.settings.sigma_scaling, chi2r)
    }

    /// A squared σ factor of the data in the effective covariance's terms: each part of an
    /// estimate carries the σ factor of the fit it comes from, and no other's.
    pub fn rel_of(&self, own2: f64) -> f64 {
        if self.per_method {
            (own2 / self.factor2).sqrt()
        } else {
            1.0
        }
    }

    /// The fit of G(v) of order k (from the table when it holds it).
    pub fn fit_of_order(&self, k: usize) -> Result<PolyFit> {
        match self.fits.get(k - 1) {
            Some(f) => Ok(f.clone()),
            None => dunham::fit_poly(&self.data, k),
        }
    }
}

fn policy_factor2(p: SigmaScaling, chi2r: f64) -> f64 {
    match p {
        SigmaScaling::Never => 1.0,
        SigmaScaling::WhenAboveOne => chi2r.max(1.0),
        SigmaScaling::Always => chi2r,
    }
}

/// Fit and select G(v), fix the covariance, and build the context of the estimators.
pub(super) fn prepare<'a>(
    data: FitData,
    source: SigmaSource,
    mu_u: Option<f64>,
    settings: &'a AnalysisSettings,
    warnings: &mut Vec<String>,
) -> Result<Prepared<'a>> {
    let (selection, fits) = dunham::select_order(&data, settings.max_order as usize)?;
    let forced = settings.order.is_some();
    let k_sel = settings
        .order
        .map(|o| o as usize)
        .unwrap_or(selection.recommended_order);
    let sel = match fits.get(k_sel - 1) {
        Some(f) => f.clone(),
        None => dunham::fit_poly(&data, k_sel)?,
    };
    let chi2r = sel.chi2_reduced();
    let (factor2, estimable, note) = effective_scale(source, chi2r, settings.sigma_scaling, k_sel);
    let cov_eff = &data.cov * factor2;
    let per_method = estimable && factor2 > 0.0 && source != SigmaSource::EstimatedFromScatter;
    let mut p = Prepared {
        view: LevelView::of(&data),
        data,
        source,
        mu_u,
        settings,
        selection,
        fits,
        k_sel,
        forced,
        sel,
        chi2r,
        factor2,
        estimable,
        note,
        cov_eff,
        per_method,
        ctx: Context {
            e0: Lin::constant(0.0, 0),
            e0_observed: false,
            zero_point: Lin::constant(0.0, 0),
            observed_span: 0.0,
            v_bottom: 0.0,
            v_top: 0.0,
        },
        e0_x: Lin::constant(0.0, 0),
        top_x: None,
        be_for_re: None,
        bv: Vec::new(),
    };
    context(&mut p, warnings);
    Ok(p)
}

/// The factor of the effective covariance, whether σ are estimable, and the note saying so.
fn effective_scale(
    source: SigmaSource,
    chi2r: Option<f64>,
    policy: SigmaScaling,
    k_sel: usize,
) -> (f64, bool, String) {
    match (source, chi2r) {
        (SigmaSource::EstimatedFromScatter, Some(c)) if c > 0.0 => (
            c,
            true,
            format!(
                "no uncertainties were given: σ = {:.4e} cm⁻¹ per point estimated from the scatter about the order-{k_sel} fit (RSS/dof)",
                c.sqrt()
            ),
        ),
        (SigmaSource::EstimatedFromScatter, _) => (
            0.0,
            false,
            format!(
                "no uncertainties were given and the order-{k_sel} fit leaves no scatter to estimate them from: statistical uncertainties are not estimable"
            ),
        ),
        (_, Some(c)) => {
            let f2 = policy_factor2(policy, c);
            let what = if f2 == 1.0 {
                format!(
                    "vibrational constants: data σ used as given (χ²_ν = {c:.3} of the order-{k_sel} fit; scaling policy: {}); each dissociation estimate's σ follows its own fit's χ²_ν under the same policy (its sigma_scale)",
                    policy_text(policy)
                )
            } else {
                format!(
                    "vibrational constants: data σ scaled by √χ²_ν = {:.4} of the order-{k_sel} fit (scaling policy: {}); each dissociation estimate's σ follows its own fit's χ²_ν under the same policy (its sigma_scale)",
                    f2.sqrt(),
                    policy_text(policy)
                )
            };
            (f2, f2 > 0.0, what)
        }
        (_, None) => (
            1.0,
            true,
            format!(
                "data σ used as given (the order-{k_sel} fit has no degrees of freedom to check them)"
            ),
        ),
    }
}

fn shape_row(fit: &PolyFit, v: f64) -> Vec<f64> {
    let mut r = vec![0.0; fit.order];
    fit.basis.row(v, &mut r, None);
    r
}

fn lin_of_shape(fit: &PolyFit, row: &[f64]) -> Lin {
    let value = row.iter().zip(&fit.coeffs).map(|(a, b)| a * b).sum();
    Lin {
        value,
        grad: fit.operator.transpose() * DVector::from_column_slice(row),
    }
}

/// G(0), the zero point, the observed span and the top level, as they enter the estimates.
///
/// Observed levels (the observed sum, G(0) when v = 0 is observed) keep the data σ as given: no
/// model can tell noise from misfit for them; G(0) extrapolated down by the selected polynomial
/// keeps that fit's factor, which the effective covariance already carries.
fn context(p: &mut Prepared, warnings: &mut Vec<String>) {
    let n = p.n();
    let k_sel = p.k_sel;
    let sel = &p.sel;
    let rel_obs = p.rel_of(1.0);
    let (v_bottom, v_top) = p.data.level_range();
    let r_b = shape_row(sel, v_bottom);
    let r_t = shape_row(sel, v_top);
    let r_0 = shape_row(sel, 0.0);
    let r_m = shape_row(sel, -0.5);
    let zp_row: Vec<f64> = r_0.iter().zip(&r_m).map(|(a, b)| a - b).collect();
    let zero_point = lin_of_shape(sel, &zp_row);
    let e0_observed = p.view.as_ref().is_some_and(|w| w.v.first() == Some(&0.0));
    let (e0, e0_x, observed_span, top_lin) = match &p.view {
        Some(w) => {
            let row = |i: usize| Lin {
                value: w.e[i],
                grad: w.map.row(i).transpose(),
            };
            let last = w.v.len() - 1;
            let (e0, e0_x) = if e0_observed {
                (row(0), row(0).grad_scaled(rel_obs))
            } else {
                let down: Vec<f64> = r_b.iter().zip(&r_0).map(|(a, b)| a - b).collect();
                let down = lin_of_shape(sel, &down);
                (
                    row(0).minus(&down),
                    row(0).grad_scaled(rel_obs).minus(&down),
                )
            };
            (e0, e0_x, w.e[last] - w.e[0], Some(row(last)))
        }
        None => {
            let span: Vec<f64> = r_t.iter().zip(&r_b).map(|(a, b)| a - b).collect();
            warnings.push("the spacings have a gap: no levels can be rebuilt across it, so the observed sum and the near-dissociation fits are not available; the observed span is taken from the fit".into());
            let zero = Lin::constant(0.0, n);
            (zero.clone(), zero, lin_of_shape(sel, &span).value, None)
        }
    };
    if !e0_observed && p.view.is_some() {
        warnings.push(format!(
            "v = 0 is not among the data: G(0), and with it every D0, use the order-{k_sel} polynomial extrapolated down from v = {v_bottom}"
        ));
    }
    if p.data.kind == DataKind::Spacings && p.source == SigmaSource::Given {
        warnings.push("spacings given directly are treated as independent; spacings that share a level are in fact anticorrelated — give levels, or the spacings' covariance, when available".into());
    }
    p.top_x = top_lin.as_ref().map(|t| t.grad_scaled(rel_obs));
    p.e0_x = e0_x;
    p.ctx = Context {
        e0,
        e0_observed,
        zero_point,
        observed_span,
        v_bottom,
        v_top,
    };
}
