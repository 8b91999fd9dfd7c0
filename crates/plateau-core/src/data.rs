//! Data input: text pasted from a spreadsheet or read from a CSV file,
//! turned into a [`Series`] of (time, value) pairs on a numeric axis.
//!
//! [`parse_series`] takes the whole text (the core does no I/O) and detects
//! what people actually paste: comma-, semicolon- or tab-separated fields,
//! an optional header row, a decimal point or a decimal comma, thousands
//! separators, and times written as numbers, ISO dates, year-months or
//! quarters (see [`TimeKind`]). Rows with a missing value (an empty field,
//! `NA`, `N/A`, `NaN`, `null`, `-`, `.` or `#N/A`, in any case) are left out
//! with one warning; rows out of time order are kept in input order with a
//! warning; anything else it cannot read is a [`DataError`] naming the line
//! of the original text and what was expected there.
//!
//! Fewer points than a model has parameters, and constant data, are the fit's
//! to refuse (`FitErrorKind::TooFewPoints`, `ConstantData`): the parser only
//! requires one data row.
//!
//! Submodules: `number` reads one number, `time` reads and shows one time,
//! `multi` reads several series from one text ([`parse_multi`], wide or long
//! layout, and the streaming [`LongGrouper`] the CLI's batch command uses).

mod multi;
mod number;
mod time;
pub mod workbook;

pub use multi::{
    column_count, parse_multi, sniff_delimiter, split_line, Layout, LongGrouper, MultiOptions,
    NamedSeries, PendingSeries, SeriesFailure, SeriesSet,
};

#[cfg(test)]
mod tests;

use crate::warning::{Warning, WarningCode};
use number::{parse_number, Decimal, NumError, Vote};
use serde::Serialize;
use std::borrow::Cow;
use std::collections::HashMap;
use std::fmt;
use time::TimeError;
pub use time::{Period, TimeAxis, ORIGIN_YEAR};

/// How the time column was written, which decides the numeric axis and how
/// axis values are shown again ([`TimeAxis::format`]).
///
/// Calendar columns (`Date`, `Week`, `Month`, `Quarter`) are counted in the
/// data's own period from a fixed origin in 2000 ([`TimeAxis`]), so a growth
/// rate `r` fitted on them is per day, week, month, quarter or year.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum TimeKind {
    /// Plain numbers (including years such as `2019`): the axis is the number itself.
    Number,
    /// ISO dates `YYYY-MM-DD`: days since 2000-01-01, or on the coarser
    /// grid the dates fit (month-start or month-end dates count months,
    /// quarters or years; dates 7 days apart count weeks; see [`TimeAxis`]).
    ///
    /// Also a column of Unix epoch times (UTC): every time a whole number
    /// of 10 digits above 1e9 (seconds, 2001-09-09 to 2286-11-20) or every
    /// time one of 13 digits (milliseconds, the same span). The axis is then
    /// days since 2000-01-01 with the time of day as a fraction, and an
    /// `epoch_times` warning says so.
    Date,
    /// ISO weeks `2024-W09` or `2024W09`: weeks since 2000-W01.
    Week,
    /// Year-months `YYYY-MM`: months since 2000-01, `12·(year − 2000) + month − 1`
    /// (quarters or years when every step is 3 or 12 months).
    Month,
    /// Quarters `2024Q3`, `2024-Q3` or `2024 Q3` (any case): quarters since
    /// 2000Q1 (years when every step is 4 quarters).
    Quarter,
}

/// A column chosen by position or by header name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum ColumnRef {
    /// 0-based position.
    Index(usize),
    /// Header name, matched trimmed and case-insensitively; needs a header row.
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
    /// The numeric axis of `times`: its period, origin, and how its values
    /// are shown as text (see [`TimeAxis`]).
    pub axis: TimeAxis,
    /// Header name of the time column, or `"time"` without a header.
    pub time_name: String,
    /// Header name of the value column, or `"value"` without a header.
    pub value_name: String,
    /// Every column's name: the header names, or `"column 1"`, `"column 2"`, …
    /// without a header (also for header cells left empty), so a user
    /// interface can offer a choice when there are more than two.
    pub columns: Vec<String>,
    /// Whether the first record was read as a header.
    pub has_header: bool,
    /// The field delimiter used (given or detected).
    pub delimiter: u8,
    /// Whether numbers were read with a decimal comma.
    pub decimal_comma: bool,
    /// Numeric time axis, one per kept row, input order (see [`TimeKind`]).
    pub times: Vec<f64>,
    pub values: Vec<f64>,
    /// 1-based line number in the input text of each kept row.
    pub lines: Vec<usize>,
    pub warnings: Vec<Warning>,
}

impl Series {
    /// The unit of the time axis, the JSON's `time_unit`: the period of a
    /// calendar axis (`day`, `week`, `month`, `quarter`, `year`), or for
    /// plain numbers the time column's header as written (trimmed; `""`
    /// without a header row), since the numbers are in whatever unit it names.
    pub fn time_unit(&self) -> String {
        match self.axis.period() {
            Some(p) => p.name().to_string(),
            None if self.has_header => self.time_name.trim().to_string(),
            None => String::new(),
        }
    }

    /// Axis value 0 in the data's form (`2000-01`, `2000-01-31`, …), the
    /// JSON's `time_origin`; `None` for plain numbers.
    pub fn time_origin(&self) -> Option<String> {
        self.axis.origin_text()
    }
}

/// Why input could not be read.
#[derive(Debug, Clone, PartialEq)]
pub struct DataError {
    /// 1-based line in the original text, when the problem has one.
    pub line: Option<usize>,
    pub kind: DataErrorKind,
    /// A sentence for a human saying what was found and what was expected.
    pub message: String,
}

/// What kind of problem a [`DataError`] is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[non_exhaustive]
pub enum DataErrorKind {
    /// The text is empty or blank.
    Empty,
    /// There is no data row: only a header, or every row lacks its value.
    NoData,
    /// The options cannot be used: a delimiter that is not a single ASCII
    /// punctuation or space character, or the same column for time and value.
    InvalidOptions,
    /// A chosen column name or index does not exist; the message lists the columns.
    UnknownColumn,
    /// A row has fewer fields than the chosen columns need.
    TooFewFields,
    /// A time that is not a number, date, year-month or quarter, or names
    /// no real date (`2023-02-29`), month or quarter.
    BadTime,
    /// A row has a value but no time.
    MissingTime,
    /// A time of another kind than the first data row's (a date among numbers, …).
    MixedTimeFormats,
    /// A time beyond ±1e9 (or an infinite one) in a column that is not
    /// all Unix epoch seconds or milliseconds (those are read as dates).
    TimeOutOfRange,
    /// Two rows have the same time where one value per time is needed
    /// (per-period counts, increments: [`per_period_totals`],
    /// [`check_increments`]); the message names both lines. Elsewhere
    /// repeated times are replicates, kept with a `replicate_times` warning.
    DuplicateTime,
    /// A value that is not a number.
    BadValue,
    /// A value that is infinite or beyond ±1e300.
    ValueOutOfRange,
    /// Some numbers use a decimal point and others a decimal comma; the
    /// error names a line of the less common convention.
    DecimalConflict,
    /// The CSV reader itself failed (not expected for in-memory text).
    Malformed,
    /// Several series: two value columns with the same header name.
    DuplicateSeries,
    /// Long layout: a series' rows reappear after another series began
    /// (each series' rows must be contiguous).
    SeriesNotContiguous,
    /// Long layout: a row with a time or value but no series name.
    MissingSeriesName,
    /// Long layout: a row with more fields than series, time and value.
    TooManyFields,
    /// The bytes are neither UTF-8 nor UTF-16 text ([`decode_text`]).
    NotText,
    /// A workbook that cannot be read as data ([`workbook::read_workbook`]):
    /// password-protected, damaged, no such sheet, an empty sheet, a
    /// formula without a saved value; the message names sheet and cell.
    Workbook,
}

