//! Questions asked of a finished [`Fit`]: how sure is the curve at a time
//! (confidence band), when does it reach a share of K or an absolute level
//! (milestones), and are the data as point-symmetric as the logistic assumes
//! (reflected-curve check).
//!
//! Main types and functions: [`band`] and [`sample_curve`] (→ [`CurveSample`]),
//! [`time_at_fraction`], [`time_at_level`] and [`duration_10_90`]
//! (→ [`Milestone`]), [`reflection`] (→ [`Reflection`]).
//!
//! Everything here is a pure function of the fit and, where the data are
//! needed, plain slices of times and values: no parsing, no I/O.
//!
//! Uncertainty comes from the delta method on the free parameters θ with
//! covariance `C` (the fit's `covariance`): for a derived quantity `h(θ)`
//!
//! ```text
//! Var h ≈ gᵀ C g,    g = ∂h/∂θ at θ̂
//! interval = h(θ̂) ± t(level, dof) · sqrt(gᵀ C g)
//! ```
//!
//! the same Student-t quantile the parameter intervals use, so a milestone
//! that is a single parameter (t0 for the logistic at p = 0.5) gets exactly
//! that parameter's interval.

use crate::fit::Fit;
use crate::model::{bass_peak_time, Model};
use crate::stats::t_quantile;

/// Two-sided pointwise confidence interval of the fitted mean curve at `t`.
///
/// ```text
/// var(t) = g(t)ᵀ C g(t),   g(t) = ∂f(t; θ)/∂θ over the free parameters
/// (lo, hi) = f(t) ∓ t(level, dof) · sqrt(var(t))
/// ```
///
/// This is the band of the *mean curve* (where the curve itself may lie),
/// not a prediction interval for new observations, which would add σ².
/// `None` without a covariance, for `level` outside (0, 1), or when the
/// variance is not finite (e.g. `e^(r t)` overflowing far out).
pub fn band(fit: &Fit, t: f64, level: f64) -> Option<(f64, f64)> {
    let cov = fit.covariance.as_ref()?;
    if !(level > 0.0 && level < 1.0 && t.is_finite()) {
        return None;
    }
    let p = fit.values();
    let mut grad = vec![0.0; p.len()];
    let y = fit.model.eval_grad(&p, t, &mut grad);
    let g: Vec<f64> = fit.free.iter().map(|&j| grad[j]).collect();
    let var = quadratic_form(cov, &g)?;
    let half = t_quantile(level, fit.dof) * var.max(0.0).sqrt();
    (half.is_finite() && y.is_finite()).then_some((y - half, y + half))
}

/// One point of the fitted curve with its confidence band.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CurveSample {
    pub t: f64,
    /// The fitted mean `f(t)`.
    pub fit: f64,
    /// Lower end of the band; `None` when the fit has no covariance.
    pub lo: Option<f64>,
    /// Upper end of the band; `None` together with `lo`.
    pub hi: Option<f64>,
}

/// The fitted curve and its `level` band on `n` equally spaced times from
/// `t_start` to `t_end` (both included; `n == 1` gives `t_start` only).
/// Used for charts, forecast tables and CSV export.
pub fn sample_curve(fit: &Fit, t_start: f64, t_end: f64, n: usize, level: f64) -> Vec<CurveSample> {
    let p = fit.values();
    let step = if n > 1 {
        (t_end - t_start) / (n - 1) as f64
    } else {
        0.0
    };
    (0..n)
        .map(|i| {
            // The last point is set exactly so the grid ends on t_end.
            let t = if i + 1 == n && n > 1 {
                t_end
            } else {
                t_start + step * i as f64
            };
            let b = band(fit, t, level);
            CurveSample {
                t,
                fit: fit.model.eval(&p, t),
                lo: b.map(|b| b.0),
                hi: b.map(|b| b.1),
            }
        })
        .collect()
}

/// A derived time (or duration) with its 95% delta-method interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Milestone {
    pub time: f64,
    /// `time ± t(0.95, dof) · se`; `None` without a covariance or when the
    /// milestone stops existing under a small change of the parameters
    /// (e.g. a level just below K).
    pub ci95: Option<(f64, f64)>,
}

