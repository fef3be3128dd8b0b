/**
 * Identities and problems of the panel engine (functions/engine/absorb.ts, panelCovariance.ts,
 * ppmlAbsorbed.ts), called directly on arrays.
 *
 * Data: the public panels stored in test/reference/panel.json (plm::Grunfeld, plm::EmplUK, written by
 * test/reference/scripts/panel.R). Identities (each with its source):
 * - absorbing a key gives the slopes and errors of least squares with one 0/1 column per value
 *   (Frisch–Waugh–Lovell; Lovell 1963), compared with the engine's own leastSquares and covariance.ts
 *   on the indicator design, 1e-10 relative;
 * - absorbing a key with one value is the plain fit with an intercept (the same theorem);
 * - row order does not change any result (units kept as blocks for HAC within units);
 * - singletons fit exactly and leave the slopes unchanged (Correia 2015);
 * - two-way absorbed parameters G₁ + G₂ − C (Abowd, Creecy and Kramarz 2002), C counted on a graph
 *   small enough to check by hand.
 * The hand example of a negative two-way variance is arithmetic shown beside it.
 */
import * as fs from "fs";
import * as path from "path";
import { connectedComponents, dropSingletons, fitAbsorbed, keepRows, timeCodes, prepareAbsorption, usableWeights, Absorber, type FixedEffectKey } from "../../functions/engine/absorb";
import { clusterCovariance, driscollKraay, negativeVarianceReason, panelClassical, panelHac, panelHc, panelStandardErrors, type ScoreModel } from "../../functions/engine/panelCovariance";
import { classicalCovariance, hacCovariance, hcCovariance, leastSquaresInput, originalUnits } from "../../functions/engine/covariance";
import { leastSquares } from "../../functions/engine/leastSquares";
import { ppmlAbsorbed } from "../../functions/engine/ppmlAbsorbed";
import { ElxProblem } from "../../functions/engine/problems";
import { Rng } from "../simulation/rng";

interface Case {
  name: string;
  y: number[];
  x: Record<string, number[]>;
  keys: Record<string, number[]>;
  period_codes: number[];
  cluster: Record<string, { codes: Record<string, number[]> }>;
}
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "..", "reference", "panel.json"), "utf8")) as { ols: Case[] };
const byName = (n: string) => ref.ols.find((c) => c.name === n) as Case;

function relClose(a: ArrayLike<number>, b: ArrayLike<number>, tol: number, what: string): void {
  expect(a.length).toBe(b.length);
  for (let i = 0; i < a.length; i++) {
    const r = Math.abs(a[i] - b[i]) / Math.max(Math.abs(b[i]), 1e-300);
    if (!(r <= tol)) throw new Error(`${what}[${i}]: ${a[i]} vs ${b[i]} (rel ${r.toExponential(2)})`);
  }
}
const diag = (V: Float64Array, k: number, first = 0, count = k) => Array.from({ length: count }, (_, j) => V[(first + j) * k + first + j]);
const indicators = (codes: number[], skipFirst: boolean): Float64Array[] => {
  const G = Math.max(...codes) + 1;
  const cols: Float64Array[] = [];
  for (let g = skipFirst ? 1 : 0; g < G; g++) cols.push(Float64Array.from(codes, (c) => (c === g ? 1 : 0)));
  return cols;
};
const noDep = (): never => {
  throw new Error("dependent");
};

function absorbedModel(c: Case, keyNames: string[], rows?: number[]) {
  const pick = <T extends number>(v: T[]) => (rows ? rows.map((i) => v[i]) : v);
  const names = Object.keys(c.x);
  const X = names.map((v) => Float64Array.from(pick(c.x[v])));
  const keys: FixedEffectKey[] = keyNames.map((k) => ({ name: k, codes: Int32Array.from(pick(c.keys[k])) }));
  const prep = prepareAbsorption(keys, null);
  const kept = (v: Float64Array) => keepRows(v, prep.keep);
  const fit = fitAbsorbed(prep.absorber, kept(Float64Array.from(pick(c.y))), X.map(kept), names);
  const model: ScoreModel = { X: fit.X, qr: fit.qr, u: fit.u, absorbed: fit.absorbed, leverageOffset: prep.absorber.leverageOffset() };
  const keptCodes = (v: number[]) => Int32Array.from(kept(Float64Array.from(pick(v))));
  return { prep, fit, model, keys: keys.map((k) => ({ name: k.name, codes: Int32Array.from(kept(Float64Array.from(k.codes))) })), names, periods: keptCodes(c.period_codes) };
}

