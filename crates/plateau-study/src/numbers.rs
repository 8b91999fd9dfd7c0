//! Numbers for people: the one place that decides how many digits a
//! number shows, in the CLI's tables and on the page (the charts' labels
//! too). `--json` is not formatted here: it keeps every bit.
//!
//! The rules:
//!
//! - **An estimate with a standard error** shows the digits its standard
//!   error supports: it is rounded at the decimal place of the standard
//!   error's second significant digit ([`SE_DIGITS`]; the JCGM 100:2008
//!   "GUM" §7.2.6 asks that an uncertainty be given with at most two
//!   significant digits and the estimate rounded to match), but never to
//!   fewer than [`MIN_ESTIMATE_DIGITS`] significant digits of the estimate
//!   itself. `12345.678 ± 23.4` shows as `12,346 ± 23`. The standard error
//!   shows its two digits; the estimate's interval shows the estimate's
//!   digits ([`Precision::show`]).
//! - **A value without a standard error** (a criterion, a statistic, an
//!   estimate nobody put an error on) shows [`PLAIN_DIGITS`] significant
//!   digits, trailing zeros dropped; digits left of the decimal point are
//!   never turned into zeros (`1234567.8` shows as `1,234,568`).
//! - Whole parts carry thousands separators (`,`), except times on the
//!   data's axis ([`Precision::show_time`]: `2024.357` is a year). Between `1e-4` and
//!   `1e12` (magnitudes [`SCIENTIFIC_BELOW`], [`SCIENTIFIC_FROM`]) no
//!   scientific notation; outside it `1.5e12`, `2.3e-7`, which JavaScript's
//!   `Number` and Rust's `parse` both read. `-0` shows as `0`; NaN as `–`,
//!   infinities as `infinity` and `-infinity`.
//! - **p-values and Akaike weights** ([`probability`]): three decimals,
//!   `<0.001` below 0.001 and `>0.999` above 0.999; rounding never lifts
//!   a p under 0.05 or 0.01 to the threshold's text.
//! - **CSV** ([`csv`]): the shortest text that parses back to the same
//!   `f64`, no separators.

/// Significant digits of a value shown without a standard error.
pub const PLAIN_DIGITS: i32 = 4;
/// Significant digits of the standard error that set an estimate's digits.
pub const SE_DIGITS: i32 = 2;
/// An estimate never shows fewer significant digits than this.
pub const MIN_ESTIMATE_DIGITS: i32 = 3;
/// No estimate shows more significant digits than this (an `f64` holds
/// about 15.9).
pub const MAX_DIGITS: i32 = 15;
/// Magnitudes below this are written in scientific notation.
pub const SCIENTIFIC_BELOW: f64 = 1e-4;
/// Magnitudes from this on are written in scientific notation.
pub const SCIENTIFIC_FROM: f64 = 1e12;

/// Where a number is rounded: at the decimal place `10^place` (`-2` keeps
/// two decimals, `1` rounds to tens). Made from an estimate (and its
/// standard error) and used for the estimate, its interval and anything
/// else that should show the same digits.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Precision {
    place: i32,
    /// Digits from a standard error are all significant (trailing zeros
    /// kept); plain values drop trailing zeros and keep whole parts.
    plain: bool,
}

/// The decimal exponent of `x`'s leading digit (`floor(log10 |x|)`), for a
/// finite non-zero `x`; corrected when `log10` lands a hair off a power
/// of ten.
fn exponent(x: f64) -> i32 {
    let a = x.abs();
    let mut e = a.log10().floor() as i32;
    if 10f64.powi(e) > a {
        e -= 1;
    } else if 10f64.powi(e + 1) <= a {
        e += 1;
    }
    e
}

fn usable(x: f64) -> bool {
    x.is_finite() && x != 0.0
}

impl Precision {
    /// [`PLAIN_DIGITS`] significant digits of `x`.
    pub fn plain(x: f64) -> Precision {
        let place = if usable(x) {
            exponent(x) - (PLAIN_DIGITS - 1)
        } else {
            -(PLAIN_DIGITS - 1)
        };
        Precision { place, plain: true }
    }

