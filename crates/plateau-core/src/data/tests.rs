//! Tests of data input: every accepted format, every refusal with the line
//! it names, and properties (no panics, round trips) over generated text.

use super::number::{self, parse_number, Decimal, NumError, Vote};
use super::*;
use proptest::prelude::*;

fn parse(text: &str) -> Result<Series, DataError> {
    parse_series(text, &ParseOptions::default())
}

fn ok(text: &str) -> Series {
    parse(text).unwrap_or_else(|e| panic!("{text:?}: {e}"))
}

fn err(text: &str) -> DataError {
    match parse(text) {
        Ok(s) => panic!("{text:?} parsed: {s:?}"),
        Err(e) => e,
    }
}

fn with(opts: ParseOptions, text: &str) -> Result<Series, DataError> {
    parse_series(text, &opts)
}

fn codes(s: &Series) -> Vec<WarningCode> {
    s.warnings.iter().map(|w| w.code).collect()
}

// ---- formats ---------------------------------------------------------------

#[test]
fn csv_with_header() {
    let s = ok("week,subscribers\n1,362\n2,451\n3,743\n");
    assert_eq!(s.time_kind, TimeKind::Number);
    assert_eq!(s.time_name, "week");
    assert_eq!(s.value_name, "subscribers");
    assert_eq!(s.columns, vec!["week", "subscribers"]);
    assert!(s.has_header);
    assert_eq!(s.delimiter, b',');
    assert!(!s.decimal_comma);
    assert_eq!(s.times, vec![1.0, 2.0, 3.0]);
    assert_eq!(s.values, vec![362.0, 451.0, 743.0]);
    assert_eq!(s.lines, vec![2, 3, 4]);
    assert!(s.warnings.is_empty());
}

#[test]
fn csv_without_header() {
    let s = ok("2019,1.5\n2020,2.25\n2021.5,-3e2\n");
    assert!(!s.has_header);
    assert_eq!(s.time_name, "time");
    assert_eq!(s.value_name, "value");
    assert_eq!(s.columns, vec!["column 1", "column 2"]);
    assert_eq!(s.times, vec![2019.0, 2020.0, 2021.5]);
    assert_eq!(s.values, vec![1.5, 2.25, -300.0]);
    assert_eq!(s.lines, vec![1, 2, 3]);
}

#[test]
fn tsv_pasted_from_a_spreadsheet_with_decimal_comma() {
    let s = ok("Monat\tUmsatz\n1\t1.234,5\n2\t2.000,25\n3\t7,5\n");
    assert_eq!(s.delimiter, b'\t');
    assert!(s.decimal_comma);
    assert_eq!(s.values, vec![1234.5, 2000.25, 7.5]);
    assert_eq!(s.value_name, "Umsatz");
}

#[test]
fn tsv_with_decimal_point_and_thousands() {
    let s = ok("t\tv\n1\t1,234.5\n2\t0.25\n");
    assert_eq!(s.delimiter, b'\t');
    assert!(!s.decimal_comma);
    assert_eq!(s.values, vec![1234.5, 0.25]);
}

#[test]
fn semicolon_with_decimal_comma() {
    let s = ok("jour;valeur\n0,5;12,5\n1;1 234,75\n1,5;-0,125\n");
    assert_eq!(s.delimiter, b';');
    assert!(s.decimal_comma);
    assert_eq!(s.times, vec![0.5, 1.0, 1.5]);
    assert_eq!(s.values, vec![12.5, 1234.75, -0.125]);
}

#[test]
fn ambiguous_numbers_follow_the_delimiter() {
    // Nothing decides: semicolon text reads a decimal comma, tab text a point.
    assert_eq!(ok("1;1,234\n2;2,5\n").values, vec![1.234, 2.5]);
    assert_eq!(ok("1;1.234\n2;2.500\n").values, vec![1234.0, 2500.0]);
    assert_eq!(ok("1\t1.234\n2\t2.500\n").values, vec![1.234, 2.5]);
    assert_eq!(ok("1\t1,234\n2\t2,500\n").values, vec![1234.0, 2500.0]);
}

#[test]
fn csv_comma_is_never_a_decimal_mark() {
    let s = ok("t,v\n1,\"1,234\"\n2,\"12,345,678.5\"\n");
    assert_eq!(s.values, vec![1234.0, 12_345_678.5]);
    let e = err("t,v\n1,5\n2,\"2,5\"\n");
    assert_eq!(e.kind, DataErrorKind::BadValue);
    assert_eq!(e.line, Some(3));
    assert!(e.message.contains("comma"), "{e}");
}

#[test]
fn quoted_fields_and_explicit_delimiter() {
    let s = ok("\"time\",\"value, in units\"\n\"1\",\"10\"\n\"2\",\"20\"\n");
    assert_eq!(s.value_name, "value, in units");
    assert_eq!(s.values, vec![10.0, 20.0]);
    let opts = ParseOptions {
        delimiter: Some(b'|'),
        ..ParseOptions::default()
    };
    let s = with(opts, "t|v\n1|2,5\n2|3,5\n").unwrap();
    assert_eq!(s.delimiter, b'|');
    assert_eq!(s.values, vec![2.5, 3.5]);
}

#[test]
fn bom_crlf_and_blank_lines_keep_true_line_numbers() {
    let s = ok("\u{feff}t,v\r\n\r\n1,10\r\n\r\n\r\n2,20\r\n,\r\n3,30\r\n");
    assert_eq!(s.time_name, "t");
    assert_eq!(s.lines, vec![3, 6, 8]);
    assert_eq!(s.values, vec![10.0, 20.0, 30.0]);
    let e = err("\u{feff}t,v\r\n\r\n1,10\r\n\r\n   \r\n2,oops\r\n");
    assert_eq!(e.line, Some(6));
    assert_eq!(e.kind, DataErrorKind::BadValue);
    let e = err("\n\n\nt,v\n\n1,10\n\n2,x\n");
    assert_eq!(e.line, Some(8), "{e}");
}

#[test]
fn quoted_newline_does_not_shift_later_lines() {
    let s = ok("t,v,note\n1,10,\"two\nlines\"\n2,20,x\n3,y,z\n"
        .replace("3,y,z\n", "")
        .as_str());
    assert_eq!(s.lines, vec![2, 4]);
    let e = err("t,v,note\n1,10,\"two\nlines\"\n2,20,x\n3,y,z\n");
    assert_eq!(e.line, Some(5));
}

