//! The growth-curve models: their formulas, parameter names and analytic
//! Jacobians.
//!
//! [`Model`] is a closed set. Parameter vectors are plain `&[f64]` in the
//! order given by [`Model::param_names`]; those names (the field's usual
//! symbols) are part of the output contract.
//!
//! Every formula is evaluated in a form that cannot overflow for any finite
//! input: the logistic through a numerically stable sigmoid, the Richards
//! curve in the log domain (`ln(1 + ν e^z)` as a softplus).

use crate::mathfn::{exp, exp_core, in_exp_range, ln_1p_unit_core};
use serde::Serialize;

/// A growth-curve family.
///
/// With `s(t) = 1 / (1 + e^(−r (t − t0)))`:
///
/// | model | formula | parameters |
/// |---|---|---|
/// | `logistic` | `y = K s(t)` | K, r, t0 |
/// | `logistic4` | `y = L + (K − L) s(t)` | K, r, t0, L |
/// | `gompertz` | `y = K exp(−e^(−r (t − t0)))` | K, r, t0 |
/// | `richards` | `y = K (1 + ν e^(−r (t − t0)))^(−1/ν)` | K, r, t0, nu |
/// | `exponential` | `y = a e^(r t)` | a, r |
///
/// For the logistic, t0 is the midpoint and inflection, `y(t0) = K/2`; for
/// the Gompertz and Richards curves t0 is the inflection time
/// (`y(t0) = K/e` and `K (1 + ν)^(−1/ν)`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Model {
    Logistic,
    Logistic4,
    Gompertz,
    Richards,
    Exponential,
}

/// Whether a parameter must stay strictly positive.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Domain {
    Positive,
    Real,
}

impl Model {
    pub const ALL: [Model; 5] = [
        Model::Logistic,
        Model::Logistic4,
        Model::Gompertz,
        Model::Richards,
        Model::Exponential,
    ];

    /// The model's name as used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Model::Logistic => "logistic",
            Model::Logistic4 => "logistic4",
            Model::Gompertz => "gompertz",
            Model::Richards => "richards",
            Model::Exponential => "exponential",
        }
    }

    pub fn from_name(name: &str) -> Option<Model> {
        Model::ALL
            .into_iter()
            .find(|m| m.name().eq_ignore_ascii_case(name.trim()))
    }

    /// A one-line formula for display.
    pub fn formula(self) -> &'static str {
        match self {
            Model::Logistic => "y = K / (1 + exp(-r (t - t0)))",
            Model::Logistic4 => "y = L + (K - L) / (1 + exp(-r (t - t0)))",
            Model::Gompertz => "y = K exp(-exp(-r (t - t0)))",
            Model::Richards => "y = K (1 + nu exp(-r (t - t0)))^(-1/nu)",
            Model::Exponential => "y = a exp(r t)",
        }
    }

    pub fn param_names(self) -> &'static [&'static str] {
        match self {
            Model::Logistic | Model::Gompertz => &["K", "r", "t0"],
            Model::Logistic4 => &["K", "r", "t0", "L"],
            Model::Richards => &["K", "r", "t0", "nu"],
            Model::Exponential => &["a", "r"],
        }
    }

    pub fn n_params(self) -> usize {
        self.param_names().len()
    }

    pub fn param_index(self, name: &str) -> Option<usize> {
        self.param_names().iter().position(|p| *p == name)
    }

    /// The allowed range of each parameter, in `param_names` order.
    ///
    /// K and r are positive for the saturating models (growth towards an
    /// upper level), ν is positive by the Richards form's definition; the
    /// exponential's `a` and `r` are free so that decline can be fitted.
    pub fn domains(self) -> &'static [Domain] {
        use Domain::*;
        match self {
            Model::Logistic | Model::Gompertz => &[Positive, Positive, Real],
            Model::Logistic4 => &[Positive, Positive, Real, Real],
            Model::Richards => &[Positive, Positive, Real, Positive],
            Model::Exponential => &[Real, Real],
        }
    }

    /// Whether the model has a saturation level K.
    pub fn saturates(self) -> bool {
        self.param_index("K").is_some()
    }

    /// `y(t)` for parameters `p`.
    pub fn eval(self, p: &[f64], t: f64) -> f64 {
        Curve::new(self, p).value(t)
    }

    /// `y(t)` and its gradient with respect to `p`, written into `grad`
    /// (length [`Model::n_params`]).
    pub fn eval_grad(self, p: &[f64], t: f64, grad: &mut [f64]) -> f64 {
        let mut g = [0.0; MAX_PARAMS];
        let y = Curve::new(self, p).value_grad(t, &mut g);
        let n = self.n_params();
        grad[..n].copy_from_slice(&g[..n]);
        y
    }
}

