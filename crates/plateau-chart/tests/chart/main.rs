//! Structural tests of the rendered charts: each chart is rendered to SVG
//! natively and the SVG text is checked for what must be on it (markers,
//! labels, figures), and degenerate inputs are checked to return an error
//! or a chart but never to panic.

use plateau_chart::{
    draw, format_value, linearise, plain_time, render_fisher_pry_svg, render_svg, ChartError,
    ChartInput, ChartKind, NOT_AVAILABLE_EXPONENTIAL,
};
use plateau_core::analysis::reflection;
use plateau_core::fit::{fit_xy, Fit, FitOptions};
use plateau_core::Model;
use plotters::prelude::*;
use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;
use rand_distr::{Distribution, Normal};

const W: u32 = 800;
const H: u32 = 500;

/// `n` noisy points of `model(p)` at t = 2000, 2001, …
fn series(model: Model, p: &[f64], n: usize, noise: f64, seed: u64) -> (Vec<f64>, Vec<f64>) {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let normal = Normal::new(0.0, noise).unwrap();
    let t: Vec<f64> = (0..n).map(|i| 2000.0 + i as f64).collect();
    let y = t
        .iter()
        .map(|&ti| model.eval(p, ti) + normal.sample(&mut rng))
        .collect();
    (t, y)
}

struct Case {
    t: Vec<f64>,
    y: Vec<f64>,
    fit: Fit,
}

impl Case {
    fn new(data: Model, fitted: Model, p: &[f64], n: usize, noise: f64) -> Case {
        let (t, y) = series(data, p, n, noise, 7);
        let fit = fit_xy(&t, &y, fitted, &FitOptions::default()).expect("fit");
        Case { t, y, fit }
    }

    fn input(&self) -> ChartInput<'_> {
        ChartInput {
            times: &self.t,
            values: &self.y,
            fit: &self.fit,
            horizon: Some(self.t.last().unwrap() + 8.0),
            format_time: &plain_time,
            time_caption: "year",
            value_caption: "users",
            time_axis: None,
        }
    }
}

fn logistic() -> Case {
    Case::new(
        Model::Logistic,
        Model::Logistic,
        &[2.5e6, 0.6, 2012.0],
        20,
        2.0e4,
    )
}

fn gompertz() -> Case {
    Case::new(
        Model::Gompertz,
        Model::Gompertz,
        &[8000.0, 0.35, 2010.0],
        24,
        60.0,
    )
}

/// y = 3 at t = 2000, growing 25% a year (a is y at t = 0 on the calendar axis).
fn exponential() -> Case {
    let a = 3.0 * (-0.25f64 * 2000.0).exp();
    Case::new(Model::Exponential, Model::Exponential, &[a, 0.25], 12, 0.5)
}

fn count(svg: &str, needle: &str) -> usize {
    svg.matches(needle).count()
}

fn render(kind: ChartKind, input: &ChartInput) -> String {
    let svg = render_svg(kind, input, W, H).expect("render");
    assert!(svg.contains("<svg"), "not an SVG document");
    assert!(svg.trim_end().ends_with("</svg>"), "SVG not closed");
    svg
}

#[test]
fn curve_chart_has_points_k_label_and_legend() {
    for case in [logistic(), gompertz()] {
        let input = case.input();
        let svg = render(ChartKind::Curve, &input);
        // One filled circle per observation plus the legend's sample marker.
        assert_eq!(count(&svg, "<circle"), case.t.len() + 1);
        let k = case.fit.param("K").unwrap().estimate;
        assert!(svg.contains(&format!("K = {}", format_value(k))), "K label");
        let name = case.fit.model.name();
        for text in [
            &format!("{name} fit") as &str,
            &format!("fitted {name}"),
            "forecast",
            "95% confidence band",
            "95% prediction band (new observation)",
            "observed",
            "year",
            "users",
            "t0 = ",
        ] {
            assert!(svg.contains(text), "{name}: missing text {text:?}");
        }
        let marker = if case.fit.model == Model::Logistic {
            "midpoint (t0, K/2)"
        } else {
            "inflection (t0, f(t0))"
        };
        assert!(svg.contains(marker));
        // The confidence and the prediction band are one polygon each.
        assert!(count(&svg, "<polygon") >= 2);
    }
}

