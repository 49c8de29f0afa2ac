//! Band positions ν(v′, v″) of one band system: from band lists to both states' levels,
//! constants and dissociation limits, with the numbering check and isotopologue scaling.
//!
//! [`analyze_bands`] runs the whole chain (domain.md §1.2–1.4, §1.7, §1.11):
//! 1. validate the bands, group them by isotopologue tag and resolve the tags' masses
//!    ([`isotopes`]); pick the reference isotopologue (the one with the most bands unless the
//!    settings name it);
//! 2. band heads: correct them to origins when B′, B″ are given, else widen σ ([`heads`]);
//! 3. per isotopologue, the Deslandres array with its difference chains and flagged cells
//!    ([`mod@array`]) and the model-free term-value fit ([`terms`]);
//! 4. the Dunham-constrained global fit of all isotopologues with mass-scaled constants, its
//!    order pair chosen by nested F-tests ([`global`]), giving T00, Te and both states' constants;
//! 5. the numbering check over upper-state offsets −3 … +3 ([`numbering`]);
//! 6. each state's term values, with their covariance, through the single-state analysis
//!    ([`crate::analyze_levels`]) — D0 estimates for both states;
//! 7. the upper state's convergence limit T00 + D0′ and, given the atomic excitation energy,
//!    the lower state's D0″ = T00 + D0′ − E_atom;
//! 8. predictions for isotopologues named in the settings.
//!
//! The result is a [`BandReport`] (format `rungs-band-analysis`), rendered for people by
//! [`render_band_text`].

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

pub mod array;
pub mod global;
pub mod heads;
pub mod isotopes;
pub mod numbering;
pub mod report;
pub mod terms;

use nalgebra::DMatrix;
use serde::{Deserialize, Serialize};

use crate::analysis::{analyze_levels_with_progress, check_settings};
use crate::constants::CODATA_YEAR;
use crate::data::{Band, Level};
use crate::extrapolate::Lin;
use crate::intake::BandPositions;
use crate::report::{Constant, Constants, DunhamCoefficient, PlotPoint, Report, ValueSigma};
use crate::settings::{AnalysisSettings, SigmaScaling};
use crate::sorting::sort;
use crate::{Error, Result};

use global::{GlobalBand, GlobalFit};
use heads::HeadOffset;
use report::*;

pub use report::{BandReport, render_band_text};

/// A band as the fits use it: the head corrected to the origin when asked, σ as used.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PreparedBand {
    /// v′.
    pub v_upper: u32,
    /// v″.
    pub v_lower: u32,
    /// Origin used by the fits, cm⁻¹.
    pub position_cm1: f64,
    /// Position as given, cm⁻¹.
    pub observed_cm1: f64,
    /// σ as used, cm⁻¹.
    pub sigma_cm1: Option<f64>,
    /// Head correction applied.
    pub head: Option<HeadOffset>,
}

struct Group {
    tag: Option<String>,
    input: Vec<usize>,
    a: Option<String>,
    b: Option<String>,
    mu_u: Option<f64>,
    mass_from: Option<&'static str>,
    mass_problem: Option<String>,
    rho: Option<f64>,
    in_joint: bool,
    prepared: Vec<PreparedBand>,
}

/// Analyses a band list (see the module documentation). `mu_u` is the molecule's reduced mass
/// from the settings (used for untagged rows, and for the reference when its tag names no atoms).
pub fn analyze_bands(
    bands: &[Band],
    positions: BandPositions,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
) -> Result<BandReport> {
    analyze_bands_with_progress(bands, positions, mu_u, settings, &mut |_, _| {})
}

fn check_band_settings(s: &AnalysisSettings, mu_u: Option<f64>) -> Result<()> {
    check_settings(s, mu_u)?;
    let b = &s.bands;
    if !(b.head_sigma_cm1.is_finite() && b.head_sigma_cm1 >= 0.0) {
        return Err(Error::parameter(
            "bands.head_sigma_cm1",
            "must be a number ≥ 0",
        ));
    }
    if let Some(e) = b.atomic_excitation_cm1
        && !(e.is_finite() && e >= 0.0)
    {
        return Err(Error::parameter(
            "bands.atomic_excitation_cm1",
            "must be a number ≥ 0 (cm⁻¹)",
        ));
    }
    if let Some(r) = &b.rotation {
        for (name, st) in [("upper", &r.upper), ("lower", &r.lower)] {
            if !(st.be_cm1.is_finite() && st.be_cm1 > 0.0 && st.be_cm1 <= 100.0) {
                return Err(Error::parameter(
                    format!("bands.rotation.{name}.be_cm1"),
                    "Be must lie in (0, 100] cm⁻¹",
                ));
            }
            if !st.alpha_e_cm1.is_finite() {
                return Err(Error::parameter(
                    format!("bands.rotation.{name}.alpha_e_cm1"),
                    "αe must be a finite number",
                ));
            }
        }
    }
    for (name, o) in [
        ("bands.upper_order", b.upper_order),
        ("bands.lower_order", b.lower_order),
    ] {
        if let Some(o) = o
            && o as usize > crate::dunham::MAX_SUPPORTED_ORDER
        {
            return Err(Error::parameter(
                name,
                format!("{o} is above {}", crate::dunham::MAX_SUPPORTED_ORDER),
            ));
        }
    }
    Ok(())
}

fn tag_name(t: &Option<String>) -> String {
    t.as_deref()
        .map(|t| format!("'{t}'"))
        .unwrap_or("(untagged)".into())
}

/// Most bands one analysis takes (the fits are dense; far larger lists would stall the page).
pub const MAX_BANDS: usize = 5000;
/// Most distinct levels (v′ and v″ together) in one isotopologue's term-value fit.
pub const MAX_LEVELS: usize = 300;

