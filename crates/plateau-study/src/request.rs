//! One validated request: everything a study is asked, whichever face
//! asked it. The CLI builds it from flags (`plateau-cli`'s `settings.rs`),
//! the page from its `Settings` (`plateau-web`'s `session.rs`); both take
//! their limits from here, so a setting has one range on both faces. The
//! faces word their own messages (a flag, or the page's label); the checks
//! that are the same on both return the face-neutral part.

use plateau_core::bootstrap::{BootstrapOptions, Resampling};
use plateau_core::fit::{ErrorModel, FitOptions, IntervalMethod};
use plateau_core::Model;

pub use plateau_core::bootstrap::{DEFAULT_REPLICATES, DEFAULT_SEED};

/// The most bootstrap replicates, on every face.
pub const MAX_REPLICATES: usize = 100_000;
/// The largest bootstrap seed: the largest whole number a JavaScript
/// number holds exactly (2^53 − 1), so the seed the page shows is the seed
/// used, and the CLI accepts the same seeds.
pub const MAX_SEED: u64 = (1 << 53) - 1;
/// The longest forecast in periods (the page's horizon).
pub const MAX_HORIZON_PERIODS: f64 = 1000.0;
/// The largest backtest horizon, in observations ahead.
pub const MAX_BACKTEST_HORIZON: usize = 1000;
/// Forecast rows past the data at most (the grid step widens beyond).
pub const MAX_FORECAST_ROWS: usize = 500;

/// Where a forecast ends.
#[derive(Debug, Clone, PartialEq)]
pub enum Horizon {
    /// A time written like the data's times (`--until 2030-06-30`); the
    /// study parses it against the series' time axis.
    Until(String),
    /// A number of periods past the last observation; a period is the
    /// median spacing of the times ([`crate::study::typical_step`]).
    Periods(f64),
}

/// How a backtest is run.
#[derive(Debug, Clone, PartialEq)]
pub struct BacktestRequest {
    /// Horizons 1..=horizon observations ahead.
    pub horizon: usize,
    /// Points in the first training window; `None`: half the data.
    pub min_train: Option<usize>,
    /// At most this many origins, evenly spread from the first training
    /// window to the last point but one; `None`: every origin.
    pub max_origins: Option<usize>,
}

impl Default for BacktestRequest {
    fn default() -> Self {
        BacktestRequest {
            horizon: 4,
            min_train: None,
            max_origins: Some(plateau_core::history::MAX_CUTOFFS),
        }
    }
}

/// Everything a [`crate::study::Study`] is asked. Build it with
/// [`Request::new`] and the checked setters, or fill the fields after
/// checking them with the functions of this module.
#[derive(Debug, Clone)]
pub struct Request {
    /// The model fitted, forecast, diagnosed and drifted.
    pub model: Model,
    /// The models compared and backtested.
    pub models: Vec<Model>,
    /// Held values, start values, error model, increments and the interval
    /// method of the chosen model's fit.
    pub fit: FitOptions,
    /// Interval method of the comparison's fits (the page asks for
    /// asymptotic ones: it shows criteria and K only).
    pub comparison_intervals: IntervalMethod,
    /// The values are per-period counts, summed into running totals.
    pub per_period: bool,
    /// What the "values decline" warning adds to say how to sum per-period
    /// counts on this face (`" (--per-period)"`).
    pub per_period_hint: String,
    /// Where the forecast ends (`None`: no forecast asked).
    pub horizon: Option<Horizon>,
    /// Forecast grid spacing; `None`: the data's typical spacing.
    pub step: Option<f64>,
    /// Milestone shares of the saturation level, 0–1 (besides 10/50/90%).
    pub shares: Vec<f64>,
    /// Milestone levels.
    pub levels: Vec<f64>,
    /// Bootstrap settings; `None`: no bootstrap.
    pub bootstrap: Option<BootstrapOptions>,
    /// K of the Fisher–Pry view; `None`: the fitted K.
    pub fisher_pry_k: Option<f64>,
    pub backtest: BacktestRequest,
    /// At most this many drift cutoffs (evenly spread; default
    /// [`plateau_core::history::MAX_CUTOFFS`]); `None`: every prefix.
    pub drift_rows: Option<usize>,
    /// Interval method of each drift row (default asymptotic: a profile per
    /// cutoff costs many refits; `plateau drift --intervals profile`).
    pub drift_intervals: IntervalMethod,
}

