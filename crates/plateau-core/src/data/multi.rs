//! Several series in one text, in one of two layouts ([`Layout`]):
//!
//! - **wide**: a time column followed by one value column per series, the
//!   header row naming the series (`month,north,south`);
//! - **long**: one row per observation with three fields, series name,
//!   time and value (`north,2024-01,120`).
//!
//! Each series goes through the same validation as a single series read by
//! [`parse_series`](super::parse_series) (time kinds, duplicate times,
//! decimal convention, unsorted rows), and its errors name the line and the
//! series. Nothing is dropped silently: a missing cell in the wide layout,
//! or a missing value in the long one, is skipped with a warning naming the
//! series and the lines.
//!
//! The long layout is read through [`LongGrouper`], which takes one record
//! at a time and hands back each series as soon as its last row has been
//! seen, so a caller can stream a file of any length in bounded memory (the
//! CLI's `batch` command does). That is why **a series' rows must be
//! contiguous**: a series whose rows reappear after another series began is
//! an error naming both lines, in the whole-text parser as in the stream.
//!
//! Decimal convention: one for the whole text in the wide layout (as for a
//! single series); decided per series in the long layout, since a stream
//! cannot look ahead.

use super::{
    build_series, decide_decimal, delimiter_hint, detect_delimiter, error, is_missing,
    looks_like_header, quote, read_records, read_text, time, DataError, DataErrorKind, Meta,
    Record, Row, Rows, Series,
};
use crate::warning::{Warning, WarningCode};
use serde::Serialize;
use std::collections::HashMap;

/// How several series are laid out in a text.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Layout {
    /// A time column, then one value column per series.
    Wide,
    /// Rows of series name, time, value.
    Long,
}

/// Options for [`parse_multi`]; `Default` detects everything.
#[derive(Debug, Clone, Default)]
pub struct MultiOptions {
    /// Field delimiter; `None` detects tab, semicolon or comma.
    pub delimiter: Option<u8>,
    /// Whether the first record is a header; `None` detects it.
    pub header: Option<bool>,
    /// The layout; `None` detects it: long when the data rows have three
    /// fields, the first not a time and the second a time; wide otherwise.
    pub layout: Option<Layout>,
}

/// One series of a set, with its name.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct NamedSeries {
    pub name: String,
    pub series: Series,
}

/// A series that could not be read, in the long layout (the whole-text
/// parser turns it into an error; a stream reports it and goes on).
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesFailure {
    pub name: String,
    /// Line of the series' first row.
    pub first_line: usize,
    pub error: DataError,
}

/// Several series read from one text.
#[derive(Debug, Clone, PartialEq)]
pub struct SeriesSet {
    pub layout: Layout,
    /// In order of first appearance (wide: column order).
    pub series: Vec<NamedSeries>,
    /// Every series' warnings (each names its series), and warnings about
    /// the set (an empty unnamed column left out).
    pub warnings: Vec<Warning>,
    /// Every column's name, as [`Series::columns`].
    pub columns: Vec<String>,
    pub has_header: bool,
    pub delimiter: u8,
}

/// The delimiter [`parse_series`](super::parse_series) would detect in a
/// sample of the text (its first lines are enough).
pub fn sniff_delimiter(sample: &str) -> u8 {
    detect_delimiter(sample.strip_prefix('\u{feff}').unwrap_or(sample))
}

/// The number of columns of a text (the widest record), with the delimiter
/// detected as [`parse_series`](super::parse_series) detects it; 0 when the
/// text cannot be read. Lets a user interface decide whether a text holds
/// several series before parsing it.
pub fn column_count(text: &str) -> usize {
    let text = text.strip_prefix('\u{feff}').unwrap_or(text);
    read_records(text, detect_delimiter(text))
        .map(|r| r.iter().map(|r| r.fields.len()).max().unwrap_or(0))
        .unwrap_or(0)
}

