//! The Dunham-constrained global fit of band positions, for one or several isotopologues.
//!
//! Model (domain.md §1.4, §1.11), for isotopologue i with ρ_i = (μ_ref/μ_i)^½ and the upper
//! state's numbering shifted by a trial offset k (v′ → v′ + k):
//!
//! ν = T00 + [P′(ρ_i (v′ + k + ½)) − P′(½)] − [P″(ρ_i (v″ + ½)) − P″(½)],
//!
//! where P(x) = Σ_{j=1..K} Y_j0 x^j is the reference isotopologue's G(v) written in x = v + ½
//! (no Y00), so that G^(i)(v) = P(ρ_i (v + ½)) carries the mass scaling Y_j0 ρ^j. T00 is the
//! reference isotopologue's ν(0, 0) (robust: no extrapolation to the minimum) and
//! Te = T00 − G′(0) + G″(0) with G(0) = P(½). For one isotopologue this is the familiar
//! ν = T00 + [G′(v′) − G′(0)] − [G″(v″) − G″(0)].
//!
//! As in [`crate::dunham`], the polynomials are fitted in a Chebyshev basis of the scaled
//! variable on the observed range of v_eff = ρ(v + ½) − ½ of each state, solved by the SVD engine
//! [`crate::lsq`], and only the reported Y_j0 are mapped back (covariance M C Mᵀ).
//!
//! Orders: [`select_orders`] fits every pair (K′, K″) the data allow and picks the simplest pair
//! that no larger nested pair beats in an F-test (p < [`F_TEST_ALPHA`]), the two-state version of
//! the rule in [`crate::dunham::select_order`].

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::{DMatrix, DVector};
use serde::{Deserialize, Serialize};

use crate::dunham::{ChebBasis, F_TEST_ALPHA, MAX_SUPPORTED_ORDER, f_sf_general};
use crate::extrapolate::Lin;
use crate::lsq::{self, LinearFit, Weights};
use crate::sorting::sort_by;
use crate::{Error, Result};

/// One band as the global fit sees it.
#[derive(Debug, Clone, PartialEq)]
pub struct GlobalBand {
    /// v′ as given.
    pub v_upper: u32,
    /// v″.
    pub v_lower: u32,
    /// Band origin, cm⁻¹.
    pub position_cm1: f64,
    /// σ, cm⁻¹ (`None`: unit weights for every band).
    pub sigma_cm1: Option<f64>,
    /// ρ = (μ_ref/μ)^½ of the band's isotopologue (1 for the reference).
    pub rho: f64,
}

/// A global fit at given orders and upper-state offset.
#[derive(Debug, Clone)]
pub struct GlobalFit {
    /// Order K′ of the upper state's polynomial (0: no upper-state terms).
    pub k_upper: usize,
    /// Order K″ of the lower state's polynomial.
    pub k_lower: usize,
    /// Trial offset k of the upper numbering (v′ → v′ + k).
    pub offset: i32,
    /// Chebyshev basis of the upper state (in v_eff).
    pub upper_basis: ChebBasis,
    /// Chebyshev basis of the lower state.
    pub lower_basis: ChebBasis,
    /// Range of x = ρ(v′ + k + ½) covered by the data.
    pub upper_x_range: (f64, f64),
    /// Range of x = ρ(v″ + ½) covered by the data.
    pub lower_x_range: (f64, f64),
    /// Whether the bands carried σ.
    pub sigma_known: bool,
    /// Least-squares result; parameters [T00, a′_1..a′_K′, a″_1..a″_K″].
    pub lsq: LinearFit,
}

fn range(xs: impl Iterator<Item = f64>) -> (f64, f64) {
    xs.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), x| {
        (lo.min(x), hi.max(x))
    })
}

/// Number of distinct values of x (to 1e-9) — the most a state's polynomial can be fitted to.
fn distinct(mut xs: Vec<f64>) -> usize {
    xs.sort_by(f64::total_cmp);
    xs.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * (1.0 + b.abs()));
    xs.len()
}

