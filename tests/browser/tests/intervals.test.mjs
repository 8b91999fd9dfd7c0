// Profile intervals, the identifiability warning and the error-model
// choice on the page, checked against the `plateau` CLI on the same data.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import path from "node:path";
import { launch, serve, openPage, pasteData, waitReady, paramValue, cliFit, sig6, assertShows, readDemo, OUT } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

// The first ten values of 10·e^(0.3 t): far before any inflection.
const EARLY = "t,y\n0,10.1\n1,13.4\n2,18.3\n3,24.5\n4,33.2\n5,44.9\n6,60.4\n7,81.7\n8,110.0\n9,148.9\n";

test("an early series shows K as not determined, with only a lower bound", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  await pasteData(page, EARLY);
  const cli = cliFit(["-"], EARLY);
  assert.equal(cli.params.K.identified, false);
  assert.equal(cli.params.K.ci95[1], null);
  const banner = page.locator("#not-identified");
  assert.equal(await banner.isVisible(), true);
  const text = await banner.textContent();
  assert.match(text, /do not determine the saturation level K/);
  const bound = /K ≥ ([0-9.,e+-]+) \(95%\)/.exec(text);
  assert.ok(bound, text);
  assertShows(assert, bound[1], cli.params.K.ci95[0], "banner's lower bound");
  const row = '#params tr[data-param="K"]';
  const interval = await page.textContent(`${row} td.interval`);
  assert.equal(interval, `≥ ${bound[1]}`);
  // No narrow number for K anywhere in its row: no standard error either.
  assert.equal(await page.textContent(`${row} td:nth-child(3)`), "not determined");
  // The code stays in the JSON and as data-code; the text is words only.
  const codes = await page.$$eval("#warnings li", (ls) => ls.map((l) => l.dataset.code));
  assert.ok(codes.includes("saturation_not_identified"), codes.join());
  assert.doesNotMatch(await page.textContent("#warnings"), /saturation_not_identified/);
  await page.screenshot({ path: path.join(OUT, "20-k-not-determined.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("profile intervals and the error-model choice match the CLI", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  const text = readDemo("weekly_signups.csv");
  await pasteData(page, text);
  let n = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.check("#accum-per-period");
  await waitReady(page, n + 1);
  n += 1;
  await page.selectOption("#error-model", "count");
  await waitReady(page, n + 1);
  n += 1;
  await page.check("#increments");
  await waitReady(page, n + 1);
  const cli = cliFit(["-", "--per-period", "--errors", "count", "--increments"], text);
  assert.equal(cli.error_model, "count");
  for (const name of ["K", "r", "t0"]) {
    assert.equal(sig6(await paramValue(page, name)), sig6(cli.params[name].estimate), name);
    const [lo, hi] = cli.params[name].ci95;
    const shown = await page.textContent(`#params tr[data-param="${name}"] td.interval`);
    const [a, b] = shown.split(" … ");
    assertShows(assert, a, lo, `${name} lower end`);
    assertShows(assert, b, hi, `${name} upper end`);
    assert.equal(cli.params[name].ci_method, "profile");
  }
  assert.match(await page.textContent("#error-model-text"), /count-like/);
  assert.match(await page.textContent("#error-model-text"), /increments/);
  assert.equal(await page.locator("#increments-hint").isVisible(), false);
  await page.screenshot({ path: path.join(OUT, "21-count-increments.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});
