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
//! `K − max(y)`, then refined by golden-section search. The exponential
//! starts from `ln y = ln a + r t`. The Richards and floor-logistic starts
//! come from these (see `fit`).

/// Straight-line weighted least squares `z ≈ a + b t`; returns
/// `(a, b, weighted RSS)`, or `None` when the times do not vary.
fn weighted_line(t: &[f64], z: &[f64], w: &[f64]) -> Option<(f64, f64, f64)> {
    let sw: f64 = w.iter().sum();
    if sw <= 0.0 || !sw.is_finite() {
        return None;
    }
    let tm = t.iter().zip(w).map(|(a, b)| a * b).sum::<f64>() / sw;
    let zm = z.iter().zip(w).map(|(a, b)| a * b).sum::<f64>() / sw;
    let mut stt = 0.0;
    let mut stz = 0.0;
    for i in 0..t.len() {
        let dt = t[i] - tm;
        stt += w[i] * dt * dt;
        stz += w[i] * dt * (z[i] - zm);
    }
    if stt <= 0.0 || !stt.is_finite() {
        return None;
    }
    let b = stz / stt;
    let a = zm - b * tm;
    let rss = (0..t.len())
        .map(|i| {
            let e = z[i] - a - b * t[i];
            w[i] * e * e
        })
        .sum();
    Some((a, b, rss))
}

/// Which straight-line transform to use for a trial K.
#[derive(Clone, Copy)]
enum Linearisation {
    FisherPry,
    LogLog,
}

