// Plateau's page wiring. This script only moves text and settings between
// the DOM, localStorage and the Rust Workbench, sizes canvases for the
// device pixel ratio and triggers downloads; parsing, fitting, numbers and
// drawing are all Rust. It is inlined after the wasm-bindgen glue (which
// defines initSync and Workbench) and WASM_BASE64 by `cargo xtask dist`.

const STORE_KEY = "plateau.workspace.v1";
// This tab's own work while it is not saved because another tab changed
// the stored work: per tab (sessionStorage), so a reload of this tab gets
// it back, and no other tab sees it.
const TAB_KEY = "plateau.tab.v1";
const $ = (id) => document.getElementById(id);

function wasmBytes() {
  const bin = atob(WASM_BASE64);
  const bytes = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) bytes[i] = bin.charCodeAt(i);
  return bytes;
}

initSync({ module: wasmBytes() });
const bench = new Workbench();

const DEFAULTS = {
  model: "logistic", fixedK: null, horizon: 12, perPeriod: false,
  timeColumn: null, valueColumn: null, share: 90, level: null, fisherPryK: null,
  bootstrap: false, resampling: "residual", replicates: 1000, seed: 20240601,
  errorModel: "additive", increments: false,
  layout: null, series: null,
};

// Two tabs of the page share localStorage. Each write carries a revision
// (this tab's id and a count); a tab saves only over the revision it last
// read or wrote. When another tab has written (the `storage` event says
// so, and the check before each save catches a missed event), this tab
// stops saving, keeps its own work, and shows a notice with the choice:
// load the other tab's work, or save this tab's over it.
const TAB_ID = Math.random().toString(36).slice(2, 10);
let saves = 0;
// The revision of the stored work this tab last read or wrote (null: none).
let seenRev = null;
// null, or why this tab is not saving: "changed" or "erased" by another tab.
let conflict = null;

let state = restore();
let view = null;

function readJson(storage, key) {
  try {
    return JSON.parse(storage.getItem(key) || "null");
  } catch (_) {
    return null; // unreadable storage: as if empty
  }
}

function revOf(stored) {
  return stored ? String(stored.rev ?? "") : null;
}

function stateOf(saved) {
  return { text: saved.text, settings: { ...DEFAULTS, ...saved.settings }, demo: saved.demo === "multi" ? "multi" : !!saved.demo };
}

function restore() {
  const saved = readJson(localStorage, STORE_KEY);
  seenRev = revOf(saved);
  const own = readJson(sessionStorage, TAB_KEY);
  if (own && typeof own.text === "string") {
    // This tab was reloaded while not saving: its own work, and the notice.
    seenRev = own.seenRev ?? null;
    conflict = own.conflict || "changed";
    return stateOf(own);
  }
  if (saved && typeof saved.text === "string") return stateOf(saved);
  return demoState();
}

function demoState() {
  return { text: demoText(), settings: { ...DEFAULTS }, demo: true };
}

function demoMultiState() {
  return { text: demoMultiText(), settings: { ...DEFAULTS }, demo: "multi" };
}

function save() {
  if (!conflict) {
    const current = revOf(readJson(localStorage, STORE_KEY));
    if (current !== seenRev) conflict = current === null ? "erased" : "changed";
  }
  if (conflict) {
    keepInTab();
    return;
  }
  write();
}

// Writes this tab's work over whatever is stored.
function write() {
  const rev = `${TAB_ID}.${++saves}`;
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify({ ...state, rev }));
    seenRev = rev;
    $("store-status").textContent = "saved in this browser";
  } catch (e) {
    $("store-status").textContent = "could not save: " + e.message;
  }
}

// Another tab changed or erased the stored work: keep this tab's work in
// this tab only, and say so.
function keepInTab() {
  try {
    sessionStorage.setItem(TAB_KEY, JSON.stringify({ ...state, conflict, seenRev }));
  } catch (_) { /* the notice still says this tab is not saving */ }
  showConflict();
}

