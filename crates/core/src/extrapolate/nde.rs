//! Near-dissociation expansion (NDE): the outer form with a polynomial correction (Padé
//! numerator, no denominator), fitted to all levels:
//!
//! G(v) = D − X0·x^{2n/(n−2)}·(1 + p̃1 s + … + p̃L s^L),  x = v_D − v,  s = x / S,
//!
//! with S = (v_top − v_bottom + 1) fixed per data set so that the correction coefficients p̃ are of
//! order one (the published coefficients are p_i = p̃_i / S^i). The leading term is the
//! LeRoy–Bernstein limiting law, so the form is exact at the limit and the correction describes
//! the levels deeper in the well (LeRoy & Lam, Chem. Phys. Lett. 71, 544 (1980); Tromp & LeRoy,
//! J. Mol. Spectrosc. 109, 352 (1985), from memory).
//!
//! - n is fixed by the physics of the asymptote; X0 is fitted, or fixed from a theoretical C_n.
//! - For fixed v_D the model is linear in (D, X0, X0·p̃_i), so the fit is a profile over v_D: a
//!   weighted linear solve for each v_D, a log-spaced grid above the top level, and the
//!   minimum refined where the profile's analytic slope vanishes (common practice, no source).
//! - The correction order L is chosen by AICc over 0 … [`L_MAX`] among the acceptable fits: a fit
//!   is rejected, with the reason, when X0 ≤ 0, when its levels do not rise all the way from the
//!   lowest level to the limit, or when its spacings grow again between the top level and the
//!   limit (no attractive tail allows either).
//! - D and v_D carry gradients with respect to the data from the Gauss–Newton sensitivity at the
//!   optimum, Δθ = (JᵀΣ⁻¹J)⁻¹JᵀΣ⁻¹ ΔE; [`NdeEstimator`] refits a Monte Carlo draw at the
//!   chosen order.
//!
//! Not done: Padé denominators (M > 0) and the exponential form.

use nalgebra::{DMatrix, DVector};

use super::lm::Whitener;
use super::near_dissociation::{LbInput, exponent};
use super::{Context, DrawValue, Lin, Redraw};

/// Highest correction order tried.
pub const L_MAX: usize = 8;

/// One profiled fit of the outer form.
#[derive(Debug, Clone, PartialEq)]
pub struct NdeProfileFit {
    /// Dissociation limit D on the data's energy scale, cm⁻¹.
    pub d_cm1: f64,
    /// Effective vibrational index of the limit.
    pub v_d: f64,
    /// X0, cm⁻¹.
    pub x0_cm1: f64,
    /// Numerator coefficients p1..pL (of x = v_D − v, not of the scaled s).
    pub p: Vec<f64>,
    /// Weighted χ².
    pub chi2: f64,
    /// Degrees of freedom m − (number of parameters).
    pub dof: usize,
}

/// The design of the linear part at fixed v_D.
#[derive(Debug, Clone)]
struct Design {
    /// Correction order.
    l: usize,
    /// Scale S of s = x / S.
    scale: f64,
    /// X0 held fixed (from a theoretical C_n), or fitted.
    x0_fixed: Option<f64>,
}

impl Design {
    /// Number of linear parameters: D, (X0), X0·p̃_1 … X0·p̃_L.
    fn k(&self) -> usize {
        self.l + if self.x0_fixed.is_some() { 1 } else { 2 }
    }

    /// Row of the linear design at level v and the fixed-part offset (what is moved to the
    /// right-hand side when X0 is fixed). `None` when v is not below v_D.
    fn row(&self, n: f64, v_d: f64, v: f64, row: &mut [f64]) -> Option<f64> {
        let x = v_d - v;
        if x.is_nan() || x <= 0.0 {
            return None;
        }
        let base = x.powf(exponent(n));
        let s = x / self.scale;
        row[0] = 1.0;
        let (first, offset) = match self.x0_fixed {
            Some(x0) => (1, x0 * base),
            None => {
                row[1] = -base;
                (2, 0.0)
            }
        };
        let mut sp = s;
        for j in 0..self.l {
            row[first + j] = -base * sp;
            sp *= s;
        }
        Some(offset)
    }

