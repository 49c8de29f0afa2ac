//! Birge–Sponer extrapolations: the fitted polynomial G(v) continued to dG/dv = 0 (v_D), with
//! D0 = G(v_D) − G(0) — linear (order-2 G(v), a straight ΔG line) and curved (the selected order,
//! at least 3).

use super::{Estimator, Fitted, sample, vs};
use crate::analysis::prepare::Prepared;
use crate::extrapolate::polynomial::{self as poly, PolyMethod};
use crate::extrapolate::{Nominal, Redraw};
use crate::recommend::{Family, FitEvidence};
use crate::report::{BsDetails, Curve};

/// A polynomial G(v) of one order, extrapolated to its maximum.
pub(super) struct BirgeSponer {
    method: &'static str,
    label: String,
    family: Family,
    order: usize,
    form: PolyMethod,
}

/// The linear extrapolation, and the curved one at the selected order (at least 3).
pub(super) fn instances(p: &Prepared, _warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    let k_sel = p.k_sel;
    let k_c = k_sel.max(3);
    let curved_label = if k_sel >= 3 {
        format!("Curved Birge–Sponer (order-{k_c} G(v), the selected order)")
    } else {
        format!("Curved Birge–Sponer (order-{k_c} G(v); curvature not selected by the data)")
    };
    vec![
        Box::new(BirgeSponer {
            method: "birge-sponer-linear",
            label: "Linear Birge–Sponer (order-2 G(v))".into(),
            family: Family::LinearBs,
            order: 2,
            form: PolyMethod::Linear,
        }),
        Box::new(BirgeSponer {
            method: "birge-sponer-curved",
            label: curved_label,
            family: Family::CurvedBs {
                significant: k_sel >= 3,
            },
            order: k_c,
            form: PolyMethod::Curved,
        }),
    ]
}

impl Estimator for BirgeSponer {
    fn method(&self) -> &'static str {
        self.method
    }

    fn label(&self) -> String {
        self.label.clone()
    }

    fn family(&self) -> Family {
        self.family
    }

    fn assumption(&self, _p: &Prepared) -> Option<String> {
        Some("each polynomial extrapolation assumes G(v) keeps the fitted polynomial form up to the limit".into())
    }

    fn what(&self, _p: &Prepared) -> String {
        "v_D from dG/dv = 0 of the fitted G(v); D0 = G(v_D) − G(0); σ by the envelope theorem"
            .into()
    }

    fn fit(&self, p: &Prepared, _warnings: &mut Vec<String>) -> Fitted {
        let (k, n) = (self.order, p.n());
        let need = p.data.n_params(k);
        let failed = |reason: String| Fitted {
            order: Some(k),
            ..Fitted::no_limit(reason)
        };
        if n < need {
            return failed(format!(
                "an order-{k} fit needs at least {need} data points; {n} given"
            ));
        }
        let fit = match p.fit_of_order(k) {
            Ok(f) => f,
            Err(e) => return failed(format!("the order-{k} fit failed: {e}")),
        };
        let (pe, est) = poly::extrapolate(
            &fit,
            self.form,
            &p.ctx,
            &p.cov_eff,
            p.settings.curved_max_extrapolation,
        );
        let v_d = match &pe.nominal {
            Nominal::Limit(l) => l.v_d.as_ref().map(|x| x.value),
            _ => None,
        };
        let (v_bottom, v_top) = (p.ctx.v_bottom, p.ctx.v_top);
        let x_end = v_d.unwrap_or(v_top + 0.5 + 0.2 * (v_top - v_bottom).max(1.0));
        let b = fit.basis;
        let a = fit.coeffs.clone();
        let points = sample(0.0, x_end, 101, |x| {
            b.eval(&a, x + 0.5).0 - b.eval(&a, x - 0.5).0
        });
        let cov_opt = p.cov_opt();
        let bs = Some(BsDetails {
            line_intercept_cm1: pe.line.as_ref().map(|l| vs(&l.intercept, cov_opt)),
            line_slope_cm1: pe.line.as_ref().map(|l| vs(&l.slope, cov_opt)),
            x_intercept: pe.line.as_ref().and(v_d),
            area_cm1: match (&pe.line, &pe.nominal) {
                (Some(l), Nominal::Limit(_)) => {
                    Some(l.intercept.value.powi(2) / (2.0 * l.slope.value))
                }
                _ => None,
            },
            refused_root_v: pe.refused_root_v,
        });
        Fitted {
            order: Some(k),
            nominal: pe.nominal,
            bs,
            redraw: v_d.is_some().then(|| Box::new(est) as Box<dyn Redraw>),
            curve: Some(Curve {
                method: self.method.into(),
                label: self.label.clone(),
                points,
                v_d,
            }),
            own_fit: Some(FitEvidence {
                chi2: fit.lsq.chi2,
                dof: fit.lsq.dof(),
                points: fit.lsq.n_points,
                converged: true,
            }),
            own_chi2r: fit.chi2_reduced(),
            ..Fitted::no_limit("")
        }
    }
}
