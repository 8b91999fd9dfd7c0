//! Residual diagnostics, the symmetry test and the Fisher–Pry curvature
//! check: the questions that decide whether a fitted shape can be trusted,
//! each answered with a number, a p-value where one exists, and a
//! [`Verdict`] (which check, a stable code, whether it warns). No sentence
//! is written here: `plateau_study::wording` words each verdict from the
//! numbers beside it.
//!
//! Main entry points: [`residual_diagnostics`] (→ [`ResidualDiagnostics`]:
//! runs test, Durbin–Watson, lag-1 autocorrelation, normal Q-Q data and
//! the Jarque–Bera normality test), [`symmetry_test`] and
//! [`symmetry_test_of`] (→ [`SymmetryTest`]: logistic against Richards by
//! likelihood ratio and against Gompertz by ΔAICc), [`fisher_pry`]
//! (→ [`FisherPry`]: the straight-line view for a given K and its
//! curvature test).
//!
//! Residuals are `e_i = y_i − f(t_i)` (unweighted), taken in time order.
//!
//! Replicates (several observations at one time): the normality checks
//! (Q-Q, Jarque–Bera) use every residual; the checks of serial order — the
//! runs test, Durbin–Watson and the lag-1 autocorrelation — need one value
//! per time and use the mean residual of each distinct time, in time order
//! ([`mean_per_time`]). Replicates of one time have no order among
//! themselves, so a sequence through them would measure the input order,
//! not the curve's misfit; their mean is the data's reading at that time.
//! [`ResidualDiagnostics::serial_n`] says how many values those checks used.
//!
//! Thresholds (all documented on the constants): tests at [`ALPHA`] = 0.05;
//! Durbin–Watson outside [[`DW_LOW`], [`DW_HIGH`]] = [1.5, 2.5] (a rule of
//! thumb, common practice: DW ≈ 2 (1 − r₁), so these bounds are |r₁| ≳ 0.25);
//! fewer than [`MIN_RESIDUALS`] residuals give no verdict.

use crate::fit::{fit_xy, ErrorModel, Fit, FitError, FitOptions};
use crate::model::Model;
use crate::warning::WarningCode;
use serde::Serialize;
use statrs::distribution::{ChiSquared, ContinuousCDF, Normal, StudentsT};
use statrs::function::gamma::ln_gamma;

/// Significance level of every test here.
pub const ALPHA: f64 = 0.05;
/// Durbin–Watson below this: positive autocorrelation (rule of thumb).
pub const DW_LOW: f64 = 1.5;
/// Durbin–Watson above this: negative autocorrelation (rule of thumb).
pub const DW_HIGH: f64 = 2.5;
/// Fewer residuals than this: no verdicts (the Jarque–Bera test's
/// large-sample approximation, and the power of every test, mean little
/// below it).
pub const MIN_RESIDUALS: usize = 10;
/// Below this many residuals the runs test's z uses a continuity
/// correction of 0.5 (statsmodels' `runstest_1samp(correction=True)`
/// convention, after the SAS manual).
pub const RUNS_CORRECTION_BELOW: usize = 50;

/// Which check a [`Verdict`] reads.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Check {
    /// Too few residuals for any pattern check.
    Pattern,
    /// The order checks (runs, Durbin–Watson) with too few distinct times.
    Order,
    /// The runs test on the residuals' signs.
    Runs,
    /// Durbin–Watson and the lag-1 autocorrelation.
    Autocorrelation,
    /// Jarque–Bera.
    Normality,
    /// Logistic against Richards and Gompertz.
    Symmetry,
    /// The Fisher–Pry curvature test.
    Curvature,
}

/// The reading of a diagnostic: which check, its stable code, and
/// whether it warns. The numbers behind it stay in the result that holds
/// the verdict; the sentence a person reads is written from both by
/// `plateau_study::wording`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Verdict {
    #[serde(skip)]
    pub check: Check,
    /// Stable code: `runs_streaks`, `runs_alternate`, `runs_ok`,
    /// `autocorrelated`, `anti_autocorrelated`, `independent`, `not_normal`,
    /// `normal`, `too_few`, `asymmetric`, `symmetric`, `symmetry_unknown`,
    /// `curved`, `straight`, `curvature_unknown`.
    pub code: &'static str,
    /// True when the verdict is a warning about the fit.
    pub flagged: bool,
}

fn verdict(check: Check, code: &'static str, flagged: bool) -> Verdict {
    Verdict {
        check,
        code,
        flagged,
    }
}

/// Wald–Wolfowitz runs test on the signs of the residuals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RunsTest {
    /// Residuals `≥ 0` (zero counts as positive, as statsmodels does with cutoff 0).
    pub n_positive: usize,
    pub n_negative: usize,
    /// Maximal blocks of equal sign in time order.
    pub runs: usize,
    /// `1 + 2 n₊ n₋ / n`.
    pub expected: f64,
    pub z: f64,
    /// Two-sided, from the normal approximation (as statsmodels gives it).
    pub p_value: f64,
    /// Two-sided, from the exact distribution of the number of runs given
    /// `n₊` and `n₋` (see [`runs_distribution`]): twice the smaller tail
    /// `P(R ≤ runs)` or `P(R ≥ runs)`, at most 1. The verdicts use this one;
    /// it needs no large-sample argument.
    pub p_exact: f64,
    /// Whether the continuity correction was applied (n < 50).
    pub continuity_corrected: bool,
}

