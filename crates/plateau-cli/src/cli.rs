//! Raw command-line flags, as clap reads them; [`crate::settings`] validates them.

use clap::{Args, Parser, Subcommand};

#[derive(Parser, Debug)]
#[command(
    name = "plateau",
    version,
    about = "Fit S-shaped growth curves (logistic, Gompertz, Richards, Bass, bi-logistic, ...) to a time series",
    after_help = "Input: CSV, TSV or semicolon-separated text with a time and a value column; \
times as numbers, years, YYYY-MM-DD, YYYY-MM or quarters (2024Q3). Use - to read standard input. \
Workbooks (.xlsx, .xls, .ods) are read too: --sheet NAME|N picks the sheet (default: the first with \
data); date cells are dates, and line numbers in messages are the sheet's row numbers."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Fit one model and print its parameters, intervals and statistics.
    Fit(FitArgs),
    /// Fit every model and rank them by AICc, with ΔAICc, Akaike weights, BIC,
    /// likelihood-ratio tests of nested models and a recommendation.
    Compare(CompareArgs),
    /// Check a fit: residual runs, autocorrelation and normality, the
    /// logistic's symmetry against Richards and Gompertz, and the Fisher–Pry
    /// straight-line test, each with a one-line verdict.
    Diagnose(DiagnoseArgs),
    /// Forecast to a time with confidence and prediction bands, and milestones with intervals.
    Forecast(ForecastArgs),
    /// Refit on every prefix of the data: how K, r and t0 moved as data arrived.
    Drift(DriftArgs),
    /// Rolling-origin backtest: forecast errors (MAE, MAPE) by horizon for every model.
    Backtest(BacktestArgs),
    /// Fit every series of a long-format file (rows of series, time, value) in
    /// parallel, one result line per series, in input order.
    Batch(BatchArgs),
    /// List the models, their formulas and parameter names.
    Models,
}

/// Where the series comes from and how to read it.
#[derive(Args, Debug)]
pub struct InputArgs {
    /// Data file (CSV or text, or a workbook: .xlsx, .xls, .ods), or - for standard input.
    pub file: String,
    /// Workbook sheet to read, by name or 1-based position (default: the first sheet with data).
    #[arg(long, value_name = "NAME|N")]
    pub sheet: Option<String>,
    /// Time column, by 1-based position or header name (default: the first).
    #[arg(long, value_name = "COLUMN")]
    pub time: Option<String>,
    /// Value column, by 1-based position or header name (default: the second).
    #[arg(long, value_name = "COLUMN")]
    pub value: Option<String>,
    /// Field separator: comma, semicolon, tab (default: detected).
    #[arg(long, value_name = "SEP")]
    pub delimiter: Option<String>,
    /// Whether the first line is a header: yes or no (default: detected).
    #[arg(long, value_name = "yes|no")]
    pub header: Option<String>,
    /// The values are counts per period: sum them into running totals before fitting.
    #[arg(long)]
    pub per_period: bool,
}

#[derive(Args, Debug)]
pub struct FitArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Model to fit: logistic, logistic4, gompertz, richards, exponential, bass, bilogistic.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value, e.g. --fix K=2500000 (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    /// Start a parameter from this value instead of the self-start (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub start: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// 95% intervals: profile (profile likelihood, the default) or asymptotic
    /// (estimate ± t·se, no refits).
    #[arg(long, value_name = "METHOD", default_value = "profile")]
    pub intervals: String,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Also write the fit chart as SVG to FILE: data, fitted curve, 95% band, K and a
    /// forecast over a further quarter of the data's time span.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<String>,
}

#[derive(Args, Debug)]
pub struct CompareArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Models to compare, comma-separated (default: all).
    #[arg(long, value_name = "LIST")]
    pub models: Option<String>,
    /// Hold a parameter at a known value in every model that has it (repeatable);
    /// K (or m) is the known saturation level, held as K or as the Bass model's m.
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
pub struct DiagnoseArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Model whose residuals are checked: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value, e.g. --fix K=2500000 (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    /// Start a parameter from this value instead of the self-start (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub start: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// Saturation level for the Fisher–Pry check (default: the fitted K).
    #[arg(long, value_name = "K")]
    pub fisher_pry_k: Option<f64>,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
    /// Also write the normal Q-Q chart of the residuals as SVG to FILE.
    #[arg(long, value_name = "FILE")]
    pub qq_svg: Option<String>,
    /// Also write the Fisher–Pry chart as SVG to FILE.
    #[arg(long, value_name = "FILE")]
    pub fisher_pry_svg: Option<String>,
}

/// How the observations scatter about the curve, and what is fitted.
#[derive(Args, Debug)]
pub struct ErrorArgs {
    /// Error model: additive (same scatter at every level), relative (scatter
    /// proportional to the curve; weights 1/fitted², reweighted), log (fit
    /// ln y − ln f; values must be positive) or count (variance proportional
    /// to the curve; weights 1/fitted, reweighted).
    #[arg(long, value_name = "MODEL", default_value = "additive")]
    pub errors: String,
    /// Fit the per-period increments of the curve to the differences of the
    /// running totals instead of the totals themselves: totals carry every
    /// earlier error forward, which makes intervals too narrow.
    #[arg(long)]
    pub increments: bool,
}

