//! The near-dissociation expansion fitted to all levels: the long-range form of the top levels
//! times a polynomial correction in x = v_D − v, its order chosen by AICc; X0 free, and X0 fixed
//! from a given C_n.

use super::{Estimator, Fitted, sample, vs};
use crate::analysis::prepare::Prepared;
use crate::extrapolate::near_dissociation as nd;
use crate::extrapolate::{Context, Limit, Lin, Nominal, Redraw, nde};
use crate::recommend::{Family, FitEvidence};
use crate::report::{Curve, ExpansionDetails, ExpansionOrder, ValueSigma};

/// The expansion with X0 free, or fixed from a given C_n.
pub(super) struct Expansion {
    method: &'static str,
    label: String,
    n: f64,
    x0_fixed: Option<f64>,
}

/// X0 free always (when levels can be rebuilt); X0 from C_n when a C_n and μ are given.
pub(super) fn instances(p: &Prepared, _warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    let Some(w) = &p.view else {
        return Vec::new();
    };
    if w.v.is_empty() {
        return Vec::new();
    }
    let n = p.settings.lb_n;
    let mut all: Vec<Box<dyn Estimator>> = vec![Box::new(Expansion {
        method: "near-dissociation-expansion",
        label: format!("near-dissociation expansion, n = {n}, all levels"),
        n,
        x0_fixed: None,
    })];
    if let Some((cn, mu)) = p.settings.lb_cn_cm1_an.zip(p.mu_u) {
        all.push(Box::new(Expansion {
            method: "near-dissociation-expansion-cn-fixed",
            label: format!(
                "near-dissociation expansion, n = {n} and C_n = {cn} cm⁻¹Åⁿ fixed, all levels"
            ),
            n,
            x0_fixed: Some(nd::x0_from_cn(n, cn, mu)),
        }));
    }
    all
}

impl Estimator for Expansion {
    fn method(&self) -> &'static str {
        self.method
    }

    fn label(&self) -> String {
        self.label.clone()
    }

    fn family(&self) -> Family {
        Family::Expansion
    }

    fn assumption(&self, _p: &Prepared) -> Option<String> {
        Some(format!(
            "the near-dissociation expansion assumes all levels lie on one curve that approaches the limit as the long-range form D − C_n/Rⁿ with n = {} dictates, the lower levels departing from it by a polynomial in v_D − v",
            self.n
        ))
    }

    fn what(&self, _p: &Prepared) -> String {
        "D0 = D − G(0) with D the asymptote of the near-dissociation expansion fitted to all levels; σ from its Gauss–Newton sensitivity".into()
    }

    fn fit(&self, p: &Prepared, _warnings: &mut Vec<String>) -> Fitted {
        let failed = |reason: String| Fitted {
            prescaled: true,
            ..Fitted::no_limit(reason)
        };
        let Some(view) = &p.view else {
            return failed("no levels can be rebuilt from spacings with a gap".into());
        };
        let Some(input) = nd::top_input(view, view.v.len(), &p.data.cov) else {
            return failed("no levels".into());
        };
        // A limit needs spacings that shrink: per unit of v, the top spacing must be smaller than
        // the first (levels with constant or growing spacings have no limit in this model).
        let (v, e) = (&view.v, &view.e);
        let m = v.len();
        let shrinking = m >= 3 && {
            let first = (e[1] - e[0]) / (v[1] - v[0]);
            let top = (e[m - 1] - e[m - 2]) / (v[m - 1] - v[m - 2]);
            top < first
        };
        if !shrinking {
            return failed("the spacings do not shrink toward the top, so there is no dissociation limit within this model".into());
        }
        let f = match nde::fit(&input, self.n, self.x0_fixed) {
            Ok(f) => f,
            Err(why) => return failed(why),
        };
        let own_chi2r = (f.fit.dof > 0).then(|| f.fit.chi2 / f.fit.dof as f64);
        let rel = p.rel_of(p.policy(own_chi2r.unwrap_or(1.0)));
        let d0 = f.d.grad_scaled(rel).minus(&p.e0_x);
        let nominal = if d0.value > 0.0 {
            Nominal::Limit(Limit {
                de: d0.plus(&p.ctx.zero_point),
                d0,
                v_d: Some(f.v_d.grad_scaled(rel)),
            })
        } else {
            Nominal::NoLimit("the expansion's asymptote lies below the energy of v = 0".into())
        };
        let ctx_x = Context {
            e0: p.e0_x.clone(),
            ..p.ctx.clone()
        };
        let redraw = nde::NdeEstimator::new(&input, self.n, &f, self.x0_fixed, &ctx_x)
            .map(|e| Box::new(e) as Box<dyn Redraw>);
        let (d, vd, x0v, coeffs, n) = (
            f.fit.d_cm1,
            f.fit.v_d,
            f.fit.x0_cm1,
            f.fit.p.clone(),
            self.n,
        );
        let g = move |v: f64| {
            let x = vd - v;
            let corr = 1.0 + coeffs.iter().rev().fold(0.0, |acc, c| (acc + c) * x);
            d - x0v * x.powf(nd::exponent(n)) * corr
        };
        let first = input.v[0];
        let curve = |points| Curve {
            method: self.method.into(),
            label: self.label.clone(),
            points,
            v_d: Some(vd),
        };
        Fitted {
            order: Some(f.order),
            nominal,
            expansion: Some(details(p, self.n, &f, rel)),
            redraw,
            level_curve: Some(curve(sample(first, vd, 101, &g))),
            curve: Some(curve(sample(
                first + 0.5,
                (vd - 0.5).max(first + 0.5),
                101,
                |x| g(x + 0.5) - g(x - 0.5),
            ))),
            own_fit: Some(FitEvidence {
                chi2: f.fit.chi2,
                dof: f.fit.dof,
                points: input.v.len(),
                converged: true,
            }),
            own_chi2r,
            prescaled: true,
            ..Fitted::no_limit("")
        }
    }
}