#[test]
fn header_option_overrides_detection() {
    let yes = ParseOptions {
        header: Some(true),
        ..ParseOptions::default()
    };
    let s = with(yes, "1,2\n3,4\n5,6\n").unwrap();
    assert!(s.has_header);
    assert_eq!(s.time_name, "1");
    assert_eq!(s.times, vec![3.0, 5.0]);
    let no = ParseOptions {
        header: Some(false),
        ..ParseOptions::default()
    };
    let e = with(no, "t,v\n1,2\n").unwrap_err();
    assert_eq!(e.kind, DataErrorKind::BadTime);
    assert_eq!(e.line, Some(1));
}

#[test]
fn header_detected_from_value_field_alone() {
    let s = ok("2019,sales\n2020,5\n2021,6\n");
    assert!(s.has_header);
    assert_eq!(s.value_name, "sales");
    // A missing value on the first row is data, not a header.
    let s = ok("1,NA\n2,5\n3,6\n");
    assert!(!s.has_header);
    assert_eq!(s.lines, vec![2, 3]);
}

#[test]
fn columns_by_index_and_name() {
    let text = "Date , Region, Sales \n2024-01-01,north,10\n2024-02-01,north,20\n";
    let s = ok(text.replace(",north", "").as_str());
    assert_eq!(s.values, vec![10.0, 20.0]);
    let opts = ParseOptions {
        value_column: Some(ColumnRef::Name("  sales ".into())),
        ..ParseOptions::default()
    };
    let s = with(opts, text).unwrap();
    assert_eq!(s.columns, vec!["Date", "Region", "Sales"]);
    assert_eq!(s.time_name, "Date");
    assert_eq!(s.value_name, "Sales");
    assert_eq!(s.values, vec![10.0, 20.0]);
    let opts = ParseOptions {
        time_column: Some(ColumnRef::Index(2)),
        value_column: Some(ColumnRef::Index(0)),
        ..ParseOptions::default()
    };
    let s = with(opts, "a,b,c\n7,x,1\n8,y,2\n").unwrap();
    assert_eq!(s.times, vec![1.0, 2.0]);
    assert_eq!(s.values, vec![7.0, 8.0]);
    assert_eq!(s.time_name, "c");
}

#[test]
fn unknown_column_lists_the_columns() {
    let opts = ParseOptions {
        value_column: Some(ColumnRef::Name("revenue".into())),
        ..ParseOptions::default()
    };
    let e = with(opts, "week,subscribers\n1,2\n").unwrap_err();
    assert_eq!(e.kind, DataErrorKind::UnknownColumn);
    assert!(e.message.contains("\"week\", \"subscribers\""), "{e}");
    let opts = ParseOptions {
        time_column: Some(ColumnRef::Index(5)),
        ..ParseOptions::default()
    };
    let e = with(opts, "1,2,3\n4,5,6\n").unwrap_err();
    assert_eq!(e.kind, DataErrorKind::UnknownColumn);
    assert!(e.message.contains("no column 6"), "{e}");
    assert!(
        e.message
            .contains("\"column 1\", \"column 2\", \"column 3\""),
        "{e}"
    );
    let opts = ParseOptions {
        header: Some(false),
        value_column: Some(ColumnRef::Name("column 2".into())),
        ..ParseOptions::default()
    };
    let e = with(opts, "1,2\n").unwrap_err();
    assert_eq!(e.kind, DataErrorKind::UnknownColumn);
    assert!(e.message.contains("no header"), "{e}");
}

#[test]
fn invalid_options() {
    let opts = ParseOptions {
        value_column: Some(ColumnRef::Index(0)),
        ..ParseOptions::default()
    };
    assert_eq!(
        with(opts, "1,2\n").unwrap_err().kind,
        DataErrorKind::InvalidOptions
    );
    for d in [b'"', b'\n', b'a', 0xC3] {
        let opts = ParseOptions {
            delimiter: Some(d),
            ..ParseOptions::default()
        };
        assert_eq!(
            with(opts, "1,2\n").unwrap_err().kind,
            DataErrorKind::InvalidOptions
        );
    }
}

#[test]
fn too_few_fields_names_line_and_count() {
    let e = err("t,v\n1,10\n\n2\n3,30\n");
    assert_eq!(e.kind, DataErrorKind::TooFewFields);
    assert_eq!(e.line, Some(4));
    assert!(e.message.contains("at least 2 fields"), "{e}");
    assert!(e.message.contains("found 1"), "{e}");
    let e = err("\n1\n2\n");
    assert_eq!(e.kind, DataErrorKind::TooFewFields);
    assert_eq!(e.line, Some(2));
    let opts = ParseOptions {
        value_column: Some(ColumnRef::Index(2)),
        ..ParseOptions::default()
    };
    let e = with(opts, "1,x,3\n2,y\n").unwrap_err();
    assert_eq!(e.kind, DataErrorKind::TooFewFields);
    assert_eq!(e.line, Some(2));
    assert!(e.message.contains("at least 3 fields"), "{e}");
}

#[test]
fn title_line_above_the_table_is_read_as_header() {
    let s = ok("Subscribers by week\n1,10\n2,20\n");
    assert!(s.has_header);
    assert_eq!(s.time_name, "Subscribers by week");
    assert_eq!(s.value_name, "value");
    assert_eq!(s.columns, vec!["Subscribers by week", "column 2"]);
}

// ---- times -----------------------------------------------------------------

/// Days between two ISO dates by chrono's calendar arithmetic (the
/// outside reference for every calendar count below).
fn days_between(a: &str, b: &str) -> f64 {
    let d = |s: &str| chrono::NaiveDate::parse_from_str(s, "%Y-%m-%d").unwrap();
    d(b).signed_duration_since(d(a)).num_days() as f64
}