    /// ∂(row)/∂v_D given the row at x = v_D − v and its offset; returns ∂(offset)/∂v_D. Every
    /// column but the constant one is a multiple of x^q (q = a for X0, a + j for the j-th
    /// correction), so its derivative is the column times q / x.
    fn slope_row(&self, n: f64, x: f64, row: &[f64], off: f64, drow: &mut [f64]) -> f64 {
        let a = exponent(n);
        drow[0] = 0.0;
        let first = match self.x0_fixed {
            Some(_) => 1,
            None => {
                drow[1] = row[1] * a / x;
                2
            }
        };
        for j in 0..self.l {
            drow[first + j] = row[first + j] * (a + (j + 1) as f64) / x;
        }
        off * a / x
    }

    /// X0 and the scaled coefficients p̃ from the linear solution θ.
    fn unpack(&self, theta: &DVector<f64>) -> (f64, Vec<f64>) {
        let (x0, first) = match self.x0_fixed {
            Some(x0) => (x0, 1),
            None => (theta[1], 2),
        };
        (x0, (0..self.l).map(|j| theta[first + j] / x0).collect())
    }
}

/// The weighted linear solve at one v_D.
struct Solve {
    /// Linear parameters θ.
    theta: DVector<f64>,
    /// Weighted χ² at θ.
    chi2: f64,
    /// dχ²_profile/dv_D: by the envelope theorem the partial derivative at fixed θ,
    /// 2 rᵀ W ∂(Aθ − y)/∂v_D (Golub & Pereyra 1973, from memory).
    slope: f64,
}

/// Weighted linear solve at fixed v_D with the profile's slope.
fn solve_at(v: &[f64], e: &[f64], w: &Whitener, n: f64, d: &Design, v_d: f64) -> Option<Solve> {
    let m = v.len();
    let k = d.k();
    let mut a = DMatrix::zeros(m, k);
    let mut da = DMatrix::zeros(m, k);
    let mut rhs = DVector::zeros(m);
    let mut drhs = DVector::zeros(m);
    let (mut row, mut drow) = (vec![0.0; k], vec![0.0; k]);
    for (i, &vi) in v.iter().enumerate() {
        let off = d.row(n, v_d, vi, &mut row)?;
        drhs[i] = d.slope_row(n, v_d - vi, &row, off, &mut drow);
        for j in 0..k {
            a[(i, j)] = row[j];
            da[(i, j)] = drow[j];
        }
        rhs[i] = e[i] + off;
    }
    let (aw, yw) = whiten(w, a, rhs);
    let theta = lsq_solve(&aw, &yw)?;
    let r = &aw * &theta - &yw;
    let (_, dr) = whiten(w, DMatrix::zeros(0, 0), &da * &theta - drhs);
    let chi2 = r.norm_squared();
    let slope = 2.0 * r.dot(&dr);
    (chi2.is_finite() && slope.is_finite()).then_some(Solve { theta, chi2, slope })
}

/// W·A and W·y for the whitener W (an empty A stays empty).
fn whiten(w: &Whitener, mut a: DMatrix<f64>, mut y: DVector<f64>) -> (DMatrix<f64>, DVector<f64>) {
    match w {
        Whitener::Diagonal(wd) => {
            for (i, wi) in wd.iter().enumerate() {
                if a.nrows() > 0 {
                    a.row_mut(i).scale_mut(*wi);
                }
                y[i] *= wi;
            }
            (a, y)
        }
        Whitener::Full(l) => {
            let a = if a.nrows() > 0 { l * a } else { a };
            (a, l * y)
        }
    }
}

