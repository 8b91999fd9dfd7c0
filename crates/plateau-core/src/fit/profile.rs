//! Profile-likelihood intervals (Bates & Watts 1988, *Nonlinear Regression
//! Analysis and Its Applications*, §6.1).
//!
//! For a free parameter θ_j, the profile sum of squares `S(θ_j)` is the
//! least RSS with θ_j held at a value and every other free parameter
//! refitted. With `S(θ̂)` the fit's RSS and `s² = S(θ̂) / (n − p)`, the
//! profile t statistic is
//!
//! ```text
//! τ(θ_j) = sign(θ_j − θ̂_j) · sqrt(S(θ_j) − S(θ̂)) / s
//! ```
//!
//! and the 95% interval is where `|τ| ≤ t(0.975, n − p)`. For a model
//! linear in its parameters `τ` is exactly `(θ_j − θ̂_j) / se_j`, so the
//! interval is the Student-t one; for a nonlinear model it follows the
//! curvature of the sum of squares instead of a quadratic guess, and can be
//! lopsided or open.
//!
//! Each side is traced outwards from the estimate: the first step is the
//! asymptotic half-width, later ones extrapolate τ linearly (between half
//! and four times the previous step). Every refit is warm-started from the
//! neighbouring profile point. Once τ passes the threshold, the crossing is
//! found by the Illinois variant of regula falsi inside the bracket. A side
//! on which τ stays below the threshold out to [`WIDE`] times the
//! parameter's scale (for K, the data's range; for t0, the time span; for
//! a positive parameter going down, a millionth of its estimate) is open.
//!
//! The refits use the fit's final weights as known (for the reweighted
//! error models this is the usual approximation), on the same residual
//! scale as the fit.

use super::{CiMethod, CurveProblem, Fit, FitOptions, Interval, Scale, Solved};
use crate::linalg;
use crate::model::{Domain, Model};
use crate::solver::{LeastSquares, Solver};
use crate::stats;
use crate::warning::{Warning, WarningCode};

/// How far a side is searched, in multiples of the parameter's scale.
pub const WIDE: f64 = 1e3;
/// Going down towards zero, a positive parameter's side is open below
/// this fraction of its estimate.
const TINY: f64 = 1e-6;
/// Steps outwards per side before the side is declared open.
const MAX_STEPS: usize = 100;
/// Root-finder iterations per crossing.
const ROOT_ITERATIONS: usize = 60;

/// The outcome of one side's search.
#[derive(Debug, Clone, PartialEq)]
enum Side {
    Bound(f64),
    Open,
    Failed(String),
}

struct Profiler<'a> {
    model: Model,
    t: &'a [f64],
    y: &'a [f64],
    sqrt_w: Option<&'a Vec<f64>>,
    scale: Scale,
    free: &'a [usize],
    p_hat: &'a [f64],
    rss_hat: f64,
    s: f64,
    tcrit: f64,
    solver: Solver,
}

impl Profiler<'_> {
    /// `S(θ_j = value)` and the full parameter vector at that profile point.
    fn at(&self, j: usize, value: f64, warm: &[f64]) -> Option<(f64, Vec<f64>)> {
        let mut base = warm.to_vec();
        base[j] = value;
        let free: Vec<usize> = self.free.iter().copied().filter(|&f| f != j).collect();
        let x0: Vec<f64> = free.iter().map(|&f| base[f]).collect();
        let problem = CurveProblem {
            model: self.model,
            t: self.t,
            y: self.y,
            sqrt_w: self.sqrt_w.cloned(),
            base,
            free,
            scale: self.scale,
        };
        if problem.free.is_empty() {
            let mut res = vec![0.0; problem.n_residuals()];
            if !problem.residuals(&[], &mut res) {
                return None;
            }
            let rss = res.iter().map(|r| r * r).sum::<f64>();
            return Some((rss, problem.base));
        }
        let out = self.solver.minimize(&problem, &x0);
        out.rss.is_finite().then(|| (out.rss, problem.full(&out.x)))
    }

    fn tau(&self, rss: f64) -> f64 {
        (rss - self.rss_hat).max(0.0).sqrt() / self.s
    }

    /// Traces one side (`dir` = ±1) of parameter `j`.
    fn side(&self, j: usize, dir: f64, se: Option<f64>, scale: f64) -> Side {
        let name = self.model.param_names()[j];
        let positive = self.model.domains()[j] == Domain::Positive;
        let th = self.p_hat[j];
        let far = th + dir * WIDE * scale;
        let mut h = match se {
            Some(s) if s > 0.0 && s.is_finite() => self.tcrit * s,
            _ => 0.1 * scale,
        };
        let (mut a, mut ta, mut wa) = (th, 0.0, self.p_hat.to_vec());
        for _ in 0..MAX_STEPS {
            let mut b = a + dir * h;
            if positive && dir < 0.0 {
                if a <= TINY * th {
                    return Side::Open;
                }
                if b <= 0.25 * a {
                    b = 0.25 * a;
                }
            } else if (b - far) * dir >= 0.0 {
                if a == far {
                    return Side::Open;
                }
                b = far;
            }
            let Some((rss, wb)) = self.at(j, b, &wa) else {
                return Side::Failed(format!("the refit with {name} = {b:.6e} failed"));
            };
            let tb = self.tau(rss);
            if tb >= self.tcrit {
                return self.root(j, (a, ta, wa), (b, tb));
            }
            let slope = (tb - ta) / (b - a).abs();
            h = if slope > 0.0 {
                (1.2 * (self.tcrit - tb) / slope).clamp(0.5 * h, 4.0 * h)
            } else {
                4.0 * h
            };
            (a, ta, wa) = (b, tb, wb);
        }
        Side::Open
    }

    /// The crossing `τ = t` between `inside` (below) and `outside` (at or
    /// above), by the Illinois method.
    fn root(&self, j: usize, inside: (f64, f64, Vec<f64>), outside: (f64, f64)) -> Side {
        let name = self.model.param_names()[j];
        let (mut a, ta, mut warm) = inside;
        let (mut b, tb) = outside;
        let (mut ga, mut gb) = (ta - self.tcrit, tb - self.tcrit);
        let mut last = 0;
        for _ in 0..ROOT_ITERATIONS {
            let mut c = if gb > ga {
                b - gb * (b - a) / (gb - ga)
            } else {
                f64::NAN
            };
            let (lo, hi) = (a.min(b), a.max(b));
            if !(c > lo && c < hi) {
                c = 0.5 * (a + b);
            }
            if c <= lo || c >= hi {
                // The bracket is down to adjacent doubles.
                return Side::Bound(c);
            }
            let Some((rss, wc)) = self.at(j, c, &warm) else {
                return Side::Failed(format!("the refit with {name} = {c:.6e} failed"));
            };
            let gc = self.tau(rss) - self.tcrit;
            if gc.abs() <= 1e-10 * self.tcrit {
                return Side::Bound(c);
            }
            if gc < 0.0 {
                (a, ga, warm) = (c, gc, wc);
                if last == -1 {
                    gb *= 0.5;
                }
                last = -1;
            } else {
                (b, gb) = (c, gc);
                if last == 1 {
                    ga *= 0.5;
                }
                last = 1;
            }
            if (b - a).abs() <= 1e-13 * a.abs().max(b.abs()) {
                break;
            }
        }
        Side::Bound(if gb > ga {
            b - gb * (b - a) / (gb - ga)
        } else {
            0.5 * (a + b)
        })
    }
}

