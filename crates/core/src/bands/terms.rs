//! The model-free term-value fit: ν(v′, v″) = T′(v′) − T″(v″) with the lowest lower level fixed.
//!
//! Each observed upper level v′ and lower level v″ gets its own term value; the lowest observed
//! v″ of the array is fixed at T″ = 0 (domain.md §1.2). Weighted linear least squares (the
//! engine in [`crate::lsq`]) gives every term value and their full covariance without assuming
//! any form for G(v). The bands must connect all levels (the graph with levels as nodes and
//! bands as edges is connected); [`components`] finds the connected parts.
//!
//! [`set_aside_outliers`] looks for bands that disagree with the term values implied by all the
//! others: one at a time, the band with the largest externally studentized residual above the
//! threshold is set aside and the fit repeated. A band that alone fixes a level (leverage 1) cannot
//! be checked: nothing else says where its level is.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::{DMatrix, DVector};

use super::PreparedBand;
use crate::lsq::{self, LinearFit, Weights};
use crate::settings::SigmaScaling;
use crate::sorting::{sort, sort_by_key};
use crate::{Error, Result};

/// A term-value fit of one isotopologue's bands.
#[derive(Debug, Clone)]
pub struct TermFit {
    /// Upper levels v′ (ascending); parameter i is `T′(upper_v[i])`.
    pub upper_v: Vec<u32>,
    /// Lower levels v″ (ascending); `lower_v[0]` is fixed at T″ = 0, parameter n′ + i − 1 is
    /// `T″(lower_v[i])` for i ≥ 1.
    pub lower_v: Vec<u32>,
    /// Indices (into the slice given to [`fit_terms`]) of the bands used, in fit order.
    pub bands: Vec<usize>,
    /// Whether the bands carried σ (false: unit weights).
    pub sigma_known: bool,
    /// The least-squares result.
    pub lsq: LinearFit,
    /// Linear map from the used band positions to the parameters (p × N).
    pub operator: DMatrix<f64>,
}

impl TermFit {
    /// Number of free parameters.
    pub fn n_params(&self) -> usize {
        self.lsq.n_params
    }

    fn upper_param(&self, v: u32) -> Option<usize> {
        self.upper_v.binary_search(&v).ok()
    }

    /// `Some(None)` for the fixed level, `Some(Some(i))` for a free one, `None` if absent.
    fn lower_param(&self, v: u32) -> Option<Option<usize>> {
        let i = self.lower_v.binary_search(&v).ok()?;
        Some((i > 0).then(|| self.upper_v.len() + i - 1))
    }

    /// Gradient g with ν̂(v′, v″) = gᵀθ, when both levels are in the fit.
    pub fn band_gradient(&self, v_upper: u32, v_lower: u32) -> Option<DVector<f64>> {
        let iu = self.upper_param(v_upper)?;
        let il = self.lower_param(v_lower)?;
        let mut g = DVector::zeros(self.n_params());
        g[iu] = 1.0;
        if let Some(il) = il {
            g[il] = -1.0;
        }
        Some(g)
    }

    /// Gradient of T′(v_a) − T′(v_b) (upper) or T″(v_a) − T″(v_b) (lower).
    pub fn difference_gradient(&self, upper: bool, v_a: u32, v_b: u32) -> Option<DVector<f64>> {
        let mut g = DVector::zeros(self.n_params());
        if upper {
            g[self.upper_param(v_a)?] += 1.0;
            g[self.upper_param(v_b)?] -= 1.0;
        } else {
            if let Some(i) = self.lower_param(v_a)? {
                g[i] += 1.0;
            }
            if let Some(i) = self.lower_param(v_b)? {
                g[i] -= 1.0;
            }
        }
        Some(g)
    }

    /// Term values T′(v′) (upper) above the fixed lower level.
    pub fn upper_energies(&self) -> Vec<f64> {
        self.lsq.params[..self.upper_v.len()].to_vec()
    }

    /// Term values T″(v″) (lower), the first being the fixed 0.
    pub fn lower_energies(&self) -> Vec<f64> {
        let mut e = vec![0.0];
        e.extend_from_slice(&self.lsq.params[self.upper_v.len()..]);
        e
    }

