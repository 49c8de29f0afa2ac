//! # rungs-plot: the charts of Rungs
//!
//! Every figure is described by a plain value ([`XyChart`]) and drawn by one function generic
//! over a plotters [`DrawingBackend`], so the page draws it on a canvas (plotters-canvas), export
//! writes SVG, and native tests render SVG text and inspect it.
//!
//! Architecture invariant: plot code only draws values it is given; it computes nothing physical.
//! Curves arrive sampled by core; this crate maps them to pixels, axes, legends and marks.
//!
//! Colours come from the Okabe–Ito colour-blind-safe palette (Okabe & Ito, 2008), and every
//! series also differs by marker shape or dash pattern, so figures survive greyscale printing.

use plotters::chart::SeriesAnno;
use plotters::coord::Shift;
use plotters::element::{Drawable, PointCollection};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters_backend::{BackendCoord, DrawingErrorKind};
use serde::{Deserialize, Serialize};

pub use plotters::prelude::{DrawingArea, DrawingBackend};

pub mod figures;
mod record;

use record::{Recorder, Recording, Replay};

/// The Okabe–Ito palette (black first), as RGB.
pub const PALETTE: [(u8, u8, u8); 8] = [
    (0, 0, 0),       // black
    (0, 114, 178),   // blue
    (213, 94, 0),    // vermillion
    (0, 158, 115),   // bluish green
    (204, 121, 167), // reddish purple
    (230, 159, 0),   // orange
    (86, 180, 233),  // sky blue
    (240, 228, 66),  // yellow (use sparingly: low contrast on white)
];

/// Grey used for excluded data, drawn hollow.
const EXCLUDED_GREY: RGBColor = RGBColor(150, 150, 150);

/// Errors from drawing: the backend failed, or the chart holds nothing drawable.
#[derive(Debug, Clone, PartialEq)]
pub struct PlotError(pub String);

impl std::fmt::Display for PlotError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "plot: {}", self.0)
    }
}

impl std::error::Error for PlotError {}

fn backend_err<E: std::fmt::Debug>(e: E) -> PlotError {
    PlotError(format!("{e:?}"))
}

/// Marker shape of a point series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Shape {
    /// Filled circle.
    #[default]
    Circle,
    /// Filled triangle.
    Triangle,
    /// Filled square.
    Square,
    /// Diagonal cross.
    Cross,
}

/// Dash pattern of a line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Dash {
    /// Continuous.
    #[default]
    Solid,
    /// Long dashes.
    Dashed,
    /// Short dots.
    Dotted,
}

/// One data point, optionally with a symmetric vertical error bar and a hover tag.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Point {
    /// Abscissa.
    pub x: f64,
    /// Ordinate.
    pub y: f64,
    /// One-σ vertical error bar half-length, when known.
    pub y_err: Option<f64>,
    /// Included in the fits (drawn filled) or excluded (drawn hollow grey, still visible).
    pub included: bool,
    /// Text shown when the pointer rests on this point.
    pub tag: String,
}

/// What a layer draws.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Mark {
    /// Markers with optional error bars.
    Points {
        /// The points.
        points: Vec<Point>,
        /// Marker shape.
        shape: Shape,
    },
    /// A polyline through sampled points.
    Line {
        /// Vertices in order.
        points: Vec<(f64, f64)>,
        /// Dash pattern.
        dash: Dash,
    },
    /// Independent straight segments (level ladders, turning-point rungs).
    Segments {
        /// Each segment as ((x0, y0), (x1, y1)).
        segments: Vec<((f64, f64), (f64, f64))>,
        /// Dash pattern.
        dash: Dash,
    },
    /// A vertical rule at `x` (e.g. an extrapolated v_D), labelled at the top.
    VRule {
        /// Position on the x axis.
        x: f64,
        /// Label written beside it.
        text: String,
    },
    /// A horizontal rule at `y` (e.g. a dissociation limit), labelled at the right.
    HRule {
        /// Position on the y axis.
        y: f64,
        /// Label written beside it.
        text: String,
    },
}

/// One legend entry's worth of drawing.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Layer {
    /// Legend text; empty keeps the layer out of the legend.
    pub label: String,
    /// Index into [`PALETTE`].
    pub colour: usize,
    /// The drawing.
    pub mark: Mark,
}

