//! A Levenberg–Marquardt least-squares solver with a Gauss–Newton polish.
//!
//! The problem ([`LeastSquares`]: residuals, Jacobian, feasibility) is kept
//! apart from the solver ([`Solver`]: settings with `with_*` builders).
//! The outcome is data ([`Outcome`] with a [`Termination`] reason), never a
//! panic.
//!
//! Each iteration minimises, over the step δ,
//!
//! ```text
//! ‖res − J δ‖² + λ ‖D δ‖²
//! ```
//!
//! where `res = y − f(x)` and `J = ∂f/∂x`, and `D` holds the largest column
//! norms of `J` seen so far (Moré 1978), which makes the iteration invariant
//! to the units of the parameters. The damped system is solved from the
//! SVD of `R D⁻¹`, where `J = Q R` is a Householder QR: the normal
//! equations `JᵀJ` are never formed, so their squared condition number
//! never costs precision. λ follows Nielsen's (1999) update from the gain
//! ratio.
//!
//! Feasibility (for example K > 0) is kept by rejecting infeasible trial
//! steps as if they had increased the sum of squares: the damping grows and
//! the step shrinks towards the feasible region, so no parameter is ever
//! clipped to a bound.
//!
//! After LM stops, undamped Gauss–Newton steps (a truncated-SVD solve) are
//! taken while they keep lowering the sum of squares: near the minimum they
//! converge quadratically, which brings the estimates to full double
//! precision at little cost.

use crate::linalg;
use nalgebra::DMatrix;

/// A nonlinear least-squares problem: minimise `Σ res_i(x)²`.
pub trait LeastSquares {
    /// Number of residuals `m`.
    fn n_residuals(&self) -> usize;
    /// Number of unknowns `n`.
    fn n_unknowns(&self) -> usize;
    /// Whether `x` lies in the problem's domain (e.g. positive K).
    fn feasible(&self, x: &[f64]) -> bool;
    /// Writes `res = y − f(x)`. Returns `false` if any residual is not finite.
    fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool;
    /// Writes the model Jacobian `∂f/∂x` (m × n).
    fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>);
    /// Writes residuals and Jacobian at `x` together; returns `false` (and
    /// may leave `jac` unwritten) if any residual is not finite. Problems
    /// whose value and derivatives share work (such as an exponential)
    /// should override this.
    fn residuals_and_jacobian(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        if !self.residuals(x, res) {
            return false;
        }
        self.jacobian(x, jac);
        true
    }
}

/// Why the solver stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum Termination {
    /// Both the actual and the predicted relative reduction of the sum of
    /// squares fell below `ftol`.
    SmallReduction,
    /// The scaled step fell below `xtol` relative to the scaled parameters.
    SmallStep,
    /// The residual vector is (nearly) orthogonal to the Jacobian's columns:
    /// the gradient test `max |cos| ≤ gtol` holds.
    SmallGradient,
    /// The residuals are zero to working precision.
    ZeroResidual,
    /// The iteration limit was reached first.
    MaxIterations,
    /// No step reduced the sum of squares even with maximal damping.
    NoProgress,
    /// The starting point is outside the domain or gives non-finite residuals.
    InvalidStart,
}

impl Termination {
    /// A stable machine-readable name, as in the JSON report.
    pub fn as_str(self) -> &'static str {
        match self {
            Termination::SmallReduction => "small_reduction",
            Termination::SmallStep => "small_step",
            Termination::SmallGradient => "small_gradient",
            Termination::ZeroResidual => "zero_residual",
            Termination::MaxIterations => "max_iterations",
            Termination::NoProgress => "no_progress",
            Termination::InvalidStart => "invalid_start",
        }
    }

    /// Whether this reason means a (local) minimum was reached.
    pub fn is_converged(self) -> bool {
        matches!(
            self,
            Termination::SmallReduction
                | Termination::SmallStep
                | Termination::SmallGradient
                | Termination::ZeroResidual
        )
    }

    /// A sentence for a human.
    pub fn describe(self) -> &'static str {
        match self {
            Termination::SmallReduction => "the sum of squares stopped decreasing",
            Termination::SmallStep => "the parameter steps became negligible",
            Termination::SmallGradient => "the gradient vanished",
            Termination::ZeroResidual => "the curve passes through every point",
            Termination::MaxIterations => "the iteration limit was reached",
            Termination::NoProgress => "no step could reduce the sum of squares",
            Termination::InvalidStart => {
                "the starting values are outside the model's domain or give non-finite values"
            }
        }
    }
}