/// Least squares min ‖A θ − y‖: Householder QR when A is well conditioned (the usual case, and
/// several times cheaper), else the SVD with small singular values cut.
fn lsq_solve(a: &DMatrix<f64>, y: &DVector<f64>) -> Option<DVector<f64>> {
    let qr = a.clone().qr();
    let r = qr.r();
    let diag: Vec<f64> = r.diagonal().iter().map(|d| d.abs()).collect();
    let (lo, hi) = diag
        .iter()
        .fold((f64::INFINITY, 0.0f64), |(l, h), &d| (l.min(d), h.max(d)));
    if lo > 1e-10 * hi {
        let qty = qr.q().transpose() * y;
        if let Some(t) = r.solve_upper_triangular(&qty) {
            return Some(t);
        }
    }
    a.clone().svd(true, true).solve(y, 1e-13).ok()
}

/// The profile as seen by the minimisers: χ² and slope at v_D, `None` where it is undefined.
type Profile<'a> = dyn Fn(f64) -> Option<(f64, f64)> + 'a;

/// The root of the profile's slope in [lo, hi], where it changes sign from − to +, by the
/// Illinois variant of regula falsi (Dowell & Jarratt 1971, from memory) to a relative width of
/// 1e-14. Locating the zero of the slope fixes v_D to rounding of the slope; a minimiser of χ²
/// alone could fix it only to the square root of the rounding, which differs between the
/// native and the browser builds' elementary functions.
fn slope_root(prof: &Profile, mut lo: f64, mut hi: f64) -> Option<f64> {
    let (mut slo, mut shi) = (prof(lo)?.1, prof(hi)?.1);
    if !(slo < 0.0 && shi > 0.0) {
        return None;
    }
    let mut side = 0i8;
    for _ in 0..200 {
        if hi - lo <= 1e-14 * hi.abs().max(1.0) {
            break;
        }
        let mut x = (lo * shi - hi * slo) / (shi - slo);
        if !(x > lo && x < hi) {
            x = 0.5 * (lo + hi);
        }
        let sx = prof(x)?.1;
        if sx == 0.0 {
            return Some(x);
        }
        if sx < 0.0 {
            (lo, slo) = (x, sx);
            if side == -1 {
                shi *= 0.5;
            }
            side = -1;
        } else {
            (hi, shi) = (x, sx);
            if side == 1 {
                slo *= 0.5;
            }
            side = 1;
        }
    }
    Some(0.5 * (lo + hi))
}

/// The minimum of the profiled χ²(v_D) over a log grid of v_D − v_top in
/// [lo_gap, hi_gap], refined at the zero of the slope (golden section on χ² where the slope
/// does not bracket a zero, as next to the top level).
fn profile_minimum(prof: &Profile, v_top: f64, lo_gap: f64, hi_gap: f64, points: usize) -> f64 {
    let chi2 = |x: f64| prof(x).map_or(f64::INFINITY, |p| p.0);
    let ratio = hi_gap / lo_gap;
    let grid: Vec<f64> = (0..=points)
        .map(|i| v_top + lo_gap * ratio.powf(i as f64 / points as f64))
        .collect();
    let (ib, _) = grid
        .iter()
        .enumerate()
        .map(|(i, &g)| (i, chi2(g)))
        .fold((0, f64::INFINITY), |b, c| if c.1 < b.1 { c } else { b });
    let lo = if ib == 0 { v_top } else { grid[ib - 1] };
    let hi = grid[(ib + 1).min(grid.len() - 1)];
    let mid = grid[ib];
    let halves = match prof(mid) {
        Some((_, s)) if s > 0.0 => slope_root(prof, lo, mid),
        Some((_, s)) if s < 0.0 => slope_root(prof, mid, hi),
        Some(_) => Some(mid),
        None => None,
    };
    halves.unwrap_or_else(|| golden(&chi2, lo, hi, 1e-13))
}

