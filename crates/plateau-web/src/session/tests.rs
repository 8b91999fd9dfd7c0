//! The page's analysis, natively: the numbers the page shows must be the
//! CLI's numbers (same core calls), bad data must name its line and the
//! exports must have the promised shape.

use super::*;
use plateau_core::fit::FitOptions;
use plateau_core::WarningCode;

fn demo() -> Analysis {
    analyse(DEMO_TEXT, &Settings::default()).expect("the demo fits")
}

#[test]
fn demo_matches_a_direct_core_fit() {
    let a = demo();
    let series = parse_series(DEMO_TEXT, &ParseOptions::default()).unwrap();
    let direct = plateau_core::fit(&series, Model::Logistic, &FitOptions::default()).unwrap();
    assert_eq!(a.fit.values(), direct.values());
    assert_eq!(a.view.params.len(), 3);
    assert_eq!(a.comparison_view().comparison.len(), Model::ALL.len());
    assert!(a.view.milestones.iter().any(|m| m.label == "90% of K"));
    // Common practice: for the logistic, 10% to 90% of K takes ln(81)/r.
    let r = a.fit.param("r").unwrap().estimate;
    let d = a.view.duration_10_90.unwrap();
    assert!((d - 81f64.ln() / r).abs() < 1e-9 * d);
}

#[test]
fn bad_data_names_the_line() {
    let e = analyse("t,y\n1,2\n2,x\n3,4\n", &Settings::default()).unwrap_err();
    assert_eq!(e.line, Some(3));
    assert!(e.message.contains("line 3"), "{}", e.message);
}

#[test]
fn per_period_counts_are_accumulated_before_fitting() {
    let counts = include_str!("../../../../demo-data/weekly_signups.csv");
    let settings = Settings {
        per_period: true,
        ..Settings::default()
    };
    let a = analyse(counts, &settings).unwrap();
    let raw = parse_series(counts, &ParseOptions::default()).unwrap();
    let total: f64 = raw.values.iter().sum();
    assert_eq!(a.values.last().copied(), Some(total));
    assert!(!a
        .view
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::ValuesDecline));

    // The same counts taken as running totals: the page says they look like counts.
    let a = analyse(counts, &Settings::default()).unwrap();
    assert!(a
        .view
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::ValuesDecline));
}

#[test]
fn fixed_k_is_refused_for_the_exponential_and_kept_for_the_logistic() {
    let settings = Settings {
        model: "exponential".into(),
        fixed_k: Some(1000.0),
        ..Settings::default()
    };
    assert!(analyse(DEMO_TEXT, &settings).is_err());
    let settings = Settings {
        fixed_k: Some(15000.0),
        ..Settings::default()
    };
    let a = analyse(DEMO_TEXT, &settings).unwrap();
    assert_eq!(a.fit.param("K").unwrap().estimate, 15000.0);
    assert!(a.fit.param("K").unwrap().fixed);
    // The comparison holds the same level in every model that has one
    // (Bass's m included); the bi-logistic's row says why it is missing.
    for row in &a.comparison_view().comparison {
        match row.model {
            "exponential" => assert!(row.aicc.is_some()),
            "bilogistic" => {
                assert!(row.aicc.is_none());
                assert!(row.error.as_deref().unwrap().contains("K1 + K2"));
            }
            _ => assert_eq!(row.k, Some(15000.0), "{}", row.model),
        }
    }
    let bt = a.backtest_view();
    let bilogistic = bt.rows.iter().find(|b| b.model == "bilogistic");
    assert!(bilogistic
        .unwrap()
        .error
        .as_deref()
        .unwrap()
        .contains("K1 + K2"));
    let bass = bt.rows.iter().find(|b| b.model == "bass").unwrap();
    assert!(bass.error.is_none());
}