/// Solver settings.
#[derive(Debug, Clone)]
pub struct Solver {
    pub ftol: f64,
    pub xtol: f64,
    pub gtol: f64,
    pub max_iterations: usize,
    pub polish_steps: usize,
}

impl Default for Solver {
    fn default() -> Self {
        Solver {
            ftol: 1e-12,
            xtol: 1e-12,
            gtol: 1e-12,
            max_iterations: 500,
            polish_steps: 20,
        }
    }
}

/// The solver's result.
#[derive(Debug, Clone)]
pub struct Outcome {
    pub x: Vec<f64>,
    pub rss: f64,
    pub termination: Termination,
    /// LM iterations (accepted or rejected steps) plus polish steps.
    pub iterations: usize,
    /// Residual evaluations.
    pub evaluations: usize,
}

impl Outcome {
    pub fn converged(&self) -> bool {
        self.termination.is_converged()
    }
}

/// The SVD of `R D⁻¹` and the rotated residual, from which damped and
/// undamped steps are cheap for any λ. All buffers are allocated once per
/// solve and reused at every point.
struct Linearisation {
    m: usize,
    n: usize,
    /// `R` (column-major `n × n`), then `R D⁻¹`, then the columns
    /// `s_j u_j` of its one-sided Jacobi SVD.
    r: Vec<f64>,
    /// Singular values of `R D⁻¹`.
    s: Vec<f64>,
    /// `V` of the SVD (scaled coordinates), column-major.
    v: Vec<f64>,
    /// `g = Uᵀ Qᵀ res`.
    g: Vec<f64>,
    /// Column norms of the current Jacobian.
    col_norm: Vec<f64>,
    /// The largest |cosine| between the residual and a Jacobian column.
    max_cos: f64,
}

/// Scratch space of [`Linearisation::factor`].
struct Scratch {
    /// Copy of the Jacobian, overwritten by its QR factorisation.
    work: Vec<f64>,
    /// `Qᵀ res`; its first `n` entries are the part `R` can fit.
    qtr: Vec<f64>,
}

impl Scratch {
    fn new(m: usize, n: usize) -> Scratch {
        Scratch {
            work: vec![0.0; m * n],
            qtr: vec![0.0; m.max(n)],
        }
    }
}

impl Linearisation {
    fn new(m: usize, n: usize) -> Linearisation {
        Linearisation {
            m,
            n,
            r: vec![0.0; n * n],
            s: vec![0.0; n],
            v: vec![0.0; n * n],
            g: vec![0.0; n],
            col_norm: vec![0.0; n],
            max_cos: 0.0,
        }
    }

    /// Factorises `jac` (the Jacobian at the point with residuals `res` and
    /// sum of squares `rss`): one Householder QR `J = Q R`, then the SVD of
    /// the small triangle `R D⁻¹` (`D` column scaling, as `J D⁻¹ = Q R D⁻¹`).
    ///
    /// With `update_d`, `D` first takes the larger of its entries and the
    /// current column norms (Moré's scaling); otherwise only zero entries
    /// are filled. Returns `false` when the factorisation is not finite.
    fn factor(
        &mut self,
        sc: &mut Scratch,
        jac: &DMatrix<f64>,
        res: &[f64],
        rss: f64,
        d: &mut [f64],
        update_d: bool,
    ) -> bool {
        let (m, n) = (self.m, self.n);
        sc.work.copy_from_slice(jac.as_slice());
        sc.qtr[..m].copy_from_slice(res);
        sc.qtr[m..].iter_mut().for_each(|v| *v = 0.0);
        linalg::householder_qr(&mut sc.work, m, n, &mut sc.qtr, &mut self.r);
        // ‖J_j‖ = ‖R_j‖ (Q is orthogonal), and Jᵀ res = Rᵀ (Qᵀ res)[..n].
        let res_norm = rss.sqrt();
        self.max_cos = 0.0;
        for j in 0..n {
            let col = &self.r[j * n..j * n + j + 1];
            let norm = linalg::norm2(col);
            self.col_norm[j] = norm;
            if norm > 0.0 && res_norm > 0.0 {
                let dot = linalg::dot(col, &sc.qtr[..j + 1]);
                self.max_cos = self.max_cos.max(dot.abs() / (norm * res_norm));
            }
            if update_d {
                d[j] = d[j].max(norm);
            } else if d[j] == 0.0 {
                d[j] = norm;
            }
            if d[j] == 0.0 {
                d[j] = 1.0;
            }
            self.r[j * n..(j + 1) * n]
                .iter_mut()
                .for_each(|v| *v /= d[j]);
        }
        if !linalg::jacobi_svd(&mut self.r, n, &mut self.s, &mut self.v) {
            return false;
        }
        // Column j of r is s_j u_j, so g_j = u_jᵀ (Qᵀ res) = (s_j u_j)ᵀ qtr / s_j.
        for j in 0..n {
            let su = linalg::dot(&self.r[j * n..(j + 1) * n], &sc.qtr[..n]);
            self.g[j] = if self.s[j] > 0.0 { su / self.s[j] } else { 0.0 };
        }
        self.max_cos.is_finite() && self.g.iter().all(|v| v.is_finite())
    }

