//! Readable tables for the terminal. Numbers are shown by
//! `plateau_study::numbers` (estimates to the digits their standard error
//! supports); `--json` gives full precision.

use plateau_core::compare::Entry;
use plateau_core::data::TimeAxis;
use plateau_core::{Fit, Series};
use plateau_study::numbers::{self, number, probability, Precision};
use plateau_study::report::{CompareReport, DiagnoseReport, CAUTION};
use plateau_study::study::{is_time_param, looks_cumulative};
use plateau_study::wording::Worded;
use std::fmt::Write;

fn opt(x: Option<f64>) -> String {
    x.map_or("-".into(), number)
}

/// What the time axis counts, for a calendar axis: `months since 2000-01
/// (rates per month, times and durations in months)`.
pub fn axis_note(series: &Series) -> Option<String> {
    let unit = series.axis.unit();
    let origin = series.time_origin()?;
    Some(format!(
        "{unit}s since {origin} (rates per {unit}, times and durations in {unit}s)"
    ))
}

/// t0 (tau, t01, t02) as a date (or month, quarter) too, when the input had dates.
fn time_note(kind: TimeAxis, is_time: bool, t: f64) -> String {
    if kind.period().is_none() || !is_time || !t.is_finite() {
        String::new()
    } else {
        format!("  ({})", kind.format(t))
    }
}

pub fn fit(name: &str, series: &Series, f: &Fit) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "model      {}    {}", f.model.name(), f.model.formula());
    let _ = writeln!(
        s,
        "data       {name}: {} points, {} against {}",
        series.times.len(),
        series.value_name,
        series.time_name
    );
    if let Some(note) = axis_note(series) {
        let _ = writeln!(s, "time       {note}");
    }
    let _ = writeln!(
        s,
        "solver     {} after {} iterations ({})",
        if f.converged {
            "converged"
        } else {
            "DID NOT CONVERGE"
        },
        f.iterations,
        f.termination.describe()
    );
    let _ = writeln!(s, "errors     {}", f.error_model.describe());
    if f.increments {
        let _ = writeln!(
            s,
            "fitted     per-period increments: {} differences of the running totals",
            f.n
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<10} {:>14} {:>14} {:>32}  method",
        "parameter", "estimate", "std error", "95% interval"
    );
    let mut open_notes = Vec::new();
    for p in &f.params {
        // The estimate and its interval at the digits the standard error
        // supports; times on the data's axis without separators.
        let digits = Precision::of_estimate(p.estimate, p.std_error);
        let time = is_time_param(f.model, p.name);
        let num = |x: f64| {
            if time {
                digits.show_time(x)
            } else {
                digits.show(x)
            }
        };
        let interval = match (p.fixed, p.interval) {
            (true, _) => "fixed".to_string(),
            (false, Some(iv)) => match (iv.lo, iv.hi) {
                (Some(lo), Some(hi)) => format!("[{}, {}]", num(lo), num(hi)),
                (Some(lo), None) => {
                    open_notes.push(format!("{} ≥ {} (95%)", p.name, num(lo)));
                    format!("≥ {}", num(lo))
                }
                (None, Some(hi)) => {
                    open_notes.push(format!("{} ≤ {} (95%)", p.name, num(hi)));
                    format!("≤ {}", num(hi))
                }
                (None, None) => {
                    open_notes.push(format!("{}: no bound on either side (95%)", p.name));
                    "unbounded".to_string()
                }
            },
            (false, None) => "not available".to_string(),
        };
        let method = p.interval.map_or("", |iv| iv.method.as_str());
        // A parameter the data do not determine gets no standard error in
        // the table either: it would read as an interval.
        let se = if p.identified {
            p.std_error
                .map_or("-".into(), |e| numbers::std_error(p.estimate, e))
        } else {
            "-".to_string()
        };
        let _ = writeln!(
            s,
            "{:<10} {:>14} {:>14} {:>32}  {}{}",
            p.name,
            num(p.estimate),
            se,
            interval,
            method,
            time_note(series.axis, is_time_param(f.model, p.name), p.estimate)
        );
    }
    for p in f.params.iter().filter(|p| !p.identified) {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "{} IS NOT DETERMINED BY THESE DATA: the estimate above is one point of a long, flat \
             valley; only the bound shown is supported.",
            p.name
        );
    }
    for note in &open_notes {
        let _ = writeln!(s, "  {note}: the data set no bound on the other side");
    }
    if let Some(pk) = plateau_core::analysis::bass_peak(f) {
        // Each interval at the digits of its estimate.
        let ci = |x: f64, c: Option<(f64, f64)>, time: bool| {
            let d = Precision::of_interval(x, c.map(|(a, b)| [a, b]));
            let show = |v: f64| if time { d.show_time(v) } else { d.show(v) };
            c.map_or("not available".to_string(), |(a, b)| {
                format!("[{}, {}]", show(a), show(b))
            })
        };
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "peak time  t* = tau + ln(q/p)/(p+q) = {}{}   95% interval {}",
            Precision::of_interval(pk.time, pk.time_ci95.map(|(a, b)| [a, b])).show_time(pk.time),
            time_note(series.axis, true, pk.time),
            ci(pk.time, pk.time_ci95, true)
        );
        let _ = writeln!(
            s,
            "peak rate  m (p+q)²/(4q) = {} per {}   95% interval {}   ({}% of m adopted by then)",
            Precision::of_interval(pk.rate, pk.rate_ci95.map(|(a, b)| [a, b])).show(pk.rate),
            match series.time_unit() {
                u if u.is_empty() => "time unit".to_string(),
                u => u,
            },
            ci(pk.rate, pk.rate_ci95, false),
            number(100.0 * pk.share)
        );
    } else if f.model == plateau_core::Model::Bass {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "peak       none after launch (q <= p): adoption is fastest at tau"
        );
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "n {}   dof {}   RSS {}   sigma {}   R² {}",
        f.n,
        f.dof,
        number(f.rss),
        number(f.sigma),
        number(f.r_squared)
    );
    let _ = writeln!(
        s,
        "AIC {}   AICc {}   BIC {}   condition number {}",
        number(f.aic),
        number(f.aicc),
        number(f.bic),
        number(f.condition_number)
    );
    if !f.increments && looks_cumulative(&series.values) {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "note: if these are running totals, each period's error is carried into every later value, so the \
             residuals are autocorrelated and the intervals above are likely too narrow; \
             --increments fits the per-period changes instead (King et al., Proc. R. Soc. B 2015)."
        );
    }
    let warnings: Vec<_> = series.warnings.iter().chain(&f.warnings).collect();
    if !warnings.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "warnings");
        for w in warnings {
            let _ = writeln!(s, "  {}: {}", w.code.as_str(), w.message);
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Caution: {CAUTION}");
    s
}