#[test]
fn residual_chart_has_one_marker_per_point() {
    for case in [logistic(), gompertz()] {
        let svg = render(ChartKind::Residuals, &case.input());
        assert_eq!(count(&svg, "<circle"), case.t.len());
        assert!(svg.contains("±2σ"));
        assert!(svg.contains("residuals of the"));
    }
}

#[test]
fn symmetry_chart_shows_both_marker_sets_and_the_ratio() {
    for case in [logistic(), gompertz()] {
        let input = case.input();
        let svg = render(ChartKind::Reflection, &input);
        let n = case.t.len();
        // Observations as circles, reflections as triangles (SVG polygons),
        // each plus one legend sample.
        assert_eq!(count(&svg, "<circle"), n + 1);
        assert_eq!(count(&svg, "<polygon"), n + 1);
        let sym = reflection(&case.fit, &case.t, &case.y).unwrap();
        let ratio = sym.rms_ratio.expect("ratio");
        assert!(
            svg.contains(&format!("rms ratio = {}", format_value(ratio))),
            "ratio text"
        );
        let cue = if case.fit.model == Model::Logistic {
            "mirror each other"
        } else {
            "not point-symmetric"
        };
        assert!(svg.contains(cue), "meaning text");
    }
}

#[test]
fn exponential_symmetry_chart_says_not_available() {
    let case = exponential();
    let svg = render(ChartKind::Reflection, &case.input());
    assert!(NOT_AVAILABLE_EXPONENTIAL.contains("not available for the exponential model"));
    // The message is wrapped over lines; its key phrase stays on one.
    assert!(svg.contains("not available for the exponential"), "{svg}");
    // The other charts still work for the exponential (no K line, no midpoint).
    let svg = render(ChartKind::Curve, &case.input());
    assert!(!svg.contains("K = "));
    assert_eq!(count(&svg, "<circle"), case.t.len() + 1);
    render(ChartKind::Residuals, &case.input());
}

#[test]
fn sizes_scale_with_the_canvas() {
    let case = logistic();
    let input = case.input();
    let small = render_svg(ChartKind::Curve, &input, W, H).unwrap();
    let big = render_svg(ChartKind::Curve, &input, 2 * W, 2 * H).unwrap();
    let max_font = |svg: &str| {
        svg.split("font-size=\"")
            .skip(1)
            .filter_map(|s| s.split('"').next()?.parse::<f64>().ok())
            .fold(0.0, f64::max)
    };
    let radius = |svg: &str| {
        svg.split("<circle")
            .nth(1)
            .and_then(|s| s.split("r=\"").nth(1))
            .and_then(|s| s.split('"').next())
            .and_then(|s| s.parse::<f64>().ok())
            .unwrap()
    };
    assert!((max_font(&big) / max_font(&small) - 2.0).abs() < 0.05);
    assert!((radius(&big) / radius(&small) - 2.0).abs() < 0.3);
}

#[test]
fn draws_on_any_backend_area() {
    // Generic over DrawingBackend: three charts side by side in sub-areas.
    let case = gompertz();
    let input = case.input();
    let mut svg = String::new();
    {
        let n = ChartKind::ALL.len();
        let root = SVGBackend::with_string(&mut svg, (800 * n as u32, 500)).into_drawing_area();
        let parts = root.split_evenly((1, n));
        for (area, kind) in parts.iter().zip(ChartKind::ALL) {
            draw(kind, area, &input).unwrap();
        }
        root.present().unwrap();
    }
    assert!(
        svg.contains("gompertz fit")
            && svg.contains("residuals of the")
            && svg.contains("rms ratio")
            && svg.contains("straight-line view")
            && svg.contains("rate view")
    );
}

