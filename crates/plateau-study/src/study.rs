//! A study: one series and one [`Request`], fitted once, every question
//! answered on demand and kept (each answer is computed at most once).
//! The CLI prints one section of it per subcommand; the page shows all of
//! them. Neither face assembles an analysis from the core itself.

use crate::forecast_report::{BacktestReport, DriftReport, ForecastReport};
use crate::report::{CompareReport, DiagnoseReport, FitReport};
use crate::request::{Horizon, Request, MAX_FORECAST_ROWS};
use crate::wording::RecommendationReport;
use plateau_core::backtest::{self, BacktestOptions, ModelBacktest};
use plateau_core::bootstrap::Bootstrap;
use plateau_core::compare::recommend;
use plateau_core::compare::{compare, Entry};
use plateau_core::data::{check_increments, decline_warning, per_period_totals, DataError, Series};
use plateau_core::diagnostics::{self, FisherPry, ResidualDiagnostics, SymmetryTest};
use plateau_core::fit::{fit_xy, Fit, FitError, FitOptions, IntervalMethod};
use plateau_core::forecast::{self, ForecastPoint};
use plateau_core::history::{self, Drift, DriftOptions, DriftRow, Starts};
use plateau_core::milestones::{self, Assessment};
use plateau_core::model::Role;
use plateau_core::{Model, WarningCode};
use std::cell::OnceCell;

/// Why a study could not answer: bad input (exit 2 on the CLI) or a fit
/// that could not be made (exit 1).
#[derive(Debug, Clone, PartialEq)]
pub enum StudyError {
    /// The data or a setting; `line` is the data's 1-based line when known.
    Input {
        line: Option<usize>,
        message: String,
    },
    /// The input was fine but no fit could be made.
    Fit(String),
}

impl std::fmt::Display for StudyError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            StudyError::Input { message, .. } | StudyError::Fit(message) => f.write_str(message),
        }
    }
}

impl std::error::Error for StudyError {}

impl From<DataError> for StudyError {
    fn from(e: DataError) -> Self {
        StudyError::Input {
            line: e.line,
            message: e.to_string(),
        }
    }
}

fn input(message: impl Into<String>) -> StudyError {
    StudyError::Input {
        line: None,
        message: message.into(),
    }
}

/// A forecast: the grid's points, the milestones and the bootstrap behind
/// their percentile intervals (when one was asked).
#[derive(Debug)]
pub struct Outlook {
    pub until: f64,
    pub points: Vec<ForecastPoint>,
    pub milestones: Vec<Assessment>,
    pub bootstrap: Option<Bootstrap>,
}

/// One series studied under one request.
#[derive(Debug)]
pub struct Study {
    series: Series,
    values: Vec<f64>,
    request: Request,
    fit: OnceCell<Result<Fit, FitError>>,
    comparison: OnceCell<Vec<Entry>>,
    recommendation: OnceCell<RecommendationReport>,
    residuals: OnceCell<Option<ResidualDiagnostics>>,
    symmetry: OnceCell<Option<SymmetryTest>>,
    fisher_pry: OnceCell<Option<FisherPry>>,
    drift: OnceCell<Drift>,
    backtest: OnceCell<Vec<ModelBacktest>>,
    outlook: OnceCell<Result<Outlook, StudyError>>,
}

impl Study {
    /// Takes the series as read (its own warnings kept) and prepares the
    /// values to fit: per-period counts summed into running totals when the
    /// request says so, else a warning when the values decline (with the
    /// request's hint on how to sum them). Fitting increments needs one
    /// value per time, checked here naming the lines. Nothing is fitted
    /// yet.
    pub fn new(mut series: Series, request: Request) -> Result<Study, StudyError> {
        if request.fit.increments {
            check_increments(&series)?;
        }
        let values = if request.per_period {
            per_period_totals(&series)?
        } else {
            let warned = series
                .warnings
                .iter()
                .any(|w| w.code == WarningCode::ValuesDecline);
            if let Some(mut w) = decline_warning(&series).filter(|_| !warned) {
                w.message.push_str(&request.per_period_hint);
                series.warnings.push(w);
            }
            series.values.clone()
        };
        Ok(Study {
            series,
            values,
            request,
            fit: OnceCell::new(),
            comparison: OnceCell::new(),
            recommendation: OnceCell::new(),
            residuals: OnceCell::new(),
            symmetry: OnceCell::new(),
            fisher_pry: OnceCell::new(),
            drift: OnceCell::new(),
            backtest: OnceCell::new(),
            outlook: OnceCell::new(),
        })
    }

