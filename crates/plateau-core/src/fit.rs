//! Fitting a model to a series: self-start, solve, then the statistics and
//! warnings that say how far to trust the result.
//!
//! [`fit`] is the entry point; it returns a [`Fit`] (estimates, standard
//! errors, intervals, criteria, fitted values in input order, warnings) or a
//! [`FitError`] when no estimate is possible at all. A fit that ran but did
//! not converge is still a `Fit`, with `converged == false`, its
//! [`Termination`] reason and a `not_converged` warning.

use crate::linalg;
use crate::mathfn::nonfinite_bits;
use crate::model::{Curve, Domain, Model, Role, BLOCK, MAX_PARAMS};
use crate::solver::{LeastSquares, Solver, Termination};
use crate::stats;
use crate::warning::{Warning, WarningCode};
use crate::{start, Series};
use nalgebra::DMatrix;
use std::fmt;

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

/// The error model: how the observations are assumed to scatter about
/// the curve. Each one is a Gaussian likelihood, so `sigma` and AICc keep
/// their meaning, and AICc is the likelihood of the values as given (see
/// [`stats::criteria_with`]): it can be compared across error models for
/// the same data, but not between a cumulative and an increments fit
/// (different data).
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub enum ErrorModel {
    /// `y = f + e`, `Var e = σ²`: the same scatter at every level.
    /// `sigma` is in the data's units.
    #[default]
    Additive,
    /// `Var e = σ² f²`: scatter proportional to the level. Fitted by
    /// iteratively reweighted least squares with weights `1/f̂²`;
    /// `sigma` is a relative error (0.05 = 5%).
    Relative,
    /// `ln y = ln f + e`, `Var e = σ²`: multiplicative log-normal errors;
    /// residuals are `ln y − ln f` and every value must be positive.
    /// `sigma` is on the log scale (≈ a relative error when small).
    Log,
    /// `Var e = σ² f`: count-like (Poisson-like) scatter. Weights `1/f̂`,
    /// iteratively reweighted; `sigma²` is the dispersion (1 for Poisson).
    Count,
}

impl ErrorModel {
    pub const ALL: [ErrorModel; 4] = [
        ErrorModel::Additive,
        ErrorModel::Relative,
        ErrorModel::Log,
        ErrorModel::Count,
    ];

    /// The name used by the CLI, the page and the JSON report.
    pub fn name(self) -> &'static str {
        match self {
            ErrorModel::Additive => "additive",
            ErrorModel::Relative => "relative",
            ErrorModel::Log => "log",
            ErrorModel::Count => "count",
        }
    }

    pub fn from_name(name: &str) -> Option<ErrorModel> {
        let name = name.trim().to_ascii_lowercase();
        ErrorModel::ALL.into_iter().find(|e| e.name() == name)
    }

    /// One sentence for people.
    pub fn describe(self) -> &'static str {
        match self {
            ErrorModel::Additive => "additive errors: the same scatter at every level (sigma in data units)",
            ErrorModel::Relative => "relative errors: scatter proportional to the curve, weights 1/fitted² (sigma is a fraction)",
            ErrorModel::Log => "log-scale errors: ln y − ln f fitted, multiplicative scatter (sigma on the log scale)",
            ErrorModel::Count => "count-like errors: variance proportional to the curve, weights 1/fitted (sigma² is the dispersion)",
        }
    }

    /// The weight of an observation whose fitted value is `f` (on the
    /// residual scale), for the reweighted models.
    fn weight(self, f: f64, floor: f64) -> f64 {
        let f = f.max(floor);
        match self {
            ErrorModel::Relative => 1.0 / (f * f),
            ErrorModel::Count => 1.0 / f,
            ErrorModel::Additive | ErrorModel::Log => 1.0,
        }
    }

    fn reweights(self) -> bool {
        matches!(self, ErrorModel::Relative | ErrorModel::Count)
    }
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

/// How residuals are formed from the model's values.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Scale {
    /// Per-period differences `f(t_i) − f(t_{i−1})`, `i = 1..n`.
    pub increments: bool,
    /// Log scale: residual `ln y − ln f`.
    pub log: bool,
}

/// The curve-fitting least-squares problem over the free parameters.
pub struct CurveProblem<'a> {
    pub model: Model,
    pub t: &'a [f64],
    /// The target on the residual scale (differenced and/or logged, see
    /// `scale`): one per residual.
    pub y: &'a [f64],
    /// Square roots of the weights, if any, one per residual.
    pub sqrt_w: Option<Vec<f64>>,
    /// Full parameter vector; free entries are overwritten from `x`.
    pub base: Vec<f64>,
    pub free: Vec<usize>,
    pub scale: Scale,
}

impl CurveProblem<'_> {
    fn full(&self, x: &[f64]) -> Vec<f64> {
        let mut p = self.base.clone();
        for (xi, &j) in x.iter().zip(&self.free) {
            p[j] = *xi;
        }
        p
    }

    /// The model with the full parameter vector for `x` bound.
    fn curve(&self, x: &[f64]) -> Curve {
        let np = self.base.len();
        let mut p = [0.0; MAX_PARAMS];
        p[..np].copy_from_slice(&self.base);
        for (xi, &j) in x.iter().zip(&self.free) {
            p[j] = *xi;
        }
        Curve::new(self.model, &p[..np])
    }
}

impl LeastSquares for CurveProblem<'_> {
    fn n_residuals(&self) -> usize {
        self.t.len() - usize::from(self.scale.increments)
    }
    fn n_unknowns(&self) -> usize {
        self.free.len()
    }
    fn feasible(&self, x: &[f64]) -> bool {
        let doms = self.model.domains();
        x.iter().zip(&self.free).all(|(v, &j)| doms[j].contains(*v))
    }
    fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool {
        if self.scale != Scale::default() {
            let mut jac = DMatrix::zeros(self.n_residuals(), self.free.len());
            return self.fill_scaled(x, res, &mut jac);
        }
        self.curve(x).values(self.t, res);
        let mut finite = true;
        for (i, r) in res.iter_mut().enumerate() {
            let mut e = self.y[i] - *r;
            if let Some(w) = &self.sqrt_w {
                e *= w[i];
            }
            finite &= e.is_finite();
            *r = e;
        }
        finite
    }
    fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>) {
        let mut res = vec![0.0; self.t.len()];
        self.fill(x, &mut res, jac);
    }
    /// One pass: the value and the gradient share their exponentials.
    fn residuals_and_jacobian(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        self.fill(x, res, jac)
    }
    /// Row blocks for the plain residual scale (increments and logs are
    /// formed over the whole series).
    fn streams(&self) -> bool {
        self.scale == Scale::default()
    }
    fn rows_and_jacobian(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        self.streams() && self.fill_rows(x, rows, res, jac)
    }
}

