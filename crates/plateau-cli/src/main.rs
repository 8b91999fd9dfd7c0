//! `plateau`: the command-line face of the core, for scripting, batch work
//! and reproducible reports.
//!
//! Flags are parsed in two stages: [`cli::Cli`] holds the raw flags as clap
//! read them, [`settings`] turns them into validated core options. Output is
//! either a table for people ([`table`]) or the JSON report shared with the
//! page (`plateau_core::report`).

mod cli;
mod outlook;
mod settings;
mod table;

use anyhow::{Context, Result};
use clap::Parser;
use cli::{Cli, Command};
use plateau_cli::batch;
use plateau_core::bootstrap::Bootstrap;
use plateau_core::compare::compare;
use plateau_core::diagnostics;
use plateau_core::forecast_report::{BacktestReport, DriftReport, ForecastReport};
use plateau_core::report::{CompareReport, DiagnoseReport, FitReport};
use plateau_core::{drift, forecast, milestones};
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
                let kind = series.axis;
                let input = plateau_chart::ChartInput {
                    times: &series.times,
                    values: &series.values,
                    fit: &result,
                    horizon: Some(last + 0.25 * (last - first)),
                    format_time: &|t| kind.format(t),
                    time_caption: &series.time_name,
                    value_caption: &series.value_name,
                    time_axis: Some(series.axis).filter(|a| a.period().is_some()),
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
                print_json(&FitReport::new(&result, &series.warnings).with_time(&series))?;
            } else {
                emit(&table::fit(&name, &series, &result))?;
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
            let report =
                CompareReport::with_data(&entries, &series.warnings, &series.times, &series.values)
                    .with_time(&series);
            if args.json {
                print_json(&report)?;
            } else {
                emit(&table::compare(&name, &series, &entries, &report))?;
            }
            Ok(())
        }
        Command::Diagnose(args) => {
            let settings = settings::diagnose(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let (t, y) = (&series.times, &series.values);
            let result = fit(&series, settings.model, &settings.fit)
                .with_context(|| {
                    format!("{}: cannot fit the {} model", name, settings.model.name())
                })
                .map_err(Failure::Fit)?;
            let residuals = diagnostics::residual_diagnostics(&result, t, y);
            let symmetry = diagnostics::symmetry_test(t, y, &settings.fit).ok();
            let k = settings
                .fisher_pry_k
                .or_else(|| result.param("K").map(|p| p.estimate));
            let fisher_pry = k.and_then(|k| diagnostics::fisher_pry_of(&result, t, y, k));
            let kind = series.axis;
            let format_time = |v: f64| kind.format(v);
            let input = plateau_chart::ChartInput {
                times: t,
                values: y,
                fit: &result,
                horizon: None,
                format_time: &format_time,
                time_caption: &series.time_name,
                value_caption: &series.value_name,
                time_axis: Some(series.axis).filter(|a| a.period().is_some()),
            };
            let write = |path: &str, svg: Result<String, plateau_chart::ChartError>| {
                svg.map_err(anyhow::Error::from)
                    .and_then(|svg| {
                        std::fs::write(path, svg)
                            .with_context(|| format!("cannot write the chart to {path}"))
                    })
                    .map_err(Failure::Input)
            };
            if let Some(path) = &args.qq_svg {
                write(
                    path,
                    plateau_chart::render_svg(plateau_chart::ChartKind::Qq, &input, 800, 560),
                )?;
            }
            if let Some(path) = &args.fisher_pry_svg {
                write(
                    path,
                    plateau_chart::render_fisher_pry_svg(&input, settings.fisher_pry_k, 900, 560),
                )?;
            }
            let mut report =
                DiagnoseReport::new(&result, &series.warnings, residuals, symmetry, fisher_pry);
            report.fit = report.fit.with_time(&series);
            if args.json {
                print_json(&report)?;
            } else {
                emit(&table::diagnose(
                    &name,
                    &series,
                    &report,
                    settings.fisher_pry_k.is_some(),
                ))?;
            }
            Ok(())
        }
        Command::Forecast(args) => {
            let settings = settings::forecast(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let kind = series.axis;
            // On a calendar axis the horizon moves to the data's next grid
            // point, so every forecast row falls on the grid.
            let until = kind
                .parse_time(&args.until)
                .map(|t| kind.snap_up(t))
                .map_err(|e| Failure::Input(anyhow::anyhow!("--until: {e}")))?;
            let result = fit(&series, settings.model, &settings.fit)
                .with_context(|| {
                    format!("{}: cannot fit the {} model", name, settings.model.name())
                })
                .map_err(Failure::Fit)?;
            let (first, last) = span(&series.times);
            if until <= last {
                return Err(Failure::Input(anyhow::anyhow!(
                    "--until {}: expected a time after the last observation ({})",
                    args.until,
                    kind.format(last)
                )));
            }
            let boot = match &settings.bootstrap {
                None => None,
                Some(opts) => {
                    let mut b = Bootstrap::new(&result, &series.times, &series.values, opts)
                        .map_err(|e| Failure::Fit(anyhow::anyhow!("{name}: no bootstrap: {e}")))?;
                    b.run();
                    Some(b)
                }
            };
            let step = settings
                .step
                .unwrap_or_else(|| forecast::typical_step(&series.times));
            let future = forecast::grid(last, until, step, MAX_FORECAST_ROWS);
            let points = forecast::forecast(
                &result,
                &series.times,
                &series.values,
                &future,
                boot.as_ref(),
            );
            let targets =
                milestones::standard_targets(settings.model, &settings.shares, &settings.levels);
            let assessed: Vec<_> = targets
                .iter()
                .map(|&t| milestones::assess(&result, t, first, last, boot.as_ref()))
                .collect();
            let text = move |t: f64| kind.format(t);
            let report = ForecastReport::new(
                &result,
                until,
                &series.time_unit(),
                &points,
                &assessed,
                boot.as_ref(),
                &text,
                &series.warnings,
            )
            .with_time_origin(series.time_origin());
            if args.json {
                print_json(&report)?;
            } else {
                emit(&outlook::forecast(&name, &report, boot.as_ref()))?;
            }
            Ok(())
        }
        Command::Drift(args) => {
            let settings = settings::drift(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let rows = drift::drift(&series.times, &series.values, settings.model, &settings.fit);
            if rows.iter().all(|r| r.result.is_err()) {
                return Err(Failure::Fit(anyhow::anyhow!(
                    "{name}: the {} model could not be fitted to any prefix of the data",
                    settings.model.name()
                )));
            }
            let kind = series.axis;
            let text = move |t: f64| kind.format(t);
            let report = DriftReport::new(settings.model, &rows, &text, &series.warnings);
            if let Some(path) = &args.svg {
                let svg = plateau_chart::render_drift_svg(
                    &rows,
                    &plateau_chart::DriftInput {
                        format_time: &text,
                        time_caption: &series.time_name,
                        value_caption: &series.value_name,
                        model: settings.model,
                        time_axis: Some(series.axis).filter(|a| a.period().is_some()),
                    },
                    900,
                    520,
                )
                .map_err(anyhow::Error::from)
                .and_then(|svg| {
                    std::fs::write(path, svg)
                        .with_context(|| format!("cannot write the chart to {path}"))
                });
                svg.map_err(Failure::Input)?;
            }
            if args.json {
                print_json(&report)?;
            } else {
                emit(&outlook::drift(&name, &report))?;
            }
            Ok(())
        }
        Command::Backtest(args) => {
            let settings = settings::backtest(&args).map_err(Failure::Input)?;
            let (name, series) = read_series(&args.input, &settings.parse)?;
            let bt = drift::BacktestOptions {
                horizon: args.horizon,
                min_train: args.min_train,
            };
            if series.times.len() < 4 {
                return Err(Failure::Input(anyhow::anyhow!(
                    "{name}: a backtest needs more points than {}",
                    series.times.len()
                )));
            }
            let rows = drift::backtest(
                &series.times,
                &series.values,
                &settings.models,
                &settings.fit,
                &bt,
            );
            if args.json {
                print_json(&BacktestReport::new(args.horizon, &rows, &series.warnings))?;
            } else {
                emit(&outlook::backtest(&name, args.horizon, &rows))?;
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
            let totals = match batch::run(input, &mut out, &opts) {
                Ok(totals) => totals,
                // The reader has gone away: stop quietly (see `emit`).
                Err(batch::Stop::Output(e)) if e.kind() == std::io::ErrorKind::BrokenPipe => {
                    return Ok(());
                }
                Err(batch::Stop::Output(e)) => {
                    return Err(Failure::Input(anyhow::anyhow!(
                        "cannot write the results: {e}"
                    )));
                }
                Err(batch::Stop::Input(m)) => {
                    return Err(Failure::Input(anyhow::anyhow!("{name}: {m}")));
                }
            };
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
            let mut text = String::new();
            for m in Model::ALL {
                text.push_str(&format!(
                    "{:<12} {:<44} parameters: {}\n",
                    m.name(),
                    m.formula(),
                    m.param_names().join(", ")
                ));
            }
            emit(&text)
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
    let (name, bytes) = if file == "-" {
        let mut bytes = Vec::new();
        std::io::stdin()
            .read_to_end(&mut bytes)
            .context("cannot read standard input")
            .map_err(Failure::Input)?;
        ("<stdin>".to_string(), bytes)
    } else {
        let bytes = std::fs::read(file)
            .with_context(|| format!("cannot read {file}"))
            .map_err(Failure::Input)?;
        (file.to_string(), bytes)
    };
    // UTF-8, or UTF-16 decoded; anything else is named (core's decode_text).
    let text = plateau_core::data::decode_text(bytes)
        .map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
    let mut series =
        parse_series(&text, opts).map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
    if input.per_period {
        series.values = plateau_core::data::per_period_totals(&series)
            .map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
        series.value_name = format!("{} (cumulative)", series.value_name);
    } else if let Some(mut w) = plateau_core::data::decline_warning(&series) {
        w.message.push_str(" (--per-period)");
        series.warnings.push(w);
    }
    Ok((name, series))
}

/// Writes `value` as pretty JSON to standard output, serialised straight
/// into the buffered stream (a report of a long series is not first held
/// as one string); a reader that has gone away ends it quietly, as `emit`.
fn print_json<T: serde::Serialize>(value: &T) -> Result<(), Failure> {
    use std::io::Write;
    let mut out = std::io::BufWriter::with_capacity(1 << 16, std::io::stdout().lock());
    let written = serde_json::to_writer_pretty(&mut out, value)
        .map_err(std::io::Error::from)
        .and_then(|()| out.write_all(b"\n"))
        .and_then(|()| out.flush());
    match written {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => Err(Failure::Input(
            anyhow::anyhow!("cannot write the results: {e}"),
        )),
        _ => Ok(()),
    }
}

/// Writes `text` to standard output. A reader that has gone away (as in
/// `plateau fit data.csv | head`) ends the output quietly, as it ends any
/// filter's; any other write error is reported.
fn emit(text: &str) -> Result<(), Failure> {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match out.write_all(text.as_bytes()).and_then(|()| out.flush()) {
        Err(e) if e.kind() != std::io::ErrorKind::BrokenPipe => Err(Failure::Input(
            anyhow::anyhow!("cannot write the results: {e}"),
        )),
        _ => Ok(()),
    }
}

/// Forecast rows past the data at most (the grid step widens beyond).
const MAX_FORECAST_ROWS: usize = 500;

/// First and last time.
fn span(t: &[f64]) -> (f64, f64) {
    t.iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), v| {
            (a.min(*v), b.max(*v))
        })
}
