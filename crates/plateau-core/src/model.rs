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
/// | `bass` | `y = m F(t − tau)`, `F` below | m, p, q, tau |
/// | `bilogistic` | `y = K1 s1(t) + K2 s2(t)` | K1, r1, t01, K2, r2, t02 |
///
/// For the logistic, t0 is the midpoint and inflection, `y(t0) = K/2`; for
/// the Gompertz and Richards curves t0 is the inflection time
/// (`y(t0) = K/e` and `K (1 + ν)^(−1/ν)`).
///
/// **Richards' ν** ranges over `ν > −1`: `ν = 1` is the logistic, `ν → 0`
/// the Gompertz curve (the limit `(1 + ν u)^(−1/ν) → e^(−u)`, which the
/// curve takes at `ν = 0` exactly, with `∂y/∂ν = y u²/2` there), and
/// `−1 < ν < 0` the curves between the Gompertz and von Bertalanffy-type
/// growth (t0 is still the inflection: `d²y/dt² = 0` where
/// `e^(−r (t − t0)) = 1` for every `ν > −1`). For `ν < 0` the curve is
/// defined only where `B = 1 + ν e^(−r (t − t0)) > 0`, that is for
/// `t > t0 + ln(−ν) / r` ([`Model::defined_from`]); it is not a number
/// (NaN) before. As `B` grows with t, a fit whose first observation lies in
/// the defined range is defined at every later time too.
///
/// **Bass diffusion** (Bass 1969): cumulative adopters out of a market of
/// `m`, with innovation coefficient `p`, imitation coefficient `q` and
/// launch time `tau`:
///
/// ```text
/// F(s) = (1 − e^(−(p+q) s)) / (1 + (q/p) e^(−(p+q) s))   for s ≥ 0
/// F(s) = 0                                              for s < 0 (before launch)
/// ```
///
/// The adoption rate `m f(s)` peaks at `t* = tau + ln(q/p)/(p+q)` when
/// `q > p` (at launch otherwise), at `m (p+q)² / (4q)`. Before `tau` the
/// curve is 0 and its gradient is 0: a launch time inside the data range
/// makes the earlier observations pure residuals, and the gradient with
/// respect to `tau` jumps from 0 to `−m p` as `t − tau` crosses 0 (the
/// curve is continuous, its derivative in `tau` is not). For `t > tau`
/// the curve equals `logistic4` with `K = m`, `r = p + q`,
/// `t0 = tau + ln(q/p)/(p+q)`, `L = −m p/q` (an algebraic identity, used by
/// the self-start and checked in the tests). The model fits running
/// totals; per-period counts are summed first (`--per-period`, the page's
/// switch), and the per-period form `N(t) − N(t − 1)` is derived from the
/// fit ([`bass_per_period`]).
///
/// **Bi-logistic** (Meyer 1994): two logistic pulses
/// `s_i(t) = 1 / (1 + e^(−r_i (t − t0_i)))` added; the fit orders them so
/// that pulse 1 is the earlier (`t01 ≤ t02`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Model {
    Logistic,
    Logistic4,
    Gompertz,
    Richards,
    Exponential,
    Bass,
    Bilogistic,
}

/// What a parameter is, as far as units go: how it changes when the
/// values are multiplied by `c` and the time axis is shifted and
/// stretched (`t' = (t − t_c) s`). The fit uses this to work in
/// internally scaled units and map the results back.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Role {
    /// A level in the data's units (K, L, m, K1, K2; the exponential's
    /// `a`, the level at t = 0): multiplied by `c`.
    Level,
    /// A rate per unit of time (r, p, q): divided by `s`.
    Rate,
    /// A time on the axis (t0, tau, t01, t02): `(t0 − t_c) s`.
    Time,
    /// A pure number (the Richards ν): unchanged.
    Shape,
}

/// Whether a parameter must stay strictly positive.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Domain {
    Positive,
    Real,
    /// Strictly above −1 (Richards' ν; see [`Model`]).
    AboveMinusOne,
}

impl Domain {
    /// The open lower edge of the range, if any: 0 or −1.
    pub fn lower_edge(self) -> Option<f64> {
        match self {
            Domain::Positive => Some(0.0),
            Domain::AboveMinusOne => Some(-1.0),
            Domain::Real => None,
        }
    }

    /// Whether `v` is a finite value inside the range.
    pub fn contains(self, v: f64) -> bool {
        v.is_finite() && self.lower_edge().is_none_or(|e| v > e)
    }
}