impl CurveProblem<'_> {
    /// Writes residuals and Jacobian in one pass over the data, a block of
    /// points at a time; `false` if a residual is not finite.
    fn fill(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        if self.scale != Scale::default() {
            return self.fill_scaled(x, res, jac);
        }
        self.fill_rows(x, 0..self.t.len(), res, jac.as_mut_slice())
    }

    /// [`CurveProblem::fill`] for the rows `rows` only (plain scale): `res`
    /// and the column-major `jac` have `rows.len()` rows.
    fn fill_rows(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor supports AVX2, checked just above.
            return unsafe { self.fill_avx2(x, rows, res, jac) };
        }
        self.fill_any(x, rows, res, jac)
    }

    /// [`CurveProblem::fill_rows`] compiled for AVX2 (see the crate docs).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn fill_avx2(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        self.fill_any(x, rows, res, jac)
    }

    #[inline(always)]
    fn fill_any(
        &self,
        x: &[f64],
        range: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        let c = self.curve(x);
        let (t, y) = (&self.t[range.clone()], &self.y[range.clone()]);
        let sqrt_w = self.sqrt_w.as_ref().map(|w| &w[range]);
        let m = t.len();
        // The Jacobian's column of each free parameter, by parameter index
        // (`free` is ascending); the derivatives of fixed parameters go to
        // `spare`, allocated only when some parameter is fixed.
        let np = self.base.len();
        let mut spare = vec![0.0; m * (np - self.free.len())];
        let mut cols: [&mut [f64]; MAX_PARAMS] = Default::default();
        let (mut rest, mut spare_rest) = (jac, spare.as_mut_slice());
        for (j, col) in cols.iter_mut().enumerate().take(np) {
            let from = if self.free.contains(&j) {
                &mut rest
            } else {
                &mut spare_rest
            };
            let (c, tail) = std::mem::take(from).split_at_mut(m);
            *col = c;
            *from = tail;
        }
        let mut scratch = [[0.0; BLOCK]; 2];
        let mut finite = true;
        let mut start = 0;
        while start < m {
            let end = (start + BLOCK).min(m);
            // Rows start..end of each column (slots past the model's
            // parameters stay empty).
            let g = {
                let [c0, c1, c2, c3, c4, c5] = &mut cols;
                let r = start..end;
                [
                    rows(c0, r.clone()),
                    rows(c1, r.clone()),
                    rows(c2, r.clone()),
                    rows(c3, r.clone()),
                    rows(c4, r.clone()),
                    rows(c5, r),
                ]
            };
            let r = &mut res[start..end];
            c.eval_block::<true>(&t[start..end], r, g, &mut scratch);
            let y = &y[start..end];
            // OR-ing `nonfinite_bits` tests the block without a branch, so
            // that the loop vectorises.
            let mut nonfinite = 0u64;
            match sqrt_w {
                None => {
                    for (ri, yi) in r.iter_mut().zip(y) {
                        let e = yi - *ri;
                        nonfinite |= nonfinite_bits(e);
                        *ri = e;
                    }
                }
                Some(w) => {
                    let w = &w[start..end];
                    for ((ri, yi), wi) in r.iter_mut().zip(y).zip(w) {
                        let e = (yi - *ri) * wi;
                        nonfinite |= nonfinite_bits(e);
                        *ri = e;
                    }
                    for &j in &self.free {
                        for (ci, wi) in cols[j][start..end].iter_mut().zip(w) {
                            *ci *= wi;
                        }
                    }
                }
            }
            finite &= nonfinite == 0;
            start = end;
        }
        finite
    }
}

impl CurveProblem<'_> {
    /// [`CurveProblem::fill`] for increments and/or the log scale: the
    /// model's values and gradient at every time, then differenced
    /// (`Δf_i = f_i − f_{i−1}`, `ΔJ_i = J_i − J_{i−1}`) and/or taken to the
    /// log scale (`ln Δf`, gradient `ΔJ / Δf`), then weighted.
    fn fill_scaled(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        let n = self.t.len();
        let k = self.free.len();
        let zeros = vec![0.0; n];
        let plain = CurveProblem {
            model: self.model,
            t: self.t,
            y: &zeros,
            sqrt_w: None,
            base: self.base.clone(),
            free: self.free.clone(),
            scale: Scale::default(),
        };
        // `neg` = −f (residuals against zero), `g` = ∂f/∂θ.
        let mut neg = vec![0.0; n];
        let mut g = DMatrix::zeros(n, k);
        let mut finite = plain.fill(x, &mut neg, &mut g);
        let off = usize::from(self.scale.increments);
        for i in 0..n - off {
            let v = if off == 1 {
                neg[i] - neg[i + 1]
            } else {
                -neg[i]
            };
            let w = self.sqrt_w.as_ref().map_or(1.0, |w| w[i]);
            let (r, d) = if self.scale.log {
                if v > 0.0 {
                    (self.y[i] - v.ln(), 1.0 / v)
                } else {
                    finite = false;
                    (f64::NAN, 0.0)
                }
            } else {
                (self.y[i] - v, 1.0)
            };
            res[i] = r * w;
            finite &= res[i].is_finite();
            for c in 0..k {
                let gi = if off == 1 {
                    g[(i + 1, c)] - g[(i, c)]
                } else {
                    g[(i, c)]
                };
                jac[(i, c)] = gi * d * w;
            }
        }
        finite
    }
}

/// The model's values on the residual scale before the log: `f(t_i)`, or
/// the increments `f(t_i) − f(t_{i−1})`.
fn on_scale(model: Model, p: &[f64], t: &[f64], increments: bool) -> Vec<f64> {
    let mut f = vec![0.0; t.len()];
    Curve::new(model, p).values(t, &mut f);
    if increments {
        f.windows(2).map(|w| w[1] - w[0]).collect()
    } else {
        f
    }
}

/// Rows `r` of a Jacobian column; nothing for an empty (unused) slot.
#[inline(always)]
fn rows(c: &mut [f64], r: std::ops::Range<usize>) -> &mut [f64] {
    c.get_mut(r).unwrap_or_default()
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
    diagnose(&mut fit, t, y);
    Ok(fit)
}

/// The fit itself, in the units given (statistics and profile intervals
/// included; the warnings of [`diagnose`] are added by the caller in the
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

/// A solved fit before its statistics: the best outcome over the starts.
struct Solved {
    outcome: crate::solver::Outcome,
    /// Full parameter vector at the estimate (on the shifted axis).
    p: Vec<f64>,
    /// Triangular factor `R` of the model Jacobian over the free parameters
    /// at the estimate (`J = Q R`, column-major); empty when there is none.
    r: Vec<f64>,
    fixed: Vec<Option<f64>>,
    free: Vec<usize>,
    /// The exponential's time origin (0 for the other models).
    t_ref: f64,
    /// The times on the solver's (shifted) axis.
    tt: Vec<f64>,
    /// The target on the residual scale (see [`CurveProblem::y`]).
    target: Vec<f64>,
    /// Square roots of the final weights (user's × error model's).
    sqrt_w: Option<Vec<f64>>,
    scale: Scale,
    /// Added to the Gaussian log-likelihood (see [`stats::criteria_with`]).
    loglik_extra: f64,
    /// Warnings the solve itself found (Richards' ν at an edge).
    notes: Vec<Warning>,
}

