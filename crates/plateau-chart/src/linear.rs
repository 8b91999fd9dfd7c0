//! The straight-line chart ([`draw_linear`]): the observations passed
//! through the fitted model's linearising transform ([`linearise`]), under
//! which the fitted curve becomes the straight line `z = r (t − t0)`, with
//! that line over the data and the forecast and the `z = 0` line where the
//! curve is at its center. Points bending away from the line show where
//! the model's shape misses the data, which the S-shaped view hides in the
//! flat tails. For the exponential the transform is `ln y` (a log-scale
//! view) against the line `ln a + r t`.
//!
//! Observations the transform cannot take (`y ≤ 0`, `y ≥ K`, `y ≤ L`, …)
//! are counted and the count is printed on the chart.

use crate::common::{self, Scale};
use crate::palette::{GRAPHITE, INK, ORANGE};
use crate::{ChartError, ChartInput};
use plateau_core::fit::Fit;
use plateau_core::Model;
use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// The fitted model's linearising transform of the value `y`: the `z` for
/// which the fitted curve is the straight line `z = r (t − t0)` (for the
/// exponential, `z = ln y` against `ln a + r t`).
///
/// | model | z(y) | defined for |
/// |---|---|---|
/// | `logistic` | `ln(y / (K − y))` (Fisher & Pry 1971) | 0 < y < K |
/// | `logistic4` | `ln((y − L) / (K − y))` | y strictly between L and K |
/// | `gompertz` | `−ln(−ln(y / K))` | 0 < y < K |
/// | `richards` | `−ln(((K / y)^ν − 1) / ν)` | 0 < y < K |
/// | `exponential` | `ln y` | y > 0 (with a > 0) |
/// | `bass` | `ln((y + m p/q) / (m − y))` | 0 ≤ y < m |
///
/// The Bass curve after launch is the logistic with the floor
/// `L = −m p/q`, `K = m`, `r = p + q` and midpoint `t* = tau + ln(q/p)/(p+q)`
/// (see `plateau_core::model`), so it takes logistic4's transform; the line
/// is `(p + q)(t − t*)` and `z = 0` is the peak. The bi-logistic has no
/// linearising transform: the chart says so.
/// `None` when `y` is outside that range, when `y` or a parameter is not
/// finite, or when the parameters admit no transform (K ≤ 0, ν ≤ 0,
/// K = L, a ≤ 0).
pub fn linearise(fit: &Fit, y: f64) -> Option<f64> {
    transform(fit.model, &fit.values(), y)
}

/// [`linearise`] on a parameter vector in [`Model::param_names`] order.
fn transform(model: Model, p: &[f64], y: f64) -> Option<f64> {
    if !y.is_finite() || p.len() < model.n_params() || !p.iter().all(|v| v.is_finite()) {
        return None;
    }
    let z = match model {
        Model::Bass => return transform(Model::Logistic4, &bass_as_logistic4(p), y),
        Model::Bilogistic => return None,
        Model::Logistic => {
            let k = p[0];
            if !(k > 0.0 && y > 0.0 && y < k) {
                return None;
            }
            (y / (k - y)).ln()
        }
        Model::Logistic4 => {
            let (k, l) = (p[0], p[3]);
            // (y − L)/(K − y) = s/(1 − s) > 0 for y strictly between L and
            // K, whichever of the two is the larger.
            let ratio = (y - l) / (k - y);
            if !(ratio > 0.0 && ratio.is_finite()) {
                return None;
            }
            ratio.ln()
        }
        Model::Gompertz => {
            let k = p[0];
            if !(k > 0.0 && y > 0.0 && y < k) {
                return None;
            }
            // ln(y/K) through ln_1p near saturation, where y/K → 1 and the
            // plain logarithm would lose the digits that carry the signal.
            let ln_u = ln_ratio(y, k);
            -(-ln_u).ln()
        }
        Model::Richards => {
            let (k, nu) = (p[0], p[3]);
            if !(k > 0.0 && nu > 0.0 && y > 0.0 && y < k) {
                return None;
            }
            // (K/y)^ν − 1 = expm1(−ν ln(y/K)), without the cancellation of
            // the subtraction near saturation.
            let b1 = (-nu * ln_ratio(y, k)).exp_m1();
            -(b1 / nu).ln()
        }
        Model::Exponential => {
            if !(p[0] > 0.0 && y > 0.0) {
                return None;
            }
            y.ln()
        }
    };
    Some(z).filter(|z| z.is_finite())
}

/// The Bass parameters `[m, p, q, tau]` as logistic4's `[K, r, t0, L]`.
fn bass_as_logistic4(p: &[f64]) -> [f64; 4] {
    let (m, pi, qi, tau) = (p[0], p[1], p[2], p[3]);
    [m, pi + qi, tau + (qi / pi).ln() / (pi + qi), -m * pi / qi]
}

/// `ln(y / k)` for `0 < y < k`, accurate when `y` is close to `k`.
fn ln_ratio(y: f64, k: f64) -> f64 {
    if y > 0.5 * k {
        ((y - k) / k).ln_1p()
    } else {
        (y / k).ln()
    }
}