/// The runs test of the residuals `res` (in time order).
///
/// ```text
/// μ = 1 + 2 n₊ n₋ / n
/// σ² = 2 n₊ n₋ (2 n₊ n₋ − n) / (n² (n − 1))
/// z = sign(R − μ) · max(|R − μ| − c, 0) / σ,  c = 0.5 when n < 50, else 0
/// p = 2 (1 − Φ(|z|))
/// ```
///
/// The normal approximation with continuity correction (Wald & Wolfowitz
/// 1940; the same statistic as statsmodels' `runstest_1samp`), and the
/// exact p-value beside it. `None` with fewer than two residuals or when
/// all have one sign (σ = 0).
pub fn runs_test(res: &[f64]) -> Option<RunsTest> {
    let n = res.len();
    if n < 2 || res.iter().any(|e| !e.is_finite()) {
        return None;
    }
    let pos: Vec<bool> = res.iter().map(|e| *e >= 0.0).collect();
    let n1 = pos.iter().filter(|p| **p).count();
    let n2 = n - n1;
    if n1 == 0 || n2 == 0 {
        return None;
    }
    let runs = 1 + pos.windows(2).filter(|w| w[0] != w[1]).count();
    let (a, b, nf) = (n1 as f64, n2 as f64, n as f64);
    let expected = 1.0 + 2.0 * a * b / nf;
    let var = 2.0 * a * b * (2.0 * a * b - nf) / (nf * nf * (nf - 1.0));
    if var.is_nan() || var <= 0.0 {
        return None;
    }
    let r = runs as f64;
    let corrected = n < RUNS_CORRECTION_BELOW;
    let diff = r - expected;
    // Shrink |R − μ| by 0.5 without crossing zero.
    let diff = if corrected {
        diff.signum() * (diff.abs() - 0.5).max(0.0)
    } else {
        diff
    };
    let z = diff / var.sqrt();
    let pmf = runs_distribution(n1, n2)?;
    let below: f64 = pmf[..=runs].iter().sum();
    let above: f64 = pmf[runs..].iter().sum();
    Some(RunsTest {
        n_positive: n1,
        n_negative: n2,
        runs,
        expected,
        z,
        p_value: two_sided_normal(z),
        p_exact: (2.0 * below.min(above)).min(1.0),
        continuity_corrected: corrected,
    })
}

/// `P(R = r)` for `r = 0 ..= n₁ + n₂`: the distribution of the number of
/// runs `R` in a random arrangement of `n₁` positive and `n₂` negative
/// signs, every arrangement equally likely (Swed & Eisenhart 1943):
///
/// ```text
/// P(R = 2k)     = 2 C(n₁−1, k−1) C(n₂−1, k−1) / C(n₁+n₂, n₁)
/// P(R = 2k + 1) = [C(n₁−1, k) C(n₂−1, k−1) + C(n₁−1, k−1) C(n₂−1, k)] / C(n₁+n₂, n₁)
/// ```
///
/// Binomial coefficients in logarithms (`ln Γ`), so that long series
/// neither overflow nor lose the small tails. `None` when a count is 0
/// (one sign only: always one run).
pub fn runs_distribution(n1: usize, n2: usize) -> Option<Vec<f64>> {
    if n1 == 0 || n2 == 0 {
        return None;
    }
    let n = n1 + n2;
    let ln_fact = |m: usize| ln_gamma(m as f64 + 1.0);
    // ln C(a, b), or None when the coefficient is 0.
    let ln_choose = |a: usize, b: isize| -> Option<f64> {
        let b = usize::try_from(b).ok().filter(|&b| b <= a)?;
        Some(ln_fact(a) - ln_fact(b) - ln_fact(a - b))
    };
    let total = ln_fact(n) - ln_fact(n1) - ln_fact(n2);
    let term = |a: Option<f64>, b: Option<f64>| match (a, b) {
        (Some(a), Some(b)) => (a + b - total).exp(),
        _ => 0.0,
    };
    let (a, b) = (n1 - 1, n2 - 1);
    let pmf = (0..=n)
        .map(|r| {
            let k = (r / 2) as isize;
            if r < 2 {
                0.0
            } else if r % 2 == 0 {
                2.0 * term(ln_choose(a, k - 1), ln_choose(b, k - 1))
            } else {
                term(ln_choose(a, k), ln_choose(b, k - 1))
                    + term(ln_choose(a, k - 1), ln_choose(b, k))
            }
        })
        .collect();
    Some(pmf)
}

fn std_normal() -> Normal {
    // Mean 0, sd 1 are valid parameters.
    Normal::new(0.0, 1.0).unwrap_or_else(|_| unreachable!())
}

