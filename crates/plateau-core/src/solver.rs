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

use nalgebra::{DMatrix, DVector};

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
/// undamped steps are cheap for any λ.
struct Linearisation {
    /// Singular values.
    s: DVector<f64>,
    /// `V` of the SVD (scaled coordinates).
    v: DMatrix<f64>,
    /// `g = Uᵀ Qᵀ res`.
    g: DVector<f64>,
}

impl Linearisation {
    fn new(jac: &DMatrix<f64>, res: &[f64], d: &[f64]) -> Option<Linearisation> {
        let n = jac.ncols();
        let mut scaled = jac.clone();
        for (j, dj) in d.iter().enumerate() {
            scaled.column_mut(j).unscale_mut(*dj);
        }
        let qr = scaled.qr();
        let mut qtr = DVector::from_column_slice(res);
        qr.q_tr_mul(&mut qtr);
        let r = qr.r();
        let svd = r.svd(true, true);
        let u = svd.u?;
        let v_t = svd.v_t?;
        let g = u.transpose() * qtr.rows(0, n);
        Some(Linearisation {
            s: svd.singular_values,
            v: v_t.transpose(),
            g,
        })
    }

    /// The LM step in original coordinates for damping λ, and the predicted
    /// reduction of the sum of squares.
    fn step(&self, lambda: f64, d: &[f64], cutoff: f64) -> (Vec<f64>, f64) {
        let n = self.s.len();
        let mut coef = DVector::zeros(n);
        let mut predicted = 0.0;
        for i in 0..n {
            let s = self.s[i];
            if s <= cutoff {
                continue;
            }
            let c = s * self.g[i] / (s * s + lambda);
            coef[i] = c;
            let fitted = s * c;
            predicted += self.g[i] * self.g[i] - (self.g[i] - fitted) * (self.g[i] - fitted);
        }
        let scaled = &self.v * coef;
        let step = scaled.iter().zip(d).map(|(z, dj)| z / dj).collect();
        (step, predicted)
    }

    fn max_singular(&self) -> f64 {
        self.s.iter().cloned().fold(0.0, f64::max)
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
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut x = x0.to_vec();
        let mut res = vec![0.0; m];
        let mut trial_res = vec![0.0; m];
        let mut evaluations = 1;
        if x.len() != n || !problem.feasible(&x) || !problem.residuals(&x, &mut res) {
            return Outcome {
                x,
                rss: f64::NAN,
                termination: Termination::InvalidStart,
                iterations: 0,
                evaluations,
            };
        }
        let mut rss = sum_sq(&res);
        let mut jac = DMatrix::zeros(m, n);
        let mut d = vec![0.0f64; n];
        let mut lambda = -1.0;
        let mut nu = 2.0;
        let mut iterations = 0;
        let mut termination = Termination::MaxIterations;
        let mut new_point = true;
        let mut lin: Option<Linearisation> = None;

        'outer: while iterations < self.max_iterations {
            if rss <= f64::MIN_POSITIVE {
                termination = Termination::ZeroResidual;
                break;
            }
            if new_point {
                problem.jacobian(&x, &mut jac);
                for (j, dj) in d.iter_mut().enumerate() {
                    let norm = jac.column(j).norm();
                    *dj = dj.max(norm);
                    if *dj == 0.0 {
                        *dj = 1.0;
                    }
                }
                lin = Linearisation::new(&jac, &res, &d);
                let Some(l) = &lin else {
                    termination = Termination::NoProgress;
                    break;
                };
                // Gradient test: the largest cosine between the residual
                // and a Jacobian column.
                let max_cos = max_cosine(&jac, &res, rss);
                if max_cos <= self.gtol {
                    termination = Termination::SmallGradient;
                    break;
                }
                if lambda < 0.0 {
                    let smax = l.max_singular();
                    lambda = 1e-3 * smax * smax;
                }
                new_point = false;
            }
            let l = lin
                .as_ref()
                .expect("linearisation exists after a new point");
            let cutoff = l.max_singular() * f64::EPSILON * (m.max(n) as f64);
            loop {
                iterations += 1;
                let (step, predicted) = l.step(lambda, &d, cutoff);
                let trial: Vec<f64> = x.iter().zip(&step).map(|(a, b)| a + b).collect();
                let scaled_step = scaled_norm(&step, &d);
                let scaled_x = scaled_norm(&x, &d);
                let mut accepted = false;
                if problem.feasible(&trial) {
                    evaluations += 1;
                    if problem.residuals(&trial, &mut trial_res) {
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
                            x = trial;
                            std::mem::swap(&mut res, &mut trial_res);
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

        let polished = self.polish(problem, &mut x, &mut res, &mut rss, &mut jac, &d);
        evaluations += polished;
        iterations += polished;
        // NoProgress right at the minimum (every step is below rounding) is
        // convergence; confirm it with the gradient test at a looser level.
        if termination == Termination::NoProgress && {
            problem.jacobian(&x, &mut jac);
            max_cosine(&jac, &res, rss) <= 1e-8
        } {
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

    /// Undamped Gauss–Newton steps while they lower the sum of squares.
    /// Returns the number of evaluations spent.
    fn polish<P: LeastSquares>(
        &self,
        problem: &P,
        x: &mut Vec<f64>,
        res: &mut Vec<f64>,
        rss: &mut f64,
        jac: &mut DMatrix<f64>,
        d: &[f64],
    ) -> usize {
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut trial_res = vec![0.0; m];
        let mut spent = 0;
        for _ in 0..self.polish_steps {
            problem.jacobian(x, jac);
            let Some(lin) = Linearisation::new(jac, res, d) else {
                break;
            };
            let cutoff = lin.max_singular() * f64::EPSILON * (m.max(n) as f64);
            let (step, _) = lin.step(0.0, d, cutoff);
            let trial: Vec<f64> = x.iter().zip(&step).map(|(a, b)| a + b).collect();
            if trial == *x || !problem.feasible(&trial) {
                break;
            }
            spent += 1;
            if !problem.residuals(&trial, &mut trial_res) {
                break;
            }
            let trial_rss = sum_sq(&trial_res);
            if trial_rss > *rss {
                break;
            }
            let rel_step = scaled_norm(&step, d) / scaled_norm(x, d).max(f64::MIN_POSITIVE);
            *x = trial;
            std::mem::swap(res, &mut trial_res);
            *rss = trial_rss;
            if rel_step < 4.0 * f64::EPSILON {
                break;
            }
        }
        spent
    }
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
