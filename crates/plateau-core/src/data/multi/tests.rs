use super::*;
use crate::data::{parse_series, ParseOptions, TimeKind};
use proptest::prelude::*;

fn multi(text: &str) -> Result<SeriesSet, DataError> {
    parse_multi(text, &MultiOptions::default())
}

fn ok(text: &str) -> SeriesSet {
    multi(text).unwrap_or_else(|e| panic!("{e}\n{text}"))
}

fn err(text: &str) -> DataError {
    match multi(text) {
        Ok(s) => panic!("expected an error, got {} series", s.series.len()),
        Err(e) => e,
    }
}

fn names(s: &SeriesSet) -> Vec<&str> {
    s.series.iter().map(|n| n.name.as_str()).collect()
}

#[test]
fn wide_with_header_names_the_series() {
    let s = ok("month,north,south\n2024-01,10,20\n2024-02,15,25\n2024-03,19,31\n");
    assert_eq!(s.layout, Layout::Wide);
    assert_eq!(names(&s), ["north", "south"]);
    let south = &s.series[1].series;
    assert_eq!(south.time_kind, TimeKind::Month);
    assert_eq!(south.values, [20.0, 25.0, 31.0]);
    assert_eq!(south.lines, [2, 3, 4]);
    assert_eq!(south.value_name, "south");
    assert_eq!(south.time_name, "month");
    assert!(s.warnings.is_empty());
}

#[test]
fn wide_missing_cells_are_skipped_with_a_warning_naming_series_and_line() {
    let s = ok("t;a;b\n1;1,5;2\n2;;3\n3;4,5;NA\n4;5;6\n");
    assert_eq!(s.series[0].series.times, [1.0, 3.0, 4.0]);
    assert_eq!(s.series[0].series.values, [1.5, 4.5, 5.0]);
    assert_eq!(s.series[1].series.times, [1.0, 2.0, 4.0]);
    assert_eq!(s.warnings.len(), 2);
    assert!(s.warnings[0].message.contains("\"a\"") && s.warnings[0].message.contains("line 3"));
    assert!(s.warnings[1].message.contains("\"b\"") && s.warnings[1].message.contains("line 4"));
    assert_eq!(s.warnings[0].code, WarningCode::MissingValuesSkipped);
}

#[test]
fn wide_ragged_rows_count_as_missing_cells() {
    let s = ok("t,a,b\n1,1,2\n2,3\n3,4,5\n");
    assert_eq!(s.series[1].series.times, [1.0, 3.0]);
    assert!(s.warnings[0].message.contains("line 3"));
}