impl fmt::Display for DataError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.line {
            Some(line) => write!(f, "line {line}: {}", self.message),
            None => f.write_str(&self.message),
        }
    }
}

impl std::error::Error for DataError {}

fn error(kind: DataErrorKind, line: Option<usize>, message: impl Into<String>) -> DataError {
    DataError {
        line,
        kind,
        message: message.into(),
    }
}

/// Running sum of `values`: turns per-period counts (new sign-ups per week)
/// into the cumulative series that growth curves describe.
pub fn cumulate(values: &[f64]) -> Vec<f64> {
    values
        .iter()
        .scan(0.0, |sum, v| {
            *sum += v;
            Some(*sum)
        })
        .collect()
}

/// A text encoding [`decode_text`] recognises besides UTF-8.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Utf16 {
    LittleEndian,
    BigEndian,
}

impl Utf16 {
    /// "UTF-16 (little-endian)" or "UTF-16 (big-endian)".
    pub fn describe(self) -> &'static str {
        match self {
            Utf16::LittleEndian => "UTF-16 (little-endian)",
            Utf16::BigEndian => "UTF-16 (big-endian)",
        }
    }

    /// Whether the start of a file is UTF-16: its byte-order mark (`FF FE`
    /// little-endian, `FE FF` big-endian), or without one the zero bytes
    /// that ASCII characters carry in UTF-16: within the first 512 bytes,
    /// a zero in every other byte of at least half the byte pairs and
    /// none in the other position. (UTF-8 text has no zero bytes.)
    pub fn detect(bytes: &[u8]) -> Option<Utf16> {
        match bytes {
            [0xEF, 0xBB, 0xBF, ..] => return None,
            [0xFF, 0xFE, ..] => return Some(Utf16::LittleEndian),
            [0xFE, 0xFF, ..] => return Some(Utf16::BigEndian),
            _ => {}
        }
        let head = &bytes[..bytes.len().min(512) & !1];
        let pairs = head.len() / 2;
        if pairs < 2 {
            return None;
        }
        let zeros = |k: usize| head.iter().skip(k).step_by(2).filter(|&&b| b == 0).count();
        let (even, odd) = (zeros(0), zeros(1));
        if odd * 2 >= pairs && even == 0 {
            Some(Utf16::LittleEndian)
        } else if even * 2 >= pairs && odd == 0 {
            Some(Utf16::BigEndian)
        } else {
            None
        }
    }
}

/// The text of a file's bytes: UTF-8, or UTF-16 (little- or big-endian,
/// with or without a byte-order mark, see [`Utf16::detect`]) decoded; a
/// UTF-16 byte-order mark is dropped ([`parse_series`] drops UTF-8's).
/// Anything else is a [`DataErrorKind::NotText`] error naming the line and
/// byte offset of the first bad byte and the encoding it looked like. A
/// pure function on bytes: the core reads no files, front ends call this
/// where bytes become text. UTF-8 bytes become the `String` without a copy.
pub fn decode_text(bytes: Vec<u8>) -> Result<String, DataError> {
    if let Some(enc) = Utf16::detect(&bytes) {
        let units = bytes.chunks(2).map(|c| match (enc, c) {
            (Utf16::LittleEndian, [a, b]) => u16::from_le_bytes([*a, *b]),
            (Utf16::BigEndian, [a, b]) => u16::from_be_bytes([*a, *b]),
            // An odd last byte: not a code unit; decoding reports it.
            _ => 0xDC00,
        });
        let mut text = String::with_capacity(bytes.len() / 2);
        let mut line = 1;
        for (i, c) in char::decode_utf16(units).enumerate() {
            match c {
                Ok(c) => {
                    line += usize::from(c == '\n');
                    text.push(c);
                }
                Err(_) => {
                    return Err(error(
                        DataErrorKind::NotText,
                        Some(line),
                        format!(
                        "the file is {} but has an invalid character at byte {}; save it as UTF-8 \
                             (\"CSV UTF-8\" in a spreadsheet's Save As)",
                        enc.describe(),
                        2 * i
                    ),
                    ))
                }
            }
        }
        return Ok(text
            .strip_prefix('\u{feff}')
            .map(str::to_string)
            .unwrap_or(text));
    }
    match String::from_utf8(bytes) {
        Ok(t) => Ok(t),
        Err(e) => {
            let at = e.utf8_error().valid_up_to();
            let bytes = e.as_bytes();
            let line_at =
                |offset: usize| 1 + bytes[..offset].iter().filter(|&&b| b == b'\n').count();
            Err(error(
                DataErrorKind::NotText,
                Some(line_at(at)),
                format!(
                    "not UTF-8 text (first bad byte 0x{:02X} at byte offset {at}); expected UTF-8 or UTF-16 text: \
                     save the file as UTF-8 (\"CSV UTF-8\" in a spreadsheet's Save As)",
                    bytes[at]
                ),
            ))
        }
    }
}

/// The key two times share exactly when they are the same axis value: the
/// bits, with −0 folded into 0 (so `1` and `1.0` are one time, `1` and
/// `1.0000001` are two).
fn time_key(t: f64) -> u64 {
    (t + 0.0).to_bits()
}

/// The first row whose time an earlier row already has, as `(earlier,
/// later)` indices into `times`; `None` when every time appears once.
pub fn repeated_time(times: &[f64]) -> Option<(usize, usize)> {
    if is_sorted(times) {
        // Equal times are neighbours: no map for a sorted series.
        let i = times.windows(2).position(|w| w[0] == w[1])?;
        return Some((i, i + 1));
    }
    let mut seen: HashMap<u64, usize> = HashMap::with_capacity(times.len());
    for (i, &t) in times.iter().enumerate() {
        if let Some(&earlier) = seen.get(&time_key(t)) {
            return Some((earlier, i));
        }
        seen.insert(time_key(t), i);
    }
    None
}

fn is_sorted(times: &[f64]) -> bool {
    times.windows(2).all(|w| w[0] <= w[1])
}

