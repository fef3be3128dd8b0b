#!/usr/bin/env node
/*
 * Elasticell beside the external performance harness, in one run: `npm run bench` (the harness
 * case of scripts/bench.js) or `npm run bench:harness` (this script alone).
 *
 * The harness is a folder of reference programs committed in scripts/perf-harness/ (a measuring
 * tool, not part of the product): the same log-model computation (logs, QR least squares, classical
 * and HC3 errors, studentized Breusch–Pagan) in C, plain JavaScript, R and Python, timed on the same
 * generated binary files. $ELX_PERF_HARNESS points to another copy; when the folder is missing this
 * script prints one line saying so and does nothing else (`npm test` never needs it).
 *
 * What it does: copies the harness to a temporary folder, builds its C with gcc (the flags of its
 * run-all.sh), writes the data with its gen.js (25,000, 10^5 and 10^6 rows × 10 regressors), then,
 * size by size and interleaved, runs C-blocked, Elasticell, R-lmfit, Py-npqr, C-plain and JS-blocked,
 * each in a process of its own with 5 timed repetitions and their median (the harness's own rule).
 * Elasticell is timed on the SAME .bin files:
 *   ELX-columns  the .bin read into Float64Array columns, then the engine in this thread: the
 *                intake checks, prepare() (logs), the least-squares fit, classical and HC3
 *                covariances and the studentized Breusch–Pagan test.
 *   ELX-session-P  the same from column blocks through the column-block session with P workers
 *                (P = 0: in this thread; 1 .. cores: worker threads), when the build has one (see
 *                openColumnSession below).
 *   ELX-cells    (25,000 and 10^5 rows) ELX.FIT with HC3 then ELX.HETEROTEST from the host's row
 *                arrays through dist/functions.js, fresh content every call (no cache hit).
 * Every implementation's results are compared with the C reference (relative difference of the
 * coefficients, classical and HC3 errors, the Breusch–Pagan statistic) and the worst is printed.
 * Peak memory of the column run is measured in a clean child of its own (process.resourceUsage's
 * maxRSS) against the input held as doubles.
 *
 *   node scripts/bench-harness.js            sizes 25,000, 10^5 and 10^6
 *   node scripts/bench-harness.js --quick    25,000 and 10^5 only
 *   node scripts/bench-harness.js --reps 7   repetitions per process (default 5)
 *   node scripts/bench-harness.js --rounds 3 the whole list 3 times, interleaved; the median is over
 *                                            every repetition of every round (for a busy machine)
 *   node scripts/bench-harness.js --keep     keep the temporary folder (its path is printed)
 *
 * Nothing is installed from here; a missing tool is named with the apt line that provides it, and
 * its columns are left out.
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");

const ROOT = path.join(__dirname, "..");
const FORM = "form=log-log";
const FIT_OPTIONS = "form=log-log; se=HC3";
/** Agreement with the C reference asked of every implementation (relative). */
const AGREE = 1e-10;
/** Targets for the engine against the harness (README, speed). */
const TARGET = { vsR: 3, vsPy: 1, vsC: 3, big: 400, cellsVsR: 3, memory: 2 };

const now = () => Number(process.hrtime.bigint()) / 1e6;
const median = (a) => {
  const s = a.slice().sort((p, q) => p - q);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
};
const fmtMs = (ms) => (!Number.isFinite(ms) ? "–" : ms >= 1000 ? `${(ms / 1000).toFixed(3)} s` : ms >= 10 ? `${ms.toFixed(1)} ms` : `${ms.toFixed(2)} ms`);
const sizeName = (n) => {
  const e = Math.round(Math.log10(n));
  return 10 ** e === n ? `10^${e}` : n.toLocaleString("en");
};

// ---------------------------------------------------------------------------------------------
// Reading the harness's files and outputs
// ---------------------------------------------------------------------------------------------
/** n, k and the k+1 columns (y, x1..xk, raw positive values) of a harness .bin file, as views of one buffer. */
function readBin(file) {
  const buf = fs.readFileSync(file);
  const all = buf.byteOffset % 8 === 0 ? new Float64Array(buf.buffer, buf.byteOffset, buf.length / 8) : new Float64Array(Uint8Array.from(buf).buffer);
  const n = all[0];
  const k = all[1];
  const cols = [];
  for (let j = 0; j <= k; j++) cols.push(all.subarray(2 + j * n, 2 + (j + 1) * n));
  return { n, k, cols };
}

/** The harness's output format: "key v1 v2 …" lines (impl, coef, se, hc3, bp, times_ms, median_ms…). */
function parseOut(text) {
  const o = {};
  for (const line of text.split("\n")) {
    const parts = line.trim().split(/\s+/);
    if (parts.length < 2) continue;
    const key = parts[0];
    const vals = parts.slice(1);
    o[key] = key === "impl" || key === "note" || key === "info" ? vals.join(" ") : vals.map(Number);
  }
  return o;
}
function printOut(o) {
  const f = (v) => v.map((x) => (Number.isInteger(x) && Math.abs(x) < 1e15 ? String(x) : x.toPrecision(17))).join(" ");
  const lines = [`impl ${o.impl}`];
  for (const key of ["n", "k", "coef", "se", "hc3", "bp", "read_ms", "times_ms", "median_ms", "rss_kb"]) if (o[key]) lines.push(`${key} ${f(o[key])}`);
  if (o.note) lines.push(`note ${o.note}`);
  process.stdout.write(lines.join("\n") + "\n");
}

