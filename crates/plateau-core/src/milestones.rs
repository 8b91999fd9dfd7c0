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

/// Why a milestone has the [`Verdict`] it has, with the numbers behind
/// it; `plateau_study::wording` says it in words.
#[derive(Debug, Clone, Copy, PartialEq)]
#[non_exhaustive]
pub enum Why {
    /// The model has no saturation level.
    NoSaturation { model: Model },
    /// The fitted curve levels off at `k`, at or below the level.
    LevelsOffBelow { level: f64, k: f64 },
    /// The level is at or below logistic4's fitted floor.
    AtOrBelowFloor { level: f64, floor: f64 },
    /// The fitted curve never reaches the level.
    NeverReaches { level: f64 },
    /// The fitted curve gives no time for this milestone.
    NoTime,
    /// The level is above K's 95% interval `[lo, hi]`.
    AboveKInterval { level: f64, lo: f64, hi: f64 },
    /// The level is inside K's 95% interval.
    InsideKInterval { level: f64, lo: f64, hi: f64 },
    /// K has no interval, so whether the level is ever reached is open.
    KWithoutInterval,
    /// Only this share of the bootstrap refits ever reach it (under half).
    FewRefitsReach { share: f64 },
    /// This share of the bootstrap refits never reach it.
    SomeRefitsNeverReach { share: f64 },
    /// It would come this many data spans after the last observation.
    TooFar { spans: f64 },
    /// Within the observed time range.
    WithinData,
    /// After the last observation.
    Extrapolation,
    /// The data cover the rise to 90% of K.
    RiseCovered,
    /// The rise to 90% of K lies partly after the last observation.
    RisePartlyAhead,
    /// The data do not determine the saturation level, so a share of it
    /// (or the rise from 10% to 90%) has no time.
    SaturationNotDetermined,
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
    /// What the verdict means for this milestone (`None`: nothing to add).
    pub why: Option<Why>,
    /// The fitted model's name for its saturation level.
    pub level_name: &'static str,
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
        why: None,
        level_name: model.saturation_name(),
    };
    let saturates = model.saturates();
    if !saturates && !matches!(target, Target::Level(_)) {
        a.verdict = Verdict::NotApplicable;
        a.why = Some(Why::NoSaturation { model });
        return a;
    }
    if !matches!(target, Target::Level(_)) && !saturation_determined(fit) {
        a.verdict = Verdict::SaturationNotDetermined;
        a.why = Some(Why::SaturationNotDetermined);
        a.estimate = None;
        a.delta = None;
        a.bootstrap = None;
        return a;
    }
    let k = fit.param("K");
    let floor = fit.param("L").map_or(0.0, |l| l.estimate);
    let Some(time) = a.estimate else {
        a.verdict = Verdict::NotReached;
        a.why = Some(match (target, k) {
            (Target::Level(level), Some(k)) if level >= k.estimate => Why::LevelsOffBelow {
                level,
                k: k.estimate,
            },
            (Target::Level(level), _) if model == Model::Logistic4 && level <= floor => {
                Why::AtOrBelowFloor { level, floor }
            }
            (Target::Level(level), _) => Why::NeverReaches { level },
            _ => Why::NoTime,
        });
        return a;
    };
    if let (Target::Level(y), Some(k)) = (target, k) {
        if let Some((klo, khi)) = k.ci95 {
            if y > khi {
                // Cannot happen for a reached level (y < K̂ ≤ khi), kept for clarity.
                a.verdict = Verdict::NotReached;
                a.why = Some(Why::AboveKInterval {
                    level: y,
                    lo: klo,
                    hi: khi,
                });
                return a;
            }
            if y > klo {
                a.verdict = Verdict::MayNeverBeReached;
                a.why = Some(Why::InsideKInterval {
                    level: y,
                    lo: klo,
                    hi: khi,
                });
            }
        } else if !k.fixed {
            a.verdict = Verdict::MayNeverBeReached;
            a.why = Some(Why::KWithoutInterval);
        }
    }
    if let Some(q) = &a.bootstrap {
        if q.hi.is_none() && q.total > 0 {
            let share = q.share_existing();
            if share < 0.5 {
                a.verdict = Verdict::NotReached;
                a.why = Some(Why::FewRefitsReach { share });
                return a;
            }
            if a.verdict != Verdict::MayNeverBeReached {
                a.verdict = Verdict::MayNeverBeReached;
                a.why = Some(Why::SomeRefitsNeverReach { share: 1.0 - share });
            }
        }
    }
    let span = (t_last - t_first).max(0.0);
    if !matches!(target, Target::Duration1090) {
        if time > t_last + MAX_EXTRAPOLATION * span {
            a.verdict = Verdict::TooFar;
            a.why = Some(Why::TooFar {
                spans: (time - t_last) / span.max(f64::MIN_POSITIVE),
            });
            return a;
        }
        if a.verdict == Verdict::Forecast {
            if time <= t_last {
                a.verdict = Verdict::Observed;
                a.why = Some(Why::WithinData);
            } else {
                a.why = Some(Why::Extrapolation);
            }
        }
    } else if a.verdict == Verdict::Forecast {
        a.verdict = if t_last >= time_of(fit, 0.9).unwrap_or(f64::INFINITY) {
            Verdict::Observed
        } else {
            Verdict::Forecast
        };
        a.why = Some(if a.verdict == Verdict::Observed {
            Why::RiseCovered
        } else {
            Why::RisePartlyAhead
        });
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
