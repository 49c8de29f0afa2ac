//! # rungs-plot: the charts of Rungs
//!
//! Every figure is a function generic over a plotters [`DrawingBackend`], so the page draws it
//! on a canvas (plotters-canvas), export writes SVG, and native tests render SVG text.
//! Plot code only draws values it is given: it computes nothing physical.

pub use plotters::prelude::DrawingBackend;
