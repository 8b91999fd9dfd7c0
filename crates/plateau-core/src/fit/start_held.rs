//! Starts for fits with held parameters, and the small deterministic
//! multi-start that such fits run.
//!
//! The self-starts of [`crate::start`] derive K, r and t0 together and
//! honour only a held K. A held r or t0 then overrides one entry of an
//! unconstrained start, and the other entries, meant for a different r or
//! t0, can leave the solver in a far basin (or at a curve near zero). For
//! the models whose level enters linearly — the logistic, Gompertz and
//! Richards curves (`y = K g(t; r, t0[, ν])`) and the floor logistic
//! (`y = K s + L (1 − s)`) — the shape parameters that are free are
//! searched on a grid (r on a log scale over 10⁻³…10³ per time span, in
//! steps of half a decade; t0 as `r (t_c − t0)` over ±8 in steps of 1
//! around the mid time `t_c`, so that it follows the held or trial r), the free level(s) solved by weighted linear least
//! squares at every node, and the grid's best local minima returned as
//! starts. Held values stay as they are at every node.
//!
//! The grid works on at most [`GRID_POINTS`] evenly spread observations on
//! the data's own scale: a start only has to land in the right basin; the
//! solver then minimises the actual problem from each start and the best
//! minimum is kept (see `solve`).

use crate::model::{Curve, Model};

/// Observations the grid evaluates (evenly spread, first and last included).
const GRID_POINTS: usize = 64;
/// Grid of `log10(r · span)`.
const LOG_R: (f64, f64, usize) = (-3.0, 3.0, 13);
/// Grid of `r (t_c − t0)`.
const Z: (f64, f64, usize) = (-8.0, 8.0, 17);

/// Whether [`held_starts`] derives starts for `model`.
pub(super) fn supported(model: Model) -> bool {
    matches!(
        model,
        Model::Logistic | Model::Gompertz | Model::Richards | Model::Logistic4
    )
}

