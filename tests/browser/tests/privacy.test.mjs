// The privacy promise, checked in the browser: the Content-Security-Policy
// is there, the browser refuses connections (even to the page's own
// origin), no request leaves after load, and the single file works when
// opened straight from disk.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { launch, serve, openPage, pasteData, paramValue, cliFit, sig6, readDemo, OUT, PAGE } from "./harness.mjs";

let browser, server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser?.close();
  server?.close();
});

test("the page carries a CSP that forbids connections", async () => {
  const { page, context } = await openPage(browser, server.url);
  const csp = await page.getAttribute('meta[http-equiv="Content-Security-Policy"]', "content");
  assert.match(csp, /default-src 'none'/);
  assert.match(csp, /connect-src 'none'/);
  assert.match(csp, /script-src 'sha256-[A-Za-z0-9+/=]+' 'wasm-unsafe-eval'/);
  assert.doesNotMatch(csp, /https?:|\*/);
  // Charts are drawn and their text measured in the worker: no inline
  // style or script beyond the hashed blocks is let through.
  assert.doesNotMatch(csp, /unsafe-inline/);
  // The one widening: the worker, started from a Blob URL the page makes.
  assert.match(csp, /worker-src blob:;/);
  await context.close();
});

test("a fetch, even to the page's own URL, is refused by the browser", async () => {
  const { page, context, requests } = await openPage(browser, server.url);
  const served = server.requests.length;
  const outcome = await page.evaluate(async () => {
    const violations = [];
    document.addEventListener("securitypolicyviolation", (e) => violations.push(e.violatedDirective));
    const tries = {};
    for (const [name, url] of [["self", location.href], ["remote", "https://example.invalid/x"]]) {
      try {
        await fetch(url);
        tries[name] = "fetched";
      } catch (e) {
        tries[name] = "refused";
      }
    }
    await new Promise((r) => setTimeout(r, 100));
    return { tries, violations };
  });
  assert.deepEqual(outcome.tries, { self: "refused", remote: "refused" });
  assert.ok(outcome.violations.includes("connect-src"), JSON.stringify(outcome.violations));
  assert.equal(server.requests.length, served, "the server saw no new request");
  assert.ok(requests.every((r) => !r.url.includes("example.invalid")));
  await context.close();
});

test("only the page itself is requested, and nothing after load while working", async () => {
  const { page, context, requests } = await openPage(browser, server.url);
  const atLoad = requests.length;
  for (const r of requests) {
    const u = new URL(r.url);
    assert.ok(u.origin === server.origin || u.protocol === "data:", `unexpected request ${r.url}`);
  }
  // Work the page: paste, change model, export.
  await pasteData(page, readDemo("fenwick_vale_subscribers.csv"));
  await page.selectOption("#model", "richards");
  await page.waitForTimeout(300);
  const [dl] = await Promise.all([page.waitForEvent("download"), page.click("#export-json")]);
  await dl.path();
  const network = requests.slice(atLoad).filter((r) => !r.url.startsWith("blob:") && !r.url.startsWith("data:"));
  assert.deepEqual(network, [], "no network request after load");
  assert.deepEqual(server.requests, server.requests.filter((u) => u === "/" || u === "/favicon.ico"));
  await context.close();
});

test("the single-file build works opened from file://", async () => {
  const url = pathToFileURL(PAGE).href;
  const { page, context, errors } = await openPage(browser, url);
  const cli = cliFit(["-"], readDemo("aldermoor_subscribers.csv"));
  assert.equal(sig6(await paramValue(page, "K")), sig6(cli.params.K.estimate));
  await pasteData(page, readDemo("fenwick_vale_subscribers.csv"));
  assert.ok((await paramValue(page, "K")) > 0);
  await page.screenshot({ path: path.join(OUT, "05-file-url.png"), fullPage: true });
  assert.deepEqual(errors, []);
  await context.close();
});
