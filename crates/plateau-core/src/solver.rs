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
//! to the units of the parameters. The damped system is solved from
//! `R D⁻¹`, where `J = Q R` is a Householder QR computed once per point
//! (every λ trial then costs only O(n²) or O(n³) work on the small
//! triangle): through its SVD at the first point and whenever the triangle
//! is not safely well-conditioned, else by Givens rotations of
//! `[R D⁻¹; √λ I]` (see `Linearisation`). The normal equations `JᵀJ` are
//! never formed, so their squared condition number never costs precision.
//! λ follows Nielsen's (1999) update from the gain ratio. Trial points are
//! evaluated with their Jacobian in one pass
//! ([`LeastSquares::residuals_and_jacobian`]); a step whose predicted
//! reduction is below the rounding of the sum of squares is not evaluated.
//!
//! Feasibility (for example K > 0) is kept by rejecting infeasible trial
//! steps as if they had increased the sum of squares: the damping grows and
//! the step shrinks towards the feasible region, so no parameter is ever
//! clipped to a bound.
//!
//! After LM stops, undamped Gauss–Newton steps (a truncated-SVD or
//! triangular solve) are taken while they make progress: while they lower
//! the sum of squares, or, where its differences are rounding noise, while
//! they at least halve the gradient (see `Solver::polish`). This brings the
//! estimates to full double precision at little cost; a last step after
//! which the next would be in the thirteenth digit or beyond is taken
//! without a further pass over the data (see `POLISH_FINAL_STEP`).

use crate::linalg::{self, SmallVec};
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
    /// Whether [`LeastSquares::rows_and_jacobian`] is implemented, so that
    /// a long problem can be solved without holding its whole Jacobian
    /// (see [`STREAM_ABOVE`]).
    fn streams(&self) -> bool {
        false
    }
    /// Writes the residuals and Jacobian rows of the residuals `rows` only:
    /// `res` has `rows.len()` entries, `jac` is column-major
    /// `rows.len() × n`. Returns `false` if any residual is not finite.
    /// Called only when [`LeastSquares::streams`] says so.
    fn rows_and_jacobian(
        &self,
        _x: &[f64],
        _rows: std::ops::Range<usize>,
        _res: &mut [f64],
        _jac: &mut [f64],
    ) -> bool {
        false
    }
}

/// Problems with more residuals than this whose rows can be evaluated a
/// block at a time ([`LeastSquares::streams`]) are solved without storing
/// their Jacobian or residuals: each evaluation reduces the Jacobian to its
/// triangle `R` and `Qᵀ res` block by block ([`STREAM_BLOCK`] rows), by a
/// Householder QR of the triangle so far stacked on the next block. That
/// is the same factorisation (up to the signs of `R`'s rows, which `Qᵀ res`
/// shares) in another order of rounding, and needs memory for one block
/// instead of two `m × n` Jacobians and two residual vectors. It is also
/// faster on long series: the blocks stay in cache, and no solve (the
/// profile's refits are dozens) allocates and zeroes buffers of `m` rows.
/// At 100,000 points the estimates agree with the whole-Jacobian path to
/// the last digit and the intervals to about 1e-15 (relative).
pub const STREAM_ABOVE: usize = 1 << 14;

/// Rows per block of the streamed factorisation.
const STREAM_BLOCK: usize = 1024;

/// A point's Jacobian as the solver keeps it: whole, for the Householder QR
/// of [`Linearisation::factor`], or, for a long problem, already reduced to
/// its triangle while it was evaluated (see [`STREAM_ABOVE`]).
enum Jacobian {
    Dense(DMatrix<f64>),
    Reduced(Box<Reduced>),
}

/// The triangle `R` (column-major `n × n`) and the first `n` entries of
/// `Qᵀ res` of a streamed Jacobian, and the scratch of one block.
struct Reduced {
    n: usize,
    r: SmallVec,
    qtr: SmallVec,
    /// The stacked `[R; J_block]`, column-major, and its right side.
    stack: Vec<f64>,
    rhs: Vec<f64>,
    /// One block of the problem's residuals and Jacobian.
    res: Vec<f64>,
    jac: Vec<f64>,
}

impl Jacobian {
    fn new(m: usize, n: usize, streamed: bool) -> Jacobian {
        if !streamed {
            return Jacobian::Dense(DMatrix::zeros(m, n));
        }
        let rows = STREAM_BLOCK + n;
        Jacobian::Reduced(Box::new(Reduced {
            n,
            r: SmallVec::zeros(n * n),
            qtr: SmallVec::zeros(n),
            stack: vec![0.0; rows * n],
            rhs: vec![0.0; rows],
            res: vec![0.0; STREAM_BLOCK],
            jac: vec![0.0; STREAM_BLOCK * n],
        }))
    }

    /// Evaluates the problem at `x` into `res` (dense) or into the
    /// triangle (streamed; `res` is then unused); the sum of squares of
    /// the residuals, or `None` when one is not finite.
    fn evaluate<P: LeastSquares>(
        &mut self,
        problem: &P,
        x: &[f64],
        res: &mut [f64],
    ) -> Option<f64> {
        match self {
            Jacobian::Dense(jac) => problem
                .residuals_and_jacobian(x, res, jac)
                .then(|| sum_sq(res)),
            Jacobian::Reduced(red) => red.evaluate(problem, x),
        }
    }
}

