// The answer card and the first screen: the card's K, milestone and t0
// are the CLI's (`plateau fit --json`, `plateau forecast --json` on the
// same demo file: the same core through a different build and face); the
// card and at least 300 px of the fitted curve show without scrolling at
// 1280×720 and 1440×900; a keyboard-only path from paste to export; no
// sideways scrolling at 390 px. Screenshots go to tests/browser/output/.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { mkdirSync } from "node:fs";
import { execFileSync } from "node:child_process";
import path from "node:path";
import { launch, serve, waitReady, readDemo, sig6, cliFit, BIN, ROOT } from "./harness.mjs";

const SHOTS = path.join(ROOT, "tests/browser/output");
mkdirSync(SHOTS, { recursive: true });
const DEMO = path.join(ROOT, "demo-data/aldermoor_subscribers.csv");

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

async function open(width, height, extra = {}) {
  const context = await browser.newContext({ acceptDownloads: true, viewport: { width, height }, ...extra });
  const page = await context.newPage();
  const errors = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  await page.goto(server.url);
  await waitReady(page, 1);
  return { context, page, errors };
}

async function cardNumber(page, key) {
  return Number(await page.getAttribute(`#answer-lines .answer-line[data-key="${key}"]`, "data-value"));
}

test("the answer card's K, 90% milestone and t0 are the CLI's", async () => {
  const { page, context, errors } = await open(1280, 720);
  const fit = cliFit([DEMO]);
  const forecast = JSON.parse(execFileSync(BIN, ["forecast", DEMO, "--until", "60", "--json"], { encoding: "utf8" }));
  const m90 = forecast.milestones.find((m) => m.kind === "share" && m.target === 0.9);
  assert.equal(sig6(await cardNumber(page, "saturation")), sig6(fit.params.K.estimate), "K");
  assert.equal(sig6(await cardNumber(page, "midpoint")), sig6(fit.params.t0.estimate), "t0");
  assert.equal(sig6(await cardNumber(page, "milestone")), sig6(m90.estimate), "90% of K");
  // The words: K with its interval, the milestone labelled as the
  // milestone table labels it, the rate per the data's time unit.
  const text = await page.textContent("#answer");
  assert.match(text, /Ceiling K/);
  assert.match(text, /about 11,9\d\d subscribers/);
  assert.match(text, /95% interval 11,\d{3} … 12,\d{3}/);
  assert.match(text, /90% of K reached/);
  assert.match(text, /subscribers per week/);
  assert.match(text, /extrapolations/);
  assert.match(text, /clinical or safety/);
  assert.match(await page.textContent("#answer-trust"), /\S/);
  // The input is folded to one line composed in Rust.
  assert.equal(await page.isHidden("#intake-body"), true);
  assert.match(await page.textContent("#data-summary"), /^30 points of subscribers, week 1 … week 30, running totals$/);
  assert.deepEqual(errors, []);
  await context.close();
});

test("K the data do not determine: 'at least', and no date for 90% of K", async () => {
  const { page, context } = await open(1280, 720);
  // The first 10 weeks of the demo: well before the inflection (week 14).
  const early = readDemo("aldermoor_subscribers.csv").trim().split("\n").slice(0, 11).join("\n");
  const fit = cliFit(["-"], early);
  assert.equal(fit.params.K.identified, false, "the CLI says K is not determined");
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.click("#edit-data");
  await page.fill("#data", early);
  await waitReady(page, before + 1);
  const k = await page.textContent('#answer-lines .answer-line[data-key="saturation"]');
  assert.match(k, /at least|not determined/);
  assert.doesNotMatch(k, /about/);
  const m = await page.textContent('#answer-lines .answer-line[data-key="milestone"]');
  assert.match(m, /no date/);
  assert.match(m, /not determined/);
  assert.equal(await page.getAttribute('#answer-lines .answer-line[data-key="milestone"]', "data-value"), null);
  assert.doesNotMatch(await page.textContent("#answer-trust"), /^Sound/);
  await context.close();
});