    /// The series as read, with the study's data warnings.
    pub fn series(&self) -> &Series {
        &self.series
    }

    /// The values as fitted (running totals when per period).
    pub fn values(&self) -> &[f64] {
        &self.values
    }

    /// The series as fitted: the values summed when per period (and the
    /// value name saying so).
    pub fn fitted_series(&self) -> Series {
        let mut s = self.series.clone();
        s.values = self.values.clone();
        s.value_name = self.fitted_value_name();
        s
    }

    /// The name of the values as fitted: "(cumulative)" added when per-period
    /// counts were summed.
    pub fn fitted_value_name(&self) -> String {
        if self.request.per_period {
            format!("{} (cumulative)", self.series.value_name)
        } else {
            self.series.value_name.clone()
        }
    }

    pub fn request(&self) -> &Request {
        &self.request
    }

    fn times(&self) -> &[f64] {
        &self.series.times
    }

    /// The chosen model's fit (made once).
    pub fn fit(&self) -> Result<&Fit, &FitError> {
        self.fit
            .get_or_init(|| {
                fit_xy(
                    self.times(),
                    &self.values,
                    self.request.model,
                    &self.request.fit,
                )
            })
            .as_ref()
    }

    /// The fit, or the message saying which model could not be fitted.
    pub fn fitted(&self) -> Result<&Fit, StudyError> {
        self.fit().map_err(|e| {
            StudyError::Fit(format!(
                "cannot fit the {} model: {e}",
                self.request.model.name()
            ))
        })
    }

    /// Every requested model by AICc, with the comparison's interval method.
    pub fn comparison(&self) -> &[Entry] {
        self.comparison.get_or_init(|| {
            let opts = FitOptions {
                intervals: self.request.comparison_intervals,
                ..self.request.fit.clone()
            };
            compare(self.times(), &self.values, &self.request.models, &opts)
        })
    }

    /// Which model to use and why, in words, from the comparison.
    pub fn recommendation(&self) -> &RecommendationReport {
        self.recommendation.get_or_init(|| {
            RecommendationReport::new(&recommend(self.comparison(), self.times(), &self.values))
        })
    }

    /// Residual checks of the fit (`None` when there is no fit).
    pub fn residual_diagnostics(&self) -> Option<&ResidualDiagnostics> {
        self.residuals
            .get_or_init(|| {
                self.fit()
                    .ok()
                    .map(|f| diagnostics::residual_diagnostics(f, self.times(), &self.values))
            })
            .as_ref()
    }

    /// The logistic against Richards and Gompertz, fitted with the
    /// request's held values and error model (asymptotic intervals: the
    /// test reads likelihoods only). `None` when the logistic cannot be
    /// fitted.
    pub fn symmetry_test(&self) -> Option<&SymmetryTest> {
        self.symmetry
            .get_or_init(|| {
                // The comparison's fits are the same fits when it uses
                // asymptotic intervals and nothing but a known level is
                // held (the page's case): read them instead of refitting.
                let r = &self.request;
                let same_fits = r.comparison_intervals == IntervalMethod::Asymptotic
                    && r.fit.start.is_empty()
                    && r.fit.fixed.len() <= 1
                    && r.fit.fixed.iter().all(|(n, _)| n == "K")
                    && [Model::Logistic, Model::Richards, Model::Gompertz]
                        .iter()
                        .all(|m| r.models.contains(m));
                if same_fits {
                    let fitted = |m: Model| {
                        self.comparison()
                            .iter()
                            .find(|e| e.model == m)
                            .and_then(|e| e.result.as_ref().ok())
                    };
                    return fitted(Model::Logistic).map(|l| {
                        diagnostics::symmetry_test_of(
                            l,
                            fitted(Model::Richards),
                            fitted(Model::Gompertz),
                        )
                    });
                }
                let opts = FitOptions {
                    intervals: IntervalMethod::Asymptotic,
                    ..self.request.fit.clone()
                };
                diagnostics::symmetry_test(self.times(), &self.values, &opts).ok()
            })
            .as_ref()
    }

