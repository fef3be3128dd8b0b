#!/usr/bin/env node
/*
 * Demo data for Elasticell: "Harrow & Crumb", an invented regional bakery chain.
 *
 * Writes data/demo.json and data/demo.csv: 12 stores x 104 weeks of one product line (sourdough
 * loaves), columns Store, Week, Units, Price, Footfall, Promo, Income. The numbers are simulated
 * from a known model (recorded under "truth" in the JSON) so that the demo can put estimates next
 * to the values that generated them. Invented data: for the demo and simulation checks only.
 *
 * Plain Node, no dependencies, deterministic: the same seed gives the same bytes.
 *   node scripts/make-demo-data.js            (seed 20240607)
 *   node scripts/make-demo-data.js --seed 7   (another draw of the same design)
 *
 * The model, per store s and week t:
 *   Units = exp(a_s + e_price_s * log Price + e_foot * log Footfall + b_promo * Promo
 *               + e_income * log Income + u_st) * G_st, rounded to whole loaves
 *   u_st   a store-level demand shock, AR(1) over weeks (rho 0.7)
 *   G_st   gamma noise with mean 1 whose coefficient of variation grows with the expected level
 *          (right-skewed, heteroskedastic, multiplicative)
 * Price is not set independently of demand: at each store's price review (every 8 weeks) the
 * manager raises the shelf price after weeks of strong sales and cuts it after weak ones, so
 * Price is correlated with the demand shock u (endogeneity on purpose). Temporary markdowns,
 * a chain-wide price rise in week 53 and the display promotions are set without regard to demand.
 * Closures (refurbishment, flood, snow, burst water main, staff shortage) give zero Units and a
 * zero Footfall count; two delivery failures give stock-out weeks with zero Units but normal
 * footfall; three cells are blank (till and counter faults).
 */
"use strict";

const fs = require("fs");
const path = require("path");

// ---------- seeded PRNG: mulberry32 (32-bit state), uniforms in (0, 1) ----------
function mulberry32(seed) {
  let a = seed >>> 0;
  return function next() {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    const r = ((t ^ (t >>> 14)) >>> 0) / 4294967296;
    return r === 0 ? 1 / 8589934592 : r; // never exactly 0, so log(u) is finite
  };
}

function makeRandom(seed) {
  const uniform = mulberry32(seed);
  let spare = null;
  /** Standard normal by Box–Muller (both values used). */
  function normal() {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    const u1 = uniform();
    const u2 = uniform();
    const r = Math.sqrt(-2 * Math.log(u1));
    spare = r * Math.sin(2 * Math.PI * u2);
    return r * Math.cos(2 * Math.PI * u2);
  }
  /** Gamma(shape, 1) for shape >= 1 by Marsaglia and Tsang (2000). */
  function gamma(shape) {
    const d = shape - 1 / 3;
    const c = 1 / Math.sqrt(9 * d);
    for (;;) {
      let z;
      let v;
      do {
        z = normal();
        v = 1 + c * z;
      } while (v <= 0);
      v = v * v * v;
      const u = uniform();
      if (Math.log(u) < 0.5 * z * z + d - d * v + d * Math.log(v)) return d * v;
    }
  }
  return { uniform, normal, gamma };
}

// ---------- arguments ----------
const DEFAULT_SEED = 20240607;
let seed = DEFAULT_SEED;
const argv = process.argv.slice(2);
for (let i = 0; i < argv.length; i++) {
  if (argv[i] === "--seed" && i + 1 < argv.length) seed = Number(argv[++i]) >>> 0;
}
const rnd = makeRandom(seed);

// ---------- design ----------
const WEEKS = 104;
const STORES = [
  "Northgate", "Riverside", "Millbrook", "Eastcliff", "Westmoor", "Hollin Park",
  "Saltmarsh", "Kingsway", "Ashby Cross", "Fenwick", "Larkhill", "Stonebridge",
];

