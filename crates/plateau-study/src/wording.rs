//! The sentences that put a check's reading to people: residual verdicts,
//! the symmetry and Fisher–Pry verdicts, and the reasons behind a model
//! recommendation. The core classifies (a [`Verdict`]'s code and flag, a
//! [`Reason`] with its numbers); this module writes the words, with every
//! number through [`crate::numbers`]. Main types: [`Worded`] (a verdict
//! with its sentence, the JSON's `{code, flagged, text}`),
//! [`ResidualsReport`], [`SymmetryReport`], [`FisherPryReport`],
//! [`RecommendationReport`].

use crate::numbers;
use plateau_core::compare::{nested_tests, Entry, LrTest, Reason, Recommendation};
use plateau_core::diagnostics::{
    jarque_bera, normality_verdict_of, Asymmetry, Check, FisherPry, ResidualDiagnostics,
    SymmetryTest, Verdict, FISHER_PRY_MIN_POINTS, MIN_RESIDUALS, NU_GOMPERTZ_LIMIT,
};
use plateau_core::milestones::{Assessment, Target, Why};
use plateau_core::Model;
use serde::Serialize;

/// A verdict with its sentence.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Worded {
    pub code: &'static str,
    pub flagged: bool,
    pub text: String,
}

impl Worded {
    fn new(v: Verdict, text: String) -> Worded {
        Worded {
            code: v.code,
            flagged: v.flagged,
            text,
        }
    }
}

/// A p-value read after "p": `= 0.012`, `< 0.001`, `> 0.999` (the digits
/// of [`numbers::probability`]).
pub fn p_text(p: f64) -> String {
    if !p.is_finite() {
        return "–".into();
    }
    match numbers::probability(p).as_str() {
        "<0.001" => "< 0.001".into(),
        ">0.999" => "> 0.999".into(),
        s => format!("= {s}"),
    }
}

/// The residual diagnostics with their verdicts in words: the shape of
/// the JSON's `residuals` object.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ResidualsReport {
    #[serde(flatten)]
    pub diagnostics: ResidualDiagnostics,
    pub verdicts: Vec<Worded>,
}

impl ResidualsReport {
    pub fn new(diagnostics: ResidualDiagnostics) -> ResidualsReport {
        let verdicts = residual_verdicts(&diagnostics);
        ResidualsReport {
            diagnostics,
            verdicts,
        }
    }
}

/// Each of `d`'s verdicts in words.
pub fn residual_verdicts(d: &ResidualDiagnostics) -> Vec<Worded> {
    d.verdicts
        .iter()
        .map(|&v| Worded::new(v, residual_text(v, d)))
        .collect()
}

fn residual_text(v: Verdict, d: &ResidualDiagnostics) -> String {
    let serial = d.serial_n;
    let on_means = if d.per_time_means {
        format!(" (on the mean residual of each of the {serial} distinct times)")
    } else {
        String::new()
    };
    match (v.check, v.code, d.runs.as_ref()) {
        (Check::Pattern, ..) => format!(
            "only {} residuals: too few to judge their pattern (at least {MIN_RESIDUALS} needed)",
            d.n
        ),
        (Check::Order, ..) => format!(
            "only {serial} distinct times: too few to judge the order of the residuals \
             (at least {MIN_RESIDUALS} needed; replicates of one time count once)"
        ),
        (Check::Runs, _, None) => format!(
            "every residual has the same sign: the curve misses the data systematically{on_means}"
        ),
        (Check::Runs, "runs_streaks", Some(r)) => format!(
            "residuals run in long streaks ({} runs where about {:.1} are expected, p {}): \
             the model misses a pattern, and its intervals are too narrow{on_means}",
            r.runs,
            r.expected,
            p_text(r.p_exact)
        ),
        (Check::Runs, "runs_alternate", Some(r)) => format!(
            "residual signs alternate more often than chance ({} runs where about {:.1} are \
             expected, p {}): look for a saw-tooth in the data, such as reporting rhythm{on_means}",
            r.runs,
            r.expected,
            p_text(r.p_exact)
        ),
        (Check::Runs, _, Some(r)) => format!(
            "residual signs mix as chance would ({} runs, about {:.1} expected, p {}){on_means}",
            r.runs,
            r.expected,
            p_text(r.p_exact)
        ),
        (Check::Autocorrelation, code, _) => {
            let r1 = d
                .lag1_autocorrelation
                .map_or(String::new(), |r| format!(", lag-1 autocorrelation {r:.2}"));
            let Some(dw) = d.durbin_watson else {
                return format!("no Durbin–Watson statistic: the residuals are all zero{on_means}");
            };
            match code {
                "autocorrelated" => format!(
                    "neighbouring residuals move together (Durbin–Watson {dw:.2}{r1}): \
                     the errors are not independent, so standard errors and intervals are too \
                     small{on_means}"
                ),
                "anti_autocorrelated" => format!(
                    "neighbouring residuals swing against each other (Durbin–Watson {dw:.2}{r1}): \
                     often a sign of per-period counts or corrections between periods{on_means}"
                ),
                _ => format!("no sign of autocorrelation (Durbin–Watson {dw:.2}{r1}){on_means}"),
            }
        }
        _ => normality_text(v, d.n, d.jarque_bera.as_ref()),
    }
}

