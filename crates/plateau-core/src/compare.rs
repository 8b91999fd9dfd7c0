//! Model comparison: every model fitted to the same data and ranked by
//! AICc, with ΔAICc and Akaike weights (Burnham & Anderson 2002, §2.9):
//!
//! ```text
//! Δ_i = AICc_i − min AICc
//! w_i = exp(−Δ_i / 2) / Σ_j exp(−Δ_j / 2)
//! ```
//!
//! Also: likelihood-ratio tests of the nested pairs ([`nested_tests`]) and a
//! recommendation that names its reasons ([`recommend`]).

use crate::diagnostics::{fmt_p, lr_of_fits, residual_diagnostics, Verdict, ALPHA};
use crate::fit::{fit_xy, Fit, FitError, FitErrorKind, FitOptions};
use crate::model::Model;
use crate::warning::WarningCode;
use serde::Serialize;

/// One model's line in a comparison.
#[derive(Debug, Clone)]
pub struct Entry {
    pub model: Model,
    /// The fit, or why there is none (e.g. too few points for this model).
    pub result: Result<Fit, FitError>,
    /// `AICc − min AICc` over the models that were fitted.
    pub delta_aicc: Option<f64>,
    pub akaike_weight: Option<f64>,
}

/// Fits every model in `models` and ranks them by AICc (best first); models
/// that could not be fitted come last, in the given order. Each model is
/// fitted with [`options_for`] it.
pub fn compare(t: &[f64], y: &[f64], models: &[Model], opts: &FitOptions) -> Vec<Entry> {
    let mut entries: Vec<Entry> = models
        .iter()
        .map(|&model| {
            let result = options_for(model, opts).and_then(|o| fit_xy(t, y, model, &o));
            Entry {
                model,
                result,
                delta_aicc: None,
                akaike_weight: None,
            }
        })
        .collect();
    let aicc = |e: &Entry| {
        e.result
            .as_ref()
            .ok()
            .map(|f| f.aicc)
            .filter(|a| a.is_finite())
    };
    let best = entries
        .iter()
        .filter_map(aicc)
        .fold(f64::INFINITY, f64::min);
    if best.is_finite() {
        let total: f64 = entries
            .iter()
            .filter_map(aicc)
            .map(|a| (-(a - best) / 2.0).exp())
            .sum();
        for e in &mut entries {
            if let Some(a) = aicc(e) {
                e.delta_aicc = Some(a - best);
                e.akaike_weight = Some((-(a - best) / 2.0).exp() / total);
            }
        }
    }
    entries.sort_by(|a, b| match (a.delta_aicc, b.delta_aicc) {
        (Some(x), Some(y)) => x.total_cmp(&y),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    entries
}

/// The options for fitting `model` as one of several models under the same
/// settings (a comparison, a backtest).
///
/// A fixed `K` (or Bass's `m`) is a known saturation level, the same for
/// every model: each model holds its own level parameter there (`K`, or
/// `m` for the Bass model), so that the models are compared under one
/// assumption. The bi-logistic's level is `K1 + K2`, which no one parameter
/// holds, so it gets an error saying so; the exponential has no level, and
/// is fitted as it is. K and m given with different values contradict each
/// other: every model with a level gets an error. Other fixed and starting
/// values apply to the models that have a parameter of that name.
pub fn options_for(model: Model, opts: &FitOptions) -> Result<FitOptions, FitError> {
    let mut o = opts.clone();
    o.fixed
        .retain(|(name, _)| !is_level(name) && model.param_index(name.trim()).is_some());
    o.start
        .retain(|(name, _)| model.param_index(name.trim()).is_some());
    let Some(level) = known_levels(&opts.fixed).next() else {
        return Ok(o);
    };
    if model == Model::Exponential {
        return Ok(o);
    }
    let not_applicable = |message: String| FitError {
        kind: FitErrorKind::NotApplicable,
        message,
    };
    if let Some((a, b)) = level_conflict(&opts.fixed) {
        return Err(not_applicable(format!(
            "the known saturation level is given twice, as {} = {} and {} = {}: give it once",
            a.0, a.1, b.0, b.1
        )));
    }
    let Some(name) = model.level_param() else {
        return Err(not_applicable(format!(
            "a known saturation level cannot be applied: the {} model's level is {}, \
             which no one parameter holds",
            model.name(),
            model.saturation_name()
        )));
    };
    o.fixed.push((name.to_string(), level.1));
    Ok(o)
}

/// Whether a fixed parameter's name stands for the known saturation level.
fn is_level(name: &str) -> bool {
    matches!(name.trim(), "K" | "m")
}

/// The fixed values of the known saturation level (`K` or `m`), as
/// `(name, value)` in the order given.
fn known_levels(fixed: &[(String, f64)]) -> impl Iterator<Item = (&str, f64)> {
    fixed
        .iter()
        .filter(|(name, _)| is_level(name))
        .map(|(name, v)| (name.trim(), *v))
}

/// The first known level and the first later one with a different value,
/// when the fixed values give the level twice over (see [`options_for`]).
#[allow(clippy::type_complexity)]
pub fn level_conflict(fixed: &[(String, f64)]) -> Option<((&str, f64), (&str, f64))> {
    let mut levels = known_levels(fixed);
    let first = levels.next()?;
    levels.find(|l| l.1 != first.1).map(|other| (first, other))
}

/// Nested pairs `(nested, general)` tested by likelihood ratio: the
/// logistic is the four-parameter logistic with L = 0 and the Richards
/// curve with ν = 1.
pub const NESTED_PAIRS: [(Model, Model); 2] = [
    (Model::Logistic, Model::Logistic4),
    (Model::Logistic, Model::Richards),
];

/// A likelihood-ratio test of a nested pair.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LrTest {
    pub nested: Model,
    pub general: Model,
    /// `2 (ℓ_general − ℓ_nested)` (`n ln(RSS_nested / RSS_general)` for
    /// additive errors).
    pub statistic: f64,
    /// Extra free parameters of the general model.
    pub df: usize,
    /// From χ²(df).
    pub p_value: f64,
    /// What the restriction is and whether the χ² reference is regular.
    pub note: &'static str,
}

fn restriction_note(general: Model) -> &'static str {
    match general {
        Model::Logistic4 => {
            "L = 0 lies inside L's range (L may take either sign), so the usual \
             likelihood-ratio test holds."
        }
        Model::Richards => {
            "ν = 1 lies inside ν's range (ν > 0), so the usual likelihood-ratio test holds. \
             The Gompertz curve is the limit ν → 0 and is compared by AICc only."
        }
        _ => "",
    }
}