/// The known saturation level is the Bass model's market potential m; the
/// bi-logistic has none in one parameter, and says so.
#[test]
fn fixed_k_holds_bass_m_and_is_refused_for_the_bilogistic() {
    let counts = include_str!("../../../../demo-data/lumen_cell_adoptions.csv");
    let settings = Settings {
        per_period: true,
        model: "bass".into(),
        fixed_k: Some(4200.0),
        ..Settings::default()
    };
    let a = analyse(counts, &settings).unwrap();
    let m = a.fit.param("m").unwrap();
    assert!(m.fixed && m.estimate == 4200.0);
    assert!(a.view.params.iter().any(|p| p.name == "m" && p.fixed));
    let settings = Settings {
        model: "bilogistic".into(),
        fixed_k: Some(1000.0),
        ..Settings::default()
    };
    let text = include_str!("../../../../demo-data/wrenlow_two_waves.csv");
    let e = analyse(text, &settings).unwrap_err();
    assert!(format!("{e:?}").contains("K1 + K2"), "{e:?}");
}

#[test]
fn csv_has_one_row_per_time_and_forecast_rows_after() {
    let a = demo();
    let csv = a.table_csv();
    let rows: Vec<&str> = csv.lines().skip(1).collect();
    let horizon = Settings::default().horizon as usize;
    assert_eq!(rows.len(), a.series.times.len() + horizon);
    let axis: Vec<f64> = rows
        .iter()
        .map(|r| r.split(',').nth(1).unwrap().parse().unwrap())
        .collect();
    assert!(axis.windows(2).all(|w| w[0] < w[1]), "distinct, increasing");
}

/// The CSV's numbers read back to the very `f64`s of the fit (Rust's own
/// parser is the reference), its band columns say which band they hold,
/// and the prediction band holds the confidence band (it adds σ̂², Seber
/// & Wild 1989 §5.1).
#[test]
fn csv_numbers_are_exact_and_bands_are_named() {
    let a = demo();
    let csv = a.table_csv();
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    assert_eq!(
        header,
        [
            "time",
            "axis",
            "observed",
            "fitted",
            "forecast",
            "confidence95_lo",
            "confidence95_hi",
            "prediction95_lo",
            "prediction95_hi"
        ]
    );
    for (i, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells.len(), header.len(), "{line}");
        let num = |j: usize| cells[j].parse::<f64>().unwrap();
        let t = num(1);
        if let Some(&y) = a.values.get(i) {
            assert_eq!(t, a.series.times[i]);
            assert_eq!(num(2), y);
            assert_eq!(num(3), a.fit.fitted[i]);
        } else {
            assert_eq!(num(4), a.fit.predict(t));
        }
        let c = analysis::band(&a.fit, t, 0.95).unwrap();
        assert_eq!((num(5), num(6)), c);
        assert!(num(7) < num(5) && num(6) < num(8), "{line}");
    }
}

/// The page's text comes from `plateau_study::numbers` with the CLI's
/// rules: each estimate at its standard error's digits, its interval and
/// bootstrap interval at the same digits, weights and p-values as such.
#[test]
fn view_text_follows_the_numbers_rules() {
    let a = demo();
    let t = &a.view.text;
    assert_eq!(t.params.len(), a.view.params.len());
    for (p, shown) in a.view.params.iter().zip(&t.params) {
        let d = Precision::of_estimate(p.estimate, p.std_error);
        let show = |x: f64| {
            if p.name == "t0" {
                d.show_time(x)
            } else {
                d.show(x)
            }
        };
        assert_eq!(shown.estimate, show(p.estimate));
        assert_eq!(
            shown.std_error,
            numbers::std_error(p.estimate, p.std_error.unwrap())
        );
        let [lo, hi] = p.ci95.unwrap();
        assert_eq!(
            shown.interval,
            format!("{} … {}", show(lo.unwrap()), show(hi.unwrap()))
        );
    }
    // K of the demo is in the thousands: separators.
    assert!(t.params[0].estimate.contains(','), "{:?}", t.params[0]);
    for (c, shown) in a
        .comparison_view()
        .comparison
        .iter()
        .zip(&a.comparison_view().text)
    {
        if c.weight.is_some_and(|w| w < 0.001) {
            assert_eq!(shown.weight, "<0.001");
        }
    }
    let bt = a.backtest_view();
    assert_eq!(bt.text.len(), bt.rows.len());
    assert!(bt.text[0].iter().all(|m| m.ends_with('%') || m == "–"));
    let mut b = start_bootstrap(&a).unwrap();
    b.run();
    let bv = bootstrap_view(&a, &b);
    for ((p, iv), text) in a.view.params.iter().zip(&bv.params).zip(&bv.params_text) {
        let d = Precision::of_estimate(p.estimate, p.std_error);
        let [lo, hi] = iv.unwrap();
        let show = |x: f64| {
            if p.name == "t0" {
                d.show_time(x)
            } else {
                d.show(x)
            }
        };
        assert_eq!(text, &format!("{} … {}", show(lo), show(hi)));
    }
}

