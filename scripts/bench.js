#!/usr/bin/env node
/*
 * Elasticell benchmark: `npm run bench` (builds, then `node --expose-gc scripts/bench.js`).
 *
 * Loads dist/functions.js through the host's registration path (a global CustomFunctions shim, as
 * test/harness/loadFunctions.ts does) and times cell functions on synthetic positive data given as
 * the host gives ranges: row-major arrays of arrays, y as [[v], [v], ...]. Medians over several
 * runs; every timed run gets fresh arrays whose content differs by one cell, so no run is answered
 * from the engine's fit cache unless the case is about the cache.
 *
 * Where Rscript is on PATH, the same data are written to a temporary binary file and R times
 * lm.fit plus HC3 computed by hand in base R (hat values from the QR, the sandwich by matrix
 * products) on them in the same run; the ratio is printed, and the coefficients and standard errors
 * are compared with the engine's.
 *
 * Cases are a list of named entries (see CASES below): a case names the function ids it needs and
 * is skipped when the build does not register them, so later functions only add entries.
 *
 *   node --expose-gc scripts/bench.js               all cases
 *   node --expose-gc scripts/bench.js --only fit    cases whose name contains "fit"
 *   node --expose-gc scripts/bench.js --quick       sizes up to 10^5 only
 *   node --expose-gc scripts/bench.js --no-r        skip the R comparison
 *   node --expose-gc scripts/bench.js --r-lm        the panel case also times R lm with indicator columns
 *   node --expose-gc scripts/bench.js --no-harness  skip the external harness (C, R, numpy on its own files;
 *                                                   scripts/bench-harness.js, DEVELOPERS.md)
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");
const { Worker } = require("worker_threads");

const ROOT = path.join(__dirname, "..");
const argv = process.argv.slice(2);
// --bundle <file> loads another build (e.g. to compare two builds); its functions.json is read
// from the same folder when present.
const BUNDLE = argv.includes("--bundle") ? path.resolve(argv[argv.indexOf("--bundle") + 1]) : path.join(ROOT, "dist", "functions.js");
const ONLY = argv.includes("--only") ? argv[argv.indexOf("--only") + 1] : null;
const QUICK = argv.includes("--quick");
const USE_R = !argv.includes("--no-r");
const USE_HARNESS = !argv.includes("--no-harness");

if (typeof global.gc !== "function") {
  process.stderr.write("run with node --expose-gc (npm run bench does)\n");
  process.exit(1);
}

// ---------------------------------------------------------------------------------------------
// Host shim
// ---------------------------------------------------------------------------------------------
const { HostError, loadFunctions: loadBundle } = require("./host-shim");
const loadFunctions = () => loadBundle(BUNDLE);
const registry = loadFunctions();
const KNOWN_IDS = ["FIT", "ELASTICITY", "ELASTICITIES", "EFFECTS", "SUMMARY", "ZEROS", "SMEARING", "PREDICT",
  "HETEROTEST", "NORMALTEST", "TESTS", "FORMCHECK", "BYGROUP", "ROLLING", "BREAKTEST", "IVCHECK"];
/** A registered entry that converts ranges only, if a build exposes one for benchmarking. */
const CONVERT_ID = [...registry.keys()].find((id) => /^(INTAKE|CONVERT|COLUMNS|READRANGES?)$/i.test(id)) || null;

function isHostError(v) {
  return v !== null && typeof v === "object" && !Array.isArray(v) && typeof v.code === "string" && v.code.startsWith("#");
}

const METADATA = new Map();
{
  const metaPath = path.join(path.dirname(BUNDLE), "functions.json");
  if (fs.existsSync(metaPath)) for (const f of JSON.parse(fs.readFileSync(metaPath, "utf8")).functions || []) METADATA.set(f.id, f);
}
function colName(i) {
  let s = "";
  for (i += 1; i > 0; i = Math.floor((i - 1) / 26)) s = String.fromCharCode(65 + ((i - 1) % 26)) + s;
  return s;
}
/**
 * The arguments as the host passes them: declared parameters in order (null for omitted optional
 * ones), then, when the metadata asks for addresses, an invocation object whose parameterAddresses
 * place the 2-D arguments side by side from column A, row 1.
 */
function hostArgs(id, args) {
  const meta = METADATA.get(id);
  if (!meta || !Array.isArray(meta.parameters)) return args;
  const a = args.slice();
  while (a.length < meta.parameters.length) a.push(null);
  const o = meta.options || {};
  if (o.requiresAddress || o.requiresParameterAddresses) {
    let col = 0;
    const addresses = a.map((v) => {
      if (!Array.isArray(v) || !Array.isArray(v[0])) return null;
      const first = colName(col);
      col += v[0].length;
      return `Sheet1!${first}1:${colName(col - 1)}${v.length}`;
    });
    a.push({ address: `Sheet1!${colName(col + 1)}1`, parameterAddresses: addresses });
  }
  return a;
}

/** Calls a registered function as the host does; returns its value or the HostError it threw. */
function invoke(id, ...args) {
  const fn = registry.get(id);
  if (!fn) throw new Error(`function ${id} is not registered`);
  try {
    return fn(...hostArgs(id, args));
  } catch (e) {
    if (e instanceof HostError) return e;
    throw e;
  }
}
async function settle(v) {
  return v && typeof v.then === "function" ? await v : v;
}

// ---------------------------------------------------------------------------------------------
// Seeded synthetic data (mulberry32 + Box–Muller)
// ---------------------------------------------------------------------------------------------
function mulberry32(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    const r = ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    return r === 0 ? 1 / 8589934592 : r;
  };
}
function normals(seed) {
  const u = mulberry32(seed);
  let spare = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const r = Math.sqrt(-2 * Math.log(u()));
    const th = 2 * Math.PI * u();
    spare = r * Math.sin(th);
    return r * Math.cos(th);
  };
}

/**
 * Positive log-log data: log x_j = 0.5 z_j + 0.3 z_common + log(10 + j), log y = 1 + sum b_j log x_j
 * + 0.3 e. Returns host rows (y as [[v]], x as [[x1..xk]]) and the same numbers as Float64 columns.
 * kind "counts": y = round(exp(eta) * gamma-ish noise) with zeros, for PPML.
 */
function makeData(n, k, seed, kind = "loglog") {
  const z = normals(seed);
  const uni = mulberry32(seed + 0x9e3779b9);
  const b = [];
  for (let j = 0; j < k; j++) b.push(j === 0 ? -1.2 : (j % 2 ? 0.5 : -0.3) / Math.sqrt(j));
  const ycol = new Float64Array(n);
  const xcols = [];
  for (let j = 0; j < k; j++) xcols.push(new Float64Array(n));
  const yRows = new Array(n);
  const xRows = new Array(n);
  for (let i = 0; i < n; i++) {
    const common = z();
    let eta = kind === "counts" ? 0.5 : 1;
    const row = new Array(k);
    for (let j = 0; j < k; j++) {
      const lx = 0.5 * z() + 0.3 * common + Math.log(10 + j);
      const v = Math.round(Math.exp(lx) * 1e4) / 1e4;
      row[j] = v;
      xcols[j][i] = v;
      eta += b[j] * Math.log(v) * (kind === "counts" ? 0.3 : 1);
    }
    let yv;
    if (kind === "counts") {
      const mu = Math.exp(eta + 0.4 * z());
      // Poisson draw by inversion for small means, normal approximation above 30
      if (mu < 30) {
        const u = uni();
        let p = Math.exp(-mu);
        let c = p;
        let x = 0;
        while (u > c && x < 1000) {
          x++;
          p *= mu / x;
          c += p;
        }
        yv = x;
      } else {
        yv = Math.max(0, Math.round(mu + Math.sqrt(mu) * z()));
      }
    } else {
      yv = Math.round(Math.exp(eta + 0.3 * z()) * 1e4) / 1e4;
    }
    ycol[i] = yv;
    yRows[i] = [yv];
    xRows[i] = row;
  }
  return { n, k, yRows, xRows, ycol, xcols };
}

