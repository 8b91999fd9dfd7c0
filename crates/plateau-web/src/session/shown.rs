//! Every number the page shows, as text, made by
//! `plateau_study::numbers` (the CLI's rules): `app.js` writes these
//! strings and formats no number itself. The [`View`]'s numbers stay for
//! the charts, the tests and `data-value` attributes.

use super::{BacktestRow, BootstrapView, CompareRow, DiagnosticsRow, View};
use plateau_study::numbers::{self, number, probability, Precision};
use plateau_study::summary::Estimate;
use serde::Serialize;

/// Parameters that are times on the data's axis: no thousands separators.
const TIME_PARAMS: [&str; 4] = ["t0", "tau", "t01", "t02"];

/// The page's numbers as text, in the [`View`]'s order.
#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ViewText {
    pub params: Vec<ParamText>,
    pub stats: StatsText,
    /// The 10%→90% duration, without its unit.
    pub duration_10_90: Option<String>,
    /// The sentence on it, in the axis' unit.
    pub duration_sentence: Option<String>,
    /// The symmetry figure (RMS mismatch over the noise level).
    pub symmetry_rms: Option<String>,
    pub peak: Option<PeakText>,
    /// Several series: K, r, t0, duration per row, `est [lo … hi]`.
    pub summary: Vec<SummaryText>,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ParamText {
    /// At the digits its standard error supports.
    pub estimate: String,
    /// The standard error, or `fixed`, `not determined` (a standard error
    /// of an undetermined parameter would read as an interval), `–`.
    pub std_error: String,
    /// `lo … hi`, `≥ lo`, `≤ hi`, `no bound` or `–`, at the estimate's digits.
    pub interval: String,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct StatsText {
    pub rss: String,
    pub sigma: String,
    pub r_squared: String,
    pub aic: String,
    pub aicc: String,
    pub bic: String,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct CompareText {
    pub aicc: String,
    pub delta_aicc: String,
    /// Akaike weight: `<0.001` below 0.001.
    pub weight: String,
    pub bic: String,
    pub k: String,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct PeakText {
    pub rate: String,
    /// `lo … hi` at the rate's digits.
    pub rate_ci95: Option<String>,
    pub share_percent: String,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct DiagnosticsText {
    pub runs_expected: String,
    pub runs_p: String,
    pub durbin_watson: String,
    pub lag1_autocorrelation: String,
    pub qq_correlation: String,
    pub jarque_bera_p: String,
}

#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct SummaryText {
    pub k: String,
    pub r: String,
    pub t0: String,
    pub duration_10_90: String,
}

/// `lo … hi` shown by `show`.
fn span(show: impl Fn(f64) -> String, lo: f64, hi: f64) -> String {
    format!("{} … {}", show(lo), show(hi))
}

fn maybe_p(p: Option<f64>) -> String {
    p.map_or_else(|| "–".into(), probability)
}

/// `est [lo … hi]` at the interval's digits, `–` without an estimate.
fn with_interval(e: Option<Estimate>, time: bool) -> String {
    let Some(e) = e else {
        return "–".into();
    };
    let d = Precision::of_interval(e.estimate, e.ci95);
    let show = |x: f64| if time { d.show_time(x) } else { d.show(x) };
    match e.ci95 {
        Some([lo, hi]) => format!("{} [{}]", show(e.estimate), span(show, lo, hi)),
        None => show(e.estimate),
    }
}

/// The text of every number of `v`.
pub fn view_text(v: &View) -> ViewText {
    let params = v
        .params
        .iter()
        .map(|p| {
            let d = Precision::of_estimate(p.estimate, p.std_error);
            let time = TIME_PARAMS.contains(&p.name);
            let show = |x: f64| if time { d.show_time(x) } else { d.show(x) };
            ParamText {
                estimate: show(p.estimate),
                std_error: match (p.fixed, p.identified, p.std_error) {
                    (true, _, _) => "fixed".into(),
                    (false, false, _) => "not determined".into(),
                    (false, true, Some(se)) => numbers::std_error(p.estimate, se),
                    (false, true, None) => "–".into(),
                },
                interval: match p.ci95 {
                    None => "–".into(),
                    Some([Some(lo), Some(hi)]) => span(show, lo, hi),
                    Some([Some(lo), None]) => format!("≥ {}", show(lo)),
                    Some([None, Some(hi)]) => format!("≤ {}", show(hi)),
                    Some([None, None]) => "no bound".into(),
                },
            }
        })
        .collect();
    let st = &v.stats;
    ViewText {
        params,
        stats: StatsText {
            rss: number(st.rss),
            sigma: number(st.sigma),
            r_squared: number(st.r_squared),
            aic: number(st.aic),
            aicc: number(st.aicc),
            bic: number(st.bic),
        },
        duration_10_90: v.duration_10_90.map(number),
        duration_sentence: v.duration_10_90.map(|d| {
            format!(
                "From 10% to 90% of {} takes {}{}",
                v.saturation,
                numbers::amount_of_time(&number(d), &v.time_unit),
                if v.model == "logistic" {
                    " (ln 81 / r)."
                } else {
                    "."
                }
            )
        }),
        symmetry_rms: v.symmetry.as_ref().and_then(|s| s.rms_ratio).map(number),
        peak: v.peak.as_ref().map(|pk| {
            let d = Precision::of_interval(pk.rate, pk.rate_ci95);
            PeakText {
                rate: d.show(pk.rate),
                rate_ci95: pk.rate_ci95.map(|[lo, hi]| span(|x| d.show(x), lo, hi)),
                share_percent: number(pk.share_percent),
            }
        }),
        summary: v.multi.as_ref().map_or_else(Vec::new, |m| {
            m.summary
                .iter()
                .map(|s| SummaryText {
                    k: with_interval(s.k, false),
                    r: with_interval(s.r, false),
                    t0: with_interval(s.t0, true),
                    duration_10_90: with_interval(s.duration_10_90, false),
                })
                .collect()
        }),
    }
}

/// The bootstrap intervals of the parameters, `lo … hi` at each
/// estimate's digits (as in the parameter table), `–` for none.
pub fn bootstrap_params_text(v: &View, b: &BootstrapView) -> Vec<String> {
    v.params
        .iter()
        .zip(&b.params)
        .map(|(p, iv)| {
            let d = Precision::of_estimate(p.estimate, p.std_error);
            let time = TIME_PARAMS.contains(&p.name);
            iv.map_or_else(
                || "–".into(),
                |[lo, hi]| span(|x| if time { d.show_time(x) } else { d.show(x) }, lo, hi),
            )
        })
        .collect()
}

/// The comparison's numbers as text, row by row.
pub fn comparison_text(rows: &[CompareRow]) -> Vec<CompareText> {
    rows.iter()
        .map(|c| CompareText {
            aicc: numbers::maybe(c.aicc),
            delta_aicc: numbers::maybe(c.delta_aicc),
            weight: maybe_p(c.weight),
            bic: numbers::maybe(c.bic),
            k: numbers::maybe(c.k),
        })
        .collect()
}

/// Per model, MAPE by horizon (`12.34%`, `–` when there is none).
pub fn backtest_text(rows: &[BacktestRow]) -> Vec<Vec<String>> {
    rows.iter()
        .map(|b| {
            b.mape
                .iter()
                .map(|m| m.map_or_else(|| "–".into(), |m| format!("{}%", number(m))))
                .collect()
        })
        .collect()
}

/// The residual statistics as text.
pub fn diagnostics_text(d: &DiagnosticsRow) -> DiagnosticsText {
    DiagnosticsText {
        runs_expected: numbers::maybe(d.runs_expected),
        runs_p: maybe_p(d.runs_p),
        durbin_watson: numbers::maybe(d.durbin_watson),
        lag1_autocorrelation: numbers::maybe(d.lag1_autocorrelation),
        qq_correlation: numbers::maybe(d.qq_correlation),
        jarque_bera_p: maybe_p(d.jarque_bera_p),
    }
}
