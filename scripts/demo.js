#!/usr/bin/env node
/*
 * Elasticell demo: `npm run demo` (builds, then runs this file).
 *
 * Loads dist/functions.js the way the spreadsheet host does (a global CustomFunctions whose
 * associate() fills a registry, with the host's Error class and ErrorCode values), lays the demo
 * data (data/demo.json, made by scripts/make-demo-data.js) out as a sheet, and prints the results of
 * the formulas an analyst would type, each preceded by the formula itself. A function missing from
 * the build loaded (an older one, with --bundle) is skipped with a note.
 *
 * The data are invented (Harrow & Crumb, a fictional bakery chain) and simulated from a known model,
 * so the true values are printed next to the estimates. Plain Node, no dependencies.
 */
"use strict";

const fs = require("fs");
const path = require("path");

const ROOT = path.join(__dirname, "..");
// --bundle <file> loads another build (e.g. to compare two builds); its functions.json is read
// from the same folder when present.
const BUNDLE_ARG = process.argv.indexOf("--bundle");
const BUNDLE = BUNDLE_ARG > 0 ? path.resolve(process.argv[BUNDLE_ARG + 1]) : path.join(ROOT, "dist", "functions.js");
const METADATA = path.join(path.dirname(BUNDLE), "functions.json");
const DATA = path.join(ROOT, "data", "demo.json");

// ---------------------------------------------------------------------------------------------
// Host shim: the same registration path the host uses (see test/harness/loadFunctions.ts)
// ---------------------------------------------------------------------------------------------
const { HostError, loadFunctions: loadBundle } = require("./host-shim");
const loadFunctions = () => loadBundle(BUNDLE);

/** Metadata per id (parameter count, whether the host passes an invocation object). */
function loadMetadata() {
  const byId = new Map();
  if (!fs.existsSync(METADATA)) return byId;
  const meta = JSON.parse(fs.readFileSync(METADATA, "utf8"));
  for (const f of meta.functions || []) byId.set(f.id, f);
  return byId;
}

const registry = loadFunctions();
const metadata = loadMetadata();
const has = (id) => registry.has(id);

/** Problems noticed in what the engine returned (printed at the end). */
const noticed = [];

function isHostError(v) {
  return v !== null && typeof v === "object" && !Array.isArray(v) && typeof v.code === "string" && v.code.startsWith("#");
}

/**
 * Calls a function as the host does: the arguments in declared order, null for omitted optional
 * ones, and, when the metadata asks for it, an invocation object with the caller's address and the
 * addresses of the range arguments.
 */
async function call(id, args, addresses, formula) {
  const fn = registry.get(id);
  if (!fn) throw new Error(`function ${id} is not registered`);
  const meta = metadata.get(id);
  const actual = args.slice();
  if (meta && Array.isArray(meta.parameters)) {
    while (actual.length < meta.parameters.length) actual.push(null);
    const o = meta.options || {};
    if (o.requiresAddress || o.requiresParameterAddresses) {
      actual.push({
        address: "Sheet1!N2",
        parameterAddresses: addresses.map((a) => (a ? `Sheet1!${a}` : null)),
      });
    }
  }
  try {
    let out = fn(...actual);
    if (out && typeof out.then === "function") out = await out;
    check(id, out, formula);
    return out;
  } catch (e) {
    if (e instanceof HostError) return e;
    noticed.push(`${formula}: uncaught ${e && e.name}: ${e && e.message} (the host would show a bare #VALUE!)`);
    return new HostError("#VALUE!", `(uncaught exception: ${e && e.message})`);
  }
}

