//! Calibration of the 95% intervals by seeded simulation (the usual way
//! to check an interval's coverage: common practice).
//!
//! * Series that run well past the inflection, i.i.d. Gaussian noise: the
//!   profile interval for K must cover the true K in 93–97% of
//!   `REPS_PAST` replicates. With 2000 replicates the binomial standard
//!   deviation of a true 95% coverage is 0.49 points, so the band is about
//!   ±4 standard deviations. The asymptotic interval's coverage is
//!   measured and printed too, but not asserted: it is only as good as the
//!   quadratic approximation, which is what is being compared.
//! * Series that stop well before the inflection: in at least 95% of the
//!   replicates the fit must either flag `saturation_not_identified` or
//!   give an interval that contains the true K.
//!
//! `cargo test -p plateau-core --test core calibration -- --nocapture`
//! prints the measured rates.

use plateau_core::fit::{fit_xy, FitOptions};
use plateau_core::{Model, WarningCode};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

const REPS_PAST: usize = 2000;
const REPS_EARLY: usize = 1000;

fn logistic(k: f64, r: f64, t0: f64, t: f64) -> f64 {
    k / (1.0 + (-r * (t - t0)).exp())
}

#[test]
fn profile_interval_for_k_covers_95_percent_past_the_inflection() {
    let (k, r, t0) = (1000.0, 0.3, 15.0);
    let ts: Vec<f64> = (0..=30).map(|i| i as f64).collect();
    let noise = Normal::new(0.0, 25.0).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(20261203);
    let (mut profile_hits, mut asym_hits, mut asym_count, mut flagged, mut fitted) =
        (0, 0, 0, 0, 0);
    let mut widths = (0.0, 0.0);
    for _ in 0..REPS_PAST {
        let y: Vec<f64> = ts
            .iter()
            .map(|t| logistic(k, r, t0, *t) + noise.sample(&mut rng))
            .collect();
        let f = fit_xy(&ts, &y, Model::Logistic, &FitOptions::default()).unwrap();
        fitted += 1;
        let p = f.param("K").unwrap();
        flagged += usize::from(f.has_warning(WarningCode::SaturationNotIdentified));
        // Every replicate counts: a missing interval is a miss.
        if p.interval.is_some_and(|iv| iv.contains(k)) {
            profile_hits += 1;
        }
        if let (Some(iv), Some((lo, hi))) = (p.interval, p.ci95) {
            if let (Some(a), Some(b)) = (iv.lo, iv.hi) {
                widths.0 += b - a;
                widths.1 += hi - lo;
            }
        }
        if let Some((lo, hi)) = p.ci95 {
            asym_count += 1;
            asym_hits += usize::from(lo <= k && k <= hi);
        }
    }
    let profile = profile_hits as f64 / fitted as f64;
    let asym = asym_hits as f64 / asym_count.max(1) as f64;
    println!(
        "past the inflection, {fitted} replicates: profile 95% interval for K covers {:.1}%, \
         asymptotic {:.1}% ({asym_count} with an interval); K flagged in {flagged}; \
         mean width profile {:.2}, asymptotic {:.2}",
        100.0 * profile,
        100.0 * asym,
        widths.0 / fitted as f64,
        widths.1 / fitted as f64
    );
    assert!(asym_count > 0 && (0.0..=1.0).contains(&asym));
    assert!(
        (0.93..=0.97).contains(&profile),
        "profile coverage {profile}"
    );
}

#[test]
fn early_series_flag_k_or_cover_it() {
    let (k, r, t0) = (1000.0, 0.3, 20.0);
    // Data end at t = 10, ten units (three 1/r) before the inflection; the
    // last value is about 5% of K.
    let ts: Vec<f64> = (0..=10).map(|i| i as f64).collect();
    let noise = Normal::new(0.0, 1.0).unwrap();
    let mut rng = ChaCha8Rng::seed_from_u64(7_2026);
    let (mut ok, mut flagged, mut covered, mut failed) = (0, 0, 0, 0);
    for _ in 0..REPS_EARLY {
        let y: Vec<f64> = ts
            .iter()
            .map(|t| logistic(k, r, t0, *t) + noise.sample(&mut rng))
            .collect();
        let Ok(f) = fit_xy(&ts, &y, Model::Logistic, &FitOptions::default()) else {
            failed += 1;
            continue;
        };
        let p = f.param("K").unwrap();
        let flag = f.has_warning(WarningCode::SaturationNotIdentified);
        let cover = p.interval.is_some_and(|iv| iv.contains(k));
        flagged += usize::from(flag);
        covered += usize::from(cover);
        ok += usize::from(flag || cover);
        // Flagged means no upper bound is claimed for K.
        if flag {
            assert!(!p.identified && p.interval.is_none_or(|iv| iv.hi.is_none()));
        }
    }
    let rate = ok as f64 / REPS_EARLY as f64;
    println!(
        "before the inflection, {REPS_EARLY} replicates: flagged or covered {:.1}% \
         (flagged {flagged}, interval contains K {covered}, fit failed {failed})",
        100.0 * rate
    );
    assert!(rate >= 0.95, "flag-or-cover rate {rate}");
}
