//! The main-thread handle that draws figures of a finished analysis on canvases and as SVG.
//!
//! It holds the report (parsed from the JSON the worker produced), builds each figure with
//! `rungs_plot::figures`, draws it with plotters-canvas, and remembers where the data landed so
//! pointer read-outs can name the point under the pointer.

use std::collections::HashMap;

use plotters::prelude::IntoDrawingArea;
use plotters_canvas::CanvasBackend;
use rungs_core::report::Report;
use rungs_core::units::Unit;
use rungs_plot::figures::{self, EnergyScale};
use rungs_plot::{Frame, Theme, XyChart};
use wasm_bindgen::prelude::*;
use web_sys::HtmlCanvasElement;

use crate::{js_err, to_js};

/// Figures of one analysis report.
#[wasm_bindgen]
pub struct Figures {
    report: Report,
    drawn: HashMap<String, (XyChart, Frame, f64)>,
}

fn scale_of(unit: &str) -> Result<EnergyScale, JsError> {
    let u = Unit::parse(unit).map_err(js_err)?;
    EnergyScale::of(u).ok_or_else(|| js_err(format!("'{unit}' is not an energy unit")))
}

#[wasm_bindgen]
impl Figures {
    /// Figures of the report given as JSON (the analysis document the worker returns).
    #[wasm_bindgen(constructor)]
    pub fn new(report_json: &str) -> Result<Figures, JsError> {
        let report: Report = serde_json::from_str(report_json).map_err(js_err)?;
        Ok(Figures {
            report,
            drawn: HashMap::new(),
        })
    }

    /// The figures this report offers: `[{id, title}]`.
    pub fn list(&self) -> Result<JsValue, JsError> {
        let list: Vec<(&str, &str)> = figures::FIGURES
            .iter()
            .copied()
            .filter(|(id, _)| figures::figure(&self.report, id, EnergyScale::cm1()).is_some())
            .collect();
        to_js(&list)
    }

    /// Draw figure `id` on `canvas` (whose pixel size the page has set to its CSS size times
    /// `pixel_ratio`), energies in `unit`. Returns the plotting frame.
    pub fn draw(
        &mut self,
        id: &str,
        canvas: HtmlCanvasElement,
        pixel_ratio: f64,
        unit: &str,
    ) -> Result<JsValue, JsError> {
        let chart = figures::figure(&self.report, id, scale_of(unit)?)
            .ok_or_else(|| js_err(format!("no figure '{id}' for this analysis")))?;
        let backend = CanvasBackend::with_canvas_object(canvas)
            .ok_or_else(|| js_err("the canvas has no 2-D context"))?;
        let root = backend.into_drawing_area();
        let frame =
            rungs_plot::draw(&root, &chart, Theme { scale: pixel_ratio }).map_err(js_err)?;
        root.present().map_err(js_err)?;
        let out = to_js(&frame)?;
        self.drawn
            .insert(id.to_string(), (chart, frame, pixel_ratio));
        Ok(out)
    }

    /// Figure `id` as an SVG document of `width` × `height` pixels, energies in `unit`.
    pub fn svg(&self, id: &str, width: u32, height: u32, unit: &str) -> Result<String, JsError> {
        let chart = figures::figure(&self.report, id, scale_of(unit)?)
            .ok_or_else(|| js_err(format!("no figure '{id}' for this analysis")))?;
        rungs_plot::to_svg(&chart, width, height).map_err(js_err)
    }

    /// The read-out of the point nearest to CSS pixel (x, y) on the last drawing of `id`.
    pub fn pick(&self, id: &str, x_css: f64, y_css: f64) -> Option<String> {
        let (chart, frame, ratio) = self.drawn.get(id)?;
        let (li, pi) = rungs_plot::pick(chart, frame, x_css * ratio, y_css * ratio, 8.0 * ratio)?;
        match &chart.layers[li].mark {
            rungs_plot::Mark::Points { points, .. } => Some(points[pi].tag.clone()),
            _ => None,
        }
    }
}
