//! `exp`, `ln` and `ln(1 + x)` for the inner loops, inlinable.
//!
//! The fitting loops spend most of their time in these functions; called
//! through the C library they cost a call and an error-handling wrapper
//! each. These are the fdlibm algorithms (Sun Microsystems, 1993; as in
//! musl and in Rust's `libm`, which is what `f64::exp` and `f64::ln`
//! compile to on wasm32), within one unit in the last place of the C
//! library's results (tests below). For `exp` and `ln`, arguments outside
//! the ordinary range (non-finite, overflow, underflow, subnormal,
//! non-positive logarithms) go to the standard library, so every special
//! case behaves exactly as `f64::exp` / `f64::ln`. The `_core` variants
//! have no branches, so that loops over them vectorise; their callers
//! check the range.

// fdlibm's constants, by their bit patterns.
const LN2_HI: f64 = f64::from_bits(0x3fe6_2e42_fee0_0000);
const LN2_LO: f64 = f64::from_bits(0x3dea_39ef_3579_3c76);
const INV_LN2: f64 = std::f64::consts::LOG2_E;

/// `e^x`, error below 1 ulp.
#[inline]
pub(crate) fn exp(x: f64) -> f64 {
    if in_exp_range(x) {
        exp_core(x)
    } else {
        exp_outside(x)
    }
}

/// Whether [`exp_core`] may be used: `|x| < 708` (false for NaN).
#[inline(always)]
pub(crate) fn in_exp_range(x: f64) -> bool {
    // On the bits, so that loops over many arguments vectorise.
    (x.to_bits() & !(1u64 << 63)) < 708f64.to_bits()
}

/// [`exp`] for `|x| < 708` only, without branches (so that loops over it
/// vectorise); there `|k| ≤ 1022` below and `2^k` is a normal number.
#[inline(always)]
pub(crate) fn exp_core(x: f64) -> f64 {
    const P1: f64 = f64::from_bits(0x3fc5_5555_5555_553e);
    const P2: f64 = f64::from_bits(0xbf66_c16c_16be_bd93);
    const P3: f64 = f64::from_bits(0x3f11_566a_af25_de2c);
    const P4: f64 = f64::from_bits(0xbebb_bd41_c5d2_6bf1);
    const P5: f64 = f64::from_bits(0x3e66_3769_72be_a4d0);
    // x = k ln 2 + r, |r| ≤ ln(2)/2; k ln2_hi is exact for |k| < 2^11.
    // Adding 1.5·2^52 rounds x/ln 2 to an integer k held in the low bits.
    const SHIFT: f64 = 6_755_399_441_055_744.0;
    let t = x * INV_LN2 + SHIFT;
    let kf = t - SHIFT;
    let k = t.to_bits().wrapping_sub(SHIFT.to_bits());
    let hi = x - kf * LN2_HI;
    let lo = kf * LN2_LO;
    let r = hi - lo;
    let rr = r * r;
    let c = r - rr * (P1 + rr * (P2 + rr * (P3 + rr * (P4 + rr * P5))));
    let y = 1.0 + (r * c / (2.0 - c) - lo + hi);
    // 2^k from its exponent bits (k + 1023, as two's complement wraps).
    y * f64::from_bits(k.wrapping_add(1023) << 52)
}

/// Zero for a finite `x`, nonzero for an infinity or NaN: the bits of
/// `x − x`, which is +0 for every finite `x` and NaN otherwise. OR-ed over
/// a slice it tests every entry without a branch (so the loop vectorises).
#[inline(always)]
#[allow(clippy::eq_op)]
pub(crate) fn nonfinite_bits(x: f64) -> u64 {
    (x - x).to_bits()
}

/// `ln x`, error below 1 ulp.
#[inline]
pub(crate) fn ln(x: f64) -> f64 {
    if in_ln_range(x) {
        ln_core(x)
    } else {
        ln_outside(x)
    }
}

/// `ln x` for every entry of `a`, in place; without branches when every
/// argument is a positive normal number (the usual case).
#[inline(always)]
pub(crate) fn ln_in_place(a: &mut [f64]) {
    let mut ordinary = true;
    for &x in a.iter() {
        ordinary &= in_ln_range(x);
    }
    if ordinary {
        for v in a.iter_mut() {
            *v = ln_core(*v);
        }
    } else {
        for v in a.iter_mut() {
            *v = ln(*v);
        }
    }
}