fn validate(bands: &[Band]) -> Result<()> {
    if bands.len() > MAX_BANDS {
        return Err(Error::Input {
            message: format!(
                "{} bands: a band analysis takes at most {MAX_BANDS}",
                bands.len()
            ),
        });
    }
    let mut levels: Vec<(Option<&str>, bool, u32)> = bands
        .iter()
        .flat_map(|b| {
            let t = b.isotopologue.as_deref();
            [(t, true, b.v_upper), (t, false, b.v_lower)]
        })
        .collect();
    sort(&mut levels);
    levels.dedup();
    let mut per_tag: Vec<(Option<&str>, usize)> = Vec::new();
    for (t, _, _) in &levels {
        match per_tag.iter_mut().find(|x| x.0 == *t) {
            Some(x) => x.1 += 1,
            None => per_tag.push((*t, 1)),
        }
    }
    if let Some((t, n)) = per_tag.iter().find(|x| x.1 > MAX_LEVELS) {
        return Err(Error::Input {
            message: format!(
                "isotopologue {}: {n} distinct levels in the bands; a band analysis takes at most {MAX_LEVELS}",
                tag_name(&t.map(str::to_string))
            ),
        });
    }
    if bands.len() < crate::intake::MIN_BANDS {
        return Err(Error::TooFewPoints {
            what: "a band analysis".into(),
            have: bands.len(),
            need: crate::intake::MIN_BANDS,
        });
    }
    let given = bands.iter().filter(|b| b.sigma_cm1.is_some()).count();
    for b in bands {
        let at = format!("v′ = {}, v″ = {}", b.v_upper, b.v_lower);
        if !b.position_cm1.is_finite() {
            return Err(Error::parameter(
                "bands",
                format!("{at}: position is not a finite number"),
            ));
        }
        match b.sigma_cm1 {
            Some(s) if !(s.is_finite() && s > 0.0) => {
                return Err(Error::parameter(
                    "sigma",
                    format!("{at}: uncertainty {s} must be a positive number"),
                ));
            }
            None if given > 0 => {
                return Err(Error::parameter(
                    "sigma",
                    format!(
                        "{at} has no uncertainty while other bands do: give σ for all bands or for none"
                    ),
                ));
            }
            _ => {}
        }
    }
    let mut keys: Vec<(Option<&str>, u32, u32)> = bands
        .iter()
        .map(|b| (b.isotopologue.as_deref(), b.v_upper, b.v_lower))
        .collect();
    sort(&mut keys);
    for w in keys.windows(2) {
        if w[0] == w[1] {
            return Err(Error::parameter(
                "bands",
                format!(
                    "v′ = {}, v″ = {} appears more than once for isotopologue {}",
                    w[0].1,
                    w[0].2,
                    tag_name(&w[0].0.map(str::to_string))
                ),
            ));
        }
    }
    Ok(())
}

fn policy_name(p: SigmaScaling) -> &'static str {
    match p {
        SigmaScaling::Never => "never scale",
        SigmaScaling::WhenAboveOne => "scale when χ²_ν > 1",
        SigmaScaling::Always => "always scale",
    }
}

/// Constants of one state from Y (with unscaled covariance) and the zero point.
fn constants_of(
    y: &[f64],
    cov_y: &DMatrix<f64>,
    zero_point: ValueSigma,
    f2: Option<f64>,
    chi2r: Option<f64>,
    sigma_known: bool,
) -> Option<Constants> {
    let k = y.len();
    if k == 0 {
        return None;
    }
    let constant = |i: usize, sign: f64| -> Constant {
        let c = cov_y[(i, i)].max(0.0);
        Constant {
            value: sign * y[i],
            sigma: f2.map(|f| (c * f).sqrt()),
            sigma_unscaled: sigma_known.then(|| c.sqrt()),
            sigma_scaled: chi2r.map(|x| (c * x).sqrt()),
        }
    };
    Some(Constants {
        order: k,
        we_cm1: Some(constant(0, 1.0)),
        wexe_cm1: (k >= 2).then(|| constant(1, -1.0)),
        weye_cm1: (k >= 3).then(|| constant(2, 1.0)),
        weze_cm1: (k >= 4).then(|| constant(3, 1.0)),
        dunham: (0..k)
            .map(|i| DunhamCoefficient {
                name: format!("Y{}0", i + 1),
                k: i + 1,
                constant: constant(i, 1.0),
            })
            .collect(),
        zero_point_cm1: zero_point,
        correlation: (0..k)
            .map(|i| {
                (0..k)
                    .map(|j| {
                        let d = (cov_y[(i, i)] * cov_y[(j, j)]).sqrt();
                        if d > 0.0 { cov_y[(i, j)] / d } else { 0.0 }
                    })
                    .collect()
            })
            .collect(),
    })
}

fn vs(x: &Lin, cov_eff: Option<&DMatrix<f64>>) -> ValueSigma {
    ValueSigma::new(x.value, cov_eff.map(|c| x.sigma(c)))
}

/// Constants of one state for an isotopologue with factor ρ (Y_k ρ^k), σ from the fit.
fn scaled_constants(
    fit: &GlobalFit,
    upper: bool,
    rho: f64,
    f2: Option<f64>,
    chi2r: Option<f64>,
) -> Option<Constants> {
    let mut jac = fit.dunham_jacobian(upper);
    let k = jac.nrows();
    if k == 0 {
        return None;
    }
    for i in 0..k {
        jac.row_mut(i).scale_mut(rho.powi(i as i32 + 1));
    }
    let p = DMatrix::from_column_slice(fit.n_params(), 1, &fit.lsq.params);
    let y: Vec<f64> = (&jac * p).iter().copied().collect();
    let c = fit.covariance();
    let cov_y = &jac * &c * jac.transpose();
    let cov_eff = f2.map(|f| &c * f);
    let zp = vs(&fit.zero_point(upper, rho), cov_eff.as_ref());
    constants_of(&y, &cov_y, zp, f2, chi2r, fit.sigma_known)
}

