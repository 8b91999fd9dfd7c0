//! Numbers as people write them: signs, decimal point or comma, thousands
//! separators and scientific notation.

/// Which character separates the integer part from the fraction.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Decimal {
    /// `1234.5`, `1,234.5`
    Point,
    /// `1234,5`, `1.234,5`
    Comma,
}

impl Decimal {
    fn char(self) -> char {
        match self {
            Decimal::Point => '.',
            Decimal::Comma => ',',
        }
    }

    /// Whether `c` may group thousands in the integer part.
    fn is_group_separator(self, c: char) -> bool {
        match c {
            ',' => self == Decimal::Point,
            '.' => self == Decimal::Comma,
            // space, no-break space, narrow no-break space, thin space,
            // apostrophe and right single quotation mark (Swiss style)
            ' ' | '\u{a0}' | '\u{202f}' | '\u{2009}' | '\'' | '\u{2019}' => true,
            _ => false,
        }
    }

    /// How a human would name this convention.
    pub(super) fn describe(self) -> &'static str {
        match self {
            Decimal::Point => "a decimal point",
            Decimal::Comma => "a decimal comma",
        }
    }

    pub(super) fn other(self) -> Decimal {
        match self {
            Decimal::Point => Decimal::Comma,
            Decimal::Comma => Decimal::Point,
        }
    }
}

/// Why a field is not a usable number.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum NumError {
    /// Not written as a number at all.
    Invalid,
    /// Infinite, or larger in magnitude than [`MAX_ABS`].
    NotFinite,
}

/// Larger magnitudes are refused: they are typing errors, and squaring them overflows.
pub(super) const MAX_ABS: f64 = 1e300;

fn all_digits(s: &str) -> bool {
    s.bytes().all(|b| b.is_ascii_digit())
}

/// Parses a trimmed or untrimmed number under the given decimal convention.
pub(super) fn parse_number(s: &str, dec: Decimal) -> Result<f64, NumError> {
    let s = s.trim();
    if is_plain(s, dec) {
        // The common case, read directly: the same decimal number as the
        // general path below rebuilds, and Rust's parse rounds correctly,
        // so the result is the same (a test compares the two paths).
        return match s.parse::<f64>() {
            Ok(v) if v.is_finite() && v.abs() <= MAX_ABS => Ok(v),
            Ok(_) => Err(NumError::NotFinite),
            Err(_) => Err(NumError::Invalid),
        };
    }
    parse_general(s, dec)
}

/// `-?digits[.digits][(e|E)[+-]digits]` with at least one mantissa digit,
/// and the `.` only under the decimal point: a number Rust's own parser
/// reads exactly as written.
fn is_plain(s: &str, dec: Decimal) -> bool {
    let b = s.as_bytes();
    let mut i = usize::from(b.first() == Some(&b'-'));
    let mut digits = 0;
    let mut point = false;
    while let Some(&c) = b.get(i) {
        match c {
            b'0'..=b'9' => digits += 1,
            b'.' if dec == Decimal::Point && !point => point = true,
            _ => break,
        }
        i += 1;
    }
    if digits == 0 {
        return false;
    }
    if i == b.len() {
        return true;
    }
    if !matches!(b[i], b'e' | b'E') {
        return false;
    }
    i += 1;
    if matches!(b.get(i), Some(b'+' | b'-')) {
        i += 1;
    }
    i < b.len() && b[i..].iter().all(u8::is_ascii_digit)
}

/// [`parse_number`] for every form: grouping, signs, the decimal comma.
fn parse_general(s: &str, dec: Decimal) -> Result<f64, NumError> {
    let (negative, body) = if let Some(r) = s.strip_prefix(['-', '\u{2212}']) {
        (true, r)
    } else if let Some(r) = s.strip_prefix('+') {
        (false, r)
    } else {
        (false, s)
    };
    let lower = body.to_ascii_lowercase();
    if matches!(lower.as_str(), "inf" | "infinity" | "\u{221e}") {
        return Err(NumError::NotFinite);
    }
    // 'e' and 'E' are ASCII, so the index is a character boundary.
    let (mantissa, exponent) = match body.find(['e', 'E']) {
        Some(i) => (&body[..i], Some(&body[i + 1..])),
        None => (body, None),
    };
    let exponent = match exponent {
        None => "0",
        Some(e) => {
            let digits = e.strip_prefix(['+', '-']).unwrap_or(e);
            if digits.is_empty() || !all_digits(digits) {
                return Err(NumError::Invalid);
            }
            e
        }
    };
    let (int_part, frac_part) = match mantissa.find(dec.char()) {
        Some(i) => (&mantissa[..i], &mantissa[i + 1..]),
        None => (mantissa, ""),
    };
    if !all_digits(frac_part) {
        return Err(NumError::Invalid);
    }
    let int_digits = if all_digits(int_part) {
        int_part.to_string()
    } else {
        grouped_digits(int_part, dec).ok_or(NumError::Invalid)?
    };
    if int_digits.is_empty() && frac_part.is_empty() {
        return Err(NumError::Invalid);
    }
    let text = format!(
        "{}{}.{}e{}",
        if negative { "-" } else { "" },
        if int_digits.is_empty() {
            "0"
        } else {
            &int_digits
        },
        if frac_part.is_empty() { "0" } else { frac_part },
        exponent
    );
    let v: f64 = text.parse().map_err(|_| NumError::Invalid)?;
    if !v.is_finite() || v.abs() > MAX_ABS {
        return Err(NumError::NotFinite);
    }
    Ok(v)
}

