// Plateau's worker: runs the Rust Workbench off the page's main thread.
// `cargo xtask dist` puts the wasm-bindgen glue (initSync, Workbench, …)
// before this script; the page starts it from a Blob URL and sends the
// compiled WebAssembly.Module, so nothing is fetched. This script only
// queues work and forwards messages: every number and sentence is Rust's.
//
// Work comes in jobs, one per task, so a newer message is read between
// any two: an update (read, then fit: the first answer), then each visible
// chart, each section the page shows, and bootstrap slices. Every job
// carries its update's sequence number; jobs of a superseded update are
// dropped unrun. (A job that runs long is cut short by the page, which
// replaces this worker when an update is not acknowledged in time.)

// plotters lays out a chart's legend by measuring its lines in a <span>
// added to the document, and a worker has no document. This stand-in
// measures the same text, in the span's font, with an OffscreenCanvas: the
// only DOM plotters asks for (everything else is measured by the backend
// in Rust, `offscreen.rs`).
const measurer = new OffscreenCanvas(1, 1).getContext("2d");
class MeasuredSpan {
  constructor() {
    this.textContent = "";
    this.font = "16px sans-serif";
  }
  setAttribute(name, value) {
    if (name !== "style") return;
    const field = (key) => (new RegExp(`${key}:\\s*([^;]+)`).exec(value) || [])[1] || "";
    this.font = `${field("font-style")} ${field("font-size")} ${field("font-family")}`.trim();
  }
  metrics() {
    measurer.font = this.font;
    return measurer.measureText(this.textContent || "");
  }
  get offsetWidth() {
    return Math.ceil(this.metrics().width);
  }
  get offsetHeight() {
    const m = this.metrics();
    return Math.ceil(m.fontBoundingBoxAscent + m.fontBoundingBoxDescent);
  }
  remove() {}
}
self.HTMLElement = MeasuredSpan;
self.Window = self.constructor;
self.document = { body: { append() {} }, createElement: () => new MeasuredSpan() };

let bench = null;
let latest = 0; // the newest update's sequence number
let fitted = 0; // the update whose analysis `bench` holds (0: none)
let idleSent = 0;
let analysed = false; // whether `bench` holds an analysis at all
let queue = [];
// What the page shows: sections (kept current once shown) and charts
// with their pixel sizes.
const sections = new Set();
const charts = new Map();
let bootstrapWanted = false;
let readStarted = 0;

const SECTION_ORDER = ["comparison", "checks", "drift", "backtest"];
// Charts drawn from the fit alone, before any section.
const FIRST_CHARTS = ["curve", "overlay"];

const tick = new MessageChannel();
let scheduled = false;
function schedule() {
  if (!scheduled && queue.length) {
    scheduled = true;
    tick.port2.postMessage(0);
  }
}
tick.port1.onmessage = () => {
  scheduled = false;
  const job = queue.shift();
  if (job && (job.seq === undefined || job.seq === latest)) {
    try {
      job.run();
    } catch (e) {
      failed(job, e);
    }
  }
  if (fitted && fitted === latest && idleSent !== latest && !queue.some((j) => j.seq === latest && !j.background)) {
    idleSent = latest;
    post({ type: "idle", seq: latest });
  }
  schedule();
};

function post(message, transfer) {
  self.postMessage(message, transfer || []);
}

// A panic leaves the instance unusable: the page shows the message and
// starts a new worker.
function failed(job, e) {
  const panic = bench && takePanic();
  if (panic || e instanceof WebAssembly.RuntimeError) {
    post({ type: "panic", message: panic || String(e) });
    queue = [];
    bench = null;
    return;
  }
  post({ type: "failed", seq: job.seq, what: job.what, id: job.id, message: e.message || String(e) });
}

function chartJob(seq, kind) {
  return {
    seq, what: "chart",
    run() {
      const size = charts.get(kind);
      if (!size) return;
      const canvas = new OffscreenCanvas(size[0], size[1]);
      const started = performance.now();
      try {
        bench.draw(kind, canvas);
      } catch (e) {
        post({ type: "chart-error", seq, kind, message: e.message || String(e) });
        return;
      }
      const bitmap = canvas.transferToImageBitmap();
      post({ type: "chart", seq, kind, bitmap, ms: performance.now() - started }, [bitmap]);
    },
  };
}