    /// The K of the Fisher–Pry view: the entered K, else the fitted K.
    pub fn fisher_pry_k(&self) -> Option<f64> {
        self.request
            .fisher_pry_k
            .or_else(|| self.fit().ok()?.param("K").map(|p| p.estimate))
    }

    /// The Fisher–Pry view for [`Study::fisher_pry_k`].
    pub fn fisher_pry(&self) -> Option<&FisherPry> {
        self.fisher_pry
            .get_or_init(|| {
                let f = self.fit().ok()?;
                let k = self.fisher_pry_k()?;
                diagnostics::fisher_pry_of(f, self.times(), &self.values, k)
            })
            .as_ref()
    }

    /// Refits on prefixes of the data (at most the request's
    /// `drift_rows` cutoffs, evenly spread; every prefix when `None`),
    /// with the request's `drift_intervals`.
    pub fn drift(&self) -> &[DriftRow] {
        &self.drift_run().rows
    }

    /// The number of possible cutoffs when the cap left some out.
    pub fn drift_cutoffs_capped_from(&self) -> Option<usize> {
        self.drift_run().cutoffs_capped_from
    }

    fn drift_run(&self) -> &Drift {
        self.drift.get_or_init(|| {
            let opts = FitOptions {
                intervals: self.request.drift_intervals,
                ..self.request.fit.clone()
            };
            history::drift_with(
                self.times(),
                &self.values,
                self.request.model,
                &opts,
                &DriftOptions {
                    max_cutoffs: self.request.drift_rows,
                    starts: Starts::Warm,
                },
            )
        })
    }

    /// Rolling-origin backtest of the requested models (point forecasts
    /// only: the refits skip profile intervals).
    pub fn backtest(&self) -> &[ModelBacktest] {
        self.backtest.get_or_init(|| {
            let b = &self.request.backtest;
            let opts = FitOptions {
                intervals: IntervalMethod::Asymptotic,
                ..self.request.fit.clone()
            };
            backtest::backtest(
                self.times(),
                &self.values,
                &self.request.models,
                &opts,
                &BacktestOptions {
                    horizon: b.horizon,
                    min_train: b.min_train,
                    max_origins: b.max_origins,
                },
            )
        })
    }

    /// A bootstrap of the fit with the request's settings, not yet run
    /// (the page steps it in slices; [`Study::outlook`] runs it whole).
    pub fn start_bootstrap(&self) -> Result<Option<Bootstrap>, StudyError> {
        let Some(opts) = &self.request.bootstrap else {
            return Ok(None);
        };
        let f = self.fitted()?;
        Bootstrap::new(f, self.times(), &self.values, opts)
            .map(Some)
            .map_err(|e| StudyError::Fit(format!("no bootstrap: {e}")))
    }

    /// The standard milestones (10, 50, 90% of the saturation level, the
    /// 10→90 duration) and the requested shares and levels, each with its
    /// verdict, and percentile intervals from `boot` when given.
    pub fn milestones(&self, boot: Option<&Bootstrap>) -> Vec<Assessment> {
        let Ok(f) = self.fit() else {
            return Vec::new();
        };
        let (first, last) = span(self.times());
        milestones::standard_targets(f.model, &self.request.shares, &self.request.levels)
            .into_iter()
            .map(|t| milestones::assess(f, t, first, last, boot))
            .collect()
    }

