//! The time column: recognising how a time is written (plain number, ISO
//! date, ISO week, year-month, quarter), mapping it onto the numeric axis
//! ([`TimeAxis`]), and turning axis values back into the same kind of text.
//!
//! Calendar axes count in the data's own period (days, weeks, months,
//! quarters or years, detected from the data) from a fixed origin in 2000,
//! so a fitted rate is per that period and durations are in it.

use super::number::{parse_number, Decimal, NumError};
use super::TimeKind;
use chrono::{Datelike, NaiveDate, Timelike};
use serde::Serialize;

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
            TimeKind::Week => "an ISO week",
            TimeKind::Month => "a year-month",
            TimeKind::Quarter => "a quarter",
        }
    }

    /// The written form, for messages that say what was expected.
    pub(super) fn expected_form(self) -> &'static str {
        match self {
            TimeKind::Number => "a number such as 12 or 2019.5",
            TimeKind::Date => "a date YYYY-MM-DD such as 2024-03-31",
            TimeKind::Week => "an ISO week such as 2024-W09 or 2024W09",
            TimeKind::Month => "a year-month YYYY-MM such as 2024-03",
            TimeKind::Quarter => "a quarter such as 2024Q3, 2024-Q3 or 2024 Q3",
        }
    }
}

/// The period a calendar axis counts in: a difference of 1 on the axis is
/// one of these, so a fitted rate is per period and a duration is in periods.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Period {
    Day,
    Week,
    Month,
    Quarter,
    Year,
}

impl Period {
    /// `day`, `week`, `month`, `quarter` or `year`: the JSON's `time_unit`.
    pub fn name(self) -> &'static str {
        match self {
            Period::Day => "day",
            Period::Week => "week",
            Period::Month => "month",
            Period::Quarter => "quarter",
            Period::Year => "year",
        }
    }
}

/// Which day of the month the dates of a month-based grid fall on.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Anchor {
    /// The same day of every month, 1 to 28 (1: month-start data).
    Day(u32),
    /// The last day of every month (month-end data).
    End,
}

/// Where the axis counts from and in what steps.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Grid {
    /// Plain numbers: the axis is the number itself.
    Number,
    /// Days since `origin` (days from the common era, chrono's count).
    Days { origin: i32 },
    /// Weeks since `origin` (a day of the data's weekday).
    Weeks { origin: i32 },
    /// Steps of `step` months (1, 3 or 12) since the absolute month
    /// `origin` (`12·year + month − 1`), each on `anchor`'s day.
    Months {
        origin: i32,
        step: i32,
        anchor: Anchor,
    },
}

/// The fixed origin year of every calendar axis: the same date has the
/// same axis value in every series and file, and values stay small exact
/// integers on the data's grid (2023-05 is month 280, 2023Q3 quarter 94).
pub const ORIGIN_YEAR: i32 = 2000;
const ORIGIN_MONTH: i32 = 12 * ORIGIN_YEAR;

fn days_of(date: NaiveDate) -> i32 {
    date.num_days_from_ce()
}

fn date_of_days(days: i64) -> Option<NaiveDate> {
    NaiveDate::from_num_days_from_ce_opt(i32::try_from(days).ok()?)
}

/// 2000-01-01 as chrono's day count.
fn day_origin() -> i32 {
    days_of(NaiveDate::from_ymd_opt(ORIGIN_YEAR, 1, 1).expect("a real date"))
}

/// Monday 2000-01-03, the first day of ISO week 2000-W01.
fn week_origin() -> i32 {
    days_of(NaiveDate::from_ymd_opt(ORIGIN_YEAR, 1, 3).expect("a real date"))
}

fn month_index(date: NaiveDate) -> i32 {
    12 * date.year() + date.month0() as i32
}

fn last_day(year: i32, month: u32) -> Option<u32> {
    let (ny, nm) = if month == 12 {
        (year + 1, 1)
    } else {
        (year, month + 1)
    };
    NaiveDate::from_ymd_opt(ny, nm, 1)?
        .pred_opt()
        .map(|d| d.day())
}

