//! Profile-likelihood intervals against an independent computation:
//! NIST StRD Rat42 profiled with scipy (`tests/reference/profile_rat42.py`,
//! output checked in as `profile_rat42.json`: scipy.optimize.least_squares
//! refits from the certified values and brentq for the crossings).

use plateau_core::fit::{fit_xy, CiMethod, FitOptions};
use plateau_core::Model;
use std::path::PathBuf;

fn reference_dir() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../tests/reference")
}

/// Rat42's (x, y) from the NIST file.
fn rat42() -> (Vec<f64>, Vec<f64>) {
    let text = std::fs::read_to_string(reference_dir().join("nist/Rat42.dat")).unwrap();
    let (mut x, mut y) = (vec![], vec![]);
    let mut data = false;
    for line in text.lines() {
        let w: Vec<&str> = line.split_whitespace().collect();
        if data && w.len() == 2 {
            y.push(w[0].parse().unwrap());
            x.push(w[1].parse().unwrap());
        } else if line.starts_with("Data:") && w.get(1) == Some(&"y") {
            data = true;
        }
    }
    (x, y)
}

#[test]
fn rat42_profile_intervals_match_scipy() {
    let reference: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(reference_dir().join("profile_rat42.json")).unwrap(),
    )
    .unwrap();
    let (x, y) = rat42();
    let f = fit_xy(&x, &y, Model::Logistic, &FitOptions::default()).unwrap();
    assert_eq!(f.dof as u64, reference["dof"].as_u64().unwrap());
    for name in ["K", "r", "t0"] {
        let p = f.param(name).unwrap();
        let iv = p.interval.unwrap();
        assert_eq!(iv.method, CiMethod::Profile, "{name}");
        let want = reference["profile95"][name].as_array().unwrap();
        for (got, want) in [iv.lo.unwrap(), iv.hi.unwrap()].iter().zip(want) {
            let want = want.as_f64().unwrap();
            let rel = (got - want).abs() / want.abs();
            println!(
                "Rat42 {name}: plateau {got:.10}, scipy {want:.10}, relative difference {rel:.1e}"
            );
            assert!(rel < 1e-7, "{name}: {got} vs scipy {want}");
        }
    }
}
