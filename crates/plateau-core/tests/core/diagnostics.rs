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
use plateau_core::fit::{fit_xy, ErrorModel, FitOptions};
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
        let errors = c["errors"].as_str().unwrap();
        let model = ErrorModel::from_name(errors).unwrap();
        let fp = diagnostics::fisher_pry(&t, &y, k, model).unwrap();
        let what = format!("{} K={k} {errors}", c["file"]);
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
        println!("{file}: {:?}\n  {:?}", rec.model, rec.reasons);
        assert_eq!(rec.model, Some(truth), "{file}: {:?}", rec.reasons);
        assert!(rec.reasons.len() >= 3);
        let tests = plateau_core::compare::nested_tests(&entries);
        assert!(!tests.is_empty(), "{file}");
    }
}

/// The exact distribution of the number of runs against a count of every
/// arrangement of n₊ plus and n₋ minus signs (each equally likely), for
/// small counts: an independent computation of the same probabilities.
#[test]
fn runs_distribution_matches_enumeration() {
    for (n1, n2) in [(1, 1), (1, 5), (3, 3), (4, 7), (6, 5), (8, 8), (2, 11)] {
        let n = n1 + n2;
        let mut counts = vec![0u64; n + 1];
        let mut total = 0u64;
        for mask in 0u32..(1 << n) {
            if mask.count_ones() as usize != n1 {
                continue;
            }
            let runs = 1
                + (1..n)
                    .filter(|&i| (mask >> i) & 1 != (mask >> (i - 1)) & 1)
                    .count();
            counts[runs] += 1;
            total += 1;
        }
        let pmf = diagnostics::runs_distribution(n1, n2).unwrap();
        assert_eq!(pmf.len(), n + 1);
        for (r, (&p, &c)) in pmf.iter().zip(&counts).enumerate() {
            let want = c as f64 / total as f64;
            assert!(
                (p - want).abs() <= 1e-13,
                "n1={n1} n2={n2} R={r}: {p} vs {want}"
            );
        }
    }
}

/// Analytic facts (Wald & Wolfowitz 1940): the probabilities sum to 1 and
/// the mean is 1 + 2 n₊ n₋ / n, also for long series whose binomial
/// coefficients overflow a double.
#[test]
fn runs_distribution_has_the_known_mean_for_long_series() {
    for (n1, n2) in [(40, 25), (400, 600), (3000, 2500)] {
        let pmf = diagnostics::runs_distribution(n1, n2).unwrap();
        let sum: f64 = pmf.iter().sum();
        let mean: f64 = pmf.iter().enumerate().map(|(r, p)| r as f64 * p).sum();
        let (a, b) = (n1 as f64, n2 as f64);
        let want = 1.0 + 2.0 * a * b / (a + b);
        assert!((sum - 1.0).abs() < 1e-10, "{n1},{n2}: sum {sum}");
        assert!(
            (mean - want).abs() < 1e-8 * want,
            "{n1},{n2}: {mean} vs {want}"
        );
    }
}

/// Swed & Eisenhart's (1943) table of critical values (from memory): for
/// n₊ = n₋ = 10, 6 or fewer runs and 16 or more each have probability
/// 0.0185, so 6 and 16 are the two-sided 5% critical values. Exactly, 3,422
/// of the C(20, 10) = 184,756 arrangements have at most 6 runs. A sign
/// sequence built with 6 runs gets twice that as its exact p.
#[test]
fn runs_test_exact_p_matches_the_published_table() {
    let pmf = diagnostics::runs_distribution(10, 10).unwrap();
    assert!(diagnostics::runs_distribution(0, 10).is_none());
    let low: f64 = pmf[..=6].iter().sum();
    let high: f64 = pmf[16..].iter().sum();
    assert!((low - 3422.0 / 184_756.0).abs() < 1e-13, "{low}");
    assert!((low - 0.0185).abs() < 5e-5, "{low}");
    assert!((high - low).abs() < 1e-13);
    // Six runs: + ×3, − ×3, + ×3, − ×3, + ×4, − ×4.
    let signs = [3, -3, 3, -3, 4, -4];
    let res: Vec<f64> = signs
        .iter()
        .flat_map(|&k: &i32| std::iter::repeat_n(k.signum() as f64, k.unsigned_abs() as usize))
        .collect();
    let t = diagnostics::runs_test(&res).unwrap();
    assert_eq!((t.n_positive, t.n_negative, t.runs), (10, 10, 6));
    assert!((t.p_exact - 2.0 * low).abs() < 1e-12, "{}", t.p_exact);
}