fn normality_text(
    v: Verdict,
    n: usize,
    jb: Option<&plateau_core::diagnostics::JarqueBera>,
) -> String {
    match (v.code, jb) {
        (_, None) if n < MIN_RESIDUALS => {
            format!("only {n} residuals: too few to judge normality")
        }
        ("too_few", Some(_)) => format!("only {n} residuals: too few to judge normality"),
        (_, None) => "no normality test: the residuals have no spread".into(),
        ("not_normal", Some(j)) => format!(
            "the residuals are not normal-looking (skewness {:.2}, kurtosis {:.2}, Jarque–Bera \
             p {}): the t intervals assume normal errors; check the Q-Q chart for outliers",
            j.skewness,
            j.kurtosis,
            p_text(j.p_value)
        ),
        (_, Some(j)) => format!(
            "the residuals are consistent with normal errors (Jarque–Bera p {})",
            p_text(j.p_value)
        ),
    }
}

/// The normality verdict of residuals `res` alone, in words (the Q-Q
/// chart's caption).
pub fn normality_of(res: &[f64]) -> Worded {
    let v = normality_verdict_of(res);
    Worded::new(v, normality_text(v, res.len(), jarque_bera(res).as_ref()))
}

/// The symmetry test with its verdict in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SymmetryReport {
    #[serde(flatten)]
    pub test: SymmetryTest,
    pub verdict: Worded,
}

impl SymmetryReport {
    pub fn new(test: SymmetryTest) -> SymmetryReport {
        let verdict = symmetry_verdict(&test);
        SymmetryReport { test, verdict }
    }
}

/// The symmetry test's verdict in words.
pub fn symmetry_verdict(s: &SymmetryTest) -> Worded {
    let mut evidence = Vec::new();
    if let (Some(nu), Some(p)) = (s.nu, s.lr_p_value) {
        let limit = if nu < NU_GOMPERTZ_LIMIT {
            " (at its lower limit: the Gompertz shape)"
        } else {
            ""
        };
        evidence.push(format!(
            "Richards ν = {nu:.3}{limit}, likelihood-ratio p {}",
            p_text(p)
        ));
    }
    if let Some(d) = s.delta_aicc_gompertz {
        evidence.push(format!("Gompertz ΔAICc = {d:.1} against the logistic"));
    }
    let evidence = evidence.join("; ");
    let text = match (s.asymmetric, s.direction) {
        (Some(true), Some(Asymmetry::LateSlower)) => format!(
            "the late phase is slower than the early phase: an asymmetric curve \
             (Gompertz-like, ν < 1) fits better than the logistic ({evidence})"
        ),
        (Some(true), _) => format!(
            "the early phase is slower than the late phase: an asymmetric curve \
             (Richards ν > 1) fits better than the logistic ({evidence})"
        ),
        (Some(false), _) => format!(
            "no evidence against the logistic's symmetry: a free shape does not fit \
             significantly better ({evidence}){}",
            if s.ends_before_midpoint {
                "; the data end before the midpoint, where the test has little power"
            } else {
                ""
            }
        ),
        (None, _) => {
            "no symmetry test: neither the Richards nor the Gompertz curve could be fitted".into()
        }
    };
    Worded::new(s.verdict, text)
}

/// The Fisher–Pry check with its verdict in words.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FisherPryReport {
    #[serde(flatten)]
    pub check: FisherPry,
    pub verdict: Worded,
}

impl FisherPryReport {
    pub fn new(check: FisherPry) -> FisherPryReport {
        let verdict = fisher_pry_verdict(&check);
        FisherPryReport { check, verdict }
    }
}