/// A two-dimensional chart: axes, layers, and a note line under the plot.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct XyChart {
    /// Title above the plot.
    pub title: String,
    /// X-axis label, with its convention and unit.
    pub x_label: String,
    /// Y-axis label, with its unit.
    pub y_label: String,
    /// Layers in drawing order (later on top).
    pub layers: Vec<Layer>,
    /// Fixed x range; `None` fits the data with a margin.
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range; `None` fits the data with a margin.
    pub y_range: Option<(f64, f64)>,
    /// A short note printed under the plot (conventions, "SYNTHETIC", …).
    pub note: String,
    /// Corner of the legend.
    #[serde(default)]
    pub legend: Legend,
    /// Draw tick labels on the x axis (false for a ladder, whose x means nothing).
    #[serde(default = "yes")]
    pub x_ticks: bool,
}

fn yes() -> bool {
    true
}

/// The preferred corner for the legend, chosen per figure to stay clear of the data; the drawing
/// moves the legend to a less crowded corner when data crowd this one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Legend {
    /// Top right.
    #[default]
    UpperRight,
    /// Top left.
    UpperLeft,
    /// Bottom left.
    LowerLeft,
    /// Bottom right.
    LowerRight,
}

/// Rendering options: scale for high-DPI canvases and print.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Theme {
    /// Multiplier for font sizes, line widths and marker sizes (devicePixelRatio on a canvas).
    pub scale: f64,
}

impl Default for Theme {
    fn default() -> Self {
        Theme { scale: 1.0 }
    }
}

/// Where the data landed on the drawing area, so a pointer position can be mapped back.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Frame {
    /// Left edge of the plotting area, backend pixels.
    pub left_px: i32,
    /// Top edge of the plotting area, backend pixels.
    pub top_px: i32,
    /// Width of the plotting area, backend pixels.
    pub width_px: i32,
    /// Height of the plotting area, backend pixels.
    pub height_px: i32,
    /// Data range on x.
    pub x_range: (f64, f64),
    /// Data range on y.
    pub y_range: (f64, f64),
}

impl Frame {
    /// Pixel position of a data point.
    pub fn to_px(&self, x: f64, y: f64) -> (f64, f64) {
        let (x0, x1) = self.x_range;
        let (y0, y1) = self.y_range;
        (
            self.left_px as f64 + (x - x0) / (x1 - x0) * self.width_px as f64,
            self.top_px as f64 + (y1 - y) / (y1 - y0) * self.height_px as f64,
        )
    }
}

/// The point nearest to a pixel position, within `radius_px`, as (layer index, point index).
pub fn pick(
    chart: &XyChart,
    frame: &Frame,
    x_px: f64,
    y_px: f64,
    radius_px: f64,
) -> Option<(usize, usize)> {
    let mut best: Option<(f64, usize, usize)> = None;
    for (li, layer) in chart.layers.iter().enumerate() {
        if let Mark::Points { points, .. } = &layer.mark {
            for (pi, p) in points.iter().enumerate() {
                let (px, py) = frame.to_px(p.x, p.y);
                let d = ((px - x_px).powi(2) + (py - y_px).powi(2)).sqrt();
                if d <= radius_px && best.is_none_or(|(bd, _, _)| d < bd) {
                    best = Some((d, li, pi));
                }
            }
        }
    }
    best.map(|(_, l, p)| (l, p))
}

fn rgb(i: usize) -> RGBColor {
    let (r, g, b) = PALETTE[i % PALETTE.len()];
    RGBColor(r, g, b)
}

/// Data extent of all layers (finite values only), including error bars.
fn extent(chart: &XyChart) -> Option<((f64, f64), (f64, f64))> {
    let mut xs = (f64::INFINITY, f64::NEG_INFINITY);
    let mut ys = (f64::INFINITY, f64::NEG_INFINITY);
    let mut grow = |x: f64, y: f64| {
        if x.is_finite() {
            xs = (xs.0.min(x), xs.1.max(x));
        }
        if y.is_finite() {
            ys = (ys.0.min(y), ys.1.max(y));
        }
    };
    for layer in &chart.layers {
        match &layer.mark {
            Mark::Points { points, .. } => {
                for p in points {
                    let e = p.y_err.unwrap_or(0.0);
                    grow(p.x, p.y - e);
                    grow(p.x, p.y + e);
                }
            }
            Mark::Line { points, .. } => points.iter().for_each(|&(x, y)| grow(x, y)),
            Mark::Segments { segments, .. } => segments.iter().for_each(|&(a, b)| {
                grow(a.0, a.1);
                grow(b.0, b.1);
            }),
            Mark::VRule { x, .. } => grow(*x, f64::NAN),
            Mark::HRule { y, .. } => grow(f64::NAN, *y),
        }
    }
    (xs.0 <= xs.1 && ys.0 <= ys.1).then_some((xs, ys))
}