#[test]
fn json_report_is_the_cli_schema() {
    let a = demo();
    let v: serde_json::Value = serde_json::from_str(&a.report_json()).unwrap();
    for key in [
        "model",
        "n",
        "dof",
        "rss",
        "sigma",
        "r_squared",
        "aic",
        "aicc",
        "bic",
        "converged",
        "iterations",
        "params",
        "fitted",
        "warnings",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    assert_eq!(v["fitted"].as_array().unwrap().len(), a.series.times.len());
}

#[test]
fn typical_step_is_the_median_spacing() {
    assert_eq!(typical_step(&[3.0, 1.0, 2.0, 5.0]), 1.0);
    assert_eq!(typical_step(&[7.0]), 1.0);
}

/// Quarterly input: the axis counts quarters since 2000Q1, and derived
/// times are shown in the data's own form, as quarters (the interval's
/// axis values stay in `ci95`, so a narrow one is not lost).
#[test]
fn derived_times_on_period_axes_are_shown_as_quarters() {
    let text = "quarter;units\n2021Q1;1,5\n2021Q2;3,1\n2021Q3;6,0\n2021Q4;11,2\n2022Q1;19,9\n\
                2022Q2;30,4\n2022Q3;41,0\n2022Q4;49,8\n2023Q1;55,1\n2023Q2;58,3\n2023Q3;59,6\n";
    let a = analyse(text, &Settings::default()).unwrap();
    let t0 = a.view.params.iter().find(|p| p.name == "t0").unwrap();
    let shown = t0.as_time.as_deref().unwrap();
    assert_eq!(shown.len(), "2022Q2".len(), "{shown}");
    assert!(shown.starts_with("2022Q"), "{shown}");
    assert_eq!(a.view.time_unit, "quarter");
    assert_eq!(a.view.time_origin.as_deref(), Some("2000Q1"));
    // 2021Q1 is quarter 4 · 21 = 84.
    assert_eq!(a.series.times[0], 84.0);
    let m = &a.view.milestones[0];
    let [lo, hi] = m.ci95_text.clone().unwrap();
    assert!(lo <= hi, "{lo} .. {hi}");
    assert!(lo.contains('Q') && hi.contains('Q'), "{lo} .. {hi}");
}

/// A series far before its inflection (10·e^(0.3 t)): the view says K is
/// not determined, gives only a lower bound and no asymptotic interval.
#[test]
fn early_series_shows_k_as_not_identified() {
    let text =
        "t,y\n0,10.1\n1,13.4\n2,18.3\n3,24.5\n4,33.2\n5,44.9\n6,60.4\n7,81.7\n8,110.0\n9,148.9\n";
    let a = analyse(text, &Settings::default()).unwrap();
    let k = a.view.params.iter().find(|p| p.name == "K").unwrap();
    assert!(!k.identified);
    let [lo, hi] = k.ci95.unwrap();
    assert!(lo.is_some() && hi.is_none());
    assert!(k.ci95_asymptotic.is_none());
    let banner = a.view.not_identified.clone().unwrap();
    assert!(banner.contains("K ≥"), "{banner}");
    assert!(a
        .view
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::SaturationNotIdentified));
}

#[test]
fn error_model_and_increments_reach_the_fit_and_the_view() {
    let a = demo();
    assert_eq!(a.view.error_model, "additive");
    assert!(!a.view.increments);
    assert!(a.view.increments_hint.is_some());
    assert_eq!(a.view.params[0].ci_method, Some("profile"));
    let settings = Settings {
        error_model: "count".into(),
        increments: true,
        ..Settings::default()
    };
    let b = analyse(DEMO_TEXT, &settings).unwrap();
    assert_eq!(b.view.error_model, "count");
    assert!(b.view.increments && b.view.increments_hint.is_none());
    assert_eq!(b.fit.n, a.fit.n - 1);
    let report: serde_json::Value = serde_json::from_str(&b.report_json()).unwrap();
    assert_eq!(report["error_model"], "count");
    assert_eq!(report["increments"], true);
    let bad = Settings {
        error_model: "poisson".into(),
        ..Settings::default()
    };
    assert!(analyse(DEMO_TEXT, &bad)
        .unwrap_err()
        .message
        .contains("error model"));
}