/// Splits one line of delimited text into fields, with CSV quoting
/// (`"a,b"`, `""` for a quote). For streams read line by line, so a quoted
/// field may not contain a line break: an unbalanced quote is an error.
pub fn split_line(line_no: usize, line: &str, delimiter: u8) -> Result<Vec<String>, DataError> {
    let line = line.trim_end_matches(['\r', '\n']);
    if !line.contains('"') {
        return Ok(line
            .split(char::from(delimiter))
            .map(str::to_string)
            .collect());
    }
    if line.bytes().filter(|&b| b == b'"').count() % 2 == 1 {
        return Err(error(
            DataErrorKind::Malformed,
            Some(line_no),
            "a quote is not closed on this line; expected every quoted field to end on the line it starts",
        ));
    }
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .delimiter(delimiter)
        .from_reader(line.as_bytes());
    let mut record = csv::StringRecord::new();
    match reader.read_record(&mut record) {
        Ok(true) => Ok(record.iter().map(str::to_string).collect()),
        Ok(false) => Ok(Vec::new()),
        Err(e) => Err(error(
            DataErrorKind::Malformed,
            Some(line_no),
            format!("cannot read the line as delimited fields: {e}"),
        )),
    }
}

/// Parses a text holding several series; see the module documentation.
pub fn parse_multi(text: &str, opts: &MultiOptions) -> Result<SeriesSet, DataError> {
    let (records, delimiter) = read_text(
        text,
        opts.delimiter,
        "the text is empty; expected a time column and one column per series, or rows of series, time and value",
    )?;
    if records.is_empty() {
        return Err(error(DataErrorKind::Empty, None, "the text has no rows"));
    }
    let layout = opts
        .layout
        .unwrap_or_else(|| detect_layout(&records, opts.header));
    match layout {
        Layout::Wide => parse_wide(&records, delimiter, opts),
        Layout::Long => parse_long(&records, delimiter, opts),
    }
}

/// Long when the first data row has three fields (and no row more), the
/// first a name rather than a time and the second a time.
fn detect_layout(records: &[Record], header: Option<bool>) -> Layout {
    let row = match header {
        Some(true) => records.get(1),
        Some(false) => records.first(),
        None => records.get(1).or(records.first()),
    };
    let width = records.iter().map(|r| r.fields.len()).max().unwrap_or(0);
    let long = row.is_some_and(|r| {
        let name = r.field(0).unwrap_or("");
        let t = r.field(1).unwrap_or("");
        width == 3 && !is_missing(name) && time::detect(name).is_none() && time::detect(t).is_some()
    });
    if long {
        Layout::Long
    } else {
        Layout::Wide
    }
}

/// `series "north": ` in front of a message.
fn in_series(name: &str, message: &str) -> String {
    format!("series {}: {message}", quote(name))
}

fn name_error(name: &str, mut e: DataError) -> DataError {
    e.message = in_series(name, &e.message);
    e
}

fn name_warnings(name: &str, series: &mut Series) {
    for w in &mut series.warnings {
        w.message = in_series(name, &w.message);
    }
}