fn two_sided_normal(z: f64) -> f64 {
    (2.0 * std_normal().sf(z.abs())).min(1.0)
}

/// Durbin–Watson statistic `Σ (e_t − e_{t−1})² / Σ e_t²` (≈ 2 for
/// independent residuals, toward 0 for positive autocorrelation). `None`
/// for fewer than two residuals or all zero.
pub fn durbin_watson(res: &[f64]) -> Option<f64> {
    if res.len() < 2 {
        return None;
    }
    let num: f64 = res.windows(2).map(|w| (w[1] - w[0]).powi(2)).sum();
    let den: f64 = res.iter().map(|e| e * e).sum();
    let d = num / den;
    (den > 0.0 && d.is_finite()).then_some(d)
}

/// Lag-1 autocorrelation as statsmodels' `acf` computes it (demeaned,
/// divided by the lag-0 sum, not bias-adjusted):
/// `Σ_{t≥2} (e_t − ē)(e_{t−1} − ē) / Σ (e_t − ē)²`.
pub fn lag1_autocorrelation(res: &[f64]) -> Option<f64> {
    let n = res.len();
    if n < 2 {
        return None;
    }
    let mean = res.iter().sum::<f64>() / n as f64;
    let den: f64 = res.iter().map(|e| (e - mean).powi(2)).sum();
    let num: f64 = res.windows(2).map(|w| (w[1] - mean) * (w[0] - mean)).sum();
    let r = num / den;
    (den > 0.0 && r.is_finite()).then_some(r)
}

/// One point of the normal Q-Q plot.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct QqPoint {
    /// Standard normal quantile of the plotting position.
    pub theoretical: f64,
    /// The residual (sorted ascending).
    pub sample: f64,
}

/// Normal Q-Q data of the residuals.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NormalQq {
    pub points: Vec<QqPoint>,
    /// Least-squares line of sample on theoretical quantiles.
    pub slope: f64,
    pub intercept: f64,
    /// Correlation of the two (probability-plot correlation coefficient).
    pub correlation: f64,
}

/// Filliben's (1975) plotting positions, the ones scipy's `probplot` uses:
///
/// ```text
/// m_n = 0.5^(1/n),  m_1 = 1 − m_n,  m_i = (i − 0.3175) / (n + 0.365) otherwise
/// ```
///
/// (They approximate the medians of the uniform order statistics.)
pub fn filliben_positions(n: usize) -> Vec<f64> {
    let nf = n as f64;
    let last = 0.5f64.powf(1.0 / nf);
    (1..=n)
        .map(|i| {
            if i == n {
                last
            } else if i == 1 {
                1.0 - last
            } else {
                (i as f64 - 0.3175) / (nf + 0.365)
            }
        })
        .collect()
}

/// Q-Q data: sorted residuals against `Φ⁻¹` of [`filliben_positions`],
/// with the least-squares line and correlation (the same numbers as scipy's
/// `probplot(res, dist="norm", fit=True)`). `None` for fewer than three
/// residuals or zero spread.
pub fn normal_qq(res: &[f64]) -> Option<NormalQq> {
    let n = res.len();
    if n < 3 || res.iter().any(|e| !e.is_finite()) {
        return None;
    }
    let mut s = res.to_vec();
    s.sort_by(f64::total_cmp);
    let norm = std_normal();
    let q: Vec<f64> = filliben_positions(n)
        .into_iter()
        .map(|p| norm.inverse_cdf(p))
        .collect();
    let nf = n as f64;
    let (mq, ms) = (q.iter().sum::<f64>() / nf, s.iter().sum::<f64>() / nf);
    let sqq: f64 = q.iter().map(|v| (v - mq).powi(2)).sum();
    let sss: f64 = s.iter().map(|v| (v - ms).powi(2)).sum();
    let sqs: f64 = q.iter().zip(&s).map(|(a, b)| (a - mq) * (b - ms)).sum();
    if !(sss > 0.0 && sqq > 0.0) {
        return None;
    }
    let slope = sqs / sqq;
    Some(NormalQq {
        points: q
            .iter()
            .zip(&s)
            .map(|(&theoretical, &sample)| QqPoint {
                theoretical,
                sample,
            })
            .collect(),
        slope,
        intercept: ms - slope * mq,
        correlation: sqs / (sqq * sss).sqrt(),
    })
}

/// Jarque–Bera normality test.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct JarqueBera {
    pub statistic: f64,
    /// From χ²(2), the test's large-sample distribution.
    pub p_value: f64,
    /// Biased (moment) skewness `m₃ / m₂^{3/2}`.
    pub skewness: f64,
    /// Biased kurtosis `m₄ / m₂²` (3 for a normal).
    pub kurtosis: f64,
}