#[test]
fn degenerate_inputs_never_panic() {
    let case = logistic();
    let mut no_cov = case.fit.clone();
    no_cov.covariance = None;
    let one_t = [2005.0];
    let one_y = [1.0e5];
    let nan_y: Vec<f64> = case.y.iter().map(|_| f64::NAN).collect();
    let fmt = |t: f64| format!("{t}");
    let inputs: Vec<(&str, ChartInput)> = vec![
        (
            "one point",
            ChartInput {
                times: &one_t,
                values: &one_y,
                ..case.input()
            },
        ),
        (
            "no covariance",
            ChartInput {
                fit: &no_cov,
                ..case.input()
            },
        ),
        (
            "empty",
            ChartInput {
                times: &[],
                values: &[],
                ..case.input()
            },
        ),
        (
            "length mismatch",
            ChartInput {
                values: &case.y[1..],
                ..case.input()
            },
        ),
        (
            "all NaN",
            ChartInput {
                values: &nan_y,
                ..case.input()
            },
        ),
        (
            "horizon before data",
            ChartInput {
                horizon: Some(1900.0),
                ..case.input()
            },
        ),
        (
            "huge horizon",
            ChartInput {
                horizon: Some(1.0e6),
                ..case.input()
            },
        ),
        (
            "NaN horizon",
            ChartInput {
                horizon: Some(f64::NAN),
                format_time: &fmt,
                ..case.input()
            },
        ),
    ];
    for (what, input) in &inputs {
        for kind in ChartKind::ALL {
            for (w, h) in [(W, H), (0, 0), (1, 1), (48, 48), (60, 4000)] {
                match render_svg(kind, input, w, h) {
                    Ok(svg) => assert!(svg.contains("<svg"), "{what}"),
                    Err(e) => assert!(!e.to_string().is_empty(), "{what}"),
                }
            }
        }
    }
    // Specific outcomes the page relies on.
    let svg = render_svg(ChartKind::Curve, &inputs[1].1, W, H).unwrap();
    assert!(
        !svg.contains("95% confidence band"),
        "no band without covariance"
    );
    assert!(matches!(
        render_svg(ChartKind::Curve, &inputs[3].1, W, H),
        Err(ChartError::InvalidInput(_))
    ));
    assert!(matches!(
        render_svg(ChartKind::Curve, &case.input(), 0, 0),
        Err(ChartError::InvalidInput(_))
    ));
    // Exponential far beyond its data: the curve overflows to ∞ and is dropped.
    let exp = exponential();
    let far = ChartInput {
        horizon: Some(1.0e5),
        ..exp.input()
    };
    for kind in ChartKind::ALL {
        let _ = render_svg(kind, &far, W, H);
    }
}

/// [`render`] with the SVG's `&apos;` entity read back as `'`, for
/// comparing texts that contain an apostrophe.
fn render_text(kind: ChartKind, input: &ChartInput) -> String {
    render(kind, input).replace("&apos;", "'")
}

/// How many observations the straight-line view can show.
fn transformable(case: &Case) -> usize {
    case.y
        .iter()
        .filter(|&&y| linearise(&case.fit, y).is_some())
        .count()
}

#[test]
fn chart_names_include_the_new_views() {
    let names: Vec<&str> = ChartKind::ALL.iter().map(|k| k.name()).collect();
    assert_eq!(
        names,
        [
            "curve",
            "residuals",
            "symmetry",
            "linear",
            "rate",
            "qq",
            "fisher-pry"
        ],
        "names the page looks charts up by"
    );
}

#[test]
fn linear_chart_shows_transformed_points_the_line_and_the_caption() {
    for (case, caption, zero) in [
        (logistic(), "ln(y / (K − y))", "y = K/2"),
        (gompertz(), "−ln(−ln(y / K))", "y = K/e"),
    ] {
        let name = case.fit.model.name();
        let svg = render_text(ChartKind::Linear, &case.input());
        let shown = transformable(&case);
        // One circle per transformable observation plus the legend's sample.
        assert_eq!(count(&svg, "<circle"), shown + 1, "{name}");
        for text in [
            &format!("straight-line view, {name} fit") as &str,
            caption,
            zero,
            "fitted line r (t − t0)",
            "forecast",
            "observed, transformed",
            "year",
        ] {
            assert!(svg.contains(text), "{name}: missing text {text:?}");
        }
        let note = svg.contains("outside the transform's range");
        assert_eq!(
            note,
            shown < case.t.len(),
            "{name}: note iff points dropped"
        );

        // A point above the fitted K cannot be transformed: it is counted
        // on the chart instead of vanishing.
        let k = case.fit.param("K").unwrap().estimate;
        let mut t = case.t.clone();
        let mut y = case.y.clone();
        t.push(t.last().unwrap() + 1.0);
        y.push(1.2 * k);
        let input = ChartInput {
            times: &t,
            values: &y,
            ..case.input()
        };
        let svg = render_text(ChartKind::Linear, &input);
        assert_eq!(count(&svg, "<circle"), shown + 1, "{name}");
        let dropped = t.len() - shown;
        let phrase = if dropped == 1 {
            "1 point outside the transform's range is not shown".to_string()
        } else {
            format!("{dropped} points outside the transform's range are not shown")
        };
        assert!(svg.contains(&phrase), "{name}: {phrase:?}");
    }
}

