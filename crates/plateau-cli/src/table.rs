//! Readable tables for the terminal. Numbers are shown to 6 significant
//! digits; `--json` gives full precision.

use plateau_core::compare::Entry;
use plateau_core::data::TimeKind;
use plateau_core::report::CAUTION;
use plateau_core::{Fit, Series};
use std::fmt::Write;

/// `x` to 6 significant digits, in scientific notation when very large or small.
pub fn num(x: f64) -> String {
    if !x.is_finite() {
        return if x.is_nan() {
            "-".into()
        } else {
            format!("{x}")
        };
    }
    if x == 0.0 {
        return "0".into();
    }
    let a = x.abs();
    if !(1e-4..1e9).contains(&a) {
        return format!("{x:.5e}");
    }
    let decimals = (5 - a.log10().floor() as i32).max(0) as usize;
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

fn opt(x: Option<f64>) -> String {
    x.map_or("-".into(), num)
}

/// Parameters that are times on the data's axis.
const TIME_PARAMS: [&str; 4] = ["t0", "tau", "t01", "t02"];

/// t0 (tau, t01, t02) as a date (or month, quarter) too, when the input had dates.
fn time_note(kind: TimeKind, name: &str, t: f64) -> String {
    if kind == TimeKind::Number || !TIME_PARAMS.contains(&name) || !t.is_finite() {
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
        f.n, series.value_name, series.time_name
    );
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
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<10} {:>14} {:>14} {:>32}",
        "parameter", "estimate", "std error", "95% interval"
    );
    for p in &f.params {
        let interval = match (p.fixed, p.ci95) {
            (true, _) => "fixed".to_string(),
            (false, Some((lo, hi))) => format!("[{}, {}]", num(lo), num(hi)),
            (false, None) => "not available".to_string(),
        };
        let _ = writeln!(
            s,
            "{:<10} {:>14} {:>14} {:>32}{}",
            p.name,
            num(p.estimate),
            opt(p.std_error),
            interval,
            time_note(series.time_kind, p.name, p.estimate)
        );
    }
    if let Some(pk) = plateau_core::analysis::bass_peak(f) {
        let ci = |c: Option<(f64, f64)>| {
            c.map_or("not available".to_string(), |(a, b)| {
                format!("[{}, {}]", num(a), num(b))
            })
        };
        let _ = writeln!(s);
        let _ = writeln!(
            s,
            "peak time  t* = tau + ln(q/p)/(p+q) = {}{}   95% interval {}",
            num(pk.time),
            time_note(series.time_kind, "t0", pk.time),
            ci(pk.time_ci95)
        );
        let _ = writeln!(
            s,
            "peak rate  m (p+q)²/(4q) = {} per time unit   95% interval {}   ({}% of m adopted by then)",
            num(pk.rate),
            ci(pk.rate_ci95),
            num(100.0 * pk.share)
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
        num(f.rss),
        num(f.sigma),
        num(f.r_squared)
    );
    let _ = writeln!(
        s,
        "AIC {}   AICc {}   BIC {}   condition number {}",
        num(f.aic),
        num(f.aicc),
        num(f.bic),
        num(f.condition_number)
    );
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

pub fn compare(name: &str, series: &Series, entries: &[Entry]) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "data       {name}: {} points", series.times.len());
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "{:<4} {:<12} {:>3} {:>12} {:>10} {:>8} {:>12} {:>12}",
        "rank", "model", "p", "AICc", "ΔAICc", "weight", "sigma", "K"
    );
    let mut rank = 0;
    for e in entries {
        match &e.result {
            Ok(f) => {
                rank += 1;
                let k = f
                    .model
                    .saturation_level(&f.values())
                    .map_or("-".into(), num);
                let flag = if f.warnings.is_empty() { "" } else { "  *" };
                let _ = writeln!(
                    s,
                    "{:<4} {:<12} {:>3} {:>12} {:>10} {:>8} {:>12} {:>12}{}",
                    rank,
                    f.model.name(),
                    f.free.len(),
                    num(f.aicc),
                    e.delta_aicc.map_or("-".into(), |d| format!("{d:.2}")),
                    e.akaike_weight.map_or("-".into(), |w| format!("{w:.3}")),
                    num(f.sigma),
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
    let _ = writeln!(s);
    let _ = writeln!(
        s,
        "p counts free curve parameters; AICc also counts sigma. Weights are Akaike weights."
    );
    let _ = writeln!(
        s,
        "K is the saturation level: m for bass, K1 + K2 for bilogistic."
    );
    let _ = writeln!(s, "Caution: {CAUTION}");
    s
}

#[cfg(test)]
mod tests {
    use super::num;

    #[test]
    fn six_significant_digits() {
        assert_eq!(num(1234.56789), "1234.57");
        assert_eq!(num(0.000123456789), "0.000123457");
        assert_eq!(num(1.0), "1");
        assert_eq!(num(-2.5), "-2.5");
        assert_eq!(num(3.2e12), "3.20000e12");
        assert_eq!(num(f64::NAN), "-");
    }
}
