#!/usr/bin/env node
/*
 * `npm start`: builds the add-in (webpack, production), then serves dist/ on this machine only:
 *   - the preview page over plain http on http://127.0.0.1:3001/preview.html (demo data, live ELX
 *     formulas, the real pane; works in any browser, no spreadsheet host and no certificate needed).
 *     ELX_PREVIEW_PORT chooses another port; when the port is taken, the next free one of the
 *     following ten is used and printed;
 *   - the add-in over https on https://localhost:3000 (the URLs in manifest/manifest.xml), when the
 *     three development certificate files ca.crt, localhost.crt and localhost.key are in
 *     ~/.office-addin-dev-certs. Nothing here makes or trusts certificates (that needs
 *     administrator rights, see the README's sideloading steps): without the files it says how to
 *     make them, and serves the preview alone.
 * Prints the addresses and the manifest path to sideload. Ctrl+C stops.
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
const FILES = { ca: "ca.crt", cert: "localhost.crt", key: "localhost.key" };
/** The host loads the add-in from this port: it is written in manifest/manifest.xml. */
const ADDIN_PORT = 3000;
const PREVIEW_TRY_NEXT = 10;

/** The certificate files, or null with the names of the missing ones. */
function certificates(certDir) {
  const missing = Object.values(FILES).filter((f) => !fs.existsSync(path.join(certDir, f)));
  if (missing.length) return { tls: null, missing };
  const read = (f) => fs.readFileSync(path.join(certDir, f));
  return { tls: { ca: read(FILES.ca), cert: read(FILES.cert), key: read(FILES.key) }, missing: [] };
}

/**
 * Starts both servers and returns the lines to print (no process exit here, so tests can call it).
 * @param {{ dist?: string, previewPort?: number, addinPort?: number, certDir?: string }} [o]
 */
async function startServers(o = {}) {
  const dist = o.dist || DIST;
  const previewPort = o.previewPort ?? Number(process.env.ELX_PREVIEW_PORT || 3001);
  const addinPort = o.addinPort ?? ADDIN_PORT;
  const certDir = o.certDir || path.join(os.homedir(), ".office-addin-dev-certs");
  const lines = [];
  let preview;
  try {
    preview = await serve({ root: dist, port: previewPort, tryNext: PREVIEW_TRY_NEXT });
  } catch (e) {
    if (e.code !== "EADDRINUSE") throw e;
    const err = new Error(`Preview not started: ${e.message}. Choose another port, for example ELX_PREVIEW_PORT=4001 npm start.`);
    err.plain = true;
    throw err;
  }
  if (previewPort !== 0 && preview.port !== previewPort) lines.push(`Port ${previewPort} is in use by another program: the preview is on port ${preview.port} instead (ELX_PREVIEW_PORT chooses one).`);
  lines.push(`Preview (demo data, live formulas, the pane):  ${preview.url}/preview.html`);

  let addin = null;
  const { tls, missing } = certificates(certDir);
  if (!tls) {
    lines.push(
      `Add-in over https: not started, it needs ${missing.join(", ")} in ${certDir}; make them once with ` +
        "`npx office-addin-dev-certs install` (trusting them needs administrator rights). The preview works without them.",
    );
  } else {
    try {
      addin = await serve({ root: dist, port: addinPort, tls });
      lines.push(`Add-in for the spreadsheet host:               ${addin.url}/taskpane.html`);
    } catch (e) {
      if (e.code === "EADDRINUSE") {
        lines.push(`Add-in over https: not started, port ${addinPort} is in use by another program, and the manifest tells the host to load the add-in from https://localhost:${addinPort}: stop that program and run npm start again. The preview works without it.`);
      } else {
        lines.push(`Add-in over https: not started, the files in ${certDir} could not be used as a certificate and key (${e.message}); make them again with \`npx office-addin-dev-certs install\`. The preview works without them.`);
      }
    }
  }
  lines.push(`Manifest to sideload:                          ${path.join(dist, "manifest.xml")}`);
  return {
    lines,
    preview,
    addin,
    close: async () => {
      await preview.close();
      if (addin) await addin.close();
    },
  };
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
  let servers;
  try {
    servers = await startServers();
  } catch (e) {
    if (!e.plain) throw e;
    console.error(e.message);
    process.exit(1);
  }
  console.log("");
  for (const line of servers.lines) console.log(line);
  console.log("Press Ctrl+C to stop.");
  const stop = async () => {
    await servers.close();
    process.exit(0);
  };
  process.on("SIGINT", stop);
  process.on("SIGTERM", stop);
}

if (require.main === module) {
  main().catch((e) => {
    console.error(e);
    process.exit(1);
  });
}

module.exports = { startServers, ADDIN_PORT };