fn parse_wide(
    records: &[Record],
    delimiter: u8,
    opts: &MultiOptions,
) -> Result<SeriesSet, DataError> {
    let first = &records[0];
    let width = records.iter().map(|r| r.fields.len()).max().unwrap_or(0);
    let has_header = opts.header.unwrap_or_else(|| {
        looks_like_header(first, Some(0), None, delimiter)
            || (1..width).any(|c| looks_like_header(first, None, Some(c), delimiter))
    });
    let columns: Vec<String> = (0..width)
        .map(|i| {
            let name = if has_header { first.field(i) } else { None };
            match name.map(str::trim) {
                Some(n) if !n.is_empty() => n.to_string(),
                _ => format!("column {}", i + 1),
            }
        })
        .collect();
    let data = &records[usize::from(has_header)..];
    if width < 2 {
        return Err(error(
            DataErrorKind::TooFewFields,
            data.first().or(records.first()).map(|r| r.line),
            format!(
                "expected a time column and at least one value column, found {width} column{}{}",
                if width == 1 { "" } else { "s" },
                delimiter_hint(delimiter, opts.delimiter.is_some())
            ),
        ));
    }
    let named = |c: usize| has_header && first.field(c).is_some_and(|n| !n.trim().is_empty());
    let mut seen: HashMap<String, usize> = HashMap::new();
    for (c, name) in columns.iter().enumerate().skip(1) {
        if let Some(earlier) = seen.insert(name.trim().to_lowercase(), c) {
            return Err(error(
                DataErrorKind::DuplicateSeries,
                Some(first.line),
                format!(
                    "columns {} and {} are both named {}; expected one column per series, each with its own name",
                    earlier + 1,
                    c + 1,
                    quote(name)
                ),
            ));
        }
    }
    let time_name = if named(0) {
        columns[0].clone()
    } else {
        "time".to_string()
    };

    // Rows and skipped lines per value column.
    let mut rows: Vec<Vec<Row>> = (0..width).map(|_| Vec::new()).collect();
    let mut skipped: Vec<Vec<usize>> = vec![Vec::new(); width];
    for r in data {
        let t = r.field(0).unwrap_or("");
        for c in 1..width {
            let v = r.field(c).unwrap_or("");
            if is_missing(v) {
                skipped[c].push(r.line);
            } else if is_missing(t) {
                return Err(error(
                    DataErrorKind::MissingTime,
                    Some(r.line),
                    in_series(
                        &columns[c],
                        &format!(
                            "the row has a value ({}) but no time; every value needs a time in column 1",
                            quote(v.trim())
                        ),
                    ),
                ));
            } else {
                rows[c].push(Row {
                    line: r.line,
                    time: t,
                    value: v,
                });
            }
        }
    }
    if data.is_empty() || rows.iter().all(Vec::is_empty) {
        return Err(error(
            DataErrorKind::NoData,
            None,
            "no data rows with a value; expected a time column and one column of values per series",
        ));
    }

    // One time kind and one decimal convention for the whole text.
    let all: Vec<Row> = rows.iter().flatten().copied().collect();
    let kind =
        time::detect(all[0].time).ok_or_else(|| super::bad_time(&all[0], None, &time_name))?;
    let dec = decide_decimal(&Rows::Slice(&all), kind, delimiter)?;

    let mut series = Vec::new();
    let mut warnings = Vec::new();
    for c in 1..width {
        let name = &columns[c];
        if rows[c].is_empty() {
            warnings.push(Warning::new(
                WarningCode::MissingValuesSkipped,
                format!(
                    "column {} ({}) has no values in any row and was left out",
                    c + 1,
                    quote(name)
                ),
            ));
            continue;
        }
        let meta = Meta {
            time_name: time_name.clone(),
            value_name: name.clone(),
            columns: columns.clone(),
            has_header,
            delimiter,
            value_col: c,
        };
        let mut s = build_series(&Rows::Slice(&rows[c]), &skipped[c], meta, Some(dec))
            .map_err(|e| name_error(name, e))?;
        name_warnings(name, &mut s);
        warnings.extend(s.warnings.iter().cloned());
        series.push(NamedSeries {
            name: name.clone(),
            series: s,
        });
    }
    Ok(SeriesSet {
        layout: Layout::Wide,
        series,
        warnings,
        columns,
        has_header,
        delimiter,
    })
}

fn parse_long(
    records: &[Record],
    delimiter: u8,
    opts: &MultiOptions,
) -> Result<SeriesSet, DataError> {
    let mut grouper = LongGrouper::new(delimiter, opts.header);
    let mut series = Vec::new();
    let mut take = |done: Option<PendingSeries>| -> Result<(), DataError> {
        match done.map(PendingSeries::build) {
            Some(Ok(s)) => series.push(s),
            Some(Err(f)) => return Err(f.error),
            None => {}
        }
        Ok(())
    };
    for r in records {
        let fields: Vec<&str> = r.fields.iter().map(String::as_str).collect();
        take(grouper.push(r.line, &fields)?)?;
    }
    take(grouper.finish())?;
    if series.is_empty() {
        return Err(error(
            DataErrorKind::NoData,
            None,
            "no data rows after the header; expected rows of series, time and value",
        ));
    }
    let warnings = series
        .iter()
        .flat_map(|s| s.series.warnings.iter().cloned())
        .collect();
    Ok(SeriesSet {
        layout: Layout::Long,
        series,
        warnings,
        columns: grouper.columns.clone(),
        has_header: grouper.has_header.unwrap_or(false),
        delimiter,
    })
}

