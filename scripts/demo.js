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
// The sheet: data/demo.json laid out in columns A..G, row 1 the header, rows 2..1249 the data
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
  for (const [term, t] of [["Price", truth.price], ["Footfall", truth.footfall], ["Income", truth.income]]) {
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
      if (typeof t === "number") rowsBy.push([r[0], typeof b === "number" ? b : fmtCell(b), t, typeof b === "number" ? b - t : ""]);
    }
    out("");
    out("Per-store price elasticities next to the values that generated them:");
    printResult(rowsBy);
  }

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
    "- This data set is invented (simulated from a known model) for the demo only.",
  ]) out(line);

  if (noticed.length) {
    heading("Engine output checks: problems noticed");
    for (const n of noticed) out(`- ${n}`);
  }
}

main().catch((e) => {
  process.stderr.write(`demo failed: ${e && e.stack ? e.stack : e}\n`);
  process.exit(1);
});