/// A draw's minimum near the nominal v_D: step the gap to the top level by factors of 1.25
/// downhill until the slope changes sign, inside [lo, hi]; `None` when it does not.
fn nearby_minimum(prof: &Profile, start: f64, v_top: f64, lo: f64, hi: f64) -> Option<f64> {
    let s0 = prof(start)?.1;
    if s0 == 0.0 {
        return Some(start);
    }
    let factor: f64 = if s0 > 0.0 { 1.0 / 1.25 } else { 1.25 };
    let mut x = start;
    for _ in 0..12 {
        let next = v_top + (x - v_top) * factor;
        if !(next >= lo && next <= hi) {
            return None;
        }
        let s = prof(next)?.1;
        if (s > 0.0) != (s0 > 0.0) || s == 0.0 {
            let (a, b) = if next < x { (next, x) } else { (x, next) };
            return slope_root(prof, a, b);
        }
        x = next;
    }
    None
}

fn check_input(v: &[f64], e: &[f64], n: f64, k: usize) -> bool {
    v.len() > k && e.len() == v.len() && !v.iter().chain(e).any(|x| !x.is_finite()) && n > 2.0
}

/// Fit the outer form of numerator degree `l` (X0 free) by the profile over v_D.
/// `None` when the data are too few, not finite, or the profile has no interior minimum.
pub fn fit_profile(
    v: &[f64],
    e: &[f64],
    cov: &DMatrix<f64>,
    n: f64,
    l: usize,
) -> Option<NdeProfileFit> {
    let design = Design {
        l,
        scale: 1.0,
        x0_fixed: None,
    };
    profile_fit(v, e, &Whitener::from_cov(cov)?, n, &design).map(|(f, _)| f)
}

/// The profile fit for one design: the fit and its linear solution θ.
fn profile_fit(
    v: &[f64],
    e: &[f64],
    w: &Whitener,
    n: f64,
    design: &Design,
) -> Option<(NdeProfileFit, DVector<f64>)> {
    let k = design.k();
    if !check_input(v, e, n, k) {
        return None;
    }
    let v_top = v.iter().copied().fold(f64::MIN, f64::max);
    let v_bot = v.iter().copied().fold(f64::MAX, f64::min);
    let span = (v_top - v_bot).max(1.0);
    let prof = |vd: f64| solve_at(v, e, w, n, design, vd).map(|s| (s.chi2, s.slope));
    let v_d = profile_minimum(&prof, v_top, 1e-3, 1e1 * span, 240);
    let Solve { theta, chi2, .. } = solve_at(v, e, w, n, design, v_d)?;
    let (x0, pt) = design.unpack(&theta);
    let p = pt
        .iter()
        .enumerate()
        .map(|(j, c)| c / design.scale.powi(j as i32 + 1))
        .collect();
    let fit = NdeProfileFit {
        d_cm1: theta[0],
        v_d,
        x0_cm1: x0,
        p,
        chi2,
        dof: v.len() - (k + 1),
    };
    Some((fit, theta))
}

/// Why a fitted expansion is not acceptable, or `None` when it is. With h(x) = D − G =
/// X0·Σ c_j x^{a+j} (c_0 = 1, c_j = p_j, a = 2n/(n−2)): the levels must rise with v everywhere
/// from the lowest level to the limit (h′ > 0), and between the top level and the limit the
/// spacings must shrink (h″ > 0), as they do under any attractive long-range tail (common
/// practice, no source).
fn unphysical(fit: &NdeProfileFit, n: f64, v_bot: f64, v_top: f64) -> Option<String> {
    if fit.x0_cm1.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
        return Some("its leading coefficient X0 is not positive".into());
    }
    let a = exponent(n);
    let coef: Vec<f64> = std::iter::once(1.0).chain(fit.p.iter().copied()).collect();
    let deriv = |x: f64, order: i32| -> f64 {
        coef.iter()
            .enumerate()
            .map(|(j, c)| {
                let q = a + j as f64;
                let f = if order == 1 { q } else { q * (q - 1.0) };
                c * f * x.powf(q - order as f64)
            })
            .sum()
    };
    let (x_max, x_top) = (fit.v_d - v_bot, fit.v_d - v_top);
    const STEPS: usize = 400;
    if (1..=STEPS).any(|i| deriv(x_max * i as f64 / STEPS as f64, 1) <= 0.0) {
        return Some(
            "its levels do not rise all the way from the lowest level to the limit".into(),
        );
    }
    if (1..=STEPS).any(|i| deriv(x_top * i as f64 / STEPS as f64, 2) <= 0.0) {
        return Some("its spacings grow again between the top level and the limit, which no attractive long-range tail allows".into());
    }
    None
}