/** Worst relative difference of a's numbers from the reference's, over what both report. */
function agreement(a, ref) {
  let worst = 0;
  let compared = 0;
  const cmp = (x, r) => {
    if (!x || !r || x.length !== r.length) return;
    for (let i = 0; i < r.length; i++) {
      const d = Math.abs(x[i] - r[i]) / Math.max(Math.abs(r[i]), 1e-300);
      if (!(d <= worst)) worst = d;
    }
    compared++;
  };
  cmp(a.coef, ref.coef);
  cmp(a.se, ref.se);
  cmp(a.hc3, ref.hc3);
  if (a.bp && ref.bp) cmp([a.bp[0]], [ref.bp[0]]);
  return compared ? worst : NaN;
}

// ---------------------------------------------------------------------------------------------
// Child: the engine from columns, in this thread
// ---------------------------------------------------------------------------------------------
/**
 * The engine's TypeScript sources (functions/engine, functions/parallel) transpiled once to CommonJS
 * under node_modules/.cache (so that package imports resolve), for the child processes: they then load
 * plain JavaScript, without the TypeScript compiler in their memory.
 */
function compileEngine() {
  const ts = require("typescript");
  // one folder per clone (node_modules may be shared); a file is redone when its source's time differs
  const tag = require("crypto").createHash("sha1").update(ROOT).digest("hex").slice(0, 10);
  const out = path.join(ROOT, "node_modules", ".cache", "elx-bench-harness", tag);
  for (const sub of ["engine", "engine/wasm", "parallel"]) {
    const dir = path.join(ROOT, "functions", sub);
    if (!fs.existsSync(dir)) continue;
    fs.mkdirSync(path.join(out, "functions", sub), { recursive: true });
    for (const f of fs.readdirSync(dir).filter((f) => f.endsWith(".ts") && !f.endsWith(".d.ts"))) {
      const src = path.join(dir, f);
      const dst = path.join(out, "functions", sub, f.replace(/\.ts$/, ".js"));
      const srcTime = fs.statSync(src).mtime;
      if (fs.existsSync(dst) && fs.statSync(dst).mtime.getTime() === srcTime.getTime()) continue;
      const js = ts.transpileModule(fs.readFileSync(src, "utf8"), {
        fileName: src,
        compilerOptions: { module: ts.ModuleKind.CommonJS, target: ts.ScriptTarget.ES2019, esModuleInterop: true },
      });
      fs.writeFileSync(dst, js.outputText);
      fs.utimesSync(dst, srcTime, srcTime);
    }
  }
  return path.join(out, "functions");
}
/** Where the children load the engine from: the transpiled copy, or the sources through ts-require. */
function engineModule(sub, name) {
  if (process.env.ELX_BENCH_ENGINE) return require(path.join(process.env.ELX_BENCH_ENGINE, sub, name));
  require("./ts-require");
  return require(path.join(ROOT, "functions", sub, name + ".ts"));
}

function engine() {
  const r = (m) => engineModule("engine", m);
  return {
    ...r("options"),
    ...r("transforms"),
    ...r("estimators"),
    ...r("specTests"),
    RowList: r("problems").RowList,
    fail: r("problems").fail,
  };
}

/**
 * What the cell path's intake produces, from numeric columns: the counts and row numbers the engine
 * reads, with a check that every value is a finite number (a column block carries NaN where a cell
 * was not one; this data set has none, so no row is left out).
 */
function rawFromColumns(E, y, x) {
  const n = y.length;
  // as a column block's append checks them: Σ 0·v is 0 when every value is finite, NaN otherwise
  for (const c of [y, ...x]) {
    if (zeroTimesSum(c) === 0) continue;
    for (let i = 0; i < n; i++) if (!Number.isFinite(c[i])) E.fail(`row ${i + 1} is not a number`);
  }
  const xNames = x.map((_, j) => `x${j + 1}`);
  const rowNumbers = new Int32Array(n);
  for (let i = 0; i < n; i++) rowNumbers[i] = i + 2;
  return {
    yName: "y", xNames, columnNames: xNames.slice(), regressorOf: Int32Array.from(x, (_, j) => j),
    roles: { absorb: [], factors: [], cluster: [], panel: null, time: null, weights: null, weightsName: null, instruments: [], instrumentNames: [] },
    leftOutWeight: 0, leftOutWeightRows: new E.RowList(), y, x, rowNumbers, leftOutBlank: 0, leftOutBlankRows: new E.RowList(),
    numericTextRows: new E.RowList(), numericTextExample: null, unnamed: [], trailingBlank: 0, firstRow: 2, dataRows: n, yHeader: true,
  };
}

/** Σ 0·c_i in two lanes: 0 when every value is finite, NaN otherwise. */
function zeroTimesSum(c) {
  let s0 = 0;
  let s1 = 0;
  let i = 0;
  for (; i + 1 < c.length; i += 2) {
    s0 += c[i] * 0;
    s1 += c[i + 1] * 0;
  }
  if (i < c.length) s0 += c[i] * 0;
  return s0 + s1;
}

/** The timed part on columns the engine owns (prepare() logs them in place). */
function columnsOnce(E, o, y, x) {
  const data = E.prepare(rawFromColumns(E, y, x), o);
  const fit = E.estimatorOf(o).build(data, o);
  const hc3 = fit.covariance("HC3");
  const classical = fit.covariance("classical");
  const bp = E.breuschPaganKoenker(fit);
  return { coef: Array.from(fit.coef), se: Array.from(fit.standardErrors(classical)), hc3: Array.from(fit.standardErrors(hc3)), bp: [bp.statistic, bp.pValue] };
}

