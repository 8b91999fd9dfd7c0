//! Statistics of a least-squares fit: covariance, standard errors,
//! intervals and information criteria.
//!
//! With `n` observations, `p` fitted parameters, `RSS` the residual sum of
//! squares and `J` the model Jacobian at the estimate:
//!
//! ```text
//! dof   = n − p
//! σ²    = RSS / dof                          (residual variance)
//! Cov   = σ² (JᵀJ)⁻¹                         (asymptotic covariance)
//! ci95  = θ̂ ± t(0.975, dof) · se(θ̂)          (Student t quantile)
//! R²    = 1 − RSS / Σ (y − ȳ)²
//! ln L  = −n/2 · (ln(2π RSS / n) + 1)        (Gaussian, σ at its MLE)
//! k     = p + 1                              (σ counts as a parameter)
//! AIC   = −2 ln L + 2k
//! AICc  = AIC + 2k(k + 1) / (n − k − 1)      (Burnham & Anderson 2002, eq. 2.2)
//! BIC   = −2 ln L + k ln n
//! ```
//!
//! `(JᵀJ)⁻¹` is never formed from `JᵀJ`: it is `D⁻¹ V S⁻² Vᵀ D⁻¹` from the
//! SVD `J D⁻¹ = U S Vᵀ`, with `D` the column norms of `J` (the SVD of the
//! tall `J D⁻¹` is taken as its Householder QR followed by the SVD of the
//! small triangle, as LAPACK does for tall matrices). The condition
//! number reported is `s_max / s_min` of that column-equilibrated `J D⁻¹`,
//! which does not depend on the parameters' units.

use crate::linalg;
use nalgebra::DMatrix;
use statrs::distribution::{ContinuousCDF, Normal, StudentsT};

/// Above this condition number (of the column-scaled Jacobian) the standard
/// errors lose most of their digits and the fit is flagged ill-conditioned.
pub const ILL_CONDITIONED: f64 = 1e8;

/// Covariance of the estimates from the Jacobian, or why there is none.
#[derive(Debug, Clone)]
pub struct Covariance {
    /// `σ² (JᵀJ)⁻¹`, p × p; `None` when `J` is rank deficient.
    pub matrix: Option<DMatrix<f64>>,
    /// Condition number of the column-scaled Jacobian (∞ when singular).
    pub condition_number: f64,
}

/// Computes the covariance `sigma2 · (JᵀJ)⁻¹` through the SVD of the
/// column-scaled Jacobian (taken as a Householder QR and the SVD of its
/// small triangular factor, see `linalg`).
pub fn covariance(jac: &DMatrix<f64>, sigma2: f64) -> Covariance {
    let (m, p) = jac.shape();
    let mut work = jac.as_slice().to_vec();
    let mut r = vec![0.0; p * p];
    linalg::householder_qr(&mut work, m, p, 0, &mut [], &mut r);
    covariance_from_triangle(&r, p, m, sigma2)
}

/// [`covariance`] from the triangular factor `R` (column-major `p × p`) of
/// a QR factorisation `J = Q R` of the `m × p` Jacobian: `J D⁻¹ = Q (R D⁻¹)`
/// has the singular values and right singular vectors of `R D⁻¹`, and `D`
/// (the column norms of `J`) are those of `R`. Householder QR is backward
/// stable column by column, so scaling before or after it is the same.
pub(crate) fn covariance_from_triangle(r: &[f64], p: usize, m: usize, sigma2: f64) -> Covariance {
    if p == 0 {
        return Covariance {
            matrix: Some(DMatrix::zeros(0, 0)),
            condition_number: 1.0,
        };
    }
    let mut scaled = r[..p * p].to_vec();
    let mut d = vec![1.0; p];
    for (j, dj) in d.iter_mut().enumerate() {
        let col = &mut scaled[j * p..(j + 1) * p];
        let norm = linalg::norm2(col);
        if norm > 0.0 && norm.is_finite() {
            *dj = norm;
            col.iter_mut().for_each(|v| *v /= norm);
        }
    }
    // R D⁻¹ = U S Vᵀ.
    let mut s = vec![0.0; p];
    let mut v = vec![0.0; p * p];
    let finite = linalg::jacobi_svd(&mut scaled, p, &mut s, &mut v);
    let smax = s.iter().cloned().fold(0.0, f64::max);
    let smin = s.iter().cloned().fold(f64::INFINITY, f64::min);
    let condition_number = if finite && smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    let rank_tol = smax * f64::EPSILON * (m.max(p) as f64);
    // Singular unless smin > rank_tol; a NaN on either side counts as singular.
    let singular = smin.partial_cmp(&rank_tol) != Some(std::cmp::Ordering::Greater)
        || !condition_number.is_finite();
    let matrix = (!singular).then(|| {
        DMatrix::from_fn(p, p, |a, b| {
            // V is column-major: V[a][k] = v[k p + a].
            let acc: f64 = (0..p)
                .map(|k| v[k * p + a] * v[k * p + b] / (s[k] * s[k]))
                .sum();
            sigma2 * acc / (d[a] * d[b])
        })
    });
    Covariance {
        matrix,
        condition_number,
    }
}

