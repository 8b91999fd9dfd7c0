import { launch, serve } from "/work/wt/g4/tests/browser/tests/harness.mjs";
const browser = await launch();
const server = await serve();
const ctx = await browser.newContext({ viewport: { width: 1280, height: 720 } });
const page = await ctx.newPage();
await page.addInitScript(() => {
  window.log = [];
  const orig = Worker.prototype.postMessage;
  Worker.prototype.postMessage = function (m, t) { window.log.push(["send", m.type, m.seq, Math.round(performance.now())]); return orig.call(this, m, t); };
  const OrigWorker = Worker;
  window.Worker = function (u, o) { const w = new OrigWorker(u, o); window.log.push(["new worker", Math.round(performance.now())]); w.addEventListener("message", (e) => window.log.push(["recv", e.data.type, e.data.seq, Math.round(performance.now())])); return w; };
  window.Worker.prototype = OrigWorker.prototype;
});
await page.goto(server.url);
await page.waitForFunction(() => document.body.dataset.state === "ready");
function series(n, k) {
  const lines = ["t,y"];
  for (let i = 0; i < n; i++) { const t = (i * 100) / n; lines.push(`${t.toFixed(4)},${(k / (1 + Math.exp(-0.08 * (t - 50))) + 0.01 * k * Math.sin(i)).toFixed(3)}`); }
  return lines.join("\n");
}
await page.evaluate(() => { window.log = []; });
await page.evaluate(async ([large, small]) => {
    const drop = (t) => {
      const dt = new DataTransfer();
      dt.items.add(new File([t], "series.csv", { type: "text/csv" }));
      document.getElementById("data").dispatchEvent(new DragEvent("drop", { dataTransfer: dt, bubbles: true, cancelable: true }));
    };
    drop(large);
    while (document.body.dataset.state !== "working") await new Promise((r) => setTimeout(r, 0));
    window.log.push(["working seen", Math.round(performance.now())]);
    drop(small);
  }, [series(30000, 90000), series(50, 1000)]);
await page.waitForTimeout(4000);
console.log(JSON.stringify(await page.evaluate(() => window.log)));
await browser.close(); server.close();