/// The page's diagnostics are the CLI's: the same core calls on the same
/// data give the same verdicts, symmetry test and recommendation.
#[test]
fn diagnostics_match_the_core_and_take_the_entered_k() {
    let a = demo();
    let direct =
        plateau_core::diagnostics::residual_diagnostics(&a.fit, &a.series.times, &a.values);
    assert_eq!(
        a.checks_view().diagnostics.verdicts,
        plateau_study::wording::residual_verdicts(&direct)
    );
    assert_eq!(
        a.checks_view().diagnostics.durbin_watson,
        direct.durbin_watson
    );
    let sym = plateau_core::diagnostics::symmetry_test(
        &a.series.times,
        &a.values,
        &FitOptions::default(),
    )
    .unwrap();
    let checks = a.checks_view();
    let shown = checks.symmetry_test.as_ref().unwrap();
    assert_eq!(
        shown.verdict,
        plateau_study::wording::symmetry_verdict(&sym)
    );
    assert_eq!(shown.lr_p_value, sym.lr_p_value);
    assert!(a.comparison_view().recommendation.model.is_some());
    assert_eq!(a.comparison_view().lr_tests.len(), 2);
    let fp = checks.fisher_pry.as_ref().unwrap();
    assert!(!fp.entered);
    assert_eq!(fp.k, a.fit.param("K").unwrap().estimate);

    let entered = analyse(
        DEMO_TEXT,
        &Settings {
            fisher_pry_k: Some(2.0 * fp.k),
            ..Settings::default()
        },
    )
    .unwrap();
    let fp2 = entered.checks_view().fisher_pry.clone().unwrap();
    assert!(fp2.entered);
    // K twice the fitted saturation level: the points bend.
    assert_eq!(fp2.verdict.code, "curved");
    let bad = analyse(
        DEMO_TEXT,
        &Settings {
            fisher_pry_k: Some(-1.0),
            ..Settings::default()
        },
    )
    .unwrap_err();
    assert!(bad
        .message
        .contains("K for the Fisher–Pry view must be a positive number"));
    // The checks export has the CLI's diagnose shape and the entered K.
    let v: serde_json::Value = serde_json::from_str(&entered.diagnose_json()).unwrap();
    let mut keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    keys.sort_unstable();
    let want = [
        "caution",
        "fisher_pry",
        "fit",
        "residuals",
        "symmetry_test",
        "verdicts",
    ];
    assert_eq!(keys, want);
    assert_eq!(v["fisher_pry"]["k"], 2.0 * fp.k);
}

#[test]
fn bootstrap_in_slices_gives_the_cli_numbers_and_milestone_intervals() {
    let a = demo();
    let mut sliced = start_bootstrap(&a).unwrap();
    let mut steps = 0;
    while !sliced.is_finished() {
        let v = bootstrap_view(&a, &sliced);
        assert!(!v.finished && v.params.iter().all(Option::is_none));
        sliced.step(37);
        steps += 1;
    }
    assert_eq!(steps, 1000usize.div_ceil(37));
    let v = bootstrap_view(&a, &sliced);
    assert!(v.finished && v.done == 1000 && Some(v.seed as f64) == Settings::default().seed);
    // The same numbers as a bootstrap run at once with the same options
    // (what `plateau forecast --bootstrap` does).
    let mut whole = start_bootstrap(&a).unwrap();
    whole.run();
    for (j, p) in v.params.iter().enumerate() {
        let [lo, hi] = p.unwrap();
        assert_eq!(whole.param_interval(j, 0.95), Some((lo, hi)));
    }
    let half = v.milestones.iter().find(|m| m.label == "50% of K").unwrap();
    assert!(half.bootstrap_text.is_some() && half.ci95_text.is_some());
}