function sectionJob(seq, name) {
  return {
    seq, what: "section",
    run() {
      post({ type: "progress", seq, text: sectionWorking(name) });
      const view = bench.section(name);
      post({ type: "section", seq, name, view });
    },
  };
}

// The jobs that follow a fit: charts first (the curve is part of the
// first answer), then sections, then charts that need a section.
function followUps(seq, onlySections, onlyCharts) {
  const jobs = [];
  const chartWanted = (k) => charts.has(k) && (!onlyCharts || onlyCharts.includes(k));
  for (const k of FIRST_CHARTS) if (chartWanted(k)) jobs.push(chartJob(seq, k));
  for (const k of charts.keys()) if (!FIRST_CHARTS.includes(k) && k !== "drift" && chartWanted(k)) jobs.push(chartJob(seq, k));
  for (const s of SECTION_ORDER) if (sections.has(s) && (!onlySections || onlySections.includes(s))) jobs.push(sectionJob(seq, s));
  if (chartWanted("drift")) jobs.push(chartJob(seq, "drift"));
  return jobs;
}

function bootstrapJobs(seq) {
  let total = 0;
  let started = 0;
  let busy = 0;
  const slice = {
    seq, what: "bootstrap", background: true,
    run() {
      const t = performance.now();
      let done;
      do { done = bench.bootstrapStep(10); } while (done < total && performance.now() - t < 12);
      busy += performance.now() - t;
      if (done < total) {
        post({ type: "boot", seq, done, total });
        queue.push(slice);
        return;
      }
      post({ type: "boot-done", seq, view: bench.bootstrapView(), ms: performance.now() - started, computeMs: busy });
    },
  };
  return {
    seq, what: "bootstrap", background: true,
    run() {
      try {
        total = bench.bootstrapStart();
      } catch (e) {
        post({ type: "boot-error", seq, message: e.message || String(e) });
        return;
      }
      started = performance.now();
      post({ type: "boot", seq, done: 0, total });
      queue.push(slice);
    },
  };
}

function updateJobs(m) {
  const seq = m.seq;
  return [{
    seq, what: "read",
    run() {
      readStarted = performance.now();
      let fitting;
      try {
        fitting = bench.read(m.text, m.settings);
      } catch (e) {
        fitted = seq; // nothing more to do for this update
        idleSent = seq; // an error is not an update
        post({ type: "error", seq, message: e.message || String(e) });
        return;
      }
      post({ type: "progress", seq, text: fitting });
    },
  }, {
    seq, what: "fit",
    run() {
      if (fitted === seq) return; // the read failed
      let view;
      try {
        view = bench.fit();
      } catch (e) {
        if (takePanic()) throw e;
        fitted = seq;
        idleSent = seq;
        post({ type: "error", seq, message: e.message || String(e) });
        return;
      }
      fitted = seq;
      analysed = true;
      // Worker time for this answer (read and fit), for the benchmark.
      post({ type: "answer", seq, view, ms: performance.now() - readStarted });
      queue.unshift(...followUps(seq));
      if (bootstrapWanted) queue.push(bootstrapJobs(seq));
    },
  }];
}

function exportJob(m) {
  return {
    what: "export", id: m.id,
    run() {
      const text = m.what === "svg" ? bench.svg(m.chart, m.width, m.height)
        : m.what === "chartTable" ? bench.chartTable(m.chart) : bench[m.what]();
      post({ type: "export", id: m.id, text });
    },
  };
}

function want(m) {
  for (const s of m.sections || []) sections.add(s);
  for (const [k, size] of Object.entries(m.charts || {})) charts.set(k, size);
}

self.onmessage = (ev) => {
  const m = ev.data;
  if (m.type === "init") {
    initSync({ module: m.module });
    bench = new Workbench();
    return;
  }
  if (!bench) return;
  if (m.type === "update") {
    post({ type: "ack", seq: m.seq });
    latest = m.seq;
    want(m);
    bootstrapWanted = !!m.bootstrap;
    queue = queue.filter((j) => j.seq === undefined);
    queue.unshift(...updateJobs(m));
  } else if (m.type === "want") {
    // Newly shown sections or charts (or new sizes): drawn from the
    // analysis at hand when it is the latest; else the coming fit does it.
    want(m);
    if (analysed && fitted === latest) queue.unshift(...followUps(latest, m.sections || [], Object.keys(m.charts || {})));
  } else if (m.type === "export") {
    queue.push(exportJob(m));
  }
  schedule();
};
