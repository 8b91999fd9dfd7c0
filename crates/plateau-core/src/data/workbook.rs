//! Workbooks (.xlsx, .xls, .ods) read with `calamine` from their bytes
//! (the core does no I/O): one sheet's cells become the same comma-separated
//! text the CSV path reads, so header detection, column choice, dates,
//! missing values and every error apply to a sheet exactly as to a file.
//!
//! Line `n` of the text is row `n` of the sheet (rows above the first used
//! one are blank lines), so a parse error's line is the sheet's row number.
//! Date cells become ISO dates (`2024-03-01`), which the time parser puts
//! on the data's own calendar (first-of-month dates stay monthly); a date
//! with a time of day is written `2024-03-01 12:00:00`. Numbers are written
//! in Rust's shortest exact form; booleans as `TRUE`/`FALSE`; error cells
//! as their code (`#DIV/0!`; `#N/A` reads as a missing value).
//!
//! Refused with a [`DataErrorKind::Workbook`] error that says what to do:
//! a password-protected (encrypted) workbook, a damaged or truncated one,
//! a sheet that is not there (named with the sheets there are), an empty
//! sheet, and a formula whose value was never saved (naming the sheet and
//! the cell).

use super::{error, quote, DataError, DataErrorKind};
use calamine::{Data, Ods, Range, Reader, Xls, Xlsx};
use std::io::Cursor;

/// Which sheet to read: by name (exact, then ignoring case) or by 1-based
/// position.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum SheetChoice {
    Name(String),
    /// 1-based, as people count sheets.
    Position(usize),
}

impl SheetChoice {
    /// A whole number is a position, anything else a name (`--sheet 2`,
    /// `--sheet Sales`).
    pub fn parse(s: &str) -> SheetChoice {
        match s.trim().parse::<usize>() {
            Ok(n) => SheetChoice::Position(n),
            Err(_) => SheetChoice::Name(s.to_string()),
        }
    }
}

/// One sheet of a workbook as text, and the workbook's sheet names.
#[derive(Debug, Clone, PartialEq)]
pub struct WorkbookSheet {
    /// Every sheet's name, in workbook order.
    pub sheets: Vec<String>,
    /// The sheet read (0-based index into `sheets`).
    pub index: usize,
    /// Its cells as comma-separated text, line `n` being row `n`.
    pub text: String,
}

impl WorkbookSheet {
    /// The name of the sheet read.
    pub fn name(&self) -> &str {
        &self.sheets[self.index]
    }
}

/// The kind of workbook the bytes start like, if any: a ZIP container
/// (.xlsx, .ods) or an OLE compound file (.xls, or an encrypted .xlsx).
pub fn is_workbook(bytes: &[u8]) -> bool {
    bytes.starts_with(b"PK\x03\x04") || bytes.starts_with(&OLE_MAGIC)
}

/// Whether a file name ends in a workbook extension (.xlsx, .xlsm, .xls, .ods).
pub fn has_workbook_extension(name: &str) -> bool {
    let lower = name.to_ascii_lowercase();
    [".xlsx", ".xlsm", ".xls", ".ods"]
        .iter()
        .any(|e| lower.ends_with(e))
}

const OLE_MAGIC: [u8; 8] = [0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1];

fn workbook_error(message: impl Into<String>) -> DataError {
    error(DataErrorKind::Workbook, None, message)
}

const PROTECTED: &str = "the workbook is password-protected (encrypted), and Plateau does not \
     read protected workbooks; open it in a spreadsheet program, save a copy without the \
     password (or export the sheet as CSV), and open that";

fn damaged(detail: impl std::fmt::Display) -> DataError {
    workbook_error(format!(
        "the workbook could not be read: it looks damaged or incomplete ({detail}); open it in \
         a spreadsheet program and save it again, or export the sheet as CSV"
    ))
}

/// Whether an OLE compound file holds an `EncryptedPackage` stream, which
/// is how Office stores a password-protected .xlsx.
fn is_encrypted_package(bytes: &[u8]) -> bool {
    let name: Vec<u8> = "EncryptedPackage"
        .encode_utf16()
        .flat_map(u16::to_le_bytes)
        .collect();
    bytes.windows(name.len()).any(|w| w == name.as_slice())
}