function showConflict() {
  $("tab-notice").hidden = !conflict;
  $("tab-notice").dataset.kind = conflict || "";
  $("tab-notice-changed").hidden = conflict !== "changed";
  $("tab-notice-erased").hidden = conflict !== "erased";
  $("tab-load").hidden = conflict !== "changed";
  if (conflict) $("store-status").textContent = "not saved: another tab changed the stored work (see the notice at the top)";
}

function endConflict() {
  conflict = null;
  sessionStorage.removeItem(TAB_KEY);
  showConflict();
}

function storageChanged(ev) {
  // key null: another tab cleared all of this page's storage.
  if (ev.storageArea !== localStorage || (ev.key !== STORE_KEY && ev.key !== null)) return;
  const current = revOf(readJson(localStorage, STORE_KEY));
  if (current === seenRev || conflict) return;
  conflict = current === null ? "erased" : "changed";
  keepInTab();
}

function numberOrNull(el) {
  const v = el.value.trim();
  if (v === "") return null;
  const x = Number(v);
  return Number.isFinite(x) ? x : NaN;
}

function readControls() {
  const s = state.settings;
  s.model = $("model").value;
  s.fixedK = numberOrNull($("fixed-k"));
  s.horizon = numberOrNull($("horizon")) ?? 0;
  s.share = numberOrNull($("share")) ?? 90;
  s.level = numberOrNull($("level"));
  s.fisherPryK = numberOrNull($("fisher-pry-k"));
  s.perPeriod = $("accum-per-period").checked;
  s.errorModel = $("error-model").value;
  s.increments = $("increments").checked;
  s.layout = $("layout").value || null;
  s.series = $("multi").hidden ? null : Number($("series-select").value);
  s.bootstrap = $("bootstrap").checked;
  s.resampling = $("resampling").value;
  // As typed; Rust checks the range and names the setting (empty: the default).
  s.replicates = numberOrNull($("replicates"));
  s.seed = numberOrNull($("seed"));
  if (!$("columns").hidden) {
    s.timeColumn = Number($("time-col").value);
    s.valueColumn = Number($("value-col").value);
  }
}

function writeControls() {
  const s = state.settings;
  $("data").value = state.text;
  $("model").value = s.model;
  $("fixed-k").value = s.fixedK ?? "";
  $("horizon").value = s.horizon;
  $("share").value = s.share;
  $("level").value = s.level ?? "";
  $("fisher-pry-k").value = s.fisherPryK ?? "";
  $("accum-per-period").checked = !!s.perPeriod;
  $("accum-cumulative").checked = !s.perPeriod;
  $("error-model").value = s.errorModel;
  $("increments").checked = !!s.increments;
  $("layout").value = s.layout ?? "";
  $("bootstrap").checked = !!s.bootstrap;
  $("resampling").value = s.resampling;
  $("replicates").value = s.replicates ?? "";
  $("seed").value = s.seed ?? "";
}

function cell(row, text, cls) {
  const td = document.createElement("td");
  td.textContent = text;
  if (cls) td.className = cls;
  row.appendChild(td);
}

function fillBody(table, rows) {
  const body = $(table).tBodies[0];
  body.replaceChildren(...rows);
}

// The answer card: every word and number comes from Rust
// (plateau_study::answer); this only places them.
function showAnswer(v) {
  const a = v.answer;
  $("answer").hidden = !a;
  if (!a) return;
  $("answer-lines").replaceChildren(...a.lines.map((l) => {
    const div = document.createElement("div");
    div.className = "answer-line";
    div.dataset.key = l.key;
    if (l.number != null) div.dataset.value = String(l.number);
    const dt = document.createElement("dt");
    dt.textContent = l.label;
    const dd = document.createElement("dd");
    const value = document.createElement("span");
    value.className = "answer-value";
    value.textContent = l.value;
    dd.append(value);
    if (l.detail) {
      const detail = document.createElement("span");
      detail.className = "answer-detail";
      detail.textContent = l.detail;
      dd.append(detail);
    }
    div.append(dt, dd);
    return div;
  }));
  $("answer-trust").textContent = a.trust.text;
  $("answer-trust").dataset.level = a.trust.level;
  $("answer-caution").textContent = a.caution;
}

