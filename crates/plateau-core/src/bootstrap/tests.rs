//! Bootstrap: reproducibility for a seed, slices equal to one run, the
//! percentile interval's quantile rule, and behaviour on exact and
//! unsuitable fits.

use super::*;
use crate::fit::{fit_xy, FitOptions};
use rand_distr::Normal;

fn noisy_logistic(n: usize, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let normal = Normal::new(0.0, 15.0).unwrap();
    let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y = t
        .iter()
        .map(|&ti| Model::Logistic.eval(&[1000.0, 0.5, 12.0], ti) + normal.sample(&mut rng))
        .collect();
    (t, y)
}

fn setup(
    resampling: Resampling,
    b: usize,
    seed: u64,
) -> (Vec<f64>, Vec<f64>, Fit, BootstrapOptions) {
    let (t, y) = noisy_logistic(25, 7);
    let f = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let opts = BootstrapOptions {
        resampling,
        replicates: b,
        seed,
    };
    (t, y, f, opts)
}

#[test]
fn same_seed_same_numbers_different_seed_different_numbers() {
    for kind in [Resampling::Residual, Resampling::Parametric] {
        let (t, y, f, opts) = setup(kind, 200, 42);
        let mut a = Bootstrap::new(&f, &t, &y, &opts).unwrap();
        let mut b = Bootstrap::new(&f, &t, &y, &opts).unwrap();
        a.run();
        b.run();
        let ea: Vec<f64> = a.estimates().flatten().copied().collect();
        let eb: Vec<f64> = b.estimates().flatten().copied().collect();
        assert_eq!(ea, eb, "{}", kind.name());
        let mut c = Bootstrap::new(&f, &t, &y, &BootstrapOptions { seed: 43, ..opts }).unwrap();
        c.run();
        let ec: Vec<f64> = c.estimates().flatten().copied().collect();
        assert_ne!(ea, ec, "{}", kind.name());
    }
}

#[test]
fn slices_give_the_same_result_as_one_run() {
    let (t, y, f, opts) = setup(Resampling::Residual, 300, 9);
    let mut whole = Bootstrap::new(&f, &t, &y, &opts).unwrap();
    whole.run();
    let mut sliced = Bootstrap::new(&f, &t, &y, &opts).unwrap();
    let mut last = 0;
    for k in [1, 7, 50, 100, 1000] {
        let done = sliced.step(k);
        assert!(done >= last && done <= 300);
        last = done;
    }
    assert!(sliced.is_finished());
    assert_eq!(sliced.step(10), 300, "no work past B");
    assert_eq!(whole.failed(), sliced.failed());
    let a: Vec<f64> = whole.estimates().flatten().copied().collect();
    let b: Vec<f64> = sliced.estimates().flatten().copied().collect();
    assert_eq!(a, b);
}

#[test]
fn intervals_contain_the_estimate_and_resemble_the_asymptotic_ones() {
    // For a well-determined fit the bootstrap and the asymptotic (Student t)
    // intervals describe the same sampling spread; common practice expects
    // them to agree roughly (here: widths within a factor of 1.5).
    for kind in [Resampling::Residual, Resampling::Parametric] {
        let (t, y, f, opts) = setup(kind, 1000, 5);
        let mut b = Bootstrap::new(&f, &t, &y, &opts).unwrap();
        b.run();
        assert!(b.failed() < 10, "{} failed refits", b.failed());
        for (j, p) in f.params.iter().enumerate() {
            let (lo, hi) = b.param_interval(j, 0.95).unwrap();
            assert!(lo < p.estimate && p.estimate < hi, "{}", p.name);
            let (alo, ahi) = p.ci95.unwrap();
            let ratio = (hi - lo) / (ahi - alo);
            assert!(
                (1.0 / 1.5..1.5).contains(&ratio),
                "{} {}: width ratio {ratio}",
                kind.name(),
                p.name
            );
        }
    }
}

