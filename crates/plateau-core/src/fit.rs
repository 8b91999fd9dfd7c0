//! Fitting a model to a series: self-start, solve, then the statistics and
//! warnings that say how far to trust the result.
//!
//! [`fit`] is the entry point; it returns a [`Fit`] (estimates, standard
//! errors, intervals, criteria, fitted values in input order, warnings) or a
//! [`FitError`] when no estimate is possible at all. A fit that ran but did
//! not converge is still a `Fit`, with `converged == false`, its
//! [`Termination`] reason and a `not_converged` warning.

use crate::model::{Curve, Domain, Model, MAX_PARAMS};
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
}

/// One parameter's estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct ParamEstimate {
    pub name: &'static str,
    pub estimate: f64,
    /// Asymptotic standard error; `None` for fixed parameters or when the
    /// covariance does not exist (singular Jacobian).
    pub std_error: Option<f64>,
    /// 95% interval `estimate ± t(0.975, dof) · std_error`.
    pub ci95: Option<(f64, f64)>,
    pub fixed: bool,
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
    /// Condition number of the column-scaled Jacobian at the estimate.
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

/// The curve-fitting least-squares problem over the free parameters.
pub struct CurveProblem<'a> {
    pub model: Model,
    pub t: &'a [f64],
    pub y: &'a [f64],
    /// Square roots of the weights, if any.
    pub sqrt_w: Option<Vec<f64>>,
    /// Full parameter vector; free entries are overwritten from `x`.
    pub base: Vec<f64>,
    pub free: Vec<usize>,
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
        self.t.len()
    }
    fn n_unknowns(&self) -> usize {
        self.free.len()
    }
    fn feasible(&self, x: &[f64]) -> bool {
        let doms = self.model.domains();
        x.iter()
            .zip(&self.free)
            .all(|(v, &j)| v.is_finite() && (doms[j] == Domain::Real || *v > 0.0))
    }
    fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool {
        let c = self.curve(x);
        let mut ok = true;
        for (i, r) in res.iter_mut().enumerate() {
            let mut e = self.y[i] - c.value(self.t[i]);
            if let Some(w) = &self.sqrt_w {
                e *= w[i];
            }
            ok &= e.is_finite();
            *r = e;
        }
        ok
    }
    fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>) {
        let c = self.curve(x);
        let m = self.t.len();
        let cols = jac.as_mut_slice();
        let mut grad = [0.0; MAX_PARAMS];
        for i in 0..m {
            c.value_grad(self.t[i], &mut grad);
            let w = self.sqrt_w.as_ref().map_or(1.0, |w| w[i]);
            for (k, &j) in self.free.iter().enumerate() {
                cols[k * m + i] = w * grad[j];
            }
        }
    }
    /// One pass: the value and the gradient share their exponentials.
    fn residuals_and_jacobian(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        let c = self.curve(x);
        let m = self.t.len();
        let cols = jac.as_mut_slice();
        let mut grad = [0.0; MAX_PARAMS];
        let mut ok = true;
        for i in 0..m {
            let f = c.value_grad(self.t[i], &mut grad);
            let w = self.sqrt_w.as_ref().map_or(1.0, |w| w[i]);
            let mut e = self.y[i] - f;
            if self.sqrt_w.is_some() {
                e *= w;
            }
            ok &= e.is_finite();
            res[i] = e;
            for (k, &j) in self.free.iter().enumerate() {
                cols[k * m + i] = w * grad[j];
            }
        }
        ok
    }
}

/// Fits `model` to `series`.
pub fn fit(series: &Series, model: Model, opts: &FitOptions) -> Result<Fit, FitError> {
    fit_xy(&series.times, &series.values, model, opts)
}

/// Fits `model` to the points `(t[i], y[i])`.
pub fn fit_xy(t: &[f64], y: &[f64], model: Model, opts: &FitOptions) -> Result<Fit, FitError> {
    let solved = solve(t, y, model, opts)?;
    Ok(statistics(t, y, model, solved))
}

