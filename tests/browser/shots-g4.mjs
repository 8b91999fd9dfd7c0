import { launch, serve } from "./tests/harness.mjs";
const browser = await launch();
const server = await serve();
for (const [w, h, dpr] of [[1280, 720, 1], [390, 844, 3]]) {
  const ctx = await browser.newContext({ viewport: { width: w, height: h }, deviceScaleFactor: dpr });
  const page = await ctx.newPage();
  page.on("pageerror", (e) => console.log("pageerror", String(e)));
  await page.goto(server.url);
  await page.waitForFunction(() => document.body.dataset.state === "ready", null, { timeout: 60000 });
  await page.screenshot({ path: `/tmp/g4-shots/top-${w}.png` });
  await page.locator("#chart-curve").scrollIntoViewIfNeeded();
  await page.waitForTimeout(1500);
  await page.screenshot({ path: `/tmp/g4-shots/curve-${w}.png` });
  await page.locator("#chart-qq").scrollIntoViewIfNeeded();
  await page.waitForTimeout(4000);
  await page.screenshot({ path: `/tmp/g4-shots/checks-${w}.png` });
  await ctx.close();
}
await browser.close();
server.close();
