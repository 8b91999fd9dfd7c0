// Accessibility: an axe-core audit (Deque's rules, the npm package in
// devDependencies) of the page in light and dark mode with the input
// folded and open and every chart's numbers shown; chart export buttons
// named for their chart; the status region polite.
//
// How axe gets in: the page's CSP allows only its own scripts by hash, so
// an injected script would be refused. The test's browser context is made
// with Playwright's `bypassCSP: true`, which lets `page.addScriptTag` add
// axe-core's source; the page itself is the built page, unchanged.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { readFileSync } from "node:fs";
import { createRequire } from "node:module";
import { launch, serve, waitReady } from "./harness.mjs";

const require = createRequire(import.meta.url);
const AXE = readFileSync(require.resolve("axe-core/axe.min.js"), "utf8");

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

async function audit(colorScheme, width) {
  const context = await browser.newContext({ bypassCSP: true, colorScheme, viewport: { width, height: 900 } });
  const page = await context.newPage();
  await page.goto(server.url);
  await waitReady(page, 1);
  await page.addScriptTag({ content: AXE });
  const run = () => page.evaluate(async () => {
    // eslint-disable-next-line no-undef
    const r = await axe.run(document, { resultTypes: ["violations"] });
    return r.violations.map((v) => ({ id: v.id, impact: v.impact, help: v.help, nodes: v.nodes.map((n) => n.target.join(" ")).slice(0, 5) }));
  });
  const folded = await run();
  await page.click("#edit-data");
  await page.evaluate(() => document.querySelectorAll("details.chart-numbers").forEach((d) => { d.open = true; }));
  await page.waitForFunction(() => document.querySelector("#alt-curve table"));
  const open = await run();
  await context.close();
  return [...folded, ...open];
}

for (const [scheme, width] of [["light", 1280], ["dark", 1280], ["light", 390]]) {
  test(`axe-core finds no serious or critical violation (${scheme}, ${width} px)`, async () => {
    const violations = await audit(scheme, width);
    const bad = violations.filter((v) => v.impact === "serious" || v.impact === "critical");
    assert.deepEqual(bad, [], JSON.stringify(bad, null, 1));
  });
}

test("export buttons name their chart; the status region is polite; every chart has its numbers", async () => {
  const context = await browser.newContext();
  const page = await context.newPage();
  await page.goto(server.url);
  await waitReady(page, 1);
  const names = await page.$$eval("button[data-png], button[data-svg]", (bs) => bs.map((b) => b.getAttribute("aria-label")));
  assert.ok(names.length >= 16);
  for (const n of names) assert.match(n, /^Download the .+ chart as (PNG|SVG)$/);
  assert.equal(new Set(names).size, names.length, "each button's name is its own");
  assert.equal(await page.getAttribute("#parse-status", "role"), "status");
  assert.equal(await page.$$eval("[role=alert]:not([hidden])", (els) => els.length), 0);
  for (const id of await page.$$eval("canvas.chart", (cs) => cs.map((c) => c.id))) {
    const described = await page.getAttribute(`#${id}`, "aria-describedby");
    assert.ok(described, `${id} has a text alternative`);
  }
  await page.click('details.chart-numbers[data-chart="curve"] summary');
  // The table is asked of the worker; it arrives a moment later.
  await page.waitForFunction(() => document.querySelectorAll("#alt-curve tbody tr").length > 0);
  const rows = await page.$$eval("#alt-curve tbody tr", (trs) => trs.length);
  assert.ok(rows > 30, `the curve's table has ${rows} rows (30 points and the forecast)`);
  await context.close();
});
