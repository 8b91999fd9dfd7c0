// The analysis runs in a worker: new input cancels stale work, the worker
// is held to the page's CSP (no connection of any kind), the main thread
// stays responsive while a large series is fitted, and the slower
// sections are computed when they come into view.

import { test, before, after } from "node:test";
import assert from "node:assert/strict";
import { launch, serve, openPage, waitReady, paramValue } from "./harness.mjs";

let browser;
let server;
before(async () => {
  browser = await launch();
  server = await serve();
});
after(async () => {
  await browser.close();
  server.close();
});

// A logistic with saturation `k` at n points and deterministic noise.
function series(n, k) {
  let s = 7;
  const rand = () => ((s = (s * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
  const lines = ["t,y"];
  for (let i = 0; i < n; i++) {
    const t = (i * 100) / n;
    lines.push(`${t.toFixed(4)},${(k / (1 + Math.exp(-0.08 * (t - 50))) + 0.01 * k * rand()).toFixed(3)}`);
  }
  return lines.join("\n");
}

// Sets the data as a paste does, without waiting.
async function setData(page, text) {
  await page.evaluate((t) => {
    const area = document.getElementById("data");
    area.value = t;
    area.dispatchEvent(new Event("input"));
  }, text);
}

test("new input cancels stale work: the large series' result never shows", async () => {
  const { page, context, errors } = await openPage(browser, server.url);
  // Every K the parameter table ever shows.
  await page.evaluate(() => {
    window.shownK = [];
    new MutationObserver(() => {
      const td = document.querySelector('#params tr[data-param="K"] td.estimate');
      if (td) window.shownK.push(Number(td.dataset.value));
    }).observe(document.getElementById("params"), { childList: true, subtree: true });
  });
  const updates = await page.evaluate(() => Number(document.body.dataset.updates));
  // The large series, and as soon as it is sent to the worker (its answer
  // takes over a second), the small one. The text box is taken out of the
  // layout: laying out 100,000 lines on the main thread would otherwise
  // delay the small one past the large one's answer.
  await page.evaluate(async ([large, small]) => {
    document.getElementById("data").style.display = "none";
    const drop = (t) => {
      const dt = new DataTransfer();
      dt.items.add(new File([t], "series.csv", { type: "text/csv" }));
      document.getElementById("data").dispatchEvent(new DragEvent("drop", { dataTransfer: dt, bubbles: true, cancelable: true }));
    };
    drop(large);
    while (document.body.dataset.state !== "working") await new Promise((r) => setTimeout(r, 0));
    drop(small);
  }, [series(100000, 90000), series(50, 1000)]);
  await waitReady(page, updates + 1);
  await page.waitForTimeout(1500); // time for a stale answer to arrive, were it not dropped
  const k = await paramValue(page, "K");
  assert.ok(Math.abs(k - 1000) < 50, `K shown ${k}`);
  const shown = await page.evaluate(() => window.shownK);
  assert.ok(shown.every((x) => x < 10000), `a K of the large series was shown: ${shown}`);
  assert.equal(await page.evaluate(() => Number(document.body.dataset.updates)), updates + 1);
  assert.deepEqual(errors, []);
  await context.close();
});

test("the worker cannot connect anywhere: the page's CSP holds inside it", async () => {
  const context = await browser.newContext();
  const page = await context.newPage();
  const workers = [];
  page.on("worker", (w) => workers.push(w));
  // Requests that got an answer (a refused one may still be announced).
  const answered = [];
  page.on("requestfinished", (r) => answered.push(r.url()));
  await page.goto(server.url);
  await waitReady(page, 1);
  assert.ok(workers.length >= 1, "the page started a worker");
  const served = server.requests.length;
  const outcome = await workers.at(-1).evaluate(async (origin) => {
    const violations = [];
    self.addEventListener("securitypolicyviolation", (e) => violations.push(e.violatedDirective));
    const attempt = async (f) => {
      try {
        await f();
        return "allowed";
      } catch (e) {
        return "refused";
      }
    };
    const blob = URL.createObjectURL(new Blob(["x"]));
    const xhr = () => new Promise((ok, fail) => {
      const x = new XMLHttpRequest();
      x.onload = ok;
      x.onerror = fail;
      x.open("GET", origin + "/xhr");
      x.send();
    });
    const result = {
      fetchHttp: await attempt(() => fetch(origin + "/fetch")),
      fetchData: await attempt(() => fetch("data:text/plain,x")),
      fetchBlob: await attempt(() => fetch(blob)),
      xhr: await attempt(xhr),
      importHttp: await attempt(() => import(origin + "/import.js")),
      importData: await attempt(() => import("data:text/javascript,export default 1")),
      importScriptsHttp: await attempt(() => importScripts(origin + "/classic.js")),
      importScriptsData: await attempt(() => importScripts("data:text/javascript,1")),
    };
    await new Promise((r) => setTimeout(r, 100));
    return { result, violations };
  }, server.origin);
  assert.deepEqual(outcome.result, {
    fetchHttp: "refused", fetchData: "refused", fetchBlob: "refused", xhr: "refused",
    importHttp: "refused", importData: "refused", importScriptsHttp: "refused", importScriptsData: "refused",
  });
  // Refused by the policy, not by chance.
  assert.ok(outcome.violations.includes("connect-src"), JSON.stringify(outcome.violations));
  assert.ok(outcome.violations.some((v) => v.startsWith("script-src")), JSON.stringify(outcome.violations));
  assert.equal(server.requests.length, served, "the server saw no new request");
  assert.ok(answered.every((u) => !u.includes("/fetch") && !u.includes("/xhr") && !u.includes("/import") && !u.includes("/classic")), answered.join(" "));
  await context.close();
});

test("the page stays responsive while 10,000 points are fitted", async () => {
  const { page, context } = await openPage(browser, server.url);
  const answers = await page.evaluate(() => Number(document.body.dataset.answers));
  await page.evaluate(() => {
    window.ticks = 0;
    window.tickTimer = setInterval(() => { window.ticks += 1; }, 10);
  });
  await setData(page, series(10000, 5000));
  await page.waitForFunction(() => document.body.dataset.state === "working");
  // While the worker fits, the page handles input: a click is handled
  // before the answer arrives.
  await page.evaluate(() => document.getElementById("data").addEventListener("click", () => {
    window.clickedWhile = document.body.dataset.state;
  }));
  await page.dispatchEvent("#data", "click");
  const during = await page.evaluate(() => ({ ticks: window.ticks, working: window.clickedWhile }));
  await page.waitForFunction((n) => Number(document.body.dataset.answers) > n, answers, { timeout: 60000 });
  const ticks = await page.evaluate(() => { clearInterval(window.tickTimer); return window.ticks; });
  assert.ok(ticks >= 5, `the main thread's timer fired ${ticks} times during the fit`);
  assert.equal(during.working, "working", "input was handled while the fit was running");
  await context.close();
});

test("sections are computed when they come into view, then kept current", async () => {
  const context = await browser.newContext({ viewport: { width: 1280, height: 720 } });
  const page = await context.newPage();
  await page.goto(server.url);
  await page.waitForFunction(() => Number(document.body.dataset.answers || 0) >= 1);
  await page.waitForFunction(() => document.body.dataset.state === "ready");
  // The answer is there; the backtest, far below, was not computed.
  assert.ok((await paramValue(page, "K")) > 0);
  assert.equal(await page.$$eval("#backtest tbody tr", (trs) => trs.length), 0);
  await page.locator("#backtest").scrollIntoViewIfNeeded();
  await page.waitForFunction(() => document.querySelectorAll("#backtest tbody tr").length > 0, null, { timeout: 30000 });
  const first = await page.$$eval("#backtest td.mape", (tds) => tds.map((td) => td.textContent).join());
  // Kept current: a new series updates the shown section.
  await setData(page, series(60, 3000));
  await page.waitForFunction((f) => {
    const now = [...document.querySelectorAll("#backtest td.mape")].map((td) => td.textContent).join();
    return document.body.dataset.state === "ready" && now !== f && !document.getElementById("backtest").hasAttribute("aria-busy");
  }, first, { timeout: 30000 });
  await context.close();
});