/// A solved fit before its statistics: the best outcome over the starts.
struct Solved {
    outcome: crate::solver::Outcome,
    /// Full parameter vector at the estimate (on the shifted axis).
    p: Vec<f64>,
    /// Model Jacobian over the free parameters at the estimate.
    jac: DMatrix<f64>,
    fixed: Vec<Option<f64>>,
    free: Vec<usize>,
    /// The exponential's time origin (0 for the other models).
    t_ref: f64,
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
    let first = y.first().copied().unwrap_or(0.0);
    if y.iter().all(|v| *v == first) {
        return Err(error(
            FitErrorKind::ConstantData,
            format!(
                "all {n} values equal {first}: a growth curve cannot be fitted to constant data"
            ),
        ));
    }
    let sqrt_w = match &opts.weights {
        None => None,
        Some(w) => {
            if w.len() != n || w.iter().any(|v| !(v.is_finite() && *v >= 0.0)) {
                return Err(error(
                    FitErrorKind::InvalidWeights,
                    "weights must be one finite, non-negative number per observation",
                ));
            }
            Some(w.iter().map(|v| v.sqrt()).collect::<Vec<_>>())
        }
    };
    let mut user_start = vec![None; np];
    for (name, v) in &opts.start {
        let j = param_index(model, name)?;
        check_value(model, j, *v)?;
        user_start[j] = Some(*v);
    }

    // The exponential's e^(r t) overflows on calendar axes (t ≈ 2024), so
    // it is fitted on t − t_ref and `a` is mapped back at the end.
    let t_ref = if model == Model::Exponential {
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

    let starts = starting_points(model, tt, y, &fixed, &user_start, opts)?;
    let solver = opts.solver.clone().unwrap_or_default();
    let free: Vec<usize> = (0..np).filter(|j| fixed[*j].is_none()).collect();
    let mut best: Option<(crate::solver::Outcome, Vec<f64>, DMatrix<f64>)> = None;
    let mut jac = DMatrix::zeros(n, free.len());
    for p0 in starts {
        let problem = CurveProblem {
            model,
            t: tt,
            y,
            sqrt_w: sqrt_w.clone(),
            base: p0.clone(),
            free: free.clone(),
        };
        let x0: Vec<f64> = free.iter().map(|&j| p0[j]).collect();
        let out = solver.minimize_with_jacobian(&problem, &x0, &mut jac);
        let better = match &best {
            None => true,
            Some((b, _, _)) => {
                out.rss.is_finite()
                    && (!b.rss.is_finite()
                        || (out.converged() && !b.converged())
                        || (out.converged() == b.converged() && out.rss < b.rss))
            }
        };
        if better {
            let full = problem.full(&out.x);
            // Keep the winner's Jacobian; the next start gets the old buffer.
            let spare = match best.take() {
                Some((_, _, j)) => j,
                None => DMatrix::zeros(n, free.len()),
            };
            best = Some((out, full, std::mem::replace(&mut jac, spare)));
        }
    }
    let Some((outcome, p, jac)) = best else {
        return Err(error(FitErrorKind::NoStart, "no starting values"));
    };
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
        jac,
        fixed,
        free,
        t_ref,
    })
}

/// Standard errors, intervals, criteria, fitted values and warnings.
fn statistics(t: &[f64], y: &[f64], model: Model, solved: Solved) -> Fit {
    let Solved {
        outcome,
        mut p,
        jac,
        fixed,
        free,
        t_ref,
    } = solved;
    let names = model.param_names();
    let np = names.len();
    let n = t.len();
    // Statistics on the (possibly shifted) axis, from the solver's
    // Jacobian at the estimate.
    let dof = n - free.len();
    let rss = outcome.rss;
    let sigma2 = rss / dof as f64;
    let cov = stats::covariance(&jac, sigma2);
    let mut covariance = cov.matrix;
    let mut warnings = Vec::new();

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
                    p[0], t_ref
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
            }
        })
        .collect();

    let fitted: Vec<f64> = t.iter().map(|ti| model.eval(&p, *ti)).collect();
    let crit = stats::criteria(rss, n, free.len());
    let mut fit = Fit {
        model,
        n,
        dof,
        rss,
        sigma: sigma2.sqrt(),
        r_squared: stats::r_squared(rss, y),
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
    };
    diagnose(&mut fit, t, y);
    fit
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
    let positive = model.domains()[j] == Domain::Positive;
    if !v.is_finite() || (positive && v <= 0.0) {
        return Err(error(
            FitErrorKind::InvalidValue,
            format!(
                "{} = {} is not allowed in the {} model; expected a finite{} number",
                model.param_names()[j],
                v,
                model.name(),
                if positive { ", positive" } else { "" }
            ),
        ));
    }
    Ok(())
}