#[test]
fn daily_dates_count_days_since_2000() {
    let s = ok("date,share\n2019-01-01,13.8\n2019-03-02,15.7\n2020-03-01,16\n2020-12-31,17\n");
    assert_eq!(s.time_kind, TimeKind::Date);
    assert_eq!(s.axis.period(), Some(Period::Day));
    let want: Vec<f64> = ["2019-01-01", "2019-03-02", "2020-03-01", "2020-12-31"]
        .iter()
        .map(|d| days_between("2000-01-01", d))
        .collect();
    assert_eq!(s.times, want);
    assert_eq!(s.axis.format(s.times[1]), "2019-03-02");
    assert_eq!(s.axis.format(s.times[3]), "2020-12-31");
    // Half a day past the last day rounds into the next year.
    assert_eq!(s.axis.format(s.times[3] + 0.6), "2021-01-01");
    assert_eq!(s.time_unit(), "day");
    assert_eq!(s.time_origin().as_deref(), Some("2000-01-01"));
}

#[test]
fn month_start_and_month_end_dates_count_months() {
    // Month-start dates (the demo tariff file's form).
    let s = ok("date,v\n2023-11-01,1\n2023-12-01,2\n2024-01-01,3\n2024-03-01,4\n");
    assert_eq!(s.axis.period(), Some(Period::Month));
    // month index = 12·(year − 2000) + month − 1.
    assert_eq!(s.times, vec![286.0, 287.0, 288.0, 290.0]);
    assert_eq!(s.time_unit(), "month");
    assert_eq!(s.time_origin().as_deref(), Some("2000-01-01"));
    // Between grid points the text is the nearest month start, never a mid-month day.
    assert_eq!(s.axis.format(289.4), "2024-02-01");
    assert_eq!(s.axis.format(292.0), "2024-05-01");
    // Month ends stay on month ends, leap February included.
    let e = ok("date,v\n2023-11-30,1\n2023-12-31,2\n2024-01-31,3\n2024-02-29,4\n");
    assert_eq!(e.axis.period(), Some(Period::Month));
    assert_eq!(e.times, vec![286.0, 287.0, 288.0, 289.0]);
    assert_eq!(e.axis.format(290.0), "2024-03-31");
    assert_eq!(e.axis.format(291.0), "2024-04-30");
    assert_eq!(e.axis.format(301.0), "2025-02-28");
    assert_eq!(e.time_origin().as_deref(), Some("2000-01-31"));
    // A date between two month ends sits between them in proportion to
    // the days (chrono: 2024-03-15 is 15 of the 31 days after 2024-02-29).
    let t = e.axis.parse_time("2024-03-15").unwrap();
    assert!((t - (289.0 + 15.0 / 31.0)).abs() < 1e-12, "{t}");
}

#[test]
fn quarterly_and_yearly_dates_count_quarters_and_years() {
    let s = ok("date,v\n2023-03-31,1\n2023-06-30,2\n2023-09-30,3\n2024-03-31,4\n");
    assert_eq!(s.axis.period(), Some(Period::Quarter));
    // Quarters since the quarter of 2000-03-31.
    assert_eq!(s.times, vec![92.0, 93.0, 94.0, 96.0]);
    assert_eq!(s.axis.format(95.0), "2023-12-31");
    assert_eq!(s.axis.format(97.0), "2024-06-30");
    assert_eq!(s.time_unit(), "quarter");
    assert_eq!(s.time_origin().as_deref(), Some("2000-03-31"));
    let y = ok("date,v\n2015-12-31,1\n2016-12-31,2\n2018-12-31,4\n");
    assert_eq!(y.axis.period(), Some(Period::Year));
    assert_eq!(y.times, vec![15.0, 16.0, 18.0]);
    assert_eq!(y.axis.format(17.0), "2017-12-31");
    assert_eq!(y.time_unit(), "year");
}

#[test]
fn months_quarters_and_iso_weeks() {
    let s = ok("m;v\n2023-11;1\n2023-12;2\n2024-01;3\n");
    assert_eq!(s.time_kind, TimeKind::Month);
    assert_eq!(s.times, vec![286.0, 287.0, 288.0]);
    assert_eq!(s.axis.format(s.times[1]), "2023-12");
    assert_eq!(s.axis.format(294.49), "2024-07");
    assert_eq!(s.time_unit(), "month");
    assert_eq!(s.time_origin().as_deref(), Some("2000-01"));
    let s = ok("q,v\n2024Q3,1\n2024-q4,2\n2025 Q1,3\n");
    assert_eq!(s.time_kind, TimeKind::Quarter);
    // quarter index = 4·(year − 2000) + quarter − 1.
    assert_eq!(s.times, vec![98.0, 99.0, 100.0]);
    assert_eq!(s.axis.format(98.0), "2024Q3");
    assert_eq!(s.axis.format(99.6), "2025Q1");
    assert_eq!(s.time_unit(), "quarter");
    assert_eq!(s.time_origin().as_deref(), Some("2000Q1"));
    // ISO weeks: 2021-W01 starts on Monday 2021-01-04, 2020 has 53 weeks.
    let w = ok("week,v\n2020-W52,1\n2020W53,2\n2021-w01,3\n");
    assert_eq!(w.time_kind, TimeKind::Week);
    let weeks = days_between("2000-01-03", "2021-01-04") / 7.0;
    assert_eq!(w.times, vec![weeks - 2.0, weeks - 1.0, weeks]);
    assert_eq!(w.axis.format(weeks + 1.0), "2021-W02");
    assert_eq!(w.time_unit(), "week");
    assert_eq!(w.time_origin().as_deref(), Some("2000-W01"));
    let e = err("week,v\n2021-W01,1\n2021-W54,2\n");
    assert_eq!(e.line, Some(3));
    assert!(e.message.contains("not a real ISO week"), "{e}");
}

#[test]
fn weekly_dates_count_weeks_on_their_weekday() {
    // Sundays, a week apart (and one gap of two weeks).
    let s = ok("date,v\n2024-01-07,1\n2024-01-14,2\n2024-01-28,3\n");
    assert_eq!(s.axis.period(), Some(Period::Week));
    let first = days_between("2000-01-09", "2024-01-07") / 7.0;
    assert_eq!(s.times, vec![first, first + 1.0, first + 3.0]);
    assert_eq!(s.axis.format(first + 2.0), "2024-01-21");
    assert_eq!(s.time_origin().as_deref(), Some("2000-01-09"));
}

#[test]
fn numbers_keep_their_values_and_take_the_header_as_unit() {
    let s = ok("week,v\n1,5\n2,7\n");
    assert_eq!(s.times, vec![1.0, 2.0]);
    assert_eq!(s.axis.period(), None);
    assert_eq!(s.time_unit(), "week");
    assert_eq!(s.time_origin(), None);
    assert_eq!(ok("1,5\n2,7\n").time_unit(), "");
}

