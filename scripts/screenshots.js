#!/usr/bin/env node
/*
 * `npm run screenshots`: builds, then refreshes the README's pictures assets/screenshots/preview.png,
 * pane.png, pane-panel.png, and the big-range path's preview-big.png and pane-big.png, from the preview in headless Chromium (scripts/browser.js chooses which). The
 * browser test takes the same pictures with the same steps (takeScreenshots) into the ignored
 * folder test-output/screenshots, so `npm test` never changes a tracked file.
 *   node scripts/screenshots.js [folder]     after a build: write the two pictures into folder
 */
"use strict";

const fs = require("fs");
const path = require("path");

const ROOT = path.resolve(__dirname, "..");
const README_SHOTS = path.join(ROOT, "assets", "screenshots");

/**
 * From a loaded preview page: checks the demo ranges with zeros left out, then writes the whole page
 * (preview.png) and the whole pane at its full height (pane.png) into dir; then the pane's assumptions
 * on the panel block D1:J1249 with store fixed effects and clusters (pane-panel.png).
 * @param {import("playwright-core").Page} page
 * @param {string} dir
 * @returns {Promise<string[]>} the three files written
 */
async function takeScreenshots(page, dir) {
  fs.mkdirSync(dir, { recursive: true });
  await page.fill("#elx-y", "Sales!C1:C1249");
  await page.fill("#elx-x", "Sales!D1:G1249");
  await page.selectOption("#elx-estimator", "ols");
  await page.selectOption("#elx-zeros", "drop");
  const before = await page.evaluate(() => window.ElxPane.completedRuns);
  await page.click("#elx-run");
  await page.waitForFunction((b) => window.ElxPane.completedRuns > b, before, { timeout: 30000 });
  await page.fill("#pv-name", "A1");
  await page.press("#pv-name", "Enter");
  await page.evaluate(() => {
    document.getElementById("elx-pane").scrollTop = 0;
  });
  const files = [path.join(dir, "preview.png"), path.join(dir, "pane.png")];
  await page.screenshot({ path: files[0] });
  // The whole pane, not only its visible part: let it grow to its full height for the picture.
  await page.evaluate(() => {
    document.body.style.height = "auto";
    document.querySelector(".pv-main").style.alignItems = "flex-start";
    const pane = document.getElementById("elx-pane");
    pane.style.overflow = "visible";
    pane.style.height = "auto";
  });
  await page.locator("#elx-pane").screenshot({ path: files[1] });
  // The panel story: x with Branch, Period and FlourCost, store fixed effects and errors clustered
  // by store; the pane's assumptions (and, when registered, 2SLS and the rolling path) below.
  await page.fill("#elx-x", "Sales!D1:J1249");
  await run(page);
  await page.selectOption("#elx-absorb", "Branch");
  await page.selectOption("#elx-cluster", "Branch");
  const iv = await page.evaluate(() => Array.from(document.querySelectorAll("#elx-instrument option")).some((o) => o.value === "FlourCost"));
  if (iv) await page.selectOption("#elx-instrument", "FlourCost");
  await run(page);
  files.push(path.join(dir, "pane-panel.png"));
  await page.locator("#elx-assume").screenshot({ path: files[2] });
  // Put the pane back as the other tests expect it.
  if (iv) await page.selectOption("#elx-instrument", "");
  await page.selectOption("#elx-absorb", "");
  await page.selectOption("#elx-cluster", "");
  await page.fill("#elx-x", "Sales!D1:G1249");
  return files;
}

/**
 * From a preview page on the synthetic sheet (preview.html?rows=N) whose pane has fitted the big
 * ranges: the page with the big path's results (preview-big.png) and the pane's big section at its
 * full height (pane-big.png).
 * @param {import("playwright-core").Page} page
 * @param {string} dir
 * @returns {Promise<string[]>} the two files written
 */
async function takeBigScreenshots(page, dir) {
  fs.mkdirSync(dir, { recursive: true });
  const files = [path.join(dir, "preview-big.png"), path.join(dir, "pane-big.png")];
  await page.evaluate(() => {
    document.getElementById("elx-big").scrollIntoView();
  });
  await page.screenshot({ path: files[0] });
  // the whole section, not only the pane's visible part; the sheet's scroller keeps its height (a
  // grid of 200,000 rows let grow would draw every row), and the page is put back afterwards
  await page.evaluate(() => {
    const keep = (el) => ({ el, style: el.getAttribute("style") });
    const pane = document.getElementById("elx-pane");
    const scroll = document.querySelector(".pv-scroll");
    window.__elxStyles = [keep(document.body), keep(document.querySelector(".pv-main")), keep(pane), keep(scroll)];
    scroll.style.height = `${scroll.clientHeight}px`;
    scroll.style.flex = "none";
    document.body.style.height = "auto";
    document.querySelector(".pv-main").style.alignItems = "flex-start";
    pane.style.overflow = "visible";
    pane.style.height = "auto";
  });
  await page.locator("#elx-big").screenshot({ path: files[1] });
  await page.evaluate(() => {
    for (const { el, style } of window.__elxStyles) {
      if (style === null) el.removeAttribute("style");
      else el.setAttribute("style", style);
    }
  });
  return files;
}

/** Fills the synthetic sheet's ranges, fits them and waits for the run to finish. */
async function fitBig(page, rows) {
  await page.fill("#elx-y", `A1:A${rows + 1}`);
  await page.fill("#elx-x", `B1:K${rows + 1}`);
  await page.selectOption("#elx-zeros", "drop");
  await page.selectOption("#elx-se", "HC3");
  const before = await page.evaluate(() => window.ElxPane.completedRuns);
  await page.click("#elx-run");
  await page.waitForFunction((b) => window.ElxPane.completedRuns > b, before, { timeout: 120000 });
}

/** Presses the pane's check button and waits for the run to finish. */
async function run(page) {
  const before = await page.evaluate(() => window.ElxPane.completedRuns);
  await page.click("#elx-run");
  await page.waitForFunction((b) => window.ElxPane.completedRuns > b, before, { timeout: 30000 });
}

async function main() {
  const { serve } = require("./serve");
  const { launchBrowser } = require("./browser");
  const dir = path.resolve(process.argv[2] || README_SHOTS);
  if (!fs.existsSync(path.join(ROOT, "dist", "preview.html"))) throw new Error("dist/preview.html is missing: run npm run build first (npm run screenshots does)");
  const server = await serve({ root: path.join(ROOT, "dist") });
  const browser = await launchBrowser();
  try {
    await browser.page.goto(`${server.url}/preview.html`);
    await browser.page.waitForFunction(() => window.ElxPreview && window.ElxPane, null, { timeout: 20000 });
    const files = await takeScreenshots(browser.page, dir);
    // the big-range path on the synthetic sheet
    await browser.page.goto(`${server.url}/preview.html?rows=200000`);
    await browser.page.waitForFunction(() => window.ElxPreview && window.ElxPane, null, { timeout: 60000 });
    await fitBig(browser.page, 200000);
    files.push(...(await takeBigScreenshots(browser.page, dir)));
    console.log(`Chromium: ${browser.choice.kind} (${browser.executablePath})`);
    for (const f of files) console.log(`wrote ${path.relative(process.cwd(), f)} (${fs.statSync(f).size} bytes)`);
  } finally {
    await browser.close();
    await server.close();
  }
}

if (require.main === module) {
  main().catch((e) => {
    console.error(e.message || e);
    process.exit(1);
  });
}

module.exports = { takeScreenshots, takeBigScreenshots, README_SHOTS };
