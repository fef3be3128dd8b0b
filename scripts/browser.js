/*
 * The one place that decides which headless Chromium the browser tests (test/browser), the pane
 * benchmark (scripts/bench-pane.js) and the screenshot script (scripts/screenshots.js) drive, and
 * launches it with playwright-core. No browser is ever downloaded. In order:
 *   1. ELX_CHROMIUM, a path to a Chromium executable;
 *   2. the system's Chromium: /usr/bin/chromium, else `chromium` on PATH;
 *   3. the headless Chromium packaged in the @sparticuz/chromium npm package (a devDependency, so
 *      `npm ci` brings it), unpacked on first use into node_modules/.cache/elx-chromium/<version>/
 *      with the libraries and fonts it ships (about 200 MB, 5 s once).
 * ELX_BROWSER=packaged forces 3 and ELX_BROWSER=system forces 1–2 (an error when there is none),
 * so both paths can be tried on one machine.
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const zlib = require("zlib");
const { pipeline } = require("stream/promises");

const ROOT = path.resolve(__dirname, "..");
const SYSTEM_PATHS = ["/usr/bin/chromium"];
const DEFAULT_CACHE = path.join(ROOT, "node_modules", ".cache", "elx-chromium");
const ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"];

function isExecutable(file) {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return fs.statSync(file).isFile();
  } catch {
    return false;
  }
}

/** `command -v chromium` without a shell: the first executable `chromium` on PATH, or null. */
function onPath(name, envPath) {
  for (const dir of String(envPath || "").split(path.delimiter)) {
    if (dir && isExecutable(path.join(dir, name))) return path.join(dir, name);
  }
  return null;
}

/**
 * Which browser to drive, without starting anything.
 * @param {{ env?: Record<string, string | undefined>, systemPaths?: string[] }} [o]
 *   default: the process's environment and /usr/bin/chromium; given by the tests to try every branch
 * @returns {{ kind: "env" | "system" | "packaged", executablePath: string | null, reason: string }}
 *   executablePath is null for "packaged" (known only once unpacked: see executablePathOf)
 */
function chooseBrowser(o = {}) {
  const env = o.env || process.env;
  const systemPaths = o.systemPaths || SYSTEM_PATHS;
  const force = String(env.ELX_BROWSER || "").trim().toLowerCase();
  if (force && force !== "packaged" && force !== "system") {
    throw new Error(`ELX_BROWSER=${env.ELX_BROWSER} is not understood: use ELX_BROWSER=packaged (the Chromium of @sparticuz/chromium) or ELX_BROWSER=system, or leave it unset`);
  }
  const packaged = { kind: "packaged", executablePath: null, reason: "" };
  if (force === "packaged") return { ...packaged, reason: "ELX_BROWSER=packaged" };
  if (env.ELX_CHROMIUM) {
    if (!isExecutable(env.ELX_CHROMIUM)) throw new Error(`ELX_CHROMIUM=${env.ELX_CHROMIUM} is not an executable file: point it at a Chromium, or unset it`);
    return { kind: "env", executablePath: env.ELX_CHROMIUM, reason: "ELX_CHROMIUM" };
  }
  const fixed = systemPaths.find((p) => isExecutable(p));
  const found = fixed || onPath("chromium", env.PATH);
  if (found) return { kind: "system", executablePath: found, reason: fixed ? `${found} is present` : "chromium is on PATH" };
  if (force === "system") throw new Error(`ELX_BROWSER=system, but there is no ${systemPaths.join(" or ")} and no chromium on PATH: install the system's chromium, or unset ELX_BROWSER to use the packaged one`);
  return { ...packaged, reason: "no system Chromium found" };
}

/** Regular files of an uncompressed tar archive (ustar), written under dir. */
function untar(buffer, dir) {
  for (let at = 0; at + 512 <= buffer.length; ) {
    const header = buffer.subarray(at, at + 512);
    if (header.every((b) => b === 0)) break;
    const text = (from, to) => header.subarray(from, to).toString("utf8").replace(/\0.*$/s, "");
    const size = parseInt(text(124, 136).trim() || "0", 8);
    const type = text(156, 157) || "0";
    const prefix = text(345, 500);
    const name = (prefix ? `${prefix}/` : "") + text(0, 100);
    const target = path.resolve(dir, name);
    if (!target.startsWith(path.resolve(dir) + path.sep)) throw new Error(`archive entry ${name} points outside ${dir}`);
    if (type === "0" || type === "7") {
      fs.mkdirSync(path.dirname(target), { recursive: true });
      fs.writeFileSync(target, buffer.subarray(at + 512, at + 512 + size), { mode: parseInt(text(100, 108).trim() || "644", 8) & 0o777 });
    } else if (type === "5") {
      fs.mkdirSync(target, { recursive: true });
    }
    at += 512 + Math.ceil(size / 512) * 512;
  }
}

/** The package's folder and version (its exports map hides package.json from require.resolve). */
function packagedInfo() {
  const main = require.resolve("@sparticuz/chromium");
  let dir = path.dirname(main);
  while (!fs.existsSync(path.join(dir, "package.json")) || JSON.parse(fs.readFileSync(path.join(dir, "package.json"), "utf8")).name !== "@sparticuz/chromium") {
    const up = path.dirname(dir);
    if (up === dir) throw new Error("@sparticuz/chromium's package.json was not found");
    dir = up;
  }
  return { dir, version: JSON.parse(fs.readFileSync(path.join(dir, "package.json"), "utf8")).version };
}

