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
//! SVD `J D⁻¹ = U S Vᵀ`, with `D` the column norms of `J`. The condition
//! number reported is `s_max / s_min` of that column-equilibrated `J D⁻¹`,
//! which does not depend on the parameters' units.

use nalgebra::DMatrix;
use statrs::distribution::{ContinuousCDF, StudentsT};

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
/// column-scaled Jacobian.
pub fn covariance(jac: &DMatrix<f64>, sigma2: f64) -> Covariance {
    let (m, p) = jac.shape();
    if p == 0 {
        return Covariance {
            matrix: Some(DMatrix::zeros(0, 0)),
            condition_number: 1.0,
        };
    }
    let mut scaled = jac.clone();
    let mut d = vec![1.0; p];
    for (j, dj) in d.iter_mut().enumerate() {
        let norm = jac.column(j).norm();
        if norm > 0.0 && norm.is_finite() {
            *dj = norm;
            scaled.column_mut(j).unscale_mut(norm);
        }
    }
    let svd = scaled.svd(false, true);
    let s = &svd.singular_values;
    let smax = s.iter().cloned().fold(0.0, f64::max);
    let smin = s.iter().cloned().fold(f64::INFINITY, f64::min);
    let condition_number = if smin > 0.0 {
        smax / smin
    } else {
        f64::INFINITY
    };
    let rank_tol = smax * f64::EPSILON * (m.max(p) as f64);
    // Singular unless smin > rank_tol; a NaN on either side counts as singular.
    let singular = smin.partial_cmp(&rank_tol) != Some(std::cmp::Ordering::Greater)
        || !condition_number.is_finite();
    let matrix = match (&svd.v_t, singular) {
        (Some(v_t), false) => {
            let mut cov = DMatrix::zeros(p, p);
            for a in 0..p {
                for b in 0..p {
                    let mut acc = 0.0;
                    for (k, sk) in s.iter().enumerate() {
                        acc += v_t[(k, a)] * v_t[(k, b)] / (sk * sk);
                    }
                    cov[(a, b)] = sigma2 * acc / (d[a] * d[b]);
                }
            }
            Some(cov)
        }
        _ => None,
    };
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
    match StudentsT::new(0.0, 1.0, dof as f64) {
        Ok(t) => t.inverse_cdf(0.5 + level / 2.0),
        Err(_) => f64::NAN,
    }
}

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
    let nf = n as f64;
    let k = (p + 1) as f64;
    // A perfect fit has an unbounded likelihood; keep the numbers finite and
    // ordered by flooring RSS at a relative rounding level.
    let rss = rss.max(f64::MIN_POSITIVE);
    let log_likelihood = -0.5 * nf * ((2.0 * std::f64::consts::PI * rss / nf).ln() + 1.0);
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
    let mean = y.iter().sum::<f64>() / n;
    let tss: f64 = y.iter().map(|v| (v - mean) * (v - mean)).sum();
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