/// `1,234,567` → `1234567`: one separator kind, a first group of 1–3 digits
/// not starting with 0 (`0,123` never groups thousands), then groups of
/// exactly 3.
fn grouped_digits(int_part: &str, dec: Decimal) -> Option<String> {
    let sep = int_part.chars().find(|c| !c.is_ascii_digit())?;
    if !dec.is_group_separator(sep) {
        return None;
    }
    let mut out = String::with_capacity(int_part.len());
    for (i, group) in int_part.split(sep).enumerate() {
        let ok_len = if i == 0 {
            (1..=3).contains(&group.len()) && !group.starts_with('0')
        } else {
            group.len() == 3
        };
        if !ok_len || !all_digits(group) {
            return None;
        }
        out.push_str(group);
    }
    Some(out)
}

/// What one field says about the file's decimal convention.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Vote {
    Point,
    Comma,
    /// No separator, or one that reads either way (`1,234`, `1.234`).
    Neither,
}

/// Looks at where `,` and `.` sit in a field.
pub(super) fn vote(s: &str) -> Vote {
    let s = s.trim();
    let last_comma = s.rfind(',');
    let last_point = s.rfind('.');
    match (last_comma, last_point) {
        (None, None) => Vote::Neither,
        (Some(c), Some(p)) => {
            if c > p {
                Vote::Comma
            } else {
                Vote::Point
            }
        }
        (Some(_), None) => match separator_role(s, ',') {
            Role::Grouping => Vote::Point,
            Role::Decimal => Vote::Comma,
            Role::Ambiguous => Vote::Neither,
        },
        (None, Some(_)) => match separator_role(s, '.') {
            Role::Grouping => Vote::Comma,
            Role::Decimal => Vote::Point,
            Role::Ambiguous => Vote::Neither,
        },
    }
}

enum Role {
    Grouping,
    Decimal,
    Ambiguous,
}

/// The only separator in `s` is `sep`: is it grouping thousands, a decimal
/// mark, or could it be either?
fn separator_role(s: &str, sep: char) -> Role {
    let unsigned = s.strip_prefix(['-', '+', '\u{2212}']).unwrap_or(s);
    let mantissa = match unsigned.find(['e', 'E']) {
        Some(i) => &unsigned[..i],
        None => unsigned,
    };
    let groups: Vec<&str> = mantissa.split(sep).collect();
    let first_ok = groups
        .first()
        .is_some_and(|g| (1..=3).contains(&g.len()) && all_digits(g) && !g.starts_with('0'));
    let rest_ok = groups[1..].iter().all(|g| g.len() == 3 && all_digits(g));
    match (first_ok && rest_ok, groups.len()) {
        (true, 2) => Role::Ambiguous,
        (true, _) => Role::Grouping,
        (false, _) => Role::Decimal,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn number_like() -> impl Strategy<Value = String> {
        let piece = prop::sample::select(vec![
            "0", "1", "7", "9", "00", "123", ".", ",", "-", "+", "e", "E", "e-", "e+", " ", "'",
            "1e308", "inf", "\u{2212}",
        ]);
        prop::collection::vec(piece, 0..8).prop_map(|v| v.concat())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(2048))]

        /// The direct path for plain numbers gives exactly what the general
        /// path gives, for both conventions.
        #[test]
        fn plain_numbers_read_as_the_general_path_reads_them(s in number_like()) {
            for dec in [Decimal::Point, Decimal::Comma] {
                let t = s.trim();
                if is_plain(t, dec) {
                    prop_assert_eq!(parse_number(&s, dec), parse_general(t, dec), "{:?}", s);
                }
            }
        }

        #[test]
        fn written_floats_read_back_exactly(x in -1e300..1e300f64) {
            for text in [format!("{x}"), format!("{x:e}"), format!("{x:.3}")] {
                prop_assert!(is_plain(&text, Decimal::Point), "{}", text);
                prop_assert_eq!(parse_number(&text, Decimal::Point), parse_general(&text, Decimal::Point));
            }
        }
    }
}
