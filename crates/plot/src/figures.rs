//! The figures of a single-state analysis, built from a core [`Report`] as [`XyChart`]s.
//!
//! Each function only arranges values the report already holds (points, sampled curves, v_D,
//! limits) and rescales energies to the display unit with core's conversion factor; nothing
//! physical is computed here.

use rungs_core::bands::array::{CellFlag, DeslandresArray};
use rungs_core::pipeline::Analysis;
use rungs_core::report::Report;
use rungs_core::session::Session;
use rungs_core::units::Unit;

use crate::{Dash, Layer, Legend, Mark, Point, Shape, XyChart};

/// Identifiers of the figures a single-state report offers, in display order.
pub const FIGURES: [(&str, &str); 7] = [
    ("spacings", "Spacings ΔG with every extrapolation"),
    ("residuals", "Residuals of the selected G(v) fit"),
    (
        "near-limit",
        "Near-dissociation (LeRoy–Bernstein) linearised plot",
    ),
    ("levels", "Levels G(v) with model curves"),
    (
        "ladder",
        "Top of the well: last levels and each method's limit",
    ),
    (
        "potential",
        "RKR potential with its levels, turning points and wavefunctions",
    ),
    ("loop", "Observed − calculated levels of the RKR potential"),
];

/// Palette index and marker for a method, fixed so a method keeps its look in every figure.
pub fn method_style(method: &str) -> (usize, Shape) {
    match method {
        "observed-sum" => (0, Shape::Circle),
        "birge-sponer-linear" => (1, Shape::Square),
        "birge-sponer-curved" => (2, Shape::Triangle),
        "leroy-bernstein" => (3, Shape::Circle),
        "leroy-bernstein-n-free" => (4, Shape::Cross),
        "leroy-bernstein-alt-levels" => (5, Shape::Triangle),
        "leroy-bernstein-cn-fixed" => (6, Shape::Square),
        _ => (0, Shape::Cross),
    }
}

/// A display unit for energies: its label and the factor from cm⁻¹.
#[derive(Debug, Clone, Copy)]
pub struct EnergyScale {
    /// Multiply a value in cm⁻¹ by this to get the display unit.
    pub per_cm1: f64,
    /// Axis label of the unit.
    pub label: &'static str,
}

impl EnergyScale {
    /// The scale for `unit`, when it is an energy unit (wavelength units are not).
    pub fn of(unit: Unit) -> Option<EnergyScale> {
        unit.cm1_per_unit().map(|f| EnergyScale {
            per_cm1: 1.0 / f,
            label: unit.label(),
        })
    }

    /// cm⁻¹ itself.
    pub fn cm1() -> EnergyScale {
        EnergyScale {
            per_cm1: 1.0,
            label: "cm⁻¹",
        }
    }

    fn e(&self, cm1: f64) -> f64 {
        cm1 * self.per_cm1
    }
}

fn synthetic_note(report: &Report) -> &'static str {
    let synthetic = report
        .session
        .as_ref()
        .is_some_and(|s| s.input.text.contains("SYNTHETIC"));
    if synthetic { "SYNTHETIC data · " } else { "" }
}

/// Build figure `id` (one of [`FIGURES`]) for `report` in energy unit `scale`.
pub fn figure(report: &Report, id: &str, scale: EnergyScale) -> Option<XyChart> {
    let mut chart = plain_figure(report, id, scale)?;
    mark_far_points(report, id, &mut chart);
    Some(chart)
}

/// The figure without the marks of points far outside the rest.
fn plain_figure(report: &Report, id: &str, scale: EnergyScale) -> Option<XyChart> {
    match id {
        "spacings" => Some(spacings(report, scale)),
        "residuals" => Some(residuals(report, scale)),
        "near-limit" => near_limit(report),
        "levels" => Some(levels(report, scale)),
        "ladder" => Some(ladder(report, scale)),
        "potential" => potential(report, scale),
        "loop" => loop_check(report, scale),
        _ => None,
    }
}

/// Legend text of the marks of points far outside the rest.
pub const FAR_LABEL: &str = "⚠ far outside the rest";