fn padded((lo, hi): (f64, f64), frac: f64) -> (f64, f64) {
    let span = hi - lo;
    let pad = if span > 0.0 {
        span * frac
    } else {
        lo.abs().max(1.0) * 0.05
    };
    (lo - pad, hi + pad)
}

/// Draw `chart` on `area`. Returns where the data landed, for pointer read-outs.
///
/// The chart is laid out and drawn once on a recording backend and the recorded calls are then
/// made on `area`'s backend (see the `record` module): the output is the same as drawing directly, and
/// the browser module carries one compiled copy of the chart code instead of one per backend.
pub fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    chart: &XyChart,
    theme: Theme,
) -> Result<Frame, PlotError> {
    let mut recording = Recording::default();
    let frame = compose(
        recording.recorder(area.dim_in_pixel()).into_drawing_area(),
        chart,
        theme,
    );
    area.draw(&Replay(&recording)).map_err(backend_err)?;
    let (x0, y0) = area.get_base_pixel();
    frame.map(|f| Frame {
        left_px: f.left_px + x0,
        top_px: f.top_px + y0,
        ..f
    })
}

/// The chart code proper, on the recording backend.
fn compose(
    area: DrawingArea<Recorder<'_>, Shift>,
    chart: &XyChart,
    theme: Theme,
) -> Result<Frame, PlotError> {
    let area = &area;
    let s = theme.scale.max(0.25);
    let px = |v: f64| (v * s).round().max(1.0) as u32;
    area.fill(&WHITE).map_err(backend_err)?;
    let Some((dx, dy)) = extent(chart) else {
        let style = ("sans-serif", 14.0 * s)
            .into_font()
            .color(&RGBColor(90, 90, 90));
        area.draw_text(
            "nothing to draw",
            &style,
            (px(20.0) as i32, px(20.0) as i32),
        )
        .map_err(backend_err)?;
        return Err(PlotError("the chart has no finite data".into()));
    };
    let x_range = chart.x_range.unwrap_or_else(|| padded(dx, 0.04));
    let y_range = chart.y_range.unwrap_or_else(|| padded(dy, 0.06));

    let note_font = ("sans-serif", 11.0 * s)
        .into_font()
        .color(&RGBColor(80, 80, 80));
    let (width, height) = area.dim_in_pixel();
    let note_lines = wrap_words(&chart.note, width.saturating_sub(px(24.0)), |t| {
        area.estimate_text_size(t, &note_font)
            .map(|(w, _)| w)
            .unwrap_or(u32::MAX)
    });
    let note_line_px = px(14.0);
    let (plot_area, note_area) = if note_lines.is_empty() {
        (area.clone(), None)
    } else {
        let note_px = px(8.0) + note_line_px * note_lines.len() as u32;
        let (a, b) = area.split_vertically(height.saturating_sub(note_px));
        (a, Some(b))
    };

    let mut ctx = ChartBuilder::on(&plot_area)
        .caption(&chart.title, ("sans-serif", 16.0 * s))
        .margin(px(10.0))
        .x_label_area_size(px(42.0))
        .y_label_area_size(px(68.0))
        .build_cartesian_2d(x_range.0..x_range.1, y_range.0..y_range.1)
        .map_err(backend_err)?;
    let mut mesh = ctx.configure_mesh();
    if !chart.x_ticks {
        mesh.x_labels(0).disable_x_mesh();
    }
    mesh.x_desc(&chart.x_label)
        .y_desc(&chart.y_label)
        .x_label_formatter(&tick_label)
        .y_label_formatter(&tick_label)
        .label_style(("sans-serif", 12.0 * s))
        .axis_desc_style(("sans-serif", 13.0 * s))
        .light_line_style(RGBColor(236, 238, 241))
        .bold_line_style(RGBColor(214, 218, 223))
        .draw()
        .map_err(backend_err)?;

    let stroke = px(1.6);
    let marker = px(3.6);
    let mut any_label = false;
    // Vertical rules in order of position: neighbours on the axis get different label heights.
    let mut rule_xs: Vec<f64> = chart
        .layers
        .iter()
        .filter_map(|l| match &l.mark {
            Mark::VRule { x, text } if !text.is_empty() => Some(*x),
            _ => None,
        })
        .collect();
    rule_xs.sort_by(f64::total_cmp);
    for layer in &chart.layers {
        let colour = rgb(layer.colour);
        let style = ShapeStyle::from(&colour).stroke_width(stroke);
        match &layer.mark {
            Mark::Points { points, shape } => {
                for p in points.iter().filter(|p| p.x.is_finite() && p.y.is_finite()) {
                    let c = if p.included { colour } else { EXCLUDED_GREY };
                    if let Some(e) = p.y_err.filter(|e| e.is_finite() && *e > 0.0) {
                        ctx.draw_series(std::iter::once(ErrorBarV::new(
                            p.x,
                            p.y - e,
                            p.y + e,
                            c,
                            px(3.0),
                            stroke,
                        )))
                        .map_err(backend_err)?;
                    }
                }
                let pts: Vec<&Point> = points
                    .iter()
                    .filter(|p| p.x.is_finite() && p.y.is_finite())
                    .collect();
                let st = |p: &Point| {
                    if p.included {
                        colour.filled()
                    } else {
                        ShapeStyle::from(&EXCLUDED_GREY).stroke_width(stroke)
                    }
                };
                let m = marker as i32;
                let fill = colour.filled();
                // One arm per shape: plotters elements are concrete types.
                macro_rules! series {
                    (|$c:ident, $st:ident| $make:expr) => {{
                        let annotated = ctx
                            .draw_series(pts.iter().map(|p| {
                                let ($c, $st) = ((p.x, p.y), st(p));
                                $make
                            }))
                            .map_err(backend_err)?;
                        if !layer.label.is_empty() {
                            any_label = true;
                            annotated.label(&layer.label).legend(move |$c| {
                                let $st = fill;
                                $make
                            });
                        }
                    }};
                }
                match shape {
                    Shape::Circle => series!(|c, st| Circle::new(c, m, st)),
                    Shape::Triangle => series!(|c, st| TriangleMarker::new(c, m + 1, st)),
                    Shape::Square => {
                        series!(|c, st| EmptyElement::at(c) + Rectangle::new([(-m, -m), (m, m)], st))
                    }
                    Shape::Cross => series!(|c, st| Cross::new(c, m, st)),
                }
            }
            Mark::Line { points, dash } => {
                let pts: Vec<(f64, f64)> = points
                    .iter()
                    .copied()
                    .filter(|(x, y)| x.is_finite() && y.is_finite())
                    .collect();
                let annotated = draw_polyline(&mut ctx, pts, *dash, style, s)?;
                if !layer.label.is_empty() {
                    any_label = true;
                    let d = *dash;
                    line_legend!(annotated, &layer.label, d, style, s);
                }
            }
            Mark::Segments { segments, dash } => {
                let mut first = true;
                for &(a, b) in segments {
                    let annotated = draw_polyline(&mut ctx, vec![a, b], *dash, style, s)?;
                    if first && !layer.label.is_empty() {
                        any_label = true;
                        let d = *dash;
                        line_legend!(annotated, &layer.label, d, style, s);
                    }
                    first = false;
                }
            }
            Mark::VRule { x, text } => {
                let (y0, y1) = y_range;
                let annotated =
                    draw_polyline(&mut ctx, vec![(*x, y0), (*x, y1)], Dash::Dotted, style, s)?;
                if !layer.label.is_empty() {
                    any_label = true;
                    let d = Dash::Dotted;
                    line_legend!(annotated, &layer.label, d, style, s);
                }
                if !text.is_empty() {
                    // Labels sit near the bottom (legends go top right), at heights staggered
                    // by the rule's rank along the axis so that neighbours stay readable, and
                    // on the rule's right, where a limit has no data beyond it, unless the
                    // rule is too close to the right edge.
                    let rank = rule_xs.iter().position(|r| r == x).unwrap_or(0);
                    let rise = 0.03 + 0.06 * (rank % 4) as f64;
                    let (x0, x1) = x_range;
                    let room = (x1 - *x) / (x1 - x0);
                    let (hpos, gap) = if room > 0.14 {
                        (HPos::Left, 0.006)
                    } else {
                        (HPos::Right, -0.006)
                    };
                    let font = ("sans-serif", 12.0 * s).into_font().color(&colour);
                    ctx.draw_series(std::iter::once(Text::new(
                        text.clone(),
                        (*x + gap * (x1 - x0), y0 + (y1 - y0) * rise),
                        font.pos(Pos::new(hpos, VPos::Bottom)),
                    )))
                    .map_err(backend_err)?;
                }
            }
            Mark::HRule { y, text } => {
                let (x0, x1) = x_range;
                let annotated =
                    draw_polyline(&mut ctx, vec![(x0, *y), (x1, *y)], Dash::Dotted, style, s)?;
                if !layer.label.is_empty() {
                    any_label = true;
                    let d = Dash::Dotted;
                    line_legend!(annotated, &layer.label, d, style, s);
                }
                if !text.is_empty() {
                    let font = ("sans-serif", 12.0 * s).into_font().color(&colour);
                    ctx.draw_series(std::iter::once(Text::new(
                        text.clone(),
                        (x1 - (x1 - x0) * 0.01, *y),
                        font.pos(Pos::new(HPos::Right, VPos::Bottom)),
                    )))
                    .map_err(backend_err)?;
                }
            }
        }
    }
    if any_label {
        let position = match least_crowded_corner(chart, x_range, y_range) {
            Legend::UpperRight => SeriesLabelPosition::UpperRight,
            Legend::UpperLeft => SeriesLabelPosition::UpperLeft,
            Legend::LowerLeft => SeriesLabelPosition::LowerLeft,
            Legend::LowerRight => SeriesLabelPosition::LowerRight,
        };
        ctx.configure_series_labels()
            .position(position)
            .background_style(WHITE.mix(0.85))
            .border_style(RGBColor(200, 200, 200))
            .label_font(("sans-serif", 12.0 * s))
            .draw()
            .map_err(backend_err)?;
    }
    if let Some(na) = note_area {
        for (i, line) in note_lines.iter().enumerate() {
            let y = px(4.0) + note_line_px * i as u32;
            na.draw_text(line, &note_font, (px(12.0) as i32, y as i32))
                .map_err(backend_err)?;
        }
    }

    let (xr, yr) = ctx.plotting_area().get_pixel_range();
    Ok(Frame {
        left_px: xr.start,
        top_px: yr.start,
        width_px: xr.end - xr.start,
        height_px: yr.end - yr.start,
        x_range,
        y_range,
    })
}