    /// The LM step in original coordinates for damping λ, written into
    /// `step`; returns the predicted reduction of the sum of squares.
    fn step(&self, lambda: f64, d: &[f64], cutoff: f64, step: &mut [f64]) -> f64 {
        let n = self.n;
        step.iter_mut().for_each(|v| *v = 0.0);
        let mut predicted = 0.0;
        for i in 0..n {
            let s = self.s[i];
            if s <= cutoff {
                continue;
            }
            let g = self.g[i];
            let c = s * g / (s * s + lambda);
            let fitted = s * c;
            predicted += g * g - (g - fitted) * (g - fitted);
            for (z, vi) in step.iter_mut().zip(&self.v[i * n..(i + 1) * n]) {
                *z += c * vi;
            }
        }
        for (z, dj) in step.iter_mut().zip(d) {
            *z /= dj;
        }
        predicted
    }

    fn max_singular(&self) -> f64 {
        self.s.iter().cloned().fold(0.0, f64::max)
    }

    /// Singular values at or below this count as zero (truncated SVD).
    fn cutoff(&self) -> f64 {
        self.max_singular() * f64::EPSILON * (self.m.max(self.n) as f64)
    }
}

impl Solver {
    pub fn with_ftol(mut self, v: f64) -> Self {
        self.ftol = v;
        self
    }
    pub fn with_xtol(mut self, v: f64) -> Self {
        self.xtol = v;
        self
    }
    pub fn with_gtol(mut self, v: f64) -> Self {
        self.gtol = v;
        self
    }
    pub fn with_max_iterations(mut self, v: usize) -> Self {
        self.max_iterations = v;
        self
    }

    /// Minimises the problem's sum of squares from `x0`.
    pub fn minimize<P: LeastSquares>(&self, problem: &P, x0: &[f64]) -> Outcome {
        let mut jac = DMatrix::zeros(problem.n_residuals(), problem.n_unknowns());
        self.minimize_with_jacobian(problem, x0, &mut jac)
    }

