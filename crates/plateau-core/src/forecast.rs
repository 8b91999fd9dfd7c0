//! Forecasts: the fitted mean at chosen times with a confidence band for
//! the mean curve and a prediction band for a new observation.
//!
//! ```text
//! confidence   f(t) ± t(0.975, n − p) · sqrt(g(t)ᵀ C g(t))            (delta method)
//! prediction   f(t) ± t(0.975, n − p) · sqrt(g(t)ᵀ C g(t) + σ̂²)      (a new y at t)
//! bootstrap    2.5% and 97.5% percentiles of f(t; θ*) over the replicates
//! ```
//!
//! (Seber & Wild 1989, *Nonlinear Regression*, §5.1; the prediction band
//! adds the noise of the new observation, σ̂² = RSS / (n − p), to the
//! variance of the fitted mean.) The bands are pointwise, not simultaneous.
//!
//! Main items: [`prediction_band`], [`forecast`] (→ [`ForecastPoint`]),
//! [`grid`].

use crate::analysis;
use crate::bootstrap::Bootstrap;
use crate::fit::{ErrorModel, Fit};
use crate::stats::t_quantile;

/// Pointwise prediction interval for a new observation at `t`:
/// `f(t) ± t(level, dof) · sqrt(var_mean(t) + v(t))`, with the noise
/// variance `v` of the fit's error model: `σ̂²` (additive), `σ̂² f²`
/// (relative), `σ̂² f` (count); for log-scale errors the interval is
/// `f · exp(± t · sqrt(var_mean / f² + σ̂²))` (delta method for ln f). `None`
/// when the fit has no covariance, the band is not finite, or the fit was
/// to increments (a new *total* then carries every earlier period's error,
/// which that fit does not model).
pub fn prediction_band(fit: &Fit, t: f64, level: f64) -> Option<(f64, f64)> {
    if fit.increments {
        return None;
    }
    let (lo, hi) = analysis::band(fit, t, level)?;
    let tq = t_quantile(level, fit.dof);
    let y = fit.predict(t);
    // The confidence band's half-width is tq · sd_mean.
    let sd_mean = if tq > 0.0 {
        (hi - lo) / (2.0 * tq)
    } else {
        0.0
    };
    let s2 = fit.sigma * fit.sigma;
    let band = match fit.error_model {
        ErrorModel::Additive => {
            let half = tq * (sd_mean * sd_mean + s2).sqrt();
            (y - half, y + half)
        }
        ErrorModel::Relative => {
            let half = tq * (sd_mean * sd_mean + s2 * y * y).sqrt();
            (y - half, y + half)
        }
        ErrorModel::Count => {
            let half = tq * (sd_mean * sd_mean + s2 * y.max(0.0)).sqrt();
            (y - half, y + half)
        }
        ErrorModel::Log => {
            if y <= 0.0 {
                return None;
            }
            let half = tq * ((sd_mean / y).powi(2) + s2).sqrt();
            (y * (-half).exp(), y * half.exp())
        }
    };
    (band.0.is_finite() && band.1.is_finite()).then_some(band)
}

/// One forecast time.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ForecastPoint {
    pub t: f64,
    /// The observation at `t`, for the rows at the data times.
    pub observed: Option<f64>,
    /// The fitted mean `f(t)`.
    pub fit: f64,
    /// 95% confidence band of the mean (delta method).
    pub confidence: Option<(f64, f64)>,
    /// 95% prediction band of a new observation (delta method plus σ̂²).
    pub prediction: Option<(f64, f64)>,
    /// 95% bootstrap percentile band of the mean, when a bootstrap was run.
    pub bootstrap: Option<(f64, f64)>,
}

/// The forecast at the data times (with the observations) followed by the
/// times of `future` (typically [`grid`]).
pub fn forecast(
    fit: &Fit,
    times: &[f64],
    values: &[f64],
    future: &[f64],
    boot: Option<&Bootstrap>,
) -> Vec<ForecastPoint> {
    let rows = times
        .iter()
        .zip(values)
        .map(|(&t, &y)| (t, Some(y)))
        .chain(future.iter().map(|&t| (t, None)));
    rows.map(|(t, observed)| point(fit, t, observed, boot))
        .collect()
}

/// One forecast row at `t`.
pub fn point(fit: &Fit, t: f64, observed: Option<f64>, boot: Option<&Bootstrap>) -> ForecastPoint {
    let model = fit.model;
    let bootstrap = boot.filter(|b| b.succeeded() > 0).and_then(|b| {
        let q = b.quantity(|p| Some(model.eval(p, t)), 0.95);
        Some((q.lo?, q.hi?))
    });
    ForecastPoint {
        t,
        observed,
        fit: fit.predict(t),
        confidence: analysis::band(fit, t, 0.95),
        prediction: prediction_band(fit, t, 0.95),
        bootstrap,
    }
}

/// Times after `t_last` up to `until`: every `step` (the data's typical
/// spacing), and `until` itself as the last point. Empty when `until` is
/// not after `t_last`. At most `max_points` points (the step is widened to
/// a whole multiple of itself when needed, so points stay on the data's
/// grid), so a far horizon cannot make an enormous table.
pub fn grid(t_last: f64, until: f64, step: f64, max_points: usize) -> Vec<f64> {
    if !(until > t_last && step > 0.0 && step.is_finite() && max_points > 0) {
        return Vec::new();
    }
    let span = until - t_last;
    let mut step = step;
    if span / step > max_points as f64 {
        step *= (span / step / max_points as f64).ceil();
    }
    let mut out = Vec::new();
    let mut k = 1.0;
    loop {
        let t = t_last + k * step;
        // Within a millionth of a step of the end counts as the end.
        if t >= until - 1e-6 * step {
            break;
        }
        out.push(t);
        k += 1.0;
    }
    out.push(until);
    out
}

