use crate::fit::{fit_xy, CiMethod, FitOptions, IntervalMethod};
use crate::model::Model;
use crate::stats;
use crate::warning::WarningCode;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn noisy_logistic(k: f64, r: f64, t0: f64, ts: &[f64], sd: f64, seed: u64) -> Vec<f64> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let noise = Normal::new(0.0, sd).unwrap();
    ts.iter()
        .map(|t| k / (1.0 + (-r * (t - t0)).exp()) + noise.sample(&mut rng))
        .collect()
}

/// Analytic fact (Bates & Watts 1988, §6.1): for a model linear in its
/// free parameters the profile t statistic is exactly (θ − θ̂)/se, so the
/// profile interval is the Student-t interval. The 4-parameter logistic
/// with r and t0 held fixed is `L (1 − g(t)) + K g(t)`: linear in K and L.
#[test]
fn linear_in_parameters_profile_equals_t_interval() {
    let ts: Vec<f64> = (0..25).map(|i| i as f64).collect();
    let y: Vec<f64> = noisy_logistic(900.0, 0.5, 12.0, &ts, 20.0, 7)
        .iter()
        .map(|v| v + 100.0)
        .collect();
    let opts = FitOptions {
        fixed: vec![("r".into(), 0.45), ("t0".into(), 12.5)],
        ..FitOptions::default()
    };
    let f = fit_xy(&ts, &y, Model::Logistic4, &opts).unwrap();
    for name in ["K", "L"] {
        let p = f.param(name).unwrap();
        let iv = p.interval.unwrap();
        assert_eq!(iv.method, CiMethod::Profile, "{name}");
        let (lo, hi) = p.ci95.unwrap();
        let half = hi - p.estimate;
        assert!(
            (iv.lo.unwrap() - lo).abs() < 1e-7 * half,
            "{name}: {iv:?} vs {lo}"
        );
        assert!(
            (iv.hi.unwrap() - hi).abs() < 1e-7 * half,
            "{name}: {iv:?} vs {hi}"
        );
    }
    // Fixed parameters propagate nothing.
    for name in ["r", "t0"] {
        let p = f.param(name).unwrap();
        assert!(p.fixed && p.std_error.is_none() && p.ci95.is_none() && p.interval.is_none());
    }
}

/// The same with a single free parameter (no refits at all): the logistic
/// with r and t0 fixed is K·g(t).
#[test]
fn single_free_linear_parameter_profile_equals_t_interval() {
    let ts: Vec<f64> = (0..15).map(|i| i as f64).collect();
    let y = noisy_logistic(50.0, 0.8, 6.0, &ts, 1.5, 3);
    let opts = FitOptions {
        fixed: vec![("r".into(), 0.8), ("t0".into(), 6.0)],
        ..FitOptions::default()
    };
    let f = fit_xy(&ts, &y, Model::Logistic, &opts).unwrap();
    let k = f.param("K").unwrap();
    let iv = k.interval.unwrap();
    let (lo, hi) = k.ci95.unwrap();
    assert_eq!(iv.method, CiMethod::Profile);
    assert!((iv.lo.unwrap() - lo).abs() < 1e-9 * (hi - lo));
    assert!((iv.hi.unwrap() - hi).abs() < 1e-9 * (hi - lo));
}

/// At each reported bound the profile t statistic equals t(0.975, dof):
/// refit with the parameter held at the bound and check |τ| directly.
#[test]
fn bounds_sit_on_the_threshold() {
    let ts: Vec<f64> = (0..30).map(|i| i as f64).collect();
    let y = noisy_logistic(1000.0, 0.4, 14.0, &ts, 25.0, 11);
    let f = fit_xy(&ts, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let tq = stats::t_quantile(0.95, f.dof);
    let s = f.sigma;
    for (j, name) in ["K", "r", "t0"].iter().enumerate() {
        let iv = f.params[j].interval.unwrap();
        assert_eq!(iv.method, CiMethod::Profile);
        for b in [iv.lo.unwrap(), iv.hi.unwrap()] {
            let mut fixed = vec![(name.to_string(), b)];
            let start: Vec<(String, f64)> = ["K", "r", "t0"]
                .iter()
                .zip(f.values())
                .filter(|(n, _)| *n != name)
                .map(|(n, v)| (n.to_string(), v))
                .collect();
            fixed.truncate(1);
            let g = fit_xy(
                &ts,
                &y,
                Model::Logistic,
                &FitOptions {
                    fixed,
                    start,
                    intervals: IntervalMethod::Asymptotic,
                    ..FitOptions::default()
                },
            )
            .unwrap();
            let tau = ((g.rss - f.rss) / (s * s)).sqrt();
            assert!((tau - tq).abs() < 1e-5, "{name} at {b}: tau {tau} vs {tq}");
        }
        // Nonlinear: the profile interval is not the symmetric t interval.
        let (lo, hi) = f.params[j].ci95.unwrap();
        assert!(iv.lo.unwrap() != lo || iv.hi.unwrap() != hi);
    }
}

/// A series that stops well before the inflection: the profile of K does
/// not close above, so K is flagged and no upper bound is given, nor the
/// asymptotic interval in the report.
#[test]
fn early_series_leaves_k_open_and_flagged() {
    let ts: Vec<f64> = (0..12).map(|i| i as f64).collect();
    // t0 = 20: the data end at 11, far below the inflection.
    let y = noisy_logistic(1000.0, 0.3, 20.0, &ts, 1.0, 5);
    let f = fit_xy(&ts, &y, Model::Logistic, &FitOptions::default()).unwrap();
    assert!(
        f.has_warning(WarningCode::SaturationNotIdentified),
        "{:?}",
        f.warnings
    );
    let k = f.param("K").unwrap();
    assert!(!k.identified);
    let iv = k.interval.unwrap();
    assert!(iv.hi.is_none(), "{iv:?}");
}

/// Asymptotic-only mode keeps the old intervals, marked as such.
#[test]
fn asymptotic_mode_reports_t_intervals() {
    let ts: Vec<f64> = (0..30).map(|i| i as f64).collect();
    let y = noisy_logistic(1000.0, 0.4, 14.0, &ts, 25.0, 11);
    let opts = FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..FitOptions::default()
    };
    let f = fit_xy(&ts, &y, Model::Logistic, &opts).unwrap();
    for p in &f.params {
        let iv = p.interval.unwrap();
        assert_eq!(iv.method, CiMethod::Asymptotic);
        assert_eq!((iv.lo.unwrap(), iv.hi.unwrap()), p.ci95.unwrap());
    }
}