/** Records NaN/Infinity, ragged matrices or non-matrix results (the add-in must never show them). */
function check(id, out, formula) {
  if (isHostError(out)) return;
  if (!Array.isArray(out) || !out.every((r) => Array.isArray(r))) {
    noticed.push(`${formula}: result is not a 2-D array (${typeof out})`);
    return;
  }
  const w = out.length ? out[0].length : 0;
  if (out.some((r) => r.length !== w)) noticed.push(`${formula}: result rows have different lengths`);
  for (const r of out) {
    for (const v of r) {
      if (typeof v === "number" && !Number.isFinite(v)) {
        noticed.push(`${formula}: result contains ${v}`);
        return;
      }
      if (v === null || v === undefined) {
        noticed.push(`${formula}: result contains ${v} (the host shows null as 0)`);
        return;
      }
    }
  }
}

// ---------------------------------------------------------------------------------------------
// The sheet: data/demo.json laid out in columns A..K, row 1 the header, rows 2..1249 the data
// ---------------------------------------------------------------------------------------------
if (!fs.existsSync(DATA)) {
  process.stderr.write("data/demo.json is missing: run npm run make-demo-data first\n");
  process.exit(1);
}
const demo = JSON.parse(fs.readFileSync(DATA, "utf8"));
const sheet = [demo.columns.slice(), ...demo.rows.map((r) => r.slice())];
const LAST = sheet.length; // last sheet row (1249)
const COLS = "ABCDEFGHIJKLMNOPQRSTUVWXYZ";

/** A block of the sheet as the host passes it (rows of cells; a blank cell arrives as null). */
function range(first, last, fromRow = 1, toRow = LAST) {
  const a = COLS.indexOf(first);
  const b = COLS.indexOf(last);
  const out = [];
  for (let r = fromRow; r <= toRow; r++) out.push(sheet[r - 1].slice(a, b + 1));
  return { cells: out, address: `${first}${fromRow}:${last}${toRow}` };
}

const Y = range("C", "C"); // Units
const X = range("D", "G"); // Price, Footfall, Promo, Income
const X3 = range("D", "F"); // Price, Footfall, Promo (for per-store fits: Income barely moves within a store)
const KEYS = range("A", "A"); // Store
const XP = range("D", "H"); // the regressors and Branch (fixed effects, clusters)
const XIV = range("D", "J"); // ... Period and FlourCost (2SLS)
// The four stores a rival opens near in week 61 come first in the sheet: rows 1..417 with the header.
const RIVAL_LAST = 1 + 104 * demo.truth.rival.stores.length;
const YR = range("C", "C", 1, RIVAL_LAST);
const XR = range("D", "I", 1, RIVAL_LAST); // the regressors, Branch and Period of those stores
const Y1 = range("C", "C", 1, 105); // Northgate alone
const X1 = range("D", "I", 1, 105);

// A small block of what-if rows an analyst might type beside the data (I1:L4).
const SCENARIO = {
  cells: [
    ["Price", "Footfall", "Promo", "Income"],
    [2.8, 100, 0, 100],
    [3.0, 100, 0, 100],
    [3.2, 100, 0, 100],
    [3.0, 100, 1, 100],
  ],
  address: "I1:L5",
};

// ---------------------------------------------------------------------------------------------
// Printing
// ---------------------------------------------------------------------------------------------
const out = (s = "") => process.stdout.write(s + "\n");

function fmtNumber(v) {
  if (Number.isInteger(v) && Math.abs(v) < 1e9) return String(v);
  const a = Math.abs(v);
  if (a === 0) return "0";
  if (a < 1e-4 || a >= 1e9) return v.toExponential(3);
  if (a < 1000) return v.toPrecision(5).replace(/(\.\d*?)0+$/, "$1").replace(/\.$/, "");
  return v.toFixed(2);
}

function fmtCell(v) {
  if (typeof v === "number") return Number.isFinite(v) ? fmtNumber(v) : `${v}!`;
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  if (v === null || v === undefined) return String(v);
  if (isHostError(v)) return v.code;
  return String(v);
}

