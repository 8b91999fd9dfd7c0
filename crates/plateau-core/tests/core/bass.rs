//! Bass diffusion against scipy: `tests/reference/bass.json`, written by
//! `tests/reference/bass.py` (`scipy.optimize.curve_fit(method="lm")`,
//! MINPACK with the analytic Jacobian, tolerances 1e-15, started at the
//! true parameters; `numpy.linalg.lstsq` for the Bass 1969 regression) on
//! demo-data/lumen_cell_adoptions.csv summed into running totals.
//!
//! Plateau fits from its own self-start; both must reach the same
//! least-squares minimum: estimates to relative 1e-6, standard errors to
//! 1e-4, RSS to 1e-8 (the tolerances of `scipy.rs`).

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

/// Months and running totals of the monthly counts.
fn data() -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(root().join("demo-data/lumen_cell_adoptions.csv")).unwrap();
    let mut t = vec![];
    let mut total = 0.0;
    let mut y = vec![];
    for line in text.lines().skip(1).filter(|l| !l.is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        t.push(a.parse::<f64>().unwrap());
        total += b.parse::<f64>().unwrap();
        y.push(total);
    }
    (t, y)
}

fn reference() -> Value {
    let text = std::fs::read_to_string(root().join("tests/reference/bass.json"))
        .expect("tests/reference/bass.json (run tests/reference/bass.py)");
    serde_json::from_str(&text).unwrap()
}

#[test]
fn bass_fits_match_scipy_curve_fit() {
    let (t, y) = data();
    let r = reference();
    for case in r["fits"].as_array().unwrap() {
        let fixed: Vec<(String, f64)> = case["fixed"]
            .as_object()
            .unwrap()
            .iter()
            .map(|(k, v)| (k.clone(), v.as_f64().unwrap()))
            .collect();
        let opts = FitOptions {
            fixed: fixed.clone(),
            ..FitOptions::default()
        };
        let f = fit_xy(&t, &y, Model::Bass, &opts).unwrap();
        assert!(f.converged, "{fixed:?}: {:?}", f.termination);
        let rss = case["rss"].as_f64().unwrap();
        assert!(rel(f.rss, rss) < 1e-8, "{fixed:?} RSS {} vs {rss}", f.rss);
        for (name, want) in case["params"].as_object().unwrap() {
            let want = want.as_f64().unwrap();
            let p = f.param(name).unwrap();
            assert!(
                rel(p.estimate, want) < 1e-6,
                "{fixed:?} {name}: {} vs {want}",
                p.estimate
            );
            let se = case["std_errors"][name].as_f64().unwrap();
            let got = p.std_error.unwrap();
            assert!(rel(got, se) < 1e-4, "{fixed:?} se {name}: {got} vs {se}");
        }
    }
}

/// The self-start's Bass (1969) regression equals numpy's least squares.
#[test]
fn bass_regression_matches_numpy_lstsq() {
    let (t, y) = data();
    let r = &reference()["bass_1969_regression"];
    let pts: Vec<(f64, f64)> = t.iter().copied().zip(y.iter().copied()).collect();
    let [m, p, q] = plateau_core::start::bass_ols(&pts, None).expect("valid signs");
    for (name, got) in [("m", m), ("p", p), ("q", q)] {
        let want = r[name].as_f64().unwrap();
        assert!(rel(got, want) < 1e-8, "{name}: {got} vs {want}");
    }
}

/// On the demo series (true m = 4000, p = 0.012, q = 0.38, tau = 0 from
/// demo-data/README.md) the peak's delta-method intervals cover the true
/// peak: t* = ln(q/p)/(p+q) and m (p+q)²/(4q) (Bass 1969).
#[test]
fn demo_peak_intervals_cover_the_truth() {
    let (t, y) = data();
    let f = fit_xy(&t, &y, Model::Bass, &FitOptions::default()).unwrap();
    let pk = plateau_core::analysis::bass_peak(&f).unwrap();
    let (m, p, q): (f64, f64, f64) = (4000.0, 0.012, 0.38);
    let t_true = (q / p).ln() / (p + q);
    let rate_true = m * (p + q).powi(2) / (4.0 * q);
    let (a, b) = pk.time_ci95.unwrap();
    assert!(a <= t_true && t_true <= b, "t* {t_true} not in [{a}, {b}]");
    // The rate interval is tight (running totals of Poisson counts have
    // correlated errors that the i.i.d. interval ignores), so the check is
    // that the estimate is within 5% of the truth and the interval is
    // around the estimate.
    let (a, b) = pk.rate_ci95.unwrap();
    assert!(a < pk.rate && pk.rate < b);
    assert!((pk.rate / rate_true - 1.0).abs() < 0.05, "{}", pk.rate);
}

/// Exact Bass data with a launch inside the data range (the first three
/// points are before launch, at 0): the self-start and the solver recover
/// every parameter, with tau free and with tau given.
#[test]
fn launch_inside_the_data_is_recovered() {
    let truth = [2500.0, 0.02, 0.5, 3.3];
    let t: Vec<f64> = (0..40).map(f64::from).collect();
    let y: Vec<f64> = t.iter().map(|&ti| Model::Bass.eval(&truth, ti)).collect();
    assert_eq!(&y[..4], &[0.0; 4]);
    for fixed in [vec![], vec![("tau".to_string(), 3.3)]] {
        let opts = FitOptions {
            fixed: fixed.clone(),
            ..FitOptions::default()
        };
        let f = fit_xy(&t, &y, Model::Bass, &opts).unwrap();
        for (p, want) in f.params.iter().zip(truth) {
            assert!(
                rel(p.estimate, want) < 1e-6,
                "{fixed:?} {}: {} vs {want}",
                p.name,
                p.estimate
            );
        }
    }
}

/// The bi-logistic reports the earlier pulse first whatever order the
/// start or the solver found them in, and the swap keeps the fit.
#[test]
fn bilogistic_pulses_come_in_time_order() {
    let truth = [400.0, 0.5, 30.0, 900.0, 0.9, 8.0];
    let t: Vec<f64> = (0..50).map(f64::from).collect();
    let y: Vec<f64> = t
        .iter()
        .map(|&ti| Model::Bilogistic.eval(&truth, ti))
        .collect();
    let f = fit_xy(&t, &y, Model::Bilogistic, &FitOptions::default()).unwrap();
    let v = f.values();
    assert!(v[2] < v[5], "{v:?}");
    let want = [900.0, 0.9, 8.0, 400.0, 0.5, 30.0];
    for (got, want) in v.iter().zip(want) {
        assert!(rel(*got, want) < 1e-6, "{v:?}");
    }
}
