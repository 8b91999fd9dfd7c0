//! Small dense linear algebra for tall, thin least-squares problems
//! (thousands of rows, a handful of columns), without allocation in the
//! hot path.
//!
//! The SVD of an `m × n` matrix `A` (`m ≥ n`) is taken the way LAPACK's
//! `dgesvd` does for tall matrices: a Householder QR `A = Q R` first, then
//! the SVD of the small `n × n` triangle, `R = U S Vᵀ`, so that
//! `A = (Q U) S Vᵀ`. The triangle's SVD is a one-sided Jacobi iteration
//! (Hestenes 1958), which computes the singular values to high relative
//! accuracy (Demmel & Veselić 1992). Householder QR is backward stable
//! column by column (Higham 2002, thm. 19.4), so scaling the columns before
//! or after the factorisation gives the same `R D⁻¹` up to rounding.

/// Householder QR of the column-major `m × n` matrix `a` in place. The
/// reflections are applied to `b` (length `m`) as well, giving `Qᵀ b`.
///
/// On return `r` (column-major `n × n`) holds the upper-triangular factor
/// (zero below the diagonal; rows past `m` stay zero when `m < n`). The
/// contents of `a` are destroyed.
pub(crate) fn householder_qr(a: &mut [f64], m: usize, n: usize, b: &mut [f64], r: &mut [f64]) {
    debug_assert!(a.len() >= m * n && b.len() >= m && r.len() >= n * n);
    r[..n * n].iter_mut().for_each(|v| *v = 0.0);
    for k in 0..n.min(m) {
        let (head, tail) = a.split_at_mut((k + 1) * m);
        let col = &mut head[k * m + k..(k + 1) * m];
        let x0 = col[0];
        let norm = norm2(col);
        if norm == 0.0 || !norm.is_finite() {
            // Nothing to annihilate (or nothing sensible to do): R's column
            // is the column as it stands.
            for i in 0..=k {
                r[k * n + i] = head[k * m + i];
            }
            if !norm.is_finite() {
                r[k * n + k] = norm;
            }
            continue;
        }
        // H = I − v vᵀ / τ with v = x − α e₁, α = −sign(x₀) ‖x‖, so that
        // H x = α e₁ without cancellation; τ = vᵀv / 2 = ‖x‖ (‖x‖ + |x₀|).
        let alpha = if x0 >= 0.0 { -norm } else { norm };
        let v0 = x0 - alpha;
        let tau = norm * (norm + x0.abs());
        col[0] = v0;
        let v: &[f64] = col;
        for j in k + 1..n {
            let cj = &mut tail[(j - k - 1) * m + k..(j - k) * m];
            reflect(v, tau, cj);
        }
        reflect(v, tau, &mut b[k..m]);
        // R's column k: entries above the diagonal were set by earlier
        // reflections and are final now.
        for i in 0..k {
            r[k * n + i] = head[k * m + i];
        }
        r[k * n + k] = alpha;
    }
    // Wide case: the columns past the last reflection keep their rotated
    // top rows.
    for k in m.min(n)..n {
        for i in 0..m {
            r[k * n + i] = a[k * m + i];
        }
    }
}

/// `c ← (I − v vᵀ / τ) c`.
#[inline]
fn reflect(v: &[f64], tau: f64, c: &mut [f64]) {
    let s = dot(v, c) / tau;
    if s != 0.0 {
        for (ci, vi) in c.iter_mut().zip(v) {
            *ci -= s * vi;
        }
    }
}

/// `Σ a_i b_i`, with four independent partial sums so that the loop
/// pipelines (and vectorises) instead of waiting on one accumulator.
#[inline]
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; 4];
    let mut ca = a.chunks_exact(4);
    let mut cb = b.chunks_exact(4);
    for (x, y) in (&mut ca).zip(&mut cb) {
        acc[0] += x[0] * y[0];
        acc[1] += x[1] * y[1];
        acc[2] += x[2] * y[2];
        acc[3] += x[3] * y[3];
    }
    let mut tail = 0.0;
    for (x, y) in ca.remainder().iter().zip(cb.remainder()) {
        tail += x * y;
    }
    (acc[0] + acc[2]) + (acc[1] + acc[3]) + tail
}

/// Euclidean norm. Plain sum of squares, rescaled only when that
/// overflows or underflows.
#[inline]
pub(crate) fn norm2(a: &[f64]) -> f64 {
    let ss = dot(a, a);
    if ss.is_finite() && ss > f64::MIN_POSITIVE {
        return ss.sqrt();
    }
    let scale = a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if scale == 0.0 || !scale.is_finite() {
        return if a.iter().any(|v| v.is_nan()) {
            f64::NAN
        } else {
            scale
        };
    }
    let ss: f64 = a.iter().map(|v| (v / scale) * (v / scale)).sum();
    scale * ss.sqrt()
}

