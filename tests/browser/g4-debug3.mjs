import { launch, serve } from "/work/wt/g4/tests/browser/tests/harness.mjs";
const browser = await launch();
const server = await serve();
const ctx = await browser.newContext({ viewport: { width: 1280, height: 720 } });
const page = await ctx.newPage();
await page.goto(server.url);
await page.waitForFunction(() => document.body.dataset.state === "ready");
function series(n, k) {
  const lines = ["t,y"];
  for (let i = 0; i < n; i++) { const t = (i * 100) / n; lines.push(`${t.toFixed(4)},${(k / (1 + Math.exp(-0.08 * (t - 50))) + 0.01 * k * Math.sin(i)).toFixed(3)}`); }
  return lines.join("\n");
}
for (const n of [10000, 100000]) {
  const a = await page.evaluate(() => Number(document.body.dataset.answers));
  const t0 = Date.now();
  await page.evaluate((t) => { const dt = new DataTransfer(); dt.items.add(new File([t], "s.csv")); document.getElementById("data").dispatchEvent(new DragEvent("drop", { dataTransfer: dt, bubbles: true, cancelable: true })); }, series(n, 90000));
  await page.waitForFunction((k) => Number(document.body.dataset.answers) > k, a, { timeout: 120000 });
  console.log(n, Date.now() - t0, await page.evaluate(() => [window.plateauLastAnswerMs, document.getElementById("parse-status").textContent]));
}
await browser.close(); server.close();