/// A row of the long layout kept by the grouper (which outlives the text
/// of a line): its line and where its time and value end in the group's
/// `text` (each starts where the previous field ended).
struct KeptRow {
    line: usize,
    time_end: usize,
    value_end: usize,
}

/// The series being read.
struct Group {
    name: String,
    first_line: usize,
    last_line: usize,
    /// The raw time and value fields of the kept rows, one after another
    /// (one allocation per series rather than two per row).
    text: String,
    rows: Vec<KeptRow>,
    skipped: Vec<usize>,
    /// The first problem found; later rows of the series are only consumed.
    failure: Option<DataError>,
}

impl Group {
    fn fail(&mut self, e: DataError) {
        if self.failure.is_none() {
            self.failure = Some(e);
        }
        self.rows = Vec::new();
        self.text = String::new();
    }
}

/// Reads the long layout one record at a time and hands back each series
/// when its rows end (when a row names another series, or at
/// [`LongGrouper::finish`]), as a [`PendingSeries`] to [`build`](PendingSeries::build).
///
/// A problem inside one series (a bad value, a duplicate time, a series
/// that reappears) fails that series only: it comes back as a
/// [`SeriesFailure`] and reading goes on. A row without a series name
/// cannot be assigned to a series and stops the reading (`Err` from
/// [`LongGrouper::push`]).
pub struct LongGrouper {
    delimiter: u8,
    /// Whether a record has been seen (the first may be a header).
    started: bool,
    /// `None` until the first record decides it (when not given).
    has_header: Option<bool>,
    time_name: String,
    value_name: String,
    columns: Vec<String>,
    current: Option<Group>,
    /// Series already finished, with the line their rows ended on.
    ended: HashMap<String, usize>,
}

impl LongGrouper {
    /// `header`: whether the first record is a header; `None` detects it.
    pub fn new(delimiter: u8, header: Option<bool>) -> Self {
        LongGrouper {
            delimiter,
            started: false,
            has_header: header,
            time_name: "time".into(),
            value_name: "value".into(),
            columns: vec!["column 1".into(), "column 2".into(), "column 3".into()],
            current: None,
            ended: HashMap::new(),
        }
    }

    /// Whether the first record was a header (`None` before any record).
    pub fn has_header(&self) -> Option<bool> {
        self.has_header
    }

    /// Feeds one non-blank record (its line and its fields); returns the
    /// series this record ended, if any.
    pub fn push(
        &mut self,
        line: usize,
        fields: &[&str],
    ) -> Result<Option<PendingSeries>, DataError> {
        if !self.started {
            self.started = true;
            let record = Record {
                line,
                fields: fields.iter().map(|f| f.to_string()).collect(),
            };
            let header = *self.has_header.get_or_insert_with(|| {
                looks_like_header(&record, Some(1), Some(2), self.delimiter)
            });
            let named = |i: usize| {
                fields
                    .get(i)
                    .map(|f| f.trim())
                    .filter(|f| header && !f.is_empty())
            };
            self.columns = (0..3)
                .map(|i| named(i).map_or(format!("column {}", i + 1), str::to_string))
                .collect();
            if header {
                if let Some(t) = named(1) {
                    self.time_name = t.to_string();
                }
                if let Some(v) = named(2) {
                    self.value_name = v.to_string();
                }
                return Ok(None);
            }
        }
        let name = fields.first().map_or("", |f| f.trim());
        if name.is_empty() {
            return Err(error(
                DataErrorKind::MissingSeriesName,
                Some(line),
                "the row has no series name; expected series, time and value (the rows of each series together)",
            ));
        }
        let mut done = None;
        if self.current.as_ref().is_none_or(|g| g.name != name) {
            if let Some(g) = self.current.take() {
                done = Some(self.complete(g));
            }
            let mut g = Group {
                name: name.to_string(),
                first_line: line,
                last_line: line,
                text: String::new(),
                rows: Vec::new(),
                skipped: Vec::new(),
                failure: None,
            };
            if let Some(&ended) = self.ended.get(name) {
                g.fail(error(
                    DataErrorKind::SeriesNotContiguous,
                    Some(line),
                    in_series(
                        name,
                        &format!(
                            "its rows already ended on line {ended} and it reappears here; expected the rows of each series together (sort the file by series)"
                        ),
                    ),
                ));
            }
            self.current = Some(g);
        }
        let Some(g) = self.current.as_mut() else {
            return Ok(done);
        };
        g.last_line = line;
        if g.failure.is_some() {
            return Ok(done);
        }
        if fields.len() < 3 {
            g.fail(error(
                DataErrorKind::TooFewFields,
                Some(line),
                in_series(
                    name,
                    &format!(
                        "expected 3 fields (series, time, value), found {}{}",
                        fields.len(),
                        delimiter_hint(self.delimiter, false)
                    ),
                ),
            ));
            return Ok(done);
        }
        if let Some(extra) = fields[3..].iter().find(|f| !f.trim().is_empty()) {
            g.fail(error(
                DataErrorKind::TooManyFields,
                Some(line),
                in_series(
                    name,
                    &format!(
                        "expected 3 fields (series, time, value), found {} ({} in column 4)",
                        fields.len(),
                        quote(extra.trim())
                    ),
                ),
            ));
            return Ok(done);
        }
        let (t, v) = (fields[1], fields[2]);
        if is_missing(v) {
            g.skipped.push(line);
        } else if is_missing(t) {
            g.fail(error(
                DataErrorKind::MissingTime,
                Some(line),
                in_series(
                    name,
                    &format!(
                        "the row has a value ({}) but no time; every value needs a time in column 2",
                        quote(v.trim())
                    ),
                ),
            ));
        } else {
            g.text.push_str(t);
            let time_end = g.text.len();
            g.text.push_str(v);
            g.rows.push(KeptRow {
                line,
                time_end,
                value_end: g.text.len(),
            });
        }
        Ok(done)
    }

