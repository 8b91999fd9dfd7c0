//! The data's own calendar: dated input is fitted on an axis counted in its
//! own period (see `data::TimeAxis`), so r is per that period and durations
//! are in it.
//!
//! Outside references: the analytic change of variable (the same curve on
//! an axis scaled by 12 has r/12, t0 scaled and shifted, the same K, L and
//! RSS); scipy `curve_fit` on the integer month index
//! (`tests/reference/calendar_fits.py` → `calendar_fits.json`); chrono's
//! calendar arithmetic for the dates.

use crate::scipy::root;
use chrono::Datelike;
use plateau_core::analysis::duration_10_90;
use plateau_core::data::{parse_series, ParseOptions, Period};
use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::{fit, forecast, Model};
use serde_json::Value;

fn tariff() -> plateau_core::Series {
    let text = std::fs::read_to_string(root().join("demo-data/tariff_share_monthly.csv")).unwrap();
    parse_series(&text, &ParseOptions::default()).unwrap()
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// The first-of-month tariff file is month data: months since 2000-01.
#[test]
fn first_of_month_dates_are_months() {
    let s = tariff();
    assert_eq!(s.axis.period(), Some(Period::Month));
    assert_eq!(s.time_unit(), "month");
    // 2019-01-01 is month 12 · 19 = 228; then one a month.
    for (i, t) in s.times.iter().enumerate() {
        assert_eq!(*t, 228.0 + i as f64);
    }
    assert_eq!(s.axis.format(s.times[59]), "2023-12-01");
}

/// r per month is r per year / 12 on the same data: fit on the month
/// axis and on the decimal axis year + (month − 1) / 12 (analytic: the
/// axes differ by t_year = 2000 + t_month / 12).
#[test]
fn rate_per_month_is_rate_per_year_over_12() {
    let s = tariff();
    let years: Vec<f64> = s.times.iter().map(|m| 2000.0 + m / 12.0).collect();
    for model in [Model::Logistic, Model::Logistic4, Model::Gompertz] {
        let by_month = fit(&s, model, &FitOptions::default()).unwrap();
        let by_year = fit_xy(&years, &s.values, model, &FitOptions::default()).unwrap();
        let p = |f: &plateau_core::Fit, n: &str| f.param(n).unwrap().estimate;
        let name = model.name();
        assert!(
            rel(p(&by_month, "r") * 12.0, p(&by_year, "r")) < 1e-6,
            "{name} r"
        );
        assert!(
            rel(p(&by_month, "t0"), 12.0 * (p(&by_year, "t0") - 2000.0)) < 1e-8,
            "{name} t0"
        );
        assert!(rel(p(&by_month, "K"), p(&by_year, "K")) < 1e-6, "{name} K");
        assert!(rel(by_month.rss, by_year.rss) < 1e-8, "{name} rss");
        // Durations are in months: 12 × the duration in years.
        let (dm, dy) = (
            duration_10_90(&by_month).unwrap().time,
            duration_10_90(&by_year).unwrap().time,
        );
        assert!(rel(dm, 12.0 * dy) < 1e-6, "{name} duration {dm} vs {dy}");
    }
}

/// Plateau's parse-and-fit of the month data lands on scipy's minimum on
/// the integer month index (calendar_fits.json).
#[test]
fn month_axis_fits_match_scipy_on_the_month_index() {
    let text = std::fs::read_to_string(root().join("tests/reference/calendar_fits.json")).unwrap();
    let reference: Value = serde_json::from_str(&text).unwrap();
    let s = tariff();
    for case in reference["cases"].as_array().unwrap() {
        let model = Model::from_name(case["model"].as_str().unwrap()).unwrap();
        assert_eq!(s.times[0], case["first_t"].as_f64().unwrap());
        let f = fit(&s, model, &FitOptions::default()).unwrap();
        for (name, want) in case["params"].as_object().unwrap() {
            let got = f.param(name).unwrap();
            let want = want.as_f64().unwrap();
            assert!(
                rel(got.estimate, want) < 1e-6,
                "{name}: {} vs {want}",
                got.estimate
            );
            let se = case["std_errors"][name].as_f64().unwrap();
            assert!(rel(got.std_error.unwrap(), se) < 1e-4, "{name} se");
        }
        assert!(rel(f.rss, case["rss"].as_f64().unwrap()) < 1e-8);
    }
}

/// Forecast rows of month, quarter and week data fall on the data's grid
/// (the grid dates checked with chrono's calendar arithmetic).
#[test]
fn forecast_rows_fall_on_the_grid() {
    let parse = |text: &str| parse_series(text, &ParseOptions::default()).unwrap();
    let cases = [
        // Month ends, leap February: the rows stay on month ends.
        (
            "d,v\n2023-10-31,1\n2023-11-30,2\n2023-12-31,3\n",
            "2024-05-31",
        ),
        // Month starts.
        (
            "d,v\n2023-10-01,1\n2023-11-01,2\n2023-12-01,3\n",
            "2024-05-01",
        ),
        // Quarter starts written as quarters.
        ("q,v\n2023Q2,1\n2023Q3,2\n2023Q4,3\n", "2025Q2"),
        // Quarter ends written as dates.
        (
            "d,v\n2023-06-30,1\n2023-09-30,2\n2023-12-31,3\n",
            "2025-06-30",
        ),
        // ISO weeks.
        ("w,v\n2023-W50,1\n2023-W51,2\n2023-W52,3\n", "2024-W06"),
    ];
    for (text, until) in cases {
        let s = parse(text);
        let last = *s.times.last().unwrap();
        let end = s.axis.snap_up(s.axis.parse_time(until).unwrap());
        let rows = forecast::grid(last, end, forecast::typical_step(&s.times), 500);
        assert!(!rows.is_empty());
        for t in &rows {
            assert_eq!(t.fract(), 0.0, "{text}: {t}");
        }
        let texts: Vec<String> = rows.iter().map(|t| s.axis.format(*t)).collect();
        assert_eq!(texts.last().map(String::as_str), Some(until), "{texts:?}");
        // Consecutive rows are one period apart by chrono.
        if s.axis.kind() == plateau_core::data::TimeKind::Date {
            let d = |x: &str| chrono::NaiveDate::parse_from_str(x, "%Y-%m-%d").unwrap();
            for w in texts.windows(2) {
                let (a, b) = (d(&w[0]), d(&w[1]));
                let months = (b.year() - a.year()) * 12 + b.month() as i32 - a.month() as i32;
                assert!(months == 1 || months == 3, "{w:?}");
                if text.contains("-31,") {
                    assert!(b.succ_opt().unwrap().day0() == 0, "{w:?} month end");
                }
            }
        }
    }
    // A horizon between two month ends moves to the next month end.
    let s = parse(cases[0].0);
    let t = s.axis.snap_up(s.axis.parse_time("2024-03-15").unwrap());
    assert_eq!(s.axis.format(t), "2024-03-31");
    // A month names its grid date; a decimal year its day.
    let t = s.axis.parse_time("2024-06").unwrap();
    assert_eq!((t.fract(), s.axis.format(t).as_str()), (0.0, "2024-06-30"));
    let t = s.axis.parse_time("2024.5").unwrap();
    assert_eq!(s.axis.format(s.axis.snap_up(t)), "2024-07-31");
}
