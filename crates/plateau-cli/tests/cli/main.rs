//! The `plateau` binary's contract, run as a user would: JSON shape, exit
//! codes, messages on stderr naming the line, stdin, `--svg`, `--fix`.
//! The numbers themselves are checked against outside references in the
//! core's tests; here the point is that the CLI passes them through intact.

use serde_json::Value;
use std::io::Write;
use std::path::PathBuf;
use std::process::{Child, Command, Output, Stdio};

mod files;
mod parity;
mod snapshots;

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn demo(name: &str) -> String {
    root().join("demo-data").join(name).display().to_string()
}

/// Starts `plateau` with `args`, every standard stream piped.
fn spawn(args: &[&str]) -> Child {
    Command::new(env!("CARGO_BIN_EXE_plateau"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start plateau")
}

fn plateau(args: &[&str], stdin: Option<&str>) -> Output {
    let mut child = spawn(args);
    if let Some(text) = stdin {
        child
            .stdin
            .take()
            .unwrap()
            .write_all(text.as_bytes())
            .unwrap();
    }
    drop(child.stdin.take());
    child.wait_with_output().expect("plateau runs")
}

/// The warning codes of a report.
fn codes(v: &Value) -> Vec<String> {
    v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["code"].as_str().unwrap().to_string())
        .collect()
}

fn json(out: &Output) -> Value {
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("stdout is one JSON object")
}

#[test]
fn fit_json_has_the_documented_shape() {
    let v = json(&plateau(
        &["fit", &demo("aldermoor_subscribers.csv"), "--json"],
        None,
    ));
    let keys: Vec<&str> = v.as_object().unwrap().keys().map(String::as_str).collect();
    for key in [
        "model",
        "n",
        "dof",
        "rss",
        "sigma",
        "r_squared",
        "aic",
        "aicc",
        "bic",
        "converged",
        "iterations",
        "params",
        "fitted",
        "warnings",
    ] {
        assert!(keys.contains(&key), "missing {key} in {keys:?}");
    }
    assert_eq!(v["model"], "logistic");
    assert_eq!(v["n"], 30);
    assert_eq!(v["dof"], 27);
    let params: Vec<&str> = v["params"]
        .as_object()
        .unwrap()
        .keys()
        .map(String::as_str)
        .collect();
    assert_eq!(params, ["K", "r", "t0"], "the formula's order");
    for p in ["K", "r", "t0"] {
        let ci = v["params"][p]["ci95"].as_array().unwrap();
        let est = v["params"][p]["estimate"].as_f64().unwrap();
        assert!(ci[0].as_f64().unwrap() < est && est < ci[1].as_f64().unwrap());
        assert!(v["params"][p]["std_error"].as_f64().unwrap() > 0.0);
    }
    assert_eq!(v["fitted"].as_array().unwrap().len(), 30);
    assert!(v["warnings"].is_array());
}

#[test]
fn stdin_gives_the_same_fit_as_the_file() {
    let path = demo("harrow_fields_capacity.csv");
    let text = std::fs::read_to_string(&path).unwrap();
    let a = json(&plateau(
        &["fit", &path, "--model", "gompertz", "--json"],
        None,
    ));
    let b = json(&plateau(
        &["fit", "-", "--model", "gompertz", "--json"],
        Some(&text),
    ));
    assert_eq!(a["params"], b["params"]);
}

#[test]
fn bad_input_exits_2_naming_the_line() {
    let out = plateau(&["fit", "-"], Some("t,y\n1,2\n2,3\n3,abc\n4,5\n"));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("line 4"), "{err}");
    assert!(out.stdout.is_empty());
}

#[test]
fn replicate_times_are_fitted_and_per_period_refuses_them_naming_both_lines() {
    let text = "t,y\n0,10\n1,20\n1,22\n2,40\n3,61\n4,80\n4,78\n5,90\n6,95\n7,98\n";
    let out = plateau(&["fit", "-", "--json"], Some(text));
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["n"], 10);
    let codes: Vec<&str> = report["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|w| w["code"].as_str())
        .collect();
    assert!(codes.contains(&"replicate_times"), "{codes:?}");
    let out = plateau(&["fit", "-", "--per-period"], Some(text));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("line 4: time \"1\" also appears on line 3"),
        "{err}"
    );
    let out = plateau(&["fit", "-", "--increments"], Some(text));
    assert_ne!(out.status.code(), Some(0));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("line 4") && err.contains("increments"),
        "{err}"
    );
}

#[test]
fn a_fit_that_cannot_be_made_exits_1_saying_why() {
    let out = plateau(&["fit", "-"], Some("t,y\n1,5\n2,5\n3,5\n4,5\n5,5\n"));
    assert_eq!(out.status.code(), Some(1));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("constant"), "{err}");

    let out = plateau(
        &["fit", "-", "--model", "richards"],
        Some("t,y\n1,1\n2,3\n3,4\n"),
    );
    assert_eq!(out.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&out.stderr).contains("at least"));
}

#[test]
fn unknown_model_is_an_input_error() {
    let out = plateau(
        &[
            "fit",
            &demo("aldermoor_subscribers.csv"),
            "--model",
            "weibull",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("logistic4"));
}

#[test]
fn fixed_k_is_reported_as_fixed() {
    let v = json(&plateau(
        &[
            "fit",
            &demo("fenwick_vale_subscribers.csv"),
            "--fix",
            "K=8000",
            "--json",
        ],
        None,
    ));
    assert_eq!(v["params"]["K"]["estimate"], 8000.0);
    assert_eq!(v["params"]["K"]["fixed"], true);
    // Nothing is propagated for a fixed parameter.
    for field in ["std_error", "ci95", "ci_method", "ci95_asymptotic"] {
        assert!(v["params"]["K"][field].is_null(), "{field}");
    }
    assert_eq!(v["dof"], v["n"].as_u64().unwrap() - 2);
    // The rest is fitted and has intervals.
    for p in ["r", "t0"] {
        assert_eq!(v["params"][p]["fixed"], false);
        assert_eq!(v["params"][p]["ci_method"], "profile");
        assert!(v["params"][p]["ci95"][0].as_f64().is_some());
    }
}

#[test]
fn intervals_are_profile_by_default_with_the_asymptotic_kept() {
    let v = json(&plateau(
        &["fit", &demo("aldermoor_subscribers.csv"), "--json"],
        None,
    ));
    assert_eq!(v["error_model"], "additive");
    assert_eq!(v["increments"], false);
    for p in ["K", "r", "t0"] {
        assert_eq!(v["params"][p]["ci_method"], "profile");
        assert_eq!(v["params"][p]["identified"], true);
        let asym = v["params"][p]["ci95_asymptotic"].as_array().unwrap();
        let est = v["params"][p]["estimate"].as_f64().unwrap();
        let se = v["params"][p]["std_error"].as_f64().unwrap();
        // The asymptotic interval is symmetric: estimate ± t·se.
        let lo = asym[0].as_f64().unwrap();
        let hi = asym[1].as_f64().unwrap();
        assert!(((est - lo) - (hi - est)).abs() < 1e-9 * se);
    }
    let asym = json(&plateau(
        &[
            "fit",
            &demo("aldermoor_subscribers.csv"),
            "--intervals",
            "asymptotic",
            "--json",
        ],
        None,
    ));
    assert_eq!(asym["params"]["K"]["ci_method"], "asymptotic");
    assert_eq!(
        asym["params"]["K"]["ci95"],
        v["params"]["K"]["ci95_asymptotic"]
    );
}

/// A series that ends far before its inflection (values of 10·e^(0.3 t),
/// the early part of a logistic with K ≫ 200): K gets no upper bound.
#[test]
fn early_series_gives_an_open_k_interval_and_the_warning() {
    let text =
        "t,y\n0,10.1\n1,13.4\n2,18.3\n3,24.5\n4,33.2\n5,44.9\n6,60.4\n7,81.7\n8,110.0\n9,148.9\n";
    let v = json(&plateau(&["fit", "-", "--json"], Some(text)));
    let codes: Vec<&str> = v["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["code"].as_str().unwrap())
        .collect();
    assert!(codes.contains(&"saturation_not_identified"), "{codes:?}");
    let k = &v["params"]["K"];
    assert_eq!(k["identified"], false);
    assert!(k["ci95"][1].is_null(), "{k}");
    assert!(k["ci95_asymptotic"].is_null());
    let table = plateau(&["fit", "-"], Some(text));
    let out = String::from_utf8_lossy(&table.stdout);
    assert!(out.contains("K ≥ "), "{out}");
    assert!(out.contains("NOT DETERMINED"), "{out}");
    // The forecast report gives no K interval either.
    let f = json(&plateau(
        &["forecast", "-", "--until", "20", "--json"],
        Some(text),
    ));
    assert!(f["params"]["K"]["ci95"].is_null(), "{}", f["params"]["K"]);
}

#[test]
fn error_models_and_increments_are_reported() {
    let path = demo("weekly_signups.csv");
    let v = json(&plateau(
        &[
            "fit",
            &path,
            "--per-period",
            "--increments",
            "--errors",
            "count",
            "--json",
        ],
        None,
    ));
    assert_eq!(v["error_model"], "count");
    assert_eq!(v["increments"], true);
    // 52 weekly rows give 51 differences; fitted values stay one per row.
    assert_eq!(v["n"], 51);
    assert_eq!(v["fitted"].as_array().unwrap().len(), 52);
    for e in ["additive", "relative", "log"] {
        let w = json(&plateau(
            &["fit", &path, "--per-period", "--errors", e, "--json"],
            None,
        ));
        assert_eq!(w["error_model"], e);
    }
    let bad = plateau(&["fit", &path, "--errors", "poisson"], None);
    assert_eq!(bad.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&bad.stderr).contains("--errors"));
    // The log scale needs positive values: a zero is named, not dropped.
    let zero = plateau(
        &["fit", "-", "--errors", "log"],
        Some("t,y\n1,0\n2,3\n3,8\n4,15\n5,20\n6,22\n"),
    );
    assert_eq!(zero.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&zero.stderr).contains("time 1"));
}

