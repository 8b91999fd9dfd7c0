//! The normal Q-Q chart ([`draw_qq`]): the fit's residuals, sorted, against
//! standard normal quantiles at Filliben's plotting positions (the data of
//! [`plateau_core::diagnostics::normal_qq`]), with the least-squares line
//! through them. Points on the line mean normal-looking errors; an S bend
//! means heavy or light tails, a curve skewness, a lone point far off an
//! outlier. The normality verdict is printed on the chart.

use crate::common::{self, Scale};
use crate::palette::{INK, ORANGE};
use crate::{ChartError, ChartInput};
use plateau_core::diagnostics::{normal_qq, residuals_in_time_order};
use plotters::coord::Shift;
use plotters::prelude::*;

/// Draws the Q-Q chart on `area`.
pub fn draw_qq<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    common::observations(input)?;
    let fit = input.fit;
    let scale = Scale::of(area);
    let title = format!("normal Q-Q plot, residuals of the {} fit", fit.model.name());
    let res = residuals_in_time_order(fit, input.times, input.values);
    let Some(qq) = normal_qq(&res) else {
        return common::draw_message(
            area,
            &title,
            "The Q-Q plot is not available: it needs at least three residuals that are not all equal.",
            scale,
        );
    };
    let x = common::padded(
        common::extent(qq.points.iter().map(|p| p.theoretical)).unwrap_or((-1.0, 1.0)),
        0.06,
    );
    let line = [x.0, x.1].map(|q| (q, qq.intercept + qq.slope * q));
    let y = common::padded(
        common::extent(qq.points.iter().map(|p| p.sample).chain(line.map(|q| q.1)))
            .unwrap_or((-1.0, 1.0)),
        0.06,
    );
    // Headroom for the text at the top left.
    let y = (y.0, y.1 + 0.14 * (y.1 - y.0));
    let fmt_q = |v: f64| common::format_value(v);
    let axis = ChartInput {
        format_time: &fmt_q,
        time_caption: "standard normal quantile",
        time_axis: None,
        ..*input
    };
    let caption = format!("residual ({})", input.value_caption);
    let mut chart = common::frame(area, &axis, &title, &caption, x, y, scale)?;

    let stroke = ShapeStyle::from(ORANGE).stroke_width(scale.px(2.5));
    chart
        .draw_series(LineSeries::new(line, stroke))?
        .label("least-squares line")
        .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], stroke));
    let r = scale.px(3.5);
    chart
        .draw_series(
            qq.points
                .iter()
                .map(|p| Circle::new((p.theoretical, p.sample), r, INK.filled())),
        )?
        .label("residuals, sorted")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));

    let (w, _) = chart.plotting_area().dim_in_pixel();
    let chars = (w as f64 / (0.55 * scale.font(12.0))) as usize;
    let mut lines = vec![(
        format!(
            "Q-Q correlation {} (n = {})",
            common::format_value(qq.correlation),
            qq.points.len()
        ),
        14.0,
    )];
    lines.extend(
        common::wrap(
            &plateau_study::wording::normality_of(&res).text,
            chars.saturating_sub(6),
        )
        .into_iter()
        .map(|l| (l, 12.0)),
    );
    common::text_block(&mut chart, (x.0, y.1), lines, scale)?;
    common::legend(&mut chart, SeriesLabelPosition::LowerRight, scale)?;
    Ok(())
}
