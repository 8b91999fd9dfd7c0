//! `plateau forecast`, `plateau drift` and `plateau backtest`: the runs and
//! their tables for people (`--json` prints the core's report shapes).

use plateau_core::backtest::ModelBacktest;
use plateau_core::bootstrap::Bootstrap;
use plateau_study::forecast_report::{DriftReport, ForecastReport};
use plateau_study::numbers::{number, Precision};
use plateau_study::report::CAUTION;
use std::fmt::Write;

/// `lo … hi` at the digits `d` (an estimate's), or `-`.
fn pair(d: Precision, x: Option<[f64; 2]>) -> String {
    pair_by(|v| d.show(v), x)
}

/// `lo … hi` each shown by `show`, or `-`.
fn pair_by(show: impl Fn(f64) -> String, x: Option<[f64; 2]>) -> String {
    x.map_or("-".into(), |[a, b]| format!("{} … {}", show(a), show(b)))
}

/// Times on the data's axis: shown without thousands separators.
const TIME_PARAMS: [&str; 4] = ["t0", "tau", "t01", "t02"];

/// The forecast table: parameters, milestones, then one row per time.
pub fn forecast(name: &str, r: &ForecastReport, boot: Option<&Bootstrap>) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "model      {}    {}", r.model, r.formula);
    let _ = writeln!(
        s,
        "data       {name}: {} points; forecast to {}",
        r.n, r.until_text
    );
    match (&r.bootstrap, boot) {
        (Some(b), Some(_)) => {
            let _ = writeln!(
                s,
                "bootstrap  {} resampling, B = {}, seed {}, {} refits failed (left out); percentile intervals",
                b.resampling, b.replicates, b.seed, b.failed
            );
        }
        _ => {
            let _ = writeln!(
                s,
                "bootstrap  not run (add --bootstrap for bootstrap intervals)"
            );
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<6} {:>14}  {:<31} {:<31}",
        "param", "estimate", "95% interval (t)", "95% bootstrap"
    );
    for (n, p) in &r.params.0 {
        let d = Precision::of_interval(p.estimate, p.ci95);
        let time = TIME_PARAMS.contains(&n.as_str());
        let show = |x: f64| if time { d.show_time(x) } else { d.show(x) };
        let ends = |c| pair_by(show, c);
        let _ = writeln!(
            s,
            "{:<6} {:>14}  {:<31} {:<31}",
            n,
            show(p.estimate),
            if p.fixed {
                "fixed".into()
            } else {
                ends(p.ci95)
            },
            ends(p.bootstrap_ci95)
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "milestones");
    for m in &r.milestones {
        let unit = if m.kind == "duration_10_90" && !r.time_unit.is_empty() {
            let u = &r.time_unit;
            if u.ends_with('s') {
                format!(" {u}")
            } else {
                format!(" {u}s")
            }
        } else {
            String::new()
        };
        let d = Precision::of_interval(m.estimate.unwrap_or(f64::NAN), m.delta95);
        let show = |t: f64| {
            if m.kind == "duration_10_90" {
                d.show(t)
            } else {
                d.show_time(t)
            }
        };
        // A time that is a number (a duration, a time on a numeric axis) at
        // its interval's digits; dates, months and quarters as written.
        let when = match (&m.time_text, m.estimate) {
            (Some(t), Some(x)) if t.parse::<f64>().is_ok() => show(x),
            (Some(t), _) => t.clone(),
            (None, _) => "—".into(),
        };
        let delta = if let Some([lo, hi]) = &m.delta95_text {
            format!("{lo} … {hi}")
        } else if m.time_text.is_some() {
            pair_by(show, m.delta95)
        } else {
            "-".into()
        };
        let boot = match (m.bootstrap95, m.time_text.is_some()) {
            (Some([lo, hi]), true) => format!(
                "{} … {}",
                lo.map_or("-".into(), show),
                hi.map_or("never (open)".into(), show)
            ),
            _ => "-".into(),
        };
        let _ = writeln!(
            s,
            "  {:<28} {:>12}{unit}  delta {:<28} bootstrap {:<28} {}",
            m.label, when, delta, boot, m.verdict
        );
        if !m.note.is_empty() {
            let _ = writeln!(s, "  {:<28} {}", "", m.note);
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<12} {:>12} {:>12}  {:<29} {:<29} {:<29}",
        "time", "observed", "fit", "95% confidence", "95% prediction", "95% bootstrap"
    );
    for p in &r.points {
        let d = Precision::of_interval(p.fit, p.confidence95);
        let _ = writeln!(
            s,
            "{:<12} {:>12} {:>12}  {:<29} {:<29} {:<29}",
            p.time,
            p.observed.map_or(String::new(), number),
            d.show(p.fit),
            pair(d, p.confidence95),
            pair(d, p.prediction95),
            pair(d, p.bootstrap95)
        );
    }
    for w in &r.warnings {
        let _ = writeln!(s, "warning    {} [{}]", w.message, w.code.as_str());
    }
    let _ = writeln!(s, "\n{CAUTION}");
    s
}