    /// Ends the input: returns the last series, if any.
    pub fn finish(&mut self) -> Option<PendingSeries> {
        let g = self.current.take()?;
        Some(self.complete(g))
    }

    fn complete(&mut self, g: Group) -> PendingSeries {
        self.ended.entry(g.name.clone()).or_insert(g.last_line);
        PendingSeries {
            meta: Meta {
                time_name: self.time_name.clone(),
                value_name: self.value_name.clone(),
                columns: self.columns.clone(),
                has_header: self.has_header.unwrap_or(false),
                delimiter: self.delimiter,
                value_col: 2,
            },
            group: g,
        }
    }
}

/// A series whose rows have all been seen but not yet validated and read
/// into numbers: [`PendingSeries::build`] does that, so a caller can do it
/// on another thread than the one reading the rows.
pub struct PendingSeries {
    group: Group,
    meta: Meta,
}

impl PendingSeries {
    /// The series' name.
    pub fn name(&self) -> &str {
        &self.group.name
    }

    /// Validates the rows and reads them into a series, as
    /// [`parse_series`](super::parse_series) would for a single series.
    pub fn build(self) -> Result<NamedSeries, SeriesFailure> {
        let PendingSeries { group: g, meta } = self;
        let fail = |error: DataError| SeriesFailure {
            name: g.name.clone(),
            first_line: g.first_line,
            error,
        };
        if let Some(e) = g.failure.clone() {
            return Err(fail(e));
        }
        let mut start = 0;
        let rows: Vec<Row> = g
            .rows
            .iter()
            .map(|r| {
                let row = Row {
                    line: r.line,
                    time: &g.text[start..r.time_end],
                    value: &g.text[r.time_end..r.value_end],
                };
                start = r.value_end;
                row
            })
            .collect();
        if rows.is_empty() {
            return Err(fail(error(
                DataErrorKind::NoData,
                Some(g.first_line),
                in_series(
                    &g.name,
                    &format!(
                        "none of its {} rows has a value; expected at least one",
                        g.skipped.len()
                    ),
                ),
            )));
        }
        match build_series(&Rows::Slice(&rows), &g.skipped, meta, None) {
            Ok(mut s) => {
                name_warnings(&g.name, &mut s);
                Ok(NamedSeries {
                    name: g.name.clone(),
                    series: s,
                })
            }
            Err(e) => Err(fail(name_error(&g.name, e))),
        }
    }
}

#[cfg(test)]
mod tests;