/// `JB = n/6 (S² + (K − 3)²/4)` with moment skewness S and kurtosis K
/// (Jarque & Bera 1987; statsmodels' `jarque_bera`). The χ²(2) p-value is
/// a large-sample approximation, conservative for small n. `None` for
/// fewer than three residuals or zero spread.
pub fn jarque_bera(res: &[f64]) -> Option<JarqueBera> {
    let n = res.len();
    if n < 3 {
        return None;
    }
    let nf = n as f64;
    let mean = res.iter().sum::<f64>() / nf;
    let m = |k: i32| res.iter().map(|e| (e - mean).powi(k)).sum::<f64>() / nf;
    let (m2, m3, m4) = (m(2), m(3), m(4));
    if m2.is_nan() || m2 <= 0.0 {
        return None;
    }
    let skewness = m3 / m2.powf(1.5);
    let kurtosis = m4 / (m2 * m2);
    let statistic = nf / 6.0 * (skewness * skewness + (kurtosis - 3.0).powi(2) / 4.0);
    let chi2 = ChiSquared::new(2.0).ok()?;
    statistic.is_finite().then(|| JarqueBera {
        statistic,
        p_value: chi2.sf(statistic),
        skewness,
        kurtosis,
    })
}

/// Everything [`residual_diagnostics`] reports.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResidualDiagnostics {
    /// Residuals used (finite ones).
    pub n: usize,
    /// Residuals in time order.
    pub residuals: Vec<f64>,
    pub runs: Option<RunsTest>,
    pub durbin_watson: Option<f64>,
    pub lag1_autocorrelation: Option<f64>,
    pub qq: Option<NormalQq>,
    pub jarque_bera: Option<JarqueBera>,
    /// Runs, autocorrelation and normality, in that order (one `too_few`
    /// verdict instead when n < [`MIN_RESIDUALS`]; with replicates and
    /// fewer than [`MIN_RESIDUALS`] distinct times, one `too_few` verdict
    /// for the order checks, then normality). Worded, and serialised, by
    /// `plateau_study::wording`.
    #[serde(skip)]
    pub verdicts: Vec<Verdict>,
    /// Values the runs test, Durbin–Watson and the lag-1 autocorrelation
    /// were computed from: `n`, or with replicate times the number of
    /// distinct times (one mean residual each, see the module docs).
    pub serial_n: usize,
    /// Whether those checks used the mean residual per time (the times
    /// repeat) rather than the residuals themselves.
    pub per_time_means: bool,
}

/// Residuals of `fit` in time order (stable for equal times), finite ones
/// only, on the scale the fit's error model makes equal-variance
/// (Pearson-type residuals):
///
/// ```text
/// additive  e = y − f           relative  e = (y − f) / f
/// log       e = ln y − ln f     count     e = (y − f) / √f
/// ```
///
/// For a fit to per-period increments, `y` and `f` are the differences of
/// consecutive (time-ordered) values and curve values, n − 1 of them.
pub fn residuals_in_time_order(fit: &Fit, t: &[f64], y: &[f64]) -> Vec<f64> {
    timed_residuals(fit, t, y)
        .into_iter()
        .map(|q| q.1)
        .collect()
}

/// [`residuals_in_time_order`] with the time of each (for increments, the
/// later time of the pair).
fn timed_residuals(fit: &Fit, t: &[f64], y: &[f64]) -> Vec<(f64, f64)> {
    let p = fit.values();
    let mut pts: Vec<(f64, f64, f64)> = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .map(|(&a, &b)| (a, b, fit.model.eval(&p, a)))
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let pairs: Vec<(f64, f64, f64)> = if fit.increments {
        pts.windows(2)
            .map(|w| (w[1].0, w[1].1 - w[0].1, w[1].2 - w[0].2))
            .collect()
    } else {
        pts
    };
    pairs
        .into_iter()
        .map(|(time, obs, f)| {
            let e = match fit.error_model {
                ErrorModel::Additive => obs - f,
                ErrorModel::Relative => (obs - f) / f,
                ErrorModel::Log => obs.ln() - f.ln(),
                ErrorModel::Count => (obs - f) / f.sqrt(),
            };
            (time, e)
        })
        .filter(|q| q.1.is_finite())
        .collect()
}

/// The mean residual of each distinct time, in time order, from
/// `(time, residual)` pairs sorted by time: the one value per time that
/// the runs test, Durbin–Watson and the lag-1 autocorrelation use when
/// times repeat (replicates). Times are equal when their values are
/// (`1` and `1.0` are one time). Without repeats it is the residuals.
pub fn mean_per_time(timed: &[(f64, f64)]) -> Vec<f64> {
    timed
        .chunk_by(|a, b| a.0 == b.0)
        .map(|g| g.iter().map(|q| q.1).sum::<f64>() / g.len() as f64)
        .collect()
}

/// Runs test, Durbin–Watson, lag-1 autocorrelation, Q-Q data and the
/// Jarque–Bera test of the fit's residuals, with their verdicts.
///
/// With replicate times the runs test, Durbin–Watson and the lag-1
/// autocorrelation use the mean residual per time ([`mean_per_time`]; see
/// the module docs), the normality checks every residual.
pub fn residual_diagnostics(fit: &Fit, t: &[f64], y: &[f64]) -> ResidualDiagnostics {
    let timed = timed_residuals(fit, t, y);
    let means = mean_per_time(&timed);
    let res: Vec<f64> = timed.into_iter().map(|q| q.1).collect();
    if means.len() == res.len() {
        of_residuals(res)
    } else {
        of_residuals_and_means(res, means)
    }
}