let variant = 0;
/**
 * Fresh outer arrays with one changed cell in y and one in x (new row arrays there), so that the
 * content differs from every earlier call: a content-keyed cache cannot answer it.
 */
function fresh(d) {
  variant++;
  const f = 1 + 1e-9 * variant;
  const yRows = d.yRows.slice();
  const xRows = d.xRows.slice();
  const i = variant % d.n;
  yRows[i] = [d.yRows[i][0] * f];
  xRows[(i + 1) % d.n] = d.xRows[(i + 1) % d.n].map((v, j) => (j === 0 ? v * f : v));
  return { yRows, xRows };
}
/** Deep copies: new arrays everywhere, identical numbers. */
function deepCopy(rowsArr) {
  const out = new Array(rowsArr.length);
  for (let i = 0; i < rowsArr.length; i++) out[i] = rowsArr[i].slice();
  return out;
}

// ---------------------------------------------------------------------------------------------
// Timing helpers
// ---------------------------------------------------------------------------------------------
const median = (a) => {
  const s = a.slice().sort((p, q) => p - q);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const now = () => Number(process.hrtime.bigint()) / 1e6; // ms

/**
 * Runs prepare() untimed, then body(prepared) timed, `runs` times; returns ms per run and the last
 * value. A full collection (global.gc()) runs once before the first run and, with gcEach, before
 * every run: that keeps the garbage of 10^6-row runs out of the next timing, but costs a call on
 * small inputs a few milliseconds afterwards (measured: a 10^4-row cache hit takes 0.6 ms without a
 * preceding gc and 6 ms with one), so small cases do not use it. After a forced collection the
 * collector's concurrent sweeping goes on on the other core for a few hundred milliseconds and slows
 * the next pass over a 10^6-row range about fourfold (a cache hit: 165 ms instead of 39 ms), which no
 * host call meets in practice; so the timing waits for the collector to settle first.
 */
async function timeRuns(runs, prepare, body, warmup = 0, gcEach = false) {
  const times = [];
  let last;
  global.gc();
  for (let r = 0; r < warmup + runs; r++) {
    const p = prepare(r);
    if (gcEach) {
      global.gc();
      await new Promise((resolve) => setTimeout(resolve, 400));
    }
    const t0 = now();
    const v = await settle(body(p));
    const t1 = now();
    if (isHostError(v)) throw new HostError(v.code, v.message);
    if (r >= warmup) times.push(t1 - t0);
    last = v;
  }
  return { times, median: median(times), last };
}

const fmtMs = (ms) => (ms >= 1000 ? `${(ms / 1000).toFixed(3)} s` : ms >= 10 ? `${ms.toFixed(1)} ms` : `${ms.toFixed(2)} ms`);
const out = (s = "") => process.stdout.write(s + "\n");
const pow10 = (n) => {
  const e = Math.round(Math.log10(n));
  return 10 ** e === n ? `10^${e}` : String(n);
};

// ---------------------------------------------------------------------------------------------
// Memory: peak during one call
// ---------------------------------------------------------------------------------------------
/**
 * Samples memory while fn runs. heapUsed + arrayBuffers is read on the main thread before (after
 * global.gc()), right after the call (no gc) and every 2 ms while the call awaits (if it is async);
 * the process's resident set is sampled every millisecond from a worker thread, which also sees a
 * synchronous call. Both are reported as extra bytes above the pre-call baseline.
 */
async function peakDuring(fn) {
  const shared = new SharedArrayBuffer(16);
  const flag = new Int32Array(shared, 0, 1);
  const peak = new Float64Array(shared, 8, 1);
  const worker = new Worker(
    `const { workerData } = require("worker_threads");
     const flag = new Int32Array(workerData, 0, 1); const peak = new Float64Array(workerData, 8, 1);
     flag[0] = 0; Atomics.store(flag, 0, 1); Atomics.notify(flag, 0);
     while (Atomics.load(flag, 0) === 1) {
       const r = process.memoryUsage.rss(); if (r > peak[0]) peak[0] = r;
       Atomics.wait(flag, 0, 1, 1);
     }`,
    { eval: true, workerData: shared },
  );
  // wait for the worker to start sampling
  while (Atomics.load(flag, 0) !== 1) await new Promise((r) => setTimeout(r, 5));
  global.gc();
  global.gc();
  const m0 = process.memoryUsage();
  const base = m0.heapUsed + m0.arrayBuffers;
  const rssBase = m0.rss;
  peak[0] = rssBase;
  let heapPeak = base;
  const timer = setInterval(() => {
    const m = process.memoryUsage();
    heapPeak = Math.max(heapPeak, m.heapUsed + m.arrayBuffers);
  }, 2);
  let value;
  try {
    value = await settle(fn());
  } finally {
    clearInterval(timer);
    const m1 = process.memoryUsage();
    heapPeak = Math.max(heapPeak, m1.heapUsed + m1.arrayBuffers);
    Atomics.store(flag, 0, 2);
    Atomics.notify(flag, 0);
    await worker.terminate();
  }
  return { value, heapExtra: heapPeak - base, rssExtra: peak[0] - rssBase, base };
}

// ---------------------------------------------------------------------------------------------
// R comparison
// ---------------------------------------------------------------------------------------------
const HAVE_R = USE_R && spawnSync("Rscript", ["--version"], { stdio: "ignore" }).status === 0;
const R_SCRIPT = `
args <- commandArgs(trailingOnly = TRUE)
file <- args[1]; n <- as.integer(args[2]); k <- as.integer(args[3]); runs <- as.integer(args[4])
con <- file(file, "rb"); v <- readBin(con, "double", n * (k + 1)); close(con)
y <- v[1:n]; xm <- matrix(v[-(1:n)], nrow = n, ncol = k)
rm(v)
hc3 <- function() {
  X <- cbind(1, log(xm)); ly <- log(y)
  f <- lm.fit(X, ly)
  p <- f$rank
  if (p < ncol(X) || any(f$qr$pivot != seq_len(ncol(X)))) stop("rank-deficient or pivoted design")
  Q <- qr.Q(f$qr)
  h <- rowSums(Q^2)
  e <- f$residuals
  w <- (e / (1 - h))^2
  Rinv <- backsolve(qr.R(f$qr), diag(p))
  bread <- Rinv %*% t(Rinv)
  meat <- crossprod(X, X * w)
  V <- bread %*% meat %*% bread
  list(b = f$coefficients, se = sqrt(diag(V)))
}
# The issue's reference pipeline: log transform, QR, classical and HC3 errors, Breusch-Pagan.
full <- function() {
  X <- cbind(1, log(xm)); ly <- log(y)
  f <- lm.fit(X, ly)
  p <- f$rank
  e <- f$residuals
  Rinv <- backsolve(qr.R(f$qr), diag(p))
  bread <- Rinv %*% t(Rinv)
  Vc <- bread * sum(e^2) / (length(e) - p)
  h <- rowSums(qr.Q(f$qr)^2)
  w <- (e / (1 - h))^2
  V <- bread %*% crossprod(X, X * w) %*% bread
  e2 <- e^2
  a <- lm.fit(X, e2)
  bp <- length(e) * (1 - sum(a$residuals^2) / sum((e2 - mean(e2))^2))
  list(se = sqrt(diag(V)), sec = sqrt(diag(Vc)), bp = bp)
}
t <- numeric(runs)
for (r in seq_len(runs)) { gc(); t[r] <- system.time(res <- hc3())[["elapsed"]] }
tf <- numeric(runs)
for (r in seq_len(runs)) { gc(); tf[r] <- system.time(full())[["elapsed"]] }
cat(sprintf("full %.6f\n", median(tf)))
t2 <- NA
if (as.logical(args[5]) && requireNamespace("sandwich", quietly = TRUE)) {
  d <- data.frame(ly = log(y), log(xm))
  t2 <- system.time({ m <- lm(ly ~ ., data = d); s2 <- sqrt(diag(sandwich::vcovHC(m, type = "HC3"))) })[["elapsed"]]
}
cat(sprintf("median %.6f\\n", median(t)))
cat(sprintf("sandwich %.6f\\n", t2))
cat("b", sprintf("%.17g", res$b), "\\n")
cat("se", sprintf("%.17g", res$se), "\\n")
`;

function runR(d, runs, alsoSandwich) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-bench-"));
  const bin = path.join(dir, "data.bin");
  const script = path.join(dir, "hc3.R");
  try {
    const fd = fs.openSync(bin, "w");
    const w = (a) => fs.writeSync(fd, Buffer.from(a.buffer, a.byteOffset, a.byteLength));
    w(d.ycol);
    for (const c of d.xcols) w(c);
    fs.closeSync(fd);
    fs.writeFileSync(script, R_SCRIPT);
    const res = spawnSync("Rscript", ["--vanilla", script, bin, String(d.n), String(d.k), String(runs), alsoSandwich ? "TRUE" : "FALSE"],
      { encoding: "utf8", maxBuffer: 1 << 24 });
    if (res.status !== 0) return { error: (res.stderr || "").trim().split("\n").slice(-3).join(" ") };
    const lines = res.stdout.split("\n");
    const get = (tag) => lines.find((l) => l.startsWith(tag + " "));
    const nums = (tag) => get(tag).trim().split(/\s+/).slice(1).map(Number);
    const sw = Number(get("sandwich").split(" ")[1]);
    return { median: 1000 * Number(get("median").split(" ")[1]), full: 1000 * Number(get("full").split(" ")[1]), sandwich: Number.isFinite(sw) ? 1000 * sw : null, b: nums("b"), se: nums("se") };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

/** Largest relative difference between the engine's FIT table and R's coefficients / errors. */
function agreement(fitTable, r) {
  if (!Array.isArray(fitTable) || !r || !r.b) return null;
  const rowsT = fitTable.slice(1);
  let db = 0;
  let dse = 0;
  rowsT.forEach((row, i) => {
    const b = row[2];
    const se = row[3];
    if (typeof b !== "number" || typeof se !== "number") {
      db = dse = Infinity;
      return;
    }
    db = Math.max(db, Math.abs(b - r.b[i]) / Math.max(Math.abs(r.b[i]), 1e-12));
    dse = Math.max(dse, Math.abs(se - r.se[i]) / Math.abs(r.se[i]));
  });
  return { db, dse };
}

// ---------------------------------------------------------------------------------------------
// Data sets (made when first needed, dropped when no later case needs them)
// ---------------------------------------------------------------------------------------------
const dataCache = new Map();
function data(name, make) {
  if (!dataCache.has(name)) {
    const t0 = now();
    dataCache.set(name, make());
    out(`  (made data ${name} in ${fmtMs(now() - t0)})`);
  }
  return dataCache.get(name);
}
function dropData(name) {
  dataCache.delete(name);
  global.gc();
}

const results = []; // rows of the final table
const targets = []; // { what, target, measured, pass }
const store = {}; // values cases leave for later cases (e.g. fit medians)

// ---------------------------------------------------------------------------------------------
// The cases
// ---------------------------------------------------------------------------------------------
const FIT_OPTIONS = "form=log-log; se=HC3";
const SIZES = [];
for (const n of QUICK ? [1e4, 1e5] : [1e4, 1e5, 1e6]) for (const k of [3, 10]) SIZES.push({ n, k });
const runsFor = (n) => (n >= 1e6 ? 3 : 5);
const warmFor = (n) => (n >= 1e6 ? 0 : 1);
const dname = (n, k) => `n=${pow10(n)},k=${k}`;

const CASES = [];

for (const { n, k } of SIZES) {
  const key = dname(n, k);
  const make = () => makeData(n, k, 1000 + n / 1000 + k);
  const last = n === SIZES[SIZES.length - 1].n && k === 10;
  CASES.push({
    name: `fit ${key}`,
    requires: ["FIT"],
    async run() {
      const d = data(key, make);
      let lastInputs = null;
      const t = await timeRuns(runsFor(n), () => (lastInputs = fresh(d)), (p) => invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS), warmFor(n), n >= 1e6);
      store[`fit ${key}`] = { median: t.median, table: t.last, inputs: lastInputs };
      results.push([`ELX.FIT log-log HC3`, key, fmtMs(t.median), `${t.times.length} runs: ${t.times.map(fmtMs).join(", ")}`]);
    },
  });
  CASES.push({
    name: `cache ${key}`,
    requires: ["FIT"],
    async run() {
      const prev = store[`fit ${key}`];
      if (!prev) return;
      const t = await timeRuns(3, () => ({ yRows: deepCopy(prev.inputs.yRows), xRows: deepCopy(prev.inputs.xRows) }),
        (p) => invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS), 0, n >= 1e6);
      const same = JSON.stringify(t.last) === JSON.stringify(prev.table);
      const share = (100 * t.median) / prev.median;
      store[`cache ${key}`] = share;
      results.push([`FIT again, equal inputs (cache)`, key, fmtMs(t.median),
        `${share.toFixed(1)}% of a fit${same ? "" : "; RESULT DIFFERS from the first call"}`]);
    },
  });
  CASES.push({
    name: `convert ${key}`,
    requires: [CONVERT_ID || "ZEROS"],
    async run() {
      const d = data(key, make);
      const id = CONVERT_ID || "ZEROS";
      const pane = globalThis.Elasticell;
      const direct = pane && typeof pane.readColumns === "function";
      const t = await timeRuns(runsFor(n), () => fresh(d), (p) => (direct ? pane.readColumns(p.yRows, p.xRows) : CONVERT_ID ? invoke(id, p.yRows, p.xRows) : invoke(id, p.xRows)), warmFor(n), n >= 1e6);
      if (direct) {
        store[`convert ${key}`] = t.median;
        results.push(["conversion of host rows to columns (intake)", key, fmtMs(t.median), "globalThis.Elasticell.readColumns: the intake every fit runs"]);
        return;
      }
      store[`convert ${key}`] = t.median;
      const fitMs = store[`fit ${key}`] && store[`fit ${key}`].median;
      results.push([CONVERT_ID ? `conversion (ELX.${id})` : `conversion ~ ELX.ZEROS(x)`, key, fmtMs(t.median),
        (CONVERT_ID ? "" : "approximation: no separate conversion entry; ZEROS reads the x range only") +
        (fitMs ? `; ${((100 * t.median) / fitMs).toFixed(0)}% of a fit` : "")]);
    },
  });
  if (HAVE_R) {
    CASES.push({
      name: `r ${key}`,
      requires: ["FIT"],
      async run() {
        const d = data(key, make);
        const r = runR(d, runsFor(n), n <= 1e6);
        if (r.error) {
          results.push(["R lm.fit + HC3 by hand", key, "error", r.error]);
          return;
        }
        const ours = store[`fit ${key}`];
        const ratio = ours ? r.median / ours.median : NaN;
        store[`r ${key}`] = { ...r, ratio };
        const ag = ours ? agreement(ours.table, r) : null;
        results.push(["R lm.fit + HC3 by hand (base R)", key, fmtMs(r.median),
          `R / ELX = ${Number.isFinite(ratio) ? ratio.toFixed(2) + "x" : "n/a"}` +
          (ag ? `; max rel. diff b ${ag.db.toExponential(1)}, se ${ag.dse.toExponential(1)}` : "")]);
        // The pipeline on both sides: fit with classical and HC3 errors, then Breusch–Pagan.
        const tp = await timeRuns(runsFor(n), () => fresh(d), (p) => {
          invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS);
          invoke("FIT", p.yRows, p.xRows, "se=classical");
          return invoke("HETEROTEST", p.yRows, p.xRows, "bp", null);
        }, warmFor(n), n >= 1e6);
        const pratio = r.full / tp.median;
        store[`pipeline ${key}`] = { ours: tp.median, r: r.full, ratio: pratio };
        results.push(["pipeline: FIT HC3 + classical + Breusch–Pagan", key, fmtMs(tp.median), `R (log, lm.fit, classical, HC3, BP) ${fmtMs(r.full)}; R / ELX = ${pratio.toFixed(2)}x`]);
        if (r.sandwich !== null) {
          results.push(["R lm() + sandwich::vcovHC HC3", key, fmtMs(r.sandwich),
            `1 run; R / ELX = ${ours ? (r.sandwich / ours.median).toFixed(2) + "x" : "n/a"}`]);
        }
      },
    });
  }
  if (last && k === 10) {
    CASES.push({
      name: `memory ${key}`,
      requires: ["FIT"],
      async run() {
        // In a child process of its own, so that the heap and the allocator hold nothing from the
        // cases before; MALLOC_MMAP_THRESHOLD_ fixes glibc's threshold so that freed large buffers
        // go back to the system at once and the resident set follows the live memory.
        dropData(key);
        const child = spawnSync(process.execPath, ["--expose-gc", __filename, "--bundle", BUNDLE, "--memory-child", String(n), String(k)],
          { encoding: "utf8", env: { ...process.env, MALLOC_MMAP_THRESHOLD_: "65536" }, maxBuffer: 1 << 20 });
        const line = (child.stdout || "").split("\n").find((l) => l.startsWith("MEMORY "));
        if (child.status !== 0 || !line) throw new Error(`memory child failed: ${(child.stderr || child.stdout || "").trim().slice(-300)}`);
        const m = JSON.parse(line.slice(7));
        if (m.error) throw new HostError(m.error.code, m.error.message);
        const input = n * (k + 1) * 8;
        const heapX = m.heapExtra / input;
        const rssX = m.rssExtra / input;
        store.memory = { heapX, rssX, worst: Math.max(heapX, rssX), key };
        results.push(["peak memory during FIT", key, `${heapX.toFixed(2)}x / ${rssX.toFixed(2)}x`,
          `extra heapUsed+arrayBuffers / extra RSS, as multiples of n(k+1)*8 = ${(input / 2 ** 20).toFixed(0)} MiB` +
          `; still held after the call (cache), inputs freed: ${(m.retained / input).toFixed(2)}x`]);
      },
    });
  }
  CASES.push({ name: `release ${key}`, requires: [], internal: true, async run() { dropData(key); } });
}