/// Distinct x values of the upper and lower states under offset `offset`.
pub fn distinct_levels(bands: &[GlobalBand], offset: i32) -> (usize, usize) {
    (
        distinct(
            bands
                .iter()
                .map(|b| b.rho * (f64::from(b.v_upper) + f64::from(offset) + 0.5))
                .collect(),
        ),
        distinct(
            bands
                .iter()
                .map(|b| b.rho * (f64::from(b.v_lower) + 0.5))
                .collect(),
        ),
    )
}

impl GlobalFit {
    /// Number of parameters.
    pub fn n_params(&self) -> usize {
        1 + self.k_upper + self.k_lower
    }

    /// Unscaled parameter covariance.
    pub fn covariance(&self) -> DMatrix<f64> {
        self.lsq.covariance_matrix()
    }

    fn lin(&self, grad: DVector<f64>) -> Lin {
        let value = grad.iter().zip(&self.lsq.params).map(|(g, p)| g * p).sum();
        Lin { value, grad }
    }

    /// Gradient of P(x) − P(x0) of one state, in the full parameter vector.
    fn p_diff(&self, upper: bool, x: f64, x0: f64) -> DVector<f64> {
        let (basis, k, start) = if upper {
            (&self.upper_basis, self.k_upper, 1)
        } else {
            (&self.lower_basis, self.k_lower, 1 + self.k_upper)
        };
        let mut g = DVector::zeros(self.n_params());
        if k == 0 {
            return g;
        }
        let mut r = vec![0.0; k];
        let mut r0 = vec![0.0; k];
        basis.row(x - 0.5, &mut r, None);
        basis.row(x0 - 0.5, &mut r0, None);
        for j in 0..k {
            g[start + j] = r[j] - r0[j];
        }
        g
    }

    /// T00 of the reference isotopologue: ν(v′ = 0, v″ = 0) in the given numbering (with the
    /// offset: the level the offset calls v′ = 0).
    pub fn t00(&self) -> Lin {
        let mut g = DVector::zeros(self.n_params());
        g[0] = 1.0;
        self.lin(g)
    }

    /// G(0) = P(ρ/2) − P(0) of one state for an isotopologue with factor ρ (zero-point energy).
    pub fn zero_point(&self, upper: bool, rho: f64) -> Lin {
        self.lin(self.p_diff(upper, 0.5 * rho, 0.0))
    }

    /// G^(i)(v) = P(ρ(v + ½)) above the minimum, for a level v in the numbering used by the fit
    /// (the upper state's v already including the offset).
    pub fn level(&self, upper: bool, v: f64, rho: f64) -> Lin {
        self.lin(self.p_diff(upper, rho * (v + 0.5), 0.0))
    }

    /// Te = T00 − G′(0) + G″(0) (reference isotopologue).
    pub fn te(&self) -> Lin {
        let g = {
            let mut g = DVector::zeros(self.n_params());
            g[0] = 1.0;
            g - self.p_diff(true, 0.5, 0.0) + self.p_diff(false, 0.5, 0.0)
        };
        self.lin(g)
    }

    /// T00 of an isotopologue with factor ρ: Te + G′^(i)(0) − G″^(i)(0).
    pub fn t00_of(&self, rho: f64) -> Lin {
        let g =
            self.te().grad + self.p_diff(true, 0.5 * rho, 0.0) - self.p_diff(false, 0.5 * rho, 0.0);
        self.lin(g)
    }

    /// Band position ν(v′, v″) of an isotopologue with factor ρ, the upper v′ as given (the
    /// fit's offset is added).
    pub fn band(&self, v_upper: u32, v_lower: u32, rho: f64) -> Lin {
        let xu = rho * (f64::from(v_upper) + f64::from(self.offset) + 0.5);
        let xl = rho * (f64::from(v_lower) + 0.5);
        let mut g = DVector::zeros(self.n_params());
        g[0] = 1.0;
        let g = g + self.p_diff(true, xu, 0.5) - self.p_diff(false, xl, 0.5);
        self.lin(g)
    }

