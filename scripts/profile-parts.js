#!/usr/bin/env node
/*
 * Where a column-block fit's time goes, step by step and part by part: the split engine's steps
 * (functions/engine/columnFit.ts) over P worker threads running the built dist/fitWorker.js (as the
 * pane runs it), each step's wall time inside its worker, the thread's own CPU time and the time it
 * waited for a core (Linux /proc/thread-self/schedstat; elsewhere the two CPU columns are blank),
 * and the critical path (per step, the slowest part). A busy machine shows as run-queue wait, not
 * as CPU: compare CPU and the critical path between worker counts, not wall time alone.
 *
 *   node scripts/profile-parts.js                    10^5 × 10, 1 and 2 workers, warm workers
 *   node scripts/profile-parts.js --rows 1000000     another size
 *   node scripts/profile-parts.js --workers 1,2,4    worker counts
 *   node scripts/profile-parts.js --fresh            fresh threads for every fit (a page's first fit)
 *   node scripts/profile-parts.js --steps            every step of every part
 *
 * Data: the seeded rows of scripts/bench-workers.js, invented for timing only (positive regressors,
 * log-log, heteroskedastic noise), handed over in chunks of 65,536 rows. Timed: the append of the chunks and
 * the fit (log-log, HC3, studentized Breusch–Pagan), after three warm-up fits of 25,000 rows on the
 * same workers (unless --fresh). Run `npm run build` first.
 */
"use strict";

const fs = require("fs");
const path = require("path");

const ROOT = path.join(__dirname, "..");
const BUNDLE = path.join(ROOT, "dist", "fitWorker.js");
const { chunks, SPEC, K } = require("./bench-workers");
const CHUNK = 65536;

const argv = process.argv.slice(2);
const opt = (name, dflt) => {
  const at = argv.indexOf(name);
  return at >= 0 ? argv[at + 1] : dflt;
};

/** The worker thread: the bundle, with each answer carrying its step's wall and CPU times. */
const TIMED_WORKER = `
const fs = require("fs");
const sched = () => { try { return fs.readFileSync("/proc/thread-self/schedstat", "utf8").split(" ").map(Number); } catch { return null; } };
const post = globalThis.postMessage;
const listen = globalThis.addEventListener;
let started = null;
globalThis.postMessage = (m, t) => {
  if (m && m.type === "answer" && started && m.answer && typeof m.answer === "object") {
    const s = sched();
    m.answer.__profile = { ms: performance.now() - started.t, runMs: s && started.s ? (s[0] - started.s[0]) / 1e6 : NaN, waitMs: s && started.s ? (s[1] - started.s[1]) / 1e6 : NaN };
  }
  return post(m, t);
};
globalThis.addEventListener = (type, fn) => listen(type, (ev) => { started = { t: performance.now(), s: sched() }; fn(ev); });
require(${JSON.stringify(BUNDLE)});
`;

/** n rows of y and K x columns: bench-workers.js's rows, its chunks joined (the chunks are cut from them untimed). */
function data(n) {
  const y = new Float64Array(n);
  const x = Array.from({ length: K }, () => new Float64Array(n));
  for (const c of chunks(n)) {
    y.set(c.y, c.rowStart);
    for (let j = 0; j < K; j++) x[j].set(c.x[j], c.rowStart);
  }
  return { y, x };
}

/**
 * Whether the machine has the cores free: the same loop of Math.log in one thread, then in two
 * threads at once; answers how much longer each of the two took (1.0: two free cores).
 */
async function coreCheck() {
  const { Worker } = require("worker_threads");
  const code = `const { parentPort } = require("worker_threads"); parentPort.on("message", () => { const a = new Float64Array(1e6).fill(1.5); const t = performance.now(); let s = 0; for (let r = 0; r < 6; r++) for (let i = 0; i < a.length; i++) s += Math.log(a[i] + r); parentPort.postMessage(s > 0 ? performance.now() - t : 0); });`;
  const ws = [new Worker(code, { eval: true }), new Worker(code, { eval: true })];
  const run = (list) => Promise.all(list.map((w) => new Promise((res) => { w.once("message", res); w.postMessage(0); })));
  await run(ws);
  const ratios = [];
  for (let r = 0; r < 3; r++) {
    const [one] = await run([ws[0]]);
    const two = await run(ws);
    ratios.push(Math.max(...two) / one);
  }
  await Promise.all(ws.map((w) => w.terminate()));
  return [...ratios].sort((a, b) => a - b)[1];
}