/// When the curve reaches the share `p` (0 < p < 1) of its saturation level.
///
/// With `d = t − t0`:
///
/// ```text
/// logistic    f = K / (1 + e^(−r d))           t_p = t0 + ln(p / (1 − p)) / r
/// logistic4   (f − L) / (K − L) = p            t_p = t0 + ln(p / (1 − p)) / r
/// gompertz    f = K exp(−e^(−r d))             t_p = t0 − ln(−ln p) / r
/// richards    f = K (1 + ν e^(−r d))^(−1/ν)     t_p = t0 − ln((p^(−ν) − 1) / ν) / r
/// bass        f = m F(t − tau)                  t_p = tau + ln((1 + (q/p) p_) / (1 − p_)) / (p + q)
/// ```
///
/// (for the Bass model `p_` is the share, `p` the innovation coefficient).
/// The bi-logistic's share is of `K1 + K2`; its time has no closed form and
/// is found by bisection between the two pulses' own `t_p` (the sum is
/// increasing and lies between them).
///
/// For the four-parameter logistic the share is of the *rise* from the
/// floor L to K, not of K itself: "halfway" then means halfway between the
/// starting level and saturation, which is what the parameter t0 marks. The
/// exponential has no saturation level: `None`.
pub fn time_at_fraction(fit: &Fit, p: f64) -> Option<Milestone> {
    if !(p > 0.0 && p < 1.0) {
        return None;
    }
    let model = fit.model;
    milestone(fit, |q| fraction_time(model, q, p))
}

/// When the curve reaches the absolute value `y` (e.g. one million users).
///
/// The saturating models go through [`time_at_fraction`] with
/// `p = y / K` (logistic4: `p = (y − L) / (K − L)`); `None` when the curve
/// never gets there (`p ∉ (0, 1)`). Exponential: `t = ln(y / a) / r`, `None`
/// when `y / a ≤ 0` or `r = 0`.
pub fn time_at_level(fit: &Fit, y: f64) -> Option<Milestone> {
    if !y.is_finite() {
        return None;
    }
    let model = fit.model;
    milestone(fit, |q| level_time(model, q, y))
}

/// Time from 10% to 90% of saturation, `t_0.9 − t_0.1`; for the logistic
/// and logistic4 `ln(81) / r`, for the Gompertz
/// `(ln(−ln 0.1) − ln(−ln 0.9)) / r`. `None` for the exponential.
pub fn duration_10_90(fit: &Fit) -> Option<Milestone> {
    let model = fit.model;
    milestone(fit, |q| {
        Some(fraction_time(model, q, 0.9)? - fraction_time(model, q, 0.1)?)
    })
}

/// `t_p` for parameters `q` (in `param_names` order).
fn fraction_time(model: Model, q: &[f64], p: f64) -> Option<f64> {
    if !(p > 0.0 && p < 1.0) || model == Model::Exponential || q.len() < 3 {
        return None;
    }
    if model == Model::Bass {
        let (pi, qi, tau) = (q[1], q[2], q[3]);
        let t = tau + ((1.0 + qi / pi * p) / (1.0 - p)).ln() / (pi + qi);
        return t.is_finite().then_some(t);
    }
    if model == Model::Bilogistic {
        return bilogistic_fraction_time(q, p);
    }
    let (r, t0) = (q[1], q[2]);
    let t = match model {
        Model::Logistic | Model::Logistic4 => t0 + (p / (1.0 - p)).ln() / r,
        Model::Gompertz => t0 - (-p.ln()).ln() / r,
        // ν = 0 is the Gompertz limit.
        Model::Richards if q[3] == 0.0 => t0 - (-p.ln()).ln() / r,
        Model::Richards => {
            let nu = q[3];
            // p^(−ν) − 1 = expm1(−ν ln p) keeps precision for small ν.
            t0 - ((-nu * p.ln()).exp_m1() / nu).ln() / r
        }
        Model::Exponential | Model::Bass | Model::Bilogistic => return None,
    };
    t.is_finite().then_some(t)
}