// The data input folds to one line once data are in; "Change the data" opens it.
let inputOpen = false;
function showInput() {
  $("intake-body").hidden = !inputOpen;
  $("edit-data").setAttribute("aria-expanded", String(inputOpen));
  $("edit-data").textContent = inputOpen ? "Hide the data" : "Change the data";
}

// A chart's numbers (its text alternative), as a table made from Rust's rows.
function fillChartTable(details) {
  const chart = details.dataset.chart;
  const holder = details.querySelector(".alt-text");
  let t;
  try {
    t = bench.chartTable(chart);
  } catch (_) {
    holder.textContent = "";
    return;
  }
  const table = document.createElement("table");
  const cap = document.createElement("caption");
  cap.textContent = t.caption;
  const head = document.createElement("thead");
  const hr = document.createElement("tr");
  for (const h of t.headers) {
    const th = document.createElement("th");
    th.scope = "col";
    th.textContent = h;
    hr.append(th);
  }
  head.append(hr);
  const body = document.createElement("tbody");
  body.append(...t.rows.map((r) => {
    const tr = document.createElement("tr");
    for (const x of r) cell(tr, x);
    return tr;
  }));
  table.append(cap, head, body);
  holder.replaceChildren(table);
}

function showChartTables() {
  for (const d of document.querySelectorAll("details.chart-numbers[open]")) fillChartTable(d);
}

function showView(v) {
  showAnswer(v);
  $("data-summary").textContent = v.dataSummary;
  $("fig-linear").hidden = !v.straightLineView;
  $("caution").textContent = v.caution;
  $("model-formula").textContent = v.formula;
  const warnings = v.warnings.map((w) => {
    const li = document.createElement("li");
    if (["saturation_not_identified", "before_inflection", "not_converged", "singular_jacobian", "values_decline"].includes(w.code)) {
      li.className = "serious";
    }
    // The code stays in the JSON and as data-code, not in the text.
    li.dataset.code = w.code;
    li.textContent = w.message;
    return li;
  });
  $("warnings").replaceChildren(...warnings);

  // Every number arrives as text from Rust (v.text, plateau_study::numbers).
  const text = v.text;
  fillBody("params", v.params.map((p, i) => {
    const tr = document.createElement("tr");
    const shown = text.params[i];
    tr.dataset.param = p.name;
    cell(tr, p.name);
    cell(tr, shown.estimate + (p.asTime ? ` (${p.asTime})` : ""), "estimate");
    tr.lastChild.dataset.value = String(p.estimate);
    cell(tr, shown.stdError);
    cell(tr, shown.interval, "interval");
    cell(tr, p.ciMethod ?? "");
    if (!p.identified) tr.classList.add("not-identified");
    cell(tr, "–", "boot");
    return tr;
  }));
  $("not-identified").hidden = !v.notIdentified;
  $("not-identified").textContent = v.notIdentified ?? "";
  $("error-model-text").textContent = v.errorModelText + (v.increments ? "; fitted to per-period increments" : "");
  $("increments-hint").hidden = !v.incrementsHint;
  $("increments-hint").textContent = v.incrementsHint ?? "";

  const st = v.stats;
  const statRows = [
    ["points n", st.n], ["degrees of freedom", st.dof], ["RSS", text.stats.rss],
    ["sigma (residual SD)", text.stats.sigma], ["R²", text.stats.rSquared], ["AICc", text.stats.aicc],
    ["AIC", text.stats.aic], ["BIC", text.stats.bic],
    ["solver", v.converged ? `converged in ${v.iterations} iterations` : `did not converge (${v.terminationText})`],
  ];
  fillBody("stats", statRows.map(([k, x]) => {
    const tr = document.createElement("tr");
    tr.dataset.stat = k;
    cell(tr, k);
    cell(tr, String(x));
    return tr;
  }));

  currentPeak = v.peak;
  currentPeakText = text.peak;
  showMilestones(v.milestones);
  const unit = v.timeUnit ? ` ${v.timeUnit}s` : " time units";
  $("duration").textContent = v.duration1090 == null ? "" :
    `From 10% to 90% of ${v.saturation} takes ${text.duration1090}${unit}` + (v.model === "logistic" ? " (ln 81 / r)." : ".");

  fillBody("comparison", v.comparison.map((c, i) => {
    const tr = document.createElement("tr");
    if (c.model === v.model) tr.className = "chosen";
    cell(tr, c.model);
    if (c.error) {
      const td = document.createElement("td");
      td.colSpan = 5;
      td.textContent = c.error;
      tr.appendChild(td);
    } else {
      const t = text.comparison[i];
      cell(tr, t.aicc); cell(tr, t.deltaAicc); cell(tr, t.weight); cell(tr, t.bic); cell(tr, t.k);
    }
    return tr;
  }));

  fillBody("backtest", v.backtest.map((b, i) => {
    const tr = document.createElement("tr");
    tr.dataset.model = b.model;
    if (b.model === v.model) tr.className = "chosen";
    cell(tr, b.model);
    cell(tr, b.failed ? `${b.origins} (${b.failed} without a fit)` : String(b.origins));
    if (b.error) {
      const td = document.createElement("td");
      td.colSpan = b.mape.length;
      td.textContent = b.error;
      tr.appendChild(td);
      return tr;
    }
    for (const m of text.backtest[i]) cell(tr, m, "mape");
    return tr;
  }));

  $("symmetry-note").textContent = !v.symmetry
    ? "not available for this model."
    : v.symmetry.rmsRatio == null
      ? "no summary yet: too few reflected points fall inside the observed time range."
      : `RMS mismatch ${text.symmetryRms} × the noise level. ${v.symmetry.meaning}`;

  showMulti(v);
  showChecks(v);

  const cols = v.columns;
  $("columns").hidden = cols.length <= 2 || !!v.multi;
  for (const [id, chosen] of [["time-col", v.timeColumn], ["value-col", v.valueColumn]]) {
    const sel = $(id);
    sel.replaceChildren(...cols.map((name, i) => new Option(name, String(i), false, i === chosen)));
  }
}

