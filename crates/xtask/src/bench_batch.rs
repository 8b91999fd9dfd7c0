//! `cargo xtask bench-batch [--series N]`: `plateau batch` on a large
//! generated long-format file, with its wall time and peak memory.
//!
//! 1. Writes `target/bench-batch/series_<N>.csv` (default N = 100,000): N
//!    logistic series of 50 points each, K, r and t0 drawn per series and
//!    normal noise of 1% of K, from `ChaCha8Rng::seed_from_u64(2026)`,
//!    written row by row (the generator holds one series at a time).
//! 2. Builds the release `plateau` and runs
//!    `/usr/bin/time -v plateau batch FILE --csv > target/bench-batch/out.csv`.
//! 3. Prints the file size, series per second and GNU time's "Maximum
//!    resident set size", and checks that every series produced one line.

use anyhow::{bail, Context, Result};
use rand::{RngExt, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};
use std::io::Write;
use std::process::Command;

const POINTS: usize = 50;

pub fn run(args: &[String]) -> Result<()> {
    let series = match args {
        [] => 100_000,
        [flag, n] if flag == "--series" => n.parse().context("--series: expected a count")?,
        _ => bail!("usage: cargo xtask bench-batch [--series N]"),
    };
    let root = crate::workspace_root();
    let dir = root.join("target/bench-batch");
    std::fs::create_dir_all(&dir)?;
    let file = dir.join(format!("series_{series}.csv"));
    write_file(&file, series)?;
    let size = std::fs::metadata(&file)?.len();

    let plateau = crate::tools::release_plateau(&root)?;
    let out_path = dir.join("out.csv");
    let out_file = std::fs::File::create(&out_path)?;
    let started = std::time::Instant::now();
    let run = Command::new("/usr/bin/time")
        .arg("-v")
        .arg(&plateau)
        .arg("batch")
        .arg(&file)
        .arg("--csv")
        .stdout(out_file)
        .output()
        .context("running /usr/bin/time -v plateau batch (GNU time is needed)")?;
    let wall = started.elapsed().as_secs_f64();
    let report = String::from_utf8_lossy(&run.stderr);
    if !run.status.success() {
        bail!("plateau batch failed ({}):\n{report}", run.status);
    }
    let field = |name: &str| {
        report
            .lines()
            .find_map(|l| l.trim().strip_prefix(name).map(|v| v.trim().to_string()))
            .unwrap_or_else(|| "?".into())
    };
    let lines = std::fs::read_to_string(&out_path)?.lines().count();
    if lines != series + 1 {
        bail!("expected {} result lines, found {lines}", series + 1);
    }
    println!(
        "{series} series x {POINTS} points ({:.1} MB): {wall:.2} s wall, {:.0} series/s",
        size as f64 / 1e6,
        series as f64 / wall
    );
    println!(
        "peak RSS {} kB (GNU time: Maximum resident set size); user {} s, system {} s",
        field("Maximum resident set size (kbytes):"),
        field("User time (seconds):"),
        field("System time (seconds):")
    );
    Ok(())
}

fn write_file(path: &std::path::Path, series: usize) -> Result<()> {
    let f = std::fs::File::create(path).with_context(|| format!("creating {}", path.display()))?;
    let mut out = std::io::BufWriter::new(f);
    let mut rng = ChaCha8Rng::seed_from_u64(2026);
    writeln!(out, "series,t,y")?;
    for s in 0..series {
        let k: f64 = rng.random_range(500.0..5000.0);
        let r: f64 = rng.random_range(0.2..0.8);
        let t0: f64 = rng.random_range(15.0..35.0);
        let noise = Normal::new(0.0, 0.01 * k).context("noise sd")?;
        for i in 0..POINTS {
            let t = i as f64;
            let y = k / (1.0 + (-r * (t - t0)).exp()) + noise.sample(&mut rng);
            writeln!(out, "s{s},{t},{y:.3}")?;
        }
    }
    out.flush()?;
    Ok(())
}
