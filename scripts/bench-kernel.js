#!/usr/bin/env node
/*
 * The JavaScript kernel against the WebAssembly kernel (functions/engine/kernel.ts), in the same
 * run, interleaved (A, B, A, B, ...), medians and their ratio. `npm run bench` runs it after
 * scripts/bench.js; alone: `node --expose-gc scripts/bench-kernel.js [--quick] [--runs N]`.
 *
 * The engine's TypeScript is loaded directly (each file transpiled by the TypeScript compiler as it
 * is required), so both kernels run the same engine code that the bundle carries; no timing is
 * asserted anywhere. Two timed parts on seeded log-log data with 10 regressors (an intercept and 9
 * positive variables):
 *   blocks        the block factorisation alone: each block of rows copied, scaled, into the
 *                 kernel's buffer and reduced against the running triangle (the loop of
 *                 leastSquares.ts's blockedQr, the part the kernel does)
 *   QR            leastSquares() alone (scaling, the block factorisation, the solve, the residuals)
 *   HC3           the HC3 covariance of a fitted model: one pass over the rows of Q (leverage and
 *                 the meat)
 *   logs          the logs of the 11 raw columns (ColumnOps.logInPlace: Math.log against the
 *                 kernel's fdlibm log, two lanes at a time; the same doubles)
 *   BP projection the Breusch–Pagan test's regression of e² on the fit's factor (rssOnFactor: two
 *                 passes over the rows through the sides workspace)
 *   FIT+HC3+BP    from the host's row arrays: intake, logs, the fit, HC3 errors, the studentized
 *                 Breusch–Pagan p-value (the test reuses the fit's factor), as FIT then HETEROTEST
 */
"use strict";

const fs = require("fs");
const path = require("path");
const ts = require("typescript");

require.extensions[".ts"] = (module, filename) => {
  const out = ts.transpileModule(fs.readFileSync(filename, "utf8"), {
    compilerOptions: { module: ts.ModuleKind.CommonJS, target: ts.ScriptTarget.ES2019, esModuleInterop: true },
    fileName: filename,
  });
  module._compile(out.outputText, filename);
};

const ROOT = path.join(__dirname, "..");
const E = (m) => require(path.join(ROOT, "functions", "engine", m));
const { kernel, useKernel, wasmKernel } = E("kernel.ts");
const { BLOCK_ROWS } = E("leastSquares.ts");
const { leastSquares, rssOnFactor } = E("leastSquares.ts");
const { fitUncached } = E("model.ts");
const { parseOptions } = E("options.ts");
const { breuschPaganKoenker } = E("specTests.ts");
const { hcCovariance } = E("covariance.ts");
const { KERNEL_WASM_BYTES } = E("wasm/kernelBytes.ts");

const argv = process.argv.slice(2);
const QUICK = argv.includes("--quick");
const RUNS = argv.includes("--runs") ? Number(argv[argv.indexOf("--runs") + 1]) : 7;
const gc = typeof global.gc === "function" ? global.gc : () => {};

/** Seeded uniform generator (mulberry32). */
function rng(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** n rows of 9 positive regressors and a positive y with a log-log relation (invented data, for timing only). */
function data(n, seed) {
  const u = rng(seed);
  const k = 9;
  const cols = [];
  for (let j = 0; j < k; j++) cols.push(Float64Array.from({ length: n }, () => Math.exp(u() * 2)));
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let s = 1;
    for (let j = 0; j < k; j++) s += (j % 2 ? 0.3 : -0.5) * Math.log(cols[j][i]);
    y[i] = Math.exp(s + 0.2 * (u() - 0.5) * (1 + Math.log(cols[0][i])));
  }
  return { cols, y };
}

