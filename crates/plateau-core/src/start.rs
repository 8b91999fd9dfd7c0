//! Self-starting values: parameter guesses derived from the data alone, so
//! that no user ever has to supply them.
//!
//! The logistic and Gompertz curves become straight lines in `t` once K is
//! known:
//!
//! ```text
//! logistic (Fisher–Pry):  ln(y / (K − y))  = r t − r t0
//! Gompertz (log–log):     ln(−ln(y / K))   = −r t + r t0
//! ```
//!
//! For each trial K the line is fitted by weighted least squares, with
//! weights `(dz/dy)⁻²` (the delta method), so that the weighted residual sum
//! of squares approximates the sum of squares on the original scale and can
//! be compared across K. K is searched on a logarithmic grid of
//! `K − max(y)`, then refined by golden-section search; the lines are fitted
//! to at most 32 evenly spread points, as a start only has to
//! be good enough for the solver, which then uses every point. The exponential
//! starts from `ln y = ln a + r t`. The Richards and floor-logistic starts
//! come from these (see `fit`).
//!
//! The search only accepts lines that rise with the curve (`r > 0`). Data
//! that are not an S-curve — a hump of per-period counts, a decline — can
//! give a falling line for every trial K; a self-starting tool must still
//! start, so [`shape_start`] then reads a rough start off the data's shape
//! (the fit may be poor, and its warnings say so, but it runs).

use crate::mathfn::{exp, ln, ln_in_place};

/// Straight-line weighted least squares `z ≈ a + b t`; returns
/// `(a, b, weighted RSS)`, or `None` when the times do not vary.
#[inline(always)]
fn weighted_line(t: &[f64], z: &[f64], w: &[f64]) -> Option<(f64, f64, f64)> {
    let n = t.len();
    let (z, w) = (&z[..n], &w[..n]);
    let [sw, swt, swz] = sums(n, |i| [w[i], w[i] * t[i], w[i] * z[i]]);
    line_from_sums(t, z, w, sw, swt, swz)
}

/// `Σ_i f(i)` for `i < n`, for each of the `K` components, with four
/// partial sums each (so that the additions overlap instead of waiting on
/// one another; the order differs from a plain sum only in rounding).
#[inline(always)]
fn sums<const K: usize>(n: usize, f: impl Fn(usize) -> [f64; K]) -> [f64; K] {
    let mut acc = [[0.0f64; K]; 4];
    let full = n - n % 4;
    for i in (0..full).step_by(4) {
        for (l, lane) in acc.iter_mut().enumerate() {
            for (a, v) in lane.iter_mut().zip(f(i + l)) {
                *a += v;
            }
        }
    }
    let mut out = [0.0; K];
    for i in full..n {
        for (o, v) in out.iter_mut().zip(f(i)) {
            *o += v;
        }
    }
    for (k, o) in out.iter_mut().enumerate() {
        *o += (acc[0][k] + acc[2][k]) + (acc[1][k] + acc[3][k]);
    }
    out
}

/// [`weighted_line`] given `Σ w`, `Σ w t` and `Σ w z`.
#[inline(always)]
fn line_from_sums(
    t: &[f64],
    z: &[f64],
    w: &[f64],
    sw: f64,
    swt: f64,
    swz: f64,
) -> Option<(f64, f64, f64)> {
    if sw <= 0.0 || !sw.is_finite() {
        return None;
    }
    let n = t.len();
    let (z, w) = (&z[..n], &w[..n]);
    let tm = swt / sw;
    let zm = swz / sw;
    let [stt, stz] = sums(n, |i| {
        let dt = t[i] - tm;
        [w[i] * dt * dt, w[i] * dt * (z[i] - zm)]
    });
    if stt <= 0.0 || !stt.is_finite() {
        return None;
    }
    let b = stz / stt;
    let a = zm - b * tm;
    let [rss] = sums(n, |i| {
        let e = z[i] - a - b * t[i];
        [w[i] * e * e]
    });
    Some((a, b, rss))
}

/// Which straight-line transform to use for a trial K.
#[derive(Clone, Copy)]
enum Linearisation {
    FisherPry,
    LogLog,
}

