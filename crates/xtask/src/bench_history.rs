//! `cargo xtask bench-history [--runs R]`: `plateau drift` and
//! `plateau backtest` (release build, whole process, default settings:
//! at most 40 cutoffs / origins, asymptotic intervals, every model in the
//! backtest) on invented logistic series of 1,000 and 20,000 points.
//!
//! The series (`target/bench-history/logistic_<N>.csv`): t = 0 … N−1,
//! y = 5000 / (1 + exp(−(10/N)(t − 0.55 N))) plus normal noise of sd 40
//! from `ChaCha8Rng::seed_from_u64(2026)`, two decimals, as the demo-data
//! generator writes its series. Prints the median wall time of R runs
//! (default 5) of each command, and the same with one model at a time for
//! the backtest (where the time goes).

use anyhow::{bail, Context, Result};
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use std::io::Write;
use std::path::Path;
use std::process::Command;

pub fn run(args: &[String]) -> Result<()> {
    let mut runs = 5usize;
    let mut it = args.iter();
    while let Some(flag) = it.next() {
        match (flag.as_str(), it.next()) {
            ("--runs", Some(v)) => runs = v.parse().context("--runs: expected a count")?,
            _ => bail!("usage: cargo xtask bench-history [--runs R]"),
        }
    }
    if runs == 0 {
        bail!("expected at least 1 run");
    }
    let root = crate::workspace_root();
    let dir = root.join("target/bench-history");
    std::fs::create_dir_all(&dir)?;
    let plateau = crate::tools::release_plateau(&root)?;
    println!(
        "plateau drift / backtest, whole process, median of {runs} runs ({})",
        std::env::consts::ARCH
    );
    for n in [1_000usize, 20_000] {
        let file = dir.join(format!("logistic_{n}.csv"));
        write_series(&file, n)?;
        let mut cases: Vec<(String, Vec<String>)> = vec![
            ("drift".into(), vec!["drift".into()]),
            ("backtest (every model)".into(), vec!["backtest".into()]),
        ];
        for m in [
            "logistic",
            "logistic4",
            "gompertz",
            "richards",
            "exponential",
            "bass",
            "bilogistic",
        ] {
            cases.push((
                format!("backtest --models {m}"),
                vec!["backtest".into(), "--models".into(), m.into()],
            ));
        }
        for (label, argv) in cases {
            let mut times = Vec::new();
            for _ in 0..runs {
                let mut cmd = Command::new(&plateau);
                cmd.args(&argv).arg(&file);
                times.push(crate::tools::timed(&mut cmd)?);
            }
            println!(
                "  n = {n:>6}  {label:<30} {:>10.1} ms",
                1e3 * crate::tools::median(&mut times)
            );
        }
    }
    Ok(())
}

fn write_series(path: &Path, n: usize) -> Result<()> {
    let mut rng = ChaCha8Rng::seed_from_u64(2026);
    let noise = Normal::new(0.0, 40.0).expect("sd > 0");
    let mut out = std::io::BufWriter::new(std::fs::File::create(path)?);
    writeln!(out, "t,y")?;
    let (r, t0) = (10.0 / n as f64, 0.55 * n as f64);
    for i in 0..n {
        let t = i as f64;
        let y = 5000.0 / (1.0 + (-r * (t - t0)).exp()) + noise.sample(&mut rng);
        writeln!(out, "{i},{y:.2}")?;
    }
    out.flush()?;
    Ok(())
}
