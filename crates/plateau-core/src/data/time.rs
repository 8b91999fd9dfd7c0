//! The time column: recognising how a time is written (plain number, ISO
//! date, year-month, quarter), mapping it onto the numeric axis, and turning
//! axis values back into the same kind of text.
//!
//! On the three date axes a difference of 1 is one year, so a fitted rate is
//! per year whatever the spacing of the rows.

use super::number::{parse_number, Decimal, NumError};
use super::TimeKind;
use chrono::{Datelike, NaiveDate, Timelike};

/// Numeric times beyond this magnitude are refused: no growth series spans
/// them, and the model's `exp(r (t - t0))` loses every digit there.
pub(super) const MAX_ABS_TIME: f64 = 1e9;

/// Why a time field could not be placed on the axis.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum TimeError {
    /// Not written as any kind of time.
    Invalid,
    /// A well-formed time of another kind than the column's.
    OtherKind(TimeKind),
    /// Shaped like the column's kind but naming no real date, month or quarter.
    NoSuchTime,
    /// A number too large to be a time.
    OutOfRange,
}

impl TimeKind {
    /// How a human would name one time of this kind.
    pub(super) fn describe(self) -> &'static str {
        match self {
            TimeKind::Number => "a number",
            TimeKind::Date => "a date",
            TimeKind::Month => "a year-month",
            TimeKind::Quarter => "a quarter",
        }
    }

    /// The written form, for messages that say what was expected.
    pub(super) fn expected_form(self) -> &'static str {
        match self {
            TimeKind::Number => "a number such as 12 or 2019.5",
            TimeKind::Date => "a date YYYY-MM-DD such as 2024-03-31",
            TimeKind::Month => "a year-month YYYY-MM such as 2024-03",
            TimeKind::Quarter => "a quarter such as 2024Q3, 2024-Q3 or 2024 Q3",
        }
    }

    /// Turns an axis value back into display text of this kind: the nearest
    /// day (`2024-03-31`), month (`2024-03`) or quarter (`2024Q3`), or for
    /// plain numbers a short number with up to 6 significant digits and no
    /// trailing zeros. Values outside the calendar (or not finite) are shown
    /// as numbers.
    pub fn format(self, t: f64) -> String {
        let text = match self {
            TimeKind::Number => None,
            TimeKind::Date => format_date(t),
            TimeKind::Month => format_steps(t, 12).map(|(y, m)| format!("{y:04}-{m:02}")),
            TimeKind::Quarter => format_steps(t, 4).map(|(y, q)| format!("{y:04}Q{q}")),
        };
        text.unwrap_or_else(|| format_number(t))
    }

    /// Reads one time written in this kind's format (e.g. a forecast
    /// horizon `2030-06-30`, `2031Q2` or `48`) and places it on the axis.
    /// On the calendar axes a plain number is also accepted as a decimal
    /// year (`2031.5`). The error says what was expected.
    pub fn parse_time(self, s: &str) -> Result<f64, String> {
        let text = s.trim();
        match parse(text, self, Decimal::Point) {
            Ok(t) => Ok(t),
            Err(e) => {
                if self != TimeKind::Number {
                    if let Ok(t) = parse(text, TimeKind::Number, Decimal::Point) {
                        return Ok(t);
                    }
                }
                let why = match e {
                    TimeError::NoSuchTime => "no such time: ",
                    TimeError::OutOfRange => "out of range: ",
                    _ => "",
                };
                Err(format!(
                    "{why}expected {} (the data's time format), found {text:?}",
                    self.expected_form()
                ))
            }
        }
    }

    /// The unit of the axis: `"year"` for dates, months and quarters (a
    /// difference of 1 is one year, so a growth rate is per year), `""` for
    /// plain numbers, whose unit is whatever the input used.
    pub fn unit(self) -> &'static str {
        match self {
            TimeKind::Number => "",
            TimeKind::Date | TimeKind::Month | TimeKind::Quarter => "year",
        }
    }
}

/// Calendar axis values are only turned into text inside chrono's range
/// (about ±262,000 years); far-off values (a wild fitted t0) stay numbers.
const MAX_CALENDAR_YEAR: f64 = 200_000.0;

fn days_in_year(year: i32) -> u32 {
    if NaiveDate::from_ymd_opt(year, 2, 29).is_some() {
        366
    } else {
        365
    }
}

/// The decimal-year axis value of a date: `year + ordinal0 / days_in_year`.
/// The scipy cross-check recomputes exactly this formula, so keep it.
pub(super) fn date_axis(date: NaiveDate) -> f64 {
    let year = date.year();
    f64::from(year) + f64::from(date.ordinal0()) / f64::from(days_in_year(year))
}