impl Model {
    pub const ALL: [Model; 7] = [
        Model::Logistic,
        Model::Logistic4,
        Model::Gompertz,
        Model::Richards,
        Model::Exponential,
        Model::Bass,
        Model::Bilogistic,
    ];

    /// The model's name as used on the command line and in JSON.
    pub fn name(self) -> &'static str {
        match self {
            Model::Logistic => "logistic",
            Model::Logistic4 => "logistic4",
            Model::Gompertz => "gompertz",
            Model::Richards => "richards",
            Model::Exponential => "exponential",
            Model::Bass => "bass",
            Model::Bilogistic => "bilogistic",
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
            Model::Bass => {
                "y = m (1 - exp(-(p+q)(t-tau))) / (1 + (q/p) exp(-(p+q)(t-tau))) for t >= tau, else 0"
            }
            Model::Bilogistic => {
                "y = K1 / (1 + exp(-r1 (t - t01))) + K2 / (1 + exp(-r2 (t - t02)))"
            }
        }
    }

    /// The level the curve saturates at, as labels name it: `K`, Bass's
    /// market potential `m`, the bi-logistic's `K1 + K2` (and `K` for the
    /// exponential, which has none: its share milestones do not apply).
    pub fn saturation_name(self) -> &'static str {
        match self {
            Model::Bass => "m",
            Model::Bilogistic => "K1 + K2",
            _ => "K",
        }
    }

    /// The one parameter that holds the saturation level, which a known
    /// level fixes: `K`, or Bass's `m`; `None` for the bi-logistic (its
    /// level `K1 + K2` is no one parameter) and the exponential (none).
    pub fn level_param(self) -> Option<&'static str> {
        ["K", "m"]
            .into_iter()
            .find(|n| self.param_index(n).is_some())
    }

    pub fn param_names(self) -> &'static [&'static str] {
        match self {
            Model::Logistic | Model::Gompertz => &["K", "r", "t0"],
            Model::Logistic4 => &["K", "r", "t0", "L"],
            Model::Richards => &["K", "r", "t0", "nu"],
            Model::Exponential => &["a", "r"],
            Model::Bass => &["m", "p", "q", "tau"],
            Model::Bilogistic => &["K1", "r1", "t01", "K2", "r2", "t02"],
        }
    }

    /// Each parameter's [`Role`], in `param_names` order. Every model
    /// with a [`Role::Time`] parameter depends on `t` only through
    /// `t − t0` (or `t − tau`, `t − t01`, `t − t02`), so its time axis may
    /// be shifted; the exponential has none (its `a` is the level at
    /// t = 0, which depends on the time origin), so its axis may only be
    /// stretched.
    pub fn roles(self) -> &'static [Role] {
        use Role::*;
        match self {
            Model::Logistic | Model::Gompertz => &[Level, Rate, Time],
            Model::Logistic4 => &[Level, Rate, Time, Level],
            Model::Richards => &[Level, Rate, Time, Shape],
            Model::Exponential => &[Level, Rate],
            Model::Bass => &[Level, Rate, Rate, Time],
            Model::Bilogistic => &[Level, Rate, Time, Level, Rate, Time],
        }
    }

    /// Whether the model's time axis may be shifted (it has a time
    /// parameter; see [`Model::roles`]).
    pub fn shift_invariant(self) -> bool {
        self.roles().contains(&Role::Time)
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
    /// upper level), Richards' ν is above −1 (see [`Model`]); the
    /// exponential's `a` and `r` are free so that decline can be fitted.
    pub fn domains(self) -> &'static [Domain] {
        use Domain::*;
        match self {
            Model::Logistic | Model::Gompertz => &[Positive, Positive, Real],
            Model::Logistic4 => &[Positive, Positive, Real, Real],
            Model::Richards => &[Positive, Positive, Real, AboveMinusOne],
            Model::Exponential => &[Real, Real],
            Model::Bass => &[Positive, Positive, Positive, Real],
            Model::Bilogistic => &[Positive, Positive, Real, Positive, Positive, Real],
        }
    }

    /// The earliest time at which the curve is defined: `t0 + ln(−ν) / r`
    /// for a Richards curve with `ν < 0` (before it `1 + ν e^(−r (t − t0))
    /// ≤ 0`); `None` when the curve is defined at every time.
    pub fn defined_from(self, p: &[f64]) -> Option<f64> {
        (self == Model::Richards && p[3] < 0.0).then(|| p[2] + (-p[3]).ln() / p[1])
    }

    /// Whether the model has a saturation level (K, Bass's m, or K1 + K2).
    pub fn saturates(self) -> bool {
        self != Model::Exponential
    }

    /// The level the curve tends to as `t → ∞` (K; m for the Bass model;
    /// K1 + K2 for the bi-logistic); `None` for the exponential.
    pub fn saturation_level(self, p: &[f64]) -> Option<f64> {
        match self {
            Model::Exponential => None,
            Model::Bilogistic => Some(p[0] + p[3]),
            _ => Some(p[0]),
        }
    }

    /// The floor the curve rises from (L for logistic4, else 0).
    pub fn floor_level(self, p: &[f64]) -> f64 {
        if self == Model::Logistic4 {
            p[3]
        } else {
            0.0
        }
    }

    /// `dy/dt` at `t`, analytically: every saturating model depends on `t`
    /// only through `t − t0` (`t − tau`; `t − t01` and `t − t02`), so the
    /// slope is minus the derivative(s) with respect to those; the
    /// exponential's is `r y`.
    pub fn slope(self, p: &[f64], t: f64) -> f64 {
        let mut g = [0.0; MAX_PARAMS];
        let y = self.eval_grad(p, t, &mut g[..self.n_params()]);
        match self {
            Model::Exponential => p[1] * y,
            Model::Bass => -g[3],
            Model::Bilogistic => -(g[2] + g[5]),
            _ => -g[2],
        }
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
pub const MAX_PARAMS: usize = 6;

/// Points per block of [`Curve::eval_block`]: enough that the per-block
/// set-up is spread thin (128 measured 7 % faster than 32 on 1000-point
/// fills), few enough that a block's scratch stays in the first-level cache.
pub(crate) const BLOCK: usize = 128;

/// Working space of [`Curve::eval_block`]: the exponentials' arguments
/// and values.
pub(crate) type BlockScratch = [[f64; BLOCK]; 2];

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
            // ln |ν|: for ν < 0 the curve takes `richards_nonpositive`.
            (q[3].abs().ln(), 1.0 / q[3], 1.0 / (q[3] * q[3]))
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
        let [k, r, t0, p3, _, _] = self.p;
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
            Model::Richards if !self.richards_positive() => {
                let (f, g) = self.richards_nonpositive(d);
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
            Model::Bass => {
                // Here (k, r, t0, p3) = (m, p, q, tau).
                let s = t - p3;
                let (f, g) = bass_out(k, r, t0, s, exp(-(r + t0) * s.max(0.0)));
                *grad = g;
                f
            }
            Model::Bilogistic => {
                let [k1, r1, t01, k2, r2, t02] = self.p;
                let (d1, d2) = (t - t01, t - t02);
                let (x1, x2) = (r1 * d1, r2 * d2);
                let (f1, g1) = sigmoid_out(k1, r1, 0.0, d1, x1, exp(-x1.abs()));
                let (f2, g2) = sigmoid_out(k2, r2, 0.0, d2, x2, exp(-x2.abs()));
                *grad = [g1[0], g1[1], g1[2], g2[0], g2[1], g2[2]];
                f1 + f2
            }
        }
    }

    /// Values at the points `t` (at most [`BLOCK`] of them) into `f` and,
    /// with `GRAD`, the derivatives with respect to parameter `j` into
    /// `g[j]` (each as long as `t`; entries of `g` past the model's
    /// parameters are left alone, and without `GRAD` all of `g` is).
    /// `scratch` is working space, set up once by the caller for all its
    /// blocks.
    #[inline(always)]
    pub(crate) fn eval_block<const GRAD: bool>(
        &self,
        t: &[f64],
        f: &mut [f64],
        g: [&mut [f64]; MAX_PARAMS],
        scratch: &mut BlockScratch,
    ) {
        let n = t.len().min(BLOCK);
        let t = &t[..n];
        let [k, r, t0, p3, _, _] = self.p;
        let f = &mut f[..n];
        // The model's gradient columns (empty without `GRAD`).
        let np = self.model.n_params();
        let mut g = g;
        for (j, c) in g.iter_mut().enumerate() {
            let col = std::mem::take(c);
            *c = if GRAD && j < np {
                &mut col[..n]
            } else {
                &mut []
            };
        }
        let [g0, g1, g2, g3, g4, g5] = g;
        // Writes the value and (with `GRAD`) the first `$np` derivatives
        // (of `$gr`, one per parameter slot) of point `$i`.
        macro_rules! put {
            ($i:expr, $v:expr, $gr:expr, $np:literal) => {{
                f[$i] = $v;
                if GRAD {
                    let gr: [f64; MAX_PARAMS] = $gr;
                    g0[$i] = gr[0];
                    g1[$i] = gr[1];
                    if $np > 2 {
                        g2[$i] = gr[2];
                    }
                    if $np > 3 {
                        g3[$i] = gr[3];
                    }
                    if $np > 5 {
                        g4[$i] = gr[4];
                        g5[$i] = gr[5];
                    }
                }
            }};
        }
        // Scratch for the exponentials' arguments and values.
        let [a, b] = scratch;
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
                    put!(i, v, gr, 3);
                }
            }
            Model::Logistic4 => {
                for i in 0..n {
                    a[i] = -(r * (t[i] - t0)).abs();
                }
                exp_in_place(a);
                for i in 0..n {
                    let d = t[i] - t0;
                    let (v, gr) = sigmoid_out(k, r, p3, d, r * d, a[i]);
                    put!(i, v, gr, 4);
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
                    put!(i, v, gr, 3);
                }
            }
            Model::Richards if !self.richards_positive() => {
                for i in 0..n {
                    let (v, gr) = self.richards_nonpositive(t[i] - t0);
                    put!(i, v, gr, 4);
                }
            }
            Model::Richards => {
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
                    put!(i, v, gr, 4);
                }
            }
            Model::Exponential => {
                for i in 0..n {
                    a[i] = r * t[i];
                }
                exp_in_place(a);
                for i in 0..n {
                    let e = a[i];
                    put!(i, k * e, [e, k * t[i] * e, 0.0, 0.0, 0.0, 0.0], 2);
                }
            }
            Model::Bass => {
                // (k, r, t0, p3) = (m, p, q, tau).
                let b = r + t0;
                for i in 0..n {
                    a[i] = -b * (t[i] - p3).max(0.0);
                }
                exp_in_place(a);
                for i in 0..n {
                    let (v, gr) = bass_out(k, r, t0, t[i] - p3, a[i]);
                    put!(i, v, gr, 4);
                }
            }
            Model::Bilogistic => {
                let [k1, r1, t01, k2, r2, t02] = self.p;
                for i in 0..n {
                    a[i] = -(r1 * (t[i] - t01)).abs();
                    b[i] = -(r2 * (t[i] - t02)).abs();
                }
                exp_in_place(a);
                exp_in_place(b);
                for i in 0..n {
                    let (d1, d2) = (t[i] - t01, t[i] - t02);
                    let (v1, p1) = sigmoid_out(k1, r1, 0.0, d1, r1 * d1, a[i]);
                    let (v2, p2) = sigmoid_out(k2, r2, 0.0, d2, r2 * d2, b[i]);
                    put!(i, v1 + v2, [p1[0], p1[1], p1[2], p2[0], p2[1], p2[2]], 6);
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
        let mut scratch = [[0.0; BLOCK]; 2];
        for (tb, ob) in t.chunks(BLOCK).zip(out.chunks_mut(BLOCK)) {
            self.eval_block::<false>(tb, ob, Default::default(), &mut scratch);
        }
    }

    /// Whether the Richards curve takes the vectorised path for `ν > 0`
    /// (else [`Curve::richards_nonpositive`]: `ν ≤ 0`, or `ν` so small that
    /// `1/ν²` would overflow, where the curve is the Gompertz limit to
    /// within rounding).
    #[inline(always)]
    fn richards_positive(&self) -> bool {
        self.p[3] > NU_GOMPERTZ
    }

    /// Richards value and gradient at `d = t − t0` for `ν ≤ NU_GOMPERTZ`:
    /// with `u = e^(−r d)`, the Gompertz limit `K e^(−u)` (and
    /// `∂y/∂ν = y u²/2`) for `|ν| ≤ NU_GOMPERTZ`; for `ν < 0`,
    /// `B = 1 − |ν| u = 1 − e^(ln|ν| − r d)`, `ln B = ln(1 − e^x)` and
    /// `w = ν u / B`, the same formulas as for `ν > 0` (NaN where `B ≤ 0`:
    /// the curve is not defined there).
    #[inline(always)]
    fn richards_nonpositive(&self, d: f64) -> (f64, [f64; MAX_PARAMS]) {
        let [k, r, _, nu, ..] = self.p;
        if nu.abs() <= NU_GOMPERTZ {
            let u = exp(-r * d);
            let (f, mut g) = gompertz_out(k, r, d, u, exp(-u));
            let uu = u * u;
            g[3] = if uu.is_finite() { 0.5 * f * uu } else { 0.0 };
            return (f, g);
        }
        let ex = exp(self.ln_nu - r * d);
        if ex.is_nan() || ex >= 1.0 {
            return (f64::NAN, [f64::NAN; MAX_PARAMS]);
        }
        let ln_b = (-ex).ln_1p();
        let w = -ex / (1.0 - ex);
        let big_e = exp(-ln_b * self.inv_nu);
        self.richards_out(d, ln_b, w, big_e)
    }

    /// Richards value and gradient from `d = t − t0`, `(ln B, w)` of
    /// [`richards_terms`] and `big_e = e^(−ln B / ν) = B^(−1/ν)`.
    #[inline(always)]
    fn richards_out(&self, d: f64, ln_b: f64, w: f64, big_e: f64) -> (f64, [f64; MAX_PARAMS]) {
        let [k, r, ..] = self.p;
        let y = k * big_e;
        let wn = w * self.inv_nu;
        (
            y,
            [
                big_e,
                y * wn * d,
                -y * wn * r,
                y * richards_nu_term(ln_b, w) * self.inv_nu2,
                0.0,
                0.0,
            ],
        )
    }
}

