//! Milestones with their intervals and a verdict on whether the data can
//! say anything about them: when the curve reaches a share of K, when it
//! passes a level ("when do we pass one million users?"), and how long the
//! rise from 10% to 90% of K takes.
//!
//! The times themselves come from [`crate::analysis`] (formulas there);
//! this module adds the bootstrap interval and the [`Verdict`]. A milestone
//! the data cannot speak to is reported as such, without a time:
//!
//! - the level lies at or above the fitted K (the curve never gets there) or
//!   above the upper end of K's 95% interval: [`Verdict::NotReached`];
//! - the level lies inside K's 95% interval, or more than 2.5% of the
//!   bootstrap replicates never reach it: the time has no upper bound,
//!   [`Verdict::MayNeverBeReached`] (the estimate is kept, the interval is
//!   open above);
//! - the time lies more than [`MAX_EXTRAPOLATION`] data spans past the last
//!   observation: [`Verdict::TooFar`];
//! - a share of K (or the 10→90% duration) when the data do not determine
//!   K: [`Verdict::SaturationNotDetermined`], no time at all (levels keep
//!   their assessment).

use crate::analysis::{self, Milestone};
use crate::bootstrap::{Bootstrap, QuantityInterval};
use crate::fit::Fit;
use crate::model::Model;

/// Milestones further past the last observation than this multiple of the
/// data's time span are not given as times: a forecast that far says
/// nothing the data support.
pub const MAX_EXTRAPOLATION: f64 = 1.0;

/// What a milestone is.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Target {
    /// The curve reaches this share (0 < p < 1) of its saturation level
    /// (of the rise from L to K for logistic4).
    Share(f64),
    /// The curve reaches this absolute value.
    Level(f64),
    /// Time from 10% to 90% of saturation (a duration, not a date).
    Duration1090,
}

impl Target {
    /// A short label, with `level` the name of the saturation level
    /// ([`Model::saturation_name`]): `50% of K`, `level 1000000`,
    /// `10% → 90% of m (duration)`.
    pub fn label(self, level: &str) -> String {
        match self {
            Target::Share(p) => format!("{}% of {level}", trim(100.0 * p)),
            Target::Level(y) => format!("level {}", trim(y)),
            Target::Duration1090 => format!("10% → 90% of {level} (duration)"),
        }
    }

    /// `share`, `level` or `duration_10_90`.
    pub fn kind(self) -> &'static str {
        match self {
            Target::Share(_) => "share",
            Target::Level(_) => "level",
            Target::Duration1090 => "duration_10_90",
        }
    }

    /// The share or level, `None` for the duration.
    pub fn value(self) -> Option<f64> {
        match self {
            Target::Share(p) => Some(p),
            Target::Level(y) => Some(y),
            Target::Duration1090 => None,
        }
    }
}

/// `x` to six significant digits, without trailing zeros.
fn trim(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let m = 10f64.powi(5 - x.abs().log10().floor() as i32);
    let s = format!("{}", (x * m).round() / m);
    s.strip_suffix(".0").map(str::to_string).unwrap_or(s)
}

/// How far a milestone can be read off the fit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Verdict {
    /// Within the observed time range.
    Observed,
    /// After the last observation, within [`MAX_EXTRAPOLATION`]: a forecast.
    Forecast,
    /// The time exists for the estimate but the data allow that it never
    /// comes: the interval is open above.
    MayNeverBeReached,
    /// The fitted curve (or every curve the data allow) never reaches it.
    NotReached,
    /// Too far past the data to be given as a time.
    TooFar,
    /// The model has no such milestone (the exponential has no K).
    NotApplicable,
    /// A share of the saturation level (or the 10→90% duration) when the
    /// data do not determine that level: no time is given, since a share of
    /// an unknown level has none. The note is left to the caller.
    SaturationNotDetermined,
}