impl Reduced {
    fn evaluate<P: LeastSquares>(&mut self, problem: &P, x: &[f64]) -> Option<f64> {
        let n = self.n;
        let m = problem.n_residuals();
        self.r.iter_mut().for_each(|v| *v = 0.0);
        self.qtr.iter_mut().for_each(|v| *v = 0.0);
        let mut rss = 0.0;
        let mut start = 0;
        while start < m {
            let len = STREAM_BLOCK.min(m - start);
            let (res, jac) = (&mut self.res[..len], &mut self.jac[..len * n]);
            if !problem.rows_and_jacobian(x, start..start + len, res, jac) {
                return None;
            }
            rss += sum_sq(res);
            // [R; J_block] with its right side [Qᵀ res so far; res_block].
            let rows = n + len;
            for j in 0..n {
                let col = &mut self.stack[j * rows..(j + 1) * rows];
                col[..n].copy_from_slice(&self.r[j * n..(j + 1) * n]);
                col[n..].copy_from_slice(&jac[j * len..(j + 1) * len]);
            }
            self.rhs[..n].copy_from_slice(&self.qtr);
            self.rhs[n..rows].copy_from_slice(res);
            linalg::householder_qr(
                &mut self.stack[..rows * n],
                rows,
                n,
                0,
                &mut self.rhs[..rows],
                &mut self.r,
            );
            self.qtr.copy_from_slice(&self.rhs[..n]);
            start += len;
        }
        Some(rss)
    }
}

/// Why the solver stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
#[non_exhaustive]
pub enum Termination {
    /// Both the actual and the predicted relative reduction of the sum of
    /// squares fell below `ftol` (or the predicted one fell below the sum's
    /// rounding, where the actual one cannot be measured).
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
    /// The first damping, relative to the largest squared singular value
    /// of the scaled Jacobian at the start: `λ₀ = initial_damping · s_max²`.
    /// The usual 10⁻³ is cautious far from the minimum; a start known to
    /// be close (see `fit`'s presolve) takes a smaller value, so that the
    /// first steps are nearly Gauss–Newton steps.
    pub initial_damping: f64,
}

impl Default for Solver {
    fn default() -> Self {
        Solver {
            ftol: 1e-12,
            xtol: 1e-12,
            gtol: 1e-12,
            max_iterations: 500,
            polish_steps: 20,
            initial_damping: 1e-3,
        }
    }
}

/// The solver's result.
#[derive(Debug, Clone)]
pub struct Outcome {
    pub x: Vec<f64>,
    pub rss: f64,
    pub termination: Termination,
    /// LM iterations (accepted or rejected steps) plus evaluated polish
    /// steps (the polish's last step, when taken without evaluation, is
    /// not counted).
    pub iterations: usize,
    /// Residual evaluations.
    pub evaluations: usize,
}

impl Outcome {
    pub fn converged(&self) -> bool {
        self.termination.is_converged()
    }
}

/// The factorisation of the Jacobian at one point, from which the step for
/// any damping λ is cheap. All buffers are allocated once per solve and
/// reused at every point.
///
/// `J = Q R` (Householder) gives the scaled triangle `R D⁻¹` and `Qᵀ res`.
/// Its SVD `R D⁻¹ = U S Vᵀ` is taken at the first point (λ starts from the
/// largest singular value) and whenever `R D⁻¹` is not safely
/// well-conditioned; steps then come from the truncated SVD, which drops
/// directions below rounding. Otherwise no singular value can fall below
/// the truncation threshold, the truncated and the full solution coincide,
/// and the step is solved from the triangle directly: by back-substitution
/// for λ = 0, and for λ > 0 by Givens rotations of `[R D⁻¹; √λ I]` to
/// triangular form (as MINPACK's `qrsolv`), which costs a fraction of an SVD.
struct Linearisation {
    m: usize,
    n: usize,
    /// `R` itself, upper triangular (column-major `n × n`).
    r_raw: SmallVec,
    /// `R D⁻¹`.
    r: SmallVec,
    /// The first `n` entries of `Qᵀ res`.
    qtr: SmallVec,
    /// Whether the SVD below belongs to this point.
    has_svd: bool,
    /// The columns `s_j u_j` of the SVD (scratch of the Jacobi iteration).
    us: SmallVec,
    /// Singular values of `R D⁻¹` (of the last point that had an SVD).
    s: SmallVec,
    /// `V` of the SVD (scaled coordinates), column-major.
    v: SmallVec,
    /// `g = Uᵀ Qᵀ res`.
    g: SmallVec,
    /// Scratch of the Givens solve: the rotated triangle, row and right side.
    work: SmallVec,
    row: SmallVec,
    rhs: SmallVec,
    /// The largest |cosine| between the residual and a Jacobian column.
    max_cos: f64,
}

