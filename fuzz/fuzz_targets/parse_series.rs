//! Fuzz target: `parse_series` must never panic, whatever the text and
//! options. The first input byte picks an option combination; the rest is
//! the text (as lossy UTF-8, since the core only ever sees `&str`).

#![no_main]

use libfuzzer_sys::fuzz_target;
use plateau_core::data::{cumulate, parse_series, ColumnRef, ParseOptions};

fuzz_target!(|data: &[u8]| {
    let Some((&selector, rest)) = data.split_first() else {
        return;
    };
    let text = String::from_utf8_lossy(rest);
    let opts = options(selector);
    if let Ok(series) = parse_series(&text, &opts) {
        // Results must be usable: finite axis and values, one line per row,
        // and every axis value showable again.
        assert_eq!(series.times.len(), series.values.len());
        assert_eq!(series.times.len(), series.lines.len());
        assert!(!series.times.is_empty());
        assert!(series
            .times
            .iter()
            .chain(&series.values)
            .all(|x| x.is_finite()));
        for &t in &series.times {
            let _ = series.time_kind.format(t);
        }
        let _ = cumulate(&series.values);
    }
});

/// Delimiter (2 bits), header (2 bits) and columns (4 bits) from one byte.
fn options(b: u8) -> ParseOptions {
    let delimiter = match b & 0b11 {
        0 => None,
        1 => Some(b','),
        2 => Some(b';'),
        _ => Some(b'\t'),
    };
    let header = match (b >> 2) & 0b11 {
        0 | 3 => None,
        1 => Some(true),
        _ => Some(false),
    };
    let (time_column, value_column) = match b >> 4 {
        0..=7 => (None, None),
        8 => (Some(ColumnRef::Index(1)), Some(ColumnRef::Index(0))),
        9 => (None, Some(ColumnRef::Index(2))),
        10 => (None, Some(ColumnRef::Name("value".into()))),
        11 => (Some(ColumnRef::Name(" Time ".into())), None),
        12 => (Some(ColumnRef::Index(usize::MAX)), None),
        13 => (None, Some(ColumnRef::Index(0))),
        _ => (Some(ColumnRef::Index(2)), Some(ColumnRef::Index(1))),
    };
    ParseOptions {
        delimiter,
        header,
        time_column,
        value_column,
    }
}