/// Validates the inputs, self-starts and minimises from every start;
/// keeps the best outcome.
fn solve(t: &[f64], y: &[f64], model: Model, opts: &FitOptions) -> Result<Solved, FitError> {
    let names = model.param_names();
    let np = names.len();
    let mut fixed = vec![None; np];
    for (name, v) in &opts.fixed {
        let j = param_index(model, name)?;
        check_value(model, j, *v)?;
        fixed[j] = Some(*v);
    }
    let n_free = fixed.iter().filter(|f| f.is_none()).count();
    let n = t.len();
    if y.len() != n {
        return Err(error(
            FitErrorKind::InvalidValue,
            "times and values differ in length",
        ));
    }
    if n < n_free + 1 {
        return Err(error(
            FitErrorKind::TooFewPoints,
            format!(
                "the {} model has {} free parameter{} and needs at least {} points; got {}",
                model.name(),
                n_free,
                if n_free == 1 { "" } else { "s" },
                n_free + 1,
                n
            ),
        ));
    }
    if opts.increments && n < n_free + 2 {
        return Err(error(
            FitErrorKind::TooFewPoints,
            format!(
                "fitting increments of the {} model needs at least {} points ({} differences); got {}",
                model.name(),
                n_free + 2,
                n_free + 1,
                n
            ),
        ));
    }
    let first = y.first().copied().unwrap_or(0.0);
    if y.iter().all(|v| *v == first) {
        return Err(error(
            FitErrorKind::ConstantData,
            format!(
                "all {n} values equal {first}: a growth curve cannot be fitted to constant data"
            ),
        ));
    }
    let user_w = match &opts.weights {
        None => None,
        Some(w) => {
            if w.len() != n || w.iter().any(|v| !(v.is_finite() && *v >= 0.0)) {
                return Err(error(
                    FitErrorKind::InvalidWeights,
                    "weights must be one finite, non-negative number per observation",
                ));
            }
            let w = if opts.increments { &w[1..] } else { &w[..] };
            Some(w.to_vec())
        }
    };
    let scale = Scale {
        increments: opts.increments,
        log: opts.error_model == ErrorModel::Log,
    };
    let target = target_values(t, y, scale)?;
    let mut sqrt_w: Option<Vec<f64>> = user_w
        .as_ref()
        .map(|w| w.iter().map(|v| v.sqrt()).collect());
    let mut user_start = vec![None; np];
    for (name, v) in &opts.start {
        let j = param_index(model, name)?;
        check_value(model, j, *v)?;
        user_start[j] = Some(*v);
    }

    // The exponential's e^(r t) overflows on calendar axes (t ≈ 2024), so
    // it is fitted on t − t_ref and `a` is mapped back at the end. A fixed
    // a is a value of y(0) itself, so then the axis is left as it is.
    let t_ref = if model == Model::Exponential && fixed[0].is_none() {
        t.iter().sum::<f64>() / n as f64
    } else {
        0.0
    };
    let shifted: Vec<f64>;
    let tt: &[f64] = if t_ref != 0.0 {
        shifted = t.iter().map(|v| v - t_ref).collect();
        &shifted
    } else {
        t
    };

    // A long series is self-started on its presolve subsample (the start
    // only has to land in the basin of the minimum, and the Richards start
    // is a whole logistic fit); on the full data when that fails.
    let (starts, mut gompertz_pending) = match subsample(tt, y, opts.weights.as_deref()) {
        Some((ts, ys, ws)) => {
            let sub_opts = FitOptions {
                weights: ws,
                ..opts.clone()
            };
            starting_points(model, &ts, &ys, &fixed, &user_start, &sub_opts)
                .or_else(|_| starting_points(model, tt, y, &fixed, &user_start, opts))?
        }
        None => starting_points(model, tt, y, &fixed, &user_start, opts)?,
    };
    let solver = opts.solver.clone().unwrap_or_default();
    let free: Vec<usize> = (0..np).filter(|j| fixed[*j].is_none()).collect();
    // With held parameters: a small deterministic multi-start from starts
    // that honour the held values (see `start_held`), the lowest minimum kept.
    let held = fixed.iter().any(Option::is_some) && !free.is_empty();
    let starts = if held {
        with_held_starts(model, tt, y, opts.weights.as_deref(), &fixed, starts)
    } else {
        starts
    };
    let mut best: Option<(crate::solver::Outcome, Vec<f64>, Vec<f64>)> = None;
    let mut r = Vec::new();
    let mut queue: std::collections::VecDeque<Vec<f64>> = starts.into();
    while let Some(p0) = queue.pop_front() {
        let problem = CurveProblem {
            model,
            t: tt,
            y: &target,
            sqrt_w: sqrt_w.clone(),
            base: p0.clone(),
            free: free.clone(),
            scale,
        };
        let x0: Vec<f64> = free.iter().map(|&j| p0[j]).collect();
        let out = match presolve(&problem, &solver, &x0) {
            Some(x) => {
                let close = solver.clone().with_initial_damping(PRESOLVED_DAMPING);
                close.minimize_factored(&problem, &x, &mut r)
            }
            None => solver.minimize_factored(&problem, &x0, &mut r),
        };
        let better = match &best {
            None => true,
            Some((b, _, _)) if held => lower_minimum(&out, b),
            Some((b, _, _)) => {
                out.rss.is_finite()
                    && (!b.rss.is_finite()
                        || (out.converged() && !b.converged())
                        || (out.converged() == b.converged() && out.rss < b.rss))
            }
        };
        if better {
            let full = problem.full(&out.x);
            best = Some((out, full, std::mem::take(&mut r)));
        }
        // Richards from the logistic fit ended badly (no convergence, or ν
        // at the edge of its range, towards the Gompertz limit or beyond
        // the logistic): also start from the Gompertz fit, keep the better.
        if queue.is_empty() && std::mem::take(&mut gompertz_pending) {
            let bad = best.as_ref().is_none_or(|(b, p, _)| {
                !b.converged() || (fixed[3].is_none() && !(1e-3..=1e3).contains(&p[3]))
            });
            if bad {
                if let Ok(s) = richards_start(tt, y, Model::Gompertz, &fixed, opts) {
                    queue.push_back(merge_start(&fixed, &user_start, &s));
                }
            }
        }
    }
    let Some((mut outcome, mut p, mut r)) = best else {
        return Err(error(FitErrorKind::NoStart, "no starting values"));
    };
    if held && !outcome.converged() && outcome.rss.is_finite() {
        // The lowest point reached did not converge: once more from there.
        let problem = CurveProblem {
            model,
            t: tt,
            y: &target,
            sqrt_w: sqrt_w.clone(),
            base: p.clone(),
            free: free.clone(),
            scale,
        };
        let x0: Vec<f64> = free.iter().map(|&j| p[j]).collect();
        let mut r2 = Vec::new();
        let mut out = solver.minimize_factored(&problem, &x0, &mut r2);
        if lower_minimum(&out, &outcome) {
            out.iterations += outcome.iterations;
            p = problem.full(&out.x);
            outcome = out;
            r = r2;
        }
    }
    // The bi-logistic's two pulses can be swapped without changing the
    // curve; report the earlier one as pulse 1. The swapped vector is a
    // minimum too, so re-solving from it converges at once and gives the
    // factorisation in the new order. With fixed parameters the pulses keep
    // the order the fixes give them.
    if model == Model::Bilogistic && free.len() == np && p[2] > p[5] && outcome.rss.is_finite() {
        let swapped = vec![p[3], p[4], p[5], p[0], p[1], p[2]];
        let problem = CurveProblem {
            model,
            t: tt,
            y: &target,
            sqrt_w: sqrt_w.clone(),
            base: swapped.clone(),
            free: free.clone(),
            scale,
        };
        let mut r2 = Vec::new();
        let mut out = solver
            .clone()
            .with_initial_damping(PRESOLVED_DAMPING)
            .minimize_factored(&problem, &swapped, &mut r2);
        if out.rss.is_finite() && out.rss <= outcome.rss * (1.0 + 1e-9) && out.x[2] <= out.x[5] {
            out.iterations += outcome.iterations;
            p = problem.full(&out.x);
            outcome = out;
            r = r2;
        }
    }
    // Relative and count errors: iteratively reweighted least squares, the
    // weights from the current fitted values, until the estimate settles.
    let mut model_w: Option<Vec<f64>> = None;
    if opts.error_model.reweights() && outcome.rss.is_finite() {
        let floor = 1e-9 * target.iter().fold(0.0_f64, |a, v| a.max(v.abs()));
        for _ in 0..IRLS_MAX_ROUNDS {
            let f = on_scale(model, &p, tt, scale.increments);
            let w: Vec<f64> = f
                .iter()
                .map(|v| opts.error_model.weight(*v, floor))
                .collect();
            sqrt_w = Some(match &user_w {
                Some(u) => u.iter().zip(&w).map(|(a, b)| (a * b).sqrt()).collect(),
                None => w.iter().map(|v| v.sqrt()).collect(),
            });
            model_w = Some(w);
            let problem = CurveProblem {
                model,
                t: tt,
                y: &target,
                sqrt_w: sqrt_w.clone(),
                base: p.clone(),
                free: free.clone(),
                scale,
            };
            let x0: Vec<f64> = free.iter().map(|&j| p[j]).collect();
            let out = solver.minimize_factored(&problem, &x0, &mut r);
            if !out.rss.is_finite() {
                break;
            }
            let change = out
                .x
                .iter()
                .zip(&x0)
                .map(|(a, b)| (a - b).abs() / b.abs().max(f64::MIN_POSITIVE))
                .fold(0.0, f64::max);
            p = problem.full(&out.x);
            outcome = out;
            if change < IRLS_TOLERANCE {
                break;
            }
        }
    }
    let loglik_extra = match (&model_w, scale.log) {
        (Some(w), _) => 0.5 * w.iter().map(|v| v.ln()).sum::<f64>(),
        // ln y_i are the targets: −Σ ln y_i.
        (None, true) => -target.iter().sum::<f64>(),
        (None, false) => 0.0,
    };
    let mut notes = Vec::new();
    if model == Model::Richards && fixed[3].is_none() && outcome.rss.is_finite() {
        let problem = CurveProblem {
            model,
            t: tt,
            y: &target,
            sqrt_w: sqrt_w.clone(),
            base: p.clone(),
            free: free.clone(),
            scale,
        };
        if let Some((out, r2)) = richards_gompertz_limit(&problem, &solver, &p, &outcome) {
            p = problem.full(&out.x);
            outcome = out;
            r = r2;
        }
        notes = richards_notes(&p);
    }
    if outcome.termination == Termination::InvalidStart || !outcome.rss.is_finite() {
        return Err(error(
            FitErrorKind::Failed,
            format!(
                "the {} fit failed: {}",
                model.name(),
                outcome.termination.describe()
            ),
        ));
    }
    Ok(Solved {
        outcome,
        p,
        r,
        fixed,
        free,
        t_ref,
        tt: tt.to_vec(),
        target,
        sqrt_w,
        scale,
        loglik_extra,
        notes,
    })
}