impl Linearisation {
    /// The transformed values `z` and their weights for the observations
    /// `0 < y < K`, given `ly = ln y`, into `z` and `w`.
    #[inline(always)]
    fn transform(self, y: &[f64], ly: &[f64], k: f64, z: &mut [f64], w: &mut [f64]) {
        let n = y.len();
        let (ly, z, w) = (&ly[..n], &mut z[..n], &mut w[..n]);
        let inv_k = 1.0 / k;
        match self {
            Linearisation::FisherPry => {
                // z = ln(y / (K − y)) = ln y − ln(K − y).
                for i in 0..n {
                    z[i] = k - y[i];
                }
                ln_in_place(z);
                for i in 0..n {
                    z[i] = ly[i] - z[i];
                    let v = y[i] * (k - y[i]) * inv_k;
                    w[i] = v * v;
                }
            }
            Linearisation::LogLog => {
                // z = ln(−l) with l = ln(y / K) = ln y − ln K.
                let lk = ln(k);
                for i in 0..n {
                    z[i] = lk - ly[i];
                }
                ln_in_place(z);
                for i in 0..n {
                    let v = y[i] * (ly[i] - lk);
                    w[i] = v * v;
                }
            }
        }
    }

    /// `(r, t0)` from the line's intercept and slope.
    fn params(self, a: f64, b: f64) -> (f64, f64) {
        match self {
            Linearisation::FisherPry => (b, -a / b),
            Linearisation::LogLog => (-b, -a / b),
        }
    }

    /// `y(t0) / K`: where the curve stands at t0 (logistic ½, Gompertz 1/e).
    fn level_at_t0(self) -> f64 {
        match self {
            Linearisation::FisherPry => 0.5,
            Linearisation::LogLog => (-1f64).exp(),
        }
    }

    /// `r · Δt`, where Δt is the time the curve takes from 10 % to 90 % of K:
    /// logistic `ln 81`, Gompertz `ln ln 10 − ln(−ln 0.9)`.
    fn rise_width(self) -> f64 {
        match self {
            Linearisation::FisherPry => 81f64.ln(),
            Linearisation::LogLog => 10f64.ln().ln() - (-(0.9f64.ln())).ln(),
        }
    }
}

/// Result of the line fit for one trial K: `(score, r, t0)`.
fn line_for_k(
    lin: Linearisation,
    t: &[f64],
    y: &[f64],
    ly: &[f64],
    k: f64,
    buf: &mut Buffers,
) -> Option<(f64, f64, f64)> {
    #[cfg(target_arch = "x86_64")]
    if std::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor supports AVX2, checked just above.
        return unsafe { line_for_k_avx2(lin, t, y, ly, k, buf) };
    }
    line_for_k_any(lin, t, y, ly, k, buf)
}

/// [`line_for_k`] compiled for AVX2 (see the crate docs).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn line_for_k_avx2(
    lin: Linearisation,
    t: &[f64],
    y: &[f64],
    ly: &[f64],
    k: f64,
    buf: &mut Buffers,
) -> Option<(f64, f64, f64)> {
    line_for_k_any(lin, t, y, ly, k, buf)
}

#[inline(always)]
fn line_for_k_any(
    lin: Linearisation,
    t: &[f64],
    y: &[f64],
    ly: &[f64],
    k: f64,
    buf: &mut Buffers,
) -> Option<(f64, f64, f64)> {
    let n = t.len();
    let (zs, ws) = (&mut buf.z[..n], &mut buf.w[..n]);
    lin.transform(&y[..n], ly, k, zs, ws);
    let (a, b, rss) = weighted_line(t, zs, ws)?;
    let (r, t0) = lin.params(a, b);
    // Rejects r ≤ 0 and NaN r alike.
    if r.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) || !t0.is_finite() {
        return None;
    }
    Some((rss, r, t0))
}

/// Scratch of [`line_for_k`]: the transformed values and their weights.
struct Buffers {
    z: [f64; SEARCH_POINTS],
    w: [f64; SEARCH_POINTS],
}