#[test]
fn rate_chart_shows_one_marker_per_interval_and_the_peak() {
    for case in [logistic(), gompertz()] {
        let name = case.fit.model.name();
        let svg = render(ChartKind::Rate, &case.input());
        // One circle per pair of consecutive observations plus the legend's.
        assert_eq!(count(&svg, "<circle"), case.t.len() - 1 + 1, "{name}");
        let p = case.fit.values();
        for text in [
            &format!("rate view, {name} fit") as &str,
            "users per year",
            &format!("fitted {name} dy/dt"),
            "observed Δy/Δt",
            "forecast",
            &format!("at t0 = {}", plain_time(p[2])),
        ] {
            assert!(svg.contains(text), "{name}: missing text {text:?}");
        }
        if case.fit.model == Model::Logistic {
            let peak = format!("peak rK/4 = {}", format_value(p[0] * p[1] / 4.0));
            assert!(svg.contains(&peak), "{peak}");
        } else {
            assert!(svg.contains("peak rate at the inflection t0"));
        }
    }
    // Unsorted input: the rates are taken between neighbours in time.
    let case = logistic();
    let mut pairs: Vec<(f64, f64)> = case.t.iter().copied().zip(case.y.clone()).collect();
    pairs.reverse();
    let (t, y): (Vec<f64>, Vec<f64>) = pairs.into_iter().unzip();
    let input = ChartInput {
        times: &t,
        values: &y,
        ..case.input()
    };
    let sorted = render(ChartKind::Rate, &case.input());
    let reversed = render(ChartKind::Rate, &input);
    assert_eq!(sorted, reversed, "input order must not matter");
}

#[test]
fn exponential_linear_and_rate_charts() {
    let case = exponential();
    let svg = render_text(ChartKind::Linear, &case.input());
    assert!(svg.contains("log scale view, exponential fit"));
    assert!(svg.contains("ln y"));
    assert!(svg.contains("fitted line ln a + r t"));
    assert!(!svg.contains("z = 0"), "no center line for the exponential");
    assert_eq!(count(&svg, "<circle"), transformable(&case) + 1);

    let svg = render(ChartKind::Rate, &case.input());
    assert!(svg.contains("users per year"));
    assert!(!svg.contains("peak"), "the exponential has no peak");
    assert_eq!(count(&svg, "<circle"), case.t.len());

    // A negative value cannot go on a log scale: counted, not drawn.
    let mut y = case.y.clone();
    y[0] = -1.0;
    let input = ChartInput {
        values: &y,
        ..case.input()
    };
    let svg = render_text(ChartKind::Linear, &input);
    assert!(svg.contains("outside the transform's range"));
}

#[test]
fn degenerate_inputs_to_the_new_views_never_panic() {
    let case = logistic();
    let exp = exponential();
    let one_t = [2005.0];
    let one_y = [1.0e5];
    let same_t = [2005.0; 4];
    let flat_y = [1.0e5; 4];
    let k = case.fit.param("K").unwrap().estimate;
    let above = [1.5 * k; 4];
    let far = |t: f64| format!("{t:.0}");
    let inputs: Vec<(&str, ChartInput)> = vec![
        (
            "one point",
            ChartInput {
                times: &one_t,
                values: &one_y,
                ..case.input()
            },
        ),
        (
            "zero time span",
            ChartInput {
                times: &same_t,
                values: &flat_y,
                ..case.input()
            },
        ),
        (
            "every point above K",
            ChartInput {
                times: &case.t[..4],
                values: &above,
                ..case.input()
            },
        ),
        (
            "exponential far forecast",
            ChartInput {
                horizon: Some(1.0e5),
                format_time: &far,
                ..exp.input()
            },
        ),
    ];
    for (what, input) in &inputs {
        for kind in [ChartKind::Linear, ChartKind::Rate] {
            for (w, h) in [(W, H), (0, 0), (0, H), (W, 0), (1, 1), (48, 48)] {
                match render_svg(kind, input, w, h) {
                    Ok(svg) => assert!(svg.contains("<svg"), "{what}"),
                    Err(e) => assert!(!e.to_string().is_empty(), "{what}"),
                }
            }
        }
    }
    // A zero-area drawing is refused, not drawn.
    for kind in [ChartKind::Linear, ChartKind::Rate] {
        assert!(matches!(
            render_svg(kind, &case.input(), 0, 0),
            Err(ChartError::InvalidInput(_))
        ));
    }
    // One point still gives a chart: nothing to difference, but the line
    // and the fitted rate are drawn.
    let svg = render(ChartKind::Rate, &inputs[0].1);
    assert_eq!(count(&svg, "<circle"), 1, "only the legend sample");
    let svg = render_text(ChartKind::Linear, &inputs[2].1);
    assert!(svg.contains("4 points outside the transform's range are not shown"));
    assert_eq!(count(&svg, "<circle"), 1, "only the legend sample");
}

