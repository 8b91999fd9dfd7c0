// Page speed in headless Chromium (a benchmark, not a test): the time of a
// full update (parse, fit the chosen model, compare all models, draw all
// three charts) for n = 50, 200 and 1000 points, and the time from
// navigation to the first drawn fit. Run after `cargo xtask dist`:
//     node tests/browser/bench.mjs
// Data: a logistic (K = 5000, r = 0.08, t0 = n/2 scaled) with deterministic
// pseudo-random noise, so every run times the same work.

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

const first = [];
for (let i = 0; i < 5; i++) {
  await page.goto(server.url);
  await page.waitForFunction(() => window.plateauFirstFitMs !== undefined);
  first.push(await page.evaluate(() => window.plateauFirstFitMs));
}
console.log(`navigation to first drawn fit: median ${median(first).toFixed(0)} ms (5 loads)`);

for (const n of [50, 200, 1000]) {
  const text = series(n);
  const times = [];
  for (let i = 0; i < 7; i++) {
    const before = await page.evaluate(() => Number(document.body.dataset.updates));
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
    await page.waitForFunction((k) => Number(document.body.dataset.updates) > k, before);
    times.push(await page.evaluate(() => window.plateauLastUpdateMs));
  }
  console.log(`full update, n = ${n}: median ${median(times.slice(1)).toFixed(1)} ms (6 runs after a warm-up)`);
}
await browser.close();
server.close();
