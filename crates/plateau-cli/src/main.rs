//! `plateau`: the command-line face of the core, for scripting, batch work
//! and reproducible reports.
//!
//! Flags are parsed in two stages: [`cli::Cli`] holds the raw flags as clap
//! read them, [`settings`] turns them into validated core options. Output is
//! either a table for people ([`table`]) or the JSON report shared with the
//! page (`plateau_core::report`).

mod cli;
mod settings;
mod table;

use anyhow::{Context, Result};
use clap::Parser;
use cli::{Cli, Command};
use plateau_cli::batch;
use plateau_core::compare::compare;
use plateau_core::report::{CompareReport, FitReport};
use plateau_core::{fit, parse_series, Model, Series};
use std::io::Read;
use std::process::ExitCode;

/// Why the command failed, which decides the exit status.
enum Failure {
    /// The input could not be read or parsed (exit 2).
    Input(anyhow::Error),
    /// The input was fine but no fit could be made (exit 1).
    Fit(anyhow::Error),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    match run(cli) {
        Ok(()) => ExitCode::SUCCESS,
        Err(Failure::Input(e)) => {
            eprintln!("plateau: {e:#}");
            ExitCode::from(2)
        }
        Err(Failure::Fit(e)) => {
            eprintln!("plateau: {e:#}");
            ExitCode::from(1)
        }
    }
}

fn run(cli: Cli) -> Result<(), Failure> {
    match cli.command {
        Command::Fit(args) => {
            let settings = settings::fit(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let result = fit(&series, settings.model, &settings.fit)
                .with_context(|| {
                    format!("{}: cannot fit the {} model", name, settings.model.name())
                })
                .map_err(Failure::Fit)?;
            if let Some(path) = &args.svg {
                // The chart's forecast runs a quarter of the data's span past the last point.
                let (first, last) = series
                    .times
                    .iter()
                    .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), t| {
                        (a.min(*t), b.max(*t))
                    });
                let kind = series.time_kind;
                let input = plateau_chart::ChartInput {
                    times: &series.times,
                    values: &series.values,
                    fit: &result,
                    horizon: Some(last + 0.25 * (last - first)),
                    format_time: &|t| kind.format(t),
                    time_caption: &series.time_name,
                    value_caption: &series.value_name,
                };
                plateau_chart::render_svg(plateau_chart::ChartKind::Curve, &input, 900, 560)
                    .map_err(anyhow::Error::from)
                    .and_then(|svg| {
                        std::fs::write(path, svg)
                            .with_context(|| format!("cannot write the chart to {path}"))
                    })
                    .map_err(Failure::Input)?;
            }
            if args.json {
                print_json(&FitReport::new(&result, &series.warnings));
            } else {
                print!("{}", table::fit(&name, &series, &result));
            }
            Ok(())
        }
        Command::Compare(args) => {
            let settings = settings::compare(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let entries = compare(
                &series.times,
                &series.values,
                &settings.models,
                &settings.fit,
            );
            if entries.iter().all(|e| e.result.is_err()) {
                let reasons: Vec<String> = entries
                    .iter()
                    .filter_map(|e| {
                        e.result
                            .as_ref()
                            .err()
                            .map(|err| format!("{}: {}", e.model.name(), err))
                    })
                    .collect();
                return Err(Failure::Fit(anyhow::anyhow!(
                    "{}: no model could be fitted\n  {}",
                    name,
                    reasons.join("\n  ")
                )));
            }
            if args.json {
                print_json(&CompareReport::new(&entries, &series.warnings));
            } else {
                print!("{}", table::compare(&name, &series, &entries));
            }
            Ok(())
        }
        Command::Batch(args) => {
            let opts = settings::batch(&args).map_err(Failure::Input)?;
            let file = args.file.as_str();
            let input: Box<dyn std::io::BufRead + Send> = if file == "-" {
                Box::new(std::io::BufReader::new(std::io::stdin()))
            } else {
                let f = std::fs::File::open(file)
                    .with_context(|| format!("cannot read {file}"))
                    .map_err(Failure::Input)?;
                Box::new(std::io::BufReader::with_capacity(1 << 16, f))
            };
            let name = if file == "-" { "<stdin>" } else { file };
            if opts.format != batch::Format::Table {
                eprintln!("plateau: {}", plateau_core::report::CAUTION);
            }
            let stdout = std::io::stdout();
            let mut out = std::io::BufWriter::new(stdout.lock());
            let totals = batch::run(input, &mut out, &opts).map_err(|e| match e {
                batch::Stop::Input(m) => Failure::Input(anyhow::anyhow!("{name}: {m}")),
                batch::Stop::Output(e) => {
                    Failure::Input(anyhow::anyhow!("cannot write the results: {e}"))
                }
            })?;
            drop(out);
            if totals.failed > 0 {
                return Err(Failure::Fit(anyhow::anyhow!(
                    "{name}: {} of {} series failed (their lines say why); the others were fitted",
                    totals.failed,
                    totals.series
                )));
            }
            if totals.series == 0 {
                return Err(Failure::Input(anyhow::anyhow!(
                    "{name}: no series found; expected rows of series, time and value"
                )));
            }
            Ok(())
        }
        Command::Models => {
            for m in Model::ALL {
                println!(
                    "{:<12} {:<44} parameters: {}",
                    m.name(),
                    m.formula(),
                    m.param_names().join(", ")
                );
            }
            Ok(())
        }
    }
}

/// Reads the input file (`-` for standard input) and parses it, summing
/// per-period counts when asked; the name is used in messages.
fn read_series(
    input: &cli::InputArgs,
    opts: &plateau_core::ParseOptions,
) -> Result<(String, Series), Failure> {
    let file = input.file.as_str();
    let (name, text) = if file == "-" {
        let mut s = String::new();
        std::io::stdin()
            .read_to_string(&mut s)
            .context("cannot read standard input as UTF-8 text")
            .map_err(Failure::Input)?;
        ("<stdin>".to_string(), s)
    } else {
        let bytes = std::fs::read(file)
            .with_context(|| format!("cannot read {file}"))
            .map_err(Failure::Input)?;
        let text = String::from_utf8(bytes)
            .map_err(|e| {
                anyhow::anyhow!(
                    "{file}: not UTF-8 text (first bad byte at offset {})",
                    e.utf8_error().valid_up_to()
                )
            })
            .map_err(Failure::Input)?;
        (file.to_string(), text)
    };
    let mut series =
        parse_series(&text, opts).map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
    if input.per_period {
        series.values = plateau_core::data::cumulate(&series.values);
        series.value_name = format!("{} (cumulative)", series.value_name);
    } else if let Some(mut w) = plateau_core::data::decline_warning(&series) {
        w.message.push_str(" (--per-period)");
        series.warnings.push(w);
    }
    Ok((name, series))
}

fn print_json<T: serde::Serialize>(value: &T) {
    // Serialising plain data to a String cannot fail.
    let s =
        serde_json::to_string_pretty(value).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"));
    println!("{s}");
}
