//! The least-squares problem of a fit: the target on the residual scale
//! (values, increments, logs), and the residual and Jacobian kernels over
//! blocks of points (the AVX2 copy gives the portable loop's bits).

use super::{error, FitError, FitErrorKind};
use crate::mathfn::nonfinite_bits;
use crate::model::{Curve, Model, BLOCK, MAX_PARAMS};
use crate::solver::LeastSquares;
use nalgebra::DMatrix;

/// How residuals are formed from the model's values.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Scale {
    /// Per-period differences `f(t_i) − f(t_{i−1})`, `i = 1..n`.
    pub increments: bool,
    /// Log scale: residual `ln y − ln f`.
    pub log: bool,
}

/// The curve-fitting least-squares problem over the free parameters.
pub struct CurveProblem<'a> {
    pub model: Model,
    pub t: &'a [f64],
    /// The target on the residual scale (differenced and/or logged, see
    /// `scale`): one per residual.
    pub y: &'a [f64],
    /// Square roots of the weights, if any, one per residual.
    pub sqrt_w: Option<Vec<f64>>,
    /// Full parameter vector; free entries are overwritten from `x`.
    pub base: Vec<f64>,
    pub free: Vec<usize>,
    pub scale: Scale,
}

impl CurveProblem<'_> {
    pub(super) fn full(&self, x: &[f64]) -> Vec<f64> {
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
        self.t.len() - usize::from(self.scale.increments)
    }
    fn n_unknowns(&self) -> usize {
        self.free.len()
    }
    fn feasible(&self, x: &[f64]) -> bool {
        let doms = self.model.domains();
        x.iter().zip(&self.free).all(|(v, &j)| doms[j].contains(*v))
    }
    fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool {
        if self.scale != Scale::default() {
            let mut jac = DMatrix::zeros(self.n_residuals(), self.free.len());
            return self.fill_scaled(x, res, &mut jac);
        }
        self.curve(x).values(self.t, res);
        let mut finite = true;
        for (i, r) in res.iter_mut().enumerate() {
            let mut e = self.y[i] - *r;
            if let Some(w) = &self.sqrt_w {
                e *= w[i];
            }
            finite &= e.is_finite();
            *r = e;
        }
        finite
    }
    fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>) {
        let mut res = vec![0.0; self.t.len()];
        self.fill(x, &mut res, jac);
    }
    /// One pass: the value and the gradient share their exponentials.
    fn residuals_and_jacobian(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        self.fill(x, res, jac)
    }
    /// Row blocks for the plain residual scale (increments and logs are
    /// formed over the whole series).
    fn streams(&self) -> bool {
        self.scale == Scale::default()
    }
    fn rows_and_jacobian(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        self.streams() && self.fill_rows(x, rows, res, jac)
    }
}

