// Plateau's page wiring. This script only moves text and settings between
// the DOM, localStorage and the Rust Workbench in a worker, sizes canvases
// for the device pixel ratio, paints the bitmaps the worker draws and
// triggers downloads; parsing, fitting, numbers and drawing are all Rust.
// It is inlined after the wasm-bindgen glue (which defines initSync and
// Workbench), WASM_BASE64 and WORKER_SOURCE (the glue and web/worker.js)
// by `cargo xtask dist`. The main thread never fits: it sends each change
// to the worker and shows what comes back, dropping anything that answers
// an older change.

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

// Compiled once; the worker gets the compiled module. This thread's
// instance serves only the demo texts and the settings check.
const plateauModule = new WebAssembly.Module(wasmBytes());
initSync({ module: plateauModule });

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
  return { text: saved.text, settings: { ...DEFAULTS, ...saved.settings }, demo: saved.demo === "multi" ? "multi" : !!saved.demo, fileLabel: String(saved.fileLabel ?? "") };
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
  ask({ what: "chartTable", chart }, (t) => showChartTable(holder, t));
}

function showChartTable(holder, t) {
  if (!t) {
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
  $("duration").textContent = text.durationSentence ?? "";

  $("symmetry-note").textContent = !v.symmetry
    ? "not available for this model."
    : v.symmetry.rmsRatio == null
      ? "no summary yet: too few reflected points fall inside the observed time range."
      : `RMS mismatch ${text.symmetryRms} × the noise level. ${v.symmetry.meaning}`;

  showMulti(v);

  const cols = v.columns;
  $("columns").hidden = cols.length <= 2 || !!v.multi;
  for (const [id, chosen] of [["time-col", v.timeColumn], ["value-col", v.valueColumn]]) {
    const sel = $(id);
    sel.replaceChildren(...cols.map((name, i) => new Option(name, String(i), false, i === chosen)));
  }
}

// The sections, each shown when the worker sends it (see `want`).
function showComparison(c) {
  fillBody("comparison", c.comparison.map((row, i) => {
    const tr = document.createElement("tr");
    if (row.model === view.model) tr.className = "chosen";
    cell(tr, row.model);
    if (row.error) {
      const td = document.createElement("td");
      td.colSpan = 5;
      td.textContent = row.error;
      tr.appendChild(td);
    } else {
      const t = c.text[i];
      cell(tr, t.aicc); cell(tr, t.deltaAicc); cell(tr, t.weight); cell(tr, t.bic); cell(tr, t.k);
    }
    return tr;
  }));
  const rec = c.recommendation;
  $("recommended-model").textContent = rec.model ?? "none";
  $("recommendation-reasons").replaceChildren(...rec.reasons.map((r) => {
    const li = document.createElement("li");
    li.textContent = r;
    return li;
  }));
  $("lr-tests").textContent = c.lrTests.map((t) => t.note ? `${t.nested} within ${t.general}: ${t.note}` : "").join(" ");
}

function showBacktest(bt) {
  fillBody("backtest", bt.rows.map((b, i) => {
    const tr = document.createElement("tr");
    tr.dataset.model = b.model;
    if (b.model === view.model) tr.className = "chosen";
    cell(tr, b.model);
    cell(tr, b.failed ? `${b.origins} (${b.failed} without a fit)` : String(b.origins));
    if (b.error) {
      const td = document.createElement("td");
      td.colSpan = b.mape.length;
      td.textContent = b.error;
      tr.appendChild(td);
      return tr;
    }
    for (const m of bt.text[i]) cell(tr, m, "mape");
    return tr;
  }));
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

// The bootstrap runs in the worker in slices of about 12 ms, after the
// sections; its progress and result arrive as messages (see `received`).
function showBootstrapProgress(done, total) {
  const progress = $("boot-progress");
  progress.max = total;
  progress.value = done;
  progress.hidden = false;
  $("boot-status").textContent = `${done} of ${total} refits`;
  document.body.dataset.bootstrap = "running";
}

function clearBootstrap() {
  $("boot-progress").hidden = true;
  $("boot-status").textContent = "";
  delete document.body.dataset.bootstrap;
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
  const dt = v.text;
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
}

function setStatus(text, isError) {
  const el = $("parse-status");
  el.textContent = text;
  el.className = "status " + (isError ? "error" : "ok");
}

// --- The worker -----------------------------------------------------
//
// Every change is an update with a sequence number; whatever the worker
// sends back for an older one is dropped. The worker reads newer messages
// between its jobs (fit, each chart, each section, bootstrap slices); if it
// does not acknowledge an update within ACK_MS it is busy in one long job
// (a large fit) for work no one wants any more, and is replaced by a new
// worker from the same compiled module.
const ACK_MS = 150;
// Progress is shown when an update takes longer than this.
const PROGRESS_MS = 200;
const workerUrl = URL.createObjectURL(new Blob([WORKER_SOURCE], { type: "text/javascript" }));
let worker = null;
let seq = 0; // the latest update sent
let acked = 0; // the latest update the worker has read
let ackTimer = 0;
let progressTimer = 0;
let progressText = "";
let sentAt = 0;
let lastMessage = null; // the latest update, resent to a new worker
// Sections and charts the page shows: the worker computes them after each
// fit (see `want`).
const wantedSections = new Set();
const wantedCharts = new Set();
// Exports waiting for the worker, by id (resent to a new worker).
const exports = new Map();
let exportId = 0;

function startWorker() {
  if (worker) worker.terminate();
  // A classic worker: Chromium starts no module worker from the Blob URL of
  // a page opened from file://.
  worker = new Worker(workerUrl);
  worker.onmessage = (ev) => received(ev.data);
  worker.onerror = (ev) => setStatus("The worker stopped: " + (ev.message || "unknown error"), true);
  worker.postMessage({ type: "init", module: plateauModule });
}

function post(message) {
  worker.postMessage(message);
}

function chartSizes(kinds) {
  const dpr = window.devicePixelRatio || 1;
  const sizes = {};
  for (const kind of kinds) {
    const canvas = document.querySelector(`canvas.chart[data-chart="${kind}"]`);
    if (!canvas || canvas.closest("[hidden]")) continue;
    sizes[kind] = [Math.max(1, Math.round(canvas.clientWidth * dpr)), Math.max(1, Math.round(canvas.clientHeight * dpr))];
  }
  return sizes;
}

function sendUpdate() {
  lastMessage = {
    type: "update", seq, text: state.text, settings: { ...state.settings }, bootstrap: !!state.settings.bootstrap,
    sections: [...wantedSections], charts: chartSizes(wantedCharts),
  };
  post(lastMessage);
  clearTimeout(ackTimer);
  ackTimer = setTimeout(() => {
    if (acked >= seq) return;
    // Busy with superseded work: a new worker, the latest update, the
    // exports still asked for.
    startWorker();
    post({ ...lastMessage, sections: [...wantedSections], charts: chartSizes(wantedCharts) });
    for (const asked of exports.values()) post(asked.message);
  }, ACK_MS);
}

function update() {
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
  seq += 1;
  sentAt = performance.now();
  document.body.dataset.state = "working";
  clearBootstrap();
  progressText = "";
  clearTimeout(progressTimer);
  progressTimer = setTimeout(() => showWork(progressText), PROGRESS_MS);
  sendUpdate();
}

function showWork(text) {
  $("work-status").textContent = text;
}

// Sections already shown wait for their new content, marked busy.
function markStale() {
  for (const name of wantedSections) for (const el of sectionElements(name)) el.setAttribute("aria-busy", "true");
}

function received(m) {
  if (m.type === "ack") {
    acked = Math.max(acked, m.seq);
    return;
  }
  if (m.type === "export") {
    const asked = exports.get(m.id);
    exports.delete(m.id);
    if (asked) asked.done(m.text);
    return;
  }
  if (m.type === "panic") {
    showPanic(m.message);
    startWorker();
    return;
  }
  if (m.type === "failed" && m.what === "export") {
    exports.delete(m.id);
    setStatus(m.message, true);
    return;
  }
  if (m.seq !== seq) {
    if (m.bitmap) m.bitmap.close();
    return; // answers a superseded update
  }
  switch (m.type) {
    case "progress":
      progressText = m.text;
      if (performance.now() - sentAt >= PROGRESS_MS) showWork(m.text);
      break;
    case "error":
      // Bad input: say where, keep the last good results on screen, and
      // show the data so it can be corrected.
      setStatus(m.message, true);
      inputOpen = true;
      showInput();
      document.body.dataset.state = "error";
      finishWork();
      break;
    case "answer":
      view = m.view;
      window.plateauLastFitMs = m.ms;
      showView(view);
      showInput();
      markStale();
      if (view.multi) {
        const chosen = view.multi.summary[view.multi.selected];
        setStatus(`${view.multi.summary.length} series read (${view.layout} layout); details below for ${chosen.series}: ${view.stats.n} points.`, false);
      } else {
        setStatus(`${view.stats.n} points read: ${view.valueName} against ${view.timeName}.`, false);
      }
      $("data-label").textContent = state.demo === "multi" ? demoMultiLabel() : state.demo ? demoLabel() : state.fileLabel || "";
      // The sheet chooser belongs to an opened workbook's text, not to a demo or edited text.
      if (!state.fileLabel) $("sheet-row").hidden = true;
      document.body.dataset.answers = String(Number(document.body.dataset.answers || 0) + 1);
      if (!wantedCharts.has("curve")) answerShown();
      // Charts shown only with this answer (the overlay) are asked for now.
      refreshWants();
      break;
    case "chart":
      paint(m.kind, m.bitmap);
      if (m.kind === "curve") {
        window.plateauLastCurveMs = m.ms;
        answerShown();
      }
      break;
    case "chart-error":
      setStatus("Chart failed: " + m.message, true);
      if (m.kind === "curve") answerShown();
      break;
    case "section":
      ({ comparison: showComparison, checks: showChecks, backtest: showBacktest, drift: () => {} })[m.name](m.view);
      for (const el of sectionElements(m.name)) el.removeAttribute("aria-busy");
      break;
    case "failed":
      setStatus(m.message, true);
      break;
    case "idle":
      window.plateauLastUpdateMs = performance.now() - sentAt;
      showChartTables();
      document.body.dataset.state = "ready";
      document.body.dataset.updates = String(Number(document.body.dataset.updates || 0) + 1);
      finishWork();
      break;
    case "boot":
      showBootstrapProgress(m.done, m.total);
      break;
    case "boot-error":
      $("boot-status").textContent = m.message;
      document.body.dataset.bootstrap = "error";
      break;
    case "boot-done":
      $("boot-progress").value = m.view.done;
      showBootstrap(m.view);
      // Wall time from start to finish, and the time spent computing.
      window.plateauBootstrapMs = m.ms;
      window.plateauBootstrapComputeMs = m.computeMs;
      document.body.dataset.bootstrap = "done";
      break;
  }
}

// The first answer and its curve are on screen.
function answerShown() {
  window.plateauLastAnswerMs = performance.now() - sentAt;
  // Milliseconds from navigation start to the first drawn fit.
  window.plateauFirstFitMs ??= performance.now();
}

function finishWork() {
  clearTimeout(progressTimer);
  showWork("");
}

function paint(kind, bitmap) {
  const canvas = document.querySelector(`canvas.chart[data-chart="${kind}"]`);
  if (!canvas) return bitmap.close();
  canvas.width = bitmap.width;
  canvas.height = bitmap.height;
  canvas.getContext("2d").drawImage(bitmap, 0, 0);
  bitmap.close();
}

function showPanic(message) {
  let div = $("panic");
  if (!div) {
    div = document.createElement("div");
    div.id = "panic";
    div.setAttribute("role", "alert");
    document.body.prepend(div);
  }
  div.textContent = `${message} Reload the page; your data is still in this browser's local storage.`;
}

// Asks the worker for an export of the current analysis; `done` gets the text.
function ask(message, done) {
  const m = { type: "export", id: ++exportId, ...message };
  exports.set(m.id, { message: m, done });
  post(m);
}

// --- What the page shows -------------------------------------------------
//
// A section is computed when one of its elements comes into view, then
// kept current; a chart is drawn once it comes near the viewport. The
// curve and the overlay come with every answer.
const SECTION_ELEMENTS = {
  comparison: ["comparison", "recommendation"],
  checks: ["diagnostics", "symmetry-test"],
  drift: ["chart-drift"],
  backtest: ["backtest"],
};

function sectionElements(name) {
  return SECTION_ELEMENTS[name].map((id) => $(id)).filter(Boolean);
}

function want(sections, charts) {
  const newSections = sections.filter((s) => !wantedSections.has(s));
  const newCharts = charts.filter((c) => !wantedCharts.has(c));
  for (const s of newSections) wantedSections.add(s);
  for (const c of newCharts) wantedCharts.add(c);
  if (!newSections.length && !newCharts.length) return;
  for (const s of newSections) for (const el of sectionElements(s)) el.setAttribute("aria-busy", "true");
  post({ type: "want", sections: newSections, charts: chartSizes(newCharts) });
}

function visibleCharts() {
  return [...document.querySelectorAll("canvas.chart")].filter((c) => !c.closest("[hidden]")).map((c) => c.dataset.chart);
}

// With `plateauEager` (set by the tests before the page loads) every
// section and chart is wanted at once, as if the page were all in view.
function refreshWants() {
  if (window.plateauEager) {
    want(Object.keys(SECTION_ELEMENTS), visibleCharts());
    return;
  }
  want([], visibleCharts().filter((c) => c === "curve" || c === "overlay"));
}

function observe() {
  const seen = new IntersectionObserver((entries) => {
    const sections = [];
    const charts = [];
    for (const e of entries) {
      if (!e.isIntersecting) continue;
      const el = e.target;
      for (const [name, ids] of Object.entries(SECTION_ELEMENTS)) if (ids.includes(el.id)) sections.push(name);
      if (el.matches("canvas.chart") && !el.closest("[hidden]")) charts.push(el.dataset.chart);
    }
    want(sections, charts);
  }, { rootMargin: "200px" });
  for (const ids of Object.values(SECTION_ELEMENTS)) for (const id of ids) if ($(id)) seen.observe($(id));
  for (const c of document.querySelectorAll("canvas.chart")) seen.observe(c);
}

let pending = 0;
function changed({ text = false, immediate = false } = {}) {
  if (text) {
    state.text = $("data").value;
    state.demo = false;
    state.fileLabel = "";
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

// The file last opened, kept so another sheet of a workbook can be read.
let opened = null;

async function openBytes(f) {
  opened = { bytes: new Uint8Array(await f.arrayBuffer()), name: f.name };
  readOpened(undefined);
}

// Rust reads the bytes (a workbook's sheet, or text); the page shows the
// text and, for a workbook of several sheets, the sheet chooser.
function readOpened(sheet) {
  let file;
  try {
    file = openFile(opened.bytes, opened.name, sheet);
  } catch (e) {
    setStatus(e.message, true);
    return;
  }
  const select = $("sheet-select");
  select.replaceChildren(...file.sheets.map((name, i) => new Option(name, String(i + 1), false, i + 1 === file.sheet)));
  loadText(file.text);
  state.fileLabel = file.label;
  save();
  $("data-label").textContent = file.label;
  $("sheet-row").hidden = file.sheets.length < 2;
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
    if (f) await openBytes(f);
    ev.target.value = "";
  });
  $("sheet-select").addEventListener("change", () => readOpened(Number($("sheet-select").value)));
  const area = $("data");
  area.addEventListener("dragover", (ev) => { ev.preventDefault(); area.classList.add("dragging"); });
  area.addEventListener("dragleave", () => area.classList.remove("dragging"));
  area.addEventListener("drop", async (ev) => {
    ev.preventDefault();
    area.classList.remove("dragging");
    const f = ev.dataTransfer.files[0];
    if (f) await openBytes(f);
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
    ask({ what: "summaryCsv" }, (text) => download("plateau-summary.csv", new Blob([text], { type: "text/csv" }))));
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
      ask({ what: "svg", chart: b.dataset.svg, width: Math.max(640, c.clientWidth), height: Math.max(360, c.clientHeight) },
        (svg) => download(`plateau-${b.dataset.svg}.svg`, new Blob([svg], { type: "image/svg+xml" })));
    });
  }
  $("export-csv").addEventListener("click", () =>
    ask({ what: "tableCsv" }, (text) => download("plateau-table.csv", new Blob([text], { type: "text/csv" }))));
  $("export-json").addEventListener("click", () =>
    ask({ what: "reportJson" }, (text) => download("plateau-report.json", new Blob([text], { type: "application/json" }))));
  $("export-checks").addEventListener("click", () =>
    ask({ what: "diagnoseJson" }, (text) => download("plateau-checks.json", new Blob([text], { type: "application/json" }))));
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
    // New sizes for every chart shown: the worker redraws them.
    resizeTimer = setTimeout(() => view && post({ type: "want", charts: chartSizes(wantedCharts) }), 150);
  });
}

startWorker();
writeControls();
wire();
showConflict();
refreshWants();
observe();
update();