/// The most parameters any model has.
pub(crate) const MAX_PARAMS: usize = 4;

/// Points per block of [`Curve::eval_block`].
pub(crate) const BLOCK: usize = 32;

/// A model with its parameters bound, for evaluating many times: whatever
/// depends on the parameters alone (ln ν, 1/ν for the Richards curve) is
/// computed once, and value and gradient share their exponentials.
///
/// Two paths give the same numbers: [`Curve::value`] /
/// [`Curve::value_grad`] for one point, and [`Curve::eval_block`] for many,
/// which first computes each exponential for the whole block (a loop the
/// compiler vectorises) and then the formulas, point by point, from the
/// same per-point functions.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Curve {
    model: Model,
    p: [f64; MAX_PARAMS],
    /// ln ν, 1/ν and 1/ν² (Richards only).
    ln_nu: f64,
    inv_nu: f64,
    inv_nu2: f64,
}

impl Curve {
    pub(crate) fn new(model: Model, p: &[f64]) -> Curve {
        let n = model.n_params();
        let mut q = [0.0; MAX_PARAMS];
        q[..n].copy_from_slice(&p[..n]);
        let (ln_nu, inv_nu, inv_nu2) = if model == Model::Richards {
            (q[3].ln(), 1.0 / q[3], 1.0 / (q[3] * q[3]))
        } else {
            (0.0, 0.0, 0.0)
        };
        Curve {
            model,
            p: q,
            ln_nu,
            inv_nu,
            inv_nu2,
        }
    }

    /// `y(t)`.
    #[inline]
    pub(crate) fn value(&self, t: f64) -> f64 {
        let mut g = [0.0; MAX_PARAMS];
        self.value_grad(t, &mut g)
    }

    /// `y(t)` and its gradient.
    #[inline]
    pub(crate) fn value_grad(&self, t: f64, grad: &mut [f64; MAX_PARAMS]) -> f64 {
        let [k, r, t0, p3] = self.p;
        let d = t - t0;
        match self.model {
            Model::Logistic | Model::Logistic4 => {
                let l = if self.model == Model::Logistic4 {
                    p3
                } else {
                    0.0
                };
                let x = r * d;
                let (f, g) = sigmoid_out(k, r, l, d, x, exp(-x.abs()));
                *grad = g;
                f
            }
            Model::Gompertz => {
                let u = exp(-r * d);
                let (f, g) = gompertz_out(k, r, d, u, exp(-u));
                *grad = g;
                f
            }
            Model::Richards => {
                let x = self.ln_nu - r * d;
                let (ln_b, w) = richards_terms(x, exp(-x.abs()));
                let big_e = exp(-ln_b * self.inv_nu);
                let (f, g) = self.richards_out(d, ln_b, w, big_e);
                *grad = g;
                f
            }
            Model::Exponential => {
                let e = exp(r * t);
                grad[0] = e;
                grad[1] = k * t * e;
                k * e
            }
        }
    }