#[test]
fn drift_chart_shows_one_marker_and_bar_per_prefix() {
    use plateau_chart::{render_drift_svg, DriftInput};
    use plateau_core::history::drift;
    let case = logistic();
    let rows = drift(&case.t, &case.y, Model::Logistic, &FitOptions::default());
    let input = DriftInput {
        format_time: &plain_time,
        time_caption: "year",
        value_caption: "users",
        time_axis: None,
        model: Model::Logistic,
    };
    let svg = render_drift_svg(&rows, &input, W, H).expect("render");
    let fitted = rows.iter().filter(|r| r.result.is_ok()).count();
    let open = rows
        .iter()
        .filter_map(|r| r.result.as_ref().ok())
        .any(|f| f.saturation_at_least("K").is_some());
    // One circle per fitted prefix plus the legend's samples (filled, and
    // open when some K is not determined).
    assert_eq!(count(&svg, "<circle"), fitted + 1 + usize::from(open));
    let k = case.fit.param("K").unwrap().estimate;
    for text in [
        "K as the data arrived (logistic)",
        "95% interval",
        &format!("all data: K = {}", format_value(k)) as &str,
        "cutoff: last year used",
        "K (users)",
    ] {
        assert!(svg.contains(text), "missing {text:?}");
    }
    // Too few rows: a message, not a panic.
    let svg = render_drift_svg(&rows[..1], &input, W, H).unwrap();
    assert!(svg.contains("Too few prefixes"));
    assert!(render_drift_svg(&rows, &input, 1, 1).is_err());
}

