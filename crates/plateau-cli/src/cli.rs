//! Raw command-line flags, as clap reads them; [`crate::settings`] validates them.

use clap::{Args, Parser, Subcommand};

#[derive(Parser, Debug)]
#[command(
    name = "plateau",
    version,
    about = "Fit S-shaped growth curves (logistic, Gompertz, Richards, ...) to a time series",
    after_help = "Input: CSV, TSV or semicolon-separated text with a time and a value column; \
times as numbers, years, YYYY-MM-DD, YYYY-MM or quarters (2024Q3). Use - to read standard input."
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Fit one model and print its parameters, intervals and statistics.
    Fit(FitArgs),
    /// Fit every model and rank them by AICc, with ΔAICc and Akaike weights.
    Compare(CompareArgs),
    /// Fit every series of a long-format file (rows of series, time, value) in
    /// parallel, one result line per series, in input order.
    Batch(BatchArgs),
    /// List the models, their formulas and parameter names.
    Models,
}

/// Where the series comes from and how to read it.
#[derive(Args, Debug)]
pub struct InputArgs {
    /// Data file, or - for standard input.
    pub file: String,
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
    /// Model to fit: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
    /// Hold a parameter at a known value, e.g. --fix K=2500000 (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
    /// Start a parameter from this value instead of the self-start (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub start: Vec<String>,
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
    /// Hold a parameter at a known value in every model that has it (repeatable).
    #[arg(long, value_name = "NAME=VALUE")]
    pub fix: Vec<String>,
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
(exit status 1 when any failed)."
)]
pub struct BatchArgs {
    /// Data file, or - for standard input.
    pub file: String,
    /// Model to fit to every series: logistic, logistic4, gompertz, richards, exponential.
    #[arg(long, short, default_value = "logistic")]
    pub model: String,
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
}
