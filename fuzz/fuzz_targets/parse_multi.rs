//! Fuzz target: `parse_multi` (several series, wide or long) and the
//! streaming `LongGrouper` must never panic. The first input byte picks the
//! delimiter, header and layout options; the rest is the text.

#![no_main]

use libfuzzer_sys::fuzz_target;
use plateau_core::data::{parse_multi, split_line, Layout, LongGrouper, MultiOptions};

fuzz_target!(|data: &[u8]| {
    let Some((&b, rest)) = data.split_first() else {
        return;
    };
    let text = String::from_utf8_lossy(rest);
    let delimiter = [None, Some(b','), Some(b';'), Some(b'\t')][usize::from(b & 0b11)];
    let header = [None, Some(true), Some(false), None][usize::from((b >> 2) & 0b11)];
    let layout = [None, Some(Layout::Wide), Some(Layout::Long), None][usize::from((b >> 4) & 0b11)];
    if let Ok(set) = parse_multi(&text, &MultiOptions { delimiter, header, layout }) {
        for s in &set.series {
            assert_eq!(s.series.times.len(), s.series.values.len());
            assert!(!s.series.times.is_empty());
        }
    }
    let d = delimiter.unwrap_or(b',');
    let mut g = LongGrouper::new(d, header);
    for (i, line) in text.split('\n').enumerate() {
        if let Ok(fields) = split_line(i + 1, line, d) {
            let f: Vec<&str> = fields.iter().map(String::as_str).collect();
            if let Ok(Some(p)) = g.push(i + 1, &f) {
                let _ = p.build();
            }
        }
    }
    if let Some(p) = g.finish() {
        let _ = p.build();
    }
});