#[derive(Args, Debug)]
pub struct ForecastArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Forecast up to this time, written like the data's times (2030-06-30, 2031Q2, 2030-06, 48).
    #[arg(long, value_name = "TIME")]
    pub until: String,
    /// Model to fit: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value, e.g. --fix K=2500000 (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    /// Start a parameter from this value instead of the self-start (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub start: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// Also give bootstrap intervals, from B replicates (default 1000).
    #[arg(long, value_name = "B", num_args = 0..=1, default_missing_value = "1000")]
    pub bootstrap: Option<usize>,
    /// How bootstrap copies are made: residual (resample residuals) or parametric (normal noise).
    #[arg(long, value_name = "KIND", default_value = "residual")]
    pub resampling: String,
    /// Seed of the bootstrap's random numbers (the same seed gives the same intervals).
    #[arg(long, value_name = "N")]
    pub seed: Option<u64>,
    /// A further milestone: the time the curve reaches this share of K, in percent (repeatable).
    #[arg(long, value_name = "PERCENT")]
    pub share: Vec<f64>,
    /// A milestone level: when the curve passes this value, e.g. 1000000 (repeatable).
    #[arg(long, value_name = "Y")]
    pub level: Vec<f64>,
    /// Grid spacing of the forecast rows in axis units (default: the data's typical spacing).
    #[arg(long, value_name = "STEP")]
    pub step: Option<f64>,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
pub struct DriftArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Model to fit: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// 95% interval of each cutoff's fit: asymptotic (the default, quick) or
    /// profile (profile likelihood, verified lower bounds for a K the data do
    /// not determine; many refits per cutoff).
    #[arg(long, value_name = "METHOD", default_value = "asymptotic")]
    pub intervals: String,
    /// Refit at most N cutoffs, evenly spread from the smallest prefix to all
    /// the data; "all" refits every prefix.
    #[arg(long, value_name = "N", default_value = "40")]
    pub max_cutoffs: String,
    /// Also write the drift chart (K and its interval against the cutoff) as SVG to FILE.
    #[arg(long, value_name = "FILE")]
    pub svg: Option<String>,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
pub struct BacktestArgs {
    #[command(flatten)]
    pub input: InputArgs,
    /// Largest horizon, in observations ahead.
    #[arg(long, value_name = "H", default_value_t = 4)]
    pub horizon: usize,
    /// Points in the first training window (default: half the data).
    #[arg(long, value_name = "M")]
    pub min_train: Option<usize>,
    /// Try at most N origins, evenly spread from the first training window to
    /// the last point but one; "all" tries every origin.
    #[arg(long, value_name = "N", default_value = "40")]
    pub max_origins: String,
    /// Models to test, comma-separated (default: all).
    #[arg(long, value_name = "LIST")]
    pub models: Option<String>,
    /// Hold a parameter at a known value in every model that has it (repeatable);
    /// K (or m) is the known saturation level, held as K or as the Bass model's m.
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    #[command(flatten)]
    pub errors: ErrorArgs,
    /// Print the JSON report instead of a table.
    #[arg(long)]
    pub json: bool,
}

#[derive(Args, Debug)]
#[command(
    after_help = "Input: rows of series name, time, value (a header row is detected), \
e.g. \"north,2024-01,120\". The rows of each series must be together (the file sorted or \
grouped by series); a series that reappears later is reported as failed, naming the line. \
The file is streamed, never read whole. Results come in input order, one line per series; \
a series that cannot be read or fitted gets a line with its error and the rest go on \
(exit status 1 when any failed). A line that makes the rest unreadable (a row without a \
series name, a quote not closed on its line, text that is not UTF-8) stops the reading: \
every series before it is still fitted and printed, then the line and the reason are \
given (exit status 2)."
)]
pub struct BatchArgs {
    /// Data file (CSV or text, or a workbook: .xlsx, .xls, .ods), or - for standard input.
    pub file: String,
    /// Workbook sheet to read, by name or 1-based position (default: the first sheet with data).
    #[arg(long, value_name = "NAME|N")]
    pub sheet: Option<String>,
    /// Model to fit to every series: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value in every series, e.g. --fix K=100 (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    /// Start a parameter from this value in every series instead of the self-start (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub start: Vec<String>,
    /// One JSON object per series and line (JSON Lines), with the full fit report.
    #[arg(long, conflicts_with = "csv")]
    pub json: bool,
    /// The summary table as CSV: K, r, t0 and the 10%→90% duration with 95% intervals.
    #[arg(long)]
    pub csv: bool,
    /// Field separator: comma, semicolon, tab (default: detected from the first lines).
    #[arg(long, value_name = "SEP")]
    pub delimiter: Option<String>,
    /// Whether the first line is a header: yes or no (default: detected).
    #[arg(long, value_name = "yes|no")]
    pub header: Option<String>,
    /// The values are counts per period: sum each series into running totals before fitting.
    #[arg(long)]
    pub per_period: bool,
    /// Intervals: profile (profile likelihood, the default; open where the
    /// data do not bound a parameter) or asymptotic (estimate ± t·se, faster).
    #[arg(long, value_name = "METHOD", default_value = "profile")]
    pub intervals: String,
}
