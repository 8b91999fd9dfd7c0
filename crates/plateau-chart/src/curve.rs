//! The fit chart ([`draw_curve`]): observations, the fitted curve over the
//! data, its forecast continuation (dashed) to the horizon, the shaded 95%
//! confidence band of the mean curve inside the lighter 95% prediction band
//! for a new observation, the saturation level K and the
//! midpoint or inflection point, with a legend.

use crate::common::{self, format_value, Scale};
use crate::palette::{BAND_ALPHA, BAND_EDGE, GRAPHITE, INK, ORANGE, ROSE, SKY};
use crate::{ChartError, ChartInput};
use plateau_core::analysis::{sample_curve, CurveSample};
use plateau_core::forecast::prediction_band;
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Curve samples over the data range and over the forecast.
const SAMPLES: usize = 240;

/// How far the band may push the value axis beyond the data and the curve,
/// as a fraction of their span: a band that explodes in a long forecast is
/// cut at the frame instead of squashing the data into a thin line.
const BAND_OVERSHOOT: f64 = 0.3;

/// Opacity of the prediction band (the confidence band uses `BAND_ALPHA`).
const PREDICTION_ALPHA: f64 = 0.18;

/// Draws the fit chart on `area`.
pub fn draw_curve<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let obs = common::observations(input)?;
    let fit = input.fit;
    let model = fit.model;
    let scale = Scale::of(area);
    let p = fit.values();

    let (t_first, t_last) = common::extent(obs.iter().map(|o| o.0)).unwrap_or((0.0, 1.0));
    let horizon = input.horizon.filter(|h| h.is_finite() && *h > t_last);
    let t_end = horizon.unwrap_or(t_last);

    let fitted = finite(sample_curve(fit, t_first, t_last, SAMPLES, 0.95));
    let forecast = match horizon {
        Some(h) => finite(sample_curve(fit, t_last, h, SAMPLES, 0.95)),
        None => Vec::new(),
    };

    // Saturation level (and floor for logistic4) and the curve's center.
    // The level's name: K; m for the Bass model; K1 + K2 for the bi-logistic.
    let k_name = match model {
        Model::Bass => "m",
        Model::Bilogistic => "K1 + K2",
        _ => "K",
    };
    let k = model.saturation_level(&p).filter(|k| k.is_finite());
    let center = center(model, &p).filter(|c| c.0.is_finite() && c.1.is_finite());

    // Value axis: data and curve always; 0 for non-negative series (counts
    // and shares read against zero); K when it is within reach; the band
    // only up to BAND_OVERSHOOT.
    let curve_vals = fitted.iter().chain(&forecast).map(|s| s.fit);
    let core = common::extent(obs.iter().map(|o| o.1).chain(curve_vals)).unwrap_or((0.0, 1.0));
    let mut y = core;
    if core.0 >= 0.0 {
        y.0 = 0.0;
    }
    let span = (y.1 - y.0).max(f64::MIN_POSITIVE);
    let k_visible = k.filter(|k| *k >= y.0 && *k <= y.1 + span);
    if let Some(k) = k_visible {
        y.1 = y.1.max(k);
    }
    // The prediction band, at the same times as the confidence band.
    let predicted: Vec<(f64, f64, f64)> = fitted
        .iter()
        .chain(&forecast)
        .filter_map(|s| {
            let (lo, hi) = prediction_band(fit, s.t, 0.95)?;
            (lo.is_finite() && hi.is_finite()).then_some((s.t, lo, hi))
        })
        .collect();
    let band = common::extent(
        fitted
            .iter()
            .chain(&forecast)
            .flat_map(|s| [s.lo, s.hi])
            .flatten()
            .chain(predicted.iter().flat_map(|p| [p.1, p.2])),
    );
    if let Some((lo, hi)) = band {
        let span = y.1 - y.0;
        y.0 = y.0.min(lo.max(y.0 - BAND_OVERSHOOT * span));
        y.1 = y.1.max(hi.min(y.1 + BAND_OVERSHOOT * span));
    }
    let y = common::padded(y, 0.05);
    let x = common::padded((t_first, t_end), 0.03);

    let title = format!("{} fit", model.name());
    let mut chart = common::frame(area, input, &title, input.value_caption, x, y, scale)?;
    let clamp = |v: f64| v.clamp(y.0, y.1);

    // Prediction band: lighter, behind the confidence band.
    if predicted.len() >= 2 {
        let mut poly: Vec<(f64, f64)> = predicted.iter().map(|p| (p.0, clamp(p.2))).collect();
        poly.extend(predicted.iter().rev().map(|p| (p.0, clamp(p.1))));
        let light = SKY.mix(PREDICTION_ALPHA);
        chart
            .draw_series(std::iter::once(Polygon::new(poly, light.filled())))?
            .label("95% prediction band (new observation)")
            .legend(move |(x, y)| {
                Rectangle::new(
                    [
                        (x, y - scale.pxi(5.0)),
                        (x + scale.pxi(20.0), y + scale.pxi(5.0)),
                    ],
                    light.filled(),
                )
            });
    }

    // Band: one polygon, upper edge forward and lower edge back.
    let edge: Vec<&CurveSample> = fitted
        .iter()
        .chain(&forecast)
        .filter(|s| s.lo.is_some())
        .collect();
    if edge.len() >= 2 {
        let mut poly: Vec<(f64, f64)> = edge
            .iter()
            .filter_map(|s| Some((s.t, clamp(s.hi?))))
            .collect();
        poly.extend(edge.iter().rev().filter_map(|s| Some((s.t, clamp(s.lo?)))));
        chart
            .draw_series(std::iter::once(Polygon::new(
                poly,
                SKY.mix(BAND_ALPHA).filled(),
            )))?
            .label("95% confidence band")
            .legend(move |(x, y)| {
                Rectangle::new(
                    [
                        (x, y - scale.pxi(5.0)),
                        (x + scale.pxi(20.0), y + scale.pxi(5.0)),
                    ],
                    SKY.mix(BAND_ALPHA).filled(),
                )
            });
        // Its edges as thin lines that keep 3:1 contrast on white.
        let edge_style = ShapeStyle::from(BAND_EDGE).stroke_width(scale.px(1.0));
        for side in [
            edge.iter()
                .filter_map(|s| Some((s.t, clamp(s.hi?))))
                .collect::<Vec<_>>(),
            edge.iter()
                .filter_map(|s| Some((s.t, clamp(s.lo?))))
                .collect(),
        ] {
            chart.draw_series(std::iter::once(PathElement::new(side, edge_style)))?;
        }
    }

    // K: a dashed reference line labelled at its right end.
    if let Some(kv) = k {
        let label_style = scale.text(13.0).pos(Pos::new(HPos::Right, VPos::Bottom));
        if let Some(kv) = k_visible {
            chart.draw_series(DashedLineSeries::new(
                [(x.0, kv), (x.1, kv)],
                scale.px(6.0),
                scale.px(4.0),
                ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.2)),
            ))?;
            chart.draw_series(std::iter::once(
                EmptyElement::at((x.1, kv))
                    + Text::new(
                        format!("{k_name} = {}", format_value(kv)),
                        (-scale.pxi(6.0), -scale.pxi(4.0)),
                        label_style,
                    ),
            ))?;
        } else {
            // K far above the data: say so at the top instead of drawing it.
            chart.draw_series(std::iter::once(
                EmptyElement::at((x.1, y.1))
                    + Text::new(
                        format!("{k_name} = {} (above the chart)", format_value(kv)),
                        (-scale.pxi(6.0), scale.pxi(18.0)),
                        label_style,
                    ),
            ))?;
        }
    }

    let line = ShapeStyle::from(ORANGE).stroke_width(scale.px(2.5));
    chart
        .draw_series(LineSeries::new(fitted.iter().map(|s| (s.t, s.fit)), line))?
        .label(format!("fitted {}", model.name()))
        .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], line));
    if forecast.len() >= 2 {
        common::forecast_line(
            &mut chart,
            forecast.iter().map(|s| (s.t, clamp(s.fit))),
            line,
            scale,
        )?;
    }

    // Midpoint (logistic) or inflection point, if it lies on the chart.
    if let Some((tc, yc)) = center.filter(|c| c.0 >= x.0 && c.0 <= x.1 && c.1 >= y.0 && c.1 <= y.1)
    {
        let marker = ShapeStyle::from(ROSE).stroke_width(scale.px(2.5));
        let size = scale.pxi(7.0);
        let what = match model {
            Model::Logistic => "midpoint (t0, K/2)",
            Model::Logistic4 => "midpoint (t0, (K+L)/2)",
            Model::Bass => "peak adoption (t*, N(t*))",
            _ => "inflection (t0, f(t0))",
        };
        chart
            .draw_series(std::iter::once(Cross::new((tc, yc), size, marker)))?
            .label(what)
            .legend(move |(x, y)| Cross::new((x + scale.pxi(10.0), y), size, marker));
        // The label goes on the side of the marker with more room, so it
        // stays inside the plot (right of a marker near the right edge it
        // was cut off).
        let right_half = (tc - x.0) > 0.5 * (x.1 - x.0);
        let (dx, side) = if right_half {
            (-scale.pxi(10.0), HPos::Right)
        } else {
            (scale.pxi(10.0), HPos::Left)
        };
        // On a plain-number axis the label shows the digits t0's standard
        // error supports, as the tables and the answer do; dates stay dates.
        let tc_text = if input.time_axis.is_none() && model != Model::Bass {
            let se = input.fit.param("t0").and_then(|p| p.std_error);
            plateau_study::numbers::Precision::of_estimate(tc, se).show_time(tc)
        } else {
            (input.format_time)(tc)
        };
        chart.draw_series(std::iter::once(
            EmptyElement::at((tc, yc))
                + Text::new(
                    format!(
                        "{} = {tc_text}",
                        if model == Model::Bass { "t*" } else { "t0" },
                    ),
                    (dx, scale.pxi(4.0)),
                    scale.text(13.0).pos(Pos::new(side, VPos::Top)),
                ),
        ))?;
    }

    let r = scale.px(3.5);
    chart
        .draw_series(
            obs.iter()
                .map(|&(t, v)| Circle::new((t, v), r, INK.filled())),
        )?
        .label("observed")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));

    common::legend(&mut chart, SeriesLabelPosition::UpperLeft, scale)?;
    Ok(())
}

