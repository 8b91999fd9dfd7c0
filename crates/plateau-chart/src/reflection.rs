//! The symmetry chart, a view of the reflected data ([`draw_reflection`];
//! the likelihood-ratio test is `plateau_core::diagnostics::symmetry_test`):
//! the observations and their reflections through the fitted curve's
//! center ([`plateau_core::analysis::reflection`]), over the fitted curve,
//! with the rms ratio and how to read it printed on the chart. For the exponential,
//! which has no center, a message says the check does not apply.

use crate::common::{self, Scale};
use crate::palette::{GRAPHITE, INK, ORANGE, ROSE};
use crate::{ChartError, ChartInput};
use plateau_core::analysis::{reflection, MIN_COMPARED};
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;

/// The message drawn instead of the chart for the exponential model.
pub const NOT_AVAILABLE_EXPONENTIAL: &str =
    "The symmetry check is not available for the exponential model: it has no midpoint or \
     inflection point to reflect through.";

/// The message drawn instead of the chart for the Bass and bi-logistic models.
pub const NOT_AVAILABLE_NO_CENTER: &str = "The symmetry check does not apply to this model: \
     the Bass curve is not point-symmetric about its peak, and the bi-logistic's two pulses have \
     no single center.";

/// Draws the symmetry chart on `area`.
pub fn draw_reflection<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let obs = common::observations(input)?;
    let fit = input.fit;
    let model = fit.model;
    let scale = Scale::of(area);
    let title = format!("symmetry check, {} fit", model.name());
    if model == Model::Exponential {
        return common::draw_message(area, &title, NOT_AVAILABLE_EXPONENTIAL, scale);
    }
    if matches!(model, Model::Bass | Model::Bilogistic) {
        return common::draw_message(area, &title, NOT_AVAILABLE_NO_CENTER, scale);
    }
    let Some(sym) = reflection(fit, input.times, input.values) else {
        return common::draw_message(
            area,
            &title,
            "The symmetry check is not available: it needs at least three finite observations.",
            scale,
        );
    };
    let p = fit.values();

    let x = common::padded(
        common::extent(obs.iter().chain(&sym.reflected).map(|q| q.0)).unwrap_or((0.0, 1.0)),
        0.03,
    );
    let curve: Vec<(f64, f64)> = common::linspace(x.0, x.1, 240)
        .into_iter()
        .map(|t| (t, model.eval(&p, t)))
        .filter(|q| q.1.is_finite())
        .collect();
    let y = common::padded(
        common::extent(obs.iter().chain(&sym.reflected).chain(&curve).map(|q| q.1))
            .unwrap_or((0.0, 1.0)),
        0.06,
    );
    // The text block sits at the top left: leave it some headroom.
    let y = (y.0, y.1 + 0.12 * (y.1 - y.0));

    let mut chart = common::frame(area, input, &title, input.value_caption, x, y, scale)?;

    let line = ShapeStyle::from(GRAPHITE).stroke_width(scale.px(2.0));
    chart
        .draw_series(LineSeries::new(curve, line))?
        .label(format!("fitted {}", model.name()))
        .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], line));

    let r = scale.px(3.5);
    let tri = scale.px(5.5);
    let through = match model {
        Model::Logistic => "reflected through (t0, K/2)",
        Model::Logistic4 => "reflected through (t0, (K+L)/2)",
        _ => "reflected through (t0, f(t0))",
    };
    chart
        .draw_series(
            sym.reflected
                .iter()
                .map(|&q| TriangleMarker::new(q, tri, ORANGE.filled())),
        )?
        .label(through)
        .legend(move |(x, y)| TriangleMarker::new((x + scale.pxi(10.0), y), tri, ORANGE.filled()));
    chart
        .draw_series(obs.iter().map(|&q| Circle::new(q, r, INK.filled())))?
        .label("observed")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));
    let (tc, yc) = sym.center;
    if tc.is_finite() && yc.is_finite() {
        let marker = ShapeStyle::from(ROSE).stroke_width(scale.px(2.5));
        chart.draw_series(std::iter::once(Cross::new(
            (tc, yc),
            scale.pxi(7.0),
            marker,
        )))?;
    }

    // The figure and how to read it, top left inside the plot.
    let headline = match sym.rms_ratio {
        Some(v) => format!(
            "rms ratio = {} ({} of {} reflections inside the data)",
            common::format_value(v),
            sym.n_compared,
            sym.reflected.len()
        ),
        None if sym.n_compared < MIN_COMPARED => format!(
            "rms ratio not available: only {} reflection(s) fall inside the observed time range",
            sym.n_compared
        ),
        None => "rms ratio not available: the data show no measurable noise".to_string(),
    };
    let (w, _) = chart.plotting_area().dim_in_pixel();
    let chars = (w as f64 / (0.55 * scale.font(12.0))) as usize;
    let mut lines = vec![(headline, 14.0)];
    lines.extend(
        common::wrap(sym.meaning, chars.saturating_sub(6))
            .into_iter()
            .map(|l| (l, 12.0)),
    );
    common::text_block(&mut chart, (x.0, y.1), lines, scale)?;

    common::legend(&mut chart, SeriesLabelPosition::LowerRight, scale)?;
    Ok(())
}