// Several series: the selector, the summary table and the overlay's section.
function showMulti(v) {
  const m = v.multi;
  $("multi").hidden = !m;
  if (!m) return;
  $("multi-caution").textContent = v.caution;
  $("series-select").replaceChildren(...m.summary.map((row, i) =>
    new Option(row.error ? `${row.series} (no fit)` : row.series, String(i), false, i === m.selected)));
  fillBody("summary", m.summary.map((row, i) => {
    const tr = document.createElement("tr");
    const shown = v.text.summary[i];
    tr.dataset.series = row.series;
    if (i === m.selected) tr.className = "chosen";
    cell(tr, row.series);
    cell(tr, row.n == null ? "–" : String(row.n));
    if (row.error) {
      const td = document.createElement("td");
      td.colSpan = 6;
      td.className = "failed";
      td.textContent = row.error;
      tr.appendChild(td);
      return tr;
    }
    cell(tr, shown.k, "k");
    tr.lastChild.dataset.value = String(row.K ? row.K.estimate : "");
    cell(tr, shown.r, "r");
    tr.lastChild.dataset.value = String(row.r ? row.r.estimate : "");
    cell(tr, shown.t0 + (row.t0_date ? ` (${row.t0_date})` : ""), "t0");
    cell(tr, shown.duration1090);
    cell(tr, row.converged ? "yes" : "no");
    cell(tr, row.warnings.map((w) => w.message).join(" "));
    tr.lastChild.dataset.codes = row.warnings.map((w) => w.code).join(",");
    return tr;
  }));
}

// The Bass adoption peak of the current view and its text, shown under the milestones.
let currentPeak = null;
let currentPeakText = null;

function peakRows(pk, shown) {
  if (!pk) return [];
  const t = document.createElement("tr");
  t.dataset.peak = "time";
  cell(t, "peak adoption t*");
  cell(t, pk.timeText, "when");
  cell(t, pk.timeCi95Text ? `${pk.timeCi95Text[0]} … ${pk.timeCi95Text[1]}` : "–", "delta");
  cell(t, "–", "boot");
  const r = document.createElement("tr");
  r.dataset.peak = "rate";
  cell(r, `peak rate m(p+q)²/(4q), ${shown.sharePercent}% of m adopted by t*`);
  cell(r, shown.rate, "when");
  cell(r, shown.rateCi95 ?? "–", "delta");
  cell(r, "–", "boot");
  return [t, r];
}

