//! Validated settings: the raw flags of [`crate::cli`] turned into how the
//! input is read and one [`Request`] of the study layer, with a message
//! naming the flag when one is wrong. The limits are the study layer's
//! (`plateau_study::request`), the same as on the page.

use crate::cli::{
    BacktestArgs, BatchArgs, CompareArgs, DiagnoseArgs, DriftArgs, ErrorArgs, FitArgs,
    ForecastArgs, InputArgs,
};
use anyhow::{anyhow, bail, Result};
use plateau_cli::batch;
use plateau_core::bootstrap::BootstrapOptions;
use plateau_core::data::ColumnRef;
use plateau_core::{ErrorModel, FitOptions, IntervalMethod, Model, ParseOptions};
use plateau_study::held::{self, Assignments, Scope};
use plateau_study::request::{
    self, BacktestRequest, Horizon, Request, DEFAULT_SEED, MAX_BACKTEST_HORIZON, MAX_REPLICATES,
    MAX_SEED,
};

/// How to read the input, and what to ask of it.
pub struct Settings {
    pub parse: ParseOptions,
    pub request: Request,
}

/// What the "values decline" warning adds on this face.
const PER_PERIOD_HINT: &str = " (--per-period)";

/// A request for `model` read with `input`'s per-period choice.
fn request_for(model: Model, input: &InputArgs, fit: FitOptions) -> Request {
    Request {
        fit,
        per_period: input.per_period,
        per_period_hint: PER_PERIOD_HINT.into(),
        ..Request::new(model)
    }
}

/// The fit options every subcommand with `--errors` shares.
fn error_options(args: &ErrorArgs, fixed: Assignments, start: Assignments) -> Result<FitOptions> {
    Ok(FitOptions {
        fixed,
        start,
        error_model: error_model(args)?,
        increments: args.increments,
        ..FitOptions::default()
    })
}

pub fn fit(args: &FitArgs) -> Result<Settings> {
    let model = model(&args.model)?;
    let (fixed, start) = fixed_and_started(&args.fix, &args.start, Scope::One(model))?;
    let fit = FitOptions {
        intervals: intervals(&args.intervals)?,
        ..error_options(&args.errors, fixed, start)?
    };
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request: request_for(model, &args.input, fit),
    })
}

fn error_model(args: &ErrorArgs) -> Result<ErrorModel> {
    request::error_model(&args.errors).map_err(|e| anyhow!("--errors: {e}"))
}

fn intervals(s: &str) -> Result<IntervalMethod> {
    match s.trim() {
        "profile" => Ok(IntervalMethod::Profile),
        "asymptotic" => Ok(IntervalMethod::Asymptotic),
        other => bail!("--intervals: expected profile or asymptotic, found {other:?}"),
    }
}

pub fn compare(args: &CompareArgs) -> Result<Settings> {
    let models = model_list(args.models.as_deref())?;
    let (fixed, _) = fixed_and_started(&args.fix, &[], Scope::Several(&models, "compared"))?;
    let fit = error_options(&args.errors, fixed, Vec::new())?;
    let mut request = request_for(models[0], &args.input, fit);
    request.models = models;
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
    })
}

pub fn diagnose(args: &DiagnoseArgs) -> Result<Settings> {
    if let Some(k) = args.fisher_pry_k {
        if !request::positive(k) {
            bail!("--fisher-pry-k: expected a positive number, found {k}");
        }
    }
    let model = model(&args.model)?;
    let (fixed, start) = fixed_and_started(&args.fix, &args.start, Scope::One(model))?;
    let fit = FitOptions {
        // The checks read residuals and likelihoods, not intervals.
        intervals: IntervalMethod::Asymptotic,
        ..error_options(&args.errors, fixed, start)?
    };
    let mut request = request_for(model, &args.input, fit);
    request.fisher_pry_k = args.fisher_pry_k;
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
    })
}

pub fn forecast(args: &ForecastArgs) -> Result<Settings> {
    let resampling =
        request::resampling(&args.resampling).map_err(|e| anyhow!("--resampling: {e}"))?;
    if let Some(s) = args.seed.filter(|&s| s > MAX_SEED) {
        bail!("--seed {s}: expected a whole number from 0 to {MAX_SEED}");
    }
    let bootstrap = match args.bootstrap {
        None => {
            if args.seed.is_some() {
                bail!("--seed is for the bootstrap: add --bootstrap");
            }
            None
        }
        Some(0) => bail!("--bootstrap: expected at least 1 replicate"),
        Some(b) if b > MAX_REPLICATES => {
            bail!("--bootstrap: at most {MAX_REPLICATES} replicates")
        }
        Some(b) => Some(BootstrapOptions {
            resampling,
            replicates: b,
            seed: args.seed.unwrap_or(DEFAULT_SEED),
        }),
    };
    let shares = args
        .share
        .iter()
        .map(|&s| {
            if request::share_ok(s) {
                Ok(s / 100.0)
            } else {
                Err(anyhow!(
                    "--share {s}: expected a percentage strictly between 0 and 100"
                ))
            }
        })
        .collect::<Result<Vec<_>>>()?;
    if let Some(l) = args.level.iter().find(|l| !l.is_finite()) {
        bail!("--level {l}: expected a finite number");
    }
    if let Some(s) = args.step {
        if !request::positive(s) {
            bail!("--step {s}: expected a positive number");
        }
    }
    let model = model(&args.model)?;
    let (fixed, start) = fixed_and_started(&args.fix, &args.start, Scope::One(model))?;
    let fit = error_options(&args.errors, fixed, start)?;
    let mut request = request_for(model, &args.input, fit);
    request.horizon = Some(Horizon::Until(args.until.clone()));
    request.step = args.step;
    request.shares = shares;
    request.levels = args.level.clone();
    request.bootstrap = bootstrap;
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
    })
}

