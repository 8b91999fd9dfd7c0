//! Honest verdicts on ill-posed data: data that show no S-curve are
//! flagged (`looks_linear`, `no_trend`), the recommendation says no S-curve
//! is supported, and real S-curves stay unflagged.
//!
//! References: analytic facts (an exact straight line is fitted by a line
//! with RSS 0, so no curve that is not a line can match it; for 10, 20,
//! 10, 20, … at t = 1..20 the least-squares line has slope
//! Σ(t − t̄)(y − ȳ) / Σ(t − t̄)² = 50 / 665 ≈ 0.075 against a swing of 10,
//! and a constant explains them as well as any trend), and seeded
//! simulation of logistic series for the false-alarm
//! rate (`cargo test -p plateau-core --test core ill_posed -- --nocapture`
//! prints the measured rates).

use super::scipy::{decimal_year, load, root};
use plateau_core::compare::{compare, recommend, Reason};
use plateau_core::fit::{fit_xy, Fit, FitOptions, IntervalMethod};
use plateau_core::{Model, WarningCode};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

fn flagged(f: &Fit) -> bool {
    f.has_warning(WarningCode::NoTrend) || f.has_warning(WarningCode::LooksLinear)
}

fn fit(t: &[f64], y: &[f64], model: Model) -> Fit {
    fit_xy(t, y, model, &FitOptions::default()).unwrap()
}

/// The three reproductions of the issue.
fn exact_line() -> (Vec<f64>, Vec<f64>) {
    let t: Vec<f64> = (1..=20).map(f64::from).collect();
    let y = t.iter().map(|v| 3.0 * v + 10.0).collect();
    (t, y)
}

fn alternating() -> (Vec<f64>, Vec<f64>) {
    let t: Vec<f64> = (1..=20).map(f64::from).collect();
    let y = (1..=20)
        .map(|i| if i % 2 == 1 { 10.0 } else { 20.0 })
        .collect();
    (t, y)
}

fn trendless(seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let noise = Normal::new(0.0, 5.0).unwrap();
    let t: Vec<f64> = (1..=30).map(f64::from).collect();
    let y = t.iter().map(|_| 100.0 + noise.sample(&mut rng)).collect();
    (t, y)
}

#[test]
fn an_exact_line_looks_linear_to_every_s_curve() {
    let (t, y) = exact_line();
    for model in [Model::Logistic, Model::Gompertz, Model::Richards] {
        let f = fit(&t, &y, model);
        assert!(
            f.has_warning(WarningCode::LooksLinear),
            "{}: {:?}",
            model.name(),
            f.warnings
        );
        assert!(!f.has_warning(WarningCode::NoTrend), "{}", model.name());
    }
}

#[test]
fn alternating_and_trendless_values_have_no_trend() {
    let (t, y) = alternating();
    for model in [Model::Logistic, Model::Gompertz] {
        let f = fit(&t, &y, model);
        assert!(f.has_warning(WarningCode::NoTrend), "{:?}", f.warnings);
    }
    for seed in [1, 2, 3] {
        let (t, y) = trendless(seed);
        let f = fit(&t, &y, Model::Logistic);
        assert!(
            f.has_warning(WarningCode::NoTrend),
            "seed {seed}: {:?}",
            f.warnings
        );
    }
}

#[test]
fn the_recommendation_says_no_s_curve_is_supported() {
    for (name, (t, y)) in [
        ("line", exact_line()),
        ("alternating", alternating()),
        ("trendless", trendless(1)),
    ] {
        let entries = compare(&t, &y, &Model::ALL, &FitOptions::default());
        let rec = recommend(&entries, &t, &y);
        assert_eq!(rec.model, None, "{name}: {:?}", rec.reasons);
        assert!(
            matches!(rec.reasons[0], Reason::NoSCurve { .. }),
            "{name}: {:?}",
            rec.reasons
        );
    }
}

/// The demo S-curves (see demo-data/README.md for their true curves).
#[test]
fn demo_s_curves_are_not_flagged() {
    let (t, y) = load("demo-data/aldermoor_subscribers.csv", false);
    let (th, yh) = load("demo-data/harrow_fields_capacity.csv", false);
    let (tw, yw) = load("demo-data/wrenlow_two_waves.csv", false);
    let (tl, yl) = load("demo-data/lumen_cell_adoptions.csv", false);
    let running: Vec<f64> = yl
        .iter()
        .scan(0.0, |s, v| {
            *s += v;
            Some(*s)
        })
        .collect();
    let text = std::fs::read_to_string(root().join("demo-data/tariff_share_monthly.csv")).unwrap();
    let (mut tt, mut yt) = (vec![], vec![]);
    for line in text.lines().skip(1).filter(|l| !l.is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        tt.push(decimal_year(a));
        yt.push(b.parse::<f64>().unwrap());
    }
    for (name, model, t, y) in [
        ("aldermoor", Model::Logistic, &t, &y),
        ("harrow_fields", Model::Gompertz, &th, &yh),
        ("tariff_share", Model::Logistic4, &tt, &yt),
        ("wrenlow", Model::Bilogistic, &tw, &yw),
        ("lumen_cell", Model::Bass, &tl, &running),
    ] {
        let f = fit(t, y, model);
        assert!(!flagged(&f), "{name}: {:?}", f.warnings);
        let entries = compare(t, y, &Model::ALL, &FitOptions::default());
        let rec = recommend(&entries, t, y);
        assert!(rec.model.is_some(), "{name}: {:?}", rec.reasons);
        assert!(!matches!(rec.reasons[0], Reason::NoSCurve { .. }), "{name}");
    }
}

