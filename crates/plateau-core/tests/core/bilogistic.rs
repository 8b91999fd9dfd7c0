//! The bi-logistic against scipy: `tests/reference/bilogistic.json`,
//! written by `tests/reference/bilogistic.py`
//! (`scipy.optimize.curve_fit(method="lm")`, MINPACK with the analytic
//! Jacobian, tolerances 1e-15, started at the true parameters) on
//! demo-data/wrenlow_two_waves.csv.
//!
//! Plateau fits from its own self-start; both must reach the same
//! least-squares minimum: estimates to relative 1e-6, standard errors to
//! 1e-4, RSS to 1e-8 (the tolerances of `scipy.rs` and `bass.rs`).

use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::Model;
use serde_json::Value;
use std::path::PathBuf;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs()
}

/// Months and cumulative subscribers of the two-wave demo.
fn data() -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(root().join("demo-data/wrenlow_two_waves.csv")).unwrap();
    let (mut t, mut y) = (vec![], vec![]);
    for line in text.lines().skip(1).filter(|l| !l.is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        t.push(a.parse::<f64>().unwrap());
        y.push(b.parse::<f64>().unwrap());
    }
    (t, y)
}

#[test]
fn bilogistic_fit_matches_scipy_curve_fit() {
    let (t, y) = data();
    let r: Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("tests/reference/bilogistic.json"))
            .expect("tests/reference/bilogistic.json (run tests/reference/bilogistic.py)"),
    )
    .unwrap();
    let f = fit_xy(&t, &y, Model::Bilogistic, &FitOptions::default()).unwrap();
    assert!(f.converged, "{:?}", f.termination);
    let rss = r["rss"].as_f64().unwrap();
    assert!(rel(f.rss, rss) < 1e-8, "RSS {} vs {rss}", f.rss);
    for (name, want) in r["params"].as_object().unwrap() {
        let want = want.as_f64().unwrap();
        let p = f.param(name).unwrap();
        assert!(
            rel(p.estimate, want) < 1e-6,
            "{name}: {} vs {want}",
            p.estimate
        );
        let se = r["std_errors"][name].as_f64().unwrap();
        let got = p.std_error.unwrap();
        assert!(rel(got, se) < 1e-4, "se {name}: {got} vs {se}");
    }
}

/// Data that stop before the second wave's midpoint (month 30 of 48; the
/// truth has t02 = 32) cannot determine K2, and so not the level K1 + K2:
/// K2 is flagged as not identified, with no upper bound; K1, whose wave is
/// past, is not. All 48 months determine both.
#[test]
fn an_unfinished_second_wave_leaves_k2_undetermined() {
    use plateau_core::WarningCode;
    let (t, y) = data();
    let f = fit_xy(
        &t[..30],
        &y[..30],
        Model::Bilogistic,
        &FitOptions::default(),
    )
    .unwrap();
    let k2 = f.param("K2").unwrap();
    assert!(!k2.identified, "K2 = {}", k2.estimate);
    assert!(k2.interval.is_some_and(|i| i.hi.is_none()));
    assert!(f.param("K1").unwrap().identified);
    assert!(f
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::SaturationNotIdentified && w.message.contains("K2")));
    let all = fit_xy(&t, &y, Model::Bilogistic, &FitOptions::default()).unwrap();
    assert!(all.params.iter().all(|p| p.identified));
    assert!(!all.has_warning(WarningCode::SaturationNotIdentified));
}
