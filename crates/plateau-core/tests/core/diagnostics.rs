//! Cross-check of the residual diagnostics against statsmodels and scipy:
//! `tests/reference/diagnostics.py` fits demo files with scipy
//! `curve_fit` and computes statsmodels' `durbin_watson`,
//! `runstest_1samp(cutoff=0, correction=True)`, `acf(nlags=1)`,
//! `jarque_bera`, scipy's `probplot` and `chi2.sf` (likelihood ratio), and a
//! statsmodels WLS for the Fisher–Pry curvature; its output is
//! `tests/reference/diagnostics.json` (versions inside).
//!
//! The script's residuals are fed to Plateau as they are, so the statistics
//! are compared on identical input (relative 1e-10; normal and χ² tail
//! probabilities to 1e-8 relative). Plateau's own fits of the same files
//! must give the same residuals to the fits' precision.

use super::scipy::{load, root};
use plateau_core::diagnostics::{self, of_residuals};
use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::Model;
use serde_json::Value;

fn reference() -> Value {
    let path = root().join("tests/reference/diagnostics.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    serde_json::from_str(&text).unwrap()
}

fn close(what: &str, got: f64, want: f64, rtol: f64) {
    let d = (got - want).abs() / want.abs().max(1e-300);
    assert!(d <= rtol, "{what}: {got} vs reference {want} (rel {d:.1e})");
}

fn floats(v: &Value) -> Vec<f64> {
    v.as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_f64().unwrap())
        .collect()
}

#[test]
fn residual_statistics_match_statsmodels_and_scipy() {
    let r = reference();
    let cases = r["cases"].as_array().unwrap();
    assert!(cases.len() >= 6);
    let mut compared = 0;
    for c in cases {
        let id = c["id"].as_str().unwrap();
        let res = floats(&c["residuals"]);
        let d = of_residuals(res.clone());
        close(
            &format!("{id} durbin_watson"),
            d.durbin_watson.unwrap(),
            c["durbin_watson"].as_f64().unwrap(),
            1e-10,
        );
        close(
            &format!("{id} acf1"),
            d.lag1_autocorrelation.unwrap(),
            c["acf1"].as_f64().unwrap(),
            1e-10,
        );
        let runs = d.runs.as_ref().unwrap();
        let want = &c["runs"];
        assert_eq!(runs.runs as u64, want["runs"].as_u64().unwrap(), "{id}");
        assert_eq!(
            runs.n_positive as u64,
            want["n_positive"].as_u64().unwrap(),
            "{id}"
        );
        // statsmodels corrects R − μ by +0.5 whenever R − μ < 0.5, also for
        // 0 ≤ R − μ < 0.5 (moving z away from 0); Plateau shrinks |R − μ|
        // by 0.5 without crossing zero (z = 0 there). The two agree when
        // |R − μ| ≥ 0.5 or n ≥ 50; otherwise only Plateau's rule is checked.
        let diff = runs.runs as f64 - runs.expected;
        if diff.abs() >= 0.5 || res.len() >= 50 {
            close(
                &format!("{id} runs z"),
                runs.z,
                want["z"].as_f64().unwrap(),
                1e-10,
            );
            close(
                &format!("{id} runs p"),
                runs.p_value,
                want["p_value"].as_f64().unwrap(),
                1e-8,
            );
            compared += 1;
        } else {
            assert_eq!((runs.z, runs.p_value), (0.0, 1.0), "{id}");
        }
        let qq = d.qq.as_ref().unwrap();
        let pp = &c["probplot"];
        let theo = floats(&pp["theoretical"]);
        let ord = floats(&pp["ordered"]);
        for (i, p) in qq.points.iter().enumerate() {
            assert!((p.theoretical - theo[i]).abs() < 1e-12, "{id} q[{i}]");
            assert_eq!(p.sample, ord[i], "{id} ordered[{i}]");
        }
        close(
            &format!("{id} qq slope"),
            qq.slope,
            pp["slope"].as_f64().unwrap(),
            1e-10,
        );
        close(
            &format!("{id} qq r"),
            qq.correlation,
            pp["r"].as_f64().unwrap(),
            1e-12,
        );
        let jb = d.jarque_bera.unwrap();
        let want = &c["jarque_bera"];
        close(
            &format!("{id} JB"),
            jb.statistic,
            want["statistic"].as_f64().unwrap(),
            1e-9,
        );
        close(
            &format!("{id} JB p"),
            jb.p_value,
            want["p_value"].as_f64().unwrap(),
            1e-8,
        );
        close(
            &format!("{id} skew"),
            jb.skewness.abs(),
            want["skewness"].as_f64().unwrap().abs(),
            1e-9,
        );
        close(
            &format!("{id} kurt"),
            jb.kurtosis,
            want["kurtosis"].as_f64().unwrap(),
            1e-10,
        );
    }
    assert!(compared >= 6, "runs test compared on {compared} cases only");
}

