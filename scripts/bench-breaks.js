#!/usr/bin/env node
/*
 * Benchmark of the break tests and rolling windows (functions/engine/breaks.ts, windows.ts):
 *
 *   node scripts/bench-breaks.js            both cases, with R beside them when Rscript is on PATH
 *   node scripts/bench-breaks.js --no-r     the engine only
 *   node scripts/bench-breaks.js --runs 7   medians over 7 runs (default 5)
 *
 * The engine modules are loaded from their TypeScript sources, transpiled in memory by the
 * repository's own typescript package (no build needed; these modules are not yet behind a cell
 * function). Synthetic seeded data (mulberry32, Box–Muller normals), k = 5 with the intercept:
 *   ROLLING    10^5 rows, windows of 10,000 rows moved by 909 (100 windows), each a separate fit
 *              with HC3 errors (target < 0.5 s)
 *   BREAKTEST  10^4 rows, sup-F over every break with trim 0.15 (7,001 candidates), then the
 *              Chow and HC3 Wald tests at the most likely break (target < 0.5 s)
 * R, in the same run on the same numbers (written to a temporary binary file): strucchange::Fstats
 * (y ~ 0 + X, from = 0.15) with sctest(type = "supF"), and for the windows lm.fit per window with
 * HC3 by hand (hat values from the QR); the statistics and the break are compared.
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");
const ts = require("typescript");

const ROOT = path.join(__dirname, "..");
const argv = process.argv.slice(2);
const USE_R = !argv.includes("--no-r");
const RUNS = argv.includes("--runs") ? Number(argv[argv.indexOf("--runs") + 1]) : 5;

// Load .ts sources by transpiling them in memory (CommonJS, the repository's compiler options).
require.extensions[".ts"] = (module, filename) => {
  const src = fs.readFileSync(filename, "utf8");
  const out = ts.transpileModule(src, { compilerOptions: { module: ts.ModuleKind.CommonJS, target: ts.ScriptTarget.ES2020, esModuleInterop: true }, fileName: filename });
  module._compile(out.outputText, filename);
};
const { supF, breakAt } = require(path.join(ROOT, "functions/engine/breaks.ts"));
const { rowWindows, eachWindow, fitRows } = require(path.join(ROOT, "functions/engine/windows.ts"));

function rng(seed) {
  let s = seed >>> 0;
  let spare = null;
  const next = () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  const normal = () => {
    if (spare !== null) {
      const v = spare;
      spare = null;
      return v;
    }
    let u = 0;
    while (u === 0) u = next();
    const v = next();
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
  return { next, normal };
}

/** n rows, intercept + 4 regressors, a change in the coefficients after 60% of the rows. */
function data(n, seed) {
  const r = rng(seed);
  const k = 5;
  const X = [new Float64Array(n).fill(1)];
  for (let j = 1; j < k; j++) X.push(Float64Array.from({ length: n }, () => r.normal()));
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const shift = i >= 0.6 * n ? 0.05 : 0;
    y[i] = 1 + (0.5 + shift) * X[1][i] - 0.3 * X[2][i] + 0.2 * X[3][i] + 0.1 * X[4][i] + r.normal();
  }
  return { X, y, names: ["(Intercept)", "x1", "x2", "x3", "x4"], rowNumbers: Int32Array.from({ length: n }, (_, i) => i + 2) };
}

function median(a) {
  const s = a.slice().sort((p, q) => p - q);
  return s[Math.floor(s.length / 2)];
}

/** Median wall-clock and CPU seconds (CPU time is less affected by other work on a shared machine). */
function time(f) {
  const times = [];
  const cpus = [];
  let out;
  for (let r = 0; r < RUNS; r++) {
    const c0 = process.cpuUsage();
    const t0 = process.hrtime.bigint();
    out = f();
    times.push(Number(process.hrtime.bigint() - t0) / 1e9);
    const c = process.cpuUsage(c0);
    cpus.push((c.user + c.system) / 1e6);
  }
  return { seconds: median(times), cpu: median(cpus), out };
}

function writeBin(file, d) {
  const n = d.y.length;
  const k = d.X.length;
  const buf = new Float64Array(n * (k + 1));
  buf.set(d.y, 0);
  for (let j = 0; j < k; j++) buf.set(d.X[j], (j + 1) * n);
  fs.writeFileSync(file, Buffer.from(buf.buffer));
}

function runR(script) {
  const r = spawnSync("Rscript", ["-e", script], { encoding: "utf8" });
  if (r.status !== 0) return { error: (r.stderr || "").trim().split("\n").slice(-2).join(" ") };
  return JSON.parse(r.stdout.trim().split("\n").pop());
}

const haveR = USE_R && spawnSync("Rscript", ["--version"]).status === 0;
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), "elx-breaks-"));
const rows = [];