/// The bi-logistic's `t_p` by bisection (see [`time_at_fraction`]).
fn bilogistic_fraction_time(q: &[f64], p: f64) -> Option<f64> {
    let total = q[0] + q[3];
    let logit = (p / (1.0 - p)).ln();
    let (a, b) = (q[2] + logit / q[1], q[5] + logit / q[4]);
    let (mut lo, mut hi) = (a.min(b), a.max(b));
    if !(lo.is_finite() && hi.is_finite() && total > 0.0) {
        return None;
    }
    let target = p * total;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if Model::Bilogistic.eval(q, mid) < target {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

/// The Bass adoption peak with 95% delta-method intervals.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Peak {
    /// `t* = tau + ln(q/p) / (p+q)`.
    pub time: f64,
    pub time_ci95: Option<(f64, f64)>,
    /// The adoption rate at the peak, `m f(t*) = m (p+q)² / (4q)` (per
    /// unit of time).
    pub rate: f64,
    pub rate_ci95: Option<(f64, f64)>,
    /// `N(t*)/m = F(t*) = (q − p) / (2q)`: the share adopted by the peak.
    pub share: f64,
}

/// The Bass model's peak (Bass 1969): when and how fast adoption is at its
/// highest. `None` for other models and when `q ≤ p` (the rate is then
/// highest at launch, `m p`, and falls from there: no interior peak).
pub fn bass_peak(fit: &Fit) -> Option<Peak> {
    if fit.model != Model::Bass {
        return None;
    }
    let v = fit.values();
    let time_of = |v: &[f64]| (v[2] > v[1]).then(|| bass_peak_time(v));
    let rate_of = |v: &[f64]| {
        let (m, p, q) = (v[0], v[1], v[2]);
        (q > p).then(|| m * (p + q) * (p + q) / (4.0 * q))
    };
    let time = time_of(&v)?;
    let rate = rate_of(&v)?;
    Some(Peak {
        time,
        time_ci95: delta_interval(fit, time, 0.95, &time_of),
        rate,
        rate_ci95: delta_interval(fit, rate, 0.95, &rate_of),
        share: (v[2] - v[1]) / (2.0 * v[2]),
    })
}

/// The fastest growth of a single-wave saturating curve: the slope `dy/dt`
/// at its inflection, which for the logistic, logistic4, Gompertz and
/// Richards curves (as parametrised in [`Model::formula`]) lies at `t0`.
/// Logistic: `r K / 4` (Verhulst); logistic4: `r (K − L) / 4`; Gompertz:
/// `r K / e`. The Bass model's is [`bass_peak`]; `None` for the
/// bi-logistic (two waves) and the exponential (no inflection).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FastestGrowth {
    /// Where the growth is fastest (`t0`).
    pub time: f64,
    /// `dy/dt` there, per unit of the time axis.
    pub rate: f64,
    /// 95% delta-method interval of the rate.
    pub rate_ci95: Option<(f64, f64)>,
}

/// See [`FastestGrowth`].
pub fn fastest_growth(fit: &Fit) -> Option<FastestGrowth> {
    let model = fit.model;
    if !matches!(
        model,
        Model::Logistic | Model::Logistic4 | Model::Gompertz | Model::Richards
    ) {
        return None;
    }
    let rate_of = |q: &[f64]| {
        let s = model.slope(q, q[2]);
        s.is_finite().then_some(s)
    };
    let v = fit.values();
    let rate = rate_of(&v)?;
    Some(FastestGrowth {
        time: v[2],
        rate,
        rate_ci95: delta_interval(fit, rate, 0.95, &rate_of),
    })
}

