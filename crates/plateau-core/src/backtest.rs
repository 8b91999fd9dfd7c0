//! Backtests: how the forecasts would have done with less data.
//!
//! [`backtest`] is a rolling-origin evaluation (Tashman 2000, "Out-of-sample
//! tests of forecasting accuracy", *Int. J. Forecasting* 16): for every
//! origin o (the first o points are known), forecast the next h = 1..H
//! points and record the errors; MAE and MAPE are then averaged per horizon
//! h, for each model.
//!
//! At most [`crate::history::MAX_CUTOFFS`] origins by default, evenly
//! spread. Each fit starts from the previous origin's estimate and from
//! the self-starts and keeps the lower minimum, as in [`crate::history`],
//! whose prefixes it uses:
//! with replicates (several observations at one time) an origin is cut
//! between distinct times, horizon h is the h-th distinct time after the
//! origin and each replicate there is one scored forecast.

use crate::fit::{Fit, FitOptions, IntervalMethod};
use crate::history::{cut_points, n_free, spread, time_order, warm_fit, Starts};
use crate::model::Model;

/// Settings of [`backtest`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BacktestOptions {
    /// Largest horizon H (steps ahead, in observations; in distinct times
    /// when times repeat).
    pub horizon: usize,
    /// Points in the first origin; `None`: half the series, at least the
    /// model's free parameters plus two.
    pub min_train: Option<usize>,
    /// At most this many origins, evenly spread from the first training
    /// size to n − 1 (the last always included); `None`: every origin.
    pub max_origins: Option<usize>,
}

impl Default for BacktestOptions {
    fn default() -> Self {
        BacktestOptions {
            horizon: 4,
            min_train: None,
            max_origins: Some(crate::history::MAX_CUTOFFS),
        }
    }
}

/// Errors at one horizon, averaged over the origins that reach it.
#[derive(Debug, Clone, PartialEq)]
pub struct HorizonScore {
    /// Steps ahead.
    pub h: usize,
    /// Forecasts scored (origins with a fit and an observation h ahead).
    pub count: usize,
    /// Mean absolute error.
    pub mae: Option<f64>,
    /// Mean absolute percentage error, over observations that are not 0.
    pub mape: Option<f64>,
}

/// One model's backtest.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelBacktest {
    pub model: Model,
    /// Origins tried.
    pub origins: usize,
    /// The number of possible origins when the cap left some out, else
    /// `None`.
    pub origins_capped_from: Option<usize>,
    /// Origins at which the model could not be fitted (no forecasts made).
    pub failed: usize,
    pub by_horizon: Vec<HorizonScore>,
    /// Why the model was not fitted at all, when the settings do not apply
    /// to it (see [`crate::compare::options_for`]); every origin then
    /// counts as failed.
    pub error: Option<String>,
}

/// Rolling-origin evaluation of every model in `models` (see the module
/// docs). Origins run from the first training size to n − 1; an origin's
/// forecasts are the points o+1 … o+H that exist. With replicate times,
/// origins are cut between distinct times (the first training size rounds
/// up to the end of a time) and horizon h covers every replicate of the
/// h-th distinct time after the origin. Each model is fitted with
/// [`crate::compare::options_for`] it (a known K is Bass's m).
pub fn backtest(
    t: &[f64],
    y: &[f64],
    models: &[Model],
    opts: &FitOptions,
    bt: &BacktestOptions,
) -> Vec<ModelBacktest> {
    let order = time_order(t);
    let ts: Vec<f64> = order.iter().map(|&i| t[i]).collect();
    let ys: Vec<f64> = order.iter().map(|&i| y[i]).collect();
    let n = ts.len();
    let cuts = cut_points(&ts);
    let horizon = bt.horizon.max(1);
    // Point forecasts only: no interval refits.
    let opts = &FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..opts.clone()
    };
    models
        .iter()
        .map(|&model| {
            let (opts, error) = match crate::compare::options_for(model, opts) {
                Ok(o) => (o, None),
                Err(e) => (opts.clone(), Some(e.message)),
            };
            let opts = &opts;
            let smallest = n_free(model, opts) + 2;
            let first = bt.min_train.unwrap_or(n.div_ceil(2)).max(smallest);
            let mut abs = vec![(0usize, 0.0f64); horizon];
            let mut pct = vec![(0usize, 0.0f64); horizon];
            // Origins as indices into `cuts` (an origin's horizons are the
            // next cuts), evenly spread under the cap.
            let eligible: Vec<usize> = (0..cuts.len())
                .filter(|&c| cuts[c] >= first && cuts[c] < n)
                .collect();
            let chosen = spread(&eligible, bt.max_origins.unwrap_or(usize::MAX));
            let origins = chosen.len();
            let origins_capped_from = (origins < eligible.len()).then_some(eligible.len());
            let mut failed = 0;
            let mut prev: Option<Fit> = None;
            for &c in &chosen {
                let o = cuts[c];
                if error.is_some() {
                    failed += 1;
                    continue;
                }
                match warm_fit(&ts[..o], &ys[..o], model, opts, prev.as_ref(), Starts::Warm) {
                    Ok(f) => {
                        // Distinct time h after the origin: rows cuts[c + h - 1]..cuts[c + h].
                        for h in 1..=horizon {
                            let Some(&end) = cuts.get(c + h) else {
                                break;
                            };
                            for i in cuts[c + h - 1]..end {
                                let actual = ys[i];
                                let e = (f.predict(ts[i]) - actual).abs();
                                if !e.is_finite() {
                                    continue;
                                }
                                abs[h - 1].0 += 1;
                                abs[h - 1].1 += e;
                                if actual != 0.0 {
                                    pct[h - 1].0 += 1;
                                    pct[h - 1].1 += 100.0 * e / actual.abs();
                                }
                            }
                        }
                        if f.converged {
                            prev = Some(f);
                        }
                    }
                    Err(_) => failed += 1,
                }
            }
            let mean = |(c, s): (usize, f64)| (c > 0).then(|| s / c as f64);
            ModelBacktest {
                model,
                origins,
                origins_capped_from,
                failed,
                by_horizon: (0..horizon)
                    .map(|i| HorizonScore {
                        h: i + 1,
                        count: abs[i].0,
                        mae: mean(abs[i]),
                        mape: mean(pct[i]),
                    })
                    .collect(),
                error,
            }
        })
        .collect()
}

#[cfg(test)]
mod tests;