pub fn compare(name: &str, series: &Series, entries: &[Entry], report: &CompareReport) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "data       {name}: {} points", series.times.len());
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<4} {:<12} {:>3} {:>12} {:>10} {:>8} {:>12} {:>10} {:>12} {:>12}",
        "rank", "model", "p", "AICc", "ΔAICc", "weight", "BIC", "ΔBIC", "sigma", "K"
    );
    let mut rank = 0;
    for e in entries {
        match &e.result {
            Ok(f) => {
                rank += 1;
                let k = f
                    .model
                    .saturation_level(&f.values())
                    .map_or("-".into(), number);
                let flag = if f.warnings.is_empty() { "" } else { "  *" };
                let delta_bic = report
                    .models
                    .iter()
                    .find(|r| r.model == f.model.name())
                    .and_then(|r| r.delta_bic);
                let _ = writeln!(
                    s,
                    "{:<4} {:<12} {:>3} {:>12} {:>10} {:>8} {:>12} {:>10} {:>12} {:>12}{}",
                    rank,
                    f.model.name(),
                    f.free.len(),
                    number(f.aicc),
                    e.delta_aicc.map_or("-".into(), number),
                    e.akaike_weight.map_or("-".into(), probability),
                    number(f.bic),
                    delta_bic.map_or("-".into(), number),
                    number(f.sigma),
                    k,
                    flag
                );
            }
            Err(err) => {
                let _ = writeln!(s, "-    {:<12} not fitted: {}", e.model.name(), err);
            }
        }
    }
    let flagged: Vec<_> = entries
        .iter()
        .filter_map(|e| e.result.as_ref().ok())
        .filter(|f| !f.warnings.is_empty())
        .collect();
    if !flagged.is_empty() || !series.warnings.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "warnings");
        for w in &series.warnings {
            let _ = writeln!(s, "  data: {}: {}", w.code.as_str(), w.message);
        }
        for f in flagged {
            for w in &f.warnings {
                let _ = writeln!(
                    s,
                    "  * {}: {}: {}",
                    f.model.name(),
                    w.code.as_str(),
                    w.message
                );
            }
        }
    }
    if !report.lr_tests.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "likelihood-ratio tests (nested models, chi-squared)");
        for lr in &report.lr_tests {
            let _ = writeln!(
                s,
                "  {} within {}: LR {}, df {}, p {}",
                lr.nested.name(),
                lr.general.name(),
                number(lr.statistic),
                lr.df,
                probability(lr.p_value)
            );
            let _ = writeln!(s, "    {}", lr.note);
        }
    }
    if let Some(rec) = &report.recommendation {
        let _ = writeln!(s);
        match rec.model {
            Some(m) => {
                let _ = writeln!(s, "recommendation: {}", m.name());
            }
            None => {
                let _ = writeln!(s, "recommendation: none");
            }
        }
        for r in &rec.reasons {
            let _ = writeln!(s, "  - {r}");
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "p counts free curve parameters; AICc and BIC also count sigma. Weights are Akaike weights."
    );
    let _ = writeln!(
        s,
        "K is the saturation level: m for bass, K1 + K2 for bilogistic."
    );
    let _ = writeln!(s, "Caution: {CAUTION}");
    s
}