/// How many times carry more than one row, and how many rows those are.
fn replicate_counts(times: &[f64]) -> (usize, usize) {
    if is_sorted(times) {
        let (mut repeated, mut rows, mut run) = (0, 0, 1);
        for i in 1..=times.len() {
            if i < times.len() && times[i] == times[i - 1] {
                run += 1;
                continue;
            }
            if run > 1 {
                repeated += 1;
                rows += run;
            }
            run = 1;
        }
        return (repeated, rows);
    }
    let mut count: HashMap<u64, usize> = HashMap::with_capacity(times.len());
    for &t in times {
        *count.entry(time_key(t)).or_insert(0) += 1;
    }
    let repeated = count.values().filter(|&&c| c > 1).count();
    let rows = count.values().filter(|&&c| c > 1).sum();
    (repeated, rows)
}

/// The `replicate_times` warning: how many times carry more than one value
/// and how many rows they have, with the first example.
fn replicate_warning(times: &[f64], lines: &[usize], kind: TimeAxis) -> Option<Warning> {
    let (first, second) = repeated_time(times)?;
    let (repeated, rows) = replicate_counts(times);
    Some(Warning::new(
        WarningCode::ReplicateTimes,
        format!(
            "{repeated} time{s} carr{ies} more than one value ({rows} rows at {them}, e.g. {} on lines {} and {}); \
             they are fitted as given, each row one observation, and the residual checks that need one value \
             per time use the mean residual per time",
            kind.format(times[first]),
            lines.get(first).copied().unwrap_or(0),
            lines.get(second).copied().unwrap_or(0),
            s = if repeated == 1 { "" } else { "s" },
            ies = if repeated == 1 { "ies" } else { "y" },
            them = if repeated == 1 { "it" } else { "them" },
        ),
    ))
}

/// Refuses a series with a repeated time for a step that needs one value
/// per time, naming both lines: `what` says what needs it, `instead` what
/// to do.
fn one_value_per_time(series: &Series, what: &str, instead: &str) -> Result<(), DataError> {
    let Some((first, second)) = repeated_time(&series.times) else {
        return Ok(());
    };
    let line = |i: usize| series.lines.get(i).copied();
    Err(error(
        DataErrorKind::DuplicateTime,
        line(second),
        format!(
            "time {} also appears on line {}: {what} needs one value per time, and replicate \
             measurements give several; {instead}",
            quote(&series.axis.format(series.times[first])),
            line(first).unwrap_or(0),
        ),
    ))
}

/// The running totals of a series of per-period counts ([`cumulate`] in
/// the order given), or an error naming the lines of a repeated time:
/// per-period counts are one count per period, so replicates have no
/// running total.
pub fn per_period_totals(series: &Series) -> Result<Vec<f64>, DataError> {
    one_value_per_time(
        series,
        "summing counts per period into running totals",
        "add the counts of one period into one row, or fit the values as they are",
    )?;
    Ok(cumulate(&series.values))
}

/// Whether `series` can be fitted by its per-period increments
/// ([`FitOptions::increments`](crate::fit::FitOptions::increments)): an
/// error naming the lines of a repeated time otherwise, since differences
/// between consecutive times need one value per time.
pub fn check_increments(series: &Series) -> Result<(), DataError> {
    one_value_per_time(
        series,
        "fitting increments (differences between consecutive times)",
        "fit the values themselves, or combine the replicates of each time into one row",
    )
}

/// A warning when values meant as running totals fall well below their
/// peak, which running totals never do: the usual cause is a column of
/// per-period counts (new sign-ups per week) pasted as if cumulative.
///
/// Fires when, in time order, at least three observations follow the
/// maximum and the last of them is below 80% of it. Noise around a
/// saturation level stays far above that, so a plateau does not trigger it.
pub fn decline_warning(series: &Series) -> Option<Warning> {
    let mut order: Vec<usize> = (0..series.times.len()).collect();
    order.sort_by(|&a, &b| series.times[a].total_cmp(&series.times[b]));
    let (peak_pos, &peak) = order
        .iter()
        .enumerate()
        .max_by(|a, b| series.values[*a.1].total_cmp(&series.values[*b.1]))?;
    let peak_value = series.values[peak];
    let last = series.values[*order.last()?];
    let after = order.len() - 1 - peak_pos;
    if after < 3 || peak_value.is_nan() || peak_value <= 0.0 || last >= 0.8 * peak_value {
        return None;
    }
    Some(Warning::new(
        WarningCode::ValuesDecline,
        format!(
            "the values fall to {:.0}% of their peak (line {}) by the last row; running totals never fall. \
             If these are counts per period, treat them as such so they are summed before fitting",
            100.0 * last / peak_value,
            series.lines.get(peak).copied().unwrap_or(0)
        ),
    ))
}

/// How many non-blank lines delimiter detection looks at.
const SNIFF_LINES: usize = 10;

/// Spreadsheet tokens for "no value here", compared case-insensitively.
const MISSING: [&str; 8] = ["", "na", "n/a", "nan", "null", "-", ".", "#n/a"];

fn is_missing(s: &str) -> bool {
    let s = s.trim();
    MISSING.iter().any(|m| s.eq_ignore_ascii_case(m))
}

/// One record of the text with the line it starts on.
struct Record {
    line: usize,
    fields: Vec<String>,
}

impl Record {
    fn field(&self, i: usize) -> Option<&str> {
        self.fields.get(i).map(String::as_str)
    }
}

/// A row that will be on the axis: its line and its two raw fields.
#[derive(Clone, Copy)]
struct Row<'a> {
    line: usize,
    time: &'a str,
    value: &'a str,
}

/// The header of the table the tool exports (the page's "table CSV"): the
/// time as the data wrote it, the axis value, the observed value, the
/// fitted curve, the forecast and the 95% bands. Written by the page from
/// this constant; read back by [`parse_series`], which recognises it.
pub const TABLE_EXPORT_HEADER: &str = "time,axis,observed,fitted,forecast,\
confidence95_lo,confidence95_hi,prediction95_lo,prediction95_hi";

/// The columns of [`TABLE_EXPORT_HEADER`] that identify the export, and
/// where its observed and forecast values are.
const EXPORT_COLUMNS: [&str; 5] = ["time", "axis", "observed", "fitted", "forecast"];
const EXPORT_OBSERVED: usize = 2;
const EXPORT_FORECAST: usize = 4;

fn is_export_columns<S: AsRef<str>>(columns: &[S]) -> bool {
    columns.len() >= EXPORT_COLUMNS.len()
        && EXPORT_COLUMNS
            .iter()
            .zip(columns)
            .all(|(want, got)| got.as_ref().trim().eq_ignore_ascii_case(want))
}

/// Whether `text` is a table the tool exported (its first record starts
/// with the columns of [`TABLE_EXPORT_HEADER`]): one series, read by
/// [`parse_series`] as its `time` and `observed` columns, not several.
pub fn is_table_export(text: &str) -> bool {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    let Some(first) = text.lines().find(|l| !l.trim().is_empty()) else {
        return false;
    };
    let delimiter = multi::sniff_delimiter(first);
    split_line(1, first, delimiter).is_ok_and(|f| is_export_columns(&f))
}

