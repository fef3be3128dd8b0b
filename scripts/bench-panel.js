#!/usr/bin/env node
/*
 * Panel benchmark: two-way fixed effects absorbed and errors clustered by store.
 *
 *   node scripts/bench-panel.js              engine timing, then R (plm two-way within) when Rscript is on PATH
 *   node scripts/bench-panel.js --r-lm       also R lm() with indicator columns (about 1 GB and a minute or more)
 *   node scripts/bench-panel.js --no-r       engine only
 *   node scripts/bench-panel.js --runs 5     medians over 5 runs (default 3)
 *   node scripts/bench-panel.js --unbalanced each store misses a random 30% of its weeks (the
 *                                            conjugate gradients then need several steps)
 *
 * No build is needed: scripts/ts-require.js transpiles the engine's TypeScript on load with the
 * compiler in devDependencies. From scripts/bench.js: `require("./bench-panel").benchPanel({ runs })`
 * returns the figures without printing.
 *
 * Data (seeded, invented for timing only): 1,000 stores × 100 weeks = 10^5 rows, 5 regressors that
 * carry store and week components, log sales = store + week effects + x·b + noise.
 */
"use strict";

const fs = require("fs");
const os = require("os");
const path = require("path");
const { spawnSync } = require("child_process");
require("./ts-require");

const ROOT = path.join(__dirname, "..");
const { prepareAbsorption, fitAbsorbed } = require(path.join(ROOT, "functions", "engine", "absorb.ts"));
const { clusterCovariance } = require(path.join(ROOT, "functions", "engine", "panelCovariance.ts"));

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

/** The benchmark panel: stores × weeks rows, k regressors, sorted by store then week. */
function makePanel(stores = 1000, weeks = 100, k = 5, seed = 7, missing = 0) {
  const u = mulberry32(seed);
  const normal = () => Math.sqrt(-2 * Math.log(1 - u())) * Math.cos(2 * Math.PI * u());
  const present = Uint8Array.from({ length: stores * weeks }, () => (u() >= missing ? 1 : 0));
  const n = present.reduce((p, q) => p + q, 0);
  const store = new Int32Array(n);
  const week = new Int32Array(n);
  const X = Array.from({ length: k }, () => new Float64Array(n));
  const y = new Float64Array(n);
  const a = Float64Array.from({ length: stores }, normal);
  const g = Float64Array.from({ length: weeks }, normal);
  const b = Float64Array.from({ length: k }, (_, j) => -1.5 + 0.5 * j);
  let i = 0;
  for (let s = 0; s < stores; s++) {
    for (let t = 0; t < weeks; t++) {
      if (!present[s * weeks + t]) continue;
      store[i] = s;
      week[i] = t;
      let v = a[s] + 0.5 * g[t] + 0.3 * normal();
      for (let j = 0; j < k; j++) {
        const x = 0.4 * a[s] - 0.3 * g[t] + normal();
        X[j][i] = x;
        v += b[j] * x;
      }
      y[i] = v;
      i++;
    }
  }
  return { n, k, store, week, X, y };
}

function median(v) {
  const s = [...v].sort((p, q) => p - q);
  return s[Math.floor(s.length / 2)];
}

/** Engine timings (ms, medians over runs) for absorb + fit + cluster by store; and the results. */
function benchPanel({ runs = 3, data = makePanel() } = {}) {
  const names = data.X.map((_, j) => `x${j + 1}`);
  const times = { prepare: [], fit: [], cluster: [], total: [] };
  let last = null;
  for (let r = 0; r < runs; r++) {
    const t0 = process.hrtime.bigint();
    const prep = prepareAbsorption([{ name: "Store", codes: data.store }, { name: "Week", codes: data.week }], null);
    const t1 = process.hrtime.bigint();
    const fit = fitAbsorbed(prep.absorber, data.y, data.X, names);
    const t2 = process.hrtime.bigint();
    const model = { X: fit.X, qr: fit.qr, u: fit.u, absorbed: fit.absorbed, leverageOffset: null };
    const cl = clusterCovariance(model, [{ name: "Store", codes: data.store }], prep.absorber.nestedAbsorbed([data.store]));
    const t3 = process.hrtime.bigint();
    const ms = (a, b) => Number(b - a) / 1e6;
    times.prepare.push(ms(t0, t1));
    times.fit.push(ms(t1, t2));
    times.cluster.push(ms(t2, t3));
    times.total.push(ms(t0, t3));
    const k = data.k;
    last = {
      coef: Array.from(fit.coef),
      se: Array.from({ length: k }, (_, j) => Math.sqrt(cl.V[j * k + j])),
      iterations: prep.absorber.maxIterations,
      absorbed: fit.absorbed,
    };
  }
  const med = {};
  for (const [key, v] of Object.entries(times)) med[key] = median(v);
  return { rows: data.n, regressors: data.k, medianMs: med, result: last };
}