/// Scratch space of [`Linearisation::factor`].
struct Scratch {
    /// `res`, overwritten by `Qᵀ res`.
    qtr: Vec<f64>,
}

impl Scratch {
    fn new(m: usize) -> Scratch {
        Scratch {
            qtr: Vec::with_capacity(m),
        }
    }
}

impl Linearisation {
    fn new(m: usize, n: usize) -> Linearisation {
        Linearisation {
            m,
            n,
            r_raw: SmallVec::zeros(n * n),
            r: SmallVec::zeros(n * n),
            qtr: SmallVec::zeros(n),
            has_svd: false,
            us: SmallVec::zeros(n * n),
            s: SmallVec::zeros(n),
            v: SmallVec::zeros(n * n),
            g: SmallVec::zeros(n),
            work: SmallVec::zeros(n * n),
            row: SmallVec::zeros(n),
            rhs: SmallVec::zeros(n),
            max_cos: 0.0,
        }
    }

    /// Factorises `jac` in place (the Jacobian at the point with residuals
    /// `res` and sum of squares `rss`; its contents are destroyed): one
    /// Householder QR `J = Q R`, scaled to
    /// `R D⁻¹` (`D` column scaling, as `J D⁻¹ = Q R D⁻¹`), and its SVD when
    /// `want_svd` or when it may be needed (see the type's docs).
    ///
    /// With `update_d`, `D` first takes the larger of its entries and the
    /// current column norms (Moré's scaling); otherwise only zero entries
    /// are filled. Returns `false` when the factorisation is not finite.
    #[allow(clippy::too_many_arguments)]
    fn factor(
        &mut self,
        sc: &mut Scratch,
        jac: &mut Jacobian,
        res: &[f64],
        rss: f64,
        d: &mut [f64],
        update_d: bool,
        want_svd: bool,
    ) -> bool {
        let (m, n) = (self.m, self.n);
        match jac {
            Jacobian::Dense(jac) => {
                sc.qtr.clear();
                sc.qtr.extend_from_slice(res);
                linalg::householder_qr(jac.as_mut_slice(), m, n, 0, &mut sc.qtr, &mut self.r_raw);
                for (i, q) in self.qtr.iter_mut().enumerate() {
                    // Rows past m (when m < n) are zero.
                    *q = sc.qtr.get(i).copied().unwrap_or(0.0);
                }
            }
            Jacobian::Reduced(red) => {
                self.r_raw.copy_from_slice(&red.r);
                self.qtr.copy_from_slice(&red.qtr);
            }
        }
        self.r.copy_from_slice(&self.r_raw);
        // ‖J_j‖ = ‖R_j‖ (Q is orthogonal), and Jᵀ res = Rᵀ (Qᵀ res)[..n].
        let res_norm = rss.sqrt();
        self.max_cos = 0.0;
        for (j, dj) in d.iter_mut().enumerate().take(n) {
            let col = &self.r[j * n..j * n + j + 1];
            let norm = linalg::norm2(col);
            if norm > 0.0 && res_norm > 0.0 {
                let dot = linalg::dot(col, &self.qtr[..j + 1]);
                self.max_cos = self.max_cos.max(dot.abs() / (norm * res_norm));
            }
            if update_d {
                *dj = dj.max(norm);
            } else if *dj == 0.0 {
                *dj = norm;
            }
            if *dj == 0.0 {
                *dj = 1.0;
            }
            let dj = *dj;
            self.r[j * n..(j + 1) * n].iter_mut().for_each(|v| *v /= dj);
        }
        if !(self.max_cos.is_finite() && self.qtr.iter().all(|v| v.is_finite())) {
            return false;
        }
        self.has_svd = false;
        if want_svd || !self.safely_conditioned() {
            self.us.copy_from_slice(&self.r);
            if !linalg::jacobi_svd(&mut self.us, n, &mut self.s, &mut self.v) {
                return false;
            }
            // Column j of us is s_j u_j, so g_j = u_jᵀ (Qᵀ res).
            for j in 0..n {
                let su = linalg::dot(&self.us[j * n..(j + 1) * n], &self.qtr);
                self.g[j] = if self.s[j] > 0.0 { su / self.s[j] } else { 0.0 };
            }
            self.has_svd = true;
            return self.g.iter().all(|v| v.is_finite());
        }
        true
    }

    /// Whether no singular value of `R D⁻¹` can be below the truncation
    /// threshold `s_max ε max(m, n)`: the 1-norm condition number of the
    /// triangle (from its explicit inverse, n³/6 operations) bounds the
    /// 2-norm one, `κ₂ ≤ n κ₁`, and is kept a factor 1000 inside the
    /// threshold so that rounding in the estimate cannot matter.
    fn safely_conditioned(&self) -> bool {
        let n = self.n;
        let r = &self.r;
        if n > 4 {
            return false;
        }
        // X = R⁻¹, upper triangular, column by column.
        let mut x = [0.0f64; 16];
        let (mut norm_r, mut norm_x) = (0.0f64, 0.0f64);
        for j in 0..n {
            x[j * n + j] = 1.0 / r[j * n + j];
            for i in (0..j).rev() {
                let mut acc = 0.0;
                for k in i + 1..=j {
                    acc += r[k * n + i] * x[j * n + k];
                }
                x[j * n + i] = -acc / r[i * n + i];
            }
            norm_r = norm_r.max((0..=j).map(|i| r[j * n + i].abs()).sum());
            norm_x = norm_x.max((0..=j).map(|i| x[j * n + i].abs()).sum());
        }
        let kappa = n as f64 * norm_r * norm_x;
        kappa.is_finite() && kappa * f64::EPSILON * (self.m.max(n) as f64) < 1e-3
    }