/// Parses `text` into a series; see the module documentation for what is
/// detected and [`DataErrorKind`] for what is refused.
///
/// The text is read record by record, several times (the widest record and
/// the header; the rows' fields; the decimal votes and the values), so that
/// memory beyond the text is the series itself: no list of records or rows.
pub fn parse_series(text: &str, opts: &ParseOptions) -> Result<Series, DataError> {
    let (text, delimiter) = text_and_delimiter(
        text,
        opts.delimiter,
        "the text is empty; expected rows of a time and a value, e.g. \"2024-01-31,1250\"",
    )?;
    // First pass: the first record, the widest one, the line of the second.
    let mut reader = RecordReader::new(text, delimiter);
    let Some(first) = reader.next()?.map(|(line, rec)| Record {
        line,
        fields: rec
            .iter()
            .map(|f| String::from_utf8_lossy(f).into_owned())
            .collect(),
    }) else {
        return Err(error(
            DataErrorKind::Empty,
            None,
            "the text has no rows; expected rows of a time and a value",
        ));
    };
    let mut width = first.fields.len();
    let mut second_line = None;
    while let Some((line, rec)) = reader.next()? {
        width = width.max(rec.len());
        second_line.get_or_insert(line);
    }

    let by_name = matches!(opts.time_column, Some(ColumnRef::Name(_)))
        || matches!(opts.value_column, Some(ColumnRef::Name(_)));
    let time_hint = index_hint(opts.time_column.as_ref(), 0);
    let value_hint = index_hint(opts.value_column.as_ref(), 1);
    let has_header = match opts.header {
        Some(h) => h,
        None => by_name || looks_like_header(&first, time_hint, value_hint, delimiter),
    };
    let columns: Vec<String> = (0..width)
        .map(|i| {
            let name = if has_header { first.field(i) } else { None };
            match name.map(str::trim) {
                Some(n) if !n.is_empty() => n.to_string(),
                _ => format!("column {}", i + 1),
            }
        })
        .collect();
    let ctx = Columns {
        columns: &columns,
        has_header,
        delimiter,
        first_line: if has_header {
            second_line.unwrap_or(first.line)
        } else {
            first.line
        },
    };
    // The tool's own table export, with no column chosen: its time and
    // observed columns; its forecast rows (no observed value) are set aside
    // with a warning saying how many.
    let export = has_header
        && opts.time_column.is_none()
        && opts.value_column.is_none()
        && is_export_columns(&columns);
    let time_col = ctx.resolve(opts.time_column.as_ref(), 0, "time")?;
    let value_col = if export {
        EXPORT_OBSERVED
    } else {
        ctx.resolve(opts.value_column.as_ref(), 1, "value")?
    };
    if time_col == value_col {
        return Err(error(
            DataErrorKind::InvalidOptions,
            None,
            format!(
                "the time and value columns are both {}; choose two different columns",
                quote(columns.get(time_col).map_or("", String::as_str))
            ),
        ));
    }
    let header_name = |i: usize, fallback: &str| -> String {
        match first.field(i).map(str::trim) {
            Some(n) if has_header && !n.is_empty() => n.to_string(),
            _ => fallback.to_string(),
        }
    };
    let time_name = header_name(time_col, "time");
    let value_name = header_name(value_col, "value");

    // Second pass: every data row has both fields, and a time where it has
    // a value; the rows without a value are counted out.
    let needed = time_col.max(value_col) + 1;
    let mut rows = TextRows {
        text,
        delimiter,
        has_header,
        time_col,
        value_col,
        count: 0,
        first: None,
    };
    let mut skipped = Vec::new();
    let mut forecast_rows = Vec::new();
    rows.each_record(|line, t, v, rec| {
        let n_fields = rec.len();
        let (Some(t), Some(v)) = (t, v) else {
            return Err(error(
                DataErrorKind::TooFewFields,
                Some(line),
                format!(
                    "expected at least {needed} fields ({} in column {}, {} in column {}), found {}{}",
                    quote(&time_name),
                    time_col + 1,
                    quote(&value_name),
                    value_col + 1,
                    n_fields,
                    delimiter_hint(delimiter, opts.delimiter.is_some())
                ),
            ));
        };
        if is_missing(v) {
            let forecast = rec
                .get(EXPORT_FORECAST)
                .is_some_and(|f| !is_missing(&String::from_utf8_lossy(f)));
            if export && forecast {
                forecast_rows.push(line);
            } else {
                skipped.push(line);
            }
            Ok(false)
        } else if is_missing(t) {
            Err(error(
                DataErrorKind::MissingTime,
                Some(line),
                format!(
                    "the row has a value ({}) but no time; every value needs a time in column {}",
                    quote(v.trim()),
                    time_col + 1
                ),
            ))
        } else {
            Ok(true)
        }
    })?;
    let meta = Meta {
        time_name,
        value_name,
        columns,
        has_header,
        delimiter,
        value_col,
    };
    let mut series = build_series(&Rows::Text(rows), &skipped, meta, None)?;
    if let (Some(&first), Some(&last)) = (forecast_rows.first(), forecast_rows.last()) {
        let n = forecast_rows.len();
        series.warnings.insert(
            0,
            Warning::new(
                WarningCode::ExportForecastRowsSetAside,
                format!(
                    "this is a table the tool exported: its time and observed columns are read; \
                     {n} forecast row{s} without an observed value (line{s} {first}{to}) {were} set \
                     aside, not fitted",
                    s = if n == 1 { "" } else { "s" },
                    to = if n == 1 { String::new() } else { format!(" to {last}") },
                    were = if n == 1 { "was" } else { "were" },
                ),
            ),
        );
    } else if export {
        series.warnings.insert(
            0,
            Warning::new(
                WarningCode::ExportForecastRowsSetAside,
                "this is a table the tool exported: its time and observed columns are read \
                 (it has no forecast rows)",
            ),
        );
    }
    Ok(series)
}

/// The rows of a series as `build_series` reads them, twice (decimal
/// votes, then values): a list, or the records of the text itself, read
/// again on each pass.
enum Rows<'a> {
    Slice(&'a [Row<'a>]),
    Text(TextRows<'a>),
}

impl Rows<'_> {
    fn len(&self) -> usize {
        match self {
            Rows::Slice(rows) => rows.len(),
            Rows::Text(rows) => rows.count,
        }
    }

    fn first(&self) -> Option<Row<'_>> {
        match self {
            Rows::Slice(rows) => rows.first().copied(),
            Rows::Text(rows) => rows.first.as_ref().map(|(line, t, v)| Row {
                line: *line,
                time: t,
                value: v,
            }),
        }
    }

    /// Calls `f` with every row in order; stops at the first error.
    fn try_for_each(
        &self,
        mut f: impl FnMut(Row<'_>) -> Result<(), DataError>,
    ) -> Result<(), DataError> {
        match self {
            Rows::Slice(rows) => rows.iter().try_for_each(|r| f(*r)),
            Rows::Text(rows) => rows.for_each_row(f),
        }
    }
}

