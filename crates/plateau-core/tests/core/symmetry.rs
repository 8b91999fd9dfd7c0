//! The symmetry test's size and power, by simulation (a seeded Monte Carlo
//! check of the test's calibration, common practice): series drawn from a
//! logistic must be called asymmetric at about the test's nominal 5%, and
//! series drawn from a Gompertz curve must be called asymmetric, late phase
//! slower, nearly always at low noise.
//!
//! Design: n = 30 equally spaced times t = 0..29; logistic K = 1000,
//! r = 0.3, t0 = 14.5 (midpoint at the centre of the window); Gompertz
//! K = 1000, r = 0.2, t0 = 10 (inflection at K/e); additive normal noise
//! with sd 1% and 3% of K; 200 replicates per (model, noise) from
//! ChaCha8 seeds 1..=200 (+ 1000 per noise level). The rates are printed
//! (`cargo test -p plateau-core --test core symmetry -- --nocapture`) and
//! listed in DEVELOPERS.md.
//!
//! Bounds: with 200 replicates the standard error of a rate near 5% is
//! about 1.5%, so the false-flag rate must lie in [1%, 10%]; the Gompertz
//! series must be flagged (with the right direction) in at least 95% of
//! replicates at 1% noise and 85% at 3% noise.

use plateau_core::diagnostics::{symmetry_test, Asymmetry};
use plateau_core::fit::FitOptions;
use plateau_core::Model;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

const REPLICATES: u64 = 200;

struct Rates {
    flagged: usize,
    late_slower: usize,
    no_test: usize,
    by_fallback: usize,
}

fn run(model: Model, p: &[f64], noise_sd: f64, seed_base: u64) -> Rates {
    let t: Vec<f64> = (0..30).map(f64::from).collect();
    let clean: Vec<f64> = t.iter().map(|&ti| model.eval(p, ti)).collect();
    let normal = Normal::new(0.0, noise_sd).unwrap();
    let mut r = Rates {
        flagged: 0,
        late_slower: 0,
        no_test: 0,
        by_fallback: 0,
    };
    for seed in 1..=REPLICATES {
        let mut rng = ChaCha8Rng::seed_from_u64(seed_base + seed);
        let y: Vec<f64> = clean.iter().map(|v| v + normal.sample(&mut rng)).collect();
        let Ok(test) = symmetry_test(&t, &y, &FitOptions::default()) else {
            r.no_test += 1;
            continue;
        };
        match test.asymmetric {
            None => r.no_test += 1,
            Some(true) => {
                r.flagged += 1;
                if test.direction == Some(Asymmetry::LateSlower) {
                    r.late_slower += 1;
                }
            }
            Some(false) => {}
        }
        if test.decided_by == Some("gompertz_aicc") {
            r.by_fallback += 1;
        }
    }
    r
}

#[test]
fn false_flag_rate_and_power() {
    let n = REPLICATES as f64;
    let mut lines = vec![];
    for (noise, min_power) in [(0.01, 0.95), (0.03, 0.85)] {
        let sd = noise * 1000.0;
        let logi = run(Model::Logistic, &[1000.0, 0.3, 14.5], sd, 0);
        let gomp = run(Model::Gompertz, &[1000.0, 0.2, 10.0], sd, 1000);
        let size = logi.flagged as f64 / n;
        let power = gomp.late_slower as f64 / n;
        lines.push(format!(
            "noise sd {:.0}% of K: logistic flagged {:.1}% (no test {}, fallback {}); \
             Gompertz flagged {:.1}%, late phase slower {:.1}% (no test {}, fallback {})",
            noise * 100.0,
            100.0 * size,
            logi.no_test,
            logi.by_fallback,
            100.0 * gomp.flagged as f64 / n,
            100.0 * power,
            gomp.no_test,
            gomp.by_fallback,
        ));
        println!("{}", lines.last().unwrap());
        assert!(
            (0.01..=0.10).contains(&size),
            "false-flag rate {size} far from the nominal 5%"
        );
        assert!(power >= min_power, "power {power} below {min_power}");
    }
}
