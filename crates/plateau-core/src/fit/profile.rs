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
//! A finite bound is reported only where the refit there is a verified
//! minimum: at the crossing, the warm-started refit is repeated next to
//! refits from independent starts that honour the held value (the
//! held-value grid of `start_held`, or the model's self-start). If one of
//! them reaches a lower sum of squares, the warm-started trace had left
//! the valley of minima; the trace goes on from the lower point (τ below
//! the threshold) or looks for the crossing again. If none converged at
//! the lowest point, nothing vouches for the bound and the side is open.
//!
//! The refits use the fit's final weights as known (for the reweighted
//! error models this is the usual approximation), on the same residual
//! scale as the fit.

use super::{CiMethod, CurveProblem, Fit, FitOptions, Interval, Scale, Solved};
use crate::linalg;
use crate::model::Model;
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

/// The outcome of checking a bound's refit against independent starts.
enum Check {
    /// The refit converged and no independent start went lower.
    Verified,
    /// An independent start reached a lower sum of squares (with the full
    /// parameter vector there): the traced refit was not the minimum.
    Better(f64, Vec<f64>),
    /// The refit did not converge and nothing went lower: no minimum to
    /// vouch for.
    Unverified,
}

/// Rounds of re-tracing after a bound's check found a lower minimum.
const MAX_CHECKS: usize = 8;

#[derive(Clone)]
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
    /// The fit's held values (the profiled parameter is added per refit).
    fixed: &'a [Option<f64>],
    /// The data on their own scale and the user's weights, for the
    /// independent starts of [`Profiler::verify`].
    plain: (&'a [f64], &'a [f64], Option<&'a [f64]>),
}

