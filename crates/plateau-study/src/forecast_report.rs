//! The JSON shapes of `plateau forecast --json`, `plateau drift --json` and
//! `plateau backtest --json`, shared with the page. Like [`crate::report`],
//! field names are an output contract: add, never rename. Non-finite
//! numbers serialise as `null`.
//!
//! Main types: [`ForecastReport`], [`DriftReport`], [`BacktestReport`].

use crate::report::CAUTION;
use plateau_core::backtest::ModelBacktest;
use plateau_core::bootstrap::Bootstrap;
use plateau_core::fit::Fit;
use plateau_core::forecast::ForecastPoint;
use plateau_core::history::DriftRow;
use plateau_core::milestones::Assessment;
use plateau_core::warning::Warning;
use serde::Serialize;

/// Formats an axis value as text in the data's own time format.
pub type TimeText<'a> = &'a dyn Fn(f64) -> String;

/// A parameter with its delta-method (Student t) and bootstrap intervals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParamIntervals {
    pub estimate: f64,
    pub ci95: Option<[f64; 2]>,
    /// 95% bootstrap percentile interval; `null` without a bootstrap.
    pub bootstrap_ci95: Option<[f64; 2]>,
    pub fixed: bool,
}

pub use crate::report::Ordered;

/// What was bootstrapped and how it went.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BootstrapReport {
    /// `residual` or `parametric`.
    pub resampling: &'static str,
    /// B, the replicates asked for.
    pub replicates: usize,
    /// Replicates run so far.
    pub done: usize,
    pub succeeded: usize,
    /// Refits that did not converge (they contribute nothing).
    pub failed: usize,
    pub seed: u64,
    /// `percentile` (the 2.5% and 97.5% quantiles of the refitted values).
    pub interval: &'static str,
}

impl BootstrapReport {
    pub fn new(b: &Bootstrap) -> BootstrapReport {
        let o = b.options();
        BootstrapReport {
            resampling: o.resampling.name(),
            replicates: o.replicates,
            done: b.done(),
            succeeded: b.succeeded(),
            failed: b.failed(),
            seed: o.seed,
            interval: "percentile",
        }
    }
}

/// Parameters with both kinds of interval.
pub fn param_intervals(fit: &Fit, boot: Option<&Bootstrap>) -> Ordered<ParamIntervals> {
    Ordered(
        fit.params
            .iter()
            .enumerate()
            .map(|(j, p)| {
                let b = boot
                    .filter(|b| !p.fixed && b.succeeded() > 0)
                    .and_then(|b| b.param_interval(j, 0.95))
                    .map(|(a, c)| [a, c]);
                (
                    p.name.to_string(),
                    ParamIntervals {
                        estimate: p.estimate,
                        // No interval for a parameter the data do not
                        // determine (K under saturation_not_identified).
                        ci95: p.ci95.filter(|_| p.identified).map(|(a, c)| [a, c]),
                        bootstrap_ci95: b,
                        fixed: p.fixed,
                    },
                )
            })
            .collect(),
    )
}

/// One forecast row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PointReport {
    /// Axis value.
    pub t: f64,
    /// The time in the data's format.
    pub time: String,
    /// The observation, for rows at the data times; `null` for the grid.
    pub observed: Option<f64>,
    pub fit: f64,
    /// 95% confidence band of the mean curve (delta method).
    pub confidence95: Option<[f64; 2]>,
    /// 95% prediction band for a new observation (delta method plus σ̂²).
    pub prediction95: Option<[f64; 2]>,
    /// 95% bootstrap percentile band of the mean curve.
    pub bootstrap95: Option<[f64; 2]>,
}

/// One milestone.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MilestoneReport {
    /// `share`, `level` or `duration_10_90`.
    pub kind: &'static str,
    /// The share (0–1) or level; `null` for the duration.
    pub target: Option<f64>,
    pub label: String,
    /// `observed`, `forecast`, `may_never_be_reached`, `not_reached`,
    /// `too_far`, `not_applicable`, `saturation_not_determined` (a share
    /// of a K the data do not determine: no time; see `milestones::Verdict`).
    pub verdict: &'static str,
    /// What the verdict means here.
    pub note: String,
    /// The time (axis value) or duration at the estimate; `null` when it
    /// does not exist.
    pub estimate: Option<f64>,
    /// The time as text, `null` when the verdict withholds it.
    pub time_text: Option<String>,
    /// 95% delta-method interval (axis values or durations).
    pub delta95: Option<[f64; 2]>,
    /// `delta95` as times in the data's form (like `time_text`); `null`
    /// for the duration and when the verdict withholds the time.
    pub delta95_text: Option<[String; 2]>,
    /// 95% bootstrap percentile interval; an end is `null` when it does not
    /// exist (upper end: too many refits never reach the milestone).
    pub bootstrap95: Option<[Option<f64>; 2]>,
    /// Share of bootstrap refits that reach the milestone.
    pub bootstrap_reached: Option<f64>,
}

