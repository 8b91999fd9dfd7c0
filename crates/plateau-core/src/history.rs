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
//! Drift and the backtest refit at most [`MAX_CUTOFFS`] prefixes by
//! default, evenly spread (and say how many there were). Each fit starts
//! from the previous cutoff's estimate and from the self-starts, and keeps
//! the lower minimum (see [`warm_fit`]); rows carry asymptotic intervals
//! unless the options ask for profile ones.
//!
//! Replicates (several observations at one time): a prefix is cut between
//! distinct times, never inside one time's replicates, so "the data up to
//! time c" always means all of them. A prefix then grows by one time (all
//! its replicates) rather than one point.

use crate::fit::{fit_xy, CiMethod, Fit, FitOptions, IntervalMethod, ParamEstimate};
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
    /// The fitted curve's value at the cutoff. A saturation level lies
    /// above every value of its curve, so this is what "K is at least"
    /// can say when the data do not determine K and no verified profile
    /// bound is at hand.
    pub level: f64,
    /// Warning codes of the fit (e.g. `before_inflection`).
    pub warnings: Vec<&'static str>,
}

impl DriftFit {
    /// What can be said of a saturation level (`K`, or the Bass model's
    /// `m`) that the data of this prefix do not determine: it is at least
    /// its verified profile lower bound when there is one, else at least
    /// the level the fitted curve has reached by the cutoff. `None` for
    /// other parameters and for a determined (or fixed) one.
    pub fn saturation_at_least(&self, name: &str) -> Option<f64> {
        let p = self.params.iter().find(|p| p.name == name)?;
        if p.identified || p.fixed || !matches!(name, "K" | "m") {
            return None;
        }
        let verified = p
            .interval
            .filter(|i| i.method == CiMethod::Profile)
            .and_then(|i| i.lo)
            .filter(|v| v.is_finite());
        verified.or(Some(self.level).filter(|v| v.is_finite()))
    }
}

/// Indices of the points in time order (stable for equal times).
pub(crate) fn time_order(t: &[f64]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..t.len()).collect();
    idx.sort_by(|&a, &b| t[a].total_cmp(&t[b]));
    idx
}

/// How each prefix is started.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Starts {
    /// From the previous cutoff's estimate and from the self-starts (the
    /// fit's own multi-start); the lower minimum is kept. The default.
    Warm,
    /// From the self-starts only, as a lone fit of the prefix would be.
    Cold,
}

/// Whether fit `a` is better than `b`: usable (converged, Jacobian not
/// singular) before not, then the lower residual sum of squares; ties
/// (within 1e-9 relative) keep `b`.
fn better(a: &Fit, b: &Fit) -> bool {
    let usable = |f: &Fit| f.converged && !f.has_warning(WarningCode::SingularJacobian);
    match (usable(a), usable(b)) {
        (true, false) => true,
        (false, true) => false,
        // A NaN RSS of `b` loses to any finite one.
        _ => a.rss.is_finite() && (b.rss.is_nan() || a.rss < b.rss * (1.0 - 1e-9)),
    }
}

/// Fits one prefix with asymptotic intervals from `prev`'s estimate and
/// from the self-starts (see [`Starts`]), keeps the better of the two
/// (see [`better`]), then, when `opts` asks for other intervals, refits
/// from that estimate with them (the refit starts at the minimum, so only
/// the intervals are new work).
///
/// The self-start always runs: a warm start never reports a worse local
/// minimum than a lone fit of the prefix would without that being
/// checked. A `prev` with a singular Jacobian is not used: a step-shaped
/// curve (r so large that r and t0 stop mattering) is a stationary point
/// of the sum of squares, and a warm start from one would stay there for
/// every later prefix.
pub(crate) fn warm_fit(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    prev: Option<&Fit>,
    starts: Starts,
) -> Result<Fit, String> {
    let quick = FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..opts.clone()
    };
    let singular = |f: &Fit| f.has_warning(WarningCode::SingularJacobian);
    let warm = match prev.filter(|p| starts == Starts::Warm && !singular(p)) {
        Some(p) => {
            let warm = FitOptions {
                start: start_of(p),
                ..quick.clone()
            };
            fit_xy(t, y, model, &warm).ok()
        }
        None => None,
    };
    let cold = fit_xy(t, y, model, &quick).map_err(|e| e.message);
    let best = match (warm, cold) {
        (Some(w), Ok(c)) => {
            if better(&w, &c) {
                w
            } else {
                c
            }
        }
        (Some(w), Err(_)) => w,
        (None, c) => c?,
    };
    if opts.intervals == IntervalMethod::Asymptotic {
        return Ok(best);
    }
    let again = FitOptions {
        start: start_of(&best),
        ..opts.clone()
    };
    match fit_xy(t, y, model, &again) {
        Ok(f) if !better(&best, &f) => Ok(f),
        _ => Ok(best),
    }
}

