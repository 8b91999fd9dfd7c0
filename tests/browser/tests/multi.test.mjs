// Several series on the page: the four-region demo (wide), the same data
// pasted in long layout, the summary table, its CSV export, the series
// selector and the overlay chart. Reference values come from the CLI's
// `plateau batch` on the same file (same core, native build).

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { execFileSync } from "node:child_process";
import path from "node:path";
import {
  launch, serve, openPage, waitReady, pasteData, openInput, paramValue, sig6, readDemo, OUT, ROOT, BIN,
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

const LONG = path.join(ROOT, "demo-data/regional_adoption_long.csv");

function cliBatch(args) {
  return execFileSync(BIN, ["batch", LONG, ...args], { encoding: "utf8", stdio: ["ignore", "pipe", "ignore"] });
}

async function summaryRows(page) {
  return page.$$eval("#summary tbody tr", (trs) => trs.map((tr) => ({
    series: tr.dataset.series,
    K: Number(tr.querySelector("td.k")?.dataset.value),
    r: Number(tr.querySelector("td.r")?.dataset.value),
    text: tr.textContent,
  })));
}

async function inkedShare(page, selector) {
  return page.$eval(selector, (c) => {
    const data = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
    let inked = 0;
    for (let i = 0; i < data.length; i += 4) {
      if (data[i] < 200 || data[i + 1] < 200 || data[i + 2] < 200) inked++;
    }
    return inked / (c.width * c.height);
  });
}

test("the four-region demo shows every series, K and r as plateau batch has them, and the overlay", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  assert.equal(await page.isHidden("#multi"), true, "hidden for a single series");
  await openInput(page);
  await page.click("#load-demo-multi");
  await waitReady(page, 2);
  assert.equal(await page.isVisible("#multi"), true);
  const cli = cliBatch(["--json"]).trim().split("\n").map((l) => JSON.parse(l));
  const rows = await summaryRows(page);
  assert.deepEqual(rows.map((r) => r.series), cli.map((c) => c.series));
  rows.forEach((r, i) => {
    assert.equal(sig6(r.K), sig6(cli[i].K.estimate), `${r.series} K`);
    assert.equal(sig6(r.r), sig6(cli[i].r.estimate), `${r.series} r`);
    assert.match(r.text, /\[/, "intervals shown");
  });
  assert.match(await page.textContent("#multi-caution"), /extrapolations/);
  assert.match(await page.textContent("#parse-status"), /4 series read \(wide layout\)/);
  const ink = await inkedShare(page, "#chart-overlay");
  assert.ok(ink > 0.005 && ink < 0.5, `overlay: ${(100 * ink).toFixed(2)}% of pixels drawn`);
  // The selector moves the detailed results to another series.
  const before = Number(await page.evaluate(() => document.body.dataset.updates));
  await page.selectOption("#series-select", "2");
  await waitReady(page, before + 1);
  assert.equal(sig6(await paramValue(page, "K")), sig6(cli[2].K.estimate), "Dunmere in the details");
  assert.match(await page.textContent("#summary tr.chosen"), /Dunmere/);
  await page.screenshot({ path: path.join(OUT, "10-several-series.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});

test("long layout pasted gives the same summary; its CSV equals plateau batch --csv", async () => {
  const { page, context } = await openPage(browser, server.url);
  await pasteData(page, readDemo("regional_adoption_long.csv"));
  assert.match(await page.textContent("#parse-status"), /4 series read \(long layout\)/);
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click("#export-summary")]);
  const file = path.join(OUT, dl.suggestedFilename());
  await dl.saveAs(file);
  const page_csv = readFileSync(file, "utf8").trim().split("\n").map((l) => l.split(","));
  const cli_csv = cliBatch(["--csv"]).trim().split("\n").map((l) => l.split(","));
  assert.deepEqual(page_csv[0], cli_csv[0], "same columns");
  assert.equal(page_csv.length, 5);
  for (let i = 1; i < cli_csv.length; i++) {
    cli_csv[i].forEach((cell, j) => {
      const mine = page_csv[i][j];
      if (cell !== "" && Number.isFinite(Number(cell))) assert.equal(sig6(mine), sig6(cell), `row ${i} column ${page_csv[0][j]}`);
      else assert.equal(mine, cell, `row ${i} column ${page_csv[0][j]}`);
    });
  }
  await context.close();
});

test("several series: a bad cell names line and series, a missing one is a warning", async () => {
  const { page, context } = await openPage(browser, server.url);
  const wide = readDemo("regional_adoption_wide.csv").split("\n");
  const bad = [...wide];
  bad[6] = bad[6].replace(/,(\d+)$/, ",12x");
  await openInput(page);
  await page.fill("#data", bad.join("\n"));
  await page.waitForFunction(() => document.body.dataset.state === "error");
  const status = await page.textContent("#parse-status");
  assert.match(status, /line 7/);
  assert.match(status, /series "Eastwold"/);

  const gap = [...wide];
  // Line 10's Corrie Haven cell (the third field) left empty.
  const cells = gap[9].split(",");
  cells[2] = "";
  gap[9] = cells.join(",");
  await pasteData(page, gap.join("\n"));
  const rows = await summaryRows(page);
  const corrie = rows.find((r) => r.series === "Corrie Haven");
  assert.match(corrie.text, /^Corrie Haven59/, "59 of 60 points fitted");
  // The warning in words in the table; its code only as data-codes.
  assert.match(corrie.text, /series "Corrie Haven".*line 10/);
  assert.doesNotMatch(corrie.text, /missing_values_skipped/);
  const codes = await page.getAttribute('#summary tr[data-series="Corrie Haven"] td:last-child', "data-codes");
  assert.match(codes, /missing_values_skipped/);
  const others = await page.$$eval('#summary tbody tr', (trs) => trs
    .filter((tr) => tr.dataset.series !== "Corrie Haven")
    .map((tr) => tr.cells[tr.cells.length - 1].dataset.codes || ""));
  for (const c of others) assert.doesNotMatch(c, /missing_values_skipped/);
  await context.close();
});
