// Shared set-up for the browser tests: Debian's Chromium driven by
// playwright-core, and a throw-away static server for dist/ that records
// every request it receives. Paths come from `cargo xtask ci` through the
// environment (PLATEAU_PAGE, PLATEAU_BIN, PLATEAU_ROOT), with defaults for
// running `node --test tests/` by hand from tests/browser after a build.

import { chromium } from "playwright-core";
import { createServer } from "node:http";
import { readFileSync, mkdirSync } from "node:fs";
import { execFileSync } from "node:child_process";
import path from "node:path";
import { fileURLToPath } from "node:url";

const here = path.dirname(fileURLToPath(import.meta.url));
export const ROOT = process.env.PLATEAU_ROOT || path.resolve(here, "../../..");
export const PAGE = process.env.PLATEAU_PAGE || path.join(ROOT, "dist/plateau.html");
export const BIN = process.env.PLATEAU_BIN || path.join(ROOT, "target/debug/plateau");
export const OUT = path.join(ROOT, "test-output/browser");
mkdirSync(OUT, { recursive: true });

export const CHROMIUM_ARGS = [
  "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
  "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic",
];

export async function launch() {
  return chromium.launch({
    executablePath: process.env.CHROMIUM || "/usr/bin/chromium",
    args: CHROMIUM_ARGS,
  });
}

/// Serves the built page at / and records each request path.
export async function serve() {
  const html = readFileSync(PAGE);
  const requests = [];
  const server = createServer((req, res) => {
    requests.push(req.url);
    if (req.url === "/" || req.url === "/index.html" || req.url === "/plateau.html") {
      res.writeHead(200, { "Content-Type": "text/html; charset=utf-8" });
      res.end(html);
    } else {
      res.writeHead(404);
      res.end();
    }
  });
  await new Promise((ok) => server.listen(0, "127.0.0.1", ok));
  const { port } = server.address();
  return { url: `http://127.0.0.1:${port}/`, origin: `http://127.0.0.1:${port}`, requests, close: () => server.close() };
}

/// A fresh page (own context, so its own storage) that records requests.
export async function openPage(browser, url) {
  const context = await browser.newContext({ acceptDownloads: true, viewport: { width: 1280, height: 900 } });
  const page = await context.newPage();
  // Every section and chart computed at once, as if all were in view (the
  // page computes them as they come into view); worker.test.mjs checks
  // that on-demand behaviour without this.
  await page.addInitScript(() => { window.plateauEager = true; });
  const requests = [];
  page.on("request", (r) => requests.push({ url: r.url(), at: Date.now() }));
  const errors = [];
  page.on("pageerror", (e) => errors.push(String(e)));
  await page.goto(url);
  await waitReady(page, 1);
  return { context, page, requests, errors };
}

/// Waits until the page finished at least `n` successful updates.
export async function waitReady(page, n) {
  await page.waitForFunction((k) => Number(document.body.dataset.updates || 0) >= k, n, { timeout: 20000 });
}

/// Opens the folded data input ("Change the data") when it is closed.
export async function openInput(page) {
  if (await page.isHidden("#intake-body")) await page.click("#edit-data");
}

/// Replaces the data text as a paste would, and waits for the re-fit.
export async function pasteData(page, text) {
  const before = await page.evaluate(() => Number(document.body.dataset.updates || 0));
  await openInput(page);
  await page.fill("#data", text);
  await waitReady(page, before + 1);
}

/// The estimate of parameter `name` at full precision, from the table.
export async function paramValue(page, name) {
  const v = await page.getAttribute(`#params tr[data-param="${name}"] td.estimate`, "data-value");
  return Number(v);
}

/// `plateau fit --json` on a file or on text given on stdin.
export function cliFit(args, input) {
  const out = execFileSync(BIN, ["fit", ...args, "--json"], { input, encoding: "utf8" });
  return JSON.parse(out);
}

export const sig6 = (x) => Number(x).toPrecision(6);

/// Whether `text`, a number as the page shows it ("12,346", "0.0312",
/// "1.5e12"; plateau_study::numbers rounds estimates to the digits their
/// standard error supports), is `value` rounded to the digits it shows:
/// within half a unit of its last digit. Trailing zeros of a whole number
/// may stand in for digits not shown ("1,235,000") and count as places.
export function shows(text, value) {
  const t = String(text).trim().replace(/,/g, "");
  const m = /^(-?\d+(?:\.(\d+))?)(?:e([+-]?\d+))?$/.exec(t);
  if (!m) return false;
  const exp = m[3] ? Number(m[3]) : 0;
  const place = (m[2] ? -m[2].length : m[1].length - m[1].replace(/0+$/, "").length) + exp;
  const half = 0.5 * 10 ** place;
  return Math.abs(Number(t) - value) <= half * (1 + 1e-9) + Math.abs(value) * 1e-15;
}

/// `assert.ok(shows(...))` with a message naming both.
export function assertShows(assert, text, value, what) {
  assert.ok(shows(text, value), `${what}: page shows ${JSON.stringify(text)}, CLI has ${value}`);
}

export function readDemo(name) {
  return readFileSync(path.join(ROOT, "demo-data", name), "utf8");
}
