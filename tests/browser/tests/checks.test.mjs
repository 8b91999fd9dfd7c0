// The checks panel in a real browser: residual verdicts, the Q-Q chart, the
// symmetry test beside the mirror chart, the Fisher–Pry view with an entered
// K and the recommendation beside the comparison. Reference values come from
// the `plateau` CLI (`diagnose --json`, `compare --json`) on the same data.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { execFileSync } from "node:child_process";
import { readFileSync } from "node:fs";
import path from "node:path";
import { launch, serve, openPage, waitReady, pasteData, readDemo, assertShows, OUT, BIN } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

function cli(args, input) {
  return JSON.parse(execFileSync(BIN, [...args, "-", "--json"], { input, encoding: "utf8" }));
}

/// Distinct colours on a canvas: a drawn chart has many, a blank one one.
async function colours(page, id) {
  return page.evaluate((id) => {
    const c = document.getElementById(id);
    const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    const seen = new Set();
    for (let i = 0; i < d.length; i += 4 * 7) seen.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
    return seen.size;
  }, id);
}

test("a logistic on Gompertz-shaped data: streaky residuals, asymmetric, Gompertz suggested — as the CLI says", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const text = readDemo("harrow_fields_capacity.csv");
  await pasteData(page, text);
  const diag = cli(["diagnose"], text);
  const shown = await page.$$eval("#verdicts li", (lis) => lis.map((li) => ({ code: li.dataset.code, text: li.textContent, flagged: li.className === "flagged" })));
  assert.deepEqual(shown.map((v) => v.text), diag.verdicts.map((v) => v.text));
  assert.ok(shown.some((v) => v.code === "runs_streaks" && v.flagged));
  assert.ok(shown.some((v) => v.code === "asymmetric" && v.flagged));
  // The symmetry verdict sits beside the mirror chart.
  const sym = await page.textContent("#symmetry-test");
  assert.equal(sym, diag.symmetry_test.verdict.text);
  assert.match(sym, /late phase is slower than the early phase/);
  assert.equal(await page.getAttribute("#symmetry-test", "class"), "verdict flagged");
  // Residual statistics agree with the CLI at the digits the page shows.
  const dw = await page.textContent('#diag-stats tr[data-stat="Durbin–Watson"] td:last-child');
  assertShows(assert, dw, diag.residuals.durbin_watson, "Durbin–Watson");
  // The recommendation beside the comparison table.
  const cmp = cli(["compare"], text);
  assert.equal(await page.textContent("#recommended-model"), cmp.recommendation.model);
  assert.equal(cmp.recommendation.model, "gompertz");
  const reasons = await page.$$eval("#recommendation-reasons li", (lis) => lis.map((li) => li.textContent));
  assert.deepEqual(reasons, cmp.recommendation.reasons);
  assert.ok((await colours(page, "chart-qq")) > 10, "Q-Q chart drawn");
  await page.locator("#diagnostics").screenshot({ path: path.join(OUT, "checks-gompertz-data.png") });
  assert.deepEqual(errors, []);
  await context.close();
});

test("Fisher–Pry view with an entered K: the curvature verdict follows the K, as the CLI has it", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const demo = readDemo("aldermoor_subscribers.csv");
  const fitted = cli(["diagnose"], demo);
  assert.equal(await page.getAttribute("#fisher-pry-verdict", "data-code"), fitted.fisher_pry.verdict.code);
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.fill("#fisher-pry-k", "14000");
  await page.dispatchEvent("#fisher-pry-k", "change");
  await waitReady(page, before + 1);
  const entered = JSON.parse(execFileSync(BIN, ["diagnose", "-", "--json", "--fisher-pry-k", "14000"], { input: demo, encoding: "utf8" }));
  assert.equal(entered.fisher_pry.verdict.code, "curved");
  assert.equal(await page.textContent("#fisher-pry-verdict"), entered.fisher_pry.verdict.text);
  assert.equal(await page.getAttribute("#fisher-pry-verdict", "class"), "verdict flagged");
  assert.ok((await colours(page, "chart-fisher-pry")) > 10, "Fisher–Pry chart drawn");
  // The SVG download names the entered K.
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click('button[data-svg="fisher-pry"]')]);
  const file = path.join(OUT, "checks-" + dl.suggestedFilename());
  await dl.saveAs(file);
  const svg = readFileSync(file, "utf8");
  assert.match(svg, /K = 14,000 \(entered\)/);
  // The checks export is `plateau diagnose --json` with the entered K.
  const [dj] = await Promise.all([page.waitForEvent("download"), page.click("#export-checks")]);
  const jfile = path.join(OUT, "checks-" + dj.suggestedFilename());
  await dj.saveAs(jfile);
  const checks = JSON.parse(readFileSync(jfile, "utf8"));
  assert.deepEqual(Object.keys(checks), Object.keys(entered), "same keys in the same order as the CLI");
  assert.deepEqual(checks.verdicts, entered.verdicts);
  assert.equal(checks.fisher_pry.k, 14000);
  // The entered K survives a reload (it is part of the stored settings).
  await page.reload();
  await waitReady(page, 1);
  assert.equal(await page.inputValue("#fisher-pry-k"), "14000");
  await page.locator("#diagnostics").screenshot({ path: path.join(OUT, "checks-fisher-pry-k.png") });
  assert.deepEqual(errors, []);
  await context.close();
});