async function columnsChild(file, reps) {
  const E = engine();
  const o = E.parseOptions(FIT_OPTIONS);
  const t0 = now();
  const { n, k, cols } = readBin(file);
  const readMs = now() - t0;
  // JIT warm-up on the first 25,000 rows, untimed (a long-lived host runs warmed code)
  const w = Math.min(n, 25000);
  for (let r = 0; r < 8; r++) columnsOnce(E, o, cols[0].slice(0, w), cols.slice(1).map((c) => c.slice(0, w)));
  const times = [];
  let res;
  for (let r = 0; r < reps; r++) {
    // the engine owns its input (logs in place): a fresh copy per repetition, untimed, stands for
    // the columns the reader hands over
    const y = cols[0].slice();
    const x = cols.slice(1).map((c) => c.slice());
    await settleMemory(n);
    const a = now();
    res = columnsOnce(E, o, y, x);
    times.push(now() - a);
  }
  printOut({ impl: "ELX-columns", n: [n], k: [k], ...res, read_ms: [readMs], times_ms: times, median_ms: [median(times)], note: "engine in this thread; untimed copy of the columns per repetition" });
}

/** A full collection before a timed repetition, and time for the collector's sweeping on large inputs. */
async function settleMemory(n) {
  if (typeof global.gc === "function") global.gc();
  if (n >= 5e5) await new Promise((r) => setTimeout(r, 300));
}

/**
 * Peak memory of one column run, in a process that holds nothing else: the resident set's high-water
 * mark and the resident set before the input is read (engine loaded), the resident set with the
 * input loaded and the high-water mark after the run, in kB.
 */
async function memoryChild(file) {
  const E = engine();
  const o = E.parseOptions(FIT_OPTIONS);
  // no warm-up: it would raise the high-water mark before the input is read
  global.gc();
  global.gc();
  const before = process.resourceUsage().maxRSS;
  const rss0 = process.memoryUsage().rss / 1024;
  const { n, k, cols } = readBin(file);
  const loaded = process.memoryUsage().rss / 1024;
  const res = columnsOnce(E, o, cols[0], cols.slice(1));
  const after = process.resourceUsage().maxRSS;
  process.stdout.write("MEMORY " + JSON.stringify({ n, k, before, rss0, loaded, after, inputKb: (n * (k + 1) * 8) / 1024, coef0: res.coef[0] }) + "\n");
}

/**
 * The same for the column-block session with P workers (threads of this process, so the process's
 * high-water mark covers them): the workers started first, then the file read straight into the
 * chunks (the input held once), appended and fitted.
 */
async function memorySessionChild(file, workers) {
  const { open, why } = openColumnSession();
  if (!open) throw new Error(why);
  const fd = fs.openSync(file, "r");
  const head = new Float64Array(2);
  fs.readSync(fd, head, 0, 16, 0);
  const [n, k] = head;
  const session = await open({ rows: n, workers });
  global.gc();
  global.gc();
  const before = process.resourceUsage().maxRSS;
  const rss0 = process.memoryUsage().rss / 1024;
  const CHUNK = 65536;
  const chunks = [];
  for (let s = 0; s < n; s += CHUNK) {
    const m = Math.min(n, s + CHUNK) - s;
    const cols = [];
    for (let j = 0; j <= k; j++) {
      const c = new Float64Array(m);
      fs.readSync(fd, c, 0, m * 8, 16 + (j * n + s) * 8);
      cols.push(c);
    }
    chunks.push({ rowStart: s, y: cols[0], x: cols.slice(1) });
  }
  fs.closeSync(fd);
  const loaded = process.memoryUsage().rss / 1024;
  await Promise.all(chunks.map((c) => session.append(c)));
  chunks.length = 0;
  const res = await session.estimate({ yName: "y", xNames: Array.from({ length: k }, (_, j) => `x${j + 1}`), form: "log-log", zeros: "stop", se: "HC3", level: 0.95, intercept: true });
  const after = process.resourceUsage().maxRSS;
  const used = session.workers;
  session.close();
  if (!res.ok) throw new Error(res.message);
  process.stdout.write("MEMORY " + JSON.stringify({ n, k, before, rss0, loaded, after, inputKb: (n * (k + 1) * 8) / 1024, workers: used, coef0: res.value.coefficients[0] }) + "\n");
  process.exit(0);
}

// ---------------------------------------------------------------------------------------------
// Child: the column-block session with P workers (hook)
// ---------------------------------------------------------------------------------------------
/**
 * The column-block session, when the build has one: functions/parallel/session.ts's
 * `openBigFit(options)` (a BigFitSession, functions/parallel/types.ts), its workers started as Node
 * worker threads on the built dist/fitWorker.js through functions/parallel/nodeWorker.ts's
 * nodeSpawner. Returns { open: null, why } until both are there; then ELX-session-P rows are timed
 * for P = 0 (this thread, the split engine) and 1 .. cores workers, with the 1-to-2-worker speed-up.
 */
