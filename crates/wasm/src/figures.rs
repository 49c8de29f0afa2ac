//! The main-thread handle that draws one figure on a canvas or as SVG.
//!
//! The worker builds each figure from its analysis (`Workbench::figure`, through
//! `rungs_plot::figures`) and sends it here as a plain chart description; this handle draws it
//! with plotters-canvas and remembers where the data landed so pointer read-outs can name the
//! point under the pointer. Keeping the analysis report on the worker side keeps this module
//! free of the report's (large) deserialisation code.

use plotters::prelude::IntoDrawingArea;
use plotters_canvas::CanvasBackend;
use rungs_plot::{Frame, Mark, Theme, XyChart};
use wasm_bindgen::prelude::*;
use web_sys::HtmlCanvasElement;

use crate::{js_err, to_js};

/// One figure, ready to draw.
#[wasm_bindgen]
pub struct Chart {
    chart: XyChart,
    drawn: Option<(Frame, f64)>,
}

#[wasm_bindgen]
impl Chart {
    /// A chart from its JSON description (as `Workbench::figure` returns it).
    #[wasm_bindgen(constructor)]
    pub fn new(json: &str) -> Result<Chart, JsError> {
        let chart: XyChart = serde_json::from_str(json).map_err(js_err)?;
        Ok(Chart { chart, drawn: None })
    }

    /// The chart's title.
    pub fn title(&self) -> String {
        self.chart.title.clone()
    }

    /// Draw on `canvas`, whose pixel size the page has set to its CSS size times
    /// `pixel_ratio`. Returns the plotting frame.
    pub fn draw(
        &mut self,
        canvas: HtmlCanvasElement,
        pixel_ratio: f64,
    ) -> Result<JsValue, JsError> {
        let backend = CanvasBackend::with_canvas_object(canvas)
            .ok_or_else(|| js_err("the canvas has no 2-D context"))?;
        let root = backend.into_drawing_area();
        let frame =
            rungs_plot::draw(&root, &self.chart, Theme { scale: pixel_ratio }).map_err(js_err)?;
        root.present().map_err(js_err)?;
        self.drawn = Some((frame, pixel_ratio));
        to_js(&frame)
    }

    /// The chart as an SVG document of `width` × `height` pixels.
    pub fn svg(&self, width: u32, height: u32) -> Result<String, JsError> {
        rungs_plot::to_svg(&self.chart, width, height).map_err(js_err)
    }

    /// How many data points a keyboard user can step through (every point layer, in order).
    pub fn point_count(&self) -> usize {
        self.points().count()
    }

    /// The read-out of point `i` (0-based, counted over every point layer in order).
    pub fn point_readout(&self, i: usize) -> Option<String> {
        self.points().nth(i)
    }

    /// The read-out of the point nearest to CSS pixel (x, y) on the last drawing.
    pub fn pick(&self, x_css: f64, y_css: f64) -> Option<String> {
        let (frame, ratio) = self.drawn.as_ref()?;
        let (li, pi) = rungs_plot::pick(
            &self.chart,
            frame,
            x_css * ratio,
            y_css * ratio,
            8.0 * ratio,
        )?;
        match &self.chart.layers[li].mark {
            Mark::Points { points, .. } => Some(points[pi].tag.clone()),
            _ => None,
        }
    }
}

impl Chart {
    /// The read-outs of every point, layer by layer.
    fn points(&self) -> impl Iterator<Item = String> + '_ {
        self.chart
            .layers
            .iter()
            .flat_map(|layer| match &layer.mark {
                Mark::Points { points, .. } => points.iter().map(|p| p.tag.clone()).collect(),
                _ => Vec::new(),
            })
    }
}
