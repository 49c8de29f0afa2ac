//! Stage 3 of the analysis: every extrapolation to the dissociation limit is one [`Estimator`],
//! and one runner ([`run_all`]) fits them all on the nominal data.
//!
//! An estimator says what it is (`method`, `label`, `family`), what it rests on
//! ([`Estimator::assumption`], in words), and what its number is ([`Estimator::what`]); its
//! [`Estimator::fit`] returns a [`Fitted`]: the nominal limit with gradients for σ, its own
//! diagnostics (the fit's χ² and convergence, fitted parameters, curves for the figures) and a
//! [`Redraw`] that refits it on each Monte Carlo draw of the data with its choices held fixed.
//!
//! To add a method: write a module here with a type implementing [`Estimator`] and an
//! `instances(&Prepared, &mut warnings)` function returning the instances the settings call for,
//! then add its one line to [`registry`]. The Monte Carlo, the assessment and the report treat
//! every estimator alike.

mod birge_sponer;
mod expansion;
mod leroy_bernstein;
mod observed_sum;
mod potential_fit;

use nalgebra::DMatrix;

use super::prepare::Prepared;
use crate::extrapolate::{Lin, Nominal, Redraw};
use crate::montecarlo::McResult;
use crate::recommend::{Family, FitEvidence};
use crate::report::{
    BsDetails, Curve, ExpansionDetails, LbDetails, PotentialFitDetails, ValueSigma,
};

/// One extrapolation method (one instance per choice of its settings).
pub(super) trait Estimator {
    /// Its name in the document (`birge-sponer-linear`, …).
    fn method(&self) -> &'static str;
    /// A readable label.
    fn label(&self) -> String;
    /// Its family, for the recommendation.
    fn family(&self) -> Family;
    /// The assumption the estimate rests on, in words (`None`: nothing beyond the data).
    fn assumption(&self, p: &Prepared) -> Option<String>;
    /// What the number is, in words (the estimate's reason when it gives a limit).
    fn what(&self, p: &Prepared) -> String;
    /// Fit on the nominal data.
    fn fit(&self, p: &Prepared, warnings: &mut Vec<String>) -> Fitted;
}

/// An estimator's outcome on the nominal data.
pub(super) struct Fitted {
    /// Polynomial order, or the correction order of an expansion.
    pub order: Option<usize>,
    /// The limit with gradients, or why there is none.
    pub nominal: Nominal,
    /// Birge–Sponer details.
    pub bs: Option<BsDetails>,
    /// LeRoy–Bernstein details.
    pub lb: Option<LbDetails>,
    /// Near-dissociation expansion details.
    pub expansion: Option<ExpansionDetails>,
    /// Direct potential fit details.
    pub potential_fit: Option<PotentialFitDetails>,
    /// Refits the estimate on a Monte Carlo draw.
    pub redraw: Option<Box<dyn Redraw>>,
    /// Its ΔG curve for the figure.
    pub curve: Option<Curve>,
    /// Its G(v) curve for the figure.
    pub level_curve: Option<Curve>,
    /// (n, X0, v_D, first level v) of a LeRoy–Bernstein fit, for the linearised figure.
    pub lb_line: Option<(f64, f64, f64, f64)>,
    /// The estimate's own fit (χ², dof, convergence) as evidence for the recommendation.
    pub own_fit: Option<FitEvidence>,
    /// Fitted n (n-free fits).
    pub n_fitted: Option<f64>,
    /// Fitted C_n (fits with C_n free and μ known).
    pub cn_fitted: Option<f64>,
    /// χ²_ν of the estimate's own fit, which sets its σ scaling; `None` without a fit of its own.
    pub own_chi2r: Option<f64>,
    /// The nominal limit's gradients already carry each part's σ factor, so the estimate-wide
    /// factor is not applied to them again.
    pub prescaled: bool,
}

impl Fitted {
    /// No limit, for the reason given.
    pub fn no_limit(reason: impl Into<String>) -> Self {
        Fitted {
            order: None,
            nominal: Nominal::NoLimit(reason.into()),
            bs: None,
            lb: None,
            expansion: None,
            potential_fit: None,
            redraw: None,
            curve: None,
            level_curve: None,
            lb_line: None,
            own_fit: None,
            n_fitted: None,
            cn_fitted: None,
            own_chi2r: None,
            prescaled: false,
        }
    }
}

/// An estimator's identity and outcome as the later stages see it.
pub(super) struct Work {
    /// Its name in the document.
    pub method: &'static str,
    /// A readable label.
    pub label: String,
    /// Its family.
    pub family: Family,
    /// What the number is.
    pub what: String,
    /// What it rests on.
    pub assumption: Option<String>,
    /// The outcome on the nominal data.
    pub fit: Fitted,
    /// Its Monte Carlo distribution, once run.
    pub mc: Option<McResult>,
}

/// Every estimator the data and settings call for, in the order the report lists them.
fn registry(p: &Prepared, warnings: &mut Vec<String>) -> Vec<Box<dyn Estimator>> {
    let mut all: Vec<Box<dyn Estimator>> = Vec::new();
    all.extend(observed_sum::instances(p, warnings));
    all.extend(birge_sponer::instances(p, warnings));
    all.extend(leroy_bernstein::instances(p, warnings));
    all.extend(expansion::instances(p, warnings));
    all.extend(potential_fit::instances(p, warnings));
    all
}

/// Fit every registered estimator on the nominal data.
pub(super) fn run_all(p: &Prepared, warnings: &mut Vec<String>) -> Vec<Work> {
    registry(p, warnings)
        .into_iter()
        .map(|e| Work {
            method: e.method(),
            label: e.label(),
            family: e.family(),
            what: e.what(p),
            assumption: e.assumption(p),
            fit: e.fit(p, warnings),
            mc: None,
        })
        .collect()
}

/// A value with its σ from the covariance (null when σ are not estimable).
pub(super) fn vs(x: &Lin, cov: Option<&DMatrix<f64>>) -> ValueSigma {
    ValueSigma::new(x.value, cov.map(|c| x.sigma(c)))
}

/// n samples of f on [a, b] (non-finite values dropped), for the figures.
pub(super) fn sample(a: f64, b: f64, n: usize, f: impl Fn(f64) -> f64) -> Vec<[f64; 2]> {
    (0..n)
        .map(|i| {
            let x = a + (b - a) * i as f64 / (n - 1) as f64;
            [x, f(x)]
        })
        .filter(|p| p[1].is_finite())
        .collect()
}
