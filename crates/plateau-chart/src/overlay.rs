//! The overlay of several series ([`draw_overlay`]): every series on one
//! chart in the coordinates where all logistic curves coincide,
//! `x = r (t − t0)` and `y / K` (for logistic4, `(y − L) / (K − L)`), with
//! the logistic reference curve `1 / (1 + e^(−x))`. A series that follows
//! its logistic lies on the reference whatever its K, r and t0; one that
//! bends away from it follows another shape. Normalising by the fitted
//! parameters is common practice for comparing diffusion curves (the
//! Fisher–Pry substitution puts the same curves on one straight line).
//!
//! Series are told apart by colour and by marker shape, so colour is never
//! the only cue ([`palette::SERIES`]).

use crate::common::{self, Scale};
use crate::palette::{self, GRAPHITE};
use crate::ChartError;
use plateau_core::fit::Fit;
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;

/// One series of the overlay.
pub struct OverlaySeries<'a> {
    pub name: &'a str,
    pub times: &'a [f64],
    pub values: &'a [f64],
    pub fit: &'a Fit,
}

/// Legend entries beyond this many series are summarised in one line.
const MAX_LEGEND: usize = 10;

/// Normalised coordinates `(r (t − t0), y / K)` of one observation, or
/// `(r (t − t0), (y − L) / (K − L))` for logistic4; `None` for models
/// without K, r and t0 (the exponential) or non-finite results.
pub fn normalise(fit: &Fit, t: f64, y: f64) -> Option<(f64, f64)> {
    let p = fit.values();
    let (k, r, t0) = match fit.model {
        Model::Exponential => return None,
        _ => (p[0], p[1], p[2]),
    };
    let floor = if fit.model == Model::Logistic4 {
        p[3]
    } else {
        0.0
    };
    let x = r * (t - t0);
    let v = (y - floor) / (k - floor);
    (x.is_finite() && v.is_finite()).then_some((x, v))
}

/// The standard logistic `1 / (1 + e^(−x))`.
fn reference(x: f64) -> f64 {
    1.0 / (1.0 + (-x).exp())
}

/// Marker `i` (shape cycles every 4, colour every 8) at `c`.
fn marker<DB: DrawingBackend>(
    i: usize,
    c: (i32, i32),
    size: i32,
) -> DynElement<'static, DB, (i32, i32)> {
    let color = palette::SERIES[i % palette::SERIES.len()];
    let stroke = ShapeStyle::from(color).stroke_width((size / 3).max(1) as u32);
    match (i / palette::SERIES.len()) % 4 {
        0 => Circle::new(c, size, color.filled()).into_dyn(),
        1 => TriangleMarker::new(c, size + 1, color.filled()).into_dyn(),
        2 => Rectangle::new(
            [(c.0 - size, c.1 - size), (c.0 + size, c.1 + size)],
            color.filled(),
        )
        .into_dyn(),
        _ => Cross::new(c, size, stroke).into_dyn(),
    }
}

/// Draws the overlay of `series` on `area`.
pub fn draw_overlay<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    series: &[OverlaySeries],
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let scale = Scale::of(area);
    let title = "all series, normalised: y / K against r (t − t0)";
    let points: Vec<Vec<(f64, f64)>> = series
        .iter()
        .map(|s| {
            s.times
                .iter()
                .zip(s.values)
                .filter_map(|(&t, &y)| normalise(s.fit, t, y))
                .collect()
        })
        .collect();
    if points.iter().all(Vec::is_empty) {
        return common::draw_message(
            area,
            title,
            "The overlay needs a model with K, r and t0 (logistic, logistic4, Gompertz, Richards).",
            scale,
        );
    }
    // Far tails of a badly identified fit would squash the rest: the view
    // is cut at |x| ≤ 10 (e^−10: the curve is flat there) and y in [−0.25, 1.5].
    let (x_lo, x_hi) = common::extent(points.iter().flatten().map(|p| p.0)).unwrap_or((-5.0, 5.0));
    let x = common::padded((x_lo.clamp(-10.0, -3.0), x_hi.clamp(3.0, 10.0)), 0.03);
    let (y_lo, y_hi) = common::extent(points.iter().flatten().map(|p| p.1)).unwrap_or((0.0, 1.0));
    let y = common::padded((y_lo.clamp(-0.25, 0.0), y_hi.clamp(1.0, 1.5)), 0.04);

    area.fill(&WHITE)?;
    let (w, _) = area.dim_in_pixel();
    let labels = ((w as f64 / scale.font(110.0)) as usize).clamp(2, 12);
    let mut chart = ChartBuilder::on(area)
        .margin(scale.px(12.0))
        .caption(title, scale.text(19.0))
        .x_label_area_size(scale.px(48.0))
        .y_label_area_size(scale.px(60.0))
        .build_cartesian_2d(common::TimeCoord::new(None, x, labels), y.0..y.1)?;
    chart
        .configure_mesh()
        .x_labels(labels)
        .y_labels(6)
        .x_label_formatter(&|v| common::format_value(*v))
        .y_label_formatter(&|v| common::format_value(*v))
        .x_desc("r (t − t0)")
        .y_desc("y / K")
        .label_style(scale.text(13.0))
        .axis_desc_style(scale.text(14.0))
        .light_line_style(RGBColor(235, 235, 235))
        .bold_line_style(RGBColor(215, 215, 215))
        .axis_style(ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.0)))
        .set_all_tick_mark_size(scale.px(4.0))
        .draw()?;

    let line = ShapeStyle::from(GRAPHITE).stroke_width(scale.px(2.5));
    chart
        .draw_series(LineSeries::new(
            common::linspace(x.0, x.1, 240)
                .into_iter()
                .map(|v| (v, reference(v))),
            line,
        ))?
        .label("logistic 1 / (1 + e^−x)")
        .legend(move |(px, py)| PathElement::new([(px, py), (px + scale.pxi(20.0), py)], line));

    let size = scale.pxi(3.5);
    let inside = |p: &&(f64, f64)| p.0 >= x.0 && p.0 <= x.1 && p.1 >= y.0 && p.1 <= y.1;
    for (i, (s, pts)) in series.iter().zip(&points).enumerate() {
        let drawn = chart.draw_series(
            pts.iter()
                .filter(inside)
                .map(|&p| EmptyElement::at(p) + marker::<DB>(i, (0, 0), size)),
        )?;
        if i < MAX_LEGEND {
            let label = if pts.is_empty() {
                format!("{} (no K, r, t0)", s.name)
            } else {
                s.name.to_string()
            };
            drawn
                .label(label)
                .legend(move |(px, py)| marker::<DB>(i, (px + scale.pxi(10.0), py), size));
        }
    }
    if series.len() > MAX_LEGEND {
        chart
            .draw_series(std::iter::empty::<Circle<(f64, f64), i32>>())?
            .label(format!("… and {} more series", series.len() - MAX_LEGEND))
            .legend(|(px, py)| EmptyElement::at((px, py)));
    }
    common::legend(&mut chart, SeriesLabelPosition::UpperLeft, scale)?;
    Ok(())
}

/// The overlay as a standalone SVG document of `width` × `height` pixels.
pub fn render_overlay_svg(
    series: &[OverlaySeries],
    width: u32,
    height: u32,
) -> Result<String, ChartError> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (width, height)).into_drawing_area();
        draw_overlay(&root, series)?;
        root.present()?;
    }
    Ok(svg)
}
