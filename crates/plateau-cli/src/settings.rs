//! Validated settings: the raw flags of [`crate::cli`] turned into core
//! options, with a message naming the flag when one is wrong.

use crate::cli::{
    BacktestArgs, BatchArgs, CompareArgs, DiagnoseArgs, DriftArgs, ErrorArgs, FitArgs,
    ForecastArgs, InputArgs,
};
use anyhow::{anyhow, bail, Result};
use plateau_cli::batch;
use plateau_core::bootstrap::{BootstrapOptions, Resampling, DEFAULT_SEED};
use plateau_core::data::ColumnRef;
use plateau_core::{ErrorModel, FitOptions, IntervalMethod, Model, ParseOptions};

pub struct FitSettings {
    pub parse: ParseOptions,
    pub model: Model,
    pub fit: FitOptions,
}

pub struct CompareSettings {
    pub parse: ParseOptions,
    pub models: Vec<Model>,
    pub fit: FitOptions,
}

pub fn fit(args: &FitArgs) -> Result<FitSettings> {
    Ok(FitSettings {
        parse: parse_options(&args.input)?,
        model: model(&args.model)?,
        fit: FitOptions {
            fixed: assignments("--fix", &args.fix)?,
            start: assignments("--start", &args.start)?,
            error_model: error_model(&args.errors)?,
            increments: args.errors.increments,
            intervals: intervals(&args.intervals)?,
            ..FitOptions::default()
        },
    })
}

fn error_model(args: &ErrorArgs) -> Result<ErrorModel> {
    ErrorModel::from_name(&args.errors).ok_or_else(|| {
        anyhow!(
            "--errors: expected additive, relative, log or count, found {:?}",
            args.errors
        )
    })
}

fn intervals(s: &str) -> Result<IntervalMethod> {
    match s.trim() {
        "profile" => Ok(IntervalMethod::Profile),
        "asymptotic" => Ok(IntervalMethod::Asymptotic),
        other => bail!("--intervals: expected profile or asymptotic, found {other:?}"),
    }
}

pub fn compare(args: &CompareArgs) -> Result<CompareSettings> {
    let models = model_list(args.models.as_deref())?;
    Ok(CompareSettings {
        parse: parse_options(&args.input)?,
        models,
        fit: FitOptions {
            fixed: one_level(assignments("--fix", &args.fix)?)?,
            error_model: error_model(&args.errors)?,
            increments: args.errors.increments,
            ..FitOptions::default()
        },
    })
}

pub struct DiagnoseSettings {
    pub parse: ParseOptions,
    pub model: Model,
    pub fit: FitOptions,
    pub fisher_pry_k: Option<f64>,
}

pub fn diagnose(args: &DiagnoseArgs) -> Result<DiagnoseSettings> {
    if let Some(k) = args.fisher_pry_k {
        if !(k.is_finite() && k > 0.0) {
            bail!("--fisher-pry-k: expected a positive number, found {k}");
        }
    }
    Ok(DiagnoseSettings {
        parse: parse_options(&args.input)?,
        model: model(&args.model)?,
        fit: FitOptions {
            fixed: assignments("--fix", &args.fix)?,
            error_model: error_model(&args.errors)?,
            increments: args.errors.increments,
            // The checks read residuals and likelihoods, not intervals.
            intervals: IntervalMethod::Asymptotic,
            ..FitOptions::default()
        },
        fisher_pry_k: args.fisher_pry_k,
    })
}

pub struct ForecastSettings {
    pub parse: ParseOptions,
    pub model: Model,
    pub fit: FitOptions,
    pub bootstrap: Option<BootstrapOptions>,
    /// Extra milestone shares, 0–1.
    pub shares: Vec<f64>,
    pub levels: Vec<f64>,
    pub step: Option<f64>,
}

