//! Honest verdicts on ill-posed data: does the fitted curve describe the
//! data better than a constant or a straight line?
//!
//! Both references are fitted to the same residual-scale data with the
//! same weights as the curve (the curve's final weights for the relative
//! and count error models, so the likelihood's weight term is the same;
//! for the log error model the line is `ln(a + b t)`, fitted by the same
//! solver), and compared by AICc (k = free parameters + 1 for σ). With
//! `Δ = AICc(curve) − AICc(reference)`:
//!
//! - `no_trend`: `Δ ≥ 2` for the constant — a flat level describes the
//!   data better (trendless noise, alternating values);
//! - `looks_linear`: `Δ ≥ 2` for the line, and the line's AICc is below the
//!   constant's — a trend, but a straight one (an exact line, or a window
//!   too short to show any bend).
//!
//! AICc rather than an F or likelihood-ratio test: a straight line is not
//! a special case of the logistic, Gompertz or Bass curves (only a limit),
//! so the χ²/F reference of a nested test does not hold; AICc compares
//! non-nested models on the same data and error model, and is what the
//! comparison ranks models by. The margin 2 is Burnham & Anderson's (2002,
//! §2.6) edge of "substantial support": a curve within 2 of the reference
//! is still supported and is not flagged. Calibrated by seeded simulation
//! in `crates/plateau-core/tests/core/ill_posed.rs` (logistic series,
//! n 15–60, noise 1–5% of K): 2.95% of series whose window runs from 2–20%
//! to 80–98% of K are flagged (about 7% with a margin of 0), 0.5% when it
//! runs from 2–10% to 90–98%; 8.9% of early-phase windows (1–10% to 20–45%
//! of K) get `looks_linear`; trendless series get `no_trend` 88.5% of the
//! time.
//!
//! Fits of per-period increments are not checked (a constant running total
//! has no increments to fit).

use super::{Fit, Solved};
use crate::model::Model;
use crate::solver::{LeastSquares, Solver};
use crate::stats;
use crate::warning::{Warning, WarningCode};
use nalgebra::DMatrix;

/// AICc of the two references on the fit's data, when they apply.
#[derive(Debug, Clone, Copy)]
pub(super) struct References {
    pub constant: f64,
    pub line: f64,
}

/// Fits the references to the solved problem's data.
pub(super) fn references(solved: &Solved) -> Option<References> {
    if solved.scale.increments {
        return None;
    }
    let t = &solved.tt;
    let y = &solved.target;
    let n = y.len();
    if n < 5 {
        return None;
    }
    // Weights read from the fit (no copy of a long series).
    let sqrt_w = solved.sqrt_w.as_deref();
    let w = |i: usize| sqrt_w.map_or(1.0, |s| s[i] * s[i]);
    let sw: f64 = (0..n).map(w).sum();
    if sw.is_nan() || sw <= 0.0 {
        return None;
    }
    let mean = |v: &dyn Fn(usize) -> f64| (0..n).map(|i| w(i) * v(i)).sum::<f64>() / sw;
    let ybar = mean(&|i| y[i]);
    let rss_const: f64 = (0..n).map(|i| w(i) * (y[i] - ybar).powi(2)).sum();
    // Weighted least-squares line about the weighted mean time.
    let tbar = mean(&|i| t[i]);
    let stt: f64 = (0..n).map(|i| w(i) * (t[i] - tbar).powi(2)).sum();
    let sty: f64 = (0..n).map(|i| w(i) * (t[i] - tbar) * (y[i] - ybar)).sum();
    let b = if stt > 0.0 { sty / stt } else { 0.0 };
    let rss_line = if solved.scale.log {
        log_line_rss(t, y, solved.sqrt_w.as_deref())?
    } else {
        (0..n)
            .map(|i| w(i) * (y[i] - ybar - b * (t[i] - tbar)).powi(2))
            .sum()
    };
    let aicc = |rss: f64, p: usize| stats::criteria_with(rss, n, p, solved.loglik_extra).aicc;
    Some(References {
        constant: aicc(rss_const, 1),
        line: aicc(rss_line, 2),
    })
}