describe("absorbing a key equals adding its indicator columns (Frisch–Waugh–Lovell)", () => {
  test("one key (Grunfeld, firm): slopes, classical, HC1, HC3, cluster by year, HAC, 1e-10", () => {
    const c = byName("grunfeld_oneway");
    const { fit, model, names } = absorbedModel(c, ["firm"]);
    const k = names.length;
    const full = [...names.map((v) => Float64Array.from(c.x[v])), ...indicators(c.keys.firm, false)];
    const qr = leastSquares(full, Float64Array.from(c.y)).qr ?? noDep();
    const K = full.length;
    relClose(fit.coef, qr.coef.slice(0, k), 1e-10, "slopes");
    relClose(diag(panelClassical(model).V, k), diag(originalUnits(classicalCovariance(leastSquaresInput(full, qr, Int32Array.from({ length: qr.n }, (_, i) => i + 1))), qr.scale, 1), K, 0, k), 1e-10, "classical");
    const rows = Int32Array.from({ length: qr.n }, (_, i) => i + 1);
    for (const type of ["HC1", "HC3"] as const) {
      relClose(diag(panelHc(model, type).V, k), diag(originalUnits(hcCovariance(leastSquaresInput(full, qr, rows), type, null).V, qr.scale, 1), K, 0, k), 1e-10, type);
    }
    const year = { name: "year", codes: Int32Array.from(c.cluster.year.codes.year) };
    const fullModel: ScoreModel = { X: full, qr, u: qr.resid, absorbed: 0, leverageOffset: new Float64Array(qr.n) };
    relClose(diag(clusterCovariance(model, [year], 0).V, k), diag(clusterCovariance(fullModel, [year], 0).V, K, 0, k), 1e-10, "cluster by year");
    // HAC within one unit spanning all rows is the ordinary Newey–West of covariance.ts
    relClose(diag(panelHac(fullModel, new Int32Array(qr.n), 3).V, K, 0, k), diag(originalUnits(hacCovariance(leastSquaresInput(full, qr, Int32Array.from({ length: qr.n }, (_, i) => i + 1)), 3), qr.scale, 1), K, 0, k), 1e-12, "HAC one unit");
  });

  test("two keys, unbalanced (EmplUK, firm and year): slopes, HC1, two-way cluster, DK, 1e-10; a = G₁ + G₂ − 1", () => {
    const c = byName("empluk_twoway");
    const { fit, model, names, periods } = absorbedModel(c, ["firm", "year"]);
    const k = names.length;
    const full = [...names.map((v) => Float64Array.from(c.x[v])), ...indicators(c.keys.firm, false), ...indicators(c.keys.year, true)];
    const qr = leastSquares(full, Float64Array.from(c.y)).qr ?? noDep();
    const K = full.length;
    expect(fit.absorbed).toBe(K - k);
    expect(fit.absorber.components).toBe(1);
    relClose(fit.coef, qr.coef.slice(0, k), 1e-10, "slopes");
    const rows = Int32Array.from({ length: qr.n }, (_, i) => i + 1);
    relClose(diag(panelHc(model, "HC1").V, k), diag(originalUnits(hcCovariance(leastSquaresInput(full, qr, rows), "HC1", null).V, qr.scale, 1), K, 0, k), 1e-10, "HC1");
    const fullModel: ScoreModel = { X: full, qr, u: qr.resid, absorbed: 0, leverageOffset: null };
    const cl = [{ name: "firm", codes: Int32Array.from(c.keys.firm) }, { name: "year", codes: Int32Array.from(c.keys.year) }];
    // the indicator regression has no nested count of its own: compare with a_n = 0 on both sides
    relClose(diag(clusterCovariance(model, cl, 0).V, k), diag(clusterCovariance(fullModel, cl, 0).V, K, 0, k), 1e-10, "two-way cluster");
    relClose(diag(driscollKraay(model, periods, 2).V, k), diag(driscollKraay(fullModel, periods, 2).V, K, 0, k), 1e-10, "DK");
    expect(fit.absorber.maxIterations).toBeGreaterThan(1); // unbalanced: conjugate gradients needed several steps
  });

  test("two keys on a graph with two components (Grunfeld firms 0–4 in years 0–9, 5–9 in 10–19): a = 10 + 20 − 2, slopes and HC1 as the indicator fit", () => {
    const c = byName("grunfeld_twoway");
    const rows = c.y.map((_, i) => i).filter((i) => (c.keys.firm[i] < 5) === (c.keys.year[i] < 10));
    const { fit, model, names } = absorbedModel(c, ["firm", "year"], rows);
    expect(fit.absorber.components).toBe(2);
    expect(fit.absorbed).toBe(28);
    expect(fit.dfResid).toBe(100 - 2 - 28);
    const pick = (v: number[]) => rows.map((i) => v[i]);
    const yearCols = indicators(pick(c.keys.year), false).filter((_, t) => t !== 0 && t !== 10); // one year per component is redundant
    const full = [...names.map((v) => Float64Array.from(pick(c.x[v]))), ...indicators(pick(c.keys.firm), false), ...yearCols];
    const qr = leastSquares(full, Float64Array.from(pick(c.y))).qr ?? noDep();
    const K = full.length;
    expect(K - 2).toBe(28);
    relClose(fit.coef, qr.coef.slice(0, 2), 1e-10, "slopes");
    const r = Int32Array.from({ length: qr.n }, (_, i) => i + 1);
    relClose(diag(panelHc(model, "HC1").V, 2), diag(originalUnits(hcCovariance(leastSquaresInput(full, qr, r), "HC1", null).V, qr.scale, 1), K, 0, 2), 1e-10, "HC1");
  });

  test("demeaning in place gives the same column as into a new array (two keys, unbalanced)", () => {
    const e = byName("empluk_twoway");
    const prep = prepareAbsorption(["firm", "year"].map((k) => ({ name: k, codes: Int32Array.from(e.keys[k]) })), null);
    const x = Float64Array.from(e.x.lwage);
    const copy = prep.absorber.demean(x);
    expect(prep.absorber.demean(x, x)).toBe(x);
    expect(Array.from(x)).toEqual(Array.from(copy));
  });

  test("a balanced two-way panel separates in one conjugate-gradient step", () => {
    const { fit } = absorbedModel(byName("grunfeld_twoway"), ["firm", "year"]);
    expect(fit.absorber.maxIterations).toBe(1);
  });

  test("absorbing a key with one value is the plain fit with an intercept", () => {
    const c = byName("grunfeld_oneway");
    const names = Object.keys(c.x);
    const X = names.map((v) => Float64Array.from(c.x[v]));
    const y = Float64Array.from(c.y);
    const prep = prepareAbsorption([{ name: "all", codes: new Int32Array(y.length) }], null, null, { allowOneValue: true });
    const fit = fitAbsorbed(prep.absorber, y, X, names);
    const model: ScoreModel = { X: fit.X, qr: fit.qr, u: fit.u, absorbed: fit.absorbed, leverageOffset: prep.absorber.leverageOffset() };
    const full = [new Float64Array(y.length).fill(1), ...X];
    const qr = leastSquares(full, y).qr ?? noDep();
    relClose(fit.coef, qr.coef.slice(1), 1e-10, "slopes");
    const rows = Int32Array.from({ length: qr.n }, (_, i) => i + 1);
    for (const type of ["HC1", "HC2", "HC3"] as const) {
      relClose(diag(panelHc(model, type).V, 2), diag(originalUnits(hcCovariance(leastSquaresInput(full, qr, rows), type, null).V, qr.scale, 1), 3, 1, 2), 1e-10, type);
    }
    relClose(diag(panelClassical(model).V, 2), diag(originalUnits(classicalCovariance(leastSquaresInput(full, qr, Int32Array.from({ length: qr.n }, (_, i) => i + 1))), qr.scale, 1), 3, 1, 2), 1e-10, "classical");
  });
});

