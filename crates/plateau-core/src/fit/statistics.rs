//! The statistics of a solved fit: covariance from the solver's factor,
//! standard errors and asymptotic intervals, R², log-likelihood and
//! information criteria, fitted values, all gathered into a [`Fit`].

use super::problem::{on_scale, Scale};
use super::solve::Solved;
use super::{scaled, CiMethod, Fit, FitOptions, Interval, ParamEstimate};
use crate::model::{Curve, Model};
use crate::stats;
use crate::warning::{Warning, WarningCode};
use nalgebra::DMatrix;

/// Standard errors, intervals, criteria, fitted values and warnings.
pub(super) fn statistics(
    t: &[f64],
    model: Model,
    solved: &Solved,
    opts: &FitOptions,
    units: &scaled::Units,
) -> Fit {
    let Solved {
        outcome,
        p,
        r,
        fixed,
        free,
        t_ref,
        tt,
        target,
        sqrt_w,
        scale,
        loglik_extra,
        notes,
    } = solved;
    let (t_ref, scale) = (*t_ref, *scale);
    let mut p = p.clone();
    let free = free.clone();
    let names = model.param_names();
    let np = names.len();
    // Residuals (observations, or differences for increments).
    let n = target.len();
    // Statistics on the (possibly shifted) axis, from the solver's
    // factorisation of the Jacobian at the estimate.
    let dof = n - free.len();
    // R² on the data's own scale, unweighted.
    let rss_plain = if scale == Scale::default() && sqrt_w.is_none() {
        outcome.rss
    } else {
        let f = on_scale(model, &p, tt, scale.increments);
        f.iter()
            .zip(target)
            .map(|(f, y)| {
                let y = if scale.log { y.exp() } else { *y };
                (y - f) * (y - f)
            })
            .sum()
    };
    let logged: Vec<f64>;
    let plain_target: &[f64] = if scale.log {
        logged = target.iter().map(|v| v.exp()).collect();
        &logged
    } else {
        target
    };
    let rss = outcome.rss;
    let sigma2 = rss / dof as f64;
    let k = free.len();
    let cov = if r.len() == k * k {
        stats::covariance_from_triangle(r, k, n, sigma2)
    } else {
        // No finite factorisation: nothing can be told apart.
        stats::Covariance {
            matrix: None,
            condition_number: f64::INFINITY,
        }
    };
    let mut covariance = cov.matrix;
    let mut warnings = notes.clone();

    if t_ref != 0.0 {
        // a = a' e^(−r t_ref); Jacobian of (a', r) ↦ (a, r) for the covariance.
        let scale = (-p[1] * t_ref).exp();
        let a = p[0] * scale;
        if let Some(c) = covariance.as_mut() {
            if free.len() == 2 {
                let g = DMatrix::from_row_slice(2, 2, &[scale, -t_ref * a, 0.0, 1.0]);
                *c = &g * &*c * g.transpose();
            } else if free == [0] {
                *c *= scale * scale;
            }
        }
        if !(a.is_finite() && (a != 0.0 || p[0] == 0.0)) {
            warnings.push(Warning::new(
                WarningCode::ParameterNotRepresentable,
                format!(
                    "a = y(0) is not representable on this time axis (a' = {:.6} at t = {}); \
                     the curve itself is fine",
                    units.value_out(p[0]),
                    units.time_out(t_ref)
                ),
            ));
        }
        p[0] = a;
    }

    let tq = stats::t_quantile(0.95, dof);
    let params: Vec<ParamEstimate> = (0..np)
        .map(|j| {
            let estimate = p[j];
            let is_fixed = fixed[j].is_some();
            let se = if is_fixed {
                None
            } else {
                let c = free.iter().position(|&f| f == j).expect("free index");
                covariance
                    .as_ref()
                    .map(|m| m[(c, c)].max(0.0).sqrt())
                    .filter(|v| v.is_finite())
            };
            ParamEstimate {
                name: names[j],
                estimate,
                std_error: se,
                ci95: se.map(|s| (estimate - tq * s, estimate + tq * s)),
                fixed: is_fixed,
                interval: se.map(|s| Interval {
                    lo: Some(estimate - tq * s),
                    hi: Some(estimate + tq * s),
                    method: CiMethod::Asymptotic,
                }),
                identified: true,
            }
        })
        .collect();

    let mut fitted = vec![0.0; t.len()];
    Curve::new(model, &p).values(t, &mut fitted);
    let crit = stats::criteria_with(rss, n, free.len(), *loglik_extra);
    Fit {
        model,
        n,
        dof,
        rss,
        sigma: sigma2.sqrt(),
        r_squared: stats::r_squared(rss_plain, plain_target),
        log_likelihood: crit.log_likelihood,
        aic: crit.aic,
        aicc: crit.aicc,
        bic: crit.bic,
        converged: outcome.converged(),
        termination: outcome.termination,
        iterations: outcome.iterations,
        condition_number: cov.condition_number,
        params,
        free,
        covariance,
        fitted,
        warnings,
        error_model: opts.error_model,
        increments: scale.increments,
    }
}