/// Below this |ν| a Richards fit is at its Gompertz limit (see
/// [`richards_gompertz_limit`]).
pub const NU_GOMPERTZ_LIMIT: f64 = 1e-6;

/// A Richards fit that ended with `|ν| < NU_GOMPERTZ_LIMIT`: there the
/// solver's steps in K, r and t0 can stall while ν creeps towards 0, so
/// the Gompertz curve (the ν → 0 limit) is fitted on the same problem from
/// the Richards estimate, and the Richards fit solved again from that
/// limit at `ν = 0` (where the curve and its ν-derivative `y u²/2` are
/// defined), so that K, r and t0 are at their minimum. Returns the new
/// outcome and factor when it is at least as low as `outcome`.
fn richards_gompertz_limit(
    problem: &CurveProblem<'_>,
    solver: &Solver,
    p: &[f64],
    outcome: &crate::solver::Outcome,
) -> Option<(crate::solver::Outcome, Vec<f64>)> {
    if p[3].abs() >= NU_GOMPERTZ_LIMIT {
        return None;
    }
    let free3: Vec<usize> = problem.free.iter().copied().filter(|&j| j < 3).collect();
    let mut limit = p.to_vec();
    limit[3] = 0.0;
    if !free3.is_empty() {
        let gompertz = CurveProblem {
            model: Model::Gompertz,
            t: problem.t,
            y: problem.y,
            sqrt_w: problem.sqrt_w.clone(),
            base: p[..3].to_vec(),
            free: free3.clone(),
            scale: problem.scale,
        };
        let x0: Vec<f64> = free3.iter().map(|&j| p[j]).collect();
        let g = solver.minimize(&gompertz, &x0);
        if g.rss.is_finite() {
            limit[..3].copy_from_slice(&gompertz.full(&g.x));
        }
    }
    let x0: Vec<f64> = problem.free.iter().map(|&j| limit[j]).collect();
    let mut r = Vec::new();
    let mut out = solver.minimize_factored(problem, &x0, &mut r);
    if !(out.rss.is_finite() && out.rss <= outcome.rss * (1.0 + 1e-12)) {
        return None;
    }
    out.iterations += outcome.iterations;
    Some((out, r))
}