/// The two-sided `level` quantile of Student's t with `dof` degrees of
/// freedom, e.g. `t_quantile(0.95, 6) = 2.4469…`.
pub fn t_quantile(level: f64, dof: usize) -> f64 {
    if dof == 0 {
        return f64::INFINITY;
    }
    // The 95 % intervals of every fit need this; the usual degrees of
    // freedom come from the table (statrs' own values, see the test), the
    // rest from statrs' iterative inversion.
    if level == 0.95 && dof <= T95.len() {
        return T95[dof - 1];
    }
    if dof > T95.len() && level > 0.0 && level < 1.0 {
        return t_quantile_large_dof(level, dof);
    }
    t_quantile_statrs(level, dof)
}

/// [`t_quantile`] for many degrees of freedom from the Cornish–Fisher
/// expansion of Student's t about the normal quantile `z` (Abramowitz &
/// Stegun 1964, eq. 26.7.5; coefficients as printed there, quoted from
/// memory and checked against statrs in the tests):
///
/// ```text
/// t ≈ z + g₁/ν + g₂/ν² + g₃/ν³ + g₄/ν⁴
/// g₁ = (z³ + z) / 4
/// g₂ = (5z⁵ + 16z³ + 3z) / 96
/// g₃ = (3z⁷ + 19z⁵ + 17z³ − 15z) / 384
/// g₄ = (79z⁹ + 776z⁷ + 1482z⁵ − 1920z³ − 945z) / 92160
/// ```
///
/// For ν > 120 the first omitted term is below 2·10⁻¹⁰ (relative) at levels up to 99%,
/// and the expansion costs a few multiplications where statrs' inversion
/// of the incomplete beta function costs microseconds — which, for a large
/// data set, was a noticeable share of a whole fit.
fn t_quantile_large_dof(level: f64, dof: usize) -> f64 {
    let z = if level == 0.95 {
        Z975
    } else {
        match Normal::new(0.0, 1.0) {
            Ok(n) => n.inverse_cdf(0.5 + level / 2.0),
            Err(_) => return f64::NAN,
        }
    };
    let z2 = z * z;
    let g1 = (z2 + 1.0) * z / 4.0;
    let g2 = ((5.0 * z2 + 16.0) * z2 + 3.0) * z / 96.0;
    let g3 = (((3.0 * z2 + 19.0) * z2 + 17.0) * z2 - 15.0) * z / 384.0;
    let g4 = ((((79.0 * z2 + 776.0) * z2 + 1482.0) * z2 - 1920.0) * z2 - 945.0) * z / 92160.0;
    let v = 1.0 / dof as f64;
    z + v * (g1 + v * (g2 + v * (g3 + v * g4)))
}

/// The standard normal's 0.975 quantile (as statrs computes it; see the
/// tests).
const Z975: f64 = 1.959963984540054;

/// [`t_quantile`] from statrs, for `dof > 0`.
fn t_quantile_statrs(level: f64, dof: usize) -> f64 {
    match StudentsT::new(0.0, 1.0, dof as f64) {
        Ok(t) => t.inverse_cdf(0.5 + level / 2.0),
        Err(_) => f64::NAN,
    }
}

