#!/usr/bin/env node
/*
 * Workers benchmark: the column-block fit (log-log, HC3 errors and the studentized Breusch–Pagan
 * test, functions/engine/columnFit.ts) at 10^5 × 10 and 10^6 × 10, in this thread and over 1, 2, …
 * worker threads up to the machine's cores (the built dist/fitWorker.js, as the pane runs it in a
 * Web Worker; see functions/parallel/nodeWorker.ts). Prints the median fit time of each, the
 * speed-up from 1 to 2 workers, and the peak memory against the input held as doubles.
 *
 *   node scripts/bench-workers.js                      both sizes (after npm run build)
 *   node scripts/bench-workers.js --sizes 100000       one size
 *   node scripts/bench-workers.js --runs 5             runs per case (default 5 at 10^5, 3 at 10^6)
 *   node scripts/bench-workers.js --workers 4          worker counts 1..4 (default: the cores, at most 8)
 *
 * `npm run bench` runs it before scripts/bench.js (so `npm run bench -- --only fit` still passes its
 * options to bench.js); ELX_BENCH_WORKERS=0 skips it there. Every run is a fresh child process (so each peak
 * memory figure is that run's own), and the cases are interleaved run by run (in-thread, 1, 2, …
 * workers, then again), so a busy machine slows them alike. Timed: the fit, from the rows sitting in
 * their parts to the result (logs, QR and the merge of the parts' triangles, classical and HC3
 * errors, Breusch–Pagan), as wall time and as the CPU time of all the process's threads (the work,
 * whatever else the machine runs: the workers' overhead shows there), after six warm-up fits of 20,000 rows on the same workers (kept warm, as
 * the pane keeps them between fits); the first of those, on fresh workers, and reading the rows into
 * the parts are printed apart. Peak memory: the child's
 * peak resident set (worker threads included) less its resident set before the first row, over
 * n × 11 × 8 bytes. Data (seeded, invented for timing only): positive regressors, a log-log model
 * with heteroskedastic noise, generated and handed over in chunks of 65,536 rows as the pane reads
 * them, never held whole.
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");

const ROOT = path.join(__dirname, "..");
const BUNDLE = path.join(ROOT, "dist", "fitWorker.js");
const K = 10;
const CHUNK = 65536;
/** Warm-up fits of 20,000 rows before the timed one (V8 optimises a worker's loops after a few calls). */
const WARM_FITS = 6;