pub fn drift(args: &DriftArgs) -> Result<Settings> {
    let model = model(&args.model)?;
    let (fixed, _) = fixed_and_started(&args.fix, &[], Scope::One(model))?;
    let fit = error_options(&args.errors, fixed, Vec::new())?;
    let mut request = request_for(model, &args.input, fit);
    request.drift_intervals = intervals(&args.intervals)?;
    request.drift_rows = cap("--max-cutoffs", &args.max_cutoffs)?;
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
    })
}

/// A cap on cutoffs or origins: a positive count, or "all" (no cap).
fn cap(flag: &str, s: &str) -> Result<Option<usize>> {
    match s.trim() {
        "all" => Ok(None),
        n => match n.parse::<usize>() {
            Ok(k) if k >= 1 => Ok(Some(k)),
            _ => bail!("{flag}: expected a positive whole number or \"all\", found {s:?}"),
        },
    }
}

pub fn batch(args: &BatchArgs) -> Result<batch::Options> {
    let model = model(&args.model)?;
    let (fixed, start) = fixed_and_started(&args.fix, &args.start, Scope::One(model))?;
    Ok(batch::Options {
        model,
        fit: FitOptions {
            fixed,
            start,
            intervals: intervals(&args.intervals)?,
            ..FitOptions::default()
        },
        delimiter: delimiter(args.delimiter.as_deref())?,
        header: header(args.header.as_deref())?,
        per_period: args.per_period,
        format: if args.json {
            batch::Format::Json
        } else if args.csv {
            batch::Format::Csv
        } else {
            batch::Format::Table
        },
    })
}

fn delimiter(s: Option<&str>) -> Result<Option<u8>> {
    Ok(match s {
        None => None,
        Some("comma" | ",") => Some(b','),
        Some("semicolon" | ";") => Some(b';'),
        Some("tab" | "\\t" | "\t") => Some(b'\t'),
        Some(other) => bail!("--delimiter: expected comma, semicolon or tab, found {other:?}"),
    })
}

fn header(s: Option<&str>) -> Result<Option<bool>> {
    Ok(match s {
        None => None,
        Some("yes" | "true") => Some(true),
        Some("no" | "false") => Some(false),
        Some(other) => bail!("--header: expected yes or no, found {other:?}"),
    })
}

pub fn backtest(args: &BacktestArgs) -> Result<Settings> {
    if args.horizon == 0 || args.horizon > MAX_BACKTEST_HORIZON {
        bail!("--horizon: expected a number of steps from 1 to {MAX_BACKTEST_HORIZON}");
    }
    if args.min_train == Some(0) {
        bail!("--min-train: expected a positive number of points");
    }
    let models = model_list(args.models.as_deref())?;
    let (fixed, _) = fixed_and_started(&args.fix, &[], Scope::Several(&models, "tested"))?;
    let fit = error_options(&args.errors, fixed, Vec::new())?;
    let mut request = request_for(models[0], &args.input, fit);
    request.models = models;
    request.backtest = BacktestRequest {
        horizon: args.horizon,
        min_train: args.min_train,
        max_origins: cap("--max-origins", &args.max_origins)?,
    };
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
    })
}

/// `--fix` and `--start`, checked (see [`held::held`]).
fn fixed_and_started(
    fix: &[String],
    start: &[String],
    scope: Scope<'_>,
) -> Result<(Assignments, Assignments)> {
    held::held(fix, start, scope).map_err(|e| anyhow!(e))
}

/// `--models a,b,…`; every model when absent.
fn model_list(list: Option<&str>) -> Result<Vec<Model>> {
    let models = match list {
        None => Model::ALL.to_vec(),
        Some(list) => list
            .split(',')
            .filter(|s| !s.trim().is_empty())
            .map(model)
            .collect::<Result<Vec<_>>>()?,
    };
    if models.is_empty() {
        bail!("--models: expected a comma-separated list of model names");
    }
    Ok(models)
}

fn model(name: &str) -> Result<Model> {
    request::model(name).map_err(|e| anyhow!(e))
}

fn parse_options(input: &InputArgs) -> Result<ParseOptions> {
    let delimiter = delimiter(input.delimiter.as_deref())?;
    let header = header(input.header.as_deref())?;
    Ok(ParseOptions {
        delimiter,
        header,
        time_column: input
            .time
            .as_deref()
            .map(|c| column("--time", c))
            .transpose()?,
        value_column: input
            .value
            .as_deref()
            .map(|c| column("--value", c))
            .transpose()?,
    })
}

/// A 1-based position (as people count columns) or a header name.
fn column(flag: &str, s: &str) -> Result<ColumnRef> {
    match s.trim().parse::<usize>() {
        Ok(0) => bail!("{flag}: columns are counted from 1"),
        Ok(i) => Ok(ColumnRef::Index(i - 1)),
        Err(_) => Ok(ColumnRef::Name(s.trim().to_string())),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn columns_are_one_based() {
        assert_eq!(column("--time", "2").unwrap(), ColumnRef::Index(1));
        assert!(column("--time", "0").is_err());
        assert_eq!(
            column("--time", "sales").unwrap(),
            ColumnRef::Name("sales".into())
        );
    }
}