// ----- later functions: guarded by registration -----
const EXTRA = "n=10^5,k=10";
const makeExtra = () => makeData(1e5, 10, 77);
// TESTS and FORMCHECK in fits: each run times a FIT (HC3) and the function on fresh inputs of the same
// data, interleaved, so that the ratio of the medians holds on a busy machine. White's auxiliary
// regression is a new factorisation by design: it is timed alone (HETEROTEST "white" on a fit already
// cached by an untimed HETEROTEST "bp"), and the rest of TESTS is the target.
const TEST_SIZES = [{ n: 1e5, k: 10, key: EXTRA, make: makeExtra }, { n: 1e6, k: 3, key: "n=10^6,k=3", make: () => makeData(1e6, 3, 80) }];
for (const { n, k, key, make } of TEST_SIZES) {
  if (QUICK && n > 1e5) continue;
  const runs = n >= 1e6 ? 3 : 5;
  const opts = "form=log-log";
  CASES.push({
    name: `tests ${key}`,
    requires: ["TESTS", "HETEROTEST", "FIT"],
    async run() {
      const d = data(key, make);
      const t = { fit: [], tests: [], white: [] };
      for (let r = 0; r < runs + 1; r++) {
        // before: an untimed call on the same fresh inputs (HETEROTEST "bp" caches the fit for "white")
        const timed = async (list, before, body) => {
          const p = fresh(d);
          if (before) await settle(before(p));
          global.gc();
          await new Promise((resolve) => setTimeout(resolve, n >= 1e6 ? 400 : 50));
          const t0 = now();
          const v = await settle(body(p));
          if (isHostError(v)) throw new HostError(v.code, v.message);
          if (r > 0) list.push(now() - t0);
        };
        await timed(t.fit, null, (p) => invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS));
        await timed(t.tests, null, (p) => invoke("TESTS", p.yRows, p.xRows, opts));
        await timed(t.white, (p) => invoke("HETEROTEST", p.yRows, p.xRows, "bp", opts), (p) => invoke("HETEROTEST", p.yRows, p.xRows, "white", opts));
      }
      const fitMs = median(t.fit);
      const testsMs = median(t.tests);
      const whiteMs = median(t.white);
      const cols = 1 + (k * (k + 3)) / 2;
      const qrRatio = (cols / (k + 1)) ** 2;
      // the rest from each run's own three timings (FIT, TESTS, White taken one after the other), then
      // the median: the machine's drift between runs cancels within a run
      const rest = median(t.tests.map((v, i) => (v - t.white[i]) / t.fit[i]));
      store[`tests ${key}`] = { fits: testsMs / fitMs, white: whiteMs / fitMs, rest };
      results.push([`ELX.TESTS log-log (includes its fit)`, key, fmtMs(testsMs),
        `${(testsMs / fitMs).toFixed(2)} fits (FIT HC3 ${fmtMs(fitMs)}, interleaved): White's own aux regression ${(whiteMs / fitMs).toFixed(2)} fits ` +
        `(1 + k(k+3)/2 = ${cols} columns, its QR ≈ (${cols}/${k + 1})² = ${qrRatio.toFixed(1)}× the fit's QR); the rest ${rest.toFixed(2)} fits, target < 3`]);
    },
  });
  CASES.push({
    name: `formcheck ${key}`,
    requires: ["FORMCHECK", "FIT"],
    async run() {
      const d = data(key, make);
      const t = { fit: [], check: [] };
      for (let r = 0; r < runs + 1; r++) {
        for (const [list, id, o] of [[t.fit, "FIT", FIT_OPTIONS], [t.check, "FORMCHECK", opts]]) {
          const p = fresh(d);
          global.gc();
          await new Promise((resolve) => setTimeout(resolve, n >= 1e6 ? 400 : 50));
          const t0 = now();
          const v = await settle(invoke(id, p.yRows, p.xRows, o));
          if (isHostError(v)) throw new HostError(v.code, v.message);
          if (r > 0) list.push(now() - t0);
        }
      }
      const fitMs = median(t.fit);
      const ms = median(t.check);
      store[`formcheck ${key}`] = { fits: ms / fitMs };
      results.push([`ELX.FORMCHECK log-log (includes its fits)`, key, fmtMs(ms),
        `${(ms / fitMs).toFixed(2)} fits (FIT HC3 ${fmtMs(fitMs)}, interleaved; target < 3)`]);
    },
  });
  if (n >= 1e6) CASES.push({ name: `release ${key}`, requires: [], internal: true, async run() { dropData(key); } });
}
CASES.push({
  name: `predict ${EXTRA}`,
  requires: ["PREDICT"],
  async run() {
    const d = data(EXTRA, makeExtra);
    const nx = makeData(1e4, 10, 78).xRows;
    const p = fresh(d);
    const t0 = now();
    const first = await settle(invoke("PREDICT", p.yRows, p.xRows, nx, "form=log-log"));
    const firstMs = now() - t0;
    if (isHostError(first)) throw new HostError(first.code, first.message);
    const t = await timeRuns(5, () => ({ ...p, nx: nx.map((r, i) => (i === 0 ? r.map((v) => v * (1 + 1e-9 * ++variant)) : r.slice())) }),
      (q) => invoke("PREDICT", q.yRows, q.xRows, q.nx, "form=log-log"));
    results.push(["ELX.PREDICT 10^4 new rows", EXTRA, fmtMs(t.median), `fit cached; first call with the fit: ${fmtMs(firstMs)}`]);
  },
});
CASES.push({
  name: "ppml n=10^5,k=5",
  requires: ["FIT"],
  async run() {
    const d = data("ppml", () => makeData(1e5, 5, 79, "counts"));
    const probe = await settle(invoke("FIT", d.yRows, d.xRows, "estimator=ppml"));
    if (isHostError(probe)) {
      results.push(["ELX.FIT estimator=ppml", "n=10^5,k=5", "n/a", `${probe.code} ${probe.message || ""}`.slice(0, 90)]);
      dropData("ppml");
      return;
    }
    const t = await timeRuns(5, () => fresh(d), (p) => invoke("FIT", p.yRows, p.xRows, "estimator=ppml"), 1);
    const zeros = d.ycol.reduce((a, v) => a + (v === 0 ? 1 : 0), 0);
    // A PPML table reports z (not t) in its fifth column.
    const isPpml = Array.isArray(probe) && probe[0] && probe[0][4] === "z";
    results.push(["ELX.FIT estimator=ppml", "n=10^5,k=5", fmtMs(t.median),
      `y has ${zeros} zeros` + (isPpml ? "" : `; WARNING: header has "${probe[0][4]}", not "z": this build seems to ignore estimator=ppml`)]);
    dropData("ppml");
  },
});
// 2SLS: 10^5 rows, 5 regressors (the first endogenous), 2 instruments, in levels with HC1 errors;
// against the plain FIT of the same y on the same 5 regressors (HC1) and R's AER::ivreg + vcovHC.
function makeIvData(n) {
  const z = normals(4242);
  const y = new Float64Array(n);
  const cols = Array.from({ length: 7 }, () => new Float64Array(n)); // x1..x5, z1, z2
  const yRows = new Array(n);
  const xRows = new Array(n);
  const plainRows = new Array(n);
  for (let i = 0; i < n; i++) {
    const u = 0.5 * z();
    const z1 = z();
    const z2 = z();
    const x2 = z();
    const x3 = z();
    const x4 = z();
    const x5 = z();
    const x1 = 0.6 * z1 + 0.4 * z2 + 0.2 * x2 + 0.5 * u + 0.3 * z();
    const row = [x1, x2, x3, x4, x5, z1, z2];
    row.forEach((v, j) => (cols[j][i] = v));
    y[i] = 3 - 1.5 * x1 + 0.4 * x2 - 0.2 * x3 + 0.1 * x4 + 0.05 * x5 + u;
    yRows[i] = [y[i]];
    xRows[i] = row;
    plainRows[i] = row.slice(0, 5);
  }
  const head = ["x1", "x2", "x3", "x4", "x5", "z1", "z2"];
  return { n, y, cols, yRows: [["y"], ...yRows], xRows: [head, ...xRows], plainRows: [head.slice(0, 5), ...plainRows] };
}
const IV_R_SCRIPT = `
suppressPackageStartupMessages({ library(AER); library(sandwich) })
args <- commandArgs(trailingOnly = TRUE)
file <- args[1]; n <- as.integer(args[2]); runs <- as.integer(args[3])
con <- file(file, "rb"); v <- readBin(con, "double", n * 8); close(con)
m <- matrix(v, nrow = n, ncol = 8); rm(v)
d <- data.frame(y = m[, 1], x1 = m[, 2], x2 = m[, 3], x3 = m[, 4], x4 = m[, 5], x5 = m[, 6], z1 = m[, 7], z2 = m[, 8])
t <- numeric(runs)
for (r in seq_len(runs)) {
  gc()
  t[r] <- system.time({
    fm <- ivreg(y ~ x1 + x2 + x3 + x4 + x5 | x2 + x3 + x4 + x5 + z1 + z2, data = d)
    se <- sqrt(diag(vcovHC(fm, type = "HC1")))
  })[["elapsed"]]
}
cat(sprintf("median %.6f\\n", median(t)))
cat("b", sprintf("%.17g", coef(fm)), "\\n")
`;
CASES.push({
  name: "2sls n=10^5,k=5",
  requires: ["FIT"],
  async run() {
    const d = data("2sls", () => makeIvData(1e5));
    const ivOpts = "form=level-level; estimator=2sls; endogenous=x1; instruments=z1,z2; se=HC1";
    const freshIv = () => {
      variant++;
      const yRows = d.yRows.slice();
      const i = 1 + (variant % d.n);
      yRows[i] = [d.yRows[i][0] * (1 + 1e-9 * variant)];
      return { yRows, xRows: d.xRows, plainRows: d.plainRows };
    };
    const ti = await timeRuns(5, freshIv, (p) => invoke("FIT", p.yRows, p.xRows, ivOpts), 1);
    const tp = await timeRuns(5, freshIv, (p) => invoke("FIT", p.yRows, p.plainRows, "form=level-level; se=HC1"), 1);
    const fits = ti.median / tp.median;
    store.iv = { ours: ti.median, fits };
    let note = `plain FIT (HC1) ${fmtMs(tp.median)}: 2SLS = ${fits.toFixed(2)} plain fits`;
    if (HAVE_R) {
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-bench-2sls-"));
      try {
        const bin = path.join(dir, "data.bin");
        const fd = fs.openSync(bin, "w");
        for (const c of [d.y, ...d.cols]) fs.writeSync(fd, Buffer.from(c.buffer, c.byteOffset, c.byteLength));
        fs.closeSync(fd);
        fs.writeFileSync(path.join(dir, "iv.R"), IV_R_SCRIPT);
        const res = spawnSync("Rscript", ["--vanilla", path.join(dir, "iv.R"), bin, String(d.n), "5"], { encoding: "utf8", maxBuffer: 1 << 24 });
        const line = (res.stdout || "").split("\n").find((l) => l.startsWith("median "));
        if (res.status === 0 && line) {
          const rMs = 1000 * Number(line.split(/\s+/)[1]);
          store.iv.r = rMs / ti.median;
          note += `; R AER::ivreg + vcovHC(HC1) ${fmtMs(rMs)}: R / ELX = ${store.iv.r.toFixed(2)}x`;
        } else note += `; R: ${((res.stderr || "").trim().split("\n").pop() || "failed").slice(0, 60)}`;
      } finally {
        fs.rmSync(dir, { recursive: true, force: true });
      }
    }
    results.push(["ELX.FIT estimator=2sls (1 endogenous, 2 instruments, HC1)", "n=10^5,k=5", fmtMs(ti.median), note]);
    dropData("2sls");
  },
});
CASES.push({
  name: "panel 1000x100,k=5",
  requires: ["FIT"],
  async run() {
    // 1,000 stores × 100 weeks = 10^5 rows, 5 regressors, both keys absorbed, errors clustered by
    // store; against a plain FIT (HC3) of the same rows and regressors, and R's plm two-way within
    // (with its clustered vcovHC) on the same data in the same run (--r-lm adds lm with indicators).
    const { makePanel, benchR } = require("./bench-panel");
    const pd = makePanel(1000, 100, 5, 7, 0);
    const names = pd.X.map((_, j) => `x${j + 1}`);
    const d = {
      n: pd.n,
      yRows: Array.from(pd.y, (v) => [v]),
      xRows: Array.from({ length: pd.n }, (_, i) => [...pd.X.map((c) => c[i]), `S${pd.store[i]}`, pd.week[i]]),
    };
    d.yRows.unshift(["Sales"]);
    d.xRows.unshift([...names, "Store", "Week"]);
    d.n = d.yRows.length;
    const plainX = d.xRows.map((r) => r.slice(0, 5));
    const panelOpts = "form=level-level; absorb=Store,Week; cluster=Store";
    const probe = await settle(invoke("FIT", d.yRows, d.xRows, panelOpts));
    if (isHostError(probe)) throw new HostError(probe.code, probe.message);
    const tp = await timeRuns(5, () => fresh(d), (p) => invoke("FIT", p.yRows, p.xRows, panelOpts), 1);
    const tf = await timeRuns(5, () => fresh({ n: d.n, yRows: d.yRows, xRows: plainX }), (p) => invoke("FIT", p.yRows, p.xRows, "form=level-level"), 1);
    const fits = tp.median / tf.median;
    let note = `${fits.toFixed(2)} plain fits (plain FIT HC3: ${fmtMs(tf.median)})`;
    store.panel = { fits };
    if (HAVE_R) {
      const r = benchR(pd, argv.includes("--r-lm"));
      if (r && !r.error) {
        const rMs = 1000 * (r.plm_within_s[0] + r.plm_cluster_s[0]);
        store.panel.r = rMs / tp.median;
        note += `; R plm two-way within + clustered vcovHC: ${fmtMs(rMs)} (R / engine = ${(rMs / tp.median).toFixed(2)}x)`;
        if (r.lm_dummies_s) note += `; R lm with indicators: ${fmtMs(1000 * r.lm_dummies_s[0])}`;
        const b = probe.slice(1).map((row) => row[2]);
        note += `; slopes differ from plm by ${Math.max(...b.map((v, j) => Math.abs(v - r.plm_coef[j]) / Math.abs(r.plm_coef[j]))).toExponential(1)}`;
      } else if (r) note += `; R failed: ${r.error.slice(0, 80)}`;
    }
    results.push(["ELX.FIT absorb=Store,Week; cluster=Store", "1000x100,k=5", fmtMs(tp.median), note]);
  },
});
CASES.push({
  name: "bygroup 1000x150,k=3",
  requires: ["BYGROUP", "ELASTICITIES"],
  async run() {
    const G = 1000;
    const per = 150;
    const d = data("groups", () => makeData(G * per, 3, 80));
    const keys = [];
    for (let g = 0; g < G; g++) for (let i = 0; i < per; i++) keys.push([`G${String(g + 1).padStart(4, "0")}`]);
    const tb = await timeRuns(3, () => ({ ...fresh(d), keys: keys.slice() }), (p) => invoke("BYGROUP", p.keys, p.yRows, p.xRows, "form=log-log"), 1);
    const tl = await timeRuns(3, () => fresh(d), (p) => {
      let lastRes;
      for (let g = 0; g < G; g++) {
        const a = g * per;
        lastRes = invoke("ELASTICITIES", p.yRows.slice(a, a + per), p.xRows.slice(a, a + per), "form=log-log");
        if (isHostError(lastRes)) return lastRes;
      }
      return lastRes;
    }, 0);
    const ratio = tl.median / tb.median;
    store.bygroup = ratio;
    results.push(["ELX.BYGROUP 1,000 groups x 150 rows", "k=3", fmtMs(tb.median), `loop of 1,000 ELASTICITIES: ${fmtMs(tl.median)} (loop / BYGROUP = ${ratio.toFixed(2)}x)`]);
    dropData("groups");
  },
});

