import { launch, serve } from "/work/wt/g4/tests/browser/tests/harness.mjs";
const browser = await launch();
const server = await serve();
const ctx = await browser.newContext({ viewport: { width: 1280, height: 720 } });
const page = await ctx.newPage();
page.on("pageerror", (e) => console.log("pageerror", String(e)));
page.on("console", (m) => console.log("console", m.type(), m.text()));
page.on("worker", (w) => { w.on("console", (m) => console.log("wconsole", m.text())); });
await page.goto(server.url);
await page.waitForTimeout(4000);
console.log(await page.evaluate(() => {
  const c = document.getElementById("chart-curve");
  const d = c.getContext("2d").getImageData(0, 0, c.width, c.height).data;
  let nonwhite = 0;
  for (let i = 0; i < d.length; i += 4) if (d[i] < 250 || d[i+3] < 250) nonwhite++;
  return { w: c.width, h: c.height, nonwhite, status: document.getElementById("parse-status").textContent, ms: window.plateauLastAnswerMs };
}));
await browser.close();
server.close();
