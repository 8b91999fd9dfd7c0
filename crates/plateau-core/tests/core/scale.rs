//! Scale invariance (analytic facts). Multiplying the values by `c`
//! multiplies every level parameter (K, L, m, a, K1, K2), its standard
//! error and its interval ends by `c`, leaves rates, times and shapes
//! unchanged, and — for every error model, the density of `c y` being
//! `c^(−m)` times that of `y` for `m` residuals — shifts the maximised
//! log-likelihood by exactly `−m ln c`. Stretching and shifting the time
//! axis (`t ↦ t0 + s t`) divides rates by `s` and maps times the same way.
//! The fit must reproduce these facts to 1e-9 for series times 10^k,
//! k from −170 to 160 (squares of such values under- or overflow in double
//! precision: the fit works in internally scaled units), with the same
//! warnings.

use super::scipy::{decimal_year, load, root};
use plateau_core::fit::{fit_xy, ErrorModel, Fit, FitError, FitErrorKind, FitOptions};
use plateau_core::model::Role;
use plateau_core::Model;

const EXPONENTS: [i32; 6] = [-170, -150, -100, 100, 150, 160];
const RTOL: f64 = 1e-9;

/// The demo series and a model each (`tariff_share_monthly.csv` on its
/// decimal-year axis; the Bass adoptions as running totals).
type Case = (&'static str, Model, ErrorModel, Vec<f64>, Vec<f64>);

fn cases() -> Vec<Case> {
    let (t, y) = load("demo-data/aldermoor_subscribers.csv", false);
    let (tf, yf) = load("demo-data/fenwick_vale_subscribers.csv", false);
    let (th, yh) = load("demo-data/harrow_fields_capacity.csv", false);
    let (ts, ys) = load("demo-data/saltmarsh_app_installs.csv", false);
    let (tw, yw) = load("demo-data/wrenlow_two_waves.csv", false);
    let (tl, yl) = load("demo-data/lumen_cell_adoptions.csv", false);
    let text = std::fs::read_to_string(root().join("demo-data/tariff_share_monthly.csv")).unwrap();
    let (mut tt, mut yt) = (vec![], vec![]);
    for line in text.lines().skip(1).filter(|l| !l.is_empty()) {
        let (a, b) = line.split_once(',').unwrap();
        tt.push(decimal_year(a));
        yt.push(b.parse::<f64>().unwrap());
    }
    let running: Vec<f64> = yl
        .iter()
        .scan(0.0, |s, v| {
            *s += v;
            Some(*s)
        })
        .collect();
    vec![
        (
            "aldermoor",
            Model::Logistic,
            ErrorModel::Additive,
            t.clone(),
            y.clone(),
        ),
        (
            "aldermoor",
            Model::Logistic,
            ErrorModel::Relative,
            t.clone(),
            y.clone(),
        ),
        (
            "aldermoor",
            Model::Logistic,
            ErrorModel::Log,
            t.clone(),
            y.clone(),
        ),
        ("aldermoor", Model::Richards, ErrorModel::Additive, t, y),
        ("fenwick_vale", Model::Logistic, ErrorModel::Count, tf, yf),
        (
            "harrow_fields",
            Model::Gompertz,
            ErrorModel::Additive,
            th,
            yh,
        ),
        (
            "tariff_share",
            Model::Logistic4,
            ErrorModel::Additive,
            tt,
            yt,
        ),
        (
            "saltmarsh",
            Model::Exponential,
            ErrorModel::Additive,
            ts,
            ys,
        ),
        ("lumen_cell", Model::Bass, ErrorModel::Additive, tl, running),
        ("wrenlow", Model::Bilogistic, ErrorModel::Additive, tw, yw),
    ]
}

fn fit(t: &[f64], y: &[f64], model: Model, e: ErrorModel) -> Result<Fit, FitError> {
    let opts = FitOptions {
        error_model: e,
        ..Default::default()
    };
    fit_xy(t, y, model, &opts)
}

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= RTOL * b.abs(),
        "{what}: {a:e} vs {b:e} (relative {:e})",
        (a - b).abs() / b.abs()
    );
}

fn codes(f: &Fit) -> Vec<&'static str> {
    f.warnings.iter().map(|w| w.code.as_str()).collect()
}