/** Prints a 2-D result as an aligned table (numbers right-aligned), or "#VALUE! message". */
function printResult(res, indent = "  ") {
  if (isHostError(res)) {
    out(`${indent}${res.code} ${res.message || ""}`.trimEnd());
    return;
  }
  if (!Array.isArray(res)) {
    out(`${indent}${fmtCell(res)}`);
    return;
  }
  const text = res.map((r) => r.map(fmtCell));
  const width = Math.max(...res.map((r) => r.length));
  // Column widths from the cells up to LONG characters, so that one long text cell (a caution, a
  // reading) overflows its row instead of pushing the whole column to the right. Numbers are
  // right-aligned, text left-aligned.
  const LONG = 48;
  const colW = [];
  for (let j = 0; j < width; j++) {
    colW[j] = Math.max(0, ...text.map((r, i) => {
      const len = (r[j] || "").length;
      return typeof res[i][j] === "number" || len <= LONG ? len : 0;
    }));
  }
  res.forEach((r, i) => {
    const cells = [];
    for (let j = 0; j < width; j++) {
      const s = text[i][j] === undefined ? "" : text[i][j];
      cells.push(typeof r[j] === "number" ? s.padStart(colW[j]) : s.padEnd(colW[j]));
    }
    out(indent + cells.join("  ").trimEnd());
  });
  // cell errors inside a spilled table: show their messages underneath
  const msgs = new Set();
  for (const r of res) for (const v of r) if (isHostError(v) && v.message) msgs.add(`${v.code} ${v.message}`);
  for (const m of msgs) out(`${indent}  (${m})`);
}

function heading(title) {
  out("");
  out("=".repeat(100));
  out(title);
  out("=".repeat(100));
}

/** Quotes the options text as the analyst types it in a formula. */
const q = (s) => `"${s}"`;

async function formula(text, id, args, addresses) {
  out("");
  out(text);
  if (!has(id)) {
    out(`  (ELX.${id} is not in the build loaded: skipped)`);
    return undefined;
  }
  const res = await call(id, args, addresses, text);
  printResult(res);
  return res;
}

// Result readers ------------------------------------------------------------------------------
function column(table, name) {
  if (!Array.isArray(table) || !table.length) return -1;
  return table[0].findIndex((h) => typeof h === "string" && h.startsWith(name));
}
function rowOf(table, term) {
  if (!Array.isArray(table)) return undefined;
  return table.find((r) => r[0] === term);
}
function valueOf(table, term, colName) {
  const r = rowOf(table, term);
  const j = column(table, colName);
  return r && j >= 0 ? r[j] : undefined;
}

function truthTable(rows) {
  printResult([["Term", "Estimate", "True value", "Difference", "In the interval?"], ...rows]);
}