fn level_time(model: Model, q: &[f64], y: f64) -> Option<f64> {
    let t = match model {
        Model::Exponential => {
            let (a, r) = (q[0], q[1]);
            let ratio = y / a;
            if ratio.is_nan() || ratio <= 0.0 || r == 0.0 {
                return None;
            }
            ratio.ln() / r
        }
        Model::Logistic4 => {
            let (k, l) = (q[0], q[3]);
            fraction_time(model, q, (y - l) / (k - l))?
        }
        _ => fraction_time(model, q, y / model.saturation_level(q)?)?,
    };
    t.is_finite().then_some(t)
}

/// [`time_at_fraction`]'s time for any parameter vector `q` (in
/// `param_names` order), without an interval: for bootstrap replicates.
pub fn fraction_time_params(model: Model, q: &[f64], p: f64) -> Option<f64> {
    fraction_time(model, q, p)
}

/// [`time_at_level`]'s time for any parameter vector `q`, without an interval.
pub fn time_at_level_params(model: Model, q: &[f64], y: f64) -> Option<f64> {
    if !y.is_finite() {
        return None;
    }
    level_time(model, q, y)
}

/// Evaluates `h` at the estimate and attaches its 95% delta-method interval.
fn milestone(fit: &Fit, h: impl Fn(&[f64]) -> Option<f64>) -> Option<Milestone> {
    let time = h(&fit.values())?;
    Some(Milestone {
        time,
        ci95: delta_interval(fit, time, 0.95, &h),
    })
}

/// `h(θ̂) ± t(level, dof) · sqrt(gᵀ C g)` with `g` by central differences.
///
/// Numerical rather than analytic gradients keep one code path for every
/// milestone and model. The step for parameter j is 10⁻³ of its standard
/// error: small against the scale on which the delta method's linearisation
/// is meant to hold, large against rounding (t0 on a calendar axis is
/// ≈ 2000, so a step relative to |θ| would be needlessly coarse or fine).
fn delta_interval(
    fit: &Fit,
    value: f64,
    level: f64,
    h: &impl Fn(&[f64]) -> Option<f64>,
) -> Option<(f64, f64)> {
    let cov = fit.covariance.as_ref()?;
    let theta = fit.values();
    let domains = fit.model.domains();
    let mut g = Vec::with_capacity(fit.free.len());
    for (c, &j) in fit.free.iter().enumerate() {
        let se = cov[(c, c)].max(0.0).sqrt();
        let scale = if se > 0.0 && se.is_finite() {
            se
        } else {
            theta[j].abs().max(1.0)
        };
        let mut step = 1e-3 * scale;
        if let Some(edge) = domains[j].lower_edge() {
            // Stay inside the parameter's domain on the lower side.
            step = step.min(0.5 * (theta[j] - edge).abs());
        }
        if step.is_nan() || step <= 0.0 {
            return None;
        }
        let mut up = theta.clone();
        up[j] += step;
        let mut down = theta.clone();
        down[j] -= step;
        g.push((h(&up)? - h(&down)?) / (2.0 * step));
    }
    let var = quadratic_form(cov, &g)?;
    let half = t_quantile(level, fit.dof) * var.max(0.0).sqrt();
    half.is_finite().then_some((value - half, value + half))
}

/// `gᵀ C g`, `None` on a size mismatch or a non-finite result.
fn quadratic_form(cov: &nalgebra::DMatrix<f64>, g: &[f64]) -> Option<f64> {
    if cov.nrows() != g.len() || cov.ncols() != g.len() {
        return None;
    }
    let mut var = 0.0;
    for (a, ga) in g.iter().enumerate() {
        for (b, gb) in g.iter().enumerate() {
            var += ga * cov[(a, b)] * gb;
        }
    }
    var.is_finite().then_some(var)
}

