#!/usr/bin/env node
/*
 * `npm run screenshots`: builds, then refreshes the README's pictures assets/screenshots/preview.png
 * and pane.png from the preview in headless Chromium (scripts/browser.js chooses which). The
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
 * (preview.png) and the whole pane at its full height (pane.png) into dir.
 * @param {import("playwright-core").Page} page
 * @param {string} dir
 * @returns {Promise<string[]>} the two files written
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
  return files;
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

module.exports = { takeScreenshots, README_SHOTS };