/// Compares `got` (data mapped by `level`, `rate`, `time`) with `base`.
fn same_relative(
    got: &Fit,
    base: &Fit,
    level: f64,
    rate: f64,
    time: &dyn Fn(f64) -> f64,
    what: &str,
) {
    assert_eq!(got.converged, base.converged, "{what}: converged");
    assert_eq!(codes(got), codes(base), "{what}: warning codes");
    let roles = base.model.roles();
    for (j, (g, b)) in got.params.iter().zip(&base.params).enumerate() {
        // θ_got = map(θ_base); standard errors scale by the map's slope.
        let (map, slope): (Box<dyn Fn(f64) -> f64>, f64) = match roles[j] {
            Role::Level => (Box::new(move |v| v * level), level),
            Role::Rate => (Box::new(move |v| v * rate), rate),
            Role::Time => {
                let s = time(1.0) - time(0.0);
                (Box::new(time), s)
            }
            Role::Shape => (Box::new(|v| v), 1.0),
        };
        let w = format!("{what} {}", b.name);
        close(g.estimate, map(b.estimate), &format!("{w} estimate"));
        assert_eq!(g.identified, b.identified, "{w} identified");
        match (g.std_error, b.std_error) {
            (Some(x), Some(y)) => close(x, y * slope, &format!("{w} se")),
            (x, y) => assert_eq!(x.is_some(), y.is_some(), "{w} se"),
        }
        match (g.interval, b.interval) {
            (Some(x), Some(y)) => {
                assert_eq!(x.method, y.method, "{w} interval method");
                for (gs, bs, side) in [(x.lo, y.lo, "lo"), (x.hi, y.hi, "hi")] {
                    match (gs, bs) {
                        (Some(u), Some(v)) => close(u, map(v), &format!("{w} interval {side}")),
                        (u, v) => assert_eq!(u.is_some(), v.is_some(), "{w} {side} open"),
                    }
                }
            }
            (x, y) => assert_eq!(x.is_some(), y.is_some(), "{w} interval"),
        }
    }
    close(got.r_squared, base.r_squared, &format!("{what} R²"));
    close(
        got.condition_number,
        base.condition_number,
        &format!("{what} condition number"),
    );
}

#[test]
fn series_times_ten_to_the_k_give_the_same_relative_fit() {
    for (name, model, e, t, y) in cases() {
        let base = fit(&t, &y, model, e).unwrap_or_else(|err| panic!("{name}: {err}"));
        for k in EXPONENTS {
            let c: f64 = format!("1e{k}").parse().unwrap();
            let yk: Vec<f64> = y.iter().map(|v| v * c).collect();
            let what = format!("{name} {} {} ×1e{k}", model.name(), e.name());
            let got = fit(&t, &yk, model, e).unwrap_or_else(|err| panic!("{what}: {err}"));
            same_relative(&got, &base, c, 1.0, &|v| v, &what);
            // ℓ(c y) = ℓ(y) − m ln c, exactly (analytic), m residuals.
            let shift = -(got.n as f64) * f64::from(k) * std::f64::consts::LN_10;
            let d = got.log_likelihood - base.log_likelihood;
            assert!(
                (d - shift).abs() <= 1e-9 * shift.abs().max(base.log_likelihood.abs()),
                "{what}: ℓ shifted by {d} instead of {shift}"
            );
            close(got.aicc - base.aicc, -2.0 * shift, &format!("{what} AICc"));
            // σ in the data's units for additive errors, a fraction for
            // relative and log errors, √c for count dispersion.
            let sigma_scale = match e {
                ErrorModel::Additive => c,
                ErrorModel::Count => c.sqrt(),
                ErrorModel::Relative | ErrorModel::Log => 1.0,
            };
            close(
                got.sigma,
                base.sigma * sigma_scale,
                &format!("{what} sigma"),
            );
            for (a, b) in got.fitted.iter().zip(&base.fitted) {
                close(*a, b * c, &format!("{what} fitted"));
            }
        }
    }
}

/// The same weekly series on an epoch-seconds axis (t = 1.7e9 + 604800 w):
/// rates per second are the weekly ones / 604800, times map the same way.
#[test]
fn a_stretched_and_shifted_time_axis_gives_the_same_fit() {
    let (t, y) = load("demo-data/aldermoor_subscribers.csv", false);
    let (week, origin) = (604_800.0, 1.7e9);
    let secs: Vec<f64> = t.iter().map(|w| origin + week * w).collect();
    for model in [Model::Logistic, Model::Gompertz, Model::Exponential] {
        let base = fit(&t, &y, model, ErrorModel::Additive).unwrap();
        let got = fit(&secs, &y, model, ErrorModel::Additive).unwrap();
        if model == Model::Exponential {
            // a = y(0) depends on the origin: compare r only.
            close(
                got.params[1].estimate * week,
                base.params[1].estimate,
                "exponential r",
            );
            continue;
        }
        same_relative(
            &got,
            &base,
            1.0,
            1.0 / week,
            &|v| origin + week * v,
            model.name(),
        );
    }
}

#[test]
fn values_that_cannot_be_represented_together_are_refused() {
    let t: Vec<f64> = (0..10).map(f64::from).collect();
    let mut y: Vec<f64> = t.iter().map(|v| 1e300 * (1.0 + v)).collect();
    y[0] = 1e-300;
    let err = fit(&t, &y, Model::Logistic, ErrorModel::Additive).unwrap_err();
    assert_eq!(err.kind, FitErrorKind::InvalidValue);
    assert!(err.message.contains("double precision"), "{}", err.message);
    y[0] = f64::INFINITY;
    let err = fit(&t, &y, Model::Logistic, ErrorModel::Additive).unwrap_err();
    assert!(err.message.contains("finite"), "{}", err.message);
}
