//! Files the CLI reads besides CSV: workbooks (.xlsx, .ods, .xls, from
//! tests/workbooks/make_workbooks.py: invented data, fixed seed) and the
//! page's own table export, each compared with the same data read as CSV.

use super::{codes, demo, json, plateau, root};
use serde_json::Value;

fn workbook(name: &str) -> String {
    root()
        .join("tests/workbooks")
        .join(name)
        .display()
        .to_string()
}

fn fit(args: &[&str]) -> Value {
    let mut all = vec!["fit"];
    all.extend_from_slice(args);
    all.push("--json");
    json(&plateau(&all, None))
}

/// Each workbook's "Members" sheet (the first with data) fits exactly as
/// the generator's CSV of the same cells: same n, same K, on a monthly axis.
#[test]
fn workbooks_fit_as_their_csv() {
    let reference = fit(&[&workbook("members.csv")]);
    assert_eq!(reference["n"], 36);
    assert_eq!(reference["time_unit"], "month");
    for name in ["members.xlsx", "members.ods", "members.xls"] {
        let v = fit(&[&workbook(name)]);
        assert_eq!(v["n"], reference["n"], "{name}");
        assert_eq!(v["time_unit"], "month", "{name}");
        assert_eq!(v["params"], reference["params"], "{name}");
    }
    // The quarterly sheet, by name and by position, on a quarterly axis.
    let by_name = fit(&[&workbook("members.xlsx"), "--sheet", "Quarterly"]);
    let by_position = fit(&[&workbook("members.ods"), "--sheet", "3"]);
    assert_eq!(by_name["n"], 12);
    assert_eq!(by_name["time_unit"], "quarter");
    assert_eq!(by_name["params"], by_position["params"]);
    // compare reads workbooks too.
    let c = json(&plateau(
        &[
            "compare",
            &workbook("members.xls"),
            "--models",
            "logistic,gompertz",
            "--json",
        ],
        None,
    ));
    assert!(c.to_string().contains("gompertz"));
}

/// Bad workbooks and sheet choices: exit 2 and a message naming the file,
/// the sheet and, for a formula without a saved value, the cell.
#[test]
fn bad_workbooks_exit_2_naming_sheet_and_cell() {
    let cases: [(&[&str], &str); 6] = [
        (&[&workbook("encrypted.xlsx")], "password-protected"),
        (
            &[&workbook("members.xlsx"), "--sheet", "1"],
            "sheet \"Blank\" is empty",
        ),
        (
            &[&workbook("members.xlsx"), "--sheet", "Sales"],
            "no sheet named \"Sales\"",
        ),
        (
            &[&workbook("formulas.xlsx")],
            "cell B2: the formula =C2*1 has no saved value",
        ),
        (&[&workbook("truncated.xlsx")], "damaged or incomplete"),
        (
            &[&demo("aldermoor_subscribers.csv"), "--sheet", "1"],
            "not a workbook",
        ),
    ];
    for (args, expected) in cases {
        let mut all = vec!["fit"];
        all.extend_from_slice(args);
        let out = plateau(&all, None);
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains(expected), "{args:?}: {err}");
        assert!(err.contains(args[0].rsplit('/').next().unwrap()), "{err}");
    }
}

/// The page's table export (time, axis, observed, fitted, forecast,
/// bands), saved and opened by the CLI, is the series it was made from:
/// the same n and K as the original file, the forecast rows set aside
/// with a warning.
#[test]
fn the_pages_table_export_fits_as_the_original() {
    use plateau_web::session::{analyse, Settings};
    let dir = std::env::temp_dir().join(format!("plateau-export-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for (name, settings) in [
        ("aldermoor_subscribers.csv", Settings::default()),
        (
            "regional_adoption_wide.csv",
            Settings {
                series: Some(1),
                ..Settings::default()
            },
        ),
    ] {
        let text = std::fs::read_to_string(demo(name)).unwrap();
        let a = analyse(&text, &settings).unwrap();
        let path = dir.join(format!("table-{name}"));
        std::fs::write(&path, a.table_csv()).unwrap();
        let v = fit(&[&path.display().to_string()]);
        assert_eq!(v["n"], a.series.times.len(), "{name}");
        assert!(
            codes(&v).contains(&"export_forecast_rows_set_aside".to_string()),
            "{name}: {:?}",
            codes(&v)
        );
        let k = v["params"]["K"]["estimate"].as_f64().unwrap();
        assert_eq!(k, a.fit.param("K").unwrap().estimate, "{name}");
        // A calendar comes back as the same calendar; a plain-number
        // axis comes back named "time" (the export's fixed header).
        if a.series.axis.period().is_some() {
            assert_eq!(v["time_unit"], a.series.time_unit().as_str(), "{name}");
        } else {
            assert_eq!(v["time_unit"], "time", "{name}");
        }
    }
    // The original file through the CLI gives that K too.
    let original = fit(&[&demo("aldermoor_subscribers.csv")]);
    let again = fit(&[&dir
        .join("table-aldermoor_subscribers.csv")
        .display()
        .to_string()]);
    assert_eq!(original["params"]["K"], again["params"]["K"]);
    let _ = std::fs::remove_dir_all(&dir);
}

/// `plateau batch --csv` writes series names a spreadsheet would run as
/// formulas as quoted text with a leading `'` (OWASP "CSV injection");
/// its numbers, negative ones included, stay plain numbers.
#[test]
fn batch_csv_neutralises_formula_like_series_names() {
    // Exact logistic K = 100, r = 0.5, t0 = -10 (t = -25..4) under four
    // hostile names: t0 and its interval are negative numbers.
    let mut text = String::from("series,t,y\n");
    let names = [
        "\"=HYPERLINK(\"\"http://example.invalid\"\")\"",
        "+1",
        "@SUM(A1:A2)",
        "-east",
    ];
    for name in names {
        for i in -25..5 {
            let t = f64::from(i);
            let y = 100.0 / (1.0 + (-0.5 * (t + 10.0)).exp());
            text.push_str(&format!("{name},{t},{y}\n"));
        }
    }
    let out = plateau(&["batch", "-", "--csv"], Some(&text));
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let csv = String::from_utf8(out.stdout).unwrap();
    let lines: Vec<&str> = csv.lines().collect();
    assert_eq!(lines.len(), 5, "{csv}");
    let starts = [
        "\"'=HYPERLINK(\"\"http://example.invalid\"\")\",",
        "\"'+1\",",
        "\"'@SUM(A1:A2)\",",
        "\"'-east\",",
    ];
    for (line, start) in lines[1..].iter().zip(starts) {
        assert!(line.starts_with(start), "{line}");
        // The t0 cell (column 10) is a negative number, unquoted.
        let t0: f64 = line
            .rsplit_once(start)
            .unwrap()
            .1
            .split(',')
            .nth(8)
            .unwrap()
            .parse()
            .unwrap();
        assert!((t0 + 10.0).abs() < 1e-6, "{line}");
    }
}
