//! The answer at a glance: a study's main results in plain words and the
//! data's units, for the top of the page, the top of `plateau fit` and any
//! later report. Wording lives here; numbers go through [`crate::numbers`],
//! times through the data's own calendar ([`TimeAxis::format`]).
//!
//! Nothing here claims more than the fit does: K reads "at least …" when
//! its interval is open above or the fit says it is not identified, and a
//! milestone that is a share of K gets no date while K is not determined.

use crate::numbers::Precision;
use crate::report::CAUTION;
use crate::study::{span, Study};
use plateau_core::analysis;
use plateau_core::data::TimeAxis;
use plateau_core::fit::Fit;
use plateau_core::milestones::{Target, Verdict};
use plateau_core::{Model, WarningCode};
use serde::Serialize;

/// The milestone the answer gives when none was asked: 90% of K.
pub const DEFAULT_SHARE: f64 = 0.9;

/// One line of the answer: what it is, the value in words, and a detail
/// (its interval, or why there is none).
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct AnswerLine {
    /// Stable key: `saturation`, `milestone`, `midpoint`, `fastest`.
    pub key: &'static str,
    pub label: String,
    pub value: String,
    pub detail: String,
    /// The number behind `value` at full precision (for tests and
    /// `data-value`); `None` when the line gives no number.
    pub number: Option<f64>,
}

/// How far to trust the answer, from the study's own checks.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Trust {
    /// `sound`, `lower_bound` (K not determined), `doubtful`.
    pub level: &'static str,
    pub text: String,
}

/// The answer card.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "camelCase")]
pub struct Answer {
    pub lines: Vec<AnswerLine>,
    pub trust: Trust,
    pub caution: &'static str,
}

impl Answer {
    /// The answer as plain text lines (the CLI prints these).
    pub fn text_lines(&self) -> Vec<String> {
        let mut out: Vec<String> = self
            .lines
            .iter()
            .map(|l| {
                if l.detail.is_empty() {
                    format!("{}: {}", l.label, l.value)
                } else {
                    format!("{}: {}; {}", l.label, l.value, l.detail)
                }
            })
            .collect();
        out.push(format!("How far to trust it: {}", self.trust.text));
        out.push(self.caution.to_string());
        out
    }
}

/// A time on the axis as people read it: the data's calendar on dated
/// axes, else the digits `digits` supports.
fn when(axis: &TimeAxis, time_name: &str, digits: Precision, t: f64) -> String {
    let name = time_name.trim();
    if axis.period().is_some() {
        axis.format(t)
    } else if name.is_empty() || name == "time" {
        format!("t = {}", digits.show_time(t))
    } else {
        format!("{name} {}", digits.show_time(t))
    }
}

/// ` subscribers` after a number, or nothing when the column has no name.
fn unit_of(value_name: &str) -> String {
    let v = value_name.trim();
    if v.is_empty() || v == "value" {
        String::new()
    } else {
        format!(" {v}")
    }
}

/// Whether the fit's saturation level is determined: every level
/// parameter (K, Bass's m; K1 and K2) identified or held fixed, and no
/// `saturation_not_identified` warning.
pub fn saturation_determined(fit: &Fit) -> bool {
    let names: &[&str] = match fit.model {
        Model::Bilogistic => &["K1", "K2"],
        Model::Bass => &["m"],
        Model::Exponential => return false,
        _ => &["K"],
    };
    !fit.has_warning(WarningCode::SaturationNotIdentified)
        && names
            .iter()
            .all(|n| fit.param(n).is_some_and(|p| p.fixed || p.identified))
}

