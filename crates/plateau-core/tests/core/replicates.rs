//! Replicate measurements (several values at one time) fitted as given,
//! against scipy `curve_fit` (MINPACK lm, analytic Jacobian) on the same
//! rows: `tests/reference/replicates.py`, output checked in as
//! `replicates.json` (data generated there from a fixed seed). The
//! checks that need one value per time use the mean residual per time;
//! Durbin–Watson and the lag-1 autocorrelation of those means are
//! statsmodels' (`durbin_watson`, `acf`) in the same file.

use plateau_core::data::{parse_series, ParseOptions};
use plateau_core::diagnostics::residual_diagnostics;
use plateau_core::fit::{fit, FitOptions, IntervalMethod};
use plateau_core::{Model, WarningCode};
use std::collections::BTreeMap;
use std::path::PathBuf;

fn reference() -> serde_json::Value {
    let path =
        PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/reference/replicates.json");
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn floats(v: &serde_json::Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs()
}

#[test]
fn replicate_fits_match_scipy_curve_fit() {
    let reference = reference();
    let cases = reference["cases"].as_object().unwrap();
    assert_eq!(cases.len(), 2);
    for (name, case) in cases {
        let (t, y) = (floats(&case["t"]), floats(&case["y"]));
        // Through the parser, as a user's file would come in.
        let mut text = String::from("time,value\n");
        for (a, b) in t.iter().zip(&y) {
            text.push_str(&format!("{a},{b}\n"));
        }
        let series = parse_series(&text, &ParseOptions::default()).unwrap();
        assert_eq!(series.times, t, "{name}: every row kept, input order");
        let mut per_time: BTreeMap<u64, usize> = BTreeMap::new();
        for v in &t {
            *per_time.entry(v.to_bits()).or_default() += 1;
        }
        let repeated = per_time.values().filter(|&&c| c > 1).count();
        let rows: usize = per_time.values().filter(|&&c| c > 1).sum();
        assert_eq!(
            per_time.len() as u64,
            case["distinct_times"].as_u64().unwrap()
        );
        let w = series
            .warnings
            .iter()
            .find(|w| w.code == WarningCode::ReplicateTimes)
            .unwrap_or_else(|| panic!("{name}: no replicate warning"));
        let head = format!("{repeated} times carry more than one value ({rows} rows at them");
        assert!(w.message.starts_with(&head), "{name}: {}", w.message);

        let model = match case["model"].as_str().unwrap() {
            "logistic" => Model::Logistic,
            _ => Model::Gompertz,
        };
        let opts = FitOptions {
            intervals: IntervalMethod::Asymptotic,
            ..FitOptions::default()
        };
        let f = fit(&series, model, &opts).unwrap();
        assert!(f.converged, "{name}");
        assert_eq!(
            f.n as u64,
            case["n"].as_u64().unwrap(),
            "{name}: n counts rows"
        );
        for ((p, want), want_se) in f
            .params
            .iter()
            .zip(floats(&case["params"]))
            .zip(floats(&case["std_errors"]))
        {
            assert!(
                close(p.estimate, want, 1e-8),
                "{name} {}: {} vs scipy {want}",
                p.name,
                p.estimate
            );
            let se = p.std_error.unwrap();
            assert!(
                close(se, want_se, 1e-8),
                "{name} {}: se {se} vs scipy {want_se}",
                p.name
            );
        }
        let rss = case["rss"].as_f64().unwrap();
        assert!(
            close(f.rss, rss, 1e-10),
            "{name}: RSS {} vs scipy {rss}",
            f.rss
        );

        // Order checks on the mean residual per time (statsmodels).
        let d = residual_diagnostics(&f, &series.times, &series.values);
        assert_eq!(d.n, t.len());
        assert_eq!(d.serial_n, per_time.len());
        assert!(d.per_time_means);
        let dw = case["durbin_watson_of_means"].as_f64().unwrap();
        let r1 = case["lag1_of_means"].as_f64().unwrap();
        assert!(
            close(d.durbin_watson.unwrap(), dw, 1e-6),
            "{name}: DW {:?} vs {dw}",
            d.durbin_watson
        );
        assert!(
            (d.lag1_autocorrelation.unwrap() - r1).abs() < 1e-6,
            "{name}: r1 {:?} vs {r1}",
            d.lag1_autocorrelation
        );
        assert_eq!(
            d.runs.as_ref().unwrap().runs as u64,
            case["runs_of_means"].as_u64().unwrap(),
            "{name}"
        );
    }
}