/// `identified` is false for any parameter whose interval is open on a
/// side: on trendless data the profiles of r and t0 do not close.
#[test]
fn open_intervals_are_not_identified() {
    let mut open_seen = 0;
    for seed in 1..=5 {
        let (t, y) = trendless(seed);
        for model in [Model::Logistic, Model::Gompertz] {
            let f = fit(&t, &y, model);
            for p in f.params.iter().filter(|p| !p.fixed) {
                let open = p
                    .interval
                    .is_none_or(|iv| iv.lo.is_none() || iv.hi.is_none());
                if open {
                    open_seen += usize::from(p.name == "r" || p.name == "t0");
                    assert!(!p.identified, "seed {seed} {} {}", model.name(), p.name);
                }
            }
        }
    }
    // The check above must have had something to check.
    assert!(open_seen >= 5, "only {open_seen} open r/t0 intervals");
}

fn logistic(k: f64, r: f64, t0: f64, t: f64) -> f64 {
    k / (1.0 + (-r * (t - t0)).exp())
}

/// The time at which the logistic reaches the fraction `u` of K.
fn time_at(r: f64, t0: f64, u: f64) -> f64 {
    t0 + (u / (1.0 - u)).ln() / r
}

/// One simulated logistic series: K = 1000, r in [0.1, 1], n in 15..=60
/// evenly spaced points from where the curve is at `u0` of K to where it
/// is at `u1`, Gaussian noise with sd 1–5% of K.
fn simulate(rng: &mut ChaCha8Rng, u0: (f64, f64), u1: (f64, f64)) -> (Vec<f64>, Vec<f64>) {
    let k = 1000.0;
    let r = rng.random_range(0.1..1.0);
    let t0 = 50.0;
    let n = rng.random_range(15..=60);
    let sd = k * rng.random_range(0.01..0.05);
    let a = time_at(r, t0, rng.random_range(u0.0..u0.1));
    let b = time_at(r, t0, rng.random_range(u1.0..u1.1));
    let noise = Normal::new(0.0, sd).unwrap();
    let t: Vec<f64> = (0..n)
        .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
        .collect();
    let y = t
        .iter()
        .map(|&ti| logistic(k, r, t0, ti) + noise.sample(rng))
        .collect();
    (t, y)
}

const REPS: usize = 2000;

/// The share of `REPS` simulated series (windows `u0` → `u1` of K) whose
/// logistic fit is flagged, and how many were fitted.
fn flag_rate(seed: u64, u0: (f64, f64), u1: (f64, f64), code: Option<WarningCode>) -> (f64, usize) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let opts = FitOptions {
        intervals: IntervalMethod::Asymptotic,
        ..Default::default()
    };
    let (mut hits, mut fitted) = (0, 0);
    for _ in 0..REPS {
        let (t, y) = simulate(&mut rng, u0, u1);
        if let Ok(f) = fit_xy(&t, &y, Model::Logistic, &opts) {
            fitted += 1;
            hits += usize::from(match code {
                Some(c) => f.has_warning(c),
                None => flagged(&f),
            });
        }
    }
    (hits as f64 / REPS as f64, fitted)
}

/// False alarms on real S-curves. Windows run from where the curve is at
/// 2–20% of K to where it is at 80–98% (the inflection inside, and some of
/// the bend at both ends), and, for the second rate, from 2–10% to 90–98%.
/// With 2000 replicates the binomial standard deviation of a 3% rate is
/// 0.38 points: the bound of 5% leaves 5 of them (measured: 2.95%); for
/// the wide windows (measured: 0.5%) the bound is 2%.
#[test]
fn false_alarm_rate_on_simulated_s_curves() {
    let (rate, fitted) = flag_rate(20261205, (0.02, 0.2), (0.8, 0.98), None);
    println!(
        "S-curves (2–20% → 80–98% of K, n 15–60, noise 1–5% of K): {:.2}% flagged, {fitted} of {REPS} fitted",
        100.0 * rate
    );
    assert_eq!(fitted, REPS);
    assert!(rate <= 0.05, "false-alarm rate {rate}");
    let (rate, fitted) = flag_rate(20261207, (0.02, 0.1), (0.9, 0.98), None);
    println!(
        "S-curves (2–10% → 90–98% of K): {:.2}% flagged, {fitted} of {REPS} fitted",
        100.0 * rate
    );
    assert_eq!(fitted, REPS);
    assert!(rate <= 0.02, "false-alarm rate {rate}");
}

/// Power: series with no trend at all (a logistic seen over a window of
/// 10⁻⁴ of K around its midpoint, i.e. a constant plus 1–5% noise) are
/// flagged `no_trend` in at least 85% of replicates (measured: 88.5%).
/// Early-phase series (from 1–10% of K to 20–45%, before the inflection)
/// that look linear are flagged honestly; that rate is measured and
/// printed, not bounded (it depends on how much of the bend is shown).
#[test]
fn trendless_power_and_early_phase_rate() {
    let (power, _) = flag_rate(
        20261208,
        (0.5, 0.5001),
        (0.5002, 0.5003),
        Some(WarningCode::NoTrend),
    );
    println!("trendless series flagged no_trend: {:.1}%", 100.0 * power);
    assert!(power >= 0.85, "no_trend power {power}");
    let (linear, fitted) = flag_rate(
        20261206,
        (0.01, 0.1),
        (0.2, 0.45),
        Some(WarningCode::LooksLinear),
    );
    println!(
        "early phase (1–10% → 20–45% of K): looks_linear {:.1}%, {fitted} of {REPS} fitted",
        100.0 * linear
    );
    assert!(fitted > REPS * 9 / 10);
}
