// Page speed in headless Chromium (a benchmark, not a test). Run after
// `cargo xtask dist`:
//     node tests/browser/bench.mjs
// Figures:
// - navigation to the first drawn fit;
// - paste → answer and curve updated: from the update being sent to the
//   worker to the curve's bitmap painted (the 120 ms typing debounce is not
//   included), median at n = 50, 1,000, 10,000 and 200,000;
// - the same update until every section in view is current ("settled");
// - the longest main-thread task (PerformanceObserver longtask entries)
//   while typing into a 10,000-point paste, and while it is refitted.
// Data: a logistic (K = 5000, r = 0.08, t0 = 50 on a 0–100 axis) with
// deterministic pseudo-random noise, so every run times the same work.

import { launch, serve } from "./tests/harness.mjs";

function series(n) {
  let state = 12345;
  const rand = () => ((state = (state * 1103515245 + 12345) % 2147483648) / 2147483648) - 0.5;
  const lines = ["t,y"];
  for (let i = 0; i < n; i++) {
    const t = (i * 100) / n;
    const y = 5000 / (1 + Math.exp(-0.08 * (t - 50))) + 60 * rand();
    lines.push(`${t.toFixed(4)},${y.toFixed(3)}`);
  }
  return lines.join("\n");
}

const median = (xs) => [...xs].sort((a, b) => a - b)[Math.floor(xs.length / 2)];
const browser = await launch();
const server = await serve();
const context = await browser.newContext({ viewport: { width: 1280, height: 900 } });
const page = await context.newPage();
await page.addInitScript(() => {
  window.longTasks = [];
  new PerformanceObserver((list) => {
    for (const e of list.getEntries()) window.longTasks.push(e.duration);
  }).observe({ type: "longtask", buffered: true });
});

const first = [];
for (let i = 0; i < 5; i++) {
  await page.goto(server.url);
  await page.waitForFunction(() => window.plateauFirstFitMs !== undefined);
  first.push(await page.evaluate(() => window.plateauFirstFitMs));
}
console.log(`navigation to first drawn fit: median ${median(first).toFixed(0)} ms (5 loads)`);

for (const [n, runs] of [[50, 7], [1000, 7], [10000, 5], [200000, 2]]) {
  const text = series(n);
  const answer = [];
  const settled = [];
  const fit = [];
  const curve = [];
  let progress = new Set();
  for (let i = 0; i < runs; i++) {
    const before = await page.evaluate(() => Number(document.body.dataset.updates));
    await page.evaluate(() => {
      window.progressSeen = new Set();
      window.progressWatch = new MutationObserver(() => {
        const t = document.getElementById("work-status").textContent;
        if (t) window.progressSeen.add(t);
      });
      window.progressWatch.observe(document.getElementById("work-status"), { childList: true, characterData: true, subtree: true });
    });
    // Alternate the horizon so each round is a real re-fit and redraw.
    await page.evaluate(([t, h]) => {
      const area = document.getElementById("data");
      if (area.value !== t) {
        area.value = t;
        area.dispatchEvent(new Event("input"));
      } else {
        const hz = document.getElementById("horizon");
        hz.value = String(h);
        hz.dispatchEvent(new Event("change"));
      }
    }, [text, 10 + i]);
    await page.waitForFunction((k) => Number(document.body.dataset.updates) > k, before, { timeout: 600000 });
    const r = await page.evaluate(() => {
      window.progressWatch.disconnect();
      return [window.plateauLastAnswerMs, window.plateauLastUpdateMs, [...window.progressSeen], window.plateauLastFitMs, window.plateauLastCurveMs];
    });
    fit.push(r[3]);
    curve.push(r[4]);
    answer.push(r[0]);
    settled.push(r[1]);
    progress = new Set([...progress, ...r[2]]);
  }
  // The first round of each size reads the new text: kept when there is no other.
  const timed = (xs) => (xs.length > 2 ? xs.slice(1) : xs);
  console.log(`n = ${n}: answer and curve median ${median(timed(answer)).toFixed(1)} ms; ` +
    `of which the worker's read and fit ${median(timed(fit)).toFixed(1)} ms and curve drawing ${median(timed(curve)).toFixed(1)} ms; ` +
    `settled median ${median(timed(settled)).toFixed(0)} ms (${timed(answer).length} runs)` +
    (progress.size ? `; progress shown: ${[...progress].map((p) => JSON.stringify(p)).join(", ")}` : ""));
}

// Typing into a 10,000-point paste: ten characters, 150 ms apart, at the
// end of the text (each a new series the worker refits).
{
  const before = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.evaluate((t) => {
    const area = document.getElementById("data");
    area.value = t;
    area.dispatchEvent(new Event("input"));
  }, series(10000));
  await page.waitForFunction((k) => Number(document.body.dataset.updates) > k, before, { timeout: 600000 });
  await page.evaluate(() => { window.longTasks = []; });
  const typed = await page.evaluate(() => Number(document.body.dataset.updates));
  await page.focus("#data");
  await page.evaluate(() => {
    const area = document.getElementById("data");
    area.selectionStart = area.selectionEnd = area.value.length;
  });
  await page.keyboard.type("\n100,5", { delay: 150 });
  await page.keyboard.type("001", { delay: 150 });
  await page.waitForFunction((k) => Number(document.body.dataset.updates) > k, typed, { timeout: 600000 });
  await page.waitForFunction(() => document.body.dataset.state === "ready");
  const tasks = await page.evaluate(() => window.longTasks);
  const longest = tasks.length ? Math.max(...tasks) : 0;
  console.log(`typing into a 10,000-point paste: longest main-thread task ${longest.toFixed(0)} ms ` +
    `(${tasks.length} tasks over 50 ms: ${tasks.map((t) => t.toFixed(0)).join(", ") || "none"})`);
}
await browser.close();
server.close();
