//! Each chart's numbers as a table, the charts' text alternative on the
//! page (shown in a `<details>` under each chart). Composed here, with
//! `plateau_study::numbers` and the data's own calendar.

use super::Analysis;
use plateau_core::analysis;
use plateau_core::diagnostics;
use plateau_study::numbers::{number, Precision};
use serde::Serialize;

/// A chart's numbers: a caption, column headers and rows of text.
#[derive(Debug, Clone, Default, Serialize, PartialEq)]
#[serde(rename_all = "camelCase")]
pub struct ChartTable {
    pub caption: String,
    pub headers: Vec<String>,
    pub rows: Vec<Vec<String>>,
}

fn band_text(b: Option<(f64, f64)>) -> String {
    b.map_or("–".into(), |(lo, hi)| {
        format!("{} … {}", number(lo), number(hi))
    })
}

/// The numbers behind `chart` (the names `Workbench::draw` takes).
pub fn chart_table(a: &Analysis, chart: &str) -> ChartTable {
    let axis = a.series.axis;
    let when = |t: f64| axis.format(t);
    let t = &a.series.times;
    let y = &a.values;
    let f = &a.fit;
    let time = a.series.time_name.clone();
    let value = a.series.value_name.clone();
    match chart {
        "curve" => {
            let mut rows: Vec<Vec<String>> = t
                .iter()
                .zip(y)
                .zip(&f.fitted)
                .map(|((&ti, &yi), &fi)| {
                    vec![
                        when(ti),
                        number(yi),
                        number(fi),
                        band_text(analysis::band(f, ti, 0.95)),
                    ]
                })
                .collect();
            let (_, last) = plateau_study::study::span(t);
            let step = super::typical_step(t);
            let mut k = 1.0;
            while step > 0.0 && last + k * step <= a.horizon_end + step * 1e-9 && k <= 1000.0 {
                let tf = last + k * step;
                rows.push(vec![
                    when(tf),
                    "(forecast)".into(),
                    number(f.predict(tf)),
                    band_text(analysis::band(f, tf, 0.95)),
                ]);
                k += 1.0;
            }
            ChartTable {
                caption: format!(
                    "{value} against {time}: observed, fitted curve (then forecast) and the 95% \
                     confidence band of the curve."
                ),
                headers: vec![
                    time,
                    format!("observed {value}"),
                    "fitted".into(),
                    "95% band".into(),
                ],
                rows,
            }
        }
        "residuals" => ChartTable {
            caption: "Residuals (observed minus fitted) against time.".into(),
            headers: vec![time, "residual".into()],
            rows: t
                .iter()
                .zip(y)
                .zip(&f.fitted)
                .map(|((&ti, &yi), &fi)| vec![when(ti), number(yi - fi)])
                .collect(),
        },
        "rate" => ChartTable {
            caption: "Change per period: observed, and the fitted rate dy/dt.".into(),
            headers: vec![time, "observed change".into(), "fitted rate".into()],
            rows: t
                .windows(2)
                .zip(y.windows(2))
                .map(|(tt, yy)| {
                    let dt = tt[1] - tt[0];
                    let obs = if dt > 0.0 {
                        number((yy[1] - yy[0]) / dt)
                    } else {
                        "–".into()
                    };
                    vec![when(tt[1]), obs, number(f.model.slope(&f.values(), tt[1]))]
                })
                .collect(),
        },
        "qq" => {
            let res = diagnostics::residuals_in_time_order(f, t, y);
            let qq = diagnostics::normal_qq(&res);
            ChartTable {
                caption: "Sorted residuals against the normal quantiles they would have if normal."
                    .into(),
                headers: vec!["normal quantile".into(), "residual".into()],
                rows: qq.map_or_else(Vec::new, |q| {
                    q.points
                        .iter()
                        .map(|p| vec![number(p.theoretical), number(p.sample)])
                        .collect()
                }),
            }
        }
        "drift" => ChartTable {
            caption: format!(
                "{} estimated from the data up to each cutoff, with its 95% interval.",
                f.model.saturation_name()
            ),
            headers: vec![
                "data up to".into(),
                "points".into(),
                "estimate".into(),
                "95% interval".into(),
            ],
            rows: a
                .drift()
                .iter()
                .map(|r| {
                    let (est, iv) = match &r.result {
                        Ok(d) => match d.params.first() {
                            // As the chart draws it: an undetermined level
                            // is only "at least", never its estimate.
                            Some(p) if d.saturation_at_least(p.name).is_some() => {
                                let lo = d.saturation_at_least(p.name).unwrap_or_default();
                                ("not determined".into(), format!("at least {}", number(lo)))
                            }
                            Some(p) => {
                                let dg = Precision::of_estimate(p.estimate, p.std_error);
                                let iv = match p.interval.map(|i| (i.lo, i.hi)) {
                                    Some((Some(lo), Some(hi))) => {
                                        format!("{} … {}", dg.show(lo), dg.show(hi))
                                    }
                                    Some((Some(lo), None)) => format!("at least {}", dg.show(lo)),
                                    _ => "not determined".into(),
                                };
                                (dg.show(p.estimate), iv)
                            }
                            None => ("–".into(), "–".into()),
                        },
                        Err(e) => ("no fit".into(), e.clone()),
                    };
                    vec![when(r.cutoff), r.m.to_string(), est, iv]
                })
                .collect(),
        },
        "fisher-pry" => {
            let k = a
                .settings
                .fisher_pry_k
                .or_else(|| f.model.saturation_level(&f.values()));
            ChartTable {
                caption: format!(
                    "ln(y / (K − y)) against time, for K = {}.",
                    k.map_or("–".into(), number)
                ),
                headers: vec![time, "ln(y / (K − y))".into()],
                rows: t
                    .iter()
                    .zip(y)
                    .map(|(&ti, &yi)| {
                        let v = k.map(|k| (yi / (k - yi)).ln()).filter(|v| v.is_finite());
                        vec![when(ti), v.map_or("–".into(), number)]
                    })
                    .collect(),
            }
        }
        "overlay" => ChartTable {
            caption: "Every series divided by its K against r (t − t0); the fitted parameters of \
                      each series (95% intervals)."
                .into(),
            headers: vec!["series".into(), "K".into(), "r".into(), "t0".into()],
            rows: a.view.multi.as_ref().map_or_else(Vec::new, |m| {
                m.summary
                    .iter()
                    .zip(&a.view.text.summary)
                    .map(|(s, x)| vec![s.series.clone(), x.k.clone(), x.r.clone(), x.t0.clone()])
                    .collect()
            }),
        },
        _ => ChartTable {
            caption: format!(
                "The data this chart is drawn from: {value} against {time}, observed and fitted."
            ),
            headers: vec![time, format!("observed {value}"), "fitted".into()],
            rows: t
                .iter()
                .zip(y)
                .zip(&f.fitted)
                .map(|((&ti, &yi), &fi)| vec![when(ti), number(yi), number(fi)])
                .collect(),
        },
    }
}
