#!/usr/bin/env node
/*
 * Pane and preview benchmark (run by hand; no test asserts timings):
 *   npm run build && node scripts/bench-pane.js            (add --runs 7 for more repetitions)
 *
 * In headless Chromium (chosen by scripts/browser.js: ELX_CHROMIUM, the system's, or the packaged one), over the local server:
 *   1. the preview's first render: from navigation start to the sheet drawn with every demo formula
 *      evaluated (median of fresh page loads);
 *   2. the pane on a synthetic sheet of 100,000 rows × 5 columns (preview.html?rows=100000): one run
 *      of "Check ranges and model" with nothing cached (the fits are computed), then runs with the
 *      fits cached, split into reading, data check, pictures, zero choices and tests; and the longest
 *      task that held the page's main thread during a run (a long-task observer), which is what an
 *      analyst feels as unresponsiveness.
 */
"use strict";

const fs = require("fs");
const path = require("path");
const { launchBrowser } = require("./browser");
const { serve } = require("./serve");

const ROOT = path.resolve(__dirname, "..");
const RUNS = process.argv.includes("--runs") ? Number(process.argv[process.argv.indexOf("--runs") + 1]) : 5;
const ROWS = 100000;

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};
const ms = (v) => `${Math.round(v)} ms`;

async function main() {
  if (!fs.existsSync(path.join(ROOT, "dist", "preview.html"))) throw new Error("dist/preview.html is missing: run npm run build first");
  const server = await serve({ root: path.join(ROOT, "dist") });
  const browser = await launchBrowser({ viewport: { width: 1400, height: 900 } });
  console.log(`Chromium: ${browser.choice.kind} (${browser.executablePath})`);
  try {
    const page = browser.page;
    // 1. First render of the demo preview.
    const first = [];
    for (let i = 0; i < RUNS; i++) {
      await page.goto(`${server.url}/preview.html?run=${i}`);
      await page.waitForFunction(() => window.ElxPreview && window.ElxPane);
      first.push(await page.evaluate(() => window.ElxPreview.firstRenderMs));
    }
    const recalc = await page.evaluate(() => window.ElxPreviewWorkbook.lastRecalcMs);
    console.log(`Preview first render (demo, ${RUNS} loads): median ${ms(median(first))} (min ${ms(Math.min(...first))}, max ${ms(Math.max(...first))}); one full recalculation of the demo formulas: ${ms(recalc)}`);

    // 2. The pane at 100,000 × 5.
    await page.goto(`${server.url}/preview.html?rows=${ROWS}`);
    await page.waitForFunction(() => window.ElxPreview && window.ElxPane, null, { timeout: 120000 });
    const bigFirst = await page.evaluate(() => window.ElxPreview.firstRenderMs);
    await page.evaluate(() => {
      window.__longest = 0;
      new PerformanceObserver((list) => {
        for (const e of list.getEntries()) window.__longest = Math.max(window.__longest, e.duration);
      }).observe({ type: "longtask", buffered: false });
    });
    await page.fill("#elx-y", `A1:A${ROWS + 1}`);
    await page.fill("#elx-x", `B1:E${ROWS + 1}`);
    await page.selectOption("#elx-zeros", "drop");
    const runOnce = async () => {
      const before = await page.evaluate(() => window.ElxPane.completedRuns);
      await page.evaluate(() => {
        window.__longest = 0;
      });
      await page.click("#elx-run");
      await page.waitForFunction((b) => window.ElxPane.completedRuns > b, before, { timeout: 300000 });
      return page.evaluate(() => ({ t: window.ElxPane.lastTimings, longest: window.__longest, status: document.getElementById("elx-status").textContent }));
    };
    const cold = await runOnce();
    const warm = [];
    for (let i = 0; i < RUNS; i++) warm.push(await runOnce());
    const row = (label, f) => console.log(`  ${label.padEnd(34)} cold ${ms(f(cold)).padStart(8)}   cached, median ${ms(median(warm.map(f))).padStart(8)}`);
    console.log(`Pane at ${ROWS.toLocaleString("en-GB")} rows × 5 columns (synthetic sheet; its first render ${ms(bigFirst)}):`);
    row("read the ranges", (r) => r.t.read);
    row("data check (chunked)", (r) => r.t.check);
    row("pictures (fits, residuals, QQ)", (r) => r.t.pictures);
    row("zero choices side by side", (r) => r.t.choices);
    row("assumptions and tests", (r) => r.t.assumptions);
    row("data check + pictures", (r) => r.t.check + r.t.pictures);
    row("whole run", (r) => r.t.total);
    row("longest main-thread task", (r) => r.longest);
    console.log(`  last status: ${warm[warm.length - 1].status}`);
  } finally {
    await browser.close();
    await server.close();
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