/// Warnings about where a Richards fit's ν ended: at the Gompertz limit
/// (`gompertz_limit`), or at an edge of its range (`parameter_at_bound`:
/// within 1e-3 of −1, or above 1e3).
fn richards_notes(p: &[f64]) -> Vec<Warning> {
    let nu = p[3];
    let mut w = Vec::new();
    if nu.abs() < NU_GOMPERTZ_LIMIT {
        w.push(Warning::new(
            WarningCode::GompertzLimit,
            format!(
                "nu = {nu:.1e}: the best Richards curve is its Gompertz limit (nu -> 0); K, r and t0 \
                 are refitted there and equal the Gompertz fit's, so the Gompertz model, with one \
                 parameter fewer, says the same"
            ),
        ));
    } else if !(-1.0 + 1e-3..=1e3).contains(&nu) {
        w.push(Warning::new(
            WarningCode::ParameterAtBound,
            format!("nu = {nu:.6e} is at the edge of its allowed range (above -1)"),
        ));
    }
    w
}

/// Starts tried from the held-value grid (see [`start_held`]).
const HELD_STARTS: usize = 3;

/// The self-starts for a fit with held parameters plus up to
/// [`HELD_STARTS`] from the held-value grid; the grid's first when a shape
/// parameter (not only a level) is held, as the self-start ignores those.
fn with_held_starts(
    model: Model,
    t: &[f64],
    y: &[f64],
    w: Option<&[f64]>,
    fixed: &[Option<f64>],
    starts: Vec<Vec<f64>>,
) -> Vec<Vec<f64>> {
    let grid = start_held::held_starts(model, t, y, w, fixed, HELD_STARTS);
    let names = model.param_names();
    let shape_held = fixed
        .iter()
        .zip(names)
        .any(|(f, n)| f.is_some() && !matches!(*n, "K" | "L" | "m"));
    if shape_held {
        grid.into_iter().chain(starts).collect()
    } else {
        starts.into_iter().chain(grid).collect()
    }
}

/// Whether `out` is a lower minimum than `best`: a lower sum of squares
/// (beyond rounding), or the same one with convergence where `best` has
/// none. A converged point is never preferred over a clearly lower one,
/// which a multi-start would report instead.
fn lower_minimum(out: &crate::solver::Outcome, best: &crate::solver::Outcome) -> bool {
    if !out.rss.is_finite() {
        return false;
    }
    if !best.rss.is_finite() {
        return true;
    }
    let tie = 1e-10 * best.rss.abs();
    out.rss < best.rss - tie || (out.rss <= best.rss + tie && out.converged() && !best.converged())
}

/// Rounds of reweighting for the relative and count error models, and the
/// largest relative parameter change that counts as settled.
const IRLS_MAX_ROUNDS: usize = 50;
const IRLS_TOLERANCE: f64 = 1e-10;

/// The data on the residual scale: differences for increments, logs for
/// the log error model (every one must then be positive).
///
/// Increments need one value per time: with replicate measurements
/// (a repeated time) there is no difference between consecutive times, so
/// they are refused ([`crate::data::check_increments`] names the lines).
fn target_values(t: &[f64], y: &[f64], scale: Scale) -> Result<Vec<f64>, FitError> {
    let off = usize::from(scale.increments);
    if scale.increments {
        if let Some((a, b)) = crate::data::repeated_time(t) {
            return Err(error(
                FitErrorKind::NotApplicable,
                format!(
                    "fitting increments needs one value per time, but observations {} and {} (in the order given) \
                     share a time (replicate measurements); fit the values themselves, or combine the replicates \
                     of each time into one",
                    a + 1,
                    b + 1
                ),
            ));
        }
    }
    let mut out: Vec<f64> = if scale.increments {
        y.windows(2).map(|w| w[1] - w[0]).collect()
    } else {
        y.to_vec()
    };
    if scale.log {
        for (i, v) in out.iter_mut().enumerate() {
            if v.is_nan() || *v <= 0.0 {
                let what = if scale.increments {
                    "increment"
                } else {
                    "value"
                };
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!(
                        "the log error model needs positive values, but the {what} at time {} is {}; use the additive, relative or count error model",
                        t[i + off],
                        v
                    ),
                ));
            }
            *v = v.ln();
        }
    }
    Ok(out)
}

/// Data sets longer than this are first fitted on [`PRESOLVE_POINTS`] of
/// their points (see [`presolve`]).
const PRESOLVE_ABOVE: usize = 256;

/// Points of the presolve: evenly spread, first and last included.
const PRESOLVE_POINTS: usize = 64;

/// The solver's initial damping from a presolved start (see
/// [`Solver::initial_damping`]): the start is close, so the first step is
/// all but a Gauss–Newton step and usually lands at the minimum.
const PRESOLVED_DAMPING: f64 = 1e-9;

/// For a long series, the solution of the same problem on an evenly
/// spread subsample, as a better start than the self-start; `None` when
/// the series is short or the subsample fit did not converge.
///
/// A solver iteration costs a pass over the data, and most iterations from
/// a self-start are spent walking into the basin of the minimum. The
/// subsample's minimum lies within sampling noise of the full one, so the
/// full-data solve that follows starts where Gauss–Newton converges at
/// once, and spends two or three passes instead of six or more. The
/// estimate is still the full data's least-squares minimum, to the same
/// tolerances: only the start differs.
fn presolve(problem: &CurveProblem<'_>, solver: &Solver, x0: &[f64]) -> Option<Vec<f64>> {
    // A subsample of differences is not the differences of a subsample.
    if problem.scale != Scale::default() {
        return None;
    }
    let (t, y, sqrt_w) = subsample(problem.t, problem.y, problem.sqrt_w.as_deref())?;
    let sub = CurveProblem {
        model: problem.model,
        t: &t,
        y: &y,
        sqrt_w,
        base: problem.base.clone(),
        free: problem.free.clone(),
        scale: problem.scale,
    };
    // The subsample's minimum is itself only within sampling noise of the
    // full one, so it is solved to 8 digits, without the polish; the full
    // solve brings the estimate to full precision.
    let loose = Solver {
        ftol: 1e-8,
        xtol: 1e-8,
        polish_steps: 0,
        ..solver.clone()
    };
    let out = loose.minimize(&sub, x0);
    (out.converged() && problem.feasible(&out.x)).then_some(out.x)
}