pub fn forecast(args: &ForecastArgs) -> Result<ForecastSettings> {
    let resampling = Resampling::from_name(&args.resampling).ok_or_else(|| {
        anyhow!(
            "--resampling: expected residual or parametric, found {:?}",
            args.resampling
        )
    })?;
    let bootstrap = match args.bootstrap {
        None => {
            if args.seed.is_some() {
                bail!("--seed is for the bootstrap: add --bootstrap");
            }
            None
        }
        Some(0) => bail!("--bootstrap: expected at least 1 replicate"),
        Some(b) if b > 1_000_000 => bail!("--bootstrap: at most 1000000 replicates"),
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
            if s > 0.0 && s < 100.0 {
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
        if !(s.is_finite() && s > 0.0) {
            bail!("--step {s}: expected a positive number");
        }
    }
    Ok(ForecastSettings {
        parse: parse_options(&args.input)?,
        model: model(&args.model)?,
        fit: FitOptions {
            fixed: assignments("--fix", &args.fix)?,
            ..FitOptions::default()
        },
        bootstrap,
        shares,
        levels: args.level.clone(),
        step: args.step,
    })
}

pub fn drift(args: &DriftArgs) -> Result<FitSettings> {
    Ok(FitSettings {
        parse: parse_options(&args.input)?,
        model: model(&args.model)?,
        fit: FitOptions {
            fixed: assignments("--fix", &args.fix)?,
            ..FitOptions::default()
        },
    })
}

pub fn batch(args: &BatchArgs) -> Result<batch::Options> {
    Ok(batch::Options {
        model: model(&args.model)?,
        fit: FitOptions {
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

pub fn backtest(args: &BacktestArgs) -> Result<CompareSettings> {
    if args.horizon == 0 || args.horizon > 1000 {
        bail!("--horizon: expected a number of steps from 1 to 1000");
    }
    if args.min_train == Some(0) {
        bail!("--min-train: expected a positive number of points");
    }
    let models = model_list(args.models.as_deref())?;
    Ok(CompareSettings {
        parse: parse_options(&args.input)?,
        models,
        fit: FitOptions {
            fixed: one_level(assignments("--fix", &args.fix)?)?,
            // The backtest scores point forecasts: no intervals needed.
            intervals: IntervalMethod::Asymptotic,
            ..FitOptions::default()
        },
    })
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
    Model::from_name(name).ok_or_else(|| {
        let names: Vec<&str> = Model::ALL.iter().map(|m| m.name()).collect();
        anyhow!(
            "unknown model {name:?}; expected one of {}",
            names.join(", ")
        )
    })
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

/// `NAME=VALUE` pairs.
fn assignments(flag: &str, items: &[String]) -> Result<Vec<(String, f64)>> {
    items
        .iter()
        .map(|item| {
            let (name, value) = item
                .split_once('=')
                .ok_or_else(|| anyhow!("{flag} {item:?}: expected NAME=VALUE, e.g. K=2500000"))?;
            let v: f64 = value
                .trim()
                .parse()
                .map_err(|_| anyhow!("{flag} {item:?}: expected a number after '='"))?;
            if !v.is_finite() {
                bail!("{flag} {item:?}: expected a finite number");
            }
            Ok((name.trim().to_string(), v))
        })
        .collect()
}

/// `compare` and `backtest` hold a fixed K or m as every model's known saturation level
/// (see `plateau_core::compare`): two different values for it are refused.
fn one_level(fixed: Vec<(String, f64)>) -> Result<Vec<(String, f64)>> {
    if let Some(((first, v), (other, w))) = plateau_core::compare::level_conflict(&fixed) {
        bail!(
            "--fix {first}={v} and --fix {other}={w}: K and m both stand for the known \
             saturation level when several models are fitted; give it once"
        );
    }
    Ok(fixed)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn one_known_level_in_a_comparison() {
        let level = |items: &[&str]| {
            let items: Vec<String> = items.iter().map(|s| s.to_string()).collect();
            one_level(assignments("--fix", &items).unwrap())
        };
        assert!(level(&["K=100", "m=100", "r=0.5"]).is_ok());
        assert!(level(&["K=100", "K=200"]).is_err());
        let e = level(&["m=100", "K=200"]).unwrap_err().to_string();
        assert!(e.contains("m=100") && e.contains("K=200"), "{e}");
    }

    #[test]
    fn assignments_parse_and_reject() {
        assert_eq!(
            assignments("--fix", &["K=2.5e6".into()]).unwrap(),
            vec![("K".to_string(), 2.5e6)]
        );
        assert!(assignments("--fix", &["K".into()]).is_err());
        assert!(assignments("--fix", &["K=abc".into()]).is_err());
        assert!(assignments("--fix", &["K=inf".into()]).is_err());
    }

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
