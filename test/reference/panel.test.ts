/**
 * Panels, called directly on the engine's arrays (functions/engine/absorb.ts, panelCovariance.ts,
 * ppmlAbsorbed.ts): fixed effects absorbed one and two ways, weights, classical and HC0–HC3 errors of
 * the indicator regression, cluster-robust one- and two-way, HAC within panel units, Driscoll–Kraay,
 * and PPML with fixed effects.
 *
 * Source of every expected number: test/reference/panel.json, written by
 * `Rscript test/reference/scripts/panel.R` (run from the repository root) with R 4.2.2, sandwich 3.0.2,
 * plm 2.6.2, estimatr 1.0.0 and MASS 7.3.58.2 (versions and commands recorded in the JSON), on
 * plm::Grunfeld, plm::Produc, plm::EmplUK (unbalanced) and MASS::epil:
 *   slopes: coef(lm(y ~ x + factor(key1) [+ factor(key2)], weights = w)) (also equal to plm's within
 *     estimator, checked in the script);
 *   classical sqrt(diag(vcov(m))); HC0..HC3 sandwich::vcovHC(m, type) (HC2/HC3 one key only);
 *   cluster sandwich::vcovCL(m, cluster = ~c1 [+ c2], type = "HC0", cadjust = TRUE) · (n−1)/(n−p),
 *     p = k + a − a_n (vcovCL's type = "HC1" equals it when no key is nested in a cluster variable);
 *   HAC within units sandwich::vcovPL(m, cluster = ~unit, order.by = ~time, aggregate = FALSE,
 *     kernel = "Bartlett", lag = L, adjust = FALSE) (equal to plm::vcovNW on the within model);
 *   Driscoll–Kraay sandwich::vcovPL(..., aggregate = TRUE, ...) (equal to plm::vcovSCC(type = "HC0"));
 *   PPML: glm(y ~ x + factor(key), quasipoisson) refit from its converged coefficients, vcovHC HC0/HC1,
 *     vcovCL HC0 · (n−1)/(n−p).
 *
 * Tolerances: slopes (OLS and PPML) 1e-10 relative; every standard error and variance 1e-9 relative;
 * R² and the PPML deviance 1e-10; weighted means 1e-12. The worst relative error per quantity is
 * printed at the end (at the time of writing: slopes 1.3e-13, OLS errors 4.5e-11, PPML errors 1.6e-10
 * at worst).
 */
import * as fs from "fs";
import * as path from "path";
import { prepareAbsorption, fitAbsorbed, keepRows, weightedMean, type FixedEffectKey } from "../../functions/engine/absorb";
import { clusterCovariance, driscollKraay, panelClassical, panelHc, panelHac, type ScoreModel } from "../../functions/engine/panelCovariance";
import { ppmlAbsorbed } from "../../functions/engine/ppmlAbsorbed";
import { ElxProblem } from "../../functions/engine/problems";

interface ClusterRef {
  clusters: string[];
  codes: Record<string, number[]>;
  nested_absorbed: number;
  p: number;
  groups: number[];
  df: number;
  variance: number[];
  se: number[];
}
interface OlsCase {
  name: string;
  source: string;
  n: number;
  k: number;
  absorbed: number;
  y: number[];
  x: Record<string, number[]>;
  keys: Record<string, number[]>;
  weights: number[] | null;
  coefficients: number[];
  se: Record<string, number[]>;
  cluster: Record<string, ClusterRef>;
  unit: string;
  time: string;
  period_codes: number[];
  default_hac_lags: number;
  default_dk_lags: number;
  hac_within: Record<string, number[]>;
  driscoll_kraay: Record<string, number[]>;
  within_r_squared: number;
  r_squared: number;
  means: number[];
  y_mean: number;
  plm_within_r_squared?: number;
}
interface PpmlCase {
  name: string;
  source: string;
  rows_given: number;
  n: number;
  k: number;
  absorbed: number;
  all_zero_rows: number;
  all_zero_values: number;
  y: number[];
  x: Record<string, number[]>;
  keys: Record<string, number[]>;
  weights: number[] | null;
  coefficients: number[];
  deviance: number;
  se: Record<string, number[]>;
  cluster: Record<string, ClusterRef>;
}

