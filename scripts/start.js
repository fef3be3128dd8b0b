#!/usr/bin/env node
/*
 * `npm start`: builds the add-in (webpack, production), then serves dist/ on this machine only:
 *   - the preview page over plain http on http://127.0.0.1:3001/preview.html (demo data, live ELX
 *     formulas, the real pane; works in any browser, no spreadsheet host needed);
 *   - the add-in over https on https://localhost:3000 (the URLs in manifest/manifest.xml), when
 *     development certificates exist in ~/.office-addin-dev-certs or can be made there by the
 *     office-addin-dev-certs tool. The files are read directly; trusting the certificate authority
 *     is the tool's job and may need administrator rights (see the README's sideloading steps).
 * Prints both addresses and the manifest path to sideload. Ctrl+C stops.
 *   npm start -- --no-build      serve the existing dist/ without building
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");
const { serve } = require("./serve");

const ROOT = path.resolve(__dirname, "..");
const DIST = path.join(ROOT, "dist");
const CERT_DIR = path.join(os.homedir(), ".office-addin-dev-certs");
const FILES = { ca: "ca.crt", cert: "localhost.crt", key: "localhost.key" };
const PREVIEW_PORT = Number(process.env.ELX_PREVIEW_PORT || 3001);
const ADDIN_PORT = 3000;

function haveCerts() {
  return Object.values(FILES).every((f) => fs.existsSync(path.join(CERT_DIR, f)));
}

/** Reads the three certificate files, making them first with office-addin-dev-certs when missing. */
function certificates() {
  if (!haveCerts()) {
    let cli = null;
    try {
      cli = require.resolve("office-addin-dev-certs/cli.js");
    } catch {
      cli = null;
    }
    if (cli) {
      console.log("Making development certificates with office-addin-dev-certs (its trust step may ask for, or lack, administrator rights)…");
      // The tool's exit code says nothing about whether the files were made: check the files.
      spawnSync(process.execPath, [cli, "install"], { stdio: "inherit", timeout: 120000 });
    }
  }
  if (!haveCerts()) return null;
  const read = (f) => fs.readFileSync(path.join(CERT_DIR, f));
  return { ca: read(FILES.ca), cert: read(FILES.cert), key: read(FILES.key) };
}

async function main() {
  if (!process.argv.includes("--no-build")) {
    const build = spawnSync(process.execPath, [require.resolve("webpack-cli/bin/cli.js"), "--mode", "production"], { cwd: ROOT, stdio: "inherit" });
    if (build.status !== 0) process.exit(build.status ?? 1);
  }
  if (!fs.existsSync(path.join(DIST, "preview.html"))) {
    console.error("dist/preview.html is missing: run npm run build");
    process.exit(1);
  }
  const preview = await serve({ root: DIST, port: PREVIEW_PORT });
  let addin = null;
  const tls = certificates();
  if (tls) {
    try {
      addin = await serve({ root: DIST, port: ADDIN_PORT, tls });
    } catch (e) {
      console.error(`Could not serve https on port ${ADDIN_PORT}: ${e.message}`);
    }
  }
  console.log("");
  console.log(`Preview (demo data, live formulas, the pane):  ${preview.url}/preview.html`);
  if (addin) {
    console.log(`Add-in for the spreadsheet host:               ${addin.url}/taskpane.html`);
  } else {
    console.log(`Add-in over https: not started (no certificates in ${CERT_DIR}); the preview needs none.`);
  }
  console.log(`Manifest to sideload:                          ${path.join(DIST, "manifest.xml")}`);
  console.log("Press Ctrl+C to stop.");
  const stop = async () => {
    await preview.close();
    if (addin) await addin.close();
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