/// Every data point that involves a point far outside the rest ([`Report::far_points`]) drawn
/// again on top as a square in the warning colour, with its row in the read-out. A spacing
/// involves both of its levels; in the figures against x = v + ½ a level v is the spacings at
/// v − ½ and v + ½. Figures without data points at v (the ladder, the potential) are left alone.
fn mark_far_points(report: &Report, id: &str, chart: &mut XyChart) {
    if report.far_points.is_empty() {
        return;
    }
    let half_integer = matches!(id, "spacings" | "near-limit");
    let given_spacings = report.input.kind == rungs_core::dunham::DataKind::Spacings;
    let hits = |x: f64, v: f64| {
        if !half_integer {
            x == v
        } else if given_spacings {
            x == v + 0.5
        } else {
            x == v + 0.5 || x == v - 0.5
        }
    };
    let mut marked = Vec::new();
    for layer in &chart.layers {
        let Mark::Points { points, .. } = &layer.mark else {
            continue;
        };
        for p in points {
            let drawn = marked.iter().any(|m: &Point| m.x == p.x && m.y == p.y);
            if let Some(f) = report.far_points.iter().find(|f| hits(p.x, f.v))
                && !drawn
            {
                let row = f.row.map(|r| format!(", row {r}")).unwrap_or_default();
                marked.push(Point {
                    x: p.x,
                    y: p.y,
                    y_err: None,
                    included: true,
                    tag: format!("v = {}{row}: far outside the rest — check it", f.v),
                });
            }
        }
    }
    if !marked.is_empty() {
        chart.layers.push(Layer {
            label: FAR_LABEL.into(),
            colour: 2,
            mark: Mark::Points {
                points: marked,
                shape: Shape::Square,
            },
        });
    }
}

/// ΔG_{v+½} against x = v + ½ with error bars, every method's spacing curve and its v_D.
pub fn spacings(report: &Report, scale: EnergyScale) -> XyChart {
    let mut layers = Vec::new();
    let defensible = |m: &str| {
        report
            .estimates
            .iter()
            .any(|e| e.method == m && e.defensible)
    };
    for c in &report.plot.spacing_curves {
        let (colour, _) = method_style(&c.method);
        let dash = if defensible(&c.method) {
            Dash::Solid
        } else {
            Dash::Dashed
        };
        layers.push(Layer {
            label: c.label.clone(),
            colour,
            mark: Mark::Line {
                points: c.points.iter().map(|p| (p[0], scale.e(p[1]))).collect(),
                dash,
            },
        });
        if let Some(vd) = c.v_d {
            layers.push(Layer {
                label: String::new(),
                colour,
                mark: Mark::VRule {
                    x: vd,
                    text: format!("v_D {vd:.1}"),
                },
            });
        }
    }
    let points = report
        .spacings
        .iter()
        .map(|s| Point {
            x: s.x,
            y: scale.e(s.spacing_cm1),
            y_err: s.sigma_cm1.map(|e| scale.e(e)),
            included: true,
            tag: format!(
                "ΔG(v = {}→{}) = {:.4} ± {} {}",
                s.v_lower,
                s.v_lower + 1,
                scale.e(s.spacing_cm1),
                s.sigma_cm1
                    .map(|e| format!("{:.2e}", scale.e(e)))
                    .unwrap_or("?".into()),
                scale.label
            ),
        })
        .collect();
    layers.push(Layer {
        label: "observed ΔG".into(),
        colour: 0,
        mark: Mark::Points {
            points,
            shape: Shape::Circle,
        },
    });
    XyChart {
        title: "Vibrational spacings and extrapolations".into(),
        x_label: "x = v + ½  (v = lower level)".into(),
        y_label: format!("ΔG_(v+½) / {}", scale.label),
        layers,
        x_range: None,
        y_range: Some((
            0.0,
            max_y(report.spacings.iter().map(|s| scale.e(s.spacing_cm1))) * 1.08,
        )),
        note: format!(
            "{}ΔG_(v+½) = G(v+1) − G(v) plotted at x = v + ½ (v_D sits where a straight line reaches zero); dashed: not in the recommendation",
            synthetic_note(report)
        ),
        legend: Legend::UpperRight,
        x_ticks: true,
    }
}

fn max_y(it: impl Iterator<Item = f64>) -> f64 {
    it.filter(|y| y.is_finite())
        .fold(0.0, f64::max)
        .max(f64::MIN_POSITIVE)
}