function mulberry32(seed) {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** The chunks of the benchmark rows, one at a time (the same rows for every case of a size). */
function* chunks(n, seed = 20261203) {
  const u = mulberry32(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  for (let s = 0; s < n; s += CHUNK) {
    const m = Math.min(CHUNK, n - s);
    const y = new Float64Array(m);
    const x = Array.from({ length: K }, () => new Float64Array(m));
    for (let i = 0; i < m; i++) {
      let eta = 2;
      for (let j = 0; j < K; j++) {
        const v = Math.exp(0.4 * normal() + 0.05 * j);
        x[j][i] = v;
        eta += ((j % 2 === 0 ? -1 : 1) * 0.6 * Math.log(v)) / (j + 1);
      }
      y[i] = Math.exp(eta + 0.2 * (1 + Math.abs(Math.log(x[0][i]))) * normal());
    }
    yield { rowStart: s, y, x };
  }
}

const SPEC = { yName: "Units", xNames: Array.from({ length: K }, (_, j) => `x${j + 1}`), form: "log-log", zeros: "stop", se: "HC3", level: 0.95, intercept: true };

/** One run in this process: open, read, fit, close; prints its figures as one JSON line. */
async function child(n, workers) {
  require("./ts-require");
  const { openBigFit } = require(path.join(ROOT, "functions", "parallel", "session.ts"));
  const { nodeSpawner } = require(path.join(ROOT, "functions", "parallel", "nodeWorker.ts"));
  const { closeIdleWorkers } = require(path.join(ROOT, "functions", "parallel", "pool.ts"));
  const spawn = nodeSpawner(BUNDLE);
  // Warm-up: small fits on the same (kept warm) workers and this thread, so the timed fit runs
  // optimised code as a pane's later fits do; the first fit of fresh workers is printed apart.
  let firstMs = 0;
  const warm = await openBigFit({ rows: 20000, workers, spawn, keepWarm: true });
  for (const c of chunks(20000)) await warm.append(c);
  for (let w = 0; w < WARM_FITS; w++) {
    const t = process.hrtime.bigint();
    const o = await warm.estimate(SPEC);
    if (w === 0) firstMs = Number(process.hrtime.bigint() - t) / 1e6;
    if (!o.ok) throw new Error(o.message);
  }
  warm.close();
  if (global.gc) global.gc();
  const base = process.memoryUsage().rss;
  const session = await openBigFit({ rows: n, workers, spawn, keepWarm: true });
  if (session.workers !== workers) throw new Error(`wanted ${workers} workers, got ${session.workers}: ${session.fallbackNote}`);
  // reading = handing each chunk to its part (the chunks' generation is not counted)
  let readNs = 0n;
  for (const c of chunks(n)) {
    const a = process.hrtime.bigint();
    await session.append(c);
    readNs += process.hrtime.bigint() - a;
  }
  const t1 = process.hrtime.bigint();
  const cpu0 = process.cpuUsage();
  const out = await session.estimate(SPEC);
  const cpu = process.cpuUsage(cpu0);
  const t2 = process.hrtime.bigint();
  const peak = process.resourceUsage().maxRSS * 1024;
  session.close();
  closeIdleWorkers();
  if (!out.ok) throw new Error(out.message);
  process.stdout.write(JSON.stringify({ cpuMs: (cpu.user + cpu.system) / 1000, firstMs, readMs: Number(readNs) / 1e6, fitMs: Number(t2 - t1) / 1e6, peakBytes: peak - base, b1: out.value.coefficients[1], bp: out.value.breuschPagan && out.value.breuschPagan.statistic }) + "\n");
}

function median(v) {
  const s = [...v].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function arg(name, fallback) {
  const i = process.argv.indexOf(name);
  return i >= 0 ? process.argv[i + 1] : fallback;
}

function cores() {
  return typeof os.availableParallelism === "function" ? os.availableParallelism() : os.cpus().length;
}

/** Runs every case, interleaved, and returns the figures (printed by main). */
function benchWorkers({ sizes = [1e5, 1e6], runs = null, maxWorkers = Math.min(8, cores()) } = {}) {
  if (!fs.existsSync(BUNDLE)) throw new Error(`${BUNDLE} is missing: run npm run build first`);
  const configs = [0, ...Array.from({ length: Math.max(1, maxWorkers) }, (_, i) => i + 1)];
  const results = [];
  for (const n of sizes) {
    const r = runs || (n >= 1e6 ? 3 : 5);
    const got = new Map(configs.map((w) => [w, []]));
    for (let run = 0; run < r; run++) {
      for (const w of configs) {
        const p = spawnSync(process.execPath, [__filename, "--child", String(n), String(w)], { cwd: ROOT, encoding: "utf8", maxBuffer: 1 << 20 });
        if (p.status !== 0) throw new Error(`the run at n = ${n} with ${w} workers failed:\n${p.stderr}`);
        got.get(w).push(JSON.parse(p.stdout.trim().split("\n").pop()));
      }
    }
    const inputBytes = n * (K + 1) * 8;
    for (const w of configs) {
      const list = got.get(w);
      results.push({
        n,
        workers: w,
        runs: list.length,
        fitMs: median(list.map((x) => x.fitMs)),
        readMs: median(list.map((x) => x.readMs)),
        firstMs: median(list.map((x) => x.firstMs)),
        cpuMs: median(list.map((x) => x.cpuMs)),
        peakRatio: Math.max(...list.map((x) => x.peakBytes)) / inputBytes,
        inputMB: inputBytes / 2 ** 20,
        same: list.every((x) => x.b1 === list[0].b1),
        b1: list[0].b1,
      });
    }
  }
  return results;
}

function main() {
  const sizes = arg("--sizes", null);
  const results = benchWorkers({
    sizes: sizes ? sizes.split(",").map(Number) : undefined,
    runs: arg("--runs", null) ? Number(arg("--runs")) : null,
    maxWorkers: arg("--workers", null) ? Number(arg("--workers")) : undefined,
  });
  const cpu = os.cpus()[0] ? os.cpus()[0].model : "unknown CPU";
  process.stdout.write(`\nColumn-block fit over workers (log-log, ${K} regressors, HC3 + studentized Breusch–Pagan); ${cores()} cores (${cpu}), Node ${process.version}\n`);
  process.stdout.write("Medians of interleaved runs, each in a fresh process; the machine may be busy: compare only within this run.\n\n");
  process.stdout.write("rows        path            runs   fit (median)   CPU (all threads)   first fit, fresh worker   read into parts   peak memory / input as doubles\n");
  for (const r of results) {
    const label = r.workers === 0 ? "this thread" : `${r.workers} worker${r.workers > 1 ? "s" : ""}`;
    process.stdout.write(`${String(r.n).padEnd(11)} ${label.padEnd(15)} ${String(r.runs).padStart(4)} ${`${r.fitMs.toFixed(1)} ms`.padStart(14)} ${`${r.cpuMs.toFixed(1)} ms`.padStart(19)} ${`${r.firstMs.toFixed(1)} ms (20,000 rows)`.padStart(25)} ${`${r.readMs.toFixed(1)} ms`.padStart(17)}   ${r.peakRatio.toFixed(2)}× of ${r.inputMB.toFixed(1)} MB\n`);
  }
  for (const n of [...new Set(results.map((r) => r.n))]) {
    const at = (w) => results.find((r) => r.n === n && r.workers === w);
    const one = at(1);
    const local = at(0);
    const line = [];
    for (const r of results.filter((x) => x.n === n && x.workers >= 2)) line.push(`${r.workers} workers ${(one.fitMs / r.fitMs).toFixed(2)}×`);
    process.stdout.write(`\n${n} rows: speed-up from 1 worker: ${line.length ? line.join(", ") : "(one core: no second worker)"} (target at 2 workers ≥ 1.7×); 1 worker against this thread ${(local.fitMs / one.fitMs).toFixed(2)}×`);
    const agree = results.filter((r) => r.n === n).every((r) => Math.abs(r.b1 - local.b1) <= 1e-12 * Math.abs(local.b1));
    process.stdout.write(`; first slope agrees across paths to 1e-12: ${agree ? "yes" : "NO"}\n`);
  }
  process.stdout.write("\n");
}

if (process.argv[2] === "--child") {
  child(Number(process.argv[3]), Number(process.argv[4])).catch((e) => {
    process.stderr.write(`${e && e.stack ? e.stack : e}\n`);
    process.exit(1);
  });
} else if (require.main === module) {
  if (process.env.ELX_BENCH_WORKERS === "0") process.stdout.write("workers benchmark skipped (ELX_BENCH_WORKERS=0)\n");
  else main();
}

module.exports = { benchWorkers, chunks, SPEC, K };