/**
 * Unpacks the packaged Chromium once, into a folder of its own under node_modules/.cache (never the
 * shared temp folder), and returns the executable and the environment it needs. Several processes
 * may unpack at once: each works in its own staging folder and the first rename wins.
 * @param {{ cacheRoot?: string }} [o]
 * @returns {Promise<{ executablePath: string, env: Record<string, string>, version: string }>}
 */
async function unpackPackaged(o = {}) {
  const { dir, version } = packagedInfo();
  const cacheRoot = o.cacheRoot || DEFAULT_CACHE;
  const home = path.join(cacheRoot, version);
  const ready = () => ({
    executablePath: path.join(home, "chromium"),
    version,
    env: {
      // the libraries the binary links (NSS, NSPR, expat) and the fonts it ships, then the system's
      LD_LIBRARY_PATH: [path.join(home, "al2023", "lib"), process.env.LD_LIBRARY_PATH].filter(Boolean).join(":"),
      FONTCONFIG_FILE: path.join(home, "fonts.conf"),
    },
  });
  if (fs.existsSync(path.join(home, "ready"))) return ready();

  fs.mkdirSync(cacheRoot, { recursive: true });
  const staging = fs.mkdtempSync(path.join(cacheRoot, `.${version}-`));
  try {
    // The package's bin folder holds the browser (brotli) and three brotli tar archives: fonts, the
    // software GL libraries, and the NSS/NSPR/expat libraries the browser links. They are unpacked
    // here rather than by the package's own executablePath(), which writes into the shared
    // os.tmpdir() and reuses whatever file named chromium it finds there.
    const bin = path.join(dir, "bin");
    await pipeline(fs.createReadStream(path.join(bin, "chromium.br")), zlib.createBrotliDecompress(), fs.createWriteStream(path.join(staging, "chromium"), { mode: 0o755 }));
    const tarball = (name, into) => untar(zlib.brotliDecompressSync(fs.readFileSync(path.join(bin, name))), into);
    tarball("fonts.tar.br", path.join(staging, "fonts"));
    tarball("swiftshader.tar.br", staging);
    tarball("al2023.tar.br", path.join(staging, "al2023"));
    fs.writeFileSync(
      path.join(staging, "fonts.conf"),
      [
        '<?xml version="1.0"?>',
        '<!DOCTYPE fontconfig SYSTEM "fonts.dtd">',
        "<fontconfig>",
        `  <dir>${path.join(home, "fonts", "fonts")}</dir>`,
        '  <include ignore_missing="yes">/etc/fonts/fonts.conf</include>',
        `  <cachedir>${path.join(home, "fonts-cache")}</cachedir>`,
        "</fontconfig>",
        "",
      ].join("\n"),
    );
    fs.writeFileSync(path.join(staging, "ready"), `${version}\n`);
    try {
      fs.renameSync(staging, home);
    } catch (e) {
      // another process unpacked it meanwhile: use theirs
      if (!fs.existsSync(path.join(home, "ready"))) throw e;
    }
  } finally {
    fs.rmSync(staging, { recursive: true, force: true });
  }
  return ready();
}

/** The executable and environment of a choice (unpacking the packaged one when needed). */
async function executableOf(choice, o = {}) {
  if (choice.kind !== "packaged") return { executablePath: choice.executablePath, env: {} };
  return unpackPackaged(o);
}

/**
 * Launches headless Chromium with a fresh profile, removed again by close().
 * @param {{ viewport?: { width: number, height: number }, choice?: ReturnType<typeof chooseBrowser>, cacheRoot?: string }} [o]
 * @returns {Promise<{ context: import("playwright-core").BrowserContext, page: import("playwright-core").Page, choice: ReturnType<typeof chooseBrowser>, executablePath: string, close: () => Promise<void> }>}
 */
async function launchBrowser(o = {}) {
  const { chromium } = require("playwright-core");
  const choice = o.choice || chooseBrowser();
  const exe = await executableOf(choice, o);
  const userDir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-chromium-"));
  let context;
  try {
    context = await chromium.launchPersistentContext(userDir, {
      executablePath: exe.executablePath,
      headless: true,
      args: ARGS,
      env: { ...process.env, ...exe.env },
      viewport: o.viewport || { width: 1400, height: 900 },
    });
  } catch (e) {
    fs.rmSync(userDir, { recursive: true, force: true });
    e.message = `Chromium (${choice.kind}: ${exe.executablePath}, chosen because ${choice.reason}) did not start: ${e.message}`;
    throw e;
  }
  const page = context.pages()[0] || (await context.newPage());
  return {
    context,
    page,
    choice,
    executablePath: exe.executablePath,
    close: async () => {
      await context.close();
      fs.rmSync(userDir, { recursive: true, force: true });
    },
  };
}

/** Where the packaged Chromium is (or will be) unpacked by default. */
function packagedHome() {
  return path.join(DEFAULT_CACHE, packagedInfo().version);
}

module.exports = { chooseBrowser, launchBrowser, unpackPackaged, packagedHome, untar, ARGS };