function openColumnSession() {
  const dir = path.join(ROOT, "functions", "parallel");
  if (!fs.existsSync(path.join(dir, "session.ts"))) return { open: null, why: "functions/parallel/session.ts (the column-block session) is not in this build" };
  if (!fs.existsSync(path.join(dir, "nodeWorker.ts"))) return { open: null, why: "functions/parallel/nodeWorker.ts (workers as Node threads) is not in this build" };
  const bundle = path.join(ROOT, "dist", "fitWorker.js");
  if (!fs.existsSync(bundle)) return { open: null, why: "dist/fitWorker.js is missing: run npm run build" };
  let session;
  let nodeWorker;
  try {
    session = engineModule("parallel", "session");
    nodeWorker = engineModule("parallel", "nodeWorker");
  } catch (e) {
    return { open: null, why: `the session's modules do not load in Node (${e && e.message})` };
  }
  if (typeof session.openBigFit !== "function" || typeof nodeWorker.nodeSpawner !== "function") {
    return { open: null, why: "functions/parallel has no openBigFit / nodeSpawner" };
  }
  const spawn = nodeWorker.nodeSpawner(bundle);
  return { open: (options) => session.openBigFit({ ...options, spawn }), why: "" };
}

async function sessionChild(file, reps, workers) {
  const { open, why } = openColumnSession();
  if (!open) throw new Error(why);
  const { n, k, cols } = readBin(file);
  const spec = { yName: "y", xNames: cols.slice(1).map((_, j) => `x${j + 1}`), form: "log-log", zeros: "stop", se: "HC3", level: 0.95, intercept: true };
  const CHUNK = 65536;
  const run = async (m) => {
    // the chunks as a reader hands them over (copies, untimed: their buffers move to the parts)
    const chunks = [];
    for (let s = 0; s < m; s += CHUNK) {
      const e = Math.min(m, s + CHUNK);
      chunks.push({ rowStart: s, y: cols[0].slice(s, e), x: cols.slice(1).map((c) => c.slice(s, e)) });
    }
    // the workers kept warm between sessions, as the pane keeps its own: the warm-up fits and the
    // timed ones run on the same threads (fresh threads would be the first fit of a page)
    const session = await open({ rows: m, workers, keepWarm: true });
    try {
      await settleMemory(m);
      const t = now();
      await Promise.all(chunks.map((c) => session.append(c)));
      const out = await session.estimate(spec);
      const ms = now() - t;
      if (!out.ok) throw new Error(out.message);
      return { ms, value: out.value, used: session.workers, note: session.fallbackNote };
    } finally {
      session.close();
    }
  };
  for (let r = 0; r < 2; r++) await run(Math.min(n, 25000)); // warm-up, untimed
  const times = [];
  let last;
  for (let r = 0; r < reps; r++) {
    last = await run(n);
    times.push(last.ms);
  }
  const v = last.value;
  const bp = v.breuschPagan ? [v.breuschPagan.statistic, v.breuschPagan.p] : null;
  printOut({ impl: `ELX-session-${workers}`, n: [n], k: [k], coef: v.coefficients, hc3: v.standardErrors, bp, times_ms: times, median_ms: [median(times)],
    note: `append of ${CHUNK}-row chunks + fit timed (opening the workers and closing not; the workers kept warm between runs, as the pane keeps them); workers used ${last.used}${last.note ? "; " + last.note : ""}` });
}

// ---------------------------------------------------------------------------------------------
// Child: the cell path through the bundle
// ---------------------------------------------------------------------------------------------
async function cellsChild(file, reps) {
  const bundle = path.join(ROOT, "dist", "functions.js");
  const { HostError, loadFunctions } = require("./host-shim");
  const registry = loadFunctions(bundle);
  const call = async (id, ...args) => {
    let v;
    try {
      v = await registry.get(id)(...args);
    } catch (e) {
      if (e instanceof HostError) throw new Error(`${id}: ${e.code} ${e.message}`);
      throw e;
    }
    if (v && typeof v === "object" && !Array.isArray(v) && typeof v.code === "string") throw new Error(`${id}: ${v.code} ${v.message}`);
    return v;
  };
  const t0 = now();
  const { n, k, cols } = readBin(file);
  const readMs = now() - t0;
  // the host's shape: y as [[v], ...], x as [[x1..xk], ...], a header row on each
  const yRows = [["y"]];
  const xRows = [cols.slice(1).map((_, j) => `x${j + 1}`)];
  for (let i = 0; i < n; i++) {
    yRows.push([cols[0][i]]);
    const row = new Array(k);
    for (let j = 0; j < k; j++) row[j] = cols[j + 1][i];
    xRows.push(row);
  }
  let variant = 0;
  // one changed cell in y and in x per call (new row arrays there): no call is answered from the cache
  const fresh = () => {
    variant++;
    const f = 1 + 1e-9 * variant;
    const y = yRows.slice();
    const x = xRows.slice();
    const i = 1 + (variant % n);
    const i2 = 1 + ((variant + 1) % n);
    y[i] = [yRows[i][0] * f];
    x[i2] = xRows[i2].map((v, j) => (j === 0 ? v * f : v));
    return { y, x };
  };
  const pipeline = async (p) => {
    const table = await call("FIT", p.y, p.x, FIT_OPTIONS);
    const pValue = await call("HETEROTEST", p.y, p.x, "bp", FORM);
    return { table, pValue };
  };
  for (let r = 0; r < 8; r++) await pipeline(fresh()); // JIT warm-up, untimed
  const times = [];
  for (let r = 0; r < reps; r++) {
    const p = fresh();
    await settleMemory(n);
    const a = now();
    await pipeline(p);
    times.push(now() - a);
  }
  // agreement on the unchanged data, untimed: the table's coefficients and HC3 errors, and the
  // Breusch–Pagan statistic as the pane reads it (the cell shows its p-value)
  const { table, pValue } = await pipeline({ y: yRows, x: xRows });
  const rows = table.slice(1, k + 2);
  const tests = globalThis.Elasticell.testsView(yRows, xRows, FORM);
  const bpItem = tests.ok ? tests.value.find((t) => /Breusch.Pagan/.test(t.name) && /Koenker|studentized/.test(t.name)) : null;
  const pv = Array.isArray(pValue) ? pValue[0][0] : pValue;
  printOut({ impl: "ELX-cells", n: [n], k: [k], coef: rows.map((r) => r[2]), hc3: rows.map((r) => r[3]),
    bp: bpItem && bpItem.statistic !== null ? [bpItem.statistic, bpItem.pValue] : null, read_ms: [readMs], times_ms: times, median_ms: [median(times)],
    note: `FIT ${FIT_OPTIONS} then HETEROTEST bp from host rows (p-value cell ${typeof pv === "number" ? pv.toPrecision(6) : pv}); fresh content each call` });
}