function showMilestones(rows) {
  fillBody("milestones", [...rows.map((m) => {
    const tr = document.createElement("tr");
    tr.dataset.verdict = m.verdict;
    cell(tr, m.label);
    cell(tr, m.timeText + (m.forecast ? " (forecast)" : ""), "when");
    if (m.note) tr.lastChild.title = m.note;
    cell(tr, m.ci95Text ? `${m.ci95Text[0]} … ${m.ci95Text[1]}` : "–", "delta");
    cell(tr, m.bootstrapText ? `${m.bootstrapText[0]} … ${m.bootstrapText[1]}` : "–", "boot");
    if (m.note && !["observed", "forecast"].includes(m.verdict)) {
      const small = document.createElement("div");
      small.className = "hint";
      small.textContent = m.note;
      tr.cells[1].appendChild(small);
    }
    return tr;
  }), ...peakRows(currentPeak, currentPeakText)]);
}

// The bootstrap runs in slices of about 12 ms of work, each in its own
// task, so the page stays responsive; a new update cancels a running one.
let bootRun = 0;
function startBootstrap() {
  const run = ++bootRun;
  const progress = $("boot-progress");
  const status = $("boot-status");
  if (!state.settings.bootstrap) {
    progress.hidden = true;
    status.textContent = "";
    delete document.body.dataset.bootstrap;
    return;
  }
  let total;
  try {
    total = bench.bootstrapStart();
  } catch (e) {
    status.textContent = e.message;
    document.body.dataset.bootstrap = "error";
    return;
  }
  progress.max = total;
  progress.value = 0;
  progress.hidden = false;
  status.textContent = `0 of ${total} refits`;
  document.body.dataset.bootstrap = "running";
  const started = performance.now();
  let busy = 0;
  const slice = () => {
    if (run !== bootRun) return;
    const t = performance.now();
    let done;
    do { done = bench.bootstrapStep(10); } while (done < total && performance.now() - t < 12);
    busy += performance.now() - t;
    progress.value = done;
    status.textContent = `${done} of ${total} refits`;
    if (done < total) { setTimeout(slice, 0); return; }
    const bv = bench.bootstrapView();
    showBootstrap(bv);
    // Wall time from start to finish, and the time spent computing.
    window.plateauBootstrapMs = performance.now() - started;
    window.plateauBootstrapComputeMs = busy;
    document.body.dataset.bootstrap = "done";
  };
  setTimeout(slice, 0);
}

function showBootstrap(bv) {
  const rows = $("params").tBodies[0].rows;
  bv.paramsText.forEach((shown, i) => {
    const td = rows[i] && rows[i].querySelector("td.boot");
    if (td) td.textContent = shown;
  });
  showMilestones(bv.milestones);
  $("boot-status").textContent = `B = ${bv.replicates} (${bv.resampling}), seed ${bv.seed}; ` +
    `${bv.failed} refit${bv.failed === 1 ? "" : "s"} failed and left out; percentile intervals.`;
}

function verdictItem(tag, verdict) {
  const el = document.createElement(tag);
  el.textContent = verdict.text;
  el.dataset.code = verdict.code;
  el.className = verdict.flagged ? "flagged" : "";
  return el;
}

function showVerdict(id, verdict) {
  const el = $(id);
  el.textContent = verdict ? verdict.text : "";
  el.dataset.code = verdict ? verdict.code : "";
  el.className = "verdict" + (verdict && verdict.flagged ? " flagged" : "");
}

