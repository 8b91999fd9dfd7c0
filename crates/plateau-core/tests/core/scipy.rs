//! Cross-check against scipy: `scipy.optimize.curve_fit(method="lm")`
//! (MINPACK, analytic Jacobian, ftol = xtol = gtol = 1e-15, started at the
//! true parameters, `absolute_sigma=False`) on the demo data. The reference
//! values are in `tests/reference/scipy_fits.json`, written by
//! `tests/reference/scipy_fits.py` (see its header for how to rerun it and
//! `tests/reference/requirements.txt` for the pinned versions).
//!
//! Plateau fits the same files from its own self-start with default options;
//! both must land on the same least-squares minimum:
//! estimates to relative 1e-6, standard errors to 1e-4, RSS to 1e-8.
//!
//! ISO dates become the decimal year `year + (day_of_year - 1) /
//! days_in_year`, the same axis as the script and Plateau's parser; it is
//! recomputed here so the test doesn't depend on the parser.

use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::Model;
use serde_json::Value;
use std::path::PathBuf;

const PARAM_RTOL: f64 = 1e-6;
const SE_RTOL: f64 = 1e-4;
const RSS_RTOL: f64 = 1e-8;

pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

pub fn decimal_year(iso: &str) -> f64 {
    let date = chrono::NaiveDate::parse_from_str(iso, "%Y-%m-%d")
        .unwrap_or_else(|e| panic!("bad date {iso}: {e}"));
    let year = chrono::Datelike::year(&date);
    let days = if chrono::NaiveDate::from_ymd_opt(year, 2, 29).is_some() {
        366.0
    } else {
        365.0
    };
    f64::from(year) + f64::from(chrono::Datelike::ordinal0(&date)) / days
}

/// Two-column demo CSV with a header row; dates or plain numbers in column 1.
pub fn load(file: &str, dates: bool) -> (Vec<f64>, Vec<f64>) {
    let path = root().join(file);
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    let mut t = vec![];
    let mut y = vec![];
    for line in text.lines().skip(1).filter(|l| !l.is_empty()) {
        let (a, b) = line.split_once(',').expect("two columns");
        t.push(if dates {
            decimal_year(a)
        } else {
            a.parse().unwrap()
        });
        y.push(b.parse().unwrap());
    }
    (t, y)
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

#[test]
fn decimal_year_axis() {
    assert_eq!(decimal_year("2019-01-01"), 2019.0);
    assert_eq!(decimal_year("2019-03-01"), 2019.0 + 59.0 / 365.0);
    assert_eq!(decimal_year("2020-03-01"), 2020.0 + 60.0 / 366.0);
}

#[test]
fn self_started_fits_match_scipy_curve_fit() {
    let path = root().join("tests/reference/scipy_fits.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    let reference: Value = serde_json::from_str(&text).unwrap();
    let cases = reference["cases"].as_array().expect("cases");
    assert!(cases.len() >= 5, "expected the scipy reference cases");

    let mut failures = vec![];
    for case in cases {
        let id = case["id"].as_str().unwrap();
        let model = Model::from_name(case["model"].as_str().unwrap()).expect("model name");
        let dates = case["time_axis"] == "decimal_year";
        let (t, y) = load(case["file"].as_str().unwrap(), dates);
        assert_eq!(t.len() as u64, case["n"].as_u64().unwrap(), "{id}: n");

        let fit = fit_xy(&t, &y, model, &FitOptions::default())
            .unwrap_or_else(|e| panic!("{id}: fit failed: {e:?}"));
        let (mut worst_p, mut worst_se) = (0.0_f64, 0.0_f64);
        for name in model.param_names() {
            let p = fit.param(name).unwrap();
            let want = case["params"][*name].as_f64().unwrap();
            let want_se = case["std_errors"][*name].as_f64().unwrap();
            let dp = rel(p.estimate, want);
            let dse = p.std_error.map_or(f64::INFINITY, |se| rel(se, want_se));
            worst_p = worst_p.max(dp);
            worst_se = worst_se.max(dse);
            if dp > PARAM_RTOL {
                failures.push(format!(
                    "{id}: {name} = {} vs scipy {want} (rel {dp:.1e})",
                    p.estimate
                ));
            }
            if dse > SE_RTOL {
                failures.push(format!(
                    "{id}: se({name}) = {:?} vs scipy {want_se} (rel {dse:.1e})",
                    p.std_error
                ));
            }
        }
        let want_rss = case["rss"].as_f64().unwrap();
        let drss = rel(fit.rss, want_rss);
        if drss > RSS_RTOL {
            failures.push(format!(
                "{id}: rss = {} vs scipy {want_rss} (rel {drss:.1e})",
                fit.rss
            ));
        }
        println!(
            "{id:<26} worst rel diff: params {worst_p:.1e}, std errors {worst_se:.1e}, rss {drss:.1e}"
        );
    }
    assert!(
        failures.is_empty(),
        "disagreement with scipy:\n{}",
        failures.join("\n")
    );
}
