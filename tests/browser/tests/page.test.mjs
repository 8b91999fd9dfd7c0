// The page in a real browser: demo fit, paste, errors, storage, exports.
// Reference values come from the `plateau` CLI on the same data (the same
// core, a different build and front end), so the page is checked against
// something outside the page.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import path from "node:path";
import {
  launch, serve, openPage, waitReady, pasteData, openInput, paramValue, cliFit, sig6, assertShows, readDemo, OUT, ROOT,
} from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

test("first visit shows the invented demo series already fitted, K as the CLI has it", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const demo = readDemo("aldermoor_subscribers.csv");
  assert.equal(await page.inputValue("#data"), demo);
  assert.match(await page.textContent("#data-label"), /Demo data \(invented\)/);
  const cli = cliFit([path.join(ROOT, "demo-data/aldermoor_subscribers.csv")]);
  for (const name of ["K", "r", "t0"]) {
    assert.equal(sig6(await paramValue(page, name)), sig6(cli.params[name].estimate), `parameter ${name}`);
  }
  assert.match(await page.textContent("#caution"), /extrapolations/);
  assert.match(await page.textContent("#caution"), /inflection/);
  assert.match(await page.textContent("#caution"), /clinical or safety/);
  assert.match(await page.textContent("#privacy"), /connect-src 'none'/);
  // Every model appears in the comparison.
  const models = await page.$$eval("#comparison tbody tr td:first-child", (tds) => tds.map((t) => t.textContent));
  assert.deepEqual([...models].sort(), ["bass", "bilogistic", "exponential", "gompertz", "logistic", "logistic4", "richards"]);
  await page.screenshot({ path: path.join(OUT, "01-demo.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("pasting a series re-fits to the CLI's numbers; garbage shows the line and keeps the results", async () => {
  const { page, context } = await openPage(browser, server.url);
  const text = readDemo("fenwick_vale_subscribers.csv");
  await pasteData(page, text);
  const cli = cliFit(["-"], text);
  for (const name of ["K", "r", "t0"]) {
    assert.equal(sig6(await paramValue(page, name)), sig6(cli.params[name].estimate), `parameter ${name}`);
  }
  const n = await page.textContent('#stats tr[data-stat="points n"] td:last-child');
  assert.equal(Number(n), cli.n);
  await page.screenshot({ path: path.join(OUT, "02-pasted.png"), fullPage: true });

  const kBefore = await paramValue(page, "K");
  const updatesBefore = await page.evaluate(() => Number(document.body.dataset.updates));
  await openInput(page);
  await page.fill("#data", "week,subscribers\n1,10\n2,20\n3,abc\n4,40\n");
  await page.waitForFunction(() => document.body.dataset.state === "error");
  const status = await page.textContent("#parse-status");
  assert.match(status, /line 4/, status);
  assert.equal(await paramValue(page, "K"), kBefore, "previous results stay on screen");
  assert.equal(await page.evaluate(() => Number(document.body.dataset.updates)), updatesBefore);
  await page.screenshot({ path: path.join(OUT, "03-parse-error.png"), fullPage: true });
  await context.close();
});

test("a date series gets dates back in the table and the per-period switch accumulates counts", async () => {
  const { page, context } = await openPage(browser, server.url);
  await pasteData(page, readDemo("tariff_share_monthly.csv"));
  const t0 = await page.textContent('#params tr[data-param="t0"] td.estimate');
  // First-of-month dates are month data: t0 is shown on a month start.
  assert.match(t0, /\(20\d\d-\d\d-01\)/, t0);

  // Say "counts per period" first, then paste the counts.
  const counts = readDemo("weekly_signups.csv");
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.check("#accum-per-period");
  await waitReady(page, before + 1);
  await pasteData(page, counts);
  // The CLI on the running totals of the same counts.
  const lines = counts.trim().split("\n");
  let sum = 0;
  const cumulative = [lines[0], ...lines.slice(1).map((l) => {
    const [w, c] = l.split(",");
    sum += Number(c);
    return `${w},${sum}`;
  })].join("\n");
  const cli = cliFit(["-"], cumulative);
  assert.equal(sig6(await paramValue(page, "K")), sig6(cli.params.K.estimate));
  await page.screenshot({ path: path.join(OUT, "04-per-period.png"), fullPage: true });
  await context.close();
});

test("Bass on per-period counts: the CLI's parameters and peak; bi-logistic on two waves", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  let before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.check("#accum-per-period");
  await waitReady(page, before + 1);
  await pasteData(page, readDemo("lumen_cell_adoptions.csv"));
  before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#model", "bass");
  await waitReady(page, before + 1);
  const cli = cliFit([path.join(ROOT, "demo-data/lumen_cell_adoptions.csv"), "--per-period", "--model", "bass"]);
  for (const name of ["m", "p", "q", "tau"]) {
    assert.equal(sig6(await paramValue(page, name)), sig6(cli.params[name].estimate), `parameter ${name}`);
  }
  const peak = await page.textContent('#milestones tr[data-peak="rate"] td:nth-child(2)');
  assertShows(assert, peak, cli.peak.rate, "peak rate");
  await page.screenshot({ path: path.join(OUT, "08-bass.png"), fullPage: true });

  before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.check("#accum-cumulative");
  await waitReady(page, before + 1);
  await pasteData(page, readDemo("wrenlow_two_waves.csv"));
  before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#model", "bilogistic");
  await waitReady(page, before + 1);
  const cli2 = cliFit([path.join(ROOT, "demo-data/wrenlow_two_waves.csv"), "--model", "bilogistic"]);
  for (const name of ["K1", "r1", "t01", "K2", "r2", "t02"]) {
    assert.equal(sig6(await paramValue(page, name)), sig6(cli2.params[name].estimate), `parameter ${name}`);
  }
  await page.screenshot({ path: path.join(OUT, "09-bilogistic.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("with more than two columns the user picks the value column", async () => {
  const { page, context } = await openPage(browser, server.url);
  const demo = readDemo("aldermoor_subscribers.csv").trim().split("\n");
  const three = demo.map((l, i) => (i === 0 ? `${l},doubled` : `${l},${2 * Number(l.split(",")[1])}`)).join("\n");
  await pasteData(page, three);
  // Read as two series by default; "one series" offers the column choice.
  assert.equal(await page.isVisible("#multi"), true);
  let updates = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#layout", "single");
  await waitReady(page, updates + 1);
  assert.equal(await page.isVisible("#multi"), false);
  assert.equal(await page.isVisible("#columns"), true);
  const k1 = await paramValue(page, "K");
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#value-col", "2");
  await waitReady(page, before + 1);
  const k2 = await paramValue(page, "K");
  assert.ok(Math.abs(k2 / k1 - 2) < 1e-6, `K doubles with the doubled column: ${k1} -> ${k2}`);
  await context.close();
});

test("reload restores data and settings; the erase button really erases", async () => {
  const { page, context } = await openPage(browser, server.url);
  const text = readDemo("harrow_fields_capacity.csv");
  await pasteData(page, text);
  let before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#model", "gompertz");
  await waitReady(page, before + 1);
  before += 1;
  await page.fill("#horizon", "30");
  await page.dispatchEvent("#horizon", "change");
  await waitReady(page, before + 1);
  const k = await paramValue(page, "K");

  await page.reload();
  await waitReady(page, 1);
  assert.equal(await page.inputValue("#data"), text);
  assert.equal(await page.inputValue("#model"), "gompertz");
  assert.equal(await page.inputValue("#horizon"), "30");
  assert.equal(await paramValue(page, "K"), k);

  await page.click("#erase");
  const stored = await page.evaluate(() => Object.keys(localStorage).length);
  assert.equal(stored, 0, "nothing left in localStorage");
  await page.reload();
  await waitReady(page, 1);
  assert.equal(await page.inputValue("#data"), readDemo("aldermoor_subscribers.csv"));
  assert.equal(await page.inputValue("#model"), "logistic");
  await context.close();
});

test("exports download and parse: CSV one row per time, JSON in the CLI's schema", async () => {
  const { page, context } = await openPage(browser, server.url);
  const demoPath = path.join(ROOT, "demo-data/aldermoor_subscribers.csv");
  const cli = cliFit([demoPath]);
  const grab = async (selector) => {
    const [dl] = await Promise.all([page.waitForEvent("download"), page.click(selector)]);
    const file = path.join(OUT, dl.suggestedFilename());
    await dl.saveAs(file);
    return readFileSync(file);
  };

  const csv = (await grab("#export-csv")).toString("utf8").trim().split("\n");
  assert.deepEqual(csv[0].split(","), [
    "time", "axis", "observed", "fitted", "forecast",
    "confidence95_lo", "confidence95_hi", "prediction95_lo", "prediction95_hi",
  ]);
  const rows = csv.slice(1).map((l) => l.split(","));
  const times = rows.map((r) => r[1]);
  assert.equal(new Set(times).size, times.length, "one row per time");
  const observed = rows.filter((r) => r[2] !== "");
  assert.equal(observed.length, cli.n);
  observed.forEach((r, i) => assert.equal(sig6(r[3]), sig6(cli.fitted[i])));
  assert.ok(rows.some((r) => r[4] !== ""), "forecast rows present");

  const report = JSON.parse((await grab("#export-json")).toString("utf8"));
  assert.deepEqual(Object.keys(report), Object.keys(cli), "same keys in the same order as the CLI");
  assert.deepEqual(Object.keys(report.params), ["K", "r", "t0"]);
  for (const p of Object.values(report.params)) {
    assert.equal(typeof p.estimate, "number");
    assert.equal(typeof p.std_error, "number");
    assert.equal(p.ci95.length, 2);
  }
  assert.equal(report.fitted.length, report.n);
  assert.equal(sig6(report.params.K.estimate), sig6(cli.params.K.estimate));
  assert.ok(Array.isArray(report.warnings));

  await context.close();
});

test("every chart downloads as PNG and as SVG", async () => {
  // A browser of its own, and a fresh page for every chart: Chromium stops
  // delivering downloads after several in a row from one page.
  const own = await launch();
  try {
    const first = await openPage(own, server.url);
    // The several-series overlay is hidden for a single series (its own test covers it).
    const charts = await first.page.$$eval("canvas.chart", (cs) => cs.filter((c) => !c.closest("[hidden]")).map((c) => c.dataset.chart));
    await first.context.close();
    // For the logistic the straight-line view is the Fisher–Pry view, shown
    // once (answer.test.mjs checks it returns for other models).
    assert.equal(charts.length, 7, charts.join());
    assert.ok(!charts.includes("linear"), charts.join());
    for (const chart of charts) {
      const { page, context, errors } = await openPage(own, server.url);
      const grab = async (selector) => {
        const [dl] = await Promise.all([
          page.waitForEvent("download", { timeout: 15000 }).catch((e) => {
            throw new Error(`${selector}: no download (${e.message}); page errors: ${errors.join(" | ")}`);
          }),
          page.click(selector),
        ]);
        const file = path.join(OUT, dl.suggestedFilename());
        await dl.saveAs(file);
        return readFileSync(file);
      };
      const png = await grab(`button[data-png="${chart}"]`);
      assert.deepEqual([...png.subarray(0, 4)], [0x89, 0x50, 0x4e, 0x47], `${chart} PNG signature`);
      const svg = (await grab(`button[data-svg="${chart}"]`)).toString("utf8");
      assert.match(svg, /<svg[^>]*>/);
      assert.match(svg, /<\/svg>\s*$/);
      await context.close();
    }
  } finally {
    // A browser left open would keep the test file from ever finishing.
    await own.close();
  }
});

test("charts are drawn at the device pixel ratio and are not blank", async () => {
  const context = await browser.newContext({ viewport: { width: 1280, height: 900 }, deviceScaleFactor: 2 });
  const page = await context.newPage();
  // Every chart drawn, not only those in view (as openPage does).
  await page.addInitScript(() => { window.plateauEager = true; });
  await page.goto(server.url);
  await waitReady(page, 1);
  const charts = await page.$$eval("canvas.chart", (canvases) => canvases.filter((c) => !c.closest("[hidden]")).map((c) => {
    const ctx = c.getContext("2d");
    const data = ctx.getImageData(0, 0, c.width, c.height).data;
    let inked = 0;
    for (let i = 0; i < data.length; i += 4) {
      if (data[i] < 200 || data[i + 1] < 200 || data[i + 2] < 200) inked++;
    }
    return { id: c.id, width: c.width, css: c.clientWidth, height: c.height, cssH: c.clientHeight, inked: inked / (c.width * c.height) };
  }));
  // Seven for the logistic: its straight-line view is the Fisher–Pry view.
  assert.equal(charts.length, 7, charts.map((c) => c.id).join());
  for (const c of charts) {
    assert.equal(c.width, Math.round(c.css * 2), `${c.id} width`);
    assert.equal(c.height, Math.round(c.cssH * 2), `${c.id} height`);
    assert.ok(c.inked > 0.005 && c.inked < 0.5, `${c.id}: ${(100 * c.inked).toFixed(2)}% of pixels drawn`);
  }
  await page.locator("#chart-curve").screenshot({ path: path.join(OUT, "06-dpr2-curve.png") });
  await context.close();
});
