//! Drift on exact and noisy curves: exact data are recovered from every
//! prefix that determines them, warm starts agree with cold ones; prefixes
//! (here and in the backtest) never split replicates.

use super::*;
use crate::backtest::{backtest, BacktestOptions};

/// The logistic K = 1000, r = 0.4, t0 = 12 at t = 0, 1, …, n − 1, exact
/// (also used by the backtest's tests).
pub(crate) fn logistic_exact(n: usize) -> (Vec<f64>, Vec<f64>) {
    let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y = t
        .iter()
        .map(|&ti| Model::Logistic.eval(&[1000.0, 0.4, 12.0], ti))
        .collect();
    (t, y)
}

#[test]
fn drift_recovers_exact_parameters_from_every_prefix_past_the_inflection() {
    let (t, y) = logistic_exact(30);
    let rows = drift(&t, &y, Model::Logistic, &FitOptions::default());
    assert_eq!(rows.first().unwrap().m, 4, "3 free parameters + 1");
    assert_eq!(rows.last().unwrap().m, 30);
    assert_eq!(rows.len(), 27);
    for r in rows.iter().filter(|r| r.cutoff >= 14.0) {
        let f = r.result.as_ref().expect("fit");
        assert!(f.converged);
        let k = f.params[0].estimate;
        assert!((k - 1000.0).abs() < 1e-6, "m = {}: K = {k}", r.m);
    }
}

#[test]
fn drift_warm_starts_agree_with_self_starts_and_input_order_does_not_matter() {
    let mut state = 12345u64;
    let mut noise = || {
        // A small fixed-sequence LCG (Knuth's MMIX constants) for noise.
        state = state
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((state >> 11) as f64 / (1u64 << 53) as f64 - 0.5) * 20.0
    };
    let (t, y0) = logistic_exact(30);
    let y: Vec<f64> = y0.iter().map(|v| v + noise()).collect();
    let rows = drift(&t, &y, Model::Logistic, &FitOptions::default());
    for r in rows.iter().filter(|r| r.m >= 18) {
        let cold = fit_xy(
            &t[..r.m],
            &y[..r.m],
            Model::Logistic,
            &FitOptions::default(),
        )
        .unwrap();
        let warm = r.result.as_ref().unwrap();
        for (a, b) in warm.params.iter().zip(&cold.params) {
            assert!(
                (a.estimate - b.estimate).abs() <= 1e-6 * b.estimate.abs().max(1.0),
                "m = {} {}: {} vs {}",
                r.m,
                a.name,
                a.estimate,
                b.estimate
            );
        }
    }
    // Reversed input: the same prefixes (in time order), the same numbers.
    let tr: Vec<f64> = t.iter().rev().copied().collect();
    let yr: Vec<f64> = y.iter().rev().copied().collect();
    let rev = drift(&tr, &yr, Model::Logistic, &FitOptions::default());
    let last = |rs: &[DriftRow]| rs.last().unwrap().result.as_ref().unwrap().params[0].estimate;
    assert!((last(&rows) - last(&rev)).abs() < 1e-6 * last(&rows));
}

#[test]
fn sampled_drift_keeps_the_ends_and_matches_the_full_rows() {
    let (t, y) = logistic_exact(60);
    let full = drift(&t, &y, Model::Logistic, &FitOptions::default());
    let some = drift_sampled(&t, &y, Model::Logistic, &FitOptions::default(), 10);
    assert_eq!(some.len(), 10);
    assert_eq!(some[0].m, 4);
    assert_eq!(some[9].m, 60);
    assert!(some.windows(2).all(|w| w[0].m < w[1].m));
    let k = |r: &DriftRow| r.result.as_ref().unwrap().params[0].estimate;
    assert!((k(&some[9]) - k(full.last().unwrap())).abs() < 1e-6);
}