const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "panel.json"), "utf8")) as { ols: OlsCase[]; ppml: PpmlCase[] };

const worst = new Map<string, { rel: number; where: string }>();
function close(actual: number, expected: number, rel: number, group: string, where: string): void {
  if (!Number.isFinite(actual)) throw new Error(`${where}: got ${actual}, R gives ${expected}`);
  const r = Math.abs(actual - expected) / Math.max(Math.abs(expected), 1e-300);
  const w = worst.get(group);
  if (!w || r > w.rel) worst.set(group, { rel: r, where });
  if (!(r <= rel)) throw new Error(`${where}: got ${actual}, R gives ${expected} (rel ${r.toExponential(3)}; tolerance ${rel})`);
}
function closeAll(actual: ArrayLike<number>, expected: number[], rel: number, group: string, where: string): void {
  expect(actual.length).toBe(expected.length);
  expected.forEach((e, j) => close(actual[j], e, rel, group, `${where}[${j}]`));
}
function se(V: Float64Array, k: number): number[] {
  return Array.from({ length: k }, (_, j) => Math.sqrt(V[j * k + j]));
}
afterAll(() => {
  const lines = [...worst.entries()].map(([k, v]) => `${k.padEnd(28)} ${v.rel.toExponential(2)}  (${v.where})`);
  console.log(`Panels against R, worst relative error:\n${lines.join("\n")}`);
});

const SLOPE = 1e-10;
const ERR = 1e-9;

describe.each(ref.ols.map((c) => [c.name, c] as const))("OLS with fixed effects: %s (R lm with factor() terms, sandwich, plm)", (_name, c) => {
  const names = Object.keys(c.x);
  const X = names.map((v) => Float64Array.from(c.x[v]));
  const y = Float64Array.from(c.y);
  const keys: FixedEffectKey[] = Object.entries(c.keys).map(([name, codes]) => ({ name, codes: Int32Array.from(codes) }));
  const w = c.weights ? Float64Array.from(c.weights) : null;
  const prep = prepareAbsorption(keys, w);
  const fit = fitAbsorbed(prep.absorber, y, X, names);
  const model: ScoreModel = { X: fit.X, qr: fit.qr, u: fit.u, absorbed: fit.absorbed, leverageOffset: prep.absorber.leverageOffset() };

  test("no singletons; absorbed parameters a = m$rank − k", () => {
    expect(prep.singletons).toBe(0);
    expect(fit.n).toBe(c.n);
    expect(fit.absorbed).toBe(c.absorbed);
  });
  test("slopes equal lm with indicator columns (1e-10)", () => {
    closeAll(fit.coef, c.coefficients, SLOPE, "slopes", `${c.name} coef`);
  });
  test("R² of the full model and within R² (1e-10)", () => {
    close(fit.rSquared, c.r_squared, 1e-10, "R²", `${c.name} R²`);
    close(fit.withinRSquared, c.within_r_squared, 1e-10, "within R²", `${c.name} within R²`);
    if (c.plm_within_r_squared !== undefined) close(fit.withinRSquared, c.plm_within_r_squared, 1e-10, "within R²", `${c.name} plm rsq`);
  });
  test("classical and HC errors equal vcov / sandwich::vcovHC of the indicator regression (1e-9)", () => {
    for (const [type, values] of Object.entries(c.se)) {
      const V = type === "classical" ? panelClassical(model).V : panelHc(model, type as "HC0" | "HC1" | "HC2" | "HC3").V;
      closeAll(se(V, c.k), values, ERR, type, `${c.name} ${type}`);
    }
    if (keys.length === 2) {
      expect(() => panelHc(model, "HC3")).toThrow(/se=cluster .* or se=HC1/);
    }
  });
  test("cluster-robust, one- and two-way, with the nested-effects count (1e-9)", () => {
    for (const [label, cl] of Object.entries(c.cluster)) {
      const ck = cl.clusters.map((name) => ({ name, codes: Int32Array.from(cl.codes[name]) }));
      const an = prep.absorber.nestedAbsorbed(ck.map((k) => k.codes));
      expect(an).toBe(cl.nested_absorbed);
      const r = clusterCovariance(model, ck, an);
      expect(r.df).toBe(cl.df);
      expect(r.groups?.slice(0, cl.groups.length)).toEqual(cl.groups);
      const k = c.k;
      closeAll(Array.from({ length: k }, (_, j) => r.V[j * k + j]), cl.variance, ERR, cl.clusters.length === 1 ? "cluster" : "cluster two-way", `${c.name} cluster ${label}`);
    }
  });
  test("HAC within panel units equals vcovPL(aggregate = FALSE) (1e-9)", () => {
    const units = Int32Array.from(c.keys[c.unit]);
    for (const [L, values] of Object.entries(c.hac_within)) {
      const r = panelHac(model, units, Number(L));
      closeAll(se(r.V, c.k), values, ERR, "HAC within", `${c.name} HAC L=${L}`);
    }
    expect(panelHac(model, units).lags).toBe(c.default_hac_lags);
  });
  test("Driscoll–Kraay equals vcovPL(aggregate = TRUE) and plm::vcovSCC (1e-9)", () => {
    const periods = Int32Array.from(c.period_codes);
    for (const [L, values] of Object.entries(c.driscoll_kraay)) {
      const r = driscollKraay(model, periods, Number(L));
      closeAll(se(r.V, c.k), values, ERR, "Driscoll–Kraay", `${c.name} DK L=${L}`);
    }
    expect(driscollKraay(model, periods).lags).toBe(c.default_dk_lags);
  });
  test("weighted means of the rows used equal weighted.mean (1e-12)", () => {
    names.forEach((v, j) => close(weightedMean(X[j], w), c.means[j], 1e-12, "weighted means", `${c.name} mean ${v}`));
    close(weightedMean(y, w), c.y_mean, 1e-12, "weighted means", `${c.name} mean y`);
  });
});