/// The data rows of a text with a value in the value column, read from
/// the text on each pass (see [`parse_series`]).
struct TextRows<'a> {
    text: &'a str,
    delimiter: u8,
    has_header: bool,
    time_col: usize,
    value_col: usize,
    /// Rows with a value, and the first of them (line, time, value), as
    /// found by [`TextRows::each_record`].
    count: usize,
    first: Option<(usize, String, String)>,
}

impl TextRows<'_> {
    /// Calls `check` with each data record's line, time and value fields
    /// (`None` when the record is too short) and the record; it says
    /// whether the row is kept. Sets `count` and `first`.
    fn each_record(
        &mut self,
        mut check: impl FnMut(
            usize,
            Option<&str>,
            Option<&str>,
            &csv::ByteRecord,
        ) -> Result<bool, DataError>,
    ) -> Result<(), DataError> {
        let mut reader = RecordReader::new(self.text, self.delimiter);
        let mut header = self.has_header;
        self.count = 0;
        self.first = None;
        while let Some((line, rec)) = reader.next()? {
            if std::mem::take(&mut header) {
                continue;
            }
            let t = rec.get(self.time_col).map(String::from_utf8_lossy);
            let v = rec.get(self.value_col).map(String::from_utf8_lossy);
            if check(line, t.as_deref(), v.as_deref(), rec)? {
                self.count += 1;
                if self.first.is_none() {
                    let text = |f: Option<Cow<str>>| f.map(Cow::into_owned).unwrap_or_default();
                    self.first = Some((line, text(t), text(v)));
                }
            }
        }
        Ok(())
    }

    /// Calls `f` with every kept row (time and value present, a value that
    /// is not missing), as checked by [`TextRows::each_record`].
    fn for_each_row(
        &self,
        mut f: impl FnMut(Row<'_>) -> Result<(), DataError>,
    ) -> Result<(), DataError> {
        let mut reader = RecordReader::new(self.text, self.delimiter);
        let mut header = self.has_header;
        while let Some((line, rec)) = reader.next()? {
            if std::mem::take(&mut header) {
                continue;
            }
            let (Some(t), Some(v)) = (rec.get(self.time_col), rec.get(self.value_col)) else {
                continue;
            };
            let (t, v) = (String::from_utf8_lossy(t), String::from_utf8_lossy(v));
            if is_missing(&v) {
                continue;
            }
            f(Row {
                line,
                time: &t,
                value: &v,
            })?;
        }
        Ok(())
    }
}

/// What a series carries besides its rows.
struct Meta {
    time_name: String,
    value_name: String,
    columns: Vec<String>,
    has_header: bool,
    delimiter: u8,
    /// 0-based value column, for the message when no row has a value.
    value_col: usize,
}

/// The kept rows of one series (line, raw time, raw value) and the lines
/// of the rows skipped for a missing value, validated and read into a
/// [`Series`]: one time kind, one decimal convention (`dec`, or decided
/// from these rows), warnings for the skipped and unsorted rows and for
/// repeated times. A time on several rows is a set of replicate
/// measurements: every row is kept and fitted as its own observation
/// (`replicate_times` warning); only what needs one value per time refuses
/// them ([`per_period_totals`], [`check_increments`]).
fn build_series(
    rows: &Rows,
    skipped: &[usize],
    meta: Meta,
    dec: Option<Decimal>,
) -> Result<Series, DataError> {
    let Meta {
        time_name,
        value_name,
        columns,
        has_header,
        delimiter,
        value_col,
    } = meta;
    let Some(first_row) = rows.first() else {
        let message = if skipped.is_empty() {
            "no data rows after the header; expected rows of a time and a value".to_string()
        } else {
            format!(
                "none of the {} data rows has a value in column {} ({})",
                skipped.len(),
                value_col + 1,
                quote(&value_name)
            )
        };
        return Err(error(DataErrorKind::NoData, None, message));
    };

    let Some(time_kind) = time::detect(first_row.time) else {
        return Err(bad_time(&first_row, None, &time_name));
    };
    let dec = match dec {
        Some(d) => d,
        None => decide_decimal(rows, time_kind, delimiter)?,
    };

    // A column of Unix epoch seconds or milliseconds is read as dates
    // (see `time::epoch_of` for when; the axis counts days with the time of day).
    let epoch = match time::epoch_of(std::iter::once(first_row.time)) {
        Some(unit) if time_kind == TimeKind::Number => {
            // Every row must be the same unit; one pass, no copy of the rows.
            let mut all = true;
            rows.try_for_each(|row| {
                all &= time::epoch_of(std::iter::once(row.time)) == Some(unit);
                Ok(())
            })?;
            all.then_some(unit)
        }
        _ => None,
    };
    let time_kind = if epoch.is_some() {
        TimeKind::Date
    } else {
        time_kind
    };
    let mut times = Vec::with_capacity(rows.len());
    let mut values = Vec::with_capacity(rows.len());
    let mut lines = Vec::with_capacity(rows.len());
    rows.try_for_each(|row| {
        let t = match epoch {
            Some(unit) => time::epoch_raw(row.time, unit)
                .ok_or_else(|| bad_time(&row, Some(TimeKind::Number), &time_name))?,
            None => time::parse(row.time, time_kind, dec)
                .map_err(|e| time_error(e, &row, time_kind, &time_name))?,
        };
        let v = parse_number(row.value, dec).map_err(|e| value_error(e, &row, dec, delimiter))?;
        times.push(t);
        values.push(v);
        lines.push(row.line);
        Ok(())
    })?;
    // Raw times (day counts, absolute months) onto the data's own grid.
    let axis = TimeAxis::detect(time_kind, &times, epoch.is_some());
    for t in &mut times {
        *t = axis.to_axis(*t);
    }

    let mut warnings = Vec::new();
    if !skipped.is_empty() {
        warnings.push(Warning::new(
            WarningCode::MissingValuesSkipped,
            skipped_message(skipped),
        ));
    }
    if let Some(w) = unsorted_warning(&times, &lines, axis) {
        warnings.push(w);
    }
    if let Some(w) = replicate_warning(&times, &lines, axis) {
        warnings.push(w);
    }
    if let (Some(unit), Some(first)) = (epoch, rows.first()) {
        warnings.push(Warning::new(
            WarningCode::EpochTimes,
            format!(
                "the times are read as Unix epoch {} (UTC) and shown as dates (the nearest day): {} is {}",
                unit.describe(),
                first.time.trim(),
                time::epoch_text(first.time, unit).unwrap_or_default()
            ),
        ));
    }
    Ok(Series {
        time_kind,
        axis,
        time_name,
        value_name,
        columns,
        has_header,
        delimiter,
        decimal_comma: dec == Decimal::Comma,
        times,
        values,
        lines,
        warnings,
    })
}