/// Akaike weights as defined by Burnham & Anderson (2002, §2.9): ranked by
/// AICc, Δ = AICc − min, weights sum to one.
#[test]
fn compare_ranks_by_aicc_with_weights_summing_to_one() {
    let v = json(&plateau(
        &["compare", &demo("harrow_fields_capacity.csv"), "--json"],
        None,
    ));
    let models = v["models"].as_array().unwrap();
    assert_eq!(models.len(), plateau_core::Model::ALL.len());
    let fitted: Vec<&Value> = models.iter().filter(|m| m["aicc"].is_number()).collect();
    let aicc: Vec<f64> = fitted.iter().map(|m| m["aicc"].as_f64().unwrap()).collect();
    assert!(aicc.windows(2).all(|w| w[0] <= w[1]), "{aicc:?}");
    assert_eq!(fitted[0]["delta_aicc"], 0.0);
    let sum: f64 = fitted
        .iter()
        .map(|m| m["akaike_weight"].as_f64().unwrap())
        .sum();
    assert!((sum - 1.0).abs() < 1e-12, "{sum}");
    // The series was drawn from a Gompertz curve (demo-data/README.md).
    assert_eq!(fitted[0]["model"], "gompertz");
}

/// A known saturation level holds every model's own level parameter (K,
/// or the Bass model's m), so the ranking compares the models under one
/// assumption; the bi-logistic, whose level K1 + K2 no one parameter
/// holds, is listed as not fitted and says why; the exponential has no
/// level and is fitted as it is.
#[test]
fn compare_with_a_known_level_fixes_it_in_every_model() {
    let known = |command: &str| {
        let file = demo("aldermoor_subscribers.csv");
        json(&plateau(
            &[command, &file, "--fix", "K=12000", "--json"],
            None,
        ))
    };
    let v = known("compare");
    let models = v["models"].as_array().unwrap();
    assert_eq!(models.len(), plateau_core::Model::ALL.len());
    for m in models {
        let name = m["model"].as_str().unwrap();
        let level = match name {
            "bass" => "m",
            "exponential" | "bilogistic" => continue,
            _ => "K",
        };
        let p = &m["fit"]["params"][level];
        assert_eq!(p["estimate"], 12000.0, "{name}");
        assert_eq!(p["fixed"], true, "{name}");
    }
    let find = |name: &str| models.iter().find(|m| m["model"] == name).unwrap();
    let bilogistic = find("bilogistic");
    assert!(bilogistic["aicc"].is_null());
    assert!(
        bilogistic["error"].as_str().unwrap().contains("K1 + K2"),
        "{bilogistic}"
    );
    assert!(find("exponential")["aicc"].is_number());

    // The backtest holds the level the same way.
    let v = known("backtest");
    let models = v["models"].as_array().unwrap();
    let find = |name: &str| models.iter().find(|m| m["model"] == name).unwrap();
    assert_eq!(find("bass")["failed"], 0);
    assert!(find("bass")["error"].is_null());
    let bilogistic = find("bilogistic");
    assert_eq!(bilogistic["failed"], bilogistic["origins"]);
    assert!(bilogistic["error"].as_str().unwrap().contains("K1 + K2"));

    // Two different known levels contradict each other.
    let out = plateau(
        &[
            "compare",
            &demo("aldermoor_subscribers.csv"),
            "--fix",
            "K=12000",
            "--fix",
            "m=20000",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("give it once"));
}

#[test]
fn svg_flag_writes_the_curve_chart() {
    let dir = std::env::temp_dir().join(format!("plateau-cli-test-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let file = dir.join("fit.svg");
    let out = plateau(
        &[
            "fit",
            &demo("tariff_share_monthly.csv"),
            "--model",
            "logistic4",
            "--svg",
            file.to_str().unwrap(),
        ],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&file).unwrap();
    assert!(svg.starts_with("<svg") || svg.contains("<svg "));
    assert!(svg.trim_end().ends_with("</svg>"));
    std::fs::remove_dir_all(&dir).ok();
}

/// Running totals of per-period counts, summed by hand here, give the same
/// fit as `--per-period` on the counts.
#[test]
fn per_period_counts_are_summed_before_fitting() {
    let counts =
        "week,new\n1,5\n2,9\n3,16\n4,27\n5,41\n6,52\n7,55\n8,50\n9,39\n10,27\n11,17\n12,10\n";
    let mut total = 0.0;
    let mut cumulative = String::from("week,total\n");
    for line in counts.lines().skip(1) {
        let (w, c) = line.split_once(',').unwrap();
        total += c.parse::<f64>().unwrap();
        cumulative.push_str(&format!("{w},{total}\n"));
    }
    let a = json(&plateau(
        &["fit", "-", "--per-period", "--json"],
        Some(counts),
    ));
    let b = json(&plateau(&["fit", "-", "--json"], Some(&cumulative)));
    assert_eq!(a["params"], b["params"]);
    assert_eq!(a["fitted"], b["fitted"]);
}

/// `plateau diagnose --json`: the diagnostics, the symmetry test and the
/// verdicts. On the Gompertz demo file (demo-data/README.md) a logistic fit
/// must be read as streaky and asymmetric with the late phase slower; on a
/// logistic file with its true K (12000) the Fisher–Pry points must read as
/// straight, and with K = 14000 as curved.
#[test]
fn diagnose_json_reads_the_generating_shape() {
    let v = json(&plateau(
        &["diagnose", &demo("harrow_fields_capacity.csv"), "--json"],
        None,
    ));
    for key in [
        "fit",
        "residuals",
        "symmetry_test",
        "fisher_pry",
        "verdicts",
        "caution",
    ] {
        assert!(v.get(key).is_some(), "missing {key}");
    }
    let r = &v["residuals"];
    assert!(r["durbin_watson"].as_f64().unwrap() < 1.5);
    assert!(r["runs"]["p_value"].as_f64().unwrap() < 0.05);
    assert_eq!(r["qq"]["points"].as_array().unwrap().len(), 36);
    let s = &v["symmetry_test"];
    assert_eq!(s["asymmetric"], true);
    assert_eq!(s["direction"], "late_slower");
    let codes: Vec<&str> = v["verdicts"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x["code"].as_str().unwrap())
        .collect();
    assert!(
        codes.contains(&"runs_streaks") && codes.contains(&"asymmetric"),
        "{codes:?}"
    );

    let k = |k: &str| {
        json(&plateau(
            &[
                "diagnose",
                &demo("aldermoor_subscribers.csv"),
                "--json",
                "--fisher-pry-k",
                k,
            ],
            None,
        ))
    };
    assert_eq!(k("12000")["fisher_pry"]["verdict"]["code"], "straight");
    assert_eq!(k("14000")["fisher_pry"]["verdict"]["code"], "curved");
    assert_eq!(k("14000")["fisher_pry"]["k"], 14000.0);
}

#[test]
fn diagnose_table_svgs_and_bad_k() {
    let dir = std::env::temp_dir().join(format!("plateau-diag-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let qq = dir.join("qq.svg");
    let fp = dir.join("fp.svg");
    let out = plateau(
        &[
            "diagnose",
            &demo("aldermoor_subscribers.csv"),
            "--qq-svg",
            qq.to_str().unwrap(),
            "--fisher-pry-svg",
            fp.to_str().unwrap(),
            "--fisher-pry-k",
            "13000",
        ],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8(out.stdout).unwrap();
    for needle in [
        "runs test",
        "Durbin-Watson",
        "verdicts",
        "Fisher-Pry, K = 13,000 (entered)",
        "Caution:",
    ] {
        assert!(text.contains(needle), "missing {needle:?}:\n{text}");
    }
    assert!(std::fs::read_to_string(&qq)
        .unwrap()
        .contains("normal Q-Q plot"));
    assert!(std::fs::read_to_string(&fp).unwrap().contains("(entered)"));
    let _ = std::fs::remove_dir_all(&dir);
    let out = plateau(
        &[
            "diagnose",
            &demo("aldermoor_subscribers.csv"),
            "--fisher-pry-k=0",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--fisher-pry-k"));
}

/// `plateau compare --json` carries BIC, the likelihood-ratio tests and a
/// recommendation with reasons; on the logistic4 demo file
/// (demo-data/README.md) it recommends logistic4.
#[test]
fn compare_json_has_lr_tests_and_a_recommendation() {
    let v = json(&plateau(
        &["compare", &demo("tariff_share_monthly.csv"), "--json"],
        None,
    ));
    let rows = v["models"].as_array().unwrap();
    assert!(rows
        .iter()
        .all(|r| r.get("bic").is_some() && r.get("delta_bic").is_some()));
    let lr = v["lr_tests"].as_array().unwrap();
    assert_eq!(lr.len(), 2);
    assert_eq!(lr[0]["nested"], "logistic");
    assert!(lr[0]["p_value"].as_f64().unwrap() < 0.05);
    assert_eq!(v["recommendation"]["model"], "logistic4");
    assert!(v["recommendation"]["reasons"].as_array().unwrap().len() >= 3);
    let out = plateau(&["compare", &demo("tariff_share_monthly.csv")], None);
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains("recommendation: logistic4") && text.contains("likelihood-ratio tests"));
}

#[test]
fn forecast_json_has_bands_milestones_and_a_reproducible_bootstrap() {
    let file = demo("fenwick_vale_subscribers.csv");
    let args = [
        "forecast",
        &file,
        "--until",
        "50",
        "--bootstrap",
        "200",
        "--seed",
        "5",
        "--level",
        "9000",
        "--share",
        "75",
        "--json",
    ];
    let v = json(&plateau(&args, None));
    let again = json(&plateau(&args, None));
    assert_eq!(v, again, "same seed, same report");
    let b = &v["bootstrap"];
    assert_eq!(b["replicates"], 200);
    assert_eq!(b["seed"], 5);
    assert_eq!(b["resampling"], "residual");
    assert!(b["failed"].as_u64().unwrap() < 200);
    // 20 data rows, then the grid 21..=50.
    let points = v["points"].as_array().unwrap();
    assert_eq!(points.len(), 20 + 30);
    assert!(points[0]["observed"].is_number());
    let last = points.last().unwrap();
    assert_eq!(last["t"], 50.0);
    assert!(last["observed"].is_null());
    for p in points {
        let c = p["confidence95"].as_array().unwrap();
        let pr = p["prediction95"].as_array().unwrap();
        assert!(pr[0].as_f64() < c[0].as_f64() && c[1].as_f64() < pr[1].as_f64());
        assert!(p["bootstrap95"].is_array());
    }
    let ms = v["milestones"].as_array().unwrap();
    let labels: Vec<&str> = ms.iter().map(|m| m["label"].as_str().unwrap()).collect();
    assert_eq!(
        labels,
        [
            "10% of K",
            "50% of K",
            "90% of K",
            "75% of K",
            "level 9,000",
            "10% → 90% of K (duration)"
        ]
    );
    let level = &ms[4];
    assert_eq!(level["verdict"], "not_reached");
    assert!(level["time_text"].is_null());
    // Common practice: 10→90 takes ln(81)/r for the logistic.
    let r = v["params"]["r"]["estimate"].as_f64().unwrap();
    let d = ms[5]["estimate"].as_f64().unwrap();
    assert!((d - 81f64.ln() / r).abs() < 1e-9);
    assert!(v["params"]["K"]["bootstrap_ci95"].is_array());
    assert!(v["caution"].as_str().unwrap().contains("extrapolations"));

    // Another seed, other numbers.
    let mut other = args.to_vec();
    other[7] = "6";
    let w = json(&plateau(&other, None));
    assert_ne!(
        v["params"]["K"]["bootstrap_ci95"],
        w["params"]["K"]["bootstrap_ci95"]
    );
}

#[test]
fn forecast_reads_until_in_the_data_time_format_and_refuses_bad_values() {
    let file = demo("tariff_share_monthly.csv");
    let v = json(&plateau(
        &[
            "forecast",
            &file,
            "-m",
            "logistic4",
            "--until",
            "2026-06-01",
            "--json",
        ],
        None,
    ));
    assert_eq!(v["until_text"], "2026-06-01");
    assert!(v["bootstrap"].is_null());
    let out = plateau(&["forecast", &file, "--until", "2026Q9"], None);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("--until") && err.contains("YYYY-MM-DD"),
        "{err}"
    );
    let out = plateau(&["forecast", &file, "--until", "2019-06-01"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("after the last observation"));
    let out = plateau(&["forecast", &file, "--until", "2030", "--seed", "3"], None);
    assert_eq!(out.status.code(), Some(2));
    let out = plateau(
        &["forecast", &file, "--until", "2030", "--share", "100"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    // Tables for people carry the caution.
    let out = plateau(
        &["forecast", &file, "-m", "logistic4", "--until", "2026"],
        None,
    );
    assert!(out.status.success());
    assert!(String::from_utf8_lossy(&out.stdout).contains("Forecasts are extrapolations"));
}

#[test]
fn drift_reports_every_prefix_and_writes_its_chart() {
    let file = demo("aldermoor_subscribers.csv");
    let v = json(&plateau(&["drift", &file, "--json"], None));
    let rows = v["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 30 - 3);
    assert_eq!(rows[0]["m"], 4);
    assert_eq!(rows.last().unwrap()["m"], 30);
    // The last prefix is all the data: the same K as `plateau fit`.
    let fit = json(&plateau(&["fit", &file, "--json"], None));
    let k = rows.last().unwrap()["params"]["K"]["estimate"]
        .as_f64()
        .unwrap();
    let k_fit = fit["params"]["K"]["estimate"].as_f64().unwrap();
    assert!((k - k_fit).abs() < 1e-6 * k_fit);
    let dir = std::env::temp_dir().join(format!("plateau-drift-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let svg = dir.join("drift.svg");
    let out = plateau(&["drift", &file, "--svg", svg.to_str().unwrap()], None);
    assert!(out.status.success());
    let text = std::fs::read_to_string(&svg).unwrap();
    assert!(text.contains("K as the data arrived"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn backtest_scores_every_model_by_horizon() {
    let file = demo("aldermoor_subscribers.csv");
    let v = json(&plateau(
        &["backtest", &file, "--horizon", "3", "--json"],
        None,
    ));
    assert_eq!(v["method"], "rolling_origin");
    let models = v["models"].as_array().unwrap();
    assert_eq!(models.len(), plateau_core::Model::ALL.len());
    for m in models {
        let hs = m["horizons"].as_array().unwrap();
        assert_eq!(hs.len(), 3);
        assert_eq!(hs[0]["h"], 1);
    }
    let lg = models.iter().find(|m| m["model"] == "logistic").unwrap();
    // Origins 15..29 (half of 30 to n − 1): 15 one-step forecasts, 13 three-step.
    assert_eq!(lg["origins"], 15);
    assert_eq!(lg["horizons"][0]["count"], 15);
    assert_eq!(lg["horizons"][2]["count"], 13);
    assert!(lg["horizons"][0]["mae"].as_f64().unwrap() > 0.0);
    let out = plateau(&["backtest", &file, "--horizon", "0"], None);
    assert_eq!(out.status.code(), Some(2));
}

/// `plateau fit --model bass --per-period --json` reports the Bass
/// parameters and the peak; its time is tau + ln(q/p)/(p+q) and its rate
/// m (p+q)²/(4q) of the reported estimates (Bass 1969), with an interval
/// around each.
#[test]
fn bass_fit_reports_its_peak() {
    let v = json(&plateau(
        &[
            "fit",
            &demo("lumen_cell_adoptions.csv"),
            "--per-period",
            "--model",
            "bass",
            "--json",
        ],
        None,
    ));
    let e = |n: &str| v["params"][n]["estimate"].as_f64().unwrap();
    let (m, p, q, tau) = (e("m"), e("p"), e("q"), e("tau"));
    let peak = &v["peak"];
    let t = peak["time"].as_f64().unwrap();
    let rate = peak["rate"].as_f64().unwrap();
    assert!((t - (tau + (q / p).ln() / (p + q))).abs() < 1e-9 * t.abs());
    assert!((rate - m * (p + q).powi(2) / (4.0 * q)).abs() < 1e-9 * rate);
    for (x, ci) in [(t, &peak["time_ci95"]), (rate, &peak["rate_ci95"])] {
        let (lo, hi) = (ci[0].as_f64().unwrap(), ci[1].as_f64().unwrap());
        assert!(lo < x && x < hi, "{x} in [{lo}, {hi}]");
    }
    // Other models carry a null peak.
    let v = json(&plateau(
        &["fit", &demo("aldermoor_subscribers.csv"), "--json"],
        None,
    ));
    assert!(v["peak"].is_null());
}

/// The two-wave demo series is ranked first by the bi-logistic, and the
/// table names the model.
#[test]
fn compare_picks_the_bilogistic_for_two_waves() {
    let v = json(&plateau(
        &["compare", &demo("wrenlow_two_waves.csv"), "--json"],
        None,
    ));
    assert_eq!(v["models"][0]["model"], "bilogistic");
    let out = plateau(&["models"], None);
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("bass") && text.contains("K1, r1, t01, K2, r2, t02"));
}

/// JSON Lines of `plateau batch --json`.
fn json_lines(out: &Output) -> Vec<Value> {
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|l| serde_json::from_str(l).expect("each line is one JSON object"))
        .collect()
}

#[test]
fn batch_fits_every_region_in_input_order() {
    let out = plateau(
        &["batch", &demo("regional_adoption_long.csv"), "--json"],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let lines = json_lines(&out);
    let names: Vec<&str> = lines
        .iter()
        .map(|v| v["series"].as_str().unwrap())
        .collect();
    assert_eq!(
        names,
        ["Brackenridge", "Corrie Haven", "Dunmere", "Eastwold"]
    );
    for v in &lines {
        assert_eq!(v["converged"], true);
        assert!(v["K"]["ci95"].is_array());
        assert_eq!(v["fit"]["n"], 60);
        assert!(v["t0_date"].as_str().unwrap().starts_with("202"));
    }
    // The caution goes to stderr when stdout is for machines.
    assert!(String::from_utf8_lossy(&out.stderr).contains("extrapolations"));
}

#[test]
fn batch_numbers_equal_a_single_fit_of_each_series() {
    let lines = json_lines(&plateau(
        &["batch", &demo("regional_adoption_long.csv"), "--json"],
        None,
    ));
    // Dunmere's rows, alone, through `plateau fit`.
    let text = std::fs::read_to_string(demo("regional_adoption_long.csv")).unwrap();
    let dunmere: String = std::iter::once("month,households\n".to_string())
        .chain(
            text.lines()
                .filter_map(|l| l.strip_prefix("Dunmere,"))
                .map(|l| format!("{l}\n")),
        )
        .collect();
    let single = json(&plateau(&["fit", "-", "--json"], Some(&dunmere)));
    assert_eq!(lines[2]["fit"]["params"], single["params"]);
}

#[test]
fn batch_csv_has_a_header_and_one_row_per_series() {
    let out = plateau(
        &["batch", &demo("regional_adoption_long.csv"), "--csv"],
        None,
    );
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    let rows: Vec<&str> = text.lines().collect();
    assert_eq!(rows.len(), 5);
    assert!(rows[0].starts_with("series,model,n,K,K_lo95,K_hi95,r,"));
    assert!(rows[4].starts_with("Eastwold,logistic,60,"));
}

#[test]
fn batch_failed_series_are_reported_and_the_rest_go_on() {
    let text = "region,t,y\n\
                a,1,10\na,2,20\na,3,45\na,4,70\na,5,85\na,6,95\na,7,98\n\
                b,1,10\nb,2,oops\n\
                c,1,5\nc,2,12\nc,3,30\nc,4,50\nc,5,68\nc,6,80\nc,7,86\n\
                a,8,99\n";
    let out = plateau(&["batch", "-", "--json"], Some(text));
    assert_eq!(out.status.code(), Some(1));
    let lines = json_lines(&out);
    let got: Vec<(&str, bool)> = lines
        .iter()
        .map(|v| (v["series"].as_str().unwrap(), v["error"].is_null()))
        .collect();
    assert_eq!(got, [("a", true), ("b", false), ("c", true), ("a", false)]);
    assert_eq!(lines[1]["error_line"], 10);
    assert!(lines[1]["error"].as_str().unwrap().contains("line 10"));
    assert_eq!(lines[3]["error_line"], 18);
    let msg = lines[3]["error"].as_str().unwrap();
    assert!(msg.contains("line 8") && msg.contains("together"), "{msg}");
    assert!(String::from_utf8_lossy(&out.stderr).contains("2 of 4 series failed"));
}

/// `count` logistic series of 12 points each (K = 100, r = 0.8, t0 = 6,
/// a small alternating wobble so that no fit is exact), long format with
/// a header: the series `s{i}` occupies lines `2 + 12 i` to `13 + 12 i`.
fn many_series(count: usize) -> String {
    let mut text = String::from("series,t,y\n");
    for i in 0..count {
        for t in 0..12 {
            let wobble = if t % 2 == 0 { -0.03 } else { 0.03 } * (1 + i % 5) as f64;
            let y = 100.0 / (1.0 + (-0.8 * (t as f64 - 6.0)).exp()) + wobble;
            text.push_str(&format!("s{i},{t},{y:.4}\n"));
        }
    }
    text
}

/// A fatal line after more series than one chunk (2,048): every series
/// before it is fitted and printed in input order, then exit 2 naming the
/// line, why, and how many series the results cover.
fn batch_stops_after_reporting_everything_before(bad_row: &str, why: &str) {
    let mut text = many_series(3000);
    text.push_str(bad_row);
    text.push_str("s9,1,2\n");
    let out = plateau(&["batch", "-", "--json"], Some(&text));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    // 1 header + 3000 × 12 rows: the bad row is line 36002.
    assert!(err.contains("line 36002:") && err.contains(why), "{err}");
    assert!(err.contains("reading stopped at line 36002"), "{err}");
    assert!(
        err.contains("The 3000 series read before it are reported"),
        "{err}"
    );
    assert!(err.contains("\"s2999\""), "{err}");
    let lines = json_lines(&out);
    let names: Vec<&str> = lines
        .iter()
        .map(|v| v["series"].as_str().unwrap())
        .collect();
    let want: Vec<String> = (0..3000).map(|i| format!("s{i}")).collect();
    assert_eq!(names, want);
    for v in &lines {
        assert!(v["error"].is_null(), "{v}");
        let k = v["K"]["estimate"].as_f64().unwrap();
        assert!((k - 100.0).abs() < 1.0, "{k}");
    }
}

#[test]
fn batch_row_without_series_name_reports_every_series_before_it() {
    batch_stops_after_reporting_everything_before(",3,4\n", "no series name");
}

#[test]
fn batch_unclosed_quote_reports_every_series_before_it() {
    batch_stops_after_reporting_everything_before("\"s3000,3,4\n", "quote is not closed");
}

/// A fatal line among the first lines (those read to detect the
/// delimiter) follows the same rule.
#[test]
fn batch_fatal_line_at_the_start_still_reports_what_came_before() {
    let text = "s,t,y\na,1,10\na,2,20\na,3,45\na,4,70\na,5,85\na,6,95\n,7,98\n";
    let out = plateau(&["batch", "-", "--json"], Some(text));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("line 8") && err.contains("series name"),
        "{err}"
    );
    assert!(
        err.contains("The 1 series read before it is reported"),
        "{err}"
    );
    let lines = json_lines(&out);
    assert_eq!(lines.len(), 1);
    assert_eq!(lines[0]["series"], "a");
    assert_eq!(lines[0]["n"], 6);
}

#[test]
fn batch_table_shows_the_caution_and_intervals() {
    let out = plateau(&["batch", &demo("regional_adoption_long.csv")], None);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.starts_with("Forecasts are extrapolations"));
    assert!(text
        .lines()
        .any(|l| l.starts_with("Corrie Haven") && l.contains('[')));
}

/// `plateau diagnose` takes the error model and increments of `plateau fit`;
/// the residuals follow them (n − 1 increments).
#[test]
fn diagnose_follows_the_error_model_and_increments() {
    let rel = json(&plateau(
        &[
            "diagnose",
            &demo("aldermoor_subscribers.csv"),
            "--json",
            "--errors",
            "relative",
        ],
        None,
    ));
    assert_eq!(rel["fit"]["error_model"], "relative");
    assert_eq!(rel["residuals"]["n"], 30);
    let inc = json(&plateau(
        &[
            "diagnose",
            &demo("aldermoor_subscribers.csv"),
            "--json",
            "--increments",
        ],
        None,
    ));
    assert_eq!(inc["residuals"]["n"], 29);
    assert!(inc["symmetry_test"]["lr_p_value"].as_f64().is_some());
}

/// `batch --intervals asymptotic` reports t-based intervals for every
/// series (profile likelihood is the default); a bad method is refused.
#[test]
fn batch_intervals_can_be_asymptotic() {
    let file = demo("regional_adoption_long.csv");
    let default = json_lines(&plateau(&["batch", &file, "--json"], None));
    let asym = json_lines(&plateau(
        &["batch", &file, "--json", "--intervals", "asymptotic"],
        None,
    ));
    assert_eq!(default.len(), asym.len());
    for (d, a) in default.iter().zip(&asym) {
        assert_eq!(d["fit"]["params"]["K"]["ci_method"], "profile");
        assert_eq!(a["fit"]["params"]["K"]["ci_method"], "asymptotic");
        assert_eq!(
            a["fit"]["params"]["K"]["ci95"],
            a["fit"]["params"]["K"]["ci95_asymptotic"]
        );
        assert_eq!(d["K"]["estimate"], a["K"]["estimate"]);
    }
    let out = plateau(&["batch", &file, "--intervals", "wide"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--intervals"));
}

/// Starts `plateau` with `args` and `stdin`, closes the read end of its
/// standard output at once (as `plateau … | head -c 0` would), and waits.
/// The output is far larger than a pipe's buffer, so the program must meet
/// the closed pipe.
fn with_stdout_closed(args: &[&str], stdin: String) -> Output {
    let mut child = spawn(args);
    drop(child.stdout.take());
    let mut input = child.stdin.take().unwrap();
    // The program may stop reading once its output is gone; a write error
    // here is then expected.
    let _ = input.write_all(stdin.as_bytes());
    drop(input);
    child.wait_with_output().expect("plateau runs")
}

/// A reader that goes away (`plateau … | head`) ends the output quietly:
/// exit 0, no panic, for the one-report commands and for `batch`.
#[test]
fn a_closed_output_pipe_ends_quietly() {
    // 20,000 points: the JSON's fitted values alone are over 300 kB.
    let n = 20_000;
    let mut one = String::from("t,y\n");
    for i in 0..n {
        let t = i as f64 / 1000.0;
        let y = 1000.0 / (1.0 + (-(t - 10.0)).exp()) + (i % 7) as f64;
        one.push_str(&format!("{t},{y}\n"));
    }
    // 3,000 series of 12 points: well over 100 kB of CSV rows.
    let mut many = String::from("series,t,y\n");
    for s in 0..3000 {
        for i in 0..12 {
            let y = 100.0 / (1.0 + (-(i as f64 - 6.0)).exp()) + ((s + i) % 5) as f64;
            many.push_str(&format!("s{s},{i},{y}\n"));
        }
    }
    for (args, input) in [
        (vec!["fit", "-", "--json"], one.clone()),
        (vec!["fit", "-"], one),
        (
            vec!["batch", "-", "--csv", "--intervals", "asymptotic"],
            many,
        ),
    ] {
        let out = with_stdout_closed(&args, input);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert!(
            out.status.success() && !stderr.contains("panicked"),
            "{args:?}: {:?} {stderr}",
            out.status
        );
    }
}

/// Every subcommand that takes `--fix` (and `--start`), with the arguments
/// it needs besides them.
fn commands_with_fix() -> Vec<(&'static str, Vec<String>)> {
    let one = demo("aldermoor_subscribers.csv");
    vec![
        ("fit", vec![one.clone()]),
        ("compare", vec![one.clone()]),
        ("diagnose", vec![one.clone()]),
        ("forecast", vec![one.clone(), "--until".into(), "40".into()]),
        ("drift", vec![one.clone()]),
        ("backtest", vec![one]),
        ("batch", vec![demo("regional_adoption_long.csv")]),
    ]
}

fn run_with(cmd: &str, base: &[String], extra: &[&str]) -> Output {
    let mut args: Vec<&str> = vec![cmd];
    args.extend(base.iter().map(String::as_str));
    args.extend(extra);
    plateau(&args, None)
}

/// `--fix k=150` (no such parameter: K is meant) is refused by every
/// subcommand before any fit, exit 2, naming the valid parameters; before,
/// `compare` and `backtest` ignored it and exited 0, `drift` said no prefix
/// could be fitted.
#[test]
fn every_subcommand_refuses_an_unknown_parameter_listing_the_valid_ones() {
    for (cmd, base) in commands_with_fix() {
        let out = run_with(cmd, &base, &["--fix", "k=150"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{cmd}: {err}");
        assert!(out.stdout.is_empty(), "{cmd}");
        assert!(
            err.contains("--fix k=150") && err.contains("did you mean K?"),
            "{cmd}: {err}"
        );
        if matches!(cmd, "compare" | "backtest") {
            // Several models: the names each of them holds.
            assert!(err.contains("none of the models"), "{cmd}: {err}");
            assert!(err.contains("richards K, r, t0, nu"), "{cmd}: {err}");
            assert!(err.contains("bass m, p, q, tau"), "{cmd}: {err}");
        } else {
            assert!(
                err.contains("the logistic model has no parameter \"k\""),
                "{cmd}: {err}"
            );
            assert!(err.contains("its parameters are K, r, t0"), "{cmd}: {err}");
        }
        let out = run_with(cmd, &base, &["--fix", "K=100", "--fix", "K=200"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{cmd}: {err}");
        assert!(err.contains("K is given twice"), "{cmd}: {err}");
    }
    // Only the models listed count: nu is the Richards model's.
    let one = demo("aldermoor_subscribers.csv");
    let out = plateau(
        &[
            "compare",
            &one,
            "--models",
            "logistic,gompertz",
            "--fix",
            "nu=2",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("none of the models compared has a parameter \"nu\""),
        "{err}"
    );
    assert!(
        err.contains("logistic K, r, t0; gompertz K, r, t0."),
        "{err}"
    );
    let out = plateau(
        &["fit", &one, "--model", "richards", "--start", "Nu=2"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("did you mean nu?"));
}

/// A held parameter has no start: `--fix K=100 --start K=200` used to drop
/// the start silently. Refused by every subcommand that takes both.
#[test]
fn a_parameter_both_held_and_started_is_refused() {
    for (cmd, base) in commands_with_fix() {
        if matches!(cmd, "compare" | "backtest" | "drift") {
            continue; // these take no --start
        }
        let out = run_with(cmd, &base, &["--fix", "K=100", "--start", "K=200"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{cmd}: {err}");
        assert!(
            err.contains("--fix K=100 and --start K=200 contradict"),
            "{cmd}: {err}"
        );
        let out = run_with(cmd, &base, &["--start", "k=200"]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{cmd}: {err}");
        assert!(
            err.contains("--start k=200") && err.contains("did you mean K?"),
            "{cmd}: {err}"
        );
    }
}

/// `batch --fix K=…` holds K in every series (new with the check above):
/// each series' K is reported as the value given.
#[test]
fn batch_holds_a_fixed_parameter_in_every_series() {
    let lines = json_lines(&plateau(
        &[
            "batch",
            &demo("regional_adoption_long.csv"),
            "--json",
            "--fix",
            "K=70000",
        ],
        None,
    ));
    assert!(!lines.is_empty());
    for v in &lines {
        assert_eq!(v["fit"]["params"]["K"]["estimate"], 70000.0, "{v}");
        assert_eq!(v["fit"]["params"]["K"]["fixed"], true, "{v}");
    }
}

/// The drift table shows exactly the intervals its `--json` shows: on the
/// Aldermoor demo the early prefixes end before the inflection and K is
/// not identified there (the JSON withholds its interval; the table used
/// to print the asymptotic one, with a negative lower end). Where the JSON
/// has an interval, the table prints the same numbers, rounded to the
/// digits it shows (see `shows`).
#[test]
fn drift_table_and_json_show_the_same_intervals() {
    let file = demo("aldermoor_subscribers.csv");
    let report = json(&plateau(&["drift", &file, "--json"], None));
    let out = plateau(&["drift", &file], None);
    assert!(out.status.success());
    let table = String::from_utf8_lossy(&out.stdout);
    let rows = report["rows"].as_array().unwrap();
    let lines: Vec<&str> = table.lines().skip(2).take(rows.len()).collect();
    let close = |text: &str, want: f64| assert!(shows(text, want), "table {text}, json {want}");
    let mut withheld = 0;
    let mut shown = 0;
    for (row, line) in rows.iter().zip(&lines) {
        let mut fields = line.split_whitespace();
        assert_eq!(fields.next(), row["cutoff_text"].as_str(), "{line}");
        let params = row["params"].as_object().unwrap();
        // "EST (LO … HI)" or "EST (-)" per parameter, in order.
        let cells: Vec<&str> = line.split(')').collect();
        for (i, name) in ["K", "r", "t0"].iter().enumerate() {
            let p = &params[*name];
            let cell = cells[i];
            let (head, ci) = cell.rsplit_once('(').unwrap();
            // A K the prefix does not determine shows "at least LOWER"
            // instead of its meaningless estimate.
            let shown_value = p["at_least"]
                .as_f64()
                .unwrap_or_else(|| p["estimate"].as_f64().unwrap());
            if p["at_least"].is_f64() {
                assert!(head.contains("at least"), "{name} in {line}");
            }
            close(head.split_whitespace().last().unwrap(), shown_value);
            match p["ci95"].as_array() {
                None => {
                    assert_eq!(ci, "-", "{name} in {line}");
                    withheld += usize::from(*name == "K");
                }
                Some(b) => {
                    let (lo, hi) = ci.split_once(" … ").unwrap();
                    close(lo, b[0].as_f64().unwrap());
                    close(hi, b[1].as_f64().unwrap());
                    shown += usize::from(*name == "K");
                }
            }
        }
    }
    // Both cases occur: K withheld early, shown once the data determine it.
    assert!(withheld >= 3 && shown >= 10, "{withheld} {shown}");
    assert!(table.contains("(-) no interval"), "{table}");
}

/// UTF-16 input (a spreadsheet's "Unicode text") is decoded; Latin-1 is
/// refused naming the line; epoch seconds are read as dates.
#[test]
fn utf16_files_are_read_and_epoch_seconds_are_dates() {
    let text = "t,y\n0,10\n1,20\n2,40\n3,61\n4,80\n5,90\n6,95\n7,98\n";
    let dir = std::env::temp_dir().join(format!("plateau-utf16-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let utf16 = dir.join("utf16.csv");
    let mut bytes = vec![0xFF, 0xFE];
    bytes.extend(text.encode_utf16().flat_map(u16::to_le_bytes));
    std::fs::write(&utf16, bytes).unwrap();
    let plain = plateau(&["fit", "-", "--json"], Some(text));
    let out = plateau(&["fit", utf16.to_str().unwrap(), "--json"], None);
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let (a, b): (Value, Value) = (
        serde_json::from_slice(&plain.stdout).unwrap(),
        serde_json::from_slice(&out.stdout).unwrap(),
    );
    assert_eq!(a["params"], b["params"]);
    let latin1 = dir.join("latin1.csv");
    std::fs::write(&latin1, b"t,y\n0,10\nw\xf6che,3\n").unwrap();
    let out = plateau(&["fit", latin1.to_str().unwrap()], None);
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("line 3: not UTF-8 text"), "{err}");
    std::fs::remove_dir_all(&dir).ok();

    let epoch = "t,y\n1700000000,10\n1700086400,20\n1700172800,40\n1700259200,61\n\
                 1700345600,80\n1700432000,90\n1700518400,95\n1700604800,98\n";
    let out = plateau(&["fit", "-", "--json"], Some(epoch));
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: Value = serde_json::from_slice(&out.stdout).unwrap();
    let codes: Vec<&str> = report["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|w| w["code"].as_str())
        .collect();
    assert!(codes.contains(&"epoch_times"), "{codes:?}");
}

/// Whether `text`, a number as the tables show it (`12,346`, `0.0312`,
/// `1.5e12`), is `value` rounded to the digits it shows: within half a
/// unit of its last digit. Trailing zeros of a whole number may stand in
/// for digits not shown (`1,235,000`), so they count as rounding places.
fn shows(text: &str, value: f64) -> bool {
    let t = text.trim().replace(',', "");
    let Ok(got) = t.parse::<f64>() else {
        return false;
    };
    let (mantissa, exp) = t.split_once('e').unwrap_or((&t, "0"));
    let exp: i32 = exp.parse().unwrap_or(0);
    let place = match mantissa.split_once('.') {
        Some((_, frac)) => -(frac.len() as i32),
        None => mantissa.len() as i32 - mantissa.trim_end_matches('0').len() as i32,
    } + exp;
    let half = 0.5 * 10f64.powi(place);
    (got - value).abs() <= half * (1.0 + 1e-9) + value.abs() * 1e-15
}

#[test]
fn shows_reads_rounded_numbers() {
    assert!(shows("12,346", 12345.678));
    assert!(!shows("12,346", 12345.4));
    assert!(shows("0.0312", 0.03118));
    assert!(!shows("0.0312", 0.0313));
    assert!(shows("1,235,000", 1234567.0));
    assert!(shows("1.500e12", 1.4996e12));
    assert!(!shows("1.500e12", 1.4994e12));
    assert!(!shows("twelve", 12.0));
}

/// The fit table rounds each estimate at the place of its standard error's
/// second significant digit (the GUM's two digits, JCGM 100:2008 §7.2.6,
/// from memory) and shows the `--json` numbers at those digits.
#[test]
fn fit_table_shows_the_digits_the_standard_error_supports() {
    let file = demo("aldermoor_subscribers.csv");
    let report = json(&plateau(&["fit", &file, "--json"], None));
    let out = plateau(&["fit", &file], None);
    let table = String::from_utf8_lossy(&out.stdout);
    for name in ["K", "r", "t0"] {
        let p = &report["params"][name];
        let line = table
            .lines()
            .find(|l| l.split_whitespace().next() == Some(name))
            .unwrap();
        let f: Vec<&str> = line.split_whitespace().collect();
        let (est, se) = (f[1], f[2]);
        assert!(shows(est, p["estimate"].as_f64().unwrap()), "{line}");
        assert!(shows(se, p["std_error"].as_f64().unwrap()), "{line}");
        let significant = se
            .bytes()
            .filter(u8::is_ascii_digit)
            .skip_while(|b| *b == b'0')
            .count();
        assert_eq!(significant, 2, "{line}");
        let decimals = |s: &str| s.split_once('.').map_or(0, |(_, d)| d.len());
        assert_eq!(decimals(est), decimals(se), "{line}");
        let ci = p["ci95"].as_array().unwrap();
        // "[LO, HI]": the separator is ", " (a comma inside a number has
        // no space after it).
        let (lo, hi) = (
            f[3].trim_start_matches('[').trim_end_matches(','),
            f[4].trim_end_matches(']'),
        );
        assert!(shows(lo, ci[0].as_f64().unwrap()), "{line}");
        assert!(shows(hi, ci[1].as_f64().unwrap()), "{line}");
        assert_eq!(decimals(lo), decimals(est), "{line}");
    }
}

/// `forecast`, `drift` and `backtest` take `--errors` like `fit` (the page
/// applies its error model to milestones and drift too): the forecast's
/// estimates and the last drift row (all the data) are the relative-error
/// fit's, which differ from the additive fit's.
#[test]
fn forecast_drift_and_backtest_follow_the_error_model() {
    let file = demo("aldermoor_subscribers.csv");
    let k_of = |v: &Value| v["params"]["K"]["estimate"].as_f64().unwrap();
    let fit_rel = json(&plateau(
        &["fit", &file, "--errors", "relative", "--json"],
        None,
    ));
    let fit_add = json(&plateau(&["fit", &file, "--json"], None));
    assert_eq!(fit_rel["error_model"], "relative");
    assert_ne!(k_of(&fit_rel), k_of(&fit_add));
    let fc = json(&plateau(
        &[
            "forecast", &file, "--until", "40", "--errors", "relative", "--json",
        ],
        None,
    ));
    // Same fit, same options: the same numbers to the last bit.
    assert_eq!(k_of(&fc), k_of(&fit_rel));
    let dr = json(&plateau(
        &["drift", &file, "--errors", "relative", "--json"],
        None,
    ));
    let last = dr["rows"].as_array().unwrap().last().unwrap();
    assert_eq!(k_of(last), k_of(&fit_rel));
    let out = plateau(&["drift", &file, "--errors", "sideways"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--errors: expected additive"));
    let bt = json(&plateau(
        &[
            "backtest", &file, "--models", "logistic", "--errors", "log", "--json",
        ],
        None,
    ));
    assert!(bt["models"][0]["horizons"][0]["mae"].as_f64().unwrap() > 0.0);
}

/// One limit per setting on both faces (plateau_study::request): the page
/// refuses more than 100000 replicates and seeds above 2^53 − 1, and so
/// does the CLI.
#[test]
fn bootstrap_limits_are_the_pages() {
    let file = demo("aldermoor_subscribers.csv");
    let out = plateau(
        &["forecast", &file, "--until", "40", "--bootstrap", "100001"],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("at most 100000 replicates"));
    let out = plateau(
        &[
            "forecast",
            &file,
            "--until",
            "40",
            "--bootstrap",
            "10",
            "--seed",
            "9007199254740992",
        ],
        None,
    );
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("from 0 to 9007199254740991"));
}

/// `batch` studies each series as `fit` does: a series whose values fall
/// gets the same `values_decline` warning (with the --per-period hint).
#[test]
fn batch_warns_of_declining_values_as_fit_does() {
    // Rises to 95, then stays at 60 (63% of the peak) for four rows.
    let rows: Vec<(u32, f64)> = [
        5.0, 10.0, 20.0, 40.0, 60.0, 80.0, 90.0, 95.0, 60.0, 60.0, 60.0, 60.0,
    ]
    .into_iter()
    .zip(1..)
    .map(|(y, t)| (t, y))
    .collect();
    let single: String = std::iter::once("t,y\n".to_string())
        .chain(rows.iter().map(|(t, y)| format!("{t},{y}\n")))
        .collect();
    let long: String = std::iter::once("series,t,y\n".to_string())
        .chain(rows.iter().map(|(t, y)| format!("a,{t},{y}\n")))
        .collect();
    let out = plateau(&["fit", "-", "--json"], Some(&single));
    let fit_codes = codes(&serde_json::from_slice(&out.stdout).unwrap());
    assert!(
        fit_codes.iter().any(|c| c == "values_decline"),
        "{fit_codes:?}"
    );
    let out = plateau(&["batch", "-", "--json"], Some(&long));
    let line: Value = serde_json::from_slice(&out.stdout).unwrap();
    let batch_codes = codes(&line);
    assert!(
        batch_codes.iter().any(|c| c == "values_decline"),
        "{batch_codes:?}"
    );
    assert!(line["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|w| w["message"].as_str().unwrap().ends_with("(--per-period)")));
}

/// A K the data do not determine gets no interval in the several-series
/// summary either (CSV and JSON): on an early-growth series the asymptotic
/// interval is about ±1.8e8 around K, and was printed as if it were one.
#[test]
fn batch_summary_withholds_an_undetermined_ks_interval() {
    let mut text = String::from("series,t,y\n");
    for (t, y) in [
        (0, 42),
        (2, 51),
        (4, 59),
        (6, 64),
        (8, 76),
        (10, 93),
        (12, 106),
        (14, 125),
        (16, 149),
        (18, 171),
        (20, 199),
        (21, 205),
    ] {
        text.push_str(&format!("early,{t},{y}\n"));
    }
    let out = plateau(&["batch", "-", "--csv"], Some(&text));
    assert!(out.status.success());
    let csv = String::from_utf8_lossy(&out.stdout);
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap().split(',').collect();
    let row: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| row[header.iter().position(|h| *h == name).unwrap()];
    assert!(
        col("warnings").contains("saturation_not_identified"),
        "{csv}"
    );
    assert!(!col("K").is_empty(), "{csv}");
    assert_eq!((col("K_lo95"), col("K_hi95")), ("", ""), "{csv}");
    let lines = json_lines(&plateau(&["batch", "-", "--json"], Some(&text)));
    assert!(lines[0]["K"]["ci95"].is_null(), "{}", lines[0]);
}

/// Month-end dates: the JSON says the axis counts months from 2000-01-31,
/// and r per month is r per year / 12 on the same data written as decimal
/// years `year + (month − 1) / 12` (analytic change of variable).
#[test]
fn month_end_data_fit_per_month_and_say_so() {
    let months: Vec<(i32, u32, f64)> = (0..36)
        .map(|i| {
            let t = f64::from(i) - 18.0;
            (
                2021 + i / 12,
                (i % 12) as u32 + 1,
                1000.0 / (1.0 + (-0.2 * t).exp()) + f64::from(i % 3),
            )
        })
        .collect();
    let month_end = |y: i32, m: u32| {
        let next = if m == 12 {
            chrono::NaiveDate::from_ymd_opt(y + 1, 1, 1)
        } else {
            chrono::NaiveDate::from_ymd_opt(y, m + 1, 1)
        };
        next.unwrap()
            .pred_opt()
            .unwrap()
            .format("%Y-%m-%d")
            .to_string()
    };
    let dated: String = std::iter::once("date,v\n".to_string())
        .chain(
            months
                .iter()
                .map(|(y, m, v)| format!("{},{v}\n", month_end(*y, *m))),
        )
        .collect();
    let decimal: String = std::iter::once("year,v\n".to_string())
        .chain(
            months
                .iter()
                .map(|(y, m, v)| format!("{},{v}\n", f64::from(*y) + f64::from(*m - 1) / 12.0)),
        )
        .collect();
    let by_month = json(&plateau(&["fit", "-", "--json"], Some(&dated)));
    let by_year = json(&plateau(&["fit", "-", "--json"], Some(&decimal)));
    assert_eq!(by_month["time_unit"], "month");
    assert_eq!(by_month["time_origin"], "2000-01-31");
    assert_eq!(by_year["time_unit"], "year");
    assert!(by_year.get("time_origin").is_none());
    let r = |v: &Value| v["params"]["r"]["estimate"].as_f64().unwrap();
    assert!((12.0 * r(&by_month) / r(&by_year) - 1.0).abs() < 1e-6);
    // Forecast rows stay on month ends and the table says months.
    let f = json(&plateau(
        &["forecast", "-", "--until", "2024-03-15", "--json"],
        Some(&dated),
    ));
    let times: Vec<&str> = f["points"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p["time"].as_str().unwrap())
        .collect();
    assert_eq!(
        &times[times.len() - 3..],
        ["2024-01-31", "2024-02-29", "2024-03-31"]
    );
    assert_eq!(f["until_text"], "2024-03-31");
    let table = plateau(&["forecast", "-", "--until", "2024-06-30"], Some(&dated));
    let out = String::from_utf8_lossy(&table.stdout);
    assert!(out.contains(" months  delta"), "{out}");
}

/// Quarterly input keeps quarters everywhere: time_unit, forecast rows and
/// milestone texts; a numeric time column takes its header as the unit.
#[test]
fn quarters_stay_quarters_and_numbers_take_their_header() {
    let text = "quarter,units\n2021Q1,1.5\n2021Q2,3.1\n2021Q3,6.0\n2021Q4,11.2\n2022Q1,19.9\n\
                2022Q2,30.4\n2022Q3,41.0\n2022Q4,49.8\n2023Q1,55.1\n2023Q2,58.3\n2023Q3,59.6\n";
    let f = json(&plateau(
        &["forecast", "-", "--until", "2024Q2", "--json"],
        Some(text),
    ));
    assert_eq!(f["time_unit"], "quarter");
    assert_eq!(f["time_origin"], "2000Q1");
    for p in f["points"].as_array().unwrap() {
        let t = p["time"].as_str().unwrap();
        assert!(t.len() == 6 && t.contains('Q'), "{t}");
        assert_eq!(p["t"].as_f64().unwrap().fract(), 0.0);
    }
    let t0 = &f["milestones"][1];
    assert!(t0["time_text"].as_str().unwrap().contains('Q'), "{t0}");
    let c = json(&plateau(&["compare", "-", "--json"], Some(text)));
    assert_eq!(c["time_unit"], "quarter");
    let d = json(&plateau(&["diagnose", "-", "--json"], Some(text)));
    assert_eq!(d["fit"]["time_unit"], "quarter");
    assert_eq!(d["fit"]["time_origin"], "2000Q1");
    let w = json(&plateau(
        &[
            "forecast",
            &demo("aldermoor_subscribers.csv"),
            "--until",
            "40",
            "--json",
        ],
        None,
    ));
    assert_eq!(w["time_unit"], "week");
    assert!(w["time_origin"].is_null());
}

/// A chart of month data ticks on calendar boundaries (quarter or year
/// starts), not on arbitrary days.
#[test]
fn month_chart_ticks_on_boundaries() {
    let path = std::env::temp_dir().join(format!("plateau-ticks-{}.svg", std::process::id()));
    let out = plateau(
        &[
            "fit",
            &demo("regional_adoption_wide.csv"),
            "--value",
            "Dunmere",
            "--svg",
            path.to_str().unwrap(),
        ],
        None,
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let svg = std::fs::read_to_string(&path).unwrap();
    let _ = std::fs::remove_file(&path);
    let labels: Vec<&str> = svg
        .split('>')
        .filter_map(|s| s.split('<').next().map(str::trim))
        .filter(|s| {
            s.len() == 7 && s.as_bytes()[4] == b'-' && s[..4].bytes().all(|b| b.is_ascii_digit())
        })
        .collect();
    assert!(labels.len() >= 2, "{labels:?}");
    for l in &labels {
        assert!(
            ["-01", "-04", "-07", "-10"].iter().any(|m| l.ends_with(m)),
            "{labels:?}"
        );
    }
}

/// The cap on drift cutoffs and backtest origins is applied and reported,
/// and drift honours an explicit interval method. Aldermoor: 30 weeks, so
/// 27 prefixes of 4+ points and 15 origins from half the data.
#[test]
fn drift_and_backtest_report_their_caps_and_interval_method() {
    let file = demo("aldermoor_subscribers.csv");
    let d = json(&plateau(
        &["drift", &file, "--json", "--max-cutoffs", "5"],
        None,
    ));
    assert_eq!(d["rows"].as_array().unwrap().len(), 5);
    assert_eq!(d["cutoffs_capped_from"], 27);
    assert_eq!(d["intervals"], "asymptotic");
    let d = json(&plateau(
        &[
            "drift",
            &file,
            "--json",
            "--max-cutoffs",
            "all",
            "--intervals",
            "profile",
        ],
        None,
    ));
    assert_eq!(d["rows"].as_array().unwrap().len(), 27);
    assert!(d["cutoffs_capped_from"].is_null());
    assert_eq!(d["intervals"], "profile");
    let b = json(&plateau(
        &[
            "backtest",
            &file,
            "--json",
            "--models",
            "logistic",
            "--max-origins",
            "4",
        ],
        None,
    ));
    assert_eq!(b["models"][0]["origins"], 4);
    assert_eq!(b["models"][0]["origins_capped_from"], 15);
    let out = plateau(&["drift", &file, "--max-cutoffs", "0"], None);
    assert_eq!(out.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&out.stderr).contains("--max-cutoffs"));
}

#[test]
fn human_fit_output_opens_with_the_answer_in_words() {
    let out = plateau(&["fit", &demo("aldermoor_subscribers.csv")], None);
    assert!(out.status.success());
    let text = String::from_utf8_lossy(&out.stdout);
    let v = json(&plateau(
        &["fit", &demo("aldermoor_subscribers.csv"), "--json"],
        None,
    ));
    let k = v["params"]["K"]["estimate"].as_f64().unwrap();
    let mut lines = text.lines();
    assert_eq!(lines.next(), Some("In short"));
    let k_line = lines.next().unwrap();
    // K at the digits its standard error supports (plateau_study::numbers).
    assert!(
        k_line.contains(&format!(
            "about {}",
            plateau_study::numbers::Precision::of_estimate(
                k,
                v["params"]["K"]["std_error"].as_f64()
            )
            .show(k)
        )),
        "{k_line}"
    );
    assert!(text.contains("90% of K reached"), "{text}");
    assert!(text.contains("How far to trust it:"), "{text}");
    assert!(
        text.contains("Not for clinical or safety decisions"),
        "{text}"
    );
}