/// Searches K for the linearisation; returns `(K, r, t0)`.
///
/// With `fixed_k`, only the line for that K is fitted. Falls back to
/// [`shape_start`] when no rising line is found; `None` only when fewer
/// than two positive values (below `fixed_k`) at different times remain.
fn search_k(lin: Linearisation, t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    // Only 0 < y enter a logarithm; with a fixed K also y < K.
    let usable = |v: f64| v > 0.0 && fixed_k.is_none_or(|k| v < k);
    let (mut count, mut ymin, mut ymax) = (0usize, f64::MAX, f64::MIN);
    for &v in y {
        // Without branches (so that it vectorises); usable values are never
        // NaN, so plain comparisons do.
        let ok = usable(v);
        count += usize::from(ok);
        ymin = if ok && v < ymin { v } else { ymin };
        ymax = if ok && v > ymax { v } else { ymax };
    }
    if count < 2 {
        return None;
    }
    // The fallback sees every usable point; the line fits (one logarithm
    // per point and trial K) see at most `SEARCH_POINTS` of them.
    let fallback = |k: f64| {
        let (tp, yp): (Vec<f64>, Vec<f64>) = t
            .iter()
            .zip(y)
            .filter(|(_, v)| usable(**v))
            .map(|(a, b)| (*a, *b))
            .unzip();
        shape_start(lin, &tp, &yp, k)
    };
    let (ts, ys) = subsample(t, y, count, usable);
    let mut lys = ys.clone();
    ln_in_place(&mut lys);
    let mut buf = Buffers {
        z: [0.0; SEARCH_POINTS],
        w: [0.0; SEARCH_POINTS],
    };
    if let Some(k) = fixed_k {
        return match line_for_k(lin, &ts, &ys, &lys, k, &mut buf) {
            Some((_, r, t0)) => Some([k, r, t0]),
            None => fallback(k),
        };
    }
    let span = if ymax > ymin { ymax - ymin } else { ymax };
    // K = ymax + span · 10^u, u on a grid from −6 to 3 in steps of 1. The
    // refinement below only has to bring the start into the solver's basin:
    // a finer grid (steps of 0.5) was measured to save no solver iterations.
    let k_of = |u: f64| ymax + span * exp(u * std::f64::consts::LN_10);
    // (score, r, t0) of the line for K(u); the score is ∞ without a rising line.
    let mut line = |u: f64| -> (f64, f64, f64) {
        line_for_k(lin, &ts, &ys, &lys, k_of(u), &mut buf).unwrap_or((f64::INFINITY, 0.0, 0.0))
    };
    let grid: [f64; 10] = std::array::from_fn(|i| -6.0 + i as f64);
    let lines = grid.map(&mut line);
    let (best, best_score) =
        lines.iter().enumerate().fold(
            (0, f64::INFINITY),
            |acc, (i, s)| if s.0 < acc.1 { (i, s.0) } else { acc },
        );
    if !best_score.is_finite() {
        // No trial K gives a rising line: the data are not S-shaped.
        return fallback(FALLBACK_K_ABOVE_MAX * ymax);
    }
    // Golden-section refinement between the neighbours of the best node.
    let mut lo = grid[best.saturating_sub(1)];
    let mut hi = grid[(best + 1).min(grid.len() - 1)];
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = hi - g * (hi - lo);
    let mut x2 = lo + g * (hi - lo);
    let mut f1 = line(x1);
    let mut f2 = line(x2);
    for _ in 0..GOLDEN_STEPS {
        if f1.0 <= f2.0 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            f1 = line(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            f2 = line(x2);
        }
    }
    let (u, (_, r, t0)) = if f1.0.min(f2.0) <= best_score {
        if f1.0 <= f2.0 {
            (x1, f1)
        } else {
            (x2, f2)
        }
    } else {
        (grid[best], lines[best])
    };
    Some([k_of(u), r, t0])
}

/// Golden-section steps of the K search: they shrink the bracket of two
/// grid steps to `2 · 0.618³ ≈ 0.47` decades of `K − max(y)`. More steps
/// (up to 12 were tried) saved no solver iterations over a set of 2,740
/// test fits, while each costs a line fit.
const GOLDEN_STEPS: usize = 3;

/// The most points the K search fits its lines to. A start only has to
/// land in the basin of the least-squares minimum, which the solver then
/// finds to full precision from the full data; evenly spread points
/// describe the curve's shape as well as all of them, at a fixed cost.
const SEARCH_POINTS: usize = 32;

