//! The backtest on exact and noisy curves: its errors are those of the
//! forecasts it made (recomputed here from cold fits at every origin).

use super::*;
use crate::fit::fit_xy;
use crate::history::tests::logistic_exact;

#[test]
fn backtest_scores_are_the_errors_of_the_forecasts_made() {
    let (t, y0) = logistic_exact(24);
    // Exact data: the logistic forecasts are exact once the data determine
    // the curve (from the first origin, 12 points here, at t0).
    let rows = backtest(
        &t,
        &y0,
        &[Model::Logistic],
        &FitOptions::default(),
        &BacktestOptions {
            horizon: 3,
            min_train: Some(14),
            max_origins: None,
        },
    );
    let lg = &rows[0];
    assert_eq!(lg.origins, 10);
    assert_eq!(lg.failed, 0);
    assert_eq!(lg.by_horizon.len(), 3);
    assert_eq!(lg.by_horizon[0].count, 10);
    assert_eq!(lg.by_horizon[2].count, 8);
    for s in &lg.by_horizon {
        assert!(s.mae.unwrap() < 1e-6, "{s:?}");
    }

    // Noisy data, two models: recompute the h = 2 MAE and MAPE of the
    // Gompertz by hand from cold fits at every origin.
    let y: Vec<f64> = y0
        .iter()
        .enumerate()
        .map(|(i, v)| v + [7.0, -5.0, 3.0, -9.0, 4.0][i % 5])
        .collect();
    let opts = BacktestOptions {
        horizon: 2,
        min_train: None,
        max_origins: None,
    };
    let rows = backtest(
        &t,
        &y,
        &[Model::Logistic, Model::Gompertz],
        &FitOptions::default(),
        &opts,
    );
    let g = &rows[1];
    assert_eq!(g.model, Model::Gompertz);
    let (mut sum, mut sum_pct, mut count) = (0.0, 0.0, 0);
    for o in 12..23 {
        let f = fit_xy(&t[..o], &y[..o], Model::Gompertz, &FitOptions::default()).unwrap();
        let e = (f.predict(t[o + 1]) - y[o + 1]).abs();
        sum += e;
        sum_pct += 100.0 * e / y[o + 1].abs();
        count += 1;
    }
    let s = &g.by_horizon[1];
    assert_eq!(s.count, count);
    let mae = sum / count as f64;
    assert!(
        (s.mae.unwrap() - mae).abs() < 1e-4 * mae,
        "{} vs {mae}",
        s.mae.unwrap()
    );
    let mape = sum_pct / count as f64;
    assert!((s.mape.unwrap() - mape).abs() < 1e-4 * mape);
}