    /// The digits an estimate's standard error supports (see the module
    /// notes); without a usable standard error (none, zero, not finite)
    /// the plain rule.
    pub fn of_estimate(estimate: f64, std_error: Option<f64>) -> Precision {
        let Some(se) = std_error.filter(|s| usable(*s)) else {
            return Precision::plain(estimate);
        };
        let mut place = exponent(se) - (SE_DIGITS - 1);
        if usable(estimate) {
            let e = exponent(estimate);
            place = place
                .min(e - (MIN_ESTIMATE_DIGITS - 1))
                .max(e - (MAX_DIGITS - 1));
        }
        Precision {
            place,
            plain: false,
        }
    }

    /// An estimate known with its 95% interval but not its standard error
    /// (milestone times, forecast values, summary rows): half the
    /// interval's width over 1.96 stands in for the standard error, as a
    /// delta-method interval is `estimate ± 1.96 se` in large samples. An
    /// interval with an open or non-finite side gives the plain rule.
    pub fn of_interval(estimate: f64, ci95: Option<[f64; 2]>) -> Precision {
        let se = ci95
            .map(|[lo, hi]| (hi - lo).abs() / (2.0 * 1.96))
            .filter(|s| usable(*s));
        Precision::of_estimate(estimate, se)
    }

    /// `x` rounded at this precision.
    pub fn show(&self, x: f64) -> String {
        self.render(x, true)
    }

    /// A time on the data's axis (a year such as `2024.357`, a t0) at this
    /// precision, without thousands separators: a year is not a quantity.
    pub fn show_time(&self, x: f64) -> String {
        self.render(x, false)
    }

    fn render(&self, x: f64, grouped: bool) -> String {
        if !x.is_finite() {
            return not_finite(x);
        }
        let a = x.abs();
        if a != 0.0 && !(SCIENTIFIC_BELOW..SCIENTIFIC_FROM).contains(&a) {
            // Significant digits of x at this place, at least one.
            let digits = (exponent(x) - self.place + 1).clamp(1, MAX_DIGITS + 2);
            let s = format!("{x:.prec$e}", prec = (digits - 1) as usize);
            let s = if self.plain { trim_mantissa(&s) } else { s };
            return no_negative_zero(s);
        }
        let place = if self.plain {
            self.place.min(0)
        } else {
            self.place
        };
        let s = if place <= 0 {
            let s = format!("{x:.prec$}", prec = (-place) as usize);
            if self.plain {
                trim_zeros(&s)
            } else {
                s
            }
        } else {
            let unit = 10f64.powi(place);
            format!("{:.0}", (x / unit).round() * unit)
        };
        no_negative_zero(if grouped { group(&s) } else { s })
    }
}

fn not_finite(x: f64) -> String {
    if x.is_nan() {
        "–".into()
    } else if x > 0.0 {
        "infinity".into()
    } else {
        "-infinity".into()
    }
}

/// `1.500` → `1.5`, `2.000` → `2`.
fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// `1.500e12` → `1.5e12`.
fn trim_mantissa(s: &str) -> String {
    match s.split_once('e') {
        Some((m, e)) => format!("{}e{e}", trim_zeros(m)),
        None => s.to_string(),
    }
}

/// `-0.000` → `0.000`: a minus sign only in front of a non-zero digit.
fn no_negative_zero(s: String) -> String {
    match s.strip_prefix('-') {
        Some(rest)
            if !rest
                .split('e')
                .next()
                .unwrap_or("")
                .bytes()
                .any(|b| (b'1'..=b'9').contains(&b)) =>
        {
            rest.to_string()
        }
        _ => s,
    }
}

