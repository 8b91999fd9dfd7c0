//! Self-started fits on deterministic data (no RNG), the same data as
//! `tests/reference/bench_scipy.py` so `cargo xtask bench-vs-scipy` can
//! compare against scipy.optimize.curve_fit:
//! t_i = 20 i / (n - 1), y_i = curve(t_i) + 10 sin(1.7 i + 0.3), with
//! curve = logistic(K=1000, r=0.8, t0=10) or richards(..., nu=0.5).

use criterion::{criterion_group, criterion_main, Criterion};
use plateau_core::fit::{fit_xy, FitOptions};
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
    let opts = FitOptions::default();
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

criterion_group!(benches, self_start_fit);
criterion_main!(benches);
