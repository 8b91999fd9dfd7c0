//! Bootstrap intervals for a finished fit: refit the model to many
//! simulated copies of the data and read intervals off the spread of the
//! refitted parameters and of anything derived from them (milestones,
//! forecast values).
//!
//! Two ways to make a copy (Davison & Hinkley 1997, *Bootstrap Methods and
//! their Application*, §6.3 for nonlinear regression):
//!
//! ```text
//! residual    y*_i = f(t_i; θ̂) + e*_i,   e* drawn with replacement from the
//!             centred residuals scaled by sqrt(n / (n − p))   (the scaling
//!             undoes the shrinkage of least-squares residuals)
//! parametric  y*_i = f(t_i; θ̂) + σ̂ z_i,  z_i ~ N(0, 1),  σ̂² = RSS / (n − p)
//! ```
//!
//! Every copy is refitted by the same Levenberg–Marquardt solver, started
//! at θ̂ (no self-start: the copies scatter around the same curve, so the
//! original estimate is a close start), with the fit's fixed parameters
//! held. A refit that does not converge or leaves the parameters' domain is
//! counted in [`Bootstrap::failed`] and contributes nothing.
//!
//! Intervals are percentile intervals: the `(1 − level)/2` and
//! `(1 + level)/2` sample quantiles of the refitted values
//! ([`percentile_interval`]).
//!
//! Randomness: one `ChaCha8Rng` seeded from [`BootstrapOptions::seed`],
//! drawn in replicate order, so a seed fixes every number and running the
//! replicates in slices ([`Bootstrap::step`]) gives the same result as
//! running them at once. No clock, no thread: the caller decides how much
//! work to do per call (the page runs slices between frames).

use crate::fit::{CurveProblem, ErrorModel, Fit, Scale};
use crate::model::Model;
use crate::solver::{LeastSquares, Solver};
use rand_chacha::rand_core::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, StandardNormal, Uniform};

/// How a bootstrap copy of the data is made (see the module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Resampling {
    /// Resample the fit's residuals with replacement.
    #[default]
    Residual,
    /// Draw normal noise with the fit's residual standard deviation.
    Parametric,
}

impl Resampling {
    pub fn name(self) -> &'static str {
        match self {
            Resampling::Residual => "residual",
            Resampling::Parametric => "parametric",
        }
    }

    pub fn from_name(s: &str) -> Option<Resampling> {
        match s.trim().to_ascii_lowercase().as_str() {
            "residual" | "residuals" => Some(Resampling::Residual),
            "parametric" | "normal" => Some(Resampling::Parametric),
            _ => None,
        }
    }
}

/// The default number of replicates.
pub const DEFAULT_REPLICATES: usize = 1000;

/// The default seed (any fixed number: it only has to be reported).
pub const DEFAULT_SEED: u64 = 20_240_601;

/// Bootstrap settings.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct BootstrapOptions {
    pub resampling: Resampling,
    /// Number of replicates B.
    pub replicates: usize,
    pub seed: u64,
}

impl Default for BootstrapOptions {
    fn default() -> Self {
        BootstrapOptions {
            resampling: Resampling::Residual,
            replicates: DEFAULT_REPLICATES,
            seed: DEFAULT_SEED,
        }
    }
}

/// Why no bootstrap can be run for a fit.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BootstrapError(pub String);

impl std::fmt::Display for BootstrapError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.0)
    }
}

impl std::error::Error for BootstrapError {}

/// A bootstrap in progress (or finished): the state needed to run more
/// replicates, and the refitted parameters so far.
#[derive(Debug, Clone)]
pub struct Bootstrap {
    model: Model,
    opts: BootstrapOptions,
    /// Times on the solver's axis (shifted by `t_ref` for the exponential).
    t: Vec<f64>,
    /// Time origin of the exponential's solver axis, 0 otherwise.
    t_ref: f64,
    /// Fitted values at the data times.
    fitted: Vec<f64>,
    /// Centred, rescaled residuals (residual resampling).
    resid: Vec<f64>,
    sigma: f64,
    /// Full parameter vector at the estimate, on the solver's axis.
    start: Vec<f64>,
    free: Vec<usize>,
    rng: ChaCha8Rng,
    solver: Solver,
    done: usize,
    failed: usize,
    /// Refitted full parameter vectors (original axis), `n_params` per
    /// successful replicate, in replicate order.
    estimates: Vec<f64>,
    y_star: Vec<f64>,
}

