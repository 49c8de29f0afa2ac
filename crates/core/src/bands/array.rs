//! The Deslandres array of one isotopologue: band positions arranged by (v′, v″), the difference
//! chains along its rows and columns, and the cells that break them.
//!
//! Rows are v″, columns v′ (domain.md §1.1). Along a row (fixed v″) neighbouring cells differ by
//! ΔG′_{v′+½} = ν(v′+1, v″) − ν(v′, v″); down a column (fixed v′) by
//! ΔG″_{v″+½} = ν(v′, v″) − ν(v′, v″+1) (domain.md §1.2). The same difference must repeat in every
//! row (column) within the data's σ.
//!
//! **Consensus and checks.** Each difference is compared with the consensus of the whole array:
//! the same difference of term values from the model-free term-value fit ([`super::terms`]) of
//! the cells that survive an outlier search (cells whose externally studentized residual exceeds
//! the threshold are set aside one at a time, worst first). The deviation d − consensus is a
//! linear function of the band positions; its σ is propagated exactly from the band σ (the
//! difference and the consensus are correlated when the cells are in the consensus). A difference
//! is *discrepant* when |deviation|/σ exceeds `settings.outlier_threshold`.
//!
//! **Flags.** A cell touching two or more discrepant differences *breaks two chains* — a likely
//! misassignment, typo or local perturbation (domain.md §1.2): one wrong cell makes both of its
//! row differences and both of its column differences wrong, while each neighbour shares only
//! one of them. A cell set aside by the outlier search that breaks fewer than two chains (at the
//! edge of the array) is *inconsistent*. A cell whose level is fixed by that cell alone cannot be
//! checked. Flagged cells stay in every fit; exclude the row to drop one.
//!
//! A level shifted as a whole (a perturbed v′ seen in every row) keeps the chains consistent: it
//! shows up in the level analysis of its state (a kink in ΔG), not here.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::DVector;
use serde::{Deserialize, Serialize};

use super::PreparedBand;
use super::heads::HeadOffset;
use super::terms::{self, TermFit};
use crate::Result;
use crate::settings::SigmaScaling;
use crate::sorting::{sort, sort_by_key};

/// Widest span of v (in either direction) drawn as a dense grid; wider arrays list only the
/// observed values.
pub const DENSE_SPAN_MAX: u32 = 100;

/// What is wrong (or unknown) about a cell.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum CellFlag {
    /// Two or more of the cell's row and column differences disagree with the consensus.
    BreaksTwoChains,
    /// Set aside by the outlier search, but it breaks fewer than two chains.
    Inconsistent,
    /// No difference and no residual of this cell can be checked (its level rests on it alone).
    Unchecked,
    /// The band is not connected to the main part of the array (no chain links it).
    NotConnected,
}

impl CellFlag {
    /// A short phrase for read-outs and tables.
    pub fn describe(self) -> &'static str {
        match self {
            CellFlag::BreaksTwoChains => {
                "breaks two difference chains (misassignment, typo or perturbation?)"
            }
            CellFlag::Inconsistent => "set aside as inconsistent",
            CellFlag::Unchecked => "cannot be checked (its level rests on this band alone)",
            CellFlag::NotConnected => "not connected to the rest of the array",
        }
    }
}

/// One cell of the array.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ArrayCell {
    /// v′ (column).
    pub v_upper: u32,
    /// v″ (row).
    pub v_lower: u32,
    /// Band origin used by the fits, cm⁻¹ (the head corrected to the origin when heads were given).
    pub position_cm1: f64,
    /// Position as given, cm⁻¹.
    pub observed_cm1: f64,
    /// σ as used, cm⁻¹ (null when the bands have none).
    pub sigma_cm1: Option<f64>,
    /// Head–origin correction applied, when heads were corrected.
    pub head: Option<HeadOffset>,
    /// Position − consensus T′(v′) − T″(v″), cm⁻¹.
    pub residual_cm1: Option<f64>,
    /// Residual over its σ.
    pub z: Option<f64>,
    /// Discrepant differences touching this cell.
    pub chain_breaks: u32,
    /// Checked differences touching this cell.
    pub chain_checks: u32,
    /// Flags (empty: consistent).
    pub flags: Vec<CellFlag>,
}

/// One difference of neighbouring cells.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ChainDifference {
    /// Upper-state spacings ΔG′: the lower column v′ of the pair. Lower-state spacings ΔG″: the column.
    pub v_upper: u32,
    /// ΔG′: the row v″. ΔG″: the lower row v″ of the pair.
    pub v_lower: u32,
    /// x = v + ½ of the spacing in its own state (v′ + ½ or v″ + ½).
    pub x: f64,
    /// The difference, cm⁻¹.
    pub value_cm1: f64,
    /// σ of the difference, cm⁻¹ (√2 σ for equal band σ; null without band σ).
    pub sigma_cm1: Option<f64>,
    /// The same spacing from the consensus term values, cm⁻¹.
    pub consensus_cm1: Option<f64>,
    /// σ of the consensus, cm⁻¹.
    pub consensus_sigma_cm1: Option<f64>,
    /// (value − consensus)/σ of that deviation; null when not checkable.
    pub z: Option<f64>,
    /// |z| above the threshold.
    pub discrepant: bool,
}

