//! Internally scaled units: the fit is computed on values multiplied by an
//! exact power of two and, when the time axis is badly scaled, on times
//! shifted and stretched, then every result is mapped back by the
//! parameters' [`Role`]s.
//!
//! With `y' = c y` (`c = 2^k`, chosen so that the largest |y'| lies in
//! [1, 2) when the largest |y| lies outside [2^-64, 2^64); else `c = 1`) and `t' = (t − t_c) s`:
//!
//! ```text
//! level   (K, L, m, a)   θ' = c θ
//! rate    (r, p, q)      θ' = θ / s
//! time    (t0, tau, …)   θ' = (θ − t_c) s
//! shape   (ν)            θ' = θ
//! ```
//!
//! Multiplying by a power of two is exact in floating point, so on data
//! that need no rescaling of time the internal problem is the user's
//! problem with every number's exponent moved: squares of residuals can
//! neither overflow nor underflow, whatever the data's magnitude. `s` is a
//! power of two too, and `t_c` is used only where the times all lie within
//! a factor of two of it, where `t − t_c` is exact (Sterbenz's lemma).
//!
//! Mapping back: estimates, standard errors, the covariance (`D C' D`, `D`
//! the diagonal of `dθ/dθ'`), asymptotic and profile intervals, fitted
//! values; `rss` by `c^(−q)` with `q` = 2 for additive errors, 1 for count
//! errors, 0 for relative and log errors (whose residuals do not depend on
//! the units); the log-likelihood by `ℓ(y) = ℓ(c y) + m ln c` for `m`
//! residuals (the density of `y` is `c^m` times that of `c y`, for every
//! error model), and AIC, AICc, BIC with it. R² and the condition number
//! of the column-equilibrated Jacobian do not depend on the units.

use super::{
    check_value, error, param_index, target_values, ErrorModel, Fit, FitError, FitErrorKind,
    FitOptions, Interval, Scale,
};
use crate::linalg;
use crate::model::{Model, Role};
use std::borrow::Cow;

/// Times are rescaled only when their span is outside
/// `[2^-TIME_EXP, 2^TIME_EXP]` (stretched to a span in [1, 2)) ...
const TIME_EXP: i32 = 32;
/// ... and shifted (for models with a time parameter) when the midpoint
/// is more than `2^SHIFT_EXP` spans from 0.
const SHIFT_EXP: i32 = 4;
/// Values are rescaled only when the largest |y| is outside
/// `[2^-VALUE_EXP, 2^VALUE_EXP)`: inside it, squares summed over any series
/// that fits in memory stay far from overflow and underflow, and a series
/// of ordinary magnitude is fitted as given (no scaled copy of a long
/// series).
const VALUE_EXP: i32 = 64;

/// The map from the user's units to the fit's.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Units {
    /// Values are multiplied by `2^value_exp`.
    pub value_exp: i32,
    /// Times: `t' = (t − t_c) 2^time_exp`.
    pub t_c: f64,
    pub time_exp: i32,
}

/// `v · 2^k`, exact unless the result overflows or underflows (in two
/// steps, so that `2^k` itself need not be representable).
pub(super) fn pow2(v: f64, k: i32) -> f64 {
    let (a, b) = pow2_pair(k);
    v * a * b
}

/// `(2^(k/2), 2^(k − k/2))`, from the bits (both normal numbers for every
/// |k| ≤ 2044, which covers any exponent that can matter). Both factors
/// have the sign of `k`, so an intermediate product under- or overflows
/// only when the result does.
fn pow2_pair(k: i32) -> (f64, f64) {
    let k = k.clamp(-2044, 2044);
    let two = |e: i32| f64::from_bits(((e + 1023) as u64) << 52);
    (two(k / 2), two(k - k / 2))
}

/// `v · 2^k` for every entry of `v`.
fn pow2_all(v: impl Iterator<Item = f64>, k: i32) -> Vec<f64> {
    let (a, b) = pow2_pair(k);
    v.map(|x| x * a * b).collect()
}

/// The binary exponent `e` with `2^e ≤ |v| < 2^(e+1)` (`v` finite, non-zero).
fn exponent(v: f64) -> i32 {
    let v = v.abs();
    let bits = v.to_bits();
    let e = ((bits >> 52) & 0x7ff) as i32;
    if e == 0 {
        // Subnormal: normalise first.
        exponent(v * 2f64.powi(64)) - 64
    } else {
        e - 1023
    }
}