// ----- change over time: ROLLING and BREAKTEST, beside base R and strucchange -----
/** Writes y then the x columns as doubles and runs an R script on them; its last line is JSON. */
function runRScript(d, body) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-bench-"));
  const bin = path.join(dir, "data.bin");
  try {
    const fd = fs.openSync(bin, "w");
    const w = (a) => fs.writeSync(fd, Buffer.from(a.buffer, a.byteOffset, a.byteLength));
    w(d.ycol);
    for (const c of d.xcols) w(c);
    fs.closeSync(fd);
    const head = `v <- readBin("${bin}", "double", ${d.n * (d.k + 1)}); y <- log(v[1:${d.n}]); X <- cbind(1, log(matrix(v[-(1:${d.n})], ${d.n}, ${d.k})))\n`;
    const res = spawnSync("Rscript", ["--vanilla", "-e", head + body], { encoding: "utf8", maxBuffer: 1 << 24 });
    if (res.status !== 0) return { error: (res.stderr || "").trim().split("\n").slice(-2).join(" ") };
    return JSON.parse(res.stdout.trim().split("\n").pop());
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}
/** The first n rows of a data set, as makeData returns them. */
function headRows(d, n) {
  return { n, k: d.k, yRows: d.yRows.slice(0, n), xRows: d.xRows.slice(0, n), ycol: d.ycol.slice(0, n), xcols: d.xcols.map((c) => c.slice(0, n)) };
}
CASES.push({
  name: "rolling n=10^5,k=5,100 windows",
  requires: ["ROLLING"],
  async run() {
    // 4 regressors and the intercept: k = 5 coefficients; 100 windows of 10,000 rows, step 909
    const d = data("rolling", () => makeData(1e5, 4, 81));
    const window = 10000;
    const step = 909;
    const t = await timeRuns(3, () => fresh(d), (p) => invoke("ROLLING", p.yRows, p.xRows, window, `step=${step}`), 1);
    const tab = t.last;
    const windows = Array.isArray(tab) ? tab.slice(1).filter((r) => typeof r[0] === "number").length : 0;
    // processor time of one more call: on a machine shared with other work it is the steadier figure
    const p = fresh(d);
    const c0 = process.cpuUsage();
    invoke("ROLLING", p.yRows, p.xRows, window, `step=${step}`);
    const c1 = process.cpuUsage(c0);
    let note = `${windows} windows of ${window.toLocaleString("en")} rows, log-log, HC3; CPU ${fmtMs((c1.user + c1.system) / 1000)} (load average ${os.loadavg()[0].toFixed(1)})`;
    if (HAVE_R) {
      const r = runRScript(d, `t0 <- proc.time()[["elapsed"]]; b1 <- NULL
        for (s in seq(1, ${d.n} - ${window} + 1, by = ${step})) {
          r <- s:(s + ${window} - 1); f <- lm.fit(X[r, ], y[r]); h <- rowSums(qr.Q(f$qr)^2)
          B <- chol2inv(qr.R(f$qr)); V <- B %*% crossprod(X[r, ] * (f$residuals / (1 - h))) %*% B
          if (is.null(b1)) { b1 <- coef(f); se1 <- sqrt(diag(V)) }
        }
        el <- proc.time()[["elapsed"]] - t0
        cat(sprintf('{"seconds": %.6f, "b": [%s], "se": [%s]}', el, paste(sprintf("%.17g", b1), collapse = ","), paste(sprintf("%.17g", se1), collapse = ",")), "\n")`);
      if (r.error) note += `; R failed: ${r.error}`;
      else {
        // the first window's elasticities (log-log: the slopes) against R's
        const row = tab[1];
        let worst = 0;
        for (let j = 1; j <= d.k; j++) {
          worst = Math.max(worst, Math.abs(row[1 + 2 * j] - r.b[j]) / Math.abs(r.b[j]), Math.abs(row[2 + 2 * j] - r.se[j]) / Math.abs(r.se[j]));
        }
        note += `; R lm.fit + HC3 per window (strucchange has no rolling fit) ${fmtMs(1000 * r.seconds)} (${(1000 * r.seconds / t.median).toFixed(1)}x ours), first window within ${worst.toExponential(1)}`;
      }
    }
    store.rolling = t.median;
    results.push(["ELX.ROLLING 10^5 rows, 100 windows", "k=5", fmtMs(t.median), note]);
    dropData("rolling");
  },
});
CASES.push({
  name: "breaktest supF n=10^4,k=5",
  requires: ["BREAKTEST"],
  async run() {
    const d = data("breaks", () => makeData(1e4, 4, 82));
    const t = await timeRuns(3, () => fresh(d), (p) => invoke("BREAKTEST", p.yRows, p.xRows, null, ""), 1);
    const sup = Array.isArray(t.last) ? t.last.find((r) => /^sup-F/.test(r[0])) : null;
    let note = sup ? `sup-F ${Number(sup[1]).toFixed(4)} over every break (trim 0.15), then Chow and HC3 Wald at the best` : `no table: ${t.last && t.last.message}`;
    if (HAVE_R) {
      // R's Fstats refits every candidate: about 2 minutes at 10^4 rows, so R runs on the first
      // 2,000 rows, beside the engine on the same rows
      const m = 2000;
      const dm = headRows(d, m);
      const small = await timeRuns(3, () => fresh(dm), (p) => invoke("BREAKTEST", p.yRows, p.xRows, null, ""), 1);
      const ours = Array.isArray(small.last) ? small.last.find((r) => /^sup-F/.test(r[0])) : null;
      const r = runRScript(dm, `suppressPackageStartupMessages(library(strucchange))
        t0 <- proc.time()[["elapsed"]]; fs <- Fstats(y ~ 0 + X, from = 0.15); st <- sctest(fs, type = "supF"); el <- proc.time()[["elapsed"]] - t0
        cat(sprintf('{"seconds": %.6f, "stat": %.17g, "p": %.17g}', el, st$statistic, st$p.value), "\n")`);
      if (r.error) note += `; R failed: ${r.error}`;
      else {
        const rel = ours ? Math.abs(ours[1] - r.stat) / r.stat : NaN;
        note += `; at n=2,000 (R's Fstats takes minutes at 10^4): ours ${fmtMs(small.median)}, strucchange::Fstats + sctest ${fmtMs(1000 * r.seconds)} (${(1000 * r.seconds / small.median).toFixed(0)}x ours), sup-F within ${rel.toExponential(1)}`;
      }
    }
    store.breaktest = t.median;
    results.push(["ELX.BREAKTEST sup-F 10^4 rows", "k=5", fmtMs(t.median), note]);
    dropData("breaks");
  },
});