fn verdict_line(s: &mut String, v: &Worded) {
    let _ = writeln!(s, "  {} {}", if v.flagged { "!!" } else { "ok" }, v.text);
}

pub fn diagnose(name: &str, series: &Series, r: &DiagnoseReport, k_entered: bool) -> String {
    let mut s = String::new();
    let f = &r.fit;
    let _ = writeln!(s, "model      {}    {}", f.model, f.formula);
    let _ = writeln!(
        s,
        "data       {name}: {} points, {} against {}",
        f.n, series.value_name, series.time_name
    );
    let _ = writeln!(s);
    let d = &r.residuals;
    let _ = writeln!(s, "residuals ({} in time order, y - fitted)", d.n);
    match &d.runs {
        Some(runs) => {
            let _ = writeln!(
                s,
                "  runs test        {} runs ({} at or above 0, {} below), {} expected, p {} exact; z {}, p {}{}",
                runs.runs,
                runs.n_positive,
                runs.n_negative,
                number(runs.expected),
                probability(runs.p_exact),
                number(runs.z),
                probability(runs.p_value),
                if runs.continuity_corrected {
                    " (normal approximation, continuity-corrected)"
                } else {
                    " (normal approximation)"
                }
            );
        }
        None => {
            let _ = writeln!(
                s,
                "  runs test        not available (all residuals of one sign)"
            );
        }
    }
    let _ = writeln!(s, "  Durbin-Watson    {}", opt(d.durbin_watson));
    let _ = writeln!(s, "  lag-1 autocorr.  {}", opt(d.lag1_autocorrelation));
    if let Some(q) = &d.qq {
        let _ = writeln!(s, "  Q-Q correlation  {}", number(q.correlation));
    }
    if let Some(j) = &d.jarque_bera {
        let _ = writeln!(
            s,
            "  Jarque-Bera      {}, p {} (skewness {}, kurtosis {})",
            number(j.statistic),
            probability(j.p_value),
            number(j.skewness),
            number(j.kurtosis)
        );
    }
    if let Some(t) = &r.symmetry_test {
        let _ = writeln!(s);
        let _ = writeln!(s, "symmetry (logistic against Richards and Gompertz)");
        if let Some(nu) = t.nu {
            let d = Precision::of_interval(nu, t.nu_ci95);
            let ci = t.nu_ci95.map_or(String::new(), |c| {
                format!("  95% [{}, {}]", d.show(c[0]), d.show(c[1]))
            });
            let _ = writeln!(
                s,
                "  Richards nu      {}{ci}  (1 is the logistic)",
                d.show(nu)
            );
        }
        if let (Some(lr), Some(p)) = (t.lr_statistic, t.lr_p_value) {
            let _ = writeln!(
                s,
                "  likelihood ratio {}, p {} (chi-squared, 1 df)",
                number(lr),
                probability(p)
            );
        }
        if let Some(d) = t.delta_aicc_richards {
            let _ = writeln!(s, "  dAICc Richards   {}", number(d));
        }
        if let Some(d) = t.delta_aicc_gompertz {
            let _ = writeln!(
                s,
                "  dAICc Gompertz   {}  (not nested: AICc only)",
                number(d)
            );
        }
    }
    if let Some(fp) = &r.fisher_pry {
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "Fisher-Pry, K = {} ({})",
            number(fp.k),
            if k_entered { "entered" } else { "fitted" }
        );
        let _ = writeln!(
            s,
            "  {} points transformed, {} outside 0 < y < K; slope {}, crosses zero at {}",
            fp.points.len(),
            fp.dropped,
            number(fp.slope),
            opt(fp.t0)
        );
        if let (Some(t), Some(p)) = (fp.curvature_t, fp.curvature_p) {
            let _ = writeln!(
                s,
                "  curvature t {}, p {} (weighted quadratic term)",
                number(t),
                probability(p)
            );
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "verdicts");
    for v in &r.verdicts {
        verdict_line(&mut s, v);
    }
    if !f.warnings.is_empty() {
        let _ = writeln!(s);
        let _ = writeln!(s, "warnings");
        for w in &f.warnings {
            let _ = writeln!(s, "  {}: {}", w.code.as_str(), w.message);
        }
    }
    let _ = writeln!(s);
    let _ = writeln!(s, "Caution: {CAUTION}");
    s
}