// The checks panel, the symmetry test beside the mirror chart and the
// recommendation beside the comparison table; every sentence comes from Rust.
function showChecks(v) {
  const d = v.diagnostics;
  const dt = v.text.diagnostics;
  const all = [...d.verdicts];
  if (v.symmetryTest) all.push(v.symmetryTest.verdict);
  if (v.fisherPry) all.push(v.fisherPry.verdict);
  $("verdicts").replaceChildren(...all.map((x) => verdictItem("li", x)));
  const rows = [
    ["residuals", d.n],
    ["runs (expected)", d.runs == null ? "–" : `${d.runs} (${dt.runsExpected})`],
    ["runs test p", dt.runsP],
    ["Durbin–Watson", dt.durbinWatson],
    ["lag-1 autocorrelation", dt.lag1Autocorrelation],
    ["Q-Q correlation", dt.qqCorrelation],
    ["Jarque–Bera p", dt.jarqueBeraP],
  ];
  fillBody("diag-stats", rows.map(([k, x]) => {
    const tr = document.createElement("tr");
    tr.dataset.stat = k;
    cell(tr, k);
    cell(tr, String(x));
    return tr;
  }));
  showVerdict("symmetry-test", v.symmetryTest && v.symmetryTest.verdict);
  showVerdict("fisher-pry-verdict", v.fisherPry && v.fisherPry.verdict);
  const rec = v.recommendation;
  $("recommended-model").textContent = rec.model ?? "none";
  $("recommendation-reasons").replaceChildren(...rec.reasons.map((r) => {
    const li = document.createElement("li");
    li.textContent = r;
    return li;
  }));
  $("lr-tests").textContent = v.lrTests.map((t) => t.note ? `${t.nested} within ${t.general}: ${t.note}` : "").join(" ");
}

function drawCharts() {
  for (const canvas of document.querySelectorAll("canvas.chart")) {
    if (canvas.closest("[hidden]")) continue;
    const dpr = window.devicePixelRatio || 1;
    canvas.width = Math.max(1, Math.round(canvas.clientWidth * dpr));
    canvas.height = Math.max(1, Math.round(canvas.clientHeight * dpr));
    try {
      bench.draw(canvas.dataset.chart, canvas);
    } catch (e) {
      setStatus("Chart failed: " + e.message, true);
    }
  }
}

function setStatus(text, isError) {
  const el = $("parse-status");
  el.textContent = text;
  el.className = "status " + (isError ? "error" : "ok");
}

function update() {
  const started = performance.now();
  // A setting out of range: its sentence beside the settings, the last
  // good results kept.
  let bad;
  try {
    bad = checkSettings(state.settings);
  } catch (e) {
    bad = e.message;
  }
  $("settings-status").textContent = bad ?? "";
  if (bad) {
    setStatus("Not updated: a setting is out of range (see 2, Model).", true);
    document.body.dataset.state = "error";
    return;
  }
  try {
    view = bench.update(state.text, state.settings);
  } catch (e) {
    // Bad input: say where, keep the last good results on screen, and
    // show the data so it can be corrected.
    setStatus(e.message, true);
    inputOpen = true;
    showInput();
    document.body.dataset.state = "error";
    return;
  }
  showView(view);
  showInput();
  drawCharts();
  showChartTables();
  startBootstrap();
  if (view.multi) {
    const chosen = view.multi.summary[view.multi.selected];
    setStatus(`${view.multi.summary.length} series read (${view.layout} layout); details below for ${chosen.series}: ${view.stats.n} points.`, false);
  } else {
    setStatus(`${view.stats.n} points read: ${view.valueName} against ${view.timeName}.`, false);
  }
  $("data-label").textContent = state.demo === "multi" ? demoMultiLabel() : state.demo ? demoLabel() : "";
  window.plateauLastUpdateMs = performance.now() - started;
  // Milliseconds from navigation start to the first drawn fit.
  window.plateauFirstFitMs ??= performance.now();
  document.body.dataset.state = "ready";
  document.body.dataset.updates = String(Number(document.body.dataset.updates || 0) + 1);
}

let pending = 0;
function changed({ text = false, immediate = false } = {}) {
  if (text) {
    state.text = $("data").value;
    state.demo = false;
    // A new table may have other columns.
    state.settings.timeColumn = null;
    state.settings.valueColumn = null;
    state.settings.series = null;
  } else {
    readControls();
  }
  save();
  clearTimeout(pending);
  if (immediate) update();
  else pending = setTimeout(update, 120);
}

