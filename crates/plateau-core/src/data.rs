//! Data input: text pasted from a spreadsheet or read from a CSV file,
//! turned into a [`Series`] of (time, value) pairs on a numeric axis.
//!
//! (Skeleton: the parser is being written; see `parse_series`.)

use crate::warning::Warning;
use serde::Serialize;

/// How the time column was written, which decides the numeric axis and how
/// axis values are shown again.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TimeKind {
    /// Plain numbers (including years such as `2019`): the axis is the number itself.
    Number,
    /// ISO dates `YYYY-MM-DD`: the axis is the decimal year.
    Date,
    /// Year-months `YYYY-MM`: the axis is `year + (month - 1) / 12`.
    Month,
    /// Quarters `2024Q3` or `2024-Q3`: the axis is `year + (quarter - 1) / 4`.
    Quarter,
}

/// A column chosen by position (0-based) or by header name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnRef {
    Index(usize),
    Name(String),
}

/// Options for [`parse_series`]; `Default` detects everything.
#[derive(Debug, Clone, Default)]
pub struct ParseOptions {
    /// Field delimiter; `None` detects tab, semicolon or comma.
    pub delimiter: Option<u8>,
    /// Whether the first record is a header; `None` detects it.
    pub header: Option<bool>,
    /// Time column; `None` means the first column.
    pub time_column: Option<ColumnRef>,
    /// Value column; `None` means the second column.
    pub value_column: Option<ColumnRef>,
}

/// A parsed series, in input order (rows with a missing value left out and reported).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Series {
    pub time_kind: TimeKind,
    pub time_name: String,
    pub value_name: String,
    /// Numeric time axis, one per kept row, input order.
    pub times: Vec<f64>,
    pub values: Vec<f64>,
    /// 1-based line number in the input text of each kept row.
    pub lines: Vec<usize>,
    pub warnings: Vec<Warning>,
}

pub fn parse_series(_text: &str, _opts: &ParseOptions) -> Result<Series, DataError> {
    unimplemented!("data input is being written")
}

/// Why input could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    pub line: Option<usize>,
    pub kind: DataErrorKind,
    pub message: String,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum DataErrorKind {
    Empty,
}