/// The points whose value passes `keep` (`count` of them), or at most
/// [`SEARCH_POINTS`] of those, evenly spread over the input order and
/// including the first and the last.
fn subsample(
    t: &[f64],
    y: &[f64],
    count: usize,
    keep: impl Fn(f64) -> bool,
) -> (Vec<f64>, Vec<f64>) {
    let m = count.min(SEARCH_POINTS);
    // The i-th pick is the j(i)-th kept point.
    let target = |i: usize| {
        if count <= SEARCH_POINTS {
            i
        } else {
            (i * (count - 1) + (m - 1) / 2) / (m - 1)
        }
    };
    if count == t.len().min(y.len()) {
        // Every point is kept: index directly.
        return (0..m).map(|i| (t[target(i)], y[target(i)])).unzip();
    }
    let mut ts = Vec::with_capacity(m);
    let mut ys = Vec::with_capacity(m);
    let mut kept = 0;
    let mut next = target(0);
    for (&ti, &yi) in t.iter().zip(y) {
        if ts.len() == m {
            break;
        }
        if keep(yi) {
            if kept == next {
                ts.push(ti);
                ys.push(yi);
                next = target(ts.len());
            }
            kept += 1;
        }
    }
    (ts, ys)
}

/// Fallback K as a multiple of the largest value: a curve that saturates a
/// little above the highest observation.
const FALLBACK_K_ABOVE_MAX: f64 = 1.05;

/// Rough `[K, r, t0]` read off the data's shape, for data the line search
/// cannot handle; `tp`, `yp` are the positive points (below K), any order.
///
/// K is given; r makes the curve's 10–90 % rise last the whole time span;
/// t0 is where the data, in time order, first reach the curve's level at
/// t0 (`K/2` for the logistic, `K/e` for the Gompertz), interpolated
/// linearly — the first time if they start above it, the last time if they
/// never reach it. `None` only when the times do not vary.
fn shape_start(lin: Linearisation, tp: &[f64], yp: &[f64], k: f64) -> Option<[f64; 3]> {
    let mut order: Vec<usize> = (0..tp.len()).collect();
    order.sort_by(|&a, &b| tp[a].total_cmp(&tp[b]));
    let (&first, &last) = (order.first()?, order.last()?);
    let span = tp[last] - tp[first];
    if !(span.is_finite() && span > 0.0 && k.is_finite() && k > 0.0) {
        return None;
    }
    let r = lin.rise_width() / span;
    let level = lin.level_at_t0() * k;
    let mut t0 = tp[last];
    let mut prev: Option<usize> = None;
    for &i in &order {
        if yp[i] >= level {
            t0 = match prev {
                // yp[j] < level <= yp[i], so the fraction lies in (0, 1].
                Some(j) => tp[j] + (tp[i] - tp[j]) * (level - yp[j]) / (yp[i] - yp[j]),
                None => tp[i],
            };
            break;
        }
        prev = Some(i);
    }
    Some([k, r, t0])
}

/// The least-squares K for fixed shape `g(t)`: `K = Σ y g / Σ g²`.
fn linear_k(y: &[f64], g: impl Iterator<Item = f64>) -> Option<f64> {
    let (num, den) = y
        .iter()
        .zip(g)
        .fold((0.0, 0.0), |(n, d), (yi, gi)| (n + yi * gi, d + gi * gi));
    let k = num / den;
    (k > 0.0 && k.is_finite()).then_some(k)
}

/// Starting `[K, r, t0]` for the logistic (Fisher–Pry grid over K).
///
/// `None` only without two positive values (below `fixed_k`) at different
/// times; data of any other shape get a start, if a rough one.
pub fn logistic(t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    let [k, r, t0] = search_k(Linearisation::FisherPry, t, y, fixed_k)?;
    if fixed_k.is_some() {
        return Some([k, r, t0]);
    }
    let (ts, ys) = subsample(t, y, t.len().min(y.len()), |_| true);
    let shape = ts.iter().map(|ti| crate::model::sigmoid(r * (ti - t0)));
    Some([linear_k(&ys, shape).unwrap_or(k), r, t0])
}

/// Starting `[K, r, t0]` for the Gompertz curve (log–log grid over K).
///
/// `None` in the same cases as [`logistic`].
pub fn gompertz(t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    let [k, r, t0] = search_k(Linearisation::LogLog, t, y, fixed_k)?;
    if fixed_k.is_some() {
        return Some([k, r, t0]);
    }
    let (ts, ys) = subsample(t, y, t.len().min(y.len()), |_| true);
    let shape = ts.iter().map(|ti| (-(-r * (ti - t0)).exp()).exp());
    Some([linear_k(&ys, shape).unwrap_or(k), r, t0])
}