/// The corner for the legend: the chart's preferred one unless another holds fewer data
/// (points, line vertices, segment ends) in a box of 45 % of the width and 40 % of the height,
/// so the legend does not hide data that happen to crowd the preferred corner.
fn least_crowded_corner(chart: &XyChart, x_range: (f64, f64), y_range: (f64, f64)) -> Legend {
    let (x0, x1) = x_range;
    let (y0, y1) = y_range;
    let inside = |corner: Legend, x: f64, y: f64| {
        let fx = (x - x0) / (x1 - x0);
        let fy = (y - y0) / (y1 - y0);
        let right = fx >= 0.55;
        let left = fx <= 0.45;
        let top = fy >= 0.6;
        let bottom = fy <= 0.4;
        match corner {
            Legend::UpperRight => right && top,
            Legend::UpperLeft => left && top,
            Legend::LowerLeft => left && bottom,
            Legend::LowerRight => right && bottom,
        }
    };
    let count = |corner: Legend| -> usize {
        let mut n = 0;
        for layer in &chart.layers {
            match &layer.mark {
                Mark::Points { points, .. } => {
                    n += points.iter().filter(|p| inside(corner, p.x, p.y)).count();
                }
                Mark::Line { points, .. } => {
                    n += points.iter().filter(|p| inside(corner, p.0, p.1)).count();
                }
                Mark::Segments { segments, .. } => {
                    n += segments
                        .iter()
                        .flat_map(|(a, b)| [a, b])
                        .filter(|p| inside(corner, p.0, p.1))
                        .count();
                }
                Mark::VRule { .. } | Mark::HRule { .. } => {}
            }
        }
        n
    };
    let order = [
        chart.legend,
        Legend::UpperRight,
        Legend::UpperLeft,
        Legend::LowerRight,
        Legend::LowerLeft,
    ];
    let mut best = (chart.legend, count(chart.legend));
    for corner in order {
        let n = count(corner);
        if n < best.1 {
            best = (corner, n);
        }
    }
    best.0
}