fn is_month_end(date: NaiveDate) -> bool {
    date.succ_opt().is_some_and(|n| n.day() == 1)
}

fn gcd(a: i64, b: i64) -> i64 {
    if b == 0 {
        a.abs()
    } else {
        gcd(b, a % b)
    }
}

/// The numeric time axis of a series, in the data's own period.
///
/// Dates, ISO weeks, months and quarters are counted in their period from a
/// fixed origin in 2000 ([`ORIGIN_YEAR`]): days since 2000-01-01, weeks
/// since the week of 2000-01-03 (ISO 2000-W01; date-written weekly data
/// count from the first day of their weekday on or after it), months since
/// 2000-01, quarters since 2000Q1, years since 2000. Date columns are put
/// on the coarsest grid their dates fit: all the same day of the month (1
/// to 28) or all month ends is month data (quarter data when every step is
/// a multiple of 3 months, year data for 12); otherwise weekly when every
/// step is a multiple of 7 days; otherwise days. Month and quarter columns
/// whose steps are all multiples of 3 or 12 months count in quarters or
/// years. Plain numbers keep their value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct TimeAxis {
    kind: TimeKind,
    grid: Grid,
}

impl Serialize for TimeAxis {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        let mut st = s.serialize_struct("TimeAxis", 2)?;
        st.serialize_field("unit", &self.period().map(Period::name))?;
        st.serialize_field("origin", &self.origin_text())?;
        st.end()
    }
}

impl TimeAxis {
    /// The axis of plain numbers (the number is the axis value).
    pub const NUMBER: TimeAxis = TimeAxis {
        kind: TimeKind::Number,
        grid: Grid::Number,
    };

    /// How the times were written.
    pub fn kind(self) -> TimeKind {
        self.kind
    }

    /// The period a difference of 1 stands for; `None` for plain numbers.
    pub fn period(self) -> Option<Period> {
        match self.grid {
            Grid::Number => None,
            Grid::Days { .. } => Some(Period::Day),
            Grid::Weeks { .. } => Some(Period::Week),
            Grid::Months { step: 12, .. } => Some(Period::Year),
            Grid::Months { step: 3, .. } => Some(Period::Quarter),
            Grid::Months { .. } => Some(Period::Month),
        }
    }