/// Whether [`ln_core`] may be used: `x` positive, normal and finite.
#[inline(always)]
fn in_ln_range(x: f64) -> bool {
    // On the bits (negative numbers and NaN compare above f64::MAX).
    x.to_bits().wrapping_sub(f64::MIN_POSITIVE.to_bits())
        <= f64::MAX.to_bits() - f64::MIN_POSITIVE.to_bits()
}

/// [`ln`] for positive normal finite `x`, without branches.
#[inline(always)]
fn ln_core(x: f64) -> f64 {
    let bits = x.to_bits();
    // x = 2^k (1 + f) with √2/2 ≤ 1 + f < √2.
    let hx = (bits >> 32) as u32 + (0x3ff0_0000 - 0x3fe6_a09e);
    let k = (hx >> 20) as i32 - 0x3ff;
    let hx = (hx & 0x000f_ffff) + 0x3fe6_a09e;
    let m = f64::from_bits((u64::from(hx) << 32) | (bits & 0xffff_ffff));
    log_kernel(m - 1.0, f64::from(k))
}

/// `ln(1 + x)` for `0 ≤ x ≤ 1` (or NaN, which it returns as NaN), error
/// within about 1 ulp; as accurate as `x.ln_1p()` for small `x`, where
/// `ln(1 + x) ≈ x`. No branches, so that loops over it vectorise.
#[inline(always)]
pub(crate) fn ln_1p_unit_core(x: f64) -> f64 {
    // u = 1 + x rounded, and c the rounding error, exactly; then
    // ln(1 + x) = ln(u) + ln(1 + c/u) ≈ ln(u) + c/u.
    let u = 1.0 + x;
    let c = x - (u - 1.0);
    // u in [1, 2]: ln(u) = k ln 2 + ln(1 + f) with √2/2 ≤ 1 + f < √2,
    // halving u (exactly, on the exponent bits) when it is above √2.
    // (Arithmetic on the bits rather than a branch, so that it vectorises.)
    let high = u64::from(u >= std::f64::consts::SQRT_2);
    let f = f64::from_bits(u.to_bits().wrapping_sub(high << 52)) - 1.0;
    let k = high as f64;
    // c · (1/u) rather than c / u: the same within rounding of the tiny
    // correction, and callers that need 1/(1 + x) too share the division.
    log_kernel(f, k) + c * (1.0 / u)
}

// The library calls for the special cases sit behind non-inlined functions:
// the compiler treats `f64::exp` itself as free of side effects and would
// otherwise evaluate it speculatively for every argument.
#[cold]
#[inline(never)]
fn exp_outside(x: f64) -> f64 {
    x.exp()
}

#[cold]
#[inline(never)]
fn ln_outside(x: f64) -> f64 {
    x.ln()
}

/// `k ln 2 + ln(1 + f)` for `√2/2 − 1 ≤ f < √2 − 1` (fdlibm's `__ieee754_log`
/// core).
#[inline(always)]
fn log_kernel(f: f64, k: f64) -> f64 {
    const LG1: f64 = f64::from_bits(0x3fe5_5555_5555_5593);
    const LG2: f64 = f64::from_bits(0x3fd9_9999_9997_fa04);
    const LG3: f64 = f64::from_bits(0x3fd2_4924_9422_9359);
    const LG4: f64 = f64::from_bits(0x3fcc_71c5_1d8e_78af);
    const LG5: f64 = f64::from_bits(0x3fc7_4664_96cb_03de);
    const LG6: f64 = f64::from_bits(0x3fc3_9a09_d078_c69f);
    const LG7: f64 = f64::from_bits(0x3fc2_f112_df3e_5244);
    let hfsq = 0.5 * f * f;
    let s = f / (2.0 + f);
    let z = s * s;
    let w = z * z;
    let t1 = w * (LG2 + w * (LG4 + w * LG6));
    let t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
    let r = t2 + t1;
    s * (hfsq + r) + k * LN2_LO - hfsq + f + k * LN2_HI
}

#[cfg(test)]
mod tests {
    use super::*;

    /// IEEE 754: x − x is +0 for finite x, NaN for ±∞ and NaN.
    #[test]
    fn nonfinite_bits_flags_exactly_the_non_finite() {
        for x in [0.0, -0.0, 1.0, -3.5, f64::MAX, f64::MIN, 5e-324, -5e-324] {
            assert_eq!(nonfinite_bits(x), 0, "{x}");
        }
        for x in [f64::INFINITY, f64::NEG_INFINITY, f64::NAN, -f64::NAN] {
            assert_ne!(nonfinite_bits(x), 0, "{x}");
        }
    }

