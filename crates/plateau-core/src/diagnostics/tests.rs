//! Unit checks of the diagnostics against values worked by hand from the
//! definitions (analytic facts); the cross-check against statsmodels and
//! scipy is in `tests/core/diagnostics.rs`.

use super::*;
use crate::fit::{fit_xy, FitOptions};
use crate::model::Model;

#[test]
fn runs_test_by_hand() {
    // Signs + + − − + + − − + + − − (n = 12, n₊ = n₋ = 6, R = 6).
    let res = [
        1.0, 2.0, -1.0, -2.0, 1.0, 2.0, -1.0, -2.0, 1.0, 2.0, -1.0, -2.0,
    ];
    let r = runs_test(&res).unwrap();
    assert_eq!((r.n_positive, r.n_negative, r.runs), (6, 6, 6));
    // μ = 1 + 2·36/12 = 7; σ² = 2·36·(72 − 12)/(144·11) = 4320/1584.
    assert!((r.expected - 7.0).abs() < 1e-15);
    let sd = (4320.0f64 / 1584.0).sqrt();
    assert!(r.continuity_corrected);
    assert!((r.z - (6.0 - 7.0 + 0.5) / sd).abs() < 1e-14);
    // All one sign: no test.
    assert!(runs_test(&[1.0, 2.0, 3.0]).is_none());
}

#[test]
fn durbin_watson_and_lag1_by_hand() {
    // Alternating ±1 of length n: DW = 4 (n − 1) / n, r₁ = −(n − 1)/n.
    let res: Vec<f64> = (0..10)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    assert!((durbin_watson(&res).unwrap() - 3.6).abs() < 1e-15);
    assert!((lag1_autocorrelation(&res).unwrap() + 0.9).abs() < 1e-15);
    assert!(durbin_watson(&[0.0, 0.0, 0.0]).is_none());
}

#[test]
fn filliben_positions_are_symmetric() {
    for n in [3, 4, 10, 51] {
        let m = filliben_positions(n);
        for i in 0..n {
            assert!((m[i] + m[n - 1 - i] - 1.0).abs() < 1e-12, "n {n} i {i}");
        }
        assert!(m.windows(2).all(|w| w[0] < w[1]));
    }
    // Exactly normal quantiles give a perfect line.
    let q = normal_qq(&[-1.0, 0.0, 1.0]).unwrap();
    assert!((q.correlation - 1.0).abs() < 1e-12);
    assert!(q.intercept.abs() < 1e-12);
}

#[test]
fn jarque_bera_of_a_symmetric_flat_sample() {
    // ±1 equally often: skewness 0, kurtosis 1, JB = n/6 · 4/4 = n/6.
    let res: Vec<f64> = (0..12)
        .map(|i| if i % 2 == 0 { 1.0 } else { -1.0 })
        .collect();
    let j = jarque_bera(&res).unwrap();
    assert!(j.skewness.abs() < 1e-15);
    assert!((j.kurtosis - 1.0).abs() < 1e-15);
    assert!((j.statistic - 2.0).abs() < 1e-14);
    // χ²(2) survival is e^(−x/2).
    assert!((j.p_value - (-1.0f64).exp()).abs() < 1e-12);
}

#[test]
fn lr_statistic_by_hand() {
    let (lr, p) = lr_test(30, 2.0, 1.0).unwrap();
    assert!((lr - 30.0 * 2f64.ln()).abs() < 1e-12);
    // χ²(1) survival at 3.841458820694124 is 0.05 (table value, from memory).
    let (_, p5) = lr_test(1, 3.841458820694124f64.exp(), 1.0).unwrap();
    assert!((p5 - 0.05).abs() < 1e-9, "{p5}");
    // χ²(1) survival is erfc(sqrt(x/2)); at 30 ln 2 ≈ 20.8 that is about 5e-6.
    assert!(p > 1e-6 && p < 1e-5, "{p}");
    // A general fit worse than the nested one: LR 0, p 1.
    assert_eq!(lr_test(10, 1.0, 1.5), Some((0.0, 1.0)));
}

#[test]
fn few_residuals_give_no_verdict() {
    let d = of_residuals(vec![1.0, -1.0, 0.5, -0.2]);
    assert_eq!(d.verdicts.len(), 1);
    assert_eq!(d.verdicts[0].code, "too_few");
}

#[test]
fn streaky_residuals_are_flagged() {
    // Ten positive then ten negative: two runs out of about 11.
    let res: Vec<f64> = (0..20)
        .map(|i| if i < 10 { 1.0 + 0.01 * i as f64 } else { -1.0 })
        .collect();
    let d = of_residuals(res);
    assert_eq!(d.verdicts[0].code, "runs_streaks");
    assert!(d.verdicts[0].flagged);
    assert_eq!(d.verdicts[1].code, "autocorrelated");
}