    /// The LM step in original coordinates for damping λ, written into
    /// `step`; returns the predicted reduction of the sum of squares.
    fn step(&mut self, lambda: f64, d: &[f64], step: &mut [f64]) -> f64 {
        let n = self.n;
        step.iter_mut().for_each(|v| *v = 0.0);
        let predicted = if self.has_svd {
            let cutoff = self.max_singular() * f64::EPSILON * (self.m.max(n) as f64);
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
            predicted
        } else {
            self.solve_triangle(lambda, step);
            // ‖Qᵀres‖² − ‖Qᵀres − R D⁻¹ z‖² over the first n rows.
            let mut predicted = 0.0;
            for i in 0..n {
                let fitted: f64 = (i..n).map(|j| self.r[j * n + i] * step[j]).sum();
                let g = self.qtr[i];
                predicted += g * g - (g - fitted) * (g - fitted);
            }
            predicted
        };
        for (z, dj) in step.iter_mut().zip(d) {
            *z /= dj;
        }
        predicted
    }

    /// `z` minimising `‖R D⁻¹ z − (Qᵀres)[..n]‖² + λ ‖z‖²`, for a
    /// nonsingular triangle.
    fn solve_triangle(&mut self, lambda: f64, z: &mut [f64]) {
        let n = self.n;
        let (w, b) = (&mut self.work, &mut self.rhs);
        w.copy_from_slice(&self.r);
        b.copy_from_slice(&self.qtr);
        if lambda > 0.0 {
            // Rotate each row √λ eⱼᵀ of the damping block into the triangle.
            let sq = lambda.sqrt();
            for j in 0..n {
                let row = &mut self.row;
                row.iter_mut().for_each(|v| *v = 0.0);
                row[j] = sq;
                let mut extra = 0.0;
                for k in j..n {
                    if row[k] == 0.0 {
                        continue;
                    }
                    // The rotation that zeroes row[k] against w[k][k],
                    // without overflow (MINPACK's form).
                    let (a, bk) = (w[k * n + k], row[k]);
                    let (c, s) = if a.abs() < bk.abs() {
                        let cot = a / bk;
                        let s = 0.5 / (0.25 + 0.25 * cot * cot).sqrt();
                        (s * cot, s)
                    } else {
                        let tan = bk / a;
                        let c = 0.5 / (0.25 + 0.25 * tan * tan).sqrt();
                        (c, c * tan)
                    };
                    for l in k..n {
                        let (x, y) = (w[l * n + k], row[l]);
                        w[l * n + k] = c * x + s * y;
                        row[l] = -s * x + c * y;
                    }
                    let (x, y) = (b[k], extra);
                    b[k] = c * x + s * y;
                    extra = -s * x + c * y;
                }
            }
        }
        for i in (0..n).rev() {
            let acc: f64 = (i + 1..n).map(|j| w[j * n + i] * z[j]).sum();
            z[i] = (b[i] - acc) / w[i * n + i];
        }
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
    pub fn with_initial_damping(mut self, v: f64) -> Self {
        self.initial_damping = v;
        self
    }

    /// Minimises the problem's sum of squares from `x0`.
    pub fn minimize<P: LeastSquares>(&self, problem: &P, x0: &[f64]) -> Outcome {
        self.minimize_factored(problem, x0, &mut Vec::new())
    }

    /// [`Solver::minimize`], also writing the triangular factor `R` of the
    /// Jacobian (`J = Q R`, column-major `n × n`) into `r`, so that the
    /// caller's statistics need neither the Jacobian nor its factorisation
    /// again; `r` is left empty when there is none (an invalid start, or a
    /// factorisation that was not finite). `R` is the factor at the
    /// returned `x`, or, when the polish's last step was taken without
    /// evaluation, at the point that step started from, below 10⁻⁹ away
    /// (relative; see `POLISH_UNEVALUATED_MAX`); the returned `rss` is that
    /// point's too, equal to the final one's within rounding.
    pub(crate) fn minimize_factored<P: LeastSquares>(
        &self,
        problem: &P,
        x0: &[f64],
        r: &mut Vec<f64>,
    ) -> Outcome {
        r.clear();
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut x = x0.to_vec();
        let streamed = m > STREAM_ABOVE && problem.streams();
        let stored = if streamed { 0 } else { m };
        let mut res = vec![0.0; stored];
        let mut trial_res = vec![0.0; stored];
        let mut evaluations = 1;
        let mut jac_buf = Jacobian::new(m, n, streamed);
        let jac = &mut jac_buf;
        let first = if x.len() == n && problem.feasible(&x) {
            jac.evaluate(problem, &x, &mut res)
        } else {
            None
        };
        let Some(mut rss) = first else {
            return Outcome {
                x,
                rss: f64::NAN,
                termination: Termination::InvalidStart,
                iterations: 0,
                evaluations,
            };
        };
        // Invariant from here on: `jac` is the Jacobian at `x`, or `lin`
        // holds its factorisation (which overwrote it). Trial points are
        // evaluated together with their Jacobian (one pass over the data,
        // sharing the exponentials); it is swapped in on acceptance.
        let mut trial_jac = Jacobian::new(m, n, streamed);
        let mut d = SmallVec::zeros(n);
        let mut lambda = -1.0;
        let mut nu = 2.0;
        let mut iterations = 0;
        let mut termination = Termination::MaxIterations;
        let mut new_point = true;
        let mut lin = Linearisation::new(m, n);
        let mut scratch = Scratch::new(stored);
        // Whether `lin` holds the factorisation at the current `x`, and
        // whether `jac` still holds the Jacobian (factor overwrites it).
        let mut lin_current = false;
        let mut jac_intact = true;
        let mut step = SmallVec::zeros(n);
        let mut trial = vec![0.0; n];
        // The size of the Gauss–Newton step from the point the last
        // accepted step started at, relative to the parameters (scaled
        // norms), for the polish's estimate of how fast steps shrink. The
        // undamped step, not the one taken: a damped step says nothing of
        // how far the minimum was. Infinite until a step is accepted.
        let mut last_rel_step = f64::INFINITY;
        let mut gn_step = SmallVec::zeros(n);

        'outer: while iterations < self.max_iterations {
            if rss <= f64::MIN_POSITIVE {
                termination = Termination::ZeroResidual;
                break;
            }
            if new_point {
                jac_intact = false;
                lin_current = lin.factor(&mut scratch, jac, &res, rss, &mut d, true, lambda < 0.0);
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
                    lambda = self.initial_damping * smax * smax;
                }
                new_point = false;
            }
            loop {
                iterations += 1;
                let predicted = lin.step(lambda, &d, &mut step);
                if predicted.abs() <= f64::EPSILON * rss && predicted <= self.ftol * rss {
                    // The step can change the sum of squares by less than
                    // its last digit: the acceptance test would judge
                    // rounding noise. Converged as far as the sum of squares
                    // can tell; the polish continues on the gradient.
                    termination = Termination::SmallReduction;
                    break 'outer;
                }
                for ((t, a), b) in trial.iter_mut().zip(&x).zip(step.iter()) {
                    *t = a + b;
                }
                let scaled_step = scaled_norm(&step, &d);
                let scaled_x = scaled_norm(&x, &d);
                let mut accepted = false;
                if problem.feasible(&trial) {
                    evaluations += 1;
                    if let Some(trial_rss) = trial_jac.evaluate(problem, &trial, &mut trial_res) {
                        let actual = rss - trial_rss;
                        let rho = if predicted > 0.0 {
                            actual / predicted
                        } else {
                            -1.0
                        };
                        if rho > 0.0 {
                            accepted = true;
                            lin.step(0.0, &d, &mut gn_step);
                            last_rel_step =
                                scaled_norm(&gn_step, &d) / scaled_x.max(f64::MIN_POSITIVE);
                            let old_rss = rss;
                            std::mem::swap(&mut x, &mut trial);
                            std::mem::swap(&mut res, &mut trial_res);
                            std::mem::swap(jac, &mut trial_jac);
                            lin_current = false;
                            jac_intact = true;
                            rss = trial_rss;
                            lambda *= (1.0f64 / 3.0).max(1.0 - (2.0 * rho - 1.0).powi(3));
                            nu = 2.0;
                            new_point = true;
                            if actual <= self.ftol * old_rss && predicted <= self.ftol * old_rss {
                                termination = Termination::SmallReduction;
                                break 'outer;
                            }
                        } else if actual.abs() <= self.ftol * rss && predicted <= self.ftol * rss {
                            // A rejected step whose predicted and actual
                            // changes are both below ftol (as in MINPACK's
                            // test, which takes |actual|): the sum of
                            // squares cannot be lowered measurably any more,
                            // and more damping would only spend evaluations
                            // on rounding noise.
                            termination = Termination::SmallReduction;
                            break 'outer;
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

        let mut state = PolishState {
            x: &mut x,
            res: &mut res,
            rss: &mut rss,
            jac,
            jac_intact: &mut jac_intact,
            trial_res: &mut trial_res,
            trial_jac: &mut trial_jac,
            last_rel_step,
        };
        let (polished, mut lin_current) = self.polish(
            problem,
            &mut state,
            &mut lin,
            &mut scratch,
            lin_current,
            &mut d,
        );
        evaluations += polished;
        iterations += polished;
        if !lin_current && jac_intact {
            lin_current = lin.factor(&mut scratch, jac, &res, rss, &mut d, false, false);
        }
        if lin_current {
            r.extend_from_slice(&lin.r_raw);
        }
        // NoProgress right at the minimum (every step is below rounding) is
        // convergence; confirm it with the gradient test at a looser level.
        if termination == Termination::NoProgress && lin_current && lin.max_cos <= 1e-8 {
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
    /// the current point. Returns the number of evaluations spent and
    /// whether `lin` holds the factorisation at the final point.
    ///
    /// A step is taken when it lowers the sum of squares. Close to the
    /// minimum the sum of squares changes only to second order in the step
    /// and its differences drown in rounding (for NIST's Rat42, parameter
    /// changes in the tenth digit move it by less than its last digits), so
    /// a step that leaves it unchanged within `POLISH_RSS_SLACK` is taken
    /// when it at least halves the gradient measure `max |cos|` instead,
    /// which changes to first order and is computed accurately from the
    /// factorisation. Each step must thus make measurable progress, and the
    /// polish ends at `polish_steps`, at a step below rounding, at a step
    /// after which the next would be below [`POLISH_FINAL_STEP`] (taken
    /// without evaluation; `lin` then holds the factorisation of the point
    /// before it), or at the first step that makes none.
    fn polish<P: LeastSquares>(
        &self,
        problem: &P,
        st: &mut PolishState<'_>,
        lin: &mut Linearisation,
        scratch: &mut Scratch,
        mut lin_current: bool,
        d: &mut [f64],
    ) -> (usize, bool) {
        let m = problem.n_residuals();
        let n = problem.n_unknowns();
        let mut step = SmallVec::zeros(n);
        let mut trial = vec![0.0; n];
        let mut trial_lin: Option<Linearisation> = None;
        let mut spent = 0;
        for _ in 0..self.polish_steps {
            if !lin_current {
                if !*st.jac_intact {
                    break;
                }
                *st.jac_intact = false;
                if !lin.factor(scratch, st.jac, st.res, *st.rss, d, false, false) {
                    break;
                }
                lin_current = true;
            }
            lin.step(0.0, d, &mut step);
            for ((t, a), b) in trial.iter_mut().zip(st.x.iter()).zip(step.iter()) {
                *t = a + b;
            }
            let rel_step = scaled_norm(&step, d) / scaled_norm(st.x, d).max(f64::MIN_POSITIVE);
            // A correction below rounding: the estimate is final.
            if rel_step < 4.0 * f64::EPSILON || trial == *st.x || !problem.feasible(&trial) {
                break;
            }
            // A correction after which the next one would be in the last few
            // digits: taken, and final, without another pass over the data
            // (see `POLISH_FINAL_STEP`). Without an earlier step to compare
            // with, nothing is known of the rate: the next step is taken to
            // be as large as this one.
            let shrink = if st.last_rel_step.is_finite() {
                (rel_step / st.last_rel_step).min(1.0)
            } else {
                1.0
            };
            if rel_step < POLISH_UNEVALUATED_MAX && rel_step * shrink < POLISH_FINAL_STEP {
                std::mem::swap(st.x, &mut trial);
                break;
            }
            st.last_rel_step = rel_step;
            spent += 1;
            let Some(trial_rss) = st.trial_jac.evaluate(problem, &trial, st.trial_res) else {
                break;
            };
            let mut trial_factored = false;
            if trial_rss > *st.rss {
                if trial_rss > *st.rss * (1.0 + POLISH_RSS_SLACK) {
                    break;
                }
                let tl = trial_lin.get_or_insert_with(|| Linearisation::new(m, n));
                if !tl.factor(
                    scratch,
                    st.trial_jac,
                    st.trial_res,
                    trial_rss,
                    d,
                    false,
                    false,
                ) || tl.max_cos > 0.5 * lin.max_cos
                {
                    break;
                }
                trial_factored = true;
            }
            std::mem::swap(st.x, &mut trial);
            std::mem::swap(st.res, st.trial_res);
            std::mem::swap(st.jac, st.trial_jac);
            // The trial's Jacobian is intact unless the gradient test just
            // factorised it (and then `lin` below holds that factorisation).
            *st.jac_intact = !trial_factored;
            *st.rss = trial_rss;
            lin_current = trial_factored;
            if let (true, Some(tl)) = (trial_factored, trial_lin.as_mut()) {
                std::mem::swap(lin, tl);
            }
        }
        (spent, lin_current)
    }
}

/// How far above the current sum of squares (relative) a polish step may
/// land and still be judged by the gradient: `√ε`, far above the rounding
/// of a sum of squares and far below any real increase a Gauss–Newton step
/// near a minimum could make.
const POLISH_RSS_SLACK: f64 = 1.5e-8;

/// A polish step after which the next step is expected to be smaller than
/// this, relative to the parameters (in the scaled norm), is applied
/// without evaluating the point it leads to, and ends the polish (when the
/// step itself is below [`POLISH_UNEVALUATED_MAX`]).
///
/// Gauss–Newton converges linearly near a minimum with nonzero residuals:
/// each step is about a fixed fraction `c` of the one before, plus a
/// second-order term that shrinks faster. The ratio of the step to the one
/// before it (at most 1) therefore estimates `c` from above, and step ×
/// ratio the next step. When that is below 10⁻¹³, the estimate after the
/// step is within about 10⁻¹³ of the minimum (relative, in the scaled norm
/// of the whole vector; a parameter that is small in that norm, such as
/// Richards' ν, within about 10⁻¹² of itself), and the pass over the data
/// that would only confirm digits beyond that is saved. On the bench's
/// n = 1000 logistic the steps run 10⁻³, 10⁻⁶, 10⁻¹⁰, 10⁻¹⁴, and the
/// 10⁻¹⁰ step is taken without evaluation: three passes instead of four.
const POLISH_FINAL_STEP: f64 = 1e-13;

/// The largest step taken without evaluation (see [`POLISH_FINAL_STEP`]).
/// The sum of squares and the factorisation kept are those of the point
/// the step started from. The gradient vanishes at the minimum, so the sum
/// of squares differs from the final point's by a second-order amount,
/// below 10⁻¹⁸ relative (below its rounding); the triangle `R`, and so the
/// covariance, by about this step's size, 10⁻⁹ relative, times the
/// curvature of the model in the parameters.
const POLISH_UNEVALUATED_MAX: f64 = 1e-9;

/// The solver's state handed to the polish.
struct PolishState<'a> {
    x: &'a mut Vec<f64>,
    res: &'a mut Vec<f64>,
    rss: &'a mut f64,
    jac: &'a mut Jacobian,
    jac_intact: &'a mut bool,
    trial_res: &'a mut Vec<f64>,
    trial_jac: &'a mut Jacobian,
    /// The last step taken, relative to the parameters (scaled norms);
    /// infinite when there was none.
    last_rel_step: f64,
}

fn sum_sq(v: &[f64]) -> f64 {
    linalg::dot(v, v)
}

fn scaled_norm(v: &[f64], d: &[f64]) -> f64 {
    v.iter()
        .zip(d)
        .map(|(a, b)| (a * b) * (a * b))
        .sum::<f64>()
        .sqrt()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::{CurveProblem, Scale};
    use crate::Model;

    /// The polish takes its last step without evaluating the point it
    /// leads to (see `POLISH_FINAL_STEP`). The reference is a restart from
    /// the estimate: with no earlier step to compare with, it evaluates
    /// every step above 10⁻¹³. The estimate must lie within about 10⁻¹¹ of
    /// it (relative, each parameter), its sum of squares within rounding
    /// and its triangle within 10⁻⁸. The same holds from starts 10⁻⁹ and
    /// 3·10⁻¹⁰ away from the minimum (as the reweighting rounds and the
    /// bi-logistic's re-solve start), where the only steps are below the
    /// size taken without evaluation. Data as in the fit bench:
    /// t_i = 20 i / (n − 1), y_i = curve(t_i) + a sin(1.7 i + 0.3), with
    /// a = 10 as there, and with a = 250, where the large residuals make
    /// Gauss–Newton converge slowly (each step a large fraction of the one
    /// before), so that a final step taken too early shows.
    #[test]
    fn unevaluated_final_step_lands_on_the_minimum() {
        let cases: [(Model, &[f64], usize, f64); 9] = [
            (Model::Logistic, &[1000.0, 0.8, 10.0], 1000, 10.0),
            (Model::Logistic, &[1000.0, 0.8, 10.0], 50, 10.0),
            (Model::Gompertz, &[1000.0, 0.5, 8.0], 400, 10.0),
            (Model::Richards, &[1000.0, 0.8, 10.0, 0.5], 1000, 10.0),
            (Model::Logistic4, &[1000.0, 0.8, 10.0, 40.0], 300, 10.0),
            (Model::Logistic, &[1000.0, 0.8, 10.0], 30, 250.0),
            (Model::Gompertz, &[1000.0, 0.5, 8.0], 40, 250.0),
            (Model::Richards, &[1000.0, 0.8, 10.0, 0.5], 60, 250.0),
            (Model::Richards, &[1000.0, 0.8, 10.0, 0.5], 40, 150.0),
        ];
        for (model, p, n, a) in cases {
            let t: Vec<f64> = (0..n).map(|i| 20.0 * i as f64 / (n - 1) as f64).collect();
            let y: Vec<f64> = t
                .iter()
                .enumerate()
                .map(|(i, &ti)| model.eval(p, ti) + a * (1.7 * i as f64 + 0.3).sin())
                .collect();
            let problem = CurveProblem {
                model,
                t: &t,
                y: &y,
                sqrt_w: None,
                base: p.to_vec(),
                free: (0..p.len()).collect(),
                scale: Scale::default(),
            };
            let solve = |x0: &[f64]| {
                let mut r = Vec::new();
                let out = Solver::default().minimize_factored(&problem, x0, &mut r);
                assert!(out.converged(), "{model:?} n={n}: {:?}", out.termination);
                (out, r)
            };
            // A start 10% off in every parameter.
            let x0: Vec<f64> = p.iter().map(|v| v * 1.1).collect();
            let (first, r1) = solve(&x0);
            let (best, r_best) = solve(&first.x);
            let check = |what: &str, got: &Outcome, r: &[f64]| {
                for (a, b) in got.x.iter().zip(&best.x) {
                    assert!(
                        (a - b).abs() <= 1e-11 * b.abs(),
                        "{model:?} n={n} {what}: {:?} vs {:?}",
                        got.x,
                        best.x
                    );
                }
                assert!(
                    (got.rss - best.rss).abs() <= 1e-13 * best.rss,
                    "{model:?} n={n} {what}: rss {} vs {}",
                    got.rss,
                    best.rss
                );
                let scale = r_best.iter().fold(0.0f64, |m, v| m.max(v.abs()));
                assert_eq!(r.len(), r_best.len());
                for (a, b) in r.iter().zip(&r_best) {
                    assert!(
                        (a - b).abs() <= 1e-8 * scale,
                        "{model:?} n={n} {what}: R {r:?} vs {r_best:?}"
                    );
                }
            };
            check("from 10% off", &first, &r1);
            for off in [1e-9, 3e-10] {
                let near: Vec<f64> = best
                    .x
                    .iter()
                    .enumerate()
                    .map(|(j, v)| v * (1.0 + if j % 2 == 0 { off } else { -off }))
                    .collect();
                let (out, r) = solve(&near);
                check(&format!("from {off:e} off"), &out, &r);
            }
        }
    }

    /// The same problem without row blocks: solved on the whole Jacobian.
    struct Whole<'a>(&'a CurveProblem<'a>);

    impl LeastSquares for Whole<'_> {
        fn n_residuals(&self) -> usize {
            self.0.n_residuals()
        }
        fn n_unknowns(&self) -> usize {
            self.0.n_unknowns()
        }
        fn feasible(&self, x: &[f64]) -> bool {
            self.0.feasible(x)
        }
        fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool {
            self.0.residuals(x, res)
        }
        fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>) {
            self.0.jacobian(x, jac)
        }
        fn residuals_and_jacobian(
            &self,
            x: &[f64],
            res: &mut [f64],
            jac: &mut DMatrix<f64>,
        ) -> bool {
            self.0.residuals_and_jacobian(x, res, jac)
        }
    }

    /// Above `STREAM_ABOVE` residuals the Jacobian is reduced block by
    /// block; the reference is the whole-Jacobian Householder path on the
    /// same problem (what every shorter problem uses). Estimates and sum of
    /// squares agree to 1e-12 (relative), `RᵀR` (which alone enters the
    /// covariance; the rows of `R` may differ in sign) to 1e-10, from a
    /// start 10% off and with a parameter held (as profile refits do).
    #[test]
    fn streamed_factorisation_matches_the_whole_jacobian() {
        let n = STREAM_ABOVE + 1000;
        let t: Vec<f64> = (0..n).map(|i| 20.0 * i as f64 / (n - 1) as f64).collect();
        let y: Vec<f64> = t
            .iter()
            .enumerate()
            .map(|(i, v)| {
                1000.0 / (1.0 + (-0.8 * (v - 10.0)).exp()) + 10.0 * (1.7 * i as f64).sin()
            })
            .collect();
        for free in [vec![0, 1, 2], vec![0, 2]] {
            let problem = CurveProblem {
                model: Model::Logistic,
                t: &t,
                y: &y,
                sqrt_w: None,
                base: vec![1100.0, 0.8, 9.0],
                free: free.clone(),
                scale: Scale::default(),
            };
            assert!(problem.streams());
            let x0: Vec<f64> = free.iter().map(|&j| problem.base[j]).collect();
            let (mut r1, mut r2) = (Vec::new(), Vec::new());
            let a = Solver::default().minimize_factored(&problem, &x0, &mut r1);
            let b = Solver::default().minimize_factored(&Whole(&problem), &x0, &mut r2);
            assert!(a.converged() && b.converged(), "{a:?} {b:?}");
            let close = |u: f64, v: f64, tol: f64| (u - v).abs() <= tol * v.abs().max(1e-300);
            for (u, v) in a.x.iter().zip(&b.x) {
                assert!(close(*u, *v, 1e-12), "{:?} vs {:?}", a.x, b.x);
            }
            assert!(close(a.rss, b.rss, 1e-12), "{} vs {}", a.rss, b.rss);
            let k = free.len();
            assert_eq!((r1.len(), r2.len()), (k * k, k * k));
            let gram = |r: &[f64], i: usize, j: usize| -> f64 {
                (0..k).map(|l| r[i * k + l] * r[j * k + l]).sum()
            };
            for i in 0..k {
                for j in 0..k {
                    let (u, v) = (gram(&r1, i, j), gram(&r2, i, j));
                    let scale = (gram(&r2, i, i) * gram(&r2, j, j)).sqrt();
                    assert!((u - v).abs() <= 1e-10 * scale, "RᵀR[{i}][{j}]: {u} vs {v}");
                }
            }
        }
    }
}
