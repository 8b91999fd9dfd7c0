//! The page's state and its one operation, [`Session::update`]: text and
//! settings in, a [`View`] (everything the page shows as numbers) out.
//!
//! Plain Rust with no JavaScript types, so it is tested natively; `lib.rs`
//! wraps it for wasm-bindgen. A failed update (bad data) leaves the previous
//! analysis in place, so the page keeps showing the last good results next
//! to the error.

use plateau_core::analysis;
use plateau_core::bootstrap::{Bootstrap, BootstrapOptions, DEFAULT_SEED};
use plateau_core::data::{
    column_count, is_table_export, parse_multi, workbook, ColumnRef, DataError, Layout,
    MultiOptions, SeriesSet, TimeKind,
};
use plateau_core::fit::{Fit, FitOptions, IntervalMethod};
use plateau_core::milestones::{self, Assessment, Target};
use plateau_core::{parse_series, Model, ParseOptions, Series, Warning};
use plateau_study::answer::{self, Answer};
use plateau_study::numbers::{self, Precision};
use plateau_study::report::CAUTION;
use plateau_study::request::{self, BacktestRequest, Horizon, Request};
pub use plateau_study::study::typical_step;
use plateau_study::study::{csv_field, is_time_param, looks_cumulative, span, Study, StudyError};
use plateau_study::summary::{summary_csv, SeriesSummary};
use plateau_study::wording::{self, Worded};
use serde::{Deserialize, Serialize};
use std::fmt::Write;
use std::rc::Rc;

mod chart_text;
mod sections;
mod shown;
pub use chart_text::{chart_table, ChartTable};
pub use sections::{BacktestView, ChecksView, ComparisonView, Section, SectionView};
pub use shown::ViewText;

/// The demo series shown on a first visit (invented; see demo-data/README.md).
pub const DEMO_TEXT: &str = include_str!("../../../demo-data/aldermoor_subscribers.csv");
/// How the page labels the demo series.
pub const DEMO_LABEL: &str = "Demo data (invented): weekly cumulative subscriptions in Aldermoor, \
a fictional region of a fictional solar co-operative.";

/// The several-series demo (invented; see demo-data/README.md).
pub const DEMO_MULTI_TEXT: &str = include_str!("../../../demo-data/regional_adoption_wide.csv");
/// How the page labels the several-series demo.
pub const DEMO_MULTI_LABEL: &str = "Demo data (invented): monthly cumulative households on a \
fictional heat-pump lease in four fictional regions.";

/// What the user chose on the page. Field names are the page's JSON keys.
#[derive(Debug, Clone, Deserialize, Serialize, PartialEq)]
#[serde(default, rename_all = "camelCase")]
pub struct Settings {
    /// A model name as in [`Model::name`].
    pub model: String,
    /// K held at a known value (market sizing), or `None` to estimate it.
    pub fixed_k: Option<f64>,
    /// Forecast horizon in periods past the last observation; a period is
    /// the median spacing of the observation times.
    pub horizon: f64,
    /// The values are per-period counts, accumulated before fitting.
    pub per_period: bool,
    /// 0-based column choices; `None` means the first and second columns.
    pub time_column: Option<usize>,
    pub value_column: Option<usize>,
    /// A user-chosen milestone as a share of K, in percent.
    pub share: f64,
    /// A user-chosen milestone as an absolute level (e.g. one million users).
    pub level: Option<f64>,
    /// The error model's name (see [`ErrorModel::name`]).
    pub error_model: String,
    /// Fit per-period increments instead of the running totals.
    pub increments: bool,
    /// How the text is laid out: `"single"` (one series, chosen columns),
    /// `"wide"` (a time column, one column per series), `"long"` (rows of
    /// series, time, value), or `None` to detect: several series when the
    /// text has more than two columns and no column was chosen.
    pub layout: Option<String>,
    /// With several series: which one the detailed results show (0-based).
    pub series: Option<usize>,
    /// Whether bootstrap intervals are computed (in slices, after each update).
    pub bootstrap: bool,
    /// `residual` or `parametric`.
    pub resampling: String,
    /// Bootstrap replicates B, as typed (any number: [`check_settings`]
    /// says when it is out of range); `None` for the default.
    pub replicates: Option<f64>,
    /// Seed of the bootstrap's random numbers, as typed (see
    /// [`check_settings`]); `None` for the default.
    pub seed: Option<f64>,
    /// K for the Fisher–Pry view; `None` uses the fitted K.
    pub fisher_pry_k: Option<f64>,
}

impl Default for Settings {
    fn default() -> Self {
        Settings {
            model: "logistic".into(),
            fixed_k: None,
            horizon: 12.0,
            per_period: false,
            time_column: None,
            value_column: None,
            share: 90.0,
            level: None,
            error_model: "additive".into(),
            increments: false,
            layout: None,
            series: None,
            bootstrap: false,
            resampling: "residual".into(),
            replicates: Some(plateau_core::bootstrap::DEFAULT_REPLICATES as f64),
            seed: Some(DEFAULT_SEED as f64),
            fisher_pry_k: None,
        }
    }
}

