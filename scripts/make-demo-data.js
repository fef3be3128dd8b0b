#!/usr/bin/env node
/*
 * Demo data for Elasticell: "Harrow & Crumb", an invented regional bakery chain.
 *
 * Writes data/demo.json and data/demo.csv: 12 stores x 104 weeks of one product line (sourdough
 * loaves), columns Store, Week, Units, Price, Footfall, Promo, Income, Branch, Period, FlourCost,
 * Rival. Branch and Period repeat Store and Week beside the regressors (role columns must sit inside
 * the x block: D:H holds the regressors and Branch, D:I adds Period, D:J adds FlourCost). The numbers are simulated
 * from a known model (recorded under "truth" in the JSON) so that the demo can put estimates next
 * to the values that generated them. Invented data: for the demo and simulation checks only.
 *
 * Plain Node, no dependencies, deterministic: the same seed gives the same bytes.
 *   node scripts/make-demo-data.js            (seed 20240607)
 *   node scripts/make-demo-data.js --seed 7   (another draw of the same design)
 *
 * The model, per store s and week t:
 *   Units = exp(a_s + e_st * log Price + e_foot * log Footfall + b_promo * Promo
 *               + e_income * log Income + r_st + u_st) * G_st, rounded to whole loaves
 *   e_st   the store's price elasticity e_s (spread about -0.9 to -2.0, mean exactly -1.4), and
 *          e_s - 1.0 from week 61 at the four stores a rival bakery opens near (Northgate,
 *          Riverside, Millbrook, Eastcliff; Rival = 1 there): their customers can buy elsewhere,
 *          so they become more price-sensitive (more negative). r_st = -0.1 (fewer loaves at the
 *          reference price of 3 pounds) plus the term that keeps the elasticity change from
 *          shifting the level there, else 0.
 *   a_s    store constant, including a location effect L_s (sd 0.25) that also raises the log
 *          shelf price by 0.35 L_s: busy stores sell more and charge more, so a pooled fit mixes
 *          the store differences into the price slope and fixed effects by store remove them.
 *   u_st   a store-level demand shock, AR(1) over weeks (rho 0.7)
 *   G_st   gamma noise with mean 1 whose coefficient of variation grows with the expected level
 *          (right-skewed, heteroskedastic, multiplicative)
 * Price is not set independently of demand: at each store's price review (every 8 weeks) the
 * manager raises the shelf price after weeks of strong sales and cuts it after weak ones, and each
 * week adds a busy-week surcharge that follows last week's demand shock (log price + 0.8 u_s,t-1),
 * so Price is correlated with the demand shock u (endogeneity on purpose). FlourCost, a wholesale
 * flour cost index per store and week (regional level x chain market path AR(1) 0.9 x store wiggle
 * AR(1) 0.6), moves the weekly price list (pass-through elasticity 0.5) and nothing else: it does
 * not enter demand, so it is a valid, strong instrument for Price by construction. Temporary
 * markdowns, a chain-wide price rise in week 53 and the display promotions are set without regard
 * to demand.
 * True values (seed 20240607): chain elasticity -1.4 before the rival; -1.3988 at the eight stores
 * without one; -1.5438 averaged over the 1,213 rows a log-log fit with zeros=drop uses (the target
 * of the pooled, fixed-effects and 2SLS estimates); Northgate -0.878 before week 61, -1.878 from it.
 * Measured on this draw with R (lm, AER::ivreg, sandwich::vcovCL HC1 by Store, t with 11 df):
 * pooled OLS -0.667 (interval -1.064 to -0.271), store fixed effects -1.091 (-1.438 to -0.744, misses
 * the truth: prices react to demand), 2SLS with FlourCost and store fixed effects -1.404 (-1.979 to
 * -0.829, covers it); first-stage F of log FlourCost 260.8 (classical, with store effects), Wu-Hausman
 * p 0.0028. Northgate alone: Chow F at week 61 p 0.0004, sup-F (trim 0.15) p 0.0009 with the most
 * likely break at week 58; Westmoor (no rival) Chow p 0.13.
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
// Store location: busy high-street stores sell more at any price and also charge more (a store
// effect correlated with price, which fixed effects by store remove).
const LOCATION_DEMAND = 0.25; // sd of the location effect on log expected Units
const LOCATION_PRICE = 0.35; // log shelf price moves by this times the (demand-scale) location effect
// Wholesale flour cost index (100 = the chain's contract price), per store and week: each store's
// regional mill sets a level, a chain-wide market path moves every week (AR(1)), and each store's
// deliveries add their own AR(1) wiggle. The price list is indexed to it weekly, with this
// pass-through elasticity; it enters the price and nothing else (no effect on demand).
const FLOUR_PASS_THROUGH = 0.5;
const FLOUR_MARKET_RHO = 0.9;
const FLOUR_MARKET_SD = 0.035;
const FLOUR_LOCAL_RHO = 0.6;
const FLOUR_LOCAL_SD = 0.05;
// A rival bakery opens near four stores in the second year: from week RIVAL_WEEK their customers
// can buy elsewhere, so their price elasticity becomes more negative by RIVAL_SHIFT, and their
// sales at the reference price fall by RIVAL_LEVEL (log units).
const RIVAL_STORES = ["Northgate", "Riverside", "Millbrook", "Eastcliff"];
const RIVAL_WEEK = 61;
const RIVAL_SHIFT = -1.0;
const RIVAL_LEVEL = -0.1;
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
  const location = LOCATION_DEMAND * rnd.normal();
  const basePrice = 3.1 * Math.exp(0.35 * Math.log(income / 100) + LOCATION_PRICE * location + 0.07 * rnd.normal());
  // Store constant of the log-log equation. The term -(e_s - mean e)·log(REFERENCE_PRICE) makes
  // every store sell about the same at the reference price whatever its own elasticity, so the
  // spread of elasticities does not turn into an unmodelled store-level shift; the remaining
  // store effect (sd 0.04) is small on purpose.
  const constant = TRUTH.intercept + 0.04 * rnd.normal() + location
    - (pricePerStore[name] - TRUTH.price) * Math.log(REFERENCE_PRICE);
  const footScale = Math.exp(0.08 * rnd.normal());
  const flourLevel = 100 * Math.exp(0.06 * rnd.normal());
  return { name, index: i, income, basePrice, constant, footScale, elasticity: pricePerStore[name], location, flourLevel };
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

// Chain-wide wholesale flour market path (log deviation from the contract price), AR(1).
const flourMarket = [];
{
  let m = (FLOUR_MARKET_SD / Math.sqrt(1 - FLOUR_MARKET_RHO * FLOUR_MARKET_RHO)) * rnd.normal();
  for (let t = 1; t <= WEEKS; t++) {
    m = FLOUR_MARKET_RHO * m + FLOUR_MARKET_SD * rnd.normal();
    flourMarket[t] = m;
  }
}
// Busy-week pricing: each week the manager adds a surcharge that follows last week's demand shock
// (log price moves by this times u of the week before), on top of the 8-weekly reviews.
const BUSY_RESPONSE = 0.8;
const hasRival = (store, week) => RIVAL_STORES.includes(store) && week >= RIVAL_WEEK;

// ---------- simulation ----------
// Columns H and I repeat Store and Week as Branch and Period beside the regressors, so that one x
// block holds the regressors and the key columns that absorb=, cluster= and time= name: D:H for
// fixed effects and clusters, D:I with the periods for windows and breaks, D:J with FlourCost for 2SLS.
const header = ["Store", "Week", "Units", "Price", "Footfall", "Promo", "Income", "Branch", "Period", "FlourCost", "Rival"];
const rows = [];
for (const st of stores) {
  let flourLocal = (FLOUR_LOCAL_SD / Math.sqrt(1 - FLOUR_LOCAL_RHO * FLOUR_LOCAL_RHO)) * rnd.normal();
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
    // wholesale flour cost index and the weekly cost-indexed price list
    flourLocal = FLOUR_LOCAL_RHO * flourLocal + FLOUR_LOCAL_SD * rnd.normal();
    const flour = round(st.flourLevel * Math.exp(flourMarket[t] + flourLocal), 1);
    const lastShock = uHist.length ? uHist[uHist.length - 1] : 0;
    const listed = shelf * Math.pow(flour / 100, FLOUR_PASS_THROUGH) * Math.exp(BUSY_RESPONSE * lastShock);
    // temporary markdown weeks, independent of demand
    let price = listed;
    if (rnd.uniform() < 0.12) price = listed * (1 - (0.1 + 0.1 * rnd.uniform()));
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

    const rival = hasRival(st.name, t) ? 1 : 0;
    const elasticityNow = st.elasticity + rival * RIVAL_SHIFT;
    // the rival's level effect is set at the reference price, so the elasticity change does not
    // turn into a shift of its own: -(shift)·log(REFERENCE_PRICE) as for the store constants
    const logMean = st.constant + rival * (RIVAL_LEVEL - RIVAL_SHIFT * Math.log(REFERENCE_PRICE))
      + elasticityNow * Math.log(price) + TRUTH.footfall * Math.log(footfall)
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
      st.name,
      t,
      flour,
      rival,
    ]);
  }
}

const zeroUnits = rows.filter((r) => r[2] === 0).length;
const usedElasticities = rows
  .filter((r) => r[2] > 0 && r[3] !== null && r[4] !== null && r[4] > 0)
  .map((r) => pricePerStore[r[0]] + (r[10] === 1 ? RIVAL_SHIFT : 0));
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
      "week 53 at every store; each week the listed price is the regular price times " +
      `(FlourCost/100)^${FLOUR_PASS_THROUGH} times exp(${BUSY_RESPONSE} x last week's demand shock); ` +
      "markdown weeks (10-20% off) with probability 0.12 independent of demand",
    location: {
      meaning: "store location effect L_s (sd " + LOCATION_DEMAND + "): adds L_s to the store constant and " +
        LOCATION_PRICE + " L_s to the log shelf price, so busy stores sell more and charge more",
      perStore: Object.fromEntries(stores.map((s) => [s.name, round(s.location, 4)])),
    },
    flourCost: {
      meaning: "wholesale flour cost index per store and week (100 = contract price): store level times " +
        "exp(chain market path + store wiggle); it moves Price (pass-through elasticity " + FLOUR_PASS_THROUGH +
        ") and has no effect on demand, so it is a valid instrument for Price by construction",
      passThrough: FLOUR_PASS_THROUGH,
      market: { ar1: FLOUR_MARKET_RHO, innovationSd: FLOUR_MARKET_SD },
      local: { ar1: FLOUR_LOCAL_RHO, innovationSd: FLOUR_LOCAL_SD },
      storeLevel: Object.fromEntries(stores.map((s) => [s.name, round(s.flourLevel, 2)])),
    },
    busyWeekResponse: BUSY_RESPONSE,
    rival: {
      meaning: "a rival bakery opens near these stores from week " + RIVAL_WEEK + " (Rival = 1 from then): " +
        "their price elasticity changes by " + RIVAL_SHIFT + " (more price-sensitive) and their log expected " +
        "Units at the reference price by " + RIVAL_LEVEL,
      stores: RIVAL_STORES,
      fromWeek: RIVAL_WEEK,
      elasticityShift: RIVAL_SHIFT,
      levelShift: RIVAL_LEVEL,
      pricePerStoreAfter: Object.fromEntries(RIVAL_STORES.map((s) => [s, round(pricePerStore[s] + RIVAL_SHIFT, 3)])),
    },
    // The true elasticity averaged over the rows a log-log fit with zeros=drop uses (Units > 0,
    // Footfall > 0, no blank): the target of a pooled, fixed-effects or 2SLS price elasticity here.
    priceRowAverage: round(usedElasticities.reduce((a, v) => a + v, 0) / usedElasticities.length, 4),
    priceWithoutRival: round(STORES.filter((s) => !RIVAL_STORES.includes(s)).reduce((a, s) => a + pricePerStore[s], 0) / (STORES.length - RIVAL_STORES.length), 4),
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
    "columns A..K = Store, Week, Units, Price, Footfall, Promo, Income, Branch, Period, FlourCost, Rival; " +
    "row 1 headers; rows 2..1249 data (stores in the order listed, weeks 1..104 within each store); " +
    "Branch and Period repeat Store and Week beside the regressors so that the x blocks D:H (fixed " +
    "effects, clusters), D:I (with periods) and D:J (with the instrument) hold the columns the role options name",
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