    /// Distance in units in the last place between two finite doubles of
    /// the same sign.
    fn ulps(a: f64, b: f64) -> u64 {
        if a == b {
            return 0;
        }
        assert!(
            a.is_finite() && b.is_finite() && (a >= 0.0) == (b >= 0.0),
            "{a} {b}"
        );
        a.to_bits().abs_diff(b.to_bits())
    }

    /// A deterministic spread of doubles (xorshift), mapped into `[lo, hi]`.
    fn samples(lo: f64, hi: f64, n: usize, seed: u64) -> impl Iterator<Item = f64> {
        let mut s = seed;
        (0..n).map(move |_| {
            s ^= s << 13;
            s ^= s >> 7;
            s ^= s << 17;
            lo + (hi - lo) * ((s >> 11) as f64 / (1u64 << 53) as f64)
        })
    }

    /// The C library's functions are within about 0.5 ulp of the true
    /// value; ours must be within 1 ulp of theirs (so within 1.5 ulp of
    /// the truth) and agree exactly for most arguments.
    fn check(name: &str, ours: impl Fn(f64) -> f64, std: impl Fn(f64) -> f64, xs: Vec<f64>) {
        let mut worst = 0;
        let mut off = 0;
        for &x in &xs {
            let (a, b) = (ours(x), std(x));
            let u = ulps(a, b);
            worst = worst.max(u);
            off += usize::from(u > 0);
            assert!(u <= 2, "{name}({x:e}): {a:e} vs {b:e} ({u} ulp)");
        }
        // Observed: at most 1 ulp apart, in 4–22 % of the samples.
        assert!(
            worst <= 1 && off * 4 < xs.len(),
            "{name}: {off} differ, worst {worst}"
        );
    }

    #[test]
    fn exp_matches_std() {
        let mut xs: Vec<f64> = samples(-707.9, 707.9, 200_000, 1).collect();
        xs.extend(samples(-1.0, 1.0, 200_000, 2));
        xs.extend(samples(-1e-6, 1e-6, 50_000, 3));
        xs.extend([0.0, -0.0, 1e-300, -1e-300, 0.5 * LN2_HI, 1.5 * LN2_HI]);
        check("exp", exp, f64::exp, xs);
        // Outside the ordinary range: exactly the library's results.
        for x in [708.0, 709.7, 709.8, 1e300, -708.0, -745.0, -746.0, -1e300] {
            assert_eq!(exp(x).to_bits(), x.exp().to_bits(), "exp({x})");
        }
        assert!(exp(f64::NAN).is_nan());
        assert_eq!(exp(f64::INFINITY), f64::INFINITY);
        assert_eq!(exp(f64::NEG_INFINITY), 0.0);
    }

    #[test]
    fn ln_matches_std() {
        let mut xs: Vec<f64> = samples(1e-300, 1e300, 100_000, 4).collect();
        xs.extend(samples(0.5, 2.0, 200_000, 5));
        xs.extend(samples(1.0 - 1e-6, 1.0 + 1e-6, 50_000, 6));
        xs.extend(samples(-700.0, 700.0, 100_000, 7).map(f64::exp));
        xs.extend([
            1.0,
            2.0,
            0.5,
            f64::MIN_POSITIVE,
            f64::MAX,
            std::f64::consts::E,
        ]);
        check("ln", ln, f64::ln, xs);
        for x in [0.0, -0.0, 1e-310, f64::INFINITY] {
            assert_eq!(ln(x).to_bits(), x.ln().to_bits(), "ln({x})");
        }
        assert!(ln(f64::NAN).is_nan() && ln(-2.0).is_nan());
    }

    #[test]
    fn ln_1p_unit_core_matches_std() {
        let mut xs: Vec<f64> = samples(0.0, 1.0, 200_000, 8).collect();
        xs.extend(samples(-40.0, 0.0, 200_000, 9).map(f64::exp));
        xs.extend(samples(0.0, 1e-15, 10_000, 10));
        xs.extend([0.0, 1.0, 1e-300, 5e-324, std::f64::consts::SQRT_2 - 1.0]);
        check("ln_1p_unit_core", ln_1p_unit_core, f64::ln_1p, xs);
        assert!(ln_1p_unit_core(f64::NAN).is_nan());
    }
}