describe("row order does not change results", () => {
  test("Grunfeld two-way: slopes, HC1, two-way cluster and DK after shuffling rows; HAC after shuffling units", () => {
    const c = byName("grunfeld_twoway");
    const a = absorbedModel(c, ["firm", "year"]);
    const rng = new Rng(9);
    const order = Array.from({ length: c.y.length }, (_, i) => i);
    for (let i = order.length - 1; i > 0; i--) {
      const j = Math.floor(rng.next() * (i + 1));
      [order[i], order[j]] = [order[j], order[i]];
    }
    const b = absorbedModel(c, ["firm", "year"], order);
    relClose(b.fit.coef, a.fit.coef, 1e-12, "slopes");
    relClose(diag(panelHc(b.model, "HC1").V, 2), diag(panelHc(a.model, "HC1").V, 2), 1e-11, "HC1");
    const cl = (m: ReturnType<typeof absorbedModel>) => [0, 1].map((j) => ({ name: m.keys[j].name, codes: m.keys[j].codes }));
    relClose(diag(clusterCovariance(b.model, cl(b), 29).V, 2), diag(clusterCovariance(a.model, cl(a), 29).V, 2), 1e-11, "cluster");
    relClose(diag(driscollKraay(b.model, b.periods, 2).V, 2), diag(driscollKraay(a.model, a.periods, 2).V, 2), 1e-11, "DK");
    // units reordered as whole blocks, each unit's rows kept in time order
    const firms = [3, 7, 0, 9, 1, 5, 8, 2, 6, 4];
    const blocks = firms.flatMap((f) => c.keys.firm.map((g, i) => (g === f ? i : -1)).filter((i) => i >= 0));
    const d = absorbedModel(c, ["firm", "year"], blocks);
    const units = (m: ReturnType<typeof absorbedModel>) => m.keys[0].codes;
    relClose(diag(panelHac(d.model, units(d), 2).V, 2), diag(panelHac(a.model, units(a), 2).V, 2), 1e-11, "HAC within");
  });
});