// ---------------------------------------------------------------------------------------------
// The session
// ---------------------------------------------------------------------------------------------
async function main() {
  const truth = demo.truth;
  const y = Y.cells;
  const x = X.cells;
  const yx = [Y.address, X.address];
  const F = (fn, opts) => `=ELX.${fn}(${Y.address}, ${X.address}${opts === undefined ? "" : ", " + q(opts)})`;

  heading("Elasticell demo: Harrow & Crumb sourdough loaves, 12 stores x 104 weeks (invented data)");
  out(demo.description);
  out("");
  out(`Sheet: ${demo.sheetLayout}. Blank cells are passed as the web host passes them (null).`);
  out(`Seed ${demo.seed}; ${demo.counts.rows} rows; ${demo.counts.zeroUnits} weeks with zero Units ` +
    `(${demo.counts.zeroUnitsPercent}%: ${demo.closures.length} closure spells, ${demo.stockouts.length} stock-outs); ` +
    `${demo.counts.blankCells} blank cells.`);
  out(`Registered functions: ${[...registry.keys()].sort().join(", ")}`);

  heading("1. Look at the zeros before taking logs");
  await formula(`=ELX.ZEROS(C1:G${LAST})`, "ZEROS", [range("C", "G").cells], [`C1:G${LAST}`]);

  heading("2. The default (zeros=stop) refuses to drop rows silently");
  await formula(F("FIT"), "FIT", [y, x, null], yx);

  heading("3. Log-log fit, rows with a zero left out, HC3 standard errors");
  const fit = await formula(F("FIT", "zeros=drop; se=HC3"), "FIT", [y, x, "zeros=drop; se=HC3"], yx);
  const el = await formula(F("ELASTICITIES", "zeros=drop"), "ELASTICITIES", [y, x, "zeros=drop"], yx);
  const eff = await formula(F("EFFECTS", "zeros=drop"), "EFFECTS", [y, x, "zeros=drop"], yx);
  await formula(`=ELX.ELASTICITY(${Y.address}, ${X.address}, "Price", "zeros=drop")`, "ELASTICITY",
    [y, x, "Price", "zeros=drop"], [Y.address, X.address, null]);

  out("");
  out("Estimates next to the values that generated the data (the true elasticities are of expected Units):");
  const rowsTruth = [];
  const inInterval = (b, lo, hi, t) =>
    typeof lo === "number" && typeof hi === "number" ? (t >= lo && t <= hi ? "yes" : "no") : "";
  // The true price value is the average over the rows used of each store's elasticity (the rival
  // stores' change from week 61 included): what a single pooled elasticity would target.
  for (const [term, t] of [["Price", truth.priceRowAverage], ["Footfall", truth.footfall], ["Income", truth.income]]) {
    const b = valueOf(el, term, "Elasticity");
    const lo = valueOf(el, term, "Low (");
    const hi = valueOf(el, term, "High (");
    if (typeof b === "number") rowsTruth.push([`${term} elasticity`, b, t, b - t, inInterval(b, lo, hi, t)]);
  }
  const pe = valueOf(eff, "Promo", "Corrected");
  if (typeof pe === "number") {
    rowsTruth.push(["Promo % effect (corrected)", pe, truth.promoPercent, pe - truth.promoPercent,
      inInterval(pe, valueOf(eff, "Promo", "Low ("), valueOf(eff, "Promo", "High ("), truth.promoPercent)]);
  }
  if (rowsTruth.length) truthTable(rowsTruth);
  const bPrice = valueOf(el, "Price", "Elasticity");
  if (typeof bPrice === "number") {
    out(`  The price estimate is ${bPrice > truth.price ? "less" : "more"} elastic than the truth. Part of the gap is built`);
    out("  into the data: store managers raise the price after strong weeks and cut it after weak ones, so");
    out("  part of what the regression sees is the pricing rule, not the customers' response; the log of a");
    out("  skewed, heteroskedastic error also shifts with the level (see the cautions).");
  }

  await formula(F("SUMMARY", "zeros=drop"), "SUMMARY", [y, x, "zeros=drop"], yx);

  heading("4. The same fit with Newey-West (HAC) standard errors");
  out("Rows are in sheet order: weeks 1..104 within each store, stores one after another, so the lag");
  out("window also spans the few rows where one store's block meets the next.");
  const fitHac = await formula(F("FIT", "zeros=drop; se=HAC"), "FIT", [y, x, "zeros=drop; se=HAC"], yx);
  await formula(F("FIT", "zeros=drop; se=HAC; lags=8"), "FIT", [y, x, "zeros=drop; se=HAC; lags=8"], yx);
  if (Array.isArray(fit) && Array.isArray(fitHac)) {
    const ratio = [["Term", "SE (HC3)", "SE (HAC)", "HAC / HC3"]];
    for (const r of fit.slice(1)) {
      const a = r[3];
      const b = valueOf(fitHac, r[0], "Std. error");
      if (typeof a === "number" && typeof b === "number") ratio.push([r[0], a, b, b / a]);
    }
    out("");
    out("Standard errors side by side (the demand shock persists from week to week, so HAC is wider):");
    printResult(ratio);
  }
  await formula(F("SUMMARY", "zeros=drop; se=HAC"), "SUMMARY", [y, x, "zeros=drop; se=HAC"], yx);

  heading("5. A log-level variant (x in levels): elasticities now vary along the data");
  await formula(F("FIT", "form=log-level; zeros=drop"), "FIT", [y, x, "form=log-level; zeros=drop"], yx);
  await formula(F("ELASTICITIES", "form=log-level; zeros=drop"), "ELASTICITIES",
    [y, x, "form=log-level; zeros=drop"], yx);
  await formula(F("ELASTICITIES", "form=log-level; zeros=drop; at=median"), "ELASTICITIES",
    [y, x, "form=log-level; zeros=drop; at=median"], yx);
  await formula(F("SUMMARY", "form=log-level; zeros=drop"), "SUMMARY", [y, x, "form=log-level; zeros=drop"], yx);

  heading("6. Other ways with the zeros");
  await formula(F("FIT", "zeros=shift; shift=1"), "FIT", [y, x, "zeros=shift; shift=1"], yx);
  out("  (shift and ihs keep the closed weeks in, with 0 loaves at 0 footfall: that pulls the Footfall");
  out("   slope toward whatever the closures imply, which is why the drop policy is used above.)");
  const ppml = await formula(F("FIT", "estimator=ppml; zeros=drop"), "FIT", [y, x, "estimator=ppml; zeros=drop"], yx);
  if (Array.isArray(ppml) && ppml[0] && ppml[0][4] !== "z") {
    out("  NOTE: this build does not seem to fit PPML: the table has a t column (PPML reports z) and its");
    out("  coefficients are on the scale of Units, as a least-squares fit of Units in levels would give.");
    noticed.push(`${F("FIT", "estimator=ppml; zeros=drop")}: header says "${ppml[0][4]}", not "z"; estimator=ppml looks ignored (a level-y OLS came back)`);
  }
  out("  (PPML fits the mean of Units itself, so the two stock-out weeks with normal footfall stay in;");
  out("   zeros=drop still removes the closed weeks, where the logged Footfall is 0.)");

  heading("7. Predictions in loaves, residual tests, the form check and per-store elasticities");
  await formula(F("SMEARING", "zeros=drop"), "SMEARING", [y, x, "zeros=drop"], yx);
  await formula(F("SMEARING", "zeros=drop; retransform=normal"), "SMEARING", [y, x, "zeros=drop; retransform=normal"], yx);
  await formula(`=ELX.PREDICT(${Y.address}, ${X.address}, ${SCENARIO.address}, "zeros=drop; interval=mean")`,
    "PREDICT", [y, x, SCENARIO.cells, "zeros=drop; interval=mean"], [Y.address, X.address, SCENARIO.address]);
  out(`  (what-if rows ${SCENARIO.address}: Price 2.80 / 3.00 / 3.20 at Footfall 100, Income 100, no promo; then 3.00 with a promo)`);
  await formula(`=ELX.HETEROTEST(${Y.address}, ${X.address}, "bp", "zeros=drop")`, "HETEROTEST",
    [y, x, "bp", "zeros=drop"], [Y.address, X.address, null]);
  await formula(F("NORMALTEST", "zeros=drop"), "NORMALTEST", [y, x, "zeros=drop"], yx);
  await formula(F("TESTS", "zeros=drop"), "TESTS", [y, x, "zeros=drop"], yx);
  await formula(F("FORMCHECK", "zeros=drop"), "FORMCHECK", [y, x, "zeros=drop"], yx);
  const by = await formula(`=ELX.BYGROUP(${KEYS.address}, ${Y.address}, ${X3.address}, "zeros=drop")`, "BYGROUP",
    [KEYS.cells, y, X3.cells, "zeros=drop"], [KEYS.address, Y.address, X3.address]);
  if (Array.isArray(by) && by.length > 1) {
    const jE = by[0].findIndex((h) => typeof h === "string" && /price/i.test(h) && !/error|std|se\b/i.test(h));
    const rowsBy = [["Store", "Price elasticity (estimate)", "True value", "Difference"]];
    for (const r of by.slice(1)) {
      const t = truth.pricePerStore[r[0]];
      // first numeric cell under a header that mentions Price
      const j = jE >= 0 ? jE : -1;
      const b = j >= 0 ? r[j] : undefined;
      // stores a rival opens near change in week 61: their true value here is the average over the weeks
    const after = truth.rival.pricePerStoreAfter[r[0]];
    const tt = typeof after === "number" ? (t * (truth.rival.fromWeek - 1) + after * (104 - truth.rival.fromWeek + 1)) / 104 : t;
    if (typeof t === "number") rowsBy.push([r[0], typeof b === "number" ? b : fmtCell(b), round3(tt), typeof b === "number" ? b - tt : ""]);
    }
    out("");
    out("Per-store price elasticities next to the values that generated them:");
    printResult(rowsBy);
  }

  await panelSection(truth);
  await instrumentSection(truth);
  await changeSection(truth);

  heading("Cautions");
  for (const line of [
    "- These are associations in the data, not causes. A coefficient says how sales and price moved",
    "  together in these weeks and stores, given the other columns; it is not by itself the effect a",
    "  price change would have.",
    "- Price reacts to demand in this data, on purpose: store managers raised prices after strong",
    "  weeks and cut them after weak ones. That feedback biases the price elasticity (here toward",
    "  zero); real shelf prices often behave the same way. Exogenous price variation (planned markdowns,",
    "  a chain-wide change) or an instrument is needed for a causal reading.",
    "- Sample and data quality: 104 weeks of 12 stores of one product line; closed weeks and",
    "  stock-outs are zeros that are not demand, and were left out (zeros=drop); three blank cells",
    "  were left out too. Check the ZEROS and SUMMARY counts, the residual tests and the form check",
    "  before relying on a number; a different sample, period or product may give a different answer.",
    "- The numbers support a decision; they do not make it. Pricing decisions stay with the analyst",
    "  and their organisation's review.",
    "- Fixed effects remove only differences between stores that do not change over time; errors",
    "  clustered by store assume stores are independent of each other, and with 12 clusters (fewer",
    "  than about 30: Cameron and Miller 2015, common practice) those errors are themselves uncertain.",
    "- An instrument must move the price (the first-stage F says how strongly) and affect demand only",
    "  through the price: no test can prove the second part; here it holds because the data were",
    "  made so. Break tests and rolling windows show when the fitted relation changed, not why.",
    "- This data set is invented (simulated from a known model) for the demo only.",
  ]) out(line);

  if (noticed.length) {
    heading("Engine output checks: problems noticed");
    for (const n of noticed) out(`- ${n}`);
  }
}