/// Observed − fitted G(v) of the selected polynomial, with σ and outliers marked.
pub fn residuals(report: &Report, scale: EnergyScale) -> XyChart {
    let points = report
        .fit
        .residuals
        .iter()
        .map(|r| Point {
            x: r.v,
            y: scale.e(r.residual_cm1),
            y_err: r.sigma_cm1.map(|e| scale.e(e)),
            included: true,
            tag: format!(
                "v = {}: obs − calc = {:.4} {}{}",
                r.v,
                scale.e(r.residual_cm1),
                scale.label,
                r.studentized
                    .map(|s| format!(", studentized {s:.2}"))
                    .unwrap_or_default()
            ),
        })
        .collect();
    let outliers: Vec<Point> = report
        .fit
        .residuals
        .iter()
        .filter(|r| r.outlier)
        .map(|r| Point {
            x: r.v,
            y: scale.e(r.residual_cm1),
            y_err: None,
            included: true,
            tag: format!(
                "v = {}: flagged (|studentized| > {})",
                r.v, report.fit.outlier_threshold
            ),
        })
        .collect();
    let mut layers = vec![
        Layer {
            label: String::new(),
            colour: 0,
            mark: Mark::HRule {
                y: 0.0,
                text: String::new(),
            },
        },
        Layer {
            label: format!("order-{} fit", report.fit.order),
            colour: 1,
            mark: Mark::Points {
                points,
                shape: Shape::Circle,
            },
        },
    ];
    if !outliers.is_empty() {
        layers.push(Layer {
            label: "possible outlier".into(),
            colour: 2,
            mark: Mark::Points {
                points: outliers,
                shape: Shape::Cross,
            },
        });
    }
    let x_label = if report.input.kind == rungs_core::dunham::DataKind::Spacings {
        "v (lower level)"
    } else {
        "v"
    };
    XyChart {
        title: format!("Residuals of the order-{} fit", report.fit.order),
        x_label: x_label.into(),
        y_label: format!("observed − fitted / {}", scale.label),
        layers,
        x_range: None,
        y_range: None,
        note: format!("{}error bars: σ as used in the fit", synthetic_note(report)),
        legend: Legend::UpperRight,
        x_ticks: true,
    }
}

/// The near-dissociation linearised plot (ΔG)^((n−2)/(n+2)) against x = v + ½.
pub fn near_limit(report: &Report) -> Option<XyChart> {
    let lin = report.plot.lb_linearised.as_ref()?;
    let (colour, _) = method_style(&lin.method);
    let points = lin
        .points
        .iter()
        .map(|p| Point {
            x: p.x,
            y: p.y,
            y_err: p.sigma,
            included: true,
            tag: format!("x = {}: ΔG^{:.3} = {:.5}", p.x, lin.exponent, p.y),
        })
        .collect();
    Some(XyChart {
        title: format!("Near-dissociation plot, n = {}", lin.n),
        x_label: "x = v + ½".into(),
        y_label: format!("(ΔG / cm⁻¹)^{}", crate::tick_label(&lin.exponent)),
        layers: vec![
            Layer {
                label: "LeRoy–Bernstein line".into(),
                colour,
                mark: Mark::Line {
                    points: lin.line.iter().map(|p| (p[0], p[1])).collect(),
                    dash: Dash::Solid,
                },
            },
            Layer {
                label: "observed".into(),
                colour: 0,
                mark: Mark::Points {
                    points,
                    shape: Shape::Circle,
                },
            },
        ],
        x_range: None,
        y_range: None,
        note: format!(
            "{}a straight line whose zero is v_D + ½ if the levels follow D − C_n/rⁿ; exponent (n−2)/(n+2)",
            synthetic_note(report)
        ),
        legend: Legend::UpperRight,
        x_ticks: true,
    })
}

/// G(v) data with every model's level curve.
pub fn levels(report: &Report, scale: EnergyScale) -> XyChart {
    let mut layers: Vec<Layer> = report
        .plot
        .level_curves
        .iter()
        .map(|c| Layer {
            label: c.label.clone(),
            colour: method_style(&c.method).0,
            mark: Mark::Line {
                points: c.points.iter().map(|p| (p[0], scale.e(p[1]))).collect(),
                dash: Dash::Solid,
            },
        })
        .collect();
    layers.push(Layer {
        label: "observed levels".into(),
        colour: 0,
        mark: Mark::Points {
            points: report
                .plot
                .levels
                .iter()
                .map(|p| Point {
                    x: p.x,
                    y: scale.e(p.y),
                    y_err: p.sigma.map(|e| scale.e(e)),
                    included: true,
                    tag: format!("G(v = {}) = {:.4} {}", p.x, scale.e(p.y), scale.label),
                })
                .collect(),
            shape: Shape::Circle,
        },
    });
    XyChart {
        title: "Levels and model curves".into(),
        x_label: "v".into(),
        y_label: format!("G(v) / {}", scale.label),
        layers,
        x_range: None,
        y_range: None,
        note: format!("{}energies on the input's origin", synthetic_note(report)),
        legend: Legend::LowerRight,
        x_ticks: true,
    }
}