/// The Fisher–Pry verdict in words.
pub fn fisher_pry_verdict(f: &FisherPry) -> Worded {
    let k = numbers::number(f.k);
    let text = match (f.verdict.code, f.curvature, f.curvature_p) {
        ("curved", Some(c), Some(p)) => format!(
            "the Fisher–Pry points bend {} (curvature p {}): curvature means the logistic \
             with K = {k} is the wrong shape — {}",
            if c < 0.0 { "downward" } else { "upward" },
            p_text(p),
            if c < 0.0 {
                "growth slows sooner than it allows (K set too high, or a Gompertz-like late phase)"
            } else {
                "growth keeps up longer than it allows (K set too low, or a slow early phase)"
            }
        ),
        ("straight", _, Some(p)) => format!(
            "the Fisher–Pry points lie on a straight line (curvature p {}): consistent \
             with a logistic with K = {k}",
            p_text(p)
        ),
        _ if f.slope.is_nan() => {
            format!("too few values between 0 and K = {k} for a straight-line view")
        }
        _ => format!(
            "too few values between 0 and K = {k} to test for curvature (at least \
             {FISHER_PRY_MIN_POINTS} needed)"
        ),
    };
    Worded::new(f.verdict, text)
}

/// A recommendation in words: the JSON's `recommendation` object.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RecommendationReport {
    pub model: Option<Model>,
    /// One short sentence per reason, most important first.
    pub reasons: Vec<String>,
    /// The recommended model's residual verdicts.
    pub residual_verdicts: Vec<Worded>,
}

impl RecommendationReport {
    pub fn new(r: &Recommendation) -> RecommendationReport {
        let residual_verdicts = r.residuals.as_ref().map_or(vec![], residual_verdicts);
        let reasons = r
            .reasons
            .iter()
            .map(|reason| reason_text(reason, &residual_verdicts))
            .collect();
        RecommendationReport {
            model: r.model,
            reasons,
            residual_verdicts,
        }
    }
}

fn reason_text(r: &Reason, residual_verdicts: &[Worded]) -> String {
    match r {
        Reason::NothingFitted => "no model could be fitted".into(),
        Reason::AllPoorlyDetermined { best } => format!(
            "every model has identifiability warnings; {} has the lowest AICc but its \
             parameters are poorly determined",
            best.name()
        ),
        Reason::SetAside {
            model,
            delta_aicc,
            codes,
        } => format!(
            "{} has a lower AICc (ΔAICc {delta_aicc:.2}) but is set aside: {}",
            model.name(),
            codes.join(", ")
        ),
        Reason::SimplerKept {
            general,
            nested,
            p_value,
        } => format!(
            "{} has the lower AICc, but the likelihood-ratio test does not reject the \
             simpler {} (p {}): the extra parameter is not supported",
            general.name(),
            nested.name(),
            p_text(*p_value)
        ),
        Reason::Chosen {
            model,
            delta_aicc,
            weight,
        } => format!(
            "{}: ΔAICc {delta_aicc:.2}, Akaike weight {weight:.2}",
            model.name()
        ),
        Reason::Next {
            model,
            delta_aicc,
            weight,
        } => format!(
            "next: {} (ΔAICc {delta_aicc:.2}, weight {weight:.2})",
            model.name()
        ),
        Reason::Nested(lr) => format!(
            "likelihood ratio {} within {}: LR = {:.2}, p {}{}",
            lr.nested.name(),
            lr.general.name(),
            lr.statistic,
            p_text(lr.p_value),
            if lr.p_value < plateau_core::diagnostics::ALPHA {
                " (the restriction is rejected)"
            } else {
                " (the simpler curve suffices)"
            }
        ),
        Reason::NoSCurve { model, why } => format!(
            "no S-curve is supported by these data: for every growth curve fitted, a constant \
             or a straight line does better ({}: {why})",
            model.name()
        ),
        Reason::ResidualsClean { checks: 1 } => {
            "its residuals show no pattern in the one check made".into()
        }
        Reason::ResidualsClean { checks } => {
            format!("its residuals show no pattern in any of the {checks} checks")
        }
        Reason::ResidualFlag(i) => residual_verdicts
            .get(*i)
            .map_or_else(String::new, |v| format!("but {}", v.text)),
        _ => String::new(),
    }
}

