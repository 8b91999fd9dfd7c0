//! `plateau batch`: every series of a long-format file (rows of series,
//! time, value), fitted in parallel on all cores with rayon, one result
//! line per series.
//!
//! Streaming: the file is read line by line and never held whole. Rows go
//! through the core's [`LongGrouper`], which hands back each series when
//! its rows end; so **the rows of a series must be contiguous** (a file
//! sorted or grouped by series). A series that reappears after another
//! began is reported as failed, naming the line where it reappears and the
//! line where its rows ended, and the run goes on.
//!
//! Order: results are printed **in input order**. Series are collected in
//! chunks of [`CHUNK`]; a chunk is fitted in parallel (rayon) while the
//! next one is read, then printed. Memory is bounded by two chunks
//! whatever the number of rows; the only thing kept for the whole run is
//! the set of series names already seen (to recognise a series that
//! reappears), a few dozen bytes per series.
//!
//! A series that cannot be read or fitted gets a result line with its
//! error; the rest go on. Only problems that make the rest of the file
//! unreadable stop the run: an I/O error, text that is not UTF-8, a row
//! without a series name (it cannot be assigned to a series), a quote not
//! closed on its line (CSV lets a quoted field run on over line breaks, so
//! where the next row starts is unknown; a line-by-line reader cannot tell
//! a field spanning lines from a stray quote). Such a line ends the reading
//! as the end of the file would: every series read before it, the one
//! whose rows were being read included, is still fitted and printed in
//! input order, and then the run fails ([`Stop::Input`]) naming the line,
//! why, and how many series the printed results cover.

use plateau_core::data::{
    sniff_delimiter, split_line, LongGrouper, NamedSeries, PendingSeries, SeriesFailure,
};
use plateau_core::fit::FitOptions;
use plateau_core::Model;
use plateau_study::numbers::Precision;
use plateau_study::report::{FitReport, CAUTION};
use plateau_study::request::Request;
use plateau_study::study::{Study, StudyError};
use plateau_study::summary::{csv_row, SeriesSummary, CSV_HEADER};
use rayon::prelude::*;
use serde::Serialize;
use std::fmt;
use std::io::{BufRead, Write};

/// Series per chunk: enough to keep every core busy between two reads,
/// small enough that two chunks of 50-point series stay within a few MB.
pub const CHUNK: usize = 2048;

/// Lines sampled for delimiter detection.
const SNIFF_LINES: usize = 10;

/// How the results are printed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Format {
    /// Fixed-width columns for people, the caution on top.
    Table,
    /// One JSON object per line (JSON Lines): the summary fields and the full fit report.
    Json,
    /// The summary CSV (header line first), as the page exports it.
    Csv,
}

/// What `batch` is asked to do.
#[derive(Debug, Clone)]
pub struct Options {
    pub model: Model,
    pub fit: FitOptions,
    pub delimiter: Option<u8>,
    pub header: Option<bool>,
    /// Sum per-period counts into running totals before fitting.
    pub per_period: bool,
    pub format: Format,
}

/// One series' outcome.
#[derive(Debug, Clone, Serialize)]
pub struct Outcome {
    #[serde(flatten)]
    pub summary: SeriesSummary,
    /// The full report (`plateau fit --json`'s shape), when there is a fit.
    pub fit: Option<FitReport>,
}

impl Outcome {
    pub fn failed(&self) -> bool {
        self.summary.error.is_some()
    }
}

/// Counts of a finished run.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Totals {
    pub series: usize,
    pub failed: usize,
}

/// Why the run stopped before the end of the input.
#[derive(Debug)]
pub enum Stop {
    /// Reading failed, or a line made the rest unreadable: the results of
    /// every series before it have been written; the message names the
    /// line, why, and what the results cover.
    Input(String),
    /// Writing the results failed (e.g. a closed pipe).
    Output(std::io::Error),
}

impl fmt::Display for Stop {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Stop::Input(m) => f.write_str(m),
            Stop::Output(e) => write!(f, "cannot write the results: {e}"),
        }
    }
}

/// Validates a series read by the grouper and fits it.
pub fn build_and_fit(pending: PendingSeries, opts: &Options) -> Outcome {
    fit_one(pending.build(), opts)
}