#[test]
fn quantile_rule_is_linear_interpolation_between_order_statistics() {
    // Hyndman & Fan (1996) definition 7, numpy.quantile's default: for
    // 1..=5 the 0.25 quantile is 2, the 0.1 quantile is 1.4 (from memory of
    // numpy.quantile([1,2,3,4,5], 0.1) = 1.4, and by the formula
    // h = 4 · 0.1 = 0.4 → 1 + 0.4 · (2 − 1)).
    let v = [1.0, 2.0, 3.0, 4.0, 5.0];
    assert_eq!(quantile_sorted(&v, 0.25), Some(2.0));
    assert!((quantile_sorted(&v, 0.1).unwrap() - 1.4).abs() < 1e-15);
    assert_eq!(quantile_sorted(&v, 0.0), Some(1.0));
    assert_eq!(quantile_sorted(&v, 1.0), Some(5.0));
    assert_eq!(quantile_sorted(&[], 0.5), None);
    // 1..=1000: the 2.5% and 97.5% quantiles are 25.975 and 975.025.
    let v: Vec<f64> = (1..=1000).map(f64::from).collect();
    let (lo, hi) = percentile_interval(&v, 0.95).unwrap();
    assert!((lo - 25.975).abs() < 1e-9 && (hi - 975.025).abs() < 1e-9);
    // Order does not matter, NaN is ignored, infinities stay infinite.
    let (lo, hi) = percentile_interval(&[3.0, f64::NAN, 1.0, 2.0], 0.5).unwrap();
    assert_eq!((lo, hi), (1.5, 2.5));
    let (_, hi) = percentile_interval(&[1.0, 2.0, f64::INFINITY], 0.95).unwrap();
    assert_eq!(hi, f64::INFINITY);
    assert_eq!(percentile_interval(&v, 1.0), None);
}

#[test]
fn quantities_that_do_not_exist_open_the_interval_above() {
    let (t, y, f, opts) = setup(Resampling::Residual, 400, 3);
    let mut b = Bootstrap::new(&f, &t, &y, &opts).unwrap();
    b.run();
    // A level at the estimated K is reached by about half the replicates.
    let k = f.param("K").unwrap().estimate;
    let q = b.quantity(
        |p| crate::analysis::time_at_level_params(Model::Logistic, p, k),
        0.95,
    );
    assert!(q.missing > 0 && q.hi.is_none(), "{q:?}");
    let share = q.share_existing();
    assert!(share > 0.2 && share < 0.8, "{share}");
    // Half of K: always reached, interval closed.
    let q = b.quantity(
        |p| crate::analysis::time_at_level_params(Model::Logistic, p, 0.5 * k),
        0.95,
    );
    assert_eq!(q.missing, 0);
    assert!(q.lo.is_some() && q.hi.is_some());
}

#[test]
fn unsuitable_fits_are_refused_with_a_reason() {
    let (t, y, f, opts) = setup(Resampling::Residual, 10, 1);
    assert!(Bootstrap::new(&f, &t[..5], &y[..5], &opts).is_err());
    let zero = BootstrapOptions {
        replicates: 0,
        ..opts
    };
    assert!(Bootstrap::new(&f, &t, &y, &zero).is_err());
    let fixed = FitOptions {
        fixed: vec![("K".into(), 1000.0), ("r".into(), 0.5), ("t0".into(), 12.0)],
        ..FitOptions::default()
    };
    let all_fixed = fit_xy(&t, &y, Model::Logistic, &fixed).unwrap();
    let e = Bootstrap::new(&all_fixed, &t, &y, &opts).unwrap_err();
    assert!(e.0.contains("fixed"), "{e}");
}

#[test]
fn fixed_parameters_stay_fixed_and_the_exponential_maps_back() {
    let (t, y) = noisy_logistic(25, 11);
    let opts = FitOptions {
        fixed: vec![("K".into(), 1000.0)],
        ..FitOptions::default()
    };
    let f = fit_xy(&t, &y, Model::Logistic, &opts).unwrap();
    let mut b = Bootstrap::new(&f, &t, &y, &BootstrapOptions::default()).unwrap();
    b.step(50);
    assert!(b.estimates().all(|p| p[0] == 1000.0));

    // Exponential on a calendar-like axis: a = y(0) is tiny there; the
    // refits must come back on the original axis, near the estimate.
    let t: Vec<f64> = (0..20).map(|i| 2000.0 + i as f64 * 0.25).collect();
    let y: Vec<f64> = t
        .iter()
        .enumerate()
        .map(|(i, &ti)| 50.0 * (0.3 * (ti - 2000.0)).exp() * (1.0 + 0.01 * ((i % 3) as f64 - 1.0)))
        .collect();
    let f = fit_xy(&t, &y, Model::Exponential, &FitOptions::default()).unwrap();
    let mut b = Bootstrap::new(&f, &t, &y, &BootstrapOptions::default()).unwrap();
    b.step(100);
    assert_eq!(b.failed(), 0);
    let r = f.param("r").unwrap().estimate;
    let (lo, hi) = b.param_interval(1, 0.95).unwrap();
    assert!(lo < r && r < hi, "{lo} {r} {hi}");
    let mid = 2002.0;
    let q = b.quantity(|p| Some(Model::Exponential.eval(p, mid)), 0.95);
    let v = f.predict(mid);
    assert!(q.lo.unwrap() < v && v < q.hi.unwrap());
}
