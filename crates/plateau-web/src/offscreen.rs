//! Drawing in the page's worker, where there is no document: a plotters
//! backend on an `OffscreenCanvas`, and text measured with that canvas'
//! `measureText`.
//!
//! plotters-canvas draws on an `HTMLCanvasElement` and plotters measures
//! text in the browser by adding a `<span>` to the document; a worker has
//! neither. This backend follows plotters-canvas' drawing calls on the
//! offscreen context and answers `estimate_text_size` itself; [`Measured`]
//! gives any other backend (the SVG export) the same measuring, so the
//! exported SVG is laid out like the canvas.

use plotters_backend::text_anchor::{HPos, VPos};
use plotters_backend::{
    BackendColor, BackendCoord, BackendStyle, BackendTextStyle, DrawingBackend, DrawingErrorKind,
    FontTransform,
};
use wasm_bindgen::{JsCast, JsValue};
use web_sys::{OffscreenCanvas, OffscreenCanvasRenderingContext2d};

/// An error of the offscreen canvas (a JavaScript exception, as text).
#[derive(Debug)]
pub struct CanvasError(String);

impl std::fmt::Display for CanvasError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "canvas: {}", self.0)
    }
}

impl std::error::Error for CanvasError {}

fn js_error(e: JsValue) -> DrawingErrorKind<CanvasError> {
    DrawingErrorKind::DrawingError(CanvasError(
        e.as_string()
            .or_else(|| js_sys::JSON::stringify(&e).ok().and_then(|s| s.as_string()))
            .unwrap_or_else(|| "unknown error".into()),
    ))
}

fn context_of(canvas: &OffscreenCanvas) -> Option<OffscreenCanvasRenderingContext2d> {
    canvas.get_context("2d").ok()??.dyn_into().ok()
}

fn css_color(color: BackendColor) -> String {
    let (r, g, b) = color.rgb;
    format!("rgba({r},{g},{b},{})", color.alpha)
}

fn css_font<S: BackendTextStyle>(style: &S) -> String {
    format!(
        "{} {}px {}",
        style.style().as_str(),
        style.size(),
        style.family().as_str()
    )
}

/// Width and height of `text` in `style`'s font, as the canvas draws it.
fn measure<S: BackendTextStyle>(
    context: &OffscreenCanvasRenderingContext2d,
    text: &str,
    style: &S,
) -> Result<(u32, u32), JsValue> {
    context.set_font(&css_font(style));
    let m = context.measure_text(text)?;
    let height = m.font_bounding_box_ascent() + m.font_bounding_box_descent();
    // As plotters' own measuring: the unrotated box.
    Ok((m.width().ceil() as u32, height.ceil() as u32))
}

/// plotters on an `OffscreenCanvas` (in the worker).
///
/// Each call into the canvas crosses from wasm to JavaScript, and a chart
/// of 10,000 observations is 10,000 filled circles: consecutive circles of
/// one colour go into one path, filled once, and a style is set only when
/// it changes.
pub struct OffscreenBackend {
    canvas: OffscreenCanvas,
    context: OffscreenCanvasRenderingContext2d,
    fill: String,
    stroke: String,
    line_width: f64,
    /// The colour of an open path of filled circles, not yet filled.
    circles: Option<String>,
}

impl OffscreenBackend {
    pub fn new(canvas: OffscreenCanvas) -> Option<Self> {
        let context = context_of(&canvas)?;
        Some(OffscreenBackend {
            canvas,
            context,
            fill: String::new(),
            stroke: String::new(),
            line_width: -1.0,
            circles: None,
        })
    }

    fn line_style(&mut self, style: &impl BackendStyle) {
        let color = css_color(style.color());
        if color != self.stroke {
            self.context.set_stroke_style_str(&color);
            self.stroke = color;
        }
        let width = style.stroke_width() as f64;
        if width != self.line_width {
            self.context.set_line_width(width);
            self.line_width = width;
        }
    }