/// Common practice: logistic data with the true K lie exactly on the line
/// ln(y/(K−y)) = r (t − t0).
#[test]
fn fisher_pry_of_exact_logistic_data_is_straight() {
    let p = [1000.0, 0.4, 12.0];
    let t: Vec<f64> = (0..25).map(f64::from).collect();
    let y: Vec<f64> = t.iter().map(|&ti| Model::Logistic.eval(&p, ti)).collect();
    let fp = fisher_pry(&t, &y, 1000.0, ErrorModel::Additive).unwrap();
    assert_eq!(fp.dropped, 0);
    assert!((fp.slope - 0.4).abs() < 1e-9);
    assert!((fp.t0.unwrap() - 12.0).abs() < 1e-9);
    assert_eq!(fp.verdict.code, "straight");
    // K set too high: the late points bend down.
    let fp = fisher_pry(&t, &y, 1300.0, ErrorModel::Additive).unwrap();
    assert_eq!(fp.verdict.code, "curved");
    assert!(fp.curvature.unwrap() < 0.0);
    // K below some observations: those are dropped and counted.
    let fp = fisher_pry(&t, &y, 900.0, ErrorModel::Additive).unwrap();
    assert!(fp.dropped > 0);
    assert_eq!(fp.points.len() + fp.dropped, 25);
}

/// Running totals of per-period counts are counts themselves (a sum of
/// independent Poisson counts is Poisson: variance equal to the mean, a
/// textbook fact), so they keep the count weights; other increment models
/// fall back to the additive weights.
#[test]
fn fisher_pry_weights_for_running_totals() {
    use ErrorModel::*;
    for e in [Additive, Relative, Log, Count] {
        assert_eq!(fisher_pry_errors(e, false), e);
    }
    assert_eq!(fisher_pry_errors(Count, true), Count);
    for e in [Additive, Relative, Log] {
        assert_eq!(fisher_pry_errors(e, true), Additive);
    }
}

fn noisy(model: Model, p: &[f64], sd: f64, seed: u64) -> (Vec<f64>, Vec<f64>) {
    use rand::SeedableRng;
    use rand_distr::{Distribution, Normal};
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(seed);
    let normal = Normal::new(0.0, sd).unwrap();
    let t: Vec<f64> = (0..30).map(f64::from).collect();
    let y = t
        .iter()
        .map(|&ti| model.eval(p, ti) + normal.sample(&mut rng))
        .collect();
    (t, y)
}

/// Without a Richards fit the Gompertz ΔAICc decides alone.
#[test]
fn symmetry_falls_back_to_the_gompertz_aicc() {
    let (t, y) = noisy(Model::Gompertz, &[1000.0, 0.2, 10.0], 10.0, 3);
    let o = FitOptions::default();
    let l = fit_xy(&t, &y, Model::Logistic, &o).unwrap();
    let g = fit_xy(&t, &y, Model::Gompertz, &o).unwrap();
    let s = symmetry_test_of(&l, None, Some(&g));
    assert_eq!(s.decided_by, Some("gompertz_aicc"));
    assert_eq!(s.asymmetric, Some(true));
    assert_eq!(s.direction, Some(Asymmetry::LateSlower));
    assert_eq!((s.verdict.code, s.verdict.flagged), ("asymmetric", true));
    let none = symmetry_test_of(&l, None, None);
    assert_eq!(none.asymmetric, None);
    assert_eq!(none.verdict.code, "symmetry_unknown");
}

/// Parsimony: when Richards wins on AICc by a little but the likelihood
/// ratio does not reject ν = 1, the logistic is recommended, and the reason
/// says so. The seed is the first of 1..=300 whose logistic data give that
/// situation (LR between about 2.9 and 3.84 at n = 30).
#[test]
fn recommendation_prefers_the_nested_logistic_when_lr_does_not_reject() {
    use crate::compare::{compare, nested_tests, recommend};
    let models = [Model::Logistic, Model::Richards];
    let found = (1..=300).find_map(|seed| {
        let (t, y) = noisy(Model::Logistic, &[1000.0, 0.3, 14.5], 20.0, seed);
        let entries = compare(&t, &y, &models, &FitOptions::default());
        let rich_first = entries[0].model == Model::Richards
            && entries[0]
                .result
                .as_ref()
                .is_ok_and(|f| f.warnings.is_empty());
        let lr = nested_tests(&entries);
        (rich_first && lr.len() == 1 && lr[0].p_value >= ALPHA).then_some((t, y, entries))
    });
    let (t, y, entries) = found.expect("a seed with Richards ahead on AICc but LR p ≥ 0.05");
    let rec = recommend(&entries, &t, &y);
    assert_eq!(rec.model, Some(Model::Logistic), "{:?}", rec.reasons);
    assert!(rec.reasons.iter().any(|r| matches!(
        r,
        crate::compare::Reason::SimplerKept {
            general: Model::Richards,
            nested: Model::Logistic,
            ..
        }
    )));
}