/// Likelihood-ratio tests for the [`NESTED_PAIRS`] that were both fitted
/// (converged, finite RSS, same n and error model). See
/// [`crate::diagnostics::lr_of_fits`] for the statistic.
pub fn nested_tests(entries: &[Entry]) -> Vec<LrTest> {
    let fitted = |m: Model| {
        entries
            .iter()
            .find(|e| e.model == m)
            .and_then(|e| e.result.as_ref().ok())
            .filter(|f| f.converged && f.rss.is_finite())
    };
    NESTED_PAIRS
        .iter()
        .filter_map(|&(a, b)| {
            let (fa, fb) = (fitted(a)?, fitted(b)?);
            let (statistic, p_value, df) = lr_of_fits(fa, fb)?;
            Some(LrTest {
                nested: a,
                general: b,
                statistic,
                df,
                p_value,
                note: restriction_note(b),
            })
        })
        .collect()
}

/// Warnings that make a fit's parameters untrustworthy (not identified by
/// the data), so that a low AICc alone does not earn a recommendation.
pub const IDENTIFIABILITY_WARNINGS: [WarningCode; 5] = [
    WarningCode::NotConverged,
    WarningCode::SingularJacobian,
    WarningCode::IllConditioned,
    WarningCode::ParameterAtBound,
    WarningCode::SaturationNotIdentified,
];

/// Warnings that say the data show no S-curve at all: a constant or a
/// straight line describes them better than the curve (see [`crate::fit`]'s
/// shape checks).
pub const SHAPE_WARNINGS: [WarningCode; 2] = [WarningCode::NoTrend, WarningCode::LooksLinear];

/// The model to use and why.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Recommendation {
    /// `None` when no model was fitted, or when the data support no S-curve
    /// (see [`recommend`]; the first reason says why).
    pub model: Option<Model>,
    /// One short sentence per reason, most important first.
    pub reasons: Vec<String>,
    /// The recommended model's residual verdicts.
    pub residual_verdicts: Vec<Verdict>,
}