/** One line of cautions under each of the later sections. */
function sectionCautions(extra) {
  out("");
  out("  Read with care: these are associations in these stores and weeks, not causes; prices react to");
  out("  demand here (reviews and busy-week surcharges follow sales); the closed weeks, stock-outs and");
  out("  blank cells are left out and counted (sample and data quality decide what a number is worth).");
  for (const line of extra) out(`  ${line}`);
}

/** Term rows of an ELASTICITIES table as [estimate, low, high] by term. */
function elasticityOf(table, term) {
  const b = valueOf(table, term, "Elasticity");
  return typeof b === "number" ? [b, valueOf(table, term, "Low ("), valueOf(table, term, "High (")] : null;
}

async function panelSection(truth) {
  heading("8. Panels: pooled against store fixed effects, errors clustered by store");
  out(`x is ${XP.address}: the four regressors and Branch (column H repeats Store beside them, because a`);
  out("column that an option names must sit inside x). Busy high-street stores sell more and charge more,");
  out("so the pooled fit reads part of the store differences as a price response; absorb=Branch gives");
  out("each store its own intercept and compares weeks within a store only.");
  const yx = [Y.address, XP.address];
  const F = (fn, opts) => `=ELX.${fn}(${Y.address}, ${XP.address}, ${q(opts)})`;
  const pooledOpts = "zeros=drop; cluster=Branch";
  const feOpts = "zeros=drop; absorb=Branch; cluster=Branch";
  const pooled = await formula(F("ELASTICITIES", pooledOpts), "ELASTICITIES", [Y.cells, XP.cells, pooledOpts], yx);
  const fe = await formula(F("ELASTICITIES", feOpts), "ELASTICITIES", [Y.cells, XP.cells, feOpts], yx);
  await formula(F("SUMMARY", feOpts), "SUMMARY", [Y.cells, XP.cells, feOpts], yx);
  const rows = [["Term", "Pooled", "Low", "High", "Store effects", "Low", "High", "True value"]];
  for (const [term, t] of [["Price", truth.priceRowAverage], ["Footfall", truth.footfall], ["Income", truth.income]]) {
    const a = elasticityOf(pooled, term);
    const b = elasticityOf(fe, term);
    if (a && b) rows.push([term, ...a, ...b, t]);
  }
  if (rows.length > 1) {
    out("");
    out("Side by side (the true price value is the average over the rows used of each store's elasticity,");
    out(`${truth.price} before the rival and ${truth.rival.elasticityShift} lower at the four rival stores from week ${truth.rival.fromWeek}):`);
    printResult(rows);
    out("  Income barely moves within a store (a quarterly revision), so with store effects its elasticity");
    out("  rests on little variation and its interval is wide. The fixed-effects price estimate is still less");
    out("  elastic than the truth: within a store, prices still follow demand week to week (section 9).");
  }
  sectionCautions([
    "Fixed effects remove only store differences that do not change over time; a store that changes",
    "(a rival opening, a refit) is not covered by them. 12 clusters is fewer than about 30: clustered",
    "errors are then unreliable (Cameron and Miller 2015, common practice).",
  ]);
}