impl MilestoneReport {
    pub fn new(a: &Assessment, text: TimeText) -> MilestoneReport {
        let is_duration = a.target.kind() == "duration_10_90";
        MilestoneReport {
            kind: a.target.kind(),
            target: a.target.value(),
            label: crate::wording::milestone_label(a),
            verdict: a.verdict.as_str(),
            note: crate::wording::milestone_note(a),
            estimate: a.estimate,
            time_text: a.estimate.filter(|_| a.verdict.shows_time()).map(|t| {
                if is_duration {
                    format!("{t:.4}")
                } else {
                    text(t)
                }
            }),
            delta95: a.delta.map(|(x, y)| [x, y]),
            delta95_text: a
                .delta
                .filter(|_| !is_duration && a.verdict.shows_time())
                .map(|(x, y)| [text(x), text(y)]),
            bootstrap95: a.bootstrap.map(|q| [q.lo, q.hi]),
            bootstrap_reached: a.bootstrap.map(|q| q.share_existing()),
        }
    }
}

/// The shape of `plateau forecast --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ForecastReport {
    pub model: &'static str,
    pub formula: &'static str,
    pub n: usize,
    pub dof: usize,
    pub sigma: f64,
    pub until: f64,
    pub until_text: String,
    /// Unit of the axis and of durations: `day`, `week`, `month`,
    /// `quarter` or `year` on calendar axes (the data's own period), else
    /// the time column's header (empty without one).
    pub time_unit: String,
    /// Axis value 0 in the data's form (`2000-01`, `2000Q1`, …); `null`
    /// for plain numbers (see `with_time_origin`).
    pub time_origin: Option<String>,
    pub params: Ordered<ParamIntervals>,
    pub bootstrap: Option<BootstrapReport>,
    /// Data times first (with observations), then the grid to `until`.
    pub points: Vec<PointReport>,
    pub milestones: Vec<MilestoneReport>,
    pub caution: &'static str,
    pub warnings: Vec<Warning>,
}

impl ForecastReport {
    /// The report with the axis origin's text.
    pub fn with_time_origin(mut self, origin: Option<String>) -> ForecastReport {
        self.time_origin = origin;
        self
    }

    #[allow(clippy::too_many_arguments)]
    pub fn new(
        fit: &Fit,
        until: f64,
        time_unit: &str,
        points: &[ForecastPoint],
        milestones: &[Assessment],
        boot: Option<&Bootstrap>,
        text: TimeText,
        extra_warnings: &[Warning],
    ) -> ForecastReport {
        let pair = |x: Option<(f64, f64)>| x.map(|(a, b)| [a, b]);
        ForecastReport {
            model: fit.model.name(),
            formula: fit.model.formula(),
            n: fit.n,
            dof: fit.dof,
            sigma: fit.sigma,
            until,
            until_text: text(until),
            time_unit: time_unit.to_string(),
            time_origin: None,
            params: param_intervals(fit, boot),
            bootstrap: boot.map(BootstrapReport::new),
            points: points
                .iter()
                .map(|p| PointReport {
                    t: p.t,
                    time: text(p.t),
                    observed: p.observed,
                    fit: p.fit,
                    confidence95: pair(p.confidence),
                    prediction95: pair(p.prediction),
                    bootstrap95: pair(p.bootstrap),
                })
                .collect(),
            milestones: milestones
                .iter()
                .map(|a| MilestoneReport::new(a, text))
                .collect(),
            caution: CAUTION,
            warnings: extra_warnings
                .iter()
                .chain(&fit.warnings)
                .cloned()
                .collect(),
        }
    }
}

/// A parameter in one drift row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriftParam {
    pub estimate: f64,
    /// The row's 95% interval (the report's `intervals` method); `null`
    /// when the data of that prefix do not determine the parameter.
    pub ci95: Option<[f64; 2]>,
    pub fixed: bool,
    /// A saturation level the prefix does not determine: what it is at
    /// least (the verified profile lower bound, else the fitted curve's
    /// value at the cutoff); else `null`.
    pub at_least: Option<f64>,
}

