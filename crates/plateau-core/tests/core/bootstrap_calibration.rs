//! Calibration of the bootstrap percentile interval: over many simulated
//! series with known parameters, the 95% interval for K should contain the
//! true K in about 95% of them.
//!
//! Design: a logistic (K = 1000, r = 0.5, t0 = 10) observed at t = 0..24,
//! so the series passes the inflection and reaches about 92% of K, with
//! i.i.d. normal noise of sd 20; 500 series from fixed seeds, each with a
//! residual bootstrap of B = 1000. With 500 series the coverage estimate
//! has a binomial standard error of about 1 point at 95%, so the accepted
//! band 93–97% is two standard errors either side. The measured rates are
//! printed (`cargo test -p plateau-core --test core calibration -- --nocapture`).

use plateau_core::bootstrap::{Bootstrap, BootstrapOptions, Resampling};
use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::Model;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

const TRUE: [f64; 3] = [1000.0, 0.5, 10.0];
const SERIES: usize = 500;
const B: usize = 1000;

fn coverage(resampling: Resampling) -> ([f64; 3], [f64; 3], usize) {
    let t: Vec<f64> = (0..25).map(|i| i as f64).collect();
    let normal = Normal::new(0.0, 20.0).unwrap();
    let mut hits = [0usize; 3];
    let mut asym_hits = [0usize; 3];
    let mut failed = 0;
    for s in 0..SERIES {
        let mut rng = ChaCha8Rng::seed_from_u64(10_000 + s as u64);
        let y: Vec<f64> = t
            .iter()
            .map(|&ti| Model::Logistic.eval(&TRUE, ti) + normal.sample(&mut rng))
            .collect();
        let fit = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).expect("fit");
        let opts = BootstrapOptions {
            resampling,
            replicates: B,
            seed: 77 + s as u64,
        };
        let mut boot = Bootstrap::new(&fit, &t, &y, &opts).expect("bootstrap");
        boot.run();
        failed += boot.failed();
        for j in 0..3 {
            let (lo, hi) = boot.param_interval(j, 0.95).expect("interval");
            if lo <= TRUE[j] && TRUE[j] <= hi {
                hits[j] += 1;
            }
            let (alo, ahi) = fit.params[j].ci95.expect("ci95");
            if alo <= TRUE[j] && TRUE[j] <= ahi {
                asym_hits[j] += 1;
            }
        }
    }
    let rate = |h: [usize; 3]| h.map(|x| 100.0 * x as f64 / SERIES as f64);
    (rate(hits), rate(asym_hits), failed)
}

#[test]
fn bootstrap_percentile_interval_for_k_covers_the_true_k_about_95_percent() {
    for resampling in [Resampling::Residual, Resampling::Parametric] {
        let (boot, asym, failed) = coverage(resampling);
        println!(
            "{} bootstrap, {SERIES} series x B = {B}: coverage K {:.1}%, r {:.1}%, t0 {:.1}% \
             (Student-t asymptotic: K {:.1}%, r {:.1}%, t0 {:.1}%); failed refits {failed}",
            resampling.name(),
            boot[0],
            boot[1],
            boot[2],
            asym[0],
            asym[1],
            asym[2]
        );
        assert!(
            (93.0..=97.0).contains(&boot[0]),
            "{} bootstrap coverage of K {:.1}% is outside 93-97%",
            resampling.name(),
            boot[0]
        );
    }
}
