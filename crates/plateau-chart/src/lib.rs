//! Charts of a growth-curve fit, drawn with plotters on any
//! [`DrawingBackend`]: SVG here and in the CLI, a canvas in the browser.
//!
//! Main items: [`ChartInput`] (plain data: the observations, the
//! [`Fit`], a forecast horizon, an axis label formatter and captions),
//! [`ChartKind`], the drawing functions [`draw_curve`],
//! [`draw_residuals`], [`draw_reflection`], [`draw_linear`], [`draw_rate`],
//! [`draw_qq`] and [`draw_fisher_pry`] (plus the dispatcher [`draw`]), the straight-line transform
//! [`linearise`], [`render_svg`], and [`ChartError`]. The drift chart
//! ([`draw_drift`], [`render_drift_svg`]) has its own input, [`DriftInput`]. For several series,
//! [`draw_overlay`] (all series normalised on one chart, with [`normalise`]).
//!
//! No fonts are loaded: text goes through plotters' built-in font handling
//! (no `ttf` feature), which on SVG emits `<text>` elements for the viewer
//! to render and in the browser measures text with the page's fonts. That
//! keeps the crate building for `wasm32-unknown-unknown`.
//!
//! Sizes (fonts, markers, line widths, margins) scale with the pixel size
//! of the drawing area, so a canvas drawn at twice the CSS size for a
//! device pixel ratio of 2 reads the same as one at ratio 1.

mod common;
mod curve;
mod drift;
mod fisher_pry;
mod linear;
mod overlay;
pub mod palette;
mod qq;
mod rate;
mod reflection;
mod residuals;

use plateau_core::data::TimeAxis;
use plateau_core::fit::Fit;
use plotters::coord::Shift;
use plotters::prelude::*;
use std::error::Error;
use std::fmt;

pub use common::{format_value, plain_time};
pub use curve::draw_curve;
pub use drift::{draw_drift, render_drift_svg, DriftInput};
pub use fisher_pry::draw_fisher_pry;
pub use linear::{draw_linear, linearise, NOT_AVAILABLE_BILOGISTIC};
pub use overlay::{draw_overlay, normalise, render_overlay_svg, OverlaySeries};
pub use qq::draw_qq;
pub use rate::draw_rate;
pub use reflection::{draw_reflection, NOT_AVAILABLE_EXPONENTIAL, NOT_AVAILABLE_NO_CENTER};
pub use residuals::draw_residuals;

/// Everything a chart needs, as plain data.
pub struct ChartInput<'a> {
    /// Observation times on the numeric axis the fit used.
    pub times: &'a [f64],
    /// Observed values, one per time.
    pub values: &'a [f64],
    pub fit: &'a Fit,
    /// End of the forecast in axis units; `None`, or a time not after the
    /// last observation, draws no forecast.
    pub horizon: Option<f64>,
    /// Formats a time-axis value for tick labels (e.g. `2024.5` → `2024-07`).
    pub format_time: &'a dyn Fn(f64) -> String,
    /// Caption of the time axis.
    pub time_caption: &'a str,
    /// Caption of the value axis.
    pub value_caption: &'a str,
    /// The calendar of the time axis, when the data were dated: ticks then
    /// fall on natural boundaries (days, weeks, months, quarters, years) and
    /// the rate view is per the data's period. `None` for plain numbers.
    pub time_axis: Option<TimeAxis>,
}

/// Which chart to draw.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum ChartKind {
    /// Observations, fitted curve, forecast, 95% band, K line, midpoint.
    Curve,
    /// Residuals against time around a zero line.
    Residuals,
    /// Observations and their reflections through the curve's center (the
    /// reflected-data view; named "symmetry" on the page and in files).
    Reflection,
    /// Observations through the model's linearising transform, on which
    /// the fit is the straight line `r (t − t0)` (log scale for the
    /// exponential).
    Linear,
    /// Observed change per unit of time against the fitted derivative,
    /// with the peak rate at t0.
    Rate,
    /// Sorted residuals against normal quantiles.
    Qq,
    /// `ln(y / (K − y))` against time for a chosen K (the fitted K through
    /// [`draw`]; [`draw_fisher_pry`] takes any K).
    FisherPry,
}

impl ChartKind {
    pub const ALL: [ChartKind; 7] = [
        ChartKind::Curve,
        ChartKind::Residuals,
        ChartKind::Reflection,
        ChartKind::Linear,
        ChartKind::Rate,
        ChartKind::Qq,
        ChartKind::FisherPry,
    ];

    pub fn name(self) -> &'static str {
        match self {
            ChartKind::Curve => "curve",
            ChartKind::Residuals => "residuals",
            ChartKind::Reflection => "symmetry",
            ChartKind::Linear => "linear",
            ChartKind::Rate => "rate",
            ChartKind::Qq => "qq",
            ChartKind::FisherPry => "fisher-pry",
        }
    }
}

/// Why a chart could not be drawn.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ChartError {
    /// The input cannot be charted: times and values differ in length, no
    /// finite observation, or a drawing area too small to hold a chart.
    InvalidInput(String),
    /// The backend failed to draw (plotters' `DrawingAreaErrorKind::BackendError`).
    /// Kept as text because the underlying error type depends on the backend.
    Backend(String),
    /// plotters could not lay the chart out (`DrawingAreaErrorKind::LayoutError`).
    Layout,
    /// The backend was in use by another drawing operation
    /// (`DrawingAreaErrorKind::SharingError`).
    Sharing,
}

impl fmt::Display for ChartError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ChartError::InvalidInput(m) => write!(f, "cannot draw the chart: {m}"),
            ChartError::Backend(m) => write!(f, "drawing failed: {m}"),
            ChartError::Layout => {
                f.write_str("drawing failed: the chart does not fit the drawing area")
            }
            ChartError::Sharing => f.write_str("drawing failed: the drawing backend is busy"),
        }
    }
}

impl Error for ChartError {}

impl<E: Error + Send + Sync> From<DrawingAreaErrorKind<E>> for ChartError {
    fn from(e: DrawingAreaErrorKind<E>) -> Self {
        match e {
            DrawingAreaErrorKind::BackendError(b) => ChartError::Backend(b.to_string()),
            DrawingAreaErrorKind::LayoutError => ChartError::Layout,
            DrawingAreaErrorKind::SharingError => ChartError::Sharing,
        }
    }
}

/// Draws the chart `which` on `area`.
pub fn draw<DB: DrawingBackend>(
    which: ChartKind,
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    match which {
        ChartKind::Curve => draw_curve(area, input),
        ChartKind::Residuals => draw_residuals(area, input),
        ChartKind::Reflection => draw_reflection(area, input),
        ChartKind::Linear => draw_linear(area, input),
        ChartKind::Rate => draw_rate(area, input),
        ChartKind::Qq => draw_qq(area, input),
        ChartKind::FisherPry => draw_fisher_pry(area, input, None),
    }
}

/// Renders the Fisher–Pry chart for `k` as a standalone SVG document.
pub fn render_fisher_pry_svg(
    input: &ChartInput,
    k: Option<f64>,
    width: u32,
    height: u32,
) -> Result<String, ChartError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        draw_fisher_pry(&root, input, k)?;
        root.present()?;
    }
    Ok(svg)
}

/// Renders the chart `which` as a standalone SVG document of
/// `width` × `height` pixels.
pub fn render_svg(
    which: ChartKind,
    input: &ChartInput,
    width: u32,
    height: u32,
) -> Result<String, ChartError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        draw(which, &root, input)?;
        root.present()?;
    }
    Ok(svg)
}
