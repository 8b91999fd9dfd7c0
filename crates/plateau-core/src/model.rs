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
        match self {
            Model::Logistic => p[0] * sigmoid(p[1] * (t - p[2])),
            Model::Logistic4 => p[3] + (p[0] - p[3]) * sigmoid(p[1] * (t - p[2])),
            Model::Gompertz => p[0] * (-(-p[1] * (t - p[2])).exp()).exp(),
            Model::Richards => {
                let (ln_b, _) = richards_terms(p[1], p[2], p[3], t);
                p[0] * (-ln_b / p[3]).exp()
            }
            Model::Exponential => p[0] * (p[1] * t).exp(),
        }
    }

    /// `y(t)` and its gradient with respect to `p`, written into `grad`
    /// (length [`Model::n_params`]).
    pub fn eval_grad(self, p: &[f64], t: f64, grad: &mut [f64]) -> f64 {
        match self {
            Model::Logistic => {
                let (k, r, t0) = (p[0], p[1], p[2]);
                let d = t - t0;
                let s = sigmoid(r * d);
                // s (1 − s) computed from the complementary sigmoid keeps
                // precision in the upper tail where 1 − s cancels.
                let ds = s * sigmoid(-r * d);
                grad[0] = s;
                grad[1] = k * ds * d;
                grad[2] = -k * ds * r;
                k * s
            }
            Model::Logistic4 => {
                let (k, r, t0, l) = (p[0], p[1], p[2], p[3]);
                let d = t - t0;
                let s = sigmoid(r * d);
                let sc = sigmoid(-r * d);
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
                let (ln_b, w) = richards_terms(r, t0, nu, t);
                let y = k * (-ln_b / nu).exp();
                grad[0] = y / k;
                grad[1] = y * (w / nu) * d;
                grad[2] = -y * (w / nu) * r;
                grad[3] = y * (ln_b - w) / (nu * nu);
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

/// For the Richards curve, with `B = 1 + ν e^(−r (t − t0))`: returns
/// `(ln B, ν e^(−r (t − t0)) / B)`, both computed from
/// `x = ln ν − r (t − t0)` so that neither overflows.
fn richards_terms(r: f64, t0: f64, nu: f64, t: f64) -> (f64, f64) {
    let x = nu.ln() - r * (t - t0);
    (softplus(x), sigmoid(x))
}

#[cfg(test)]
mod tests;