const median = (a) => {
  const s = [...a].sort((p, q) => p - q);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

/** The block factorisation of [X/scale | y] as leastSquares.ts's blockedQr does it, with the kernel in force. */
function blockFactor(X, y, inv) {
  const k = X.length;
  const n = y.length;
  const B = BLOCK_ROWS;
  const ws = kernel().qrWorkspace(k, B);
  for (let start = 0; start < n; start += B) {
    const m = Math.min(B, n - start);
    ws.load(X, y, inv, start, m);
    ws.reduce(m);
  }
  return ws.T.slice();
}

/** Wall-clock and processor time (this process, user + system) of one run, in ms. */
function time(fn) {
  gc();
  const c0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  fn();
  const wall = Number(process.hrtime.bigint() - t0) / 1e6;
  const c = process.cpuUsage(c0);
  return { wall, cpu: (c.user + c.system) / 1e3 };
}

/**
 * Interleaved A/B runs of fn under each kernel; the first pair is a warm-up. Medians of wall-clock
 * and of processor time: on a shared machine the processor time of this process is the steadier
 * figure (it leaves out the time other processes held the core), and the ratio is taken from it.
 */
function compare(label, fn) {
  const t = { js: { wall: [], cpu: [] }, wasm: { wall: [], cpu: [] } };
  for (let r = 0; r <= RUNS; r++) {
    for (const name of r % 2 ? ["wasm", "js"] : ["js", "wasm"]) {
      useKernel(name);
      const ms = time(() => fn(r));
      if (r > 0) {
        t[name].wall.push(ms.wall);
        t[name].cpu.push(ms.cpu);
      }
    }
  }
  useKernel("default");
  const f = (v) => v.toFixed(1).padStart(7);
  const a = median(t.js.cpu);
  const b = median(t.wasm.cpu);
  console.log(`${label.padEnd(24)} js ${f(a)} ms (wall ${f(median(t.js.wall))})   wasm ${f(b)} ms (wall ${f(median(t.wasm.wall))})   js/wasm ${(a / b).toFixed(2)}× (wall ${(median(t.js.wall) / median(t.wasm.wall)).toFixed(2)}×)`);
  return a / b;
}

if (!wasmKernel()) {
  console.log("kernel: WebAssembly with SIMD is not available here; nothing to compare");
  process.exit(0);
}
console.log(`kernel: JavaScript vs WebAssembly SIMD (module ${KERNEL_WASM_BYTES} bytes), ${RUNS} interleaved runs each, medians of processor time (wall-clock in brackets); noisy on a shared machine`);
for (const n of QUICK ? [100000] : [100000, 1000000]) {
  const { cols, y } = data(n, 12);
  const X = [new Float64Array(n).fill(1), ...cols.map((c) => c.map(Math.log))];
  const ly = y.map(Math.log);
  const inv = X.map((c) => 1 / Math.sqrt(c.reduce((s, v) => s + v * v, 0)));
  compare(`logs ${n} × 11`, () => {
    for (const c of [y, ...cols]) kernel().logInPlace(c.slice());
  });
  compare(`blocks ${n} × 10`, () => blockFactor(X, ly, inv));
  compare(`QR ${n} × 10`, () => leastSquares(X, ly));
  // Host row arrays, one cell different per run so nothing is answered from a cache.
  const xRows = Array.from({ length: n }, (_, i) => cols.map((c) => c[i]));
  const yRows = Array.from({ length: n }, (_, i) => [y[i]]);
  const options = parseOptions("se=HC3");
  if (n === 100000) {
    const f = fitUncached({ y: yRows, x: xRows, options, yOrigin: null, xOrigin: null });
    console.log(`(the fit ${f.qr.refined ? "is" : "is not"} refined; Breusch–Pagan ${f.qr.refined ? "factors its auxiliary regression" : "reuses the fit's factor"})`);
  }
  const fitted = fitUncached({ y: yRows, x: xRows, options, yOrigin: null, xOrigin: null });
  compare(`HC3 ${n} × 10`, () => hcCovariance(fitted.covarianceInput(), "HC3", null));
  const e2 = fitted.qr.resid.map((e) => e * e);
  compare(`BP projection ${n} × 10`, () => rssOnFactor(fitted.design, fitted.qr, 1, (start, m, V) => V.set(e2.subarray(start, start + m))));
  compare(`FIT+HC3+BP ${n} × 10`, (r) => {
    yRows[0][0] = y[0] * (1 + r * 1e-9);
    const fit = fitUncached({ y: yRows, x: xRows, options, yOrigin: null, xOrigin: null });
    fit.covariance("HC3");
    breuschPaganKoenker(fit);
  });
}