/// Replaces the asymptotic intervals of `fit` by profile intervals where
/// the profile can be traced; adds a `profile_not_computed` warning for
/// each parameter where it cannot.
pub(super) fn apply(fit: &mut Fit, solved: &Solved, model: Model, y: &[f64], opts: &FitOptions) {
    if fit.free.is_empty() || fit.dof == 0 {
        return;
    }
    let rss_hat = solved.outcome.rss;
    let s = (rss_hat / fit.dof as f64).sqrt();
    let names = model.param_names();
    let fail = |fit: &mut Fit, j: usize, why: String| {
        fit.warnings.push(Warning::new(
            WarningCode::ProfileNotComputed,
            format!(
                "no profile-likelihood interval for {}: {why}; the asymptotic interval is shown instead",
                names[j]
            ),
        ));
    };
    if !(s > 0.0 && s.is_finite()) {
        for j in fit.free.clone() {
            fail(fit, j, "the residuals are all zero".into());
        }
        return;
    }
    let profiler = Profiler {
        model,
        t: &solved.tt,
        y: &solved.target,
        sqrt_w: solved.sqrt_w.as_ref(),
        scale: solved.scale,
        free: &solved.free,
        p_hat: &solved.p,
        rss_hat,
        s,
        tcrit: stats::t_quantile(0.95, fit.dof),
        solver: opts.solver.clone().unwrap_or_default(),
    };
    let (ymin, ymax) = linalg::min_max(y);
    let y_scale = (ymax - ymin).max(ymax.abs()).max(f64::MIN_POSITIVE);
    let (tmin, tmax) = linalg::min_max(&solved.tt);
    let t_scale = (tmax - tmin).max(f64::MIN_POSITIVE);
    for j in solved.free.clone() {
        let th = solved.p[j];
        if model == Model::Exponential && names[j] == "a" && solved.t_ref != 0.0 {
            fail(
                fit,
                j,
                "a = y(0) is estimated through y at the series' mean time, so its profile is not traced"
                    .into(),
            );
            continue;
        }
        let scale = match names[j] {
            "K" | "L" | "a" => y_scale,
            "t0" => t_scale,
            _ => th.abs().max(f64::MIN_POSITIVE),
        };
        let se = fit.params[j].std_error;
        let lo = profiler.side(j, -1.0, se, scale);
        let hi = profiler.side(j, 1.0, se, scale);
        let bound = |side: &Side| match side {
            Side::Bound(v) => Ok(Some(*v)),
            Side::Open => Ok(None),
            Side::Failed(why) => Err(why.clone()),
        };
        match (bound(&lo), bound(&hi)) {
            (Ok(lo), Ok(hi)) => {
                fit.params[j].interval = Some(Interval {
                    lo,
                    hi,
                    method: CiMethod::Profile,
                });
            }
            (Err(why), _) | (_, Err(why)) => fail(fit, j, why),
        }
    }
}

#[cfg(test)]
mod tests;