/// Why an update produced no new analysis.
#[derive(Debug, Clone, PartialEq)]
pub struct UpdateError {
    /// 1-based line of the data text, when the problem is on one line.
    pub line: Option<usize>,
    pub message: String,
}

impl std::fmt::Display for UpdateError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)
    }
}

impl From<DataError> for UpdateError {
    fn from(e: DataError) -> Self {
        UpdateError {
            line: e.line,
            message: e.to_string(),
        }
    }
}

fn setting_error(message: impl Into<String>) -> UpdateError {
    UpdateError {
        line: None,
        message: message.into(),
    }
}

/// The most bootstrap replicates (the study layer's limit, the CLI's too).
pub const MAX_REPLICATES: u32 = request::MAX_REPLICATES as u32;
/// The largest seed: the largest whole number a JavaScript number holds
/// exactly (2^53 − 1), so the seed shown is the seed used.
pub const MAX_SEED: u64 = request::MAX_SEED;
/// The longest forecast, in periods.
pub const MAX_HORIZON: f64 = request::MAX_HORIZON_PERIODS;

/// A number as the sentence about it shows it (as JavaScript writes it:
/// exponent form from 10^21 on).
fn shown(x: f64) -> String {
    if x.is_nan() {
        "not a number".into()
    } else if x.is_finite() && x.abs() >= 1e21 {
        format!("{x:e}")
    } else {
        format!("{x}")
    }
}

/// A sentence for a setting out of its range: the setting as the page
/// labels it, what it must be, and what it is.
fn out_of_range(label: &str, allowed: &str, x: f64) -> UpdateError {
    setting_error(format!("{label} must be {allowed}; it is {}.", shown(x)))
}

/// A whole number in `lo..=hi`, or the sentence saying it is not.
fn whole(label: &str, x: f64, lo: u64, hi: u64) -> Result<u64, UpdateError> {
    if x.is_finite() && x.fract() == 0.0 && x >= lo as f64 && x <= hi as f64 {
        Ok(x as u64)
    } else {
        Err(out_of_range(
            label,
            &format!("a whole number from {lo} to {hi}"),
            x,
        ))
    }
}

/// Checks every numeric setting against its range before anything is
/// fitted; the error is one sentence naming the setting as the page labels
/// it and the allowed range (never a deserialiser's message).
pub fn check_settings(s: &Settings) -> Result<(), UpdateError> {
    let positive = |label: &str, v: Option<f64>| match v {
        Some(x) if !request::positive(x) => Err(out_of_range(label, "a positive number", x)),
        _ => Ok(()),
    };
    positive("Known K", s.fixed_k)?;
    if !(s.horizon.is_finite() && (0.0..=MAX_HORIZON).contains(&s.horizon)) {
        return Err(out_of_range(
            "Forecast periods",
            &format!("a number of periods from 0 to {MAX_HORIZON}"),
            s.horizon,
        ));
    }
    if !(s.share.is_finite() && s.share > 0.0 && s.share < 100.0) {
        return Err(out_of_range(
            "Milestone share of K (%)",
            "a percentage between 0 and 100 (not 0 or 100 themselves)",
            s.share,
        ));
    }
    if let Some(l) = s.level.filter(|l| !l.is_finite()) {
        return Err(out_of_range("Milestone level", "a finite number", l));
    }
    positive("K for the Fisher–Pry view", s.fisher_pry_k)?;
    bootstrap_numbers(s)?;
    Ok(())
}

/// The bootstrap's replicates and seed, checked (see [`check_settings`]).
fn bootstrap_numbers(s: &Settings) -> Result<(usize, u64), UpdateError> {
    let replicates = match s.replicates {
        None => plateau_core::bootstrap::DEFAULT_REPLICATES,
        Some(b) => whole("Replicates B", b, 1, u64::from(MAX_REPLICATES))? as usize,
    };
    let seed = match s.seed {
        None => DEFAULT_SEED,
        Some(x) => whole("Seed", x, 0, MAX_SEED)?,
    };
    Ok((replicates, seed))
}

/// One finished analysis: the data as fitted, the chosen model's fit and
/// the comparison of every model.
#[derive(Debug, Clone)]
pub struct Analysis {
    pub settings: Settings,
    pub series: Series,
    /// The values as fitted (accumulated when the input was per period).
    pub values: Vec<f64>,
    pub fit: Fit,
    pub view: View,
    /// End of the forecast on the time axis.
    pub horizon_end: f64,
    /// Every series, when the text held several.
    pub multi: Option<Multi>,
    /// The study behind every number above (and the bootstrap).
    pub study: Rc<Study>,
}

/// Several series: each one's data as fitted, its fit (if any) and its summary row.
#[derive(Debug, Clone)]
pub struct Multi {
    pub layout: Layout,
    pub names: Vec<String>,
    pub series: Vec<Series>,
    /// Values as fitted (accumulated when per period), one vector per series.
    pub values: Vec<Vec<f64>>,
    pub fits: Vec<Option<Fit>>,
    pub summary: Vec<SeriesSummary>,
}