/// The top of the well: the highest observed levels as rungs and each method's dissociation
/// limit (D0 from v = 0) as a rule, so the distance from the last level to each limit shows.
pub fn ladder(report: &Report, scale: EnergyScale) -> XyChart {
    let g0 = report
        .levels
        .iter()
        .find(|l| l.v == 0)
        .or_else(|| report.levels.first())
        .map(|l| l.energy_cm1)
        .unwrap_or(0.0);
    // Show the top eight observed levels and every limit above them.
    let shown: Vec<_> = report.levels.iter().rev().take(8).collect();
    let segments: Vec<_> = shown
        .iter()
        .map(|l| {
            let y = scale.e(l.energy_cm1 - g0);
            ((0.05, y), (0.45, y))
        })
        .collect();
    let mut layers = vec![Layer {
        label: format!(
            "observed levels v = {}…{}",
            shown.last().map(|l| l.v).unwrap_or(0),
            shown.first().map(|l| l.v).unwrap_or(0)
        ),
        colour: 0,
        mark: Mark::Segments {
            segments,
            dash: Dash::Solid,
        },
    }];
    for e in &report.estimates {
        if let Some(d0) = e.d0_cm1 {
            let (colour, _) = method_style(&e.method);
            layers.push(Layer {
                label: format!(
                    "{}: {}",
                    e.label,
                    rungs_core::format::significant(scale.e(d0), 7)
                ),
                colour,
                mark: Mark::HRule {
                    y: scale.e(d0),
                    text: String::new(),
                },
            });
        }
    }
    let lo = shown
        .last()
        .map(|l| scale.e(l.energy_cm1 - g0))
        .unwrap_or(0.0);
    let hi = report
        .estimates
        .iter()
        .filter_map(|e| e.d0_cm1)
        .map(|d| scale.e(d))
        .chain(shown.first().map(|l| scale.e(l.energy_cm1 - g0)))
        .fold(lo, f64::max);
    let pad = (hi - lo).max(f64::MIN_POSITIVE) * 0.06;
    XyChart {
        title: "Top of the well: last levels and each method's limit".into(),
        x_label: String::new(),
        y_label: format!("energy above v = 0 / {}", scale.label),
        layers,
        x_range: Some((0.0, 1.0)),
        y_range: Some((lo - pad, hi + pad)),
        note: format!(
            "{}rules: D0 of each method, measured from v = 0",
            synthetic_note(report)
        ),
        legend: Legend::LowerRight,
        x_ticks: false,
    }
}

/// Figures of a whole analysis, `(id, title)`: a single state's figures as in [`FIGURES`], or for
/// a band list the Deslandres array followed by each state's figures, ids prefixed `upper:` and
/// `lower:`.
pub fn analysis_figures(analysis: &Analysis) -> Vec<(String, String)> {
    let of = |r: &Report, prefix: &str, who: &str| -> Vec<(String, String)> {
        FIGURES
            .iter()
            .filter(|(id, _)| figure(r, id, EnergyScale::cm1()).is_some())
            .map(|(id, title)| (format!("{prefix}{id}"), format!("{who}{title}")))
            .collect()
    };
    match analysis {
        Analysis::Levels(r) => of(r, "", ""),
        Analysis::Bands(b) => {
            let mut list: Vec<(String, String)> = (0..b.arrays.len())
                .map(|i| {
                    let tag = b.arrays[i].isotopologue.as_deref().unwrap_or("");
                    let title = if tag.is_empty() {
                        "Band array (Deslandres) with flagged cells".to_string()
                    } else {
                        format!("Band array (Deslandres) of {tag} with flagged cells")
                    };
                    (format!("array:{i}"), title)
                })
                .collect();
            if let Some(u) = &b.states.upper {
                list.extend(of(u, "upper:", "Upper state: "));
            }
            if let Some(l) = &b.states.lower {
                list.extend(of(l, "lower:", "Lower state: "));
            }
            list
        }
    }
}

