//! The wasm-bindgen face of Plateau: the only crate that knows about
//! JavaScript. The page's script creates one [`Workbench`], hands it the
//! pasted text and the settings on every change, shows the [`session::View`]
//! it returns, and asks it to draw each chart on a canvas or as SVG.
//!
//! Long-lived state (the last good analysis) stays here in Rust; JavaScript
//! only gets small results back. Errors cross as `JsError` with a message
//! for a human (naming the line for bad data), never as a panic; the start
//! function installs a panic hook that shows a visible message anyway.

pub mod session;

use plateau_chart::{ChartInput, ChartKind};
use plateau_core::bootstrap::Bootstrap;
use plotters::prelude::IntoDrawingArea;
use plotters_canvas::CanvasBackend;
use session::{Analysis, Settings};
use wasm_bindgen::prelude::*;
use web_sys::HtmlCanvasElement;

#[wasm_bindgen(start)]
pub fn start() {
    std::panic::set_hook(Box::new(|info| {
        let message = format!("Plateau hit an internal error and stopped: {info}");
        web_sys::console::error_1(&message.as_str().into());
        show_panic(&message);
    }));
}

/// Puts the panic message at the top of the page. Written with web-sys
/// rather than `inline_js`: a JS snippet would be a separate file, which the
/// single-file page cannot load under its CSP.
fn show_panic(message: &str) {
    let Some(document) = web_sys::window().and_then(|w| w.document()) else {
        return;
    };
    let (Ok(div), Some(body)) = (document.create_element("div"), document.body()) else {
        return;
    };
    div.set_id("panic");
    let _ = div.set_attribute("role", "alert");
    div.set_text_content(Some(&format!(
        "{message} Reload the page; your data is still in this browser's local storage."
    )));
    let _ = body.prepend_with_node_1(&div);
}

/// The invented demo series shown on a first visit.
#[wasm_bindgen(js_name = demoText)]
pub fn demo_text() -> String {
    session::DEMO_TEXT.to_string()
}

/// How the page labels the demo series.
#[wasm_bindgen(js_name = demoLabel)]
pub fn demo_label() -> String {
    session::DEMO_LABEL.to_string()
}

/// The invented several-series demo (four regions, wide layout).
#[wasm_bindgen(js_name = demoMultiText)]
pub fn demo_multi_text() -> String {
    session::DEMO_MULTI_TEXT.to_string()
}

/// How the page labels the several-series demo.
#[wasm_bindgen(js_name = demoMultiLabel)]
pub fn demo_multi_label() -> String {
    session::DEMO_MULTI_LABEL.to_string()
}

/// The sentence for the first setting out of its range (naming it as the
/// page labels it, with the allowed range), or `undefined` when every
/// setting is in range. The page shows it beside the settings.
#[wasm_bindgen(js_name = checkSettings)]
pub fn check_settings(settings: JsValue) -> Result<Option<String>, JsError> {
    let settings = read_settings(settings)?;
    Ok(session::check_settings(&settings).err().map(|e| e.message))
}

/// The page's settings object. Numbers typed on the page arrive as any
/// number and are checked by `session::check_settings`, which names the
/// setting; this only fails for a settings object the page itself did not
/// make (stored by another version, say).
fn read_settings(settings: JsValue) -> Result<Settings, JsError> {
    serde_wasm_bindgen::from_value(settings).map_err(|e| {
        JsError::new(&format!(
            "The stored settings could not be read ({e}); erase the stored data to start again."
        ))
    })
}

/// The page's state: the last analysis that succeeded.
#[wasm_bindgen]
#[derive(Default)]
pub struct Workbench {
    last: Option<Analysis>,
    /// The bootstrap of `last`'s fit, while it runs and after; dropped on
    /// every update.
    boot: Option<Bootstrap>,
}

#[wasm_bindgen]
impl Workbench {
    #[wasm_bindgen(constructor)]
    pub fn new() -> Workbench {
        Workbench::default()
    }

    /// Parses, fits the chosen model, compares all models and returns the
    /// view. On bad input returns an error and keeps the previous analysis.
    pub fn update(&mut self, text: &str, settings: JsValue) -> Result<JsValue, JsError> {
        let settings = read_settings(settings)?;
        let analysis = session::analyse(text, &settings).map_err(|e| JsError::new(&e.message))?;
        let view = serde_wasm_bindgen::to_value(&analysis.view)
            .map_err(|e| JsError::new(&e.to_string()))?;
        self.last = Some(analysis);
        self.boot = None;
        Ok(view)
    }