async function main() {
  if (!fs.existsSync(BUNDLE)) throw new Error("dist/fitWorker.js is missing: run npm run build");
  require("./ts-require");
  const E = (sub, name) => require(path.join(ROOT, "functions", sub, name + ".ts"));
  const { columnFit, equalShares } = E("engine", "columnFit");
  const { appendOp, chunkBuffers } = E("engine", "splitLeastSquares");
  const { startPool, closeIdleWorkers } = E("parallel", "pool");
  const { nodeSpawner } = E("parallel", "nodeWorker");
  const rows = Number(opt("--rows", "100000"));
  const counts = opt("--workers", "1,2").split(",").map(Number);
  const fresh = argv.includes("--fresh");
  const steps = argv.includes("--steps");
  const reps = Number(opt("--runs", "3"));
  const workerFile = path.join(require("os").tmpdir(), `elx-profile-worker-${process.pid}.js`);
  fs.writeFileSync(workerFile, TIMED_WORKER);
  const spawn = nodeSpawner(workerFile);
  const all = data(rows);
  const now = () => performance.now();

  const once = async (P, n, report) => {
    const start = await startPool({ workers: P, spawn, keepWarm: !fresh });
    if (start.workers !== P) throw new Error(`wanted ${P} workers: ${start.fallbackNote}`);
    const pool = start.executor;
    const seen = [];
    const exec = {
      parts: pool.parts,
      send: async (p, op, transfer) => {
        const a = await pool.send(p, op, transfer);
        if (a && a.__profile) seen.push({ kind: op.kind, p, ...a.__profile });
        return a;
      },
    };
    // the chunks as a reader hands them over (cut untimed; their buffers move to the parts)
    const shares = equalShares(n, P);
    const pieces = [];
    let at = 0;
    for (let p = 0; p < P; p++) {
      for (let s = at; s < at + shares[p]; s += CHUNK) {
        const e = Math.min(at + shares[p], s + CHUNK);
        pieces.push([p, { rowStart: s, y: all.y.slice(s, e), x: all.x.map((c) => c.slice(s, e)) }]);
      }
      at += shares[p];
    }
    const cpu0 = process.cpuUsage();
    const t0 = now();
    await Promise.all(Array.from({ length: P }, (_, p) => exec.send(p, { kind: "reserve", rows: shares[p], kx: K })));
    await Promise.all(pieces.map(([p, c]) => exec.send(p, appendOp(c), chunkBuffers(c))));
    const t1 = now();
    await columnFit(exec, SPEC);
    const t2 = now();
    const cpu = process.cpuUsage(cpu0);
    pool.close();
    if (!report) return null;
    const kinds = [...new Set(seen.map((s) => s.kind))];
    const per = kinds.map((kind) => {
      const parts = Array.from({ length: P }, (_, p) => seen.filter((s) => s.kind === kind && s.p === p).reduce((o, s) => ({ ms: o.ms + s.ms, runMs: o.runMs + s.runMs, waitMs: o.waitMs + s.waitMs }), { ms: 0, runMs: 0, waitMs: 0 }));
      return { kind, parts };
    });
    const crit = (f) => per.reduce((s, q) => s + Math.max(...q.parts.map(f)), 0);
    const sum = (f) => per.reduce((s, q) => s + q.parts.reduce((a, b) => a + f(b), 0), 0);
    return { P, appendMs: t1 - t0, fitMs: t2 - t1, processCpuMs: (cpu.user + cpu.system) / 1000, critWallMs: crit((x) => x.ms), critCpuMs: crit((x) => x.runMs), cpuMs: sum((x) => x.runMs), waitMs: sum((x) => x.waitMs), per };
  };

  const f1 = (v) => (Number.isFinite(v) ? v.toFixed(1) : "–");
  const slow = await coreCheck();
  process.stdout.write(`free cores: a loop in two threads at once takes ${slow.toFixed(2)}× its time alone (1.0: two free cores; 2.0: one)\n`);
  process.stdout.write(`${rows.toLocaleString("en")} rows × ${K}, log-log, HC3, Breusch–Pagan; ${fresh ? "fresh worker threads for every fit" : "workers kept warm (three warm-up fits of 25,000 rows)"}; ${reps} runs per count, interleaved\n`);
  const results = {};
  for (let r = 0; r < reps; r++) {
    for (const P of counts) {
      if (!fresh && r === 0) for (let w = 0; w < 3; w++) await once(P, Math.min(rows, 25000), false);
      (results[P] = results[P] || []).push(await once(P, rows, true));
    }
  }
  const med = (v) => [...v].sort((a, b) => a - b)[v.length >> 1];
  process.stdout.write("workers  append+fit ms  fit ms  critical path: wall in workers, CPU  workers' CPU  run-queue wait  process CPU (all threads)\n");
  for (const P of counts) {
    const rs = results[P];
    const m = (f) => f1(med(rs.map(f)));
    process.stdout.write(`${String(P).padStart(7)}  ${m((x) => x.appendMs + x.fitMs).padStart(12)}  ${m((x) => x.fitMs).padStart(6)}  ${m((x) => x.critWallMs).padStart(24)}, ${m((x) => x.critCpuMs).padStart(6)}  ${m((x) => x.cpuMs).padStart(12)}  ${m((x) => x.waitMs).padStart(14)}  ${m((x) => x.processCpuMs).padStart(10)}\n`);
    if (steps) {
      const last = rs[rs.length - 1];
      for (const q of last.per) process.stdout.write(`           ${q.kind.padEnd(10)} ${q.parts.map((x, p) => `part ${p + 1}: ${f1(x.ms)} ms (CPU ${f1(x.runMs)}, waiting ${f1(x.waitMs)})`).join("; ")}\n`);
    }
  }
  process.stdout.write("(medians; wall in workers and CPU per step summed over the steps, taking the slowest part of each)\n");
  closeIdleWorkers();
  fs.rmSync(workerFile, { force: true });
}

main().then(() => process.exit(0), (e) => {
  process.stderr.write(`profile-parts failed: ${e && e.stack ? e.stack : e}\n`);
  process.exit(1);
});