    /// The period's name, `""` for plain numbers (see
    /// [`Series::time_unit`](super::Series::time_unit) for their header).
    pub fn unit(self) -> &'static str {
        self.period().map_or("", Period::name)
    }

    /// Axis value 0 as text in the data's form (`2000-01`, `2000Q1`,
    /// `2000-01-31`, `2000-W01`); `None` for plain numbers.
    pub fn origin_text(self) -> Option<String> {
        (self.grid != Grid::Number).then(|| self.format(0.0))
    }

    /// Decides the grid of a column of `kind` from its raw times (see
    /// [`parse`]); `epoch` columns stay on days (they carry times of day).
    pub(super) fn detect(kind: TimeKind, raws: &[f64], epoch: bool) -> TimeAxis {
        let months = |base: i32, anchor: Anchor, m: &mut dyn Iterator<Item = i64>| {
            // One pass, no copy: the gcd of the steps from the first time
            // is the gcd of all pairwise steps.
            let (mut first, mut lo, mut g) = (None, i64::MAX, 0);
            for x in m {
                let x0 = *first.get_or_insert(x);
                lo = lo.min(x);
                g = gcd(g, x - x0);
            }
            let lo = if lo == i64::MAX { 0 } else { lo };
            let step = if g != 0 && g % 12 == 0 {
                12
            } else if g != 0 && g % 3 == 0 {
                3
            } else {
                base
            };
            let step = step.max(base);
            let offset = (lo - i64::from(ORIGIN_MONTH)).rem_euclid(i64::from(step)) as i32;
            Grid::Months {
                origin: ORIGIN_MONTH + offset,
                step,
                anchor,
            }
        };
        let grid = match kind {
            TimeKind::Number => Grid::Number,
            TimeKind::Week => Grid::Weeks {
                origin: week_origin(),
            },
            TimeKind::Month => months(1, Anchor::Day(1), &mut raws.iter().map(|&r| r as i64)),
            TimeKind::Quarter => months(3, Anchor::Day(1), &mut raws.iter().map(|&r| r as i64)),
            TimeKind::Date if epoch => Grid::Days {
                origin: day_origin(),
            },
            TimeKind::Date => date_grid(raws, &months),
        };
        TimeAxis { kind, grid }
    }

    /// The axis value of a raw time from [`parse`] or [`epoch_raw`].
    pub(super) fn to_axis(self, raw: f64) -> f64 {
        match (self.kind, self.grid) {
            (_, Grid::Number) => raw,
            (TimeKind::Month | TimeKind::Quarter, Grid::Months { origin, step, .. }) => {
                (raw - f64::from(origin)) / f64::from(step)
            }
            _ => self.days_to_axis(raw).unwrap_or(f64::NAN),
        }
    }

    /// The date of grid point `k` of a month-based grid.
    fn grid_date(origin: i32, step: i32, anchor: Anchor, k: i64) -> Option<NaiveDate> {
        let m = i64::from(origin) + k * i64::from(step);
        let year = i32::try_from(m.div_euclid(12)).ok()?;
        let month = m.rem_euclid(12) as u32 + 1;
        let day = match anchor {
            Anchor::Day(d) => d,
            Anchor::End => last_day(year, month)?,
        };
        NaiveDate::from_ymd_opt(year, month, day)
    }

    /// A day count (chrono's days from the common era, fractional for a
    /// time of day) on this axis: exact on the grid, linear between grid
    /// points.
    fn days_to_axis(self, days: f64) -> Option<f64> {
        if !days.is_finite() || days.abs() > 7e7 {
            return None;
        }
        match self.grid {
            Grid::Number => None,
            Grid::Days { origin } => Some(days - f64::from(origin)),
            Grid::Weeks { origin } => Some((days - f64::from(origin)) / 7.0),
            Grid::Months {
                origin,
                step,
                anchor,
            } => {
                let date = date_of_days(days.floor() as i64)?;
                let mut k = i64::from(month_index(date) - origin).div_euclid(i64::from(step));
                let mut g0 = Self::grid_date(origin, step, anchor, k)?;
                if date < g0 {
                    k -= 1;
                    g0 = Self::grid_date(origin, step, anchor, k)?;
                }
                let g1 = Self::grid_date(origin, step, anchor, k + 1)?;
                let (d0, d1) = (f64::from(days_of(g0)), f64::from(days_of(g1)));
                Some(k as f64 + (days - d0) / (d1 - d0))
            }
        }
    }

    /// The date at (the nearest grid point to) axis value `t`.
    fn date_at(self, t: f64) -> Option<NaiveDate> {
        if !t.is_finite() || t.abs() > 1e8 {
            return None;
        }
        let k = t.round() as i64;
        match self.grid {
            Grid::Number => None,
            Grid::Days { origin } => date_of_days(i64::from(origin) + k),
            Grid::Weeks { origin } => date_of_days(i64::from(origin) + 7 * k),
            Grid::Months {
                origin,
                step,
                anchor,
            } => Self::grid_date(origin, step, anchor, k),
        }
    }

    /// Turns an axis value back into text of the data's own form, at the
    /// nearest point of the data's grid: a date (`2024-03-31`; month-end
    /// data stay on month ends, month-start data on the 1st), an ISO week
    /// (`2024-W09`), a month (`2024-03`) or a quarter (`2024Q3`); plain
    /// numbers as a short number with up to 6 significant digits and no
    /// trailing zeros. Values outside the calendar (or not finite) are
    /// shown as numbers.
    pub fn format(self, t: f64) -> String {
        let Some(date) = self.date_at(t) else {
            return format_number(t);
        };
        match self.kind {
            TimeKind::Number => format_number(t),
            TimeKind::Date => format!("{:04}-{:02}-{:02}", date.year(), date.month(), date.day()),
            TimeKind::Week => {
                let w = date.iso_week();
                format!("{:04}-W{:02}", w.year(), w.week())
            }
            TimeKind::Month => format!("{:04}-{:02}", date.year(), date.month()),
            TimeKind::Quarter => format!("{:04}Q{}", date.year(), date.month0() / 3 + 1),
        }
    }

    /// Reads one time written in the data's format (e.g. a forecast
    /// horizon `2030-06-30`, `2031Q2`, `2031-W05` or `48`) and places it
    /// on the axis (between grid points when it falls between them). On
    /// the calendar axes a plain number is also accepted as a decimal year
    /// (`2031.5` is 2031-07-02). The error says what was expected.
    pub fn parse_time(self, s: &str) -> Result<f64, String> {
        let text = s.trim();
        let kind = self.kind;
        let placed = match parse(text, kind, Decimal::Point) {
            Ok(raw) => Ok(self.to_axis(raw)),
            Err(e) => {
                // A month (`2024-06`) on a month-based grid of dates: that
                // month's grid date.
                let month = (kind == TimeKind::Date)
                    .then(|| month_parts(text))
                    .flatten()
                    .filter(|&(_, m)| (1..=12).contains(&m))
                    .and_then(|(y, m)| match self.grid {
                        Grid::Months { anchor, .. } => {
                            let day = match anchor {
                                Anchor::Day(d) => d,
                                Anchor::End => last_day(y, m)?,
                            };
                            NaiveDate::from_ymd_opt(y, m, day)
                        }
                        _ => None,
                    })
                    .and_then(|d| self.days_to_axis(f64::from(days_of(d))));
                let year = (kind != TimeKind::Number)
                    .then(|| parse(text, TimeKind::Number, Decimal::Point).ok())
                    .flatten()
                    .and_then(decimal_year_days)
                    .and_then(|d| self.days_to_axis(d));
                month.or(year).ok_or(e)
            }
        };
        match placed {
            Ok(t) if t.is_finite() => Ok(t),
            Ok(_) => Err(format!(
                "out of range: expected {} (the data's time format), found {text:?}",
                kind.expected_form()
            )),
            Err(e) => {
                let why = match e {
                    TimeError::NoSuchTime => "no such time: ",
                    TimeError::OutOfRange => "out of range: ",
                    _ => "",
                };
                Err(format!(
                    "{why}expected {} (the data's time format), found {text:?}",
                    kind.expected_form()
                ))
            }
        }
    }

    /// The first point of the data's grid at or after `t` (calendar grid
    /// points are the whole numbers of the axis); plain numbers unchanged.
    /// A forecast horizon between two periods is moved to the next one.
    pub fn snap_up(self, t: f64) -> f64 {
        if self.grid == Grid::Number || !t.is_finite() {
            t
        } else {
            (t - 1e-9).ceil()
        }
    }

    /// Axis values of tick marks on natural calendar boundaries between
    /// `lo` and `hi`, at most `max` of them (at least 2 when the range
    /// allows): days, weeks, or the starts (for month-end data: the ends)
    /// of months, quarters, years, or 2, 5, 10, … years. `None` for plain
    /// numbers, where any evenly spaced numbers will do.
    pub fn ticks(self, lo: f64, hi: f64, max: usize) -> Option<Vec<f64>> {
        if self.grid == Grid::Number || !(lo.is_finite() && hi.is_finite() && lo < hi) {
            return None;
        }
        let max = max.max(2);
        // Candidate spacings in months for month boundaries.
        const MONTH_STEPS: [i64; 11] = [1, 2, 3, 6, 12, 24, 60, 120, 240, 600, 1200];
        let (lo_d, hi_d) = match self.grid {
            Grid::Days { origin } => (f64::from(origin) + lo, f64::from(origin) + hi),
            Grid::Weeks { origin } => (f64::from(origin) + 7.0 * lo, f64::from(origin) + 7.0 * hi),
            _ => (0.0, 0.0),
        };
        let within = |v: &Vec<f64>| !v.is_empty() && v.len() <= max;
        match self.grid {
            Grid::Number => None,
            Grid::Days { .. } | Grid::Weeks { .. } => {
                let per = if matches!(self.grid, Grid::Weeks { .. }) {
                    7
                } else {
                    1
                };
                for every in [1i64, 2, 7, 14].into_iter().filter(|e| e % per == 0) {
                    let units = every / per;
                    let v: Vec<f64> = ((lo.ceil() as i64)..=(hi.floor() as i64))
                        .filter(|k| {
                            if per == 7 {
                                k.rem_euclid(units) == 0
                            } else if every == 7 {
                                // Mondays.
                                date_of_days(i64::from(day_origin()) + k)
                                    .is_some_and(|d| d.weekday() == chrono::Weekday::Mon)
                            } else {
                                k.rem_euclid(every) == 0
                            }
                        })
                        .map(|k| k as f64)
                        .take(max + 1)
                        .collect();
                    if within(&v) {
                        return Some(v);
                    }
                }
                // Month boundaries: the 1st (the week holding it for weeks).
                let first = date_of_days(lo_d.floor() as i64)?;
                let last = date_of_days(hi_d.ceil() as i64)?;
                for every in MONTH_STEPS {
                    let mut v = Vec::new();
                    let mut m = i64::from(month_index(first)).div_euclid(every) * every;
                    while m <= i64::from(month_index(last)) && v.len() <= max {
                        let year = i32::try_from(m.div_euclid(12)).ok()?;
                        let d = NaiveDate::from_ymd_opt(year, m.rem_euclid(12) as u32 + 1, 1)?;
                        let t = self.days_to_axis(f64::from(days_of(d)))?;
                        let t = if per == 7 { t.ceil() } else { t };
                        if t >= lo && t <= hi && v.last() != Some(&t) {
                            v.push(t);
                        }
                        m += every;
                    }
                    if within(&v) {
                        return Some(v);
                    }
                }
                None
            }
            Grid::Months {
                origin,
                step,
                anchor,
            } => {
                // Grid point k sits in month origin + k·step; a boundary of
                // `every` months is where that month (plus one for month
                // ends, so ticks fall on the year's last day) is a multiple
                // of `every` after the grid's phase.
                let shift = i64::from(matches!(anchor, Anchor::End));
                let phase = (i64::from(origin) + shift).rem_euclid(i64::from(step));
                for every in MONTH_STEPS.into_iter().filter(|e| e % i64::from(step) == 0) {
                    let v: Vec<f64> = ((lo.ceil() as i64)..=(hi.floor() as i64))
                        .filter(|k| {
                            let m = i64::from(origin) + k * i64::from(step) + shift;
                            (m - phase).rem_euclid(every) == 0
                        })
                        .map(|k| k as f64)
                        .take(max + 1)
                        .collect();
                    if within(&v) {
                        return Some(v);
                    }
                }
                None
            }
        }
    }
}