/// Plateau's own fits give the residuals the script saw (except the
/// Richards fit of the Gompertz file, whose scipy optimum has ν < 0,
/// outside Plateau's range ν > 0).
#[test]
fn plateau_fits_give_the_reference_residuals() {
    let r = reference();
    for c in r["cases"].as_array().unwrap() {
        let id = c["id"].as_str().unwrap();
        if c["params"]["nu"].as_f64().is_some_and(|nu| nu <= 0.0) {
            continue;
        }
        let model = Model::from_name(c["model"].as_str().unwrap()).unwrap();
        let file = c["file"].as_str().unwrap();
        let dates = file.contains("tariff");
        let (t, y) = load(file, dates);
        let fit = fit_xy(&t, &y, model, &FitOptions::default()).unwrap();
        let ours = diagnostics::residuals_in_time_order(&fit, &t, &y);
        let want = floats(&c["residuals"]);
        assert_eq!(ours.len(), want.len());
        let scale = fit.sigma;
        for (i, (a, b)) in ours.iter().zip(&want).enumerate() {
            assert!(
                (a - b).abs() < 1e-4 * scale,
                "{id} residual {i}: {a} vs {b}"
            );
        }
        // Same verdict inputs: the diagnostics on our residuals agree closely.
        let d = diagnostics::residual_diagnostics(&fit, &t, &y);
        close(
            &format!("{id} dw (own fit)"),
            d.durbin_watson.unwrap(),
            c["durbin_watson"].as_f64().unwrap(),
            1e-5,
        );
    }
}

#[test]
fn likelihood_ratio_matches_scipy_chi2() {
    let r = reference();
    for c in r["likelihood_ratio"].as_array().unwrap() {
        let n = c["n"].as_u64().unwrap() as usize;
        let (lr, p) = diagnostics::lr_test(
            n,
            c["rss_nested"].as_f64().unwrap(),
            c["rss_general"].as_f64().unwrap(),
        )
        .unwrap();
        close("LR", lr, c["statistic"].as_f64().unwrap(), 1e-12);
        close("LR p", p, c["p_value"].as_f64().unwrap(), 1e-8);
    }
}

#[test]
fn fisher_pry_curvature_matches_statsmodels_wls() {
    let r = reference();
    for c in r["fisher_pry"].as_array().unwrap() {
        let (t, y) = load(c["file"].as_str().unwrap(), false);
        let k = c["k"].as_f64().unwrap();
        let fp = diagnostics::fisher_pry(&t, &y, k).unwrap();
        let what = format!("{} K={k}", c["file"]);
        assert_eq!(fp.points.len() as u64, c["n"].as_u64().unwrap(), "{what}");
        close(
            &format!("{what} slope"),
            fp.slope,
            c["slope"].as_f64().unwrap(),
            1e-9,
        );
        close(
            &format!("{what} intercept"),
            fp.intercept,
            c["intercept"].as_f64().unwrap(),
            1e-9,
        );
        close(
            &format!("{what} c"),
            fp.curvature.unwrap(),
            c["curvature"].as_f64().unwrap(),
            1e-9,
        );
        close(
            &format!("{what} t"),
            fp.curvature_t.unwrap(),
            c["curvature_t"].as_f64().unwrap(),
            1e-9,
        );
        close(
            &format!("{what} p"),
            fp.curvature_p.unwrap(),
            c["curvature_p"].as_f64().unwrap(),
            1e-6,
        );
    }
}

/// The recommendation on demo files with a known generating model
/// (demo-data/README.md): it must name that model, give reasons, and test
/// both nested pairs where they were fitted.
#[test]
fn recommendation_names_the_generating_model() {
    use plateau_core::compare::{compare, recommend};
    for (file, dates, truth) in [
        (
            "demo-data/aldermoor_subscribers.csv",
            false,
            Model::Logistic,
        ),
        (
            "demo-data/fenwick_vale_subscribers.csv",
            false,
            Model::Logistic,
        ),
        (
            "demo-data/harrow_fields_capacity.csv",
            false,
            Model::Gompertz,
        ),
        ("demo-data/tariff_share_monthly.csv", true, Model::Logistic4),
    ] {
        let (t, y) = load(file, dates);
        let entries = compare(&t, &y, &Model::ALL, &FitOptions::default());
        let rec = recommend(&entries, &t, &y);
        println!("{file}: {:?}\n  {}", rec.model, rec.reasons.join("\n  "));
        assert_eq!(rec.model, Some(truth), "{file}: {:?}", rec.reasons);
        assert!(rec.reasons.len() >= 3);
        let tests = plateau_core::compare::nested_tests(&entries);
        assert!(!tests.is_empty(), "{file}");
    }
}