/// A tick label (or any plain number in a label) without needless digits: whole numbers (quantum numbers, most energies) plain,
/// others with up to six decimals and no trailing zeros, tiny ones in exponent form.
pub(crate) fn tick_label(v: &f64) -> String {
    let v = *v;
    if v == 0.0 || (v - v.round()).abs() <= 1e-9 * v.abs().max(1.0) {
        return format!("{:.0}", v.round() + 0.0);
    }
    if v.abs() < 1e-4 {
        return format!("{v:.2e}");
    }
    let text = format!("{v:.6}");
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// Most lines the note under a chart may take; a longer note ends in "…".
const NOTE_MAX_LINES: usize = 3;

/// Break `text` at spaces into lines no wider than `max_px` as measured by `width_of` (a word
/// longer than a line gets a line of its own), at most [`NOTE_MAX_LINES`] of them.
fn wrap_words(text: &str, max_px: u32, width_of: impl Fn(&str) -> u32) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut current = String::new();
    for word in text.split_whitespace() {
        let candidate = if current.is_empty() {
            word.to_string()
        } else {
            format!("{current} {word}")
        };
        if current.is_empty() || width_of(&candidate) <= max_px {
            current = candidate;
        } else {
            lines.push(std::mem::replace(&mut current, word.to_string()));
        }
    }
    if !current.is_empty() {
        lines.push(current);
    }
    if lines.len() > NOTE_MAX_LINES {
        lines.truncate(NOTE_MAX_LINES);
        if let Some(last) = lines.last_mut() {
            last.push_str(" …");
        }
    }
    lines
}

