//! Throughput of `plateau batch` on this machine's cores.
//!
//! - `fits`: self-started logistic fits of 2,000 different 50-point series,
//!   run in parallel with rayon exactly as `batch` does (`batch::fit_one`:
//!   the fit, its intervals, the 10%→90% duration and the report). The
//!   target is at least 20,000 fits per second on the 2-core development
//!   machine; criterion prints the rate as "thrpt".
//! - `fits_logistic_n50_one_thread`: the same on one thread (per-core rate).
//! - `fits_logistic_n50_asymptotic`: the same in parallel with
//!   `--intervals asymptotic` (no profile refits): the self-started fits
//!   themselves.
//! - `end_to_end`: the same series as long-format CSV text in memory,
//!   through `batch::run` (line splitting, grouping, validation, fits,
//!   CSV output to a sink).
//!
//! The series are logistic curves with K, r, t0 drawn per series and
//! normal noise of 1% of K, from one seeded ChaCha8 stream (seed 2026).

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use plateau_cli::batch::{self, Format, Options};
use plateau_core::data::{parse_multi, MultiOptions};
use plateau_core::Model;
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use rayon::prelude::*;

const SERIES: usize = 2000;
const POINTS: usize = 50;

/// Long-format text of `SERIES` noisy logistic series of `POINTS` points.
fn long_text() -> String {
    let mut rng = ChaCha8Rng::seed_from_u64(2026);
    let mut out = String::from("series,t,y\n");
    for s in 0..SERIES {
        let k: f64 = rng.random_range(500.0..5000.0);
        let r: f64 = rng.random_range(0.2..0.8);
        let t0: f64 = rng.random_range(15.0..35.0);
        let noise = Normal::new(0.0, 0.01 * k).unwrap();
        for i in 0..POINTS {
            let t = i as f64;
            let y = k / (1.0 + (-r * (t - t0)).exp()) + noise.sample(&mut rng);
            out.push_str(&format!("s{s},{t},{y:.3}\n"));
        }
    }
    out
}

fn options() -> Options {
    Options {
        model: Model::Logistic,
        fit: Default::default(),
        delimiter: None,
        header: None,
        per_period: false,
        format: Format::Csv,
    }
}

fn batch_bench(c: &mut Criterion) {
    let text = long_text();
    let set = parse_multi(&text, &MultiOptions::default()).expect("bench data parse");
    assert_eq!(set.series.len(), SERIES);
    let opts = options();
    let failed = set
        .series
        .iter()
        .filter(|s| batch::fit_one(Ok((*s).clone()), &opts).failed())
        .count();
    assert_eq!(failed, 0, "every bench series must fit");

    let mut group = c.benchmark_group("batch");
    group.throughput(Throughput::Elements(SERIES as u64));
    group.sample_size(20);
    group.bench_function("fits_logistic_n50", |b| {
        b.iter_batched(
            || set.series.clone(),
            |series| {
                series
                    .into_par_iter()
                    .map(|s| batch::fit_one(Ok(s), &opts))
                    .collect::<Vec<_>>()
            },
            criterion::BatchSize::LargeInput,
        )
    });
    // Without the profile refits (`--intervals asymptotic`).
    let mut asym = options();
    asym.fit.intervals = plateau_core::IntervalMethod::Asymptotic;
    group.bench_function("fits_logistic_n50_asymptotic", |b| {
        b.iter_batched(
            || set.series.clone(),
            |series| {
                series
                    .into_par_iter()
                    .map(|s| batch::fit_one(Ok(s), &asym))
                    .collect::<Vec<_>>()
            },
            criterion::BatchSize::LargeInput,
        )
    });
    // The same work on one thread: the per-core rate.
    group.bench_function("fits_logistic_n50_one_thread", |b| {
        b.iter_batched(
            || set.series.clone(),
            |series| {
                series
                    .into_iter()
                    .map(|s| batch::fit_one(Ok(s), &opts))
                    .collect::<Vec<_>>()
            },
            criterion::BatchSize::LargeInput,
        )
    });
    group.bench_function("end_to_end_logistic_n50", |b| {
        b.iter(|| {
            let mut sink = std::io::sink();
            batch::run(text.as_bytes(), &mut sink, &opts).unwrap()
        })
    });
    group.finish();
}

criterion_group!(benches, batch_bench);
criterion_main!(benches);