/// [`residual_diagnostics`] for residuals already in time order, one per
/// time.
pub fn of_residuals(res: Vec<f64>) -> ResidualDiagnostics {
    let serial = res.clone();
    let mut d = of_residuals_and_means(res, serial);
    d.per_time_means = false;
    d
}

/// [`residual_diagnostics`] from every residual in time order (`res`, for
/// Q-Q and Jarque–Bera) and the mean residual per distinct time (`means`,
/// for the runs test, Durbin–Watson and the lag-1 autocorrelation).
pub fn of_residuals_and_means(res: Vec<f64>, means: Vec<f64>) -> ResidualDiagnostics {
    let runs = runs_test(&means);
    let dw = durbin_watson(&means);
    let r1 = lag1_autocorrelation(&means);
    let qq = normal_qq(&res);
    let jb = jarque_bera(&res);
    let n = res.len();
    let serial_n = means.len();
    let per_time_means = serial_n != n;
    let verdicts = if n < MIN_RESIDUALS {
        vec![verdict(Check::Pattern, "too_few", false)]
    } else if serial_n < MIN_RESIDUALS {
        vec![
            verdict(Check::Order, "too_few", false),
            normality_verdict(jb.as_ref()),
        ]
    } else {
        vec![
            runs_verdict(runs.as_ref()),
            dw_verdict(dw),
            normality_verdict(jb.as_ref()),
        ]
    };
    ResidualDiagnostics {
        n,
        residuals: res,
        runs,
        durbin_watson: dw,
        lag1_autocorrelation: r1,
        qq,
        jarque_bera: jb,
        verdicts,
        serial_n,
        per_time_means,
    }
}

fn runs_verdict(runs: Option<&RunsTest>) -> Verdict {
    match runs {
        // Every residual has one sign: the curve misses systematically.
        None => verdict(Check::Runs, "runs_streaks", true),
        Some(r) if r.p_exact < ALPHA && (r.runs as f64) < r.expected => {
            verdict(Check::Runs, "runs_streaks", true)
        }
        Some(r) if r.p_exact < ALPHA => verdict(Check::Runs, "runs_alternate", true),
        Some(_) => verdict(Check::Runs, "runs_ok", false),
    }
}

fn dw_verdict(dw: Option<f64>) -> Verdict {
    match dw {
        // All residuals zero: no statistic.
        None => verdict(Check::Autocorrelation, "too_few", false),
        Some(d) if d < DW_LOW => verdict(Check::Autocorrelation, "autocorrelated", true),
        Some(d) if d > DW_HIGH => verdict(Check::Autocorrelation, "anti_autocorrelated", true),
        Some(_) => verdict(Check::Autocorrelation, "independent", false),
    }
}

/// The normality verdict of residuals `res` alone (Jarque–Bera), as in
/// [`ResidualDiagnostics::verdicts`].
pub fn normality_verdict_of(res: &[f64]) -> Verdict {
    if res.len() < MIN_RESIDUALS {
        return verdict(Check::Normality, "too_few", false);
    }
    normality_verdict(jarque_bera(res).as_ref())
}

fn normality_verdict(jb: Option<&JarqueBera>) -> Verdict {
    match jb {
        // No spread: no test.
        None => verdict(Check::Normality, "too_few", false),
        Some(j) if j.p_value < ALPHA => verdict(Check::Normality, "not_normal", true),
        Some(_) => verdict(Check::Normality, "normal", false),
    }
}

/// Likelihood-ratio test of a model against a more general one that
/// contains it with one more free parameter.
///
/// With Gaussian errors and the ML variance `σ̂² = RSS/n`,
/// `LR = n ln(RSS₀ / RSS₁)`, referred to χ²(1) (Wilks 1938). A general fit
/// with a larger RSS than the nested one did not reach its optimum; the
/// statistic is then reported as 0 (p = 1).
pub fn lr_test(n: usize, rss_nested: f64, rss_general: f64) -> Option<(f64, f64)> {
    if n == 0 || !(rss_nested > 0.0 && rss_general > 0.0) {
        return None;
    }
    let lr = (n as f64 * (rss_nested / rss_general).ln()).max(0.0);
    let chi2 = ChiSquared::new(1.0).ok()?;
    lr.is_finite().then(|| (lr, chi2.sf(lr)))
}

