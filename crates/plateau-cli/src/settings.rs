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
    let (fixed, start) = held(&args.fix, &args.start, Scope::One(model))?;
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
    let (fixed, _) = held(&args.fix, &[], Scope::Several(&models, "compared"))?;
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
    let (fixed, start) = held(&args.fix, &args.start, Scope::One(model))?;
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
    let (fixed, start) = held(&args.fix, &args.start, Scope::One(model))?;
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
    let (fixed, _) = held(&args.fix, &[], Scope::One(model))?;
    let fit = error_options(&args.errors, fixed, Vec::new())?;
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request: request_for(model, &args.input, fit),
    })
}

pub fn batch(args: &BatchArgs) -> Result<batch::Options> {
    let model = model(&args.model)?;
    let (fixed, start) = held(&args.fix, &args.start, Scope::One(model))?;
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
    let (fixed, _) = held(&args.fix, &[], Scope::Several(&models, "tested"))?;
    let fit = error_options(&args.errors, fixed, Vec::new())?;
    let mut request = request_for(models[0], &args.input, fit);
    request.models = models;
    request.backtest = BacktestRequest {
        horizon: args.horizon,
        min_train: args.min_train,
        max_origins: None,
    };
    Ok(Settings {
        parse: parse_options(&args.input)?,
        request,
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

/// `NAME=VALUE` pairs, in the order given.
type Assignments = Vec<(String, f64)>;

/// The model or models `--fix` and `--start` apply to.
#[derive(Clone, Copy)]
enum Scope<'a> {
    /// One model is fitted: the names are its parameters.
    One(Model),
    /// Several models are fitted under the same settings (`compare`,
    /// `backtest`; the participle says how, for messages): a name applies
    /// to every model that has it, and a fixed `K` or `m` is the known
    /// saturation level, held by each model as its own level parameter
    /// (see `plateau_core::compare::options_for`).
    Several(&'a [Model], &'static str),
}

/// Whether a fixed name stands for the known saturation level when several
/// models are fitted.
fn is_level(name: &str) -> bool {
    matches!(name, "K" | "m")
}

/// `--fix` and `--start`, parsed and checked against the models they apply
/// to: every name must be a parameter of the model (of at least one of the
/// models), each parameter is given at most once per flag, and a parameter
/// is either held or started, not both. A value outside the parameter's
/// range (K ≤ 0) is refused here too, naming the flag.
fn held(fix: &[String], start: &[String], scope: Scope<'_>) -> Result<(Assignments, Assignments)> {
    let fixed = assignments("--fix", fix)?;
    let started = assignments("--start", start)?;
    for (flag, list) in [("--fix", &fixed), ("--start", &started)] {
        for (i, (name, v)) in list.iter().enumerate() {
            check_name(flag, name, *v, scope)?;
            if let Some((_, w)) = list[..i].iter().find(|(n, _)| n == name) {
                bail!(
                    "{flag} {name}={w} and {flag} {name}={v}: {name} is given twice; give each \
                     parameter once"
                );
            }
        }
    }
    for (name, v) in &started {
        let same = |n: &String| {
            n == name || matches!(scope, Scope::Several(..)) && is_level(n) && is_level(name)
        };
        if let Some((f, w)) = fixed.iter().find(|(n, _)| same(n)) {
            let what = if f == name {
                format!("{name} is held at {w}")
            } else {
                format!(
                    "{f} = {w} holds the known saturation level, which is {name} in the Bass model"
                )
            };
            bail!(
                "--fix {f}={w} and --start {name}={v} contradict each other: {what}, so it is \
                 not estimated and has no starting value; give one of the two"
            );
        }
    }
    if let Scope::Several(..) = scope {
        if let Some(((first, v), (other, w))) = plateau_core::compare::level_conflict(&fixed) {
            bail!(
                "--fix {first}={v} and --fix {other}={w}: K and m both stand for the known \
                 saturation level when several models are fitted; give it once"
            );
        }
    }
    Ok((fixed, started))
}

/// Refuses a name that no model in `scope` has (suggesting the parameter
/// that differs only in case: `k` for `K`), and a value outside the
/// parameter's range.
fn check_name(flag: &str, name: &str, v: f64, scope: Scope<'_>) -> Result<()> {
    let models: &[Model] = match &scope {
        Scope::One(m) => std::slice::from_ref(m),
        Scope::Several(ms, _) => ms,
    };
    let level = flag == "--fix" && matches!(scope, Scope::Several(..)) && is_level(name);
    // The models that hold this name, with the parameter each holds it as.
    let holders: Vec<(Model, &str)> = models
        .iter()
        .filter_map(|&m| {
            if level {
                m.level_param().map(|p| (m, p))
            } else {
                m.param_index(name).map(|_| (m, name))
            }
        })
        .collect();
    if holders.is_empty() {
        let hint = models
            .iter()
            .flat_map(|m| m.param_names())
            .find(|p| p.eq_ignore_ascii_case(name))
            .map_or(String::new(), |p| {
                format!(" (did you mean {p}? names are case-sensitive)")
            });
        match scope {
            Scope::One(m) => bail!(
                "{flag} {name}={v}: the {} model has no parameter {name:?}{hint}; its parameters \
                 are {}",
                m.name(),
                m.param_names().join(", ")
            ),
            Scope::Several(ms, how) => {
                let by_model: Vec<String> = ms
                    .iter()
                    .map(|m| format!("{} {}", m.name(), m.param_names().join(", ")))
                    .collect();
                let levels = if flag == "--fix" && ms.iter().any(|m| m.level_param().is_some()) {
                    " A fixed K or m is the known saturation level, held by every model that \
                     has one (as K, or the Bass model's m)."
                } else {
                    ""
                };
                bail!(
                    "{flag} {name}={v}: none of the models {how} has a parameter {name:?}{hint}. \
                     Parameters by model: {}.{levels}",
                    by_model.join("; ")
                );
            }
        }
    }
    for (m, p) in holders {
        let j = m.param_index(p).unwrap_or(0);
        if m.domains()[j] == plateau_core::model::Domain::Positive && v <= 0.0 {
            bail!(
                "{flag} {name}={v}: {p} of the {} model must be positive",
                m.name()
            );
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn strings(items: &[&str]) -> Vec<String> {
        items.iter().map(|s| s.to_string()).collect()
    }

    const ALL: Scope<'static> = Scope::Several(&Model::ALL, "compared");

    #[test]
    fn one_known_level_in_a_comparison() {
        let level = |items: &[&str]| held(&strings(items), &[], ALL);
        assert!(level(&["K=100", "m=100", "r=0.5"]).is_ok());
        assert!(level(&["K=100", "K=200"]).is_err());
        let e = level(&["m=100", "K=200"]).unwrap_err().to_string();
        assert!(e.contains("m=100") && e.contains("K=200"), "{e}");
    }

    #[test]
    fn unknown_names_are_refused_with_the_valid_ones() {
        let one = |fix: &[&str], start: &[&str], m: Model| {
            held(&strings(fix), &strings(start), Scope::One(m))
                .unwrap_err()
                .to_string()
        };
        let e = one(&["k=150"], &[], Model::Logistic);
        assert!(
            e.starts_with("--fix k=150: the logistic model has no parameter \"k\""),
            "{e}"
        );
        assert!(
            e.contains("did you mean K?") && e.contains("K, r, t0"),
            "{e}"
        );
        let e = one(&[], &["NU=0.5"], Model::Richards);
        assert!(
            e.starts_with("--start NU=0.5") && e.contains("did you mean nu?"),
            "{e}"
        );
        // A name of another model: no case hint, the model's own names.
        let e = one(&["nu=2"], &[], Model::Gompertz);
        assert!(
            !e.contains("did you mean") && e.ends_with("K, r, t0"),
            "{e}"
        );

        let e = held(&strings(&["k=150"]), &[], ALL)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("none of the models compared has a parameter \"k\""),
            "{e}"
        );
        assert!(e.contains("did you mean K?"), "{e}");
        assert!(
            e.contains("logistic K, r, t0;") && e.contains("bass m, p, q, tau;"),
            "{e}"
        );
        assert!(e.contains("known saturation level"), "{e}");
        // Only the models in the list count.
        let few = Scope::Several(&[Model::Logistic, Model::Gompertz], "tested");
        let e = held(&strings(&["nu=2"]), &[], few).unwrap_err().to_string();
        assert!(e.contains("none of the models tested"), "{e}");
        assert!(held(&strings(&["nu=2"]), &[], ALL).is_ok());
        // A level where no model has one.
        let exp = Scope::Several(&[Model::Exponential], "compared");
        assert!(held(&strings(&["K=2"]), &[], exp).is_err());
        // K stands for the level, so the Bass model alone accepts it.
        let bass = Scope::Several(&[Model::Bass], "compared");
        assert!(held(&strings(&["K=2"]), &[], bass).is_ok());
    }

    #[test]
    fn repeats_and_contradictions_are_refused() {
        let one = Scope::One(Model::Logistic);
        let e = held(&strings(&["K=100", "K=200"]), &[], one)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("K=100") && e.contains("K=200") && e.contains("twice"),
            "{e}"
        );
        assert!(held(&strings(&["K=100", "K=100"]), &[], one).is_err());
        assert!(held(&[], &strings(&["r=1", "r=2"]), one).is_err());
        let e = held(&strings(&["K=100"]), &strings(&["K=200"]), one)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("--fix K=100 and --start K=200 contradict"),
            "{e}"
        );
        assert!(held(&strings(&["K=100"]), &strings(&["r=0.5"]), one).is_ok());
        let e = held(&strings(&["K=100"]), &strings(&["m=50"]), ALL)
            .unwrap_err()
            .to_string();
        assert!(e.contains("Bass model"), "{e}");
    }

    #[test]
    fn values_outside_a_parameters_range_are_refused() {
        let one = Scope::One(Model::Logistic);
        let e = held(&strings(&["K=-5"]), &[], one).unwrap_err().to_string();
        assert!(
            e.contains("K of the logistic model must be positive"),
            "{e}"
        );
        assert!(held(&strings(&["t0=-5"]), &[], one).is_ok());
        let e = held(&strings(&["K=0"]), &[], ALL).unwrap_err().to_string();
        assert!(e.contains("must be positive"), "{e}");
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