/// One-sided Jacobi SVD of the column-major `n × n` matrix `a`, in place.
///
/// On return column `j` of `a` holds `s_j u_j` (the left singular vector
/// scaled by its singular value), `s[j]` the singular value and column `j`
/// of `v` (column-major `n × n`) the right singular vector, unsorted.
/// Returns `false` on non-finite input.
pub(crate) fn jacobi_svd(a: &mut [f64], n: usize, s: &mut [f64], v: &mut [f64]) -> bool {
    v[..n * n].iter_mut().for_each(|x| *x = 0.0);
    for j in 0..n {
        v[j * n + j] = 1.0;
    }
    // Converges quadratically; a few sweeps suffice for the sizes used here,
    // the cap only guards against rounding cycles.
    for _sweep in 0..60 {
        let mut rotated = false;
        for p in 0..n {
            for q in p + 1..n {
                let (alpha, beta, gamma) = {
                    let ap = &a[p * n..(p + 1) * n];
                    let aq = &a[q * n..(q + 1) * n];
                    (dot(ap, ap), dot(aq, aq), dot(ap, aq))
                };
                if gamma == 0.0 || gamma.abs() <= f64::EPSILON * (alpha * beta).sqrt() {
                    continue;
                }
                if !(alpha.is_finite() && beta.is_finite() && gamma.is_finite()) {
                    return false;
                }
                rotated = true;
                // The rotation that makes columns p and q orthogonal.
                let zeta = (beta - alpha) / (2.0 * gamma);
                let t = zeta.signum() / (zeta.abs() + (1.0 + zeta * zeta).sqrt());
                let c = 1.0 / (1.0 + t * t).sqrt();
                let sn = c * t;
                rotate(a, n, p, q, c, sn);
                rotate(v, n, p, q, c, sn);
            }
        }
        if !rotated {
            break;
        }
    }
    for j in 0..n {
        s[j] = norm2(&a[j * n..(j + 1) * n]);
    }
    s[..n].iter().all(|v| v.is_finite())
}

/// Columns `p < q` of the column-major `n × n` matrix `a`:
/// `(a_p, a_q) ← (c a_p − s a_q, s a_p + c a_q)`.
#[inline]
fn rotate(a: &mut [f64], n: usize, p: usize, q: usize, c: f64, s: f64) {
    let (left, right) = a.split_at_mut(q * n);
    let ap = &mut left[p * n..(p + 1) * n];
    let aq = &mut right[..n];
    for (x, y) in ap.iter_mut().zip(aq.iter_mut()) {
        let (xp, xq) = (*x, *y);
        *x = c * xp - s * xq;
        *y = s * xp + c * xq;
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn mat(m: usize, n: usize, f: impl Fn(usize, usize) -> f64) -> Vec<f64> {
        let mut a = vec![0.0; m * n];
        for j in 0..n {
            for i in 0..m {
                a[j * m + i] = f(i, j);
            }
        }
        a
    }

    /// QᵀA = R: RᵀR = AᵀA and ‖Qᵀb‖ = ‖b‖ (orthogonality), and the
    /// singular values of a diagonal-times-orthogonal matrix are its diagonal.
    #[test]
    fn qr_and_svd_agree_with_definitions() {
        let (m, n) = (7, 3);
        let a = mat(m, n, |i, j| ((i * 3 + j * 5) % 7) as f64 - 2.5 + 0.1 * (i * j) as f64);
        let b: Vec<f64> = (0..m).map(|i| (i as f64).sin()).collect();
        let mut work = a.clone();
        let mut qtb = b.clone();
        let mut r = vec![0.0; n * n];
        householder_qr(&mut work, m, n, &mut qtb, &mut r);
        for p in 0..n {
            for q in 0..n {
                let ata: f64 = (0..m).map(|i| a[p * m + i] * a[q * m + i]).sum();
                let rtr: f64 = (0..n).map(|i| r[p * n + i] * r[q * n + i]).sum();
                assert!((ata - rtr).abs() < 1e-12 * ata.abs().max(1.0), "{p},{q}");
            }
            for i in p + 1..n {
                assert_eq!(r[p * n + i], 0.0);
            }
        }
        let nb: f64 = b.iter().map(|v| v * v).sum();
        let nq: f64 = qtb.iter().map(|v| v * v).sum();
        assert!((nb - nq).abs() < 1e-12 * nb);
        // Aᵀb = Rᵀ (Qᵀb)[..n].
        for j in 0..n {
            let atb: f64 = (0..m).map(|i| a[j * m + i] * b[i]).sum();
            let rtq: f64 = (0..n).map(|i| r[j * n + i] * qtb[i]).sum();
            assert!((atb - rtq).abs() < 1e-12 * atb.abs().max(1.0));
        }

        // A 3×3 rotation times diag(5, 2, 1e-3).
        let (c, s) = (0.6f64, 0.8f64);
        let rot = [c, s, 0.0, -s, c, 0.0, 0.0, 0.0, 1.0];
        let d = [5.0, 2.0, 1e-3];
        let mut a3: Vec<f64> = (0..9).map(|k| rot[k] * d[k / 3]).collect();
        let mut sv = [0.0; 3];
        let mut v = [0.0; 9];
        assert!(jacobi_svd(&mut a3, 3, &mut sv, &mut v));
        let mut got = sv.to_vec();
        got.sort_by(|x, y| y.total_cmp(x));
        for (g, w) in got.iter().zip([5.0, 2.0, 1e-3]) {
            assert!((g - w).abs() <= 1e-14 * w, "{g} vs {w}");
        }
    }

    /// A rank-deficient matrix has a zero singular value.
    #[test]
    fn rank_deficiency_shows_as_a_zero_singular_value() {
        let mut a = vec![1.0, 2.0, 3.0, 2.0, 4.0, 6.0, 0.0, 1.0, 0.0];
        let mut s = [0.0; 3];
        let mut v = [0.0; 9];
        assert!(jacobi_svd(&mut a, 3, &mut s, &mut v));
        let smax = s.iter().cloned().fold(0.0, f64::max);
        let smin = s.iter().cloned().fold(f64::INFINITY, f64::min);
        assert!(smin <= 1e-15 * smax, "{s:?}");
    }
}