fn saturation_line(fit: &Fit, unit: &str) -> AnswerLine {
    let name = fit.model.saturation_name();
    let label = format!("Ceiling {name}");
    let mut line = AnswerLine {
        key: "saturation",
        label,
        value: String::new(),
        detail: String::new(),
        number: fit.model.saturation_level(&fit.values()),
    };
    if fit.model == Model::Exponential {
        line.value = "none: the exponential curve grows without limit".into();
        return line;
    }
    let Some(p) = fit.model.level_param().and_then(|n| fit.param(n)) else {
        // The bi-logistic's K1 + K2: no interval of the sum is computed.
        let k = line.number.unwrap_or(f64::NAN);
        if saturation_determined(fit) {
            line.value = format!("about {}{unit}", Precision::plain(k).show(k));
            line.detail = "the sum of the two waves' levels; no interval for the sum".into();
        } else {
            line.value = "not determined by these data".into();
            line.detail = "one of the two waves' levels is open".into();
        }
        return line;
    };
    let d = Precision::of_estimate(p.estimate, p.std_error);
    if p.fixed {
        line.value = format!("{}{unit}", d.show(p.estimate));
        line.detail = "entered, not estimated".into();
        return line;
    }
    let (lo, hi) = p.interval.map_or((None, None), |i| (i.lo, i.hi));
    if saturation_determined(fit) {
        if let (Some(lo), Some(hi)) = (lo, hi) {
            line.value = format!("about {}{unit}", d.show(p.estimate));
            line.detail = format!("95% interval {} … {}", d.show(lo), d.show(hi));
            return line;
        }
    }
    match lo {
        Some(lo) => {
            line.value = format!("at least {}{unit}", d.show(lo));
            line.detail = format!(
                "not determined yet: the data set no upper limit; the point estimate {} is \
                 not a forecast of the ceiling",
                d.show(p.estimate)
            );
        }
        None => {
            line.value = "not determined by these data".into();
            line.detail = "treat the ceiling as unknown".into();
        }
    }
    line
}

fn milestone_line(study: &Study, fit: &Fit, axis: &TimeAxis) -> AnswerLine {
    let share = study
        .request()
        .shares
        .first()
        .copied()
        .unwrap_or(DEFAULT_SHARE);
    let name = fit.model.saturation_name();
    let pct = crate::numbers::number(100.0 * share);
    let mut line = AnswerLine {
        key: "milestone",
        label: format!("{pct}% of {name} reached"),
        value: String::new(),
        detail: String::new(),
        number: None,
    };
    if !fit.model.saturates() {
        line.value = "no date: this curve has no ceiling".into();
        return line;
    }
    if !saturation_determined(fit) {
        line.value = "no date".into();
        line.detail = format!(
            "{name} is not determined, so {pct}% of it has no date yet; wait for data past the \
             inflection or enter a known {name}"
        );
        return line;
    }
    let all = study.milestones(None);
    let Some(a) = all
        .iter()
        .find(|a| matches!(a.target, Target::Share(p) if (p - share).abs() < 1e-12))
    else {
        line.value = "no date".into();
        return line;
    };
    line.number = a.estimate.filter(|_| a.verdict.shows_time());
    let digits = Precision::of_interval(
        a.estimate.unwrap_or(f64::NAN),
        a.delta.map(|(lo, hi)| [lo, hi]),
    );
    let tn = &study.series().time_name;
    let show = |t: f64| when(axis, tn, digits, t);
    match (a.verdict, a.estimate) {
        (Verdict::Observed, Some(t)) => {
            line.value = format!("{}, within the data", show(t));
        }
        (Verdict::Forecast, Some(t)) => {
            line.value = format!("around {}, a forecast", show(t));
        }
        (Verdict::MayNeverBeReached, Some(t)) => {
            line.value = format!("around {}, but it may never be reached", show(t));
        }
        _ => {
            line.value = "no date".into();
            line.detail = crate::wording::milestone_note(a);
            return line;
        }
    }
    if let Some((lo, hi)) = a.delta {
        line.detail = if a.verdict == Verdict::MayNeverBeReached {
            format!("95% interval from {} with no upper end", show(lo))
        } else {
            format!("95% interval {} … {}", show(lo), show(hi))
        };
    }
    line
}

fn midpoint_line(fit: &Fit, axis: &TimeAxis, time_name: &str) -> Option<AnswerLine> {
    let p = fit.param("t0")?;
    let label = match fit.model {
        Model::Logistic | Model::Logistic4 => "Halfway point t0",
        _ => "Steepest point t0",
    };
    let d = Precision::of_estimate(p.estimate, p.std_error);
    let show = |t: f64| when(axis, time_name, d, t);
    let detail = match p.interval.map(|i| (i.lo, i.hi)) {
        _ if p.fixed => "entered, not estimated".to_string(),
        Some((Some(lo), Some(hi))) if p.identified => {
            format!("95% interval {} … {}", show(lo), show(hi))
        }
        _ => "not determined: its interval is open".to_string(),
    };
    Some(AnswerLine {
        key: "midpoint",
        label: label.into(),
        value: show(p.estimate),
        detail,
        number: Some(p.estimate),
    })
}