/// One prefix in `plateau drift --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriftRowReport {
    /// Points used.
    pub m: usize,
    /// Axis value of the last point used.
    pub cutoff: f64,
    pub cutoff_text: String,
    pub converged: Option<bool>,
    pub params: Option<Ordered<DriftParam>>,
    /// Warning codes of this prefix's fit.
    pub warnings: Vec<&'static str>,
    /// Why this prefix could not be fitted.
    pub error: Option<String>,
}

/// The shape of `plateau drift --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DriftReport {
    pub model: &'static str,
    /// Interval method of every row: `asymptotic` (the default) or `profile`.
    pub intervals: &'static str,
    /// How many cutoffs there were when the cap (evenly spread, 40 by
    /// default) left some out; `null` when every prefix was refitted.
    pub cutoffs_capped_from: Option<usize>,
    pub rows: Vec<DriftRowReport>,
    pub caution: &'static str,
    pub warnings: Vec<Warning>,
}

impl DriftReport {
    pub fn new(
        model: plateau_core::Model,
        rows: &[DriftRow],
        text: TimeText,
        warnings: &[Warning],
    ) -> DriftReport {
        DriftReport {
            model: model.name(),
            intervals: "asymptotic",
            cutoffs_capped_from: None,
            rows: rows
                .iter()
                .map(|r| match &r.result {
                    Ok(f) => DriftRowReport {
                        m: r.m,
                        cutoff: r.cutoff,
                        cutoff_text: text(r.cutoff),
                        converged: Some(f.converged),
                        params: Some(Ordered(
                            f.params
                                .iter()
                                .map(|p| {
                                    (
                                        p.name.to_string(),
                                        DriftParam {
                                            estimate: p.estimate,
                                            ci95: p
                                                .interval
                                                .filter(|_| p.identified)
                                                .and_then(|i| Some([i.lo?, i.hi?])),
                                            fixed: p.fixed,
                                            at_least: f.saturation_at_least(p.name),
                                        },
                                    )
                                })
                                .collect(),
                        )),
                        warnings: f.warnings.clone(),
                        error: None,
                    },
                    Err(e) => DriftRowReport {
                        m: r.m,
                        cutoff: r.cutoff,
                        cutoff_text: text(r.cutoff),
                        converged: None,
                        params: None,
                        warnings: Vec::new(),
                        error: Some(e.clone()),
                    },
                })
                .collect(),
            caution: CAUTION,
            warnings: warnings.to_vec(),
        }
    }
}

impl DriftReport {
    /// The run's interval method and cap (see the fields).
    pub fn with_run(
        mut self,
        intervals: plateau_core::fit::IntervalMethod,
        cutoffs_capped_from: Option<usize>,
    ) -> DriftReport {
        self.intervals = match intervals {
            plateau_core::fit::IntervalMethod::Profile => "profile",
            _ => "asymptotic",
        };
        self.cutoffs_capped_from = cutoffs_capped_from;
        self
    }
}

/// One horizon of one model in `plateau backtest --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HorizonReport {
    pub h: usize,
    pub count: usize,
    pub mae: Option<f64>,
    /// Percent.
    pub mape: Option<f64>,
}

/// One model in `plateau backtest --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ModelBacktestReport {
    pub model: &'static str,
    pub origins: usize,
    /// How many origins there were when the cap (evenly spread, 40 by
    /// default) left some out; `null` when every origin was tried.
    pub origins_capped_from: Option<usize>,
    pub failed: usize,
    pub horizons: Vec<HorizonReport>,
    /// Why the model was not fitted at all (the settings do not apply to
    /// it), else `null`.
    pub error: Option<String>,
}

/// The shape of `plateau backtest --json`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct BacktestReport {
    pub horizon: usize,
    /// `rolling_origin`.
    pub method: &'static str,
    pub models: Vec<ModelBacktestReport>,
    pub caution: &'static str,
    pub warnings: Vec<Warning>,
}

impl BacktestReport {
    pub fn new(horizon: usize, rows: &[ModelBacktest], warnings: &[Warning]) -> BacktestReport {
        BacktestReport {
            horizon,
            method: "rolling_origin",
            models: rows
                .iter()
                .map(|m| ModelBacktestReport {
                    model: m.model.name(),
                    origins: m.origins,
                    origins_capped_from: m.origins_capped_from,
                    failed: m.failed,
                    horizons: m
                        .by_horizon
                        .iter()
                        .map(|s| HorizonReport {
                            h: s.h,
                            count: s.count,
                            mae: s.mae,
                            mape: s.mape,
                        })
                        .collect(),
                    error: m.error.clone(),
                })
                .collect(),
            caution: CAUTION,
            warnings: warnings.to_vec(),
        }
    }
}