/// Recommends a model from a comparison of fits to `(t, y)`:
///
/// 1. Among fitted models without [`IDENTIFIABILITY_WARNINGS`], take the
///    lowest AICc (if every model has such a warning, the lowest AICc
///    overall, said so).
/// 2. If that model contains the logistic ([`NESTED_PAIRS`]), the logistic
///    is clean, and the likelihood-ratio test does not reject the logistic
///    (p ≥ 0.05), prefer the logistic: the extra parameter is not supported.
/// 3. Name the runner-up and its ΔAICc and Akaike weight, the LR p-values,
///    and the residual verdicts of the chosen model (a flagged one means no
///    model here captures the pattern).
/// 4. When every fitted S-curve (every saturating model) carries a
///    [`SHAPE_WARNINGS`] code, say first that no S-curve is supported, with
///    the reason; then no model is recommended (`model` is `None`; the
///    ranking stays in the reasons).
pub fn recommend(entries: &[Entry], t: &[f64], y: &[f64]) -> Recommendation {
    let bad = |f: &Fit| -> Vec<&'static str> {
        IDENTIFIABILITY_WARNINGS
            .iter()
            .filter(|c| f.has_warning(**c))
            .map(|c| c.as_str())
            .collect()
    };
    let fitted: Vec<(&Entry, &Fit)> = entries
        .iter()
        .filter_map(|e| Some((e, e.result.as_ref().ok()?)))
        .filter(|(e, _)| e.delta_aicc.is_some())
        .collect();
    let mut reasons = Vec::new();
    let Some(best_overall) = fitted.first() else {
        return Recommendation {
            model: None,
            reasons: vec!["no model could be fitted".into()],
            residual_verdicts: vec![],
        };
    };
    let clean: Vec<&(&Entry, &Fit)> = fitted.iter().filter(|(_, f)| bad(f).is_empty()).collect();
    let mut choice = match clean.first() {
        Some(c) => **c,
        None => {
            reasons.push(format!(
                "every model has identifiability warnings; {} has the lowest AICc but its \
                 parameters are poorly determined",
                best_overall.0.model.name()
            ));
            *best_overall
        }
    };
    // Better-AICc models passed over for their warnings.
    for (e, f) in fitted.iter().take_while(|(e, _)| e.model != choice.0.model) {
        reasons.push(format!(
            "{} has a lower AICc (ΔAICc {:.2}) but is set aside: {}",
            e.model.name(),
            e.delta_aicc.unwrap_or(f64::NAN),
            bad(f).join(", ")
        ));
    }
    let tests = nested_tests(entries);
    if let Some(lr) = tests.iter().find(|l| l.general == choice.0.model) {
        let logistic = fitted
            .iter()
            .find(|(e, f)| e.model == lr.nested && bad(f).is_empty());
        if let (Some(lg), true) = (logistic, lr.p_value >= ALPHA) {
            reasons.push(format!(
                "{} has the lower AICc, but the likelihood-ratio test does not reject the \
                 simpler {} (p {}): the extra parameter is not supported",
                choice.0.model.name(),
                lr.nested.name(),
                fmt_p(lr.p_value)
            ));
            choice = *lg;
        }
    }
    let (ce, _) = choice;
    reasons.insert(
        0,
        format!(
            "{}: ΔAICc {:.2}, Akaike weight {:.2}",
            ce.model.name(),
            ce.delta_aicc.unwrap_or(f64::NAN),
            ce.akaike_weight.unwrap_or(f64::NAN)
        ),
    );
    if let Some((re, _)) = fitted.iter().find(|(e, _)| e.model != ce.model) {
        reasons.push(format!(
            "next: {} (ΔAICc {:.2}, weight {:.2})",
            re.model.name(),
            re.delta_aicc.unwrap_or(f64::NAN),
            re.akaike_weight.unwrap_or(f64::NAN)
        ));
    }
    for lr in &tests {
        reasons.push(format!(
            "likelihood ratio {} within {}: LR = {:.2}, p {}{}",
            lr.nested.name(),
            lr.general.name(),
            lr.statistic,
            fmt_p(lr.p_value),
            if lr.p_value < ALPHA {
                " (the restriction is rejected)"
            } else {
                " (the simpler curve suffices)"
            }
        ));
    }
    // No S-curve supported: every saturating fit is flagged.
    let shape_flag = |f: &Fit| {
        f.warnings
            .iter()
            .find(|w| SHAPE_WARNINGS.contains(&w.code))
            .map(|w| w.message.clone())
    };
    let curves: Vec<&(&Entry, &Fit)> = fitted.iter().filter(|(e, _)| e.model.saturates()).collect();
    let mut recommended = Some(ce.model);
    if !curves.is_empty() && curves.iter().all(|(_, f)| shape_flag(f).is_some()) {
        // The best-ranked curve's reason.
        let why = shape_flag(curves[0].1).unwrap_or_default();
        reasons.insert(
            0,
            format!(
                "no S-curve is supported by these data: for every growth curve fitted, a constant \
                 or a straight line does better ({}: {why})",
                curves[0].0.model.name()
            ),
        );
        recommended = None;
    }
    let diag = residual_diagnostics(choice.1, t, y);
    let flagged: Vec<&Verdict> = diag.verdicts.iter().filter(|v| v.flagged).collect();
    if flagged.is_empty() {
        reasons.push(match diag.verdicts.len() {
            1 => "its residuals show no pattern in the one check made".to_string(),
            n => format!("its residuals show no pattern in any of the {n} checks"),
        });
    } else {
        for v in flagged {
            reasons.push(format!("but {}", v.text));
        }
    }
    Recommendation {
        model: recommended,
        reasons,
        residual_verdicts: diag.verdicts,
    }
}