/// The nominal near-dissociation expansion: the chosen order with gradients.
#[derive(Debug, Clone)]
pub struct NdeFit {
    /// The fit at the chosen order.
    pub fit: NdeProfileFit,
    /// D (data scale) with its gradient with respect to the data vector y.
    pub d: Lin,
    /// v_D with its gradient.
    pub v_d: Lin,
    /// X0 with its gradient when fitted (`None` when held fixed).
    pub x0: Option<Lin>,
    /// Chosen correction order L.
    pub order: usize,
    /// X0 held fixed from a theoretical C_n.
    pub x0_fixed: bool,
    /// (L, AICc of an acceptable fit, why rejected) for every order tried.
    pub orders: Vec<(usize, Option<f64>, Option<String>)>,
    /// Scale S of the correction variable.
    pub scale: f64,
}

/// AICc = χ² + 2k + 2k(k+1)/(m − k − 1) (Hurvich & Tsai, Biometrika 76, 297 (1989), from memory).
fn aicc(chi2: f64, k: usize, m: usize) -> Option<f64> {
    (m > k + 1).then(|| {
        let kf = k as f64;
        chi2 + 2.0 * kf + 2.0 * kf * (kf + 1.0) / (m - k - 1) as f64
    })
}

/// Fit orders 0 … [`L_MAX`], choose by AICc among the acceptable fits, and attach gradients.
/// `Err` with the reason when no order gives an acceptable fit.
pub fn fit(input: &LbInput, n: f64, x0_fixed: Option<f64>) -> Result<NdeFit, String> {
    let w = Whitener::from_cov(&input.cov).ok_or("the data covariance is not positive definite")?;
    let (v, e) = (&input.v, &input.e);
    let v_top = v.iter().copied().fold(f64::MIN, f64::max);
    let v_bot = v.iter().copied().fold(f64::MAX, f64::min);
    let scale = v_top - v_bot + 1.0;
    let mut orders = Vec::new();
    let mut best: Option<(f64, usize, NdeProfileFit, DVector<f64>)> = None;
    for l in 0..=L_MAX {
        let design = Design { l, scale, x0_fixed };
        let k = design.k() + 1;
        if v.len() < k + 2 {
            break;
        }
        let Some((f, theta)) = profile_fit(v, e, &w, n, &design) else {
            orders.push((l, None, Some("no minimum of χ² above the top level".into())));
            continue;
        };
        let a = aicc(f.chi2, k, v.len());
        let why = unphysical(&f, n, v_bot, v_top).or_else(|| {
            (f.v_d - v_top >= 0.999 * 1e1 * (v_top - v_bot).max(1.0))
                .then(|| "its limit runs off to the edge of the search range".into())
        });
        if why.is_none()
            && let Some(a) = a
            && best.as_ref().is_none_or(|b| a < b.0)
        {
            best = Some((a, l, f.clone(), theta));
        }
        // A rejected order's AICc is not reported: nothing uses it, and an unphysical fit sits in
        // a flat, many-minima χ² landscape where builds with different math libraries settle on
        // different minima.
        let shown = if why.is_none() { a } else { None };
        orders.push((l, shown, why));
    }
    let Some((_, order, f, theta)) = best else {
        return Err("no order of the expansion gives a physical fit to these levels".into());
    };
    let design = Design {
        l: order,
        scale,
        x0_fixed,
    };
    let (d, v_d, x0) = gradients(input, &w, n, &design, &f, &theta)
        .ok_or("the expansion's parameters are not determined by these levels")?;
    Ok(NdeFit {
        fit: f,
        d,
        v_d,
        x0,
        order,
        x0_fixed: x0_fixed.is_some(),
        orders,
        scale,
    })
}

