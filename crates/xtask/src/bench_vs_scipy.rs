//! `cargo xtask bench-vs-scipy`: time Plateau's self-started fit against
//! `scipy.optimize.curve_fit(method="lm")` on the same deterministic data.
//!
//! 1. `tests/reference/bench_scipy.py` with `.venv/bin/python` (the venv is
//!    created from `tests/reference/requirements.txt` if missing) prints one
//!    JSON line per case with `median_us`.
//! 2. `cargo bench -p plateau-core --bench fit -- --noplot self_start_fit`
//!    (that criterion group only), then the median of each case is read from
//!    `target/criterion/self_start_fit/<id>/new/estimates.json`.
//! 3. `bench_scipy.py` again: scipy is timed before and after Plateau, so
//!    that a machine whose speed drifts during the run (virtual machines
//!    do, by tens of percent within minutes) shows it as two different
//!    scipy figures instead of a silently shifted ratio.
//! 4. A table of the medians and the ratio of scipy's mean of the two to
//!    Plateau's.

use anyhow::{bail, Context, Result};
use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::Command;

/// Criterion ids in group `self_start_fit`, also the `case` keys printed by
/// `bench_scipy.py`.
const CASES: &[&str] = &["logistic_n50", "logistic_n1000", "richards_n1000"];

pub fn run(args: &[String]) -> Result<()> {
    crate::no_args("bench-vs-scipy", args)?;
    let root = crate::workspace_root();

    let python = ensure_venv(&root)?;
    let script = root.join("tests/reference/bench_scipy.py");
    let (before, versions) = scipy_medians(&root, &python, &script)?;

    let cargo = std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_string());
    let status = Command::new(cargo)
        .current_dir(&root)
        .args([
            "bench",
            "-p",
            "plateau-core",
            "--bench",
            "fit",
            "--",
            "--noplot",
            "self_start_fit",
        ])
        .status()
        .context("running cargo bench")?;
    if !status.success() {
        bail!("cargo bench failed ({status})");
    }

    let (after, _) = scipy_medians(&root, &python, &script)?;

    println!();
    println!("self-started fit, median time per fit ({versions})");
    println!(
        "{:<16} {:>12} {:>15} {:>14} {:>15}",
        "case", "plateau µs", "scipy µs before", "scipy µs after", "scipy/plateau"
    );
    for case in CASES {
        let plateau_us = criterion_median_ns(&root, case)? / 1000.0;
        let find = |runs: &[(String, f64)]| {
            runs.iter()
                .find(|(c, _)| c == case)
                .map(|r| r.1)
                .with_context(|| format!("bench_scipy.py printed no result for {case}"))
        };
        let (b, a) = (find(&before)?, find(&after)?);
        println!(
            "{:<16} {:>12.2} {:>15.2} {:>14.2} {:>15.1}",
            case,
            plateau_us,
            b,
            a,
            0.5 * (b + a) / plateau_us
        );
    }
    Ok(())
}

/// One run of `bench_scipy.py`: `(case, median µs)` per case, and the
/// versions line.
fn scipy_medians(
    root: &Path,
    python: &Path,
    script: &Path,
) -> Result<(Vec<(String, f64)>, String)> {
    let out = Command::new(python)
        .current_dir(root)
        .arg(script)
        .output()
        .with_context(|| format!("running {} {}", python.display(), script.display()))?;
    if !out.status.success() {
        bail!(
            "bench_scipy.py failed ({}):\n{}",
            out.status,
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let stdout = String::from_utf8(out.stdout).context("bench_scipy.py output is not UTF-8")?;
    let mut scipy = Vec::new();
    let mut versions = String::new();
    for line in stdout.lines().filter(|l| !l.trim().is_empty()) {
        let v: Value = serde_json::from_str(line)
            .with_context(|| format!("bench_scipy.py printed a non-JSON line: {line}"))?;
        if let (Some(case), Some(us)) = (v["case"].as_str(), v["median_us"].as_f64()) {
            scipy.push((case.to_string(), us));
        } else if let Some(s) = v["scipy"].as_str() {
            versions = format!(
                "scipy {s}, numpy {}, python {}",
                v["numpy"].as_str().unwrap_or("?"),
                v["python"].as_str().unwrap_or("?")
            );
        }
    }
    Ok((scipy, versions))
}

/// Median point estimate (ns) of one criterion benchmark.
fn criterion_median_ns(root: &Path, id: &str) -> Result<f64> {
    let path = root
        .join("target/criterion/self_start_fit")
        .join(id)
        .join("new/estimates.json");
    let text = std::fs::read_to_string(&path)
        .with_context(|| format!("reading {} (did the bench run?)", path.display()))?;
    let v: Value =
        serde_json::from_str(&text).with_context(|| format!("parsing {}", path.display()))?;
    v["median"]["point_estimate"]
        .as_f64()
        .with_context(|| format!("{}: no median.point_estimate", path.display()))
}

/// The venv's python, creating `.venv` from `requirements.txt` if missing.
pub(crate) fn ensure_venv(root: &Path) -> Result<PathBuf> {
    let venv = root.join(".venv");
    let bin = |name: &str| {
        if cfg!(windows) {
            venv.join("Scripts").join(format!("{name}.exe"))
        } else {
            venv.join("bin").join(name)
        }
    };
    let python = bin("python");
    if python.exists() {
        return Ok(python);
    }
    println!("creating {} ...", venv.display());
    let host = if cfg!(windows) { "python" } else { "python3" };
    let status = Command::new(host)
        .args(["-m", "venv"])
        .arg(&venv)
        .status()
        .with_context(|| format!("running {host} -m venv"))?;
    if !status.success() {
        bail!("{host} -m venv failed ({status})");
    }
    let status = Command::new(bin("pip"))
        .arg("install")
        .arg("-r")
        .arg(root.join("tests/reference/requirements.txt"))
        .status()
        .context("running pip install")?;
    if !status.success() {
        bail!("pip install -r tests/reference/requirements.txt failed ({status})");
    }
    Ok(python)
}
