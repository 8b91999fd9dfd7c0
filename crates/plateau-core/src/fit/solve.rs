//! Solving a fit: the inputs checked, the self-starts (and held-value
//! starts) tried, a long series presolved on 64 of its points, the lowest
//! minimum kept, the Richards fit taken to its Gompertz limit when it
//! ends there, and the relative and count error models reweighted (IRLS).

use super::problem::{on_scale, target_values, CurveProblem, Scale};
use super::{error, start_held, ErrorModel, FitError, FitErrorKind, FitOptions, IntervalMethod};
use crate::model::{Domain, Model};
use crate::solver::{LeastSquares, Solver, Termination};
use crate::start;
use crate::warning::{Warning, WarningCode};

/// A solved fit before its statistics: the best outcome over the starts.
pub(super) struct Solved {
    pub(super) outcome: crate::solver::Outcome,
    /// Full parameter vector at the estimate (on the shifted axis).
    pub(super) p: Vec<f64>,
    /// Triangular factor `R` of the model Jacobian over the free parameters
    /// at the estimate (`J = Q R`, column-major); empty when there is none.
    pub(super) r: Vec<f64>,
    pub(super) fixed: Vec<Option<f64>>,
    pub(super) free: Vec<usize>,
    /// The exponential's time origin (0 for the other models).
    pub(super) t_ref: f64,
    /// The times on the solver's (shifted) axis.
    pub(super) tt: Vec<f64>,
    /// The target on the residual scale (see [`CurveProblem::y`]).
    pub(super) target: Vec<f64>,
    /// Square roots of the final weights (user's × error model's).
    pub(super) sqrt_w: Option<Vec<f64>>,
    pub(super) scale: Scale,
    /// Added to the Gaussian log-likelihood (see [`crate::stats::criteria_with`]).
    pub(super) loglik_extra: f64,
    /// Warnings the solve itself found (Richards' ν at an edge).
    pub(super) notes: Vec<Warning>,
}

/// Validates the inputs, self-starts and minimises from every start;
/// keeps the best outcome.
pub(super) fn solve(
    t: &[f64],
    y: &[f64],
    model: Model,
    opts: &FitOptions,
) -> Result<Solved, FitError> {
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

/// Data sets longer than this are first fitted on [`PRESOLVE_POINTS`] of
/// their points (see [`presolve`]).
const PRESOLVE_ABOVE: usize = 256;

/// Points of the presolve: evenly spread, first and last included.
const PRESOLVE_POINTS: usize = 64;

/// The solver's initial damping from a presolved start (see
/// [`Solver::initial_damping`]): the start is close, so the first step is
/// all but a Gauss–Newton step and usually lands at the minimum.
pub(super) const PRESOLVED_DAMPING: f64 = 1e-9;

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
pub(super) fn presolve(
    problem: &CurveProblem<'_>,
    solver: &Solver,
    x0: &[f64],
) -> Option<Vec<f64>> {
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

pub(super) fn param_index(model: Model, name: &str) -> Result<usize, FitError> {
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

pub(super) fn check_value(model: Model, j: usize, v: f64) -> Result<(), FitError> {
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
pub(super) fn starting_points(
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
