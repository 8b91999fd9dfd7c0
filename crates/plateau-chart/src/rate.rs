//! The rate chart ([`draw_rate`]): the observed change per unit of time
//! between consecutive observations, `Δy/Δt` at the midpoint of each
//! interval, against the fitted curve's derivative `dy/dt` over the data
//! and the forecast, with the peak rate marked at t0 for the saturating
//! models (`rK/4` for the logistic). Adoption per period is what analysts
//! often see first; the bell it should form shows whether the peak is past.

use crate::common::{self, format_value, Scale};
use crate::palette::{GRAPHITE, INK, ORANGE, ROSE};
use crate::{ChartError, ChartInput};
use plateau_core::fit::Fit;
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// Derivative samples over the data range and over the forecast.
const SAMPLES: usize = 240;

/// The fitted curve's derivative `dy/dt` at `t`, analytically.
///
/// Every saturating model depends on `t` only through `t − t0`, so
/// `dy/dt = −∂y/∂t0`, which [`Model::eval_grad`] already computes in
/// closed form and without overflow (the stable sigmoid, the Richards
/// softplus); the exponential's is `r y`. Analytic rather than a central
/// difference of `fit.predict`: no step size to choose against the time
/// span, no cancellation where the curve is flat, and the peak comes out
/// exactly `rK/4` rather than to the difference's truncation error.
fn derivative(model: Model, p: &[f64], t: f64) -> f64 {
    model.slope(p, t)
}

/// The derivative's maximum `(t0, dy/dt(t0))` for the saturating models,
/// whose inflection time is t0 (`rK/4` for the logistic); `None` for the
/// exponential, which has no peak. The Bass model peaks at
/// `t* = tau + ln(q/p)/(p+q)` when `q > p`; the bi-logistic's two pulses
/// have no single peak to mark.
fn peak(model: Model, p: &[f64]) -> Option<(f64, f64)> {
    if model == Model::Exponential || model == Model::Bilogistic {
        return None;
    }
    if model == Model::Bass {
        if p[2] <= p[1] {
            return None;
        }
        let ts = plateau_core::model::bass_peak_time(p);
        return Some((ts, derivative(model, p, ts))).filter(|q| q.0.is_finite() && q.1.is_finite());
    }
    let t0 = p[2];
    Some((t0, derivative(model, p, t0))).filter(|q| q.0.is_finite() && q.1.is_finite())
}

/// The observed rates: observations sorted by time, and for each pair of
/// consecutive distinct times `(t_mid, Δy/Δt)`.
fn observed_rates(obs: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut sorted = obs.to_vec();
    sorted.sort_by(|a, b| a.0.total_cmp(&b.0));
    sorted
        .windows(2)
        .filter(|w| w[1].0 > w[0].0)
        .map(|w| {
            let dt = w[1].0 - w[0].0;
            (w[0].0 + 0.5 * dt, (w[1].1 - w[0].1) / dt)
        })
        .filter(|q| q.0.is_finite() && q.1.is_finite())
        .collect()
}