impl Bootstrap {
    /// Sets up a bootstrap of `fit`, which was fitted (unweighted) to the
    /// points `(t[i], y[i])`. Nothing is refitted yet: call
    /// [`Bootstrap::step`] or [`Bootstrap::run`].
    pub fn new(
        fit: &Fit,
        t: &[f64],
        y: &[f64],
        opts: &BootstrapOptions,
    ) -> Result<Bootstrap, BootstrapError> {
        let n = t.len();
        if y.len() != n || fit.fitted.len() != n {
            return Err(BootstrapError(
                "the data do not match the fit (different numbers of points)".into(),
            ));
        }
        if fit.error_model != ErrorModel::Additive || fit.increments {
            return Err(BootstrapError(
                "the bootstrap resamples additive errors of a fit to the values as given; \
                 refit with additive errors and without increments to bootstrap"
                    .into(),
            ));
        }
        if fit.free.is_empty() {
            return Err(BootstrapError(
                "every parameter is fixed: there is nothing to refit".into(),
            ));
        }
        if fit.dof == 0 || !(fit.sigma.is_finite()) {
            return Err(BootstrapError(
                "the fit has no residual degrees of freedom, so no noise to resample".into(),
            ));
        }
        if opts.replicates == 0 {
            return Err(BootstrapError(
                "the number of bootstrap replicates must be at least 1".into(),
            ));
        }
        let model = fit.model;
        let mut start = fit.values();
        // The exponential is solved on t − mean(t), as in `fit` (e^(r t)
        // overflows on calendar axes); a = a' e^(−r t_ref).
        let t_ref = if model == Model::Exponential {
            t.iter().sum::<f64>() / n as f64
        } else {
            0.0
        };
        if t_ref != 0.0 {
            start[0] *= (start[1] * t_ref).exp();
        }
        let ts: Vec<f64> = t.iter().map(|v| v - t_ref).collect();
        let raw: Vec<f64> = y.iter().zip(&fit.fitted).map(|(a, b)| a - b).collect();
        let mean = raw.iter().sum::<f64>() / n as f64;
        let inflate = (n as f64 / fit.dof as f64).sqrt();
        let resid: Vec<f64> = raw.iter().map(|e| (e - mean) * inflate).collect();
        if resid.iter().chain(&fit.fitted).any(|v| !v.is_finite()) {
            return Err(BootstrapError(
                "the fitted values or residuals are not finite".into(),
            ));
        }
        Ok(Bootstrap {
            model,
            opts: *opts,
            t: ts,
            t_ref,
            fitted: fit.fitted.clone(),
            resid,
            sigma: fit.sigma,
            start,
            free: fit.free.clone(),
            rng: ChaCha8Rng::seed_from_u64(opts.seed),
            // The start is close: begin with nearly Gauss–Newton steps.
            solver: Solver::default().with_initial_damping(1e-6),
            done: 0,
            failed: 0,
            estimates: Vec::with_capacity(opts.replicates * model.n_params()),
            y_star: vec![0.0; n],
        })
    }

    /// Runs up to `k` more replicates (fewer when the target B is reached)
    /// and returns how many have been run in total. Slices of any size give
    /// the same result as one call with `k = B`.
    pub fn step(&mut self, k: usize) -> usize {
        let todo = k.min(self.opts.replicates - self.done);
        let n = self.t.len();
        let pick = Uniform::new(0, n).expect("n > 0");
        for _ in 0..todo {
            match self.opts.resampling {
                Resampling::Residual => {
                    for i in 0..n {
                        let j = pick.sample(&mut self.rng);
                        self.y_star[i] = self.fitted[i] + self.resid[j];
                    }
                }
                Resampling::Parametric => {
                    for i in 0..n {
                        let z: f64 = StandardNormal.sample(&mut self.rng);
                        self.y_star[i] = self.fitted[i] + self.sigma * z;
                    }
                }
            }
            self.done += 1;
            match self.refit() {
                Some(p) => self.estimates.extend_from_slice(&p),
                None => self.failed += 1,
            }
        }
        self.done
    }

    /// Runs all remaining replicates.
    pub fn run(&mut self) {
        self.step(self.opts.replicates);
    }

    /// Refits the current copy from the original estimate; the full
    /// parameter vector on the original axis, or `None` on failure.
    fn refit(&self) -> Option<Vec<f64>> {
        let problem = CurveProblem {
            model: self.model,
            t: &self.t,
            y: &self.y_star,
            sqrt_w: None,
            base: self.start.clone(),
            free: self.free.clone(),
            scale: Scale::default(),
        };
        let x0: Vec<f64> = self.free.iter().map(|&j| self.start[j]).collect();
        let out = self.solver.minimize(&problem, &x0);
        if !(out.converged() && out.rss.is_finite() && problem.feasible(&out.x)) {
            return None;
        }
        let mut p = self.start.clone();
        for (v, &j) in out.x.iter().zip(&self.free) {
            p[j] = *v;
        }
        if self.t_ref != 0.0 {
            p[0] *= (-p[1] * self.t_ref).exp();
        }
        let domains = self.model.domains();
        let ok = p.iter().zip(domains).all(|(v, d)| d.contains(*v));
        ok.then_some(p)
    }