impl Linearisation {
    /// `(z, weight)` for one observation `0 < y < K`.
    fn transform(self, y: f64, k: f64) -> (f64, f64) {
        match self {
            Linearisation::FisherPry => {
                let z = (y / (k - y)).ln();
                let w = y * (k - y) / k;
                (z, w * w)
            }
            Linearisation::LogLog => {
                let l = (y / k).ln();
                let z = (-l).ln();
                let w = y * l;
                (z, w * w)
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
}

/// Result of the line fit for one trial K: `(score, r, t0)`.
fn line_for_k(lin: Linearisation, t: &[f64], y: &[f64], k: f64, buf: &mut Buffers) -> Option<(f64, f64, f64)> {
    buf.z.clear();
    buf.w.clear();
    for &yi in y {
        let (z, w) = lin.transform(yi, k);
        buf.z.push(z);
        buf.w.push(w);
    }
    let (a, b, rss) = weighted_line(t, &buf.z, &buf.w)?;
    let (r, t0) = lin.params(a, b);
    if !(r > 0.0) || !t0.is_finite() {
        return None;
    }
    Some((rss, r, t0))
}

#[derive(Default)]
struct Buffers {
    z: Vec<f64>,
    w: Vec<f64>,
}

/// Searches K for the linearisation; returns `(K, r, t0)`.
///
/// With `fixed_k`, only the line for that K is fitted.
fn search_k(lin: Linearisation, t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    // Only 0 < y enter a logarithm; with a fixed K also y < K.
    let (tp, yp): (Vec<f64>, Vec<f64>) = t
        .iter()
        .zip(y)
        .filter(|(_, v)| **v > 0.0 && fixed_k.is_none_or(|k| **v < k))
        .map(|(a, b)| (*a, *b))
        .unzip();
    if tp.len() < 2 {
        return None;
    }
    let mut buf = Buffers::default();
    if let Some(k) = fixed_k {
        let (_, r, t0) = line_for_k(lin, &tp, &yp, k, &mut buf)?;
        return Some([k, r, t0]);
    }
    let ymax = yp.iter().cloned().fold(f64::MIN, f64::max);
    let ymin = yp.iter().cloned().fold(f64::MAX, f64::min);
    let span = if ymax > ymin { ymax - ymin } else { ymax };
    // K = ymax + span · 10^u, u on a grid from −6 to 3.
    let k_of = |u: f64| ymax + span * 10f64.powf(u);
    let mut score = |u: f64| -> f64 {
        line_for_k(lin, &tp, &yp, k_of(u), &mut buf).map_or(f64::INFINITY, |s| s.0)
    };
    let grid: Vec<f64> = (0..=18).map(|i| -6.0 + 0.5 * i as f64).collect();
    let scores: Vec<f64> = grid.iter().map(|&u| score(u)).collect();
    let (best, best_score) = scores
        .iter()
        .enumerate()
        .fold((0, f64::INFINITY), |acc, (i, s)| if *s < acc.1 { (i, *s) } else { acc });
    if !best_score.is_finite() {
        return None;
    }
    // Golden-section refinement between the neighbours of the best node.
    let mut lo = grid[best.saturating_sub(1)];
    let mut hi = grid[(best + 1).min(grid.len() - 1)];
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut x1 = hi - g * (hi - lo);
    let mut x2 = lo + g * (hi - lo);
    let mut f1 = score(x1);
    let mut f2 = score(x2);
    for _ in 0..12 {
        if f1 <= f2 {
            hi = x2;
            x2 = x1;
            f2 = f1;
            x1 = hi - g * (hi - lo);
            f1 = score(x1);
        } else {
            lo = x1;
            x1 = x2;
            f1 = f2;
            x2 = lo + g * (hi - lo);
            f2 = score(x2);
        }
    }
    let u = if f1.min(f2) <= best_score {
        if f1 <= f2 {
            x1
        } else {
            x2
        }
    } else {
        grid[best]
    };
    let k = k_of(u);
    let (_, r, t0) = line_for_k(lin, &tp, &yp, k, &mut buf)?;
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
pub fn logistic(t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    let [k, r, t0] = search_k(Linearisation::FisherPry, t, y, fixed_k)?;
    if fixed_k.is_some() {
        return Some([k, r, t0]);
    }
    let shape = t.iter().map(|ti| crate::model::sigmoid(r * (ti - t0)));
    Some([linear_k(y, shape).unwrap_or(k), r, t0])
}

/// Starting `[K, r, t0]` for the Gompertz curve (log–log grid over K).
pub fn gompertz(t: &[f64], y: &[f64], fixed_k: Option<f64>) -> Option<[f64; 3]> {
    let [k, r, t0] = search_k(Linearisation::LogLog, t, y, fixed_k)?;
    if fixed_k.is_some() {
        return Some([k, r, t0]);
    }
    let shape = t.iter().map(|ti| (-(-r * (ti - t0)).exp()).exp());
    Some([linear_k(y, shape).unwrap_or(k), r, t0])
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

#[cfg(test)]
mod tests {
    use super::*;

    /// On exact logistic data the Fisher–Pry line is exact at the true K,
    /// so the search lands close to the truth (analytic fact).
    #[test]
    fn logistic_start_is_close_on_exact_data() {
        let (k, r, t0) = (500.0, 0.7, 12.0);
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let y: Vec<f64> = t.iter().map(|ti| k / (1.0 + (-r * (ti - t0)).exp())).collect();
        let [ks, rs, t0s] = logistic(&t, &y, None).unwrap();
        assert!((ks / k - 1.0).abs() < 0.05, "K {ks}");
        assert!((rs / r - 1.0).abs() < 0.05, "r {rs}");
        assert!((t0s - t0).abs() < 0.5, "t0 {t0s}");
    }

    #[test]
    fn gompertz_start_is_close_on_exact_data() {
        let (k, r, t0) = (80.0, 0.4, 10.0);
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let y: Vec<f64> = t.iter().map(|ti| k * (-(-r * (ti - t0)).exp()).exp()).collect();
        let [ks, rs, t0s] = gompertz(&t, &y, None).unwrap();
        assert!((ks / k - 1.0).abs() < 0.05, "K {ks}");
        assert!((rs / r - 1.0).abs() < 0.05, "r {rs}");
        assert!((t0s - t0).abs() < 0.5, "t0 {t0s}");
    }

    #[test]
    fn no_start_without_two_positive_points() {
        assert!(logistic(&[1.0, 2.0, 3.0], &[0.0, -1.0, 5.0], None).is_none());
        assert!(exponential(&[1.0, 2.0], &[0.0, 0.0]).is_none());
    }
}