    /// Unscaled covariance of the upper term values.
    pub fn upper_covariance(&self) -> DMatrix<f64> {
        let n = self.upper_v.len();
        self.lsq
            .covariance_matrix()
            .view((0, 0), (n, n))
            .into_owned()
    }

    /// Unscaled covariance of the lower term values, with a zero row and column for the fixed one.
    pub fn lower_covariance(&self) -> DMatrix<f64> {
        let nu = self.upper_v.len();
        let nl = self.lower_v.len();
        let c = self.lsq.covariance_matrix();
        DMatrix::from_fn(nl, nl, |i, j| {
            if i == 0 || j == 0 {
                0.0
            } else {
                c[(nu + i - 1, nu + j - 1)]
            }
        })
    }

    /// Variance of gᵀθ (unscaled).
    pub fn variance(&self, g: &DVector<f64>) -> f64 {
        (g.transpose() * self.lsq.covariance_matrix() * g)[(0, 0)]
    }
}

/// Connected parts of the level graph of the bands `idx` (indices into `bands`), largest first
/// (ties: the part holding the earliest band).
pub fn components(bands: &[PreparedBand], idx: &[usize]) -> Vec<Vec<usize>> {
    // Union–find over nodes: upper levels and lower levels.
    let mut nodes: Vec<(bool, u32)> = Vec::new();
    let node = |nodes: &mut Vec<(bool, u32)>, key: (bool, u32)| -> usize {
        match nodes.iter().position(|n| *n == key) {
            Some(i) => i,
            None => {
                nodes.push(key);
                nodes.len() - 1
            }
        }
    };
    let mut edges = Vec::with_capacity(idx.len());
    for &i in idx {
        let a = node(&mut nodes, (true, bands[i].v_upper));
        let b = node(&mut nodes, (false, bands[i].v_lower));
        edges.push((a, b));
    }
    let mut parent: Vec<usize> = (0..nodes.len()).collect();
    fn find(p: &mut [usize], mut x: usize) -> usize {
        while p[x] != x {
            p[x] = p[p[x]];
            x = p[x];
        }
        x
    }
    for &(a, b) in &edges {
        let (ra, rb) = (find(&mut parent, a), find(&mut parent, b));
        if ra != rb {
            parent[ra] = rb;
        }
    }
    let mut groups: Vec<(usize, Vec<usize>)> = Vec::new();
    for (k, &(a, _)) in edges.iter().enumerate() {
        let r = find(&mut parent, a);
        match groups.iter_mut().find(|g| g.0 == r) {
            Some(g) => g.1.push(idx[k]),
            None => groups.push((r, vec![idx[k]])),
        }
    }
    let mut out: Vec<Vec<usize>> = groups.into_iter().map(|g| g.1).collect();
    sort_by_key(&mut out, |g| std::cmp::Reverse(g.len()));
    out
}

/// Fits term values to the bands `idx` (indices into `bands`, one connected part).
pub fn fit_terms(bands: &[PreparedBand], idx: &[usize]) -> Result<TermFit> {
    let mut upper_v: Vec<u32> = idx.iter().map(|&i| bands[i].v_upper).collect();
    sort(&mut upper_v);
    upper_v.dedup();
    let mut lower_v: Vec<u32> = idx.iter().map(|&i| bands[i].v_lower).collect();
    sort(&mut lower_v);
    lower_v.dedup();
    let p = upper_v.len() + lower_v.len() - 1;
    let n = idx.len();
    if n < p {
        return Err(Error::TooFewPoints {
            what: "a term-value fit".into(),
            have: n,
            need: p,
        });
    }
    let mut design = DMatrix::zeros(n, p);
    let mut y = Vec::with_capacity(n);
    let mut sigma = Vec::with_capacity(n);
    for (r, &i) in idx.iter().enumerate() {
        let b = &bands[i];
        let iu = upper_v.binary_search(&b.v_upper).unwrap_or(0);
        let il = lower_v.binary_search(&b.v_lower).unwrap_or(0);
        design[(r, iu)] = 1.0;
        if il > 0 {
            design[(r, upper_v.len() + il - 1)] = -1.0;
        }
        y.push(b.position_cm1);
        sigma.push(b.sigma_cm1);
    }
    let sigma_known = sigma.iter().all(Option::is_some);
    let s: Vec<f64> = sigma.iter().map(|s| s.unwrap_or(1.0)).collect();
    let fit = lsq::fit(
        &design,
        &y,
        if sigma_known {
            Weights::Sigma(&s)
        } else {
            Weights::Unit
        },
    )
    .map_err(|e| match e {
        Error::Numerical { message, .. } => Error::numerical("term-value fit", message),
        other => other,
    })?;
    // Solution operator S = Cov Xᵀ W.
    let mut xw = design.clone();
    for r in 0..n {
        let w = 1.0 / (s[r] * s[r]);
        xw.row_mut(r).scale_mut(w);
    }
    let operator = fit.covariance_matrix() * xw.transpose();
    Ok(TermFit {
        upper_v,
        lower_v,
        bands: idx.to_vec(),
        sigma_known,
        lsq: fit,
        operator,
    })
}