/// `t_quantile(0.95, dof)` for `dof = 1..=120` as statrs computes it
/// (`StudentsT::inverse_cdf`, statrs 0.19, in this crate's release build;
/// other builds of statrs differ from these in the last few bits).
#[rustfmt::skip]
const T95: [f64; 120] = [
    12.70620473617469, 4.302652729749467, 3.1824463052837046,
    2.776445105197795, 2.570581835636315, 2.4469118511449652,
    2.364624251592785, 2.3060041352041707, 2.2621571627982036,
    2.2281388519862744, 2.200985160091634, 2.1788128296672054,
    2.1603686564628095, 2.1447866879177897, 2.131449545559734,
    2.1199052992212404, 2.109815577833272, 2.1009220402409565,
    2.0930240544082417, 2.0859634472657946, 2.0796138447275436,
    2.0738730679038766, 2.068657610418929, 2.0638985616278602,
    2.059538552753143, 2.0555294386426555, 2.0518305164800905,
    2.048407141795102, 2.0452296421323903, 2.042272456301077,
    2.039513446396162, 2.036933343459848, 2.034515297449029,
    2.0322445093174224, 2.0301079282501253, 2.0280940009801527,
    2.0261924630287873, 2.0243941639117082, 2.022690920036388,
    2.021075390305952, 2.019540970441052, 2.018081702818092,
    2.0166921992275086, 2.0153675744433777, 2.0141033888805735,
    2.0128955989190587, 2.0117405137293503, 2.0106347576239343,
    2.0095752371287796, 2.008559112100458, 2.007583770315455,
    2.006646805061305, 2.0057459953174694, 2.0048792881877437,
    2.0040447832887116, 2.0032407188474544, 2.0024654592905926,
    2.001717484144878, 2.000995378087846, 2.000297822013847,
    1.9996235849945365, 1.9989715170330102, 1.9983405425202192,
    1.9977296543172944, 1.9971379083916718, 1.996564418951833,
    1.9960083540249391, 1.9954689314292693, 1.9949454151068418,
    1.9944371117708188, 1.9939433678452052, 1.9934635666614329,
    1.9929971258893768, 1.9925434951805556, 1.9921021540017638,
    1.9916726096442225, 1.9912543953879938, 1.9908470688112163,
    1.990450210229703, 1.990063421253937, 1.98968632345646,
    1.989318557136158, 1.988959780174769, 1.9886096669751716,
    1.9882679074768672, 1.9879342062385705, 1.9876082815885148,
    1.9872898648307815, 1.9869786995058272, 1.9866745407033068,
    1.9863771544180795, 1.9860863169507514, 1.98580181434533,
    1.9855234418661645, 1.9852510035050335, 1.9849843115219719,
    1.9847231860135324, 1.9844674545081167, 1.984216951585909,
    1.9839715185230007, 1.9837310029552149, 1.9834952585623886,
    1.983264144772886, 1.983037526483354, 1.982815273794566,
    1.9825972617650174, 1.9823833701752787, 1.9821734833072224,
    1.981967489736024, 1.9817652821318557, 1.9815667570745144,
    1.9813718148757546, 1.981180359414233, 1.9809922979754242,
    1.9808075411033819, 1.9806260024585243, 1.980447598682956,
    1.9802722492725855, 1.980099876456417, 1.9799304050819853,
];

/// Information criteria for a Gaussian least-squares fit of `p` parameters
/// (σ is counted as one more, see the module docs).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Criteria {
    pub log_likelihood: f64,
    pub aic: f64,
    pub aicc: f64,
    pub bic: f64,
}

pub fn criteria(rss: f64, n: usize, p: usize) -> Criteria {
    criteria_with(rss, n, p, 0.0)
}

/// [`criteria`] with `extra` added to the log-likelihood before the
/// criteria are formed. The error models use it (see `fit::ErrorModel`):
/// `½ Σ ln w_i` for weighted residuals with variance `σ² / w_i`, and
/// `−Σ ln y_i` (the Jacobian of `y ↦ ln y`) for residuals on the log
/// scale, so that the likelihood is always that of the data as given and
/// AICc stays comparable across error models fitted to the same values.
pub fn criteria_with(rss: f64, n: usize, p: usize, extra: f64) -> Criteria {
    let nf = n as f64;
    let k = (p + 1) as f64;
    // A perfect fit has an unbounded likelihood; keep the numbers finite and
    // ordered by flooring RSS at a relative rounding level.
    let rss = rss.max(f64::MIN_POSITIVE);
    let log_likelihood = -0.5 * nf * ((2.0 * std::f64::consts::PI * rss / nf).ln() + 1.0) + extra;
    let aic = -2.0 * log_likelihood + 2.0 * k;
    let aicc = if nf - k - 1.0 > 0.0 {
        aic + 2.0 * k * (k + 1.0) / (nf - k - 1.0)
    } else {
        f64::INFINITY
    };
    let bic = -2.0 * log_likelihood + k * nf.ln();
    Criteria {
        log_likelihood,
        aic,
        aicc,
        bic,
    }
}

