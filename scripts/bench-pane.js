#!/usr/bin/env node
/*
 * Pane and preview benchmark (run by hand; no test asserts timings):
 *   npm run build && node scripts/bench-pane.js            (add --runs 7 for more repetitions)
 *
 * In headless Chromium (chosen by scripts/browser.js: ELX_CHROMIUM, the system's, or the packaged one), over the local server:
 *   1. the preview's first render: from navigation start to the sheet drawn with every demo formula
 *      evaluated (median of fresh page loads);
 *   2. the pane's formula path on the demo ranges (C1:C1249, D1:G1249): one run with nothing cached, then runs with the fits cached, split
 *      into reading, data check, pictures, zero choices and tests;
 *   3. the pane's big-range path on the seeded synthetic sheet (preview.html?rows=1000000, 10^6 rows ×
 *      10 regressors, preview/synthetic.ts): the whole run (read in blocks, the data check made while
 *      reading, the fit in the big-fit session, the pictures), with the workers it used, and the
 *      longest task that held the page's main thread (a long-task observer), which is what an analyst
 *      feels as unresponsiveness. `--rows N` sets its size.
 */
"use strict";

const fs = require("fs");
const path = require("path");
const { launchBrowser } = require("./browser");
const { serve } = require("./serve");

const ROOT = path.resolve(__dirname, "..");
const RUNS = process.argv.includes("--runs") ? Number(process.argv[process.argv.indexOf("--runs") + 1]) : 5;
const arg = (name, d) => (process.argv.includes(name) ? Number(process.argv[process.argv.indexOf(name) + 1]) : d);
const BIG_ROWS = arg("--rows", 1000000);

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

    // 2. The pane's formula path on the demo ranges (1,248 rows × 5).
    await page.goto(`${server.url}/preview.html?bench=1`);
    await page.waitForFunction(() => window.ElxPreview && window.ElxPane, null, { timeout: 60000 });
    await page.fill("#elx-y", "Sales!C1:C1249");
    await page.fill("#elx-x", "Sales!D1:G1249");
    await page.selectOption("#elx-zeros", "drop");
    const observe = () =>
      page.evaluate(() => {
        window.__longest = 0;
        if (!window.__observing) {
          window.__observing = true;
          new PerformanceObserver((list) => {
            for (const e of list.getEntries()) window.__longest = Math.max(window.__longest, e.duration);
          }).observe({ type: "longtask", buffered: false });
        }
      });
    const runOnce = async () => {
      const before = await page.evaluate(() => window.ElxPane.completedRuns);
      await observe();
      await page.click("#elx-run");
      await page.waitForFunction((b) => window.ElxPane.completedRuns > b, before, { timeout: 600000 });
      return page.evaluate(() => ({ t: window.ElxPane.lastTimings, big: window.ElxPane.lastBigTimings, longest: window.__longest, status: document.getElementById("elx-status").textContent, workers: window.ElxPane.big && window.ElxPane.big.workers }));
    };
    const cold = await runOnce();
    const warm = [];
    for (let i = 0; i < RUNS; i++) warm.push(await runOnce());
    const row = (label, f) => console.log(`  ${label.padEnd(34)} cold ${ms(f(cold)).padStart(8)}   cached, median ${ms(median(warm.map(f))).padStart(8)}`);
    console.log("Pane, formula path, demo ranges C1:C1249 and D1:G1249:");
    row("read the ranges", (r) => r.t.read);
    row("data check (chunked)", (r) => r.t.check);
    row("pictures (fits, residuals, QQ)", (r) => r.t.pictures);
    row("zero choices side by side", (r) => r.t.choices);
    row("assumptions and tests", (r) => r.t.assumptions);
    row("whole run", (r) => r.t.total);
    row("longest main-thread task", (r) => r.longest);

    // 3. The big-range path at BIG_ROWS × 10 regressors.
    await page.goto(`${server.url}/preview.html?rows=${BIG_ROWS}`);
    await page.waitForFunction(() => window.ElxPreview && window.ElxPane, null, { timeout: 120000 });
    const bigFirst = await page.evaluate(() => window.ElxPreview.firstRenderMs);
    await page.fill("#elx-y", `A1:A${BIG_ROWS + 1}`);
    await page.fill("#elx-x", `B1:K${BIG_ROWS + 1}`);
    await page.selectOption("#elx-zeros", "drop");
    await page.selectOption("#elx-se", "HC3");
    const big = [];
    const bigRuns = Math.max(1, Math.min(RUNS, 3));
    for (let i = 0; i < bigRuns; i++) big.push(await runOnce());
    const b = (f) => ms(median(big.map(f))).padStart(8);
    console.log(`Pane, big-range path, ${BIG_ROWS.toLocaleString("en-GB")} rows × 10 regressors (log-log, HC3, Breusch–Pagan; synthetic sheet, first render ${ms(bigFirst)}; median of ${bigRuns} runs, ${big[0].workers} workers):`);
    console.log(`  read in blocks (with the data check) ${b((r) => r.big.read)}   (${big[0].big.blocks} blocks)`);
    console.log(`  fit (big-fit session)               ${b((r) => r.big.fit)}`);
    console.log(`  results and pictures                ${b((r) => r.big.pictures)}`);
    console.log(`  whole pane run                      ${b((r) => r.big.total)}`);
    console.log(`  longest main-thread task            ${b((r) => r.longest)}`);
    console.log(`  last status: ${big[big.length - 1].status}`);
  } finally {
    await browser.close();
    await server.close();
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