async function instrumentSection(truth) {
  heading("9. Prices that react to demand: two-stage least squares with the flour cost");
  out(`x is ${XIV.address}: the regressors, Branch, Period (named in time= so that it is not a regressor)`);
  out("and FlourCost, a wholesale flour cost index that moves the weekly price list and nothing else.");
  const ivOpts = "zeros=drop; absorb=Branch; cluster=Branch; time=Period; estimator=2sls; endogenous=Price; instruments=FlourCost";
  const olsOpts = "zeros=drop; absorb=Branch; cluster=Branch";
  const yx = [Y.address, XIV.address];
  const F = (fn, opts) => `=ELX.${fn}(${Y.address}, ${XIV.address}, ${q(opts)})`;
  if (!has("IVCHECK")) {
    out("");
    out("  Two-stage least squares (estimator=2sls, ELX.IVCHECK) is not in the build loaded: this section");
    out("  is unavailable. The data hold the instrument (FlourCost) for when it is.");
    return;
  }
  await formula(F("IVCHECK", ivOpts), "IVCHECK", [Y.cells, XIV.cells, ivOpts], yx);
  const iv = await formula(F("ELASTICITIES", ivOpts), "ELASTICITIES", [Y.cells, XIV.cells, ivOpts], yx);
  const ols = await call("ELASTICITIES", [Y.cells, XP.cells, olsOpts], [Y.address, XP.address], "section 9 OLS");
  const a = elasticityOf(ols, "Price");
  const b = elasticityOf(iv, "Price");
  if (a && b) {
    const t = truth.priceRowAverage;
    const inside = (r) => (typeof r[1] === "number" && typeof r[2] === "number" ? (t >= r[1] && t <= r[2] ? "yes" : "no") : "");
    out("");
    out("Price elasticity with store effects and errors clustered by store, least squares against 2SLS:");
    printResult([["Estimator", "Elasticity", "Low", "High", "True value", "In the interval?"],
      ["least squares", ...a, t, inside(a)], ["2SLS (FlourCost)", ...b, t, inside(b)]]);
  }
  sectionCautions([
    "An instrument must move the price (relevance: the first-stage F above) and reach demand only",
    "through the price (no direct effect). No test can prove the second: here it holds because the",
    "data were made so; in real data it is an argument about the business (a flour cost that also",
    "changes what rivals charge would break it). 2SLS intervals are wider: the price of removing the bias.",
  ]);
}