// ---------------------------------------------------------------------------------------------
// The run
// ---------------------------------------------------------------------------------------------
function which(cmd) {
  for (const d of (process.env.PATH || "").split(path.delimiter)) {
    const f = path.join(d, cmd);
    try {
      fs.accessSync(f, fs.constants.X_OK);
      return f;
    } catch (e) {
      /* next */
    }
  }
  return null;
}
const works = (cmd, args) => spawnSync(cmd, args, { stdio: "ignore" }).status === 0;

/** The harness folder, or null with the reason. */
function findHarness() {
  const env = process.env.ELX_PERF_HARNESS;
  const dir = env ? path.resolve(env) : path.join(ROOT, "scripts", "perf-harness");
  const need = ["gen.js", "ols.c", "ols.js", "ols.R", "ols_py.py"];
  if (!fs.existsSync(dir)) return { dir: null, why: `${env ? "$ELX_PERF_HARNESS" : "scripts/perf-harness"} (${dir}) does not exist` };
  const missing = need.filter((f) => !fs.existsSync(path.join(dir, f)));
  if (missing.length) return { dir: null, why: `${dir} lacks ${missing.join(", ")}` };
  return { dir, why: "" };
}

/** The tools, each with its command or the reason it is left out (and the apt line that provides it). */
function findTools() {
  const t = {};
  t.gcc = which("gcc") ? { cmd: "gcc" } : { why: "gcc not found (apt-get install -y gcc)" };
  t.R = which("Rscript") ? { cmd: "Rscript" } : { why: "Rscript not found (apt-get install -y r-base-core)" };
  const pys = [process.env.PY, which("python3"), "/usr/bin/python3"].filter(Boolean);
  const py = pys.find((p) => works(p, ["-c", "import numpy, scipy.linalg, scipy.stats"]));
  t.py = py ? { cmd: py } : { why: "no python3 with numpy and scipy (apt-get install -y python3-numpy python3-scipy)" };
  const time = process.env.TIME_CMD || which("time");
  t.time = time && works(time, ["-v", "true"]) ? { cmd: time } : { why: "GNU time not found (apt-get install -y time): no whole-process peak memory column" };
  return t;
}

function sh(cmd, args, opts = {}) {
  const r = spawnSync(cmd, args, { encoding: "utf8", maxBuffer: 1 << 26, ...opts });
  return { ok: r.status === 0, stdout: r.stdout || "", stderr: (r.stderr || "") + (r.error ? String(r.error) : "") };
}

/** Runs one implementation's process (under GNU time -v when present); its parsed output, or { error }. */
function runImpl(tools, work, name, cmd, args, env) {
  const timeFile = path.join(work, "results", `${name}.${path.basename(args.find((a) => a.endsWith(".bin")) || "x")}.time`);
  const full = tools.time.cmd ? [tools.time.cmd, ["-v", "-o", timeFile, cmd, ...args]] : [cmd, args];
  const r = sh(full[0], full[1], { cwd: work, env: { ...process.env, ...env } });
  if (!r.ok) return { error: r.stderr.trim().split("\n").slice(-2).join(" ").slice(0, 200) || "failed" };
  const o = parseOut(r.stdout);
  if (!o.median_ms) return { error: `no median_ms in its output: ${r.stdout.slice(0, 120)}` };
  if (tools.time.cmd && fs.existsSync(timeFile)) {
    const m = fs.readFileSync(timeFile, "utf8").match(/Maximum resident set size \(kbytes\): (\d+)/);
    if (m) o.rssMB = Number(m[1]) / 1024;
  }
  return o;
}

/**
 * Runs everything and prints the tables. Returns { targets: [[what, goal, measured, PASS|FAIL|n/a]],
 * rows } for scripts/bench.js's table, or null when the harness is absent.
 */