/// Below this |ν| the Richards curve is evaluated as its Gompertz limit:
/// the relative difference, about `ν u² / 2`, is below rounding, and
/// `1/ν²` in the ν-derivative would overflow.
pub(crate) const NU_GOMPERTZ: f64 = 1e-100;

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
    (l + h * s, [s, h * ds * d, -h * ds * r, sc, 0.0, 0.0])
}

/// Gompertz value and gradient from `d = t − t0`, `u = e^(−r d)` and
/// `g = e^(−u)`.
#[inline(always)]
fn gompertz_out(k: f64, r: f64, d: f64, u: f64, g: f64) -> (f64, [f64; MAX_PARAMS]) {
    // g·u → 0 as u → ∞; guard the ∞·0 that the product would give.
    let gu = if u.is_finite() { g * u } else { 0.0 };
    (k * g, [g, k * gu * d, -k * gu * r, 0.0, 0.0, 0.0])
}

/// Bass value and gradient (over m, p, q, tau) from `s = t − tau` and
/// `e = e^(−(p+q) max(s, 0))`. With `c = q/p` and `D = 1 + c e`:
///
/// ```text
/// F      = (1 − e) / D
/// ∂F/∂p  = (1 + c) s e / D² + c (1 − e) e / (p D²)
/// ∂F/∂q  = (1 + c) s e / D² − (1 − e) e / (p D²)
/// ∂F/∂tau = −(1 + c) (p + q) e / D²      (= −f(s), the adoption density)
/// ```
///
/// For `s ≤ 0` (before launch) everything is 0.
#[inline(always)]
fn bass_out(m: f64, p: f64, q: f64, s: f64, e: f64) -> (f64, [f64; MAX_PARAMS]) {
    let on = if s > 0.0 { 1.0 } else { 0.0 };
    let s = s.max(0.0);
    let c = q / p;
    let d = 1.0 + c * e;
    let inv_d = 1.0 / d;
    let one_e = 1.0 - e;
    let f = one_e * inv_d;
    let k = (1.0 + c) * e * inv_d * inv_d;
    let w = one_e * e * inv_d * inv_d / p;
    let dp = k * s + c * w;
    let dq = k * s - w;
    let dtau = -k * (p + q) * on;
    (m * f, [f, m * dp, m * dq, m * dtau, 0.0, 0.0])
}

/// Bass per-period adoptions `N(t) − N(t − 1)` (one time unit), the
/// discrete counterpart of the rate `m f(t − tau)`.
pub fn bass_per_period(p: &[f64], t: f64) -> f64 {
    Model::Bass.eval(p, t) - Model::Bass.eval(p, t - 1.0)
}

/// Bass peak time `t* = tau + ln(q/p)/(p+q)` for parameters `[m, p, q,
/// tau]` when `q > p`; `tau` otherwise (the adoption rate then falls from
/// launch on).
pub fn bass_peak_time(v: &[f64]) -> f64 {
    let (p, q, tau) = (v[1], v[2], v[3]);
    if q > p {
        tau + (q / p).ln() / (p + q)
    } else {
        tau
    }
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
    // `w < 0` for ν < 0 (the series holds for |w| < 1 either way).
    if w.abs() < 0.0625 {
        series
    } else {
        ln_b - w
    }
}

#[cfg(test)]
mod tests;