    /// Where the requested forecast ends on the time axis (`None` when no
    /// forecast was asked).
    pub fn forecast_end(&self) -> Result<Option<f64>, StudyError> {
        let (_, last) = span(self.times());
        let kind = self.series.axis;
        match &self.request.horizon {
            None => Ok(None),
            Some(Horizon::Periods(h)) => Ok(Some(last + h * typical_step(self.times()))),
            Some(Horizon::Until(text)) => {
                // On a calendar axis the end moves to the data's next grid
                // point, so every forecast row falls on the grid.
                let until = kind
                    .parse_time(text)
                    .map(|t| kind.snap_up(t))
                    .map_err(|e| input(format!("--until: {e}")))?;
                if until <= last {
                    return Err(input(format!(
                        "--until {text}: expected a time after the last observation ({})",
                        kind.format(last)
                    )));
                }
                Ok(Some(until))
            }
        }
    }

    /// The forecast to the requested end with its milestones, the
    /// bootstrap (when asked) run whole.
    pub fn outlook(&self) -> Result<&Outlook, StudyError> {
        self.outlook
            .get_or_init(|| {
                let until = self
                    .forecast_end()?
                    .ok_or_else(|| input("no forecast horizon was given"))?;
                let f = self.fitted()?;
                let mut boot = self.start_bootstrap()?;
                if let Some(b) = boot.as_mut() {
                    b.run();
                }
                let (_, last) = span(self.times());
                let step = self
                    .request
                    .step
                    .unwrap_or_else(|| typical_step(self.times()));
                let future = forecast::grid(last, until, step, MAX_FORECAST_ROWS);
                let points =
                    forecast::forecast(f, self.times(), &self.values, &future, boot.as_ref());
                let milestones = self.milestones(boot.as_ref());
                Ok(Outlook {
                    until,
                    points,
                    milestones,
                    bootstrap: boot,
                })
            })
            .as_ref()
            .map_err(Clone::clone)
    }

    /// `plateau fit --json` and the page's JSON download.
    pub fn fit_report(&self) -> Result<FitReport, StudyError> {
        Ok(FitReport::new(self.fitted()?, &self.series.warnings).with_time(&self.series))
    }

    /// `plateau compare --json`.
    pub fn compare_report(&self) -> CompareReport {
        let mut r = CompareReport::new(self.comparison(), &self.series.warnings);
        r.recommendation = Some(self.recommendation().clone());
        r.with_time(&self.series)
    }

    /// `plateau diagnose --json`: residual checks, the symmetry test and
    /// the Fisher–Pry check (entered K, else the fitted K).
    pub fn diagnose_report(&self) -> Result<DiagnoseReport, StudyError> {
        let f = self.fitted()?;
        let mut report = DiagnoseReport::new(
            f,
            &self.series.warnings,
            self.residual_diagnostics().cloned().unwrap_or_else(|| {
                diagnostics::residual_diagnostics(f, self.times(), &self.values)
            }),
            self.symmetry_test().cloned(),
            self.fisher_pry().cloned(),
        );
        report.fit = report.fit.with_time(&self.series);
        Ok(report)
    }

    /// `plateau forecast --json`.
    pub fn forecast_report(&self) -> Result<ForecastReport, StudyError> {
        let o = self.outlook()?;
        let f = self.fitted()?;
        let axis = self.series.axis;
        let text = move |t: f64| axis.format(t);
        Ok(ForecastReport::new(
            f,
            o.until,
            &self.series.time_unit(),
            &o.points,
            &o.milestones,
            o.bootstrap.as_ref(),
            &text,
            &self.series.warnings,
        )
        .with_time_origin(self.series.time_origin()))
    }