test("PPML with two keys: row order does not change the slopes or HC1 (Grunfeld inv)", () => {
  const c = byName("grunfeld_twoway");
  const names = Object.keys(c.x);
  const run = (rows: number[]) => {
    const pick = (v: number[]) => Float64Array.from(rows, (i) => v[i]);
    const fit = ppmlAbsorbed({
      y: Float64Array.from(rows, (i) => Math.exp(c.y[i])),
      X: names.map((v) => pick(c.x[v])),
      names,
      yName: "inv",
      keys: ["firm", "year"].map((k) => ({ name: k, codes: Int32Array.from(rows, (i) => c.keys[k][i]) })),
    });
    return { coef: fit.coef, hc1: diag(panelHc(fit.scores, "HC1").V, 2) };
  };
  const rows = c.y.map((_, i) => i);
  const rng = new Rng(4);
  const shuffled = [...rows];
  for (let i = shuffled.length - 1; i > 0; i--) {
    const j = Math.floor(rng.next() * (i + 1));
    [shuffled[i], shuffled[j]] = [shuffled[j], shuffled[i]];
  }
  const a = run(rows);
  const b = run(shuffled);
  relClose(b.coef, a.coef, 1e-10, "PPML slopes");
  relClose(b.hc1, a.hc1, 1e-9, "PPML HC1");
});

describe("singletons and the graph of two keys", () => {
  test("singletons are left out repeatedly until none remain (a cascade, checked by hand)", () => {
    // rows (A, B): (0,0) (0,0) (0,1) (1,1) (1,2) (2,2): A=2 occurs once → row 6 out; then B=2 once → row 5;
    // then A=1 once → row 4; then B=1 once → row 3; rows 1 and 2 remain.
    const r = dropSingletons([Int32Array.from([0, 0, 0, 1, 1, 2]), Int32Array.from([0, 0, 1, 1, 2, 2])]);
    expect(Array.from(r.keep)).toEqual([1, 1, 0, 0, 0, 0]);
    expect(r.dropped).toBe(4);
    expect(r.rounds).toBe(4);
  });
  test("a singleton fits exactly: the slopes without it are unchanged (EmplUK, one firm cut to one row)", () => {
    const c = byName("empluk_oneway");
    const firm0 = c.keys.firm.map((g, i) => (g === 0 ? i : -1)).filter((i) => i >= 0);
    const rows = c.y.map((_, i) => i).filter((i) => c.keys.firm[i] !== 0 || i === firm0[0]);
    const withSingleton = absorbedModel(c, ["firm"], rows);
    expect(withSingleton.prep.singletons).toBe(1);
    const without = absorbedModel(c, ["firm"], rows.slice(1));
    relClose(withSingleton.fit.coef, without.fit.coef, 1e-12, "slopes");
    expect(withSingleton.fit.n).toBe(without.fit.n);
  });
  test("connected components: {A0, A1, B0, B1} and {A2, B2} give C = 2 and a = 3 + 3 − 2", () => {
    const A = Int32Array.from([0, 0, 1, 2]);
    const B = Int32Array.from([0, 1, 0, 2]);
    expect(connectedComponents(A, 3, B, 3)).toBe(2);
    const ab = new Absorber([{ name: "A", codes: A, levels: 3 }, { name: "B", codes: B, levels: 3 }], null);
    expect(ab.absorbed).toBe(4);
  });
  test("nested keys: state within region counts region's absorbed parameters as nested", () => {
    const ab = new Absorber([{ name: "Store", codes: Int32Array.from([0, 0, 1, 1, 2, 2]), levels: 3 }], null);
    expect(ab.nestedAbsorbed([Int32Array.from([5, 5, 5, 5, 7, 7])])).toBe(3);
    expect(ab.nestedAbsorbed([Int32Array.from([5, 7, 5, 5, 7, 7])])).toBe(0);
  });
});