/// The likelihood-ratio test of two fits to the same data, the first
/// nested in the second with `df` fewer free parameters:
/// `LR = 2 (ℓ_general − ℓ_nested)` against χ²(df), floored at 0. For
/// additive Gaussian errors this is [`lr_test`]'s `n ln(RSS₀/RSS₁)`; with
/// the other error models it uses their full log-likelihoods.
pub fn lr_of_fits(nested: &Fit, general: &Fit) -> Option<(f64, f64, usize)> {
    let df = general.free.len().checked_sub(nested.free.len())?;
    if df == 0
        || nested.n != general.n
        || nested.error_model != general.error_model
        || nested.increments != general.increments
    {
        return None;
    }
    let lr = (2.0 * (general.log_likelihood - nested.log_likelihood)).max(0.0);
    let chi2 = ChiSquared::new(df as f64).ok()?;
    lr.is_finite().then(|| (lr, chi2.sf(lr), df))
}

/// Which phase of the curve is the slower one.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Asymmetry {
    /// Fast rise, slow approach to K (Richards ν < 1, Gompertz-like).
    LateSlower,
    /// Slow start, fast finish (Richards ν > 1).
    EarlySlower,
}

/// Is the logistic's point symmetry supported by the data?
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SymmetryTest {
    pub n: usize,
    pub logistic_rss: f64,
    pub richards_rss: Option<f64>,
    /// Richards' shape parameter: 1 is the logistic, → 0 the Gompertz.
    pub nu: Option<f64>,
    pub nu_ci95: Option<[f64; 2]>,
    /// `2 (ℓ_richards − ℓ_logistic)`, i.e. `n ln(RSS_logistic / RSS_richards)`
    /// for additive errors.
    pub lr_statistic: Option<f64>,
    /// From χ²(1).
    pub lr_p_value: Option<f64>,
    /// `AICc_richards − AICc_logistic` (negative favours Richards).
    pub delta_aicc_richards: Option<f64>,
    /// `AICc_gompertz − AICc_logistic` (negative favours the Gompertz).
    pub delta_aicc_gompertz: Option<f64>,
    /// `None` when neither test could be made.
    pub asymmetric: Option<bool>,
    pub direction: Option<Asymmetry>,
    /// How the decision was made: `likelihood_ratio` or `gompertz_aicc`.
    pub decided_by: Option<&'static str>,
    /// The logistic fit's data end before its midpoint, where the test has
    /// little power.
    #[serde(skip)]
    pub ends_before_midpoint: bool,
    #[serde(skip)]
    pub verdict: Verdict,
}

/// A Richards ν below this is read as the Gompertz limit (ν → 0).
pub const NU_GOMPERTZ_LIMIT: f64 = 1e-3;

/// ΔAICc below which the Gompertz fallback calls the data asymmetric.
pub const GOMPERTZ_FALLBACK_DELTA: f64 = -2.0;

/// The symmetry test from fits already made (e.g. by
/// [`compare`](crate::compare::compare)). `logistic` must be a logistic fit,
/// `richards` and `gompertz` fits of the same data, when there are any.
///
/// Decision: the logistic is nested in Richards (ν = 1, inside ν's range,
/// so χ²(1) applies without a boundary correction); data are called
/// asymmetric when the likelihood-ratio p < [`ALPHA`]. The Gompertz is not
/// nested in the logistic (it is Richards' limit ν → 0, a boundary), so it
/// only contributes ΔAICc and, when the Richards fit is missing or did not
/// converge, decides alone: asymmetric when ΔAICc < −2. The direction comes
/// from ν (ν < 1: late phase slower), or from the Gompertz in the fallback.
pub fn symmetry_test_of(
    logistic: &Fit,
    richards: Option<&Fit>,
    gompertz: Option<&Fit>,
) -> SymmetryTest {
    let n = logistic.n;
    let richards = richards.filter(|f| f.converged && f.rss.is_finite());
    let gompertz = gompertz.filter(|f| f.converged && f.rss.is_finite());
    let nu = richards.and_then(|f| f.param("nu")).map(|p| p.estimate);
    let nu_ci95 = richards
        .and_then(|f| f.param("nu"))
        .and_then(|p| p.ci95)
        .map(|(a, b)| [a, b]);
    let lr = richards
        .and_then(|f| lr_of_fits(logistic, f))
        .map(|(lr, p, _)| (lr, p));
    let d_rich = richards.map(|f| f.aicc - logistic.aicc);
    let d_gomp = gompertz.map(|f| f.aicc - logistic.aicc);
    let dir_of_nu = |nu: f64| {
        if nu < 1.0 {
            Asymmetry::LateSlower
        } else {
            Asymmetry::EarlySlower
        }
    };
    let (asymmetric, direction, decided_by) = match (lr, nu, d_gomp) {
        (Some((_, p)), Some(nu), _) => (
            Some(p < ALPHA),
            Some(dir_of_nu(nu)),
            Some("likelihood_ratio"),
        ),
        (_, _, Some(d)) => (
            Some(d < GOMPERTZ_FALLBACK_DELTA),
            Some(Asymmetry::LateSlower),
            Some("gompertz_aicc"),
        ),
        _ => (None, None, None),
    };
    let v = match asymmetric {
        Some(true) => verdict(Check::Symmetry, "asymmetric", true),
        Some(false) => verdict(Check::Symmetry, "symmetric", false),
        None => verdict(Check::Symmetry, "symmetry_unknown", false),
    };
    SymmetryTest {
        n,
        logistic_rss: logistic.rss,
        richards_rss: richards.map(|f| f.rss),
        nu,
        nu_ci95,
        lr_statistic: lr.map(|l| l.0),
        lr_p_value: lr.map(|l| l.1),
        delta_aicc_richards: d_rich,
        delta_aicc_gompertz: d_gomp,
        asymmetric,
        direction,
        decided_by,
        ends_before_midpoint: logistic.has_warning(WarningCode::BeforeInflection),
        verdict: v,
    }
}

