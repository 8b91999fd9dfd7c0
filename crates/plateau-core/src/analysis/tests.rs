//! Tests of the fit analyses against analytic facts of the curves: milestone
//! spacing, milestone values, nesting of the models, the symmetry check on
//! symmetric and asymmetric data, and the shape of the confidence band.

use super::*;
use crate::fit::{fit_xy, FitOptions};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

/// `n` points of `model` with parameters `p` on t = 0, 1, …, n − 1, plus
/// seeded Gaussian noise of standard deviation `noise`.
fn data(model: Model, p: &[f64], n: usize, noise: f64, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let normal = Normal::new(0.0, 1.0).unwrap();
    let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y = t
        .iter()
        .map(|&ti| model.eval(p, ti) + noise * normal.sample(&mut rng))
        .collect();
    (t, y)
}

fn fitted(model: Model, p: &[f64], n: usize, noise: f64, seed: u64) -> (Vec<f64>, Vec<f64>, Fit) {
    let (t, y) = data(model, p, n, noise, seed);
    let f = fit_xy(&t, &y, model, &FitOptions::default()).expect("fit");
    (t, y, f)
}

fn close(a: f64, b: f64, tol: f64) -> bool {
    (a - b).abs() <= tol * b.abs().max(1.0)
}

#[test]
fn logistic_10_90_spacing_is_ln81_over_r() {
    // Common practice: the logistic's 10%–90% rise time is ln(81)/r.
    let (_, _, f) = fitted(Model::Logistic, &[1000.0, 0.7, 12.0], 25, 5.0, 1);
    let r = f.param("r").unwrap().estimate;
    let t10 = time_at_fraction(&f, 0.1).unwrap().time;
    let t90 = time_at_fraction(&f, 0.9).unwrap().time;
    assert!(close(t90 - t10, 81f64.ln() / r, 1e-12));
    let d = duration_10_90(&f).unwrap();
    assert!(close(d.time, 81f64.ln() / r, 1e-12));
    let (lo, hi) = d.ci95.unwrap();
    assert!(lo < d.time && d.time < hi);
}

#[test]
fn logistic_half_time_is_t0_with_t0s_interval() {
    // Common practice: the logistic reaches K/2 at its midpoint t0.
    let (_, _, f) = fitted(Model::Logistic, &[1000.0, 0.7, 12.0], 25, 5.0, 2);
    let t0 = f.param("t0").unwrap();
    let m = time_at_fraction(&f, 0.5).unwrap();
    assert!(close(m.time, t0.estimate, 1e-12));
    // h(θ) = t0 exactly, so the delta method reproduces t0's own interval.
    let (lo, hi) = m.ci95.unwrap();
    let (plo, phi) = t0.ci95.unwrap();
    assert!(close(lo, plo, 1e-6) && close(hi, phi, 1e-6));
}

#[test]
fn gompertz_reaches_p_k_at_its_milestone() {
    // Common practice: check an inverse by evaluating the curve at it.
    let (_, _, f) = fitted(Model::Gompertz, &[500.0, 0.4, 8.0], 30, 2.0, 3);
    let k = f.param("K").unwrap().estimate;
    for p in [0.05, 0.1, 0.5, 0.9, 0.99] {
        let m = time_at_fraction(&f, p).unwrap();
        assert!(close(f.predict(m.time), p * k, 1e-10), "p = {p}");
        let (lo, hi) = m.ci95.unwrap();
        assert!(lo < m.time && m.time < hi);
    }
    // Absolute level: the same inverse through p = y / K.
    let m = time_at_level(&f, 0.3 * k).unwrap();
    assert!(close(f.predict(m.time), 0.3 * k, 1e-10));
    assert!(
        time_at_level(&f, 1.01 * k).is_none(),
        "never reached above K"
    );
    assert!(time_at_level(&f, -1.0).is_none());
}

