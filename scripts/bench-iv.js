#!/usr/bin/env node
/*
 * Two-stage least squares benchmark (by hand, not in CI): `node scripts/bench-iv.js`.
 *
 * The engine modules are loaded from their TypeScript sources (functions/engine/iv.ts, through the
 * TypeScript compiler's transpileModule; no build needed). On seeded synthetic data — n rows
 * (default 10^5), 5 regressors of which one is endogenous (price answering a demand shock), 2
 * excluded instruments, an intercept — it times, as medians over runs:
 *   - 2SLS: the fit (QR of Z for the endogenous column, QR of X̂) plus HC1 errors;
 *   - plain OLS of the same y on the same regressors (leastSquares) plus HC1 errors;
 *   - where Rscript and AER are installed, R's AER::ivreg plus sandwich::vcovHC(type = "HC1") on
 *     the same data (written to a temporary binary file), in the same run, with the largest relative
 *     difference of coefficients and errors between the two.
 *
 *   node scripts/bench-iv.js                 10^5 rows, 7 runs
 *   node scripts/bench-iv.js --rows 1000000  another size
 *   node scripts/bench-iv.js --runs 3 --no-r
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");
const ts = require("typescript");

const ROOT = path.join(__dirname, "..");
const argv = process.argv.slice(2);
const arg = (name, dflt) => (argv.includes(name) ? Number(argv[argv.indexOf(name) + 1]) : dflt);
const N = arg("--rows", 100000);
const RUNS = arg("--runs", 7);
const USE_R = !argv.includes("--no-r");

// Load the engine's TypeScript directly.
require.extensions[".ts"] = (module, filename) => {
  const out = ts.transpileModule(fs.readFileSync(filename, "utf8"), {
    compilerOptions: { module: ts.ModuleKind.CommonJS, target: ts.ScriptTarget.ES2019 },
    fileName: filename,
  });
  module._compile(out.outputText, filename);
};
const { fitIv } = require(path.join(ROOT, "functions/engine/iv.ts"));
const { leastSquares } = require(path.join(ROOT, "functions/engine/leastSquares.ts"));
const { hcCovariance, leastSquaresInput } = require(path.join(ROOT, "functions/engine/covariance.ts"));
const { Rng } = require(path.join(ROOT, "test/simulation/rng.ts"));

function makeData(n) {
  const r = new Rng(20261203);
  const y = new Float64Array(n);
  const x = Array.from({ length: 5 }, () => new Float64Array(n));
  const z = Array.from({ length: 2 }, () => new Float64Array(n));
  for (let i = 0; i < n; i++) {
    const u = 0.5 * r.normal();
    for (let m = 0; m < 2; m++) z[m][i] = r.normal();
    for (let j = 1; j < 5; j++) x[j][i] = r.normal();
    x[0][i] = 0.6 * z[0][i] + 0.4 * z[1][i] + 0.2 * x[1][i] + 0.5 * u + 0.3 * r.normal(); // log price
    y[i] = 3 - 1.5 * x[0][i] + 0.4 * x[1][i] - 0.2 * x[2][i] + 0.1 * x[3][i] + 0.05 * x[4][i] + u;
  }
  return { y, x, z };
}

function median(v) {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

function time(f) {
  const t = process.hrtime.bigint();
  const v = f();
  return { ms: Number(process.hrtime.bigint() - t) / 1e6, v };
}

const R_SCRIPT = `
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
cat("se", sprintf("%.17g", se), "\\n")
`;

function runR(d) {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-bench-iv-"));
  const bin = path.join(dir, "data.bin");
  const script = path.join(dir, "iv.R");
  try {
    const fd = fs.openSync(bin, "w");
    for (const c of [d.y, ...d.x, ...d.z]) fs.writeSync(fd, Buffer.from(c.buffer, c.byteOffset, c.byteLength));
    fs.closeSync(fd);
    fs.writeFileSync(script, R_SCRIPT);
    const res = spawnSync("Rscript", ["--vanilla", script, bin, String(N), String(RUNS)], { encoding: "utf8", maxBuffer: 1 << 24 });
    if (res.status !== 0) return { error: (res.stderr || "").trim().split("\n").slice(-3).join(" ") };
    const lines = res.stdout.split("\n");
    const get = (tag) => lines.find((l) => l.startsWith(tag + " ")).trim().split(/\s+/).slice(1).map(Number);
    return { median: 1000 * get("median")[0], b: get("b"), se: get("se") };
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

const d = makeData(N);
const input = {
  y: d.y,
  x: d.x,
  xNames: ["Price", "Income", "Season", "Promo", "Weather"],
  endogenous: ["Price"],
  instruments: d.z,
  instrumentNames: ["Cost A", "Cost B"],
  intercept: true,
};
const one = new Float64Array(N).fill(1);
const design = [one, ...d.x];
const rows = Int32Array.from({ length: N }, (_, i) => i + 1);
const iv = [];
const ols = [];
let fit = null;
for (let r = 0; r < RUNS + 1; r++) {
  const a = time(() => {
    const f = fitIv(input);
    return { f, se: f.standardErrors(f.covariance({ type: "HC1" })) };
  });
  const b = time(() => {
    const q = leastSquares(design, d.y).qr;
    return hcCovariance(leastSquaresInput(design, q, rows), "HC1", null).V;
  });
  if (r > 0) { // the first run warms the JIT up
    iv.push(a.ms);
    ols.push(b.ms);
  }
  fit = a.v;
}
const out = (s) => process.stdout.write(s + "\n");
out(`2SLS benchmark: ${N} rows, 5 regressors (1 endogenous), 2 instruments, intercept; medians of ${RUNS} runs (node ${process.version}, ${os.cpus().length} cores)`);
out(`  2SLS fit + HC1 errors     ${median(iv).toFixed(1)} ms`);
out(`  OLS fit + HC1 errors      ${median(ols).toFixed(1)} ms   (2SLS / OLS = ${(median(iv) / median(ols)).toFixed(2)})`);
out(`  refinement (double-double) used: first stage ${fit.f.firstStages[0].qr.refined}, second stage ${fit.f.factor.refined}`);
const haveR = USE_R && spawnSync("Rscript", ["-e", "quit(status = !requireNamespace('AER', quietly = TRUE))"], { stdio: "ignore" }).status === 0;
if (haveR) {
  const r = runR(d);
  if (r.error) out(`  R: failed (${r.error})`);
  else {
    let db = 0;
    let dse = 0;
    r.b.forEach((v, j) => { db = Math.max(db, Math.abs(fit.f.coef[j] - v) / Math.abs(v)); });
    r.se.forEach((v, j) => { dse = Math.max(dse, Math.abs(fit.se[j] - v) / Math.abs(v)); });
    out(`  R AER::ivreg + vcovHC HC1 ${r.median.toFixed(1)} ms   (engine 2SLS / R = ${(median(iv) / r.median).toFixed(2)})`);
    out(`  agreement with R: coefficients ${db.toExponential(1)}, HC1 errors ${dse.toExponential(1)} (largest relative difference)`);
  }
} else {
  out(`  R: ${USE_R ? "Rscript with AER not found: no comparison" : "skipped (--no-r)"}`);
}
