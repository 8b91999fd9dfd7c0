//! The wasm-bindgen face of Plateau: the only crate that knows about
//! JavaScript. The page starts a worker that holds one [`Workbench`]: it
//! hands it the pasted text and the settings on every change, shows the
//! first [`session::View`] it returns (the fit, the curve chart), then asks
//! for each section the page shows ([`session::Section`]) and each visible
//! chart, drawn on an `OffscreenCanvas` ([`offscreen`]). The page's main
//! thread never fits: it keeps an instance of the same module only for the
//! demo texts and the settings check.
//!
//! Long-lived state (the last good analysis) stays here in Rust; JavaScript
//! only gets small results back. Errors cross as `JsError` with a message
//! for a human (naming the line for bad data), never as a panic; a panic's
//! message is kept for [`take_panic`], which the worker sends to the page.

pub mod offscreen;
pub mod session;

use offscreen::{Measured, OffscreenBackend};
use plateau_chart::{ChartInput, ChartKind};
use plateau_core::bootstrap::Bootstrap;
use plotters::prelude::{IntoDrawingArea, SVGBackend};
use session::{Analysis, Prepared, Section, Settings};
use std::sync::Mutex;
use wasm_bindgen::prelude::*;
use web_sys::OffscreenCanvas;

/// The last panic's message, until the worker takes it.
static PANIC: Mutex<Option<String>> = Mutex::new(None);

#[wasm_bindgen(start)]
pub fn start() {
    std::panic::set_hook(Box::new(|info| {
        let message = format!("Plateau hit an internal error and stopped: {info}");
        web_sys::console::error_1(&message.as_str().into());
        if let Ok(mut p) = PANIC.lock() {
            *p = Some(message);
        }
    }));
}

