//! Draw once, replay anywhere: a plotters backend that records drawing calls.
//!
//! The chart code ([`crate::draw`]) is generic plotters code of some size; compiled once per
//! backend it would sit in the browser module twice (canvas and SVG). Instead it always draws on
//! a [`Recorder`], which keeps every backend call (line, rectangle, path, circle, polygon, text,
//! pixel, bitmap) with its style, and [`Replay`] then makes exactly the same calls on the real
//! backend. Text is measured as the real backends measure it (plotters' default
//! `estimate_text_size`, which neither the canvas nor the SVG backend overrides), so the layout
//! does not change.

use plotters::element::{Drawable, PointCollection};
use plotters::style::{FontDesc, TextStyle};
use plotters_backend::text_anchor::Pos;
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
    FontFamily, FontStyle, FontTransform,
};

/// Colour and stroke width of a recorded shape (what a backend reads from a style).
#[derive(Clone, Copy)]
struct Stroke {
    color: BackendColor,
    width: u32,
}

impl Stroke {
    fn of<S: BackendStyle>(style: &S) -> Stroke {
        Stroke {
            color: style.color(),
            width: style.stroke_width(),
        }
    }
}

impl BackendStyle for Stroke {
    fn color(&self) -> BackendColor {
        self.color
    }
    fn stroke_width(&self) -> u32 {
        self.width
    }
}

/// The text style a backend sees, kept by value.
struct Font {
    family: String,
    size: f64,
    style: FontStyle,
    transform: FontTransform,
    color: BackendColor,
    anchor: Pos,
}

/// One recorded backend call, in the recorder's pixel coordinates.
enum Op {
    Pixel(BackendCoord, BackendColor),
    Line(BackendCoord, BackendCoord, Stroke),
    Rect(BackendCoord, BackendCoord, Stroke, bool),
    Path(Vec<BackendCoord>, Stroke),
    Circle(BackendCoord, u32, Stroke, bool),
    Polygon(Vec<BackendCoord>, Stroke),
    Text(String, Font, BackendCoord),
    Bitmap(BackendCoord, (u32, u32), Vec<u8>),
}

/// A backend of the given size that only records what is drawn on it.
pub(crate) struct Recorder<'a> {
    size: (u32, u32),
    ops: &'a mut Vec<Op>,
}

/// The calls recorded by a [`Recorder`], ready to replay.
#[derive(Default)]
pub(crate) struct Recording(Vec<Op>);

impl Recording {
    /// A recorder of `size` pixels writing into this recording.
    pub(crate) fn recorder(&mut self, size: (u32, u32)) -> Recorder<'_> {
        Recorder {
            size,
            ops: &mut self.0,
        }
    }
}

/// Recording never fails.
#[derive(Debug)]
pub(crate) enum Never {}

impl std::fmt::Display for Never {
    fn fmt(&self, _: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match *self {}
    }
}

impl std::error::Error for Never {}

type Done = Result<(), DrawingErrorKind<Never>>;

impl DrawingBackend for Recorder<'_> {
    type ErrorType = Never;

    fn get_size(&self) -> (u32, u32) {
        self.size
    }
    fn ensure_prepared(&mut self) -> Done {
        Ok(())
    }
    fn present(&mut self) -> Done {
        Ok(())
    }
    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Done {
        self.ops.push(Op::Pixel(point, color));
        Ok(())
    }
    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Done {
        self.ops.push(Op::Line(from, to, Stroke::of(style)));
        Ok(())
    }
    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Done {
        let op = Op::Rect(upper_left, bottom_right, Stroke::of(style), fill);
        self.ops.push(op);
        Ok(())
    }
    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Done {
        let op = Op::Path(path.into_iter().collect(), Stroke::of(style));
        self.ops.push(op);
        Ok(())
    }
    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Done {
        let op = Op::Circle(center, radius, Stroke::of(style), fill);
        self.ops.push(op);
        Ok(())
    }
    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Done {
        let op = Op::Polygon(vert.into_iter().collect(), Stroke::of(style));
        self.ops.push(op);
        Ok(())
    }
    fn draw_text<TStyle: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &TStyle,
        pos: BackendCoord,
    ) -> Done {
        let font = Font {
            family: style.family().as_str().to_string(),
            size: style.size(),
            style: style.style(),
            transform: style.transform(),
            color: style.color(),
            anchor: style.anchor(),
        };
        self.ops.push(Op::Text(text.to_string(), font, pos));
        Ok(())
    }
    fn blit_bitmap(&mut self, pos: BackendCoord, size: (u32, u32), src: &[u8]) -> Done {
        self.ops.push(Op::Bitmap(pos, size, src.to_vec()));
        Ok(())
    }
}

/// An element that replays a [`Recording`] with its origin at the drawing area's top-left.
pub(crate) struct Replay<'a>(pub(crate) &'a Recording);

impl<'a> PointCollection<'a, (i32, i32)> for &'a Replay<'_> {
    type Point = (i32, i32);
    type IntoIter = [(i32, i32); 1];
    fn point_iter(self) -> Self::IntoIter {
        [(0, 0)]
    }
}

impl<DB: DrawingBackend> Drawable<DB> for Replay<'_> {
    fn draw<I: Iterator<Item = BackendCoord>>(
        &self,
        mut points: I,
        backend: &mut DB,
        _: (u32, u32),
    ) -> Result<(), DrawingErrorKind<DB::ErrorType>> {
        let (x0, y0) = points.next().unwrap_or((0, 0));
        let at = |(x, y): BackendCoord| (x + x0, y + y0);
        let all = |v: &[BackendCoord]| v.iter().map(|&p| at(p)).collect::<Vec<_>>();
        for op in &self.0.0 {
            match op {
                Op::Pixel(p, c) => backend.draw_pixel(at(*p), *c)?,
                Op::Line(a, b, s) => backend.draw_line(at(*a), at(*b), s)?,
                Op::Rect(a, b, s, fill) => backend.draw_rect(at(*a), at(*b), s, *fill)?,
                Op::Path(v, s) => backend.draw_path(all(v), s)?,
                Op::Circle(c, r, s, fill) => backend.draw_circle(at(*c), *r, s, *fill)?,
                Op::Polygon(v, s) => backend.fill_polygon(all(v), s)?,
                Op::Text(text, f, p) => {
                    let family = FontFamily::from(f.family.as_str());
                    let style = TextStyle {
                        font: FontDesc::new(family, f.size, f.style).transform(f.transform.clone()),
                        color: f.color,
                        pos: f.anchor,
                    };
                    backend.draw_text(text, &style, at(*p))?
                }
                Op::Bitmap(p, size, src) => backend.blit_bitmap(at(*p), *size, src)?,
            }
        }
        Ok(())
    }
}
