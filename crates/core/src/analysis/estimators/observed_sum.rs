//! The observed sum of spacings, G(v_top) − G(0): a lower bound to D0 for a correct assignment,
//! linear in the data and so exact under Monte Carlo redraws.

use super::{Estimator, Fitted};
use crate::analysis::prepare::Prepared;
use crate::extrapolate::{Limit, LinearEstimator, Nominal};
use crate::recommend::Family;

/// G(v_top) − G(0) with no extrapolation.
pub(super) struct ObservedSum;

/// The observed sum needs levels: none across a gap in the spacings.
pub(super) fn instances(p: &Prepared, _warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    if p.top_x.is_some() {
        vec![Box::new(ObservedSum)]
    } else {
        Vec::new()
    }
}

impl Estimator for ObservedSum {
    fn method(&self) -> &'static str {
        "observed-sum"
    }

    fn label(&self) -> String {
        "Observed sum of spacings (lower bound)".into()
    }

    fn family(&self) -> Family {
        Family::ObservedSum
    }

    fn assumption(&self, _p: &Prepared) -> Option<String> {
        None
    }

    fn what(&self, p: &Prepared) -> String {
        if p.ctx.e0_observed {
            "G(v_top) − G(0): the telescoped sum of observed spacings, a lower bound to D0 (no extrapolation; σ from the two end levels and their correlation)".into()
        } else {
            "G(v_top) − G(0) with G(0) from the polynomial below the lowest level: a lower bound to D0 up to that extrapolation".into()
        }
    }

    fn fit(&self, p: &Prepared, _warnings: &mut Vec<String>) -> Fitted {
        let Some(top) = &p.top_x else {
            return Fitted::no_limit("no levels can be rebuilt from spacings with a gap");
        };
        let d0 = top.minus(&p.e0_x);
        let de = d0.plus(&p.ctx.zero_point);
        Fitted {
            nominal: Nominal::Limit(Limit {
                d0: d0.clone(),
                de: de.clone(),
                v_d: None,
            }),
            redraw: Some(Box::new(LinearEstimator { d0, de })),
            prescaled: true,
            ..Fitted::no_limit("")
        }
    }
}