type Ctx<'a, DB> = ChartContext<
    'a,
    DB,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

fn draw_polyline<'a, 'b, DB: DrawingBackend + 'a>(
    ctx: &'b mut Ctx<'a, DB>,
    pts: Vec<(f64, f64)>,
    dash: Dash,
    style: ShapeStyle,
    s: f64,
) -> Result<&'b mut SeriesAnno<'a, DB>, PlotError> {
    let (size, gap) = match dash {
        Dash::Solid => {
            return ctx
                .draw_series(LineSeries::new(pts, style))
                .map_err(backend_err);
        }
        Dash::Dashed => ((7.0 * s) as u32, (4.0 * s) as u32),
        Dash::Dotted => ((2.0 * s).max(1.0) as u32, (3.0 * s) as u32),
    };
    ctx.draw_series(DashedLineSeries::new(pts, size.max(1), gap.max(1), style))
        .map_err(backend_err)
}

/// Attach a legend entry to a drawn line series: a swatch of three short strokes whose gaps show
/// the dash pattern (a macro because each plotters element composition is its own type).
macro_rules! line_legend {
    ($annotated:expr, $label:expr, $dash:expr, $style:expr, $scale:expr) => {{
        let (d, style, s) = ($dash, $style, $scale);
        $annotated.label($label).legend(move |(x, y)| {
            let p = swatch(d, s);
            EmptyElement::at((x, y))
                + PathElement::new(vec![(p[0].0, 0), (p[0].1, 0)], style)
                + PathElement::new(vec![(p[1].0, 0), (p[1].1, 0)], style)
                + PathElement::new(vec![(p[2].0, 0), (p[2].1, 0)], style)
        });
    }};
}
use line_legend;

/// Pixel extents of the three strokes of a legend swatch; their gaps show the dash pattern.
fn swatch(dash: Dash, s: f64) -> [(i32, i32); 3] {
    let parts: [(f64, f64); 3] = match dash {
        Dash::Solid => [(0.0, 7.0), (6.0, 13.0), (12.0, 19.0)],
        Dash::Dashed => [(0.0, 5.0), (7.0, 12.0), (14.0, 19.0)],
        Dash::Dotted => [(0.0, 2.0), (7.0, 9.0), (14.0, 16.0)],
    };
    parts.map(|(a, b)| ((a * s).round() as i32, (b * s).round() as i32))
}

