//! The residual chart ([`draw_residuals`]): `y_i − f(t_i)` against time
//! around a zero line, with dashed ±2σ guides. Runs of same-signed
//! residuals are what reveal a wrong curve shape, so the points are drawn
//! in time order over the zero line.

use crate::common::{self, format_value, Scale};
use crate::palette::{GRAPHITE, INK};
use crate::{ChartError, ChartInput};
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Draws the residual chart on `area`.
pub fn draw_residuals<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let obs = common::observations(input)?;
    let fit = input.fit;
    let p = fit.values();
    let scale = Scale::of(area);
    let res: Vec<(f64, f64)> = obs
        .iter()
        .map(|&(t, y)| (t, y - fit.model.eval(&p, t)))
        .filter(|r| r.1.is_finite())
        .collect();
    let sigma = Some(fit.sigma).filter(|s| s.is_finite() && *s > 0.0);

    let (t0, t1) = common::extent(obs.iter().map(|o| o.0)).unwrap_or((0.0, 1.0));
    let x = common::padded((t0, t1), 0.03);
    // Symmetric about zero so the eye compares the two signs fairly.
    let reach = res
        .iter()
        .map(|r| r.1.abs())
        .chain(sigma.map(|s| 2.0 * s))
        .fold(0.0, f64::max);
    let reach = if reach > 0.0 { 1.15 * reach } else { 1.0 };
    let y = (-reach, reach);

    let title = format!("residuals of the {} fit", fit.model.name());
    let caption = format!("residual ({})", input.value_caption);
    let mut chart = common::frame(area, input, &title, &caption, x, y, scale)?;

    chart.draw_series(LineSeries::new(
        [(x.0, 0.0), (x.1, 0.0)],
        ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.5)),
    ))?;
    if let Some(s) = sigma {
        let guide = ShapeStyle::from(GRAPHITE.mix(0.6)).stroke_width(scale.px(1.0));
        for level in [2.0 * s, -2.0 * s] {
            chart.draw_series(DashedLineSeries::new(
                [(x.0, level), (x.1, level)],
                scale.px(5.0),
                scale.px(4.0),
                guide,
            ))?;
        }
        chart.draw_series(std::iter::once(
            EmptyElement::at((x.1, 2.0 * s))
                + Text::new(
                    format!("±2σ (σ = {})", format_value(s)),
                    (-scale.pxi(6.0), -scale.pxi(4.0)),
                    scale.text(13.0).pos(Pos::new(HPos::Right, VPos::Bottom)),
                ),
        ))?;
    }
    let r = scale.px(3.5);
    chart.draw_series(res.iter().map(|&pt| Circle::new(pt, r, INK.filled())))?;
    Ok(())
}