/// Fits one series (or reports why it has none).
pub fn fit_one(item: Result<NamedSeries, SeriesFailure>, opts: &Options) -> Outcome {
    let model = opts.model.name();
    match item {
        Err(f) => Outcome {
            summary: SeriesSummary::from_error(
                &f.name,
                model,
                Some(f.first_line),
                f.error.line,
                &f.error.to_string(),
                &[],
            ),
            fit: None,
        },
        Ok(ns) => {
            // The same study as `plateau fit` (per-period sums, the
            // "values decline" warning), one per series.
            let request = Request {
                fit: opts.fit.clone(),
                per_period: opts.per_period,
                per_period_hint: " (--per-period)".into(),
                models: Vec::new(),
                ..Request::new(opts.model)
            };
            let first_line = ns.series.lines.first().copied();
            let study = match Study::new(ns.series, request) {
                Ok(study) => study,
                Err(e) => {
                    let line = match &e {
                        StudyError::Input { line, .. } => *line,
                        StudyError::Fit(_) => None,
                    };
                    return Outcome {
                        summary: SeriesSummary::from_error(
                            &ns.name,
                            model,
                            Some(first_line.unwrap_or(0)),
                            line,
                            &e.to_string(),
                            &[],
                        ),
                        fit: None,
                    };
                }
            };
            match study.fitted() {
                Ok(f) => Outcome {
                    summary: SeriesSummary::from_fit(&ns.name, study.series(), f),
                    fit: Some(
                        FitReport::new(f, &study.series().warnings).with_time(study.series()),
                    ),
                },
                Err(e) => Outcome {
                    summary: SeriesSummary::from_error(
                        &ns.name,
                        model,
                        first_line,
                        None,
                        &e.to_string(),
                        &study.series().warnings,
                    ),
                    fit: None,
                },
            }
        }
    }
}

/// A line that made the rest of the input unreadable: where and why.
#[derive(Debug, Clone)]
struct Fatal {
    /// The line reading stopped at (the last line read, for an I/O error).
    line: usize,
    message: String,
}

/// Reads the input line by line and groups it into series.
///
/// A fatal line (see the module docs) ends the reading as the end of the
/// input would: the series read so far, the open one included, are still
/// handed back, and [`Reader::fatal`] says where and why it stopped.
struct Reader<R> {
    input: R,
    line_no: usize,
    buf: Vec<u8>,
    grouper: LongGrouper,
    delimiter: u8,
    /// Lines read for delimiter detection, not yet grouped; a line that
    /// could not be read ends the list.
    pending: std::collections::VecDeque<Result<(usize, String), Fatal>>,
    done: bool,
    fatal: Option<Fatal>,
    /// The series whose rows were being read when reading stopped.
    open: Option<String>,
}

impl<R: BufRead> Reader<R> {
    fn new(mut input: R, opts: &Options) -> Self {
        let mut line_no = 0;
        let mut buf = Vec::new();
        let mut pending = std::collections::VecDeque::new();
        let mut content = 0;
        while content < SNIFF_LINES {
            match next_line(&mut input, &mut buf, &mut line_no)
                .and_then(|more| more.then(|| line_text(&buf, line_no)).transpose())
            {
                Ok(None) => break,
                Ok(Some(text)) => {
                    content += usize::from(!text.trim().is_empty());
                    pending.push_back(Ok((line_no, text.to_string())));
                }
                Err(f) => {
                    pending.push_back(Err(f));
                    break;
                }
            }
        }
        let delimiter = match opts.delimiter {
            Some(d) => d,
            None => {
                let sample: Vec<&str> = pending
                    .iter()
                    .filter_map(|l| l.as_ref().ok().map(|(_, l)| l.as_str()))
                    .collect();
                sniff_delimiter(&sample.join("\n"))
            }
        };
        Reader {
            input,
            line_no,
            buf,
            grouper: LongGrouper::new(delimiter, opts.header),
            delimiter,
            pending,
            done: false,
            fatal: None,
            open: None,
        }
    }

    /// Up to `n` finished series (fewer only at the end of the input or
    /// after a fatal line), not yet validated ([`PendingSeries::build`]
    /// runs on the workers).
    fn next_chunk(&mut self, n: usize) -> Vec<PendingSeries> {
        let mut out = Vec::with_capacity(n);
        while out.len() < n && !self.done {
            match self.step() {
                Ok(done) => out.extend(done),
                Err(f) => {
                    self.done = true;
                    self.fatal = Some(f);
                    if let Some(last) = self.grouper.finish() {
                        self.open = Some(last.name().to_string());
                        out.push(last);
                    }
                }
            }
        }
        out
    }

    /// Reads and groups one line (or ends the input).
    fn step(&mut self) -> Result<Option<PendingSeries>, Fatal> {
        if let Some(line) = self.pending.pop_front() {
            let (line_no, text) = line?;
            return push_line(&mut self.grouper, line_no, &text, self.delimiter);
        }
        if next_line(&mut self.input, &mut self.buf, &mut self.line_no)? {
            let text = line_text(&self.buf, self.line_no)?;
            push_line(&mut self.grouper, self.line_no, text, self.delimiter)
        } else {
            self.done = true;
            Ok(self.grouper.finish())
        }
    }
}