// ----- the external harness: C, R and numpy on its own data files, Elasticell on the same files -----
if (USE_HARNESS) {
  CASES.push({
    name: "harness 25000/10^5/10^6 x 10 (C, R, numpy, same run)",
    requires: [],
    async run() {
      const h = await require("./bench-harness").runHarness({ quick: QUICK, out: (s = "") => out("    " + s) });
      if (!h) return;
      store.harness = h;
      results.push(...h.rows);
    },
  });
}

// ---------------------------------------------------------------------------------------------
// Run
// ---------------------------------------------------------------------------------------------
async function main() {
  out(`Elasticell benchmark  (node ${process.version}, ${os.cpus().length} x ${os.cpus()[0] && os.cpus()[0].model}, ${(os.totalmem() / 2 ** 30).toFixed(0)} GiB)`);
  out(`bundle: ${path.relative(ROOT, BUNDLE)}; registered: ${[...registry.keys()].sort().join(", ")}`);
  out(`missing (cases skipped): ${KNOWN_IDS.filter((id) => !registry.has(id)).join(", ") || "none"}`);
  out(`R: ${HAVE_R ? spawnSync("Rscript", ["--version"], { encoding: "utf8" }).stderr.trim().split("\n")[0] || "Rscript found" : USE_R ? "Rscript not on PATH: no comparison" : "skipped (--no-r)"}`);
  out(`FIT options "${FIT_OPTIONS}"; medians over 5 runs (3 for 10^6 rows), one untimed warm-up below 10^6, gc before each 10^6 run; data as the host's row arrays`);
  // JIT warm-up: the engine's code needs a handful of calls before it runs at speed (measured: the
  // first five FIT calls on 10^4 rows take 2-6x longer than the later ones). Medians below are for
  // warmed code; a cold first call in a fresh host is slower.
  if (registry.has("FIT")) {
    const t0 = now();
    for (const k of [3, 10]) {
      const d = makeData(1e4, k, 5);
      for (let r = 0; r < 8; r++) {
        const p = fresh(d);
        await settle(invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS));
        if (registry.has("ZEROS")) invoke("ZEROS", p.xRows);
      }
    }
    out(`warm-up: 16 FIT calls on 10^4 rows in ${fmtMs(now() - t0)}`);
  }
  out("");
  for (const c of CASES) {
    if (ONLY && !c.name.includes(ONLY) && !c.internal) continue;
    const missing = c.requires.filter((id) => !registry.has(id));
    if (missing.length) {
      if (!c.internal) {
        out(`- ${c.name}: skipped (not registered: ${missing.join(", ")})`);
        results.push([c.name, "", "skipped", `not registered: ${missing.join(", ")}`]);
      }
      continue;
    }
    if (!c.internal) out(`- ${c.name} ...`);
    const before = results.length;
    try {
      await c.run();
      for (const r of results.slice(before)) out(`    ${r[0]}: ${r.slice(2).join("   ")}`);
    } catch (e) {
      const msg = e instanceof HostError ? `${e.code} ${e.message || ""}` : `${e && e.stack ? e.stack.split("\n").slice(0, 3).join(" | ") : e}`;
      out(`    failed: ${msg}`);
      results.push([c.name, "", "failed", msg.slice(0, 120)]);
    }
  }

  // ----- the table -----
  out("");
  out("Results");
  printTable(["Measurement", "Size", "Median", "Notes"], results);

  const big = dname(1e6, 10);
  const fitBig = store[`fit ${big}`];
  const rBig = store[`r ${big}`];
  const conv = store[`convert ${big}`];
  const cache = store[`cache ${big}`];
  const yes = (b) => (b === null ? "n/a" : b ? "PASS" : "FAIL");
  targets.push(["FIT n=10^6, k=10 (log-log, HC3)", "< 0.9 s", fitBig ? fmtMs(fitBig.median) : "n/a", yes(fitBig ? fitBig.median < 900 : null)]);
  targets.push(["  speed against R (lm.fit + HC3 by hand)", ">= 4x faster", rBig ? `${rBig.ratio.toFixed(2)}x` : HAVE_R ? "n/a" : "no R", yes(rBig ? rBig.ratio >= 4 : null)]);
  const pBig = store[`pipeline n=10^6,k=10`];
  targets.push(["  speed against R, issue's pipeline (log, QR, classical, HC3, BP)", ">= 4x faster", pBig ? `${pBig.ratio.toFixed(2)}x` : HAVE_R ? "n/a" : "no R", yes(pBig ? pBig.ratio >= 4 : null)]);
  targets.push([`conversion of host rows, n=10^6, k=10${CONVERT_ID || (globalThis.Elasticell && globalThis.Elasticell.readColumns) ? "" : " (~ZEROS of x)"}`, "< 0.45 s", conv !== undefined ? fmtMs(conv) : "n/a", yes(conv !== undefined ? conv < 450 : null)]);
  targets.push(["cache hit (equal inputs), n=10^6, k=10", "< 5% of a fit", cache !== undefined ? `${cache.toFixed(1)}%` : "n/a", yes(cache !== undefined ? cache < 5 : null)]);
  targets.push([`peak memory during the ${store.memory ? store.memory.key : dname(1e6, 10)} fit`, "< 3x input", store.memory ? `${store.memory.heapX.toFixed(2)}x heap, ${store.memory.rssX.toFixed(2)}x RSS` : "n/a", yes(store.memory ? store.memory.worst < 3 : null)]);
  for (const key of [EXTRA, "n=10^6,k=3"]) {
    const ts = store[`tests ${key}`];
    const fc = store[`formcheck ${key}`];
    if (ts) targets.push([`TESTS ${key} without White's own aux regression, in fits`, "< 3 fits", `${ts.rest.toFixed(2)} (all ${ts.fits.toFixed(2)}, White ${ts.white.toFixed(2)})`, yes(ts.rest < 3)]);
    if (fc) targets.push([`FORMCHECK ${key}, in fits`, "< 3 fits", `${fc.fits.toFixed(2)}`, yes(fc.fits < 3)]);
  }
  if (store.panel) {
    targets.push(["two-way FE + cluster, 10^5 rows, in plain fits", "< 10 fits", `${store.panel.fits.toFixed(2)}`, yes(store.panel.fits < 10)]);
    if (store.panel.r !== undefined) targets.push(["  against R plm two-way within (R / engine)", "(ratio printed)", `${store.panel.r.toFixed(2)}x`, ""]);
  }
  if (store.bygroup !== undefined) targets.push(["BYGROUP vs loop of ELASTICITIES", "(ratio printed)", `${store.bygroup.toFixed(2)}x`, ""]);
  if (store.rolling !== undefined) targets.push(["ROLLING 10^5 rows, k=5, 100 windows", "< 0.5 s", fmtMs(store.rolling), yes(store.rolling < 500)]);
  if (store.breaktest !== undefined) targets.push(["BREAKTEST sup-F 10^4 rows, k=5", "< 0.5 s", fmtMs(store.breaktest), yes(store.breaktest < 500)]);
  if (store.iv) {
    targets.push(["FIT estimator=2sls n=10^5, k=5, 2 instruments", "< 3 plain fits", `${store.iv.fits.toFixed(2)} fits`, yes(store.iv.fits < 3)]);
    targets.push(["  against R (AER::ivreg + vcovHC HC1)", "(ratio printed)", store.iv.r !== undefined ? `${store.iv.r.toFixed(2)}x` : HAVE_R ? "n/a" : "no R", ""]);
  }
  if (store.harness) targets.push(...store.harness.targets);
  out("");
  out("Targets (README, speed)");
  printTable(["Target", "Goal", "Measured", ""], targets);
  out("");
  out("Peak memory: extra bytes above the pre-call baseline (after global.gc()), as a multiple of the input as");
  out("Float64 columns; heapUsed+arrayBuffers is read around the call (a lower bound for a synchronous call),");
  out("RSS is sampled every 1 ms from a worker thread; the target is checked against the larger of the two.");
}