fn fastest_line(fit: &Fit, unit: &str, time_unit: &str) -> Option<AnswerLine> {
    let (rate, ci) = match analysis::fastest_growth(fit) {
        Some(g) => (g.rate, g.rate_ci95),
        None => {
            let pk = analysis::bass_peak(fit)?;
            (pk.rate, pk.rate_ci95)
        }
    };
    let formula = match fit.model {
        Model::Logistic => " (rK/4)",
        _ => "",
    };
    let per = if time_unit.is_empty() {
        " per time unit".to_string()
    } else {
        format!(" per {time_unit}")
    };
    let d = Precision::of_interval(rate, ci.map(|(a, b)| [a, b]));
    let mut line = AnswerLine {
        key: "fastest",
        label: format!("Fastest growth{formula}"),
        value: format!("{}{unit}{per}", d.show(rate)),
        detail: ci.map_or(String::new(), |(lo, hi)| {
            format!("95% interval {} … {}", d.show(lo), d.show(hi))
        }),
        number: Some(rate),
    };
    if !saturation_determined(fit) {
        line.detail = "not determined while the ceiling is not: this rate follows from it".into();
    }
    Some(line)
}

/// The one-line verdict on how far to trust the answer.
fn trust(study: &Study, fit: &Fit) -> Trust {
    let streaks = study.residual_diagnostics().is_some_and(|d| {
        d.verdicts
            .iter()
            .any(|v| v.flagged && matches!(v.code, "runs_streaks" | "autocorrelated"))
    });
    let (_, last) = span(&study.series().times);
    let past_inflection = fit.param("t0").is_some_and(|p| last > p.estimate);
    // A ceiling held at an entered value is not determined by the data.
    let ceiling = if fit
        .model
        .level_param()
        .and_then(|n| fit.param(n))
        .is_some_and(|p| p.fixed)
    {
        "the ceiling is the value entered"
    } else {
        "the ceiling is determined"
    };
    if !fit.converged {
        return Trust {
            level: "doubtful",
            text: "Doubtful: the fit did not settle on a best curve, so none of these numbers \
                   is reliable."
                .into(),
        };
    }
    if fit.model.saturates() && !saturation_determined(fit) {
        return Trust {
            level: "lower_bound",
            text: "Limited: the ceiling is not determined yet, only a lower bound; dates that \
                   depend on it are not given."
                .into(),
        };
    }
    if fit.has_warning(WarningCode::BeforeInflection)
        || (fit.param("t0").is_some() && !past_inflection)
    {
        return Trust {
            level: "doubtful",
            text: "Doubtful: the data end before the steepest point, and fits that stop there \
                   are unreliable, especially for the ceiling."
                .into(),
        };
    }
    if streaks {
        let extra = if fit.increments || !crate::study::looks_cumulative(study.values()) {
            ""
        } else {
            " (running totals often do this; try fitting per-period increments)"
        };
        return Trust {
            level: "doubtful",
            text: format!(
                "Use with care: the data pass the steepest point and {ceiling}, but the \
                 curve's shape is doubtful: the residuals run in streaks, so the intervals \
                 are likely too narrow{extra}."
            ),
        };
    }
    let text = if fit.model.saturates() {
        format!(
            "Sound: the data pass the steepest point, {ceiling}, and the residuals show no \
             pattern."
        )
    } else {
        "The residuals show no pattern; this curve has no ceiling, so it describes the early \
         phase only."
            .to_string()
    };
    Trust {
        level: "sound",
        text,
    }
}

/// The answer for `study`, or `None` when its fit failed.
pub fn answer(study: &Study) -> Option<Answer> {
    let fit = study.fit().ok()?;
    let series = study.series();
    let axis = &series.axis;
    let unit = unit_of(&series.value_name);
    let time_unit = series.time_unit();
    let mut lines = vec![
        saturation_line(fit, &unit),
        milestone_line(study, fit, axis),
    ];
    lines.extend(midpoint_line(fit, axis, &series.time_name));
    lines.extend(fastest_line(fit, &unit, &time_unit));
    Some(Answer {
        lines,
        trust: trust(study, fit),
        caution: CAUTION,
    })
}