/// The free parameters' estimates of `f`, as start values.
fn start_of(f: &Fit) -> Vec<(String, f64)> {
    f.params
        .iter()
        .filter(|q| !q.fixed)
        .map(|q| (q.name.to_string(), q.estimate))
        .collect()
}

/// Evenly spread picks of at most `max` of `cuts` (the last always
/// included, the first too when `max` > 1).
pub(crate) fn spread(cuts: &[usize], max: usize) -> Vec<usize> {
    let count = cuts.len();
    if count <= max {
        cuts.to_vec()
    } else if max == 0 {
        Vec::new()
    } else if max == 1 {
        vec![cuts[count - 1]]
    } else {
        let mut v: Vec<usize> = (0..max)
            .map(|i| cuts[(i * (count - 1) + (max - 1) / 2) / (max - 1)])
            .collect();
        v.dedup();
        v
    }
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

/// Cutoffs [`drift_with`] refits at most by default, evenly spread over
/// the possible ones (and origins [`crate::backtest`] tries at most):
/// forty points show how an estimate moved as well as a thousand do, and
/// keep a 20,000-point series to a few seconds.
pub const MAX_CUTOFFS: usize = 40;

/// Settings of [`drift_with`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DriftOptions {
    /// At most this many cutoffs, evenly spread from the smallest prefix to
    /// all the data (the last always included); `None`: every cutoff.
    pub max_cutoffs: Option<usize>,
    pub starts: Starts,
}

impl Default for DriftOptions {
    fn default() -> Self {
        DriftOptions {
            max_cutoffs: Some(MAX_CUTOFFS),
            starts: Starts::Warm,
        }
    }
}

/// Drift rows and how many cutoffs there were before the cap.
#[derive(Debug, Clone)]
pub struct Drift {
    pub rows: Vec<DriftRow>,
    /// The number of possible cutoffs when the cap left some out, else
    /// `None` (every cutoff refitted).
    pub cutoffs_capped_from: Option<usize>,
}

/// Refits `model` on every prefix of `(t, y)` from `n_free + 1` points to
/// all of them, in time order, cut only between distinct times. See the
/// module docs.
pub fn drift(t: &[f64], y: &[f64], model: Model, opts: &FitOptions) -> Vec<DriftRow> {
    drift_sampled(t, y, model, opts, usize::MAX)
}

/// [`drift`] on at most `max_rows` prefixes, evenly spread from the
/// smallest to all the data (the last one always included).
pub fn drift_sampled(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    max_rows: usize,
) -> Vec<DriftRow> {
    let d = DriftOptions {
        max_cutoffs: Some(max_rows),
        starts: Starts::Warm,
    };
    drift_with(t, y, model, opts, &d).rows
}

/// Drift under `d`: the cap on cutoffs and how each prefix is started.
/// Each row's intervals are `opts.intervals` (the study asks for
/// asymptotic ones unless told otherwise).
pub fn drift_with(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
    d: &DriftOptions,
) -> Drift {
    let order = time_order(t);
    let ts: Vec<f64> = order.iter().map(|&i| t[i]).collect();
    let ys: Vec<f64> = order.iter().map(|&i| y[i]).collect();
    let first = n_free(model, opts) + 1;
    let n = ts.len();
    let none = Drift {
        rows: Vec::new(),
        cutoffs_capped_from: None,
    };
    if n < first {
        return none;
    }
    let cuts: Vec<usize> = cut_points(&ts)
        .into_iter()
        .filter(|&m| m >= first)
        .collect();
    let max = d.max_cutoffs.unwrap_or(usize::MAX);
    let sizes = spread(&cuts, max);
    let cutoffs_capped_from = (sizes.len() < cuts.len()).then_some(cuts.len());
    let mut prev: Option<Fit> = None;
    let mut rows = Vec::new();
    for m in sizes {
        let result = warm_fit(&ts[..m], &ys[..m], model, opts, prev.as_ref(), d.starts);
        let cutoff = ts[m - 1];
        let row = DriftRow {
            m,
            cutoff,
            result: result.as_ref().map_err(Clone::clone).map(|f| DriftFit {
                params: f.params.clone(),
                converged: f.converged,
                sigma: f.sigma,
                level: f.predict(cutoff),
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
    Drift {
        rows,
        cutoffs_capped_from,
    }
}

#[cfg(test)]
pub(crate) mod tests;
