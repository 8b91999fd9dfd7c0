//! History: how the estimates moved as the data arrived (the CLI's
//! `drift`), and the prefixes of a series that it and [`crate::backtest`]
//! share.
//!
//! [`drift`] refits the model on every prefix of the series (the first m
//! points in time order, from the smallest m the model can be fitted to up
//! to n) and reports the parameters with their intervals against the
//! cutoff time: a K that keeps climbing as data arrive is not yet
//! determined, whatever its last interval says.
//!
//! Drift and the backtest warm-start each fit from the previous prefix's
//! estimate (the prefixes differ by one point, so it is a close start) and
//! fall back to the self-start when that does not converge.
//!
//! Replicates (several observations at one time): a prefix is cut between
//! distinct times, never inside one time's replicates, so "the data up to
//! time c" always means all of them. A prefix then grows by one time (all
//! its replicates) rather than one point.

use crate::fit::{fit_xy, Fit, FitOptions, ParamEstimate};
use crate::model::Model;
use crate::warning::WarningCode;

/// One prefix of the series and its fit.
#[derive(Debug, Clone)]
pub struct DriftRow {
    /// Points used (the first `m` in time order).
    pub m: usize,
    /// Time of the last point used.
    pub cutoff: f64,
    /// The fit's parameters (with `ci95`), or why it failed.
    pub result: Result<DriftFit, String>,
}

/// The parts of a prefix fit that drift reports.
#[derive(Debug, Clone)]
pub struct DriftFit {
    pub params: Vec<ParamEstimate>,
    pub converged: bool,
    pub sigma: f64,
    /// Warning codes of the fit (e.g. `before_inflection`).
    pub warnings: Vec<&'static str>,
}

/// Indices of the points in time order (stable for equal times).
pub(crate) fn time_order(t: &[f64]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..t.len()).collect();
    idx.sort_by(|&a, &b| t[a].total_cmp(&t[b]));
    idx
}

/// Fits from `prev`'s estimate, or self-started when there is none, when
/// the warm start does not converge, or when either has a singular
/// Jacobian: a step-shaped curve (r so large that r and t0 stop mattering)
/// is a stationary point of the sum of squares, and a warm start from one
/// would stay there for every later prefix.
pub(crate) fn warm_fit(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    prev: Option<&Fit>,
) -> Result<Fit, String> {
    // The rows carry the asymptotic `ci95`; profile refits would be unused.
    let plain = FitOptions {
        intervals: crate::fit::IntervalMethod::Asymptotic,
        ..opts.clone()
    };
    let opts = &plain;
    let singular = |f: &Fit| f.has_warning(WarningCode::SingularJacobian);
    if let Some(p) = prev.filter(|p| !singular(p)) {
        let start: Vec<(String, f64)> = p
            .params
            .iter()
            .filter(|q| !q.fixed)
            .map(|q| (q.name.to_string(), q.estimate))
            .collect();
        let warm = FitOptions {
            start,
            ..opts.clone()
        };
        if let Ok(f) = fit_xy(t, y, model, &warm) {
            if f.converged && !singular(&f) {
                return Ok(f);
            }
        }
    }
    fit_xy(t, y, model, opts).map_err(|e| e.message)
}

/// The prefix sizes of the time-ordered times `ts` that end between two
/// distinct times (and `ts.len()` itself): the only places a prefix may be
/// cut, so that it never splits one time's replicates. Without repeated
/// times it is `1..=n`.
pub(crate) fn cut_points(ts: &[f64]) -> Vec<usize> {
    (1..=ts.len())
        .filter(|&m| m == ts.len() || ts[m] != ts[m - 1])
        .collect()
}

/// Free parameters of `model` under `opts` (fixed names that the model
/// does not have are ignored here; the fit reports them).
pub(crate) fn n_free(model: Model, opts: &FitOptions) -> usize {
    let fixed = model
        .param_names()
        .iter()
        .filter(|n| opts.fixed.iter().any(|(f, _)| f.trim() == **n))
        .count();
    model.n_params() - fixed
}

/// Refits `model` on every prefix of `(t, y)` from `n_free + 1` points to
/// all of them, in time order, cut only between distinct times. See the
/// module docs.
pub fn drift(t: &[f64], y: &[f64], model: Model, opts: &FitOptions) -> Vec<DriftRow> {
    drift_sampled(t, y, model, opts, usize::MAX)
}

/// [`drift`] on at most `max_rows` prefixes, evenly spread from the
/// smallest to all the data (the last one always included): for long
/// series on the page, where a chart cannot show a thousand bars anyway.
pub fn drift_sampled(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    max_rows: usize,
) -> Vec<DriftRow> {
    let order = time_order(t);
    let ts: Vec<f64> = order.iter().map(|&i| t[i]).collect();
    let ys: Vec<f64> = order.iter().map(|&i| y[i]).collect();
    let first = n_free(model, opts) + 1;
    let n = ts.len();
    if n < first || max_rows == 0 {
        return Vec::new();
    }
    let cuts: Vec<usize> = cut_points(&ts)
        .into_iter()
        .filter(|&m| m >= first)
        .collect();
    let count = cuts.len();
    let sizes: Vec<usize> = if count <= max_rows {
        cuts
    } else if max_rows == 1 {
        vec![n]
    } else {
        let mut v: Vec<usize> = (0..max_rows)
            .map(|i| cuts[(i * (count - 1) + (max_rows - 1) / 2) / (max_rows - 1)])
            .collect();
        v.dedup();
        v
    };
    let mut prev: Option<Fit> = None;
    let mut rows = Vec::new();
    for m in sizes {
        let result = warm_fit(&ts[..m], &ys[..m], model, opts, prev.as_ref());
        let row = DriftRow {
            m,
            cutoff: ts[m - 1],
            result: result.as_ref().map_err(Clone::clone).map(|f| DriftFit {
                params: f.params.clone(),
                converged: f.converged,
                sigma: f.sigma,
                warnings: f.warnings.iter().map(|w| w.code.as_str()).collect(),
            }),
        };
        if let Ok(f) = result {
            if f.converged {
                prev = Some(f);
            }
        }
        rows.push(row);
    }
    rows
}

#[cfg(test)]
pub(crate) mod tests;