function download(name, blob) {
  const a = document.createElement("a");
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10000);
}

function loadText(text) {
  $("data").value = text;
  changed({ text: true, immediate: true });
}

function wire() {
  $("data").addEventListener("input", () => changed({ text: true }));
  for (const id of ["model", "fixed-k", "fisher-pry-k", "horizon", "share", "level", "bootstrap", "resampling", "replicates", "seed", "time-col", "value-col", "accum-cumulative", "accum-per-period", "error-model", "increments", "layout", "series-select"]) {
    $(id).addEventListener("change", () => changed({ immediate: true }));
  }
  $("open-file").addEventListener("click", () => $("file").click());
  $("edit-data").addEventListener("click", () => {
    inputOpen = !inputOpen;
    showInput();
    if (inputOpen) $("data").focus();
  });
  $("fold-data").addEventListener("click", () => {
    inputOpen = false;
    showInput();
    $("edit-data").focus();
  });
  for (const d of document.querySelectorAll("details.chart-numbers")) {
    d.addEventListener("toggle", () => { if (d.open && view) fillChartTable(d); });
  }
  $("file").addEventListener("change", async (ev) => {
    const f = ev.target.files[0];
    if (f) loadText(await f.text());
    ev.target.value = "";
  });
  const area = $("data");
  area.addEventListener("dragover", (ev) => { ev.preventDefault(); area.classList.add("dragging"); });
  area.addEventListener("dragleave", () => area.classList.remove("dragging"));
  area.addEventListener("drop", async (ev) => {
    ev.preventDefault();
    area.classList.remove("dragging");
    const f = ev.dataTransfer.files[0];
    if (f) loadText(await f.text());
  });
  $("load-demo").addEventListener("click", () => {
    state = demoState();
    writeControls();
    save();
    update();
  });
  $("load-demo-multi").addEventListener("click", () => {
    state = demoMultiState();
    writeControls();
    save();
    update();
  });
  $("export-summary").addEventListener("click", () =>
    download("plateau-summary.csv", new Blob([bench.summaryCsv()], { type: "text/csv" })));
  $("erase").addEventListener("click", () => {
    localStorage.removeItem(STORE_KEY);
    seenRev = null;
    endConflict();
    state = demoState();
    writeControls();
    update();
    $("store-status").textContent = "stored data erased";
  });
  for (const b of document.querySelectorAll("button[data-png]")) {
    b.addEventListener("click", () => {
      $("chart-" + b.dataset.png).toBlob((blob) => download(`plateau-${b.dataset.png}.png`, blob), "image/png");
    });
  }
  for (const b of document.querySelectorAll("button[data-svg]")) {
    b.addEventListener("click", () => {
      const c = $("chart-" + b.dataset.svg);
      const svg = bench.svg(b.dataset.svg, Math.max(640, c.clientWidth), Math.max(360, c.clientHeight));
      download(`plateau-${b.dataset.svg}.svg`, new Blob([svg], { type: "image/svg+xml" }));
    });
  }
  $("export-csv").addEventListener("click", () =>
    download("plateau-table.csv", new Blob([bench.tableCsv()], { type: "text/csv" })));
  $("export-json").addEventListener("click", () =>
    download("plateau-report.json", new Blob([bench.reportJson()], { type: "application/json" })));
  $("export-checks").addEventListener("click", () =>
    download("plateau-checks.json", new Blob([bench.diagnoseJson()], { type: "application/json" })));
  window.addEventListener("storage", storageChanged);
  $("tab-load").addEventListener("click", () => {
    const saved = readJson(localStorage, STORE_KEY);
    endConflict();
    seenRev = revOf(saved);
    state = saved && typeof saved.text === "string" ? stateOf(saved) : demoState();
    writeControls();
    update();
    $("store-status").textContent = "showing the work the other tab stored";
  });
  $("tab-keep").addEventListener("click", () => {
    endConflict();
    write();
  });
  let resizeTimer = 0;
  window.addEventListener("resize", () => {
    clearTimeout(resizeTimer);
    resizeTimer = setTimeout(() => view && drawCharts(), 150);
  });
}

writeControls();
wire();
showConflict();
update();