/// Thousands separators in the whole part: `1234567.5` → `1,234,567.5`.
fn group(s: &str) -> String {
    let (sign, rest) = match s.strip_prefix('-') {
        Some(r) => ("-", r),
        None => ("", s),
    };
    let (whole, frac) = match rest.find('.') {
        Some(i) => rest.split_at(i),
        None => (rest, ""),
    };
    let n = whole.len();
    let mut out = String::with_capacity(s.len() + n / 3);
    out.push_str(sign);
    for (i, c) in whole.chars().enumerate() {
        if i > 0 && (n - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out.push_str(frac);
    out
}

/// A value without a standard error: [`PLAIN_DIGITS`] significant digits.
pub fn number(x: f64) -> String {
    Precision::plain(x).show(x)
}

/// An optional value; `–` when there is none.
pub fn maybe(x: Option<f64>) -> String {
    x.map_or_else(|| "–".into(), number)
}

/// The standard error beside its estimate: its [`SE_DIGITS`] significant
/// digits, or the estimate's digits when those are finer.
pub fn std_error(estimate: f64, se: f64) -> String {
    let p = Precision::of_estimate(estimate, Some(se));
    if !usable(se) {
        return p.show(se);
    }
    let own = exponent(se) - (SE_DIGITS - 1);
    Precision {
        place: own.max(p.place),
        plain: false,
    }
    .show(se)
}

/// `estimate ± se` at the digits the standard error supports, or the
/// estimate alone (plain digits) without one.
pub fn with_se(estimate: f64, se: Option<f64>) -> String {
    match se.filter(|s| s.is_finite()) {
        Some(s) => format!(
            "{} ± {}",
            Precision::of_estimate(estimate, Some(s)).show(estimate),
            std_error(estimate, s)
        ),
        None => number(estimate),
    }
}

/// Thresholds a p-value is read against: rounding never carries a p
/// below one of them to a text at or above it.
pub const P_THRESHOLDS: [f64; 2] = [0.01, 0.05];

/// A p-value or an Akaike weight: three decimals, `<0.001` and `>0.999`
/// at the ends; a p just under 5% or 1% keeps the decimals that show it
/// under (`0.0496`, not `0.050`).
pub fn probability(p: f64) -> String {
    if !p.is_finite() {
        return not_finite(p);
    } else if p < 0.001 {
        return "<0.001".into();
    } else if p > 0.999 {
        return ">0.999".into();
    }
    let mut decimals = 3;
    loop {
        let s = format!("{p:.decimals$}");
        let shown: f64 = s.parse().unwrap_or(p);
        let crosses = P_THRESHOLDS.iter().any(|&t| p < t && shown >= t);
        if !crosses || decimals >= 17 {
            return s;
        }
        decimals += 1;
    }
}

/// An amount of time in the axis' unit, for a sentence: `21.9 months`,
/// `1 quarter`; a numeric time column's header stays as written
/// (`21.9 (in weeks since launch)`), no unit gives `21.9 time units`.
/// `amount` is already formatted.
pub fn amount_of_time(amount: &str, unit: &str) -> String {
    const PERIODS: [&str; 5] = ["day", "week", "month", "quarter", "year"];
    let lower = unit.to_lowercase();
    if PERIODS.contains(&lower.as_str()) {
        let s = if amount == "1" { "" } else { "s" };
        format!("{amount} {lower}{s}")
    } else if PERIODS.iter().any(|p| lower == format!("{p}s")) {
        format!("{amount} {lower}")
    } else if unit.trim().is_empty() {
        format!("{amount} time units")
    } else {
        format!("{amount} (in {unit})")
    }
}

/// A number for a CSV file: the shortest text that parses back to the
/// same `f64` (Rust's shortest round-trip digits, in positional or
/// exponent form, whichever is shorter), no separators; `-0` as `0`,
/// `NaN`, `inf`, `-inf` as Rust writes and reads them.
pub fn csv(x: f64) -> String {
    if x == 0.0 {
        return "0".into();
    }
    let positional = format!("{x}");
    let exp = format!("{x:e}");
    if exp.len() < positional.len() {
        exp
    } else {
        positional
    }
}

#[cfg(test)]
mod tests;