/// Fits the logistic, Richards and Gompertz curves to `(t, y)` and runs
/// [`symmetry_test_of`]. Fixed parameters in `opts` apply to every model
/// that has them. Errs when the logistic itself cannot be fitted.
pub fn symmetry_test(t: &[f64], y: &[f64], opts: &FitOptions) -> Result<SymmetryTest, FitError> {
    let for_model = |m: Model| {
        let mut o = opts.clone();
        o.fixed.retain(|(name, _)| m.param_index(name).is_some());
        o.start.retain(|(name, _)| m.param_index(name).is_some());
        o
    };
    let logistic = fit_xy(t, y, Model::Logistic, &for_model(Model::Logistic))?;
    let richards = fit_xy(t, y, Model::Richards, &for_model(Model::Richards)).ok();
    let gompertz = fit_xy(t, y, Model::Gompertz, &for_model(Model::Gompertz)).ok();
    Ok(symmetry_test_of(
        &logistic,
        richards.as_ref(),
        gompertz.as_ref(),
    ))
}

/// The Fisher–Pry view for a given K and its curvature test.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FisherPry {
    pub k: f64,
    /// `(t, ln(y / (K − y)))` for every observation with `0 < y < K`, in time order.
    pub points: Vec<(f64, f64)>,
    /// Observations outside `0 < y < K` (not transformable).
    pub dropped: usize,
    /// Least-squares line `z = intercept + slope · t`: slope estimates r.
    pub slope: f64,
    pub intercept: f64,
    /// Where the line crosses z = 0 (the midpoint `t0 = −intercept / slope`).
    pub t0: Option<f64>,
    /// Quadratic coefficient `c` of `z = a + b u + c u²`, `u = (t − t̄) / s_t`
    /// (centred and scaled time, so `c` is in z units over one time-sd²).
    pub curvature: Option<f64>,
    pub curvature_t: Option<f64>,
    /// Two-sided, Student t with n − 3 degrees of freedom.
    pub curvature_p: Option<f64>,
    #[serde(skip)]
    pub verdict: Verdict,
}

/// The error model that weights a Fisher–Pry view of running totals, for a
/// fit with error model `errors` (of its per-period increments when
/// `increments`). Without increments it is the fit's own. Running totals
/// of count increments are counts too (a sum of independent counts of
/// that kind has variance proportional to its mean), so they keep the
/// count weights. Running totals of additive, relative or log increments
/// carry errors that pile up and are correlated from one total to the
/// next, which no per-point weight describes; they get the additive
/// weights.
pub fn fisher_pry_errors(errors: ErrorModel, increments: bool) -> ErrorModel {
    match (increments, errors) {
        (false, e) => e,
        (true, ErrorModel::Count) => ErrorModel::Count,
        (true, _) => ErrorModel::Additive,
    }
}

/// [`fisher_pry`] of the data `fit` was fitted to, weighted for its error
/// model ([`fisher_pry_errors`]).
pub fn fisher_pry_of(fit: &Fit, t: &[f64], y: &[f64], k: f64) -> Option<FisherPry> {
    fisher_pry(t, y, k, fisher_pry_errors(fit.error_model, fit.increments))
}

/// Fewer transformable points than this: no curvature test.
pub const FISHER_PRY_MIN_POINTS: usize = 5;