    /// `plateau drift --json`; a fit error when no prefix could be fitted.
    pub fn drift_report(&self) -> Result<DriftReport, StudyError> {
        let rows = self.drift();
        if rows.iter().all(|r| r.result.is_err()) {
            return Err(StudyError::Fit(format!(
                "the {} model could not be fitted to any prefix of the data",
                self.request.model.name()
            )));
        }
        let axis = self.series.axis;
        let text = move |t: f64| axis.format(t);
        Ok(
            DriftReport::new(self.request.model, rows, &text, &self.series.warnings).with_run(
                self.request.drift_intervals,
                self.drift_cutoffs_capped_from(),
            ),
        )
    }

    /// `plateau backtest --json`; an input error when the series is too
    /// short to hold out anything.
    pub fn backtest_report(&self) -> Result<BacktestReport, StudyError> {
        let n = self.times().len();
        if n < 4 {
            return Err(input(format!("a backtest needs more points than {n}")));
        }
        Ok(BacktestReport::new(
            self.request.backtest.horizon,
            self.backtest(),
            &self.series.warnings,
        ))
    }
}

/// First and last time.
pub fn span(t: &[f64]) -> (f64, f64) {
    t.iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        })
}

/// The median spacing of the sorted distinct times: one "period".
pub fn typical_step(t: &[f64]) -> f64 {
    forecast::typical_step(t)
}

/// Whether the parameter `name` of `model` is a time on the axis (t0, tau,
/// t01, t02), to be shown as a date on calendar axes; read from the
/// model's roles, not from the name.
pub fn is_time_param(model: Model, name: &str) -> bool {
    model
        .param_index(name)
        .is_some_and(|j| model.roles().get(j) == Some(&Role::Time))
}

/// Values that mostly rise (at most a fifth of the steps fall, as noise
/// makes running totals do near their plateau): possibly running totals,
/// whose fit understates the uncertainty unless increments are fitted.
pub fn looks_cumulative(values: &[f64]) -> bool {
    let falls = values.windows(2).filter(|w| w[1] < w[0]).count();
    values.len() > 2 && falls * 5 < values.len()
}

