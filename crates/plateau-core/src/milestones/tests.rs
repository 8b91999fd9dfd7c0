//! Milestones: analytic facts of the logistic (common practice), and the
//! verdicts for milestones the data cannot speak to.

use super::*;
use crate::bootstrap::{BootstrapOptions, Resampling};
use crate::fit::{fit_xy, FitOptions};
use rand_chacha::rand_core::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn noisy(model: Model, p: &[f64], n: usize, sd: f64, seed: u64) -> (Vec<f64>, Vec<f64>, Fit) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let normal = Normal::new(0.0, sd).unwrap();
    let t: Vec<f64> = (0..n).map(|i| i as f64).collect();
    let y: Vec<f64> = t
        .iter()
        .map(|&ti| model.eval(p, ti) + normal.sample(&mut rng))
        .collect();
    let f = fit_xy(&t, &y, model, &FitOptions::default()).unwrap();
    (t, y, f)
}

fn boot(f: &Fit, t: &[f64], y: &[f64]) -> Bootstrap {
    let mut b = Bootstrap::new(
        f,
        t,
        y,
        &BootstrapOptions {
            resampling: Resampling::Residual,
            replicates: 600,
            seed: 17,
        },
    )
    .unwrap();
    b.run();
    b
}

#[test]
fn logistic_half_time_is_t0_and_10_90_is_ln81_over_r() {
    // Common practice for the logistic: f(t0) = K/2, and the rise from 10%
    // to 90% of K takes ln(81)/r. Both hold for the estimate and for every
    // bootstrap replicate, so the bootstrap intervals are t0's own interval
    // and ln(81) over r's interval, ends swapped.
    let (t, y, f) = noisy(Model::Logistic, &[2000.0, 0.35, 15.0], 30, 20.0, 4);
    let b = boot(&f, &t, &y);
    let half = assess(&f, Target::Share(0.5), 0.0, 29.0, Some(&b));
    let t0 = f.param("t0").unwrap().estimate;
    assert!((half.estimate.unwrap() - t0).abs() < 1e-9 * t0);
    assert_eq!(half.verdict, Verdict::Observed);
    let (lo, hi) = b.param_interval(2, 0.95).unwrap();
    let q = half.bootstrap.unwrap();
    assert!((q.lo.unwrap() - lo).abs() < 1e-9 && (q.hi.unwrap() - hi).abs() < 1e-9);

    let d = assess(&f, Target::Duration1090, 0.0, 29.0, Some(&b));
    let r = f.param("r").unwrap().estimate;
    let ln81 = 81f64.ln();
    assert!((d.estimate.unwrap() - ln81 / r).abs() < 1e-9);
    let (rlo, rhi) = b.param_interval(1, 0.95).unwrap();
    let q = d.bootstrap.unwrap();
    // Interpolating between order statistics of r or of 1/r differs in
    // the fourth digit at most for 600 replicates.
    assert!((q.lo.unwrap() / (ln81 / rhi) - 1.0).abs() < 1e-3);
    assert!((q.hi.unwrap() / (ln81 / rlo) - 1.0).abs() < 1e-3);
    // The delta interval contains the estimate.
    let (dlo, dhi) = d.delta.unwrap();
    assert!(dlo < ln81 / r && ln81 / r < dhi);
}

#[test]
fn level_milestones_say_when_the_data_cannot_answer() {
    let (t, y, f) = noisy(Model::Logistic, &[2000.0, 0.35, 15.0], 30, 20.0, 5);
    let b = boot(&f, &t, &y);
    let k = f.param("K").unwrap();
    let (klo, khi) = k.ci95.unwrap();

    // Above K: never reached, no time.
    let a = assess(&f, Target::Level(khi * 1.1), 0.0, 29.0, Some(&b));
    assert_eq!(a.verdict, Verdict::NotReached);
    assert!(a.estimate.is_none() && !a.verdict.shows_time());
    assert!(
        matches!(a.why, Some(Why::LevelsOffBelow { .. })),
        "{:?}",
        a.why
    );

    // Inside K's interval, below K̂: a time, but no upper end.
    let inside = 0.5 * (klo + k.estimate);
    let a = assess(&f, Target::Level(inside), 0.0, 29.0, Some(&b));
    assert!(
        matches!(a.verdict, Verdict::MayNeverBeReached | Verdict::TooFar),
        "{:?}",
        a
    );
    if a.verdict == Verdict::MayNeverBeReached {
        assert!(
            matches!(a.why, Some(Why::InsideKInterval { .. })),
            "{:?}",
            a.why
        );
    }

    // Half of K: an ordinary milestone with both intervals.
    let a = assess(&f, Target::Level(0.5 * k.estimate), 0.0, 29.0, Some(&b));
    assert_eq!(a.verdict, Verdict::Observed);
    assert!(a.delta.is_some() && a.bootstrap.unwrap().hi.is_some());
}