/// `1 − RSS / TSS`, with TSS the sum of squares about the mean of `y`.
pub fn r_squared(rss: f64, y: &[f64]) -> f64 {
    let n = y.len() as f64;
    let mean = linalg::sum_by(y, |v| v) / n;
    let tss = linalg::sum_by(y, |v| (v - mean) * (v - mean));
    if tss > 0.0 {
        1.0 - rss / tss
    } else {
        f64::NAN
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// t quantiles from standard tables (e.g. NIST/SEMATECH e-Handbook,
    /// table 1.3.6.7.2), two-sided 95%.
    #[test]
    fn t_quantiles_match_tables() {
        for (dof, want) in [(1, 12.706), (6, 2.447), (11, 2.201), (30, 2.042)] {
            let got = t_quantile(0.95, dof);
            assert!((got - want).abs() < 1e-3, "dof {dof}: {got} vs {want}");
        }
    }

    /// The 95 % table holds the values statrs computes.
    #[test]
    fn t95_table_is_statrs() {
        // statrs' iteration itself is good to about 1e-15 and its last bits
        // vary between builds (inlining changes its rounding).
        for (i, &t) in T95.iter().enumerate() {
            let want = t_quantile_statrs(0.95, i + 1);
            assert!(
                (t - want).abs() <= 1e-14 * want,
                "dof {}: {t} vs {want}",
                i + 1
            );
        }
    }

    /// Above the table, the Cornish–Fisher expansion agrees with
    /// `scipy.stats.t.ppf(0.5 + level/2, dof)` (scipy 1.17.1, printed once
    /// with `repr`) to 2·10⁻¹⁰ relative (the worst case is ν = 121 at 99%), at 95% and at other levels. statrs'
    /// iterative inversion is only good to about 10⁻⁷ relative at these
    /// degrees of freedom (at ν = 10⁵, level 0.5, it gives 0.674478 where
    /// scipy gives 0.674492), which is why it is not used there.
    #[test]
    fn large_dof_quantiles_match_scipy() {
        let z = Normal::new(0.0, 1.0).unwrap().inverse_cdf(0.975);
        assert!((z - Z975).abs() <= 2.0 * f64::EPSILON, "{z}");
        #[rustfmt::skip]
        let scipy: [(f64, usize, f64); 15] = [
            (0.5, 121, 0.6765227377805033), (0.5, 997, 0.6747359033054939),
            (0.5, 100000, 0.674492203553292),
            (0.8, 150, 1.2872209136149464), (0.8, 5000, 1.2817209053357184),
            (0.9, 200, 1.6525081009108769), (0.9, 100000, 1.6448688647849696),
            (0.95, 121, 1.9797637625053868), (0.95, 150, 1.9759053308966201),
            (0.95, 500, 1.9647198374673676), (0.95, 997, 1.9623462360894495),
            (0.95, 5000, 1.9604385517065073), (0.95, 100000, 1.9599877075346095),
            (0.99, 121, 2.6170722661708643), (0.99, 100000, 2.575878469908375),
        ];
        for (level, dof, want) in scipy {
            let got = t_quantile(level, dof);
            assert!(
                (got - want).abs() <= 2e-10 * want,
                "level {level}, dof {dof}: {got} vs {want}"
            );
            let statrs = t_quantile_statrs(level, dof);
            assert!((statrs - want).abs() <= 1e-4 * want, "statrs {statrs}");
        }
    }

    /// Linear regression y = a + b x has the textbook covariance
    /// σ² (XᵀX)⁻¹ (analytic fact).
    #[test]
    fn covariance_of_a_straight_line() {
        let x = [0.0, 1.0, 2.0, 3.0, 4.0];
        let jac = DMatrix::from_fn(5, 2, |i, j| if j == 0 { 1.0 } else { x[i] });
        let cov = covariance(&jac, 2.0).matrix.unwrap();
        // XᵀX = [[5, 10], [10, 30]], det 50, inverse [[0.6, -0.2], [-0.2, 0.1]].
        let want = [[1.2, -0.4], [-0.4, 0.2]];
        for a in 0..2 {
            for b in 0..2 {
                assert!((cov[(a, b)] - want[a][b]).abs() < 1e-12);
            }
        }
    }

    #[test]
    fn rank_deficient_jacobian_has_no_covariance() {
        let jac = DMatrix::from_fn(4, 2, |i, _| i as f64 + 1.0);
        let c = covariance(&jac, 1.0);
        assert!(c.matrix.is_none());
    }

    /// AICc's small-sample term from Burnham & Anderson (2002), eq. 2.2.
    #[test]
    fn aicc_adds_the_small_sample_term() {
        let c = criteria(10.0, 20, 3);
        let k = 4.0;
        assert!((c.aicc - c.aic - 2.0 * k * (k + 1.0) / (20.0 - k - 1.0)).abs() < 1e-12);
        assert!((c.bic - (c.aic - 2.0 * k + k * 20f64.ln())).abs() < 1e-12);
    }
}