const TRUTH = {
  price: -1.4, // chain-wide price elasticity (the mean of the per-store ones)
  footfall: 0.8,
  promo: 0.25, // coefficient of the 0/1 display promotion in log units
  income: 0.6,
  intercept: 1.05, // mean of the store constants a_s of the log-log equation
};
const REFERENCE_PRICE = 3.0; // pounds; see the store constants below
const DEMAND_RHO = 0.7; // AR(1) persistence of the weekly demand shock
const DEMAND_SD = 0.06; // innovation sd of the demand shock (log units)
const NOISE_CV_AT_300 = 0.11; // coefficient of variation of G at an expected 300 loaves
const NOISE_CV_POWER = 0.5; // cv grows like (level / 300)^0.5
const round = (v, dp) => {
  const f = 10 ** dp;
  return Math.round(v * f) / f;
};

// Per-store price elasticities: spread from about -0.9 to -1.9, centred exactly on TRUTH.price.
const rawDev = STORES.map(() => 0.3 * rnd.normal());
const meanDev = rawDev.reduce((s, v) => s + v, 0) / rawDev.length;
const pricePerStore = {};
STORES.forEach((s, i) => {
  pricePerStore[s] = round(TRUTH.price + (rawDev[i] - meanDev), 3);
});
// Recentre after rounding so that the recorded mean is the recorded chain value.
{
  const others = STORES.slice(1).reduce((a, s) => a + pricePerStore[s], 0);
  pricePerStore[STORES[0]] = round(TRUTH.price * STORES.length - others, 3);
}

// Store characteristics: local income index, base shelf price, store constant, footfall scale.
const stores = STORES.map((name, i) => {
  const income = round(100 * Math.exp(0.13 * rnd.normal()), 1);
  // richer areas carry higher shelf prices (a between-store association, not a cause)
  const basePrice = 3.1 * Math.exp(0.35 * Math.log(income / 100) + 0.07 * rnd.normal());
  // Store constant of the log-log equation. The term -(e_s - mean e)·log(REFERENCE_PRICE) makes
  // every store sell about the same at the reference price whatever its own elasticity, so the
  // spread of elasticities does not turn into an unmodelled store-level shift; the remaining
  // store effect (sd 0.04) is small on purpose.
  const constant = TRUTH.intercept + 0.04 * rnd.normal()
    - (pricePerStore[name] - TRUTH.price) * Math.log(REFERENCE_PRICE);
  const footScale = Math.exp(0.08 * rnd.normal());
  return { name, index: i, income, basePrice, constant, footScale, elasticity: pricePerStore[name] };
});
// Centre the store constants exactly on TRUTH.intercept (so the recorded truth is exact).
{
  const m = stores.reduce((a, s) => a + s.constant, 0) / stores.length;
  for (const s of stores) s.constant = round(s.constant - m + TRUTH.intercept, 4);
}

// Chain-wide display promotions: about 1 week in 9, the same calendar at every store, plus a
// few local ones.
const chainPromo = [];
for (let t = 1; t <= WEEKS; t++) chainPromo[t] = rnd.uniform() < 0.09 ? 1 : 0;

// Closures: [store, first week, last week, reason]
const CLOSURES = [
  ["Millbrook", 30, 35, "refurbishment"],
  ["Kingsway", 71, 75, "refurbishment"],
  ["Larkhill", 12, 15, "refurbishment"],
  ["Riverside", 44, 46, "flood"],
  ["Fenwick", 88, 89, "burst water main"],
  ["Northgate", 59, 59, "snow"],
  ["Westmoor", 59, 59, "snow"],
  ["Hollin Park", 59, 59, "snow"],
  ["Saltmarsh", 59, 59, "snow"],
  ["Ashby Cross", 59, 59, "snow"],
  ["Stonebridge", 59, 59, "snow"],
  ["Eastcliff", 23, 23, "staff shortage"],
  ["Saltmarsh", 97, 97, "staff shortage"],
  ["Ashby Cross", 8, 8, "staff shortage"],
  ["Stonebridge", 66, 66, "staff shortage"],
];
const STOCKOUTS = [
  ["Eastcliff", 81, "delivery failure"],
  ["Hollin Park", 38, "delivery failure"],
];
// Blank cells: [store, week, column, reason]
const BLANKS = [
  ["Westmoor", 17, "Price", "till system outage"],
  ["Fenwick", 62, "Price", "till system outage"],
  ["Kingsway", 40, "Footfall", "door counter fault"],
];