/// The reflected-curve symmetry check, see [`reflection`]: a view of the
/// data, not a test (the Richards-against-logistic test is
/// [`crate::diagnostics::symmetry_test`]).
#[derive(Debug, Clone, PartialEq)]
pub struct Reflection {
    /// The point `(t_c, y_c)` the observations are reflected through.
    pub center: (f64, f64),
    /// `(2 t_c − t_i, 2 y_c − y_i)` for every finite observation, input order.
    pub reflected: Vec<(f64, f64)>,
    /// How many reflections fall inside the observed time range and were
    /// compared with the observations there.
    pub n_compared: usize,
    /// RMS of the normalised mirror mismatches `d_i / sqrt(v_i)` (see [`reflection`]).
    pub rms: f64,
    /// Noise level the mismatch is measured against: the successive-difference
    /// estimate from the time-ordered residuals.
    pub noise_sigma: f64,
    /// `rms / noise_sigma`: ≈ 1 for data that are point-symmetric about the
    /// center; `None` when fewer than three reflections land inside the data
    /// (e.g. all data before t0) or the data show no measurable noise.
    pub rms_ratio: Option<f64>,
    /// One sentence on how to read `rms_ratio` for this model.
    pub meaning: &'static str,
}

/// What `rms_ratio` means for the logistic curves (point-symmetric).
pub const MEANING_SYMMETRIC: &str = "≈1 means the early and late halves mirror each other as the \
logistic assumes; well above 1 means the data are asymmetric";

/// What `rms_ratio` means for the Gompertz and Richards curves.
pub const MEANING_ASYMMETRIC: &str = "this curve is not point-symmetric about its inflection \
point, so even data that follow it perfectly show a mismatch that grows with the asymmetry; \
the ratio shows how asymmetric the data are";

/// Fewer compared reflections than this give no `rms_ratio`.
pub const MIN_COMPARED: usize = 3;

