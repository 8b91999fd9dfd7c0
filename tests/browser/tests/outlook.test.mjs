// Forecast bands, milestones, the bootstrap run in slices and the drift
// chart, in a real browser. Reference values come from `plateau forecast
// --json` on the same data (the same core, another build and front end).

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { execFileSync } from "node:child_process";
import path from "node:path";
import { launch, serve, openPage, waitReady, pasteData, assertShows, BIN, OUT, ROOT } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

const DEMO = path.join(ROOT, "demo-data/aldermoor_subscribers.csv");

function cliForecast(args) {
  return JSON.parse(execFileSync(BIN, ["forecast", DEMO, "--until", "60", ...args, "--json"], { encoding: "utf8" }));
}

async function setControl(page, id, value) {
  const before = await page.evaluate(() => Number(document.body.dataset.updates || 0));
  await page.fill(`#${id}`, String(value));
  await page.dispatchEvent(`#${id}`, "change");
  await waitReady(page, before + 1);
}

async function grabSvg(page, chart) {
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click(`button[data-svg="${chart}"]`)]);
  const file = path.join(OUT, dl.suggestedFilename());
  await dl.saveAs(file);
  return readFileSync(file, "utf8");
}

test("the curve chart carries both bands; the milestone table matches the CLI and says when a level is out of reach", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const svg = await grabSvg(page, "curve");
  assert.match(svg, /95% confidence band/);
  assert.match(svg, /95% prediction band \(new observation\)/);

  // The page's milestone share defaults to 90% (one of the standard
  // three); 95% is asked for here as the CLI is.
  await setControl(page, "share", 95);
  const cli = cliForecast(["--share", "95"]);
  const rows = await page.$$eval("#milestones tbody tr", (trs) => trs.map((tr) => ({
    label: tr.cells[0].textContent, verdict: tr.dataset.verdict, delta: tr.cells[2].textContent,
  })));
  for (const label of ["10% of K", "50% of K", "90% of K", "95% of K"]) {
    const row = rows.find((r) => r.label === label);
    const ref = cli.milestones.find((m) => m.label === label);
    assert.ok(row && ref, label);
    assert.equal(row.verdict, ref.verdict, `${label} verdict`);
    const [lo, hi] = row.delta.split(" … ");
    assertShows(assert, lo, ref.delta95[0], `${label} lower end`);
    assertShows(assert, hi, ref.delta95[1], `${label} upper end`);
  }

  // A level far above K: no time, an explicit statement instead.
  await setControl(page, "level", 1e9);
  const row = await page.$eval("#milestones tbody tr[data-verdict='not_reached']", (tr) => tr.textContent);
  assert.match(row, /level 1,000,000,000/);
  assert.match(row, /not reached/);
  assert.match(row, /never reaches/);
  const ref = cliForecast(["--level", "1000000000"]).milestones.find((m) => m.kind === "level");
  assert.equal(ref.verdict, "not_reached");
  assert.equal(ref.time_text, null);
  await page.screenshot({ path: path.join(OUT, "outlook-01-milestones.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("the bootstrap runs in slices with visible progress, completes, and gives the CLI's intervals", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  // A larger B first, to watch the progress bar move between slices.
  await setControl(page, "replicates", 20000);
  const seen = new Set();
  await page.check("#bootstrap");
  // Sample the progress bar from the page's own event loop: each sample
  // runs between slices, which is what "never freezing" means.
  const samples = await page.evaluate(() => new Promise((resolve) => {
    const values = [];
    const tick = () => {
      const p = document.getElementById("boot-progress");
      values.push(p.value);
      if (document.body.dataset.bootstrap === "done") resolve(values);
      else setTimeout(tick, 5);
    };
    tick();
  }));
  for (const v of samples) seen.add(v);
  const partial = [...seen].filter((v) => v > 0 && v < 20000);
  assert.ok(partial.length >= 2, `progress seen between slices: ${[...seen].slice(0, 10).join(", ")}`);
  assert.equal(await page.$eval("#boot-progress", (p) => p.value), 20000);

  // B = 1000 with the default seed: the CLI's numbers.
  await setControl(page, "replicates", 1000);
  await page.waitForFunction(() => document.body.dataset.bootstrap === "done", null, { timeout: 30000 });
  const seed = await page.inputValue("#seed");
  const cli = cliForecast(["--bootstrap", "1000", "--seed", seed]);
  const cells = await page.$$eval("#params tbody tr", (trs) => trs.map((tr) => [tr.dataset.param, tr.querySelector("td.boot").textContent]));
  for (const [name, text] of cells) {
    const [lo, hi] = text.split(" … ");
    assertShows(assert, lo, cli.params[name].bootstrap_ci95[0], `${name} bootstrap lower end`);
    assertShows(assert, hi, cli.params[name].bootstrap_ci95[1], `${name} bootstrap upper end`);
  }
  const status = await page.textContent("#boot-status");
  assert.match(status, new RegExp(`B = 1000 \\(residual\\), seed ${seed}`));
  const half = await page.$eval("#milestones tbody tr:nth-child(2) td.boot", (td) => td.textContent);
  assert.match(half, /…/);
  await page.screenshot({ path: path.join(OUT, "outlook-02-bootstrap.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("bootstrap time in the page, B = 1000 on n = 50 (printed, not asserted)", async () => {
  const { page, context } = await openPage(browser, server.url);
  // Deterministic logistic data as in the criterion bench: K=1000, r=0.8, t0=10.
  const lines = ["t,y"];
  for (let i = 0; i < 50; i++) {
    const t = (20 * i) / 49;
    lines.push(`${t},${1000 / (1 + Math.exp(-0.8 * (t - 10))) + 10 * Math.sin(1.7 * i + 0.3)}`);
  }
  await pasteData(page, lines.join("\n"));
  await setControl(page, "replicates", 1000);
  const times = [];
  for (let k = 0; k < 5; k++) {
    await page.check("#bootstrap");
    await page.waitForFunction(() => document.body.dataset.bootstrap === "done", null, { timeout: 30000 });
    times.push(await page.evaluate(() => [window.plateauBootstrapComputeMs, window.plateauBootstrapMs]));
    await page.uncheck("#bootstrap");
  }
  const compute = times.map((t) => t[0]).sort((a, b) => a - b);
  const wall = times.map((t) => t[1]).sort((a, b) => a - b);
  console.log(`page bootstrap B=1000 n=50: compute median ${compute[2].toFixed(1)} ms, wall median ${wall[2].toFixed(1)} ms (5 runs)`);
  await context.close();
});

test("the drift chart is drawn and shows K against the cutoff", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const inked = await page.$eval("#chart-drift", (c) => {
    const data = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let n = 0;
    for (let i = 0; i < data.length; i += 4) if (data[i] < 200 || data[i + 1] < 200 || data[i + 2] < 200) n++;
    return n / (c.width * c.height);
  });
  assert.ok(inked > 0.005 && inked < 0.5, `${(100 * inked).toFixed(2)}% of pixels drawn`);
  const svg = await grabSvg(page, "drift");
  assert.match(svg, /K as the data arrived \(logistic\)/);
  assert.match(svg, /95% interval/);
  // One marker per fitted prefix (plus the legend's), as `plateau drift` reports.
  const drift = JSON.parse(execFileSync(BIN, ["drift", DEMO, "--json"], { encoding: "utf8" }));
  const fitted = drift.rows.filter((r) => r.params).length;
  // A K a cutoff does not determine is an open marker at what K is at
  // least, with its own legend sample.
  const open = drift.rows.filter((r) => r.params && r.params.K.at_least != null).length;
  const openCircles = (svg.match(/<circle[^>]*fill="none"/g) || []).length;
  assert.equal(openCircles, open ? open + 1 : 0);
  if (open) assert.match(svg, /K not determined: at least/);
  assert.equal((svg.match(/<circle/g) || []).length, fitted + 1 + (open ? 1 : 0));
  await page.locator("#chart-drift").screenshot({ path: path.join(OUT, "outlook-03-drift.png") });
  assert.deepEqual(errors, []);
  await context.close();
});

test("the backtest table shows the CLI's MAPE by horizon for every model", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const cli = JSON.parse(execFileSync(BIN, ["backtest", DEMO, "--horizon", "4", "--json"], { encoding: "utf8" }));
  const rows = await page.$$eval("#backtest tbody tr", (trs) => trs.map((tr) => ({
    model: tr.dataset.model, mape: [...tr.querySelectorAll("td.mape")].map((td) => td.textContent),
  })));
  assert.equal(rows.length, cli.models.length); // every model, Bass and bi-logistic included
  for (const m of cli.models) {
    const row = rows.find((r) => r.model === m.model);
    assert.ok(row, m.model);
    assert.equal(row.mape.length, m.horizons.length, m.model);
    m.horizons.forEach((h, i) => {
      if (h.mape == null) assert.equal(row.mape[i], "–", m.model);
      else assertShows(assert, row.mape[i].replace(/%$/, ""), h.mape, `${m.model} MAPE h=${h.h}`);
    });
  }
  assert.deepEqual(errors, []);
  await context.close();
});