/// Times, values and (when given) per-point weights at
/// [`PRESOLVE_POINTS`] evenly spread indices, first and last included;
/// `None` for a series of at most [`PRESOLVE_ABOVE`] points.
#[allow(clippy::type_complexity)]
fn subsample(
    t: &[f64],
    y: &[f64],
    w: Option<&[f64]>,
) -> Option<(Vec<f64>, Vec<f64>, Option<Vec<f64>>)> {
    let n = t.len();
    if n <= PRESOLVE_ABOVE {
        return None;
    }
    let m = PRESOLVE_POINTS;
    let pick = |i: usize| (i * (n - 1) + (m - 1) / 2) / (m - 1);
    let take = |v: &[f64]| (0..m).map(|i| v[pick(i)]).collect::<Vec<_>>();
    Some((take(t), take(y), w.map(take)))
}

/// Standard errors, intervals, criteria, fitted values and warnings.
fn statistics(
    t: &[f64],
    model: Model,
    solved: &Solved,
    opts: &FitOptions,
    units: &scaled::Units,
) -> Fit {
    let Solved {
        outcome,
        p,
        r,
        fixed,
        free,
        t_ref,
        tt,
        target,
        sqrt_w,
        scale,
        loglik_extra,
        notes,
    } = solved;
    let (t_ref, scale) = (*t_ref, *scale);
    let mut p = p.clone();
    let free = free.clone();
    let names = model.param_names();
    let np = names.len();
    // Residuals (observations, or differences for increments).
    let n = target.len();
    // Statistics on the (possibly shifted) axis, from the solver's
    // factorisation of the Jacobian at the estimate.
    let dof = n - free.len();
    // R² on the data's own scale, unweighted.
    let rss_plain = if scale == Scale::default() && sqrt_w.is_none() {
        outcome.rss
    } else {
        let f = on_scale(model, &p, tt, scale.increments);
        f.iter()
            .zip(target)
            .map(|(f, y)| {
                let y = if scale.log { y.exp() } else { *y };
                (y - f) * (y - f)
            })
            .sum()
    };
    let logged: Vec<f64>;
    let plain_target: &[f64] = if scale.log {
        logged = target.iter().map(|v| v.exp()).collect();
        &logged
    } else {
        target
    };
    let rss = outcome.rss;
    let sigma2 = rss / dof as f64;
    let k = free.len();
    let cov = if r.len() == k * k {
        stats::covariance_from_triangle(r, k, n, sigma2)
    } else {
        // No finite factorisation: nothing can be told apart.
        stats::Covariance {
            matrix: None,
            condition_number: f64::INFINITY,
        }
    };
    let mut covariance = cov.matrix;
    let mut warnings = notes.clone();

    if t_ref != 0.0 {
        // a = a' e^(−r t_ref); Jacobian of (a', r) ↦ (a, r) for the covariance.
        let scale = (-p[1] * t_ref).exp();
        let a = p[0] * scale;
        if let Some(c) = covariance.as_mut() {
            if free.len() == 2 {
                let g = DMatrix::from_row_slice(2, 2, &[scale, -t_ref * a, 0.0, 1.0]);
                *c = &g * &*c * g.transpose();
            } else if free == [0] {
                *c *= scale * scale;
            }
        }
        if !(a.is_finite() && (a != 0.0 || p[0] == 0.0)) {
            warnings.push(Warning::new(
                WarningCode::ParameterNotRepresentable,
                format!(
                    "a = y(0) is not representable on this time axis (a' = {:.6} at t = {}); \
                     the curve itself is fine",
                    units.value_out(p[0]),
                    units.time_out(t_ref)
                ),
            ));
        }
        p[0] = a;
    }

    let tq = stats::t_quantile(0.95, dof);
    let params: Vec<ParamEstimate> = (0..np)
        .map(|j| {
            let estimate = p[j];
            let is_fixed = fixed[j].is_some();
            let se = if is_fixed {
                None
            } else {
                let c = free.iter().position(|&f| f == j).expect("free index");
                covariance
                    .as_ref()
                    .map(|m| m[(c, c)].max(0.0).sqrt())
                    .filter(|v| v.is_finite())
            };
            ParamEstimate {
                name: names[j],
                estimate,
                std_error: se,
                ci95: se.map(|s| (estimate - tq * s, estimate + tq * s)),
                fixed: is_fixed,
                interval: se.map(|s| Interval {
                    lo: Some(estimate - tq * s),
                    hi: Some(estimate + tq * s),
                    method: CiMethod::Asymptotic,
                }),
                identified: true,
            }
        })
        .collect();

    let mut fitted = vec![0.0; t.len()];
    Curve::new(model, &p).values(t, &mut fitted);
    let crit = stats::criteria_with(rss, n, free.len(), *loglik_extra);
    Fit {
        model,
        n,
        dof,
        rss,
        sigma: sigma2.sqrt(),
        r_squared: stats::r_squared(rss_plain, plain_target),
        log_likelihood: crit.log_likelihood,
        aic: crit.aic,
        aicc: crit.aicc,
        bic: crit.bic,
        converged: outcome.converged(),
        termination: outcome.termination,
        iterations: outcome.iterations,
        condition_number: cov.condition_number,
        params,
        free,
        covariance,
        fitted,
        warnings,
        error_model: opts.error_model,
        increments: scale.increments,
    }
}

fn param_index(model: Model, name: &str) -> Result<usize, FitError> {
    model.param_index(name.trim()).ok_or_else(|| {
        error(
            FitErrorKind::UnknownParameter,
            format!(
                "the {} model has no parameter {:?}; its parameters are {}",
                model.name(),
                name,
                model.param_names().join(", ")
            ),
        )
    })
}

fn check_value(model: Model, j: usize, v: f64) -> Result<(), FitError> {
    let domain = model.domains()[j];
    if !domain.contains(v) {
        let what = match domain {
            Domain::Positive => "a finite, positive number",
            Domain::AboveMinusOne => "a finite number greater than -1",
            Domain::Real => "a finite number",
        };
        return Err(error(
            FitErrorKind::InvalidValue,
            format!(
                "{} = {} is not allowed in the {} model; expected {what}",
                model.param_names()[j],
                v,
                model.name(),
            ),
        ));
    }
    Ok(())
}