/// Figure `id` (from [`analysis_figures`]) of an analysis, energies in `scale`.
pub fn analysis_figure(analysis: &Analysis, id: &str, scale: EnergyScale) -> Option<XyChart> {
    match analysis {
        Analysis::Levels(r) => figure(r, id, scale),
        Analysis::Bands(b) => {
            if let Some(i) = id.strip_prefix("array:") {
                let array = b.arrays.get(i.parse::<usize>().ok()?)?;
                return Some(band_array(array, scale, b.session.as_ref()));
            }
            let (state, rest) = id.split_once(':')?;
            let report = match state {
                "upper" => b.states.upper.as_ref()?,
                "lower" => b.states.lower.as_ref()?,
                _ => return None,
            };
            let mut chart = figure(report, rest, scale)?;
            chart.title = format!(
                "{} state: {}",
                if state == "upper" { "Upper" } else { "Lower" },
                chart.title
            );
            Some(chart)
        }
    }
}

/// The Deslandres array as a map: each observed band at (v′, v″); a cell that breaks two
/// difference chains (or is otherwise flagged) is drawn as a cross, gaps are empty.
pub fn band_array(
    array: &DeslandresArray,
    scale: EnergyScale,
    session: Option<&Session>,
) -> XyChart {
    let mut ok = Vec::new();
    let mut flagged = Vec::new();
    let mut unchecked = Vec::new();
    for cell in array.cells.iter().flatten().flatten() {
        let residual = cell
            .residual_cm1
            .map(|r| format!(", term-value residual {:.4} {}", scale.e(r), scale.label))
            .unwrap_or_default();
        let flags: Vec<&str> = cell.flags.iter().map(|f| f.describe()).collect();
        let point = Point {
            x: cell.v_upper as f64,
            y: cell.v_lower as f64,
            y_err: None,
            included: !cell.flags.contains(&CellFlag::Unchecked),
            tag: format!(
                "ν({}, {}) = {:.4} {}{}{}",
                cell.v_upper,
                cell.v_lower,
                scale.e(cell.position_cm1),
                scale.label,
                residual,
                if flags.is_empty() {
                    String::new()
                } else {
                    format!(" — {}", flags.join("; "))
                }
            ),
        };
        if cell
            .flags
            .iter()
            .any(|f| matches!(f, CellFlag::BreaksTwoChains | CellFlag::Inconsistent))
        {
            flagged.push(point);
        } else if cell.flags.is_empty() {
            ok.push(point);
        } else {
            unchecked.push(point);
        }
    }
    let mut layers = vec![Layer {
        label: "band observed, consistent".into(),
        colour: 1,
        mark: Mark::Points {
            points: ok,
            shape: Shape::Square,
        },
    }];
    if !unchecked.is_empty() {
        layers.push(Layer {
            label: "cannot be checked".into(),
            colour: 0,
            mark: Mark::Points {
                points: unchecked,
                shape: Shape::Circle,
            },
        });
    }
    if !flagged.is_empty() {
        layers.push(Layer {
            label: "flagged: breaks difference chains".into(),
            colour: 2,
            mark: Mark::Points {
                points: flagged,
                shape: Shape::Cross,
            },
        });
    }
    let span = |v: &[u32]| {
        let lo = v.iter().copied().min().unwrap_or(0) as f64;
        let hi = v.iter().copied().max().unwrap_or(0) as f64;
        (lo - 0.7, hi + 0.7)
    };
    let synthetic = session.is_some_and(|s| s.input.text.contains("SYNTHETIC"));
    // Cells fill the whole plot, so every corner holds data: the legend gets a strip of its own
    // above the top row (about 8 % of the height per entry).
    let y_range = {
        let (lo, hi) = span(&array.v_lower);
        let entries = layers.iter().filter(|l| !l.label.is_empty()).count() as f64;
        let free = (0.04 + 0.08 * entries).min(0.5);
        (lo, lo + (hi - lo) / (1.0 - free))
    };
    XyChart {
        title: match &array.isotopologue {
            Some(t) => format!("Band array of {t}: (v′, v″) cells"),
            None => "Band array: (v′, v″) cells".into(),
        },
        x_label: "v′ (upper state)".into(),
        y_label: "v″ (lower state)".into(),
        layers,
        x_range: Some(span(&array.v_upper)),
        // Cells fill the whole plot, so every corner holds data: the legend gets a strip of its
        // own above the top row (about 8 % of the height per entry).
        y_range: Some(y_range),
        note: format!(
            "{}{} flagged of {} bands; rows of constant v″ give ΔG′ differences, columns of constant v′ give ΔG″",
            if synthetic { "SYNTHETIC data · " } else { "" },
            array.flagged.len(),
            array.cells.iter().flatten().flatten().count()
        ),
        legend: Legend::UpperRight,
        x_ticks: true,
    }
}