    /// Sets up a bootstrap of the current fit with the settings of the last
    /// update (B, seed, resampling); no replicate is run yet. Returns B.
    #[wasm_bindgen(js_name = bootstrapStart)]
    pub fn bootstrap_start(&mut self) -> Result<usize, JsError> {
        let b = session::start_bootstrap(self.analysis()?).map_err(|e| JsError::new(&e.message))?;
        let replicates = b.options().replicates;
        self.boot = Some(b);
        Ok(replicates)
    }

    /// Runs up to `k` more replicates; returns the replicates done so far.
    /// The page calls this in slices between frames.
    #[wasm_bindgen(js_name = bootstrapStep)]
    pub fn bootstrap_step(&mut self, k: usize) -> Result<usize, JsError> {
        let b = self
            .boot
            .as_mut()
            .ok_or_else(|| JsError::new("no bootstrap has been started"))?;
        Ok(b.step(k))
    }

    /// Progress and, when finished, the bootstrap intervals.
    #[wasm_bindgen(js_name = bootstrapView)]
    pub fn bootstrap_view(&self) -> Result<JsValue, JsError> {
        let a = self.analysis()?;
        let b = self
            .boot
            .as_ref()
            .ok_or_else(|| JsError::new("no bootstrap has been started"))?;
        serde_wasm_bindgen::to_value(&session::bootstrap_view(a, b))
            .map_err(|e| JsError::new(&e.to_string()))
    }

    /// Draws chart `chart` (a `ChartKind` name: "curve", "qq", "fisher-pry", …,
    /// "drift", or "overlay" for several series) on the
    /// canvas at its current pixel size (the page sets it for the device
    /// pixel ratio).
    pub fn draw(&self, chart: &str, canvas: HtmlCanvasElement) -> Result<(), JsError> {
        let backend = CanvasBackend::with_canvas_object(canvas)
            .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
        let area = backend.into_drawing_area();
        if chart == OVERLAY {
            with_overlay(self.analysis()?, |series| {
                plateau_chart::draw_overlay(&area, series)
            })
            .map_err(|e| JsError::new(&e.to_string()))?;
            return area.present().map_err(|e| JsError::new(&e.to_string()));
        }
        if chart == DRIFT {
            let analysis = self.analysis()?;
            with_drift_input(analysis, |input| {
                plateau_chart::draw_drift(&area, &analysis.drift, input)
            })
            .map_err(|e| JsError::new(&e.to_string()))?;
            return area.present().map_err(|e| JsError::new(&e.to_string()));
        }
        let (analysis, kind) = self.target(chart)?;
        let k = analysis.settings.fisher_pry_k;
        with_input(analysis, |input| match kind {
            // The Fisher–Pry view takes the K entered on the page.
            ChartKind::FisherPry => plateau_chart::draw_fisher_pry(&area, input, k),
            _ => plateau_chart::draw(kind, &area, input),
        })
        .map_err(|e| JsError::new(&e.to_string()))?;
        area.present().map_err(|e| JsError::new(&e.to_string()))
    }

    /// The numbers chart `chart` shows, as a table (its text alternative).
    #[wasm_bindgen(js_name = chartTable)]
    pub fn chart_table(&self, chart: &str) -> Result<JsValue, JsError> {
        serde_wasm_bindgen::to_value(&session::chart_table(self.analysis()?, chart))
            .map_err(|e| JsError::new(&e.to_string()))
    }

    /// The same chart as an SVG document.
    pub fn svg(&self, chart: &str, width: u32, height: u32) -> Result<String, JsError> {
        if chart == OVERLAY {
            return with_overlay(self.analysis()?, |series| {
                plateau_chart::render_overlay_svg(series, width, height)
            })
            .map_err(|e| JsError::new(&e.to_string()));
        }
        if chart == DRIFT {
            let analysis = self.analysis()?;
            return with_drift_input(analysis, |input| {
                plateau_chart::render_drift_svg(&analysis.drift, input, width, height)
            })
            .map_err(|e| JsError::new(&e.to_string()));
        }
        let (analysis, kind) = self.target(chart)?;
        let k = analysis.settings.fisher_pry_k;
        with_input(analysis, |input| match kind {
            ChartKind::FisherPry => plateau_chart::render_fisher_pry_svg(input, k, width, height),
            _ => plateau_chart::render_svg(kind, input, width, height),
        })
        .map_err(|e| JsError::new(&e.to_string()))
    }