/// Reflects each observation through the fitted curve's center and compares
/// the reflections with the observed series at the reflected times.
///
/// Center `(t_c, y_c)`: the logistic's midpoint `(t0, K/2)`; for logistic4
/// `(t0, (K + L)/2)`; for the Gompertz and Richards curves the inflection
/// point `(t0, f(t0))`. The exponential has no center, the Bass curve is
/// not point-symmetric about its peak and the bi-logistic has two pulses:
/// `None` for these.
///
/// ```text
/// (t'_i, y'_i) = (2 t_c − t_i, 2 y_c − y_i)
/// e_k   = y_k − f(t_k)                         residuals
/// ê(t)  = linear interpolation of e_k in time  (the data read at time t)
/// d_i   = y'_i − f(t'_i) − ê(t'_i)             for t'_i inside the data range
/// v_i   = Σ_k (w_ik + [k = i])²               noise variance of d_i in units of σ²
///                                              (w_ik: interpolation weights)
/// s²    = Σ_k (e_(k+1) − e_k)² / (2 (n − 1))  successive-difference noise estimate
/// rms_ratio = sqrt(mean(d_i² / v_i)) / s
/// ```
///
/// Why not simply `y'_i − f(t'_i)` over `fit.sigma`: the logistic is
/// point-symmetric about its midpoint, `f(2 t0 − t) = K − f(t)`, so that
/// difference is exactly the residual `−e_i` and the ratio is always
/// `sqrt(dof / n)`, whatever the data. Comparing the reflection with the
/// *data* at the mirrored time instead measures `e(t) + e(t')`, which is
/// zero for point-symmetric data and large when the early and late halves
/// differ. Interpolating residuals rather than raw values keeps the curve's
/// curvature from biasing the comparison. `fit.sigma` would include the
/// systematic misfit that an asymmetric series causes, which caps the ratio
/// near √2; the successive-difference estimate (von Neumann) sees only the
/// point-to-point scatter.
///
/// Replicates (several observations at one time): the data's reading at a
/// time is the mean residual of its replicates (`ê` interpolates those
/// means, and `v_i` counts each mean's variance σ²/m); every observation
/// is still reflected and compared, and `s` takes successive differences
/// over all observations in time order (replicates in input order), which
/// estimates the scatter of one observation.
///
/// `None` also when `t` and `y` differ in length or have fewer than three
/// finite points.
pub fn reflection(fit: &Fit, t: &[f64], y: &[f64]) -> Option<Reflection> {
    if t.len() != y.len() {
        return None;
    }
    let p = fit.values();
    let model = fit.model;
    let t0 = fit.param("t0")?.estimate;
    let (center, meaning) = match model {
        Model::Logistic => ((t0, p[0] / 2.0), MEANING_SYMMETRIC),
        Model::Logistic4 => ((t0, (p[0] + p[3]) / 2.0), MEANING_SYMMETRIC),
        Model::Gompertz | Model::Richards => ((t0, model.eval(&p, t0)), MEANING_ASYMMETRIC),
        Model::Exponential | Model::Bass | Model::Bilogistic => return None,
    };
    let (tc, yc) = center;

    // Finite observations, ordered by time, with their residuals.
    let mut pts: Vec<(f64, f64, f64)> = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(&a, &b)| (a, b, b - model.eval(&p, a)))
        .collect();
    if pts.len() < 3 {
        return None;
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));

    let reflected: Vec<(f64, f64)> = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(&a, &b)| (2.0 * tc - a, 2.0 * yc - b))
        .collect();

    let n = pts.len();
    let noise_sigma = (pts
        .windows(2)
        .map(|w| (w[1].2 - w[0].2).powi(2))
        .sum::<f64>()
        / (2.0 * (n - 1) as f64))
        .sqrt();

    // Distinct times with the mean residual and the number of replicates
    // there, and the first index in `pts` of each.
    let mut groups: Vec<(f64, f64, usize, usize)> = Vec::new();
    let mut start = 0;
    for g in pts.chunk_by(|a, b| a.0 == b.0) {
        let mean = g.iter().map(|q| q.2).sum::<f64>() / g.len() as f64;
        groups.push((g[0].0, mean, g.len(), start));
        start += g.len();
    }
    let n_groups = groups.len();
    let (t_first, t_last) = (groups[0].0, groups[n_groups - 1].0);
    let mut sum = 0.0;
    let mut n_compared = 0;
    for (i, &(ti, yi, _)) in pts.iter().enumerate() {
        let tr = 2.0 * tc - ti;
        let yr = 2.0 * yc - yi;
        if !(tr >= t_first && tr <= t_last) {
            continue;
        }
        // Segment [k0, k1] of distinct times with t_k0 ≤ tr < t_k1, or the last time itself.
        let j = groups.partition_point(|q| q.0 <= tr);
        let (k0, k1, w1) = if j >= n_groups {
            (n_groups - 1, n_groups - 1, 0.0)
        } else {
            let (a, b) = (groups[j - 1].0, groups[j].0);
            (j - 1, j, (tr - a) / (b - a))
        };
        let w0 = 1.0 - w1;
        let e_hat = w0 * groups[k0].1 + w1 * groups[k1].1;
        let d = yr - model.eval(&p, tr) - e_hat;
        // The reflected point carries −ε_i; the interpolated reading
        // carries w ε̄_k of each time k it reads, ε̄_k the mean of m_k
        // replicates, and i may be one of them (points near t_c):
        // v = Σ_k w_k² / m_k + 1 (+ 2 w_k / m_k for i's own time).
        let mut v = 1.0;
        for (k, w) in [(k0, w0), (k1, w1)] {
            if k0 == k1 && k == k1 && w == 0.0 {
                continue;
            }
            let (_, _, m, start) = groups[k];
            let own = (start..start + m).contains(&i);
            let m = m as f64;
            v += w * w / m;
            if own {
                v += 2.0 * w / m;
            }
        }
        sum += d * d / v;
        n_compared += 1;
    }
    let rms = if n_compared > 0 {
        (sum / n_compared as f64).sqrt()
    } else {
        f64::NAN
    };
    let scale = pts.iter().map(|q| q.1.abs()).fold(0.0, f64::max);
    let ratio = rms / noise_sigma;
    let rms_ratio =
        (n_compared >= MIN_COMPARED && noise_sigma > 1e-12 * scale && ratio.is_finite())
            .then_some(ratio);
    Some(Reflection {
        center,
        reflected,
        n_compared,
        rms,
        noise_sigma,
        rms_ratio,
        meaning,
    })
}

#[cfg(test)]
mod tests;
