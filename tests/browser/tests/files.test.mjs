// Files opened through the page's file input: a workbook fixture
// (tests/workbooks/make_workbooks.py, invented data, fixed seed) gives the
// K that `plateau fit` gives on the same file; its sheet chooser reads
// another sheet; the page's own table export, opened again, is one series.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import path from "node:path";
import { launch, serve, openPage, waitReady, paramValue, cliFit, sig6, OUT, ROOT } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

const BOOK = path.join(ROOT, "tests/workbooks/members.xlsx");

async function openFile(page, file) {
  const before = await page.evaluate(() => Number(document.body.dataset.updates || 0));
  await page.setInputFiles("#file", file);
  await waitReady(page, before + 1);
}

test("a workbook opened through the file input fits as the CLI fits it; the sheet chooser reads another sheet", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  await openFile(page, BOOK);
  const cli = cliFit([BOOK]);
  assert.equal(sig6(await paramValue(page, "K")), sig6(cli.params.K.estimate), "K of the first sheet with data");
  assert.match(await page.textContent("#data-label"), /members\.xlsx, sheet "Members"/);
  // Three sheets: the labelled chooser is shown, "Members" chosen.
  assert.equal(await page.isVisible("#sheet-select"), true);
  assert.equal(await page.getByLabel("Sheet", { exact: true }).getAttribute("id"), "sheet-select", "labelled");
  assert.deepEqual(await page.$$eval("#sheet-select option", (os) => os.map((o) => o.textContent)), ["Blank", "Members", "Quarterly"]);
  assert.equal(await page.inputValue("#sheet-select"), "2");
  // Another sheet, by keyboard: focus the chooser and step down.
  const before = await page.evaluate(() => Number(document.body.dataset.updates || 0));
  await page.focus("#sheet-select");
  await page.keyboard.press("ArrowDown");
  await waitReady(page, before + 1);
  assert.equal(await page.inputValue("#sheet-select"), "3");
  const quarterly = cliFit([BOOK, "--sheet", "Quarterly"]);
  assert.equal(sig6(await paramValue(page, "K")), sig6(quarterly.params.K.estimate), "K of the quarterly sheet");
  // The empty sheet is refused with a sentence naming it; the last fit stays.
  await page.selectOption("#sheet-select", "1");
  await page.waitForFunction(() => /is empty/.test(document.querySelector("#parse-status").textContent));
  assert.match(await page.textContent("#parse-status"), /sheet "Blank" is empty/);
  // The demo replaces the workbook's text: no chooser, no file label.
  if (await page.isHidden("#intake-body")) await page.click("#edit-data");
  await page.click("#load-demo");
  await page.waitForFunction(() => document.querySelector("#sheet-row").hidden);
  assert.doesNotMatch(await page.textContent("#data-label"), /members\.xlsx/);
  assert.deepEqual(errors, []);
  await context.close();
});

test("a damaged workbook and one with unsaved formulas are named", async () => {
  const { page, context } = await openPage(browser, server.url);
  await page.setInputFiles("#file", path.join(ROOT, "tests/workbooks/truncated.xlsx"));
  await page.waitForFunction(() => /damaged/.test(document.querySelector("#parse-status").textContent));
  await page.setInputFiles("#file", path.join(ROOT, "tests/workbooks/formulas.xlsx"));
  await page.waitForFunction(() => /cell B2/.test(document.querySelector("#parse-status").textContent));
  await context.close();
});

test("the table export opened again is the same series", async () => {
  const { page, context } = await openPage(browser, server.url);
  const k = await paramValue(page, "K");
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click("#export-csv")]);
  const file = path.join(OUT, "reopened-" + dl.suggestedFilename());
  await dl.saveAs(file);
  await openFile(page, file);
  assert.doesNotMatch(await page.textContent("#parse-status"), /series read/);
  assert.equal(await paramValue(page, "K"), k, "the same K, to the last digit");
  assert.match(await page.textContent("#warnings"), /forecast rows without an observed value/);
  await context.close();
});
