//! One row per series when several series are fitted at once: the
//! parameters every practitioner compares across series (K, r, t0 and the
//! 10%→90% duration, each with its 95% interval), whether the fit
//! converged, its warnings, or why there is no fit.
//!
//! [`SeriesSummary`] serialises to JSON (the CLI's `batch --json` lines,
//! the page) and [`summary_csv`] writes the same rows as CSV (the CLI's
//! `batch --csv`, the page's export), so both front ends share one shape.
//! Field and column names are an output contract: add, never rename.

use plateau_core::analysis;
use plateau_core::data::Series;
use plateau_core::fit::Fit;
use plateau_core::warning::Warning;
use serde::Serialize;
use std::fmt::Write;

/// An estimate with its 95% interval.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Estimate {
    pub estimate: f64,
    /// `[lo, hi]`, or `null` without a covariance.
    pub ci95: Option<[f64; 2]>,
}

/// One series' row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SeriesSummary {
    pub series: String,
    pub model: &'static str,
    /// Line of the series' first row in the input.
    pub first_line: Option<usize>,
    /// Observations fitted; `null` when there is no fit.
    pub n: Option<usize>,
    #[serde(rename = "K")]
    pub k: Option<Estimate>,
    pub r: Option<Estimate>,
    pub t0: Option<Estimate>,
    /// t0 as text in the data's own form (a date, ISO week, month or
    /// quarter on the data's grid) when the input was dated.
    pub t0_date: Option<String>,
    /// The unit of r, t0 and durations: `day`, `week`, `month`, `quarter`,
    /// `year`, or a numeric time column's header (see `Series::time_unit`);
    /// `null` when there is no fit.
    pub time_unit: Option<String>,
    /// Time from 10% to 90% of K (`ln 81 / r` for the logistic), in time units.
    pub duration_10_90: Option<Estimate>,
    pub converged: Option<bool>,
    /// Data-input warnings, then the fit's.
    pub warnings: Vec<Warning>,
    /// Why the series has no fit (bad data or a failed fit).
    pub error: Option<String>,
    /// The line the error is about, when it has one.
    pub error_line: Option<usize>,
}

/// A parameter's estimate and its asymptotic interval; no interval for a
/// parameter the data do not determine (a narrow-looking K interval would
/// be read as support the data do not give).
fn estimate(fit: &Fit, name: &str) -> Option<Estimate> {
    fit.param(name).map(|p| Estimate {
        estimate: p.estimate,
        ci95: p.ci95.filter(|_| p.identified).map(|(a, b)| [a, b]),
    })
}

impl SeriesSummary {
    /// The row of a series that was fitted.
    pub fn from_fit(name: &str, series: &Series, fit: &Fit) -> SeriesSummary {
        let t0 = estimate(fit, "t0");
        let t0_date = t0.and_then(|t| {
            (series.axis.period().is_some() && t.estimate.is_finite())
                .then(|| series.axis.format(t.estimate))
        });
        SeriesSummary {
            series: name.to_string(),
            model: fit.model.name(),
            first_line: series.lines.first().copied(),
            n: Some(fit.n),
            k: estimate(fit, "K"),
            r: estimate(fit, "r"),
            t0,
            t0_date,
            time_unit: Some(series.time_unit()),
            duration_10_90: analysis::duration_10_90(fit).map(|m| Estimate {
                estimate: m.time,
                ci95: m.ci95.map(|(a, b)| [a, b]),
            }),
            converged: Some(fit.converged),
            warnings: series
                .warnings
                .iter()
                .chain(&fit.warnings)
                .cloned()
                .collect(),
            error: None,
            error_line: None,
        }
    }

    /// The row of a series with no fit.
    pub fn from_error(
        name: &str,
        model: &'static str,
        first_line: Option<usize>,
        error_line: Option<usize>,
        message: &str,
        warnings: &[Warning],
    ) -> SeriesSummary {
        SeriesSummary {
            series: name.to_string(),
            model,
            first_line,
            n: None,
            k: None,
            r: None,
            t0: None,
            t0_date: None,
            time_unit: None,
            duration_10_90: None,
            converged: None,
            warnings: warnings.to_vec(),
            error: Some(message.to_string()),
            error_line,
        }
    }
}

/// The CSV header of [`summary_csv`].
pub const CSV_HEADER: &str =
    "series,model,n,K,K_lo95,K_hi95,r,r_lo95,r_hi95,t0,t0_lo95,t0_hi95,t0_date,\
time_unit,duration_10_90,duration_lo95,duration_hi95,converged,warnings,error";