async function runHarness({ quick = false, reps = 5, rounds = 1, keep = false, out = (s = "") => process.stdout.write(s + "\n") } = {}) {
  const h = findHarness();
  if (!h.dir) {
    out(`harness: reference columns (C, R, numpy) skipped: ${h.why}; set ELX_PERF_HARNESS to the harness folder to compare`);
    return null;
  }
  const tools = findTools();
  const t0 = now();
  const work = fs.mkdtempSync(path.join(os.tmpdir(), "elx-perf-"));
  const perf = path.join(work, "perf");
  fs.cpSync(h.dir, perf, { recursive: true });
  fs.chmodSync(perf, 0o755); // the source may be read-only; the copy writes data/, build/, results/
  for (const d of ["data", "build", "results"]) fs.mkdirSync(path.join(perf, d), { recursive: true });
  out(`harness: ${h.dir} copied to ${perf}${keep ? " (kept)" : ""}`);
  for (const [name, t] of Object.entries(tools)) if (t.why) out(`  left out: ${t.why}`);
  if (tools.gcc.cmd) {
    const flags = ["-O3", "-march=native", "-fopenmp-simd"];
    const c = sh("gcc", [...flags, "-Wall", "-o", "build/ols_c", "ols.c", "-lm"], { cwd: perf });
    if (!c.ok) tools.gcc = { why: `gcc failed on ols.c: ${c.stderr.trim().split("\n").pop()}` };
    if (fs.existsSync(path.join(perf, "mono.c"))) sh("gcc", ["-O2", "-shared", "-fPIC", "-o", "build/mono.so", "mono.c"], { cwd: perf });
    out(`  built ols.c (gcc ${flags.join(" ")})${tools.gcc.why ? ": " + tools.gcc.why : ""}`);
  }

  const sizes = quick ? [25000, 1e5] : [25000, 1e5, 1e6];
  const files = {};
  for (const n of sizes) {
    const g = sh(process.execPath, ["gen.js", String(n), "10", "--no-csv"], { cwd: perf });
    const tag = (g.stdout.match(/wrote (\S+)/) || [])[1];
    if (!g.ok || !tag) throw new Error(`gen.js ${n} 10 failed: ${g.stderr.slice(-200)}`);
    files[n] = path.join(perf, "data", tag + ".bin");
  }
  out(`  data (gen.js, ${sizes.map((n) => sizeName(n) + " × 10").join(", ")}) in ${fmtMs(now() - t0)}`);

  process.env.ELX_BENCH_ENGINE = compileEngine();
  const session = openColumnSession();
  const cores = Math.max(1, Math.min(8, os.cpus().length));
  if (!session.open) out(`  column-block session with workers: not timed (${session.why})`);
  const self = __filename;
  const nodeChild = (name, mode, file, extra = []) => runImpl(tools, perf, name, process.execPath, ["--expose-gc", self, "--child", mode, file, String(reps), ...extra], {});

  const results = {}; // results[n][impl]
  for (const n of sizes) {
    const f = files[n];
    const rel = path.relative(perf, f);
    const r = (results[n] = {});
    out(`  ${sizeName(n)} × 10 (${path.basename(f)}):`);
    const jobs = [];
    if (tools.gcc.cmd) jobs.push(["C-blocked", () => runImpl(tools, perf, "C-blocked", "build/ols_c", [rel, "blocked", String(reps)])]);
    jobs.push(["ELX-columns", () => nodeChild("ELX-columns", "columns", f)]);
    if (tools.R.cmd) jobs.push(["R-lmfit", () => runImpl(tools, perf, "R-lmfit", "Rscript", ["ols.R", rel, "lmfit", String(reps)])]);
    if (n <= 1e5) jobs.push(["ELX-cells", () => nodeChild("ELX-cells", "cells", f)]);
    if (tools.py.cmd) jobs.push(["Py-npqr", () => runImpl(tools, perf, "Py-npqr", tools.py.cmd, ["ols_py.py", rel, "npqr", String(reps)])]);
    if (session.open) for (let p = 0; p <= cores; p++) jobs.push([`ELX-session-${p}`, () => nodeChild(`ELX-session-${p}`, "session", f, [String(p)])]);
    if (tools.gcc.cmd) jobs.push(["C-plain", () => runImpl(tools, perf, "C-plain", "build/ols_c", [rel, "plain", String(reps)])]);
    jobs.push(["JS-blocked", () => runImpl(tools, perf, "JS-blocked", process.execPath, ["ols.js", rel, "blocked", String(reps)])]);
    // rounds: the whole list again, interleaved; every repetition of every round enters the median
    for (let round = 1; round <= rounds; round++) {
      for (const [name, job] of jobs) {
        const o = job();
        const prev = r[name];
        if (!prev || prev.error) r[name] = o;
        else if (!o.error) {
          prev.times_ms = prev.times_ms.concat(o.times_ms);
          prev.median_ms = [median(prev.times_ms)];
          if (o.rssMB) prev.rssMB = Math.max(prev.rssMB || 0, o.rssMB);
        }
        out(`    ${name.padEnd(15)}${rounds > 1 ? ` round ${round}` : ""} ${o.error ? "FAILED: " + o.error : "median " + fmtMs(o.median_ms[0]) + "  (" + o.times_ms.map((t) => t.toFixed(1)).join(", ") + " ms)"}`);
      }
    }
  }

  // peak memory of the column runs, largest size, each in a clean child
  const nMem = sizes[sizes.length - 1];
  const memRuns = [["ELX-columns", ["memory", files[nMem]]]];
  if (session.open) memRuns.push([`ELX-session-${cores}`, ["memory-session", files[nMem], String(cores)]]);
  // Twice each: on a busy machine the collector can fall behind and the resident set swell in one
  // run; the lower figure is the one reported, the other is shown beside it.
  const memory = memRuns.map(([name, args]) => {
    const runs = [];
    for (let t = 0; t < 2; t++) {
      const m = sh(process.execPath, ["--expose-gc", self, "--child", ...args], { env: { ...process.env, MALLOC_MMAP_THRESHOLD_: "65536" } });
      const line = m.stdout.split("\n").find((l) => l.startsWith("MEMORY "));
      if (!m.ok || !line) return { name, n: nMem, error: (m.stderr || m.stdout).trim().split("\n").slice(-2).join(" ").slice(0, 200) };
      const v = JSON.parse(line.slice(7));
      runs.push({ total: (v.after - v.rss0) / v.inputKb, extra: (v.after - v.loaded) / v.inputKb, inputMB: v.inputKb / 1024 });
    }
    runs.sort((a, b) => a.total - b.total);
    return { name, n: nMem, ...runs[0], other: runs[1].total };
  });

  // ----- tables -----
  const rowsForBench = [];
  const targets = [];
  const yes = (b) => (b === null ? "n/a" : b ? "PASS" : "FAIL");
  const ratio = (a, b) => (a && b && !a.error && !b.error ? a.median_ms[0] / b.median_ms[0] : NaN);
  const x = (v, d = 2) => (Number.isFinite(v) ? `${v.toFixed(d)}x` : "–");
  out("");
  out(`Elasticell beside the harness (same .bin files, same run; medians of ${reps * rounds} repetitions${rounds > 1 ? ` (${rounds} interleaved rounds of ${reps})` : ""}, each implementation in its own process).`);
  out("Ratios: time / C-blocked; R-lmfit / time and Py-npqr / time (above 1: faster than R / numpy). Shared machine: figures are noisy.");
  for (const n of sizes) {
    const r = results[n];
    const C = r["C-blocked"];
    out("");
    out(`${sizeName(n)} rows × 10 regressors (log-log; QR, classical + HC3 errors, studentized Breusch–Pagan)`);
    const table = [["implementation", "median", "fastest", "× C-blocked", "R-lmfit / it", "Py-npqr / it", "worst rel. diff vs C", "peak RSS"]];
    for (const [name, o] of Object.entries(r)) {
      if (o.error) {
        table.push([name, "failed", "", "", "", "", "", ""]);
        continue;
      }
      const ag = C && !C.error && name !== "C-blocked" ? agreement(o, C) : NaN;
      o.agree = ag;
      table.push([name, fmtMs(o.median_ms[0]), fmtMs(Math.min(...o.times_ms)), x(ratio(o, C), 1), x(ratio(r["R-lmfit"], o)), x(ratio(r["Py-npqr"], o)),
        name === "C-blocked" ? "(reference)" : Number.isFinite(ag) ? ag.toExponential(1) + (ag <= AGREE ? "" : " FAIL") : "–",
        o.rssMB ? `${o.rssMB.toFixed(0)} MiB` : "–"]);
    }
    printTable(out, table);
    const E = r["ELX-columns"];
    const best = bestElx(r);
    if (best && best.o && !best.o.error) {
      const tag = `${sizeName(n)} × 10`;
      const bn = best.name;
      if (n >= 1e5) {
        const vsR = ratio(r["R-lmfit"], best.o);
        const vsPy = ratio(r["Py-npqr"], best.o);
        const vsC = ratio(best.o, C);
        targets.push([`${tag} from columns (${bn}) against R lm.fit pipeline`, `>= ${TARGET.vsR}x faster`, x(vsR), yes(Number.isFinite(vsR) ? vsR >= TARGET.vsR : null)]);
        targets.push([`  against numpy QR (Py-npqr)`, "faster", x(vsPy), yes(Number.isFinite(vsPy) ? vsPy > TARGET.vsPy : null)]);
        targets.push([`  against single-thread C limit (C-blocked)`, `within ${TARGET.vsC}x (moonshot: level, 2 cores)`, Number.isFinite(vsC) ? `${vsC.toFixed(2)}x its time` : "–",
          yes(Number.isFinite(vsC) ? vsC <= TARGET.vsC : null) + (Number.isFinite(vsC) && vsC <= 1 ? " (moonshot met)" : "")]);
        const worst = Math.max(...Object.values(r).filter((o) => !o.error && /^ELX-(columns|session)/.test(o.impl || "")).map((o) => o.agree));
        targets.push([`  agreement with C (coef, SE, HC3, BP), ELX column runs`, `<= ${AGREE}`, Number.isFinite(worst) ? worst.toExponential(1) : "–", yes(Number.isFinite(worst) ? worst <= AGREE : null)]);
      }
      if (n === 1e6) targets.push([`${tag} from column blocks (${bn})`, `<= ${TARGET.big / 1000} s`, fmtMs(best.o.median_ms[0]), yes(best.o.median_ms[0] <= TARGET.big)]);
      rowsForBench.push([`harness: ELX from columns (${bn})`, `n=${sizeName(n)},k=10`, fmtMs(best.o.median_ms[0]),
        `C-blocked ${C && !C.error ? fmtMs(C.median_ms[0]) : "–"}, R-lmfit ${r["R-lmfit"] && !r["R-lmfit"].error ? fmtMs(r["R-lmfit"].median_ms[0]) : "–"}, Py-npqr ${r["Py-npqr"] && !r["Py-npqr"].error ? fmtMs(r["Py-npqr"].median_ms[0]) : "–"}; worst diff vs C ${E && Number.isFinite(E.agree) ? E.agree.toExponential(1) : "–"}`]);
    }
    const cells = r["ELX-cells"];
    if (cells && !cells.error) {
      const vsR = ratio(r["R-lmfit"], cells);
      if (n === 25000) {
        targets.push([`cell path 25,000 × 10 (FIT HC3 + HETEROTEST, host rows) against R lm.fit pipeline`, `>= ${TARGET.cellsVsR}x faster`, x(vsR), yes(Number.isFinite(vsR) ? vsR >= TARGET.cellsVsR : null)]);
        targets.push([`  agreement with C (coef, HC3, BP)`, `<= ${AGREE}`, Number.isFinite(cells.agree) ? cells.agree.toExponential(1) : "–", yes(Number.isFinite(cells.agree) ? cells.agree <= AGREE : null)]);
      }
      rowsForBench.push([`harness: ELX cell path (FIT HC3 + HETEROTEST)`, `n=${sizeName(n)},k=10`, fmtMs(cells.median_ms[0]), `R-lmfit / ELX = ${x(vsR)}; worst diff vs C ${Number.isFinite(cells.agree) ? cells.agree.toExponential(1) : "–"}`]);
    }
  }
  // worker scaling
  if (session.open) {
    for (const n of sizes.filter((s) => s >= 1e5)) {
      const r = results[n];
      const one = r["ELX-session-1"];
      const parts = [];
      for (let p = 0; p <= cores; p++) {
        const o = r[`ELX-session-${p}`];
        if (o && !o.error) parts.push(`${p === 0 ? "this thread" : p}: ${fmtMs(o.median_ms[0])}` + (p > 1 ? ` (${x(ratio(one, o))} of 1 worker)` : ""));
      }
      out(`worker scaling, ${sizeName(n)} × 10: ${parts.join(", ")}`);
      const two = r["ELX-session-2"];
      if (one && two) {
        const s = ratio(one, two);
        targets.push([`speed-up 1 → 2 workers, ${sizeName(n)} × 10`, ">= 1.7x", x(s), yes(Number.isFinite(s) ? s >= 1.7 : null)]);
      }
    }
  } else targets.push(["speed-up 1 → 2 workers (column-block session)", ">= 1.7x", "not in this build", "n/a"]);
  // memory
  out("");
  for (const m of memory) {
    if (!m.error) {
      out(`peak memory, ${m.name} at ${sizeName(m.n)} × 10 (clean child, maxRSS, lower of 2 runs): ${m.total.toFixed(2)}x the input as doubles (${m.inputMB.toFixed(0)} MiB) from before the input was read, input included (other run ${m.other.toFixed(2)}x); ${m.extra.toFixed(2)}x above the input once loaded`);
      targets.push([`peak memory, ${m.name} ${sizeName(m.n)} × 10 (input included)`, `<= ${TARGET.memory}x input`, `${m.total.toFixed(2)}x (above the loaded input ${m.extra.toFixed(2)}x)`, yes(m.total <= TARGET.memory)]);
    } else {
      out(`peak memory, ${m.name}: the child failed: ${m.error}`);
      targets.push([`peak memory, ${m.name} (input included)`, `<= ${TARGET.memory}x input`, "failed", "n/a"]);
    }
  }
  out("(The peak RSS column above is each whole process; ELX-columns' holds an untimed copy of the input per repetition, so read memory from these lines.)");
  out(`harness run in ${fmtMs(now() - t0)}`);
  if (!keep) fs.rmSync(work, { recursive: true, force: true });
  else out(`kept: ${work}`);
  return { targets, rows: rowsForBench, results };
}