/// The curve's center: the logistic's midpoint `(t0, K/2)`, logistic4's
/// `(t0, (K + L)/2)`, otherwise the inflection point `(t0, f(t0))`; none for
/// the exponential.
fn center(model: Model, p: &[f64]) -> Option<(f64, f64)> {
    match model {
        Model::Logistic => Some((p[2], p[0] / 2.0)),
        Model::Logistic4 => Some((p[2], (p[0] + p[3]) / 2.0)),
        Model::Gompertz | Model::Richards => Some((p[2], model.eval(p, p[2]))),
        Model::Bass if p[2] > p[1] => {
            let ts = plateau_core::model::bass_peak_time(p);
            Some((ts, model.eval(p, ts)))
        }
        Model::Exponential | Model::Bass | Model::Bilogistic => None,
    }
}

/// Drops samples whose fitted value is not finite (overflowing exponentials);
/// keeps a band end only if it is finite too.
fn finite(samples: Vec<CurveSample>) -> Vec<CurveSample> {
    samples
        .into_iter()
        .filter(|s| s.t.is_finite() && s.fit.is_finite())
        .map(|mut s| {
            if !(s.lo.is_some_and(f64::is_finite) && s.hi.is_some_and(f64::is_finite)) {
                s.lo = None;
                s.hi = None;
            }
            s
        })
        .collect()
}