/** R timings on the same data: plm two-way within (+ clustered vcovHC), optionally lm with indicators. */
function benchR(data, withLm) {
  const which = spawnSync("Rscript", ["--version"], { encoding: "utf8" });
  if (which.error) return null;
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-panel-"));
  const file = path.join(dir, "panel.bin");
  const cols = [Float64Array.from(data.store), Float64Array.from(data.week), data.y, ...data.X];
  const buf = Buffer.alloc(cols.length * data.n * 8);
  cols.forEach((c, j) => Buffer.from(c.buffer, c.byteOffset, c.byteLength).copy(buf, j * data.n * 8));
  fs.writeFileSync(file, buf);
  const k = data.k;
  const script = `
suppressPackageStartupMessages({ library(plm); library(sandwich) })
con <- file("${file}", "rb"); v <- readBin(con, "double", ${cols.length * data.n}); close(con)
m <- matrix(v, nrow = ${data.n})
d <- data.frame(store = m[, 1], week = m[, 2], y = m[, 3], m[, 4:${3 + k}])
names(d)[4:${3 + k}] <- paste0("x", 1:${k})
f <- y ~ ${Array.from({ length: k }, (_, j) => `x${j + 1}`).join(" + ")}
pd <- pdata.frame(d, index = c("store", "week"))
t0 <- proc.time()[["elapsed"]]
pm <- plm(f, data = pd, model = "within", effect = "twoways")
t1 <- proc.time()[["elapsed"]]
V <- vcovHC(pm, method = "arellano", type = "HC0", cluster = "group")
t2 <- proc.time()[["elapsed"]]
cat("plm_within_s", t1 - t0, "\\n")
cat("plm_cluster_s", t2 - t1, "\\n")
cat("plm_coef", sprintf("%.17g", coef(pm)), "\\n")
if (${withLm ? "TRUE" : "FALSE"}) {
  t3 <- proc.time()[["elapsed"]]
  lm1 <- lm(y ~ ${Array.from({ length: k }, (_, j) => `x${j + 1}`).join(" + ")} + factor(store) + factor(week), data = d)
  t4 <- proc.time()[["elapsed"]]
  cat("lm_dummies_s", t4 - t3, "\\n")
  cat("lm_coef", sprintf("%.17g", coef(lm1)[2:${k + 1}]), "\\n")
}
`;
  const r = spawnSync("Rscript", ["-e", script], { encoding: "utf8", maxBuffer: 1 << 24 });
  fs.rmSync(dir, { recursive: true, force: true });
  if (r.status !== 0) return { error: r.stderr.slice(-500) };
  const out = {};
  for (const line of r.stdout.split("\n")) {
    const [key, ...vals] = line.trim().split(/\s+/);
    if (key) out[key] = vals.map(Number);
  }
  return out;
}

function maxRel(a, b) {
  let m = 0;
  a.forEach((v, j) => (m = Math.max(m, Math.abs(v - b[j]) / Math.abs(b[j]))));
  return m;
}

if (require.main === module) {
  const argv = process.argv.slice(2);
  const runs = argv.includes("--runs") ? Number(argv[argv.indexOf("--runs") + 1]) : 3;
  const data = makePanel(1000, 100, 5, 7, argv.includes("--unbalanced") ? 0.3 : 0);
  const e = benchPanel({ runs, data });
  console.log(`engine, ${e.rows} rows × ${e.regressors} regressors, absorb store + week (a = ${e.result.absorbed}, ${e.result.iterations} CG step${e.result.iterations === 1 ? "" : "s"}), cluster by store`);
  console.log(`  median ms: prepare ${e.medianMs.prepare.toFixed(0)}, demean + fit ${e.medianMs.fit.toFixed(0)}, cluster ${e.medianMs.cluster.toFixed(0)}, total ${e.medianMs.total.toFixed(0)}`);
  if (!argv.includes("--no-r")) {
    const r = benchR(data, argv.includes("--r-lm"));
    if (!r) console.log("R: Rscript not found, skipped");
    else if (r.error) console.log(`R failed: ${r.error}`);
    else {
      console.log(`R plm two-way within: ${(r.plm_within_s[0] * 1000).toFixed(0)} ms, clustered vcovHC: ${(r.plm_cluster_s[0] * 1000).toFixed(0)} ms; slopes differ from the engine by at most ${maxRel(e.result.coef, r.plm_coef).toExponential(1)} relative`);
      if (r.lm_dummies_s) console.log(`R lm with indicator columns: ${(r.lm_dummies_s[0] * 1000).toFixed(0)} ms; slopes differ by at most ${maxRel(e.result.coef, r.lm_coef).toExponential(1)} relative`);
    }
  }
}

module.exports = { benchPanel, makePanel, benchR };
