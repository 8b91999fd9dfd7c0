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