/// The median spacing of the sorted distinct times: one "period" (1 when
/// there are fewer than two distinct times).
pub fn typical_step(t: &[f64]) -> f64 {
    let mut s: Vec<f64> = t.iter().copied().filter(|v| v.is_finite()).collect();
    s.sort_by(f64::total_cmp);
    let mut d: Vec<f64> = s
        .windows(2)
        .map(|w| w[1] - w[0])
        .filter(|d| *d > 0.0)
        .collect();
    if d.is_empty() {
        return 1.0;
    }
    d.sort_by(f64::total_cmp);
    d[d.len() / 2]
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::{fit_xy, FitOptions};
    use crate::Model;

    #[test]
    fn prediction_band_adds_sigma_to_the_confidence_band() {
        // By construction (Seber & Wild §5.1): half-widths satisfy
        // (pred/tq)² = (conf/tq)² + σ̂², so the prediction band is wider
        // and, far inside the data, close to ± tq σ̂.
        let t: Vec<f64> = (0..30).map(f64::from).collect();
        let y: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, &ti)| {
                Model::Logistic.eval(&[500.0, 0.4, 14.0], ti) + [-6.0, 4.0, 1.0, -2.0, 5.0][i % 5]
            })
            .collect();
        let f = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
        let tq = t_quantile(0.95, f.dof);
        for &ti in &[0.0, 14.0, 29.0, 40.0] {
            let (clo, chi) = analysis::band(&f, ti, 0.95).unwrap();
            let (plo, phi) = prediction_band(&f, ti, 0.95).unwrap();
            let c = (chi - clo) / 2.0 / tq;
            let p = (phi - plo) / 2.0 / tq;
            assert!((p * p - c * c - f.sigma * f.sigma).abs() < 1e-9 * p * p);
            assert!(plo < clo && phi > chi);
            assert!(((plo + phi) / 2.0 - f.predict(ti)).abs() < 1e-9 * f.predict(ti).abs());
        }
    }

    #[test]
    fn prediction_band_follows_the_error_model() {
        // Relative errors: Var(new y) = σ² f², so (half/tq)² − var_mean = σ² f²
        // (by construction of the error model, `fit::ErrorModel`); log errors
        // give a band symmetric on the log scale; increments give none.
        use crate::fit::{ErrorModel, FitOptions};
        let t: Vec<f64> = (0..30).map(f64::from).collect();
        let y: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, &ti)| {
                let f = Model::Logistic.eval(&[500.0, 0.4, 14.0], ti);
                f * (1.0 + 0.03 * [-1.0, 0.5, 1.0, -0.5, 0.2][i % 5])
            })
            .collect();
        let opts = |e| FitOptions {
            error_model: e,
            ..FitOptions::default()
        };
        let f = fit_xy(&t, &y, Model::Logistic, &opts(ErrorModel::Relative)).unwrap();
        let tq = t_quantile(0.95, f.dof);
        for &ti in &[2.0, 14.0, 35.0] {
            let (clo, chi) = analysis::band(&f, ti, 0.95).unwrap();
            let (plo, phi) = prediction_band(&f, ti, 0.95).unwrap();
            let (c, p, m) = (
                (chi - clo) / 2.0 / tq,
                (phi - plo) / 2.0 / tq,
                f.predict(ti),
            );
            let want = f.sigma * f.sigma * m * m;
            assert!((p * p - c * c - want).abs() < 1e-9 * p * p, "t = {ti}");
        }
        let f = fit_xy(&t, &y, Model::Logistic, &opts(ErrorModel::Log)).unwrap();
        let (plo, phi) = prediction_band(&f, 14.0, 0.95).unwrap();
        let m = f.predict(14.0);
        assert!(((phi / m).ln() + (plo / m).ln()).abs() < 1e-12);
        let inc = FitOptions {
            increments: true,
            ..FitOptions::default()
        };
        let f = fit_xy(&t, &y, Model::Logistic, &inc).unwrap();
        assert!(prediction_band(&f, 14.0, 0.95).is_none());
        assert!(crate::bootstrap::Bootstrap::new(
            &f,
            &t,
            &y,
            &crate::bootstrap::BootstrapOptions::default()
        )
        .is_err());
    }

    #[test]
    fn grid_steps_to_the_end_and_is_capped() {
        assert_eq!(grid(10.0, 13.0, 1.0, 100), vec![11.0, 12.0, 13.0]);
        assert_eq!(grid(10.0, 12.5, 1.0, 100), vec![11.0, 12.0, 12.5]);
        assert!(grid(10.0, 10.0, 1.0, 100).is_empty());
        assert_eq!(grid(0.0, 1e6, 1.0, 50).len(), 50);
        assert_eq!(*grid(0.0, 1e6, 1.0, 50).last().unwrap(), 1e6);
        // A widened step is a whole number of steps: 1e6 / 50 = 20000.
        let g = grid(7.0, 7.0 + 1e6, 1.0, 50);
        assert!(g.iter().all(|t| t.fract() == 0.0), "{g:?}");
        assert_eq!(g[0], 20_007.0);
        assert_eq!(typical_step(&[3.0, 1.0, 2.0, 2.0, 5.0]), 1.0);
    }
}
