//! Fitting a model to a series: self-start, solve, then the statistics and
//! warnings that say how far to trust the result.
//!
//! [`fit`] is the entry point; it returns a [`Fit`] (estimates, standard
//! errors, intervals, criteria, fitted values in input order, warnings) or a
//! [`FitError`] when no estimate is possible at all. A fit that ran but did
//! not converge is still a `Fit`, with `converged == false`, its
//! [`Termination`] reason and a `not_converged` warning.

use crate::model::Model;
use crate::solver::{Solver, Termination};
use crate::warning::{Warning, WarningCode};
use crate::Series;
use nalgebra::DMatrix;
use std::fmt;

pub use error_model::ErrorModel;
pub use problem::{CurveProblem, Scale};
pub use solve::NU_GOMPERTZ_LIMIT;
pub use trust::{K_RANGE_LIMIT, K_REL_SE_LIMIT};

use problem::target_values;
use solve::{check_value, param_index, solve, starting_points, Solved};
use statistics::statistics;
use trust::trust_warnings;

/// How a fit is set up. `Default` self-starts every parameter.
#[derive(Debug, Clone, Default)]
pub struct FitOptions {
    /// Parameters held at a known value, e.g. `("K", 2.5e6)` from market sizing.
    pub fixed: Vec<(String, f64)>,
    /// Starting values for some or all free parameters; the rest self-start.
    pub start: Vec<(String, f64)>,
    /// Observation weights (`w_i (y_i − f_i)²` is minimised); `None` means 1.
    pub weights: Option<Vec<f64>>,
    /// Solver settings; `None` uses [`Solver::default`].
    pub solver: Option<Solver>,
    /// How the observations scatter about the curve (default additive).
    pub error_model: ErrorModel,
    /// Fit the per-period increments `y(t_i) − y(t_{i−1})` of the curve to
    /// the differences of the (cumulative) data instead of the totals.
    ///
    /// A running total carries every earlier error forward, so residuals
    /// of a fit to cumulative data are strongly autocorrelated and the
    /// usual intervals come out too narrow (King et al., Proc. R. Soc. B
    /// 2015). The differences of a cumulative series are (close to)
    /// independent. `n − 1` differences are fitted; the first observation
    /// only anchors them. Weights, when given, belong to the later
    /// observation of each difference.
    pub increments: bool,
    /// How the 95% intervals are computed (default profile likelihood).
    pub intervals: IntervalMethod,
}

/// How the reported 95% intervals are computed.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum IntervalMethod {
    /// Profile likelihood (Bates & Watts 1988, §6.1), falling back to the
    /// asymptotic interval for a parameter whose profile cannot be traced.
    #[default]
    Profile,
    /// `estimate ± t(0.975, dof) · se` only (faster; no profile refits).
    Asymptotic,
}

/// Which method produced a reported interval.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CiMethod {
    Profile,
    Asymptotic,
}

impl CiMethod {
    pub fn as_str(self) -> &'static str {
        match self {
            CiMethod::Profile => "profile",
            CiMethod::Asymptotic => "asymptotic",
        }
    }
}

/// A reported 95% interval. A profile interval may be open on a side
/// (`None`): within the wide search made, the profile never rose to the
/// 95% threshold there, so the data set no bound on that side.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Interval {
    pub lo: Option<f64>,
    pub hi: Option<f64>,
    pub method: CiMethod,
}

impl Interval {
    /// Whether `v` lies inside (an open side extends without limit).
    pub fn contains(&self, v: f64) -> bool {
        self.lo.is_none_or(|lo| lo <= v) && self.hi.is_none_or(|hi| v <= hi)
    }
}

/// One parameter's estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct ParamEstimate {
    pub name: &'static str,
    pub estimate: f64,
    /// Asymptotic standard error; `None` for fixed parameters or when the
    /// covariance does not exist (singular Jacobian).
    pub std_error: Option<f64>,
    /// Asymptotic 95% interval `estimate ± t(0.975, dof) · std_error`.
    pub ci95: Option<(f64, f64)>,
    pub fixed: bool,
    /// The reported 95% interval (profile likelihood by default, see
    /// [`IntervalMethod`]); `None` for a fixed parameter (nothing is
    /// estimated, so nothing is propagated) or when no interval exists.
    pub interval: Option<Interval>,
    /// `false` when the data do not determine the parameter: its reported
    /// interval is open on either side (or there is none), or it is a
    /// saturation level under the `saturation_not_identified` warning
    /// (whose interval is then open above). The asymptotic interval is
    /// not to be shown then.
    pub identified: bool,
}