    /// Dunham constants Y_j0 (j = 1..K) of the reference isotopologue for one state, with their
    /// unscaled covariance.
    pub fn dunham(&self, upper: bool) -> (Vec<f64>, DMatrix<f64>) {
        let (basis, k, start) = if upper {
            (&self.upper_basis, self.k_upper, 1)
        } else {
            (&self.lower_basis, self.k_lower, 1 + self.k_upper)
        };
        if k == 0 {
            return (Vec::new(), DMatrix::zeros(0, 0));
        }
        let m = basis.to_dunham(k);
        let a = DVector::from_column_slice(&self.lsq.params[start..start + k]);
        let c = self.covariance().view((start, start), (k, k)).into_owned();
        let y = &m * a;
        (y.iter().copied().collect(), &m * c * m.transpose())
    }

    /// Jacobian of the Dunham constants of one state with respect to all parameters (K × p).
    pub fn dunham_jacobian(&self, upper: bool) -> DMatrix<f64> {
        let (basis, k, start) = if upper {
            (&self.upper_basis, self.k_upper, 1)
        } else {
            (&self.lower_basis, self.k_lower, 1 + self.k_upper)
        };
        let mut j = DMatrix::zeros(k, self.n_params());
        if k > 0 {
            let m = basis.to_dunham(k);
            j.view_mut((0, start), (k, k)).copy_from(&m);
        }
        j
    }
}

/// Fits the global model at orders (K′, K″) with the upper numbering shifted by `offset`.
pub fn fit_global(
    bands: &[GlobalBand],
    k_upper: usize,
    k_lower: usize,
    offset: i32,
) -> Result<GlobalFit> {
    if k_upper > MAX_SUPPORTED_ORDER || k_lower > MAX_SUPPORTED_ORDER {
        return Err(Error::parameter(
            "order",
            format!("polynomial order above {MAX_SUPPORTED_ORDER}"),
        ));
    }
    let n = bands.len();
    let p = 1 + k_upper + k_lower;
    if n < p {
        return Err(Error::TooFewPoints {
            what: format!("a global band fit of orders ({k_upper}, {k_lower})"),
            have: n,
            need: p,
        });
    }
    if let Some(b) = bands
        .iter()
        .find(|b| i64::from(b.v_upper) + i64::from(offset) < 0)
    {
        return Err(Error::parameter(
            "offset",
            format!(
                "offset {offset} makes v′ = {} negative",
                i64::from(b.v_upper) + i64::from(offset)
            ),
        ));
    }
    let xu: Vec<f64> = bands
        .iter()
        .map(|b| b.rho * (f64::from(b.v_upper) + f64::from(offset) + 0.5))
        .collect();
    let xl: Vec<f64> = bands
        .iter()
        .map(|b| b.rho * (f64::from(b.v_lower) + 0.5))
        .collect();
    let ur = range(xu.iter().copied());
    let lr = range(xl.iter().copied());
    let upper_basis = ChebBasis::for_range(ur.0 - 0.5, ur.1 - 0.5);
    let lower_basis = ChebBasis::for_range(lr.0 - 0.5, lr.1 - 0.5);
    let mut design = DMatrix::zeros(n, p);
    let mut ru = vec![0.0; k_upper];
    let mut rl = vec![0.0; k_lower];
    let mut ru0 = vec![0.0; k_upper];
    let mut rl0 = vec![0.0; k_lower];
    upper_basis.row(0.0, &mut ru0, None);
    lower_basis.row(0.0, &mut rl0, None);
    for i in 0..n {
        design[(i, 0)] = 1.0;
        upper_basis.row(xu[i] - 0.5, &mut ru, None);
        lower_basis.row(xl[i] - 0.5, &mut rl, None);
        for j in 0..k_upper {
            design[(i, 1 + j)] = ru[j] - ru0[j];
        }
        for j in 0..k_lower {
            design[(i, 1 + k_upper + j)] = -(rl[j] - rl0[j]);
        }
    }
    let y: Vec<f64> = bands.iter().map(|b| b.position_cm1).collect();
    let sigma_known = bands.iter().all(|b| b.sigma_cm1.is_some());
    let s: Vec<f64> = bands.iter().map(|b| b.sigma_cm1.unwrap_or(1.0)).collect();
    let fit = lsq::fit(
        &design,
        &y,
        if sigma_known {
            Weights::Sigma(&s)
        } else {
            Weights::Unit
        },
    )?;
    Ok(GlobalFit {
        k_upper,
        k_lower,
        offset,
        upper_basis,
        lower_basis,
        upper_x_range: ur,
        lower_x_range: lr,
        sigma_known,
        lsq: fit,
    })
}