/// A vertical error bar element (plotters' own one needs an extra feature; this is three lines).
struct ErrorBarV {
    x: f64,
    lo: f64,
    hi: f64,
    colour: RGBColor,
    cap_px: u32,
    stroke: u32,
}

impl ErrorBarV {
    fn new(x: f64, lo: f64, hi: f64, colour: RGBColor, cap_px: u32, stroke: u32) -> Self {
        ErrorBarV {
            x,
            lo,
            hi,
            colour,
            cap_px,
            stroke,
        }
    }
}

impl<'a> PointCollection<'a, (f64, f64)> for &'a ErrorBarV {
    type Point = (f64, f64);
    type IntoIter = [(f64, f64); 2];
    fn point_iter(self) -> Self::IntoIter {
        [(self.x, self.lo), (self.x, self.hi)]
    }
}

impl<DB: DrawingBackend> Drawable<DB> for ErrorBarV {
    fn draw<I: Iterator<Item = BackendCoord>>(
        &self,
        mut points: I,
        backend: &mut DB,
        _: (u32, u32),
    ) -> Result<(), DrawingErrorKind<DB::ErrorType>> {
        let (Some(a), Some(b)) = (points.next(), points.next()) else {
            return Ok(());
        };
        let style = ShapeStyle::from(&self.colour).stroke_width(self.stroke);
        let c = self.cap_px as i32;
        backend.draw_line(a, b, &style)?;
        backend.draw_line((a.0 - c, a.1), (a.0 + c, a.1), &style)?;
        backend.draw_line((b.0 - c, b.1), (b.0 + c, b.1), &style)?;
        Ok(())
    }
}

