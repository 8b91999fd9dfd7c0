//! `cargo xtask bench-whole-process [--points N] [--runs R]`: `plateau fit`
//! on an N-point CSV (default 100,000) against the plain scipy script
//! `tests/reference/whole_process_scipy.py` (numpy `loadtxt` +
//! `curve_fit(method="lm")` with the analytic Jacobian), each timed as a
//! whole process, start to exit.
//!
//! 1. Writes `target/bench-whole-process/logistic_<N>.csv`: a header, then
//!    `t,y` rows with t = 0 .. N−1 and
//!    y = 1000 / (1 + exp(−(12/N)(t − N/2))) + 10 sin(1.7 t + 0.3), four
//!    decimals (deterministic, no RNG).
//! 2. Builds the release `plateau`; runs each side once untimed (file cache,
//!    interpreter), and checks that both find the same K, r and t0 (to 1e-6
//!    relative; plateau's from its `--json` report).
//! 3. Runs `plateau fit FILE` (default options: profile intervals, table to
//!    stdout) and `python whole_process_scipy.py FILE` alternately R times
//!    (default 11), stdout discarded, so that a machine whose speed drifts
//!    affects both alike; prints each side's median wall time and the ratio
//!    of the medians (scipy / plateau).
//!
//! Python is `.venv/bin/python` (created from
//! `tests/reference/requirements.txt` if missing), or `$PLATEAU_PYTHON`.

use anyhow::{bail, Context, Result};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

pub fn run(args: &[String]) -> Result<()> {
    let mut points = 100_000usize;
    let mut runs = 11usize;
    let mut it = args.iter();
    while let Some(flag) = it.next() {
        let value = it
            .next()
            .with_context(|| format!("{flag}: expected a count"))?;
        match flag.as_str() {
            "--points" => points = value.parse().context("--points: expected a count")?,
            "--runs" => runs = value.parse().context("--runs: expected a count")?,
            _ => bail!("usage: cargo xtask bench-whole-process [--points N] [--runs R]"),
        }
    }
    if points < 10 || runs == 0 {
        bail!("expected at least 10 points and 1 run");
    }
    let root = crate::workspace_root();
    let dir = root.join("target/bench-whole-process");
    std::fs::create_dir_all(&dir)?;
    let file = dir.join(format!("logistic_{points}.csv"));
    write_file(&file, points)?;

    let python = match std::env::var_os("PLATEAU_PYTHON") {
        Some(p) => PathBuf::from(p),
        None => crate::bench_vs_scipy::ensure_venv(&root)?,
    };
    let script = root.join("tests/reference/whole_process_scipy.py");
    let plateau = crate::tools::release_plateau(&root)?;

    let mut plateau_cmd = Command::new(&plateau);
    plateau_cmd.arg("fit").arg(&file);
    let mut scipy_cmd = Command::new(&python);
    scipy_cmd.arg(&script).arg(&file);

    // Warm-up, and the check that both answer the same question alike.
    let scipy_out = output(&mut scipy_cmd)?;
    let json = output(Command::new(&plateau).arg("fit").arg("--json").arg(&file))?;
    check_agreement(&scipy_out, &json)?;
    output(&mut plateau_cmd)?;

    let (mut ours, mut theirs) = (Vec::new(), Vec::new());
    for _ in 0..runs {
        ours.push(crate::tools::timed(&mut plateau_cmd)?);
        theirs.push(crate::tools::timed(&mut scipy_cmd)?);
    }
    let (a, b) = (
        crate::tools::median(&mut ours),
        crate::tools::median(&mut theirs),
    );
    println!(
        "whole process, {points}-point CSV, median of {runs} alternating runs ({})",
        std::env::consts::ARCH
    );
    println!("  plateau fit FILE                  {:>9.1} ms", 1e3 * a);
    println!("  python whole_process_scipy.py FILE {:>8.1} ms", 1e3 * b);
    println!("  scipy / plateau                   {:>9.2}", b / a);
    Ok(())
}

fn output(cmd: &mut Command) -> Result<String> {
    let out = cmd
        .stderr(Stdio::piped())
        .stdout(Stdio::piped())
        .output()
        .with_context(|| format!("running {cmd:?}"))?;
    if !out.status.success() {
        bail!(
            "{cmd:?} failed ({}): {}",
            out.status,
            String::from_utf8_lossy(&out.stderr)
        );
    }
    Ok(String::from_utf8_lossy(&out.stdout).into_owned())
}

/// scipy's `name value se` lines against plateau's JSON estimates.
fn check_agreement(scipy: &str, json: &str) -> Result<()> {
    let report: serde_json::Value = serde_json::from_str(json).context("plateau's --json")?;
    let params = &report["params"];
    for line in scipy.lines() {
        let mut f = line.split_whitespace();
        let (Some(name), Some(v)) = (f.next(), f.next()) else {
            continue;
        };
        let v: f64 = v
            .parse()
            .with_context(|| format!("scipy printed {line:?}"))?;
        let ours = params[name]["estimate"]
            .as_f64()
            .with_context(|| format!("plateau reports no {name}"))?;
        if (ours - v).abs() > 1e-6 * v.abs() {
            bail!("{name}: plateau {ours} but scipy {v}; the two fits disagree");
        }
    }
    Ok(())
}

fn write_file(path: &Path, n: usize) -> Result<()> {
    let f = std::fs::File::create(path).with_context(|| format!("creating {}", path.display()))?;
    let mut out = std::io::BufWriter::new(f);
    writeln!(out, "t,y")?;
    let (r, t0) = (12.0 / n as f64, n as f64 / 2.0);
    for i in 0..n {
        let t = i as f64;
        let y = 1000.0 / (1.0 + (-r * (t - t0)).exp()) + 10.0 * (1.7 * t + 0.3).sin();
        writeln!(out, "{i},{y:.4}")?;
    }
    out.flush()?;
    Ok(())
}