/// One row of the two-state order table.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GlobalOrderRow {
    /// K′.
    pub order_upper: usize,
    /// K″.
    pub order_lower: usize,
    /// Parameters 1 + K′ + K″.
    pub n_params: usize,
    /// Degrees of freedom.
    pub dof: usize,
    /// χ² (with unit weights the residual sum of squares, cm⁻²).
    pub chi2: f64,
    /// χ²/dof.
    pub chi2_reduced: Option<f64>,
    /// AICc (with unit weights N ln(RSS/N) replaces χ²).
    pub aicc: Option<f64>,
    /// BIC (same replacement).
    pub bic: Option<f64>,
    /// Condition number of the whitened, equilibrated design.
    pub condition_number: f64,
    /// Reproduces the data to rounding precision.
    pub exact: bool,
}

/// The order table and the chosen pair.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct GlobalOrderSelection {
    /// Every pair fitted.
    pub rows: Vec<GlobalOrderRow>,
    /// Chosen K′.
    pub order_upper: usize,
    /// Chosen K″.
    pub order_lower: usize,
    /// Why.
    pub reason: String,
}

fn order_row(fit: &GlobalFit, y_scale: f64) -> GlobalOrderRow {
    let n = fit.lsq.n_points;
    let p = fit.n_params();
    let chi2 = fit.lsq.chi2;
    let (nf, pf) = (n as f64, p as f64);
    let base = if fit.sigma_known {
        Some(chi2)
    } else if chi2 > 0.0 {
        Some(nf * (chi2 / nf).ln())
    } else {
        None
    };
    GlobalOrderRow {
        order_upper: fit.k_upper,
        order_lower: fit.k_lower,
        n_params: p,
        dof: n - p,
        chi2,
        chi2_reduced: fit.lsq.chi2_reduced(),
        aicc: base.and_then(|b| {
            (n > p + 1).then(|| b + 2.0 * pf + 2.0 * pf * (pf + 1.0) / (nf - pf - 1.0))
        }),
        bic: base.map(|b| b + pf * nf.ln()),
        condition_number: fit.lsq.condition_number,
        exact: (chi2 / nf).sqrt() <= 1e-10 * y_scale,
    }
}

fn nested_p(lo: &GlobalOrderRow, hi: &GlobalOrderRow) -> Option<f64> {
    if hi.dof == 0 || hi.chi2 <= 0.0 || lo.exact || hi.exact || hi.n_params <= lo.n_params {
        return None;
    }
    let d1 = hi.n_params - lo.n_params;
    let f = (((lo.chi2 - hi.chi2) / d1 as f64) / (hi.chi2 / hi.dof as f64)).max(0.0);
    f_sf_general(f, d1, hi.dof)
}

/// Highest order each state's data allow: distinct x values − 1, capped by `max_order`.
pub fn order_caps(bands: &[GlobalBand], max_order: usize) -> (usize, usize) {
    let (nu, nl) = distinct_levels(bands, 0);
    (
        nu.saturating_sub(1).min(max_order).min(MAX_SUPPORTED_ORDER),
        nl.saturating_sub(1).min(max_order).min(MAX_SUPPORTED_ORDER),
    )
}

