//! `cargo xtask ci`: every check, in the order CI runs them. `.ci/run` and
//! the README's test command call this task; if it passes locally, CI is
//! green.
//!
//! Formatting and lints, the native test suites, the core and chart crates
//! built for wasm32, the demo data checked against its generator, then the
//! single-file page built and driven in headless Chromium by the browser
//! tests under `tests/browser`.

use crate::tools::{self, run};
use anyhow::Result;
use std::process::Command;

pub fn run_task(args: &[String]) -> Result<()> {
    crate::no_args("ci", args)?;
    let root = crate::workspace_root();
    let step = |name: &str| println!("\n== xtask ci: {name}");

    step("rustfmt");
    run(tools::cargo()
        .current_dir(&root)
        .args(["fmt", "--all", "--", "--check"]))?;

    step("clippy");
    run(tools::cargo().current_dir(&root).args([
        "clippy",
        "--workspace",
        "--all-targets",
        "--",
        "-D",
        "warnings",
    ]))?;

    step("native tests");
    run(tools::cargo()
        .current_dir(&root)
        .args(["test", "--workspace"]))?;

    step("wasm32 build of the core and charts");
    tools::wasm_target()?;
    run(tools::cargo().current_dir(&root).args([
        "build",
        "--target",
        "wasm32-unknown-unknown",
        "-p",
        "plateau-core",
        "-p",
        "plateau-chart",
    ]))?;

    step("demo data matches its generator");
    crate::demo_data::run(&["--check".to_string()])?;

    step("browser tests");
    tools::chromium()?;
    tools::npm_packages(&root)?;
    let page = crate::dist::build(&root)?;
    run(tools::cargo()
        .current_dir(&root)
        .args(["build", "-p", "plateau-cli"]))?;
    run(Command::new("node")
        .current_dir(root.join("tests/browser"))
        .env("PLATEAU_PAGE", &page)
        .env("PLATEAU_BIN", root.join("target/debug/plateau"))
        .env("PLATEAU_ROOT", &root)
        .args(["--test", "--test-concurrency=1", "--test-reporter=spec"])
        .arg("tests/"))?;

    println!("\nxtask ci: all checks passed");
    Ok(())
}
