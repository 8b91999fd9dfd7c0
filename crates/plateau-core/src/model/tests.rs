use super::*;

fn sample_params(model: Model) -> Vec<f64> {
    match model {
        Model::Logistic | Model::Gompertz => vec![1000.0, 0.8, 10.0],
        Model::Logistic4 => vec![1000.0, 0.8, 10.0, 50.0],
        Model::Richards => vec![1000.0, 0.8, 10.0, 0.6],
        Model::Exponential => vec![3.0, 0.25],
        Model::Bass => vec![1000.0, 0.03, 0.4, 1.0],
        Model::Bilogistic => vec![600.0, 0.9, 6.0, 400.0, 0.5, 16.0],
    }
}

/// Analytic Jacobians against central finite differences, for every model
/// at times on both sides of t0 (standard practice for hand-written
/// derivatives).
#[test]
fn jacobians_match_finite_differences() {
    for model in Model::ALL {
        let p = sample_params(model);
        let mut grad = vec![0.0; p.len()];
        for t in [-5.0, 0.0, 3.0, 9.5, 10.0, 12.0, 25.0] {
            let y = model.eval_grad(&p, t, &mut grad);
            assert!((y - model.eval(&p, t)).abs() <= 1e-12 * y.abs().max(1.0));
            for j in 0..p.len() {
                let h = 1e-6 * p[j].abs().max(1.0);
                let mut up = p.clone();
                let mut dn = p.clone();
                up[j] += h;
                dn[j] -= h;
                let fd = (model.eval(&up, t) - model.eval(&dn, t)) / (2.0 * h);
                let tol = 1e-6 * fd.abs().max(1e-3 * y.abs().max(1.0));
                assert!(
                    (grad[j] - fd).abs() <= tol,
                    "{} d/d{} at t={t}: analytic {} vs fd {}",
                    model.name(),
                    model.param_names()[j],
                    grad[j],
                    fd
                );
            }
        }
    }
}