    /// Values at the points `t` (at most [`BLOCK`] of them) into `f` and the
    /// derivatives with respect to parameter `j` into `g[j]` (each as long
    /// as `t`; entries of `g` past the model's parameters are left alone).
    #[inline(always)]
    pub(crate) fn eval_block(&self, t: &[f64], f: &mut [f64], g: [&mut [f64]; MAX_PARAMS]) {
        let n = t.len().min(BLOCK);
        let t = &t[..n];
        let [k, r, t0, p3] = self.p;
        let f = &mut f[..n];
        let [g0, g1, g2, g3] = g;
        let (g0, g1, g2) = (&mut g0[..n], &mut g1[..n], &mut g2[..n]);
        // Scratch for the exponentials' arguments and values.
        let (mut a, mut b) = ([0.0; BLOCK], [0.0; BLOCK]);
        let (a, b) = (&mut a[..n], &mut b[..n]);
        match self.model {
            Model::Logistic => {
                for i in 0..n {
                    a[i] = -(r * (t[i] - t0)).abs();
                }
                exp_in_place(a);
                for i in 0..n {
                    let d = t[i] - t0;
                    let (v, gr) = sigmoid_out(k, r, 0.0, d, r * d, a[i]);
                    (f[i], g0[i], g1[i], g2[i]) = (v, gr[0], gr[1], gr[2]);
                }
            }
            Model::Logistic4 => {
                let g3 = &mut g3[..n];
                for i in 0..n {
                    a[i] = -(r * (t[i] - t0)).abs();
                }
                exp_in_place(a);
                for i in 0..n {
                    let d = t[i] - t0;
                    let (v, gr) = sigmoid_out(k, r, p3, d, r * d, a[i]);
                    (f[i], g0[i], g1[i], g2[i], g3[i]) = (v, gr[0], gr[1], gr[2], gr[3]);
                }
            }
            Model::Gompertz => {
                for i in 0..n {
                    a[i] = -r * (t[i] - t0);
                }
                exp_in_place(a);
                for i in 0..n {
                    b[i] = -a[i];
                }
                exp_in_place(b);
                for i in 0..n {
                    let (v, gr) = gompertz_out(k, r, t[i] - t0, a[i], b[i]);
                    (f[i], g0[i], g1[i], g2[i]) = (v, gr[0], gr[1], gr[2]);
                }
            }
            Model::Richards => {
                let g3 = &mut g3[..n];
                for i in 0..n {
                    a[i] = -(self.ln_nu - r * (t[i] - t0)).abs();
                }
                exp_in_place(a);
                // a ← ln B, b ← w, then f ← e^(−ln B / ν).
                for i in 0..n {
                    let (ln_b, w) = richards_terms(self.ln_nu - r * (t[i] - t0), a[i]);
                    a[i] = ln_b;
                    b[i] = w;
                }
                for i in 0..n {
                    f[i] = -a[i] * self.inv_nu;
                }
                exp_in_place(f);
                for i in 0..n {
                    let (v, gr) = self.richards_out(t[i] - t0, a[i], b[i], f[i]);
                    (f[i], g0[i], g1[i], g2[i], g3[i]) = (v, gr[0], gr[1], gr[2], gr[3]);
                }
            }
            Model::Exponential => {
                for i in 0..n {
                    a[i] = r * t[i];
                }
                exp_in_place(a);
                for i in 0..n {
                    let e = a[i];
                    (f[i], g0[i], g1[i]) = (k * e, e, k * t[i] * e);
                }
            }
        }
    }

    /// `y(t)` at every point of `t` into `out`.
    pub(crate) fn values(&self, t: &[f64], out: &mut [f64]) {
        #[cfg(target_arch = "x86_64")]
        if std::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor supports AVX2, checked just above.
            return unsafe { self.values_avx2(t, out) };
        }
        self.values_any(t, out)
    }

    /// [`Curve::values`] compiled for AVX2 (see the crate docs).
    #[cfg(target_arch = "x86_64")]
    #[target_feature(enable = "avx2")]
    fn values_avx2(&self, t: &[f64], out: &mut [f64]) {
        self.values_any(t, out)
    }

    #[inline(always)]
    fn values_any(&self, t: &[f64], out: &mut [f64]) {
        let mut spare = [[0.0; BLOCK]; MAX_PARAMS];
        for (tb, ob) in t.chunks(BLOCK).zip(out.chunks_mut(BLOCK)) {
            let [s0, s1, s2, s3] = &mut spare;
            self.eval_block(tb, ob, [s0, s1, s2, s3]);
        }
    }

    /// Richards value and gradient from `d = t − t0`, `(ln B, w)` of
    /// [`richards_terms`] and `big_e = e^(−ln B / ν) = B^(−1/ν)`.
    #[inline(always)]
    fn richards_out(&self, d: f64, ln_b: f64, w: f64, big_e: f64) -> (f64, [f64; MAX_PARAMS]) {
        let [k, r, _, _] = self.p;
        let y = k * big_e;
        let wn = w * self.inv_nu;
        (
            y,
            [
                big_e,
                y * wn * d,
                -y * wn * r,
                y * richards_nu_term(ln_b, w) * self.inv_nu2,
            ],
        )
    }
}

/// `e^x` for every entry of `a`, in place: without branches when every
/// argument is in the ordinary range (the usual case), else one by one.
#[inline(always)]
fn exp_in_place(a: &mut [f64]) {
    let mut ordinary = true;
    for &x in a.iter() {
        ordinary &= in_exp_range(x);
    }
    if ordinary {
        for v in a.iter_mut() {
            *v = exp_core(*v);
        }
    } else {
        for v in a.iter_mut() {
            *v = exp(*v);
        }
    }
}