#[test]
fn milestones_far_past_the_data_are_not_given_as_times() {
    // Data that pass the inflection (t0 = 18) with a slow rise, so K is
    // determined but 99.9% of K lies at t0 + ln(999)/r ≈ 64, more than
    // one data span past the last time. (Data that end before the
    // inflection leave K undetermined: see the test below.)
    let (_, _, f) = noisy(Model::Logistic, &[1000.0, 0.15, 18.0], 25, 2.0, 6);
    assert!(saturation_determined(&f));
    let a = assess(&f, Target::Share(0.999), 0.0, 24.0, None);
    assert_eq!(a.verdict, Verdict::TooFar, "{a:?}");
    assert!(!a.verdict.shows_time());
    assert!(matches!(a.why, Some(Why::TooFar { spans }) if spans > 1.0));
}

#[test]
fn exponential_has_no_shares_but_has_levels() {
    let (t, y, f) = noisy(Model::Exponential, &[5.0, 0.2], 20, 0.5, 7);
    let a = assess(&f, Target::Share(0.5), 0.0, 19.0, None);
    assert_eq!(a.verdict, Verdict::NotApplicable);
    let target = 5.0 * (0.2f64 * 22.0).exp();
    let b = boot(&f, &t, &y);
    let a = assess(&f, Target::Level(target), 0.0, 19.0, Some(&b));
    assert_eq!(a.verdict, Verdict::Forecast, "{a:?}");
    // Analytic: t = ln(y / a) / r.
    let p = f.values();
    assert!((a.estimate.unwrap() - (target / p[0]).ln() / p[1]).abs() < 1e-9);
    let targets = standard_targets(Model::Exponential, &[0.3], &[target]);
    assert_eq!(targets, vec![Target::Level(target)]);
    let targets = standard_targets(Model::Logistic, &[0.5, 0.95], &[]);
    assert_eq!(targets.len(), 5);
}

/// Milestones name the model's own saturation level: Bass's market potential
/// m, the bi-logistic's K1 + K2, K otherwise. For the Bass curve the half
/// level m/2 is reached where F = 1/2 (a fact of its closed form,
/// F(s) = (1 − e^(−(p+q)s)) / (1 + (q/p) e^(−(p+q)s))): at
/// s = ln(2 + q/p) / (p + q) after launch.
#[test]
fn milestones_name_the_models_saturation_level() {
    let (p, q, m, tau) = (0.03, 0.4, 5000.0, 2.0);
    let (t, _, f) = noisy(Model::Bass, &[m, p, q, tau], 40, 5.0, 31);
    let half = assess(&f, Target::Share(0.5), t[0], t[39], None);
    assert_eq!(half.level_name, "m");
    let want = tau + (2.0 + q / p).ln() / (p + q);
    let got = half.estimate.unwrap();
    assert!((got - want).abs() < 0.1, "{got} vs {want}");

    let (t, _, f) = noisy(
        Model::Bilogistic,
        &[600.0, 0.9, 8.0, 400.0, 0.7, 22.0],
        36,
        3.0,
        32,
    );
    let a = assess(&f, Target::Share(0.9), t[0], t[35], None);
    assert_eq!(a.level_name, "K1 + K2");
    let (t, _, f) = noisy(Model::Logistic, &[100.0, 0.8, 10.0], 25, 1.0, 33);
    assert_eq!(
        assess(&f, Target::Share(0.1), t[0], t[24], None).level_name,
        "K"
    );
}

/// The first ten weeks of the Aldermoor demo end well before its
/// inflection (t0 ≈ 14): K is not determined, so 10/50/90% of K and the
/// 10→90% duration get no time at all (they used to get dates whose
/// intervals contradicted t0's own). A fixed level keeps its assessment.
/// On all 30 weeks K is determined and the shares have times again.
#[test]
fn shares_of_an_undetermined_k_get_no_time() {
    let text = include_str!("../../../../demo-data/aldermoor_subscribers.csv");
    let s = crate::parse_series(text, &Default::default()).unwrap();
    let (t, y) = (&s.times[..10], &s.values[..10]);
    let f = fit_xy(t, y, Model::Logistic, &FitOptions::default()).unwrap();
    assert!(!f.param("K").unwrap().identified);
    assert!(!saturation_determined(&f));
    for target in [
        Target::Share(0.1),
        Target::Share(0.5),
        Target::Share(0.9),
        Target::Duration1090,
    ] {
        let a = assess(&f, target, t[0], t[9], None);
        assert_eq!(a.verdict, Verdict::SaturationNotDetermined, "{target:?}");
        assert!(a.estimate.is_none() && a.delta.is_none(), "{target:?}");
        assert!(!a.verdict.shows_time());
    }
    let level = assess(&f, Target::Level(3000.0), t[0], t[9], None);
    assert_ne!(level.verdict, Verdict::SaturationNotDetermined);
    assert!(level.estimate.is_some());

    let f = fit_xy(&s.times, &s.values, Model::Logistic, &FitOptions::default()).unwrap();
    assert!(saturation_determined(&f));
    let half = assess(&f, Target::Share(0.5), s.times[0], s.times[29], None);
    assert_eq!(half.verdict, Verdict::Observed);
}