/// Starting `[a, r]` for `y = a e^(r t)` on the time axis `t − t_ref`
/// (the caller centres the axis so that `e^(r t)` stays representable).
pub fn exponential(t: &[f64], y: &[f64]) -> Option<[f64; 2]> {
    let (tp, yp): (Vec<f64>, Vec<f64>) = t
        .iter()
        .zip(y)
        .filter(|(_, v)| **v > 0.0)
        .map(|(a, b)| (*a, *b))
        .unzip();
    if tp.len() < 2 {
        return None;
    }
    let z: Vec<f64> = yp.iter().map(|v| v.ln()).collect();
    let w: Vec<f64> = yp.iter().map(|v| v * v).collect();
    let (a, b, _) = weighted_line(&tp, &z, &w)?;
    Some([a.exp(), b])
}

/// Points `(t, y)` with finite values, sorted by time.
fn sorted_points(t: &[f64], y: &[f64]) -> Vec<(f64, f64)> {
    let mut pts: Vec<(f64, f64)> = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(a, b)| (*a, *b))
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    pts
}

/// `(m, p, q)` from the Bass (1969) regression on running totals `N`:
///
/// ```text
/// n_i = (N_i − N_(i−1)) / Δt_i = a + b N_(i−1) + c N_(i−1)²
/// a = p m,   b = q − p,   c = −q / m
/// ```
///
/// so `m` is the positive root of `c m² + b m + a = 0`, `p = a/m`,
/// `q = −c m`. With a fixed `m` the regression is linear in `p` and `q`
/// directly: `n_i = p (m − N) + q N (m − N) / m`. `None` when the
/// regression gives signs the model cannot have (`a ≤ 0`, `c ≥ 0`, or
/// `p ≤ 0`, `q ≤ 0` with a fixed m) or too few intervals.
pub fn bass_ols(pts: &[(f64, f64)], fixed_m: Option<f64>) -> Option<[f64; 3]> {
    let rows: Vec<(f64, f64)> = pts
        .windows(2)
        .filter(|w| w[1].0 > w[0].0)
        .map(|w| (w[0].1, (w[1].1 - w[0].1) / (w[1].0 - w[0].0)))
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .collect();
    let scale = rows.iter().map(|r| r.0.abs()).fold(0.0, f64::max);
    if rows.len() < 3 || scale <= 0.0 || !scale.is_finite() {
        return None;
    }
    let valid = |v: f64| v.is_finite() && v > 0.0;
    if let Some(m) = fixed_m {
        // Two regressors u = m − N, v = N (m − N) / m, no intercept.
        let (mut suu, mut suv, mut svv, mut sun, mut svn) = (0.0, 0.0, 0.0, 0.0, 0.0);
        for &(big_n, n) in &rows {
            let u = m - big_n;
            let v = big_n * u / m;
            suu += u * u;
            suv += u * v;
            svv += v * v;
            sun += u * n;
            svn += v * n;
        }
        let det = suu * svv - suv * suv;
        let p = (sun * svv - svn * suv) / det;
        let q = (svn * suu - sun * suv) / det;
        return (valid(p) && valid(q)).then_some([m, p, q]);
    }
    // Regressors 1, u, u² with u = N / scale, for conditioning.
    let mut xtx = nalgebra::Matrix3::<f64>::zeros();
    let mut xty = nalgebra::Vector3::<f64>::zeros();
    for &(big_n, n) in &rows {
        let u = big_n / scale;
        let x = nalgebra::Vector3::new(1.0, u, u * u);
        xtx += x * x.transpose();
        xty += x * n;
    }
    let beta = xtx.lu().solve(&xty)?;
    let (a, b, c) = (beta[0], beta[1] / scale, beta[2] / (scale * scale));
    if !(a > 0.0 && c < 0.0) {
        return None;
    }
    // c < 0 < a: the discriminant is positive and exactly one root is.
    let disc = b * b - 4.0 * a * c;
    let m = (-b - disc.sqrt()) / (2.0 * c);
    let (p, q) = (a / m, -c * m);
    (valid(m) && valid(p) && valid(q)).then_some([m, p, q])
}