/// Splits one line and feeds it to the grouper; blank rows are skipped.
fn push_line(
    grouper: &mut LongGrouper,
    line_no: usize,
    text: &str,
    delimiter: u8,
) -> Result<Option<PendingSeries>, Fatal> {
    let fatal = |e: plateau_core::data::DataError| Fatal {
        line: line_no,
        message: e.to_string(),
    };
    let owned;
    let fields: Vec<&str> = if text.contains('"') {
        owned = split_line(line_no, text, delimiter).map_err(fatal)?;
        owned.iter().map(String::as_str).collect()
    } else {
        text.split(char::from(delimiter)).collect()
    };
    // Rows of empty cells are what spreadsheets export for blank rows.
    if fields.iter().all(|f| f.trim().is_empty()) {
        return Ok(None);
    }
    grouper.push(line_no, &fields).map_err(fatal)
}

/// The text of the line in `buf` without its line end (and without a
/// byte-order mark on line 1).
fn line_text(buf: &[u8], line_no: usize) -> Result<&str, Fatal> {
    if line_no == 1 {
        if let Some(enc) = plateau_core::data::Utf16::detect(buf) {
            return Err(Fatal {
                line: line_no,
                message: format!(
                    "line 1: the file is {}; save it as UTF-8 (\"CSV UTF-8\" in a spreadsheet's Save As)",
                    enc.describe()
                ),
            });
        }
    }
    let text = std::str::from_utf8(buf)
        .map_err(|e| Fatal {
            line: line_no,
            message: format!(
                "line {line_no}: not UTF-8 text (bad byte at column {})",
                e.valid_up_to() + 1
            ),
        })?
        .trim_end_matches(['\n', '\r']);
    Ok(if line_no == 1 {
        text.strip_prefix('\u{feff}').unwrap_or(text)
    } else {
        text
    })
}

/// Reads the next line into `buf`; `false` at the end of the input.
fn next_line<R: BufRead>(
    input: &mut R,
    buf: &mut Vec<u8>,
    line_no: &mut usize,
) -> Result<bool, Fatal> {
    buf.clear();
    let n = input.read_until(b'\n', buf).map_err(|e| Fatal {
        line: *line_no + 1,
        message: format!("cannot read line {}: {e}", *line_no + 1),
    })?;
    if n == 0 {
        return Ok(false);
    }
    *line_no += 1;
    Ok(true)
}

/// Runs the batch: reads `input`, writes one result per series to `out`
/// in input order, and returns the counts.
pub fn run<R, W>(input: R, out: &mut W, opts: &Options) -> Result<Totals, Stop>
where
    R: BufRead + Send,
    W: Write,
{
    let mut reader = Reader::new(input, opts);
    let mut totals = Totals::default();
    match opts.format {
        Format::Table => {
            writeln!(out, "{CAUTION}").map_err(Stop::Output)?;
            writeln!(out, "{}", table_header()).map_err(Stop::Output)?;
        }
        Format::Csv => writeln!(out, "{CSV_HEADER}").map_err(Stop::Output)?,
        Format::Json => {}
    }
    let mut chunk = reader.next_chunk(CHUNK);
    while !chunk.is_empty() {
        let (outcomes, next) = rayon::join(
            || {
                std::mem::take(&mut chunk)
                    .into_par_iter()
                    .map(|item| build_and_fit(item, opts))
                    .collect::<Vec<_>>()
            },
            || reader.next_chunk(CHUNK),
        );
        for o in &outcomes {
            totals.series += 1;
            totals.failed += usize::from(o.failed());
            write_outcome(out, o, opts.format).map_err(Stop::Output)?;
        }
        out.flush().map_err(Stop::Output)?;
        chunk = next;
    }
    match reader.fatal {
        None => Ok(totals),
        Some(f) => Err(Stop::Input(stopped_at(&f, totals, reader.open.as_deref()))),
    }
}

/// The message for a run that a fatal line stopped: why, where, and what
/// of the input the printed results cover.
fn stopped_at(f: &Fatal, totals: Totals, open: Option<&str>) -> String {
    let line = f.line;
    let mut s =
        format!(
        "{}\nreading stopped at line {line}; nothing from that line on was read. The {} series \
         read before it {} above",
        f.message,
        totals.series,
        if totals.series == 1 { "is reported" } else { "are reported" }
    );
    if totals.failed > 0 {
        s.push_str(&format!(
            " ({} of them failed: their lines say why)",
            totals.failed
        ));
    }
    if let Some(name) = open {
        s.push_str(&format!(
            "; the last, {name:?}, was fitted on its rows before line {line} (any rows it has \
             after that line were not read)"
        ));
    }
    s.push('.');
    s
}

