//! The `plateau` binary's contract, run as a user would: JSON shape, exit
//! codes, messages on stderr naming the line, stdin, `--svg`, `--fix`.
//! The numbers themselves are checked against outside references in the
//! core's tests; here the point is that the CLI passes them through intact.

use serde_json::Value;
use std::io::Write;
use std::path::PathBuf;
use std::process::{Command, Output, Stdio};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../..")
}

fn demo(name: &str) -> String {
    root().join("demo-data").join(name).display().to_string()
}

fn plateau(args: &[&str], stdin: Option<&str>) -> Output {
    let mut child = Command::new(env!("CARGO_BIN_EXE_plateau"))
        .args(args)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("start plateau");
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
fn duplicate_times_exit_2_naming_both_lines() {
    let out = plateau(&["fit", "-"], Some("t,y\n1,2\n2,3\n2,4\n3,5\n"));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains('3') && err.contains('4'), "{err}");
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
        &["fit", &demo("aldermoor_subscribers.csv"), "--model", "bass"],
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
    assert!(v["params"]["K"]["std_error"].is_null());
    assert_eq!(v["dof"], v["n"].as_u64().unwrap() - 2);
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
    assert_eq!(models.len(), 5);
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

#[test]
fn batch_row_without_series_name_stops_with_exit_2() {
    let out = plateau(&["batch", "-"], Some("s,t,y\na,1,1\n,2,2\n"));
    assert_eq!(out.status.code(), Some(2));
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("line 3") && err.contains("series name"),
        "{err}"
    );
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