/// A milestone's short label, naming the model's own saturation level:
/// `50% of K`, `level 1,000,000`, `10% → 90% of m (duration)`.
pub fn milestone_label(a: &Assessment) -> String {
    let level = a.level_name;
    match a.target {
        Target::Share(p) => format!("{}% of {level}", numbers::number(100.0 * p)),
        Target::Level(y) => format!("level {}", numbers::number(y)),
        Target::Duration1090 => format!("10% → 90% of {level} (duration)"),
    }
}

/// What a milestone's verdict means for it, in one sentence (`""` when
/// there is nothing to add).
pub fn milestone_note(a: &Assessment) -> String {
    let n = numbers::number;
    let Some(why) = a.why else {
        return String::new();
    };
    match why {
        Why::NoSaturation { model } => {
            format!("the {} model has no saturation level", model.name())
        }
        Why::LevelsOffBelow { level, k } => format!(
            "the fitted curve levels off at K = {} and never reaches {}",
            n(k),
            n(level)
        ),
        Why::AtOrBelowFloor { level, floor } => format!(
            "{} is at or below the fitted floor L = {}",
            n(level),
            n(floor)
        ),
        Why::NeverReaches { level } => format!("the fitted curve never reaches {}", n(level)),
        Why::NoTime => "the fitted curve gives no time for this milestone".into(),
        Why::AboveKInterval { level, lo, hi } => format!(
            "{} is above the 95% interval of K ({} … {})",
            n(level),
            n(lo),
            n(hi)
        ),
        Why::InsideKInterval { level, lo, hi } => format!(
            "{} lies inside the 95% interval of K ({} … {}): the data cannot say whether \
             the curve ever gets there",
            n(level),
            n(lo),
            n(hi)
        ),
        Why::KWithoutInterval => "K has no interval, so the data cannot say whether this \
                                  level is ever reached"
            .into(),
        Why::FewRefitsReach { share } => format!(
            "only {:.0}% of the bootstrap refits ever reach it",
            100.0 * share
        ),
        Why::SomeRefitsNeverReach { share } => format!(
            "{:.1}% of the bootstrap refits never reach it, so the interval has no upper end",
            100.0 * share
        ),
        Why::TooFar { spans } => format!(
            "it would come {spans:.1} data spans after the last observation, further than a \
             forecast from these data can reach"
        ),
        Why::WithinData => "within the observed time range".into(),
        Why::Extrapolation => "after the last observation: an extrapolation".into(),
        Why::RiseCovered => "the data cover the rise to 90% of K".into(),
        Why::SaturationNotDetermined => format!(
            "the data do not determine {}, so {} (milestones at a fixed level are still assessed)",
            a.level_name,
            if a.target == Target::Duration1090 {
                "the rise from 10% to 90% of it has no duration"
            } else {
                "a share of it has no date"
            }
        ),
        Why::RisePartlyAhead => {
            "the rise to 90% of K lies partly after the last observation".into()
        }
        _ => String::new(),
    }
}

/// A likelihood-ratio test with a note on its restriction: the JSON's
/// `lr_tests` items.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LrTestReport {
    #[serde(flatten)]
    pub test: LrTest,
    /// What the restriction is and whether the χ² reference is regular.
    pub note: &'static str,
}

/// The likelihood-ratio tests of the nested pairs in `entries`, with
/// their notes.
pub fn lr_tests(entries: &[Entry]) -> Vec<LrTestReport> {
    nested_tests(entries)
        .into_iter()
        .map(LrTestReport::new)
        .collect()
}

impl LrTestReport {
    pub fn new(test: LrTest) -> LrTestReport {
        let note = match test.general {
            Model::Logistic4 => {
                "L = 0 lies inside L's range (L may take either sign), so the usual \
                 likelihood-ratio test holds."
            }
            Model::Richards => {
                "ν = 1 lies inside ν's range (ν > 0), so the usual likelihood-ratio test \
                 holds. The Gompertz curve is the limit ν → 0 and is compared by AICc only."
            }
            _ => "",
        };
        LrTestReport { test, note }
    }
}

/// The reports read as the results they word (their own `verdict` /
/// `verdicts` fields, the worded ones, come first).
macro_rules! reads_as {
    ($report:ty, $field:ident, $inner:ty) => {
        impl std::ops::Deref for $report {
            type Target = $inner;
            fn deref(&self) -> &$inner {
                &self.$field
            }
        }
    };
}
reads_as!(ResidualsReport, diagnostics, ResidualDiagnostics);
reads_as!(SymmetryReport, test, SymmetryTest);
reads_as!(FisherPryReport, check, FisherPry);
reads_as!(LrTestReport, test, LrTest);

#[cfg(test)]
mod tests;