/// Undetermined K on the drift chart: the first weeks of the Aldermoor
/// demo (before its inflection) leave K open at the early cutoffs, where
/// the estimate runs to tens of millions. Each such cutoff is an open
/// marker with an upward arrow at what K is at least, named in the legend;
/// the value axis follows the drawn values (no tick near the meaningless
/// estimates), and every label lies inside the drawing.
#[test]
fn drift_chart_draws_an_undetermined_k_as_a_lower_bound() {
    use plateau_chart::{render_drift_svg, DriftInput};
    use plateau_core::fit::IntervalMethod;
    use plateau_core::history::{drift_with, DriftOptions};
    let text = include_str!("../../../../demo-data/aldermoor_subscribers.csv");
    let series = plateau_core::parse_series(text, &Default::default()).unwrap();
    for (n, method) in [
        (14, IntervalMethod::Asymptotic),
        (30, IntervalMethod::Asymptotic),
        (20, IntervalMethod::Profile),
    ] {
        let (t, y) = (&series.times[..n], &series.values[..n]);
        let opts = FitOptions {
            intervals: method,
            ..FitOptions::default()
        };
        let rows = drift_with(t, y, Model::Logistic, &opts, &DriftOptions::default()).rows;
        let fits: Vec<_> = rows.iter().filter_map(|r| r.result.as_ref().ok()).collect();
        let open = fits
            .iter()
            .filter(|f| f.saturation_at_least("K").is_some())
            .count();
        assert!(open > 0, "n = {n}: some early K not determined");
        let meaningless = fits
            .iter()
            .filter(|f| f.saturation_at_least("K").is_some())
            .map(|f| f.params[0].estimate)
            .fold(0.0, f64::max);
        let drawn_max = fits
            .iter()
            .map(|f| f.saturation_at_least("K").unwrap_or(f.params[0].estimate))
            .fold(0.0, f64::max);
        let input = DriftInput {
            format_time: &plain_time,
            time_caption: "week",
            value_caption: "subscribers",
            time_axis: None,
            model: Model::Logistic,
        };
        let svg = render_drift_svg(&rows, &input, W, H).expect("render");
        // One open circle per undetermined cutoff, plus the legend's.
        let open_circles = svg
            .lines()
            .filter(|l| l.contains("<circle") && l.contains("fill=\"none\""))
            .count();
        assert_eq!(open_circles, open + 1, "n = {n}");
        assert!(svg.contains("K not determined: at least"));
        // Each open marker has its arrow: a vertical stem and a head.
        let stems = svg
            .lines()
            .filter(|l| l.contains("<polyline") && l.contains("stroke-width=\"2\""))
            .count();
        assert!(stems >= 2 * (open + 1), "n = {n}: {stems} arrow strokes");
        // The value axis: tick labels are numbers at most ~1.5 times the
        // largest value drawn, far below the meaningless estimates.
        let ticks: Vec<f64> = svg
            .split("text-anchor=\"end\"")
            .skip(1)
            .filter_map(|s| {
                let body = s.split('>').nth(1)?.split('<').next()?;
                body.replace(',', "").trim().parse::<f64>().ok()
            })
            .collect();
        assert!(!ticks.is_empty());
        let top = ticks.iter().cloned().fold(f64::MIN, f64::max);
        assert!(
            top <= 1.5 * drawn_max && top < meaningless,
            "n = {n}: top tick {top}, drawn {drawn_max}, estimate {meaningless}"
        );
        // Labels inside the drawing: start-anchored text fits to the right
        // edge (0.6 em a character, generous for sans-serif digits), middle
        // anchored text on both sides, end-anchored text to the left edge.
        for piece in svg.split("<text ").skip(1) {
            let piece = format!(" {piece}");
            let num = |key: &str| -> f64 {
                let v = piece.split(key).nth(1).unwrap().split('"').nth(1).unwrap();
                v.parse().unwrap()
            };
            let (x, size) = (num(" x="), num("font-size="));
            let body = piece.split('>').nth(1).unwrap().split('<').next().unwrap();
            let width = 0.6 * size * body.chars().count() as f64;
            let (lo, hi) = if piece.contains("text-anchor=\"start\"") {
                (x, x + width)
            } else if piece.contains("text-anchor=\"end\"") {
                (x - width, x)
            } else {
                (x - width / 2.0, x + width / 2.0)
            };
            if piece.contains("rotate(") {
                continue;
            }
            assert!(
                lo >= 0.0 && hi <= f64::from(W),
                "n = {n}: {body:?} spans {lo:.0}..{hi:.0} of {W}"
            );
        }
    }
}

/// The Q-Q chart: one marker per residual (plus the legend's), its
/// theoretical quantiles symmetric about zero, and the correlation printed.
#[test]
fn qq_chart_has_one_marker_per_residual_and_the_verdict() {
    for case in [logistic(), gompertz(), exponential()] {
        let svg = render_text(ChartKind::Qq, &case.input());
        let name = case.fit.model.name();
        assert_eq!(count(&svg, "<circle"), case.t.len() + 1, "{name}");
        for text in [
            "normal Q-Q plot",
            "standard normal quantile",
            "Q-Q correlation",
            "least-squares line",
        ] {
            assert!(svg.contains(text), "{name}: missing {text:?}");
        }
        assert!(
            svg.contains("Jarque–Bera") || svg.contains("too few"),
            "{name}"
        );
    }
}

/// The Fisher–Pry chart with an entered K: logistic data with their true K
/// read as straight, the same data with K set 40% too high as curved (an
/// analytic fact of the transform: K too high bends the late points down).
#[test]
fn fisher_pry_chart_with_an_entered_k() {
    let case = logistic();
    let svg = render_fisher_pry_svg(&case.input(), Some(2.5e6), W, H)
        .unwrap()
        .replace("&apos;", "'");
    assert!(
        svg.contains("Fisher–Pry view, K = 2,500,000 (entered)"),
        "{svg}"
    );
    assert!(svg.contains("straight line"), "logistic data, true K");
    let svg = render_fisher_pry_svg(&case.input(), Some(3.5e6), W, H).unwrap();
    assert!(svg.contains("bend downward"), "K too high");
    // Through the dispatcher: the fitted K.
    let svg = render_text(ChartKind::FisherPry, &case.input());
    assert!(svg.contains("(fitted)"));
    // K below the data: the dropped points are counted.
    let svg = render_fisher_pry_svg(&case.input(), Some(1.5e6), W, H).unwrap();
    assert!(
        svg.contains("outside 0 &lt; y &lt; K not shown")
            || svg.contains("outside 0 < y < K not shown")
    );
    // The exponential has no K: a message, unless one is entered.
    let exp = exponential();
    let svg = render_text(ChartKind::FisherPry, &exp.input());
    assert!(svg.contains("needs a saturation level K"));
}