/// Fits every allowed pair of orders (or the forced ones) and chooses; returns the table and the
/// chosen fit (offset 0).
pub fn select_orders(
    bands: &[GlobalBand],
    max_order: usize,
    forced_upper: Option<usize>,
    forced_lower: Option<usize>,
) -> Result<(GlobalOrderSelection, GlobalFit)> {
    let (cu, cl) = order_caps(bands, max_order);
    if cu == 0 && cl == 0 {
        return Err(Error::Input {
            message: "the bands join a single upper and a single lower level: no vibrational \
                      structure to fit (give bands to at least two levels of one state)"
                .into(),
        });
    }
    let span = |cap: usize, forced: Option<usize>| -> Vec<usize> {
        match forced {
            Some(k) => vec![k],
            None if cap == 0 => vec![0],
            None => (1..=cap).collect(),
        }
    };
    let y_scale = bands
        .iter()
        .map(|b| (b.position_cm1 / b.sigma_cm1.unwrap_or(1.0)).abs())
        .fold(0.0, f64::max);
    let n = bands.len();
    let mut rows: Vec<GlobalOrderRow> = Vec::new();
    let mut fits: Vec<GlobalFit> = Vec::new();
    let mut first_err = None;
    for ku in span(cu, forced_upper) {
        for kl in span(cl, forced_lower) {
            if 1 + ku + kl > n {
                continue;
            }
            match fit_global(bands, ku, kl, 0) {
                Ok(f) => {
                    rows.push(order_row(&f, y_scale));
                    fits.push(f);
                }
                Err(e) => {
                    first_err.get_or_insert(e);
                }
            }
        }
    }
    if rows.is_empty() {
        return Err(first_err.unwrap_or(Error::TooFewPoints {
            what: "a global band fit".into(),
            have: n,
            need: 3,
        }));
    }
    // Candidates from the simplest; a candidate is beaten by any larger nested pair with p < α.
    let mut order: Vec<usize> = (0..rows.len()).collect();
    sort_by(&mut order, |&a, &b| {
        rows[a]
            .n_params
            .cmp(&rows[b].n_params)
            .then(rows[a].order_upper.cmp(&rows[b].order_upper))
    });
    let forced = forced_upper.is_some() && forced_lower.is_some();
    let (pick, reason) = if rows.len() == 1 {
        (
            0,
            if forced {
                "orders forced by the settings".to_string()
            } else {
                "the only pair of orders the data allow".to_string()
            },
        )
    } else if let Some(&e) = order.iter().find(|&&i| rows[i].exact) {
        (
            e,
            format!(
                "orders ({}, {}) reproduce the bands to rounding precision",
                rows[e].order_upper, rows[e].order_lower
            ),
        )
    } else {
        let mut chosen = None;
        for &i in &order {
            let lo = &rows[i];
            let beaten = rows.iter().any(|hi| {
                hi.order_upper >= lo.order_upper
                    && hi.order_lower >= lo.order_lower
                    && hi.n_params > lo.n_params
                    && nested_p(lo, hi).is_some_and(|p| p < F_TEST_ALPHA)
            });
            if !beaten {
                chosen = Some(i);
                break;
            }
        }
        match chosen {
            Some(i) => (
                i,
                format!(
                    "orders ({}, {}): no larger pair lowers χ² significantly (nested F-tests, p ≥ {F_TEST_ALPHA})",
                    rows[i].order_upper, rows[i].order_lower
                ),
            ),
            None => {
                let i = *order.last().unwrap_or(&0);
                (
                    i,
                    format!(
                        "orders ({}, {}): every smaller pair is beaten; the largest the data or settings allow",
                        rows[i].order_upper, rows[i].order_lower
                    ),
                )
            }
        }
    };
    let mut reason = reason;
    if !rows[pick].exact
        && let Some(a) = rows
            .iter()
            .filter(|r| r.aicc.is_some())
            .min_by(|a, b| a.aicc.unwrap_or(0.0).total_cmp(&b.aicc.unwrap_or(0.0)))
        && rows.len() > 1
    {
        if (a.order_upper, a.order_lower) == (rows[pick].order_upper, rows[pick].order_lower) {
            reason.push_str("; AICc is also lowest there");
        } else {
            reason.push_str(&format!(
                "; note: AICc is lowest at ({}, {})",
                a.order_upper, a.order_lower
            ));
        }
    }
    let sel = GlobalOrderSelection {
        order_upper: rows[pick].order_upper,
        order_lower: rows[pick].order_lower,
        rows,
        reason,
    };
    Ok((sel, fits.swap_remove(pick)))
}