/// Candidate full parameter vectors to start the solver from.
fn starting_points(
    model: Model,
    t: &[f64],
    y: &[f64],
    fixed: &[Option<f64>],
    user: &[Option<f64>],
    opts: &FitOptions,
) -> Result<Vec<Vec<f64>>, FitError> {
    let np = model.n_params();
    // Fixed values and user starts override the self-start, entry by entry.
    let merge = |auto: &[f64]| -> Vec<f64> {
        (0..np)
            .map(|j| fixed[j].or(user[j]).unwrap_or(auto[j]))
            .collect()
    };
    if (0..np).all(|j| fixed[j].is_some() || user[j].is_some()) {
        return Ok(vec![merge(&vec![0.0; np])]);
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
            // limit: fit both and start from each.
            let sub = FitOptions {
                fixed: opts
                    .fixed
                    .iter()
                    .filter(|(n, _)| n.trim() != "nu")
                    .cloned()
                    .collect(),
                weights: opts.weights.clone(),
                solver: opts.solver.clone(),
                start: Vec::new(),
            };
            let nu_fixed = fixed[3];
            let mut sub_error = None;
            for (m, nu) in [(Model::Logistic, 1.0), (Model::Gompertz, 0.1)] {
                match fit_xy(t, y, m, &sub) {
                    Ok(f) => {
                        let v = f.values();
                        starts.push(vec![v[0], v[1], v[2], nu_fixed.unwrap_or(nu)]);
                    }
                    Err(e) => sub_error = sub_error.or(Some(e)),
                }
            }
            if let (true, Some(e)) = (starts.is_empty(), sub_error) {
                return Err(error(
                    e.kind,
                    format!(
                        "cannot derive starting values for the richards model from its logistic and gompertz fits: {}",
                        e.message
                    ),
                ));
            }
        }
    }
    if starts.is_empty() {
        return Err(no_start());
    }
    Ok(starts.iter().map(|s| merge(s)).collect())
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
    let tmin = t.iter().cloned().fold(f64::INFINITY, f64::min);
    let tmax = t.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let ymax = y.iter().cloned().fold(f64::NEG_INFINITY, f64::max);
    let span = (tmax - tmin).max(f64::MIN_POSITIVE);
    for (j, p) in fit.params.iter().enumerate() {
        if p.fixed || fit.model.domains()[j] != Domain::Positive {
            continue;
        }
        let near = match p.name {
            "r" => p.estimate * span < 1e-3,
            "nu" => !(1e-3..=1e3).contains(&p.estimate),
            _ => p.estimate < 1e-9 * ymax.abs().max(f64::MIN_POSITIVE),
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
    if let Some(k) = fit.param("K").filter(|k| !k.fixed) {
        let floor = fit.param("L").map_or(0.0, |l| l.estimate);
        let observed_rise = ymax - floor;
        let rel_se = k.std_error.map(|s| s / k.estimate.abs());
        let mut reasons = Vec::new();
        match rel_se {
            None => reasons.push("K has no standard error".to_string()),
            Some(r) if r > K_REL_SE_LIMIT => {
                reasons.push(format!("its standard error is {:.0}% of K", 100.0 * r))
            }
            _ => {}
        }
        if observed_rise > 0.0 && (k.estimate - floor) > K_RANGE_LIMIT * observed_rise {
            reasons.push(format!(
                "K is {:.1} times the highest observation",
                (k.estimate - floor) / observed_rise
            ));
        }
        if fit.condition_number > stats::ILL_CONDITIONED {
            reasons.push("the fit is ill-conditioned".to_string());
        }
        if !reasons.is_empty() {
            w.push(Warning::new(
                WarningCode::SaturationNotIdentified,
                format!(
                    "the data do not determine the saturation level K ({}): treat K as unknown, \
                     not as the estimate shown",
                    reasons.join("; ")
                ),
            ));
        }
    }
    if let Some(t0) = fit.param("t0").filter(|_| fit.model.saturates()) {
        if tmax < t0.estimate {
            w.push(Warning::new(
                WarningCode::BeforeInflection,
                format!(
                    "the data end before the fitted inflection point t0 = {:.4}: the upper part of the \
                     curve is an extrapolation, and fits at this stage are unreliable",
                    t0.estimate
                ),
            ));
        }
    }
    fit.warnings.extend(w);
}

#[cfg(test)]
mod tests;