#[test]
fn richards_with_nu_one_is_the_logistic() {
    // Common practice: Richards with ν = 1 reduces to the logistic.
    let (t, y) = data(Model::Logistic, &[1000.0, 0.7, 12.0], 25, 5.0, 4);
    let opts = FitOptions {
        fixed: vec![("nu".to_string(), 1.0)],
        ..FitOptions::default()
    };
    let rich = fit_xy(&t, &y, Model::Richards, &opts).unwrap();
    let logi = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    for p in [0.1, 0.5, 0.9] {
        let a = time_at_fraction(&rich, p).unwrap().time;
        let b = time_at_fraction(&logi, p).unwrap().time;
        assert!(close(a, b, 1e-6), "p = {p}: {a} vs {b}");
    }
    // And the formula alone, on identical parameters.
    let q = [1000.0, 0.7, 12.0, 1.0];
    for p in [0.2, 0.5, 0.8] {
        let a = fraction_time(Model::Richards, &q, p).unwrap();
        let b = fraction_time(Model::Logistic, &q[..3], p).unwrap();
        assert!(close(a, b, 1e-12));
    }
}

#[test]
fn exponential_milestones() {
    // Common practice: the exponential reaches y at ln(y/a)/r and has no K.
    let (_, _, f) = fitted(Model::Exponential, &[2.0, 0.3], 15, 0.05, 5);
    assert!(time_at_fraction(&f, 0.5).is_none());
    assert!(duration_10_90(&f).is_none());
    let (a, r) = (f.values()[0], f.values()[1]);
    let m = time_at_level(&f, 50.0).unwrap();
    assert!(close(m.time, (50.0f64 / a).ln() / r, 1e-12));
    assert!(m.ci95.is_some());
}

#[test]
fn logistic4_share_is_of_the_rise_from_l() {
    // Common practice: the 4-parameter logistic is halfway between L and K at t0.
    let (_, _, f) = fitted(Model::Logistic4, &[1000.0, 0.7, 12.0, 200.0], 25, 3.0, 6);
    let v = f.values();
    let m = time_at_level(&f, (v[0] + v[3]) / 2.0).unwrap();
    assert!(close(m.time, v[2], 1e-9));
    let m = time_at_fraction(&f, 0.25).unwrap();
    assert!(close(f.predict(m.time), v[3] + 0.25 * (v[0] - v[3]), 1e-9));
}

#[test]
fn reflection_is_near_one_for_logistic_data() {
    // Common practice: a point-symmetric series mirrors onto itself up to noise.
    for seed in 10..15 {
        let (t, y, f) = fitted(Model::Logistic, &[1000.0, 0.5, 15.0], 31, 4.0, seed);
        let s = reflection(&f, &t, &y).unwrap();
        let ratio = s.rms_ratio.unwrap();
        assert!((0.5..2.0).contains(&ratio), "seed {seed}: ratio {ratio}");
        assert_eq!(s.reflected.len(), t.len());
        assert_eq!(s.meaning, MEANING_SYMMETRIC);
        let k = f.param("K").unwrap().estimate;
        assert!(close(s.center.1, k / 2.0, 1e-12));
    }
}

#[test]
fn reflection_is_large_for_gompertz_data_under_a_logistic() {
    // Common practice: clearly asymmetric data fail a point-symmetry check.
    let (t, y) = data(Model::Gompertz, &[1000.0, 0.35, 12.0], 35, 2.0, 20);
    let f = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let s = reflection(&f, &t, &y).unwrap();
    let ratio = s.rms_ratio.unwrap();
    assert!(ratio > 3.0, "ratio {ratio}");
    // A Gompertz fit to the same data is reflected through (t0, K/e).
    let g = fit_xy(&t, &y, Model::Gompertz, &FitOptions::default()).unwrap();
    let s = reflection(&g, &t, &y).unwrap();
    let k = g.param("K").unwrap().estimate;
    assert!(close(s.center.1, k / std::f64::consts::E, 1e-9));
    assert_eq!(s.meaning, MEANING_ASYMMETRIC);
}