/// A flagged cell, for lists and warnings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct FlaggedCell {
    /// v′.
    pub v_upper: u32,
    /// v″.
    pub v_lower: u32,
    /// The flag.
    pub flag: CellFlag,
    /// Residual against the consensus, cm⁻¹.
    pub residual_cm1: Option<f64>,
    /// Plain explanation.
    pub reason: String,
}

/// The Deslandres array of one isotopologue, ready to draw as a grid.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DeslandresArray {
    /// Isotopologue tag (null for untagged rows).
    pub isotopologue: Option<String>,
    /// Column headings v′.
    pub v_upper: Vec<u32>,
    /// Row headings v″.
    pub v_lower: Vec<u32>,
    /// Whether rows and columns run over every v between the lowest and highest observed (gaps
    /// are null cells) rather than only the observed values.
    pub dense: bool,
    /// `cells[r][c]`: the band (`v_upper[c]`, `v_lower[r]`), or null.
    pub cells: Vec<Vec<Option<ArrayCell>>>,
    /// ΔG′_{v′+½} along the rows.
    pub upper_differences: Vec<ChainDifference>,
    /// ΔG″_{v″+½} down the columns.
    pub lower_differences: Vec<ChainDifference>,
    /// Every cell flagged as breaking chains, inconsistent or not connected (cells that cannot
    /// be checked carry the `unchecked` flag in `cells` but are only counted here).
    pub flagged: Vec<FlaggedCell>,
    /// Number of cells that cannot be checked.
    pub unchecked: usize,
    /// Threshold on |z|.
    pub threshold: f64,
    /// Number of connected parts (1 when every band is linked to every other by chains).
    pub connected_parts: usize,
    /// How the consensus was formed and what could be checked.
    pub note: String,
}

fn headings(values: impl Iterator<Item = u32>) -> (Vec<u32>, bool) {
    let mut v: Vec<u32> = values.collect();
    sort(&mut v);
    v.dedup();
    match (v.first(), v.last()) {
        (Some(&lo), Some(&hi)) if hi - lo <= DENSE_SPAN_MAX => ((lo..=hi).collect(), true),
        _ => (v, false),
    }
}