async function changeSection(truth) {
  heading("10. Change over time: rolling windows and a break test at the rival's opening");
  const stores = truth.rival.stores.join(", ");
  out(`Rows 1..${RIVAL_LAST} are the four stores a rival opens near in week ${truth.rival.fromWeek} (${stores}).`);
  out(`x is ${XR.address}: the regressors, Branch and Period. Windows count periods (time=Period), each`);
  out("store's rows are one series (panel=Branch). Each 52-week window has its own store effects");
  out("(absorb=Branch); HC1 errors, because in a short window one row can alone determine a store's");
  out("intercept (leverage 1), where HC3 is undefined.");
  const opts = "zeros=drop; time=Period; panel=Branch; se=HC1";
  if (has("ROLLING")) {
    const rollOpts = "zeros=drop; absorb=Branch; time=Period; panel=Branch; step=13; se=HC1";
    await formula(`=ELX.ROLLING(${YR.address}, ${XR.address}, 52, ${q(rollOpts)})`, "ROLLING",
      [YR.cells, XR.cells, 52, rollOpts], [YR.address, XR.address, null, null]);
    out(`  (true average price elasticity of these stores: ${round3(mean(stores4(truth)))} up to week ${truth.rival.fromWeek - 1}, ` +
      `${round3(mean(stores4(truth)) + truth.rival.elasticityShift)} from week ${truth.rival.fromWeek})`);
    out("  (windows that straddle week 61 mix the two regimes, so the path turns gradually; the level stays");
    out("   less elastic than the truth because prices still follow demand within each window)");
  } else {
    out("");
    out("  ELX.ROLLING is not in the build loaded: rolling windows are unavailable.");
  }
  if (has("BREAKTEST")) {
    out("");
    out("The break test pools the four stores (BREAKTEST takes no absorb=; factors=Branch cannot share");
    out("the column with panel=), so the store differences stay in the intercept of each regime:");
    await formula(`=ELX.BREAKTEST(${YR.address}, ${XR.address}, ${truth.rival.fromWeek}, ${q(opts)})`, "BREAKTEST",
      [YR.cells, XR.cells, truth.rival.fromWeek, opts], [YR.address, XR.address, null, null]);
    out("");
    out(`Northgate alone (${Y1.address}, ${X1.address}), the break at week ${truth.rival.fromWeek}:`);
    await formula(`=ELX.BREAKTEST(${Y1.address}, ${X1.address}, ${truth.rival.fromWeek}, ${q(opts)})`, "BREAKTEST",
      [Y1.cells, X1.cells, truth.rival.fromWeek, opts], [Y1.address, X1.address, null, null]);
    out(`  (Northgate's true price elasticity: ${truth.pricePerStore.Northgate} before, ${truth.rival.pricePerStoreAfter.Northgate} from week ${truth.rival.fromWeek})`);
  } else {
    out("");
    out("  ELX.BREAKTEST is not in the build loaded: the break test is unavailable.");
  }
  sectionCautions([
    "A break test says the fitted relation differs between the two periods, not why: here a rival",
    "opened; in real data a new range, a recipe change or a recording change would look the same.",
    "Each window has fewer rows, so its interval is wider; windows overlap, so neighbours agree.",
  ]);
}

const mean = (v) => v.reduce((a, b) => a + b, 0) / v.length;
const round3 = (v) => Math.round(v * 1000) / 1000;
const stores4 = (truth) => truth.rival.stores.map((s) => truth.pricePerStore[s]);

main().catch((e) => {
  process.stderr.write(`demo failed: ${e && e.stack ? e.stack : e}\n`);
  process.exit(1);
});