/// One CSV line (no line end) in the columns of [`CSV_HEADER`]; empty
/// cells where a value does not exist; warnings as their codes separated
/// by spaces.
pub fn csv_row(s: &SeriesSummary) -> String {
    let mut out = String::new();
    let num = |x: Option<f64>| x.map_or(String::new(), crate::numbers::csv);
    let mut cells = vec![
        csv_text(&s.series),
        s.model.to_string(),
        s.n.map_or(String::new(), |n| n.to_string()),
    ];
    for e in [&s.k, &s.r, &s.t0] {
        cells.push(num(e.map(|e| e.estimate)));
        cells.push(num(e.and_then(|e| e.ci95).map(|c| c[0])));
        cells.push(num(e.and_then(|e| e.ci95).map(|c| c[1])));
    }
    cells.push(csv_text(s.t0_date.as_deref().unwrap_or_default()));
    cells.push(csv_text(s.time_unit.as_deref().unwrap_or("")));
    let d = &s.duration_10_90;
    cells.push(num(d.map(|e| e.estimate)));
    cells.push(num(d.and_then(|e| e.ci95).map(|c| c[0])));
    cells.push(num(d.and_then(|e| e.ci95).map(|c| c[1])));
    cells.push(s.converged.map_or(String::new(), |c| c.to_string()));
    let codes: Vec<&str> = s.warnings.iter().map(|w| w.code.as_str()).collect();
    cells.push(codes.join(" "));
    cells.push(csv_text(s.error.as_deref().unwrap_or("")));
    let _ = write!(out, "{}", cells.join(","));
    out
}

/// The whole table as CSV, header first, one line per series, `\n` line ends.
pub fn summary_csv(rows: &[SeriesSummary]) -> String {
    let mut out = String::from(CSV_HEADER);
    out.push('\n');
    for r in rows {
        out.push_str(&csv_row(r));
        out.push('\n');
    }
    out
}

/// A text cell: quoted when it needs it (RFC 4180), neutralised when a
/// spreadsheet would run it as a formula ([`crate::study::csv_field`]).
fn csv_text(s: &str) -> String {
    crate::study::csv_field(s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use plateau_core::{fit, parse_series, Model, ParseOptions};

    #[test]
    fn csv_has_one_row_per_series_and_quotes_names() {
        // Exact logistic K = 100, r = 0.5, t0 = 10 (analytic values).
        let text: String = (0..30)
            .map(|i| {
                let t = f64::from(i);
                format!("{t},{}\n", 100.0 / (1.0 + (-0.5 * (t - 10.0)).exp()))
            })
            .collect();
        let s = parse_series(&text, &ParseOptions::default()).unwrap();
        let f = fit(&s, Model::Logistic, &Default::default()).unwrap();
        let ok = SeriesSummary::from_fit("north, upper", &s, &f);
        let bad =
            SeriesSummary::from_error("south", "logistic", Some(40), Some(42), "line 42: bad", &[]);
        let csv = summary_csv(&[ok.clone(), bad]);
        let lines: Vec<&str> = csv.lines().collect();
        assert_eq!(lines.len(), 3);
        assert_eq!(lines[0].split(',').count(), 20);
        assert_eq!(
            lines[1].split(',').nth(14),
            Some(""),
            "numeric times: no unit"
        );
        assert!(
            lines[1].starts_with("\"north, upper\",logistic,30,"),
            "{}",
            lines[1]
        );
        assert!(lines[2].starts_with("south,logistic,,"), "{}", lines[2]);
        assert!(lines[2].ends_with(",line 42: bad"));
        // 10→90 duration of the logistic is ln(81)/r (analytic).
        let d = ok.duration_10_90.unwrap().estimate;
        assert!((d - 81f64.ln() / 0.5).abs() < 1e-6, "{d}");
        let k = ok.k.unwrap();
        assert!((k.estimate - 100.0).abs() < 1e-6);
    }

    /// Series names a spreadsheet would run as formulas are written as
    /// quoted text with a leading `'` (OWASP "CSV injection"); negative
    /// numbers in the numeric columns stay plain numbers.
    #[test]
    fn formula_like_series_names_are_neutralised_and_numbers_kept() {
        // Exact logistic K = 100, r = 0.5, t0 = -10 at t = -25..4: t0 and
        // its interval are negative numbers.
        let text: String = (-25..5)
            .map(|i| {
                let t = f64::from(i);
                format!("{t},{}\n", 100.0 / (1.0 + (-0.5 * (t + 10.0)).exp()))
            })
            .collect();
        let s = parse_series(&text, &ParseOptions::default()).unwrap();
        let f = fit(&s, Model::Logistic, &Default::default()).unwrap();
        let names = [
            (
                "=HYPERLINK(\"http://example.invalid\",\"open\")",
                "\"'=HYPERLINK(\"\"http://example.invalid\"\",\"\"open\"\")\",",
            ),
            ("+1", "\"'+1\","),
            ("@SUM(A1:A2)", "\"'@SUM(A1:A2)\","),
            ("\tnorth", "\"'\tnorth\","),
            ("\rsouth", "\"'\rsouth\","),
            ("-east", "\"'-east\","),
        ];
        let rows: Vec<SeriesSummary> = names
            .iter()
            .map(|(n, _)| SeriesSummary::from_fit(n, &s, &f))
            .collect();
        let csv = summary_csv(&rows);
        for (row, (_, start)) in rows.iter().zip(names) {
            let line = csv_row(row);
            assert!(line.starts_with(start), "{line}");
            assert!(csv.contains(&line));
            // t0 ≈ -10 is written as a negative number, unquoted, no '.
            let t0 = row.t0.unwrap().estimate;
            assert!((t0 + 10.0).abs() < 1e-6, "{t0}");
            assert!(
                line.contains(&format!(",{},", crate::numbers::csv(t0))),
                "{line}"
            );
            assert!(!line.contains(",'-"), "{line}");
        }
    }
}