#[test]
fn unreachable_levels_say_so_and_drift_rows_are_there() {
    let a = analyse(
        DEMO_TEXT,
        &Settings {
            level: Some(1e9),
            ..Settings::default()
        },
    )
    .unwrap();
    let row = a
        .view
        .milestones
        .iter()
        .find(|m| m.label == "level 1,000,000,000")
        .unwrap();
    assert_eq!(row.verdict, "not_reached");
    assert_eq!(row.time_text, "not reached");
    assert!(row.ci95_text.is_none() && row.note.contains("never reaches"));
    assert!(!a.drift().is_empty() && a.drift().len() <= DRIFT_ROWS);
    assert_eq!(a.drift().last().unwrap().m, a.series.times.len());
}

#[test]
fn backtest_rows_match_the_core_backtest_the_cli_runs() {
    // The demo has 30 points: origins 15..29 are all within the page's
    // limit, so the page shows exactly `plateau backtest --horizon 4`.
    let a = demo();
    assert_eq!(a.backtest_view().rows.len(), Model::ALL.len());
    let direct = plateau_core::backtest::backtest(
        &a.series.times,
        &a.values,
        &Model::ALL,
        &FitOptions::default(),
        &plateau_core::backtest::BacktestOptions::default(),
    );
    for (row, d) in a.backtest_view().rows.iter().zip(&direct) {
        assert_eq!(row.model, d.model.name());
        assert_eq!(row.origins, 15);
        let mape: Vec<Option<f64>> = d.by_horizon.iter().map(|h| h.mape).collect();
        assert_eq!(row.mape, mape);
    }
}

/// The page offers the Bass model on per-period counts: the fit is the
/// core's on the summed counts, the peak row carries the core's numbers,
/// and every model (the two added ones included) is in the comparison.
#[test]
fn bass_on_per_period_counts_shows_its_peak() {
    let counts = include_str!("../../../../demo-data/lumen_cell_adoptions.csv");
    let settings = Settings {
        per_period: true,
        model: "bass".into(),
        ..Settings::default()
    };
    let a = analyse(counts, &settings).unwrap();
    let raw = parse_series(counts, &ParseOptions::default()).unwrap();
    let cum = plateau_core::data::cumulate(&raw.values);
    let direct =
        plateau_core::fit::fit_xy(&raw.times, &cum, Model::Bass, &FitOptions::default()).unwrap();
    assert_eq!(a.fit.values(), direct.values());
    let peak = a.view.peak.as_ref().expect("q > p: a peak after launch");
    let core = plateau_core::analysis::bass_peak(&direct).unwrap();
    assert_eq!(peak.time, core.time);
    assert_eq!(peak.rate, core.rate);
    assert!(a
        .comparison_view()
        .comparison
        .iter()
        .any(|c| c.model == "bilogistic"));
    // The comparison's level column is m for the Bass model.
    let cmp = a.comparison_view();
    let row = cmp.comparison.iter().find(|c| c.model == "bass").unwrap();
    assert_eq!(row.k, Some(direct.values()[0]));
}

#[test]
fn bilogistic_on_two_waves_has_no_peak_row_or_symmetry() {
    let text = include_str!("../../../../demo-data/wrenlow_two_waves.csv");
    let settings = Settings {
        model: "bilogistic".into(),
        ..Settings::default()
    };
    let a = analyse(text, &settings).unwrap();
    assert_eq!(a.view.params.len(), 6);
    assert!(a.view.peak.is_none() && a.view.symmetry.is_none());
    assert!(a
        .view
        .milestones
        .iter()
        .any(|m| m.label == "50% of K1 + K2"));
}

const LONG: &str = include_str!("../../../../demo-data/regional_adoption_long.csv");