/// Bass (adoption peak marked at t*, level m) and bi-logistic (level
/// K1 + K2): every chart draws; the views that do not apply say so.
#[test]
fn bass_and_bilogistic_charts_draw() {
    let bass = Case::new(
        Model::Bass,
        Model::Bass,
        &[5000.0, 0.01, 0.45, 1999.5],
        24,
        20.0,
    );
    let svg = render(ChartKind::Curve, &bass.input());
    let m = bass.fit.values()[0];
    assert!(svg.contains(&format!("m = {}", format_value(m))), "m label");
    assert!(svg.contains("peak adoption (t*, N(t*))") && svg.contains("t* = "));
    let svg = render(ChartKind::Rate, &bass.input());
    assert!(svg.contains("m(p+q)²/(4q) = "), "peak rate label");
    let svg = render(ChartKind::Linear, &bass.input());
    assert!(svg.contains("ln((y + m p/q) / (m − y))"));
    let svg = render(ChartKind::Reflection, &bass.input());
    assert!(svg.contains("does not apply"), "{svg}");
    let svg = render(ChartKind::Residuals, &bass.input());
    assert_eq!(count(&svg, "<circle"), bass.t.len());

    let two = Case::new(
        Model::Bilogistic,
        Model::Bilogistic,
        &[3000.0, 0.6, 2006.0, 2000.0, 0.5, 2018.0],
        30,
        20.0,
    );
    let svg = render(ChartKind::Curve, &two.input());
    assert!(svg.contains("K1 + K2 = "));
    assert_eq!(count(&svg, "<circle"), two.t.len() + 1);
    for kind in [ChartKind::Linear, ChartKind::Reflection] {
        let svg = render(kind, &two.input());
        assert!(svg.contains("does not apply"), "{kind:?}");
    }
    render(ChartKind::Rate, &two.input());
    render(ChartKind::Residuals, &two.input());
}

/// Several logistic series with different K, r and t0: normalised by
/// their own fits they all lie near the standard logistic (analytic fact:
/// y / K = 1 / (1 + e^(−r (t − t0))) for every logistic).
#[test]
fn overlay_puts_every_series_on_the_reference_curve() {
    use plateau_chart::{normalise, render_overlay_svg, OverlaySeries};
    let cases: Vec<Case> = [
        [1000.0, 0.5, 2010.0],
        [40.0, 1.2, 2008.0],
        [2.5e6, 0.3, 2015.0],
    ]
    .iter()
    .map(|p| Case::new(Model::Logistic, Model::Logistic, p, 30, p[0] * 0.01))
    .collect();
    for c in &cases {
        for (&t, &y) in c.t.iter().zip(&c.y) {
            let (x, v) = normalise(&c.fit, t, y).unwrap();
            let reference = 1.0 / (1.0 + (-x).exp());
            assert!((v - reference).abs() < 0.05, "{x} {v} {reference}");
        }
    }
    let names = ["north", "south", "metro"];
    let series: Vec<OverlaySeries> = cases
        .iter()
        .zip(names)
        .map(|(c, name)| OverlaySeries {
            name,
            times: &c.t,
            values: &c.y,
            fit: &c.fit,
        })
        .collect();
    let svg = render_overlay_svg(&series, W, H).unwrap();
    std::fs::write(std::env::temp_dir().join("plateau-overlay.svg"), &svg).unwrap();
    for name in names {
        assert!(svg.contains(&format!("\n{name}\n")), "legend names {name}");
    }
    assert!(svg.contains("logistic 1 / (1 + e^−x)"));
    assert!(svg.contains("r (t − t0)") && svg.contains("y / K"));
    // Every observation within the view (|x| <= 10) drawn as a marker
    // (circles for the first 8 series), plus the legend's 3.
    let inside = cases
        .iter()
        .flat_map(|c| {
            c.t.iter()
                .zip(&c.y)
                .map(|(&t, &y)| normalise(&c.fit, t, y).unwrap())
        })
        .filter(|(x, _)| x.abs() <= 10.0)
        .count();
    assert!(inside > 60 && inside < 90, "{inside}");
    assert_eq!(svg.matches("<circle").count(), inside + 3);

    // An exponential fit has no K: a message instead of an empty chart.
    let t: Vec<f64> = (0..20).map(f64::from).collect();
    let y: Vec<f64> = t
        .iter()
        .map(|t| 5.0 * (0.2 * t).exp() + (3.0 * t).sin() * 0.1)
        .collect();
    let fit = fit_xy(&t, &y, Model::Exponential, &FitOptions::default()).unwrap();
    let only = [OverlaySeries {
        name: "early",
        times: &t,
        values: &y,
        fit: &fit,
    }];
    let svg = render_overlay_svg(&only, W, H).unwrap();
    assert!(svg.contains("needs a model with K"));
}