function isClosed(store, week) {
  return CLOSURES.some(([s, a, b]) => s === store && week >= a && week <= b);
}
function isStockout(store, week) {
  return STOCKOUTS.some(([s, w]) => s === store && w === week);
}
function isBlank(store, week, col) {
  return BLANKS.some(([s, w, c]) => s === store && w === week && c === col);
}

// Footfall seasonality (index around 100): summer lift, December peak, January dip.
function season(week) {
  const w = ((week - 1) % 52) + 1;
  let f = 1 + 0.05 * Math.sin((2 * Math.PI * (w - 10)) / 52);
  if (w >= 49 && w <= 51) f *= 1.12;
  if (w <= 2) f *= 0.9;
  return f;
}

// ---------- simulation ----------
const header = ["Store", "Week", "Units", "Price", "Footfall", "Promo", "Income"];
const rows = [];
for (const st of stores) {
  let u = (DEMAND_SD / Math.sqrt(1 - DEMAND_RHO * DEMAND_RHO)) * rnd.normal();
  const uHist = [];
  let shelf = Math.round(st.basePrice * 20) / 20; // regular shelf price, whole 5p steps
  const reviewOffset = st.index % 8;
  let incomeNow = st.income;
  for (let t = 1; t <= WEEKS; t++) {
    // demand shock for this week
    u = DEMAND_RHO * u + DEMAND_SD * rnd.normal();

    // regular price: reviews react to the recent demand shocks (seen by the manager as sales)
    if (t > 4 && (t + reviewOffset) % 8 === 0) {
      const recent = uHist.slice(-4).reduce((a, v) => a + v, 0) / 4;
      if (recent > 0.03) shelf += 0.1;
      else if (recent < -0.03) shelf -= 0.1;
      else if (rnd.uniform() < 0.3) shelf += rnd.uniform() < 0.5 ? 0.05 : -0.05;
      shelf = Math.max(1.95, Math.round(shelf * 20) / 20);
    }
    if (t === 53) shelf = Math.round(shelf * 1.06 * 20) / 20; // chain-wide cost pass-through
    // temporary markdown weeks, independent of demand
    let price = shelf;
    if (rnd.uniform() < 0.12) price = shelf * (1 - (0.1 + 0.1 * rnd.uniform()));
    price = round(Math.max(1.5, price - 0.01), 2); // shelf prices end in ...4 or ...9 pence

    // local income index, revised each quarter
    if (t > 1 && (t - 1) % 13 === 0) incomeNow = incomeNow * Math.exp(0.004 + 0.006 * rnd.normal());
    const income = round(incomeNow, 1);

    // footfall index
    let footfall = 100 * st.footScale * season(t) * Math.exp(0.07 * rnd.normal());

    // display promotion: chain calendar plus occasional local events
    const promo = chainPromo[t] === 1 || rnd.uniform() < 0.03 ? 1 : 0;

    const closed = isClosed(st.name, t);
    const stockout = isStockout(st.name, t);

    const logMean = st.constant + st.elasticity * Math.log(price) + TRUTH.footfall * Math.log(footfall)
      + TRUTH.promo * promo + TRUTH.income * Math.log(income) + u;
    const level = Math.exp(logMean);
    let cv = NOISE_CV_AT_300 * Math.pow(level / 300, NOISE_CV_POWER);
    cv = Math.min(0.4, Math.max(0.04, cv));
    const shape = 1 / (cv * cv);
    const g = rnd.gamma(shape) / shape; // mean 1, sd cv
    let units = Math.round(level * g);

    uHist.push(u);
    let promoOut = promo;
    if (closed) {
      units = 0;
      footfall = 0;
      promoOut = 0;
    } else if (stockout) {
      units = 0;
    }
    rows.push([
      st.name,
      t,
      units,
      isBlank(st.name, t, "Price") ? null : price,
      isBlank(st.name, t, "Footfall") ? null : round(footfall, 1),
      promoOut,
      income,
    ]);
  }
}