    /// [`Solver::minimize`], leaving the Jacobian at the returned `x` in
    /// `jac` (`m × n`) unless the start was invalid, so that the caller's
    /// statistics need not evaluate it again.
    pub fn minimize_with_jacobian<P: LeastSquares>(
        &self,
        problem: &P,
        x0: &[f64],
        jac: &mut DMatrix<f64>,
    ) -> Outcome {
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut x = x0.to_vec();
        let mut res = vec![0.0; m];
        let mut trial_res = vec![0.0; m];
        let mut evaluations = 1;
        if jac.shape() != (m, n) {
            *jac = DMatrix::zeros(m, n);
        }
        if x.len() != n
            || !problem.feasible(&x)
            || !problem.residuals_and_jacobian(&x, &mut res, jac)
        {
            return Outcome {
                x,
                rss: f64::NAN,
                termination: Termination::InvalidStart,
                iterations: 0,
                evaluations,
            };
        }
        // Invariant from here on: `jac` is the Jacobian at `x`. Trial points
        // are evaluated together with their Jacobian (one pass over the
        // data, sharing the exponentials); it is swapped in on acceptance.
        let mut trial_jac = DMatrix::zeros(m, n);
        let mut rss = sum_sq(&res);
        let mut d = vec![0.0f64; n];
        let mut lambda = -1.0;
        let mut nu = 2.0;
        let mut iterations = 0;
        let mut termination = Termination::MaxIterations;
        let mut new_point = true;
        let mut lin = Linearisation::new(m, n);
        let mut scratch = Scratch::new(m, n);
        // Whether `lin` holds the factorisation at the current `x`.
        let mut lin_current = false;
        let mut step = vec![0.0; n];
        let mut trial = vec![0.0; n];

        'outer: while iterations < self.max_iterations {
            if rss <= f64::MIN_POSITIVE {
                termination = Termination::ZeroResidual;
                break;
            }
            if new_point {
                lin_current = lin.factor(&mut scratch, jac, &res, rss, &mut d, true);
                if !lin_current {
                    termination = Termination::NoProgress;
                    break;
                }
                // Gradient test: the largest cosine between the residual
                // and a Jacobian column.
                if lin.max_cos <= self.gtol {
                    termination = Termination::SmallGradient;
                    break;
                }
                if lambda < 0.0 {
                    let smax = lin.max_singular();
                    lambda = 1e-3 * smax * smax;
                }
                new_point = false;
            }
            let cutoff = lin.cutoff();
            loop {
                iterations += 1;
                let predicted = lin.step(lambda, &d, cutoff, &mut step);
                for ((t, a), b) in trial.iter_mut().zip(&x).zip(&step) {
                    *t = a + b;
                }
                let scaled_step = scaled_norm(&step, &d);
                let scaled_x = scaled_norm(&x, &d);
                let mut accepted = false;
                if problem.feasible(&trial) {
                    evaluations += 1;
                    if problem.residuals_and_jacobian(&trial, &mut trial_res, &mut trial_jac) {
                        let trial_rss = sum_sq(&trial_res);
                        let actual = rss - trial_rss;
                        let rho = if predicted > 0.0 {
                            actual / predicted
                        } else {
                            -1.0
                        };
                        if rho > 0.0 {
                            accepted = true;
                            let old_rss = rss;
                            std::mem::swap(&mut x, &mut trial);
                            std::mem::swap(&mut res, &mut trial_res);
                            std::mem::swap(jac, &mut trial_jac);
                            lin_current = false;
                            rss = trial_rss;
                            lambda *= (1.0f64 / 3.0).max(1.0 - (2.0 * rho - 1.0).powi(3));
                            nu = 2.0;
                            new_point = true;
                            if actual <= self.ftol * old_rss && predicted <= self.ftol * old_rss {
                                termination = Termination::SmallReduction;
                                break 'outer;
                            }
                        }
                    }
                }
                if scaled_step <= self.xtol * (scaled_x + self.xtol) {
                    termination = Termination::SmallStep;
                    break 'outer;
                }
                if accepted {
                    continue 'outer;
                }
                lambda *= nu;
                nu *= 2.0;
                if !lambda.is_finite() || lambda > 1e300 {
                    termination = Termination::NoProgress;
                    break 'outer;
                }
                if iterations >= self.max_iterations {
                    break 'outer;
                }
            }
        }

