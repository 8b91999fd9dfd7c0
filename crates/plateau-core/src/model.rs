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

/// A model with its parameters bound, for evaluating many times: whatever
/// depends on the parameters alone (ln ν for the Richards curve) is
/// computed once, and value and gradient share their exponentials.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Curve {
    model: Model,
    p: [f64; MAX_PARAMS],
    /// ln ν (Richards only).
    ln_nu: f64,
}

impl Curve {
    pub(crate) fn new(model: Model, p: &[f64]) -> Curve {
        let n = model.n_params();
        let mut q = [0.0; MAX_PARAMS];
        q[..n].copy_from_slice(&p[..n]);
        let ln_nu = if model == Model::Richards {
            q[3].ln()
        } else {
            0.0
        };
        Curve {
            model,
            p: q,
            ln_nu,
        }
    }

    /// `y(t)`.
    #[inline]
    pub(crate) fn value(&self, t: f64) -> f64 {
        let p = &self.p;
        match self.model {
            Model::Logistic => p[0] * sigmoid(p[1] * (t - p[2])),
            Model::Logistic4 => p[3] + (p[0] - p[3]) * sigmoid(p[1] * (t - p[2])),
            Model::Gompertz => p[0] * (-(-p[1] * (t - p[2])).exp()).exp(),
            Model::Richards => {
                let (ln_b, _) = richards_terms(self.ln_nu - p[1] * (t - p[2]));
                p[0] * (-ln_b / p[3]).exp()
            }
            Model::Exponential => p[0] * (p[1] * t).exp(),
        }
    }

    /// `y(t)` (the same number as [`Curve::value`]) and its gradient.
    #[inline]
    pub(crate) fn value_grad(&self, t: f64, grad: &mut [f64; MAX_PARAMS]) -> f64 {
        let p = &self.p;
        match self.model {
            Model::Logistic => {
                let (k, r, t0) = (p[0], p[1], p[2]);
                let d = t - t0;
                // s (1 − s) from the complementary sigmoid keeps precision
                // in the upper tail where 1 − s cancels.
                let (s, sc) = sigmoid_pair(r * d);
                let ds = s * sc;
                grad[0] = s;
                grad[1] = k * ds * d;
                grad[2] = -k * ds * r;
                k * s
            }
            Model::Logistic4 => {
                let (k, r, t0, l) = (p[0], p[1], p[2], p[3]);
                let d = t - t0;
                let (s, sc) = sigmoid_pair(r * d);
                let ds = s * sc;
                grad[0] = s;
                grad[1] = (k - l) * ds * d;
                grad[2] = -(k - l) * ds * r;
                grad[3] = sc;
                l + (k - l) * s
            }
            Model::Gompertz => {
                let (k, r, t0) = (p[0], p[1], p[2]);
                let d = t - t0;
                let u = (-r * d).exp();
                let g = (-u).exp();
                // g·u → 0 as u → ∞; guard the ∞·0 that the product would give.
                let gu = if u.is_finite() { g * u } else { 0.0 };
                grad[0] = g;
                grad[1] = k * gu * d;
                grad[2] = -k * gu * r;
                k * g
            }
            Model::Richards => {
                let (k, r, t0, nu) = (p[0], p[1], p[2], p[3]);
                let d = t - t0;
                let (ln_b, w) = richards_terms(self.ln_nu - r * d);
                let y = k * (-ln_b / nu).exp();
                grad[0] = y / k;
                grad[1] = y * (w / nu) * d;
                grad[2] = -y * (w / nu) * r;
                grad[3] = y * richards_nu_term(ln_b, w) / (nu * nu);
                y
            }
            Model::Exponential => {
                let (a, r) = (p[0], p[1]);
                let e = (r * t).exp();
                grad[0] = e;
                grad[1] = a * t * e;
                a * e
            }
        }
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

/// `(sigmoid(x), sigmoid(−x))` from one exponential; each is the same
/// number [`sigmoid`] gives.
#[inline]
fn sigmoid_pair(x: f64) -> (f64, f64) {
    let e = (-x.abs()).exp();
    let den = 1.0 + e;
    if x >= 0.0 {
        (1.0 / den, e / den)
    } else {
        (e / den, 1.0 / den)
    }
}

/// For the Richards curve, with `B = 1 + ν e^(−r (t − t0))` and
/// `x = ln ν − r (t − t0)`: returns `(ln B, ν e^(−r (t − t0)) / B)`, that is
/// `(softplus(x), sigmoid(x))`, from the one exponential `e^(−|x|) ≤ 1`
/// so that nothing overflows: `ln(1 + e^x) = max(x, 0) + ln(1 + e^(−|x|))`.
#[inline]
fn richards_terms(x: f64) -> (f64, f64) {
    let e = (-x.abs()).exp();
    let den = 1.0 + e;
    if x >= 0.0 {
        (x + e.ln_1p(), 1.0 / den)
    } else {
        (e.ln_1p(), e / den)
    }
}

/// `ln B − ν e^(−r (t − t0)) / B` for the Richards ν-derivative, from
/// `(ln B, w)` of [`richards_terms`]. As `w → 0` both terms tend to `w` and
/// their difference `−ln(1 − w) − w = Σ_{k≥2} wᵏ/k` would cancel (to
/// nothing at all when ν is tiny), so small `w` take the series.
#[inline]
fn richards_nu_term(ln_b: f64, w: f64) -> f64 {
    if w < 0.0625 {
        // Terms to w¹⁵/15; the next is below 1e-17 of the sum for w < 1/16.
        let mut acc = 1.0 / 15.0;
        for k in (2..15).rev() {
            acc = 1.0 / k as f64 + w * acc;
        }
        w * w * acc
    } else {
        ln_b - w
    }
}

#[cfg(test)]
mod tests;