/// One line saying what was read: `34 monthly points, 2021-01 … 2023-10,
/// running totals`.
pub fn data_summary(study: &Study) -> String {
    let s = study.series();
    let n = s.times.len();
    let (first, last) = span(&s.times);
    let cadence = match s.axis.period().map(|p| p.name()) {
        Some("day") => "daily ",
        Some("week") => "weekly ",
        Some("month") => "monthly ",
        Some("quarter") => "quarterly ",
        Some("year") => "yearly ",
        _ => "",
    };
    let show = |t: f64| when(&s.axis, &s.time_name, Precision::plain(t), t);
    let kind = if study.request().per_period {
        "counts per period, summed"
    } else {
        "running totals"
    };
    let points = if n == 1 { "point" } else { "points" };
    let name = s.value_name.trim();
    let what = if name.is_empty() || name == "value" {
        String::new()
    } else {
        format!(" of {name}")
    };
    format!(
        "{n} {cadence}{points}{what}, {} … {}, {kind}",
        show(first),
        show(last)
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::request::Request;
    use plateau_core::{parse_series, ParseOptions};

    fn study(text: &str, model: Model) -> Study {
        let s = parse_series(text, &ParseOptions::default()).unwrap();
        Study::new(s, Request::new(model)).unwrap()
    }

    fn logistic_text(k: f64, r: f64, t0: f64, n: usize) -> String {
        // Monthly dates from 2021-01; a small deterministic wiggle.
        let mut s = String::from("month,subscribers\n");
        for i in 0..n {
            let y = k / (1.0 + (-r * (i as f64 - t0)).exp()) + if i % 2 == 0 { 3.0 } else { -3.0 };
            s.push_str(&format!("{}-{:02},{y}\n", 2021 + i / 12, 1 + i % 12));
        }
        s
    }

    #[test]
    fn determined_k_reads_as_about_with_its_interval_and_dates_in_the_calendar() {
        let st = study(&logistic_text(10_000.0, 0.3, 15.0, 34), Model::Logistic);
        let a = answer(&st).unwrap();
        let k = &a.lines[0];
        assert!(k.value.starts_with("about "), "{k:?}");
        assert!((k.number.unwrap() - 10_000.0).abs() < 10.0, "{k:?}");
        assert!(k.value.ends_with(" subscribers"), "{k:?}");
        assert!(k.detail.starts_with("95% interval "), "{k:?}");
        let m = &a.lines[1];
        assert_eq!(m.label, "90% of K reached");
        // 90% of K: t0 + ln 9 / r = 15 + 7.3 = month 22.3 → 2022-11.
        assert!(m.value.contains("2022-11"), "{m:?}");
        let t0 = &a.lines[2];
        assert!(t0.value.starts_with("2022-04"), "{t0:?}");
        let f = &a.lines[3];
        // r K / 4 = 750 per month.
        assert!(
            f.value.starts_with("75") && f.value.ends_with("subscribers per month"),
            "{f:?}"
        );
        assert_eq!(
            data_summary(&st),
            "34 monthly points of subscribers, 2021-01 … 2023-10, running totals"
        );
    }

    #[test]
    fn an_entered_k_is_never_called_determined() {
        let s = parse_series(
            &logistic_text(10_000.0, 0.3, 15.0, 34),
            &ParseOptions::default(),
        )
        .unwrap();
        let mut req = Request::new(Model::Logistic);
        req.fit.fixed = vec![("K".to_string(), 10_000.0)];
        let st = Study::new(s, req).unwrap();
        let a = answer(&st).unwrap();
        assert_eq!(a.lines[0].detail, "entered, not estimated");
        let all = a.text_lines().join("\n");
        assert!(!all.contains("ceiling is determined"), "{all}");
        assert!(all.contains("the value entered"), "{all}");
    }

    #[test]
    fn k_not_determined_gives_a_lower_bound_and_no_k_based_date() {
        // Only the first half of the rise: K is not determined.
        let st = study(&logistic_text(10_000.0, 0.3, 30.0, 20), Model::Logistic);
        let fit = st.fit().unwrap();
        assert!(!saturation_determined(fit));
        let a = answer(&st).unwrap();
        assert!(
            a.lines[0].value.starts_with("at least ")
                || a.lines[0].value.starts_with("not determined"),
            "{:?}",
            a.lines[0]
        );
        assert_eq!(a.lines[1].value, "no date");
        assert_eq!(a.lines[1].number, None);
        assert_ne!(a.trust.level, "sound");
        let all = a.text_lines().join("\n");
        assert!(!all.contains("is determined"), "{all}");
    }
}