/// The grid of a date column (raw times are chrono day counts), in passes
/// over the times without a copy of them.
fn date_grid(
    raws: &[f64],
    months: &dyn Fn(i32, Anchor, &mut dyn Iterator<Item = i64>) -> Grid,
) -> Grid {
    let days_grid = Grid::Days {
        origin: day_origin(),
    };
    let dates = || raws.iter().map(|&r| date_of_days(r as i64));
    if dates().any(|d| d.is_none()) {
        return days_grid;
    }
    let dates = || dates().flatten();
    let Some(first) = dates().next() else {
        return days_grid;
    };
    if dates().all(|d| d == first) {
        return days_grid;
    }
    let anchor = if first.day() <= 28 && dates().all(|d| d.day() == first.day()) {
        Some(Anchor::Day(first.day()))
    } else if dates().all(is_month_end) {
        Some(Anchor::End)
    } else {
        None
    };
    if let Some(anchor) = anchor {
        return months(1, anchor, &mut dates().map(|d| i64::from(month_index(d))));
    }
    let d0 = i64::from(days_of(first));
    let (lo, g) = dates().fold((d0, 0), |(lo, g), d| {
        let x = i64::from(days_of(d));
        (lo.min(x), gcd(g, x - d0))
    });
    if g % 7 == 0 {
        let offset = (lo - i64::from(week_origin())).rem_euclid(7) as i32;
        Grid::Weeks {
            origin: week_origin() + offset,
        }
    } else {
        days_grid
    }
}