impl Request {
    /// A request for `model` with default options and no forecast.
    pub fn new(model: Model) -> Request {
        Request {
            model,
            models: Model::ALL.to_vec(),
            fit: FitOptions::default(),
            comparison_intervals: IntervalMethod::Profile,
            per_period: false,
            per_period_hint: String::new(),
            horizon: None,
            step: None,
            shares: Vec::new(),
            levels: Vec::new(),
            bootstrap: None,
            fisher_pry_k: None,
            backtest: BacktestRequest::default(),
            drift_rows: Some(plateau_core::history::MAX_CUTOFFS),
            drift_intervals: IntervalMethod::Asymptotic,
        }
    }
}

/// A model by name, or the message listing every name.
pub fn model(name: &str) -> Result<Model, String> {
    Model::from_name(name).ok_or_else(|| {
        let names: Vec<&str> = Model::ALL.iter().map(|m| m.name()).collect();
        format!(
            "unknown model {name:?}; expected one of {}",
            names.join(", ")
        )
    })
}

/// An error model by name; the message says what was expected.
pub fn error_model(name: &str) -> Result<ErrorModel, String> {
    ErrorModel::from_name(name)
        .ok_or_else(|| format!("expected additive, relative, log or count, found {name:?}"))
}

/// A resampling by name; the message says what was expected.
pub fn resampling(name: &str) -> Result<Resampling, String> {
    Resampling::from_name(name)
        .ok_or_else(|| format!("expected residual or parametric, found {name:?}"))
}

/// Replicates within `1..=MAX_REPLICATES`.
pub fn replicates_ok(b: f64) -> bool {
    b.is_finite() && b.fract() == 0.0 && (1.0..=MAX_REPLICATES as f64).contains(&b)
}

/// A seed within `0..=MAX_SEED`.
pub fn seed_ok(x: f64) -> bool {
    x.is_finite() && x.fract() == 0.0 && (0.0..=MAX_SEED as f64).contains(&x)
}

/// A milestone share in percent, strictly between 0 and 100.
pub fn share_ok(percent: f64) -> bool {
    percent.is_finite() && percent > 0.0 && percent < 100.0
}

/// A K (known, or for the Fisher–Pry view): finite and positive.
pub fn positive(x: f64) -> bool {
    x.is_finite() && x > 0.0
}

/// A forecast horizon in periods within `0..=MAX_HORIZON_PERIODS`.
pub fn horizon_periods_ok(h: f64) -> bool {
    h.is_finite() && (0.0..=MAX_HORIZON_PERIODS).contains(&h)
}

/// A known saturation level for `model`, held as its level parameter (K,
/// or the Bass model's m); the bi-logistic's level is K1 + K2, which no one
/// parameter holds.
pub fn known_level(model: Model, k: f64) -> Result<(String, f64), String> {
    match model.level_param() {
        Some(name) => Ok((name.to_string(), k)),
        None => Err(format!(
            "the {} model has no single saturation level to fix (its level is {})",
            model.name(),
            model.saturation_name()
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn limits_are_inclusive_and_whole() {
        assert!(replicates_ok(1.0) && replicates_ok(MAX_REPLICATES as f64));
        assert!(!replicates_ok(0.0) && !replicates_ok(12.5) && !replicates_ok(1e12));
        assert!(seed_ok(0.0) && seed_ok(MAX_SEED as f64) && !seed_ok(1e20));
        assert!(share_ok(50.0) && !share_ok(0.0) && !share_ok(100.0));
        assert!(horizon_periods_ok(0.0) && !horizon_periods_ok(-1.0));
        assert!(!horizon_periods_ok(f64::NAN));
        assert!(known_level(Model::Bass, 5.0).unwrap().0 == "m");
        assert!(known_level(Model::Bilogistic, 5.0).is_err());
    }
}