/// Residuals follow the fit's error model and increments setting (the
/// definitions in `residuals_in_time_order`).
#[test]
fn residuals_follow_the_error_model() {
    let (t, y) = noisy(Model::Logistic, &[1000.0, 0.3, 14.5], 10.0, 5);
    let y: Vec<f64> = y.iter().map(|v| v.max(1.0)).collect();
    for em in [ErrorModel::Relative, ErrorModel::Log, ErrorModel::Count] {
        let o = FitOptions {
            error_model: em,
            ..FitOptions::default()
        };
        let f = fit_xy(&t, &y, Model::Logistic, &o).unwrap();
        let res = residuals_in_time_order(&f, &t, &y);
        let p = f.values();
        for (i, e) in res.iter().enumerate() {
            let fv = Model::Logistic.eval(&p, t[i]);
            let want = match em {
                ErrorModel::Relative => (y[i] - fv) / fv,
                ErrorModel::Log => y[i].ln() - fv.ln(),
                _ => (y[i] - fv) / fv.sqrt(),
            };
            assert!((e - want).abs() < 1e-12, "{em:?} {i}");
        }
    }
    let o = FitOptions {
        increments: true,
        ..FitOptions::default()
    };
    let f = fit_xy(&t, &y, Model::Logistic, &o).unwrap();
    assert_eq!(residuals_in_time_order(&f, &t, &y).len(), t.len() - 1);
}

/// With replicate times the order checks use the mean residual per time,
/// worked by hand: residuals at times 1, 1, 2, 3, 3, 3, 4 of
/// 1, 3 | −1 | −2, −4, 0 | 5 give the means 2, −1, −2, 5 (time order).
#[test]
fn replicates_use_the_mean_residual_per_time() {
    let timed = [
        (1.0, 1.0),
        (1.0, 3.0),
        (2.0, -1.0),
        (3.0, -2.0),
        (3.0, -4.0),
        (3.0, 0.0),
        (4.0, 5.0),
    ];
    let means = mean_per_time(&timed);
    assert_eq!(means, [2.0, -1.0, -2.0, 5.0]);
    // Signs + − − +: 3 runs. DW = (9 + 1 + 49) / (4 + 1 + 4 + 25) = 59/34.
    // Mean 1: r₁ = Σ (e_t − 1)(e_{t−1} − 1) / Σ (e_t − 1)²
    //           = ((−2)(1) + (−3)(−2) + (4)(−3)) / (1 + 4 + 9 + 16) = −8/30.
    let res: Vec<f64> = timed.iter().map(|q| q.1).collect();
    let d = of_residuals_and_means(res.clone(), means);
    assert_eq!(d.runs.as_ref().unwrap().runs, 3);
    assert!((d.durbin_watson.unwrap() - 59.0 / 34.0).abs() < 1e-15);
    assert!((d.lag1_autocorrelation.unwrap() + 8.0 / 30.0).abs() < 1e-15);
    assert_eq!((d.n, d.serial_n, d.per_time_means), (7, 4, true));
    // Q-Q and Jarque–Bera use all seven residuals.
    assert_eq!(d.qq.as_ref().unwrap().points.len(), 7);
    assert_eq!(d.jarque_bera, jarque_bera(&res));
    // Fewer than MIN_RESIDUALS distinct times: the order checks say so.
    let many: Vec<f64> = (0..12).map(|i| f64::from(i % 3) - 1.0).collect();
    let d = of_residuals_and_means(many, vec![1.0, -1.0, 0.5, -0.5]);
    assert_eq!(d.verdicts.len(), 2);
    assert_eq!(d.verdicts[0].code, "too_few");
    assert_eq!(d.verdicts[0].check, Check::Order);
    // Without replicates nothing changes.
    let d = of_residuals(vec![1.0, -1.0, 2.0]);
    assert_eq!((d.serial_n, d.per_time_means), (3, false));
}

/// `residual_diagnostics` of a fit to replicate data uses the per-time
/// means of the residuals in time order, whatever the input order.
#[test]
fn residual_diagnostics_of_replicates_group_by_time() {
    let (t0, y0) = noisy(Model::Logistic, &[1000.0, 0.3, 14.5], 10.0, 7);
    let (_, y1) = noisy(Model::Logistic, &[1000.0, 0.3, 14.5], 10.0, 8);
    // Both replicate sets, the second reversed.
    let t: Vec<f64> = t0.iter().chain(t0.iter().rev()).copied().collect();
    let y: Vec<f64> = y0.iter().chain(y1.iter().rev()).copied().collect();
    let f = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).unwrap();
    let d = residual_diagnostics(&f, &t, &y);
    assert_eq!(
        (d.n, d.serial_n, d.per_time_means),
        (t.len(), t0.len(), true)
    );
    let p = f.values();
    let means: Vec<f64> = (0..t0.len())
        .map(|i| {
            let f = Model::Logistic.eval(&p, t0[i]);
            ((y0[i] - f) + (y1[i] - f)) / 2.0
        })
        .collect();
    let dw = durbin_watson(&means).unwrap();
    assert!((d.durbin_watson.unwrap() - dw).abs() < 1e-12 * dw);
    assert!(d.verdicts.iter().all(|v| v.check != Check::Order));
}