    fn fill_style(&mut self, color: BackendColor) {
        let color = css_color(color);
        if color != self.fill {
            self.context.set_fill_style_str(&color);
            self.fill = color;
        }
    }

    /// Fills the open path of circles, if any.
    fn flush(&mut self) {
        if self.circles.take().is_some() {
            self.context.fill();
        }
    }
}

/// Vertical and horizontal lines on half pixels, so they stay sharp.
fn sharp(from: BackendCoord, to: BackendCoord) -> ((f64, f64), (f64, f64)) {
    let mut a = (from.0 as f64, from.1 as f64);
    let mut b = (to.0 as f64, to.1 as f64);
    if a.0 == b.0 {
        a.0 -= 0.5;
        b.0 -= 0.5;
    }
    if a.1 == b.1 {
        a.1 -= 0.5;
        b.1 -= 0.5;
    }
    (a, b)
}

type Drawn = Result<(), DrawingErrorKind<CanvasError>>;

impl DrawingBackend for OffscreenBackend {
    type ErrorType = CanvasError;

    fn get_size(&self) -> (u32, u32) {
        (self.canvas.width(), self.canvas.height())
    }

    fn ensure_prepared(&mut self) -> Drawn {
        Ok(())
    }

    fn present(&mut self) -> Drawn {
        self.flush();
        Ok(())
    }

