//! The rules of `numbers` on worked values. The expected texts are worked
//! by hand from the rules stated in the module (the GUM's two digits of
//! the standard error, JCGM 100:2008 §7.2.6, cited from memory), and CSV
//! numbers are checked against Rust's own `f64` parser.

use super::*;
use proptest::prelude::*;

#[test]
fn an_estimate_shows_the_digits_of_its_standard_error() {
    // SE 23.4: its second significant digit is the units place.
    assert_eq!(with_se(12345.678, Some(23.4)), "12,346 ± 23");
    // SE 0.0123: rounded at the third decimal; the zero is significant.
    assert_eq!(with_se(0.5, Some(0.0123)), "0.500 ± 0.012");
    // SE 23,456: thousands; the estimate's zeros stand in for digits the
    // data do not support.
    assert_eq!(with_se(1234567.0, Some(23456.0)), "1,235,000 ± 23,000");
    // SE 98: tens would leave one significant digit of 123.456; three are kept.
    assert_eq!(with_se(123.456, Some(98.0)), "123 ± 98");
    // SE far above the estimate: three significant digits of the
    // estimate, the standard error at its own two.
    assert_eq!(with_se(1.23456, Some(5.678)), "1.23 ± 5.7");
    // A negative estimate, a tiny one, and an estimate of zero.
    assert_eq!(with_se(-0.034567, Some(0.0021)), "-0.0346 ± 0.0021");
    assert_eq!(with_se(0.0, Some(0.0123)), "0.000 ± 0.012");
    // Outside 1e-4 .. 1e12: scientific, the same place.
    assert_eq!(with_se(1.5e12, Some(2.3e10)), "1.500e12 ± 23,000,000,000");
    assert_eq!(with_se(3.21e-6, Some(4.5e-8)), "3.210e-6 ± 4.5e-8");
    // No usable standard error: the plain rule.
    assert_eq!(with_se(12345.678, None), "12,346");
    assert_eq!(with_se(2.5, Some(0.0)), "2.5 ± 0");
}

#[test]
fn an_interval_shows_the_digits_of_its_estimate() {
    let p = Precision::of_estimate(12345.678, Some(23.4));
    assert_eq!(p.show(12299.81), "12,300");
    assert_eq!(p.show(12391.5), "12,392");
    let p = Precision::of_estimate(0.5, Some(0.0123));
    assert_eq!([p.show(0.4759), p.show(0.52)], ["0.476", "0.520"]);
    // Without a standard error: the estimate's plain digits, zeros dropped.
    let p = Precision::plain(10.23456);
    assert_eq!([p.show(9.5), p.show(11.0001)], ["9.5", "11"]);
}

#[test]
fn an_interval_without_a_standard_error_stands_in_for_one() {
    // Half-width 0.049 / 1.96 = 0.025: rounded at the third decimal.
    let p = Precision::of_interval(2024.3567, Some([2024.3077, 2024.4057]));
    assert_eq!(
        [
            p.show_time(2024.3567),
            p.show_time(2024.3077),
            p.show(2024.4057)
        ],
        ["2024.357", "2024.308", "2,024.406"]
    );
    assert_eq!(Precision::of_interval(2.5, None), Precision::plain(2.5));
    assert_eq!(
        Precision::of_interval(2.5, Some([f64::NEG_INFINITY, 3.0])),
        Precision::plain(2.5)
    );
}

#[test]
fn plain_values_show_four_significant_digits() {
    assert_eq!(number(0.000123456), "0.0001235");
    assert_eq!(number(2.71838), "2.718");
    assert_eq!(number(2.5), "2.5");
    assert_eq!(number(100.0), "100");
    assert_eq!(number(-45.678), "-45.68");
    // The whole part is never replaced by zeros.
    assert_eq!(number(1234567.8), "1,234,568");
    assert_eq!(number(999_999_999_999.0), "999,999,999,999");
    assert_eq!(number(-12345.6), "-12,346");
}

#[test]
fn scientific_only_outside_1e_minus_4_to_1e12() {
    assert_eq!(number(1.5e12), "1.5e12");
    assert_eq!(number(1e12), "1e12");
    assert_eq!(number(-2.345678e15), "-2.346e15");
    assert_eq!(number(9.99e-5), "9.99e-5");
    assert_eq!(number(2.5e-7), "2.5e-7");
    assert_eq!(number(1e-4), "0.0001");
    // JavaScript's Number() and Rust's parse read these.
    assert_eq!("1.5e12".parse::<f64>().unwrap(), 1.5e12);
}

#[test]
fn zero_and_not_finite() {
    assert_eq!(number(0.0), "0");
    assert_eq!(number(-0.0), "0");
    // A negative value that rounds to zero shows no sign.
    assert_eq!(Precision::of_estimate(5.0, Some(0.5)).show(-0.001), "0.00");
    assert_eq!(Precision::plain(1.0).show(-0.0001), "0");
    assert_eq!(number(f64::NAN), "–");
    assert_eq!(number(f64::INFINITY), "infinity");
    assert_eq!(number(f64::NEG_INFINITY), "-infinity");
    assert_eq!(maybe(None), "–");
}