/// Reads one sheet of the workbook in `bytes` (the chosen one, else the
/// first with data) as text for [`parse_series`](super::parse_series) or
/// [`parse_multi`](super::parse_multi).
pub fn read_workbook(
    bytes: &[u8],
    choice: Option<&SheetChoice>,
) -> Result<WorkbookSheet, DataError> {
    let mut book = open(bytes)?;
    let sheets = book.sheet_names();
    if sheets.is_empty() {
        return Err(workbook_error("the workbook has no sheets"));
    }
    let listed = || {
        sheets
            .iter()
            .map(|s| quote(s))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let index = match choice {
        Some(SheetChoice::Position(n)) => {
            if *n == 0 || *n > sheets.len() {
                return Err(workbook_error(format!(
                    "there is no sheet {n}: the workbook has {} sheet{} ({}), counted from 1",
                    sheets.len(),
                    if sheets.len() == 1 { "" } else { "s" },
                    listed()
                )));
            }
            n - 1
        }
        Some(SheetChoice::Name(name)) => sheets
            .iter()
            .position(|s| s == name)
            .or_else(|| {
                sheets
                    .iter()
                    .position(|s| s.trim().eq_ignore_ascii_case(name.trim()))
            })
            .ok_or_else(|| {
                workbook_error(format!(
                    "the workbook has no sheet named {}; its sheets are {}",
                    quote(name),
                    listed()
                ))
            })?,
        None => {
            let mut first = None;
            for (i, name) in sheets.iter().enumerate() {
                let range = book.worksheet_range(name).map_err(damaged)?;
                let formulas = book.worksheet_formula(name);
                if !is_blank(&range) || !formulas.is_empty() {
                    first = Some(i);
                    break;
                }
            }
            first.ok_or_else(|| {
                workbook_error(format!(
                    "every sheet of the workbook is empty ({}); expected a sheet with a time \
                     column and a value column",
                    listed()
                ))
            })?
        }
    };
    let name = &sheets[index];
    let range = book.worksheet_range(name).map_err(damaged)?;
    let formulas = book.worksheet_formula(name);
    check_formulas(name, &range, &formulas)?;
    if is_blank(&range) {
        let with_data: Vec<String> = sheets
            .iter()
            .filter(|s| {
                book.worksheet_range(s)
                    .map(|r| !is_blank(&r))
                    .unwrap_or(false)
            })
            .map(|s| quote(s))
            .collect();
        let hint = if with_data.is_empty() {
            "no sheet of the workbook has data".to_string()
        } else {
            format!("sheets with data: {}", with_data.join(", "))
        };
        return Err(workbook_error(format!(
            "sheet {} is empty; choose a sheet with a time column and a value column ({hint})",
            quote(name)
        )));
    }
    Ok(WorkbookSheet {
        text: sheet_text(&range),
        sheets,
        index,
    })
}

/// The three readers the tool uses. Not calamine's `Sheets`, which also
/// carries the .xlsb reader: the page would ship code it never runs.
enum Book<'a> {
    Xls(Xls<Cursor<&'a [u8]>>),
    Xlsx(Xlsx<Cursor<&'a [u8]>>),
    Ods(Ods<Cursor<&'a [u8]>>),
}

impl Book<'_> {
    fn sheet_names(&self) -> Vec<String> {
        match self {
            Book::Xls(b) => b.sheet_names(),
            Book::Xlsx(b) => b.sheet_names(),
            Book::Ods(b) => b.sheet_names(),
        }
    }

    fn worksheet_range(&mut self, name: &str) -> Result<Range<Data>, String> {
        match self {
            Book::Xls(b) => b.worksheet_range(name).map_err(|e| e.to_string()),
            Book::Xlsx(b) => b.worksheet_range(name).map_err(|e| e.to_string()),
            Book::Ods(b) => b.worksheet_range(name).map_err(|e| e.to_string()),
        }
    }

    /// The sheet's formulas (empty when they cannot be read).
    fn worksheet_formula(&mut self, name: &str) -> Range<String> {
        match self {
            Book::Xls(b) => b.worksheet_formula(name).unwrap_or_default(),
            Book::Xlsx(b) => b.worksheet_formula(name).unwrap_or_default(),
            Book::Ods(b) => b.worksheet_formula(name).unwrap_or_default(),
        }
    }
}

fn open(bytes: &[u8]) -> Result<Book<'_>, DataError> {
    let cursor = Cursor::new(bytes);
    if bytes.starts_with(&OLE_MAGIC) {
        if is_encrypted_package(bytes) {
            return Err(workbook_error(PROTECTED));
        }
        return match calamine::open_workbook_from_rs::<Xls<_>, _>(cursor) {
            Ok(x) => Ok(Book::Xls(x)),
            Err(calamine::XlsError::Password) => Err(workbook_error(PROTECTED)),
            Err(e) => Err(damaged(e)),
        };
    }
    if bytes.starts_with(b"PK\x03\x04") {
        // An OpenDocument file stores its media type first, uncompressed.
        let head = &bytes[..bytes.len().min(128)];
        let ods = head.windows(12).any(|w| w == b"opendocument".as_slice());
        return if ods {
            match calamine::open_workbook_from_rs::<Ods<_>, _>(cursor) {
                Ok(o) => Ok(Book::Ods(o)),
                Err(calamine::OdsError::Password) => Err(workbook_error(PROTECTED)),
                Err(e) => Err(damaged(e)),
            }
        } else {
            calamine::open_workbook_from_rs::<Xlsx<_>, _>(cursor)
                .map(Book::Xlsx)
                .map_err(damaged)
        };
    }
    Err(workbook_error(
        "the file is not a workbook Plateau reads (.xlsx, .xls or .ods: it starts like none of \
         them); for text, save it as CSV",
    ))
}

fn is_blank(range: &Range<Data>) -> bool {
    range.used_cells().all(|(_, _, c)| match c {
        Data::String(s) => s.trim().is_empty(),
        Data::Empty => true,
        _ => false,
    })
}

/// A formula whose value was never saved (written by a program that does
/// not calculate) reads as an empty cell: refused, naming the cell.
fn check_formulas(
    sheet: &str,
    range: &Range<Data>,
    formulas: &Range<String>,
) -> Result<(), DataError> {
    let Some((r0, c0)) = formulas.start() else {
        return Ok(());
    };
    for (r, c, f) in formulas.used_cells() {
        if f.trim().is_empty() {
            continue;
        }
        let at = (r0 + r as u32, c0 + c as u32);
        let value = range.get_value(at);
        if matches!(value, None | Some(Data::Empty)) {
            return Err(workbook_error(format!(
                "sheet {}, cell {}: the formula ={} has no saved value (the program that wrote \
                 the workbook did not calculate it); open the workbook in a spreadsheet \
                 program, let it recalculate, save it, and open it again",
                quote(sheet),
                cell_name(at.0, at.1),
                f.trim_start_matches('=')
            )));
        }
    }
    Ok(())
}

/// `A1`-style name of a 0-based (row, column).
pub fn cell_name(row: u32, col: u32) -> String {
    let mut letters = Vec::new();
    let mut c = col + 1;
    while c > 0 {
        let rem = (c - 1) % 26;
        letters.push(b'A' + rem as u8);
        c = (c - 1) / 26;
    }
    letters.reverse();
    format!("{}{}", String::from_utf8_lossy(&letters), row + 1)
}

/// The sheet as comma-separated text: line `n` is row `n` (blank lines
/// above the first used row), columns from the first used one.
fn sheet_text(range: &Range<Data>) -> String {
    let (r0, _) = range.start().unwrap_or((0, 0));
    let mut out = "\n".repeat(r0 as usize);
    for row in range.rows() {
        let cells: Vec<String> = row.iter().map(cell_text).collect();
        // Trailing empty cells add nothing.
        let used = cells
            .iter()
            .rposition(|c| !c.is_empty())
            .map_or(0, |i| i + 1);
        out.push_str(&cells[..used].join(","));
        out.push('\n');
    }
    out
}

fn csv_quoted(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

fn cell_text(c: &Data) -> String {
    match c {
        Data::Empty => String::new(),
        Data::String(s) => csv_quoted(s),
        Data::Int(i) => i.to_string(),
        Data::Float(x) => format!("{x}"),
        Data::Bool(b) => (if *b { "TRUE" } else { "FALSE" }).to_string(),
        Data::DateTime(d) if d.is_datetime() => {
            let (y, mo, day, h, mi, s, ms) = d.to_ymd_hms_milli();
            if (h, mi, s, ms) == (0, 0, 0, 0) {
                format!("{y:04}-{mo:02}-{day:02}")
            } else {
                format!("{y:04}-{mo:02}-{day:02} {h:02}:{mi:02}:{s:02}")
            }
        }
        // A duration: its length in days, as a number.
        Data::DateTime(d) => format!("{}", d.as_f64()),
        Data::DateTimeIso(s) => {
            let s = s.strip_suffix("T00:00:00").unwrap_or(s);
            csv_quoted(&s.replacen('T', " ", 1))
        }
        Data::DurationIso(s) => csv_quoted(s),
        Data::Error(e) => csv_quoted(&e.to_string()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::data::{parse_series, ParseOptions, Period, TimeKind};

    // Fixtures from tests/workbooks/make_workbooks.py (invented data, fixed
    // seed); members.csv is the same sheet written as CSV by that script,
    // without calamine: the reference.
    const XLSX: &[u8] = include_bytes!("../../../../tests/workbooks/members.xlsx");
    const ODS: &[u8] = include_bytes!("../../../../tests/workbooks/members.ods");
    const XLS: &[u8] = include_bytes!("../../../../tests/workbooks/members.xls");
    const FORMULAS: &[u8] = include_bytes!("../../../../tests/workbooks/formulas.xlsx");
    const TRUNCATED: &[u8] = include_bytes!("../../../../tests/workbooks/truncated.xlsx");
    const ENCRYPTED: &[u8] = include_bytes!("../../../../tests/workbooks/encrypted.xlsx");
    const CSV: &str = include_str!("../../../../tests/workbooks/members.csv");

    fn read(bytes: &[u8], choice: Option<SheetChoice>) -> Result<WorkbookSheet, DataError> {
        read_workbook(bytes, choice.as_ref())
    }

    /// Every format's "Members" sheet (the first with data: "Blank" is
    /// empty) reads as the CSV does: date cells are dates on a monthly
    /// axis, the same times and values, line n being row n.
    #[test]
    fn each_format_reads_as_the_csv_reference() {
        let reference = parse_series(CSV, &ParseOptions::default()).unwrap();
        assert_eq!(reference.axis.period(), Some(Period::Month));
        for (what, bytes) in [("xlsx", XLSX), ("ods", ODS), ("xls", XLS)] {
            let book = read(bytes, None).unwrap_or_else(|e| panic!("{what}: {e}"));
            assert_eq!(book.sheets, ["Blank", "Members", "Quarterly"], "{what}");
            assert_eq!(book.name(), "Members", "{what}");
            let s = parse_series(&book.text, &ParseOptions::default()).unwrap();
            assert_eq!(s.time_kind, TimeKind::Date, "{what}");
            assert_eq!(s.axis, reference.axis, "{what}");
            assert_eq!(s.times, reference.times, "{what}");
            assert_eq!(s.values, reference.values, "{what}");
            assert_eq!(s.lines, reference.lines, "{what}: line n is row n");
            // By name (any case) and by position.
            let q = read(bytes, Some(SheetChoice::Name("quarterly".into()))).unwrap();
            assert_eq!(q.index, 2);
            let s = parse_series(&q.text, &ParseOptions::default()).unwrap();
            assert_eq!(s.axis.period(), Some(Period::Quarter), "{what}");
            assert_eq!(s.values.len(), 12);
            assert_eq!(s.values[1], reference.values[3]);
            let p = read(bytes, Some(SheetChoice::Position(2))).unwrap();
            assert_eq!(p.text, book.text);
        }
    }

    #[test]
    fn bad_workbooks_and_choices_are_named() {
        let msg = |r: Result<WorkbookSheet, DataError>| {
            let e = r.unwrap_err();
            assert_eq!(e.kind, DataErrorKind::Workbook);
            e.message
        };
        let m = msg(read(XLSX, Some(SheetChoice::Name("Sales".into()))));
        assert!(m.contains("no sheet named \"Sales\""), "{m}");
        assert!(m.contains("\"Blank\", \"Members\", \"Quarterly\""), "{m}");
        let m = msg(read(XLSX, Some(SheetChoice::Position(4))));
        assert!(m.contains("no sheet 4") && m.contains("3 sheets"), "{m}");
        let m = msg(read(XLSX, Some(SheetChoice::Position(1))));
        assert!(m.contains("sheet \"Blank\" is empty"), "{m}");
        assert!(
            m.contains("sheets with data: \"Members\", \"Quarterly\""),
            "{m}"
        );
        let m = msg(read(ODS, Some(SheetChoice::Name("Blank".into()))));
        assert!(m.contains("is empty"), "{m}");
        let m = msg(read(TRUNCATED, None));
        assert!(m.contains("damaged or incomplete"), "{m}");
        let m = msg(read(FORMULAS, None));
        assert!(
            m.contains("sheet \"Members\", cell B2: the formula =C2*1 has no saved value"),
            "{m}"
        );
        // members.xlsx protected with a password by msoffcrypto-tool (an
        // OLE container with an EncryptedPackage stream, MS-OFFCRYPTO).
        let m = msg(read(ENCRYPTED, None));
        assert!(m.contains("password-protected"), "{m}");
        let m = msg(read(&OLE_MAGIC, None));
        assert!(m.contains("damaged"), "{m}");
    }

    #[test]
    fn cell_names_count_columns_like_spreadsheets() {
        assert_eq!(cell_name(0, 0), "A1");
        assert_eq!(cell_name(6, 25), "Z7");
        assert_eq!(cell_name(1, 26), "AA2");
        assert_eq!(cell_name(9, 701), "ZZ10");
        assert_eq!(cell_name(0, 702), "AAA1");
    }

    #[test]
    fn sheet_choices_are_positions_or_names() {
        assert_eq!(SheetChoice::parse("2"), SheetChoice::Position(2));
        assert_eq!(
            SheetChoice::parse("Sales"),
            SheetChoice::Name("Sales".into())
        );
    }

    #[test]
    fn text_that_is_no_workbook_is_named() {
        let e = read_workbook(b"t,y\n1,2\n", None).unwrap_err();
        assert_eq!(e.kind, DataErrorKind::Workbook);
        assert!(e.message.contains("not a workbook"), "{e}");
        assert!(!is_workbook(b"t,y\n"));
        assert!(has_workbook_extension("Client Data.XLSX"));
        assert!(!has_workbook_extension("data.csv"));
    }
}