/// Draws the rate chart on `area`.
pub fn draw_rate<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let obs = common::observations(input)?;
    let fit: &Fit = input.fit;
    let model = fit.model;
    let scale = Scale::of(area);
    let p = fit.values();
    let title = format!("rate view, {} fit", model.name());

    let (t_first, t_last) = common::extent(obs.iter().map(|o| o.0)).unwrap_or((0.0, 1.0));
    let horizon = input.horizon.filter(|h| h.is_finite() && *h > t_last);
    let t_end = horizon.unwrap_or(t_last);
    let sample = |a: f64, b: f64| -> Vec<(f64, f64)> {
        common::linspace(a, b, SAMPLES)
            .into_iter()
            .map(|t| (t, derivative(model, &p, t)))
            .filter(|q| q.1.is_finite())
            .collect()
    };
    let fitted = sample(t_first, t_last);
    let forecast = horizon.map(|h| sample(t_last, h)).unwrap_or_default();
    let rates = observed_rates(&obs);

    let x = common::padded((t_first, t_end), 0.03);
    let peak = peak(model, &p).filter(|q| q.0 >= x.0 && q.0 <= x.1);
    let mut y = common::extent(
        rates
            .iter()
            .chain(&fitted)
            .chain(&forecast)
            .chain(&peak)
            .map(|q| q.1),
    )
    .unwrap_or((0.0, 1.0));
    // Rates of growing series read against zero.
    y = (y.0.min(0.0), y.1.max(0.0));
    let y = common::padded(y, 0.06);
    // Headroom for the peak label and the legend above the curve.
    let y = (y.0, y.1 + 0.12 * (y.1 - y.0));

    // Rates are per unit of the axis: the data's period when dated.
    let per = input
        .time_axis
        .and_then(|a| a.period())
        .map_or(input.time_caption, |p| p.name());
    let caption = format!("{} per {}", input.value_caption, per);
    let mut chart = common::frame(area, input, &title, &caption, x, y, scale)?;

    chart.draw_series(LineSeries::new(
        [(x.0, 0.0), (x.1, 0.0)],
        ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.5)),
    ))?;

    let stroke = ShapeStyle::from(ORANGE).stroke_width(scale.px(2.5));
    chart
        .draw_series(LineSeries::new(fitted, stroke))?
        .label(format!("fitted {} dy/dt", model.name()))
        .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], stroke));
    if forecast.len() >= 2 {
        common::forecast_line(&mut chart, forecast, stroke, scale)?;
    }

    if let Some((tc, rc)) = peak {
        let marker = ShapeStyle::from(ROSE).stroke_width(scale.px(2.5));
        let size = scale.pxi(7.0);
        let what = match model {
            Model::Logistic => "peak rate rK/4 at t0",
            Model::Logistic4 => "peak rate r(K−L)/4 at t0",
            Model::Bass => "peak adoption m(p+q)²/(4q) at t*",
            _ => "peak rate at the inflection t0",
        };
        chart
            .draw_series(std::iter::once(Cross::new((tc, rc), size, marker)))?
            .label(what)
            .legend(move |(x, y)| Cross::new((x + scale.pxi(10.0), y), size, marker));
        let formula = match model {
            Model::Logistic => "rK/4 = ",
            Model::Logistic4 => "r(K−L)/4 = ",
            Model::Bass => "m(p+q)²/(4q) = ",
            _ => "",
        };
        let at = if model == Model::Bass { "t*" } else { "t0" };
        chart.draw_series(std::iter::once(
            EmptyElement::at((tc, rc))
                + Text::new(
                    format!(
                        "peak {formula}{} at {at} = {}",
                        format_value(rc),
                        (input.format_time)(tc)
                    ),
                    (scale.pxi(10.0), -scale.pxi(4.0)),
                    scale.text(13.0).pos(Pos::new(HPos::Left, VPos::Bottom)),
                ),
        ))?;
    }

    let r = scale.px(3.5);
    chart
        .draw_series(rates.iter().map(|&q| Circle::new(q, r, INK.filled())))?
        .label("observed Δy/Δt")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));

    // The legend goes in the upper corner away from the peak and its label.
    let corner = match peak {
        Some((tc, _)) if tc > 0.5 * (x.0 + x.1) => SeriesLabelPosition::UpperLeft,
        _ => SeriesLabelPosition::UpperRight,
    };
    common::legend(&mut chart, corner, scale)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Common practice: the logistic's rate r K s (1 − s) peaks at s = 1/2,
    /// that is at t0, with the value rK/4.
    #[test]
    fn logistic_rate_peaks_at_rk_over_4_at_t0() {
        let p = [2.5e6, 0.6, 2012.37];
        let want = p[1] * p[0] / 4.0;
        let (tc, rc) = peak(Model::Logistic, &p).unwrap();
        assert_eq!(tc, p[2]);
        assert!((rc - want).abs() <= 1e-6 * want, "{rc} vs {want}");
        // And it is the maximum: a fine grid finds nothing higher, and its
        // best point is next to t0.
        let (t_best, r_best) = (0..=20_000)
            .map(|i| p[2] - 10.0 + 1e-3 * i as f64)
            .map(|t| (t, derivative(Model::Logistic, &p, t)))
            .fold((f64::NAN, f64::MIN), |a, b| if b.1 > a.1 { b } else { a });
        assert!(r_best <= want * (1.0 + 1e-12));
        assert!((t_best - p[2]).abs() <= 1e-3);
    }

    /// The analytic derivative agrees with a central difference of the
    /// curve for every model (a check of the `−∂y/∂t0` identity).
    #[test]
    fn derivative_matches_a_central_difference() {
        let cases: [(Model, &[f64]); 5] = [
            (Model::Logistic, &[1000.0, 0.6, 2010.0]),
            (Model::Logistic4, &[1000.0, 0.6, 2010.0, 100.0]),
            (Model::Gompertz, &[1000.0, 0.4, 2010.0]),
            (Model::Richards, &[1000.0, 0.5, 2010.0, 2.0]),
            (Model::Exponential, &[3.0 * (-0.25f64 * 2000.0).exp(), 0.25]),
        ];
        for (model, p) in cases {
            for t in [2003.3, 2009.1, 2010.0, 2014.7] {
                let h = 1e-4;
                let num = (model.eval(p, t + h) - model.eval(p, t - h)) / (2.0 * h);
                let ana = derivative(model, p, t);
                assert!(
                    (num - ana).abs() <= 1e-6 * ana.abs().max(1e-9),
                    "{model:?} at {t}: {ana} vs {num}"
                );
            }
        }
        // Gompertz peak rK/e, Richards r K (1 + ν)^(−1 − 1/ν).
        let (_, g) = peak(Model::Gompertz, &[1000.0, 0.4, 2010.0]).unwrap();
        assert!((g - 400.0 / std::f64::consts::E).abs() < 1e-9);
        let (_, rr) = peak(Model::Richards, &[1000.0, 0.5, 2010.0, 2.0]).unwrap();
        assert!((rr - 500.0 * 3f64.powf(-1.5)).abs() < 1e-9);
        assert_eq!(peak(Model::Exponential, &[1.0, 0.2]), None);
    }

    #[test]
    fn observed_rates_sort_and_skip_repeated_times() {
        let obs = [
            (2002.0, 30.0),
            (2000.0, 10.0),
            (2001.0, 15.0),
            (2001.0, 16.0),
        ];
        let r = observed_rates(&obs);
        assert_eq!(r.len(), 2);
        assert_eq!(r[0].0, 2000.5);
        assert_eq!(r[1].0, 2001.5);
        assert!(r.iter().all(|q| q.1 > 0.0));
    }
}