/// The message of the panic that stopped this instance, if one did (the
/// worker sends it to the page, which shows it at the top).
#[wasm_bindgen(js_name = takePanic)]
pub fn take_panic() -> Option<String> {
    PANIC.lock().ok().and_then(|mut p| p.take())
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

/// A file the user opened, from its bytes and name: `{ text, sheets,
/// sheet, label }`. A workbook (.xlsx, .xls, .ods) gives the text of the
/// 1-based `sheet` (else the first sheet with data) and every sheet's name;
/// a text file gives its text and no sheets. A workbook that cannot be
/// read (protected, damaged, an empty sheet, a formula without a saved
/// value) is an error whose message names the sheet and cell.
#[wasm_bindgen(js_name = openFile)]
pub fn open_file(bytes: &[u8], name: &str, sheet: Option<u32>) -> Result<JsValue, JsError> {
    let opened = session::open_file(bytes, name, sheet.map(|s| s as usize))
        .map_err(|e| JsError::new(&e.message))?;
    to_js(&opened).map_err(|e| JsError::new(&e.to_string()))
}

/// The worker's state: the text read for the next fit, the last analysis
/// that succeeded.
#[wasm_bindgen]
#[derive(Default)]
pub struct Workbench {
    read: Option<Prepared>,
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

    /// Reads the text with the settings (nothing fitted yet) and returns
    /// what the page says while it is fitted ("Fitting 10,000 points…").
    /// On bad input returns an error and keeps the previous analysis.
    pub fn read(&mut self, text: &str, settings: JsValue) -> Result<String, JsError> {
        let settings = read_settings(settings)?;
        let read = session::prepare(text, &settings).map_err(|e| JsError::new(&e.message))?;
        let fitting = read.fitting();
        self.read = Some(read);
        Ok(fitting)
    }

    /// Fits what [`Workbench::read`] read and returns the first view (the
    /// fit, its parameters and milestones); sections come from
    /// [`Workbench::section`]. On a failed fit returns an error and keeps
    /// the previous analysis.
    pub fn fit(&mut self) -> Result<JsValue, JsError> {
        let read = self
            .read
            .take()
            .ok_or_else(|| JsError::new("nothing has been read yet"))?;
        let analysis = read.analyse().map_err(|e| JsError::new(&e.message))?;
        let view = to_js(&analysis.view).map_err(|e| JsError::new(&e.to_string()))?;
        self.last = Some(analysis);
        self.boot = None;
        Ok(view)
    }

    /// [`Workbench::read`] then [`Workbench::fit`].
    pub fn update(&mut self, text: &str, settings: JsValue) -> Result<JsValue, JsError> {
        self.read(text, settings)?;
        self.fit()
    }

    /// One section of the last analysis ("comparison", "checks", "drift",
    /// "backtest"), tagged with its name.
    pub fn section(&self, name: &str) -> Result<JsValue, JsError> {
        let s = section_named(name)?;
        to_js(&self.analysis()?.section(s)).map_err(|e| JsError::new(&e.to_string()))
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
        to_js(&session::bootstrap_view(a, b)).map_err(|e| JsError::new(&e.to_string()))
    }

    /// Draws chart `chart` (a `ChartKind` name: "curve", "qq", "fisher-pry", …,
    /// "drift", or "overlay" for several series) on an offscreen canvas at
    /// its pixel size (the page sizes it for the device pixel ratio).
    pub fn draw(&self, chart: &str, canvas: OffscreenCanvas) -> Result<(), JsError> {
        let backend = OffscreenBackend::new(canvas)
            .ok_or_else(|| JsError::new("the canvas has no 2D context"))?;
        let area = backend.into_drawing_area();
        self.draw_on(chart, &area)?;
        area.present().map_err(|e| JsError::new(&e.to_string()))
    }

    /// The numbers chart `chart` shows, as a table (its text alternative).
    #[wasm_bindgen(js_name = chartTable)]
    pub fn chart_table(&self, chart: &str) -> Result<JsValue, JsError> {
        to_js(&session::chart_table(self.analysis()?, chart))
            .map_err(|e| JsError::new(&e.to_string()))
    }

    /// The same chart as an SVG document (text measured as on the canvas).
    pub fn svg(&self, chart: &str, width: u32, height: u32) -> Result<String, JsError> {
        let mut svg = String::new();
        {
            let backend = Measured::new(SVGBackend::with_string(&mut svg, (width, height)))
                .ok_or_else(|| JsError::new("no canvas to measure text with"))?;
            let area = backend.into_drawing_area();
            self.draw_on(chart, &area)?;
            area.present().map_err(|e| JsError::new(&e.to_string()))?;
        }
        Ok(svg)
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
    /// Draws `chart` on any plotters area.
    fn draw_on<DB: plotters::prelude::DrawingBackend>(
        &self,
        chart: &str,
        area: &plotters::prelude::DrawingArea<DB, plotters::coord::Shift>,
    ) -> Result<(), JsError> {
        let analysis = self.analysis()?;
        let drawn = if chart == OVERLAY {
            with_overlay(analysis, |series| plateau_chart::draw_overlay(area, series))
        } else if chart == DRIFT {
            with_drift_input(analysis, |input| {
                plateau_chart::draw_drift(area, analysis.drift(), input)
            })
        } else {
            let (_, kind) = self.target(chart)?;
            let k = analysis.settings.fisher_pry_k;
            with_input(analysis, |input| match kind {
                // The Fisher–Pry view takes the K entered on the page.
                ChartKind::FisherPry => plateau_chart::draw_fisher_pry(area, input, k),
                _ => plateau_chart::draw(kind, area, input),
            })
        };
        drawn.map_err(|e| JsError::new(&e.to_string()))
    }

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

fn section_named(name: &str) -> Result<Section, JsError> {
    Section::from_name(name).ok_or_else(|| JsError::new(&format!("unknown section {name:?}")))
}

/// What the page says while a section is computed, after the first answer
/// is shown ("Answer shown; comparing the models…").
#[wasm_bindgen(js_name = sectionWorking)]
pub fn section_working(name: &str) -> Result<String, JsError> {
    let s = section_named(name)?;
    Ok(format!("Answer shown; {}…", s.working()))
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

/// A view as plain JavaScript objects: maps (and the flattened reports,
/// which serde writes as maps) become objects, not `Map`s, so the page
/// reads every field the same way.
fn to_js<T: serde::Serialize + ?Sized>(value: &T) -> Result<JsValue, serde_wasm_bindgen::Error> {
    value.serialize(&serde_wasm_bindgen::Serializer::new().serialize_maps_as_objects(true))
}
