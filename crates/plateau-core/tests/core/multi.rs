//! Several series: the invented regional demo (demo-data/README.md lists
//! the true parameters, drawn by `cargo xtask demo-data` with seed 707).
//! Each region's logistic fit must recover its true K, r and t0 within the
//! 95% intervals, and the wide and long renderings must read the same.

use plateau_core::data::{parse_multi, Layout, MultiOptions, SeriesSet};
use plateau_core::{fit, Model};
use std::path::PathBuf;

/// (region, K, r, t0) as in demo-data/README.md: r per year and t0 on
/// the axis year + (month − 1) / 12. Plateau counts months since 2000-01,
/// so its r is r / 12 and its t0 is 12 (t0 − 2000) (the same curve, the
/// axis scaled by 12 and shifted: an analytic change of variable).
const TRUTH: [(&str, f64, f64, f64); 4] = [
    ("Brackenridge", 42000.0, 1.4, 2022.5),
    ("Corrie Haven", 18000.0, 2.0, 2022.75),
    ("Dunmere", 65000.0, 0.9, 2023.0),
    ("Eastwold", 9000.0, 2.6, 2022.25),
];

fn read(name: &str) -> SeriesSet {
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("../../demo-data")
        .join(name);
    let text = std::fs::read_to_string(&path).expect("demo file");
    parse_multi(&text, &MultiOptions::default()).expect("demo file parses")
}

#[test]
fn regional_demo_recovers_each_regions_truth_within_its_interval() {
    let set = read("regional_adoption_long.csv");
    assert_eq!(set.layout, Layout::Long);
    assert_eq!(set.series.len(), TRUTH.len());
    for (ns, (name, k, r_year, t0_year)) in set.series.iter().zip(TRUTH) {
        let (r, t0) = (r_year / 12.0, 12.0 * (t0_year - 2000.0));
        assert_eq!(ns.name, name);
        assert_eq!(ns.series.time_unit(), "month");
        assert_eq!(ns.series.times.len(), 60);
        let f = fit(&ns.series, Model::Logistic, &Default::default()).expect("fit");
        assert!(f.converged, "{name}");
        for (param, truth) in [("K", k), ("r", r), ("t0", t0)] {
            let (lo, hi) = f.param(param).and_then(|p| p.ci95).expect("interval");
            assert!(
                lo <= truth && truth <= hi,
                "{name}: true {param} = {truth} outside [{lo}, {hi}]"
            );
        }
        // The logistic's 10→90 duration is ln(81)/r (analytic); its
        // interval must hold the truth's value too.
        let (lo, hi) = plateau_core::analysis::duration_10_90(&f)
            .and_then(|d| d.ci95)
            .expect("duration interval");
        let truth = 81f64.ln() / r;
        assert!(
            lo <= truth && truth <= hi,
            "{name}: 10-90 {truth} outside [{lo}, {hi}]"
        );
    }
}

#[test]
fn wide_and_long_demo_files_hold_the_same_series() {
    let long = read("regional_adoption_long.csv");
    let wide = read("regional_adoption_wide.csv");
    assert_eq!(wide.layout, Layout::Wide);
    assert_eq!(long.series.len(), wide.series.len());
    for (a, b) in long.series.iter().zip(&wide.series) {
        assert_eq!(a.name, b.name);
        assert_eq!(a.series.times, b.series.times);
        assert_eq!(a.series.values, b.series.values);
    }
}
