//! `--fix` and `--start` (the CLI's `NAME=VALUE` flags): held values and
//! start values checked against the models they apply to. Every
//! subcommand that fits refuses unknown, repeated and contradictory names
//! here, with the valid names listed; the messages name the flag.

use plateau_core::Model;

/// `NAME=VALUE` pairs.
pub fn assignments(flag: &str, items: &[String]) -> Result<Vec<(String, f64)>, String> {
    items
        .iter()
        .map(|item| {
            let (name, value) = item
                .split_once('=')
                .ok_or_else(|| format!("{flag} {item:?}: expected NAME=VALUE, e.g. K=2500000"))?;
            let v: f64 = value
                .trim()
                .parse()
                .map_err(|_| format!("{flag} {item:?}: expected a number after '='"))?;
            if !v.is_finite() {
                return Err(format!("{flag} {item:?}: expected a finite number"));
            }
            Ok((name.trim().to_string(), v))
        })
        .collect()
}

/// `NAME=VALUE` pairs, in the order given.
pub type Assignments = Vec<(String, f64)>;

/// The model or models `--fix` and `--start` apply to.
#[derive(Clone, Copy)]
pub enum Scope<'a> {
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
pub fn is_level(name: &str) -> bool {
    matches!(name, "K" | "m")
}

/// `--fix` and `--start`, parsed and checked against the models they apply
/// to: every name must be a parameter of the model (of at least one of the
/// models), each parameter is given at most once per flag, and a parameter
/// is either held or started, not both. A value outside the parameter's
/// range (K ≤ 0) is refused here too, naming the flag.
pub fn held(
    fix: &[String],
    start: &[String],
    scope: Scope<'_>,
) -> Result<(Assignments, Assignments), String> {
    let fixed = assignments("--fix", fix)?;
    let started = assignments("--start", start)?;
    for (flag, list) in [("--fix", &fixed), ("--start", &started)] {
        for (i, (name, v)) in list.iter().enumerate() {
            check_name(flag, name, *v, scope)?;
            if let Some((_, w)) = list[..i].iter().find(|(n, _)| n == name) {
                return Err(format!(
                    "{flag} {name}={w} and {flag} {name}={v}: {name} is given twice; give each \
                     parameter once"
                ));
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
            return Err(format!(
                "--fix {f}={w} and --start {name}={v} contradict each other: {what}, so it is \
                 not estimated and has no starting value; give one of the two"
            ));
        }
    }
    if let Scope::Several(..) = scope {
        if let Some(((first, v), (other, w))) = plateau_core::compare::level_conflict(&fixed) {
            return Err(format!(
                "--fix {first}={v} and --fix {other}={w}: K and m both stand for the known \
                 saturation level when several models are fitted; give it once"
            ));
        }
    }
    Ok((fixed, started))
}

/// Refuses a name that no model in `scope` has (suggesting the parameter
/// that differs only in case: `k` for `K`), and a value outside the
/// parameter's range.
pub fn check_name(flag: &str, name: &str, v: f64, scope: Scope<'_>) -> Result<(), String> {
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
            Scope::One(m) => {
                return Err(format!(
                "{flag} {name}={v}: the {} model has no parameter {name:?}{hint}; its parameters \
                 are {}",
                m.name(),
                m.param_names().join(", ")
            ))
            }
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
                return Err(format!(
                    "{flag} {name}={v}: none of the models {how} has a parameter {name:?}{hint}. \
                     Parameters by model: {}.{levels}",
                    by_model.join("; ")
                ));
            }
        }
    }
    for (m, p) in holders {
        let j = m.param_index(p).unwrap_or(0);
        let domain = m.domains()[j];
        if !domain.contains(v) {
            let range = match domain.lower_edge() {
                Some(0.0) => "positive".to_string(),
                Some(e) => format!("greater than {e}"),
                None => "a finite number".to_string(),
            };
            return Err(format!(
                "{flag} {name}={v}: {p} of the {} model must be {range}",
                m.name()
            ));
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
        // Richards' nu lives in (-1, inf): -1 is refused as input, -0.5 is not.
        let rich = Scope::One(Model::Richards);
        let e = held(&strings(&["nu=-1"]), &[], rich)
            .unwrap_err()
            .to_string();
        assert!(
            e.contains("nu of the richards model must be greater than -1"),
            "{e}"
        );
        assert!(held(&strings(&["nu=-0.5"]), &[], rich).is_ok());
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
}
