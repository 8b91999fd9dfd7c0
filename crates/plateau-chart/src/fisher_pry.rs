//! The Fisher–Pry chart ([`draw_fisher_pry`]): `ln(y / (K − y))` against
//! time for a K the user chose (or the fitted K), with the weighted
//! straight line and the curvature verdict of
//! [`plateau_core::diagnostics::fisher_pry`]. Unlike the straight-line view
//! of the fitted model ([`crate::draw_linear`]), the K here is free: the
//! chart answers "would a logistic with this saturation level fit?".

use crate::common::{self, Scale};
use crate::palette::{GRAPHITE, INK, ORANGE};
use crate::{ChartError, ChartInput};
use plateau_core::diagnostics::fisher_pry_of;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// The K the Fisher–Pry chart uses when none is given: the fit's K, if the
/// model has one.
pub fn default_k(input: &ChartInput) -> Option<f64> {
    input.fit.param("K").map(|p| p.estimate)
}

/// Draws the Fisher–Pry chart for `k` (or the fitted K when `None`).
pub fn draw_fisher_pry<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
    k: Option<f64>,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    common::observations(input)?;
    let scale = Scale::of(area);
    let given = k.is_some();
    let Some(k) = k.or_else(|| default_k(input)) else {
        return common::draw_message(
            area,
            "Fisher–Pry view",
            "The Fisher–Pry view needs a saturation level K: enter one, or fit a model that has K.",
            scale,
        );
    };
    let title = format!(
        "Fisher–Pry view, K = {} ({})",
        common::format_value(k),
        if given { "entered" } else { "fitted" }
    );
    let Some(fp) =
        fisher_pry_of(input.fit, input.times, input.values, k).filter(|f| f.points.len() >= 2)
    else {
        return common::draw_message(
            area,
            &title,
            "The Fisher–Pry view is not available: fewer than two values lie between 0 and K.",
            scale,
        );
    };
    let (t_first, t_last) = common::extent(fp.points.iter().map(|q| q.0)).unwrap_or((0.0, 1.0));
    let x = common::padded((t_first, t_last), 0.03);
    let line = [x.0, x.1].map(|t| (t, fp.intercept + fp.slope * t));
    let ext = common::extent(
        fp.points
            .iter()
            .map(|q| q.1)
            .chain(line.iter().map(|q| q.1).filter(|v| v.is_finite()))
            .chain([0.0]),
    )
    .unwrap_or((-1.0, 1.0));
    let y = common::padded(ext, 0.06);
    let y = (y.0 - 0.08 * (y.1 - y.0), y.1 + 0.16 * (y.1 - y.0));
    let mut chart = common::frame(area, input, &title, "ln(y / (K − y))", x, y, scale)?;

    chart.draw_series(LineSeries::new(
        [(x.0, 0.0), (x.1, 0.0)],
        ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.5)),
    ))?;
    if line.iter().all(|q| q.1.is_finite()) {
        let stroke = ShapeStyle::from(ORANGE).stroke_width(scale.px(2.5));
        chart
            .draw_series(LineSeries::new(line, stroke))?
            .label("weighted straight line")
            .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], stroke));
    }
    let r = scale.px(3.5);
    chart
        .draw_series(fp.points.iter().map(|&q| Circle::new(q, r, INK.filled())))?
        .label("observed, transformed")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));

    let (w, _) = chart.plotting_area().dim_in_pixel();
    let chars = (w as f64 / (0.55 * scale.font(12.0))) as usize;
    let mut dy = scale.pxi(8.0);
    for text in common::wrap(
        &plateau_study::wording::fisher_pry_verdict(&fp).text,
        chars.saturating_sub(6),
    ) {
        chart.draw_series(std::iter::once(
            EmptyElement::at((x.0, y.1))
                + Text::new(
                    text,
                    (scale.pxi(10.0), dy),
                    scale.text(12.5).pos(Pos::new(HPos::Left, VPos::Top)),
                ),
        ))?;
        dy += scale.pxi(12.5 * 1.35);
    }
    if fp.dropped > 0 {
        chart.draw_series(std::iter::once(
            EmptyElement::at((x.0, y.0))
                + Text::new(
                    format!(
                        "{} point{} outside 0 < y < K not shown",
                        fp.dropped,
                        if fp.dropped == 1 { "" } else { "s" }
                    ),
                    (scale.pxi(10.0), -scale.pxi(8.0)),
                    scale.text(13.0).pos(Pos::new(HPos::Left, VPos::Bottom)),
                ),
        ))?;
    }
    common::legend(&mut chart, SeriesLabelPosition::LowerRight, scale)?;
    Ok(())
}
