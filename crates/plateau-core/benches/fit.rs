//! Self-started fits on deterministic data (no RNG), the same data as
//! `tests/reference/bench_scipy.py` so `cargo xtask bench-vs-scipy` can
//! compare against scipy.optimize.curve_fit:
//! t_i = 20 i / (n - 1), y_i = curve(t_i) + 10 sin(1.7 i + 0.3), with
//! curve = logistic(K=1000, r=0.8, t0=10) or richards(..., nu=0.5).

use criterion::{criterion_group, criterion_main, Criterion};
use plateau_core::fit::{fit_xy, FitOptions, IntervalMethod};
use plateau_core::Model;
use std::hint::black_box;

fn data(model: Model, p: &[f64], n: usize) -> (Vec<f64>, Vec<f64>) {
    let t: Vec<f64> = (0..n).map(|i| 20.0 * i as f64 / (n - 1) as f64).collect();
    let y = t
        .iter()
        .enumerate()
        .map(|(i, &ti)| model.eval(p, ti) + 10.0 * (1.7 * i as f64 + 0.3).sin())
        .collect();
    (t, y)
}

fn self_start_fit(c: &mut Criterion) {
    let cases: [(&str, Model, &[f64], usize); 3] = [
        ("logistic_n50", Model::Logistic, &[1000.0, 0.8, 10.0], 50),
        (
            "logistic_n1000",
            Model::Logistic,
            &[1000.0, 0.8, 10.0],
            1000,
        ),
        (
            "richards_n1000",
            Model::Richards,
            &[1000.0, 0.8, 10.0, 0.5],
            1000,
        ),
    ];
    // The fit alone (asymptotic intervals), as scipy's curve_fit does it.
    let opts = FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..FitOptions::default()
    };
    let mut group = c.benchmark_group("self_start_fit");
    for (id, model, p, n) in cases {
        let (t, y) = data(model, p, n);
        fit_xy(&t, &y, model, &opts).expect("bench data must fit");
        group.bench_function(id, |b| {
            b.iter(|| fit_xy(black_box(&t), black_box(&y), model, &opts).unwrap())
        });
    }
    group.finish();
}

/// Profile-likelihood intervals for every parameter (the default), on
/// top of the same fit; `fit_only` is that fit with asymptotic intervals,
/// so the difference is the profiles' cost. Target: under 5 ms at n = 200.
fn profile_intervals(c: &mut Criterion) {
    let (t, y) = data(Model::Logistic, &[1000.0, 0.8, 10.0], 200);
    let profile = FitOptions::default();
    let fit_only = FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..FitOptions::default()
    };
    let f = fit_xy(&t, &y, Model::Logistic, &profile).expect("bench data must fit");
    assert!(f.params.iter().all(|p| p
        .interval
        .is_some_and(|i| i.method == plateau_core::fit::CiMethod::Profile)));
    let mut group = c.benchmark_group("profile_intervals");
    group.bench_function("logistic_n200_profile", |b| {
        b.iter(|| fit_xy(black_box(&t), black_box(&y), Model::Logistic, &profile).unwrap())
    });
    group.bench_function("logistic_n200_fit_only", |b| {
        b.iter(|| fit_xy(black_box(&t), black_box(&y), Model::Logistic, &fit_only).unwrap())
    });
    group.finish();
}

criterion_group!(benches, self_start_fit, profile_intervals);
criterion_main!(benches);