for (const [width, height] of [[1280, 720], [1440, 900]]) {
  test(`first screen at ${width}×${height}: the answer card and ≥ 300 px of the fitted curve`, async () => {
    const { page, context } = await open(width, height);
    const card = await page.locator("#answer").boundingBox();
    const curve = await page.locator("#chart-curve").boundingBox();
    assert.ok(card.y >= 0 && card.y + card.height <= height, `card ${JSON.stringify(card)} within ${height}`);
    assert.ok(curve.y >= 0 && curve.y + curve.height <= height, `curve ${JSON.stringify(curve)} within ${height}`);
    assert.ok(curve.height >= 300, `curve ${curve.height} px tall`);
    assert.equal(await page.evaluate(() => window.scrollY), 0);
    await page.screenshot({ path: path.join(SHOTS, `first-screen-${width}x${height}.png`) });
    await context.close();
  });
}

test("at 390 px the page does not scroll sideways (input open and folded)", async () => {
  const { page, context } = await open(390, 844);
  const wide = () => page.evaluate(() => document.documentElement.scrollWidth);
  assert.ok((await wide()) <= 390, `page is ${await wide()} px wide`);
  await page.screenshot({ path: path.join(SHOTS, "first-screen-390.png") });
  await page.click("#edit-data");
  assert.ok((await wide()) <= 390, `with the input open: ${await wide()} px wide`);
  await context.close();
});

// Presses Tab until the element with `id` has the focus (at most `limit` presses).
async function tabTo(page, id, limit = 300, key = "Tab") {
  for (let i = 0; i < limit; i++) {
    await page.keyboard.press(key);
    if (await page.evaluate((x) => document.activeElement && document.activeElement.id === x, id)) return i + 1;
  }
  throw new Error(`Tab never reached #${id}`);
}

test("keyboard only: open the input, paste, fit, export", async () => {
  const { page, context } = await open(1280, 720);
  const text = readDemo("fenwick_vale_subscribers.csv");
  await tabTo(page, "edit-data");
  await page.keyboard.press("Enter");
  assert.equal(await page.evaluate(() => document.activeElement.id), "data", "the text box has the focus");
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.keyboard.press("Control+A");
  await page.keyboard.insertText(text);
  await waitReady(page, before + 1);
  const fit = cliFit(["-"], text);
  assert.equal(sig6(await cardNumber(page, "saturation")), sig6(fit.params.K.estimate), "K after the paste");
  // The focus ring is visible on a focused control.
  await tabTo(page, "fold-data");
  const outline = await page.evaluate(() => getComputedStyle(document.activeElement).outlineStyle);
  assert.notEqual(outline, "none");
  // "Open file…" is a real button reached by Tab that opens the file chooser.
  // (back from "Done": a few steps, without wrapping round the page)
  await tabTo(page, "open-file", 20, "Shift+Tab");
  assert.deepEqual(
    await page.evaluate(() => [document.activeElement.id, document.getElementById("intake-body").hidden]),
    ["open-file", false],
    "Open file has the focus, in the open data panel",
  );
  // Enter on the button opens the file input (its click is what shows the
  // chooser; headless Chromium under load does not always report the
  // chooser itself, so the test watches the input being opened).
  await page.evaluate(() => {
    window.fileInputOpened = false;
    document.getElementById("file").addEventListener("click", () => { window.fileInputOpened = true; }, { once: true });
  });
  page.on("filechooser", () => {}); // a chooser that opens is dismissed
  await page.keyboard.press("Enter");
  await page.waitForFunction(() => window.fileInputOpened === true, null, { timeout: 10000 });
  await tabTo(page, "export-json");
  const [download] = await Promise.all([page.waitForEvent("download"), page.keyboard.press("Enter")]);
  assert.equal(download.suggestedFilename(), "plateau-report.json");
  await context.close();
});

test("one view per transform: the straight-line view only where it is not the Fisher–Pry view", async () => {
  const { page, context } = await open(1280, 900);
  assert.equal(await page.isHidden("#fig-linear"), true, "logistic: its straight line is the Fisher–Pry view");
  assert.equal(await page.isVisible("#chart-fisher-pry"), true);
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.selectOption("#model", "gompertz");
  await waitReady(page, before + 1);
  assert.equal(await page.isVisible("#chart-linear"), true, "Gompertz: its own straight-line transform");
  await context.close();
});
