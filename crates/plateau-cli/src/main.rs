//! `plateau`: the command-line face of the core, for scripting, batch work
//! and reproducible reports.
//!
//! Flags are parsed in two stages: [`cli::Cli`] holds the raw flags as clap
//! read them, [`settings`] turns them into validated core options. Output is
//! either a table for people ([`table`]) or the JSON report shared with the
//! page (`plateau_study::report`).

mod cli;
mod outlook;
mod settings;
mod table;

use anyhow::{Context, Result};
use clap::Parser;
use cli::{Cli, Command};
use plateau_cli::batch;
use plateau_core::data::workbook;
use plateau_core::{parse_series, Model};
use plateau_study::study::{span, Study, StudyError};
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
            let (name, study) = study(&args.input, settings)?;
            let result = study.fitted().map_err(|e| fail(&name, e))?;
            let series = study.fitted_series();
            if let Some(path) = &args.svg {
                // The chart's forecast runs a quarter of the data's span past the last point.
                let (first, last) = span(&series.times);
                let kind = series.axis;
                let input = plateau_chart::ChartInput {
                    times: &series.times,
                    values: &series.values,
                    fit: result,
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
                print_json(&study.fit_report().map_err(|e| fail(&name, e))?)?;
            } else {
                let mut text = String::new();
                if let Some(answer) = plateau_study::answer::answer(&study) {
                    text.push_str("In short\n");
                    for line in answer.text_lines() {
                        text.push_str("  ");
                        text.push_str(&line);
                        text.push('\n');
                    }
                    text.push('\n');
                }
                text.push_str(&table::fit(&name, &series, result));
                emit(&text)?;
            }
            Ok(())
        }
        Command::Compare(args) => {
            let settings = settings::compare(&args).map_err(Failure::Input)?;
            let (name, study) = study(&args.input, settings)?;
            let entries = study.comparison();
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
            let report = study.compare_report();
            if args.json {
                print_json(&report)?;
            } else {
                emit(&table::compare(&name, study.series(), entries, &report))?;
            }
            Ok(())
        }
        Command::Diagnose(args) => {
            let settings = settings::diagnose(&args).map_err(Failure::Input)?;
            let (name, study) = study(&args.input, settings)?;
            let result = study.fitted().map_err(|e| fail(&name, e))?;
            let series = study.fitted_series();
            let kind = series.axis;
            let format_time = |v: f64| kind.format(v);
            let input = plateau_chart::ChartInput {
                times: &series.times,
                values: &series.values,
                fit: result,
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
            let entered_k = study.request().fisher_pry_k;
            if let Some(path) = &args.fisher_pry_svg {
                write(
                    path,
                    plateau_chart::render_fisher_pry_svg(&input, entered_k, 900, 560),
                )?;
            }
            let report = study.diagnose_report().map_err(|e| fail(&name, e))?;
            if args.json {
                print_json(&report)?;
            } else {
                emit(&table::diagnose(
                    &name,
                    &series,
                    &report,
                    entered_k.is_some(),
                ))?;
            }
            Ok(())
        }
        Command::Forecast(args) => {
            let settings = settings::forecast(&args).map_err(Failure::Input)?;
            let (name, study) = study(&args.input, settings)?;
            // A --until the axis cannot read is refused before any fit.
            study.forecast_end().map_err(|e| fail(&name, e))?;
            study.fitted().map_err(|e| fail(&name, e))?;
            let report = study.forecast_report().map_err(|e| fail(&name, e))?;
            if args.json {
                print_json(&report)?;
            } else {
                let boot = study.outlook().ok().and_then(|o| o.bootstrap.as_ref());
                emit(&outlook::forecast(&name, &report, boot))?;
            }
            Ok(())
        }
        Command::Drift(args) => {
            let settings = settings::drift(&args).map_err(Failure::Input)?;
            let (name, study) = study(&args.input, settings)?;
            let report = study.drift_report().map_err(|e| fail(&name, e))?;
            if let Some(path) = &args.svg {
                let series = study.series();
                let kind = series.axis;
                let text = move |t: f64| kind.format(t);
                let svg = plateau_chart::render_drift_svg(
                    study.drift(),
                    &plateau_chart::DriftInput {
                        format_time: &text,
                        time_caption: &series.time_name,
                        value_caption: &study.fitted_value_name(),
                        model: study.request().model,
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
            let (name, study) = study(&args.input, settings)?;
            let report = study.backtest_report().map_err(|e| fail(&name, e))?;
            if args.json {
                print_json(&report)?;
            } else {
                emit(&outlook::backtest(&name, args.horizon, study.backtest()))?;
            }
            Ok(())
        }
        Command::Batch(args) => {
            let opts = settings::batch(&args).map_err(Failure::Input)?;
            let file = args.file.as_str();
            let input: Box<dyn std::io::BufRead + Send> = if file == "-" {
                Box::new(std::io::BufReader::new(std::io::stdin()))
            } else if workbook::has_workbook_extension(file) || args.sheet.is_some() {
                // A workbook is read whole (it is a ZIP or OLE container),
                // then its sheet streams through as text.
                let bytes = std::fs::read(file)
                    .with_context(|| format!("cannot read {file}"))
                    .map_err(Failure::Input)?;
                let (text, _) = sheet_text(file, &bytes, args.sheet.as_deref())?;
                Box::new(std::io::Cursor::new(text.into_bytes()))
            } else {
                let f = std::fs::File::open(file)
                    .with_context(|| format!("cannot read {file}"))
                    .map_err(Failure::Input)?;
                Box::new(std::io::BufReader::with_capacity(1 << 16, f))
            };
            let name = if file == "-" { "<stdin>" } else { file };
            if opts.format != batch::Format::Table {
                eprintln!("plateau: {}", plateau_study::report::CAUTION);
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

/// Reads the input file (`-` for standard input), parses it and opens
/// the study of it under the request; the name is used in messages.
fn study(input: &cli::InputArgs, settings: settings::Settings) -> Result<(String, Study), Failure> {
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
    // A workbook (by extension or by its first bytes): the chosen sheet,
    // else the first with data, as text. Otherwise UTF-8, or UTF-16
    // decoded; anything else is named (core's decode_text).
    let (text, name) = if workbook::has_workbook_extension(&name)
        || workbook::is_workbook(&bytes)
        || input.sheet.is_some()
    {
        sheet_text(&name, &bytes, input.sheet.as_deref())?
    } else {
        let text = plateau_core::data::decode_text(bytes)
            .map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
        (text, name)
    };
    let series = parse_series(&text, &settings.parse)
        .map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
    let study = Study::new(series, settings.request).map_err(|e| fail(&name, e))?;
    Ok((name, study))
}

/// The text of one sheet of the workbook in `bytes` (`--sheet NAME|N`,
/// else the first sheet with data) and the input's name, which names the
/// sheet (whose row numbers are the line numbers of the messages).
fn sheet_text(name: &str, bytes: &[u8], sheet: Option<&str>) -> Result<(String, String), Failure> {
    let choice = sheet.map(workbook::SheetChoice::parse);
    let book = workbook::read_workbook(bytes, choice.as_ref())
        .map_err(|e| Failure::Input(anyhow::anyhow!("{name}: {e}")))?;
    let named = format!("{name}, sheet \"{}\"", book.name());
    Ok((book.text, named))
}

/// A study's error as the exit status says it: bad input (a flag's own
/// message stands alone, others name the file) or a fit that failed.
fn fail(name: &str, e: StudyError) -> Failure {
    match e {
        StudyError::Input { message, .. } if message.starts_with("--") => {
            Failure::Input(anyhow::anyhow!("{message}"))
        }
        StudyError::Input { message, .. } => Failure::Input(anyhow::anyhow!("{name}: {message}")),
        StudyError::Fit(message) => Failure::Fit(anyhow::anyhow!("{name}: {message}")),
    }
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