/// Early prefixes of a noisy series can fit a step (r so large that r and
/// t0 stop mattering, a stationary point with a singular Jacobian). A warm
/// start from there would stay on the step for every later prefix; the
/// last row must still be the fit on all the data.
#[test]
fn a_step_shaped_early_fit_is_not_carried_forward() {
    use rand_chacha::rand_core::SeedableRng;
    use rand_distr::{Distribution, Normal};
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
    let noise = Normal::new(0.0, 2.0e4).unwrap();
    let t: Vec<f64> = (0..20).map(|i| 2000.0 + i as f64).collect();
    let y: Vec<f64> = t
        .iter()
        .map(|&ti| Model::Logistic.eval(&[2.5e6, 0.6, 2012.0], ti) + noise.sample(&mut rng))
        .collect();
    let rows = drift(&t, &y, Model::Logistic, &FitOptions::default());
    let all = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let last = rows.last().unwrap().result.as_ref().unwrap();
    let (k, want) = (last.params[0].estimate, all.params[0].estimate);
    assert!(
        (k - want).abs() <= 1e-8 * want,
        "last row K = {k}, all data K = {want}"
    );
    // The rows where the fit is identified say so without a singular
    // Jacobian (the step would carry the warning).
    assert!(rows.iter().filter(|r| r.m >= 14).all(|r| r
        .result
        .as_ref()
        .unwrap()
        .warnings
        .is_empty()));
}

/// Replicates: every prefix ends between distinct times, so it holds all
/// replicates of its last time; the backtest's horizon h scores each
/// replicate of the h-th distinct time after the origin.
#[test]
fn prefixes_and_origins_never_split_replicates() {
    let (t1, y1) = logistic_exact(20);
    // Times 0..20, with two replicates at every even time (the second
    // 1% higher), in input order reversed.
    let mut t = Vec::new();
    let mut y = Vec::new();
    for (ti, yi) in t1.iter().zip(&y1).rev() {
        t.push(*ti);
        y.push(*yi);
        if ti % 2.0 == 0.0 {
            t.push(*ti);
            y.push(yi * 1.01);
        }
    }
    let rows = drift(&t, &y, Model::Logistic, &FitOptions::default());
    // Sizes through time c: c + 1 rows plus one more per even time ≤ c.
    let through = |c: usize| c + 1 + c / 2 + 1;
    let sizes: Vec<usize> = rows.iter().map(|r| r.m).collect();
    // The smallest prefix with ≥ 4 rows ends at time 2 (0, 0, 1, 2, 2: 5 rows).
    let want: Vec<usize> = (2..20).map(through).collect();
    assert_eq!(sizes, want);
    for (r, c) in rows.iter().zip(2..20) {
        assert_eq!(r.cutoff, f64::from(c), "m = {}", r.m);
    }
    let sampled = drift_sampled(&t, &y, Model::Logistic, &FitOptions::default(), 5);
    assert!(sampled.iter().all(|r| want.contains(&r.m)));
    assert_eq!(sampled.last().unwrap().m, t.len());

    let bt = backtest(
        &t,
        &y,
        &[Model::Logistic],
        &FitOptions::default(),
        &BacktestOptions {
            horizon: 2,
            min_train: Some(10),
            max_origins: None,
        },
    );
    // Origins: cuts ≥ 10 rows and < 30: through(6) = 11 … through(18) = 28.
    let origins: Vec<usize> = (6..19).map(through).collect();
    assert_eq!(bt[0].origins, origins.len());
    // h = 1 after through(c) is time c + 1: 2 rows when c + 1 is even.
    let h1: usize = (6..19).map(|c| if (c + 1) % 2 == 0 { 2 } else { 1 }).sum();
    let h2: usize = (6..18).map(|c| if (c + 2) % 2 == 0 { 2 } else { 1 }).sum();
    assert_eq!(bt[0].failed, 0);
    assert_eq!(bt[0].by_horizon[0].count, h1);
    assert_eq!(bt[0].by_horizon[1].count, h2);
}

