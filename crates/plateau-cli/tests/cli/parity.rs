//! The two faces agree: the page's session (`plateau_web::session`) and the
//! `plateau` binary, given the same request (Gompertz, relative errors, a
//! 75% milestone, a level, a Fisher–Pry K, a seeded bootstrap), read the
//! same numbers from the same `plateau_study::Study`, to the last bit. The
//! numbers themselves are checked against outside references in the
//! core's tests; here the point is that neither face computes its own.

use super::{demo, json, plateau};
use plateau_web::session::{analyse, bootstrap_view, start_bootstrap, Settings};
use serde_json::Value;

const FILE: &str = "aldermoor_subscribers.csv";

fn settings() -> Settings {
    Settings {
        model: "gompertz".into(),
        error_model: "relative".into(),
        share: 75.0,
        level: Some(5000.0),
        fisher_pry_k: Some(13000.0),
        replicates: Some(60.0),
        seed: Some(7.0),
        bootstrap: true,
        ..Settings::default()
    }
}

/// A number as JSON carries it (serde_json prints the shortest text that
/// reads back to the same bits; these tests parse with `float_roundtrip`,
/// so the comparison is of the same f64).
fn as_json<T: serde::Serialize>(x: T) -> Value {
    serde_json::from_str(&serde_json::to_string(&x).unwrap()).unwrap()
}

fn cli(sub: &str, extra: &[&str]) -> Value {
    let file = demo(FILE);
    let mut args = vec![sub, file.as_str(), "--errors", "relative"];
    if sub != "backtest" {
        args.extend(["--model", "gompertz"]);
    }
    args.extend(extra);
    args.push("--json");
    json(&plateau(&args, None))
}

fn page() -> plateau_web::session::Analysis {
    let text = std::fs::read_to_string(demo(FILE)).unwrap();
    analyse(&text, &settings()).expect("the page analyses the demo")
}

#[test]
fn fit_and_diagnose_reports_are_the_same_on_both_faces() {
    let a = page();
    let page_fit: Value = serde_json::from_str(&a.report_json()).unwrap();
    assert_eq!(page_fit, cli("fit", &[]));
    // `plateau diagnose` fits with asymptotic intervals (its checks read
    // residuals and likelihoods); the checks must be the page's.
    let page_diag: Value = serde_json::from_str(&a.diagnose_json()).unwrap();
    let cli_diag = cli("diagnose", &["--fisher-pry-k", "13000"]);
    for key in ["residuals", "symmetry_test", "fisher_pry", "verdicts"] {
        assert_eq!(page_diag[key], cli_diag[key], "{key}");
    }
    assert_eq!(page_diag["fisher_pry"]["k"], 13000.0);
}

#[test]
fn milestones_drift_and_backtest_are_the_same_on_both_faces() {
    let a = page();
    let fc = cli(
        "forecast",
        &["--until", "45", "--share", "75", "--level", "5000"],
    );
    let cli_ms = fc["milestones"].as_array().unwrap();
    assert_eq!(a.view.milestones.len(), cli_ms.len());
    for (p, c) in a.view.milestones.iter().zip(cli_ms) {
        assert_eq!(p.label, c["label"].as_str().unwrap());
        assert_eq!(as_json(p.time), c["estimate"], "{}", p.label);
        assert_eq!(p.verdict, c["verdict"].as_str().unwrap(), "{}", p.label);
    }
    assert!(a.view.milestones.iter().any(|m| m.label == "75% of K"));
    // Every prefix on both (the page samples at most 120; the demo has 30 points).
    let dr = cli("drift", &[]);
    let rows = dr["rows"].as_array().unwrap();
    assert_eq!(a.drift().len(), rows.len());
    for (p, c) in a.drift().iter().zip(rows) {
        let k = p.result.as_ref().ok().map(|f| f.params[0].estimate);
        assert_eq!(
            as_json(k),
            c["params"]["K"]["estimate"],
            "cutoff {}",
            p.cutoff
        );
    }
    // The page's backtest is `plateau backtest --horizon 4` (30 points:
    // fewer than 40 origins, so every origin from half the data).
    let bt = cli("backtest", &["--horizon", "4"]);
    let models = bt["models"].as_array().unwrap();
    assert_eq!(a.backtest_view().rows.len(), models.len());
    for (p, c) in a.backtest_view().rows.iter().zip(models) {
        assert_eq!(p.model, c["model"].as_str().unwrap());
        let mape: Vec<Value> = c["horizons"]
            .as_array()
            .unwrap()
            .iter()
            .map(|h| h["mape"].clone())
            .collect();
        assert_eq!(as_json(&p.mape), Value::Array(mape), "{}", p.model);
    }
}

/// The bootstrap resamples additive errors (it refuses other error
/// models), so this request keeps them.
#[test]
fn the_bootstrap_is_the_same_on_both_faces() {
    let text = std::fs::read_to_string(demo(FILE)).unwrap();
    let additive = Settings {
        error_model: "additive".into(),
        ..settings()
    };
    let a = analyse(&text, &additive).unwrap();
    let mut b = start_bootstrap(&a).unwrap();
    // The page runs it in slices.
    while !b.is_finished() {
        b.step(7);
    }
    let view = bootstrap_view(&a, &b);
    let file = demo(FILE);
    let fc = json(&plateau(
        &[
            "forecast",
            &file,
            "--model",
            "gompertz",
            "--until",
            "45",
            "--share",
            "75",
            "--level",
            "5000",
            "--bootstrap",
            "60",
            "--seed",
            "7",
            "--json",
        ],
        None,
    ));
    let cli_params: Vec<Value> = fc["params"]
        .as_object()
        .unwrap()
        .values()
        .map(|p| p["bootstrap_ci95"].clone())
        .collect();
    assert_eq!(as_json(&view.params), Value::Array(cli_params));
    assert!(view.params.iter().all(Option::is_some));
    assert_eq!(view.milestones.len(), 6);
    for (p, c) in view
        .milestones
        .iter()
        .zip(fc["milestones"].as_array().unwrap())
    {
        assert_eq!(as_json(p.time), c["estimate"], "{}", p.label);
        let boot = p.bootstrap_text.is_some();
        assert_eq!(boot, c["bootstrap95"].is_array(), "{}", p.label);
    }
}

/// With a known K the page reads the symmetry test off its comparison's
/// fits and `plateau diagnose --fix K=…` fits the three models itself: the
/// same fits, the same test.
#[test]
fn a_known_k_gives_the_same_checks_on_both_faces() {
    let text = std::fs::read_to_string(demo(FILE)).unwrap();
    let known = Settings {
        model: "logistic".into(),
        fixed_k: Some(13000.0),
        ..settings()
    };
    let a = analyse(&text, &known).unwrap();
    let page_diag: Value = serde_json::from_str(&a.diagnose_json()).unwrap();
    let file = demo(FILE);
    let cli_diag = json(&plateau(
        &[
            "diagnose",
            &file,
            "--errors",
            "relative",
            "--fix",
            "K=13000",
            "--fisher-pry-k",
            "13000",
            "--json",
        ],
        None,
    ));
    assert!(page_diag["symmetry_test"].is_object());
    for key in ["residuals", "symmetry_test", "fisher_pry", "verdicts"] {
        assert_eq!(page_diag[key], cli_diag[key], "{key}");
    }
}