/// [`analyze_bands`], calling `progress(done, total)` as the Monte Carlo draws of the two
/// single-state analyses advance.
pub fn analyze_bands_with_progress(
    bands: &[Band],
    positions: BandPositions,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    progress: &mut dyn FnMut(usize, usize),
) -> Result<BandReport> {
    check_band_settings(settings, mu_u)?;
    validate(bands)?;
    let bs = &settings.bands;
    let policy = settings.sigma_scaling;
    let threshold = settings.outlier_threshold;
    let sigma_given = bands.iter().all(|b| b.sigma_cm1.is_some());
    let mut warnings: Vec<String> = Vec::new();
    if settings.order.is_some() {
        warnings.push("the forced G(v) order does not apply to band lists: force the upper- and lower-state orders instead (--upper-order and --lower-order on the command line)".into());
    }

    // 1. Groups, masses, reference.
    let mut groups: Vec<Group> = Vec::new();
    for (i, b) in bands.iter().enumerate() {
        match groups.iter_mut().find(|g| g.tag == b.isotopologue) {
            Some(g) => g.input.push(i),
            None => groups.push(Group {
                tag: b.isotopologue.clone(),
                input: vec![i],
                a: None,
                b: None,
                mu_u: None,
                mass_from: None,
                mass_problem: None,
                rho: None,
                in_joint: false,
                prepared: Vec::new(),
            }),
        }
    }
    let reference = match &bs.reference {
        Some(t) => groups
            .iter()
            .position(|g| g.tag.as_deref() == Some(t.trim()))
            .ok_or_else(|| {
                Error::parameter(
                    "bands.reference",
                    format!(
                        "no isotopologue '{t}' in the data (tags: {})",
                        groups
                            .iter()
                            .map(|g| tag_name(&g.tag))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                )
            })?,
        None => {
            let mut best = 0;
            for (i, g) in groups.iter().enumerate() {
                if g.input.len() > groups[best].input.len() {
                    best = i;
                }
            }
            best
        }
    };
    for (gi, g) in groups.iter_mut().enumerate() {
        match &g.tag {
            Some(t) => match isotopes::resolve(t, &bs.isotopologues) {
                Ok(r) => {
                    g.a = Some(r.a);
                    g.b = Some(r.b);
                    g.mu_u = Some(r.mu_u);
                    g.mass_from = Some(r.from);
                }
                Err(e) => {
                    if gi == reference
                        && let Some(m) = mu_u
                    {
                        g.mu_u = Some(m);
                        g.mass_from = Some("mass-setting");
                    }
                    g.mass_problem = Some(e.to_string());
                }
            },
            None => {
                if let Some(m) = mu_u {
                    g.mu_u = Some(m);
                    g.mass_from = Some("mass-setting");
                }
            }
        }
    }
    let mu_ref = groups[reference].mu_u;
    if let (Some(m), Some(r), Some("tag" | "settings")) =
        (mu_u, mu_ref, groups[reference].mass_from)
        && ((m - r) / r).abs() > 1e-6
    {
        warnings.push(format!(
            "the molecule's mass setting (μ = {m} u) differs from the reference isotopologue's tag (μ = {r:.6} u); the tag's mass is used"
        ));
    }
    for (gi, g) in groups.iter_mut().enumerate() {
        g.rho = match (mu_ref, g.mu_u) {
            (Some(r), Some(m)) => Some(isotopes::rho(r, m)?),
            _ if gi == reference => Some(1.0),
            _ => None,
        };
        g.in_joint = gi == reference || (mu_ref.is_some() && g.mu_u.is_some());
    }
    let dropped: Vec<String> = groups
        .iter()
        .filter(|g| !g.in_joint)
        .map(|g| {
            format!(
                "{}{}",
                tag_name(&g.tag),
                g.mass_problem
                    .as_ref()
                    .map(|p| format!(" ({p})"))
                    .unwrap_or_else(
                        || " (no mass: give the molecule's mass or tag the rows)".into()
                    )
            )
        })
        .collect();
    if !dropped.is_empty() {
        warnings.push(format!(
            "isotopologue(s) left out of the joint fit for want of masses{}: {}",
            if mu_ref.is_none() {
                " (the reference isotopologue has no mass, so no ρ can be formed)"
            } else {
                ""
            },
            dropped.join("; ")
        ));
    }

    // 2. Heads to origins.
    let mut heads_corrected = false;
    let mut head_sigma_added = 0.0;
    let mut max_m_head: f64 = 0.0;
    for g in groups.iter_mut() {
        let rho = g.rho.unwrap_or(1.0);
        for &i in &g.input {
            let b = &bands[i];
            let mut p = PreparedBand {
                v_upper: b.v_upper,
                v_lower: b.v_lower,
                position_cm1: b.position_cm1,
                observed_cm1: b.position_cm1,
                sigma_cm1: b.sigma_cm1,
                head: None,
            };
            if positions == BandPositions::Heads {
                match &bs.rotation {
                    Some(rot) => {
                        let bu = heads::b_v(&rot.upper, f64::from(b.v_upper), rho);
                        let bl = heads::b_v(&rot.lower, f64::from(b.v_lower), rho);
                        let h = heads::head_offset(bu, bl).map_err(|e| {
                            Error::parameter(
                                "bands.rotation",
                                format!("band v′ = {}, v″ = {}: {e}", b.v_upper, b.v_lower),
                            )
                        })?;
                        p.position_cm1 = b.position_cm1 - h.head_minus_origin_cm1;
                        p.sigma_cm1 = b.sigma_cm1.map(|s| s.hypot(h.discreteness_sigma_cm1));
                        max_m_head = max_m_head.max(h.m_head.abs());
                        p.head = Some(h);
                        heads_corrected = true;
                    }
                    None => {
                        p.sigma_cm1 = b.sigma_cm1.map(|s| s.hypot(bs.head_sigma_cm1));
                        head_sigma_added = bs.head_sigma_cm1;
                    }
                }
            }
            g.prepared.push(p);
        }
    }
    if positions == BandPositions::Heads {
        if heads_corrected {
            let rot = bs.rotation.as_ref();
            warnings.push(format!(
                "band heads corrected to origins with B′ = {} − {}(v′+½) and B″ = {} − {}(v″+½) cm⁻¹ (ρ-scaled per isotopologue): the correction ignores centrifugal distortion",
                rot.map(|r| r.upper.be_cm1).unwrap_or(0.0),
                rot.map(|r| r.upper.alpha_e_cm1).unwrap_or(0.0),
                rot.map(|r| r.lower.be_cm1).unwrap_or(0.0),
                rot.map(|r| r.lower.alpha_e_cm1).unwrap_or(0.0)
            ));
            if max_m_head > 300.0 {
                warnings.push(format!(
                    "a head lies at |m| ≈ {max_m_head:.0}: B′ and B″ are nearly equal, and the head–origin correction is large and uncertain"
                ));
            }
        } else if sigma_given {
            warnings.push(format!(
                "band heads used as origins without rotational constants: every σ widened by {} cm⁻¹ in quadrature (the head allowance: a setting, --head-sigma on the command line) to cover the drift of the head–origin offset along the progressions; its constant part goes into T00 and Te, which are therefore uncertain by that offset (typically 0.1 to a few cm⁻¹, more for light molecules) — give B′ and B″ to correct the heads",
                bs.head_sigma_cm1
            ));
        } else {
            warnings.push("band heads used as origins without rotational constants and without σ: the drift of the head–origin offset along the progressions adds to the scatter from which σ are estimated; T00 and Te carry the (unknown) offset — give B′ and B″ to correct the heads".into());
        }
    }

    // 3. Arrays and term values.
    let mut arrays = Vec::new();
    let mut term_fits = Vec::new();
    for g in &groups {
        let (a, t) = array::build(&g.prepared, g.tag.clone(), threshold, policy)?;
        for f in &a.flagged {
            if matches!(
                f.flag,
                array::CellFlag::BreaksTwoChains | array::CellFlag::Inconsistent
            ) {
                warnings.push(format!(
                    "isotopologue {}: band v′ = {}, v″ = {} {} ({}); it stays in every fit — exclude its row if the assignment is wrong",
                    tag_name(&g.tag),
                    f.v_upper,
                    f.v_lower,
                    if f.flag == array::CellFlag::BreaksTwoChains {
                        "breaks two difference chains"
                    } else {
                        "disagrees with the rest of the array"
                    },
                    f.residual_cm1
                        .map(|r| format!("off by {r:.3} cm⁻¹"))
                        .unwrap_or_default()
                ));
            }
        }
        if a.connected_parts > 1 {
            warnings.push(format!(
                "isotopologue {}: the array falls into {} unconnected parts; the term values come from the largest, the global fit uses every band",
                tag_name(&g.tag),
                a.connected_parts
            ));
        }
        arrays.push(a);
        term_fits.push(t);
    }
    let term_out: Vec<TermValuesOut> = groups
        .iter()
        .zip(&term_fits)
        .filter_map(|(g, t)| {
            t.as_ref()
                .map(|t| term_values_out(g.tag.clone(), t, policy, &g.prepared))
        })
        .collect();

    // 4. Global fit.
    let mut gbands: Vec<GlobalBand> = Vec::new();
    let mut gsource: Vec<(usize, usize)> = Vec::new();
    for (gi, g) in groups.iter().enumerate() {
        if !g.in_joint {
            continue;
        }
        let rho = g.rho.unwrap_or(1.0);
        for (k, p) in g.prepared.iter().enumerate() {
            gbands.push(GlobalBand {
                v_upper: p.v_upper,
                v_lower: p.v_lower,
                position_cm1: p.position_cm1,
                sigma_cm1: p.sigma_cm1,
                rho,
            });
            gsource.push((gi, k));
        }
    }
    let n_joint = groups.iter().filter(|g| g.in_joint).count();
    let (selection, gfit) = global::select_orders(
        &gbands,
        settings.max_order as usize,
        bs.upper_order.map(|k| k as usize),
        bs.lower_order.map(|k| k as usize),
    )?;
    let g_dof = gfit.lsq.dof();
    let g_chi2r = gfit.lsq.chi2_reduced();
    let g_f2 = terms::fit_variance_factor(
        policy,
        gfit.sigma_known,
        &gfit.lsq,
        &gbands.iter().map(|b| b.position_cm1).collect::<Vec<_>>(),
    );
    let g_cov = gfit.covariance();
    let g_cov_eff = g_f2.map(|f| &g_cov * f);
    let t00 = vs(&gfit.t00(), g_cov_eff.as_ref());
    let te = vs(&gfit.te(), g_cov_eff.as_ref());
    let upper_c = scaled_constants(&gfit, true, 1.0, g_f2, g_chi2r);
    let lower_c = scaled_constants(&gfit, false, 1.0, g_f2, g_chi2r);
    let mut residuals = Vec::with_capacity(gbands.len());
    for (r, gb) in gbands.iter().enumerate() {
        let (gi, _) = gsource[r];
        let h = gfit.lsq.leverage[r];
        let st = g_f2.and_then(|f| {
            let d = (1.0 - h) * f;
            (d > 0.0).then(|| gfit.lsq.normalized_residuals[r] / d.sqrt())
        });
        residuals.push(BandResidual {
            v_upper: gb.v_upper,
            v_lower: gb.v_lower,
            isotopologue: groups[gi].tag.clone(),
            position_cm1: gb.position_cm1,
            calc_cm1: gb.position_cm1 - gfit.lsq.residuals[r],
            residual_cm1: gfit.lsq.residuals[r],
            sigma_cm1: g_f2.map(|f| gb.sigma_cm1.unwrap_or(1.0) * f.sqrt()),
            studentized: st,
            outlier: st.is_some_and(|s| s.abs() > threshold),
        });
    }
    let n_out = residuals.iter().filter(|r| r.outlier).count();
    if n_out > 0 {
        warnings.push(format!(
            "{n_out} band(s) with |studentized residual| > {threshold} in the global fit: a misassignment, a perturbed level, or a model too simple"
        ));
    }
    if let Some(c) = g_chi2r
        && gfit.sigma_known
        && c > 1.0
        && policy != SigmaScaling::Never
    {
        warnings.push(format!(
            "χ²_ν = {c:.3} of the global fit: the bands scatter more than their σ; the global fit's σ are scaled by {:.3}",
            c.sqrt()
        ));
    }
    let uncertainty_note = match (gfit.sigma_known, g_f2, g_chi2r) {
        (_, None, _) => "no band σ, and the fit leaves no scatter to estimate them from: uncertainties not estimable".into(),
        (false, Some(f), _) => format!(
            "no band σ given: σ = {:.4} cm⁻¹ per band estimated from the scatter (RSS/dof)",
            f.sqrt()
        ),
        (true, Some(f), Some(c)) if f != 1.0 => format!(
            "band σ scaled by √χ²_ν = {:.4} (χ²_ν = {c:.3}; policy: {})",
            f.sqrt(),
            policy_name(policy)
        ),
        (true, Some(_), c) => format!(
            "band σ used as given (χ²_ν = {}; policy: {})",
            c.map(|c| format!("{c:.3}")).unwrap_or("—".into()),
            policy_name(policy)
        ),
    };
    let left_out = groups
        .iter()
        .filter(|g| !g.in_joint)
        .map(|g| LeftOut {
            isotopologue: tag_name(&g.tag),
            n_bands: g.input.len(),
            reason: if g.mass_problem.is_some() {
                "its tag cannot be read as two atoms (see the warnings)".into()
            } else {
                "no mass for it".into()
            },
        })
        .collect();
    let global_out = GlobalFitOut {
        order_upper: gfit.k_upper,
        order_lower: gfit.k_lower,
        forced: bs.upper_order.is_some() && bs.lower_order.is_some(),
        n_bands: gbands.len(),
        left_out,
        n_params: gfit.n_params(),
        dof: g_dof,
        chi2: gfit.lsq.chi2,
        chi2_reduced: g_chi2r,
        scale_factor: g_f2.map(f64::sqrt),
        uncertainty_note,
        upper: upper_c,
        lower: lower_c,
        t00_cm1: t00.clone(),
        te_cm1: te.clone(),
        upper_x_range: [gfit.upper_x_range.0, gfit.upper_x_range.1],
        lower_x_range: [gfit.lower_x_range.0, gfit.lower_x_range.1],
        residuals,
        order_selection: selection,
    };

    // 5. Numbering.
    let numbering = numbering::check(&gbands, gfit.k_upper, gfit.k_lower, n_joint)?;
    if let Some(k) = numbering.best_offset
        && k != 0
        && numbering.verdict != numbering::Verdict::CannotBeDecided
    {
        warnings.push(format!(
            "the isotope shifts prefer the upper-state numbering v′ → v′ {k:+} ({}): every upper-state number in this report follows the numbering as given — renumber the data and run again",
            numbering.verdict_text
        ));
    }

    // 6. Both states through the single-state analysis.
    let ref_tag = groups[reference].tag.clone();
    let (states, upper_limit_parts) = state_reports(
        term_fits[reference].as_ref(),
        mu_ref,
        settings,
        sigma_given,
        policy,
        &ref_tag,
        progress,
    );

    // 7. Convergence limit.
    let convergence = convergence_limit(&t00, &states, bs.atomic_excitation_cm1, upper_limit_parts);
    if let (Some(d), Some(l)) = (
        &convergence.d0_lower_cm1,
        convergence.d0_lower_from_levels_cm1,
    ) && let Some(s) = d.sigma
        && s > 0.0
        && (d.value - l).abs() > 3.0 * s + convergence.d0_lower_sigma_model_cm1.unwrap_or(0.0)
    {
        warnings.push(format!(
            "D0″ from the energy cycle ({:.2} cm⁻¹) and from the lower state's own levels ({l:.2} cm⁻¹) disagree beyond their uncertainties: one extrapolation (or the atomic term) is off",
            d.value
        ));
    }

    // 8. Isotopologues and predictions.
    let isotopologues: Vec<IsotopologueOut> = groups
        .iter()
        .enumerate()
        .map(|(gi, g)| IsotopologueOut {
            tag: g.tag.clone(),
            a: g.a.clone(),
            b: g.b.clone(),
            mu_u: g.mu_u,
            mass_from: g.mass_from.map(str::to_string),
            rho: if g.in_joint { g.rho } else { None },
            reference: gi == reference,
            n_bands: g.input.len(),
            in_joint_fit: g.in_joint,
            t00_cm1: g
                .in_joint
                .then(|| vs(&gfit.t00_of(g.rho.unwrap_or(1.0)), g_cov_eff.as_ref())),
        })
        .collect();
    let mut predictions = Vec::new();
    let cells: Vec<(u32, u32)> = {
        let mut c: Vec<(u32, u32)> = groups
            .iter()
            .flat_map(|g| g.prepared.iter().map(|p| (p.v_upper, p.v_lower)))
            .collect();
        sort(&mut c);
        c.dedup();
        c
    };
    for tag in &bs.predict {
        match (isotopes::resolve(tag, &bs.isotopologues), mu_ref) {
            (Ok(r), Some(mref)) => {
                let rho = isotopes::rho(mref, r.mu_u)?;
                predictions.push(predict(
                    &gfit,
                    g_f2,
                    g_chi2r,
                    IsotopologueOut {
                        tag: Some(tag.clone()),
                        a: Some(r.a),
                        b: Some(r.b),
                        mu_u: Some(r.mu_u),
                        mass_from: Some(r.from.to_string()),
                        rho: Some(rho),
                        reference: false,
                        n_bands: 0,
                        in_joint_fit: false,
                        t00_cm1: None,
                    },
                    &cells,
                ));
            }
            (Err(e), _) => warnings.push(format!("no prediction for '{tag}': {e}")),
            (Ok(_), None) => warnings.push(format!(
                "no prediction for '{tag}': the reference isotopologue has no mass (tag its rows or give the molecule's mass)"
            )),
        }
    }

    let plot = band_plot(&groups, &global_out);
    let (vu_lo, vu_hi, vl_lo, vl_hi) =
        bands
            .iter()
            .fold((u32::MAX, 0, u32::MAX, 0), |(a, b, c, d), x| {
                (
                    a.min(x.v_upper),
                    b.max(x.v_upper),
                    c.min(x.v_lower),
                    d.max(x.v_lower),
                )
            });
    let conventions = vec![
        "energies are vacuum wavenumbers in cm⁻¹; rows of the array are v″, columns v′".to_string(),
        "ΔG′_{v′+½} = ν(v′+1, v″) − ν(v′, v″) along a row; ΔG″_{v″+½} = ν(v′, v″) − ν(v′, v″+1) down a column".to_string(),
        format!("term values: ν(v′, v″) = T′(v′) − T″(v″) with the lowest observed lower level fixed at T″ = 0 (for the reference isotopologue v″ = {})", term_fits[reference].as_ref().map(|t| t.lower_v[0]).unwrap_or(vl_lo)),
        "global fit: ν = T00 + [G′(v′) − G′(0)] − [G″(v″) − G″(0)], G(v) = Σ_k Y_k0 (v+½)^k without Y00; T00 = ν(0, 0) of the reference isotopologue".to_string(),
        "Te = T00 − G′(0) + G″(0): the separation of the potential minima (an extrapolation to v = −½ in both states)".to_string(),
        "isotopologues: Y_k0^(i) = Y_k0 ρ^k, ρ = (μ_ref/μ_i)^½ (Born–Oppenheimer, common Te); predicted levels are G(v) above the potential minimum".to_string(),
        "convergence limit: E_lim = T00 + D0′ above the lower v″ = 0; D0″ = E_lim − E_atom".to_string(),
    ];
    let assumptions = vec![
        "all bands belong to one band system: one upper and one lower electronic state".to_string(),
        "the lower state's vibrational numbering is as given; the upper state's is checked (see numbering) but every number follows the numbering as given".to_string(),
        "a polynomial G(v) (the selected orders) describes each state over the observed levels; Y00 and Born–Oppenheimer breakdown are neglected in the mass scaling".to_string(),
        match positions {
            BandPositions::Origins => "positions are band origins".to_string(),
            BandPositions::Heads if heads_corrected => "positions are band heads, corrected with B_v = Be − αe(v+½) and no centrifugal distortion".to_string(),
            BandPositions::Heads => "positions are band heads used as origins with widened σ".to_string(),
        },
        "each state's D0 rests on the extrapolations of its single-state analysis (see its assumptions)".to_string(),
    ];
    Ok(BandReport {
        format: BAND_REPORT_FORMAT.into(),
        format_version: BAND_REPORT_FORMAT_VERSION,
        software_version: crate::VERSION.into(),
        codata_year: CODATA_YEAR,
        statement: "All results are model-dependent estimates: the constants assume polynomial term values, the mass scaling assumes the Born–Oppenheimer approximation, and every dissociation limit assumes a form for the levels beyond the data. Statistical uncertainties cover the data's scatter only.".into(),
        conventions,
        assumptions,
        input: BandInput {
            n_bands: bands.len(),
            positions,
            heads_corrected,
            head_sigma_added_cm1: if sigma_given { head_sigma_added } else { 0.0 },
            sigma_given,
            v_upper_range: [vu_lo, vu_hi],
            v_lower_range: [vl_lo, vl_hi],
        },
        settings: settings.clone(),
        t00_cm1: t00,
        te_cm1: te,
        states,
        numbering,
        convergence,
        global_fit: global_out,
        term_values: term_out,
        arrays,
        isotopologues,
        predictions,
        warnings,
        plot,
        rows: None,
        input_sha256: None,
        methods: None,
        session: None,
    })
}

fn term_values_out(
    tag: Option<String>,
    t: &terms::TermFit,
    policy: SigmaScaling,
    prepared: &[PreparedBand],
) -> TermValuesOut {
    let y: Vec<f64> = t.bands.iter().map(|&i| prepared[i].position_cm1).collect();
    let f2 = terms::fit_variance_factor(policy, t.sigma_known, &t.lsq, &y);
    let c = t.lsq.covariance_matrix();
    let f = f2.unwrap_or(1.0);
    let up = t.upper_energies();
    let lo = t.lower_energies();
    let nu = t.upper_v.len();
    let sig = |i: usize| f2.map(|f| (c[(i, i)] * f).max(0.0).sqrt());
    let mut labels: Vec<String> = t.upper_v.iter().map(|v| format!("T'({v})")).collect();
    labels.extend(t.lower_v.iter().skip(1).map(|v| format!("T''({v})")));
    TermValuesOut {
        isotopologue: tag,
        fixed_lower_v: t.lower_v[0],
        upper: (0..nu)
            .map(|i| TermLevel {
                v: t.upper_v[i],
                energy_cm1: up[i],
                sigma_cm1: sig(i),
            })
            .collect(),
        lower: (0..t.lower_v.len())
            .map(|i| TermLevel {
                v: t.lower_v[i],
                energy_cm1: lo[i],
                sigma_cm1: if i == 0 { Some(0.0) } else { sig(nu + i - 1) },
            })
            .collect(),
        n_bands: t.bands.len(),
        n_params: t.n_params(),
        dof: t.lsq.dof(),
        chi2: t.lsq.chi2,
        chi2_reduced: t.lsq.chi2_reduced(),
        scale_factor: f2.map(f64::sqrt),
        covariance_labels: labels,
        covariance: (0..c.nrows())
            .map(|i| (0..c.ncols()).map(|j| c[(i, j)] * f).collect())
            .collect(),
    }
}

/// (D0′ value, σ_stat, σ_model, method) of the upper state's recommendation.
type UpperD0 = Option<(f64, Option<f64>, Option<f64>, String)>;

fn state_reports(
    term: Option<&terms::TermFit>,
    mu_u: Option<f64>,
    settings: &AnalysisSettings,
    sigma_given: bool,
    policy: SigmaScaling,
    tag: &Option<String>,
    progress: &mut dyn FnMut(usize, usize),
) -> (States, UpperD0) {
    let Some(t) = term else {
        let why = "the reference isotopologue's array has too few connected bands for term values"
            .to_string();
        return (
            States {
                upper: None,
                lower: None,
                upper_note: why.clone(),
                lower_note: why,
            },
            None,
        );
    };
    // Covariance factor of the term values: band σ by the policy, or the scatter.
    let term_exact = {
        let scale = t.lsq.params.iter().fold(0.0_f64, |m, y| m.max(y.abs()));
        (t.lsq.chi2 / t.lsq.n_points as f64).sqrt() <= 1e-10 * scale
    };
    let (factor, state_policy, note) = match (sigma_given, t.lsq.chi2_reduced()) {
        (true, Some(c)) => (
            terms::variance_factor(policy, true, c),
            policy,
            format!("term-value fit χ²_ν = {c:.3}"),
        ),
        (true, None) => (1.0, policy, "term-value fit without degrees of freedom".into()),
        (false, Some(c)) if c > 0.0 && !term_exact => (
            c,
            policy,
            format!("no band σ: term-value covariance scaled by the scatter of the term-value fit (σ ≈ {:.4} cm⁻¹ per band)", c.sqrt()),
        ),
        (false, _) => (
            1.0,
            SigmaScaling::Always,
            "no band σ and no scatter in the term-value fit: the term values' covariance is known up to a factor, estimated from the scatter about this state's G(v) fit".into(),
        ),
    };
    let iso = tag
        .as_deref()
        .map(|t| format!("isotopologue {t}, "))
        .unwrap_or_default();
    let n_states = usize::from(t.upper_v.len() >= 2) + usize::from(t.lower_v.len() >= 2);
    let mut done_before = 0usize;
    let mut run = |upper: bool,
                   v: &[u32],
                   e: &[f64],
                   cov: DMatrix<f64>,
                   shown: Vec<f64>,
                   progress: &mut dyn FnMut(usize, usize)|
     -> std::result::Result<Report, String> {
        let levels: Vec<Level> = (0..v.len())
            .map(|i| Level {
                v: v[i],
                energy_cm1: e[i],
                sigma_cm1: Some(cov[(i, i)].max(0.0).sqrt()),
                b_cm1: None,
                isotopologue: None,
            })
            .collect();
        let mut s = settings.clone();
        s.order = if upper {
            settings.bands.upper_order
        } else {
            settings.bands.lower_order
        };
        s.sigma_scaling = state_policy;
        let offset = done_before;
        let mut hook = |d: usize, total: usize| {
            progress(offset + d, total * n_states.max(1));
        };
        let mut r = analyze_levels_with_progress(&levels, Some(&cov), mu_u, &s, &mut hook)
            .map_err(|e| e.to_string())?;
        done_before += settings.mc_samples as usize;
        // Show the term values' own σ (the fixed lower level has none).
        for l in r.levels.iter_mut() {
            if let Some(i) = v.iter().position(|x| *x == l.v) {
                l.sigma_cm1 = Some(shown[i]);
            }
        }
        for p in r.plot.levels.iter_mut() {
            if let Some(i) = v.iter().position(|x| f64::from(*x) == p.x) {
                p.sigma = Some(shown[i]);
            }
        }
        r.conventions.insert(
            0,
            format!(
                "levels are term values from the band positions ({iso}{}), relative to the lower level v″ = {}; {note}{}",
                if upper { "upper state: T′(v′)" } else { "lower state: T″(v″)" },
                t.lower_v[0],
                if upper {
                    ""
                } else {
                    "; the fixed level has no σ of its own, so the fit is given the covariance plus a common offset variance (the mean level variance) that no result depends on — it shows only in the σ of that level's residual"
                }
            ),
        );
        Ok(r)
    };
    // Upper state.
    let (upper, upper_note) = if t.upper_v.len() >= 2 {
        let cov = t.upper_covariance() * factor;
        let shown: Vec<f64> = (0..cov.nrows())
            .map(|i| cov[(i, i)].max(0.0).sqrt())
            .collect();
        match run(true, &t.upper_v, &t.upper_energies(), cov, shown, progress) {
            Ok(r) => (
                Some(r),
                format!(
                    "term values T′(v′) of {} levels (v′ = {} … {}) above the lower level v″ = {}",
                    t.upper_v.len(),
                    t.upper_v[0],
                    t.upper_v[t.upper_v.len() - 1],
                    t.lower_v[0]
                ),
            ),
            Err(e) => (None, format!("no single-state analysis: {e}")),
        }
    } else {
        (
            None,
            format!(
                "only one upper level (v′ = {}) in the array: no single-state analysis",
                t.upper_v[0]
            ),
        )
    };
    // Lower state: the fixed level makes the covariance singular; a common offset variance
    // c·11ᵀ restores it without changing any result (the level fit carries a free offset, and
    // GLS estimates and χ² are unchanged by a covariance term along a column of the design).
    let (lower, lower_note) = if t.lower_v.len() >= 2 {
        let cov = t.lower_covariance() * factor;
        let n = cov.nrows();
        let shown: Vec<f64> = (0..n).map(|i| cov[(i, i)].max(0.0).sqrt()).collect();
        let c = (1..n).map(|i| cov[(i, i)]).sum::<f64>() / (n - 1) as f64;
        let c = if c > 0.0 { c } else { 1.0 };
        let aug = DMatrix::from_fn(n, n, |i, j| cov[(i, j)] + c);
        match run(false, &t.lower_v, &t.lower_energies(), aug, shown, progress) {
            Ok(r) => (
                Some(r),
                format!(
                    "term values T″(v″) of {} levels (v″ = {} … {}) above v″ = {}",
                    t.lower_v.len(),
                    t.lower_v[0],
                    t.lower_v[t.lower_v.len() - 1],
                    t.lower_v[0]
                ),
            ),
            Err(e) => (None, format!("no single-state analysis: {e}")),
        }
    } else {
        (
            None,
            format!(
                "only one lower level (v″ = {}) in the array: no single-state analysis",
                t.lower_v[0]
            ),
        )
    };
    let d0 = upper.as_ref().and_then(|r| {
        let rec = &r.recommended;
        Some((
            rec.d0_cm1?,
            rec.sigma_stat_cm1,
            rec.sigma_model_cm1,
            rec.method.clone().unwrap_or_default(),
        ))
    });
    (
        States {
            upper,
            lower,
            upper_note,
            lower_note,
        },
        d0,
    )
}

fn convergence_limit(
    t00: &ValueSigma,
    states: &States,
    e_atom: Option<f64>,
    d0_upper: UpperD0,
) -> ConvergenceLimit {
    let lower_own = states.lower.as_ref().and_then(|r| r.recommended.d0_cm1);
    let Some((d0, s_stat, s_model, method)) = d0_upper else {
        return ConvergenceLimit {
            upper_limit_cm1: None,
            upper_limit_sigma_model_cm1: None,
            d0_upper_method: None,
            atomic_excitation_cm1: e_atom,
            d0_lower_cm1: None,
            d0_lower_sigma_model_cm1: None,
            d0_lower_from_levels_cm1: lower_own,
            note: "no recommended D0′ for the upper state: no convergence limit".into(),
        };
    };
    let sigma = match (t00.sigma, s_stat) {
        (Some(a), Some(b)) => Some(a.hypot(b)),
        _ => None,
    };
    let lim = ValueSigma::new(t00.value + d0, sigma);
    let d0_lower = e_atom.map(|e| ValueSigma::new(lim.value - e, lim.sigma));
    ConvergenceLimit {
        upper_limit_cm1: Some(lim),
        upper_limit_sigma_model_cm1: s_model,
        d0_upper_method: Some(method.clone()),
        atomic_excitation_cm1: e_atom,
        d0_lower_cm1: d0_lower,
        d0_lower_sigma_model_cm1: e_atom.and(s_model),
        d0_lower_from_levels_cm1: lower_own,
        note: format!(
            "E_lim = T00 (global fit) + D0′ (upper state, {}); σ_stat adds the two σ in quadrature, neglecting their correlation (both come from the same bands; T00's σ is usually the smaller); σ_model is that of D0′{}",
            crate::words::method_name(&method),
            if e_atom.is_some() {
                "; D0″ = E_lim − E_atom with E_atom as typed (taken as exact)"
            } else {
                "; give the atomic excitation energy of the upper state's asymptote (a setting, --atomic-excitation on the command line) for D0″"
            }
        ),
    }
}

fn predict(
    fit: &GlobalFit,
    f2: Option<f64>,
    chi2r: Option<f64>,
    iso: IsotopologueOut,
    cells: &[(u32, u32)],
) -> Prediction {
    let rho = iso.rho.unwrap_or(1.0);
    let c = fit.covariance();
    let cov_eff = f2.map(|f| &c * f);
    let inside = |r: (f64, f64), x: f64| x >= r.0 - 1e-9 && x <= r.1 + 1e-9;
    let levels = |upper: bool| -> Vec<PredictedLevel> {
        let (vmax, range, k) = if upper {
            (
                cells.iter().map(|c| c.0).max().unwrap_or(0),
                fit.upper_x_range,
                fit.k_upper,
            )
        } else {
            (
                cells.iter().map(|c| c.1).max().unwrap_or(0),
                fit.lower_x_range,
                fit.k_lower,
            )
        };
        if k == 0 {
            return Vec::new();
        }
        (0..=vmax)
            .map(|v| {
                let l = fit.level(upper, f64::from(v), rho);
                PredictedLevel {
                    v,
                    energy_cm1: l.value,
                    sigma_cm1: cov_eff.as_ref().map(|c| l.sigma(c)),
                    extrapolated: !inside(range, rho * (f64::from(v) + 0.5)),
                }
            })
            .collect()
    };
    let bands = cells
        .iter()
        .map(|&(vu, vl)| {
            let b = fit.band(vu, vl, rho);
            PredictedBand {
                v_upper: vu,
                v_lower: vl,
                position_cm1: b.value,
                sigma_cm1: cov_eff.as_ref().map(|c| b.sigma(c)),
                extrapolated: !inside(fit.upper_x_range, rho * (f64::from(vu) + 0.5))
                    || !inside(fit.lower_x_range, rho * (f64::from(vl) + 0.5)),
            }
        })
        .collect();
    Prediction {
        t00_cm1: vs(&fit.t00_of(rho), cov_eff.as_ref()),
        upper: scaled_constants(fit, true, rho, f2, chi2r),
        lower: scaled_constants(fit, false, rho, f2, chi2r),
        upper_levels: levels(true),
        lower_levels: levels(false),
        bands,
        note: "mass-scaled from the joint fit: Y_k0 ρ^k and a common Te (Born–Oppenheimer; Y00 and breakdown terms neglected, of order 0.1 % of ωe for hydrides and less for heavier molecules); σ from the fit's covariance only; † / extrapolated: ρ(v + ½) outside the fitted range".into(),
        isotopologue: iso,
    }
}

fn band_plot(groups: &[Group], g: &GlobalFitOut) -> BandPlot {
    let mut by_u = Vec::new();
    let mut by_l = Vec::new();
    for grp in groups.iter().filter(|g| g.in_joint) {
        let pts = |upper: bool| -> Vec<PlotPoint> {
            g.residuals
                .iter()
                .filter(|r| r.isotopologue == grp.tag)
                .map(|r| PlotPoint {
                    x: f64::from(if upper { r.v_upper } else { r.v_lower }),
                    y: r.residual_cm1,
                    sigma: r.sigma_cm1,
                })
                .collect()
        };
        by_u.push(ResidualSeries {
            isotopologue: grp.tag.clone(),
            points: pts(true),
        });
        by_l.push(ResidualSeries {
            isotopologue: grp.tag.clone(),
            points: pts(false),
        });
    }
    BandPlot {
        residuals_by_upper: by_u,
        residuals_by_lower: by_l,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn band(vu: u32, vl: u32, x: f64, s: Option<f64>, tag: Option<&str>) -> Band {
        Band {
            v_upper: vu,
            v_lower: vl,
            position_cm1: x,
            sigma_cm1: s,
            isotopologue: tag.map(str::to_string),
        }
    }

    /// Refusals name what is wrong (our design rule: core returns errors, never panics).
    #[test]
    fn bad_band_lists_are_refused_with_reasons() {
        let s = AnalysisSettings {
            mc_samples: 0,
            ..Default::default()
        };
        let run = |b: &[Band]| {
            analyze_bands(b, BandPositions::Origins, None, &s)
                .expect_err("refused")
                .to_string()
        };
        let ok = [
            band(0, 0, 100.0, Some(0.1), None),
            band(1, 0, 190.0, Some(0.1), None),
            band(2, 0, 275.0, Some(0.1), None),
        ];
        let mut dup = ok.to_vec();
        dup.push(band(1, 0, 191.0, Some(0.1), None));
        assert!(run(&dup).contains("more than once"));
        let mut mixed = ok.to_vec();
        mixed.push(band(3, 0, 355.0, None, None));
        assert!(run(&mixed).contains("σ for all bands or for none"));
        let mut nan = ok.to_vec();
        nan[1].position_cm1 = f64::NAN;
        assert!(run(&nan).contains("not a finite number"));
        assert!(run(&ok[..2]).contains("at least 3"));
        let many: Vec<Band> = (0..MAX_BANDS as u32 + 1)
            .map(|i| band(i % 1000, i / 1000, 1.0, None, None))
            .collect();
        assert!(run(&many).contains("at most"));
        let wide: Vec<Band> = (0..400)
            .map(|i| band(i, 0, f64::from(i), None, None))
            .collect();
        assert!(run(&wide).contains("distinct levels"));
        let mut bad_ref = s.clone();
        bad_ref.bands.reference = Some("nope".into());
        let e = analyze_bands(&ok, BandPositions::Origins, None, &bad_ref)
            .expect_err("no such reference")
            .to_string();
        assert!(
            e.contains("Reference isotopologue") && !e.contains("bands."),
            "{e}"
        );
        let mut heads = s.clone();
        heads.bands.rotation = Some(crate::settings::BandRotation {
            upper: crate::settings::StateRotation {
                be_cm1: 1.0,
                alpha_e_cm1: 0.0,
            },
            lower: crate::settings::StateRotation {
                be_cm1: 1.0,
                alpha_e_cm1: 0.0,
            },
        });
        let e = analyze_bands(&ok, BandPositions::Heads, None, &heads)
            .expect_err("B′ = B″ has no head")
            .to_string();
        assert!(e.contains("no band head"), "{e}");
    }
}