/// Candidate full parameter vectors to start the solver from, and whether
/// a Richards start from the Gompertz fit is still to be tried if these
/// end badly (see [`solve`]).
fn starting_points(
    model: Model,
    t: &[f64],
    y: &[f64],
    fixed: &[Option<f64>],
    user: &[Option<f64>],
    opts: &FitOptions,
) -> Result<(Vec<Vec<f64>>, bool), FitError> {
    let np = model.n_params();
    let merge = |auto: &[f64]| merge_start(fixed, user, auto);
    if (0..np).all(|j| fixed[j].is_some() || user[j].is_some()) {
        return Ok((vec![merge(&vec![0.0; np])], false));
    }
    let k_fixed = model.param_index("K").and_then(|j| fixed[j]);
    // The self-starts fail only without two usable values at different
    // times (see `start`), so that is what the message says.
    let no_start = || {
        let usable = if model == Model::Logistic4 && fixed[3].is_some() {
            "values above the fixed L"
        } else {
            "positive values"
        };
        error(
            FitErrorKind::NoStart,
            format!(
                "cannot derive starting values for the {} model: it needs at least two {}{} at different times",
                model.name(),
                usable,
                if k_fixed.is_some() { " below the fixed K" } else { "" }
            ),
        )
    };
    let mut starts = Vec::new();
    let mut gompertz_pending = false;
    match model {
        Model::Logistic => starts.push(
            start::logistic(t, y, k_fixed)
                .ok_or_else(no_start)?
                .to_vec(),
        ),
        Model::Gompertz => starts.push(
            start::gompertz(t, y, k_fixed)
                .ok_or_else(no_start)?
                .to_vec(),
        ),
        Model::Exponential => starts.push(start::exponential(t, y).ok_or_else(no_start)?.to_vec()),
        Model::Bass => {
            let m_fixed = fixed[0];
            starts.extend(start::bass(t, y, m_fixed).iter().map(|s| s.to_vec()));
        }
        Model::Bilogistic => {
            starts.extend(start::bilogistic(t, y).iter().map(|s| s.to_vec()));
        }
        Model::Logistic4 => {
            let l_fixed = fixed[3];
            let ymin = y.iter().cloned().fold(f64::INFINITY, f64::min);
            let ymax = y.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
            let range = ymax - ymin;
            let floors: Vec<f64> = match l_fixed {
                Some(l) => vec![l],
                None => vec![ymin - 0.01 * range, ymin - 0.2 * range],
            };
            for l in floors {
                let lifted: Vec<f64> = y.iter().map(|v| v - l).collect();
                if let Some([k, r, t0]) = start::logistic(t, &lifted, k_fixed.map(|k| k - l)) {
                    starts.push(vec![k + l, r, t0, l]);
                }
            }
        }
        Model::Richards => {
            // The logistic is Richards with ν = 1 and the Gompertz its ν → 0
            // limit. Start from the logistic fit; `solve` adds the start from
            // the Gompertz fit when that one ends badly, and it is the start
            // here when the logistic cannot be fitted at all.
            match richards_start(t, y, Model::Logistic, fixed, opts) {
                Ok(s) => {
                    starts.push(s);
                    gompertz_pending = true;
                }
                Err(e) => match richards_start(t, y, Model::Gompertz, fixed, opts) {
                    Ok(s) => starts.push(s),
                    Err(_) => {
                        return Err(error(
                            e.kind,
                            format!(
                                "cannot derive starting values for the richards model from its logistic and gompertz fits: {}",
                                e.message
                            ),
                        ))
                    }
                },
            }
        }
    }
    if starts.is_empty() {
        return Err(no_start());
    }
    Ok((
        starts.iter().map(|s| merge_start(fixed, user, s)).collect(),
        gompertz_pending,
    ))
}

/// Fixed values and user starts override the self-start, entry by entry.
fn merge_start(fixed: &[Option<f64>], user: &[Option<f64>], auto: &[f64]) -> Vec<f64> {
    (0..fixed.len())
        .map(|j| fixed[j].or(user[j]).unwrap_or(auto[j]))
        .collect()
}

/// A Richards start `[K, r, t0, ν]` from a fit of `sub` (the logistic,
/// ν = 1, or the Gompertz curve, the ν → 0 limit, started at ν = 0.1)
/// with the same fixed K, r or t0 and weights. ν is the fixed value if
/// there is one.
///
/// The sub-fit only supplies a start, so it stops at relative tolerances
/// of 1e-8 without the polish; the Richards fit itself converges fully.
fn richards_start(
    t: &[f64],
    y: &[f64],
    sub_model: Model,
    fixed: &[Option<f64>],
    opts: &FitOptions,
) -> Result<Vec<f64>, FitError> {
    let base = opts.solver.clone().unwrap_or_default();
    let sub = FitOptions {
        fixed: opts
            .fixed
            .iter()
            .filter(|(n, _)| n.trim() != "nu")
            .cloned()
            .collect(),
        weights: opts.weights.clone(),
        solver: Some(Solver {
            ftol: base.ftol.max(1e-8),
            xtol: base.xtol.max(1e-8),
            polish_steps: 0,
            ..base
        }),
        start: Vec::new(),
        error_model: opts.error_model,
        increments: opts.increments,
        intervals: IntervalMethod::Asymptotic,
    };
    let nu = if sub_model == Model::Logistic {
        1.0
    } else {
        0.1
    };
    let v = solve(t, y, sub_model, &sub)?.p;
    Ok(vec![v[0], v[1], v[2], fixed[3].unwrap_or(nu)])
}

/// The time of the (last) inflection point, with its name: t0; the Bass
/// peak time `t* = tau + ln(q/p)/(p+q)` (`tau` when `q ≤ p`: the rate is
/// highest at launch); the later pulse's t02 for the bi-logistic.
fn inflection(fit: &Fit) -> Option<(&'static str, f64)> {
    let v = fit.values();
    match fit.model {
        Model::Exponential => None,
        Model::Bass => Some(("t*", crate::analysis::bass_peak_time(&v))),
        Model::Bilogistic => Some(("t02", v[2].max(v[5]))),
        _ => Some(("t0", v[2])),
    }
}

/// Thresholds of [`diagnose`]. K counts as not identified when its relative
/// standard error exceeds this...
pub const K_REL_SE_LIMIT: f64 = 0.3;
/// ...or when the rise above the floor exceeds this multiple of the observed rise.
pub const K_RANGE_LIMIT: f64 = 5.0;