/// The fitted straight line at time `t`: `r (t − t0)`, or `ln a + r t` for
/// the exponential.
fn line(model: Model, p: &[f64], t: f64) -> f64 {
    match model {
        Model::Exponential => p[0].ln() + p[1] * t,
        Model::Bass => line(Model::Logistic4, &bass_as_logistic4(p), t),
        Model::Bilogistic => f64::NAN,
        _ => p[1] * (t - p[2]),
    }
}

/// The value-axis caption: the transform written out.
fn caption(model: Model) -> &'static str {
    match model {
        Model::Logistic => "ln(y / (K − y))",
        Model::Logistic4 => "ln((y − L) / (K − y))",
        Model::Gompertz => "−ln(−ln(y / K))",
        Model::Richards => "−ln(((K / y)^ν − 1) / ν)",
        Model::Exponential => "ln y",
        Model::Bass => "ln((y + m p/q) / (m − y))",
        Model::Bilogistic => "",
    }
}

/// What `z = 0` means for `y`, or `None` where it means nothing (the
/// exponential: z = 0 is y = 1).
fn zero_meaning(model: Model) -> Option<&'static str> {
    match model {
        Model::Logistic => Some("z = 0: y = K/2 (midpoint)"),
        Model::Logistic4 => Some("z = 0: y = (K+L)/2 (midpoint)"),
        Model::Gompertz => Some("z = 0: y = K/e (inflection)"),
        Model::Richards => Some("z = 0: y = K (1+ν)^(−1/ν) (inflection)"),
        Model::Bass => Some("z = 0: y = m (q−p)/(2q) (peak adoption, t*)"),
        Model::Exponential | Model::Bilogistic => None,
    }
}

/// The range the transform needs, for the note on dropped points.
fn domain(model: Model) -> &'static str {
    match model {
        Model::Logistic | Model::Gompertz | Model::Richards => "0 < y < K",
        Model::Logistic4 => "y between L and K",
        Model::Exponential => "y > 0",
        Model::Bass => "0 ≤ y < m",
        Model::Bilogistic => "",
    }
}

/// The message drawn instead of the straight-line chart for the bi-logistic.
pub const NOT_AVAILABLE_BILOGISTIC: &str = "The straight-line view does not apply to the \
     bi-logistic model: a sum of two logistic pulses has no transform that makes it a line.";