fn write_outcome<W: Write>(out: &mut W, o: &Outcome, format: Format) -> std::io::Result<()> {
    match format {
        Format::Json => {
            serde_json::to_writer(&mut *out, o)?;
            writeln!(out)
        }
        Format::Csv => writeln!(out, "{}", csv_row(&o.summary)),
        Format::Table => writeln!(out, "{}", table_row(&o.summary)),
    }
}

fn table_header() -> String {
    format!(
        "{:<20} {:>5}  {:<34} {:<32} {:<34} {:<30} {:<9} notes",
        "series",
        "n",
        "K [95% interval]",
        "r [95% interval]",
        "t0 [95% interval]",
        "10%→90% [95% interval]",
        "converged"
    )
}

/// `v [lo, hi]`, the interval at the estimate's digits (see
/// `plateau_study::numbers`); `time` for t0, a time on the data's axis.
fn with_interval(e: Option<plateau_study::summary::Estimate>, time: bool) -> String {
    let Some(e) = e else {
        return "-".into();
    };
    let d = Precision::of_interval(e.estimate, e.ci95);
    let show = |x: f64| if time { d.show_time(x) } else { d.show(x) };
    let v = show(e.estimate);
    match e.ci95 {
        Some([a, b]) => format!("{v} [{}, {}]", show(a), show(b)),
        None => v,
    }
}

fn table_row(s: &SeriesSummary) -> String {
    let notes = match &s.error {
        Some(e) => format!("FAILED: {e}"),
        None => {
            let codes: Vec<&str> = s.warnings.iter().map(|w| w.code.as_str()).collect();
            codes.join(" ")
        }
    };
    let t0 = match (&s.t0_date, with_interval(s.t0, true)) {
        (Some(d), t) if t != "-" => format!("{t} ({d})"),
        (_, t) => t,
    };
    format!(
        "{:<20} {:>5}  {:<34} {:<32} {:<34} {:<30} {:<9} {}",
        s.series,
        s.n.map_or("-".into(), |n| n.to_string()),
        with_interval(s.k, false),
        with_interval(s.r, false),
        t0,
        with_interval(s.duration_10_90, false),
        s.converged.map_or("-", |c| if c { "yes" } else { "no" }),
        notes
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    fn opts(format: Format) -> Options {
        Options {
            model: Model::Logistic,
            fit: FitOptions::default(),
            delimiter: None,
            header: None,
            per_period: false,
            format,
        }
    }

    /// More series than two chunks: results stay in input order across
    /// chunk boundaries. One-point series fail fast (too few points), which
    /// keeps the unoptimised test quick; the order is what is checked.
    #[test]
    fn order_is_kept_across_chunks() {
        let n = 2 * CHUNK + 17;
        let mut text = String::from("s;t;y\n");
        for i in 0..n {
            text.push_str(&format!("series {i};1;5\n"));
        }
        let mut out = Vec::new();
        let totals = run(text.as_bytes(), &mut out, &opts(Format::Csv)).unwrap();
        assert_eq!(
            totals,
            Totals {
                series: n,
                failed: n
            }
        );
        let out = String::from_utf8(out).unwrap();
        let names: Vec<&str> = out
            .lines()
            .skip(1)
            .map(|l| l.split(',').next().unwrap())
            .collect();
        let want: Vec<String> = (0..n).map(|i| format!("series {i}")).collect();
        assert_eq!(names, want);
    }

    #[test]
    fn line_numbers_count_blank_lines_and_the_byte_order_mark() {
        let text = "\u{feff}s,t,y\r\n\r\na,1,1\r\n\r\na,2,x\r\n";
        let mut out = Vec::new();
        run(text.as_bytes(), &mut out, &opts(Format::Json)).unwrap();
        let v: serde_json::Value = serde_json::from_slice(&out).unwrap();
        assert_eq!(v["error_line"], 5);
    }

    /// Bad UTF-8 stops the reading there; the series before it is still
    /// reported (here as failed: one point is too few).
    #[test]
    fn bad_utf8_stops_naming_the_line() {
        let mut bytes = b"s,t,y\na,1,1\na,2,".to_vec();
        bytes.extend([0xff, b'\n']);
        let mut out = Vec::new();
        let e = run(&bytes[..], &mut out, &opts(Format::Csv)).unwrap_err();
        let e = e.to_string();
        assert!(e.starts_with("line 3:"), "{e}");
        assert!(e.contains("The 1 series read before it is reported above (1 of them failed"));
        let out = String::from_utf8(out).unwrap();
        assert_eq!(out.lines().count(), 2, "{out}");
        assert!(out.lines().nth(1).unwrap().starts_with("a,"), "{out}");
    }
}