// ROLLING
{
  const n = 100000;
  const d = data(n, 11);
  const spec = { window: 10000, step: 909, expanding: false }; // 100 windows
  const t = time(() => {
    const layout = rowWindows(d.rowNumbers, spec, 5);
    return eachWindow(layout, (w) => fitRows(d.X, d.y, d.names, d.rowNumbers, w.rows, "HC3"));
  });
  const out = t.out;
  let rTime = null;
  let rNote = "";
  if (haveR) {
    const file = path.join(tmp, "rolling.bin");
    writeBin(file, d);
    const res = runR(`v <- readBin("${file}", "double", ${n * 6}); y <- v[1:${n}]; X <- matrix(v[-(1:${n})], ${n}, 5);
      t0 <- proc.time()[["elapsed"]]; se1 <- NULL; b1 <- NULL
      for (s in seq(1, ${n} - ${spec.window} + 1, by = ${spec.step})) {
        r <- s:(s + ${spec.window} - 1); f <- lm.fit(X[r, ], y[r]); h <- rowSums(qr.Q(f$qr)^2)
        B <- chol2inv(qr.R(f$qr)); V <- B %*% crossprod(X[r, ] * (f$residuals / (1 - h))) %*% B
        if (is.null(b1)) { b1 <- coef(f); se1 <- sqrt(diag(V)) }
      }
      el <- proc.time()[["elapsed"]] - t0
      cat(sprintf('{"seconds": %.6f, "coef": [%s], "se": [%s]}', el, paste(sprintf("%.17g", b1), collapse = ","), paste(sprintf("%.17g", se1), collapse = ",")), "\\n")`);
    if (res.error) rNote = `R: ${res.error}`;
    else {
      rTime = res.seconds;
      const f = out[0].value;
      let dc = 0;
      let ds = 0;
      for (let j = 0; j < 5; j++) {
        dc = Math.max(dc, Math.abs(f.coef[j] - res.coef[j]) / Math.abs(res.coef[j]));
        ds = Math.max(ds, Math.abs(f.se[j] - res.se[j]) / Math.abs(res.se[j]));
      }
      rNote = `first window against R: coefficients ${dc.toExponential(1)}, HC3 errors ${ds.toExponential(1)} relative`;
    }
  }
  rows.push({ what: `ROLLING: ${n.toLocaleString("en")} rows, k = 5, ${out.length} windows of ${spec.window.toLocaleString("en")} (HC3)`, seconds: t.seconds, cpu: t.cpu, target: 0.5, r: rTime, rWhat: "lm.fit + HC3 per window", note: `${out.filter((o) => o.problem).length} windows failed; ${rNote}` });
}

// BREAKTEST
{
  const n = 10000;
  const d = data(n, 12);
  const t = time(() => {
    const s = supF(d, 0.15);
    const b = breakAt(d, s.point, "HC3");
    return { s, b };
  });
  const { s, b } = t.out;
  let rTime = null;
  let rNote = "";
  if (haveR) {
    const file = path.join(tmp, "supf.bin");
    writeBin(file, d);
    const res = runR(`suppressPackageStartupMessages(library(strucchange)); v <- readBin("${file}", "double", ${n * 6}); y <- v[1:${n}]; X <- matrix(v[-(1:${n})], ${n}, 5);
      t0 <- proc.time()[["elapsed"]]; fs <- Fstats(y ~ 0 + X, from = 0.15); st <- sctest(fs, type = "supF"); el <- proc.time()[["elapsed"]] - t0
      cat(sprintf('{"seconds": %.6f, "stat": %.17g, "p": %.17g, "point": %d}', el, st$statistic, st$p.value, fs$breakpoint), "\\n")`);
    if (res.error) rNote = `R: ${res.error}`;
    else {
      rTime = res.seconds;
      rNote = `sup-F ${s.statistic.toFixed(6)} (R ${res.stat.toFixed(6)}, relative difference ${(Math.abs(s.statistic - res.stat) / res.stat).toExponential(1)}), break after row ${s.point} (R ${res.point}), p ${s.pValue.toPrecision(4)} (R ${Number(res.p).toPrecision(4)})`;
    }
  }
  rows.push({ what: `BREAKTEST: ${n.toLocaleString("en")} rows, k = 5, sup-F over ${s.to - s.from + 1} breaks + Chow/HC3 Wald at the best`, seconds: t.seconds, cpu: t.cpu, target: 0.5, r: rTime, rWhat: "strucchange::Fstats + sctest", note: `${rNote}; HC3 Wald F ${b.wald.statistic.toFixed(4)}` });
}

fs.rmSync(tmp, { recursive: true, force: true });
// eslint-disable-next-line no-console
console.log(`Break tests and rolling windows, medians over ${RUNS} runs (node ${process.version}, ${os.cpus().length} cores, load average ${os.loadavg()[0].toFixed(1)})\n`);
for (const r of rows) {
  // eslint-disable-next-line no-console
  console.log(`${r.what}\n  engine ${r.seconds.toFixed(3)} s wall, ${r.cpu.toFixed(3)} s CPU (target ${r.target} s: ${r.seconds < r.target ? "met" : "MISSED"})` +
    (r.r !== null ? `; R (${r.rWhat}) ${r.r.toFixed(2)} s, ${(r.r / r.seconds).toFixed(1)}× the engine's wall time` : "") + `\n  ${r.note}\n`);
}