/// The several-series part of the view.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct MultiView {
    pub layout: Layout,
    /// The series the detailed results show.
    pub selected: usize,
    /// One row per series, in input order (the shape of `plateau batch --json`).
    pub summary: Vec<SeriesSummary>,
}

/// Horizons of the page's backtest: 1 to this many observations ahead.
pub const BACKTEST_HORIZON: usize = 4;

/// Origins of the page's backtest, at most (evenly spread from half the
/// data on), as `plateau backtest` by default.
pub const BACKTEST_ORIGINS: usize = plateau_core::history::MAX_CUTOFFS;

/// One model's backtest on the page.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct BacktestRow {
    pub model: &'static str,
    pub origins: usize,
    pub failed: usize,
    /// Mean absolute percentage error for h = 1..=BACKTEST_HORIZON.
    pub mape: Vec<Option<f64>>,
    /// Mean absolute error for h = 1..=BACKTEST_HORIZON.
    pub mae: Vec<Option<f64>>,
    /// Why the model was not fitted at all (a known K for the bi-logistic).
    pub error: Option<String>,
}

/// Prefixes the page refits for its drift chart, at most (evenly spread),
/// as `plateau drift` by default.
pub const DRIFT_ROWS: usize = plateau_core::history::MAX_CUTOFFS;