impl Verdict {
    /// Stable code for JSON output.
    pub fn as_str(self) -> &'static str {
        match self {
            Verdict::Observed => "observed",
            Verdict::Forecast => "forecast",
            Verdict::MayNeverBeReached => "may_never_be_reached",
            Verdict::NotReached => "not_reached",
            Verdict::TooFar => "too_far",
            Verdict::NotApplicable => "not_applicable",
            Verdict::SaturationNotDetermined => "saturation_not_determined",
        }
    }

    /// Whether a time (or duration) should be shown.
    pub fn shows_time(self) -> bool {
        matches!(
            self,
            Verdict::Observed | Verdict::Forecast | Verdict::MayNeverBeReached
        )
    }
}

/// One assessed milestone.
#[derive(Debug, Clone, PartialEq)]
pub struct Assessment {
    pub target: Target,
    /// The time (or duration) at the estimate, when it exists.
    pub estimate: Option<f64>,
    /// 95% delta-method interval (see [`analysis`]).
    pub delta: Option<(f64, f64)>,
    /// 95% bootstrap percentile interval, when a bootstrap was run.
    pub bootstrap: Option<QuantityInterval>,
    pub verdict: Verdict,
    /// One sentence saying what the verdict means for this milestone.
    pub note: String,
    /// The fitted model's name for its saturation level.
    pub level_name: &'static str,
}

impl Assessment {
    /// The milestone's label for the fitted model (see [`Target::label`]).
    pub fn label(&self) -> String {
        self.target.label(self.level_name)
    }
}

/// Assesses `target` for `fit` on data observed from `t_first` to `t_last`.
pub fn assess(
    fit: &Fit,
    target: Target,
    t_first: f64,
    t_last: f64,
    boot: Option<&Bootstrap>,
) -> Assessment {
    let model = fit.model;
    let m: Option<Milestone> = match target {
        Target::Share(p) => analysis::time_at_fraction(fit, p),
        Target::Level(y) => analysis::time_at_level(fit, y),
        Target::Duration1090 => analysis::duration_10_90(fit),
    };
    let bootstrap = boot.filter(|b| b.succeeded() > 0).map(|b| {
        b.quantity(
            |q| match target {
                Target::Share(p) => analysis::fraction_time_params(model, q, p),
                Target::Level(y) => analysis::time_at_level_params(model, q, y),
                Target::Duration1090 => Some(
                    analysis::fraction_time_params(model, q, 0.9)?
                        - analysis::fraction_time_params(model, q, 0.1)?,
                ),
            },
            0.95,
        )
    });
    let mut a = Assessment {
        target,
        estimate: m.map(|m| m.time),
        delta: m.and_then(|m| m.ci95),
        bootstrap,
        verdict: Verdict::Forecast,
        note: String::new(),
        level_name: model.saturation_name(),
    };
    let saturates = model.saturates();
    if !saturates && !matches!(target, Target::Level(_)) {
        a.verdict = Verdict::NotApplicable;
        a.note = format!("the {} model has no saturation level", model.name());
        return a;
    }
    if !matches!(target, Target::Level(_)) && !saturation_determined(fit) {
        a.verdict = Verdict::SaturationNotDetermined;
        a.estimate = None;
        a.delta = None;
        a.bootstrap = None;
        return a;
    }
    let k = fit.param("K");
    let floor = fit.param("L").map_or(0.0, |l| l.estimate);
    let Some(time) = a.estimate else {
        a.verdict = Verdict::NotReached;
        a.note = match (target, k) {
            (Target::Level(y), Some(k)) if y >= k.estimate => format!(
                "the fitted curve levels off at K = {} and never reaches {}",
                trim(k.estimate),
                trim(y)
            ),
            (Target::Level(y), _) if model == Model::Logistic4 && y <= floor => format!(
                "{} is at or below the fitted floor L = {}",
                trim(y),
                trim(floor)
            ),
            (Target::Level(y), _) => format!("the fitted curve never reaches {}", trim(y)),
            _ => "the fitted curve gives no time for this milestone".to_string(),
        };
        return a;
    };
    if let (Target::Level(y), Some(k)) = (target, k) {
        if let Some((klo, khi)) = k.ci95 {
            if y > khi {
                // Cannot happen for a reached level (y < K̂ ≤ khi), kept for clarity.
                a.verdict = Verdict::NotReached;
                a.note = format!(
                    "{} is above the 95% interval of K ({} … {})",
                    trim(y),
                    trim(klo),
                    trim(khi)
                );
                return a;
            }
            if y > klo {
                a.verdict = Verdict::MayNeverBeReached;
                a.note = format!(
                    "{} lies inside the 95% interval of K ({} … {}): the data cannot say \
                     whether the curve ever gets there",
                    trim(y),
                    trim(klo),
                    trim(khi)
                );
            }
        } else if !k.fixed {
            a.verdict = Verdict::MayNeverBeReached;
            a.note = "K has no interval, so the data cannot say whether this level is ever \
                      reached"
                .to_string();
        }
    }
    if let Some(q) = &a.bootstrap {
        if q.hi.is_none() && q.total > 0 {
            let share = q.share_existing();
            if share < 0.5 {
                a.verdict = Verdict::NotReached;
                a.note = format!(
                    "only {:.0}% of the bootstrap refits ever reach it",
                    100.0 * share
                );
                return a;
            }
            if a.verdict != Verdict::MayNeverBeReached {
                a.verdict = Verdict::MayNeverBeReached;
                a.note = format!(
                    "{:.1}% of the bootstrap refits never reach it, so the interval has no \
                     upper end",
                    100.0 * (1.0 - share)
                );
            }
        }
    }
    let span = (t_last - t_first).max(0.0);
    if !matches!(target, Target::Duration1090) {
        if time > t_last + MAX_EXTRAPOLATION * span {
            a.verdict = Verdict::TooFar;
            a.note = format!(
                "it would come {:.1} data spans after the last observation, further than \
                 a forecast from these data can reach",
                (time - t_last) / span.max(f64::MIN_POSITIVE)
            );
            return a;
        }
        if a.verdict == Verdict::Forecast {
            if time <= t_last {
                a.verdict = Verdict::Observed;
                a.note = "within the observed time range".to_string();
            } else {
                a.note = "after the last observation: an extrapolation".to_string();
            }
        }
    } else if a.verdict == Verdict::Forecast {
        a.verdict = if t_last >= time_of(fit, 0.9).unwrap_or(f64::INFINITY) {
            Verdict::Observed
        } else {
            Verdict::Forecast
        };
        a.note = if a.verdict == Verdict::Observed {
            "the data cover the rise to 90% of K".to_string()
        } else {
            "the rise to 90% of K lies partly after the last observation".to_string()
        };
    }
    a
}