        if std::env::var("DBG").is_ok() { eprintln!("LM end {:?} it {} x {:?} rss {:e}", termination, iterations, x, rss); }
        let mut state = PolishState {
            x: &mut x,
            res: &mut res,
            rss: &mut rss,
            jac,
            trial_res: &mut trial_res,
            trial_jac: &mut trial_jac,
        };
        let polished = self.polish(problem, &mut state, &mut lin, &mut scratch, lin_current, &mut d);
        evaluations += polished;
        iterations += polished;
        // NoProgress right at the minimum (every step is below rounding) is
        // convergence; confirm it with the gradient test at a looser level.
        if termination == Termination::NoProgress && max_cosine(jac, &res, rss) <= 1e-8 {
            termination = Termination::SmallGradient;
        }
        Outcome {
            x,
            rss,
            termination,
            iterations,
            evaluations,
        }
    }

    /// Undamped Gauss–Newton steps while they make progress.
    /// `lin_current` says whether `lin` already holds the factorisation at
    /// the current point. Returns the number of evaluations spent.
    ///
    /// A step is taken when it lowers the sum of squares. Close to the
    /// minimum the sum of squares changes only to second order in the step
    /// and its differences drown in rounding (for NIST's Rat42, parameter
    /// changes in the tenth digit move it by less than its last digits), so
    /// a step that leaves it unchanged within `POLISH_RSS_SLACK` is taken
    /// when it at least halves the gradient measure `max |cos|` instead,
    /// which changes to first order and is computed accurately from the
    /// factorisation. Each step must thus make measurable progress, and the
    /// polish ends at `polish_steps`, at a step below rounding, or at the
    /// first step that makes none.
    fn polish<P: LeastSquares>(
        &self,
        problem: &P,
        st: &mut PolishState<'_>,
        lin: &mut Linearisation,
        scratch: &mut Scratch,
        mut lin_current: bool,
        d: &mut [f64],
    ) -> usize {
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut step = vec![0.0; n];
        let mut trial = vec![0.0; n];
        let mut trial_lin: Option<Linearisation> = None;
        let mut spent = 0;
        for _ in 0..self.polish_steps {
            if !lin_current && !lin.factor(scratch, st.jac, st.res, *st.rss, d, false) {
                break;
            }
            let cutoff = lin.cutoff();
            lin.step(0.0, d, cutoff, &mut step);
            for ((t, a), b) in trial.iter_mut().zip(st.x.iter()).zip(&step) {
                *t = a + b;
            }
            if trial == *st.x || !problem.feasible(&trial) {
                break;
            }
            spent += 1;
            if !problem.residuals_and_jacobian(&trial, st.trial_res, st.trial_jac) {
                break;
            }
            let trial_rss = sum_sq(st.trial_res);
            if std::env::var("DBG").is_ok() { eprintln!("polish x {:?} step {:?} rss {:e} trial {:e} cos {:e}", st.x, step, *st.rss, trial_rss, lin.max_cos); }
            let mut trial_factored = false;
            if trial_rss > *st.rss {
                if trial_rss > *st.rss * (1.0 + POLISH_RSS_SLACK) {
                    break;
                }
                let tl = trial_lin.get_or_insert_with(|| Linearisation::new(m, n));
                if !tl.factor(scratch, st.trial_jac, st.trial_res, trial_rss, d, false)
                    || tl.max_cos > 0.5 * lin.max_cos
                {
                    break;
                }
                trial_factored = true;
            }
            let rel_step = scaled_norm(&step, d) / scaled_norm(st.x, d).max(f64::MIN_POSITIVE);
            std::mem::swap(st.x, &mut trial);
            std::mem::swap(st.res, st.trial_res);
            std::mem::swap(st.jac, st.trial_jac);
            *st.rss = trial_rss;
            lin_current = trial_factored;
            if let (true, Some(tl)) = (trial_factored, trial_lin.as_mut()) {
                std::mem::swap(lin, tl);
            }
            if rel_step < 4.0 * f64::EPSILON {
                break;
            }
        }
        spent
    }
}

/// How far above the current sum of squares (relative) a polish step may
/// land and still be judged by the gradient: `√ε`, far above the rounding
/// of a sum of squares and far below any real increase a Gauss–Newton step
/// near a minimum could make.
const POLISH_RSS_SLACK: f64 = 1.5e-8;

/// The solver's state handed to the polish.
struct PolishState<'a> {
    x: &'a mut Vec<f64>,
    res: &'a mut Vec<f64>,
    rss: &'a mut f64,
    jac: &'a mut DMatrix<f64>,
    trial_res: &'a mut Vec<f64>,
    trial_jac: &'a mut DMatrix<f64>,
}

/// The largest |cosine| between the residual vector and a column of `jac`.
fn max_cosine(jac: &DMatrix<f64>, res: &[f64], rss: f64) -> f64 {
    let res_norm = rss.sqrt();
    if res_norm == 0.0 {
        return 0.0;
    }
    let mut max_cos: f64 = 0.0;
    for j in 0..jac.ncols() {
        let col_norm = jac.column(j).norm();
        if col_norm > 0.0 {
            let dot: f64 = jac.column(j).iter().zip(res).map(|(a, b)| a * b).sum();
            max_cos = max_cos.max(dot.abs() / (col_norm * res_norm));
        }
    }
    max_cos
}

fn sum_sq(v: &[f64]) -> f64 {
    v.iter().map(|r| r * r).sum()
}

fn scaled_norm(v: &[f64], d: &[f64]) -> f64 {
    v.iter()
        .zip(d)
        .map(|(a, b)| (a * b) * (a * b))
        .sum::<f64>()
        .sqrt()
}