function printTable(header, rows) {
  const all = [header, ...rows].map((r) => r.map((c) => String(c)));
  const w = header.map((_, j) => Math.max(...all.map((r) => (r[j] || "").length)));
  const line = (r) => "  " + r.map((c, j) => (j === r.length - 1 ? c : c.padEnd(w[j]))).join("  ");
  out(line(all[0]));
  out("  " + w.map((x) => "-".repeat(x)).join("  "));
  for (const r of all.slice(1)) out(line(r));
}

/** Child mode for the memory case: one data set, a short warm-up, one measured FIT call. */
async function memoryChild(n, k) {
  const d = makeData(n, k, 1000 + n / 1000 + k);
  const w = makeData(1e4, k, 5);
  for (let r = 0; r < 6; r++) {
    const p = fresh(w);
    await settle(invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS));
  }
  const p = fresh(d);
  const m = await peakDuring(() => invoke("FIT", p.yRows, p.xRows, FIT_OPTIONS));
  const error = isHostError(m.value) ? { code: m.value.code, message: m.value.message } : null;
  // What stays after the call (the fit cache), with the inputs and the result released.
  p.yRows = p.xRows = m.value = null;
  global.gc();
  global.gc();
  const after = process.memoryUsage();
  out("MEMORY " + JSON.stringify({ heapExtra: m.heapExtra, rssExtra: m.rssExtra, retained: after.heapUsed + after.arrayBuffers - m.base, error }));
}

const childAt = argv.indexOf("--memory-child");
(childAt >= 0 ? memoryChild(Number(argv[childAt + 1]), Number(argv[childAt + 2])) : main()).catch((e) => {
  process.stderr.write(`bench failed: ${e && e.stack ? e.stack : e}\n`);
  process.exit(1);
});