/// Builds the array of `bands` (one isotopologue) and returns it with the term-value fit of its
/// main connected part (every band of that part, flagged or not), or `None` when that part
/// holds a single level pair only.
pub fn build(
    bands: &[PreparedBand],
    isotopologue: Option<String>,
    threshold: f64,
    policy: SigmaScaling,
) -> Result<(DeslandresArray, Option<TermFit>)> {
    let all: Vec<usize> = (0..bands.len()).collect();
    let parts = terms::components(bands, &all);
    let main: Vec<usize> = parts.first().cloned().unwrap_or_default();
    let (cols, dense_c) = headings(bands.iter().map(|b| b.v_upper));
    let (rows, dense_r) = headings(bands.iter().map(|b| b.v_lower));
    let mut cells: Vec<Vec<Option<ArrayCell>>> = vec![vec![None; cols.len()]; rows.len()];
    let mut place: Vec<(usize, usize)> = Vec::with_capacity(bands.len());
    for b in bands {
        let r = rows.binary_search(&b.v_lower).unwrap_or(0);
        let c = cols.binary_search(&b.v_upper).unwrap_or(0);
        place.push((r, c));
        cells[r][c] = Some(ArrayCell {
            v_upper: b.v_upper,
            v_lower: b.v_lower,
            position_cm1: b.position_cm1,
            observed_cm1: b.observed_cm1,
            sigma_cm1: b.sigma_cm1,
            head: b.head,
            residual_cm1: None,
            z: None,
            chain_breaks: 0,
            chain_checks: 0,
            flags: Vec::new(),
        });
    }
    let in_main: Vec<bool> = (0..bands.len()).map(|i| main.contains(&i)).collect();
    let sigma_known = bands.iter().all(|b| b.sigma_cm1.is_some());
    let sig = |i: usize| bands[i].sigma_cm1.unwrap_or(1.0);

    // Full fit of the main part (handed on), and the consensus fit without outliers.
    let full = if main.len() >= 2 {
        Some(terms::fit_terms(bands, &main)?)
    } else {
        None
    };
    let max_out = (main.len() / 5).clamp(1, 20);
    let (clean, set_aside) = if main.len() >= 2 {
        let (f, out) = terms::set_aside_outliers(bands, &main, threshold, policy, max_out)?;
        (Some(f), out)
    } else {
        (None, Vec::new())
    };
    // Variance factor of the consensus fit.
    let f2 = clean.as_ref().and_then(|f| {
        terms::fit_variance_factor(
            policy,
            f.sigma_known,
            &f.lsq,
            &f.bands
                .iter()
                .map(|&i| bands[i].position_cm1)
                .collect::<Vec<_>>(),
        )
    });
    let chi2_tol = 1e-12;

    // Deviation of (Σ_k c_k ν_k) from the consensus gᵀθ, and its σ.
    let deviation = |coef: &[(usize, f64)], g: &DVector<f64>| -> Option<(f64, f64, f64, f64)> {
        let fit = clean.as_ref()?;
        let f2 = f2?;
        let value: f64 = coef.iter().map(|(k, c)| c * bands[*k].position_cm1).sum();
        let cons = (g.transpose() * DVector::from_column_slice(&fit.lsq.params))[(0, 0)];
        let cons_var = fit.variance(g) * f2;
        // w = coef − Sᵀg over all bands.
        let sg = fit.operator.transpose() * g;
        let mut w = vec![0.0; bands.len()];
        for (k, c) in coef {
            w[*k] += c;
        }
        for (r, &k) in fit.bands.iter().enumerate() {
            w[k] -= sg[r];
        }
        let var: f64 = w
            .iter()
            .enumerate()
            .map(|(k, w)| w * w * sig(k).powi(2))
            .sum::<f64>()
            * f2;
        let own: f64 = coef
            .iter()
            .map(|(k, c)| c * c * sig(*k).powi(2))
            .sum::<f64>()
            * f2;
        if var.is_nan() || var <= chi2_tol * own {
            return None;
        }
        Some((value - cons, var.sqrt(), cons, cons_var.max(0.0).sqrt()))
    };

    // Cells.
    for (i, b) in bands.iter().enumerate() {
        let (r, c) = place[i];
        let g = clean
            .as_ref()
            .filter(|_| in_main[i])
            .and_then(|f| f.band_gradient(b.v_upper, b.v_lower));
        if let (Some(g), Some(cell)) = (g, cells[r][c].as_mut()) {
            if let Some((dev, s, _, _)) = deviation(&[(i, 1.0)], &g) {
                cell.residual_cm1 = Some(dev);
                cell.z = Some(dev / s);
            } else if let Some(fit) = clean.as_ref() {
                let cons = (g.transpose() * DVector::from_column_slice(&fit.lsq.params))[(0, 0)];
                cell.residual_cm1 = Some(b.position_cm1 - cons);
            }
        }
    }

    // Difference chains.
    let mut upper_d = Vec::new();
    let mut lower_d = Vec::new();
    let find = |vu: u32, vl: u32| {
        bands
            .iter()
            .position(|b| b.v_upper == vu && b.v_lower == vl)
    };
    for (i, b) in bands.iter().enumerate() {
        // ΔG′ along the row: the right neighbour (v′ + 1, v″).
        if let Some(j) = find(b.v_upper + 1, b.v_lower) {
            let g = clean
                .as_ref()
                .filter(|_| in_main[i] && in_main[j])
                .and_then(|f| f.difference_gradient(true, b.v_upper + 1, b.v_upper));
            upper_d.push(difference(
                bands,
                (j, i),
                b.v_upper,
                b.v_lower,
                f64::from(b.v_upper) + 0.5,
                g.and_then(|g| deviation(&[(j, 1.0), (i, -1.0)], &g)),
                sigma_known,
                threshold,
            ));
        }
        // ΔG″ down the column: the cell below (v′, v″ + 1); ΔG″ = ν(v′, v″) − ν(v′, v″+1).
        if let Some(j) = find(b.v_upper, b.v_lower + 1) {
            let g = clean
                .as_ref()
                .filter(|_| in_main[i] && in_main[j])
                .and_then(|f| f.difference_gradient(false, b.v_lower + 1, b.v_lower));
            lower_d.push(difference(
                bands,
                (i, j),
                b.v_upper,
                b.v_lower,
                f64::from(b.v_lower) + 0.5,
                g.and_then(|g| deviation(&[(i, 1.0), (j, -1.0)], &g)),
                sigma_known,
                threshold,
            ));
        }
    }
    sort_by_key(&mut upper_d, |d| (d.v_upper, d.v_lower));
    sort_by_key(&mut lower_d, |d| (d.v_lower, d.v_upper));

    // Chain breaks per cell.
    let mut tally = |vu_a: u32, vl_a: u32, vu_b: u32, vl_b: u32, d: &ChainDifference| {
        for (vu, vl) in [(vu_a, vl_a), (vu_b, vl_b)] {
            if let (Ok(r), Ok(c)) = (rows.binary_search(&vl), cols.binary_search(&vu))
                && let Some(cell) = cells[r][c].as_mut()
            {
                if d.z.is_some() {
                    cell.chain_checks += 1;
                }
                if d.discrepant {
                    cell.chain_breaks += 1;
                }
            }
        }
    };
    for d in &upper_d {
        tally(d.v_upper, d.v_lower, d.v_upper + 1, d.v_lower, d);
    }
    for d in &lower_d {
        tally(d.v_upper, d.v_lower, d.v_upper, d.v_lower + 1, d);
    }

    // Flags.
    let mut flagged = Vec::new();
    let mut unchecked = 0usize;
    for (i, b) in bands.iter().enumerate() {
        let (r, c) = place[i];
        let Some(cell) = cells[r][c].as_mut() else {
            continue;
        };
        let (flag, reason) = if !in_main[i] {
            (
                Some(CellFlag::NotConnected),
                "no chain links this band to the main part of the array: its levels are not placed by the term-value fit".to_string(),
            )
        } else if cell.chain_breaks >= 2 {
            (
                Some(CellFlag::BreaksTwoChains),
                format!(
                    "{} of its {} checked differences disagree with the rest of the array (|z| > {threshold}): check the assignment, a typo, or a perturbation",
                    cell.chain_breaks, cell.chain_checks
                ),
            )
        } else if set_aside.contains(&i) {
            (
                Some(CellFlag::Inconsistent),
                format!(
                    "disagrees with the term values of the other bands (z = {}), though it breaks fewer than two chains",
                    cell.z.map(|z| format!("{z:.1}")).unwrap_or("—".into())
                ),
            )
        } else if cell.chain_checks == 0 && cell.z.is_none() {
            (
                Some(CellFlag::Unchecked),
                "its level is fixed by this band alone: nothing in the array can confirm it"
                    .to_string(),
            )
        } else {
            (None, String::new())
        };
        if let Some(f) = flag {
            cell.flags.push(f);
            if f == CellFlag::Unchecked {
                unchecked += 1;
                continue;
            }
            flagged.push(FlaggedCell {
                v_upper: b.v_upper,
                v_lower: b.v_lower,
                flag: f,
                residual_cm1: cell.residual_cm1,
                reason,
            });
        }
    }
    sort_by_key(&mut flagged, |f| (f.v_lower, f.v_upper));

    let mut note = match (&clean, f2) {
        (Some(f), Some(f2)) => format!(
            "consensus: term values of {} of the {} connected bands ({} set aside as outliers); χ²_ν = {} of that fit; σ of deviations {}",
            f.bands.len(),
            main.len(),
            set_aside.len(),
            f.lsq
                .chi2_reduced()
                .map(|c| format!("{c:.3}"))
                .unwrap_or("— (no degrees of freedom)".into()),
            if !sigma_known {
                format!("from the scatter (band σ ≈ {:.4} cm⁻¹)", f2.sqrt())
            } else if f2 > 1.0 {
                format!("with band σ scaled by √χ²_ν = {:.3}", f2.sqrt())
            } else {
                "from the band σ as given".into()
            }
        ),
        _ => "too few bands (or no degrees of freedom without band σ) to check the chains".into(),
    };
    if unchecked > 0 {
        note.push_str(&format!(
            "; {unchecked} of {} cells cannot be checked (each fixes its level alone: a single progression, or a level seen in one band only)",
            bands.len()
        ));
    }
    let array = DeslandresArray {
        isotopologue,
        v_upper: cols,
        v_lower: rows,
        dense: dense_c && dense_r,
        cells,
        upper_differences: upper_d,
        lower_differences: lower_d,
        flagged,
        unchecked,
        threshold,
        connected_parts: parts.len(),
        note,
    };
    Ok((array, full))
}

#[allow(clippy::too_many_arguments)]
fn difference(
    bands: &[PreparedBand],
    (a, b): (usize, usize),
    v_upper: u32,
    v_lower: u32,
    x: f64,
    dev: Option<(f64, f64, f64, f64)>,
    sigma_known: bool,
    threshold: f64,
) -> ChainDifference {
    let value = bands[a].position_cm1 - bands[b].position_cm1;
    let sigma = match (bands[a].sigma_cm1, bands[b].sigma_cm1) {
        (Some(x), Some(y)) if sigma_known => Some(x.hypot(y)),
        _ => None,
    };
    let z = dev.map(|(d, s, _, _)| d / s);
    ChainDifference {
        v_upper,
        v_lower,
        x,
        value_cm1: value,
        sigma_cm1: sigma,
        consensus_cm1: dev.map(|d| d.2),
        consensus_sigma_cm1: dev.map(|d| d.3),
        z,
        discrepant: z.is_some_and(|z| z.abs() > threshold),
    }
}