/// D, v_D and (when fitted) X0 as linear functions of the data: the Gauss–Newton sensitivity at
/// the optimum.
fn gradients(
    input: &LbInput,
    w: &Whitener,
    n: f64,
    design: &Design,
    f: &NdeProfileFit,
    theta: &DVector<f64>,
) -> Option<(Lin, Lin, Option<Lin>)> {
    let m = input.v.len();
    let k = design.k();
    // Jacobian of the model G(v) with respect to (θ_lin, v_D): the linear columns are the
    // design row, ∂G/∂v_D the analytic derivative of the row at fixed θ.
    let mut jac = DMatrix::zeros(m, k + 1);
    let (mut row, mut drow) = (vec![0.0; k], vec![0.0; k]);
    for (i, &vi) in input.v.iter().enumerate() {
        let off = design.row(n, f.v_d, vi, &mut row)?;
        let doff = design.slope_row(n, f.v_d - vi, &row, off, &mut drow);
        for j in 0..k {
            jac[(i, j)] = row[j];
        }
        jac[(i, k)] = (0..k).map(|j| drow[j] * theta[j]).sum::<f64>() - doff;
    }
    // Whitened Jacobian A = W J; sensitivity rows S = (AᵀA)⁻¹ Aᵀ W.
    let mut aw = DMatrix::zeros(m, k + 1);
    let mut buf = vec![0.0; m];
    for j in 0..=k {
        let col: Vec<f64> = jac.column(j).iter().copied().collect();
        w.apply(&col, &mut buf);
        aw.set_column(j, &DVector::from_column_slice(&buf));
    }
    // The pseudo-inverse from the SVD, not (AᵀA)⁻¹Aᵀ: the normal equations would square the
    // condition number of a design with up to ten columns.
    let svd = aw.svd(true, true);
    let cut = 1e-14 * svd.singular_values.max();
    let sens = svd.pseudo_inverse(cut).ok()?; // (k+1) × m, acting on whitened data
    let wmat = whitener_matrix(w);
    let s_e = sens * wmat; // (k+1) × m, acting on E
    let to_y = |r: usize| -> DVector<f64> { input.map.transpose() * s_e.row(r).transpose() };
    let d = Lin {
        value: f.d_cm1,
        grad: to_y(0),
    };
    let v_d = Lin {
        value: f.v_d,
        grad: to_y(k),
    };
    let x0 = design.x0_fixed.is_none().then(|| Lin {
        value: f.x0_cm1,
        grad: to_y(1),
    });
    let finite = |l: &Lin| l.grad.iter().all(|g| g.is_finite());
    (finite(&d) && finite(&v_d) && x0.as_ref().is_none_or(finite)).then_some((d, v_d, x0))
}

/// The whitening operator as a dense matrix.
fn whitener_matrix(w: &Whitener) -> DMatrix<f64> {
    match w {
        Whitener::Diagonal(d) => DMatrix::from_diagonal(&DVector::from_column_slice(d)),
        Whitener::Full(l) => l.clone(),
    }
}

/// Re-runs the expansion on redrawn data at the nominal order, X0 treatment and scale.
#[derive(Debug, Clone)]
pub struct NdeEstimator {
    v: Vec<f64>,
    map: DMatrix<f64>,
    w: Whitener,
    n: f64,
    design: Design,
    v_d: f64,
    e0: Lin,
    zero_point: Lin,
    e: Vec<f64>,
}

impl NdeEstimator {
    /// Prepare from the nominal fit.
    pub fn new(
        input: &LbInput,
        n: f64,
        fit: &NdeFit,
        x0: Option<f64>,
        ctx: &Context,
    ) -> Option<Self> {
        Some(Self {
            v: input.v.clone(),
            map: input.map.clone(),
            w: Whitener::from_cov(&input.cov)?,
            n,
            design: Design {
                l: fit.order,
                scale: fit.scale,
                x0_fixed: x0,
            },
            v_d: fit.fit.v_d,
            e0: ctx.e0.clone(),
            zero_point: ctx.zero_point.clone(),
            e: vec![0.0; input.v.len()],
        })
    }
}