/// Whether the data determine the fit's saturation level: its parameter
/// (`K`, `m`; both `K1` and `K2` for the bi-logistic) is fixed or
/// identified (see [`crate::fit::ParamEstimate::identified`]).
pub fn saturation_determined(fit: &Fit) -> bool {
    let names: &[&str] = match fit.model.level_param() {
        Some(n) => &[n][..],
        None if fit.model == Model::Bilogistic => &["K1", "K2"],
        None => &[],
    };
    names
        .iter()
        .filter_map(|n| fit.param(n))
        .all(|p| p.fixed || p.identified)
}

fn time_of(fit: &Fit, p: f64) -> Option<f64> {
    analysis::time_at_fraction(fit, p).map(|m| m.time)
}

/// The standard set: 10%, 50% and 90% of K, the extra `shares` (0–1) not
/// already among them, the `levels`, and the 10→90 duration. Saturating
/// models only get the shares and the duration.
pub fn standard_targets(model: Model, shares: &[f64], levels: &[f64]) -> Vec<Target> {
    let mut out = Vec::new();
    if model.saturates() {
        let mut all = vec![0.1, 0.5, 0.9];
        for &s in shares {
            if !all.iter().any(|a: &f64| (a - s).abs() < 1e-12) {
                all.push(s);
            }
        }
        out.extend(all.into_iter().map(Target::Share));
    }
    out.extend(levels.iter().map(|&y| Target::Level(y)));
    if model.saturates() {
        out.push(Target::Duration1090);
    }
    out
}

#[cfg(test)]
mod tests;