/// The page's first answer, ready to show: the fit, its parameters and
/// milestones (what the curve chart needs). The slower sections (model
/// comparison, checks, drift, backtest) are [`Section`]s, asked for
/// separately. Times come both as axis values and as display text (dates
/// when the input had dates).
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct View {
    pub model: &'static str,
    pub formula: &'static str,
    pub time_name: String,
    pub value_name: String,
    pub time_kind: TimeKind,
    /// Every column of the input, for the column choice.
    pub columns: Vec<String>,
    pub time_column: usize,
    pub value_column: usize,
    pub per_period: bool,
    pub converged: bool,
    pub termination: &'static str,
    /// Why the solver stopped, in words.
    pub termination_text: &'static str,
    pub iterations: usize,
    pub params: Vec<ParamRow>,
    /// The error model's name and a sentence on what it means.
    pub error_model: &'static str,
    pub error_model_text: &'static str,
    /// Whether per-period increments were fitted.
    pub increments: bool,
    /// Set when K is not determined by the data: shown above the results.
    pub not_identified: Option<String>,
    /// Set when running totals were fitted as such: why the intervals are
    /// likely too narrow, and what to do.
    pub increments_hint: Option<&'static str>,
    pub stats: Stats,
    /// Data-input warnings first, then the fit's.
    pub warnings: Vec<Warning>,
    pub milestones: Vec<MilestoneRow>,
    /// In the axis' unit (`time_unit`: days, weeks, months, quarters or
    /// years on dated axes): ln(81)/r for the logistic.
    pub duration_10_90: Option<f64>,
    /// The fitted model's name for its saturation level (`K`, Bass's `m`,
    /// `K1 + K2`), for the page's sentences.
    pub saturation: &'static str,
    pub symmetry: Option<SymmetryRow>,
    /// The Bass model's adoption peak, when it has one after launch.
    pub peak: Option<PeakRow>,
    pub caution: &'static str,
    /// The axis unit: `day`, `week`, `month`, `quarter`, `year`, or a
    /// numeric time column's header (`""` without one).
    pub time_unit: String,
    /// Axis value 0 in the data's form (`2000-01`, …); `None` for numbers.
    pub time_origin: Option<String>,
    /// Present when the text held several series.
    pub multi: Option<MultiView>,
    /// The layout used: "single", "wide" or "long".
    pub layout: &'static str,
    /// Every number above as the page shows it (`plateau_study::numbers`).
    pub text: ViewText,
    /// Whether the page shows the straight-line view: not for the
    /// logistic, whose straight line is the Fisher–Pry view's (one view
    /// per transform).
    pub straight_line_view: bool,
    /// The answer at a glance, in words (`plateau_study::answer`).
    pub answer: Option<Answer>,
    /// One line saying what was read (`34 monthly points, …`), shown when
    /// the input is folded.
    pub data_summary: String,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ParamRow {
    pub name: &'static str,
    pub estimate: f64,
    pub std_error: Option<f64>,
    /// The reported 95% interval; a `null` side is open (no bound).
    pub ci95: Option<[Option<f64>; 2]>,
    /// `"profile"` or `"asymptotic"`.
    pub ci_method: Option<&'static str>,
    /// estimate ± t·se; `None` when the parameter is not identified.
    pub ci95_asymptotic: Option<[f64; 2]>,
    pub identified: bool,
    pub fixed: bool,
    /// The estimate as a date (for t0 on date axes), else `None`.
    pub as_time: Option<String>,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct Stats {
    pub n: usize,
    pub dof: usize,
    pub rss: f64,
    pub sigma: f64,
    pub r_squared: f64,
    pub aic: f64,
    pub aicc: f64,
    pub bic: f64,
    pub condition_number: f64,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct MilestoneRow {
    pub label: String,
    /// Axis value (or duration); `None` when the milestone has no time.
    pub time: Option<f64>,
    /// The time as text, or what stands in its place ("not reached", …).
    pub time_text: String,
    /// Delta-method 95% interval as text.
    pub ci95_text: Option<[String; 2]>,
    /// Bootstrap 95% percentile interval as text (an open end reads
    /// "never"); `None` until a bootstrap has run.
    pub bootstrap_text: Option<[String; 2]>,
    /// Whether the milestone lies past the last observation (a forecast).
    pub forecast: bool,
    /// `milestones::Verdict` code.
    pub verdict: &'static str,
    pub note: String,
}

/// Bootstrap results for the page: progress, then intervals.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct BootstrapView {
    pub done: usize,
    pub replicates: usize,
    pub failed: usize,
    pub seed: u64,
    pub resampling: &'static str,
    pub finished: bool,
    /// Per parameter (model order): the percentile interval, `None` for
    /// fixed parameters.
    pub params: Vec<Option<[f64; 2]>>,
    /// `params` as the page shows them, at each estimate's digits.
    pub params_text: Vec<String>,
    pub milestones: Vec<MilestoneRow>,
}

/// The Bass adoption peak, ready to show.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct PeakRow {
    pub time: f64,
    pub time_text: String,
    pub time_ci95_text: Option<[String; 2]>,
    /// Adoptions per unit of time at the peak.
    pub rate: f64,
    pub rate_ci95: Option<[f64; 2]>,
    /// Percent of m adopted by the peak.
    pub share_percent: f64,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct SymmetryRow {
    /// `None` when sigma is zero (an exact fit).
    pub rms_ratio: Option<f64>,
    pub meaning: &'static str,
}

/// The residual diagnostics as the page shows them (the Q-Q points are
/// drawn in Rust and not sent).
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct DiagnosticsRow {
    pub n: usize,
    pub runs: Option<usize>,
    pub runs_expected: Option<f64>,
    /// The runs test's exact two-sided p.
    pub runs_p: Option<f64>,
    pub durbin_watson: Option<f64>,
    pub lag1_autocorrelation: Option<f64>,
    pub qq_correlation: Option<f64>,
    pub jarque_bera_p: Option<f64>,
    pub verdicts: Vec<Worded>,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct FisherPryRow {
    pub k: f64,
    /// Whether K was entered (else it is the fitted K).
    pub entered: bool,
    pub curvature_p: Option<f64>,
    pub verdict: Worded,
}

#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct CompareRow {
    pub model: &'static str,
    pub aicc: Option<f64>,
    pub bic: Option<f64>,
    pub delta_aicc: Option<f64>,
    pub weight: Option<f64>,
    pub k: Option<f64>,
    pub converged: Option<bool>,
    /// Why this model could not be fitted.
    pub error: Option<String>,
}

/// A file opened on the page: its text (a workbook's sheet as
/// comma-separated text) and, for a workbook, its sheets and the one read.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct OpenedFile {
    pub text: String,
    /// Every sheet's name, in workbook order; empty for a text file.
    pub sheets: Vec<String>,
    /// 1-based position of the sheet read (0 for a text file).
    pub sheet: usize,
    /// What the page says it read, e.g. `members.xlsx, sheet "Members"`.
    pub label: String,
}

/// Reads a file's bytes as the page's data: a workbook (.xlsx, .xls,
/// .ods, by name or by its first bytes) through the core's workbook
/// reader, the given 1-based sheet or else the first with data; anything
/// else as UTF-8 or UTF-16 text. The page decides nothing of this.
pub fn open_file(
    bytes: &[u8],
    name: &str,
    sheet: Option<usize>,
) -> Result<OpenedFile, UpdateError> {
    if workbook::has_workbook_extension(name) || workbook::is_workbook(bytes) {
        let choice = sheet.map(workbook::SheetChoice::Position);
        let book = workbook::read_workbook(bytes, choice.as_ref())
            .map_err(|e| setting_error(format!("{name}: {e}")))?;
        Ok(OpenedFile {
            label: format!(
                "{name}, sheet \"{}\" (line numbers are row numbers)",
                book.name()
            ),
            sheet: book.index + 1,
            sheets: book.sheets,
            text: book.text,
        })
    } else {
        let text = plateau_core::data::decode_text(bytes.to_vec())
            .map_err(|e| setting_error(format!("{name}: {e}")))?;
        Ok(OpenedFile {
            text,
            sheets: Vec::new(),
            sheet: 0,
            label: name.to_string(),
        })
    }
}

/// Runs the whole analysis (the first view; sections on demand, see
/// [`Analysis::section`]); pure function of its inputs.
pub fn analyse(text: &str, settings: &Settings) -> Result<Analysis, UpdateError> {
    prepare(text, settings)?.analyse()
}

/// The text read and the settings checked, nothing fitted yet: the page
/// says how much is being fitted ([`Prepared::fitting`]) before it fits.
#[derive(Debug)]
pub struct Prepared {
    settings: Settings,
    model: Model,
    data: Read,
}

#[derive(Debug)]
enum Read {
    Single(Series),
    Multi(SeriesSet),
}

/// Reads the text as the settings ask (one series or several); checks the
/// settings first.
pub fn prepare(text: &str, settings: &Settings) -> Result<Prepared, UpdateError> {
    check_settings(settings)?;
    let model = Model::from_name(&settings.model)
        .ok_or_else(|| setting_error(format!("unknown model {:?}", settings.model)))?;
    let chosen_columns = settings.time_column.is_some() || settings.value_column.is_some();
    let layout = match settings.layout.as_deref() {
        None | Some("") | Some("auto") => {
            // The tool's own table export is one series (time, observed).
            (!chosen_columns && column_count(text) > 2 && !is_table_export(text)).then_some(None)
        }
        Some("single") => None,
        Some("wide") => Some(Some(Layout::Wide)),
        Some("long") => Some(Some(Layout::Long)),
        Some(other) => {
            return Err(setting_error(format!(
                "unknown layout {other:?}; expected single, wide or long"
            )))
        }
    };
    let data = match layout {
        Some(layout) => Read::Multi(read_multi(text, layout)?),
        None => {
            let opts = ParseOptions {
                time_column: settings.time_column.map(ColumnRef::Index),
                value_column: settings.value_column.map(ColumnRef::Index),
                ..ParseOptions::default()
            };
            Read::Single(parse_series(text, &opts)?)
        }
    };
    Ok(Prepared {
        settings: settings.clone(),
        model,
        data,
    })
}

impl Prepared {
    /// Points read, over every series.
    pub fn points(&self) -> usize {
        match &self.data {
            Read::Single(s) => s.times.len(),
            Read::Multi(set) => set.series.iter().map(|s| s.series.times.len()).sum(),
        }
    }

    /// What the page says while this is fitted: "Fitting 10,000 points…".
    pub fn fitting(&self) -> String {
        let n = self.points();
        let points = format!(
            "{} point{}",
            numbers::number(n as f64),
            if n == 1 { "" } else { "s" }
        );
        match &self.data {
            Read::Single(_) => format!("Fitting {points}…"),
            Read::Multi(set) => format!(
                "Fitting {} series ({points})…",
                numbers::number(set.series.len() as f64)
            ),
        }
    }

    /// Fits and builds the first view.
    pub fn analyse(self) -> Result<Analysis, UpdateError> {
        let Prepared {
            settings,
            model,
            data,
        } = self;
        let mut analysis = match data {
            Read::Multi(set) => analyse_multi(set, &settings, model),
            Read::Single(series) => analyse_series(series, &settings, model),
        }?;
        analysis.view.text = shown::view_text(&analysis.view);
        Ok(analysis)
    }
}

fn read_multi(text: &str, layout: Option<Layout>) -> Result<SeriesSet, UpdateError> {
    parse_multi(
        text,
        &MultiOptions {
            layout,
            ..MultiOptions::default()
        },
    )
    .map_err(|e| {
        let mut u = UpdateError::from(e);
        if layout.is_none() {
            u.message.push_str(
                " (to read only two columns as one series, choose \"one series\" under Layout)",
            );
        }
        u
    })
}

/// The fit options the settings ask for, checked against the model.
fn fit_options(settings: &Settings, model: Model) -> Result<FitOptions, UpdateError> {
    let error_model = request::error_model(&settings.error_model)
        .map_err(|e| setting_error(format!("error model: {e}")))?;
    let mut fit_opts = FitOptions {
        error_model,
        increments: settings.increments,
        ..FitOptions::default()
    };
    if let Some(k) = settings.fixed_k {
        if !request::positive(k) {
            return Err(setting_error("fixed K: expected a positive number"));
        }
        // The known saturation level: K, or the Bass model's market
        // potential m. The bi-logistic's is K1 + K2, which no one
        // parameter holds.
        let held = request::known_level(model, k).map_err(|e| {
            setting_error(format!("{e}; clear the fixed K or choose another model"))
        })?;
        fit_opts.fixed.push(held);
    }
    Ok(fit_opts)
}

/// Several series: every one fitted for the summary and the overlay, the
/// selected one (or the first that fits) analysed in full.
fn analyse_multi(
    set: SeriesSet,
    settings: &Settings,
    model: Model,
) -> Result<Analysis, UpdateError> {
    let mut multi = Multi {
        layout: set.layout,
        names: Vec::new(),
        series: Vec::new(),
        values: Vec::new(),
        fits: Vec::new(),
        summary: Vec::new(),
    };
    let request = request_of(settings, model)?;
    for ns in set.series {
        let before = ns.series.warnings.len();
        let study = Study::new(ns.series, request.clone()).map_err(|e| {
            let mut u = update_error(e);
            u.message = format!("series \"{}\": {}", ns.name, u.message);
            u
        })?;
        let mut series = study.series().clone();
        // Warnings the study added name the series they are about.
        for w in &mut series.warnings[before..] {
            w.message = format!("series \"{}\": {}", ns.name, w.message);
        }
        let values = study.values().to_vec();
        let fitted = study.fit().cloned().map_err(Clone::clone);
        let summary = match &fitted {
            Ok(f) => {
                let mut as_fitted = series.clone();
                as_fitted.values = values.clone();
                SeriesSummary::from_fit(&ns.name, &as_fitted, f)
            }
            Err(e) => SeriesSummary::from_error(
                &ns.name,
                model.name(),
                series.lines.first().copied(),
                None,
                &format!("cannot fit the {} model: {e}", model.name()),
                &series.warnings,
            ),
        };
        multi.names.push(ns.name);
        multi.series.push(series);
        multi.values.push(values);
        multi.fits.push(fitted.ok());
        multi.summary.push(summary);
    }
    let wanted = settings
        .series
        .unwrap_or(0)
        .min(multi.names.len().saturating_sub(1));
    let selected = if multi.fits.get(wanted).is_some_and(Option::is_some) {
        wanted
    } else {
        multi.fits.iter().position(Option::is_some).ok_or_else(|| {
            let reasons: Vec<String> = multi
                .summary
                .iter()
                .map(|s| format!("{}: {}", s.series, s.error.clone().unwrap_or_default()))
                .collect();
            setting_error(format!("no series could be fitted; {}", reasons.join("; ")))
        })?
    };
    let mut analysis = analyse_series(multi.series[selected].clone(), settings, model)?;
    analysis.view.multi = Some(MultiView {
        layout: multi.layout,
        selected,
        summary: multi.summary.clone(),
    });
    analysis.view.layout = match multi.layout {
        Layout::Wide => "wide",
        Layout::Long => "long",
    };
    analysis.multi = Some(multi);
    Ok(analysis)
}

/// The request the page's settings make (checked by [`check_settings`]
/// first): the chosen model with every view the page shows.
fn request_of(settings: &Settings, model: Model) -> Result<Request, UpdateError> {
    let fit = fit_options(settings, model)?;
    let mut request = Request::new(model);
    request.fit = fit;
    // The comparison shows criteria and K only: no profiles needed there.
    request.comparison_intervals = IntervalMethod::Asymptotic;
    request.per_period = settings.per_period;
    request.per_period_hint = PER_PERIOD_HINT.into();
    request.horizon = Some(Horizon::Periods(settings.horizon));
    let share = settings.share / 100.0;
    request.shares = (share > 0.0 && share < 1.0)
        .then_some(share)
        .into_iter()
        .collect();
    request.levels = settings
        .level
        .filter(|l| l.is_finite())
        .into_iter()
        .collect();
    request.fisher_pry_k = settings.fisher_pry_k;
    request.backtest = BacktestRequest {
        horizon: BACKTEST_HORIZON,
        min_train: None,
        max_origins: Some(BACKTEST_ORIGINS),
    };
    request.drift_rows = Some(DRIFT_ROWS);
    if let Ok(resampling) = request::resampling(&settings.resampling) {
        let (replicates, seed) = bootstrap_numbers(settings)?;
        request.bootstrap = Some(BootstrapOptions {
            resampling,
            replicates,
            seed,
        });
    }
    Ok(request)
}

/// What the "values decline" warning adds on the page.
const PER_PERIOD_HINT: &str = " (\"counts per period\" under Series)";

fn update_error(e: StudyError) -> UpdateError {
    match e {
        StudyError::Input { line, message } => UpdateError { line, message },
        StudyError::Fit(message) => setting_error(message),
    }
}

/// The full analysis of one series: settings, request, study, view.
fn analyse_series(
    series: Series,
    settings: &Settings,
    model: Model,
) -> Result<Analysis, UpdateError> {
    let request = request_of(settings, model)?;
    let study = Study::new(series, request).map_err(update_error)?;
    let fit = study.fitted().map_err(update_error)?.clone();
    let series = study.series().clone();
    let values = study.values().to_vec();
    let (_, t_max) = span(&series.times);
    let horizon_end = study.forecast_end().map_err(update_error)?.unwrap_or(t_max);
    let kind = series.time_kind;
    let axis = series.axis;
    // Derived times (t0, milestones and their intervals) fall between the
    // input's months or quarters; a day shows where in the period they are.
    let fmt_t = |t: f64| axis.format(t);

    let params = fit
        .params
        .iter()
        .map(|p| ParamRow {
            name: p.name,
            estimate: p.estimate,
            std_error: p.std_error,
            ci95: p.interval.map(|i| [i.lo, i.hi]),
            ci_method: p.interval.map(|i| i.method.as_str()),
            ci95_asymptotic: p.ci95.filter(|_| p.identified).map(|(a, b)| [a, b]),
            identified: p.identified,
            fixed: p.fixed,
            as_time: (is_time_param(fit.model, p.name) && kind != TimeKind::Number)
                .then(|| fmt_t(p.estimate)),
        })
        .collect();

    let milestones = study
        .milestones(None)
        .iter()
        .map(|a| milestone_row(a, &fmt_t))
        .collect();

    let symmetry = analysis::reflection(&fit, &series.times, &values).map(|s| SymmetryRow {
        rms_ratio: s.rms_ratio,
        meaning: s.meaning,
    });
    let view = View {
        model: model.name(),
        formula: model.formula(),
        time_name: series.time_name.clone(),
        value_name: series.value_name.clone(),
        time_kind: kind,
        columns: series.columns.clone(),
        time_column: settings.time_column.unwrap_or(0),
        value_column: settings.value_column.unwrap_or(1),
        per_period: settings.per_period,
        converged: fit.converged,
        termination: fit.termination.as_str(),
        termination_text: fit.termination.describe(),
        iterations: fit.iterations,
        params,
        error_model: fit.error_model.name(),
        error_model_text: fit.error_model.describe(),
        increments: fit.increments,
        not_identified: fit.params.iter().find(|p| !p.identified).map(|p| {
            match p.interval.and_then(|i| i.lo) {
                Some(lo) => format!(
                    "These data do not determine the saturation level {0}. The estimate is not a \
                     forecast of the ceiling: the data only say {0} ≥ {1} (95%).",
                    p.name,
                    Precision::of_estimate(p.estimate, p.std_error).show(lo)
                ),
                None => format!(
                    "These data do not determine the saturation level {}: treat it as unknown.",
                    p.name
                ),
            }
        }),
        increments_hint: (!fit.increments && (settings.per_period || looks_cumulative(&values)))
            .then_some(INCREMENTS_HINT),
        stats: Stats {
            n: fit.n,
            dof: fit.dof,
            rss: fit.rss,
            sigma: fit.sigma,
            r_squared: fit.r_squared,
            aic: fit.aic,
            aicc: fit.aicc,
            bic: fit.bic,
            condition_number: fit.condition_number,
        },
        warnings: series
            .warnings
            .iter()
            .chain(&fit.warnings)
            .cloned()
            .collect(),
        milestones,
        duration_10_90: analysis::duration_10_90(&fit).map(|m| m.time),
        saturation: fit.model.saturation_name(),
        symmetry,
        peak: analysis::bass_peak(&fit).map(|p| PeakRow {
            time: p.time,
            time_text: fmt_t(p.time),
            time_ci95_text: p.time_ci95.map(|(a, b)| [fmt_t(a), fmt_t(b)]),
            rate: p.rate,
            rate_ci95: p.rate_ci95.map(|(a, b)| [a, b]),
            share_percent: 100.0 * p.share,
        }),
        caution: CAUTION,
        time_unit: series.time_unit(),
        time_origin: series.time_origin(),
        multi: None,
        layout: "single",
        text: ViewText::default(),
        straight_line_view: model != Model::Logistic,
        answer: answer::answer(&study),
        data_summary: answer::data_summary(&study),
    };
    Ok(Analysis {
        settings: settings.clone(),
        series,
        values,
        fit,
        view,
        horizon_end,
        multi: None,
        study: Rc::new(study),
    })
}

/// Why fitting running totals as they are understates the uncertainty.
pub const INCREMENTS_HINT: &str =
    "If these are running totals: totals carry each period's error into every later \
value, so the residuals are autocorrelated and the intervals above are likely too narrow. \
\"Fit per-period increments\" fits the changes from period to period instead (King et al., \
Proc. R. Soc. B 2015).";

fn milestone_row(a: &Assessment, fmt_t: &dyn Fn(f64) -> String) -> MilestoneRow {
    let duration = a.target == Target::Duration1090;
    let show = a.verdict.shows_time();
    // Durations are lengths of time (years on calendar axes), not dates;
    // they and times on a numeric axis show the digits their interval
    // supports (`plateau_study::numbers`), dates as dates.
    let digits = Precision::of_interval(
        a.estimate.unwrap_or(f64::NAN),
        a.delta.map(|(lo, hi)| [lo, hi]),
    );
    let text = |t: f64| {
        if duration {
            digits.show(t)
        } else {
            let s = fmt_t(t);
            if s.parse::<f64>().is_ok() {
                digits.show_time(t)
            } else {
                s
            }
        }
    };
    let time_text = match (a.estimate, show) {
        (Some(t), true) => text(t),
        _ => match a.verdict {
            milestones::Verdict::TooFar => "beyond what the data can say".to_string(),
            milestones::Verdict::NotApplicable => "not applicable".to_string(),
            milestones::Verdict::SaturationNotDetermined => {
                format!("no date: {} not determined", a.level_name)
            }
            _ => "not reached".to_string(),
        },
    };
    MilestoneRow {
        label: wording::milestone_label(a),
        time: a.estimate,
        time_text,
        ci95_text: a.delta.filter(|_| show).map(|(lo, hi)| {
            let open = a.verdict == milestones::Verdict::MayNeverBeReached;
            [text(lo), if open { "never".into() } else { text(hi) }]
        }),
        bootstrap_text: a.bootstrap.filter(|_| show).map(|q| {
            [
                q.lo.map_or("–".into(), text),
                q.hi.map_or("never".into(), text),
            ]
        }),
        forecast: !duration && a.verdict == milestones::Verdict::Forecast,
        verdict: a.verdict.as_str(),
        note: wording::milestone_note(a),
    }
}

/// Starts a bootstrap of `a`'s fit with `a`'s settings (the study's
/// bootstrap, stepped by the page in slices).
pub fn start_bootstrap(a: &Analysis) -> Result<Bootstrap, UpdateError> {
    request::resampling(&a.settings.resampling).map_err(|_| {
        setting_error(format!(
            "bootstrap: expected residual or parametric resampling, found {:?}",
            a.settings.resampling
        ))
    })?;
    bootstrap_numbers(&a.settings)?;
    a.study
        .start_bootstrap()
        .map_err(|e| setting_error(format!("bootstrap: {e}")))?
        .ok_or_else(|| setting_error("bootstrap: not asked"))
}

/// The bootstrap's progress and, once it has replicates, its intervals.
pub fn bootstrap_view(a: &Analysis, b: &Bootstrap) -> BootstrapView {
    let axis = a.series.axis;
    let fmt_t = |t: f64| axis.format(t);
    let finished = b.is_finished();
    let o = b.options();
    let mut view = BootstrapView {
        done: b.done(),
        replicates: o.replicates,
        failed: b.failed(),
        seed: o.seed,
        resampling: o.resampling.name(),
        finished,
        params: a
            .fit
            .params
            .iter()
            .enumerate()
            .map(|(j, p)| {
                (!p.fixed && finished)
                    .then(|| b.param_interval(j, 0.95))
                    .flatten()
                    .map(|(x, y)| [x, y])
            })
            .collect(),
        milestones: if finished {
            a.study
                .milestones(Some(b))
                .iter()
                .map(|m| milestone_row(m, &fmt_t))
                .collect()
        } else {
            Vec::new()
        },
        params_text: Vec::new(),
    };
    view.params_text = shown::bootstrap_params_text(&a.view, &view);
    view
}

impl Analysis {
    /// `plateau fit --json`'s report for this fit.
    pub fn report_json(&self) -> String {
        json(self.study.fit_report())
    }

    /// The summary of every series as CSV (the shape of `plateau batch
    /// --csv`); `None` for a single series.
    pub fn summary_csv(&self) -> Option<String> {
        self.multi.as_ref().map(|m| summary_csv(&m.summary))
    }

    /// `plateau diagnose --json`'s report for this fit: residual
    /// diagnostics, the symmetry test and the Fisher–Pry check (entered K,
    /// else the fitted K).
    pub fn diagnose_json(&self) -> String {
        json(self.study.diagnose_report())
    }

    /// One row per observation (time, observed, fitted, 95% bands), then
    /// one row per period of the forecast (time, forecast, bands). Numbers
    /// are the shortest text that reads back to the same `f64`
    /// (`plateau_study::numbers::csv`); the band columns say which band
    /// they hold: `confidence95_*` for the fitted curve (delta method),
    /// `prediction95_*` for a new observation (adds σ̂²).
    pub fn table_csv(&self) -> String {
        let kind = self.series.axis;
        // The time as the data wrote it: calendar text (a text cell), or on
        // a plain-number axis the exact number (a numeric cell, so a
        // negative time stays a number and reads back to the same f64).
        let time = |t: f64| match kind.period() {
            Some(_) => csv_field(&kind.format(t)),
            None => numbers::csv(t),
        };
        let mut s = String::from(TABLE_CSV_HEADER);
        s.push('\n');
        let num = numbers::csv;
        let cell = |x: Option<(f64, f64)>, end: fn((f64, f64)) -> f64| {
            x.map_or(String::new(), |b| num(end(b)))
        };
        let bands = |t: f64| {
            let c = analysis::band(&self.fit, t, 0.95);
            let p = plateau_core::forecast::prediction_band(&self.fit, t, 0.95);
            [
                cell(c, |b| b.0),
                cell(c, |b| b.1),
                cell(p, |b| b.0),
                cell(p, |b| b.1),
            ]
            .join(",")
        };
        for (i, &t) in self.series.times.iter().enumerate() {
            let _ = writeln!(
                s,
                "{},{},{},{},,{}",
                time(t),
                num(t),
                num(self.values[i]),
                num(self.fit.fitted[i]),
                bands(t),
            );
        }
        let (_, t_max) = span(&self.series.times);
        let step = typical_step(&self.series.times);
        let mut k = 1.0;
        while t_max + k * step <= self.horizon_end + step * 1e-9 {
            let t = t_max + k * step;
            let _ = writeln!(
                s,
                "{},{},,,{},{}",
                time(t),
                num(t),
                num(self.fit.predict(t)),
                bands(t),
            );
            k += 1.0;
        }
        s
    }
}

/// The columns of [`Analysis::table_csv`]: the core's, which the data
/// reader recognises, so an exported table opens again as its series.
pub const TABLE_CSV_HEADER: &str = plateau_core::data::TABLE_EXPORT_HEADER;

/// A report as pretty JSON, or an object naming why there is none.
fn json<T: Serialize>(report: Result<T, StudyError>) -> String {
    report
        .map_err(|e| e.to_string())
        .and_then(|r| serde_json::to_string_pretty(&r).map_err(|e| e.to_string()))
        .unwrap_or_else(|e| serde_json::json!({ "error": e }).to_string())
}

#[cfg(test)]
mod tests;