/// One line per prefix: cutoff, points, each parameter with its interval.
///
/// Printed from the `--json` report itself, so the two always agree: an
/// interval the report withholds (a parameter the data do not determine,
/// or one without a standard error) is not shown here either.
pub fn drift(name: &str, r: &DriftReport) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "drift      {} refitted on prefixes of {name} (first m points in time order), {} intervals",
        r.model, r.intervals
    );
    let names: Vec<&str> = r
        .rows
        .iter()
        .find_map(|row| row.params.as_ref())
        .map(|p| p.0.iter().map(|(n, _)| n.as_str()).collect())
        .unwrap_or_default();
    let _ = write!(s, "{:<12} {:>4}", "cutoff", "m");
    for n in &names {
        let _ = write!(s, "  {:<34}", format!("{n} (95% interval)"));
    }
    let _ = writeln!(s);
    let mut withheld = false;
    let mut at_least = false;
    for row in &r.rows {
        let _ = write!(s, "{:<12} {:>4}", row.cutoff_text, row.m);
        match (&row.params, &row.error) {
            (Some(params), _) => {
                for (name, p) in &params.0 {
                    let d = Precision::of_interval(p.estimate, p.ci95);
                    let time = TIME_PARAMS.contains(&name.as_str());
                    let show = |x: f64| if time { d.show_time(x) } else { d.show(x) };
                    let (est, ci) = (show(p.estimate), pair_by(show, p.ci95));
                    let ci = if p.fixed {
                        "fixed".to_string()
                    } else {
                        withheld |= p.ci95.is_none();
                        ci
                    };
                    let cell = match p.at_least {
                        // Not determined: the meaningless estimate is not shown.
                        Some(lo) => {
                            at_least = true;
                            format!("at least {} (-)", Precision::of_interval(lo, None).show(lo))
                        }
                        None => format!("{est} ({ci})"),
                    };
                    let _ = write!(s, "  {:<34}", cell);
                }
                if row.converged == Some(false) && !row.warnings.contains(&"not_converged") {
                    let _ = write!(s, "  not converged");
                }
                if !row.warnings.is_empty() {
                    let _ = write!(s, "  {}", row.warnings.join(" "));
                }
            }
            (None, e) => {
                let _ = write!(s, "  no fit: {}", e.as_deref().unwrap_or("-"));
            }
        }
        let _ = writeln!(s);
    }
    if withheld {
        let _ = writeln!(
            s,
            "\n(-) no interval: the data of that prefix do not determine the parameter \
             (saturation_not_identified) or it has no standard error"
        );
    }
    if at_least {
        let _ = writeln!(
            s,
            "\"at least\": the data up to that cutoff do not determine {0}; {0} is at least \
             the value shown ({1}), and its estimate there means nothing",
            if r.model == "bass" { "m" } else { "K" },
            if r.intervals == "profile" {
                "the verified profile lower bound"
            } else {
                "the fitted curve's level at the cutoff"
            }
        );
    }
    if let Some(all) = r.cutoffs_capped_from {
        let _ = writeln!(
            s,
            "{} of {all} possible cutoffs refitted, evenly spread (--max-cutoffs all for every one)",
            r.rows.len()
        );
    }
    let _ = writeln!(s, "\n{CAUTION}");
    s
}

/// MAE and MAPE by horizon, one block per model.
pub fn backtest(name: &str, horizon: usize, rows: &[ModelBacktest]) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "backtest   rolling origin on {name}: forecasts 1 to {horizon} observations ahead"
    );
    for m in rows {
        let capped = m
            .origins_capped_from
            .map(|all| format!(" (of {all}, evenly spread)"))
            .unwrap_or_default();
        let _ = writeln!(
            s,
            "\n{}: {} origins{capped}, {} without a fit",
            m.model.name(),
            m.origins,
            m.failed
        );
        if let Some(e) = &m.error {
            let _ = writeln!(s, "  not fitted: {e}");
            continue;
        }
        let _ = writeln!(
            s,
            "  {:>3} {:>6} {:>14} {:>10}",
            "h", "count", "MAE", "MAPE %"
        );
        for h in &m.by_horizon {
            let _ = writeln!(
                s,
                "  {:>3} {:>6} {:>14} {:>10}",
                h.h,
                h.count,
                h.mae.map_or("-".into(), number),
                h.mape.map_or("-".into(), number)
            );
        }
    }
    let _ = writeln!(s, "\n{CAUTION}");
    s
}
