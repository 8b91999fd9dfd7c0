// Two tabs of the page in one browser context (same origin, so the same
// localStorage): neither overwrites the other's stored work without the
// user choosing; and out-of-range settings get a sentence naming the
// setting and its range. Screenshots of the notice at 1280×720 and 390 px
// wide go to test-output/browser/.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import path from "node:path";
import { launch, serve, waitReady, pasteData, readDemo, OUT } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

async function tab(context) {
  const page = await context.newPage();
  const errors = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  await page.goto(server.url);
  await waitReady(page, 1);
  return { page, errors };
}

const stored = (page) => page.evaluate(() => JSON.parse(localStorage.getItem("plateau.workspace.v1") || "null"));

test("two tabs: the second tab's save is noticed, nothing is overwritten silently, the choice is the user's", async () => {
  const context = await browser.newContext({ viewport: { width: 1280, height: 720 } });
  const a = await tab(context);
  const b = await tab(context);
  const textA = readDemo("harrow_fields_capacity.csv");
  const textB = readDemo("fenwick_vale_subscribers.csv");
  await pasteData(a.page, textA);
  assert.equal((await stored(a.page)).text, textA);
  // B was opened before A's paste: B's save would overwrite A's work.
  // A's write reached B as a storage event: B says so and stops saving.
  await b.page.waitForSelector("#tab-notice:not([hidden])");
  assert.match(await b.page.textContent("#tab-notice-changed"), /Another tab with this page changed the work stored/);
  await pasteData(b.page, textB);
  assert.equal((await stored(b.page)).text, textA, "B did not overwrite A's stored work");
  assert.match(await b.page.textContent("#store-status"), /not saved: another tab changed/);
  assert.equal(await a.page.isHidden("#tab-notice"), true, "A, whose work is stored, has no notice");
  await b.page.screenshot({ path: path.join(OUT, "tabs-notice-1280.png") });
  await b.page.setViewportSize({ width: 390, height: 844 });
  await b.page.screenshot({ path: path.join(OUT, "tabs-notice-390.png") });
  await b.page.setViewportSize({ width: 1280, height: 720 });

  // A reload of B keeps B's own work and the notice (per-tab storage).
  await b.page.reload();
  await waitReady(b.page, 1);
  assert.equal(await b.page.inputValue("#data"), textB);
  assert.equal(await b.page.isVisible("#tab-notice"), true);

  // B chooses to save its work: stored, and now A is told.
  await b.page.click("#tab-keep");
  assert.equal((await stored(b.page)).text, textB);
  assert.equal(await b.page.isHidden("#tab-notice"), true);
  await a.page.waitForSelector("#tab-notice:not([hidden])");
  // A loads the other tab's work instead.
  const before = await a.page.evaluate(() => Number(document.body.dataset.updates));
  await a.page.click("#tab-load");
  await waitReady(a.page, before + 1);
  assert.equal(await a.page.inputValue("#data"), textB);
  assert.equal(await a.page.isHidden("#tab-notice"), true);
  // Both now agree with storage: A's next change saves normally.
  await pasteData(a.page, textA);
  assert.equal((await stored(a.page)).text, textA);

  // Erasing in A is noticed in B, which does not store its work again by itself.
  await b.page.waitForSelector("#tab-notice:not([hidden])");
  await b.page.click("#tab-load");
  await a.page.click("#erase");
  await b.page.waitForSelector("#tab-notice-erased:not([hidden])");
  await pasteData(b.page, textB);
  assert.equal(await stored(b.page), null, "B did not restore what A erased");
  assert.deepEqual([...a.errors, ...b.errors], []);
  await context.close();
});

async function setControl(page, id, value) {
  await page.fill(`#${id}`, String(value));
  await page.dispatchEvent(`#${id}`, "change");
}

test("out-of-range settings get a sentence naming the setting and the allowed range", async () => {
  const context = await browser.newContext({ viewport: { width: 1280, height: 720 } });
  const { page, errors } = await tab(context);
  // [control, value typed, the sentence, a value in range to put back]
  const cases = [
    ["replicates", "1e12", "Replicates B must be a whole number from 1 to 100000; it is 1000000000000.", "1000"],
    ["seed", "1e20", "Seed must be a whole number from 0 to 9007199254740991; it is 100000000000000000000.", "20240601"],
    ["horizon", "-5", "Forecast periods must be a number of periods from 0 to 1000; it is -5.", "12"],
    ["horizon", "1e9", "Forecast periods must be a number of periods from 0 to 1000; it is 1000000000.", "12"],
  ];
  for (const [id, value, sentence, valid] of cases) {
    await setControl(page, id, value);
    await page.waitForFunction((s) => document.getElementById("settings-status").textContent === s, sentence);
    const status = await page.textContent("#parse-status");
    assert.doesNotMatch(status, /invalid value|expected usize|expected u64/);
    assert.equal(await page.evaluate(() => document.body.dataset.state), "error");
    if (id === "replicates") await page.screenshot({ path: path.join(OUT, "settings-sentence.png") });
    const before = await page.evaluate(() => Number(document.body.dataset.updates));
    await setControl(page, id, valid);
    await waitReady(page, before + 1);
    assert.equal(await page.textContent("#settings-status"), "");
  }
  assert.deepEqual(errors, []);
  await context.close();
});

test("at 390 px wide the page never scrolls sideways: wide tables scroll inside their column", async () => {
  const context = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const { page, errors } = await tab(context);
  const width = await page.evaluate(() => document.documentElement.scrollWidth);
  assert.ok(width <= 390, `page is ${width} px wide at a 390 px viewport`);
  const params = await page.evaluate(() => {
    const t = document.getElementById("params");
    return { client: t.clientWidth, scroll: t.scrollWidth, overflow: getComputedStyle(t).overflowX };
  });
  assert.ok(params.client <= 390, JSON.stringify(params));
  assert.equal(params.overflow, "auto");
  await page.locator("#params").screenshot({ path: path.join(OUT, "params-390.png") });
  assert.deepEqual(errors, []);
  await context.close();
});
