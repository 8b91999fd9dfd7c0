//! NIST StRD nonlinear regression, "higher level of difficulty":
//! Rat42 (logistic) and Rat43 (Richards), certified to 11 digits.
//! Source: NIST/ITL Statistical Reference Datasets, files copied unchanged
//! into `tests/reference/nist/`. Accuracy is the log relative error
//! LRE = −log10(|estimate − certified| / |certified|), NIST's own score.
//!
//! Mapping to the growth-curve symbols (see tests/reference/nist/README.md):
//! Rat42 y = b1 / (1 + exp(b2 − b3 x)): K = b1, r = b3, t0 = b2 / b3.
//! Rat43 y = b1 / (1 + exp(b2 − b3 x))^(1/b4): K = b1, r = b3, nu = b4,
//! t0 = (b2 − ln b4) / b3.

use plateau_core::fit::{fit_xy, Fit, FitOptions};
use plateau_core::Model;
use std::path::PathBuf;

struct Dataset {
    x: Vec<f64>,
    y: Vec<f64>,
    start1: Vec<f64>,
    start2: Vec<f64>,
    certified: Vec<f64>,
    certified_sd: Vec<f64>,
    rss: f64,
}

fn load(name: &str) -> Dataset {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../tests/reference/nist")
        .join(name);
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{path:?}: {e}"));
    let mut d = Dataset {
        x: vec![],
        y: vec![],
        start1: vec![],
        start2: vec![],
        certified: vec![],
        certified_sd: vec![],
        rss: f64::NAN,
    };
    let mut in_data = false;
    for line in text.lines() {
        let words: Vec<&str> = line.split_whitespace().collect();
        if in_data {
            if words.len() == 2 {
                d.y.push(words[0].parse().unwrap());
                d.x.push(words[1].parse().unwrap());
            }
        } else if words.len() == 6 && words[0].starts_with('b') && words[1] == "=" {
            let v: Vec<f64> = words[2..].iter().map(|w| w.parse().unwrap()).collect();
            d.start1.push(v[0]);
            d.start2.push(v[1]);
            d.certified.push(v[2]);
            d.certified_sd.push(v[3]);
        } else if line.starts_with("Residual Sum of Squares:") {
            d.rss = words.last().unwrap().parse().unwrap();
        } else if line.starts_with("Data:") && words.get(1) == Some(&"y") {
            in_data = true;
        }
    }
    d
}

fn lre(estimate: f64, certified: f64) -> f64 {
    let rel = (estimate - certified).abs() / certified.abs();
    if rel == 0.0 {
        15.0
    } else {
        -rel.log10()
    }
}

/// The fitted (K, r, t0[, nu]) and their covariance mapped back to NIST's
/// b-parameters, with b2's standard error by the delta method.
fn to_b(fit: &Fit) -> (Vec<f64>, Vec<f64>) {
    let v = fit.values();
    let cov = fit.covariance.as_ref().expect("covariance");
    let (k, r, t0) = (v[0], v[1], v[2]);
    // Gradient of b2 with respect to the fitted parameters.
    let (b2, grad_b2): (f64, Vec<f64>) = match fit.model {
        Model::Logistic => (r * t0, vec![0.0, t0, r]),
        Model::Richards => {
            let nu = v[3];
            (r * t0 + nu.ln(), vec![0.0, t0, r, 1.0 / nu])
        }
        _ => unreachable!(),
    };
    let mut var_b2 = 0.0;
    for a in 0..grad_b2.len() {
        for b in 0..grad_b2.len() {
            var_b2 += grad_b2[a] * cov[(a, b)] * grad_b2[b];
        }
    }
    let se = |j: usize| cov[(j, j)].sqrt();
    let mut b = vec![k, b2, r];
    let mut sd = vec![se(0), var_b2.sqrt(), se(1)];
    if fit.model == Model::Richards {
        b.push(v[3]);
        sd.push(se(3));
    }
    (b, sd)
}

fn from_b(model: Model, b: &[f64]) -> Vec<(String, f64)> {
    let mut p = vec![("K".to_string(), b[0]), ("r".to_string(), b[2])];
    match model {
        Model::Logistic => p.push(("t0".to_string(), b[1] / b[2])),
        Model::Richards => {
            p.push(("t0".to_string(), (b[1] - b[3].ln()) / b[2]));
            p.push(("nu".to_string(), b[3]));
        }
        _ => unreachable!(),
    }
    p
}

fn check(name: &str, model: Model) {
    let d = load(name);
    assert_eq!(d.x.len(), d.y.len());
    assert!(d.rss.is_finite() && d.certified.len() == model.n_params());
    let starts = [
        ("NIST start 1", Some(from_b(model, &d.start1))),
        ("NIST start 2", Some(from_b(model, &d.start2))),
        ("self-start", None),
    ];
    for (label, start) in starts {
        let opts = FitOptions {
            start: start.unwrap_or_default(),
            ..FitOptions::default()
        };
        let fit =
            fit_xy(&d.x, &d.y, model, &opts).unwrap_or_else(|e| panic!("{name} {label}: {e}"));
        assert!(fit.converged, "{name} {label}: {:?}", fit.termination);
        let (b, sd) = to_b(&fit);
        let rss_lre = lre(fit.rss, d.rss);
        assert!(rss_lre >= 9.0, "{name} {label}: RSS LRE {rss_lre:.1}");
        for j in 0..b.len() {
            let p_lre = lre(b[j], d.certified[j]);
            let s_lre = lre(sd[j], d.certified_sd[j]);
            eprintln!(
                "{name} {label} b{}: LRE {p_lre:.1}, sd LRE {s_lre:.1}",
                j + 1
            );
            assert!(p_lre >= 9.0, "{name} {label} b{}: LRE {p_lre:.1}", j + 1);
            assert!(
                s_lre >= 6.0,
                "{name} {label} sd(b{}): LRE {s_lre:.1}",
                j + 1
            );
        }
        eprintln!(
            "{name} {label}: RSS LRE {rss_lre:.1}, {} iterations",
            fit.iterations
        );
    }
}

/// NIST StRD Rat42 (3-parameter logistic), certified values.
#[test]
fn rat42_logistic_meets_nist_certified_values() {
    check("Rat42.dat", Model::Logistic);
}

/// NIST StRD Rat43 (4-parameter Richards), certified values.
#[test]
fn rat43_richards_meets_nist_certified_values() {
    check("Rat43.dat", Model::Richards);
}