impl Profiler<'_> {
    /// `S(θ_j = value)` and the full parameter vector at that profile point.
    ///
    /// When the warm start is outside where the curve is defined (a
    /// Richards ν < 0 held further down, where `1 + ν e^(−r (t − t0))`
    /// turns negative at the first time), the refit starts from the best
    /// independent start instead.
    fn at(&self, j: usize, value: f64, warm: &[f64]) -> Option<(f64, Vec<f64>)> {
        if let Some((rss, p, _)) = self.refit(j, value, warm) {
            return Some((rss, p));
        }
        self.independent_starts(j, value)
            .iter()
            .filter_map(|s| self.refit_cold(j, value, s))
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map(|(rss, p, _)| (rss, p))
    }

    /// Starts that honour `θ_j = value` and the fit's held values, derived
    /// from the data alone: the held-value grid of `start_held` where the
    /// model has one, else the model's self-start.
    fn independent_starts(&self, j: usize, value: f64) -> Vec<Vec<f64>> {
        let mut fixed = self.fixed.to_vec();
        fixed[j] = Some(value);
        let (t, y, w) = self.plain;
        if super::start_held::supported(self.model) {
            return super::start_held::held_starts(self.model, t, y, w, &fixed, 3);
        }
        if t.len() == self.t.len() && t == self.t {
            let none = vec![None; fixed.len()];
            let opts = FitOptions {
                weights: w.map(<[f64]>::to_vec),
                ..FitOptions::default()
            };
            if let Ok((s, _)) = super::starting_points(self.model, t, y, &fixed, &none, &opts) {
                return s;
            }
        }
        Vec::new()
    }

    /// [`Profiler::at`], with whether the refit converged.
    fn refit(&self, j: usize, value: f64, warm: &[f64]) -> Option<(f64, Vec<f64>, bool)> {
        self.refit_from(j, value, warm, false)
    }

    /// [`Profiler::refit`] from a start that is not a neighbouring profile
    /// point: a long series is first solved on its presolve subsample, as
    /// the fit itself is ([`super::solve::presolve`]); the minimum is still the
    /// full data's, only the start differs.
    fn refit_cold(&self, j: usize, value: f64, start: &[f64]) -> Option<(f64, Vec<f64>, bool)> {
        self.refit_from(j, value, start, true)
    }

    fn refit_from(
        &self,
        j: usize,
        value: f64,
        warm: &[f64],
        cold: bool,
    ) -> Option<(f64, Vec<f64>, bool)> {
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
            return Some((rss, problem.base, true));
        }
        let presolved = if cold {
            super::solve::presolve(&problem, &self.solver, &x0)
        } else {
            None
        };
        let out = match presolved {
            Some(x) => self
                .solver
                .clone()
                .with_initial_damping(super::solve::PRESOLVED_DAMPING)
                .minimize(&problem, &x),
            None => self.solver.minimize(&problem, &x0),
        };
        out.rss
            .is_finite()
            .then(|| (out.rss, problem.full(&out.x), out.converged()))
    }

    /// Checks the refit at a bound `θ_j = value` (warm-started from `warm`)
    /// against refits from independent starts that honour the held value:
    /// the held-value grid of `start_held` where the model has one, else
    /// the model's self-start with `θ_j` held.
    fn verify(&self, j: usize, value: f64, warm: &[f64]) -> Check {
        if self.free.len() <= 1 {
            // Nothing is refitted: S(θ_j) is evaluated, not minimised.
            return Check::Verified;
        }
        // The sum of squares a bound claims: τ = t there.
        let claimed = self.rss_hat + (self.tcrit * self.s).powi(2);
        // A refit lower than this moves τ² by more than 1e-6.
        let below = claimed - 1e-6 * self.s * self.s;
        let mut starts = vec![warm.to_vec()];
        starts.extend(self.independent_starts(j, value));
        // The lowest refit, and whether it (or one level with it) converged.
        let mut best: Option<(f64, Vec<f64>, bool)> = None;
        for (i, s) in starts.iter().enumerate() {
            let refit = if i == 0 {
                self.refit(j, value, s)
            } else {
                self.refit_cold(j, value, s)
            };
            if let Some((r2, p2, conv)) = refit {
                best = match best {
                    Some(b) if r2 > b.0 + 1e-9 * b.0.abs() => Some(b),
                    Some(b) if r2 >= b.0 - 1e-9 * b.0.abs() => {
                        let conv = conv || b.2;
                        Some(if r2 < b.0 {
                            (r2, p2, conv)
                        } else {
                            (b.0, b.1, conv)
                        })
                    }
                    _ => Some((r2, p2, conv)),
                };
            }
        }
        match best {
            Some((r2, p2, _)) if r2 < below => Check::Better(r2, p2),
            Some((_, _, true)) => Check::Verified,
            _ => Check::Unverified,
        }
    }

    fn tau(&self, rss: f64) -> f64 {
        (rss - self.rss_hat).max(0.0).sqrt() / self.s
    }

    /// Traces one side (`dir` = ±1) of parameter `j`.
    fn side(&self, j: usize, dir: f64, se: Option<f64>, scale: f64) -> Side {
        let name = self.model.param_names()[j];
        // A parameter with a lower edge (0, or −1 for ν) approaches it by
        // shrinking its distance from the edge.
        let edge = self.model.domains()[j].lower_edge();
        let th = self.p_hat[j];
        let far = th + dir * WIDE * scale;
        let mut h = match se {
            Some(s) if s > 0.0 && s.is_finite() => self.tcrit * s,
            _ => 0.1 * scale,
        };
        let (mut a, mut ta, mut wa) = (th, 0.0, self.p_hat.to_vec());
        let mut checks = 0;
        for _ in 0..MAX_STEPS {
            let mut b = a + dir * h;
            if let (Some(e), true) = (edge, dir < 0.0) {
                if a - e <= TINY * (th - e) {
                    return Side::Open;
                }
                if b - e <= 0.25 * (a - e) {
                    b = e + 0.25 * (a - e);
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
                // A finite bound only where the refit there is a verified
                // minimum; a lower minimum found there moves the trace on.
                let mut outside = (b, tb);
                loop {
                    let (c, wc) = match self.root(j, (a, ta, wa.clone()), outside) {
                        Ok(v) => v,
                        Err(why) => return Side::Failed(why),
                    };
                    checks += 1;
                    match self.verify(j, c, &wc) {
                        Check::Verified => return Side::Bound(c),
                        Check::Unverified => return Side::Open,
                        Check::Better(..) if checks >= MAX_CHECKS => return Side::Open,
                        Check::Better(rc, pc) => {
                            let tc = self.tau(rc);
                            if tc >= self.tcrit {
                                outside = (c, tc);
                                continue;
                            }
                            (a, ta, wa) = (c, tc, pc);
                            break;
                        }
                    }
                }
                continue;
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
    fn root(
        &self,
        j: usize,
        inside: (f64, f64, Vec<f64>),
        outside: (f64, f64),
    ) -> Result<(f64, Vec<f64>), String> {
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
                return Ok((c, warm));
            }
            let Some((rss, wc)) = self.at(j, c, &warm) else {
                return Err(format!("the refit with {name} = {c:.6e} failed"));
            };
            let gc = self.tau(rss) - self.tcrit;
            if gc.abs() <= 1e-10 * self.tcrit {
                return Ok((c, wc));
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
        let c = if gb > ga {
            b - gb * (b - a) / (gb - ga)
        } else {
            0.5 * (a + b)
        };
        Ok((c, warm))
    }
}

/// Replaces the asymptotic intervals of `fit` by profile intervals where
/// the profile can be traced; adds a `profile_not_computed` warning for
/// each parameter where it cannot.
pub(super) fn apply(
    fit: &mut Fit,
    solved: &Solved,
    model: Model,
    (t, y): (&[f64], &[f64]),
    opts: &FitOptions,
) {
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
        fixed: &solved.fixed,
        plain: (t, y, opts.weights.as_deref()),
    };
    let (ymin, ymax) = linalg::min_max(y);
    let y_scale = (ymax - ymin).max(ymax.abs()).max(f64::MIN_POSITIVE);
    let (tmin, tmax) = linalg::min_max(&solved.tt);
    let t_scale = (tmax - tmin).max(f64::MIN_POSITIVE);
    for j in solved.free.clone() {
        let th = solved.p[j];
        // The exponential is fitted as a' e^(r (t − t_ref)); a = y(0) is
        // profiled on the unshifted axis, where holding a fixed is holding
        // a parameter of the curve fixed (e^(r t) is finite near r̂ there,
        // as a = y(0) itself is).
        let unshifted;
        let (prof, th) = if model == Model::Exponential && names[j] == "a" && solved.t_ref != 0.0 {
            let a = fit.params[j].estimate;
            if !(a.is_finite() && a > 0.0) {
                fail(
                    fit,
                    j,
                    "a = y(0) is not representable on this time axis".into(),
                );
                continue;
            }
            unshifted = [a, solved.p[1]];
            let prof = Profiler {
                t,
                p_hat: &unshifted,
                ..profiler.clone()
            };
            (prof, a)
        } else {
            (profiler.clone(), th)
        };
        let scale = match names[j] {
            "K" | "L" | "a" => y_scale,
            "t0" => t_scale,
            // ν may be 0 (the Gompertz limit): at least 1 there.
            "nu" => th.abs().max(1.0),
            _ => th.abs().max(f64::MIN_POSITIVE),
        };
        let se = fit.params[j].std_error;
        let lo = prof.side(j, -1.0, se, scale);
        let hi = prof.side(j, 1.0, se, scale);
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