#[test]
fn reflection_edge_cases() {
    let (t, y, f) = fitted(Model::Exponential, &[2.0, 0.3], 15, 0.05, 21);
    assert!(reflection(&f, &t, &y).is_none());
    let (t, y, f) = fitted(Model::Logistic, &[1000.0, 0.5, 15.0], 31, 4.0, 22);
    assert!(
        reflection(&f, &t[..3], &y[..2]).is_none(),
        "length mismatch"
    );
    // Only data well before t0: the reflections land beyond the data.
    let s = reflection(&f, &t[..8], &y[..8]).unwrap();
    assert_eq!(s.n_compared, 0);
    assert!(s.rms_ratio.is_none());
}

#[test]
fn band_contains_fit_and_widens_in_the_forecast() {
    // Common practice: the delta-method band brackets the fitted mean and is
    // narrowest where the data are, widening on extrapolation.
    let (t, _, f) = fitted(Model::Logistic, &[1000.0, 0.5, 15.0], 20, 10.0, 30);
    let last = *t.last().unwrap();
    let inside = band(&f, 10.0, 0.95).unwrap();
    let y = f.predict(10.0);
    assert!(inside.0 < y && y < inside.1);
    let w_in = inside.1 - inside.0;
    let far = band(&f, last + 15.0, 0.95).unwrap();
    let w_far = far.1 - far.0;
    assert!(w_far > w_in, "{w_far} vs {w_in}");
    // A wider level gives a wider band.
    let b99 = band(&f, 10.0, 0.99).unwrap();
    assert!(b99.1 - b99.0 > w_in);

    let grid = sample_curve(&f, 0.0, last + 15.0, 50, 0.95);
    assert_eq!(grid.len(), 50);
    assert_eq!(grid[49].t, last + 15.0);
    for s in &grid {
        assert!(s.lo.unwrap() <= s.fit && s.fit <= s.hi.unwrap());
    }

    let mut no_cov = f.clone();
    no_cov.covariance = None;
    assert!(band(&no_cov, 10.0, 0.95).is_none());
    assert!(sample_curve(&no_cov, 0.0, 1.0, 3, 0.95)
        .iter()
        .all(|s| s.lo.is_none()));
    assert!(time_at_fraction(&no_cov, 0.5).unwrap().ci95.is_none());
    assert!(sample_curve(&f, 0.0, 1.0, 0, 0.95).is_empty());
    assert_eq!(sample_curve(&f, 3.0, 9.0, 1, 0.95)[0].t, 3.0);
}

#[test]
fn fastest_growth_is_rk_over_4_for_the_logistic_and_rk_over_e_for_gompertz() {
    // Textbook maxima of dy/dt: the logistic's r K / 4 at t0 (Verhulst),
    // the Gompertz curve's r K / e at t0.
    let (_, _, f) = fitted(Model::Logistic, &[1000.0, 0.7, 12.0], 25, 5.0, 3);
    let (k, r) = (
        f.param("K").unwrap().estimate,
        f.param("r").unwrap().estimate,
    );
    let g = fastest_growth(&f).unwrap();
    assert!(
        close(g.rate, r * k / 4.0, 1e-9),
        "{} vs {}",
        g.rate,
        r * k / 4.0
    );
    assert_eq!(g.time, f.param("t0").unwrap().estimate);
    let (lo, hi) = g.rate_ci95.unwrap();
    assert!(lo < g.rate && g.rate < hi);
    let (_, _, f) = fitted(Model::Gompertz, &[1000.0, 0.5, 10.0], 25, 5.0, 4);
    let (k, r) = (
        f.param("K").unwrap().estimate,
        f.param("r").unwrap().estimate,
    );
    let g = fastest_growth(&f).unwrap();
    assert!(close(g.rate, r * k / std::f64::consts::E, 1e-9));
    let (_, _, f) = fitted(Model::Exponential, &[1.0, 0.1], 20, 0.01, 5);
    assert!(fastest_growth(&f).is_none());
}