impl Redraw for NdeEstimator {
    fn draw(&mut self, y: &[f64], _dy: &[f64], dy_base: &[f64]) -> DrawValue {
        let yv = DVector::from_column_slice(y);
        let e = &self.map * yv;
        self.e.copy_from_slice(e.as_slice());
        let v_top = self.v.iter().copied().fold(f64::MIN, f64::max);
        let (v, ee, w, n, design) = (&self.v, &self.e, &self.w, self.n, &self.design);
        let prof = |vd: f64| solve_at(v, ee, w, n, design, vd).map(|s| (s.chi2, s.slope));
        // A draw moves v_D by a fraction of its distance to the top level: search a factor 10
        // either side of the nominal gap, from the nominal v_D first (a draw moves it little);
        // the grid when the slope does not change sign on the way.
        let gap = (self.v_d - v_top).max(1e-3);
        let (lo, hi) = (v_top + 0.1 * gap, v_top + 10.0 * gap);
        let vd = nearby_minimum(&prof, self.v_d, v_top, lo, hi)
            .unwrap_or_else(|| profile_minimum(&prof, v_top, 0.1 * gap, 10.0 * gap, 24));
        let Some(Solve { theta, .. }) = solve_at(v, ee, w, n, design, vd) else {
            return DrawValue::Failed;
        };
        let d0 = theta[0] - self.e0.at(dy_base);
        if !d0.is_finite() || d0 <= 0.0 {
            return DrawValue::Failed;
        }
        DrawValue::Value {
            d0,
            de: d0 + self.zero_point.at(dy_base),
            v_d: vd,
        }
    }
}