/// The launch time that puts the Bass curve `(m, p, q)` through the data:
/// the median over `0 < N_i < m` of `t_i − F⁻¹(N_i / m)`, with
/// `F⁻¹(u) = ln((1 + (q/p) u) / (1 − u)) / (p + q)`; `None` without such
/// points.
fn bass_tau(pts: &[(f64, f64)], m: f64, p: f64, q: f64) -> Option<f64> {
    let c = q / p;
    let mut taus: Vec<f64> = pts
        .iter()
        .filter(|(_, v)| *v > 0.0 && *v < m)
        .map(|&(ti, v)| {
            let u = v / m;
            ti - ((1.0 + c * u) / (1.0 - u)).ln() / (p + q)
        })
        .filter(|v| v.is_finite())
        .collect();
    if taus.is_empty() {
        return None;
    }
    taus.sort_by(f64::total_cmp);
    Some(taus[taus.len() / 2])
}

/// Starting `[m, p, q, tau]` candidates for the Bass model, best guess
/// first (the solver runs from each and keeps the best):
///
/// 1. the Bass (1969) regression ([`bass_ols`]) with `tau` from
///    [`bass_tau`] (the regression itself does not involve the launch time);
/// 2. always, from the logistic start `[K, r, t0]`: for `t > tau` the Bass
///    curve is a logistic with floor `L = −m p/q`, `r = p + q` and midpoint
///    `tau + ln(q/p)/(p+q)`; with `q/p = 20` (a floor 5% of m below zero)
///    that gives `m = K`, `p = r/21`, `q = 20 r/21`, `tau = t0 − ln(20)/r`.
///    This is the fallback when the regression's signs are invalid.
///
/// Empty only when the logistic cannot start either.
pub fn bass(t: &[f64], y: &[f64], fixed_m: Option<f64>) -> Vec<[f64; 4]> {
    let pts = sorted_points(t, y);
    let mut out = Vec::new();
    if let Some([m, p, q]) = bass_ols(&pts, fixed_m) {
        if let Some(tau) = bass_tau(&pts, m, p, q) {
            out.push([m, p, q, tau]);
        }
    }
    if let Some([k, r, t0]) = logistic(t, y, fixed_m) {
        let ratio: f64 = 20.0;
        let (p, q) = (r / (1.0 + ratio), r * ratio / (1.0 + ratio));
        out.push([k, p, q, t0 - ratio.ln() / r]);
    }
    out
}

/// Starting `[K1, r1, t01, K2, r2, t02]` candidates for the bi-logistic,
/// best first, at most [`BILOGISTIC_STARTS`].
///
/// The time-ordered series is split at 20%, 30%, …, 80% of its points; a
/// logistic is self-started ([`logistic`]) on the part before the split,
/// and another on what the later part has above that first logistic. Each
/// pair is scored by its residual sum of squares on all the data, and the
/// best are kept (pulse 1 the earlier). Without any pair (e.g. too few
/// points), one start splits the single logistic fit into two half-height
/// pulses a sixth of the time span either side of its midpoint.
pub fn bilogistic(t: &[f64], y: &[f64]) -> Vec<[f64; 6]> {
    let pts = sorted_points(t, y);
    let n = pts.len();
    let (ts, ys): (Vec<f64>, Vec<f64>) = pts.iter().copied().unzip();
    let curve = |p: &[f64; 6], ti: f64| {
        p[0] * crate::model::sigmoid(p[1] * (ti - p[2]))
            + p[3] * crate::model::sigmoid(p[4] * (ti - p[5]))
    };
    let mut scored: Vec<(f64, [f64; 6])> = Vec::new();
    for tenth in 2..=8 {
        let k = (n * tenth + 5) / 10;
        if k < 3 || n < k + 3 {
            continue;
        }
        let Some([k1, r1, t01]) = logistic(&ts[..k], &ys[..k], None) else {
            continue;
        };
        let rest: Vec<f64> = (k..n)
            .map(|i| ys[i] - k1 * crate::model::sigmoid(r1 * (ts[i] - t01)))
            .collect();
        let Some([k2, r2, t02]) = logistic(&ts[k..], &rest, None) else {
            continue;
        };
        let mut p = [k1, r1, t01, k2, r2, t02];
        if t02 < t01 {
            p = [k2, r2, t02, k1, r1, t01];
        }
        let rss: f64 = pts.iter().map(|&(ti, v)| (v - curve(&p, ti)).powi(2)).sum();
        if rss.is_finite() {
            scored.push((rss, p));
        }
    }
    scored.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<[f64; 6]> = scored
        .into_iter()
        .map(|s| s.1)
        .take(BILOGISTIC_STARTS)
        .collect();
    if out.is_empty() {
        if let (Some([k, r, t0]), Some(first), Some(last)) =
            (logistic(t, y, None), ts.first(), ts.last())
        {
            let h = (last - first) / 6.0;
            out.push([k / 2.0, 2.0 * r, t0 - h, k / 2.0, 2.0 * r, t0 + h]);
        }
    }
    out
}