/// Logistic (floor `l`; 0 for the plain logistic) value and gradient from
/// `d = t − t0`, `x = r d` and `e = e^(−|x|)`.
#[inline(always)]
fn sigmoid_out(k: f64, r: f64, l: f64, d: f64, x: f64, e: f64) -> (f64, [f64; MAX_PARAMS]) {
    let (s, sc) = sigmoid_pair(x, e);
    // s (1 − s) from the complementary sigmoid keeps precision in the
    // upper tail where 1 − s cancels.
    let ds = s * sc;
    let h = k - l;
    (l + h * s, [s, h * ds * d, -h * ds * r, sc])
}

/// Gompertz value and gradient from `d = t − t0`, `u = e^(−r d)` and
/// `g = e^(−u)`.
#[inline(always)]
fn gompertz_out(k: f64, r: f64, d: f64, u: f64, g: f64) -> (f64, [f64; MAX_PARAMS]) {
    // g·u → 0 as u → ∞; guard the ∞·0 that the product would give.
    let gu = if u.is_finite() { g * u } else { 0.0 };
    (k * g, [g, k * gu * d, -k * gu * r, 0.0])
}

/// `1 / (1 + e^(−x))` without overflow for any finite `x`.
pub fn sigmoid(x: f64) -> f64 {
    if x >= 0.0 {
        1.0 / (1.0 + (-x).exp())
    } else {
        let e = x.exp();
        e / (1.0 + e)
    }
}

/// `ln(1 + e^x)` without overflow or loss of precision in either tail.
pub fn softplus(x: f64) -> f64 {
    if x > 35.0 {
        x + (-x).exp()
    } else if x < -35.0 {
        x.exp()
    } else {
        x.exp().ln_1p()
    }
}

/// `(sigmoid(x), sigmoid(−x))` from the one exponential `e = e^(−|x|) ≤ 1`:
/// `1 / (1 + e)` and `e / (1 + e)`, the latter as `e · (1 / (1 + e))`,
/// within an ulp and one division fewer.
#[inline(always)]
fn sigmoid_pair(x: f64, e: f64) -> (f64, f64) {
    let p = 1.0 / (1.0 + e);
    let q = e * p;
    if x >= 0.0 {
        (p, q)
    } else {
        (q, p)
    }
}

/// For the Richards curve, with `B = 1 + ν e^(−r (t − t0))` and
/// `x = ln ν − r (t − t0)`: returns `(ln B, ν e^(−r (t − t0)) / B)`, that is
/// `(softplus(x), sigmoid(x))`, from the one exponential `e = e^(−|x|) ≤ 1`
/// so that nothing overflows: `ln(1 + e^x) = max(x, 0) + ln(1 + e^(−|x|))`.
#[inline(always)]
fn richards_terms(x: f64, e: f64) -> (f64, f64) {
    let l = ln_1p_unit_core(e);
    let p = 1.0 / (1.0 + e);
    let q = e * p;
    if x >= 0.0 {
        (x + l, p)
    } else {
        (l, q)
    }
}

/// `ln B − ν e^(−r (t − t0)) / B` for the Richards ν-derivative, from
/// `(ln B, w)` of [`richards_terms`]. As `w → 0` both terms tend to `w` and
/// their difference `−ln(1 − w) − w = Σ_{k≥2} wᵏ/k` would cancel (to
/// nothing at all when ν is tiny), so small `w` take the series.
#[inline(always)]
fn richards_nu_term(ln_b: f64, w: f64) -> f64 {
    // Terms to w¹⁵/15; the next is below 1e-17 of the sum for w < 1/16.
    // Both are computed and one is chosen, so that loops vectorise.
    const INV: [f64; 14] = [
        1.0 / 2.0,
        1.0 / 3.0,
        1.0 / 4.0,
        1.0 / 5.0,
        1.0 / 6.0,
        1.0 / 7.0,
        1.0 / 8.0,
        1.0 / 9.0,
        1.0 / 10.0,
        1.0 / 11.0,
        1.0 / 12.0,
        1.0 / 13.0,
        1.0 / 14.0,
        1.0 / 15.0,
    ];
    let mut acc = INV[13];
    for c in INV[..13].iter().rev() {
        acc = c + w * acc;
    }
    let series = w * w * acc;
    if w < 0.0625 {
        series
    } else {
        ln_b - w
    }
}

#[cfg(test)]
mod tests;