#[test]
fn number_format_is_short() {
    let n = TimeAxis::NUMBER;
    assert_eq!(n.format(14.0), "14");
    assert_eq!(n.format(2021.25), "2021.25");
    assert_eq!(n.format(13.9876543), "13.9877");
    assert_eq!(n.format(-0.000123456789), "-0.000123457");
    assert_eq!(n.format(1234567.0), "1234570");
    assert_eq!(n.format(3.2e-7), "3.2e-7");
    assert_eq!(n.format(0.0), "0");
    assert_eq!(n.format(f64::NAN), "NaN");
    assert_eq!(n.unit(), "");
    // Calendar axes fall back to numbers far outside the calendar.
    let d = ok("d,v\n2020-01-01,1\n").axis;
    assert_eq!(d.format(1e12), "1e12");
    assert_eq!(ok("m,v\n2020-01,1\n").axis.format(f64::INFINITY), "inf");
}

#[test]
fn calendar_ticks_fall_on_boundaries() {
    // Month data over three years: year (or half-year) starts only.
    let s = ok("m,v\n2021-01,1\n2021-02,2\n");
    let ticks = s.axis.ticks(250.0, 290.0, 6).unwrap();
    assert!(!ticks.is_empty() && ticks.len() <= 6, "{ticks:?}");
    for t in &ticks {
        assert_eq!(t.fract(), 0.0);
        let text = s.axis.format(*t);
        assert!(text.ends_with("-01") || text.ends_with("-07"), "{text}");
    }
    // Month-end data tick on year ends.
    let e = ok("d,v\n2021-01-31,1\n2021-02-28,2\n");
    for t in e.axis.ticks(250.0, 290.0, 4).unwrap() {
        assert!(e.axis.format(t).ends_with("-12-31"), "{}", e.axis.format(t));
    }
    // Daily data over two years: month starts or coarser.
    let d = ok("d,v\n2021-01-01,1\n2021-01-02,2\n");
    let lo = days_between("2000-01-01", "2021-01-01");
    let ticks = d.axis.ticks(lo, lo + 730.0, 8).unwrap();
    assert!(!ticks.is_empty() && ticks.len() <= 8);
    for t in ticks {
        assert!(d.axis.format(t).ends_with("-01"), "{}", d.axis.format(t));
    }
    assert_eq!(TimeAxis::NUMBER.ticks(0.0, 10.0, 5), None);
}

#[test]
fn mixed_time_formats() {
    let e = err("d,v\n2024-01-05,1\n2024-02-05,2\n2024-03,3\n");
    assert_eq!(e.kind, DataErrorKind::MixedTimeFormats);
    assert_eq!(e.line, Some(4));
    assert!(e.message.contains("a year-month"), "{e}");
    assert!(e.message.contains("YYYY-MM-DD"), "{e}");
    let e = err("t,v\n1,1\n2024Q1,2\n");
    assert_eq!(e.kind, DataErrorKind::MixedTimeFormats);
    assert_eq!(e.line, Some(3));
    assert!(e.message.contains("a quarter"), "{e}");
}