/// The delimiter a user gave, if the CSV reader can use it.
fn check_delimiter(d: u8) -> Result<u8, DataError> {
    let usable = d == b'\t' || d == b' ' || d.is_ascii_punctuation();
    if usable && d != b'"' {
        Ok(d)
    } else {
        Err(error(
            DataErrorKind::InvalidOptions,
            None,
            format!(
                "cannot use {:?} as the field delimiter; expected a comma, semicolon, tab or other ASCII punctuation other than '\"'",
                char::from(d)
            ),
        ))
    }
}

/// Tab, semicolon or comma: the first (in that order) found outside quotes
/// on every sampled line, else the one on most lines. The order matters for
/// pasted European data, where `1\t2,5` and `1;2,5` also contain commas.
fn detect_delimiter(text: &str) -> u8 {
    const CANDIDATES: [u8; 3] = [b'\t', b';', b','];
    let mut lines_with = [0usize; 3];
    let mut on_line = [false; 3];
    let mut sampled = 0;
    let mut content = false;
    let mut quoted = false;
    for b in text.bytes().chain(std::iter::once(b'\n')) {
        if b == b'"' {
            quoted = !quoted;
        }
        if b == b'\n' && !quoted {
            if content {
                sampled += 1;
                for (n, on) in lines_with.iter_mut().zip(&mut on_line) {
                    *n += usize::from(*on);
                }
                if sampled == SNIFF_LINES {
                    break;
                }
            }
            on_line = [false; 3];
            content = false;
            continue;
        }
        if !quoted {
            if let Some(i) = CANDIDATES.iter().position(|&c| c == b) {
                on_line[i] = true;
            }
        }
        content |= !b.is_ascii_whitespace();
    }
    let everywhere = (0..3).find(|&i| sampled > 0 && lines_with[i] == sampled);
    let most = (0..3)
        .filter(|&i| lines_with[i] > 0)
        .max_by_key(|&i| (lines_with[i], std::cmp::Reverse(i)));
    everywhere
        .or(most)
        .and_then(|i| CANDIDATES.get(i).copied())
        .unwrap_or(b',')
}

/// The records of `text` (a leading byte-order mark dropped) and the
/// delimiter: `delimiter` when given (and usable), else the detected one.
/// `if_empty` is the message for a text with nothing but white space.
fn read_text(
    text: &str,
    delimiter: Option<u8>,
    if_empty: &str,
) -> Result<(Vec<Record>, u8), DataError> {
    let (text, delimiter) = text_and_delimiter(text, delimiter, if_empty)?;
    Ok((read_records(text, delimiter)?, delimiter))
}

/// `text` without a leading byte-order mark, and the delimiter:
/// `delimiter` when given (and usable), else the detected one. `if_empty`
/// is the message for a text with nothing but white space.
fn text_and_delimiter<'a>(
    text: &'a str,
    delimiter: Option<u8>,
    if_empty: &str,
) -> Result<(&'a str, u8), DataError> {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    if text.trim().is_empty() {
        return Err(error(DataErrorKind::Empty, None, if_empty));
    }
    let delimiter = match delimiter {
        Some(d) => check_delimiter(d)?,
        None => detect_delimiter(text),
    };
    check_field_counts(text, delimiter)?;
    Ok((text, delimiter))
}

/// Refuses a record of more than [`MAX_FIELDS`] fields before the CSV
/// reader holds it (whose field list would cost several times the line's
/// length), by counting delimiters outside quotes in one pass over the bytes.
fn check_field_counts(text: &str, delimiter: u8) -> Result<(), DataError> {
    let bytes = text.as_bytes();
    let (mut line, mut start_line, mut fields, mut quoted) = (1usize, 1usize, 1usize, false);
    // As the CSV reader: a quote opens a quoted field only at the start of
    // a field, and inside one `""` is a quote and a lone `"` closes it.
    let mut field_start = true;
    let mut escaped = false;
    for (i, &b) in bytes.iter().enumerate() {
        let at_start = std::mem::replace(&mut field_start, false);
        if std::mem::take(&mut escaped) {
            continue;
        }
        if b == b'"' && (quoted || at_start) {
            if quoted && bytes.get(i + 1) == Some(&b'"') {
                escaped = true;
            } else {
                quoted = !quoted;
            }
        } else if b == b'\n' || (b == b'\r' && bytes.get(i + 1) != Some(&b'\n')) {
            line += 1;
            if !quoted {
                fields = 1;
                start_line = line;
                field_start = true;
            }
        } else if b == delimiter && !quoted {
            field_start = true;
            fields += 1;
            if fields > MAX_FIELDS {
                return Err(too_many_fields(start_line, None));
            }
        }
    }
    Ok(())
}

/// The error for a record of more than [`MAX_FIELDS`] fields.
fn too_many_fields(line: usize, count: Option<usize>) -> DataError {
    let count = count.map_or_else(|| format!("more than {MAX_FIELDS}"), |c| c.to_string());
    error(
        DataErrorKind::TooManyFields,
        Some(line),
        format!(
            "the row has {count} fields; expected at most {MAX_FIELDS} (rows of a time and a value, one row per line)"
        ),
    )
}

/// All non-blank records, each with the line of the original text it starts on.
fn read_records(text: &str, delimiter: u8) -> Result<Vec<Record>, DataError> {
    let mut reader = RecordReader::new(text, delimiter);
    let mut records = Vec::new();
    while let Some((line, rec)) = reader.next()? {
        // Fields split at an ASCII delimiter of UTF-8 text are UTF-8; lossy
        // conversion only guards against an exotic user-chosen delimiter.
        let fields: Vec<String> = rec
            .iter()
            .map(|f| String::from_utf8_lossy(f).into_owned())
            .collect();
        records.push(Record { line, fields });
    }
    Ok(records)
}

/// Most fields one record may have. A record is read whole before its
/// fields can be counted, so this bounds what one line can cost (a line of
/// 25 million fields is refused after reading it, in memory of the order
/// of its own length, instead of growing a list of 25 million names).
pub(crate) const MAX_FIELDS: usize = 100_000;

/// The non-blank records of a text one at a time, each with the line it
/// starts on, in one reused buffer: memory for one record, not for all.
struct RecordReader<'a> {
    reader: csv::Reader<&'a [u8]>,
    record: csv::ByteRecord,
    lines: LineCounter<'a>,
}

impl<'a> RecordReader<'a> {
    fn new(text: &'a str, delimiter: u8) -> Self {
        RecordReader {
            reader: csv::ReaderBuilder::new()
                .has_headers(false)
                .flexible(true)
                .delimiter(delimiter)
                .from_reader(text.as_bytes()),
            record: csv::ByteRecord::new(),
            lines: LineCounter::new(text),
        }
    }