#[test]
fn wide_errors_name_line_and_series() {
    let e = err("t,a,b\n1,1,2\n2,3,x\n");
    assert_eq!(e.line, Some(3));
    assert_eq!(e.kind, DataErrorKind::BadValue);
    assert!(e.message.starts_with("series \"b\": "), "{}", e.message);
    // A repeated time is a replicate in every series, as in one series.
    let s = ok("t,a,b\n1,1,2\n1,3,4\n2,5,6\n");
    for ns in &s.series {
        assert_eq!(ns.series.times, [1.0, 1.0, 2.0]);
        assert_eq!(ns.series.warnings[0].code, WarningCode::ReplicateTimes);
    }
    let e = err("t,a,b\n1,1,2\n,3,4\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::MissingTime, Some(3)));
    let e = err("t,a,A\n1,1,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::DuplicateSeries, Some(1)));
    let e = err("t,a\n2024-01,1\n2,3\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::MixedTimeFormats, Some(3)));
}

#[test]
fn wide_empty_unnamed_column_is_left_out_with_a_warning() {
    let s = ok("t,a,\n1,1,\n2,3,\n");
    assert_eq!(names(&s), ["a"]);
    assert_eq!(s.warnings.len(), 1);
    assert!(s.warnings[0].message.contains("column 3"));
}

#[test]
fn two_columns_are_one_wide_series_equal_to_the_single_parser() {
    let text = "week\tsubscribers\n1\t1.234,5\n2\t2.000\n3\t3.500,25\n";
    let s = ok(text);
    let single = parse_series(text, &ParseOptions::default()).unwrap();
    assert_eq!(s.series.len(), 1);
    assert_eq!(s.series[0].series.times, single.times);
    assert_eq!(s.series[0].series.values, single.values);
}

#[test]
fn long_layout_is_detected_and_grouped() {
    let s = ok("region,date,users\nnorth,2024-01-01,10\nnorth,2024-02-01,12\nsouth,2024-01-01,5\nsouth,2024-02-01,NA\nsouth,2024-03-01,9\n");
    assert_eq!(s.layout, Layout::Long);
    assert!(s.has_header);
    assert_eq!(names(&s), ["north", "south"]);
    assert_eq!(s.series[1].series.lines, [4, 6]);
    assert_eq!(s.series[1].series.value_name, "users");
    assert_eq!(s.series[1].series.time_name, "date");
    assert_eq!(s.warnings.len(), 1);
    assert!(s.warnings[0].message.starts_with("series \"south\": "));
    assert!(s.warnings[0].message.contains("line 5"));
    // Without a header.
    let s = ok("a;1;1,5\na;2;2,5\nb;1;7\n");
    assert_eq!(s.layout, Layout::Long);
    assert!(!s.has_header);
    assert_eq!(s.series[0].series.values, [1.5, 2.5]);
}

#[test]
fn long_series_must_be_contiguous() {
    let e = err("s,t,v\na,1,1\na,2,2\nb,1,3\na,3,4\n");
    assert_eq!(e.kind, DataErrorKind::SeriesNotContiguous);
    assert_eq!(e.line, Some(5));
    assert!(e.message.contains("line 3"), "{}", e.message);
}

#[test]
fn long_errors_name_line_and_series() {
    let e = err("s,t,v\na,1,1\nb,1,x\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::BadValue, Some(3)));
    assert!(e.message.starts_with("series \"b\""));
    let e = err("s,t,v\na,1,1\n,2,2\n");
    assert_eq!(
        (e.kind, e.line),
        (DataErrorKind::MissingSeriesName, Some(3))
    );
    let e = parse_multi(
        "s,t,v\na,1,1\na,2\n",
        &MultiOptions {
            layout: Some(Layout::Long),
            ..Default::default()
        },
    )
    .unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::TooFewFields, Some(3)));
    let e = parse_multi(
        "s,t,v\na,1,1,9\n",
        &MultiOptions {
            layout: Some(Layout::Long),
            ..Default::default()
        },
    )
    .unwrap_err();
    assert_eq!((e.kind, e.line), (DataErrorKind::TooManyFields, Some(2)));
    let s = ok("s,t,v\na,1,1\na,1,2\na,2,3\n");
    assert_eq!(s.series[0].series.values, [1.0, 2.0, 3.0]);
    assert_eq!(
        s.series[0].series.warnings[0].code,
        WarningCode::ReplicateTimes
    );
    let e = err("s,t,v\na,1,NA\nb,1,2\n");
    assert_eq!((e.kind, e.line), (DataErrorKind::NoData, Some(2)));
}

#[test]
fn grouper_fails_one_series_and_goes_on() {
    let mut g = LongGrouper::new(b',', None);
    let rows = [
        "s,t,v", "a,1,1", "a,2,2", "b,1,x", "b,2,3", "c,1,1", "a,9,9", "d,1,4",
    ];
    let mut out = Vec::new();
    for (i, r) in rows.iter().enumerate() {
        let fields = split_line(i + 1, r, b',').unwrap();
        let f: Vec<&str> = fields.iter().map(String::as_str).collect();
        out.extend(g.push(i + 1, &f).unwrap().map(PendingSeries::build));
    }
    out.extend(g.finish().map(PendingSeries::build));
    let summary: Vec<(String, Option<usize>)> = out
        .iter()
        .map(|r| match r {
            Ok(s) => (s.name.clone(), None),
            Err(f) => (f.name.clone(), f.error.line),
        })
        .collect();
    assert_eq!(
        summary,
        [
            ("a".into(), None),
            ("b".into(), Some(4)),
            ("c".into(), None),
            ("a".into(), Some(7)),
            ("d".into(), None)
        ]
    );
}

#[test]
fn split_line_handles_quotes() {
    assert_eq!(split_line(1, "a,1,2\r\n", b',').unwrap(), ["a", "1", "2"]);
    assert_eq!(
        split_line(1, "\"north, upper\",1,\"2\"", b',').unwrap(),
        ["north, upper", "1", "2"]
    );
    let e = split_line(7, "\"north,1,2", b',').unwrap_err();
    assert_eq!(e.line, Some(7));
}

/// Writes series as wide text (dialect 0 CSV, 1 TSV, 2 semicolon with
/// decimal comma); `None` cells are written empty.
fn write_wide(times: &[f64], cols: &[Vec<Option<f64>>], dialect: u8) -> String {
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
    let mut out = String::from("time");
    for c in 0..cols.len() {
        out.push_str(&format!("{sep}s{c}"));
    }
    out.push('\n');
    for (i, t) in times.iter().enumerate() {
        out.push_str(&num(*t));
        for col in cols {
            out.push_str(sep);
            if let Some(v) = col[i] {
                out.push_str(&num(v));
            }
        }
        out.push('\n');
    }
    out
}

fn write_long(times: &[f64], cols: &[Vec<Option<f64>>], dialect: u8) -> String {
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
    let mut out = format!("series{sep}time{sep}value\n");
    for (c, col) in cols.iter().enumerate() {
        for (i, t) in times.iter().enumerate() {
            let v = col[i].map_or("NA".to_string(), num);
            out.push_str(&format!("s{c}{sep}{}{sep}{v}\n", num(*t)));
        }
    }
    out
}

fn table_like() -> impl Strategy<Value = String> {
    let piece = prop::sample::select(vec![
        ",", ";", "\t", "\n", "\r\n", "\"", " ", "-", ".", "1", "2024", "-01", "Q3", "NA", "1e309",
        "1,5", "\u{feff}", "a", "b", "north", "0", "9",
    ]);
    prop::collection::vec(piece, 0..60).prop_map(|v| v.concat())
}

fn layout() -> impl Strategy<Value = MultiOptions> {
    (
        prop::option::of(prop::sample::select(vec![b',', b';', b'\t', b'|'])),
        prop::option::of(any::<bool>()),
        prop::option::of(prop_oneof![Just(Layout::Wide), Just(Layout::Long)]),
    )
        .prop_map(|(delimiter, header, layout)| MultiOptions {
            delimiter,
            header,
            layout,
        })
}

fn cell() -> impl Strategy<Value = Option<f64>> {
    prop_oneof![
        4 => (-1e6..1e6f64).prop_map(Some),
        1 => Just(None),
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn arbitrary_text_never_panics(text in any::<String>(), opts in layout()) {
        let _ = parse_multi(&text, &opts);
    }

    #[test]
    fn table_like_text_never_panics(text in table_like(), opts in layout()) {
        let _ = parse_multi(&text, &opts);
        let mut g = LongGrouper::new(b',', opts.header);
        for (i, line) in text.split('\n').enumerate() {
            if let Ok(fields) = split_line(i + 1, line, b',') {
                let f: Vec<&str> = fields.iter().map(String::as_str).collect();
                let _ = g.push(i + 1, &f);
            }
        }
        let _ = g.finish();
    }

    /// Wide and long renderings of the same series read back to the same
    /// numbers, every written value kept and every empty cell reported.
    #[test]
    fn written_sets_read_back(
        mut times in prop::collection::vec(-1e6..1e6f64, 2..20),
        cols in prop::collection::vec(prop::collection::vec(cell(), 20), 1..5),
        dialect in 0u8..3,
    ) {
        times.sort_by(f64::total_cmp);
        times.dedup();
        let n = times.len();
        let mut cols: Vec<Vec<Option<f64>>> = cols.into_iter().map(|c| c[..n].to_vec()).collect();
        for c in &mut cols {
            // At least one value per series.
            if c.iter().all(Option::is_none) {
                c[0] = Some(1.0);
            }
        }
        for (text, layout) in [(write_wide(&times, &cols, dialect), Layout::Wide), (write_long(&times, &cols, dialect), Layout::Long)] {
            let s = multi(&text).map_err(|e| TestCaseError::fail(format!("{e}\n{text}")))?;
            prop_assert_eq!(s.layout, layout);
            prop_assert_eq!(s.series.len(), cols.len());
            for (c, ns) in cols.iter().zip(&s.series) {
                let want: Vec<(f64, f64)> = times.iter().zip(c).filter_map(|(t, v)| v.map(|v| (*t, v))).collect();
                let got: Vec<(f64, f64)> = ns.series.times.iter().copied().zip(ns.series.values.iter().copied()).collect();
                prop_assert_eq!(got.len(), want.len());
                for (g, w) in got.iter().zip(&want) {
                    prop_assert_eq!(g.0, w.0);
                    prop_assert!((g.1 - w.1).abs() <= 1e-12 * w.1.abs(), "{} vs {}", g.1, w.1);
                }
                let missing = n - want.len();
                prop_assert_eq!(ns.series.warnings.len(), usize::from(missing > 0));
            }
        }
    }

    /// Reading a long text whole and streaming it line by line through the
    /// grouper give the same series and the same first error.
    #[test]
    fn stream_and_whole_text_agree(text in table_like()) {
        let whole = parse_multi(&text, &MultiOptions { delimiter: Some(b','), layout: Some(Layout::Long), header: None });
        let mut g = LongGrouper::new(b',', None);
        let mut streamed: Vec<NamedSeries> = Vec::new();
        let mut first_error: Option<DataError> = None;
        let body = text.strip_prefix('\u{feff}').unwrap_or(&text);
        if body.contains('"') || body.contains('\r') || body.contains('\u{feff}') {
            // Quoted line breaks and lone carriage returns are whole-text
            // only, and the csv reader drops a second byte-order mark.
            return Ok(());
        }
        for (i, line) in body.split('\n').enumerate() {
            if line.split(',').all(|f| f.trim().is_empty()) {
                continue;
            }
            let fields = split_line(i + 1, line, b',').unwrap();
            let f: Vec<&str> = fields.iter().map(String::as_str).collect();
            match g.push(i + 1, &f).map(|p| p.map(PendingSeries::build)) {
                Ok(Some(Ok(s))) => streamed.push(s),
                Ok(Some(Err(e))) => { first_error.get_or_insert(e.error); }
                Ok(None) => {}
                Err(e) => { first_error.get_or_insert(e); break; }
            }
        }
        if first_error.is_none() {
            match g.finish().map(PendingSeries::build) {
                Some(Ok(s)) => streamed.push(s),
                Some(Err(e)) => first_error = Some(e.error),
                None => {}
            }
        }
        match (whole, first_error) {
            (Ok(set), None) => prop_assert_eq!(set.series, streamed),
            (Err(a), Some(b)) => prop_assert_eq!(a, b),
            (Err(a), None) => prop_assert!(streamed.is_empty(), "whole-text error {a} but the stream read {} series", streamed.len()),
            (Ok(set), Some(b)) => prop_assert!(false, "stream error {b} but whole text read {} series", set.series.len()),
        }
    }
}