impl Units {
    pub const IDENTITY: Units = Units {
        value_exp: 0,
        t_c: 0.0,
        time_exp: 0,
    };

    /// Chooses the internal units for the data, or says why they cannot
    /// be represented.
    pub fn choose(model: Model, t: &[f64], y: &[f64]) -> Result<Units, FitError> {
        for (ti, yi) in t.iter().zip(y) {
            if !ti.is_finite() {
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!("the time {ti} is not a finite number; expected finite times"),
                ));
            }
            if !yi.is_finite() {
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!("the value at time {ti} is {yi}; expected a finite number"),
                ));
            }
        }
        let mut units = Units::IDENTITY;
        let big = y.iter().fold(0.0_f64, |a, v| a.max(v.abs()));
        if big > 0.0 {
            let e = exponent(big);
            if !(-VALUE_EXP..VALUE_EXP).contains(&e) {
                units.value_exp = -e;
            }
            let small = y
                .iter()
                .filter(|v| **v != 0.0)
                .fold(f64::INFINITY, |a, v| a.min(v.abs()));
            if pow2(small, units.value_exp).abs() < f64::MIN_POSITIVE {
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!(
                        "the values range from {small:e} to {big:e} in magnitude, a ratio beyond \
                         what double precision can hold together; rescale or drop the smallest values"
                    ),
                ));
            }
        }
        if t.len() >= 2 {
            let (lo, hi) = linalg::min_max(t);
            let span = hi - lo;
            if !span.is_finite() {
                return Err(error(
                    FitErrorKind::InvalidValue,
                    format!("the times span from {lo:e} to {hi:e}, beyond what double precision can hold"),
                ));
            }
            if span > 0.0 {
                let e = exponent(span);
                if !(-TIME_EXP..=TIME_EXP).contains(&e) {
                    units.time_exp = -e;
                }
                let mid = 0.5 * lo + 0.5 * hi;
                if model.shift_invariant() && mid.abs() > pow2(span, SHIFT_EXP) {
                    units.t_c = mid;
                }
            }
        }
        Ok(units)
    }

    pub fn is_identity(&self) -> bool {
        *self == Units::IDENTITY
    }

    /// A parameter value in the fit's units.
    pub fn param_in(&self, role: Role, v: f64) -> f64 {
        match role {
            Role::Level => pow2(v, self.value_exp),
            Role::Rate => pow2(v, -self.time_exp),
            Role::Time => pow2(v - self.t_c, self.time_exp),
            Role::Shape => v,
        }
    }

    /// A parameter value in the user's units.
    pub fn param_out(&self, role: Role, v: f64) -> f64 {
        match role {
            Role::Level => pow2(v, -self.value_exp),
            Role::Rate => pow2(v, self.time_exp),
            Role::Time => pow2(v, -self.time_exp) + self.t_c,
            Role::Shape => v,
        }
    }

    /// `dθ/dθ'`, for standard errors and the covariance.
    fn slope_out(&self, role: Role) -> f64 {
        match role {
            Role::Level => pow2(1.0, -self.value_exp),
            Role::Rate => pow2(1.0, self.time_exp),
            Role::Time => pow2(1.0, -self.time_exp),
            Role::Shape => 1.0,
        }
    }

    /// A value (level) in the user's units.
    pub fn value_out(&self, v: f64) -> f64 {
        pow2(v, -self.value_exp)
    }

    /// A time in the user's units.
    pub fn time_out(&self, v: f64) -> f64 {
        self.param_out(Role::Time, v)
    }

    /// Times and values in the fit's units (borrowed when unchanged).
    pub fn data<'a>(&self, t: &'a [f64], y: &'a [f64]) -> (Cow<'a, [f64]>, Cow<'a, [f64]>) {
        let tt = if self.t_c == 0.0 && self.time_exp == 0 {
            Cow::Borrowed(t)
        } else {
            Cow::Owned(pow2_all(t.iter().map(|v| v - self.t_c), self.time_exp))
        };
        let yy = if self.value_exp == 0 {
            Cow::Borrowed(y)
        } else {
            Cow::Owned(pow2_all(y.iter().copied(), self.value_exp))
        };
        (tt, yy)
    }

    /// Fixed values and starts in the fit's units, after checking them in
    /// the user's (so that messages quote the user's numbers). Weights are
    /// relative and pass unchanged.
    pub fn options_in(&self, model: Model, opts: &FitOptions) -> Result<FitOptions, FitError> {
        let roles = model.roles();
        let map = |list: &[(String, f64)]| -> Result<Vec<(String, f64)>, FitError> {
            list.iter()
                .map(|(name, v)| {
                    let j = param_index(model, name)?;
                    check_value(model, j, *v)?;
                    let w = self.param_in(roles[j], *v);
                    if !w.is_finite() || (*v != 0.0 && w == 0.0) {
                        return Err(error(
                            FitErrorKind::InvalidValue,
                            format!(
                                "{} = {} cannot be represented on the scale of the data (it is \
                                 too far from the data's magnitude)",
                                model.param_names()[j],
                                v
                            ),
                        ));
                    }
                    Ok((name.clone(), w))
                })
                .collect()
        };
        Ok(FitOptions {
            fixed: map(&opts.fixed)?,
            start: map(&opts.start)?,
            ..opts.clone()
        })
    }

    /// Checks of the data that quote values, made in the user's units
    /// before the fit sees the scaled ones.
    pub fn precheck(t: &[f64], y: &[f64], opts: &FitOptions) -> Result<(), FitError> {
        if let Some(&first) = y.first() {
            if y.len() == t.len() && y.iter().all(|v| *v == first) {
                return Err(error(
                    FitErrorKind::ConstantData,
                    format!(
                        "all {} values equal {first}: a growth curve cannot be fitted to constant data",
                        y.len()
                    ),
                ));
            }
        }
        if opts.error_model == ErrorModel::Log && y.len() == t.len() && !y.is_empty() {
            let scale = Scale {
                increments: opts.increments,
                log: true,
            };
            target_values(t, y, scale)?;
        }
        Ok(())
    }

    /// Maps a fit computed in these units back to the user's: estimates
    /// (fixed ones restored exactly as given), errors, covariance,
    /// intervals, rss, sigma, criteria and fitted values.
    pub fn fit_out(&self, fit: &mut Fit, opts: &FitOptions) {
        let roles = fit.model.roles();
        let m = fit.n as f64;
        for (j, p) in fit.params.iter_mut().enumerate() {
            let role = roles[j];
            p.estimate = self.param_out(role, p.estimate);
            if p.fixed {
                if let Some((_, v)) = opts.fixed.iter().rev().find(|(n, _)| n.trim() == p.name) {
                    p.estimate = *v;
                }
            }
            let d = self.slope_out(role);
            p.std_error = p.std_error.map(|s| s * d);
            p.ci95 = p
                .ci95
                .map(|(a, b)| (self.param_out(role, a), self.param_out(role, b)));
            p.interval = p.interval.map(|iv| Interval {
                lo: iv.lo.map(|v| self.param_out(role, v)),
                hi: iv.hi.map(|v| self.param_out(role, v)),
                method: iv.method,
            });
        }
        if let Some(c) = fit.covariance.as_mut() {
            let d: Vec<f64> = fit.free.iter().map(|&j| self.slope_out(roles[j])).collect();
            for a in 0..d.len() {
                for b in 0..d.len() {
                    c[(a, b)] *= d[a] * d[b];
                }
            }
        }
        // rss: c^(−q); the log-likelihood: + m ln c, c = 2^value_exp.
        let q = match fit.error_model {
            ErrorModel::Additive => 2,
            ErrorModel::Count => 1,
            ErrorModel::Relative | ErrorModel::Log => 0,
        };
        fit.rss = pow2(fit.rss, -q * self.value_exp);
        // σ from the fit's own σ (so that it stays representable when rss
        // over- or underflows in the user's units): c^(−q/2).
        let e = -q * self.value_exp;
        fit.sigma = pow2(fit.sigma, e.div_euclid(2))
            * if e.rem_euclid(2) == 1 {
                std::f64::consts::SQRT_2
            } else {
                1.0
            };
        let shift = m * f64::from(self.value_exp) * std::f64::consts::LN_2;
        fit.log_likelihood += shift;
        fit.aic -= 2.0 * shift;
        fit.aicc -= 2.0 * shift;
        fit.bic -= 2.0 * shift;
        let (a, b) = pow2_pair(-self.value_exp);
        for v in fit.fitted.iter_mut() {
            *v = *v * a * b;
        }
    }
}
