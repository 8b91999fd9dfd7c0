//! Installs, once, the tools the page build and the browser tests need on a
//! machine that starts with only rustup and cargo: the wasm32 target, the
//! `wasm-bindgen` CLI at exactly the version in `Cargo.lock`, the npm
//! packages of `tests/browser` (playwright-core, binaryen's wasm-opt) and
//! Debian's Chromium. Each step checks first and does nothing when the tool
//! is already there, so the tasks stay cheap on a warm machine.

use anyhow::{bail, Context, Result};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::Instant;

/// Runs `cmd`, failing with its command line when it exits non-zero.
pub fn run(cmd: &mut Command) -> Result<()> {
    let line = format!("{cmd:?}");
    let status = cmd
        .status()
        .with_context(|| format!("cannot start {line}"))?;
    if !status.success() {
        bail!("{line} failed ({status})");
    }
    Ok(())
}

/// `cargo`, as the running cargo names itself.
pub fn cargo() -> Command {
    Command::new(std::env::var("CARGO").unwrap_or_else(|_| "cargo".to_string()))
}

/// Builds the release `plateau` binary (for the benchmarks that time it as
/// a whole process) and returns its path.
pub fn release_plateau(root: &std::path::Path) -> Result<std::path::PathBuf> {
    run(cargo().current_dir(root).args([
        "build",
        "--release",
        "-p",
        "plateau-cli",
        "--bin",
        "plateau",
    ]))?;
    Ok(root.join("target/release/plateau"))
}

fn output_of(cmd: &mut Command) -> Option<String> {
    let out = cmd.output().ok()?;
    out.status
        .success()
        .then(|| String::from_utf8_lossy(&out.stdout).into_owned())
}

pub fn wasm_target() -> Result<()> {
    let installed = output_of(Command::new("rustup").args(["target", "list", "--installed"]))
        .unwrap_or_default();
    if installed
        .lines()
        .any(|l| l.trim() == "wasm32-unknown-unknown")
    {
        return Ok(());
    }
    println!("xtask: installing the wasm32-unknown-unknown target");
    run(Command::new("rustup").args(["target", "add", "wasm32-unknown-unknown"]))
}

/// The version of package `name` recorded in `Cargo.lock`.
pub fn locked_version(root: &Path, name: &str) -> Result<String> {
    let lock = std::fs::read_to_string(root.join("Cargo.lock")).context("reading Cargo.lock")?;
    let mut lines = lock.lines();
    while let Some(line) = lines.next() {
        if line.trim() == format!("name = \"{name}\"") {
            if let Some(v) = lines
                .next()
                .and_then(|l| l.trim().strip_prefix("version = "))
            {
                return Ok(v.trim_matches('"').to_string());
            }
        }
    }
    bail!("Cargo.lock has no package {name}")
}

/// The `wasm-bindgen` CLI, which must equal the crate version exactly.
pub fn wasm_bindgen(root: &Path) -> Result<PathBuf> {
    let want = locked_version(root, "wasm-bindgen")?;
    let have = output_of(Command::new("wasm-bindgen").arg("--version")).unwrap_or_default();
    if have.split_whitespace().nth(1) != Some(want.as_str()) {
        println!("xtask: installing wasm-bindgen-cli {want} (a few minutes, once)");
        run(cargo().args([
            "install",
            "--locked",
            "wasm-bindgen-cli",
            "--version",
            &want,
        ]))?;
    }
    Ok(PathBuf::from("wasm-bindgen"))
}

/// `tests/browser/node_modules`, installed from its lock file when missing
/// or older than the lock file.
pub fn npm_packages(root: &Path) -> Result<PathBuf> {
    let dir = root.join("tests/browser");
    let modules = dir.join("node_modules");
    let marker = modules.join(".package-lock.json");
    let stale = match (
        std::fs::metadata(&marker).and_then(|m| m.modified()),
        std::fs::metadata(dir.join("package-lock.json")).and_then(|m| m.modified()),
    ) {
        (Ok(installed), Ok(lock)) => installed < lock,
        _ => true,
    };
    if stale {
        println!("xtask: npm ci in tests/browser");
        run(Command::new("npm")
            .current_dir(&dir)
            .args(["ci", "--no-audit", "--no-fund"]))?;
    }
    Ok(modules)
}

/// binaryen's `wasm-opt` from npm (Debian's older one breaks current wasm).
pub fn wasm_opt(root: &Path) -> Option<PathBuf> {
    let p = root.join("tests/browser/node_modules/.bin/wasm-opt");
    p.exists().then_some(p)
}

/// Debian's Chromium, for the browser tests.
pub fn chromium() -> Result<()> {
    if Path::new("/usr/bin/chromium").exists() {
        return Ok(());
    }
    println!("xtask: installing Debian's chromium (apt-get)");
    let root_user = output_of(Command::new("id").arg("-u")).is_some_and(|s| s.trim() == "0");
    let apt = |args: &[&str]| {
        let mut c = if root_user {
            Command::new("apt-get")
        } else {
            let mut c = Command::new("sudo");
            c.arg("apt-get");
            c
        };
        c.args(args).env("DEBIAN_FRONTEND", "noninteractive");
        run(&mut c)
    };
    apt(&["update", "-q"])?;
    apt(&["install", "-y", "-q", "chromium", "chromium-driver"])
}

/// Wall time of one run in seconds, start to exit, output discarded (the
/// whole-process benchmarks).
pub fn timed(cmd: &mut Command) -> Result<f64> {
    let started = Instant::now();
    let status = cmd
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .with_context(|| format!("running {cmd:?}"))?;
    let elapsed = started.elapsed().as_secs_f64();
    if !status.success() {
        bail!("{cmd:?} failed ({status})");
    }
    Ok(elapsed)
}

/// The median (sorts `v` in place; the mean of the middle two for an
/// even count).
pub fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}