/// Variance factor by the σ policy for a χ²_ν (unit weights: the χ²_ν itself, the residual
/// variance per point).
pub fn variance_factor(policy: SigmaScaling, sigma_known: bool, chi2_reduced: f64) -> f64 {
    if !sigma_known {
        return chi2_reduced;
    }
    match policy {
        SigmaScaling::Never => 1.0,
        SigmaScaling::WhenAboveOne => chi2_reduced.max(1.0),
        SigmaScaling::Always => chi2_reduced,
    }
}

/// Variance factor of a fit by the σ policy: `None` when it cannot be estimated (no degrees of
/// freedom without band σ, or an exact fit without band σ — no scatter to estimate σ from).
pub fn fit_variance_factor(
    policy: SigmaScaling,
    sigma_known: bool,
    fit: &LinearFit,
    y: &[f64],
) -> Option<f64> {
    match fit.chi2_reduced() {
        Some(c) => {
            if !sigma_known {
                let scale = y.iter().fold(0.0_f64, |m, y| m.max(y.abs()));
                let exact = (fit.chi2 / fit.n_points as f64).sqrt() <= 1e-10 * scale;
                if exact || c <= 0.0 {
                    return None;
                }
            }
            Some(variance_factor(policy, sigma_known, c))
        }
        None => sigma_known.then_some(1.0),
    }
}

/// Externally studentized residuals of a term fit (`None` where the leverage is 1 or the
/// variance factor cannot be estimated).
pub fn studentized(fit: &TermFit, policy: SigmaScaling) -> Vec<Option<f64>> {
    let dof = fit.lsq.dof();
    let n = fit.lsq.n_points;
    (0..n)
        .map(|i| {
            let h = fit.lsq.leverage[i];
            if h >= 1.0 - 1e-9 {
                return None;
            }
            let r = fit.lsq.normalized_residuals[i];
            // Variance factor without this band (an outlier must not hide behind its own scatter).
            let f2 = if dof > 1 {
                let chi2_del = (fit.lsq.chi2 - r * r / (1.0 - h)).max(0.0);
                variance_factor(policy, fit.sigma_known, chi2_del / (dof - 1) as f64)
            } else if fit.sigma_known && dof >= 1 {
                variance_factor(policy, true, fit.lsq.chi2 / dof as f64)
            } else {
                return None;
            };
            let d = (1.0 - h) * f2;
            (d > 0.0).then(|| r / d.sqrt())
        })
        .collect()
}

/// Sets aside, one at a time, the band with the largest |externally studentized residual| above
/// `threshold`, refitting after each, at most `max_out` bands. Returns the final fit and the
/// bands set aside (indices into `bands`, in the order found).
pub fn set_aside_outliers(
    bands: &[PreparedBand],
    idx: &[usize],
    threshold: f64,
    policy: SigmaScaling,
    max_out: usize,
) -> Result<(TermFit, Vec<usize>)> {
    let mut active = idx.to_vec();
    let mut out = Vec::new();
    loop {
        let fit = fit_terms(bands, &active)?;
        if out.len() >= max_out {
            return Ok((fit, out));
        }
        let t = studentized(&fit, policy);
        let worst = t
            .iter()
            .enumerate()
            .filter_map(|(k, z)| z.map(|z| (k, z.abs())))
            .max_by(|a, b| a.1.total_cmp(&b.1));
        match worst {
            Some((k, z)) if z > threshold => {
                out.push(active[k]);
                active.remove(k);
            }
            _ => return Ok((fit, out)),
        }
    }
}