    fn draw_pixel(&mut self, point: BackendCoord, color: BackendColor) -> Drawn {
        if color.alpha == 0.0 {
            return Ok(());
        }
        self.flush();
        self.fill_style(color);
        self.context
            .fill_rect(point.0 as f64, point.1 as f64, 1.0, 1.0);
        Ok(())
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Drawn {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        self.flush();
        let (a, b) = sharp(from, to);
        self.line_style(style);
        self.context.begin_path();
        self.context.move_to(a.0, a.1);
        self.context.line_to(b.0, b.1);
        self.context.stroke();
        Ok(())
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Drawn {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        self.flush();
        let (x, y) = (upper_left.0 as f64, upper_left.1 as f64);
        let (w, h) = (
            (bottom_right.0 - upper_left.0) as f64,
            (bottom_right.1 - upper_left.1) as f64,
        );
        if fill {
            self.fill_style(style.color());
            self.context.fill_rect(x, y, w, h);
        } else {
            self.line_style(style);
            self.context.stroke_rect(x, y, w, h);
        }
        Ok(())
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Drawn {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        self.flush();
        let mut path = path.into_iter();
        self.context.begin_path();
        if let Some(start) = path.next() {
            self.line_style(style);
            self.context.move_to(start.0 as f64, start.1 as f64);
            for p in path {
                self.context.line_to(p.0 as f64, p.1 as f64);
            }
        }
        self.context.stroke();
        Ok(())
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Drawn {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        self.flush();
        let mut path = path.into_iter();
        self.context.begin_path();
        if let Some(start) = path.next() {
            self.fill_style(style.color());
            self.context.move_to(start.0 as f64, start.1 as f64);
            for p in path {
                self.context.line_to(p.0 as f64, p.1 as f64);
            }
            self.context.close_path();
        }
        self.context.fill();
        Ok(())
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Drawn {
        if style.color().alpha == 0.0 {
            return Ok(());
        }
        let (x, y, r) = (center.0 as f64, center.1 as f64, radius as f64);
        if fill {
            // Joined to the open path of circles of this colour.
            let color = css_color(style.color());
            if self.circles.as_deref() != Some(color.as_str()) {
                self.flush();
                self.fill_style(style.color());
                self.context.begin_path();
                self.circles = Some(color);
            }
            self.context.move_to(x + r, y);
            return self
                .context
                .arc(x, y, r, 0.0, std::f64::consts::TAU)
                .map_err(js_error);
        }
        self.flush();
        self.line_style(style);
        self.context.begin_path();
        self.context
            .arc(x, y, r, 0.0, std::f64::consts::TAU)
            .map_err(js_error)?;
        self.context.stroke();
        Ok(())
    }

    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<CanvasError>> {
        measure(&self.context, text, style).map_err(js_error)
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Drawn {
        let color = style.color();
        if color.alpha == 0.0 {
            return Ok(());
        }
        let angle = match style.transform() {
            FontTransform::None => 0.0,
            FontTransform::Rotate90 => 90.0,
            FontTransform::Rotate180 => 180.0,
            FontTransform::Rotate270 => 270.0,
        } * std::f64::consts::PI
            / 180.0;
        self.flush();
        // Fill and font before any save: a restore returns to them.
        self.fill_style(color);
        self.context.set_font(&css_font(style));
        let (mut x, mut y) = (pos.0 as f64, pos.1 as f64);
        if angle != 0.0 {
            self.context.save();
            self.context.translate(x, y).map_err(js_error)?;
            self.context.rotate(angle).map_err(js_error)?;
            (x, y) = (0.0, 0.0);
        }
        self.context.set_text_baseline(match style.anchor().v_pos {
            VPos::Top => "top",
            VPos::Center => "middle",
            VPos::Bottom => "bottom",
        });
        self.context.set_text_align(match style.anchor().h_pos {
            HPos::Left => "start",
            HPos::Right => "end",
            HPos::Center => "center",
        });
        self.context.fill_text(text, x, y).map_err(js_error)?;
        if angle != 0.0 {
            self.context.restore();
        }
        Ok(())
    }
}

/// Another backend (the SVG export's) with text measured on an offscreen
/// canvas instead of in the document.
pub struct Measured<B> {
    inner: B,
    context: OffscreenCanvasRenderingContext2d,
}

impl<B> Measured<B> {
    pub fn new(inner: B) -> Option<Self> {
        let canvas = OffscreenCanvas::new(1, 1).ok()?;
        let context = context_of(&canvas)?;
        Some(Measured { inner, context })
    }
}

impl<B: DrawingBackend> DrawingBackend for Measured<B> {
    type ErrorType = B::ErrorType;

    fn get_size(&self) -> (u32, u32) {
        self.inner.get_size()
    }

    fn ensure_prepared(&mut self) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.ensure_prepared()
    }

    fn present(&mut self) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.present()
    }

    fn draw_pixel(
        &mut self,
        point: BackendCoord,
        color: BackendColor,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_pixel(point, color)
    }

    fn draw_line<S: BackendStyle>(
        &mut self,
        from: BackendCoord,
        to: BackendCoord,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_line(from, to, style)
    }

    fn draw_rect<S: BackendStyle>(
        &mut self,
        upper_left: BackendCoord,
        bottom_right: BackendCoord,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_rect(upper_left, bottom_right, style, fill)
    }

    fn draw_path<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        path: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_path(path, style)
    }

    fn draw_circle<S: BackendStyle>(
        &mut self,
        center: BackendCoord,
        radius: u32,
        style: &S,
        fill: bool,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_circle(center, radius, style, fill)
    }

    fn fill_polygon<S: BackendStyle, I: IntoIterator<Item = BackendCoord>>(
        &mut self,
        vert: I,
        style: &S,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.fill_polygon(vert, style)
    }

    fn draw_text<S: BackendTextStyle>(
        &mut self,
        text: &str,
        style: &S,
        pos: BackendCoord,
    ) -> Result<(), DrawingErrorKind<B::ErrorType>> {
        self.inner.draw_text(text, style, pos)
    }

    fn estimate_text_size<S: BackendTextStyle>(
        &self,
        text: &str,
        style: &S,
    ) -> Result<(u32, u32), DrawingErrorKind<B::ErrorType>> {
        // plotters' own estimate needs a document, which a worker lacks:
        // a failed measurement (none seen) reads as a rough box instead.
        Ok(measure(&self.context, text, style).unwrap_or_else(|_| {
            let size = style.size();
            (
                (0.6 * size * text.chars().count() as f64) as u32,
                size as u32,
            )
        }))
    }
}