/** The fastest Elasticell column run of a size (the session at its best worker count, or the engine in this thread). */
function bestElx(r) {
  let best = null;
  for (const [name, o] of Object.entries(r)) {
    if (!/^ELX-(columns|session-\d+)$/.test(name) || o.error) continue;
    if (!best || o.median_ms[0] < best.o.median_ms[0]) best = { name, o };
  }
  return best;
}

function printTable(out, rows) {
  const all = rows.map((r) => r.map((c) => String(c)));
  const w = all[0].map((_, j) => Math.max(...all.map((r) => (r[j] || "").length)));
  const line = (r) => "  " + r.map((c, j) => (j === 0 ? c.padEnd(w[j]) : c.padStart(w[j]))).join("  ");
  out(line(all[0]));
  out("  " + w.map((v) => "-".repeat(v)).join("  "));
  for (const r of all.slice(1)) out(line(r));
}

module.exports = { runHarness, findHarness, agreement, readBin, compileEngine };

if (require.main === module) {
  const argv = process.argv.slice(2);
  const at = argv.indexOf("--child");
  const fail = (e) => {
    process.stderr.write(`bench-harness failed: ${e && e.stack ? e.stack : e}\n`);
    process.exit(1);
  };
  if (at >= 0) {
    const [mode, file, reps, extra] = argv.slice(at + 1);
    const jobs = { columns: () => columnsChild(file, Number(reps)), cells: () => cellsChild(file, Number(reps)), session: () => sessionChild(file, Number(reps), Number(extra)), memory: () => memoryChild(file), "memory-session": () => memorySessionChild(file, Number(reps)) };
    if (!jobs[mode]) fail(`unknown child mode ${mode}`);
    else jobs[mode]().catch(fail);
  } else {
    const repsAt = argv.indexOf("--reps");
    const roundsAt = argv.indexOf("--rounds");
    runHarness({ quick: argv.includes("--quick"), keep: argv.includes("--keep"), reps: repsAt >= 0 ? Number(argv[repsAt + 1]) : 5, rounds: roundsAt >= 0 ? Number(argv[roundsAt + 1]) : 1 })
      .then((res) => {
        if (!res) return;
        process.stdout.write("\nTargets (README, speed, against the harness)\n");
        printTable((s) => process.stdout.write(s + "\n"), [["Target", "Goal", "Measured", ""], ...res.targets]);
      })
      .catch(fail);
  }
}