/// The exponential on a calendar axis is fitted on shifted times; its
/// a = y(0) is profiled on the original axis. With r held fixed the model
/// a·e^(r t) is linear in a, so the profile interval is the t interval
/// (analytic fact); with r free, τ = t(0.975) at each bound of a.
#[test]
fn exponential_a_is_profiled_on_a_calendar_axis() {
    let ts: Vec<f64> = (0..20).map(|i| 2000.0 + i as f64).collect();
    let mut rng = ChaCha8Rng::seed_from_u64(9);
    let noise = Normal::new(0.0, 3.0).unwrap();
    let a_true = 40.0 * (-0.09_f64 * 2000.0).exp();
    let y: Vec<f64> = ts
        .iter()
        .map(|t| a_true * (0.09 * t).exp() + noise.sample(&mut rng))
        .collect();
    let fixed_r = FitOptions {
        fixed: vec![("r".into(), 0.09)],
        ..FitOptions::default()
    };
    let f = fit_xy(&ts, &y, Model::Exponential, &fixed_r).unwrap();
    let a = &f.params[0];
    let iv = a.interval.unwrap();
    let (lo, hi) = a.ci95.unwrap();
    assert_eq!(iv.method, CiMethod::Profile, "{:?}", f.warnings);
    assert!(
        (iv.lo.unwrap() - lo).abs() < 1e-6 * (hi - lo),
        "{iv:?} vs {lo}"
    );
    assert!(
        (iv.hi.unwrap() - hi).abs() < 1e-6 * (hi - lo),
        "{iv:?} vs {hi}"
    );

    let f = fit_xy(&ts, &y, Model::Exponential, &FitOptions::default()).unwrap();
    assert!(
        !f.has_warning(WarningCode::ProfileNotComputed),
        "{:?}",
        f.warnings
    );
    let iv = f.params[0].interval.unwrap();
    assert_eq!(iv.method, CiMethod::Profile);
    let tq = stats::t_quantile(0.95, f.dof);
    for b in [iv.lo.unwrap(), iv.hi.unwrap()] {
        let g = fit_xy(
            &ts,
            &y,
            Model::Exponential,
            &FitOptions {
                fixed: vec![("a".into(), b)],
                start: vec![("r".into(), f.params[1].estimate)],
                intervals: IntervalMethod::Asymptotic,
                ..FitOptions::default()
            },
        )
        .unwrap();
        let tau = ((g.rss - f.rss) / (f.sigma * f.sigma)).sqrt();
        assert!((tau - tq).abs() < 1e-4, "a at {b}: tau {tau} vs {tq}");
    }
}

/// A fixed a is y(0) as given, also on a calendar axis: the fit keeps it
/// and reports it unchanged, with nothing propagated for it.
#[test]
fn fixed_exponential_a_is_kept_as_given() {
    let ts: Vec<f64> = (0..20).map(|i| 2000.0 + i as f64).collect();
    let a = 40.0 * (-0.09_f64 * 2000.0).exp();
    let y: Vec<f64> = ts.iter().map(|t| a * (0.09 * t).exp() * 1.01).collect();
    let f = fit_xy(
        &ts,
        &y,
        Model::Exponential,
        &FitOptions {
            fixed: vec![("a".into(), a)],
            ..FitOptions::default()
        },
    )
    .unwrap();
    let p = &f.params[0];
    assert!(p.fixed && p.estimate == a && p.std_error.is_none() && p.interval.is_none());
    // y = 1.01·a·e^(0.09 t) = a·e^(r t) with r = 0.09 + ln(1.01)/t: the
    // least-squares r lies between those at the two ends of the axis.
    let r = f.params[1].estimate;
    let (r1, r2) = (0.09 + 1.01f64.ln() / 2019.0, 0.09 + 1.01f64.ln() / 2000.0);
    assert!(r1 < r && r < r2, "{r} not in [{r1}, {r2}]");
}