/// Bi-logistic starts the solver runs from.
pub const BILOGISTIC_STARTS: usize = 3;

#[cfg(test)]
mod tests {
    use super::*;

    /// On exact logistic data the Fisher–Pry line is exact at the true K,
    /// so the search lands close to the truth (analytic fact).
    #[test]
    fn logistic_start_is_close_on_exact_data() {
        let (k, r, t0) = (500.0, 0.7, 12.0);
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|ti| k / (1.0 + (-r * (ti - t0)).exp()))
            .collect();
        let [ks, rs, t0s] = logistic(&t, &y, None).unwrap();
        assert!((ks / k - 1.0).abs() < 0.05, "K {ks}");
        assert!((rs / r - 1.0).abs() < 0.05, "r {rs}");
        assert!((t0s - t0).abs() < 0.5, "t0 {t0s}");
    }

    #[test]
    fn gompertz_start_is_close_on_exact_data() {
        let (k, r, t0) = (80.0, 0.4, 10.0);
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|ti| k * (-(-r * (ti - t0)).exp()).exp())
            .collect();
        let [ks, rs, t0s] = gompertz(&t, &y, None).unwrap();
        assert!((ks / k - 1.0).abs() < 0.05, "K {ks}");
        assert!((rs / r - 1.0).abs() < 0.05, "r {rs}");
        assert!((t0s - t0).abs() < 0.5, "t0 {t0s}");
    }

    /// The contract: `None` only without two positive values at different
    /// times (module docs of `start`).
    #[test]
    fn no_start_without_two_positive_points() {
        assert!(logistic(&[1.0, 2.0, 3.0], &[0.0, -1.0, 5.0], None).is_none());
        assert!(gompertz(&[1.0, 2.0, 3.0], &[0.0, -1.0, 5.0], None).is_none());
        assert!(exponential(&[1.0, 2.0], &[0.0, 0.0]).is_none());
        // Two positive values, but at the same time: no line, no span.
        assert!(logistic(&[4.0, 4.0], &[1.0, 2.0], None).is_none());
    }

    /// demo-data/weekly_signups.csv: 52 weekly counts (per period, not
    /// cumulative), all positive, rising to a peak of 239 at week 23 and
    /// falling again. Every Fisher–Pry and log–log line over the K grid has
    /// a negative slope on these data (checked when the bug was found), so
    /// the grid search alone gave no start.
    const WEEKLY_SIGNUPS: [f64; 52] = [
        31.0, 25.0, 45.0, 45.0, 49.0, 34.0, 54.0, 73.0, 73.0, 95.0, 84.0, 108.0, 121.0, 132.0,
        130.0, 153.0, 172.0, 186.0, 177.0, 190.0, 215.0, 203.0, 239.0, 223.0, 222.0, 231.0, 231.0,
        231.0, 196.0, 174.0, 166.0, 175.0, 159.0, 158.0, 133.0, 115.0, 112.0, 114.0, 71.0, 68.0,
        64.0, 57.0, 59.0, 63.0, 37.0, 32.0, 26.0, 22.0, 26.0, 24.0, 18.0, 13.0,
    ];

    fn weeks() -> Vec<f64> {
        (1..=52).map(f64::from).collect()
    }

    /// The shape fallback on a small hump, worked by hand from its
    /// definition: K = 1.05 · 9 = 9.45; r = ln 81 / (4 − 0); the data first
    /// reach K/2 = 4.725 between (1, 3) and (2, 9), at 1 + 1.725 / 6.
    #[test]
    fn shape_start_by_hand() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [1.0, 3.0, 9.0, 5.0, 2.0];
        let [k, r, t0] = shape_start(Linearisation::FisherPry, &t, &y, 1.05 * 9.0).unwrap();
        assert!((k - 9.45).abs() < 1e-12, "K {k}");
        assert!((r - 81f64.ln() / 4.0).abs() < 1e-12, "r {r}");
        assert!((t0 - 1.2875).abs() < 1e-12, "t0 {t0}");
        // Order of the points does not matter (rows may come unsorted).
        let ts = [3.0, 0.0, 4.0, 2.0, 1.0];
        let ys = [5.0, 1.0, 2.0, 9.0, 3.0];
        let u = shape_start(Linearisation::FisherPry, &ts, &ys, 9.45).unwrap();
        assert!((u[2] - 1.2875).abs() < 1e-12, "unsorted t0 {}", u[2]);
    }

    /// Hump-shaped data (weekly_signups) must get a start (the self-start
    /// contract above); r > 0 and K > 0 are the models' parameter domains,
    /// and t0 lies inside the data because the fallback takes it where the
    /// data cross the curve's level at t0.
    #[test]
    fn hump_shaped_data_get_a_start() {
        let t = weeks();
        for (name, s) in [
            ("logistic", logistic(&t, &WEEKLY_SIGNUPS, None)),
            ("gompertz", gompertz(&t, &WEEKLY_SIGNUPS, None)),
        ] {
            let [k, r, t0] = s.unwrap_or_else(|| panic!("{name}: no start"));
            assert!(k.is_finite() && k > 0.0, "{name} K {k}");
            assert!(r.is_finite() && r > 0.0, "{name} r {r}");
            assert!((1.0..=52.0).contains(&t0), "{name} t0 {t0}");
        }
    }

    /// Strictly decreasing data (100 e^(−t/10), t = 0..20): no rising line
    /// exists for any K, so the fallback decides r and t0. By its
    /// definition r = ln 81 / 20 (time span 20) and, as the data start above
    /// the K/2 level, t0 is the first time, 0.
    #[test]
    fn decreasing_data_get_a_start() {
        let t: Vec<f64> = (0..=20).map(f64::from).collect();
        let y: Vec<f64> = t.iter().map(|ti| 100.0 * (-ti / 10.0).exp()).collect();
        let [k, r, t0] = logistic(&t, &y, None).expect("logistic start");
        assert!(k.is_finite() && k > 0.0, "K {k}");
        assert!((r - 81f64.ln() / 20.0).abs() < 1e-12, "r {r}");
        assert_eq!(t0, 0.0);
        let [k, r, _] = gompertz(&t, &y, None).expect("gompertz start");
        assert!(k.is_finite() && k > 0.0 && r > 0.0, "K {k} r {r}");
        // A fixed K above the data takes the same fallback.
        let [k, r, t0] = logistic(&t, &y, Some(150.0)).expect("fixed-K start");
        assert_eq!(k, 150.0);
        assert!(r > 0.0 && t0 == 0.0, "r {r} t0 {t0}");
    }

    /// The bug report: `plateau compare demo-data/weekly_signups.csv` said
    /// the logistic, Gompertz and Richards models could not start. With a
    /// start, each fit must run to a result (a poor one is acceptable; the
    /// data are per-period counts, not a growth curve).
    #[test]
    fn fits_on_weekly_signups_complete() {
        use crate::fit::{fit_xy, FitOptions};
        use crate::Model;
        let t = weeks();
        for model in [Model::Logistic, Model::Gompertz, Model::Richards] {
            let f = fit_xy(&t, &WEEKLY_SIGNUPS, model, &FitOptions::default())
                .unwrap_or_else(|e| panic!("{}: {}", model.name(), e.message));
            assert!(
                f.values().iter().all(|v| v.is_finite()),
                "{}: {:?}",
                model.name(),
                f.values()
            );
        }
    }

    /// The message must name the real reason when there is no start.
    #[test]
    fn no_start_message_is_accurate() {
        use crate::fit::{fit_xy, FitOptions};
        use crate::Model;
        let e = fit_xy(
            &[1.0, 2.0, 3.0, 4.0],
            &[0.0, -1.0, 5.0, 0.0],
            Model::Logistic,
            &FitOptions::default(),
        )
        .unwrap_err();
        assert!(
            e.message
                .contains("at least two positive values at different times"),
            "{}",
            e.message
        );
    }
}
