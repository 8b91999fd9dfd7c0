//! Delta-method bands against scipy: `tests/reference/bands.json`, written
//! by `tests/reference/bands.py` (scipy.optimize.curve_fit with
//! `absolute_sigma=False`, the gradient-sandwich variance g'·pcov·g and
//! `scipy.stats.t.ppf(0.975, n − p)`; see the script's header). Plateau's
//! self-started fit of the same demo file must give the same 95% confidence
//! band of the mean (`analysis::band`) and prediction band for a new
//! observation (`forecast::prediction_band`) at the data times and on a
//! forecast grid, to relative 1e-5 of the band's half-width (the estimates
//! themselves agree to about 1e-6, see scipy.rs).

use plateau_core::analysis::band;
use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::forecast::prediction_band;
use plateau_core::Model;
use serde_json::Value;
use std::path::PathBuf;

const HALF_RTOL: f64 = 1e-5;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn load(file: &str) -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(root().join(file)).unwrap();
    text.lines()
        .skip(1)
        .map(|l| {
            let (a, b) = l.split_once(',').unwrap();
            (a.parse::<f64>().unwrap(), b.parse::<f64>().unwrap())
        })
        .unzip()
}

#[test]
fn confidence_and_prediction_bands_match_scipy() {
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("tests/reference/bands.json")).unwrap(),
    )
    .unwrap();
    let cases = reference["cases"].as_array().unwrap();
    assert_eq!(cases.len(), 2);
    for case in cases {
        let id = case["id"].as_str().unwrap();
        let (t, y) = load(case["file"].as_str().unwrap());
        let fit = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
        let sigma = case["sigma"].as_f64().unwrap();
        assert!((fit.sigma - sigma).abs() < 1e-7 * sigma, "{id}: sigma");
        let points = case["points"].as_array().unwrap();
        assert!(points.len() > 20);
        for p in points {
            let ti = p["t"].as_f64().unwrap();
            let f = p["fit"].as_f64().unwrap();
            assert!(
                (fit.predict(ti) - f).abs() < 1e-6 * f.abs(),
                "{id} t={ti}: fit"
            );
            for (what, ours) in [
                ("confidence95", band(&fit, ti, 0.95).unwrap()),
                ("prediction95", prediction_band(&fit, ti, 0.95).unwrap()),
            ] {
                let lo = p[what][0].as_f64().unwrap();
                let hi = p[what][1].as_f64().unwrap();
                let half = (hi - lo) / 2.0;
                let our_half = (ours.1 - ours.0) / 2.0;
                assert!(
                    (our_half - half).abs() <= HALF_RTOL * half,
                    "{id} t={ti} {what}: half-width {our_half} vs scipy {half}"
                );
                let mid = (lo + hi) / 2.0;
                assert!((ours.0 + our_half - mid).abs() <= 1e-6 * mid.abs().max(half));
            }
        }
    }
}