test("time codes: numbers ascending, text in order of first appearance", () => {
  expect(Array.from(timeCodes([2019, 2017, 2018, 2017]).codes)).toEqual([2, 0, 1, 0]);
  expect(Array.from(timeCodes(["Q3", "Q1", "Q3", "Q2"]).codes)).toEqual([0, 1, 0, 2]);
});

describe("a negative two-way cluster variance is reported, not repaired", () => {
  test("hand example: V = −1/3", () => {
    // x = 1 in 4 rows, y = 3, 1, 1, 3: b = 2, e = 1, −1, −1, 1, so the scores x·e are 1, −1, −1, 1.
    // Clusters A {1,2},{3,4} and B {1,3},{2,4}: every cluster's score sum is 0; the 4 pairs are the
    // rows, Σ s² = 4 with factor 4/3. B = (XᵀX)⁻¹ = 1/4, p = 1, (n−1)/(n−p) = 1:
    // V = (1/4)·(0 + 0 − (4/3)·4)·(1/4) = −1/3.
    const x = new Float64Array(4).fill(1);
    const qr = leastSquares([x], Float64Array.from([3, 1, 1, 3])).qr ?? noDep();
    const m: ScoreModel = { X: [x], qr, u: qr.resid, absorbed: 0, leverageOffset: new Float64Array(4) };
    const r = clusterCovariance(m, [{ name: "A", codes: Int32Array.from([0, 0, 1, 1]) }, { name: "B", codes: Int32Array.from([0, 1, 0, 1]) }]);
    expect(r.V[0]).toBeCloseTo(-1 / 3, 14);
    expect(r.negative).toEqual([0]);
    expect(r.df).toBe(1);
    expect(Number.isNaN(panelStandardErrors(r, 1)[0])).toBe(true);
    expect(negativeVarianceReason("Price")).toMatch(/two-way clustered variance of Price came out negative/);
  });
});