#[test]
fn several_series_are_detected_fitted_and_summarised() {
    let a = analyse(DEMO_MULTI_TEXT, &Settings::default()).expect("the multi demo fits");
    let m = a.view.multi.as_ref().expect("several series");
    assert_eq!(a.view.layout, "wide");
    assert_eq!(m.summary.len(), 4);
    assert_eq!(m.selected, 0);
    let names: Vec<&str> = m.summary.iter().map(|s| s.series.as_str()).collect();
    assert_eq!(
        names,
        ["Brackenridge", "Corrie Haven", "Dunmere", "Eastwold"]
    );
    // The detailed view is the first series' own fit.
    assert_eq!(
        Some(a.fit.param("K").unwrap().estimate),
        m.summary[0].k.map(|k| k.estimate)
    );
    // Long layout: the same numbers.
    let b = analyse(LONG, &Settings::default()).unwrap();
    let mb = b.view.multi.as_ref().unwrap();
    assert_eq!(b.view.layout, "long");
    assert_eq!(
        m.summary,
        mb.summary
            .iter()
            .cloned()
            .map(|mut s| {
                // Only the first line differs between the layouts.
                s.first_line = m
                    .summary
                    .iter()
                    .find(|x| x.series == s.series)
                    .unwrap()
                    .first_line;
                s
            })
            .collect::<Vec<_>>()
    );
    // The summary CSV: a header and one row per series.
    let csv = a.summary_csv().unwrap();
    assert_eq!(csv.lines().count(), 5);
    assert!(csv
        .lines()
        .nth(3)
        .unwrap()
        .starts_with("Dunmere,logistic,60,"));
    assert!(demo().summary_csv().is_none());
}

#[test]
fn the_selected_series_gets_the_detailed_results() {
    let settings = Settings {
        series: Some(2),
        ..Settings::default()
    };
    let a = analyse(DEMO_MULTI_TEXT, &settings).unwrap();
    assert_eq!(a.view.multi.as_ref().unwrap().selected, 2);
    assert_eq!(a.view.value_name, "Dunmere");
    let dunmere = &a.multi.as_ref().unwrap().series[2];
    let direct = plateau_core::fit(dunmere, Model::Logistic, &FitOptions::default()).unwrap();
    assert_eq!(a.fit.values(), direct.values());
}

#[test]
fn one_series_layout_keeps_the_column_choice() {
    let settings = Settings {
        layout: Some("single".into()),
        value_column: Some(3),
        ..Settings::default()
    };
    let a = analyse(DEMO_MULTI_TEXT, &settings).unwrap();
    assert!(a.view.multi.is_none());
    assert_eq!(a.view.value_name, "Dunmere");
    assert_eq!(a.view.columns.len(), 5);
}

#[test]
fn several_series_errors_name_line_and_series() {
    let text = "month,north,south\n2024-01,1,2\n2024-02,3,x\n";
    let e = analyse(text, &Settings::default()).unwrap_err();
    assert_eq!(e.line, Some(3));
    assert!(e.message.contains("series \"south\""), "{}", e.message);
    let e = analyse("s,t,y\na,1,1\nb,1,2\na,2,3\n", &Settings::default()).unwrap_err();
    assert_eq!(e.line, Some(4));
}

/// Out-of-range settings get one sentence naming the setting as the page
/// labels it and the allowed range, before anything is fitted; before, a
/// replicate count of 1e12 or a seed of 1e20 reached the page as
/// "invalid value: integer `1000000000000`, expected usize".
#[test]
fn out_of_range_settings_get_a_sentence_naming_the_setting_and_range() {
    let cases: Vec<(Settings, &str)> = vec![
        (
            Settings {
                replicates: Some(1e12),
                ..Settings::default()
            },
            "Replicates B must be a whole number from 1 to 100000; it is 1000000000000.",
        ),
        (
            Settings {
                replicates: Some(0.0),
                ..Settings::default()
            },
            "Replicates B must be a whole number from 1 to 100000; it is 0.",
        ),
        (
            Settings {
                replicates: Some(12.5),
                ..Settings::default()
            },
            "Replicates B must be a whole number from 1 to 100000; it is 12.5.",
        ),
        (
            Settings {
                seed: Some(1e20),
                ..Settings::default()
            },
            "Seed must be a whole number from 0 to 9007199254740991; it is 100000000000000000000.",
        ),
        (
            Settings {
                seed: Some(-1.0),
                ..Settings::default()
            },
            "Seed must be a whole number from 0 to 9007199254740991; it is -1.",
        ),
        (
            Settings {
                horizon: -5.0,
                ..Settings::default()
            },
            "Forecast periods must be a number of periods from 0 to 1000; it is -5.",
        ),
        (
            Settings {
                horizon: 1e300,
                ..Settings::default()
            },
            "Forecast periods must be a number of periods from 0 to 1000; it is 1e300.",
        ),
        (
            Settings {
                horizon: f64::NAN,
                ..Settings::default()
            },
            "Forecast periods must be a number of periods from 0 to 1000; it is not a number.",
        ),
        (
            Settings {
                fixed_k: Some(-3.0),
                ..Settings::default()
            },
            "Known K must be a positive number; it is -3.",
        ),
        (
            Settings {
                share: 150.0,
                ..Settings::default()
            },
            "Milestone share of K (%) must be a percentage between 0 and 100 (not 0 or 100 \
             themselves); it is 150.",
        ),
        (
            Settings {
                level: Some(f64::INFINITY),
                ..Settings::default()
            },
            "Milestone level must be a finite number; it is inf.",
        ),
        (
            Settings {
                fisher_pry_k: Some(0.0),
                ..Settings::default()
            },
            "K for the Fisher–Pry view must be a positive number; it is 0.",
        ),
    ];
    for (settings, want) in cases {
        let e = analyse(DEMO_TEXT, &settings).unwrap_err();
        assert_eq!(e.message, want);
        assert_eq!(e.line, None);
    }
    // The edges of the ranges are allowed; no value means the default.
    for settings in [
        Settings {
            replicates: Some(f64::from(MAX_REPLICATES)),
            seed: Some(MAX_SEED as f64),
            horizon: 0.0,
            ..Settings::default()
        },
        Settings {
            replicates: None,
            seed: None,
            horizon: MAX_HORIZON,
            ..Settings::default()
        },
    ] {
        let a = analyse(DEMO_TEXT, &settings).unwrap();
        let b = start_bootstrap(&a).unwrap();
        let want = settings.replicates.map_or(1000, |r| r as usize);
        assert_eq!(b.options().replicates, want);
    }
}

