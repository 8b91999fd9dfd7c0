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

/// Householder QR of the first `n` columns of the column-major matrix `a`
/// (`m` rows, `n + extra` columns) in place; the reflections are applied to
/// the `extra` columns and to `b` (length `m`, or empty) as well, which then
/// hold `Qᵀ b` for each (the first `n` entries are the part that `R` can
/// fit).
///
/// On return `r` (column-major `n × n`) holds the upper-triangular factor
/// (zero below the diagonal; rows past `m` stay zero when `m < n`). The
/// first `n` columns of `a` are destroyed.
pub(crate) fn householder_qr(
    a: &mut [f64],
    m: usize,
    n: usize,
    extra: usize,
    b: &mut [f64],
    r: &mut [f64],
) {
    #[cfg(target_arch = "x86_64")]
    if std::is_x86_feature_detected!("avx2") {
        // SAFETY: the processor supports AVX2, checked just above.
        return unsafe { householder_qr_avx2(a, m, n, extra, b, r) };
    }
    householder_qr_any::<false>(a, m, n, extra, b, r)
}

/// [`householder_qr`] compiled for AVX2 (see the crate docs).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn householder_qr_avx2(
    a: &mut [f64],
    m: usize,
    n: usize,
    extra: usize,
    b: &mut [f64],
    r: &mut [f64],
) {
    householder_qr_any::<true>(a, m, n, extra, b, r)
}