    /// The next record with a non-blank field, and its line; `None` at the
    /// end of the text.
    fn next(&mut self) -> Result<Option<(usize, &csv::ByteRecord)>, DataError> {
        loop {
            let more = self
                .reader
                .read_byte_record(&mut self.record)
                .map_err(|e| {
                    let line = e.position().map(|p| self.lines.record_line(p));
                    error(
                        DataErrorKind::Malformed,
                        line,
                        format!("cannot read the text as delimited fields: {e}"),
                    )
                })?;
            if !more {
                return Ok(None);
            }
            // Rows of empty cells (`,,`) are what spreadsheets export for blank rows.
            if self
                .record
                .iter()
                .all(|f| String::from_utf8_lossy(f).trim().is_empty())
            {
                continue;
            }
            let line = self
                .record
                .position()
                .map_or(0, |p| self.lines.record_line(p));
            if self.record.len() > MAX_FIELDS {
                return Err(too_many_fields(line, Some(self.record.len())));
            }
            return Ok(Some((line, &self.record)));
        }
    }
}

/// Turns a record's position into its line, counting line breaks forwards
/// from the last position asked about (records come in order), so that no
/// index of the text's lines is kept.
///
/// csv's own `Position::line()` is not usable as it is: a record's position
/// is where the reader stood *before* it skipped the blank lines (and the
/// `\n` of a `\r\n`) in front of the record, so it names an earlier line.
/// Its byte offset is off the same way, but what was skipped is only line
/// ends, so stepping over them from there finds the record's first byte.
/// Line breaks are `\n`, and `\r` not followed by `\n` (old Mac line ends,
/// which csv also treats as record ends).
struct LineCounter<'a> {
    text: &'a [u8],
    /// Offset up to which breaks were counted, and how many there were.
    at: usize,
    breaks: usize,
}

impl<'a> LineCounter<'a> {
    fn new(text: &'a str) -> Self {
        LineCounter {
            text: text.as_bytes(),
            at: 0,
            breaks: 0,
        }
    }

    /// 1-based line of the first byte of the record csv reports at `pos`.
    fn record_line(&mut self, pos: &csv::Position) -> usize {
        let mut at = usize::try_from(pos.byte()).unwrap_or(usize::MAX);
        while matches!(self.text.get(at), Some(b'\r' | b'\n')) {
            at += 1;
        }
        let at = at.min(self.text.len());
        if at < self.at {
            // Asked about an earlier position: count again from the start.
            self.at = 0;
            self.breaks = 0;
        }
        let text = self.text;
        self.breaks += text[self.at..at]
            .iter()
            .enumerate()
            .filter(|&(i, &b)| {
                b == b'\n' || (b == b'\r' && text.get(self.at + i + 1) != Some(&b'\n'))
            })
            .count();
        self.at = at;
        1 + self.breaks
    }
}

/// The index a column reference points at before the header is known.
fn index_hint(r: Option<&ColumnRef>, default: usize) -> Option<usize> {
    match r {
        None => Some(default),
        Some(ColumnRef::Index(i)) => Some(*i),
        Some(ColumnRef::Name(_)) => None,
    }
}

/// A first record is a header when its time or its value field is text that
/// is neither a time/number nor a missing-value token.
fn looks_like_header(
    first: &Record,
    time_col: Option<usize>,
    value_col: Option<usize>,
    delimiter: u8,
) -> bool {
    let field = |c: Option<usize>| c.and_then(|i| first.field(i)).filter(|f| !is_missing(f));
    let time_is_text = field(time_col).is_some_and(|f| time::detect(f).is_none());
    let value_is_text = field(value_col).is_some_and(|f| {
        let conventions: &[Decimal] = if delimiter == b',' {
            &[Decimal::Point]
        } else {
            &[Decimal::Point, Decimal::Comma]
        };
        conventions
            .iter()
            .all(|&d| parse_number(f, d) == Err(NumError::Invalid))
    });
    time_is_text || value_is_text
}

/// What column resolution needs to know, and to say in its errors.
struct Columns<'a> {
    columns: &'a [String],
    has_header: bool,
    delimiter: u8,
    /// Line of the first data row, for "too few fields" when the whole text
    /// has fewer columns than the defaults need.
    first_line: usize,
}

impl Columns<'_> {
    fn resolve(
        &self,
        r: Option<&ColumnRef>,
        default: usize,
        role: &str,
    ) -> Result<usize, DataError> {
        match r {
            None if default < self.columns.len() => Ok(default),
            None => Err(error(
                DataErrorKind::TooFewFields,
                Some(self.first_line),
                format!(
                    "expected at least {} fields (a time and a value), found {}{}",
                    default + 1,
                    self.columns.len(),
                    delimiter_hint(self.delimiter, false)
                ),
            )),
            Some(ColumnRef::Index(i)) if *i < self.columns.len() => Ok(*i),
            Some(ColumnRef::Index(i)) => Err(error(
                DataErrorKind::UnknownColumn,
                None,
                format!(
                    "there is no column {} for the {role}; the text has {} column{}: {}",
                    i.saturating_add(1),
                    self.columns.len(),
                    if self.columns.len() == 1 { "" } else { "s" },
                    self.list()
                ),
            )),
            Some(ColumnRef::Name(name)) => {
                let wanted = name.trim().to_lowercase();
                let found = self
                    .columns
                    .iter()
                    .position(|c| c.trim().to_lowercase() == wanted);
                match found {
                    Some(i) if self.has_header => Ok(i),
                    _ => Err(error(
                        DataErrorKind::UnknownColumn,
                        None,
                        format!(
                            "there is no column named {} for the {role}; {}",
                            quote(name.trim()),
                            if self.has_header {
                                format!("the columns are {}", self.list())
                            } else {
                                format!(
                                    "the text has no header row, so choose the column by number (columns: {})",
                                    self.list()
                                )
                            }
                        ),
                    )),
                }
            }
        }
    }

    fn list(&self) -> String {
        let names: Vec<String> = self.columns.iter().map(|c| quote(c)).collect();
        names.join(", ")
    }
}

/// A field shown in a message: quoted, and cut short if someone pasted a novel.
fn quote(s: &str) -> String {
    const MAX_CHARS: usize = 40;
    if s.chars().count() > MAX_CHARS {
        let cut: String = s.chars().take(MAX_CHARS).collect();
        format!("\"{cut}…\"")
    } else {
        format!("\"{s}\"")
    }
}

fn delimiter_name(d: u8) -> String {
    match d {
        b',' => "comma".into(),
        b';' => "semicolon".into(),
        b'\t' => "tab".into(),
        other => format!("{:?}", char::from(other)),
    }
}

/// Too few fields often means the delimiter was guessed (or given) wrong.
fn delimiter_hint(d: u8, given: bool) -> String {
    format!(
        " (fields separated by {}{})",
        delimiter_name(d),
        if given {
            ", as chosen"
        } else {
            ", as detected"
        }
    )
}