/// The page's JSON settings deserialise whatever number was typed, so the
/// range check, not the deserialiser, speaks.
#[test]
fn settings_take_any_typed_number() {
    let s: Settings =
        serde_json::from_str(r#"{"replicates": 1e12, "seed": 1e20, "horizon": -4}"#).unwrap();
    assert_eq!(s.replicates, Some(1e12));
    assert!(check_settings(&s).is_err());
    let s: Settings = serde_json::from_str(r#"{"replicates": null, "seed": 7}"#).unwrap();
    assert_eq!((s.replicates, s.seed), (None, Some(7.0)));
}

/// The exported table, opened again, is the same series: the same times
/// (on the same calendar) and values, read from its time and observed
/// columns, with the forecast rows set aside and counted in a warning.
/// `parse_series` and `analyse` are both checked; the original series is
/// the reference.
fn assert_export_reads_back(a: &Analysis) {
    let csv = a.table_csv();
    let forecast_rows = csv.lines().count() - 1 - a.series.times.len();
    assert!(forecast_rows > 0);
    assert!(is_table_export(&csv));
    let back = parse_series(&csv, &ParseOptions::default()).unwrap();
    assert_eq!(back.times, a.series.times);
    assert_eq!(back.values, a.values);
    assert_eq!(back.axis, a.series.axis);
    assert_eq!(back.value_name, "observed");
    let w = back
        .warnings
        .iter()
        .find(|w| w.code == WarningCode::ExportForecastRowsSetAside)
        .expect("a warning for the forecast rows");
    assert!(
        w.message
            .contains(&format!("{forecast_rows} forecast rows")),
        "{}",
        w.message
    );
    assert!(!back
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::MissingValuesSkipped));
    let again = analyse(&csv, &Settings::default()).unwrap();
    assert!(again.multi.is_none(), "one series, not several");
    assert_eq!(again.series.times, a.series.times);
    assert_eq!(again.values, a.values);
    let k = |x: &Analysis| x.fit.param("K").unwrap().estimate;
    assert_eq!(k(&again), k(a));
}

#[test]
fn the_exported_table_opens_again_as_the_same_series() {
    // Weekly dates (the demo).
    assert_export_reads_back(&demo());
    // Plain numbers, negative and fractional times: the time column is the
    // exact number. Exact logistic K = 100, r = 0.5, t0 = -3.
    let text: String = std::iter::once("t,y\n".to_string())
        .chain((0..25).map(|i| {
            let t = -15.25 + 0.75 * f64::from(i);
            format!("{t},{}\n", 100.0 / (1.0 + (-0.5 * (t + 3.0)).exp()))
        }))
        .collect();
    assert_export_reads_back(&analyse(&text, &Settings::default()).unwrap());
    // A monthly series of the several-series demo, as the page shows it.
    let settings = Settings {
        series: Some(2),
        ..Settings::default()
    };
    let a = analyse(DEMO_MULTI_TEXT, &settings).unwrap();
    assert!(a.multi.is_some());
    assert_eq!(a.series.time_unit(), "month");
    assert_export_reads_back(&a);
}

/// The page reads, says what it fits, then fits; each section answers on
/// its own, tagged with its name, and equals the section read directly.
#[test]
fn read_then_fit_then_sections() {
    let read = prepare(DEMO_TEXT, &Settings::default()).unwrap();
    let n = read.points();
    assert_eq!(
        read.fitting(),
        format!("Fitting {} points…", numbers::number(n as f64))
    );
    let a = read.analyse().unwrap();
    assert_eq!(a.view.stats.n, n);
    for s in Section::ALL {
        assert_eq!(Section::from_name(s.name()), Some(s));
        let json = serde_json::to_value(a.section(s)).unwrap();
        assert_eq!(json["section"], s.name());
    }
    assert_eq!(
        a.section(Section::Comparison),
        SectionView::Comparison(a.comparison_view())
    );
    assert_eq!(
        a.section(Section::Drift),
        SectionView::Drift {
            rows: a.drift().len()
        }
    );
    // Bad data fails at the read, naming the line, before any fit.
    let e = prepare("t,y\n1,2\n2,x\n", &Settings::default()).unwrap_err();
    assert_eq!(e.line, Some(3));
}

#[test]
fn the_answer_card_carries_the_fits_numbers() {
    let a = demo();
    let ans = a.view.answer.as_ref().expect("an answer");
    let k = ans.lines.iter().find(|l| l.key == "saturation").unwrap();
    assert_eq!(k.number, Some(a.fit.param("K").unwrap().estimate));
    let t0 = ans.lines.iter().find(|l| l.key == "midpoint").unwrap();
    assert_eq!(t0.number, Some(a.fit.param("t0").unwrap().estimate));
    // The page's default milestone share is 90% of K.
    let m = ans.lines.iter().find(|l| l.key == "milestone").unwrap();
    assert_eq!(m.label, "90% of K reached");
    assert!(a.view.data_summary.starts_with(&format!("{} ", a.fit.n)));
}

#[test]
fn each_chart_has_its_numbers_as_a_table() {
    let a = demo();
    let curve = chart_table(&a, "curve");
    assert_eq!(curve.headers.len(), 4);
    // Every observation, then the forecast periods.
    assert!(curve.rows.len() > a.fit.n);
    assert!(curve.rows.iter().all(|r| r.len() == 4));
    for chart in [
        "residuals",
        "rate",
        "qq",
        "drift",
        "fisher-pry",
        "symmetry",
        "linear",
    ] {
        let t = chart_table(&a, chart);
        assert!(!t.rows.is_empty(), "{chart}");
        assert!(t.rows.iter().all(|r| r.len() == t.headers.len()), "{chart}");
    }
}

/// The drift chart's numbers say what the chart draws: a cutoff whose
/// data do not determine K reads "not determined" and "at least …",
/// never the meaningless estimate. The first ten weeks of the demo end
/// before its inflection, so their early cutoffs do not determine K.
#[test]
fn the_drift_table_gives_an_undetermined_k_as_at_least() {
    let early: String = DEMO_TEXT
        .lines()
        .take(11)
        .map(|l| format!("{l}\n"))
        .collect();
    let a = analyse(&early, &Settings::default()).unwrap();
    let open: Vec<f64> = a
        .drift()
        .iter()
        .filter_map(|r| r.result.as_ref().ok())
        .filter_map(|d| d.saturation_at_least("K"))
        .collect();
    assert!(!open.is_empty(), "some cutoff leaves K open");
    let t = chart_table(&a, "drift");
    let rows: Vec<&Vec<String>> = t.rows.iter().filter(|r| r[2] == "not determined").collect();
    assert_eq!(rows.len(), open.len());
    for (r, lo) in rows.iter().zip(&open) {
        assert_eq!(r[3], format!("at least {}", numbers::number(*lo)));
    }
}
