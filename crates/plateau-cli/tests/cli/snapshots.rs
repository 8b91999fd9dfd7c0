//! The `--json` contract held fixed: each subcommand's report on demo files
//! is compared, number for number, with a checked-in copy in
//! `crates/plateau-cli/tests/snapshots/`. The solver is deterministic (the
//! AVX2 and portable kernels give the same bits), so the comparison is
//! exact (serde_json's `float_roundtrip` parser, enabled for these tests,
//! reads each number to the same bits it was printed from). A refactor that moves code must leave these files unchanged; a
//! change that adds a field rewrites them on purpose with
//! `UPDATE_SNAPSHOTS=1 cargo test -p plateau-cli --test cli snapshot`, and
//! the diff shows what was added.

use super::{demo, plateau, root};
use serde_json::Value;
use std::path::PathBuf;

fn snapshot_path(name: &str) -> PathBuf {
    root()
        .join("crates/plateau-cli/tests/snapshots")
        .join(format!("{name}.json"))
}

/// Every place where `got` differs from `want`, as `path: want → got`.
fn differences(path: &str, want: &Value, got: &Value, out: &mut Vec<String>) {
    match (want, got) {
        (Value::Object(a), Value::Object(b)) => {
            for (k, va) in a {
                match b.get(k) {
                    Some(vb) => differences(&format!("{path}.{k}"), va, vb, out),
                    None => out.push(format!("{path}.{k}: missing (was {va})")),
                }
            }
            for k in b.keys().filter(|k| !a.contains_key(*k)) {
                out.push(format!("{path}.{k}: added ({})", b[k]));
            }
            let (ka, kb): (Vec<_>, Vec<_>) = (a.keys().collect(), b.keys().collect());
            if ka != kb && out.is_empty() {
                out.push(format!("{path}: keys reordered: {ka:?} → {kb:?}"));
            }
        }
        (Value::Array(a), Value::Array(b)) => {
            if a.len() != b.len() {
                out.push(format!("{path}: {} items → {}", a.len(), b.len()));
            }
            for (i, (va, vb)) in a.iter().zip(b).enumerate() {
                differences(&format!("{path}[{i}]"), va, vb, out);
            }
        }
        // Numbers compare exactly (same f64 bits after parsing).
        _ if want != got => out.push(format!("{path}: {want} → {got}")),
        _ => {}
    }
}

/// Runs `plateau args` and compares its standard output (one JSON document,
/// or JSON Lines when `lines`) with the snapshot `name`.
fn check(name: &str, args: &[&str]) {
    let out = plateau(args, None);
    assert!(
        out.status.success(),
        "plateau {args:?}: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).expect("UTF-8 output");
    // JSON Lines (batch) are kept as one array of their objects.
    let got: Value = match serde_json::from_str(&text) {
        Ok(v) => v,
        Err(_) => Value::Array(
            text.lines()
                .map(|l| serde_json::from_str(l).expect("each line is JSON"))
                .collect(),
        ),
    };
    let path = snapshot_path(name);
    if std::env::var_os("UPDATE_SNAPSHOTS").is_some() {
        // The output as printed, not re-serialised: the file holds the
        // exact text of each number.
        std::fs::write(&path, &text).expect("write snapshot");
        return;
    }
    let want_text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{}: {e}; write it with UPDATE_SNAPSHOTS=1", path.display()));
    let want: Value = match serde_json::from_str(&want_text) {
        Ok(v) => v,
        Err(_) => Value::Array(
            want_text
                .lines()
                .map(|l| serde_json::from_str(l).expect("snapshot lines are JSON"))
                .collect(),
        ),
    };
    let mut diffs = Vec::new();
    differences("$", &want, &got, &mut diffs);
    assert!(
        diffs.is_empty(),
        "plateau {} differs from {} in {} place(s) (UPDATE_SNAPSHOTS=1 rewrites it if the change is meant):\n  {}",
        args.join(" "),
        path.display(),
        diffs.len(),
        diffs.iter().take(40).cloned().collect::<Vec<_>>().join("\n  ")
    );
}

#[test]
fn snapshot_fit() {
    check(
        "fit",
        &["fit", &demo("aldermoor_subscribers.csv"), "--json"],
    );
    check(
        "fit_dates_gompertz_relative",
        &[
            "fit",
            &demo("tariff_share_monthly.csv"),
            "--model",
            "gompertz",
            "--errors",
            "relative",
            "--json",
        ],
    );
    check(
        "fit_per_period_fixed",
        &[
            "fit",
            &demo("lumen_cell_adoptions.csv"),
            "--per-period",
            "--fix",
            "K=4000",
            "--intervals",
            "asymptotic",
            "--json",
        ],
    );
}

#[test]
fn snapshot_compare() {
    check(
        "compare",
        &["compare", &demo("aldermoor_subscribers.csv"), "--json"],
    );
}

#[test]
fn snapshot_diagnose() {
    check(
        "diagnose",
        &["diagnose", &demo("aldermoor_subscribers.csv"), "--json"],
    );
    check(
        "diagnose_fisher_pry_k",
        &[
            "diagnose",
            &demo("harrow_fields_capacity.csv"),
            "--fisher-pry-k",
            "1500",
            "--errors",
            "count",
            "--json",
        ],
    );
}

#[test]
fn snapshot_forecast() {
    check(
        "forecast",
        &[
            "forecast",
            &demo("aldermoor_subscribers.csv"),
            "--until",
            "45",
            "--json",
        ],
    );
    check(
        "forecast_dates_bootstrap",
        &[
            "forecast",
            &demo("tariff_share_monthly.csv"),
            "--until",
            "2026-06-30",
            "--bootstrap",
            "60",
            "--seed",
            "7",
            "--share",
            "75",
            "--level",
            "40",
            "--json",
        ],
    );
}

#[test]
fn snapshot_drift() {
    check(
        "drift",
        &["drift", &demo("aldermoor_subscribers.csv"), "--json"],
    );
}

#[test]
fn snapshot_backtest() {
    check(
        "backtest",
        &[
            "backtest",
            &demo("aldermoor_subscribers.csv"),
            "--models",
            "logistic,gompertz,richards",
            "--json",
        ],
    );
}

#[test]
fn snapshot_batch() {
    check(
        "batch",
        &["batch", &demo("regional_adoption_long.csv"), "--json"],
    );
}