fn grid((lo, hi, n): (f64, f64, usize)) -> impl Iterator<Item = f64> {
    (0..n).map(move |i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
}

/// Up to `count` full parameter vectors, each honouring every held value
/// in `fixed`, from the best distinct local minima of the grid (best
/// first); empty for models without support or data the grid cannot use.
/// `w` are per-observation weights (ignored unless one per point).
pub(super) fn held_starts(
    model: Model,
    t: &[f64],
    y: &[f64],
    w: Option<&[f64]>,
    fixed: &[Option<f64>],
    count: usize,
) -> Vec<Vec<f64>> {
    if !supported(model) || t.len() != y.len() || t.len() < 2 {
        return Vec::new();
    }
    let n = t.len();
    let m = n.min(GRID_POINTS);
    let pick = |i: usize| {
        if m == n {
            i
        } else {
            (i * (n - 1) + (m - 1) / 2) / (m - 1)
        }
    };
    let ts: Vec<f64> = (0..m).map(|i| t[pick(i)]).collect();
    let ys: Vec<f64> = (0..m).map(|i| y[pick(i)]).collect();
    let ws: Vec<f64> = match w {
        Some(w) if w.len() == n => (0..m).map(|i| w[pick(i)]).collect(),
        _ => vec![1.0; m],
    };
    if ts.iter().chain(&ys).chain(&ws).any(|v| !v.is_finite()) {
        return Vec::new();
    }
    let (tmin, tmax) = crate::linalg::min_max(&ts);
    let span = tmax - tmin;
    if span.is_nan() || span <= 0.0 {
        return Vec::new();
    }
    let tc = 0.5 * (tmin + tmax);
    let (k_fixed, r_fixed, t0_fixed) = (fixed[0], fixed[1], fixed[2]);
    // The fourth slot: Richards' ν (held, else the logistic's 1) or the
    // floor L of logistic4 (held or solved with K).
    let nu = match model {
        Model::Richards => Some(fixed[3].unwrap_or(1.0)),
        _ => None,
    };
    let l_fixed = (model == Model::Logistic4).then(|| fixed[3]).flatten();
    let rs: Vec<f64> = match r_fixed {
        Some(r) => vec![r],
        None => grid(LOG_R).map(|u| 10f64.powf(u) / span).collect(),
    };
    let zs: Vec<f64> = match t0_fixed {
        Some(_) => vec![0.0],
        None => grid(Z).collect(),
    };
    // Scores (RSS on the grid points; ∞ where no valid level exists) and
    // parameter vectors, row-major over (r, z).
    let mut score = vec![f64::INFINITY; rs.len() * zs.len()];
    let mut params: Vec<Vec<f64>> = vec![Vec::new(); score.len()];
    let mut g = vec![0.0; m];
    for (a, &r) in rs.iter().enumerate() {
        for (b, &z) in zs.iter().enumerate() {
            let t0 = t0_fixed.unwrap_or(tc - z / r);
            let shape_p: Vec<f64> = match model {
                Model::Logistic | Model::Gompertz => vec![1.0, r, t0],
                Model::Richards => vec![1.0, r, t0, nu.unwrap_or(1.0)],
                _ => vec![1.0, r, t0, 0.0],
            };
            Curve::new(model, &shape_p).values(&ts, &mut g);
            if g.iter().any(|v| !v.is_finite()) {
                continue;
            }
            let Some((k, l)) = levels(&g, &ys, &ws, k_fixed, l_fixed, model == Model::Logistic4)
            else {
                continue;
            };
            let rss: f64 = (0..m)
                .map(|i| {
                    let f = k * g[i] + l * (1.0 - g[i]);
                    let e = ys[i] - f;
                    ws[i] * e * e
                })
                .sum();
            if !rss.is_finite() {
                continue;
            }
            let i = a * zs.len() + b;
            score[i] = rss;
            params[i] = match model {
                Model::Logistic | Model::Gompertz => vec![k, r, t0],
                Model::Richards => vec![k, r, t0, nu.unwrap_or(1.0)],
                _ => vec![k, r, t0, l],
            };
        }
    }
    // Local minima over the grid's neighbours (8-connected), best first.
    let (nr, nz) = (rs.len() as isize, zs.len() as isize);
    let mut minima: Vec<usize> = (0..score.len())
        .filter(|&i| {
            let s = score[i];
            if !s.is_finite() {
                return false;
            }
            let (a, b) = ((i / zs.len()) as isize, (i % zs.len()) as isize);
            (-1..=1).all(|da| {
                (-1..=1).all(|db| {
                    let (a2, b2) = (a + da, b + db);
                    if (da, db) == (0, 0) || a2 < 0 || b2 < 0 || a2 >= nr || b2 >= nz {
                        return true;
                    }
                    s <= score[(a2 * nz + b2) as usize]
                })
            })
        })
        .collect();
    minima.sort_by(|&i, &j| score[i].total_cmp(&score[j]));
    minima.truncate(count);
    minima.into_iter().map(|i| params[i].clone()).collect()
}

/// The weighted least-squares level(s) for shape `g`: `(K, 0)` for
/// `y = K g`, `(K, L)` for `y = K g + L (1 − g)` (`floor`), each held value
/// kept; `None` when K would not be positive or finite.
fn levels(
    g: &[f64],
    y: &[f64],
    w: &[f64],
    k_fixed: Option<f64>,
    l_fixed: Option<f64>,
    floor: bool,
) -> Option<(f64, f64)> {
    let sum = |f: &dyn Fn(usize) -> f64| (0..g.len()).map(f).sum::<f64>();
    let (k, l) = if !floor {
        let k = match k_fixed {
            Some(k) => k,
            None => sum(&|i| w[i] * y[i] * g[i]) / sum(&|i| w[i] * g[i] * g[i]),
        };
        (k, 0.0)
    } else {
        let h = |i: usize| 1.0 - g[i];
        match (k_fixed, l_fixed) {
            (Some(k), Some(l)) => (k, l),
            (Some(k), None) => (
                k,
                sum(&|i| w[i] * (y[i] - k * g[i]) * h(i)) / sum(&|i| w[i] * h(i) * h(i)),
            ),
            (None, Some(l)) => (
                sum(&|i| w[i] * (y[i] - l * h(i)) * g[i]) / sum(&|i| w[i] * g[i] * g[i]),
                l,
            ),
            (None, None) => {
                let (sgg, shh, sgh) = (
                    sum(&|i| w[i] * g[i] * g[i]),
                    sum(&|i| w[i] * h(i) * h(i)),
                    sum(&|i| w[i] * g[i] * h(i)),
                );
                let (syg, syh) = (sum(&|i| w[i] * y[i] * g[i]), sum(&|i| w[i] * y[i] * h(i)));
                let det = sgg * shh - sgh * sgh;
                if det.is_nan() || det.abs() <= 1e-12 * sgg * shh {
                    return None;
                }
                ((syg * shh - syh * sgh) / det, (syh * sgg - syg * sgh) / det)
            }
        }
    };
    (k.is_finite() && k > 0.0 && l.is_finite()).then_some((k, l))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A held r or t0 is honoured, and the grid's best start is already
    /// close to the constrained minimum on an exact logistic.
    #[test]
    fn starts_honour_held_values() {
        let t: Vec<f64> = (0..30).map(|i| i as f64).collect();
        let y: Vec<f64> = t
            .iter()
            .map(|v| 800.0 / (1.0 + (-0.4 * (v - 14.0)).exp()))
            .collect();
        let s = held_starts(Model::Logistic, &t, &y, None, &[None, Some(0.4), None], 3);
        assert!(!s.is_empty());
        assert_eq!(s[0][1], 0.4);
        assert!((s[0][2] - 14.0).abs() < 1.0, "{:?}", s[0]);
        assert!((s[0][0] / 800.0 - 1.0).abs() < 0.1, "{:?}", s[0]);
        let s = held_starts(Model::Gompertz, &t, &y, None, &[None, None, Some(400.0)], 3);
        assert!(s.iter().all(|p| p[2] == 400.0 && p[0] > 0.0 && p[1] > 0.0));
    }
}
