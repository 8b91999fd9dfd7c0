//! Project automation, run as `cargo xtask <task> [args]` (the alias lives in
//! `.cargo/config.toml`). `cargo xtask help` lists the tasks.
//!
//! Adding a task: put it in its own module with a
//! `pub fn run(args: &[String]) -> anyhow::Result<()>`, add one entry to
//! [`TASKS`] and one arm to the `match` in [`dispatch`].

mod bench_batch;
mod bench_history;
mod bench_vs_scipy;
mod bench_whole_process;
mod ci;
mod demo_data;
mod dist;
mod serve;
mod tools;

use std::path::PathBuf;
use std::process::ExitCode;

/// One line of `cargo xtask help`.
struct Task {
    name: &'static str,
    usage: &'static str,
    about: &'static str,
}

const TASKS: &[Task] = &[
    Task {
        name: "serve",
        usage: "[--port N]",
        about: "build the single-file page and serve it on 127.0.0.1 (default port 8080)",
    },
    Task {
        name: "ci",
        usage: "",
        about: "every check CI runs: fmt, clippy, tests, wasm32 build, demo data, browser tests",
    },
    Task {
        name: "dist",
        usage: "",
        about: "build dist/plateau.html: one self-contained page (wasm inlined, strict CSP)",
    },
    Task {
        name: "demo-data",
        usage: "[--check]",
        about: "regenerate demo-data/ from fixed seeds; --check only verifies the checked-in files",
    },
    Task {
        name: "bench-vs-scipy",
        usage: "",
        about: "run the criterion fit bench and tests/reference/bench_scipy.py, print scipy/plateau ratios",
    },
    Task {
        name: "bench-batch",
        usage: "[--series N]",
        about: "plateau batch on a generated file of N 50-point series (default 100000): time and peak RSS",
    },
    Task {
        name: "bench-whole-process",
        usage: "[--points N] [--runs R]",
        about: "plateau fit against tests/reference/whole_process_scipy.py on an N-point CSV, whole process, median ratio",
    },
    Task {
        name: "bench-history",
        usage: "[--runs R]",
        about: "plateau drift and backtest on invented 1,000- and 20,000-point series, whole process, median wall time",
    },
    Task {
        name: "help",
        usage: "",
        about: "list the tasks",
    },
];

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    match dispatch(&args) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("xtask: error: {e:#}");
            ExitCode::FAILURE
        }
    }
}

fn dispatch(args: &[String]) -> anyhow::Result<()> {
    let (task, rest) = match args.split_first() {
        Some((task, rest)) => (task.as_str(), rest),
        None => ("help", &[][..]),
    };
    match task {
        "help" | "-h" | "--help" => {
            help();
            Ok(())
        }
        "serve" => serve::run_task(rest),
        "ci" => ci::run_task(rest),
        "dist" => dist::run_task(rest),
        "demo-data" => demo_data::run(rest),
        "bench-vs-scipy" => bench_vs_scipy::run(rest),
        "bench-batch" => bench_batch::run(rest),
        "bench-whole-process" => bench_whole_process::run(rest),
        "bench-history" => bench_history::run(rest),
        other => {
            help();
            anyhow::bail!("unknown task `{other}`")
        }
    }
}

fn help() {
    println!("usage: cargo xtask <task> [args]\n\ntasks:");
    let width = TASKS
        .iter()
        .map(|t| t.name.len() + t.usage.len() + 1)
        .max()
        .unwrap_or(0);
    for t in TASKS {
        let call = format!("{} {}", t.name, t.usage);
        println!("  {call:<width$}  {}", t.about);
    }
}

/// The workspace root (two levels above this crate's manifest).
pub fn workspace_root() -> PathBuf {
    let manifest = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    manifest
        .parent()
        .and_then(|p| p.parent())
        .map(PathBuf::from)
        .unwrap_or(manifest)
}

/// Fails if a task that takes no arguments got some.
pub fn no_args(task: &str, args: &[String]) -> anyhow::Result<()> {
    if let Some(a) = args.first() {
        anyhow::bail!("`{task}` takes no arguments (got `{a}`)");
    }
    Ok(())
}
