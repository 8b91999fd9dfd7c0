//! The warnings that say how far to trust a finished fit: not converged,
//! singular or ill-conditioned, parameters at a bound, a saturation level
//! the data do not determine, data ending before the inflection. Nothing
//! new is computed here; it only reads the fit (and marks parameters not
//! identified).

use super::{profile, CiMethod, Fit};
use crate::linalg;
use crate::model::{bass_peak_time, Domain, Model, Role};
use crate::stats;
use crate::warning::{Warning, WarningCode};

/// The time of the (last) inflection point, with its name: t0; the Bass
/// peak time `t* = tau + ln(q/p)/(p+q)` (`tau` when `q ≤ p`: the rate is
/// highest at launch); the later pulse's t02 for the bi-logistic.
fn inflection(fit: &Fit) -> Option<(&'static str, f64)> {
    let v = fit.values();
    match fit.model {
        Model::Exponential => None,
        Model::Bass => Some(("t*", bass_peak_time(&v))),
        Model::Bilogistic => Some(("t02", v[2].max(v[5]))),
        _ => Some(("t0", v[2])),
    }
}

/// Thresholds of [`trust_warnings`]. K counts as not identified when its relative
/// standard error exceeds this...
pub const K_REL_SE_LIMIT: f64 = 0.3;
/// ...or when the rise above the floor exceeds this multiple of the observed rise.
pub const K_RANGE_LIMIT: f64 = 5.0;

/// Adds the warnings that say how far to trust a fit.
pub(super) fn trust_warnings(fit: &mut Fit, t: &[f64], y: &[f64]) {
    let mut w = Vec::new();
    if !fit.converged {
        w.push(Warning::new(
            WarningCode::NotConverged,
            format!(
                "the solver did not converge ({}) after {} iterations; the estimates may be far from the best fit",
                fit.termination.describe(),
                fit.iterations
            ),
        ));
    }
    if fit.covariance.is_none() && !fit.free.is_empty() {
        w.push(Warning::new(
            WarningCode::SingularJacobian,
            "the Jacobian is singular at the estimate: some parameters cannot be told apart, \
             so no standard errors are given",
        ));
    } else if fit.condition_number > stats::ILL_CONDITIONED {
        w.push(Warning::new(
            WarningCode::IllConditioned,
            format!(
                "the Jacobian is ill-conditioned (condition number {:.2e}): the standard errors are unreliable",
                fit.condition_number
            ),
        ));
    }
    let (tmin, tmax) = linalg::min_max(t);
    let ymax = linalg::min_max(y).1;
    let span = (tmax - tmin).max(f64::MIN_POSITIVE);
    let roles = fit.model.roles();
    for (j, p) in fit.params.iter().enumerate() {
        if p.fixed || fit.model.domains()[j] != Domain::Positive {
            continue;
        }
        let near = match roles[j] {
            Role::Rate => p.estimate * span < 1e-3,
            Role::Shape => !(1e-3..=1e3).contains(&p.estimate),
            Role::Level | Role::Time => p.estimate < 1e-9 * ymax.abs().max(f64::MIN_POSITIVE),
        };
        if near {
            w.push(Warning::new(
                WarningCode::ParameterAtBound,
                format!(
                    "{} = {:.6e} is at the edge of its allowed range",
                    p.name, p.estimate
                ),
            ));
        }
    }
    // The saturation levels: the positive levels K, Bass's m, and each
    // pulse's K1 and K2 of the bi-logistic (whose level is their sum: a
    // pulse the data do not determine leaves the sum undetermined too);
    // not the floor L or the exponential's a (levels of any sign).
    let levels: Vec<usize> = (0..fit.params.len())
        .filter(|&j| {
            roles[j] == Role::Level
                && fit.model.domains()[j] == Domain::Positive
                && !fit.params[j].fixed
        })
        .collect();
    for kj in levels {
        let k = &fit.params[kj];
        let floor = fit.param("L").map_or(0.0, |l| l.estimate);
        let observed_rise = ymax - floor;
        let rel_se = k.std_error.map(|s| s / k.estimate.abs());
        let mut reasons = Vec::new();
        match rel_se {
            None => reasons.push(format!("{} has no standard error", k.name)),
            Some(r) if r > K_REL_SE_LIMIT => reasons.push(format!(
                "its standard error is {:.0}% of {}",
                100.0 * r,
                k.name
            )),
            _ => {}
        }
        if observed_rise > 0.0 && (k.estimate - floor) > K_RANGE_LIMIT * observed_rise {
            reasons.push(format!(
                "{} is {:.1} times the highest observation",
                k.name,
                (k.estimate - floor) / observed_rise
            ));
        }
        if fit.condition_number > stats::ILL_CONDITIONED {
            reasons.push("the fit is ill-conditioned".to_string());
        }
        if let Some(iv) = k.interval.filter(|i| i.method == CiMethod::Profile) {
            if iv.hi.is_none() {
                reasons.push(format!(
                    "its profile likelihood stays inside the 95% threshold for every {} up to {} times the data's range above the estimate",
                    k.name,
                    profile::WIDE
                ));
            }
        }
        if k.estimate - floor < 1e-9 * ymax.abs().max(f64::MIN_POSITIVE) {
            reasons.push(format!("{} ended at the edge of its allowed range", k.name));
        }
        if !reasons.is_empty() {
            // No upper bound is claimed, and the asymptotic interval is
            // withheld by the report (`identified == false`).
            let k = &mut fit.params[kj];
            k.identified = false;
            if let Some(iv) = k.interval.as_mut() {
                iv.hi = None;
            }
            w.push(Warning::new(
                WarningCode::SaturationNotIdentified,
                format!(
                    "the data do not determine the saturation level {} ({}): treat {} as unknown, \
                     not as the estimate shown",
                    k.name,
                    reasons.join("; "),
                    k.name
                ),
            ));
        }
    }
    // Any free parameter whose interval is open on a side (or that has no
    // interval at all) is not determined by the data.
    for p in fit.params.iter_mut().filter(|p| !p.fixed) {
        if p.interval
            .is_none_or(|iv| iv.lo.is_none() || iv.hi.is_none())
        {
            p.identified = false;
        }
    }
    if let Some((name, t_infl)) = inflection(fit) {
        if tmax < t_infl {
            w.push(Warning::new(
                WarningCode::BeforeInflection,
                format!(
                    "the data end before the fitted inflection point {name} = {t_infl:.4}: the upper part of the \
                     curve is an extrapolation, and fits at this stage are unreliable",
                ),
            ));
        }
    }
    fit.warnings.extend(w);
}