/// Draws the straight-line chart on `area`.
pub fn draw_linear<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    input: &ChartInput,
) -> Result<(), ChartError> {
    common::check_area(area)?;
    let obs = common::observations(input)?;
    let fit = input.fit;
    let model = fit.model;
    let scale = Scale::of(area);
    let p = fit.values();
    let title = match model {
        Model::Exponential => "log scale view, exponential fit".to_string(),
        _ => format!("straight-line view, {} fit", model.name()),
    };
    if model == Model::Bilogistic {
        return common::draw_message(area, &title, NOT_AVAILABLE_BILOGISTIC, scale);
    }

    let (t_first, t_last) = common::extent(obs.iter().map(|o| o.0)).unwrap_or((0.0, 1.0));
    let horizon = input.horizon.filter(|h| h.is_finite() && *h > t_last);
    let t_end = horizon.unwrap_or(t_last);
    let fitted = [t_first, t_last].map(|t| (t, line(model, &p, t)));
    let forecast = horizon.map(|h| [(t_last, line(model, &p, t_last)), (h, line(model, &p, h))]);
    if !fitted
        .iter()
        .chain(forecast.iter().flatten())
        .all(|q| q.1.is_finite())
    {
        let why = match model {
            Model::Exponential => {
                "The log scale view is not available: it needs a positive fitted a."
            }
            _ => {
                "The straight-line view is not available: the fitted parameters admit no transform."
            }
        };
        return common::draw_message(area, &title, why, scale);
    }

    let points: Vec<(f64, f64)> = obs
        .iter()
        .filter_map(|&(t, y)| Some((t, transform(model, &p, y)?)))
        .collect();
    let dropped = obs.len() - points.len();

    let x = common::padded((t_first, t_end), 0.03);
    let mut y = common::extent(
        points
            .iter()
            .chain(&fitted)
            .chain(forecast.iter().flatten())
            .map(|q| q.1),
    )
    .unwrap_or((-1.0, 1.0));
    if zero_meaning(model).is_some() {
        y = (y.0.min(0.0), y.1.max(0.0));
    }
    let y = common::padded(y, 0.06);
    // The note on dropped points sits at the bottom right: some room for it.
    let y = if dropped > 0 {
        (y.0 - 0.08 * (y.1 - y.0), y.1)
    } else {
        y
    };

    let mut chart = common::frame(area, input, &title, caption(model), x, y, scale)?;

    if let Some(meaning) = zero_meaning(model) {
        chart.draw_series(LineSeries::new(
            [(x.0, 0.0), (x.1, 0.0)],
            ShapeStyle::from(GRAPHITE).stroke_width(scale.px(1.5)),
        ))?;
        chart.draw_series(std::iter::once(
            EmptyElement::at((x.1, 0.0))
                + Text::new(
                    meaning.to_string(),
                    (-scale.pxi(6.0), scale.pxi(4.0)),
                    scale.text(13.0).pos(Pos::new(HPos::Right, VPos::Top)),
                ),
        ))?;
    }

    let stroke = ShapeStyle::from(ORANGE).stroke_width(scale.px(2.5));
    let what = match model {
        Model::Exponential => "fitted line ln a + r t",
        _ => "fitted line r (t − t0)",
    };
    chart
        .draw_series(LineSeries::new(fitted, stroke))?
        .label(what)
        .legend(move |(x, y)| PathElement::new([(x, y), (x + scale.pxi(20.0), y)], stroke));
    if let Some(forecast) = forecast {
        common::forecast_line(&mut chart, forecast, stroke, scale)?;
    }

    let r = scale.px(3.5);
    chart
        .draw_series(points.iter().map(|&q| Circle::new(q, r, INK.filled())))?
        .label("observed, transformed")
        .legend(move |(x, y)| Circle::new((x + scale.pxi(10.0), y), r, INK.filled()));

    if dropped > 0 {
        let note = if dropped == 1 {
            format!(
                "1 point outside the transform's range is not shown (it needs {})",
                domain(model)
            )
        } else {
            format!(
                "{dropped} points outside the transform's range are not shown (it needs {})",
                domain(model)
            )
        };
        chart.draw_series(std::iter::once(
            EmptyElement::at((x.1, y.0))
                + Text::new(
                    note,
                    (-scale.pxi(10.0), -scale.pxi(8.0)),
                    scale.text(13.0).pos(Pos::new(HPos::Right, VPos::Bottom)),
                ),
        ))?;
    }

    common::legend(&mut chart, SeriesLabelPosition::UpperLeft, scale)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;
    use plateau_core::fit::{fit_xy, FitOptions};

    /// A fit of `model` whose estimates are exactly `p`: fitted to the
    /// model's own data, then set to `p` so the check below does not depend
    /// on how close the solver got.
    fn fit_with(model: Model, p: &[f64], t: &[f64]) -> Fit {
        let y: Vec<f64> = t.iter().map(|&ti| model.eval(p, ti)).collect();
        let mut fit = fit_xy(t, &y, model, &FitOptions::default()).expect("fit");
        for (est, v) in fit.params.iter_mut().zip(p) {
            est.estimate = *v;
        }
        fit
    }

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * a.abs().max(b.abs())
    }

    /// Common practice: under each model's linearising transform the curve
    /// is the line r (t − t0) (ln a + r t for the exponential), an analytic
    /// identity, so exact model data must land on it to rounding. The times
    /// avoid t0 itself, where z = 0 and a relative test means nothing, and
    /// stay within |r (t − t0)| ≤ 12, short of the tails where y rounds to
    /// K or 0 in floating point.
    #[test]
    fn exact_model_data_lie_on_the_line() {
        let t: Vec<f64> = (0..25).map(|i| 2000.0 + i as f64).collect();
        let cases: [(Model, &[f64]); 7] = [
            (Model::Logistic, &[2.5e6, 0.6, 2012.37]),
            (Model::Logistic4, &[900.0, 0.5, 2011.63, 120.0]),
            (Model::Gompertz, &[8000.0, 0.35, 2010.41]),
            (Model::Richards, &[5000.0, 0.45, 2012.29, 0.4]),
            (Model::Richards, &[5000.0, 0.45, 2012.29, 2.5]),
            (Model::Richards, &[5000.0, 0.7, 2011.81, 1.0]),
            (Model::Exponential, &[3.0 * (-0.25f64 * 2000.0).exp(), 0.25]),
        ];
        for (model, p) in cases {
            let fit = fit_with(model, p, &t);
            for &ti in &t {
                let y = model.eval(p, ti);
                let z = linearise(&fit, y).unwrap_or_else(|| panic!("{model:?} at {ti}: {y}"));
                let want = line(model, p, ti);
                assert!(close(z, want, 1e-9), "{model:?} at {ti}: {z} vs {want}");
            }
        }
    }

    #[test]
    fn values_outside_the_range_have_no_transform() {
        let t: Vec<f64> = (0..20).map(|i| 2000.0 + i as f64).collect();
        let fit = fit_with(Model::Logistic, &[1000.0, 0.6, 2010.0], &t);
        for y in [0.0, -5.0, 1000.0, 1200.0, f64::NAN, f64::INFINITY] {
            assert_eq!(linearise(&fit, y), None, "{y}");
        }
        assert_eq!(linearise(&fit, 500.0), Some(0.0));
        let fit = fit_with(Model::Logistic4, &[1000.0, 0.6, 2010.0, 100.0], &t);
        for y in [100.0, 50.0, 1000.0, 1500.0] {
            assert_eq!(linearise(&fit, y), None, "{y}");
        }
        assert_eq!(linearise(&fit, 550.0), Some(0.0));
        let fit = fit_with(Model::Gompertz, &[1000.0, 0.4, 2010.0], &t);
        assert!(close(
            linearise(&fit, 1000.0 / std::f64::consts::E).unwrap() + 1.0,
            1.0,
            1e-12
        ));
    }
}
