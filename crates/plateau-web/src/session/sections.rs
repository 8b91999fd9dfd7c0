//! The page's slower sections, each answered on its own from the
//! analysis' [`Study`](plateau_study::study::Study) (which caches every
//! answer): the page shows the first [`View`](super::View) at once and asks
//! for a section when it comes into view, then keeps it current.

use super::shown::{self, CompareText, DiagnosticsText};
use super::{Analysis, BacktestRow, CompareRow, DiagnosticsRow, FisherPryRow};
use plateau_core::diagnostics;
use plateau_study::wording::{self, LrTestReport, RecommendationReport, SymmetryReport};
use serde::{Deserialize, Serialize};

/// A part of the page computed when it is first shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum Section {
    /// Every model by AICc, the nested tests and the suggested model.
    Comparison,
    /// Residual checks, the symmetry test and the Fisher–Pry check.
    Checks,
    /// The chosen model refitted on prefixes (the drift chart).
    Drift,
    /// Rolling-origin errors of every model.
    Backtest,
}

impl Section {
    pub const ALL: [Section; 4] = [
        Section::Comparison,
        Section::Checks,
        Section::Drift,
        Section::Backtest,
    ];

    pub fn from_name(name: &str) -> Option<Section> {
        Section::ALL.into_iter().find(|s| s.name() == name)
    }

    pub fn name(self) -> &'static str {
        match self {
            Section::Comparison => "comparison",
            Section::Checks => "checks",
            Section::Drift => "drift",
            Section::Backtest => "backtest",
        }
    }

    /// What the page says while this section is computed.
    pub fn working(self) -> &'static str {
        match self {
            Section::Comparison => "comparing the models",
            Section::Checks => "checking the residuals",
            Section::Drift => "refitting on earlier cutoffs",
            Section::Backtest => "backtesting every model",
        }
    }
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ComparisonView {
    pub comparison: Vec<CompareRow>,
    /// Likelihood-ratio tests of the nested pairs.
    pub lr_tests: Vec<LrTestReport>,
    /// Which model to use and why.
    pub recommendation: RecommendationReport,
    /// `comparison` as the page shows it.
    pub text: Vec<CompareText>,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ChecksView {
    /// The residual diagnostics of the chosen fit.
    pub diagnostics: DiagnosticsRow,
    /// Logistic against Richards (likelihood ratio) and Gompertz (ΔAICc).
    pub symmetry_test: Option<SymmetryReport>,
    /// The Fisher–Pry check for the entered K, else the fitted K.
    pub fisher_pry: Option<FisherPryRow>,
    pub text: DiagnosticsText,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct BacktestView {
    /// One row per model (see [`super::BACKTEST_HORIZON`]).
    pub rows: Vec<BacktestRow>,
    /// Per model, MAPE by horizon (`12.34%`, `–` when there is none).
    pub text: Vec<Vec<String>>,
}

/// One section's answer, tagged with its name for the page.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(tag = "section", rename_all = "lowercase")]
pub enum SectionView {
    Comparison(ComparisonView),
    Checks(Box<ChecksView>),
    /// The drift chart is drawn from the analysis; this says how many
    /// cutoffs it holds.
    Drift {
        rows: usize,
    },
    Backtest(BacktestView),
}

impl Analysis {
    /// Computes (or reads from the study's cache) one section.
    pub fn section(&self, s: Section) -> SectionView {
        match s {
            Section::Comparison => SectionView::Comparison(self.comparison_view()),
            Section::Checks => SectionView::Checks(Box::new(self.checks_view())),
            Section::Drift => SectionView::Drift {
                rows: self.drift().len(),
            },
            Section::Backtest => SectionView::Backtest(self.backtest_view()),
        }
    }

    /// The fit refitted on prefixes of the data (at most [`super::DRIFT_ROWS`]).
    pub fn drift(&self) -> &[plateau_core::history::DriftRow] {
        self.study.drift()
    }

    pub fn comparison_view(&self) -> ComparisonView {
        let entries = self.study.comparison();
        let comparison: Vec<CompareRow> = entries
            .iter()
            .map(|e| CompareRow {
                model: e.model.name(),
                aicc: e.result.as_ref().ok().map(|f| f.aicc),
                bic: e.result.as_ref().ok().map(|f| f.bic),
                delta_aicc: e.delta_aicc,
                weight: e.akaike_weight,
                k: e.result
                    .as_ref()
                    .ok()
                    .and_then(|f| f.model.saturation_level(&f.values())),
                converged: e.result.as_ref().ok().map(|f| f.converged),
                error: e.result.as_ref().err().map(|err| err.to_string()),
            })
            .collect();
        ComparisonView {
            text: shown::comparison_text(&comparison),
            lr_tests: wording::lr_tests(entries),
            recommendation: self.study.recommendation().clone(),
            comparison,
        }
    }

    pub fn checks_view(&self) -> ChecksView {
        let diag = self
            .study
            .residual_diagnostics()
            .cloned()
            .unwrap_or_else(|| {
                diagnostics::residual_diagnostics(&self.fit, &self.series.times, &self.values)
            });
        let row = DiagnosticsRow {
            n: diag.n,
            runs: diag.runs.as_ref().map(|r| r.runs),
            runs_expected: diag.runs.as_ref().map(|r| r.expected),
            runs_p: diag.runs.as_ref().map(|r| r.p_exact),
            durbin_watson: diag.durbin_watson,
            lag1_autocorrelation: diag.lag1_autocorrelation,
            qq_correlation: diag.qq.as_ref().map(|q| q.correlation),
            jarque_bera_p: diag.jarque_bera.map(|j| j.p_value),
            verdicts: wording::residual_verdicts(&diag),
        };
        ChecksView {
            text: shown::diagnostics_text(&row),
            diagnostics: row,
            symmetry_test: self.study.symmetry_test().cloned().map(SymmetryReport::new),
            fisher_pry: self.study.fisher_pry().map(|f| FisherPryRow {
                k: f.k,
                entered: self.settings.fisher_pry_k.is_some(),
                curvature_p: f.curvature_p,
                verdict: wording::fisher_pry_verdict(f),
            }),
        }
    }

    pub fn backtest_view(&self) -> BacktestView {
        let rows: Vec<BacktestRow> = self
            .study
            .backtest()
            .iter()
            .map(|m| BacktestRow {
                model: m.model.name(),
                origins: m.origins,
                failed: m.failed,
                mape: m.by_horizon.iter().map(|h| h.mape).collect(),
                mae: m.by_horizon.iter().map(|h| h.mae).collect(),
                error: m.error.clone(),
            })
            .collect();
        BacktestView {
            text: shown::backtest_text(&rows),
            rows,
        }
    }
}