/// [`householder_qr`]; `SIMD` selects the AVX2 kernels (set only by
/// [`householder_qr_avx2`]), which give the same bits.
#[inline(always)]
fn householder_qr_any<const SIMD: bool>(
    a: &mut [f64],
    m: usize,
    n: usize,
    extra: usize,
    b: &mut [f64],
    r: &mut [f64],
) {
    debug_assert!(a.len() >= m * (n + extra) && (b.is_empty() || b.len() >= m));
    debug_assert!(r.len() >= n * n);
    r[..n * n].iter_mut().for_each(|v| *v = 0.0);
    let total = n + extra;
    for k in 0..n.min(m) {
        let (head, tail) = a.split_at_mut((k + 1) * m);
        let tail = &mut tail[..(total - k - 1) * m];
        let col = &mut head[k * m + k..(k + 1) * m];
        // The columns the reflection applies to, rows k..m: the later
        // columns, then b.
        let mut cols: [&mut [f64]; FUSED_MAX] = Default::default();
        let mut count = 0;
        let mut fused = true;
        for c in tail
            .chunks_exact_mut(m)
            .map(|c| &mut c[k..])
            .chain((!b.is_empty()).then(|| &mut b[k..m]))
        {
            if count == FUSED_MAX {
                fused = false;
                break;
            }
            cols[count] = c;
            count += 1;
        }
        let alpha = if fused {
            match count {
                0 => reflect_fused::<0, SIMD>(col, &mut cols),
                1 => reflect_fused::<1, SIMD>(col, &mut cols),
                2 => reflect_fused::<2, SIMD>(col, &mut cols),
                3 => reflect_fused::<3, SIMD>(col, &mut cols),
                4 => reflect_fused::<4, SIMD>(col, &mut cols),
                5 => reflect_fused::<5, SIMD>(col, &mut cols),
                6 => reflect_fused::<6, SIMD>(col, &mut cols),
                7 => reflect_fused::<7, SIMD>(col, &mut cols),
                _ => reflect_fused::<FUSED_MAX, SIMD>(col, &mut cols),
            }
        } else {
            None
        };
        let alpha = match alpha {
            Some(alpha) => alpha,
            None => {
                let col = &mut head[k * m + k..(k + 1) * m];
                match reflect_scaled(col, tail, m, k, if b.is_empty() { b } else { &mut b[k..m] }) {
                    Some(alpha) => alpha,
                    None => {
                        // Nothing to annihilate (or nothing sensible to
                        // do): R's column is the column as it stands.
                        let norm = norm2(&head[k * m + k..(k + 1) * m]);
                        for i in 0..=k {
                            r[k * n + i] = head[k * m + i];
                        }
                        if !norm.is_finite() {
                            r[k * n + k] = norm;
                        }
                        continue;
                    }
                }
            }
        };
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

/// The most columns [`reflect_fused`] takes at once (the later columns of
/// a growth model's Jacobian and the right side); more go to
/// [`reflect_scaled`].
const FUSED_MAX: usize = 8;

/// One Householder step on the column `x` (rows k..m), applied to the `C`
/// columns `cols` (the same rows), in two passes over the rows: the first
/// gathers `Σ_{i≥1} x_i²` and every `Σ_{i≥1} x_i c_i` at once, the second
/// updates every column. With `H = I − v vᵀ / τ`, `v = x − α e₁`,
/// `α = −sign(x₀) ‖x‖` (so that `H x = α e₁` without cancellation) and
/// `τ = vᵀv / 2 = ‖x‖ (‖x‖ + |x₀|)`, the dot products with `v` follow from
/// those with `x` exactly: `vᵀc = Σ_{i≥1} x_i c_i + v₀ c₀`, as `v` and `x`
/// differ only in their first entry.
///
/// Writes `v` over `x` and returns `α`; returns `None` (and changes
/// nothing) when `‖x‖²` is zero, subnormal or not finite, where the
/// rescaled path must decide.
#[inline(always)]
fn reflect_fused<const C: usize, const SIMD: bool>(
    x: &mut [f64],
    cols: &mut [&mut [f64]; FUSED_MAX],
) -> Option<f64> {
    let len = x.len();
    let (x0, rest) = x.split_first_mut()?;
    let n_rest = len - 1;
    let cs: &mut [&mut [f64]; C] = (&mut cols[..C]).try_into().expect("C columns");
    let mut c_rest: [&mut [f64]; C] = std::array::from_fn(|_| <&mut [f64]>::default());
    let mut c_first = [0.0f64; C];
    for (c, (dst, first)) in cs.iter_mut().zip(c_rest.iter_mut().zip(c_first.iter_mut())) {
        let (f, rr) = std::mem::take(c).split_first_mut().expect("as long as x");
        *first = *f;
        *dst = &mut rr[..n_rest];
        // Keep a handle on the first entry for the update below.
        *c = std::slice::from_mut(f);
    }
    let rest = &mut rest[..n_rest];
    // Pass 1: partial sums per lane, as in `dot`.
    let mut axx = [0.0f64; LANES];
    let mut acc = [[0.0f64; LANES]; C];
    let full = n_rest - n_rest % LANES;
    #[cfg(target_arch = "x86_64")]
    if SIMD {
        // SAFETY: `SIMD` is set only by `householder_qr_avx2`, which runs
        // after the processor's AVX2 support was checked.
        unsafe { gather_avx2(rest, &c_rest, full, &mut axx, &mut acc) };
    } else {
        gather_any(rest, &c_rest, full, &mut axx, &mut acc);
    }
    #[cfg(not(target_arch = "x86_64"))]
    gather_any(rest, &c_rest, full, &mut axx, &mut acc);
    let mut sxx = 0.0;
    for &xi in &rest[full..] {
        sxx += xi * xi;
    }
    let x0v = *x0;
    let ss = x0v * x0v + (reduce(&axx) + sxx);
    if !(ss.is_finite() && ss > f64::MIN_POSITIVE) {
        for (c, first) in cs.iter_mut().zip(c_first) {
            c[0] = first;
        }
        return None;
    }
    let norm = ss.sqrt();
    let alpha = if x0v >= 0.0 { -norm } else { norm };
    let v0 = x0v - alpha;
    let tau = norm * (norm + x0v.abs());
    let mut scale = [0.0f64; C];
    for c in 0..C {
        let mut t = 0.0;
        for i in full..n_rest {
            t += rest[i] * c_rest[c][i];
        }
        scale[c] = ((reduce(&acc[c]) + t) + v0 * c_first[c]) / tau;
    }
    // Pass 2: c ← c − (vᵀc / τ) v, every column in the same pass.
    for c in 0..C {
        cs[c][0] = c_first[c] - scale[c] * v0;
    }
    #[cfg(target_arch = "x86_64")]
    if SIMD {
        // SAFETY: as for the first pass.
        unsafe { update_avx2(rest, &mut c_rest, full, &scale) };
    } else {
        update_any(rest, &mut c_rest, full, &scale);
    }
    #[cfg(not(target_arch = "x86_64"))]
    update_any(rest, &mut c_rest, full, &scale);
    for i in full..n_rest {
        for c in 0..C {
            c_rest[c][i] -= scale[c] * rest[i];
        }
    }
    *x0 = v0;
    Some(alpha)
}

/// The first pass of [`reflect_fused`] over the rows `0..full` (a multiple
/// of `LANES`): `Σ x_i²` and every `Σ x_i c_i`, lane by lane (row `i` goes
/// to lane `i mod LANES`), added to `axx` and `acc`.
#[inline(always)]
fn gather_any<const C: usize>(
    x: &[f64],
    cs: &[&mut [f64]; C],
    full: usize,
    axx: &mut [f64; LANES],
    acc: &mut [[f64; LANES]; C],
) {
    for i in (0..full).step_by(LANES) {
        let xi = &x[i..i + LANES];
        for l in 0..LANES {
            axx[l] += xi[l] * xi[l];
        }
        for c in 0..C {
            let ci = &cs[c][i..i + LANES];
            for l in 0..LANES {
                acc[c][l] += xi[l] * ci[l];
            }
        }
    }
}

/// The second pass of [`reflect_fused`] over the rows `0..full`:
/// `c ← c − scale_c x` for every column.
#[inline(always)]
fn update_any<const C: usize>(x: &[f64], cs: &mut [&mut [f64]; C], full: usize, scale: &[f64; C]) {
    for i in (0..full).step_by(LANES) {
        let xi = &x[i..i + LANES];
        for c in 0..C {
            let ci = &mut cs[c][i..i + LANES];
            for l in 0..LANES {
                ci[l] -= scale[c] * xi[l];
            }
        }
    }
}

/// [`gather_any`] in AVX2 registers: the same products and sums in the
/// same lanes (two registers of four), so the same bits.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn gather_avx2<const C: usize>(
    x: &[f64],
    cs: &[&mut [f64]; C],
    full: usize,
    axx: &mut [f64; LANES],
    acc: &mut [[f64; LANES]; C],
) {
    use std::arch::x86_64::*;
    assert!(full.is_multiple_of(LANES) && x.len() >= full && cs.iter().all(|c| c.len() >= full));
    let load = |p: &[f64], i: usize| {
        // SAFETY: i + 4 ≤ full ≤ the slice's length (asserted above).
        unsafe { _mm256_loadu_pd(p.as_ptr().add(i)) }
    };
    let mut xx = [_mm256_setzero_pd(); 2];
    let mut ac = [[_mm256_setzero_pd(); 2]; C];
    for i in (0..full).step_by(LANES) {
        let xv = [load(x, i), load(x, i + 4)];
        for h in 0..2 {
            xx[h] = _mm256_add_pd(xx[h], _mm256_mul_pd(xv[h], xv[h]));
        }
        for c in 0..C {
            for h in 0..2 {
                let cv = load(cs[c], i + 4 * h);
                ac[c][h] = _mm256_add_pd(ac[c][h], _mm256_mul_pd(xv[h], cv));
            }
        }
    }
    let store = |dst: &mut [f64; LANES], v: [__m256d; 2]| {
        let mut out = [0.0f64; LANES];
        // SAFETY: `out` holds 8 doubles, written 4 at a time at 0 and 4.
        unsafe {
            _mm256_storeu_pd(out.as_mut_ptr(), v[0]);
            _mm256_storeu_pd(out.as_mut_ptr().add(4), v[1]);
        }
        for (d, o) in dst.iter_mut().zip(out) {
            *d += o;
        }
    };
    store(axx, xx);
    for c in 0..C {
        store(&mut acc[c], ac[c]);
    }
}

/// [`update_any`] in AVX2 registers (the same bits).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
fn update_avx2<const C: usize>(x: &[f64], cs: &mut [&mut [f64]; C], full: usize, scale: &[f64; C]) {
    use std::arch::x86_64::*;
    assert!(full.is_multiple_of(LANES) && x.len() >= full && cs.iter().all(|c| c.len() >= full));
    let sv: [__m256d; C] = std::array::from_fn(|c| _mm256_set1_pd(scale[c]));
    for i in (0..full).step_by(4) {
        // SAFETY: i + 4 ≤ full ≤ every slice's length (asserted above).
        unsafe {
            let xv = _mm256_loadu_pd(x.as_ptr().add(i));
            for c in 0..C {
                let p = cs[c].as_mut_ptr().add(i);
                let cv = _mm256_loadu_pd(p);
                _mm256_storeu_pd(p, _mm256_sub_pd(cv, _mm256_mul_pd(sv[c], xv)));
            }
        }
    }
}

/// One Householder step on column `k` of the column-major `a` (as
/// [`reflect_fused`], the norm rescaled against overflow and underflow),
/// applied column by column to the later columns `tail` and to `b`
/// (rows k..m, or empty). `None` when the column is zero or not finite.
fn reflect_scaled(
    col: &mut [f64],
    tail: &mut [f64],
    m: usize,
    k: usize,
    b: &mut [f64],
) -> Option<f64> {
    let x0 = col[0];
    let norm = norm2(col);
    if norm == 0.0 || !norm.is_finite() {
        return None;
    }
    let alpha = if x0 >= 0.0 { -norm } else { norm };
    // vᵀc / τ with τ = ‖x‖ (‖x‖ + |x₀|) divided out a factor at a time,
    // and v scaled by 1/‖x‖ before the products: for the columns that come
    // here τ and the products v_i c_i can underflow.
    let big = norm + x0.abs();
    col[0] = x0 - alpha;
    let v: &[f64] = col;
    let reflect = |c: &mut [f64]| {
        let s = v
            .iter()
            .zip(c.iter())
            .map(|(vi, ci)| (vi / norm) * ci)
            .sum::<f64>()
            / big;
        if s != 0.0 {
            for (ci, vi) in c.iter_mut().zip(v) {
                *ci -= s * vi;
            }
        }
    };
    for cj in tail.chunks_exact_mut(m) {
        reflect(&mut cj[k..]);
    }
    if !b.is_empty() {
        reflect(b);
    }
    Some(alpha)
}

/// A vector of `f64` for the solver's small per-parameter arrays: held
/// inline up to 16 entries (n² for up to 4 unknowns, the growth models'
/// most), on the heap beyond, so that a solve allocates nothing for them.
#[derive(Clone)]
pub(crate) struct SmallVec {
    inline: [f64; 16],
    heap: Vec<f64>,
    len: usize,
}

impl SmallVec {
    pub(crate) fn zeros(len: usize) -> SmallVec {
        SmallVec {
            inline: [0.0; 16],
            heap: if len > 16 { vec![0.0; len] } else { Vec::new() },
            len,
        }
    }
}

impl std::ops::Deref for SmallVec {
    type Target = [f64];
    fn deref(&self) -> &[f64] {
        if self.len > 16 {
            &self.heap
        } else {
            &self.inline[..self.len]
        }
    }
}

impl std::ops::DerefMut for SmallVec {
    fn deref_mut(&mut self) -> &mut [f64] {
        if self.len > 16 {
            &mut self.heap
        } else {
            &mut self.inline[..self.len]
        }
    }
}

/// `Σ a_i b_i`, with `LANES` independent partial sums so that the loop
/// pipelines (and vectorises) instead of waiting on one accumulator.
#[inline(always)]
pub(crate) fn dot(a: &[f64], b: &[f64]) -> f64 {
    let n = a.len().min(b.len());
    let (a, b) = (&a[..n], &b[..n]);
    let mut acc = [0.0f64; LANES];
    let mut ca = a.chunks_exact(LANES);
    let mut cb = b.chunks_exact(LANES);
    for (x, y) in (&mut ca).zip(&mut cb) {
        for l in 0..LANES {
            acc[l] += x[l] * y[l];
        }
    }
    let mut tail = 0.0;
    for (x, y) in ca.remainder().iter().zip(cb.remainder()) {
        tail += x * y;
    }
    reduce(&acc) + tail
}

/// Partial sums per reduction: enough independent additions in flight to
/// hide their latency (two AVX registers, four SSE ones).
const LANES: usize = 8;

/// The sum of the partial sums, in a fixed pairwise order.
#[inline(always)]
fn reduce(acc: &[f64; LANES]) -> f64 {
    ((acc[0] + acc[4]) + (acc[2] + acc[6])) + ((acc[1] + acc[5]) + (acc[3] + acc[7]))
}

/// `Σ f(a_i)` with four partial sums (as [`dot`]).
#[inline(always)]
pub(crate) fn sum_by(a: &[f64], f: impl Fn(f64) -> f64) -> f64 {
    let mut acc = [0.0f64; 4];
    let mut chunks = a.chunks_exact(4);
    for c in &mut chunks {
        for (s, v) in acc.iter_mut().zip(c) {
            *s += f(*v);
        }
    }
    let tail: f64 = chunks.remainder().iter().map(|v| f(*v)).sum();
    (acc[0] + acc[2]) + (acc[1] + acc[3]) + tail
}

/// `(min, max)` of `a` as `fold(±∞, f64::min / f64::max)` give them (NaN
/// entries ignored), with four independent lanes. Each lane keeps its
/// value unless the entry compares below (above) it, which a NaN never
/// does: one compare-and-select per entry (`minpd`/`maxpd` on x86), where
/// `f64::min` also has to test for NaN.
pub(crate) fn min_max(a: &[f64]) -> (f64, f64) {
    let mut lo = [f64::INFINITY; 4];
    let mut hi = [f64::NEG_INFINITY; 4];
    let mut chunks = a.chunks_exact(4);
    for c in &mut chunks {
        for l in 0..4 {
            lo[l] = if c[l] < lo[l] { c[l] } else { lo[l] };
            hi[l] = if c[l] > hi[l] { c[l] } else { hi[l] };
        }
    }
    for &v in chunks.remainder() {
        lo[0] = if v < lo[0] { v } else { lo[0] };
        hi[0] = if v > hi[0] { v } else { hi[0] };
    }
    (
        lo[0].min(lo[1]).min(lo[2].min(lo[3])),
        hi[0].max(hi[1]).max(hi[2].max(hi[3])),
    )
}

/// Euclidean norm. Plain sum of squares, rescaled only when that
/// overflows or underflows.
#[inline(always)]
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
    // The sizes of the growth models, with the loops unrolled.
    match n {
        2 => jacobi_svd_fixed::<2>(a, s, v),
        3 => jacobi_svd_fixed::<3>(a, s, v),
        4 => jacobi_svd_fixed::<4>(a, s, v),
        _ => jacobi_svd_general(a, n, s, v),
    }
}