/// A decimal year (`2031.5`) as a fractional chrono day count.
fn decimal_year_days(y: f64) -> Option<f64> {
    if !y.is_finite() || y.abs() > MAX_CALENDAR_YEAR {
        return None;
    }
    let floor = y.floor();
    let year = floor as i32;
    let start = NaiveDate::from_ymd_opt(year, 1, 1)?;
    Some(f64::from(days_of(start)) + (y - floor) * f64::from(days_in_year(year)))
}

/// Calendar values are only turned into dates inside chrono's range
/// (about ±262,000 years).
const MAX_CALENDAR_YEAR: f64 = 200_000.0;

fn days_in_year(year: i32) -> u32 {
    if NaiveDate::from_ymd_opt(year, 2, 29).is_some() {
        366
    } else {
        365
    }
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
    } else if week_parts(s).is_some() {
        Some(TimeKind::Week)
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

/// Reads a field of a column of `kind` as a raw time, which
/// [`TimeAxis::to_axis`] places on the axis once the whole column is read:
/// the number itself, a date's or ISO week's (Monday's) chrono day count,
/// or a month's or quarter's (first month's) absolute month `12·year + month − 1`.
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
                .map(|d| f64::from(days_of(d)))
                .ok_or(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
        TimeKind::Week => match week_parts(s) {
            Some((y, w)) => NaiveDate::from_isoywd_opt(y, w, chrono::Weekday::Mon)
                .map(|d| f64::from(days_of(d)))
                .ok_or(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
        TimeKind::Month => match month_parts(s) {
            Some((y, m)) if (1..=12).contains(&m) => Ok(f64::from(12 * y) + f64::from(m - 1)),
            Some(_) => Err(TimeError::NoSuchTime),
            None => Err(other_kind(s, kind)),
        },
        TimeKind::Quarter => match quarter_parts(s) {
            Some((y, q)) if (1..=4).contains(&q) => Ok(f64::from(12 * y) + f64::from(3 * (q - 1))),
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

/// `2024-W09` or `2024W09` (any case), the week not yet checked to exist.
fn week_parts(s: &str) -> Option<(i32, u32)> {
    let y = year4(s.get(..4)?)?;
    let rest = s.get(4..)?;
    let rest = rest.strip_prefix('-').unwrap_or(rest);
    let w = rest.strip_prefix(['w', 'W'])?;
    if w.len() == 2 && w.bytes().all(|b| b.is_ascii_digit()) {
        Some((y, w.parse().ok()?))
    } else {
        None
    }
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

/// The raw time of an epoch time that [`epoch_of`] accepted: chrono's day
/// count with the time of day as a fraction (UTC), placed on a day axis.
pub(super) fn epoch_raw(s: &str, unit: Epoch) -> Option<f64> {
    let v: i64 = s.trim().parse().ok()?;
    let (secs, ms) = match unit {
        Epoch::Seconds => (v, 0),
        Epoch::Milliseconds => (v.div_euclid(1000), v.rem_euclid(1000)),
    };
    let dt = chrono::DateTime::from_timestamp(secs, 0)?.naive_utc();
    let day_seconds = f64::from(dt.time().num_seconds_from_midnight()) + ms as f64 / 1000.0;
    Some(f64::from(days_of(dt.date())) + day_seconds / 86_400.0)
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