/// The single-series demo files, as the faces read them.
fn demo_series() -> Vec<(&'static str, Vec<f64>, Vec<f64>)> {
    let files = [
        (
            "aldermoor",
            include_str!("../../../../demo-data/aldermoor_subscribers.csv"),
        ),
        (
            "fenwick_vale",
            include_str!("../../../../demo-data/fenwick_vale_subscribers.csv"),
        ),
        (
            "harrow_fields",
            include_str!("../../../../demo-data/harrow_fields_capacity.csv"),
        ),
        (
            "saltmarsh",
            include_str!("../../../../demo-data/saltmarsh_app_installs.csv"),
        ),
    ];
    files
        .iter()
        .map(|(name, text)| {
            let s = crate::parse_series(text, &crate::data::ParseOptions::default()).unwrap();
            (*name, s.times.clone(), s.values.clone())
        })
        .collect()
}

/// Warm starts are a speed-up and a continuity aid, never a different
/// answer: on the demo data, drift started from the previous cutoff (and
/// checked against the self-start) reaches the same minimum as drift
/// started cold at every cutoff. Tolerances: the solver stops at relative
/// changes of 1e-12 (ftol, xtol) and polishes with Gauss–Newton, so two
/// runs into one minimum agree in the residual sum of squares to far
/// better than 1e-9 relative; parameters move as sqrt of the RSS change
/// times the curvature, so determined parameters are compared to 1e-6
/// relative. Where the data do not determine a parameter (a flat valley)
/// the solver's stopping point depends on the start; there the warm run
/// must only be no worse than the cold one.
#[test]
fn warm_started_drift_equals_cold_started_drift_on_the_demo_data() {
    for (name, t, y) in demo_series() {
        for model in [Model::Logistic, Model::Gompertz, Model::Richards] {
            let opts = FitOptions {
                intervals: crate::fit::IntervalMethod::Asymptotic,
                ..FitOptions::default()
            };
            let run = |starts| {
                drift_with(
                    &t,
                    &y,
                    model,
                    &opts,
                    &DriftOptions {
                        max_cutoffs: None,
                        starts,
                    },
                )
                .rows
            };
            let (warm, cold) = (run(Starts::Warm), run(Starts::Cold));
            assert_eq!(warm.len(), cold.len());
            for (w, c) in warm.iter().zip(&cold) {
                let m = w.m;
                let (Ok(w), Ok(c)) = (&w.result, &c.result) else {
                    assert_eq!(w.result.is_ok(), c.result.is_ok(), "{name} {model:?}");
                    continue;
                };
                let at = format!(
                    "{name} {} m = {m} (converged {} / {}, warnings {:?} / {:?})",
                    model.name(),
                    w.converged,
                    c.converged,
                    w.warnings,
                    c.warnings
                );
                // Never worse than the cold start (it is checked each time),
                // by the fit's own multi-start rule: a converged fit before
                // one that is not, then the lower sum of squares.
                assert!(w.converged || !c.converged, "{at}");
                if w.converged == c.converged {
                    assert!(
                        w.sigma <= c.sigma * (1.0 + 1e-9),
                        "{at}: sigma {} vs {}",
                        w.sigma,
                        c.sigma
                    );
                }
                let determined = |f: &DriftFit| f.params.iter().all(|p| p.identified || p.fixed);
                if !(determined(w) && determined(c)) {
                    // A flat valley: the solver stops where the sum of
                    // squares stops decreasing, which may differ by a
                    // hair between starts (seen: 1.6e-4 relative in σ).
                    continue;
                }
                assert!(
                    (w.sigma - c.sigma).abs() <= 1e-9 * c.sigma,
                    "{at}: sigma {} vs {}",
                    w.sigma,
                    c.sigma
                );
                for (a, b) in w.params.iter().zip(&c.params) {
                    assert!(
                        (a.estimate - b.estimate).abs() <= 1e-6 * b.estimate.abs().max(1e-9),
                        "{at} {}: {} vs {}",
                        a.name,
                        a.estimate,
                        b.estimate
                    );
                }
            }
        }
    }
}