const zeroUnits = rows.filter((r) => r[2] === 0).length;
const out = {
  name: "Harrow & Crumb sourdough sales (simulated)",
  description:
    "Invented data for the Elasticell demo: weekly sourdough loaf sales at the 12 stores of " +
    "Harrow & Crumb, a fictional regional bakery chain, over 104 weeks. Units are loaves sold; " +
    "Price is the shelf price in pounds; Footfall is a door-count index around 100; Promo marks a " +
    "display promotion week (no price change); Income is a local income index by store, revised " +
    "quarterly. Simulated from a log-linear model of expected sales with multiplicative, " +
    "right-skewed gamma noise whose spread grows with the level, and an AR(1) weekly demand shock. " +
    "Price is partly set in response to demand (store price reviews react to recent sales), so a " +
    "regression of Units on Price mixes the demand response with the pricing rule: the estimate is " +
    "an association, not a clean causal elasticity. Closed weeks have Units = 0 and Footfall = 0; " +
    "two stock-out weeks have Units = 0 with normal footfall; three cells are blank.",
  seed,
  generator: "scripts/make-demo-data.js (mulberry32 uniforms, Box-Muller normals, Marsaglia-Tsang gamma)",
  truth: {
    price: TRUTH.price,
    footfall: TRUTH.footfall,
    promo: TRUTH.promo,
    promoPercent: round(100 * (Math.exp(TRUTH.promo) - 1), 2),
    income: TRUTH.income,
    intercept: TRUTH.intercept,
    pricePerStore,
    storeConstants: Object.fromEntries(stores.map((s) => [s.name, s.constant])),
    meaning:
      "Elasticities of expected Units (log-log slopes of the mean); promo is a log-unit shift, " +
      "promoPercent = 100(exp(promo) - 1). The pooled price value is the mean of the per-store ones.",
    demandShock: { ar1: DEMAND_RHO, innovationSd: DEMAND_SD },
    noise: {
      family: "gamma, mean 1",
      cvAt300Loaves: NOISE_CV_AT_300,
      cvGrowsWithLevelToPower: NOISE_CV_POWER,
    },
    pricing:
      "regular price reviewed every 8 weeks per store: +10p after four weeks of average demand " +
      "shock above 0.03, -10p below -0.03, else a random 5p move with probability 0.3; +6% in " +
      "week 53 at every store; markdown weeks (10-20% off) with probability 0.12 independent of demand",
  },
  counts: {
    rows: rows.length,
    zeroUnits,
    zeroUnitsPercent: round((100 * zeroUnits) / rows.length, 2),
    blankCells: BLANKS.length,
  },
  closures: CLOSURES.map(([store, from, to, reason]) => ({ store, from, to, reason })),
  stockouts: STOCKOUTS.map(([store, week, reason]) => ({ store, week, reason })),
  blanks: BLANKS.map(([store, week, column, reason]) => ({ store, week, column, reason })),
  sheetLayout:
    "columns A..G = Store, Week, Units, Price, Footfall, Promo, Income; row 1 headers; rows 2..1249 data " +
    "(stores in the order listed, weeks 1..104 within each store)",
  columns: header,
  rows,
};

const dataDir = path.join(__dirname, "..", "data");
fs.mkdirSync(dataDir, { recursive: true });
// Pretty-printed metadata, one data row per line (compact and diff-friendly).
const { rows: _rows, ...meta } = out;
const jsonText = JSON.stringify(meta, null, 2).replace(/\n}$/, "") +
  ',\n  "rows": [\n' + rows.map((r) => "    " + JSON.stringify(r)).join(",\n") + "\n  ]\n}\n";
JSON.parse(jsonText); // guard: the hand-assembled text must be valid JSON
fs.writeFileSync(path.join(dataDir, "demo.json"), jsonText);

const csvCell = (v) => {
  if (v === null || v === undefined) return "";
  const s = String(v);
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
};
const csv = [header, ...rows].map((r) => r.map(csvCell).join(",")).join("\n") + "\n";
fs.writeFileSync(path.join(dataDir, "demo.csv"), csv);

process.stdout.write(
  `wrote data/demo.json and data/demo.csv: ${rows.length} rows, ${zeroUnits} zero-Units weeks ` +
    `(${out.counts.zeroUnitsPercent}%), ${BLANKS.length} blank cells, seed ${seed}\n`,
);
