//! Bootstrap and drift on deterministic data (no RNG in the data):
//! t_i = 20 i / (n - 1), y_i = logistic(t_i; K=1000, r=0.8, t0=10)
//! + 10 sin(1.7 i + 0.3), as in the `fit` bench.
//!
//! Targets (native, this machine): bootstrap B = 1000 of a logistic on
//! n = 50 under 20 ms; drift over n = 200 under 50 ms.

use criterion::{criterion_group, criterion_main, Criterion};
use plateau_core::bootstrap::{Bootstrap, BootstrapOptions, Resampling};
use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::history::drift;
use plateau_core::Model;
use std::hint::black_box;

fn data(n: usize) -> (Vec<f64>, Vec<f64>) {
    let t: Vec<f64> = (0..n).map(|i| 20.0 * i as f64 / (n - 1) as f64).collect();
    let y = t
        .iter()
        .enumerate()
        .map(|(i, &ti)| {
            Model::Logistic.eval(&[1000.0, 0.8, 10.0], ti) + 10.0 * (1.7 * i as f64 + 0.3).sin()
        })
        .collect();
    (t, y)
}

fn bootstrap(c: &mut Criterion) {
    let (t, y) = data(50);
    let fit = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let mut group = c.benchmark_group("bootstrap");
    group.sample_size(20);
    for kind in [Resampling::Residual, Resampling::Parametric] {
        let opts = BootstrapOptions {
            resampling: kind,
            replicates: 1000,
            seed: 1,
        };
        group.bench_function(format!("logistic_n50_b1000_{}", kind.name()), |b| {
            b.iter(|| {
                let mut boot = Bootstrap::new(black_box(&fit), &t, &y, &opts).unwrap();
                boot.run();
                boot.param_interval(0, 0.95)
            })
        });
    }
    group.finish();
}

fn drift_bench(c: &mut Criterion) {
    let (t, y) = data(200);
    let mut group = c.benchmark_group("drift");
    group.sample_size(20);
    group.bench_function("logistic_n200", |b| {
        b.iter(|| {
            drift(
                black_box(&t),
                black_box(&y),
                Model::Logistic,
                &FitOptions::default(),
            )
        })
    });
    group.finish();
}

criterion_group!(benches, bootstrap, drift_bench);
criterion_main!(benches);