impl CurveProblem<'_> {
    /// Writes residuals and Jacobian in one pass over the data, a block of
    /// points at a time; `false` if a residual is not finite.
    fn fill(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        if self.scale != Scale::default() {
            return self.fill_scaled(x, res, jac);
        }
        self.fill_rows(x, 0..self.t.len(), res, jac.as_mut_slice())
    }

    /// [`CurveProblem::fill`] for the rows `rows` only (plain scale): `res`
    /// and the column-major `jac` have `rows.len()` rows.
    fn fill_rows(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor supports AVX2, checked just above.
            return unsafe { self.fill_avx2(x, rows, res, jac) };
        }
        self.fill_any(x, rows, res, jac)
    }

    /// [`CurveProblem::fill_rows`] compiled for AVX2 (see the crate docs).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn fill_avx2(
        &self,
        x: &[f64],
        rows: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        self.fill_any(x, rows, res, jac)
    }

    #[inline(always)]
    fn fill_any(
        &self,
        x: &[f64],
        range: std::ops::Range<usize>,
        res: &mut [f64],
        jac: &mut [f64],
    ) -> bool {
        let c = self.curve(x);
        let (t, y) = (&self.t[range.clone()], &self.y[range.clone()]);
        let sqrt_w = self.sqrt_w.as_ref().map(|w| &w[range]);
        let m = t.len();
        // The Jacobian's column of each free parameter, by parameter index
        // (`free` is ascending); the derivatives of fixed parameters go to
        // `spare`, allocated only when some parameter is fixed.
        let np = self.base.len();
        let mut spare = vec![0.0; m * (np - self.free.len())];
        let mut cols: [&mut [f64]; MAX_PARAMS] = Default::default();
        let (mut rest, mut spare_rest) = (jac, spare.as_mut_slice());
        for (j, col) in cols.iter_mut().enumerate().take(np) {
            let from = if self.free.contains(&j) {
                &mut rest
            } else {
                &mut spare_rest
            };
            let (c, tail) = std::mem::take(from).split_at_mut(m);
            *col = c;
            *from = tail;
        }
        let mut scratch = [[0.0; BLOCK]; 2];
        let mut finite = true;
        let mut start = 0;
        while start < m {
            let end = (start + BLOCK).min(m);
            // Rows start..end of each column (slots past the model's
            // parameters stay empty).
            let g = {
                let [c0, c1, c2, c3, c4, c5] = &mut cols;
                let r = start..end;
                [
                    rows(c0, r.clone()),
                    rows(c1, r.clone()),
                    rows(c2, r.clone()),
                    rows(c3, r.clone()),
                    rows(c4, r.clone()),
                    rows(c5, r),
                ]
            };
            let r = &mut res[start..end];
            c.eval_block::<true>(&t[start..end], r, g, &mut scratch);
            let y = &y[start..end];
            // OR-ing `nonfinite_bits` tests the block without a branch, so
            // that the loop vectorises.
            let mut nonfinite = 0u64;
            match sqrt_w {
                None => {
                    for (ri, yi) in r.iter_mut().zip(y) {
                        let e = yi - *ri;
                        nonfinite |= nonfinite_bits(e);
                        *ri = e;
                    }
                }
                Some(w) => {
                    let w = &w[start..end];
                    for ((ri, yi), wi) in r.iter_mut().zip(y).zip(w) {
                        let e = (yi - *ri) * wi;
                        nonfinite |= nonfinite_bits(e);
                        *ri = e;
                    }
                    for &j in &self.free {
                        for (ci, wi) in cols[j][start..end].iter_mut().zip(w) {
                            *ci *= wi;
                        }
                    }
                }
            }
            finite &= nonfinite == 0;
            start = end;
        }
        finite
    }
}

impl CurveProblem<'_> {
    /// [`CurveProblem::fill`] for increments and/or the log scale: the
    /// model's values and gradient at every time, then differenced
    /// (`Δf_i = f_i − f_{i−1}`, `ΔJ_i = J_i − J_{i−1}`) and/or taken to the
    /// log scale (`ln Δf`, gradient `ΔJ / Δf`), then weighted.
    fn fill_scaled(&self, x: &[f64], res: &mut [f64], jac: &mut DMatrix<f64>) -> bool {
        let n = self.t.len();
        let k = self.free.len();
        let zeros = vec![0.0; n];
        let plain = CurveProblem {
            model: self.model,
            t: self.t,
            y: &zeros,
            sqrt_w: None,
            base: self.base.clone(),
            free: self.free.clone(),
            scale: Scale::default(),
        };
        // `neg` = −f (residuals against zero), `g` = ∂f/∂θ.
        let mut neg = vec![0.0; n];
        let mut g = DMatrix::zeros(n, k);
        let mut finite = plain.fill(x, &mut neg, &mut g);
        let off = usize::from(self.scale.increments);
        for i in 0..n - off {
            let v = if off == 1 {
                neg[i] - neg[i + 1]
            } else {
                -neg[i]
            };
            let w = self.sqrt_w.as_ref().map_or(1.0, |w| w[i]);
            let (r, d) = if self.scale.log {
                if v > 0.0 {
                    (self.y[i] - v.ln(), 1.0 / v)
                } else {
                    finite = false;
                    (f64::NAN, 0.0)
                }
            } else {
                (self.y[i] - v, 1.0)
            };
            res[i] = r * w;
            finite &= res[i].is_finite();
            for c in 0..k {
                let gi = if off == 1 {
                    g[(i + 1, c)] - g[(i, c)]
                } else {
                    g[(i, c)]
                };
                jac[(i, c)] = gi * d * w;
            }
        }
        finite
    }
}

/// The model's values on the residual scale before the log: `f(t_i)`, or
/// the increments `f(t_i) − f(t_{i−1})`.
pub(super) fn on_scale(model: Model, p: &[f64], t: &[f64], increments: bool) -> Vec<f64> {
    let mut f = vec![0.0; t.len()];
    Curve::new(model, p).values(t, &mut f);
    if increments {
        f.windows(2).map(|w| w[1] - w[0]).collect()
    } else {
        f
    }
}