#[test]
fn bad_times() {
    let e = err("t,v\n1,1\nlater,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(3)));
    assert!(e.message.contains("\"later\""), "{e}");
    let e = err("t,v\n31/01/2024,1\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(2)));
    assert!(e.message.contains("YYYY-MM-DD"), "{e}");
    let e = err("t,v\n2023-02-28,1\n2023-02-29,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(3)));
    let e = err("t,v\n2023-12,1\n2023-13,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(3)));
    let e = err("t,v\n2023Q4,1\n2023Q5,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(3)));
    // A decimal comma in a comma-separated time column is no time.
    let e = err("t,v\n1,1\n\"1,5\",2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadTime, Some(3)));
}

#[test]
fn times_out_of_range() {
    let e = err("t,v\n1,1\n1e10,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::TimeOutOfRange, Some(3)));
    let e = err("t,v\n1e400,1\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::TimeOutOfRange, Some(2)));
    let e = err("t,v\n1,1\n-inf,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::TimeOutOfRange, Some(3)));
    assert!(ok("t,v\n-1e9,1\n1e9,2\n").times == vec![-1e9, 1e9]);
}

#[test]
fn missing_time_is_an_error() {
    let e = err("t,v\n1,1\n,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::MissingTime, Some(3)));
    let e = err("t,v\n1,1\nNA,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::MissingTime, Some(3)));
}

#[test]
fn repeated_times_are_replicates_kept_with_a_counted_warning() {
    // `1` and `1.0` are one time; 2024Q1 and 2024-q1 too.
    let s = ok("t,v\n1,1\n2,2\n\n1.0,3\n3,4\n3,5\n3,6\n");
    assert_eq!(s.times, [1.0, 2.0, 1.0, 3.0, 3.0, 3.0]);
    assert_eq!(s.values, [1.0, 2.0, 3.0, 4.0, 5.0, 6.0]);
    assert_eq!(s.lines, [2, 3, 5, 6, 7, 8]);
    let w = s
        .warnings
        .iter()
        .find(|w| w.code == WarningCode::ReplicateTimes)
        .expect("replicate warning");
    // Times 1 (2 rows) and 3 (3 rows): 2 times, 5 rows.
    assert!(
        w.message.starts_with(
            "2 times carry more than one value (5 rows at them, e.g. 1 on lines 2 and 5)"
        ),
        "{}",
        w.message
    );
    assert_eq!(WarningCode::ReplicateTimes.as_str(), "replicate_times");
    let s = ok("q,v\n2024Q1,1\n2024-q1,2\n2024Q2,3\n");
    assert_eq!(codes(&s), [WarningCode::ReplicateTimes]);
    assert!(
        s.warnings[0].message.starts_with(
            "1 time carries more than one value (2 rows at it, e.g. 2024Q1 on lines 2 and 3)"
        ),
        "{}",
        s.warnings[0].message
    );
    // Distinct times: no warning.
    assert!(codes(&ok("t,v\n1,1\n1.0000001,2\n")).is_empty());
}

#[test]
fn per_period_and_increments_refuse_replicates_naming_both_lines() {
    let s = ok("week,new\n1,5\n2,7\n\n2,8\n3,9\n");
    let e = per_period_totals(&s).unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::DuplicateTime, Some(5)));
    assert!(
        e.message.contains("time \"2\" also appears on line 3"),
        "{e}"
    );
    assert!(e.message.contains("running totals"), "{e}");
    let e = check_increments(&s).unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::DuplicateTime, Some(5)));
    assert!(e.message.contains("increments"), "{e}");
    // The fit refuses increments with repeated times too, naming the lines
    // through the series and the observations through the bare data.
    let opts = crate::fit::FitOptions {
        increments: true,
        ..Default::default()
    };
    let e = crate::fit::fit(&s, crate::Model::Logistic, &opts).unwrap_err();
    assert_eq!(e.kind, crate::fit::FitErrorKind::NotApplicable);
    assert!(
        e.message
            .starts_with("line 5: time \"2\" also appears on line 3"),
        "{e}"
    );
    let (t, y) = (
        [1.0, 2.0, 3.0, 2.0, 4.0, 5.0],
        [1.0, 3.0, 6.0, 4.0, 8.0, 9.0],
    );
    let e = crate::fit::fit_xy(&t, &y, crate::Model::Logistic, &opts).unwrap_err();
    assert!(e.message.contains("observations 2 and 4"), "{e}");
    // Without repeats: the running totals, in the order given.
    let s = ok("week,new\n1,5\n2,7\n3,9\n");
    assert_eq!(per_period_totals(&s).unwrap(), [5.0, 12.0, 21.0]);
    assert!(check_increments(&s).is_ok());
}

#[test]
fn unsorted_rows_warn_and_keep_input_order() {
    let s = ok("t,v\n1,10\n3,30\n2,20\n4,40\n");
    assert_eq!(s.times, vec![1.0, 3.0, 2.0, 4.0]);
    assert_eq!(s.lines, vec![2, 3, 4, 5]);
    assert_eq!(codes(&s), vec![WarningCode::RowsUnsorted]);
    assert!(s.warnings[0].message.contains("line 4"), "{:?}", s.warnings);
    let s = ok("d,v\n2024-02-01,1\n2024-01-01,2\n");
    assert!(
        s.warnings[0].message.contains("2024-01-01"),
        "{:?}",
        s.warnings
    );
}

// ---- values ----------------------------------------------------------------

#[test]
fn missing_values_are_skipped_with_one_warning() {
    let s = ok("t,v\n1,10\n2,20\n3,\n4,40\n5,NA\n6,n/a\n7,#N/A\n8,-\n9,.\n10,null\n11,NaN\n12,N/A\n13,130\n");
    assert_eq!(s.times, vec![1.0, 2.0, 4.0, 13.0]);
    assert_eq!(codes(&s), vec![WarningCode::MissingValuesSkipped]);
    assert_eq!(
        s.warnings[0].message,
        "9 rows with no value were left out (lines 4, 6, 7, 8, 9, 10, 11, 12, 13)"
    );
    let s = ok("t,v\n1,10\n2,20\n3,na\n\n4,40\n5,\n");
    assert_eq!(
        s.warnings[0].message,
        "2 rows with no value were left out (lines 4, 7)"
    );
    let s = ok("t,v\n1,10\n2,\n3,30\n");
    assert_eq!(
        s.warnings[0].message,
        "1 row with no value was left out (line 3)"
    );
}

#[test]
fn many_missing_values_are_listed_briefly() {
    let mut text = String::from("t,v\n0,1\n0.5,2\n");
    for i in 1..=30 {
        text.push_str(&format!("{i},NA\n"));
    }
    let s = ok(&text);
    assert!(s.warnings[0].message.starts_with("30 rows"));
    assert!(
        s.warnings[0].message.ends_with("and 10 more)"),
        "{}",
        s.warnings[0].message
    );
}

#[test]
fn bad_and_absurd_values() {
    let e = err("t,v\n1,10\n2,ten\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadValue, Some(3)));
    assert!(e.message.contains("\"ten\""), "{e}");
    assert!(e.message.contains("expected a number"), "{e}");
    let e = err("t,v\n1,10\n2,1e301\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::ValueOutOfRange, Some(3)));
    let e = err("t,v\n1,inf\n2,1\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::ValueOutOfRange, Some(2)));
    let e = err("t;v\n1;1,5\n2;1.0.0\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadValue, Some(3)));
}

#[test]
fn decimal_conflict_names_the_minority() {
    let e = err("t;v\n1;1,5\n2;2,5\n3;3.5\n4;4,5\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::DecimalConflict, Some(4)));
    assert!(e.message.contains("decimal point"), "{e}");
    let e = err("t\tv\n1\t1.5\n2\t2,5\n3\t3.5\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::DecimalConflict, Some(3)));
    // The time column votes too when it holds numbers.
    let e = err("t;v\n0,5;1,5\n1,5;2,5\n2.5;3\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::DecimalConflict, Some(4)));
}

#[test]
fn no_data() {
    let e = err("");
    assert_eq!((e.kind, e.line), (DataErrorKind::Empty, None));
    let e = err("\u{feff}  \r\n\n\t\n");
    assert_eq!(e.kind, DataErrorKind::Empty);
    let e = err("t,v\n");
    assert_eq!(e.kind, DataErrorKind::NoData);
    let e = err("t,v\n\n,,\n");
    assert_eq!(e.kind, DataErrorKind::NoData);
    let e = err("t,v\n1,NA\n2,\n");
    assert_eq!(e.kind, DataErrorKind::NoData);
    assert!(e.message.contains("none of the 2"), "{e}");
}

#[test]
fn one_row_is_enough_for_the_parser() {
    let s = ok("5,7\n");
    assert_eq!((s.times.clone(), s.values.clone()), (vec![5.0], vec![7.0]));
}

#[test]
fn errors_display_with_line_and_are_std_errors() {
    let e = err("t,v\n1,x\n");
    assert_eq!(e.to_string(), format!("line 2: {}", e.message));
    let e: Box<dyn std::error::Error> = Box::new(err(""));
    assert!(!e.to_string().starts_with("line"));
}

#[test]
fn cumulate_is_a_running_sum() {
    assert_eq!(cumulate(&[]), Vec::<f64>::new());
    assert_eq!(cumulate(&[3.0, 1.0, 0.0, 2.5]), vec![3.0, 4.0, 4.0, 6.5]);
}

#[test]
fn delimiter_detection_ignores_quoted_delimiters() {
    assert_eq!(
        ok("t,v\n1,\"a;b\"\n".replace("\"a;b\"", "2").as_str()).delimiter,
        b','
    );
    let s = ok("t,v,note\n1,2,\"x;y;z\"\n2,3,\"p;q\"\n");
    assert_eq!(s.delimiter, b',');
    assert_eq!(s.columns.len(), 3);
}

// ---- number.rs -------------------------------------------------------------

#[test]
fn numbers_as_people_write_them() {
    let p = |s| parse_number(s, Decimal::Point);
    let c = |s| parse_number(s, Decimal::Comma);
    assert_eq!(p("1,234,567.5"), Ok(1_234_567.5));
    assert_eq!(p("-1 234.5"), Ok(-1234.5));
    assert_eq!(p("\u{2212}2.5e3"), Ok(-2500.0));
    assert_eq!(p("+.5"), Ok(0.5));
    assert_eq!(p("1'234"), Ok(1234.0));
    assert_eq!(c("1.234,5"), Ok(1234.5));
    assert_eq!(c("1\u{a0}234,5"), Ok(1234.5));
    assert_eq!(c("1,5E-2"), Ok(0.015));
    assert_eq!(p("1,23"), Err(NumError::Invalid));
    assert_eq!(
        p("0,123"),
        Err(NumError::Invalid),
        "0,123 never groups thousands"
    );
    assert_eq!(c("0.123"), Err(NumError::Invalid));
    assert_eq!(p("1e"), Err(NumError::Invalid));
    assert_eq!(p("."), Err(NumError::Invalid));
    assert_eq!(p("Infinity"), Err(NumError::NotFinite));
    assert_eq!(p("2e300"), Err(NumError::NotFinite));
    assert_eq!(number::vote("1,5"), Vote::Comma);
    assert_eq!(number::vote("1,234"), Vote::Neither);
    assert_eq!(number::vote("1,234,567"), Vote::Point);
    assert_eq!(number::vote("1.234,5"), Vote::Comma);
    assert_eq!(number::vote("0.123"), Vote::Point);
}

// ---- properties ------------------------------------------------------------

/// Some option combinations, including wrong ones.
fn options() -> impl Strategy<Value = ParseOptions> {
    let delim = prop::option::of(prop::sample::select(vec![
        b',', b';', b'\t', b'|', b'"', 0xFF,
    ]));
    let header = prop::option::of(any::<bool>());
    let col = prop::option::of(prop_oneof![
        (0usize..4).prop_map(ColumnRef::Index),
        Just(ColumnRef::Index(usize::MAX)),
        "[a-zA-Z ]{0,6}".prop_map(ColumnRef::Name),
    ]);
    (delim, header, col.clone(), col).prop_map(|(delimiter, header, time_column, value_column)| {
        ParseOptions {
            delimiter,
            header,
            time_column,
            value_column,
        }
    })
}

/// Text made of the pieces that matter to the parser, so the generator
/// reaches deep paths more often than uniformly random strings do.
fn table_like() -> impl Strategy<Value = String> {
    let piece = prop::sample::select(vec![
        ",", ";", "\t", "\n", "\r\n", "\"", " ", "-", ".", "1", "2024", "-01", "-02-29", "Q3",
        "NA", "1e309", "1,5", "\u{feff}", "é", "0", "9", "e",
    ]);
    prop::collection::vec(piece, 0..40).prop_map(|v| v.concat())
}

/// Writes `rows` as text in one of three dialects: 0 CSV, 1 TSV, 2
/// semicolon-separated with a decimal comma.
fn write_table(times: &[f64], values: &[f64], dialect: u8, header: bool) -> String {
    let (sep, comma) = match dialect {
        0 => (",", false),
        1 => ("\t", false),
        _ => (";", true),
    };
    let num = |x: f64| {
        let s = format!("{x}");
        if comma {
            s.replace('.', ",")
        } else {
            s
        }
    };
    let mut out = String::new();
    if header {
        out.push_str(&format!("time{sep}value\n"));
    }
    for (t, v) in times.iter().zip(values) {
        out.push_str(&format!("{}{sep}{}\n", num(*t), num(*v)));
    }
    out
}

fn finite_value() -> impl Strategy<Value = f64> {
    prop_oneof![
        -1e6..1e6f64,
        (-1e15..1e15f64),
        any::<f64>().prop_filter("absurd", |v| v.is_finite() && v.abs() <= 1e300),
        (0i32..100).prop_map(f64::from),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn arbitrary_text_never_panics(text in any::<String>(), opts in options()) {
        let _ = parse_series(&text, &opts);
    }

    #[test]
    fn table_like_text_never_panics(text in table_like(), opts in options()) {
        let _ = parse_series(&text, &opts);
    }

    #[test]
    fn written_tables_read_back(
        mut times in prop::collection::vec(prop_oneof![-1e6..1e6f64, (1900i32..2100).prop_map(f64::from)], 1..30),
        values in prop::collection::vec(finite_value(), 30),
        dialect in 0u8..3,
        header in any::<bool>(),
    ) {
        // Repeated times (frequent among the years) are replicates: kept,
        // with one warning.
        times.sort_by(f64::total_cmp);
        let repeats = times.windows(2).any(|w| w[0] == w[1]);
        let values = &values[..times.len()];
        let text = write_table(&times, values, dialect, header);
        let s = parse(&text).map_err(|e| TestCaseError::fail(format!("{e}\n{text}")))?;
        prop_assert_eq!(s.has_header, header);
        prop_assert_eq!(&s.times, &times);
        for (got, want) in s.values.iter().zip(values) {
            prop_assert!((got - want).abs() <= 1e-12 * want.abs(), "{} vs {}", got, want);
        }
        prop_assert_eq!(s.values.len(), values.len());
        let want = if repeats { vec![WarningCode::ReplicateTimes] } else { vec![] };
        prop_assert_eq!(codes(&s), want);
    }

    #[test]
    fn dates_round_trip(year in 1000i32..=9999, ordinal in 1u32..=366) {
        let Some(date) = chrono::NaiveDate::from_yo_opt(year, ordinal) else {
            return Ok(());
        };
        let written = format!("{}", date.format("%Y-%m-%d"));
        let s = parse(&format!("d,v\n{written},1\n")).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(s.time_kind, TimeKind::Date);
        prop_assert_eq!(s.axis.format(s.times[0]), written);
    }

    /// Month, quarter and year grids of dates (1st, 15th or month end),
    /// written with chrono: one period apart on the axis, and each time
    /// shown back exactly as written.
    #[test]
    fn date_grids_round_trip(
        year in 1900i32..=2100,
        month0 in 0u32..12,
        step in prop::sample::select(vec![1u32, 3, 12]),
        day in prop::sample::select(vec![1u32, 15, 0]),
        n in 2usize..30,
    ) {
        let date = |k: u32| {
            let m = month0 + k * step;
            let (y, m) = (year + (m / 12) as i32, m % 12 + 1);
            match day {
                0 => chrono::NaiveDate::from_ymd_opt(y, m, 1)
                    .and_then(|d| d.checked_add_months(chrono::Months::new(1)))
                    .and_then(|d| d.pred_opt())
                    .unwrap(),
                d => chrono::NaiveDate::from_ymd_opt(y, m, d).unwrap(),
            }
        };
        let written: Vec<String> = (0..n as u32).map(|k| date(k).format("%Y-%m-%d").to_string()).collect();
        let text: String = std::iter::once("d,v\n".to_string())
            .chain(written.iter().map(|w| format!("{w},1\n")))
            .collect();
        let s = parse(&text).map_err(|e| TestCaseError::fail(e.to_string()))?;
        let period = match step { 1 => Period::Month, 3 => Period::Quarter, _ => Period::Year };
        prop_assert_eq!(s.axis.period(), Some(period));
        for (k, w) in s.times.windows(2).enumerate() {
            prop_assert_eq!(w[1] - w[0], 1.0, "{}", k);
        }
        for (t, w) in s.times.iter().zip(&written) {
            prop_assert_eq!(&s.axis.format(*t), w);
            prop_assert_eq!(s.axis.parse_time(w).unwrap(), *t);
        }
    }

    #[test]
    fn months_and_quarters_round_trip(year in 1000i32..=9999, month in 1u32..=12) {
        let m = format!("{year:04}-{month:02}");
        let s = parse(&format!("{m};1\n")).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(s.axis.format(s.times[0]), m);
        let q = format!("{year:04}Q{}", (month - 1) / 3 + 1);
        let s = parse(&format!("{q};1\n")).map_err(|e| TestCaseError::fail(e.to_string()))?;
        prop_assert_eq!(s.axis.format(s.times[0]), q);
    }
}

/// Running totals never fall (definition); per-period counts of an S-curve
/// rise then fall, so the warning must fire for them and not for totals.
#[test]
fn decline_warning_tells_counts_from_totals() {
    let counts = "week,new\n1,5\n2,12\n3,30\n4,52\n5,40\n6,22\n7,11\n8,5\n";
    let s = parse_series(counts, &ParseOptions::default()).unwrap();
    let w = decline_warning(&s).expect("counts fall after their peak");
    assert_eq!(w.code, WarningCode::ValuesDecline);
    assert!(w.message.contains("line 5"), "{}", w.message);

    let mut totals = s.clone();
    totals.values = cumulate(&s.values);
    assert!(decline_warning(&totals).is_none());

    // A noisy plateau stays near its peak: no warning.
    let plateau = "t,y\n1,10\n2,50\n3,90\n4,100\n5,97\n6,99\n7,96\n8,98\n";
    let s = parse_series(plateau, &ParseOptions::default()).unwrap();
    assert!(decline_warning(&s).is_none());
}

/// A line of far more fields than any series file has (a whole series
/// pasted as one row) is refused with its line and the count, not turned
/// into a list of that many column names.
#[test]
fn a_row_of_too_many_fields_is_refused_with_its_line() {
    let wide: Vec<String> = (0..=MAX_FIELDS).map(|i| i.to_string()).collect();
    let text = format!("t,value\n1,5\n\n{}\n3,7\n", wide.join(","));
    let e = err(&text);
    assert_eq!(e.kind, DataErrorKind::TooManyFields);
    assert_eq!(e.line, Some(4));
    assert!(
        e.message
            .contains(&format!("more than {MAX_FIELDS} fields")),
        "{}",
        e.message
    );
    // At the limit the row is read (and its first two fields are the row).
    let at = format!("t,value\n1,5\n{}\n", wide[..MAX_FIELDS].join(","));
    assert_eq!(ok(&at).times, vec![1.0, 0.0]);
}

/// Line numbers are counted forwards through blank lines, `\r\n` and old
/// Mac `\r` line ends without an index of the text's lines.
#[test]
fn lines_are_counted_through_every_line_end() {
    let s = ok("t,value\r\n\r\n1,5\r2,6\n\n\n3,7\r\n4,8");
    assert_eq!(s.lines, vec![3, 4, 7, 8]);
}

/// The field count before reading follows CSV quoting: delimiters inside a
/// quoted field (with `""` in it) are not fields, and a stray quote inside
/// a field (12" for inches) opens nothing, so later lines are not taken
/// for one long record.
#[test]
fn field_count_check_follows_quoting() {
    let inside = format!("t,value\n1,\"a\"\"{}\"\n", ",".repeat(MAX_FIELDS + 5));
    assert!(check_field_counts(&inside, b',').is_ok());
    let mut stray = String::from("t,value,note\n1,5,12\" ok\n");
    for i in 2..(MAX_FIELDS / 2) {
        stray.push_str(&format!("{i},5,x\n"));
    }
    assert!(check_field_counts(&stray, b',').is_ok());
    assert_eq!(ok(&stray).times.len(), MAX_FIELDS / 2 - 1);
}

// ---- epoch times and encodings ----------------------------------------------

#[test]
fn epoch_seconds_and_milliseconds_read_as_dates() {
    // 1700000000 s = 2023-11-14 22:13:20 UTC (date -u -d @1700000000):
    // days since 2000-01-01 plus 80000 s of the day.
    let s = ok("time,v\n1700000000,1\n1700086400,2\n1700172800,4\n");
    assert_eq!(s.time_kind, TimeKind::Date);
    assert_eq!(s.time_unit(), "day");
    let want = days_between("2000-01-01", "2023-11-14") + 80000.0 / 86400.0;
    assert!((s.times[0] - want).abs() < 1e-9, "{}", s.times[0]);
    assert_eq!(s.axis.format(s.times[1]), "2023-11-16");
    assert_eq!(codes(&s), [WarningCode::EpochTimes]);
    assert!(s.warnings[0].message.contains("epoch seconds (UTC)"));
    assert!(
        s.warnings[0]
            .message
            .contains("1700000000 is 2023-11-14 22:13:20 UTC"),
        "{}",
        s.warnings[0].message
    );
    // Milliseconds: the same instants.
    let m = ok("time,v\n1700000000000,1\n1700086400000,2\n1700172800500,4\n");
    assert_eq!(m.time_kind, TimeKind::Date);
    assert!((m.times[0] - s.times[0]).abs() < 1e-12);
    assert!((m.times[2] - s.times[2] - 0.5 / 86400.0).abs() < 1e-9);
    assert!(m.warnings[0].message.contains("milliseconds"));
    // Midnight is a whole day: 2024-01-01 00:00 UTC is 1704067200.
    assert_eq!(
        ok("t,v\n1704067200,1\n1704153600,2\n").times[0],
        days_between("2000-01-01", "2024-01-01")
    );
    // Replicates of one instant stay replicates.
    let r = ok("t,v\n1700000000,1\n1700000000,2\n1700086400,3\n");
    assert_eq!(
        codes(&r),
        [WarningCode::ReplicateTimes, WarningCode::EpochTimes]
    );
}

#[test]
fn columns_that_are_not_all_epoch_keep_the_range_error_with_a_hint() {
    // Seconds mixed with milliseconds, or with a plain number, or with a
    // fraction: not an epoch column.
    for text in [
        "t,v\n1700000000,1\n1700000000000,2\n",
        "t,v\n1700000000,1\n5,2\n",
        "t,v\n1700000000.5,1\n1700000001,2\n",
    ] {
        let e = err(text);
        assert_eq!(e.kind, DataErrorKind::TimeOutOfRange, "{text}");
        assert!(
            e.message.contains("Unix epoch times are read as dates"),
            "{e}"
        );
    }
    // Plain numbers up to 1e9 are numbers as before.
    let s = ok("t,v\n999999999,1\n1000000000,2\n");
    assert_eq!(s.time_kind, TimeKind::Number);
}

fn utf16(text: &str, big: bool, bom: bool) -> Vec<u8> {
    let mut units: Vec<u16> = text.encode_utf16().collect();
    if bom {
        units.insert(0, 0xFEFF);
    }
    units
        .iter()
        .flat_map(|u| {
            if big {
                u.to_be_bytes()
            } else {
                u.to_le_bytes()
            }
        })
        .collect()
}

#[test]
fn utf16_is_detected_named_and_decoded() {
    let text = "wöche,n\n1,2\n2,5\n3,9\n";
    for (big, name) in [
        (false, "UTF-16 (little-endian)"),
        (true, "UTF-16 (big-endian)"),
    ] {
        for bom in [true, false] {
            let bytes = utf16(text, big, bom);
            assert_eq!(Utf16::detect(&bytes).map(Utf16::describe), Some(name));
            assert_eq!(decode_text(bytes).unwrap(), text);
        }
    }
    // An unpaired surrogate on line 2 (LE with BOM): named, with the line.
    let mut bytes = utf16("t,v\n1,2\n", false, true);
    bytes.extend_from_slice(&0xD800u16.to_le_bytes());
    let e = decode_text(bytes).unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::NotText, Some(3)));
    assert!(e.message.contains("UTF-16 (little-endian)"), "{e}");
    // UTF-8 (with its BOM) is not UTF-16 and comes back as it is.
    let utf8 = "\u{feff}t,v\n1,2\n".as_bytes().to_vec();
    assert_eq!(Utf16::detect(&utf8), None);
    assert_eq!(decode_text(utf8).unwrap(), "\u{feff}t,v\n1,2\n");
    // Latin-1 bytes: not UTF-8, naming the line and offset.
    let e = decode_text(b"t,v\n1,2\nw\xf6che,3\n".to_vec()).unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::NotText, Some(3)));
    assert!(e.message.contains("byte offset 9"), "{e}");
}

/// The tool's table export read back: its `time` and `observed` columns
/// (not `axis`), forecast rows set aside with a warning naming how many
/// and which lines, and a row with neither value still reported as missing.
#[test]
fn a_table_export_is_read_as_its_time_and_observed_columns() {
    let text = format!(
        "{TABLE_EXPORT_HEADER}\n\
         2024-01,288,10,10.5,,9,11,8,12\n\
         2024-02,289,20,19.5,,18,21,17,22\n\
         2024-03,290,,30.2,,29,31,28,32\n\
         2024-04,291,40,39.9,,38,41,37,42\n\
         2024-05,292,,,50.1,48,52,47,53\n\
         2024-06,293,,,55.2,53,57,52,58\n"
    );
    assert!(is_table_export(&text));
    let s = parse_series(&text, &ParseOptions::default()).unwrap();
    assert_eq!(s.time_kind, TimeKind::Month);
    assert_eq!(s.values, [10.0, 20.0, 40.0]);
    assert_eq!(s.times, [288.0, 289.0, 291.0]);
    assert_eq!(
        (s.time_name.as_str(), s.value_name.as_str()),
        ("time", "observed")
    );
    let codes: Vec<_> = s.warnings.iter().map(|w| w.code).collect();
    assert_eq!(
        codes,
        [
            WarningCode::ExportForecastRowsSetAside,
            WarningCode::MissingValuesSkipped
        ]
    );
    assert!(
        s.warnings[0].message.contains("2 forecast rows")
            && s.warnings[0].message.contains("lines 6 to 7"),
        "{}",
        s.warnings[0].message
    );
    assert!(
        s.warnings[1].message.contains("line 4"),
        "{}",
        s.warnings[1].message
    );
    // A chosen column is the user's choice: the export is not second-guessed.
    let chosen = ParseOptions {
        value_column: Some(ColumnRef::Name("fitted".into())),
        ..ParseOptions::default()
    };
    let s = parse_series(&text, &chosen).unwrap();
    assert_eq!(s.values.len(), 4);
    assert!(!s
        .warnings
        .iter()
        .any(|w| w.code == WarningCode::ExportForecastRowsSetAside));
    // Other headers are not an export.
    assert!(!is_table_export("time,axis,observed\n1,2,3\n"));
    assert!(!is_table_export(""));
}