fn format_date(t: f64) -> Option<String> {
    if !t.is_finite() || t.abs() > MAX_CALENDAR_YEAR {
        return None;
    }
    let floor = t.floor();
    // In range by the check above, so the cast is exact.
    let mut year = floor as i32;
    let mut day = ((t - floor) * f64::from(days_in_year(year))).round() as u32;
    if day >= days_in_year(year) {
        // Rounded up past the last day: it is New Year's Day.
        day = 0;
        year += 1;
    }
    let date = NaiveDate::from_yo_opt(year, day + 1)?;
    Some(format!(
        "{:04}-{:02}-{:02}",
        date.year(),
        date.month(),
        date.day()
    ))
}

/// Nearest `year + (k - 1) / steps`, as `(year, k)` with `k` in `1..=steps`.
fn format_steps(t: f64, steps: i64) -> Option<(i64, i64)> {
    if !t.is_finite() || t.abs() > MAX_CALENDAR_YEAR {
        return None;
    }
    let n = (t * steps as f64).round() as i64;
    Some((n.div_euclid(steps), n.rem_euclid(steps) + 1))
}

/// Up to 6 significant digits, without trailing zeros or a needless exponent.
fn format_number(t: f64) -> String {
    if !t.is_finite() {
        return format!("{t}");
    }
    if t == 0.0 {
        return "0".into();
    }
    // Rounding through the exponent form keeps 6 significant digits at any
    // magnitude; Rust's shortest round-trip display then drops the zeros.
    let rounded: f64 = format!("{t:.5e}").parse().unwrap_or(t);
    let a = rounded.abs();
    if (1e-4..1e9).contains(&a) {
        format!("{rounded}")
    } else {
        format!("{rounded:e}")
    }
}

/// Which kind a field looks like, judged from its shape alone (a malformed
/// `2024-02-30` still looks like a date). Numbers are accepted under either
/// decimal convention: the column's convention is decided later.
pub(super) fn detect(s: &str) -> Option<TimeKind> {
    let s = s.trim();
    if quarter_parts(s).is_some() {
        Some(TimeKind::Quarter)
    } else if date_parts(s).is_some() {
        Some(TimeKind::Date)
    } else if month_parts(s).is_some() {
        Some(TimeKind::Month)
    } else if [Decimal::Point, Decimal::Comma]
        .iter()
        .any(|&d| parse_number(s, d) != Err(NumError::Invalid))
    {
        Some(TimeKind::Number)
    } else {
        None
    }
}