/// [`jacobi_svd`] for any size.
fn jacobi_svd_general(a: &mut [f64], n: usize, s: &mut [f64], v: &mut [f64]) -> bool {
    v[..n * n].iter_mut().for_each(|x| *x = 0.0);
    for j in 0..n {
        v[j * n + j] = 1.0;
    }
    // Columns count as orthogonal once their cosine is below `tol`
    // (LAPACK's dgesvj uses √m ε; rounding keeps cosines of a few ε, so a
    // bare ε would rotate on for many sweeps without gaining accuracy).
    // Converges quadratically; a few sweeps suffice for the sizes used here,
    // the cap only guards against rounding cycles.
    let tol = f64::EPSILON * (n as f64).sqrt().max(2.0);
    for _sweep in 0..60 {
        let mut rotated = false;
        for p in 0..n {
            for q in p + 1..n {
                let (alpha, beta, gamma) = {
                    let ap = &a[p * n..(p + 1) * n];
                    let aq = &a[q * n..(q + 1) * n];
                    ap.iter()
                        .zip(aq)
                        .fold((0.0, 0.0, 0.0), |(aa, bb, ab), (x, y)| {
                            (aa + x * x, bb + y * y, ab + x * y)
                        })
                };
                if gamma == 0.0 || gamma.abs() <= tol * (alpha * beta).sqrt() {
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

/// [`jacobi_svd`] for a compile-time size `N`: the same iteration on
/// arrays, so that the short loops unroll.
fn jacobi_svd_fixed<const N: usize>(a: &mut [f64], s: &mut [f64], v: &mut [f64]) -> bool {
    let mut am = [[0.0f64; N]; N];
    let mut vm = [[0.0f64; N]; N];
    for j in 0..N {
        am[j].copy_from_slice(&a[j * N..(j + 1) * N]);
        vm[j][j] = 1.0;
    }
    let tol = f64::EPSILON * (N as f64).sqrt().max(2.0);
    for _sweep in 0..60 {
        let mut rotated = false;
        for p in 0..N {
            for q in p + 1..N {
                let (mut alpha, mut beta, mut gamma) = (0.0, 0.0, 0.0);
                for (x, y) in am[p].iter().zip(&am[q]) {
                    alpha += x * x;
                    beta += y * y;
                    gamma += x * y;
                }
                if gamma == 0.0 || gamma.abs() <= tol * (alpha * beta).sqrt() {
                    continue;
                }
                if !(alpha.is_finite() && beta.is_finite() && gamma.is_finite()) {
                    return false;
                }
                rotated = true;
                let zeta = (beta - alpha) / (2.0 * gamma);
                let t = zeta.signum() / (zeta.abs() + (1.0 + zeta * zeta).sqrt());
                let c = 1.0 / (1.0 + t * t).sqrt();
                let sn = c * t;
                for m in [&mut am, &mut vm] {
                    let (lo, hi) = m.split_at_mut(q);
                    for (x, y) in lo[p].iter_mut().zip(hi[0].iter_mut()) {
                        let (xp, xq) = (*x, *y);
                        *x = c * xp - sn * xq;
                        *y = sn * xp + c * xq;
                    }
                }
            }
        }
        if !rotated {
            break;
        }
    }
    for j in 0..N {
        a[j * N..(j + 1) * N].copy_from_slice(&am[j]);
        v[j * N..(j + 1) * N].copy_from_slice(&vm[j]);
        s[j] = norm2(&am[j]);
    }
    s[..N].iter().all(|v| v.is_finite())
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
        let a = mat(m, n, |i, j| {
            ((i * 3 + j * 5) % 7) as f64 - 2.5 + 0.1 * (i * j) as f64
        });
        let b: Vec<f64> = (0..m).map(|i| (i as f64).sin()).collect();
        // b as an extra column.
        let mut work = a.clone();
        work.extend_from_slice(&b);
        let mut r = vec![0.0; n * n];
        householder_qr(&mut work, m, n, 1, &mut [], &mut r);
        let qtb = work[n * m..].to_vec();
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

    /// The unrolled sizes and the general loop give the same factorisation.
    #[test]
    fn fixed_and_general_jacobi_agree() {
        let a0: Vec<f64> = (0..16).map(|k| ((k * 7 % 11) as f64 - 5.0) / 3.0).collect();
        let mut a1 = a0.clone();
        let mut a2 = a0.clone();
        let (mut s1, mut s2) = ([0.0; 4], [0.0; 4]);
        let (mut v1, mut v2) = ([0.0; 16], [0.0; 16]);
        assert!(jacobi_svd_fixed::<4>(&mut a1, &mut s1, &mut v1));
        assert!(jacobi_svd_general(&mut a2, 4, &mut s2, &mut v2));
        let n = 4;
        for j in 0..n {
            assert!(
                (s1[j] - s2[j]).abs() <= 1e-14 * s1[j].max(1.0),
                "{s1:?} {s2:?}"
            );
        }
    }

    /// The AVX2 copy of the QR gives the same bits (see the crate docs).
    #[cfg(target_arch = "x86_64")]
    #[test]
    fn avx2_qr_is_bit_identical() {
        if !std::is_x86_feature_detected!("avx2") {
            return;
        }
        for (m, n, extra) in [(1003, 4, 1), (50, 3, 1), (7, 2, 0), (37, 4, 0)] {
            let a0 = mat(m, n + extra, |i, j| {
                ((i * 7 + j * 13) % 17) as f64 - 8.0 + 1e-3 * i as f64
            });
            let b0: Vec<f64> = (0..m).map(|i| (i as f64 * 0.3).cos()).collect();
            let (mut a1, mut a2) = (a0.clone(), a0.clone());
            let (mut b1, mut b2) = (b0.clone(), b0.clone());
            let (mut r1, mut r2) = (vec![0.0; n * n], vec![0.0; n * n]);
            householder_qr_any::<false>(&mut a1, m, n, extra, &mut b1, &mut r1);
            // SAFETY: AVX2 is available (checked at the top).
            unsafe { householder_qr_avx2(&mut a2, m, n, extra, &mut b2, &mut r2) };
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&a1), bits(&a2));
            assert_eq!(bits(&b1), bits(&b2));
            assert_eq!(bits(&r1), bits(&r2));
        }
    }

    /// More columns than the fused kernel takes, and columns whose squared
    /// norm underflows, go column by column with the norm rescaled, and
    /// still give RᵀR = AᵀA (Householder QR: Qᵀ A = R with Q orthogonal).
    /// (τ = ‖x‖ (‖x‖ + |x₀|) underflows for the small columns and must not
    /// be formed.)
    #[test]
    fn qr_rescaled_path_keeps_the_gram_matrix() {
        for (m, n, scale) in [
            (30, 10, 1.0),
            (12, 9, 1e3),
            (40, 3, 1e-170),
            (40, 3, 1e-155),
        ] {
            let a = mat(m, n, |i, j| {
                scale * (((i * 5 + j * 3) % 11) as f64 - 4.5 + 0.01 * (i * j) as f64)
            });
            let mut work = a.clone();
            let mut r = vec![0.0; n * n];
            householder_qr(&mut work, m, n, 0, &mut [], &mut r);
            for p in 0..n {
                for q in 0..n {
                    // Scaled back to order one before the products.
                    let ata: f64 = (0..m)
                        .map(|i| (a[p * m + i] / scale) * (a[q * m + i] / scale))
                        .sum();
                    let rtr: f64 = (0..n)
                        .map(|i| (r[p * n + i] / scale) * (r[q * n + i] / scale))
                        .sum();
                    assert!(
                        (ata - rtr).abs() < 1e-11 * ata.abs().max(1.0),
                        "m={m} n={n} scale={scale:e} ({p},{q}): {ata} vs {rtr}"
                    );
                }
            }
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

    /// `min_max` is the `f64::min`/`f64::max` fold (NaN ignored) for every
    /// length and position of the extremes, NaN and infinities included.
    #[test]
    fn min_max_is_the_nan_ignoring_fold() {
        let pool = [
            3.5,
            -1.25,
            f64::NAN,
            7.0,
            0.0,
            -0.0,
            f64::INFINITY,
            f64::NEG_INFINITY,
            -8.0,
            2.0,
        ];
        for len in 0..=pool.len() {
            for shift in 0..pool.len() {
                let a: Vec<f64> = (0..len).map(|i| pool[(i + shift) % pool.len()]).collect();
                let lo = a.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = a.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                assert_eq!(min_max(&a), (lo, hi), "{a:?}");
            }
        }
        assert_eq!(min_max(&[f64::NAN; 5]), (f64::INFINITY, f64::NEG_INFINITY));
    }
}