#[test]
fn the_cutoff_cap_is_applied_evenly_and_reported() {
    let (t, y) = logistic_exact(200);
    let opts = FitOptions {
        intervals: crate::fit::IntervalMethod::Asymptotic,
        ..FitOptions::default()
    };
    let d = drift_with(&t, &y, Model::Logistic, &opts, &DriftOptions::default());
    // Prefixes of 4..=200 points: 197 possible cutoffs, 40 refitted.
    assert_eq!(d.cutoffs_capped_from, Some(197));
    assert_eq!(d.rows.len(), MAX_CUTOFFS);
    assert_eq!(d.rows[0].m, 4);
    assert_eq!(d.rows.last().unwrap().m, 200);
    let gaps: Vec<usize> = d.rows.windows(2).map(|w| w[1].m - w[0].m).collect();
    assert!(gaps.iter().all(|&g| g == 5 || g == 6), "{gaps:?}");
    // Exact logistic data (common practice: a noiseless curve is recovered
    // exactly once the data pass its inflection, t0 = 12): every capped
    // cutoff past it gives K to 1e-6.
    for r in d.rows.iter().filter(|r| r.cutoff >= 14.0) {
        let k = r.result.as_ref().unwrap().params[0].estimate;
        assert!((k - 1000.0).abs() < 1e-6, "m = {}: K = {k}", r.m);
    }
    let all = drift_with(
        &t,
        &y,
        Model::Logistic,
        &opts,
        &DriftOptions {
            max_cutoffs: None,
            starts: Starts::Warm,
        },
    );
    assert_eq!(all.rows.len(), 197);
    assert_eq!(all.cutoffs_capped_from, None);

    let bt = backtest(
        &t,
        &y,
        &[Model::Logistic],
        &opts,
        &BacktestOptions::default(),
    );
    // Origins from 100 points (half) to 199: 100 possible, 40 tried.
    assert_eq!(bt[0].origins, MAX_CUTOFFS);
    assert_eq!(bt[0].origins_capped_from, Some(100));
    assert_eq!(bt[0].failed, 0);
    // Exact data past the inflection: every forecast is exact.
    for s in &bt[0].by_horizon {
        assert!(s.mae.unwrap() < 1e-6, "{s:?}");
    }
}

/// The rows carry the interval method asked for: asymptotic by default in
/// the study, profile when asked (an explicit choice is honoured). Before
/// the inflection the profile gives K a verified lower bound, which is
/// what "K is at least" reports; with asymptotic intervals it falls back
/// to the fitted curve's level at the cutoff, below every value K can take
/// on that fit.
#[test]
fn drift_rows_honour_the_interval_method_and_bound_an_undetermined_k() {
    use crate::fit::{CiMethod, IntervalMethod};
    let (t, y0) = logistic_exact(30);
    // Deterministic ±1% wiggle so that early prefixes leave K open.
    let y: Vec<f64> = y0
        .iter()
        .enumerate()
        .map(|(i, v)| v * (1.0 + 0.01 * [1.0, -1.0, 0.5, -0.5][i % 4]))
        .collect();
    for (method, want) in [
        (IntervalMethod::Asymptotic, CiMethod::Asymptotic),
        (IntervalMethod::Profile, CiMethod::Profile),
    ] {
        let opts = FitOptions {
            intervals: method,
            ..FitOptions::default()
        };
        let rows = drift_with(&t, &y, Model::Logistic, &opts, &DriftOptions::default()).rows;
        let last = rows.last().unwrap().result.as_ref().unwrap();
        assert_eq!(last.params[0].interval.unwrap().method, want);
        let open: Vec<&DriftFit> = rows
            .iter()
            .filter_map(|r| r.result.as_ref().ok())
            .filter(|f| !f.params[0].identified)
            .collect();
        assert!(!open.is_empty(), "{method:?}: some early K left open");
        for f in open {
            let at_least = f.saturation_at_least("K").unwrap();
            assert!(at_least.is_finite() && at_least <= f.params[0].estimate);
            assert!(at_least >= f.level * (1.0 - 1e-9) || want == CiMethod::Profile);
        }
        assert!(last.saturation_at_least("K").is_none());
    }
}