/// A short tab label for a figure id of [`analysis_figures`].
pub fn short_label(id: &str) -> String {
    let (prefix, rest) = match id.split_once(':') {
        Some(("upper", r)) => ("upper ", r),
        Some(("lower", r)) => ("lower ", r),
        Some(("array", _)) => return "band array".into(),
        _ => ("", id),
    };
    let name = match rest {
        "spacings" => "ΔG",
        "residuals" => "residuals",
        "near-limit" => "near limit",
        "levels" => "G(v)",
        "ladder" => "top of well",
        "potential" => "potential",
        "loop" => "obs − calc",
        other => other,
    };
    format!("{prefix}{name}")
}

/// The RKR potential with each solved level drawn between its turning points, a few
/// wavefunctions drawn on their levels, and the RKR turning points.
pub fn potential(report: &Report, scale: EnergyScale) -> Option<XyChart> {
    let p = report.potential.as_ref()?;
    let mut layers = vec![Layer {
        label: "RKR potential (with extensions)".into(),
        colour: 0,
        mark: Mark::Line {
            points: p.curve.iter().map(|q| (q[0], scale.e(q[1]))).collect(),
            dash: Dash::Solid,
        },
    }];
    layers.push(Layer {
        label: "levels of the curve".into(),
        colour: 6,
        mark: Mark::Segments {
            segments: p
                .levels
                .iter()
                .map(|l| {
                    let e = scale.e(l.energy_cm1);
                    ((l.r_inner_angstrom, e), (l.r_outer_angstrom, e))
                })
                .collect(),
            dash: Dash::Solid,
        },
    });
    // Wavefunctions: amplitude scaled so the largest lobe spans ~0.8 of a mean level spacing.
    let spacing = if p.levels.len() > 1 {
        (p.levels[p.levels.len() - 1].energy_cm1 - p.levels[0].energy_cm1)
            / (p.levels.len() - 1) as f64
    } else {
        p.levels.first().map_or(1.0, |l| l.energy_cm1)
    };
    let mut first = true;
    for l in &p.levels {
        if let Some(w) = &l.wavefunction {
            let peak = w
                .iter()
                .fold(0.0_f64, |m, q| m.max(q[1].abs()))
                .max(f64::MIN_POSITIVE);
            let amp = 0.8 * spacing / peak;
            layers.push(Layer {
                label: if first {
                    "wavefunctions ψ_v (scaled, on their levels)".into()
                } else {
                    String::new()
                },
                colour: 1,
                mark: Mark::Line {
                    points: w
                        .iter()
                        .map(|q| (q[0], scale.e(l.energy_cm1 + amp * q[1])))
                        .collect(),
                    dash: Dash::Solid,
                },
            });
            first = false;
        }
    }
    let tp = |inner: bool| -> Vec<Point> {
        p.turning_points
            .iter()
            .map(|t| Point {
                x: if inner {
                    t.r_inner_angstrom
                } else {
                    t.r_outer_angstrom
                },
                y: scale.e(t.energy_cm1),
                y_err: None,
                included: true,
                tag: format!(
                    "v = {}: G = {:.3} {}, r₋ = {:.5} Å, r₊ = {:.5} Å, B = {:.6} cm⁻¹",
                    t.v,
                    scale.e(t.energy_cm1),
                    scale.label,
                    t.r_inner_angstrom,
                    t.r_outer_angstrom,
                    t.b_cm1
                ),
            })
            .collect()
    };
    let mut points = tp(true);
    points.extend(tp(false));
    layers.push(Layer {
        label: "RKR turning points".into(),
        colour: 2,
        mark: Mark::Points {
            points,
            shape: Shape::Circle,
        },
    });
    Some(XyChart {
        title: format!(
            "RKR potential (r_e = {:.5} Å) and its levels",
            p.re_angstrom
        ),
        x_label: "r / Å".into(),
        y_label: format!("V(r) above the minimum / {}", scale.label),
        layers,
        x_range: None,
        y_range: None,
        note: format!("{}{}", synthetic_note(report), p.method),
        legend: Legend::LowerRight,
        x_ticks: true,
    })
}