/// Render a chart to an SVG document of the given size in pixels.
pub fn to_svg(chart: &XyChart, width: u32, height: u32) -> Result<String, PlotError> {
    let mut out = String::new();
    {
        let root = SVGBackend::with_string(&mut out, (width, height)).into_drawing_area();
        draw(&root, chart, Theme::default())?;
        root.present().map_err(backend_err)?;
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// User text (data set names, isotopologue tags, labels) reaches titles, notes, axis labels
    /// and legends: the SVG must carry it as escaped text, never as markup (common practice, no
    /// source: XML text escaping).
    #[test]
    fn svg_escapes_user_text() {
        let payload = "<script>alert(\"x\")</script> & <img src=x onerror=1>";
        let mut chart = sample();
        chart.title = format!("title {payload}");
        chart.note = format!("note {payload}");
        chart.x_label = format!("x {payload}");
        chart.y_label = format!("y {payload}");
        for l in &mut chart.layers {
            l.label = format!("legend {payload}");
        }
        let svg = to_svg(&chart, 800, 600).expect("svg");
        assert!(
            !svg.contains("<script") && !svg.contains("<img"),
            "markup in the SVG"
        );
        assert!(svg.contains("&lt;script&gt;"), "the text is kept, escaped");
        assert!(svg.contains("&amp;"), "ampersands escaped");
    }

    /// The legend leaves a corner that data crowd for an emptier one, and keeps its preferred
    /// corner when that is as empty as any (common practice, no source).
    #[test]
    fn legend_avoids_crowded_corners() {
        let mut chart = sample();
        let pts = |xy: &[(f64, f64)]| Layer {
            label: "data".into(),
            colour: 0,
            mark: Mark::Points {
                points: xy
                    .iter()
                    .map(|&(x, y)| Point {
                        x,
                        y,
                        y_err: None,
                        included: true,
                        tag: String::new(),
                    })
                    .collect(),
                shape: Shape::Circle,
            },
        };
        chart.layers = vec![pts(&[
            (9.0, 9.0),
            (9.5, 9.5),
            (0.0, 0.0),
            (10.0, 10.0),
            (0.5, 9.5),
        ])];
        chart.legend = Legend::UpperRight;
        assert_eq!(
            least_crowded_corner(&chart, (0.0, 10.0), (0.0, 10.0)),
            Legend::LowerRight
        );
        chart.layers = vec![pts(&[(0.0, 0.0), (10.0, 0.0)])];
        assert_eq!(
            least_crowded_corner(&chart, (0.0, 10.0), (0.0, 10.0)),
            Legend::UpperRight
        );
    }

    /// Tick labels drop needless digits (common practice, no source).
    #[test]
    fn tick_labels_are_plain() {
        assert_eq!(tick_label(&5.0), "5");
        assert_eq!(tick_label(&-0.0), "0");
        assert_eq!(tick_label(&4420.0), "4420");
        assert_eq!(tick_label(&0.30000000000000004), "0.3");
        assert_eq!(tick_label(&-2.5), "-2.5");
        assert_eq!(tick_label(&0.00002), "2.00e-5");
    }

    /// Notes wrap at spaces within the width, keep every word in order, and stop at
    /// NOTE_MAX_LINES with an ellipsis (common practice, no source).
    #[test]
    fn notes_wrap_within_the_width() {
        let width = |t: &str| 10 * t.chars().count() as u32;
        let text = "SYNTHETIC data · ΔG plotted at x = v + ½ (dashed: not in the recommendation)";
        let lines = wrap_words(text, 300, width);
        assert!(lines.len() > 1 && lines.len() <= NOTE_MAX_LINES);
        assert!(lines.iter().all(|l| width(l) <= 300), "{lines:?}");
        assert_eq!(lines.join(" "), text);
        assert_eq!(wrap_words("", 300, width), Vec::<String>::new());
        let long = "word ".repeat(200);
        let cut = wrap_words(&long, 300, width);
        assert_eq!(cut.len(), NOTE_MAX_LINES);
        assert!(cut[NOTE_MAX_LINES - 1].ends_with(" …"));
        // A word longer than the line still appears, alone on its line.
        assert_eq!(
            wrap_words("a verylongwordthatdoesnotfit b", 60, width).len(),
            3
        );
    }

    pub(crate) fn sample() -> XyChart {
        XyChart {
            title: "Spacings".into(),
            x_label: "v + 1/2".into(),
            y_label: "spacing / cm-1".into(),
            layers: vec![
                Layer {
                    label: "observed".into(),
                    colour: 1,
                    mark: Mark::Points {
                        points: (0..5)
                            .map(|v| Point {
                                x: v as f64 + 0.5,
                                y: 100.0 - 4.0 * v as f64,
                                y_err: Some(0.5),
                                included: v != 3,
                                tag: format!("v={v}"),
                            })
                            .collect(),
                        shape: Shape::Circle,
                    },
                },
                Layer {
                    label: "line".into(),
                    colour: 2,
                    mark: Mark::Line {
                        points: vec![(0.0, 102.0), (25.0, 0.0)],
                        dash: Dash::Dashed,
                    },
                },
                Layer {
                    label: String::new(),
                    colour: 2,
                    mark: Mark::VRule {
                        x: 25.0,
                        text: "v_D".into(),
                    },
                },
            ],
            x_range: None,
            y_range: None,
            note: "SYNTHETIC".into(),
            legend: Legend::UpperRight,
            x_ticks: true,
        }
    }

    #[test]
    fn svg_is_well_formed_and_carries_the_text() {
        let svg = to_svg(&sample(), 640, 400).unwrap();
        assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
        for needle in ["Spacings", "v + 1/2", "observed", "v_D", "SYNTHETIC"] {
            assert!(svg.contains(needle), "missing {needle}");
        }
        // Five markers: 4 filled included points + 1 hollow excluded one.
        assert_eq!(svg.matches("<circle").count(), 5 + 1 /* legend */);
    }

    #[test]
    fn empty_chart_is_an_error_not_a_panic() {
        let mut c = sample();
        c.layers.clear();
        assert!(to_svg(&c, 300, 200).is_err());
    }

    #[test]
    fn pick_finds_the_nearest_point() {
        let chart = sample();
        let mut out = String::new();
        let frame = {
            let root = SVGBackend::with_string(&mut out, (640, 400)).into_drawing_area();
            draw(&root, &chart, Theme::default()).unwrap()
        };
        let (px, py) = frame.to_px(2.5, 92.0);
        assert_eq!(pick(&chart, &frame, px + 1.0, py - 1.0, 6.0), Some((0, 2)));
        assert_eq!(pick(&chart, &frame, 0.0, 0.0, 3.0), None);
    }
}