    pub fn model(&self) -> Model {
        self.model
    }

    pub fn options(&self) -> &BootstrapOptions {
        &self.opts
    }

    /// Replicates run so far (successful and failed).
    pub fn done(&self) -> usize {
        self.done
    }

    /// Replicates whose refit failed.
    pub fn failed(&self) -> usize {
        self.failed
    }

    /// Replicates that produced an estimate.
    pub fn succeeded(&self) -> usize {
        self.done - self.failed
    }

    pub fn is_finished(&self) -> bool {
        self.done >= self.opts.replicates
    }

    /// The refitted full parameter vectors so far, in replicate order.
    pub fn estimates(&self) -> impl Iterator<Item = &[f64]> {
        self.estimates.chunks_exact(self.model.n_params())
    }

    /// The percentile interval of parameter `j` (in `param_names` order).
    pub fn param_interval(&self, j: usize, level: f64) -> Option<(f64, f64)> {
        let v: Vec<f64> = self.estimates().map(|p| p[j]).collect();
        percentile_interval(&v, level)
    }

    /// The bootstrap distribution of a derived quantity `h(θ*)` (a
    /// milestone time, a forecast value), where `None` means "does not
    /// exist for this replicate" (e.g. the curve never reaches a level).
    pub fn quantity(&self, h: impl Fn(&[f64]) -> Option<f64>, level: f64) -> QuantityInterval {
        let mut values = Vec::with_capacity(self.succeeded());
        let mut missing = 0;
        for p in self.estimates() {
            match h(p).filter(|v| !v.is_nan()) {
                Some(v) => values.push(v),
                None => missing += 1,
            }
        }
        let total = values.len() + missing;
        // Missing values count as later than every existing one ("never").
        let mut all = values;
        all.extend(std::iter::repeat_n(f64::INFINITY, missing));
        let interval = percentile_interval(&all, level);
        QuantityInterval {
            lo: interval.map(|i| i.0).filter(|v| v.is_finite()),
            hi: interval.map(|i| i.1).filter(|v| v.is_finite()),
            missing,
            total,
        }
    }
}

/// A percentile interval of a derived quantity, see [`Bootstrap::quantity`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct QuantityInterval {
    /// Lower end; `None` when there were no replicates or it is not finite.
    pub lo: Option<f64>,
    /// Upper end; `None` when more than `(1 − level)/2` of the replicates
    /// have no value (the interval is open above: "maybe never").
    pub hi: Option<f64>,
    /// Replicates for which the quantity does not exist.
    pub missing: usize,
    /// Successful replicates considered.
    pub total: usize,
}

impl QuantityInterval {
    /// Share of replicates in which the quantity exists.
    pub fn share_existing(&self) -> f64 {
        if self.total == 0 {
            0.0
        } else {
            (self.total - self.missing) as f64 / self.total as f64
        }
    }
}

/// The sample quantile at probability `q` (0 ≤ q ≤ 1) of **sorted** values,
/// by linear interpolation between order statistics:
/// `h = (n − 1) q`, `x[⌊h⌋] + (h − ⌊h⌋)(x[⌊h⌋ + 1] − x[⌊h⌋])`
/// (Hyndman & Fan 1996, definition 7; numpy's and R's default).
pub fn quantile_sorted(sorted: &[f64], q: f64) -> Option<f64> {
    let n = sorted.len();
    if n == 0 || !(0.0..=1.0).contains(&q) {
        return None;
    }
    let h = (n - 1) as f64 * q;
    let lo = h.floor() as usize;
    let hi = (lo + 1).min(n - 1);
    let frac = h - lo as f64;
    let (a, b) = (sorted[lo], sorted[hi]);
    if frac == 0.0 || a == b {
        return Some(a);
    }
    Some(a + frac * (b - a))
}

/// The two-sided percentile interval at `level` (e.g. 0.95): the
/// `(1 − level)/2` and `(1 + level)/2` quantiles of `values` (any order;
/// infinities allowed, NaN ignored). `None` for no values or a level
/// outside (0, 1).
pub fn percentile_interval(values: &[f64], level: f64) -> Option<(f64, f64)> {
    if !(level > 0.0 && level < 1.0) {
        return None;
    }
    let mut v: Vec<f64> = values.iter().copied().filter(|x| !x.is_nan()).collect();
    if v.is_empty() {
        return None;
    }
    v.sort_by(f64::total_cmp);
    let a = (1.0 - level) / 2.0;
    Some((quantile_sorted(&v, a)?, quantile_sorted(&v, 1.0 - a)?))
}

#[cfg(test)]
mod tests;