describe.each(ref.ppml.map((c) => [c.name, c] as const))("PPML with fixed effects: %s (R glm quasipoisson with factor() terms, sandwich)", (_name, c) => {
  const names = Object.keys(c.x);
  const keys: FixedEffectKey[] = Object.entries(c.keys).map(([name, codes]) => ({ name, codes: Int32Array.from(codes) }));
  const weights = c.weights ? Float64Array.from(c.weights) : null;
  const fit = ppmlAbsorbed({ y: Float64Array.from(c.y), X: names.map((v) => Float64Array.from(c.x[v])), names, yName: "y", keys, weights });

  test("values with y = 0 in every row are left out and counted", () => {
    expect(fit.allZeroRows).toBe(c.all_zero_rows);
    expect(fit.allZeroValues).toBe(c.all_zero_values);
    expect(fit.n).toBe(c.n);
    expect(fit.absorbed).toBe(c.absorbed);
  });
  test("slopes equal glm with factor() terms (1e-10) and the deviance (1e-10)", () => {
    closeAll(fit.coef, c.coefficients, SLOPE, "PPML slopes", `${c.name} coef`);
    close(fit.deviance, c.deviance, 1e-10, "PPML deviance", `${c.name} deviance`);
  });
  test("HC0, HC1 (n/(n − p_all)) and cluster (1e-9)", () => {
    for (const type of ["HC0", "HC1"] as const) closeAll(se(panelHc(fit.scores, type).V, c.k), c.se[type], ERR, `PPML ${type}`, `${c.name} ${type}`);
    for (const [label, cl] of Object.entries(c.cluster)) {
      const ck = cl.clusters.map((name) => ({ name, codes: keepCodes(cl.codes[name], fit.keep) }));
      const an = fit.absorber.nestedAbsorbed(ck.map((k) => k.codes));
      expect(an).toBe(cl.nested_absorbed);
      const r = clusterCovariance(fit.scores, ck, an);
      const k = c.k;
      closeAll(Array.from({ length: k }, (_, j) => r.V[j * k + j]), cl.variance, ERR, "PPML cluster", `${c.name} cluster ${label}`);
    }
  });
});

function keepCodes(codes: number[], keep: Uint8Array): Int32Array {
  return Int32Array.from(keepRows(Float64Array.from(codes), keep));
}

test("problems are ElxProblem values, not exceptions of another kind", () => {
  const c = ref.ols[0];
  const keys: FixedEffectKey[] = [{ name: "Store", codes: new Int32Array(c.n) }];
  expect(() => prepareAbsorption(keys, null)).toThrow(ElxProblem);
});