/// A finished fit.
#[derive(Debug, Clone)]
pub struct Fit {
    pub model: Model,
    /// Observations used.
    pub n: usize,
    /// `n` minus the number of free parameters.
    pub dof: usize,
    pub rss: f64,
    /// Residual standard deviation `sqrt(rss / dof)`.
    pub sigma: f64,
    pub r_squared: f64,
    pub log_likelihood: f64,
    pub aic: f64,
    pub aicc: f64,
    pub bic: f64,
    pub converged: bool,
    pub termination: Termination,
    pub iterations: usize,
    /// Condition number of the column-scaled (equilibrated) Jacobian at the
    /// estimate. It does not depend on the units of values, times or
    /// parameters (the fit runs in internally scaled units; this is the
    /// same number); for the exponential it is taken on the axis centred
    /// at the mean time, where `a` is the level there.
    pub condition_number: f64,
    /// In [`Model::param_names`] order.
    pub params: Vec<ParamEstimate>,
    /// Indices (into `params`) of the free parameters, the order of `covariance`.
    pub free: Vec<usize>,
    /// Covariance of the free parameters, when it exists.
    pub covariance: Option<DMatrix<f64>>,
    /// Fitted values at the input times, in input order.
    pub fitted: Vec<f64>,
    pub warnings: Vec<Warning>,
    pub error_model: ErrorModel,
    /// Whether per-period increments were fitted (then `n` counts them).
    pub increments: bool,
}

impl Fit {
    /// All parameter values in [`Model::param_names`] order.
    pub fn values(&self) -> Vec<f64> {
        self.params.iter().map(|p| p.estimate).collect()
    }

    pub fn param(&self, name: &str) -> Option<&ParamEstimate> {
        self.params.iter().find(|p| p.name == name)
    }

    /// The fitted curve at time `t`.
    pub fn predict(&self, t: f64) -> f64 {
        self.model.eval(&self.values(), t)
    }

    pub fn has_warning(&self, code: WarningCode) -> bool {
        self.warnings.iter().any(|w| w.code == code)
    }
}

/// Why no fit could be made.
#[derive(Debug, Clone, PartialEq)]
pub struct FitError {
    pub kind: FitErrorKind,
    pub message: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum FitErrorKind {
    /// Fewer observations than free parameters plus one.
    TooFewPoints,
    /// Every value is the same: no curve shape can be estimated.
    ConstantData,
    /// A fixed or starting parameter name the model does not have.
    UnknownParameter,
    /// A fixed or starting value outside the parameter's domain, or not finite.
    InvalidValue,
    /// Weights of the wrong length, negative or not finite.
    InvalidWeights,
    /// No starting values could be derived from the data (e.g. no positive values).
    NoStart,
    /// The solver could not evaluate the model from any start.
    Failed,
    /// A setting that does not apply to this model (a known saturation
    /// level for the bi-logistic, whose level no one parameter holds), or
    /// settings that contradict each other.
    NotApplicable,
}

impl fmt::Display for FitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.message)
    }
}

impl std::error::Error for FitError {}

fn error(kind: FitErrorKind, message: impl Into<String>) -> FitError {
    FitError {
        kind,
        message: message.into(),
    }
}

/// Fits `model` to `series`.
/// With [`FitOptions::increments`], a repeated time is refused naming its
/// lines ([`crate::data::check_increments`]).
pub fn fit(series: &Series, model: Model, opts: &FitOptions) -> Result<Fit, FitError> {
    if opts.increments {
        crate::data::check_increments(series)
            .map_err(|e| error(FitErrorKind::NotApplicable, e.to_string()))?;
    }
    fit_xy(&series.times, &series.values, model, opts)
}

/// Fits `model` to the points `(t[i], y[i])`.
///
/// The fit is computed in internally scaled units (values times a power
/// of two, badly scaled time axes shifted and stretched; see
/// [`scaled`]) and mapped back, so that the result does not depend on the
/// data's magnitude: a series times 10^±150 gives the same relative
/// estimates and the same warnings.
pub fn fit_xy(t: &[f64], y: &[f64], model: Model, opts: &FitOptions) -> Result<Fit, FitError> {
    let units = scaled::Units::choose(model, t, y)?;
    let mut fit = if units.is_identity() {
        fit_in_units(t, y, model, opts, &units)?
    } else {
        scaled::Units::precheck(t, y, opts)?;
        let inner = units.options_in(model, opts)?;
        let (ts, ys) = units.data(t, y);
        let mut fit = fit_in_units(&ts, &ys, model, &inner, &units)?;
        units.fit_out(&mut fit, opts);
        fit
    };
    trust_warnings(&mut fit, t, y);
    Ok(fit)
}

/// The fit itself, in the units given (statistics and profile intervals
/// included; the warnings of [`trust_warnings`] are added by the caller in the
/// user's units).
fn fit_in_units(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    units: &scaled::Units,
) -> Result<Fit, FitError> {
    let solved = solve(t, y, model, opts)?;
    let mut fit = statistics(t, model, &solved, opts, units);
    if opts.intervals == IntervalMethod::Profile {
        profile::apply(&mut fit, &solved, model, (t, y), opts);
    }
    if let Some(refs) = shape_checks::references(&solved) {
        let w = shape_checks::warnings(&fit, &refs);
        fit.warnings.extend(w);
    }
    Ok(fit)
}

mod error_model;
mod problem;
mod profile;
mod scaled;
mod shape_checks;
mod solve;
mod start_held;
mod statistics;
mod trust;

#[cfg(test)]
mod tests;