describe("problems in the analyst's words", () => {
  const c = byName("grunfeld_oneway");
  const names = Object.keys(c.x);
  const X = names.map((v) => Float64Array.from(c.x[v]));
  const y = Float64Array.from(c.y);
  const firm = { name: "Store", codes: Int32Array.from(c.keys.firm) };
  const expectProblem = (f: () => unknown, re: RegExp) => {
    let e: unknown;
    try {
      f();
    } catch (err) {
      e = err;
    }
    expect(e).toBeInstanceOf(ElxProblem);
    expect((e as Error).message).toMatch(re);
  };
  test("a key with one value", () => {
    expectProblem(() => prepareAbsorption([{ name: "Region", codes: new Int32Array(10) }], null), /Region has the same value in every row used, so absorbing it is only an intercept: remove it from absorb=/);
  });
  test("every value a singleton", () => {
    expectProblem(() => prepareAbsorption([{ name: "Week", codes: Int32Array.from({ length: 6 }, (_, i) => i) }], null), /every value of Week occurs in only one row \(6 singletons\)/);
  });
  test("a regressor constant within every absorbed group is named as collinear with the fixed effects", () => {
    const means = new Float64Array(10);
    c.keys.firm.forEach((g, i) => (means[g] += X[0][i] / 20));
    const firmLevel = Float64Array.from(c.keys.firm, (g) => means[g]);
    const prep = prepareAbsorption([firm], null);
    expectProblem(() => fitAbsorbed(prep.absorber, y, [X[0], firmLevel], ["Price", "Store size"]), /Store size does not vary within Store \(collinear with the fixed effects\)/);
  });
  test("two keys: a regressor that is a store part plus a week part is named as collinear with the fixed effects", () => {
    const g = byName("grunfeld_twoway");
    const sum = Float64Array.from(g.keys.firm, (f, i) => 0.1 * f + Math.sin(g.keys.year[i]));
    const prep = prepareAbsorption([{ name: "Store", codes: Int32Array.from(g.keys.firm) }, { name: "Week", codes: Int32Array.from(g.keys.year) }], null);
    expectProblem(() => fitAbsorbed(prep.absorber, Float64Array.from(g.y), [Float64Array.from(g.x.lvalue), sum], ["Price", "Promo"]), /Promo is a sum of a Week part and a Store part \(collinear with the fixed effects\)/);
  });
  test("HC2/HC3 with two keys point to cluster or HC1", () => {
    const { model } = absorbedModel(byName("grunfeld_twoway"), ["firm", "year"]);
    expectProblem(() => panelHc(model, "HC2"), /se=HC2 needs each row's leverage, which two absorbed fixed effects do not give exactly: use se=cluster .* or se=HC1/);
  });
  test("zero, negative and missing weights are counted for the caller", () => {
    const r = usableWeights(Float64Array.from([1, 0, -2, NaN, 3, Infinity]));
    expect(Array.from(r.keep)).toEqual([1, 0, 0, 0, 1, 0]);
    expect(r.leftOut).toBe(4);
    expect(r.leftOutRows).toEqual([1, 2, 3, 5]);
  });
  test("DK without periods", () => {
    const { model } = absorbedModel(c, ["firm"]);
    expectProblem(() => driscollKraay(model, null), /se=DK needs the period of each row: name the week or quarter column in time=/);
  });
  test("panel units that interleave name the first row where a unit comes back", () => {
    const { model } = absorbedModel(c, ["firm"]);
    const units = Int32Array.from(c.keys.firm);
    units[25] = 0; // firm 0 again inside firm 1's rows (row 26)
    expectProblem(() => panelHac(model, units, 2, "store"), /row 26 returns to a store seen before; sort the data by store and then by time/);
  });
  test("two keys that do not separate within the step limit are refused, not returned half-done", () => {
    const e = byName("empluk_twoway");
    const prep = prepareAbsorption(["firm", "year"].map((k) => ({ name: k === "firm" ? "Store" : "Week", codes: Int32Array.from(e.keys[k]) })), null);
    prep.absorber.iterationLimit = 1;
    expectProblem(() => prep.absorber.demean(Float64Array.from(e.x.lwage)), /the fixed effects Store and Week could not be separated to full accuracy in 1 rounds .* absorb only one of them/);
  });
  test("PPML: a regressor constant within every store is named as collinear with the fixed effects", () => {
    const means = new Float64Array(10);
    c.keys.firm.forEach((g, i) => (means[g] += X[0][i] / 20));
    const firmLevel = Float64Array.from(c.keys.firm, (g) => means[g]);
    expectProblem(() => ppmlAbsorbed({ y: Float64Array.from(c.y, Math.exp), X: [X[0], firmLevel], names: ["Price", "Store size"], yName: "Units", keys: [firm] }), /Store size does not vary within Store in the rows PPML can use \(collinear with the fixed effects\)/);
  });
  test("PPML with fixed effects refuses HC3 with the estimator's reason", () => {
    const fit = ppmlAbsorbed({ y: Float64Array.from(c.y, Math.exp), X, names, yName: "Units", keys: [firm] });
    expectProblem(() => panelHc(fit.scores, "HC3"), /se=HC2 and se=HC3 are not offered with estimator=ppml and fixed effects: use se=HC1 or se=cluster/);
  });
  test("one cluster", () => {
    const { model } = absorbedModel(c, ["firm"]);
    expectProblem(() => clusterCovariance(model, [{ name: "Chain", codes: new Int32Array(200) }]), /Chain has one value in every row used, so there is only one cluster/);
  });
  test("PPML: a store whose sales are zero in every week is left out and counted", () => {
    // Grunfeld's inv with firm 3's values set to zero: the arithmetic of the leaving-out rule only
    const inv = Float64Array.from(c.y, (v, i) => (c.keys.firm[i] === 3 ? 0 : Math.exp(v)));
    const fit = ppmlAbsorbed({ y: inv, X, names, yName: "Units", keys: [firm] });
    expect(fit.allZeroValues).toBe(1);
    expect(fit.allZeroRows).toBe(20);
    expect(fit.n).toBe(180);
  });
});