/// A text cell of any CSV the tool writes (series names, dates, notes,
/// messages; numbers go through [`crate::numbers::csv`] and never here),
/// quoted when it holds a comma, a quote or a line break (RFC 4180).
///
/// Text a spreadsheet would run as a formula, or read differently from
/// what it says (a first character `=`, `+`, `-`, `@`, tab or carriage
/// return: the OWASP "CSV injection" list), is neutralised: a single quote
/// `'` goes before it inside a quoted field, so `=HYPERLINK(…)` arrives as
/// the text `'=HYPERLINK(…)`, not as a link.
pub fn csv_field(s: &str) -> String {
    let risky = s.starts_with(['=', '+', '-', '@', '\t', '\r']);
    if risky {
        format!("\"'{}\"", s.replace('"', "\"\""))
    } else if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use plateau_core::{parse_series, ParseOptions};

    /// Exact logistic K = 100, r = 0.5, t0 = 10 at t = 0..29 (analytic).
    fn exact() -> Series {
        let text: String = (0..30)
            .map(|i| {
                let t = f64::from(i);
                format!("{t},{}\n", 100.0 / (1.0 + (-0.5 * (t - 10.0)).exp()))
            })
            .collect();
        parse_series(&text, &ParseOptions::default()).unwrap()
    }

    #[test]
    fn the_fit_is_made_once_and_is_the_cores() {
        let s = exact();
        let study = Study::new(s.clone(), Request::new(Model::Logistic)).unwrap();
        let direct = fit_xy(&s.times, &s.values, Model::Logistic, &FitOptions::default()).unwrap();
        let a = study.fitted().unwrap();
        assert_eq!(a.values(), direct.values());
        // The same cell answers again: the same object, not a refit.
        assert!(std::ptr::eq(a, study.fitted().unwrap()));
        let k = a.param("K").unwrap().estimate;
        assert!((k - 100.0).abs() < 1e-6, "{k}");
        // The Fisher–Pry K falls back to the fitted K unless one is entered.
        assert_eq!(study.fisher_pry_k(), Some(k));
    }

    #[test]
    fn per_period_counts_are_summed_and_declines_warned_once() {
        let text = "t,y\n1,5\n2,3\n3,4\n4,1\n5,2\n";
        let s = parse_series(text, &ParseOptions::default()).unwrap();
        let mut request = Request::new(Model::Logistic);
        request.per_period = true;
        let study = Study::new(s.clone(), request).unwrap();
        // Running totals of 5, 3, 4, 1, 2.
        assert_eq!(study.values(), &[5.0, 8.0, 12.0, 13.0, 15.0]);
        assert_eq!(study.fitted_value_name(), "y (cumulative)");
        let mut request = Request::new(Model::Logistic);
        request.per_period_hint = " (hint)".into();
        let study = Study::new(s, request).unwrap();
        let declines: Vec<_> = study
            .series()
            .warnings
            .iter()
            .filter(|w| w.code == WarningCode::ValuesDecline)
            .collect();
        assert_eq!(declines.len(), 1);
        assert!(declines[0].message.ends_with(" (hint)"));
        // A study of that series again does not warn twice.
        let again = Study::new(study.series().clone(), Request::new(Model::Logistic)).unwrap();
        let n = again
            .series()
            .warnings
            .iter()
            .filter(|w| w.code == WarningCode::ValuesDecline)
            .count();
        assert_eq!(n, 1);
    }

    #[test]
    fn the_forecast_ends_after_the_data() {
        let mut request = Request::new(Model::Logistic);
        request.horizon = Some(Horizon::Periods(4.0));
        let study = Study::new(exact(), request.clone()).unwrap();
        // Last time 29, spacing 1: four periods end at 33.
        assert_eq!(study.forecast_end().unwrap(), Some(33.0));
        request.horizon = Some(Horizon::Until("20".into()));
        let study = Study::new(exact(), request).unwrap();
        let e = study.outlook().unwrap_err().to_string();
        assert!(
            e.contains("--until 20: expected a time after the last observation (29)"),
            "{e}"
        );
    }

    #[test]
    fn time_parameters_come_from_the_models_roles() {
        assert!(is_time_param(Model::Logistic, "t0"));
        assert!(is_time_param(Model::Bass, "tau"));
        assert!(is_time_param(Model::Bilogistic, "t02"));
        assert!(!is_time_param(Model::Logistic, "K"));
        assert!(!is_time_param(Model::Exponential, "t0"));
        assert_eq!(csv_field("a,b"), "\"a,b\"");
        assert_eq!(csv_field("say \"hi\""), "\"say \"\"hi\"\"\"");
        assert_eq!(csv_field("north"), "north");
    }

    /// Cells a spreadsheet would run as formulas (the OWASP "CSV
    /// injection" first characters) come out as quoted text with a `'`.
    #[test]
    fn text_cells_that_look_like_formulas_are_neutralised() {
        assert_eq!(
            csv_field("=HYPERLINK(\"http://example.invalid\",\"x\")"),
            "\"'=HYPERLINK(\"\"http://example.invalid\"\",\"\"x\"\")\""
        );
        assert_eq!(csv_field("+1"), "\"'+1\"");
        assert_eq!(csv_field("-2+3"), "\"'-2+3\"");
        assert_eq!(csv_field("@SUM(A1:A9)"), "\"'@SUM(A1:A9)\"");
        assert_eq!(csv_field("\tnorth"), "\"'\tnorth\"");
        assert_eq!(csv_field("\rnorth"), "\"'\rnorth\"");
        // Only the first character counts.
        assert_eq!(csv_field("a=b"), "a=b");
        assert_eq!(csv_field("2024-01-31"), "2024-01-31");
        // Numbers are not text cells: the number writer leaves a negative
        // number as a number.
        assert_eq!(crate::numbers::csv(-2.5), "-2.5");
        assert_eq!(typical_step(&[3.0, 1.0, 2.0, 5.0]), 1.0);
    }
}