/// Golden-section minimum of f on [a, b] to a relative width `rel_tol`, one evaluation of f per
/// step (Kiefer 1953, from memory).
fn golden(f: &dyn Fn(f64) -> f64, mut a: f64, mut b: f64, rel_tol: f64) -> f64 {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut c, mut d) = (b - g * (b - a), a + g * (b - a));
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..200 {
        if (b - a).abs() <= rel_tol * b.abs().max(1.0) {
            break;
        }
        if fc < fd {
            (b, d, fd) = (d, c, fc);
            c = b - g * (b - a);
            fc = f(c);
        } else {
            (a, c, fc) = (c, d, fd);
            d = a + g * (b - a);
            fd = f(d);
        }
    }
    0.5 * (a + b)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Pure-tail levels G = D − X0 (v_D − v)^{2n/(n−2)} (LeRoy–Bernstein 1970, from memory).
    fn tail(n: f64, d: f64, v_d: f64, x0: f64) -> (Vec<f64>, Vec<f64>) {
        let v: Vec<f64> = (0..10).map(|i| i as f64).collect();
        let e = v
            .iter()
            .map(|&vi| d - x0 * (v_d - vi).powf(2.0 * n / (n - 2.0)))
            .collect();
        (v, e)
    }

    #[test]
    fn pure_tail_recovered_n4_n6() {
        // SOURCE: closed form of the LeRoy–Bernstein tail (LeRoy & Bernstein 1970, from memory).
        for &(n, d, v_d, x0) in &[(4.0, 5000.0, 14.3, 0.8), (6.0, 3000.0, 12.7, 2.5)] {
            let (v, e) = tail(n, d, v_d, x0);
            let cov = DMatrix::identity(v.len(), v.len());
            let f = fit_profile(&v, &e, &cov, n, 0).expect("fit");
            assert!((f.d_cm1 - d).abs() < 1e-6 * d, "n={n} D {} vs {d}", f.d_cm1);
            assert!((f.v_d - v_d).abs() < 1e-6, "n={n} v_D {} vs {v_d}", f.v_d);
            assert!((f.x0_cm1 - x0).abs() < 1e-5 * x0);
        }
    }

    #[test]
    fn bad_input_is_none_not_panic() {
        let cov = DMatrix::identity(3, 3);
        assert!(fit_profile(&[0.0, 1.0, 2.0], &[0.0, f64::NAN, 2.0], &cov, 6.0, 0).is_none());
        assert!(fit_profile(&[0.0, 1.0], &[0.0, 1.0], &DMatrix::identity(2, 2), 6.0, 0).is_none());
    }

    #[test]
    fn one_term_numerator_recovered() {
        // SOURCE: levels built from the model's own closed form G = D − X0 x^{2n/(n−2)}(1 + p1 x),
        // x = v_D − v (outer form of the near-dissociation expansion, common practice, no source).
        let (n, d, v_d, x0, p1) = (6.0, 3000.0, 12.7, 2.5, 0.02);
        let v: Vec<f64> = (0..10).map(|i| i as f64).collect();
        let e: Vec<f64> = v
            .iter()
            .map(|&vi| d - x0 * (v_d - vi).powf(3.0) * (1.0 + p1 * (v_d - vi)))
            .collect();
        let f = fit_profile(&v, &e, &DMatrix::identity(10, 10), n, 1).expect("fit");
        assert!((f.d_cm1 - d).abs() < 1e-5 * d, "D {}", f.d_cm1);
        assert!((f.v_d - v_d).abs() < 1e-5, "v_D {}", f.v_d);
        assert!((f.p[0] - p1).abs() < 1e-5, "p1 {}", f.p[0]);
    }

    #[test]
    fn profile_slope_is_the_derivative_of_the_profile() {
        // SOURCE: a central difference of the profiled χ² itself (the slope is computed
        // analytically by the envelope theorem, so the two are independent routes).
        let (n, d, v_d, x0, p1) = (6.0, 3000.0, 12.7, 2.5, 0.02);
        let v: Vec<f64> = (0..10).map(|i| i as f64).collect();
        // Levels off the model (a wiggle), so the residuals and the slope are not zero.
        let e: Vec<f64> = v
            .iter()
            .map(|&vi| d - x0 * (v_d - vi).powf(3.0) * (1.0 + p1 * (v_d - vi)) + (vi * 1.7).sin())
            .collect();
        let w = Whitener::from_cov(&DMatrix::identity(10, 10)).expect("whitener");
        for x0_fixed in [None, Some(2.4)] {
            let design = Design {
                l: 2,
                scale: 10.0,
                x0_fixed,
            };
            for vd in [9.5, 12.0, 14.0, 20.0] {
                let s = solve_at(&v, &e, &w, n, &design, vd).expect("solve");
                let h = 1e-5;
                let fp = solve_at(&v, &e, &w, n, &design, vd + h)
                    .expect("solve")
                    .chi2;
                let fm = solve_at(&v, &e, &w, n, &design, vd - h)
                    .expect("solve")
                    .chi2;
                let fd = (fp - fm) / (2.0 * h);
                assert!(
                    (s.slope - fd).abs() <= 1e-5 * fd.abs().max(1.0),
                    "v_D {vd}: slope {} vs difference {fd}",
                    s.slope
                );
            }
        }
    }

    #[test]
    fn slope_root_finds_a_known_zero() {
        // SOURCE: the closed form χ²(x) = (x − √2)², slope 2(x − √2), zero at √2.
        let prof = |x: f64| Some(((x - 2f64.sqrt()).powi(2), 2.0 * (x - 2f64.sqrt())));
        let r = slope_root(&prof, 0.0, 5.0).expect("bracketed");
        assert!((r - 2f64.sqrt()).abs() < 1e-13, "{r}");
        assert!(
            slope_root(&prof, 2.0, 5.0).is_none(),
            "no sign change, no root"
        );
        let near = nearby_minimum(&prof, 3.0, 0.0, 0.1, 30.0).expect("found downhill");
        assert!((near - 2f64.sqrt()).abs() < 1e-13, "{near}");
    }
}
