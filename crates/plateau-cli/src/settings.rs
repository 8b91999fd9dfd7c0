//! Validated settings: the raw flags of [`crate::cli`] turned into core
//! options, with a message naming the flag when one is wrong.

use crate::cli::{BatchArgs, CompareArgs, FitArgs, InputArgs};
use anyhow::{anyhow, bail, Result};
use plateau_cli::batch;
use plateau_core::data::ColumnRef;
use plateau_core::{FitOptions, Model, ParseOptions};

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
            ..FitOptions::default()
        },
    })
}

pub fn compare(args: &CompareArgs) -> Result<CompareSettings> {
    let models = match &args.models {
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
    Ok(CompareSettings {
        parse: parse_options(&args.input)?,
        models,
        fit: FitOptions {
            fixed: assignments("--fix", &args.fix)?,
            ..FitOptions::default()
        },
    })
}

pub fn batch(args: &BatchArgs) -> Result<batch::Options> {
    Ok(batch::Options {
        model: model(&args.model)?,
        fit: FitOptions::default(),
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

#[cfg(test)]
mod tests {
    use super::*;

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