/// Observed − calculated level energies (after one common offset) of the RKR potential.
pub fn loop_check(report: &Report, scale: EnergyScale) -> Option<XyChart> {
    let p = report.potential.as_ref()?;
    let points = p
        .check
        .rows
        .iter()
        .map(|r| Point {
            x: r.v as f64,
            y: scale.e(r.residual_cm1),
            y_err: r.sigma_cm1.map(|s| scale.e(s)),
            included: true,
            tag: format!(
                "v = {}: obs − calc = {:.4} {}{}",
                r.v,
                scale.e(r.residual_cm1),
                scale.label,
                r.b_residual_cm1
                    .map(|b| format!(", B obs − calc = {b:.2e} cm⁻¹"))
                    .unwrap_or_default()
            ),
        })
        .collect();
    Some(XyChart {
        title: "Closing the loop: observed − calculated levels".into(),
        x_label: "v".into(),
        y_label: format!("observed − calculated / {}", scale.label),
        layers: vec![
            Layer {
                label: String::new(),
                colour: 0,
                mark: Mark::HRule {
                    y: 0.0,
                    text: String::new(),
                },
            },
            Layer {
                label: "levels of the RKR potential".into(),
                colour: 1,
                mark: Mark::Points {
                    points,
                    shape: Shape::Circle,
                },
            },
        ],
        x_range: None,
        y_range: None,
        note: format!(
            "{}one common offset fitted · {}",
            synthetic_note(report),
            p.check.summary.split(". ").next().unwrap_or("")
        ),
        legend: Legend::UpperRight,
        x_ticks: true,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use rungs_core::intake::IntakeOptions;
    use rungs_core::settings::AnalysisSettings;

    /// The report of SYNTHETIC Morse levels (ωe = 230, ωexe = 3 cm⁻¹, closed form, common
    /// practice, no source) with v = 10 typed 450 cm⁻¹ too high.
    fn typo_report() -> Report {
        let mut t = String::from("v,E,sigma\n");
        for v in 0..25 {
            let h = f64::from(v) + 0.5;
            let e = 230.0 * h - 3.0 * h * h + if v == 10 { 450.0 } else { 0.0 };
            t.push_str(&format!("{v},{e:.2},0.05\n"));
        }
        let settings = AnalysisSettings {
            mc_samples: 0,
            ..AnalysisSettings::default()
        };
        let s = Session::new(t, None, IntakeOptions::default(), settings);
        match rungs_core::analyze_session(&s, &mut |_, _| {}) {
            Ok(Analysis::Levels(r)) => *r,
            other => panic!("a levels report expected, got {other:?}"),
        }
    }

    fn far_xs(chart: &XyChart) -> Vec<f64> {
        chart
            .layers
            .iter()
            .filter(|l| l.label == FAR_LABEL)
            .flat_map(|l| match &l.mark {
                Mark::Points { points, .. } => points.iter().map(|p| p.x).collect(),
                _ => Vec::new(),
            })
            .collect()
    }

    #[test]
    fn the_far_point_is_marked_in_every_figure_with_data_at_v() {
        let r = typo_report();
        assert_eq!(r.far_points.len(), 1);
        let scale = EnergyScale::of(Unit::Cm1).unwrap();
        // A level enters the spacings below and above it (ΔG at x = v ± ½).
        let spacings = figure(&r, "spacings", scale).unwrap();
        assert_eq!(far_xs(&spacings), vec![9.5, 10.5]);
        for id in ["residuals", "levels", "loop"] {
            if let Some(chart) = figure(&r, id, scale) {
                assert_eq!(far_xs(&chart), vec![10.0], "{id}");
            }
        }
        // The demo has no such point and no such layer.
        let clean = rungs_core::analyze_session(
            &Session::new(
                include_str!("../../core/data/demo/qz2-levels.csv"),
                None,
                IntakeOptions::default(),
                AnalysisSettings {
                    mc_samples: 0,
                    ..AnalysisSettings::default()
                },
            ),
            &mut |_, _| {},
        )
        .unwrap();
        let Analysis::Levels(clean) = clean else {
            panic!("levels")
        };
        assert!(far_xs(&figure(&clean, "spacings", scale).unwrap()).is_empty());
    }
}