/// Replicates (several values at one time) are drawn one marker each on
/// the curve, residual and symmetry charts, and the symmetry figure still
/// has its ratio.
#[test]
fn replicates_are_drawn_one_marker_each() {
    let (t1, y1) = series(Model::Logistic, &[1000.0, 0.35, 2015.0], 30, 15.0, 11);
    let (_, y2) = series(Model::Logistic, &[1000.0, 0.35, 2015.0], 30, 15.0, 12);
    let t: Vec<f64> = t1.iter().chain(&t1).copied().collect();
    let y: Vec<f64> = y1.iter().chain(&y2).copied().collect();
    let fit = fit_xy(&t, &y, Model::Logistic, &FitOptions::default()).expect("fit");
    let case = Case { t, y, fit };
    let input = case.input();
    // Plus one legend sample on the curve and symmetry charts.
    for (kind, legend) in [
        (ChartKind::Curve, 1),
        (ChartKind::Residuals, 0),
        (ChartKind::Reflection, 1),
    ] {
        let svg = render(kind, &input);
        assert_eq!(count(&svg, "<circle"), 60 + legend, "{kind:?}");
    }
    let sym = reflection(&case.fit, &case.t, &case.y).unwrap();
    assert_eq!(sym.reflected.len(), 60);
    assert!(sym.rms_ratio.is_some());
}

/// The texts of an SVG's `<text>` elements, trimmed.
fn svg_texts(svg: &str) -> Vec<String> {
    svg.split("<text")
        .skip(1)
        .filter_map(|s| {
            let body = s.split_once('>')?.1;
            Some(body.split('<').next()?.trim().to_string())
        })
        .collect()
}

/// Daily data over two years: every chart's time ticks fall on the 1st of
/// a month (calendar boundaries, chrono's dates via the axis' text), and
/// the rate view is labelled per day, the axis' period.
#[test]
fn dated_axes_tick_on_calendar_boundaries_and_rates_are_per_period() {
    let mut text = String::from("date,v\n");
    let start = chrono::NaiveDate::from_ymd_opt(2022, 1, 3).unwrap();
    for i in 0..700 {
        let d = start + chrono::Days::new(i);
        let v = 500.0 / (1.0 + (-(i as f64 - 350.0) / 60.0).exp());
        text.push_str(&format!("{},{v:.3}\n", d.format("%Y-%m-%d")));
    }
    let s = plateau_core::parse_series(&text, &Default::default()).unwrap();
    assert_eq!(s.time_unit(), "day");
    let fit = plateau_core::fit(&s, Model::Logistic, &FitOptions::default()).unwrap();
    let axis = s.axis;
    let fmt = move |t: f64| axis.format(t);
    let input = ChartInput {
        times: &s.times,
        values: &s.values,
        fit: &fit,
        horizon: None,
        format_time: &fmt,
        time_caption: "date",
        value_caption: "users",
        time_axis: Some(axis),
    };
    for kind in [ChartKind::Curve, ChartKind::Residuals, ChartKind::Rate] {
        let svg = render_svg(kind, &input, W, H).unwrap();
        let dates: Vec<String> = svg_texts(&svg)
            .into_iter()
            .filter(|t| t.len() == 10 && t.as_bytes()[4] == b'-' && t.as_bytes()[7] == b'-')
            .collect();
        assert!(dates.len() >= 2, "{kind:?}: {dates:?}");
        for d in &dates {
            assert!(d.ends_with("-01"), "{kind:?}: {dates:?}");
        }
        if kind == ChartKind::Rate {
            assert!(
                svg_texts(&svg).iter().any(|t| t == "users per day"),
                "{svg}"
            );
        }
    }
}