/// Fisher & Pry's (1971) straight-line view for a chosen K:
/// `z = ln(y / (K − y))` is linear in t exactly when the data follow a
/// logistic with that K. The test fits `z = a + b u + c u²` by weighted
/// least squares (QR of the weighted design) and tests `c = 0` with
/// Student's t on n − 3 degrees of freedom. The transform stretches noise
/// near 0 and K: the delta method gives `sd(z) ≈ sd(y) K / (y (K − y))`,
/// so each point is weighted by `w = 1 / sd(z)²` up to a constant, with
/// `sd(y)` as `errors` has it (for a fit, [`fisher_pry_errors`]; without
/// the weights the noisy tails alone make a straight logistic look
/// curved):
///
/// ```text
/// additive        sd(y) ∝ 1     w = (y (K − y) / K)²
/// relative, log   sd(y) ∝ y     w = ((K − y) / K)²
/// count           sd(y) ∝ √y    w = y ((K − y) / K)²
/// ```
///
/// The straight line is the weighted fit too. A clear bend means the logistic with this K is the wrong shape
/// (or K is wrong: too high bends the points down at the late end, too low
/// bends them up).
///
/// Replicate measurements (several at one time) enter as separate points
/// of the regression, which is what weighted least squares does with
/// repeated x; the curvature test needs at least three distinct times.
///
/// `None` when K is not positive and finite or `t`, `y` differ in length.
pub fn fisher_pry(t: &[f64], y: &[f64], k: f64, errors: ErrorModel) -> Option<FisherPry> {
    if !(k.is_finite() && k > 0.0) || t.len() != y.len() {
        return None;
    }
    // (t, z, sqrt(w)) in time order.
    let mut pts: Vec<(f64, f64, f64)> = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite() && **b > 0.0 && **b < k)
        .map(|(&a, &b)| {
            let share_left = (k - b) / k;
            let sqrt_w = match errors {
                ErrorModel::Additive => b * share_left,
                ErrorModel::Relative | ErrorModel::Log => share_left,
                ErrorModel::Count => b.sqrt() * share_left,
            };
            (a, (b / (k - b)).ln(), sqrt_w)
        })
        .filter(|q| q.1.is_finite() && q.2 > 0.0)
        .collect();
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let points: Vec<(f64, f64)> = pts.iter().map(|q| (q.0, q.1)).collect();
    let finite = t
        .iter()
        .zip(y)
        .filter(|(a, b)| a.is_finite() && b.is_finite())
        .count();
    let dropped = finite - points.len();
    let n = points.len();
    let nf = n as f64;
    let tm = pts.iter().map(|q| q.0).sum::<f64>() / nf;
    let ts = (pts.iter().map(|q| (q.0 - tm).powi(2)).sum::<f64>() / nf).sqrt();
    if n < 2 || ts.is_nan() || ts <= 0.0 {
        return Some(FisherPry {
            k,
            points,
            dropped,
            slope: f64::NAN,
            intercept: f64::NAN,
            t0: None,
            curvature: None,
            curvature_t: None,
            curvature_p: None,
            verdict: verdict(Check::Curvature, "curvature_unknown", false),
        });
    }
    // Weighted straight line.
    let sw: f64 = pts.iter().map(|q| q.2 * q.2).sum();
    let twm = pts.iter().map(|q| q.2 * q.2 * q.0).sum::<f64>() / sw;
    let zm = pts.iter().map(|q| q.2 * q.2 * q.1).sum::<f64>() / sw;
    let sxz: f64 = pts
        .iter()
        .map(|q| q.2 * q.2 * (q.0 - twm) * (q.1 - zm))
        .sum();
    let sxx: f64 = pts.iter().map(|q| q.2 * q.2 * (q.0 - twm).powi(2)).sum();
    let slope = sxz / sxx;
    let intercept = zm - slope * twm;
    let t0 = (slope != 0.0)
        .then(|| -intercept / slope)
        .filter(|v| v.is_finite());

    let (mut c, mut ct, mut cp) = (None, None, None);
    // Replicates (repeated times) are observations like any other in this
    // regression; a quadratic needs three distinct times, though.
    let distinct = pts.chunk_by(|a, b| a.0 == b.0).count();
    if n >= FISHER_PRY_MIN_POINTS && distinct >= 3 {
        let x = nalgebra::DMatrix::from_fn(n, 3, |i, j| {
            pts[i].2 * ((pts[i].0 - tm) / ts).powi(j as i32)
        });
        let z = nalgebra::DVector::from_iterator(n, pts.iter().map(|q| q.2 * q.1));
        let qr = x.clone().qr();
        let (q, r) = (qr.q(), qr.r());
        // β̂ = R⁻¹ Qᵀ z (thin QR, never the normal equations).
        if let Some(rinv) = r.try_inverse() {
            let beta = &rinv * (q.transpose() * &z);
            let resid = &z - &x * &beta;
            let dof = (n - 3) as f64;
            let s2 = resid.norm_squared() / dof;
            // Var(β̂) = s² (RᵀR)⁻¹; the last diagonal entry of R⁻¹ R⁻ᵀ.
            {
                let v22: f64 = (0..3).map(|j| rinv[(2, j)].powi(2)).sum();
                let se = (s2 * v22).sqrt();
                let tstat = beta[2] / se;
                c = Some(beta[2]);
                if tstat.is_finite() {
                    ct = Some(tstat);
                    cp = StudentsT::new(0.0, 1.0, dof)
                        .ok()
                        .map(|d| (2.0 * d.sf(tstat.abs())).min(1.0));
                } else if se == 0.0 && beta[2].abs() < 1e-12 {
                    // Exactly straight (noise-free logistic data).
                    ct = Some(0.0);
                    cp = Some(1.0);
                }
            }
        }
    }
    let v = match cp {
        Some(p) if p < ALPHA => verdict(Check::Curvature, "curved", true),
        Some(_) => verdict(Check::Curvature, "straight", false),
        None => verdict(Check::Curvature, "curvature_unknown", false),
    };
    Some(FisherPry {
        k,
        points,
        dropped,
        slope,
        intercept,
        t0,
        curvature: c,
        curvature_t: ct,
        curvature_p: cp,
        verdict: v,
    })
}

#[cfg(test)]
mod tests;