/// Logistic facts (common practice): y(t0) = K/2; point symmetry
/// y(2 t0 − t) = K − y(t); the 10%→90% time is ln(81)/r; the fastest growth
/// is rK/4 at t0.
#[test]
fn logistic_analytic_facts() {
    let (k, r, t0) = (2.5e6, 0.45, 2021.25);
    let p = [k, r, t0];
    let m = Model::Logistic;
    assert!((m.eval(&p, t0) - k / 2.0).abs() <= 1e-9 * k);
    for dt in [0.1, 1.0, 3.7, 10.0, 40.0] {
        let a = m.eval(&p, t0 - dt);
        let b = m.eval(&p, t0 + dt);
        assert!((a - (k - b)).abs() <= 1e-9 * k, "symmetry at dt={dt}");
    }
    // Invert y = q K for the 10% and 90% times by bisection, independent of
    // the closed form.
    let time_at = |q: f64| {
        let (mut lo, mut hi) = (t0 - 100.0, t0 + 100.0);
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if m.eval(&p, mid) < q * k {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    };
    let dur = time_at(0.9) - time_at(0.1);
    assert!((dur - 81f64.ln() / r).abs() < 1e-9, "10-90 duration {dur}");
    // Slope from the analytic gradient: dy/dt = −dy/dt0.
    let mut g = [0.0; 3];
    let slope = |t: f64, g: &mut [f64; 3]| {
        m.eval_grad(&p, t, g);
        -g[2]
    };
    let at_t0 = slope(t0, &mut g);
    assert!((at_t0 - r * k / 4.0).abs() <= 1e-9 * r * k);
    for dt in [-3.0, -0.5, -0.01, 0.01, 0.5, 3.0] {
        assert!(slope(t0 + dt, &mut g) < at_t0);
    }
}

/// Richards with ν = 1 is the logistic; as ν → 0 it tends to the Gompertz
/// curve with the same K, r, t0 (analytic facts of the family).
#[test]
fn richards_contains_logistic_and_gompertz() {
    for t in [-20.0, 0.0, 5.0, 10.0, 15.0, 40.0] {
        let lg = Model::Logistic.eval(&[1000.0, 0.8, 10.0], t);
        let rc = Model::Richards.eval(&[1000.0, 0.8, 10.0, 1.0], t);
        assert!((lg - rc).abs() <= 1e-10 * 1000.0, "t={t}: {lg} vs {rc}");
        let gz = Model::Gompertz.eval(&[1000.0, 0.8, 10.0], t);
        let rz = Model::Richards.eval(&[1000.0, 0.8, 10.0, 1e-7], t);
        assert!((gz - rz).abs() <= 1e-4 * 1000.0, "t={t}: {gz} vs {rz}");
    }
}

/// Gompertz: y(t0) = K/e at its inflection (analytic fact).
#[test]
fn gompertz_value_at_inflection() {
    let y = Model::Gompertz.eval(&[80.0, 0.4, 3.0], 3.0);
    assert!((y - 80.0 / std::f64::consts::E).abs() < 1e-12);
}

/// No overflow far in either tail.
#[test]
fn tails_are_finite() {
    for model in Model::ALL.into_iter().filter(|m| m.saturates()) {
        let p = sample_params(model);
        let mut g = vec![0.0; p.len()];
        for t in [-1e6, -1e3, 1e3, 1e6] {
            let y = model.eval_grad(&p, t, &mut g);
            assert!(
                y.is_finite() && g.iter().all(|v| v.is_finite()),
                "{} at {t}",
                model.name()
            );
        }
    }
}

#[test]
fn names_round_trip() {
    for m in Model::ALL {
        assert_eq!(Model::from_name(m.name()), Some(m));
        assert_eq!(m.domains().len(), m.n_params());
    }
    assert_eq!(Model::from_name("Logistic"), Some(Model::Logistic));
    assert_eq!(Model::from_name("weibull"), None);
}

/// Bass with q = 0 is the exponential saturation `m (1 − e^(−p (t − tau)))`
/// (common practice: pure innovation, no imitation).
#[test]
fn bass_without_imitation_is_exponential_saturation() {
    let (m, p, tau) = (500.0, 0.15, 2.0);
    for t in [2.0, 2.5, 4.0, 10.0, 40.0] {
        let y = Model::Bass.eval(&[m, p, 0.0, tau], t);
        let want = m * (1.0 - (-p * (t - tau)).exp());
        assert!((y - want).abs() <= 1e-12 * m, "t={t}: {y} vs {want}");
    }
}

/// At the Bass peak time t* = tau + ln(q/p)/(p+q) (q > p): F(t*) = (q − p)/(2q),
/// the rate is m (p+q)²/(4q), and it is the rate's maximum (common practice;
/// Bass 1969).
#[test]
fn bass_peak_facts() {
    let v = [1000.0, 0.03, 0.4, 1.0];
    let (m, p, q) = (v[0], v[1], v[2]);
    let ts = crate::model::bass_peak_time(&v);
    let f = Model::Bass.eval(&v, ts) / m;
    assert!((f - (q - p) / (2.0 * q)).abs() < 1e-12, "F(t*) {f}");
    let peak = Model::Bass.slope(&v, ts);
    assert!((peak - m * (p + q).powi(2) / (4.0 * q)).abs() < 1e-9 * peak);
    for dt in [-2.0, -0.3, 0.3, 2.0] {
        assert!(Model::Bass.slope(&v, ts + dt) < peak);
    }
    // Zero before launch, with a zero gradient.
    let mut g = [0.0; 4];
    assert_eq!(Model::Bass.eval_grad(&v, 0.5, &mut g), 0.0);
    assert_eq!(g, [0.0; 4]);
}

/// For t > tau the Bass curve is the logistic with a floor: K = m,
/// r = p + q, t0 = tau + ln(q/p)/(p+q), L = −m p/q (algebraic identity,
/// F = ((1 + c)/(1 + c e^(−b s)) − 1)/c with c = q/p, b = p + q).
#[test]
fn bass_is_a_floored_logistic_after_launch() {
    let (m, p, q, tau): (f64, f64, f64, f64) = (1000.0, 0.03, 0.4, 1.0);
    let l4 = [m, p + q, tau + (q / p).ln() / (p + q), -m * p / q];
    for t in [1.01, 2.0, 7.0, 12.0, 30.0] {
        let a = Model::Bass.eval(&[m, p, q, tau], t);
        let b = Model::Logistic4.eval(&l4, t);
        assert!((a - b).abs() <= 1e-10 * m, "t={t}: {a} vs {b}");
    }
}

/// A bi-logistic with one pulse of K = 0 is the logistic of the other
/// (Meyer 1994, by construction).
#[test]
fn bilogistic_with_empty_pulse_is_logistic() {
    for t in [-20.0, 0.0, 5.0, 10.0, 15.0, 40.0] {
        let lg = Model::Logistic.eval(&[1000.0, 0.8, 10.0], t);
        let a = Model::Bilogistic.eval(&[1000.0, 0.8, 10.0, 0.0, 0.3, 30.0], t);
        let b = Model::Bilogistic.eval(&[0.0, 0.3, -5.0, 1000.0, 0.8, 10.0], t);
        assert_eq!(lg, a, "t={t}");
        assert_eq!(lg, b, "t={t}");
    }
}

/// The analytic slope against a central difference of the curve.
#[test]
fn slope_matches_finite_differences() {
    for model in Model::ALL {
        let p = sample_params(model);
        for t in [-3.0, 4.0, 9.5, 13.0, 20.0] {
            let h = 1e-5;
            let fd = (model.eval(&p, t + h) - model.eval(&p, t - h)) / (2.0 * h);
            let s = model.slope(&p, t);
            assert!(
                (s - fd).abs() <= 1e-5 * fd.abs().max(1.0),
                "{} at {t}: {s} vs {fd}",
                model.name()
            );
        }
    }
}

/// The per-period form telescopes: the counts of periods 1..=T add up to
/// N(T) − N(0), and the largest count falls in the period holding the peak
/// time t* (or the next, as a period's count integrates the rate over it).
#[test]
fn bass_per_period_counts_add_up_to_the_running_total() {
    let v = [4000.0, 0.012, 0.38, 0.0];
    let counts: Vec<f64> = (1..=30)
        .map(|w| bass_per_period(&v, f64::from(w)))
        .collect();
    let total: f64 = counts.iter().sum();
    let want = Model::Bass.eval(&v, 30.0) - Model::Bass.eval(&v, 0.0);
    assert!((total - want).abs() <= 1e-9 * want, "{total} vs {want}");
    let best = (1..=30)
        .max_by(|a, b| counts[a - 1].total_cmp(&counts[b - 1]))
        .unwrap() as f64;
    let ts = crate::model::bass_peak_time(&v);
    assert!(best >= ts && best <= ts + 1.0, "period {best}, t* {ts}");
}