/// The expansion's parameters with σ (scaled by the fit's own χ²_ν as its D0 is) and the orders
/// tried. C_n ∝ X0^{−(n−2)/2} (inverting X0 of LeRoy & Bernstein 1970, from memory), so its
/// relative σ is (n − 2)/2 times that of X0.
fn details(p: &Prepared, n: f64, f: &nde::NdeFit, rel: f64) -> ExpansionDetails {
    let cov = p.cov_opt();
    let sig = |l: &Lin| vs(&l.grad_scaled(rel), cov);
    let x0 =
        f.x0.as_ref()
            .map_or(ValueSigma::new(f.fit.x0_cm1, None), sig);
    let cn = p.mu_u.filter(|_| f.fit.x0_cm1 > 0.0).map(|mu| {
        let c = nd::cn_from_x0(n, f.fit.x0_cm1, mu);
        let rel_x0 = x0.sigma.map(|sx| sx / f.fit.x0_cm1);
        ValueSigma::new(c, rel_x0.map(|r| 0.5 * (n - 2.0) * r * c))
    });
    let au = nd::cn_to_atomic_units(n, 1.0);
    ExpansionDetails {
        n,
        cn_fixed: f.x0_fixed,
        order: f.order,
        d_cm1: sig(&f.d),
        v_d: sig(&f.v_d),
        x0_cm1: x0,
        cn_au: cn
            .as_ref()
            .map(|c| ValueSigma::new(c.value * au, c.sigma.map(|x| x * au))),
        cn_cm1_an: cn,
        p: f.fit.p.clone(),
        chi2: f.fit.chi2,
        dof: f.fit.dof,
        orders: f
            .orders
            .iter()
            .map(|(order, aicc, why)| ExpansionOrder {
                order: *order,
                aicc: *aicc,
                rejected: why.clone(),
            })
            .collect(),
    }
}
