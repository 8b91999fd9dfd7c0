import { readFileSync } from "node:fs";
import { launch, serve } from "/work/wt/g4/tests/browser/tests/harness.mjs";
const browser = await launch();
const server = await serve();
const ctx = await browser.newContext();
const page = await ctx.newPage();
page.on("console", (m) => console.log("console", m.type(), m.text()));
await page.goto(server.url);
const html = readFileSync("/work/wt/g4/dist/plateau.html", "utf8");
const m = /const WORKER_SOURCE = (".*?[^\\]");\n/s.exec(html);
const WS = JSON.parse(m[1]);
console.log(await page.evaluate(async (WORKER_SOURCE) => {
  const v = [];
  document.addEventListener("securitypolicyviolation", (e) => v.push(e.violatedDirective + " " + e.blockedURI));
  const out = {};
  for (const [name, src, type] of [["module-simple", "postMessage('hi')", "module"], ["classic", "postMessage('hi')", "classic"], ["full", WORKER_SOURCE, "module"]]) {
    out[name] = await new Promise((ok) => {
      const w = new Worker(URL.createObjectURL(new Blob([src], { type: "text/javascript" })), { type });
      w.onmessage = (e) => ok("msg " + e.data);
      w.onerror = (e) => ok("error " + e.message);
      setTimeout(() => ok("timeout"), 3000);
    });
  }
  return { out, v };
}, WS));
await browser.close();
server.close();