/// For the log error model: the least RSS of `ln y − ln(a + b t)` over
/// lines positive at every time, by the crate's solver from the
/// least-squares line through the values (or the flat level `e^mean(ln y)`
/// when that line is not positive everywhere).
fn log_line_rss(t: &[f64], ln_y: &[f64], sqrt_w: Option<&[f64]>) -> Option<f64> {
    let n = t.len();
    let y: Vec<f64> = ln_y.iter().map(|v| v.exp()).collect();
    let ybar = y.iter().sum::<f64>() / n as f64;
    let tbar = t.iter().sum::<f64>() / n as f64;
    let stt: f64 = t.iter().map(|v| (v - tbar).powi(2)).sum();
    let sty: f64 = t.iter().zip(&y).map(|(a, b)| (a - tbar) * (b - ybar)).sum();
    let b = if stt > 0.0 { sty / stt } else { 0.0 };
    let problem = LogLine { t, ln_y, sqrt_w };
    let mut x0 = vec![ybar - b * tbar, b];
    if !problem.feasible(&x0) {
        let g = (ln_y.iter().sum::<f64>() / n as f64).exp();
        x0 = vec![g, 0.0];
    }
    let out = Solver::default().minimize(&problem, &x0);
    out.rss.is_finite().then_some(out.rss)
}

struct LogLine<'a> {
    t: &'a [f64],
    ln_y: &'a [f64],
    sqrt_w: Option<&'a [f64]>,
}

impl LeastSquares for LogLine<'_> {
    fn n_residuals(&self) -> usize {
        self.t.len()
    }
    fn n_unknowns(&self) -> usize {
        2
    }
    fn feasible(&self, x: &[f64]) -> bool {
        x.iter().all(|v| v.is_finite()) && self.t.iter().all(|t| x[0] + x[1] * t > 0.0)
    }
    fn residuals(&self, x: &[f64], res: &mut [f64]) -> bool {
        let mut ok = true;
        for (i, r) in res.iter_mut().enumerate() {
            let f = x[0] + x[1] * self.t[i];
            let w = self.sqrt_w.map_or(1.0, |s| s[i]);
            *r = (self.ln_y[i] - f.ln()) * w;
            ok &= r.is_finite();
        }
        ok
    }
    fn jacobian(&self, x: &[f64], jac: &mut DMatrix<f64>) {
        for (i, &t) in self.t.iter().enumerate() {
            let f = x[0] + x[1] * t;
            let w = self.sqrt_w.map_or(1.0, |s| s[i]);
            // Of the residual ln y − ln f: −∂f/f.
            jac[(i, 0)] = -w / f;
            jac[(i, 1)] = -w * t / f;
        }
    }
}

/// How much lower (in AICc units) a reference must be than the curve for a
/// flag (see the module docs).
pub const MARGIN: f64 = 2.0;

/// The `no_trend` and `looks_linear` warnings for `fit` against `refs`.
pub(super) fn warnings(fit: &Fit, refs: &References) -> Vec<Warning> {
    let mut w = Vec::new();
    let curve = fit.aicc;
    if !curve.is_finite() {
        return w;
    }
    let curve_name = if fit.model == Model::Exponential {
        "the exponential curve".to_string()
    } else {
        format!("the {} growth curve", fit.model.name())
    };
    if refs.constant <= curve - MARGIN {
        w.push(Warning::new(
            WarningCode::NoTrend,
            format!(
                "a constant describes these data better than {curve_name} ({}): \
                 the data look trendless (noise, or values that alternate about one level), \
                 and no curve shape is supported",
                gap(curve - refs.constant)
            ),
        ));
    }
    if refs.line <= curve - MARGIN && refs.line < refs.constant {
        w.push(Warning::new(
            WarningCode::LooksLinear,
            format!(
                "a straight line describes these data better than {curve_name} ({}): \
                 the data look linear, and neither a saturation level nor a bend is supported",
                gap(curve - refs.line)
            ),
        ));
    }
    w
}

/// "AICc lower by …" for a sentence (an exact line's gap is unbounded).
fn gap(d: f64) -> String {
    if d > 1e4 {
        "AICc lower by more than 10000".into()
    } else {
        format!("AICc lower by {d:.2}")
    }
}