/// Places a field of a column of `kind` on the axis.
pub(super) fn parse(s: &str, kind: TimeKind, dec: Decimal) -> Result<f64, TimeError> {
    let s = s.trim();
    match kind {
        TimeKind::Number => match parse_number(s, dec) {
            Ok(t) if t.abs() <= MAX_ABS_TIME => Ok(t),
            Ok(_) | Err(NumError::NotFinite) => Err(TimeError::OutOfRange),
            Err(NumError::Invalid) => Err(other_kind(s, kind)),
        },
        TimeKind::Date => match date_parts(s) {
            Some((y, m, d)) => NaiveDate::from_ymd_opt(y, m, d)
                .map(date_axis)
                .ok_or(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
        TimeKind::Month => match month_parts(s) {
            Some((y, m)) if (1..=12).contains(&m) => Ok(f64::from(y) + f64::from(m - 1) / 12.0),
            Some(_) => Err(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
        TimeKind::Quarter => match quarter_parts(s) {
            Some((y, q)) if (1..=4).contains(&q) => Ok(f64::from(y) + f64::from(q - 1) / 4.0),
            Some(_) => Err(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
    }
}

/// The error for a field that does not have the column's shape: another
/// kind of time, or no time at all (which includes a number that reads only
/// under the other decimal convention).
fn other_kind(s: &str, kind: TimeKind) -> TimeError {
    match detect(s) {
        Some(k) if k != kind => TimeError::OtherKind(k),
        _ => TimeError::Invalid,
    }
}

/// Exactly four ASCII digits: the year of the calendar forms. Four digits
/// keep `20240` or `-5` from passing as a year, and every such year is
/// inside chrono's range.
fn year4(s: &str) -> Option<i32> {
    if s.len() == 4 && s.bytes().all(|b| b.is_ascii_digit()) {
        s.parse().ok()
    } else {
        None
    }
}

/// One or two ASCII digits: a month or a day.
fn small(s: &str) -> Option<u32> {
    if (1..=2).contains(&s.len()) && s.bytes().all(|b| b.is_ascii_digit()) {
        s.parse().ok()
    } else {
        None
    }
}

/// `YYYY-MM-DD` (one-digit month and day tolerated), not checked against the calendar.
fn date_parts(s: &str) -> Option<(i32, u32, u32)> {
    let mut it = s.split('-');
    let (y, m, d) = (it.next()?, it.next()?, it.next()?);
    if it.next().is_some() {
        return None;
    }
    Some((year4(y)?, small(m)?, small(d)?))
}

/// `YYYY-MM`, the month not yet checked to be 1–12.
fn month_parts(s: &str) -> Option<(i32, u32)> {
    let (y, m) = s.split_once('-')?;
    Some((year4(y)?, small(m)?))
}

/// `2024Q3`, `2024-Q3`, `2024 Q3` (any case), the quarter not yet checked to be 1–4.
fn quarter_parts(s: &str) -> Option<(i32, u32)> {
    let y = s.get(..4)?;
    let rest = s.get(4..)?;
    let rest = rest
        .strip_prefix('-')
        .or_else(|| rest.strip_prefix(' '))
        .unwrap_or(rest);
    let q = rest.strip_prefix(['q', 'Q'])?;
    if q.len() == 1 && q.bytes().all(|b| b.is_ascii_digit()) {
        Some((year4(y)?, q.parse().ok()?))
    } else {
        None
    }
}

/// Unix epoch times: how a whole column of them is read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Epoch {
    /// Seconds since 1970-01-01 00:00 UTC, 10 digits above 1e9.
    Seconds,
    /// Milliseconds since 1970-01-01 00:00 UTC, 13 digits.
    Milliseconds,
}

impl Epoch {
    pub(super) fn describe(self) -> &'static str {
        match self {
            Epoch::Seconds => "seconds",
            Epoch::Milliseconds => "milliseconds",
        }
    }
}

/// Whether a whole time column is Unix epoch times: every field (trimmed)
/// is a plain whole number of 10 digits above 1e9 (seconds, 2001-09-09 to
/// 2286-11-20) or every field one of 13 digits (milliseconds, the same
/// span). Nothing else reads as epoch: such numbers were never valid plain
/// times (beyond ±1e9), a single other field keeps the column plain, and
/// seconds and milliseconds never mix.
pub(super) fn epoch_of<'a>(mut fields: impl Iterator<Item = &'a str>) -> Option<Epoch> {
    let unit = |s: &str| -> Option<Epoch> {
        let s = s.trim();
        if !s.bytes().all(|b| b.is_ascii_digit()) {
            return None;
        }
        match s.len() {
            10 if s > "1000000000" => Some(Epoch::Seconds),
            13 if !s.starts_with('0') => Some(Epoch::Milliseconds),
            _ => None,
        }
    };
    let first = unit(fields.next()?)?;
    fields.all(|f| unit(f) == Some(first)).then_some(first)
}

/// The calendar axis value (decimal year, as [`date_axis`] with the time
/// of day: `year + (ordinal0 + seconds_of_day / 86400) / days_in_year`) of
/// an epoch time that [`epoch_of`] accepted; UTC.
pub(super) fn epoch_axis(s: &str, unit: Epoch) -> Option<f64> {
    let v: i64 = s.trim().parse().ok()?;
    let (secs, ms) = match unit {
        Epoch::Seconds => (v, 0),
        Epoch::Milliseconds => (v.div_euclid(1000), v.rem_euclid(1000)),
    };
    let dt = chrono::DateTime::from_timestamp(secs, 0)?.naive_utc();
    let date = dt.date();
    let day_seconds = f64::from(dt.time().num_seconds_from_midnight()) + ms as f64 / 1000.0;
    let year = date.year();
    Some(
        f64::from(year)
            + (f64::from(date.ordinal0()) + day_seconds / 86_400.0) / f64::from(days_in_year(year)),
    )
}

/// An epoch time that [`epoch_of`] accepted, as `2023-11-14 22:13:20 UTC`
/// (whole seconds), for messages.
pub(super) fn epoch_text(s: &str, unit: Epoch) -> Option<String> {
    let v: i64 = s.trim().parse().ok()?;
    let secs = match unit {
        Epoch::Seconds => v,
        Epoch::Milliseconds => v.div_euclid(1000),
    };
    let dt = chrono::DateTime::from_timestamp(secs, 0)?;
    Some(dt.format("%Y-%m-%d %H:%M:%S UTC").to_string())
}