    /// The JSON report, the schema of `plateau fit --json`.
    #[wasm_bindgen(js_name = reportJson)]
    pub fn report_json(&self) -> Result<String, JsError> {
        Ok(self.analysis()?.report_json())
    }

    /// The checks as JSON, the schema of `plateau diagnose --json`.
    #[wasm_bindgen(js_name = diagnoseJson)]
    pub fn diagnose_json(&self) -> Result<String, JsError> {
        Ok(self.analysis()?.diagnose_json())
    }

    /// With several series: the summary table as CSV (`plateau batch --csv`'s shape).
    #[wasm_bindgen(js_name = summaryCsv)]
    pub fn summary_csv(&self) -> Result<String, JsError> {
        self.analysis()?
            .summary_csv()
            .ok_or_else(|| JsError::new("the data hold a single series"))
    }

    /// Observed, fitted, forecast and 95% band as CSV.
    #[wasm_bindgen(js_name = tableCsv)]
    pub fn table_csv(&self) -> Result<String, JsError> {
        Ok(self.analysis()?.table_csv())
    }
}

impl Workbench {
    fn analysis(&self) -> Result<&Analysis, JsError> {
        self.last
            .as_ref()
            .ok_or_else(|| JsError::new("nothing has been fitted yet"))
    }

    fn target(&self, chart: &str) -> Result<(&Analysis, ChartKind), JsError> {
        let kind = ChartKind::ALL
            .into_iter()
            .find(|k| k.name() == chart)
            .ok_or_else(|| JsError::new(&format!("unknown chart {chart:?}")))?;
        Ok((self.analysis()?, kind))
    }
}

/// The name of the several-series overlay chart.
pub const OVERLAY: &str = "overlay";

/// Builds the overlay's input (every series that has a fit) from an
/// analysis; an error for a single series.
pub fn with_overlay<T>(
    a: &Analysis,
    f: impl FnOnce(&[plateau_chart::OverlaySeries]) -> Result<T, plateau_chart::ChartError>,
) -> Result<T, plateau_chart::ChartError> {
    let Some(m) = &a.multi else {
        return Err(plateau_chart::ChartError::InvalidInput(
            "the overlay needs several series".into(),
        ));
    };
    let series: Vec<plateau_chart::OverlaySeries> = (0..m.names.len())
        .filter_map(|i| {
            Some(plateau_chart::OverlaySeries {
                name: &m.names[i],
                times: &m.series[i].times,
                values: &m.values[i],
                fit: m.fits[i].as_ref()?,
            })
        })
        .collect();
    f(&series)
}

/// Builds the charts' input from an analysis.
pub fn with_input<T>(a: &Analysis, f: impl FnOnce(&ChartInput) -> T) -> T {
    let kind = a.series.axis;
    let format_time = move |t: f64| kind.format(t);
    let value_caption = a.study.fitted_value_name();
    let input = ChartInput {
        times: &a.series.times,
        values: &a.values,
        fit: &a.fit,
        horizon: Some(a.horizon_end),
        format_time: &format_time,
        time_caption: &a.series.time_name,
        value_caption: &value_caption,
        time_axis: Some(kind).filter(|a| a.period().is_some()),
    };
    f(&input)
}

/// The drift chart's name on the page (it is not a [`ChartKind`]: it draws
/// the prefix refits, not the fit).
const DRIFT: &str = "drift";

/// Builds the drift chart's input from an analysis.
pub fn with_drift_input<T>(a: &Analysis, f: impl FnOnce(&plateau_chart::DriftInput) -> T) -> T {
    let kind = a.series.axis;
    let format_time = move |t: f64| kind.format(t);
    let input = plateau_chart::DriftInput {
        format_time: &format_time,
        time_caption: &a.series.time_name,
        value_caption: &a.series.value_name,
        model: a.fit.model,
        time_axis: Some(kind).filter(|a| a.period().is_some()),
    };
    f(&input)
}