/// Rows `r` of a Jacobian column; nothing for an empty (unused) slot.
#[inline(always)]
fn rows(c: &mut [f64], r: std::ops::Range<usize>) -> &mut [f64] {
    c.get_mut(r).unwrap_or_default()
}

/// The data on the residual scale: differences for increments, logs for
/// the log error model (every one must then be positive).
///
/// Increments need one value per time: with replicate measurements
/// (a repeated time) there is no difference between consecutive times, so
/// they are refused ([`crate::data::check_increments`] names the lines).
pub(super) fn target_values(t: &[f64], y: &[f64], scale: Scale) -> Result<Vec<f64>, FitError> {
    let off = usize::from(scale.increments);
    if scale.increments {
        if let Some((a, b)) = crate::data::repeated_time(t) {
            return Err(error(
                FitErrorKind::NotApplicable,
                format!(
                    "fitting increments needs one value per time, but observations {} and {} (in the order given) \
                     share a time (replicate measurements); fit the values themselves, or combine the replicates \
                     of each time into one",
                    a + 1,
                    b + 1
                ),
            ));
        }
    }
    let mut out: Vec<f64> = if scale.increments {
        y.windows(2).map(|w| w[1] - w[0]).collect()
    } else {
        y.to_vec()
    };
    if scale.log {
        for (i, v) in out.iter_mut().enumerate() {
            if v.is_nan() || *v <= 0.0 {
                let what = if scale.increments {
                    "increment"
                } else {
                    "value"
                };
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!(
                        "the log error model needs positive values, but the {what} at time {} is {}; use the additive, relative or count error model",
                        t[i + off],
                        v
                    ),
                ));
            }
            *v = v.ln();
        }
    }
    Ok(out)
}

/// The AVX2 copies of the inner loops must give the scalar build's results
/// to the last bit (the crate docs promise it).
#[cfg(all(test, target_arch = "x86_64"))]
mod avx2_tests {
    use super::*;

    #[test]
    fn avx2_fill_is_bit_identical() {
        if !std::is_x86_feature_detected!("avx2") {
            return;
        }
        let params: [(Model, &[f64]); 7] = [
            (Model::Logistic, &[1000.0, 0.8, 10.0]),
            (Model::Logistic4, &[900.0, 0.6, 12.0, 100.0]),
            (Model::Gompertz, &[50.0, 0.35, 8.0]),
            (Model::Richards, &[2000.0, 0.5, 15.0, 0.4]),
            (Model::Exponential, &[3.0, 0.25]),
            (Model::Bass, &[1500.0, 0.02, 0.45, -20.0]),
            (Model::Bilogistic, &[600.0, 0.3, -60.0, 900.0, 0.1, 150.0]),
        ];
        // 77 points: two full blocks and a partial one; times far into the
        // tails too, where the exponentials leave their ordinary range.
        let t: Vec<f64> = (0..77).map(|i| -400.0 + 11.0 * i as f64).collect();
        let y: Vec<f64> = t.iter().map(|v| 500.0 + (v * 0.37).sin() * 300.0).collect();
        let w: Vec<f64> = (0..77).map(|i| 0.5 + (i % 5) as f64).collect();
        for (model, p) in params {
            let np = p.len();
            for (weights, free) in [
                (None, (0..np).collect::<Vec<_>>()),
                (Some(w.clone()), (1..np).collect()),
            ] {
                let problem = CurveProblem {
                    model,
                    t: &t,
                    y: &y,
                    sqrt_w: weights,
                    base: p.to_vec(),
                    free: free.clone(),
                    scale: Scale::default(),
                };
                let x: Vec<f64> = free.iter().map(|&j| p[j] * 1.01).collect();
                let (mut r1, mut r2) = (vec![0.0; 77], vec![0.0; 77]);
                let (mut j1, mut j2) = (
                    DMatrix::zeros(77, free.len()),
                    DMatrix::zeros(77, free.len()),
                );
                let ok1 = problem.fill_any(&x, 0..77, &mut r1, j1.as_mut_slice());
                // SAFETY: AVX2 is available (checked at the top).
                let ok2 = unsafe { problem.fill_avx2(&x, 0..77, &mut r2, j2.as_mut_slice()) };
                assert_eq!(ok1, ok2, "{}", model.name());
                let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                assert_eq!(bits(&r1), bits(&r2), "{} residuals", model.name());
                assert_eq!(
                    bits(j1.as_slice()),
                    bits(j2.as_slice()),
                    "{} Jacobian",
                    model.name()
                );
            }
        }
    }
}