/// Adds the warnings that say how far to trust a fit.
fn diagnose(fit: &mut Fit, t: &[f64], y: &[f64]) {
    let mut w = Vec::new();
    if !fit.converged {
        w.push(Warning::new(
            WarningCode::NotConverged,
            format!(
                "the solver did not converge ({}) after {} iterations; the estimates may be far from the best fit",
                fit.termination.describe(),
                fit.iterations
            ),
        ));
    }
    if fit.covariance.is_none() && !fit.free.is_empty() {
        w.push(Warning::new(
            WarningCode::SingularJacobian,
            "the Jacobian is singular at the estimate: some parameters cannot be told apart, \
             so no standard errors are given",
        ));
    } else if fit.condition_number > stats::ILL_CONDITIONED {
        w.push(Warning::new(
            WarningCode::IllConditioned,
            format!(
                "the Jacobian is ill-conditioned (condition number {:.2e}): the standard errors are unreliable",
                fit.condition_number
            ),
        ));
    }
    let (tmin, tmax) = linalg::min_max(t);
    let ymax = linalg::min_max(y).1;
    let span = (tmax - tmin).max(f64::MIN_POSITIVE);
    let roles = fit.model.roles();
    for (j, p) in fit.params.iter().enumerate() {
        if p.fixed || fit.model.domains()[j] != Domain::Positive {
            continue;
        }
        let near = match roles[j] {
            Role::Rate => p.estimate * span < 1e-3,
            Role::Shape => !(1e-3..=1e3).contains(&p.estimate),
            Role::Level | Role::Time => p.estimate < 1e-9 * ymax.abs().max(f64::MIN_POSITIVE),
        };
        if near {
            w.push(Warning::new(
                WarningCode::ParameterAtBound,
                format!(
                    "{} = {:.6e} is at the edge of its allowed range",
                    p.name, p.estimate
                ),
            ));
        }
    }
    // The saturation levels: the positive levels K, Bass's m, and each
    // pulse's K1 and K2 of the bi-logistic (whose level is their sum: a
    // pulse the data do not determine leaves the sum undetermined too);
    // not the floor L or the exponential's a (levels of any sign).
    let levels: Vec<usize> = (0..fit.params.len())
        .filter(|&j| {
            roles[j] == Role::Level
                && fit.model.domains()[j] == Domain::Positive
                && !fit.params[j].fixed
        })
        .collect();
    for kj in levels {
        let k = &fit.params[kj];
        let floor = fit.param("L").map_or(0.0, |l| l.estimate);
        let observed_rise = ymax - floor;
        let rel_se = k.std_error.map(|s| s / k.estimate.abs());
        let mut reasons = Vec::new();
        match rel_se {
            None => reasons.push(format!("{} has no standard error", k.name)),
            Some(r) if r > K_REL_SE_LIMIT => reasons.push(format!(
                "its standard error is {:.0}% of {}",
                100.0 * r,
                k.name
            )),
            _ => {}
        }
        if observed_rise > 0.0 && (k.estimate - floor) > K_RANGE_LIMIT * observed_rise {
            reasons.push(format!(
                "{} is {:.1} times the highest observation",
                k.name,
                (k.estimate - floor) / observed_rise
            ));
        }
        if fit.condition_number > stats::ILL_CONDITIONED {
            reasons.push("the fit is ill-conditioned".to_string());
        }
        if let Some(iv) = k.interval.filter(|i| i.method == CiMethod::Profile) {
            if iv.hi.is_none() {
                reasons.push(format!(
                    "its profile likelihood stays inside the 95% threshold for every {} up to {} times the data's range above the estimate",
                    k.name,
                    profile::WIDE
                ));
            }
        }
        if k.estimate - floor < 1e-9 * ymax.abs().max(f64::MIN_POSITIVE) {
            reasons.push(format!("{} ended at the edge of its allowed range", k.name));
        }
        if !reasons.is_empty() {
            // No upper bound is claimed, and the asymptotic interval is
            // withheld by the report (`identified == false`).
            let k = &mut fit.params[kj];
            k.identified = false;
            if let Some(iv) = k.interval.as_mut() {
                iv.hi = None;
            }
            w.push(Warning::new(
                WarningCode::SaturationNotIdentified,
                format!(
                    "the data do not determine the saturation level {} ({}): treat {} as unknown, \
                     not as the estimate shown",
                    k.name,
                    reasons.join("; "),
                    k.name
                ),
            ));
        }
    }
    // Any free parameter whose interval is open on a side (or that has no
    // interval at all) is not determined by the data.
    for p in fit.params.iter_mut().filter(|p| !p.fixed) {
        if p.interval
            .is_none_or(|iv| iv.lo.is_none() || iv.hi.is_none())
        {
            p.identified = false;
        }
    }
    if let Some((name, t_infl)) = inflection(fit) {
        if tmax < t_infl {
            w.push(Warning::new(
                WarningCode::BeforeInflection,
                format!(
                    "the data end before the fitted inflection point {name} = {t_infl:.4}: the upper part of the \
                     curve is an extrapolation, and fits at this stage are unreliable",
                ),
            ));
        }
    }
    fit.warnings.extend(w);
}

mod profile;
mod scaled;
mod shape_checks;
mod start_held;

#[cfg(test)]
mod tests;

/// The AVX2 copies of the inner loops must give the scalar build's results
/// to the last bit (the crate docs promise it).
#[cfg(all(test, target_arch = "x86_64"))]
mod avx2_tests {
    use super::*;

    #[test]
    fn avx2_fill_is_bit_identical() {
        if !std::is_x86_feature_detected!("avx2") {
            return;
        }
        let params: [(Model, &[f64]); 7] = [
            (Model::Logistic, &[1000.0, 0.8, 10.0]),
            (Model::Logistic4, &[900.0, 0.6, 12.0, 100.0]),
            (Model::Gompertz, &[50.0, 0.35, 8.0]),
            (Model::Richards, &[2000.0, 0.5, 15.0, 0.4]),
            (Model::Exponential, &[3.0, 0.25]),
            (Model::Bass, &[1500.0, 0.02, 0.45, -20.0]),
            (Model::Bilogistic, &[600.0, 0.3, -60.0, 900.0, 0.1, 150.0]),
        ];
        // 77 points: two full blocks and a partial one; times far into the
        // tails too, where the exponentials leave their ordinary range.
        let t: Vec<f64> = (0..77).map(|i| -400.0 + 11.0 * i as f64).collect();
        let y: Vec<f64> = t.iter().map(|v| 500.0 + (v * 0.37).sin() * 300.0).collect();
        let w: Vec<f64> = (0..77).map(|i| 0.5 + (i % 5) as f64).collect();
        for (model, p) in params {
            let np = p.len();
            for (weights, free) in [
                (None, (0..np).collect::<Vec<_>>()),
                (Some(w.clone()), (1..np).collect()),
            ] {
                let problem = CurveProblem {
                    model,
                    t: &t,
                    y: &y,
                    sqrt_w: weights,
                    base: p.to_vec(),
                    free: free.clone(),
                    scale: Scale::default(),
                };
                let x: Vec<f64> = free.iter().map(|&j| p[j] * 1.01).collect();
                let (mut r1, mut r2) = (vec![0.0; 77], vec![0.0; 77]);
                let (mut j1, mut j2) = (
                    DMatrix::zeros(77, free.len()),
                    DMatrix::zeros(77, free.len()),
                );
                let ok1 = problem.fill_any(&x, 0..77, &mut r1, j1.as_mut_slice());
                // SAFETY: AVX2 is available (checked at the top).
                let ok2 = unsafe { problem.fill_avx2(&x, 0..77, &mut r2, j2.as_mut_slice()) };
                assert_eq!(ok1, ok2, "{}", model.name());
                let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                assert_eq!(bits(&r1), bits(&r2), "{} residuals", model.name());
                assert_eq!(
                    bits(j1.as_slice()),
                    bits(j2.as_slice()),
                    "{} Jacobian",
                    model.name()
                );
            }
        }
    }
}