/// One decimal convention for the whole text, from the votes of the value
/// column and (when it holds numbers) the time column: a comma never is a
/// decimal mark in comma-separated text; otherwise the votes decide, a
/// conflict is an error, and with no decisive vote semicolon-separated text
/// (the export of locales that write decimal commas) reads a comma, the
/// rest a point.
fn decide_decimal(rows: &Rows, kind: TimeKind, delimiter: u8) -> Result<Decimal, DataError> {
    if delimiter == b',' {
        return Ok(Decimal::Point);
    }
    // (count, first line, first field) per convention
    let mut point: (usize, usize, String) = (0, 0, String::new());
    let mut comma: (usize, usize, String) = (0, 0, String::new());
    rows.try_for_each(|row| {
        let fields = if kind == TimeKind::Number {
            [Some(row.time), Some(row.value)]
        } else {
            [None, Some(row.value)]
        };
        for f in fields.into_iter().flatten() {
            let tally = match field_vote(f) {
                Some(Decimal::Point) => &mut point,
                Some(Decimal::Comma) => &mut comma,
                None => continue,
            };
            if tally.0 == 0 {
                *tally = (0, row.line, f.trim().to_string());
            }
            tally.0 += 1;
        }
        Ok(())
    })?;
    match (point.0, comma.0) {
        (0, 0) if delimiter == b';' => Ok(Decimal::Comma),
        (0, 0) => Ok(Decimal::Point),
        (_, 0) => Ok(Decimal::Point),
        (0, _) => Ok(Decimal::Comma),
        (p, c) => {
            // The minority; on a tie, the convention that showed up second.
            let (minority, majority, dec) = if p < c || (p == c && point.1 > comma.1) {
                (point, comma, Decimal::Point)
            } else {
                (comma, point, Decimal::Comma)
            };
            Err(error(
                DataErrorKind::DecimalConflict,
                Some(minority.1),
                format!(
                    "{} is written with {}, but the text mixes conventions: {} number{} with {} (e.g. {} on line {}), {} with {}; expected one convention for the whole text",
                    quote(&minority.2),
                    dec.describe(),
                    majority.0,
                    if majority.0 == 1 { "" } else { "s" },
                    dec.other().describe(),
                    quote(&majority.2),
                    majority.1,
                    minority.0,
                    dec.describe()
                ),
            ))
        }
    }
}

/// A field's vote, counted only when the field reads as a number under the
/// convention it votes for, so a malformed field (a `01.02.2024` date) is
/// reported as what it is rather than as a decimal conflict.
fn field_vote(s: &str) -> Option<Decimal> {
    let dec = match number::vote(s) {
        Vote::Point => Decimal::Point,
        Vote::Comma => Decimal::Comma,
        Vote::Neither => return None,
    };
    parse_number(s, dec).is_ok().then_some(dec)
}

fn bad_time(row: &Row, kind: Option<TimeKind>, name: &str) -> DataError {
    let expected = match kind {
        Some(k) => format!("expected {} like the rows above", k.expected_form()),
        None => "expected a number (such as 12 or 2019), a date YYYY-MM-DD, an ISO week such as 2024-W09, a year-month YYYY-MM or a quarter such as 2024Q3".into(),
    };
    error(
        DataErrorKind::BadTime,
        Some(row.line),
        format!(
            "cannot read {} as a time (column {}); {expected}",
            quote(row.time.trim()),
            quote(name)
        ),
    )
}

fn time_error(e: TimeError, row: &Row, kind: TimeKind, name: &str) -> DataError {
    let found = quote(row.time.trim());
    match e {
        TimeError::Invalid => bad_time(row, Some(kind), name),
        TimeError::NoSuchTime => error(
            DataErrorKind::BadTime,
            Some(row.line),
            format!(
                "{found} is not a real {}; expected {}",
                match kind {
                    TimeKind::Date => "date",
                    TimeKind::Week => "ISO week (weeks run from W01 to W52 or W53)",
                    TimeKind::Month => "month (months run from 01 to 12)",
                    TimeKind::Quarter => "quarter (quarters run from Q1 to Q4)",
                    TimeKind::Number => "number",
                },
                kind.expected_form()
            ),
        ),
        TimeError::OtherKind(other) => error(
            DataErrorKind::MixedTimeFormats,
            Some(row.line),
            format!(
                "found {} ({found}) but the first data row has {}; expected {} in every row",
                other.describe(),
                kind.describe(),
                kind.expected_form()
            ),
        ),
        TimeError::OutOfRange => error(
            DataErrorKind::TimeOutOfRange,
            Some(row.line),
            format!(
                "the time {found} is out of range; expected a time between -1e9 and 1e9 \
                 (Unix epoch times are read as dates when every time in the column is a \
                 whole number of seconds with 10 digits or of milliseconds with 13 digits; \
                 otherwise convert them to dates YYYY-MM-DD)"
            ),
        ),
    }
}

fn value_error(e: NumError, row: &Row, dec: Decimal, delimiter: u8) -> DataError {
    let found = quote(row.value.trim());
    match e {
        NumError::NotFinite => error(
            DataErrorKind::ValueOutOfRange,
            Some(row.line),
            format!("the value {found} is infinite or too large; expected a finite number between -1e300 and 1e300"),
        ),
        NumError::Invalid => {
            let example = match dec {
                Decimal::Point => "1234.5 or 1,234.5",
                Decimal::Comma => "1234,5 or 1.234,5",
            };
            let note = if delimiter == b',' && row.value.contains(',') {
                " (in comma-separated text a comma groups thousands and cannot be a decimal mark)"
            } else {
                ""
            };
            error(
                DataErrorKind::BadValue,
                Some(row.line),
                format!(
                    "cannot read the value {found} as a number; expected a number written with {} such as {example}{note}",
                    dec.describe()
                ),
            )
        }
    }
}

/// "2 rows with no value were left out (lines 4, 9)", listing at most a screenful.
fn skipped_message(lines: &[usize]) -> String {
    const MAX_LISTED: usize = 20;
    let n = lines.len();
    let listed: Vec<String> = lines
        .iter()
        .take(MAX_LISTED)
        .map(|l| l.to_string())
        .collect();
    let more = if n > MAX_LISTED {
        format!(" and {} more", n - MAX_LISTED)
    } else {
        String::new()
    };
    if n == 1 {
        format!(
            "1 row with no value was left out (line {})",
            listed.join("")
        )
    } else {
        format!(
            "{n} rows with no value were left out (lines {}{more})",
            listed.join(", ")
        )
    }
}

/// Names the first line whose time is earlier than the row before it.
fn unsorted_warning(times: &[f64], lines: &[usize], kind: TimeAxis) -> Option<Warning> {
    let i = times.windows(2).position(|w| w[1] < w[0])? + 1;
    let (before, t, line) = (times.get(i - 1)?, times.get(i)?, lines.get(i)?);
    Some(Warning::new(
        WarningCode::RowsUnsorted,
        format!(
            "rows are not in time order: line {line} goes back to {} after {}; they are fitted as a set and shown in input order",
            kind.format(*t),
            kind.format(*before)
        ),
    ))
}