#[test]
fn probabilities_and_weights() {
    assert_eq!(probability(0.0004), "<0.001");
    assert_eq!(probability(0.0), "<0.001");
    assert_eq!(probability(0.001), "0.001");
    assert_eq!(probability(0.04567), "0.046");
    assert_eq!(probability(0.5), "0.500");
    assert_eq!(probability(0.9996), ">0.999");
    assert_eq!(probability(1.0), ">0.999");
    assert_eq!(probability(f64::NAN), "–");
    // Under the 5% and 1% thresholds stays visibly under.
    assert_eq!(probability(0.0496), "0.0496");
    assert_eq!(probability(0.04996), "0.04996");
    assert_eq!(probability(0.0099), "0.0099");
    assert_eq!(probability(0.0504), "0.050");
    assert_eq!(probability(0.05), "0.050");
}

#[test]
fn csv_numbers_are_short_and_exact() {
    assert_eq!(csv(0.1), "0.1");
    assert_eq!(csv(12345.678), "12345.678");
    assert_eq!(csv(1e300), "1e300");
    assert_eq!(csv(1.5e-7), "1.5e-7");
    assert_eq!(csv(1e21), "1e21");
    assert_eq!(csv(123456.0), "123456");
    assert_eq!(csv(-0.0), "0");
    assert_eq!(csv(f64::NAN), "NaN");
    assert_eq!(csv(f64::INFINITY), "inf");
    // 0.1 + 0.2 keeps all 17 digits it needs.
    assert_eq!(csv(0.1 + 0.2), "0.30000000000000004");
}

/// Reads a shown number back: separators removed.
fn read(s: &str) -> f64 {
    s.replace(',', "").parse().unwrap()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(20_000))]

    /// Every finite f64 (any bit pattern) parses back from its CSV text to
    /// the same value, and the text is no longer than Rust's positional
    /// and exponent forms.
    #[test]
    fn csv_round_trips(bits in any::<u64>()) {
        let x = f64::from_bits(bits);
        let s = csv(x);
        prop_assert!(!s.contains(','));
        let back: f64 = s.parse().unwrap();
        if x.is_nan() {
            prop_assert!(back.is_nan());
        } else {
            prop_assert_eq!(back, x, "{}", s);
            let (positional, exp) = (format!("{x}"), format!("{x:e}"));
            prop_assert!(s.len() <= positional.len().max(1));
            prop_assert!(s.len() <= exp.len());
        }
    }

    /// A shown estimate reads back within half a unit of the place it was
    /// rounded at, and shows at least three significant digits.
    #[test]
    fn shown_estimates_are_rounded_not_truncated(
        m in 1.0f64..10.0, e in -3i32..11, rel in -8i32..2, neg in any::<bool>()
    ) {
        let x = if neg { -m } else { m } * 10f64.powi(e);
        let se = x.abs() * 10f64.powi(rel) * 1.7;
        let p = Precision::of_estimate(x, Some(se));
        let s = p.show(x);
        let back = read(&s);
        let half = 0.5 * 10f64.powi(p.place);
        prop_assert!((back - x).abs() <= half * (1.0 + 1e-9) + x.abs() * 1e-15, "{} {} {}", x, se, s);
        let digits = s.bytes().filter(u8::is_ascii_digit).skip_while(|b| *b == b'0').count();
        prop_assert!(digits >= 3, "{}", s);
    }
}

/// The several-series summary CSV (`plateau batch --csv`, the page's
/// "Summary (CSV)"), still written in the core, gives numbers that parse
/// back to the summary's very `f64`s, like [`csv`].
#[test]
fn the_summary_csv_numbers_read_back_exactly() {
    use crate::summary::{csv_row, SeriesSummary};
    use plateau_core::{fit, parse_series, Model, ParseOptions};
    // A noisy-free logistic K = 1000/3, r = 0.37, t0 = 10.1: digits that
    // a fixed number of decimals would cut.
    let text: String = (0..30)
        .map(|i| {
            let t = f64::from(i);
            let y = (1000.0 / 3.0) / (1.0 + (-0.37 * (t - 10.1)).exp());
            format!("{t},{}\n", y * (1.0 + 1e-3 * (f64::from(i) * 1.7).sin()))
        })
        .collect();
    let s = parse_series(&text, &ParseOptions::default()).unwrap();
    let f = fit(&s, Model::Logistic, &Default::default()).unwrap();
    let row = SeriesSummary::from_fit("a", &s, &f);
    let cells: Vec<String> = csv_row(&row).split(',').map(str::to_string).collect();
    let read = |j: usize| cells[j].parse::<f64>().unwrap();
    for (at, e) in [(3, row.k), (6, row.r), (9, row.t0)] {
        let e = e.unwrap();
        let [lo, hi] = e.ci95.unwrap();
        assert_eq!([read(at), read(at + 1), read(at + 2)], [e.estimate, lo, hi]);
        assert_eq!(cells[at], csv(e.estimate));
    }
}

/// Durations read in the axis' own unit, plural where English wants it.
#[test]
fn amounts_of_time_take_their_unit() {
    assert_eq!(amount_of_time("21.9", "month"), "21.9 months");
    assert_eq!(amount_of_time("1", "quarter"), "1 quarter");
    assert_eq!(amount_of_time("3", "Weeks"), "3 weeks");
    assert_eq!(amount_of_time("4.4", ""), "4.4 time units");
    assert_eq!(amount_of_time("4.4", "t"), "4.4 (in t)");
}
