/**
 * Panels through the host's door (dist/functions.js: ELX.FIT, ELX.ELASTICITIES, ELX.SUMMARY,
 * ELX.PREDICT with options text): fixed effects one- and two-way, clusters one- and two-way, HAC
 * within panels, Driscoll–Kraay, weights and PPML with fixed effects, on the sheets an analyst would
 * lay out (y; x with the regressors and the key columns beside them).
 *
 * Source of every expected number: test/reference/panel.json, written by
 * `Rscript test/reference/scripts/panel.R` (R 4.2.2; sandwich, plm, estimatr and MASS as recorded in
 * the JSON) on plm::Grunfeld, plm::Produc, plm::EmplUK (unbalanced) and MASS::epil:
 *   slopes coef(lm(y ~ x + factor(key1) [+ factor(key2)], weights = w));
 *   classical vcov(m); HC0..HC3 sandwich::vcovHC(m, type) (HC2/HC3 one key only);
 *   cluster sandwich::vcovCL(m, cluster = ~c1 [+ c2], type = "HC0", cadjust = TRUE) · (n−1)/(n−p);
 *   HAC within units sandwich::vcovPL(m, cluster = ~unit, order.by = ~time, aggregate = FALSE,
 *     kernel = "Bartlett", lag = L, adjust = FALSE); Driscoll–Kraay the same with aggregate = TRUE
 *     (equal to plm::vcovSCC(type = "HC0"), checked in the script);
 *   R² summary(m)$r.squared; within R² 1 − RSS/Σw·ỹ² (ỹ: residuals of y on the fixed effects alone);
 *   PPML glm(y ~ x + factor(key), quasipoisson) with vcovHC HC0/HC1 and vcovCL HC0 · (n−1)/(n−p);
 *   PPML classical sqrt(diag(vcov(m))) of the quasipoisson glm (Pearson dispersion);
 *   PREDICT predict(lm(...), newdata) and predict(glm(...), newdata, type = "response");
 *   residual tests under fixed effects lmtest::bptest(m, ~ x, studentize = TRUE | FALSE), White as
 *     bptest with squares and cross-products, lmtest::resettest(m, power = 2:3, type = "fitted"),
 *     Jarque–Bera by its formula on residuals(m);
 *   weighted PPML without fixed effects glm(weights = w) with vcovHC, vcov and vcovCL(type = "HC1").
 * Identities (no external number): absorbing a key equals adding its indicator columns (factors=),
 * and the row order changes no result.
 *
 * Tolerances: slopes 1e-10 relative; every standard error 1e-9 relative; R² 1e-10; predictions 1e-10;
 * test statistics and p-values 1e-9.
 */
import * as fs from "fs";
import * as path from "path";
import { call, expectClose, HostError, loadFunctions, lookup } from "../harness/loadFunctions";

const reg = loadFunctions();
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "panel.json"), "utf8"));

interface ClusterRef { clusters: string[]; codes: Record<string, number[]>; groups: number[]; df: number; variance: number[]; se: number[] }
interface Case {
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
  unit?: string;
  time?: string;
  period_codes?: number[];
  hac_within?: Record<string, number[]>;
  driscoll_kraay?: Record<string, number[]>;
  r_squared?: number;
  within_r_squared?: number;
  all_zero_rows?: number;
  all_zero_values?: number;
  rows_given?: number;
}
const OLS: Case[] = ref.ols;
const PPML: Case[] = ref.ppml;

/**
 * y and x as a sheet: x holds the regressors, the keys, the role columns named in `roles` (cluster,
 * panel and time columns; every column of x must have a role or be a regressor), and w.
 */
function sheet(c: Case, order?: number[], roles: string[] = []): { Y: unknown[][]; X: unknown[][] } {
  const cols: [string, number[]][] = Object.entries(c.x);
  const add = (name: string, v: number[]) => {
    if (!cols.some(([n]) => n === name)) cols.push([name, v]);
  };
  // the time column carries the periods in ascending order (the same grouping as the key codes)
  const codesOf = (name: string): number[] => {
    if (name === c.time && c.period_codes) return c.period_codes;
    if (c.keys[name]) return c.keys[name];
    for (const cl of Object.values(c.cluster)) if (cl.codes[name]) return cl.codes[name];
    throw new Error(`no codes for ${name}`);
  };
  for (const name of Object.keys(c.keys)) add(name, codesOf(name));
  for (const name of roles) add(name, codesOf(name));
  if (c.weights) add("w", c.weights);
  const n = c.y.length;
  const idx = order ?? Array.from({ length: n }, (_, i) => i);
  const Y: unknown[][] = [["y"], ...idx.map((i) => [c.y[i]])];
  const X: unknown[][] = [cols.map(([name]) => name), ...idx.map((i) => cols.map(([, v]) => v[i]))];
  return { Y, X };
}

function table(v: unknown): unknown[][] {
  if (v instanceof HostError) throw new Error(`error value ${v.code}: ${v.message}`);
  return v as unknown[][];
}

function errorOf(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v).slice(0, 300)}`);
  return v;
}

function baseOptions(c: Case, estimator = "ols"): string {
  const absorb = Object.keys(c.keys).join(",");
  return `form=level-level; absorb=${absorb}${c.weights ? "; weights=w" : ""}${estimator === "ppml" ? "; estimator=ppml" : ""}`;
}

/** FIT's coefficient and standard-error columns, the header of the latter. */
function fitCase(c: Case, opts: string, order?: number[]): { b: number[]; se: unknown[]; header: string; t: unknown[][] } {
  const roles: string[] = [];
  for (const m of opts.matchAll(/(?:cluster|panel|time)=([^;]+)/g)) if (!/^(cluster|DK|HAC)$/.test(m[1].trim())) roles.push(...m[1].split(",").map((v) => v.trim()));
  const { Y, X } = sheet(c, order, roles);
  const t = table(call(reg, "FIT", Y, X, opts));
  return { b: t.slice(1).map((r) => r[2] as number), se: t.slice(1).map((r) => r[3]), header: t[0][3] as string, t };
}

function expectAll(actual: unknown[], expected: number[], rel: number, what: string): void {
  expect(actual.length).toBe(expected.length);
  expected.forEach((e, j) => expectClose(actual[j], e, rel, 0, `${what}[${j}]`));
}

describe.each(OLS.map((c) => [c.name, c] as const))("%s through the cells", (_name, c) => {
  const base = baseOptions(c);

  test(`slopes (1e-10) and classical, HC0..HC3 errors (1e-9): R lm + sandwich::vcovHC on ${c.source}`, () => {
    for (const [type, se] of Object.entries(c.se)) {
      const f = fitCase(c, `${base}; se=${type}`);
      expectAll(f.b, c.coefficients, 1e-10, `${c.name} slopes`);
      expectAll(f.se, se, 1e-9, `${c.name} ${type}`);
      expect(f.t.map((r) => r[0]).slice(1)).toEqual(Object.keys(c.x)); // no intercept shown
    }
  });

  test(`cluster one- and two-way (1e-9), header names the clusters: sandwich::vcovCL on ${c.source}`, () => {
    for (const cl of Object.values(c.cluster)) {
      const f = fitCase(c, `${base}; cluster=${cl.clusters.join(",")}`);
      const negative = cl.variance.map((v) => v < 0);
      cl.se.forEach((s, j) => {
        if (negative[j]) expect(errorOf(f.se[j]).message).toMatch(/came out negative/);
        else expectClose(f.se[j], s, 1e-9, 0, `${c.name} cluster ${cl.clusters.join("+")}[${j}]`);
      });
      if (cl.clusters.length === 1) expect(f.header).toBe(`Std. error (cluster: ${cl.clusters[0]}, ${cl.groups[0]} clusters)`);
      else expect(f.header).toBe(`Std. error (cluster: ${cl.clusters[0]} (${cl.groups[0]}) × ${cl.clusters[1]} (${cl.groups[1]}))`);
    }
  });

  test(`HAC within panels and Driscoll–Kraay (1e-9): sandwich::vcovPL on ${c.source}`, () => {
    for (const [L, se] of Object.entries(c.hac_within ?? {})) {
      expectAll(fitCase(c, `${base}; se=HAC; panel=${c.unit}; lags=${L}`).se, se, 1e-9, `${c.name} HAC within, ${L} lags`);
    }
    for (const [L, se] of Object.entries(c.driscoll_kraay ?? {})) {
      expectAll(fitCase(c, `${base}; se=DK; time=${c.time}; lags=${L}`).se, se, 1e-9, `${c.name} DK, ${L} lags`);
    }
  });

  test(`SUMMARY: R² of the full model and within R² (1e-10), absorbed parameters: R lm on ${c.source}`, () => {
    const { Y, X } = sheet(c);
    const s = table(call(reg, "SUMMARY", Y, X, `${base}; se=HC1`));
    expectClose(lookup(s, "R² (full model, fixed effects included)"), c.r_squared as number, 1e-10, 0, "R²");
    expectClose(lookup(s, "Within R² (after absorbing the fixed effects)"), c.within_r_squared as number, 1e-10, 0, "within R²");
    expect(lookup(s, "Absorbed parameters")).toBe(c.absorbed);
    expect(lookup(s, "Observations used")).toBe(c.n);
    expect(lookup(s, "Rows left out: singletons (a value in one row only)")).toBe(0);
  });

  test("ELASTICITIES under level-level at the means equal b·x̄/ȳ with the same clustered error ratio", () => {
    const cl = Object.values(c.cluster)[0];
    const { Y, X } = sheet(c, undefined, cl.clusters);
    const opts = `${base}; cluster=${cl.clusters.join(",")}`;
    const e = table(call(reg, "ELASTICITIES", Y, X, opts));
    const f = fitCase(c, opts);
    e.slice(1).forEach((r, j) => {
      const ratio = (r[2] as number) / f.b[j];
      if (cl.variance[j] >= 0) expectClose(r[3], (f.se[j] as number) * Math.abs(ratio), 1e-12, 0, "elasticity error");
    });
  });
});

describe.each(PPML.map((c) => [c.name, c] as const))("%s (PPML with fixed effects) through the cells", (_name, c) => {
  const base = baseOptions(c, "ppml");
  test(`slopes (1e-10), HC0 and HC1 (1e-9), z statistics: R glm(quasipoisson) + vcovHC on ${c.source}`, () => {
    for (const [type, se] of Object.entries(c.se)) {
      const f = fitCase(c, `${base}; se=${type}`);
      expectAll(f.b, c.coefficients, 1e-10, `${c.name} slopes`);
      expectAll(f.se, se, 1e-9, `${c.name} ${type}`);
      expect(f.t[0][4]).toBe("z");
    }
  });

  test(`cluster (1e-9): sandwich::vcovCL on ${c.source}`, () => {
    for (const cl of Object.values(c.cluster)) {
      const f = fitCase(c, `${base}; cluster=${cl.clusters.join(",")}`);
      cl.se.forEach((s, j) => {
        if (cl.variance[j] < 0) expect(errorOf(f.se[j]).message).toMatch(/came out negative/);
        else expectClose(f.se[j], s, 1e-9, 0, `${c.name} cluster ${cl.clusters.join("+")}[${j}]`);
      });
    }
  });

  test(`SUMMARY counts the values with y = 0 in every row and their rows (R script: ${c.all_zero_values} values, ${c.all_zero_rows} rows)`, () => {
    const { Y, X } = sheet(c);
    const s = table(call(reg, "SUMMARY", Y, X, base));
    expect(lookup(s, "Observations used")).toBe(c.n);
    expect(lookup(s, "Values left out: y = 0 in every row (no finite effect)")).toBe(c.all_zero_values);
    expect(lookup(s, "Rows left out: those values' rows")).toBe(c.all_zero_rows);
    expect(lookup(s, "Absorbed parameters")).toBe(c.absorbed);
  });
});

describe("PPML with fixed effects, classical errors: sqrt(diag(vcov(glm(inv ~ lvalue + lcapital + factor(firm), quasipoisson)))), plm::Grunfeld", () => {
  test("Pearson dispersion on n − k − a df (1e-9); SUMMARY's dispersion row equals summary(m)$dispersion (1e-9)", () => {
    const c = PPML.find((p) => p.name === "grunfeld_ppml_oneway") as Case;
    const f = fitCase(c, `${baseOptions(c, "ppml")}; se=classical`);
    expectAll(f.se, ref.ppml_classical.se, 1e-9, "classical");
    const { Y, X } = sheet(c);
    const s = table(call(reg, "SUMMARY", Y, X, baseOptions(c, "ppml")));
    expectClose(lookup(s, "Pearson dispersion"), ref.ppml_classical.dispersion, 1e-9, 0, "dispersion");
  });
});

describe("PREDICT under fixed effects: R predict(lm(y ~ x + factor(g) [+ factor(t)]), newdata) and predict(glm, type = \"response\") on plm::Grunfeld", () => {
  interface PredictCase { name: string; ppml: boolean; y: number[]; x: Record<string, number[]>; keys: Record<string, number[]>; new_x: Record<string, number[]>; new_keys: Record<string, number[]>; predicted: number[] }
  const cases: PredictCase[] = ref.predict;
  test.each(cases.map((p) => [p.name, p] as const))("%s (1e-10)", (_n, p) => {
    const names = [...Object.keys(p.x), ...Object.keys(p.keys)];
    const cols = [...Object.values(p.x), ...Object.values(p.keys)];
    const Y = [["y"], ...p.y.map((v) => [v])];
    const X = [names, ...p.y.map((_, i) => cols.map((c) => c[i]))];
    const newCols = [...Object.values(p.new_x), ...Object.values(p.new_keys)];
    const N = [names, ...p.predicted.map((_, i) => newCols.map((c) => c[i]))];
    const opts = `form=level-level; absorb=${Object.keys(p.keys).join(",")}${p.ppml ? "; estimator=ppml" : ""}`;
    const out = table(call(reg, "PREDICT", Y, X, N, opts));
    expectAll(out.slice(1).map((r) => r[0]), p.predicted, 1e-10, p.name);
  });

  test("a row whose absorbed value was not fitted gets its own error naming the key and value; the others still come", () => {
    const p: PredictCase = cases[0];
    const names = [...Object.keys(p.x), "firm"];
    const Y = [["y"], ...p.y.map((v) => [v])];
    const X = [names, ...p.y.map((_, i) => [p.x.lvalue[i], p.x.lcapital[i], p.keys.firm[i]])];
    const out = call(reg, "PREDICT", Y, X, [names, [7.5, 6.0, 0], [7.5, 6.0, 42]], "form=level-level; absorb=firm") as unknown[][];
    expectClose(out[1][0], p.predicted[0], 1e-10, 0, "seen firm");
    expect(errorOf(out[2][0]).message).toMatch(/new_x row 3: firm "42" was not among the rows fitted/);
    const missing = errorOf(call(reg, "PREDICT", Y, X, [names.slice(0, 2), [7.5, 6.0]], "form=level-level; absorb=firm"));
    expect(missing.message).toMatch(/new_x has no column firm/);
    const interval = errorOf(call(reg, "PREDICT", Y, X, [names, [7.5, 6.0, 0]], "form=level-level; absorb=firm; interval=mean"));
    expect(interval.message).toMatch(/interval=mean is not offered with absorb=/);
  });
});

describe("PREDICT with two keys in unconnected parts of the data (invented 8 rows: firms a, b in periods 1–2; c, d in 3–4)", () => {
  test("SUMMARY counts 2 connected components (a = 4 + 4 − 2); a pair across the parts is refused by name, a pair within one is predicted", () => {
    const Y = [["y"], [1], [2], [3], [4], [2], [3], [5], [4]];
    const X = [["x", "g", "t"], [1, "a", 1], [2, "a", 2], [1.5, "b", 1], [3, "b", 2], [1, "c", 3], [2.5, "c", 4], [1.2, "d", 3], [2.2, "d", 4]];
    const s = table(call(reg, "SUMMARY", Y, X, "form=level-level; absorb=g,t; se=HC1"));
    expect(lookup(s, "Connected components of the two keys")).toBe(2);
    expect(lookup(s, "Absorbed parameters")).toBe(6);
    const out = table(call(reg, "PREDICT", Y, X, [["x", "g", "t"], [1, "a", 2], [1, "a", 3]], "form=level-level; absorb=g,t"));
    expect(typeof out[1][0]).toBe("number");
    expect(errorOf(out[2][0]).message).toMatch(/^new_x row 3: g "a" and t "3" lie in parts of the data that share no row/);
  });
});

describe("identities through the cells (Grunfeld, plm::Grunfeld data)", () => {
  const c = OLS.find((o) => o.name === "grunfeld_oneway") as Case;
  const c2 = OLS.find((o) => o.name === "grunfeld_twoway") as Case;

  test("absorb=firm equals the indicator columns of factors=firm: slopes and classical, HC0, HC1 and year-clustered errors (1e-10)", () => {
    for (const se of ["classical", "HC0", "HC1", "HC3", "cluster; cluster=year"]) {
      const a = fitCase(c, `form=level-level; absorb=firm; se=${se}`);
      const f = fitCase(c, `form=level-level; factors=firm; se=${se}`);
      // factors=: the intercept first, then the slopes, then the indicator terms
      expectAll(a.b, f.b.slice(1, 3), 1e-10, `slopes ${se}`);
      expectAll(a.se, f.se.slice(1, 3) as number[], 1e-10, `errors ${se}`);
    }
  });

  test("two-way: absorb=firm,year equals factors=firm,year (slopes, classical and HC1 1e-10)", () => {
    for (const se of ["classical", "HC1"]) {
      const a = fitCase(c2, `form=level-level; absorb=firm,year; se=${se}`);
      const f = fitCase(c2, `form=level-level; factors=firm,year; se=${se}`);
      expectAll(a.b, f.b.slice(1, 3), 1e-10, `slopes ${se}`);
      expectAll(a.se, f.se.slice(1, 3) as number[], 1e-10, `errors ${se}`);
    }
  });

  test("the row order changes no result (slopes, HC1, two-way clusters, DK; SUMMARY's R²) to 1e-10", () => {
    const n = c2.y.length;
    // a fixed shuffle (multiplicative step coprime with n)
    const order = Array.from({ length: n }, (_, i) => (i * 37 + 11) % n);
    expect(new Set(order).size).toBe(n);
    for (const opts of ["se=HC1", "cluster=firm,year", "se=DK; time=year"]) {
      const a = fitCase(c2, `form=level-level; absorb=firm,year; ${opts}`);
      const b = fitCase(c2, `form=level-level; absorb=firm,year; ${opts}`, order);
      expectAll(b.b, a.b, 1e-10, `slopes ${opts}`);
      expectAll(b.se, a.se as number[], 1e-10, `errors ${opts}`);
    }
    const s1 = table(call(reg, "SUMMARY", sheet(c2).Y, sheet(c2).X, "form=level-level; absorb=firm,year"));
    const sh = sheet(c2, order);
    const s2 = table(call(reg, "SUMMARY", sh.Y, sh.X, "form=level-level; absorb=firm,year"));
    expectClose(lookup(s2, "Within R² (after absorbing the fixed effects)"), lookup(s1, "Within R² (after absorbing the fixed effects)") as number, 1e-10, 0, "within R²");
  });

  test("a key with one value is an error (absorbing it would be only an intercept), the same under PPML", () => {
    const { Y, X } = sheet(c);
    const X1 = X.map((r, i) => [...r, i === 0 ? "chain" : "A"]);
    for (const est of ["", "; estimator=ppml"]) {
      const Yp = est ? [["y"], ...c.y.map((v) => [Math.exp(v)])] : Y;
      expect(errorOf(call(reg, "FIT", Yp, X1, `form=level-level; absorb=chain${est}`)).message).toBe("chain has the same value in every row used, so absorbing it is only an intercept: remove it from absorb=");
    }
  });
});

describe("bad input through the cells: one message each", () => {
  const c = OLS.find((o) => o.name === "grunfeld_oneway") as Case;
  const c2 = OLS.find((o) => o.name === "grunfeld_twoway") as Case;
  const { Y, X } = sheet(c);
  const withColumn = (name: string, v: (i: number) => unknown) => X.map((r, i) => [...r, i === 0 ? name : v(i - 1)]);

  test("every value of the key a singleton", () => {
    const e = errorOf(call(reg, "FIT", Y, withColumn("id", (i) => i), "form=level-level; absorb=id"));
    expect(e.message).toMatch(/every value of id occurs in only one row/);
  });

  test("a regressor constant within every absorbed group is named", () => {
    const size = withColumn("size", (i) => 1 + c.keys.firm[i] * 0.5);
    const e = errorOf(call(reg, "FIT", Y, size, "form=level-level; absorb=firm"));
    expect(e.message).toBe("size does not vary within firm (collinear with the fixed effects): its effect cannot be told apart from them; remove it from x or absorb fewer keys");
  });

  test("factors= and absorb= naming the same column", () => {
    const e = errorOf(call(reg, "FIT", Y, X, "form=level-level; absorb=firm; factors=firm"));
    expect(e.message).toMatch(/^firm is named in both absorb= and factors=; a column can take only one of these roles/);
  });

  test("two-way HC2/HC3 points to cluster or HC1", () => {
    const s = sheet(c2);
    for (const t of ["HC2", "HC3"]) {
      expect(errorOf(call(reg, "FIT", s.Y, s.X, `form=level-level; absorb=firm,year; se=${t}`)).message).toMatch(/se=cluster.*se=HC1/);
    }
  });

  test("weights: zero and negative rows are left out and counted; blank ones counted as blank; all non-positive is an error; text is an error", () => {
    const w = (i: number) => (i === 0 ? 0 : i === 1 ? -2 : i === 2 ? null : 1 + (i % 3));
    const s = table(call(reg, "SUMMARY", Y, withColumn("w", w), "form=level-level; absorb=firm; weights=w"));
    expect(lookup(s, "Rows left out: zero or negative weight")).toBe(2);
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(1);
    expect(lookup(s, "Observations used")).toBe(c.n - 3);
    expect(errorOf(call(reg, "FIT", Y, withColumn("w", () => 0), "form=level-level; absorb=firm; weights=w")).message).toMatch(/zero or negative; weights= needs positive weights/);
    expect(errorOf(call(reg, "FIT", Y, withColumn("w", (i) => `w${i}`), "form=level-level; absorb=firm; weights=w")).message).toMatch(/^w holds text, but weights= needs numbers/);
  });

  test("se=DK without time=", () => {
    expect(errorOf(call(reg, "FIT", Y, X, "form=level-level; absorb=firm; se=DK")).message).toMatch(/se=DK needs time=/);
  });

  test("panel= whose units interleave", () => {
    const n = c.y.length;
    const order = Array.from({ length: n }, (_, i) => (i * 37 + 11) % n);
    const s = sheet(c, order);
    expect(errorOf(call(reg, "FIT", s.Y, s.X, "form=level-level; absorb=firm; se=HAC; panel=firm")).message).toMatch(/must be together, in time order.*sort the data by firm/);
  });

  test("se=cluster without cluster=", () => {
    expect(errorOf(call(reg, "FIT", Y, X, "form=level-level; absorb=firm; se=cluster")).message).toMatch(/se=cluster needs cluster=/);
  });

  test("residual tests under weights, FORMCHECK under absorb= and intervals under absorb= say what to do", () => {
    const Xw = withColumn("w", (i) => 1 + (i % 3));
    for (const id of ["TESTS", "NORMALTEST"]) {
      expect(errorOf(call(reg, id, Y, Xw, "form=level-level; weights=w")).message).toMatch(/assume unweighted least squares/);
    }
    expect(errorOf(call(reg, "HETEROTEST", Y, Xw, null, "form=level-level; weights=w")).message).toMatch(/assume unweighted least squares/);
    expect(errorOf(call(reg, "FORMCHECK", Y, X, "form=level-level; absorb=firm")).message).toMatch(/not offered with absorb= yet/);
    const Ylevels = [["y"], ...c.y.map((v) => [Math.exp(v)])];
    expect(errorOf(call(reg, "SMEARING", Ylevels, Xw, "form=log-level; weights=w")).message).toMatch(/assume unweighted least squares/);
  });

  test("SUMMARY's caution names few clusters (Grunfeld: 10 firms; fewer than about 30 is common practice's limit)", () => {
    const s = table(call(reg, "SUMMARY", Y, X, "form=level-level; absorb=firm; cluster=firm"));
    expect(lookup(s, "Clusters")).toBe("firm: 10");
    expect(lookup(s, "Degrees of freedom of t")).toBe(9);
    expect(lookup(s, "Caution")).toMatch(/Few clusters: firm has 10/);
    expect(lookup(s, "Caution")).toMatch(/Fixed effects remove only differences that stay the same/);
  });
});

describe("residual tests under fixed effects: lmtest::bptest / resettest on lm(ly ~ lvalue + lcapital + factor(firm)), plm::Grunfeld", () => {
  interface TestsCase { name: string; y: number[]; x: Record<string, number[]>; keys: Record<string, number[]>; bp: number[]; bp_original: number[]; white: number[]; reset: number[]; jb: number[] }
  const t: TestsCase = ref.tests[0];
  const names = [...Object.keys(t.x), ...Object.keys(t.keys)];
  const cols = [...Object.values(t.x), ...Object.values(t.keys)];
  const Y = [["y"], ...t.y.map((v) => [v])];
  const X = [names, ...t.y.map((_, i) => cols.map((c) => c[i]))];
  test("Breusch–Pagan (Koenker and original), White, Jarque–Bera (formula on residuals(m)) and RESET: statistic and p to 1e-9", () => {
    const out = table(call(reg, "TESTS", Y, X, "form=level-level; absorb=firm"));
    const row = (label: string) => out.find((r) => r[0] === label) as unknown[];
    const pairs: [string, number[]][] = [
      ["Breusch–Pagan (Koenker, studentized)", t.bp],
      ["Breusch–Pagan (original)", t.bp_original],
      ["White", t.white],
      ["Jarque–Bera", t.jb],
      ["RESET (fitted², fitted³)", t.reset],
    ];
    for (const [label, [stat, p]] of pairs) {
      expectClose(row(label)[1], stat, 1e-9, 0, `${label} statistic`);
      expectClose(row(label)[3], p, 1e-9, 0, `${label} p`);
    }
    expectClose((call(reg, "HETEROTEST", Y, X, "bp", "form=level-level; absorb=firm") as unknown[][])[0][0], t.bp[1], 1e-9, 0, "HETEROTEST bp");
    expectClose((call(reg, "NORMALTEST", Y, X, "form=level-level; absorb=firm") as unknown[][])[0][0], t.jb[1], 1e-9, 0, "NORMALTEST");
  });
});

describe("weighted PPML without fixed effects: glm(gsp ~ lpcap + lpc + unemp, quasipoisson, weights = emp), plm::Produc", () => {
  const w = ref.ppml_weighted_plain;
  const sheetWith = (extra: boolean) => {
    const names = [...Object.keys(w.x), "w", ...(extra ? ["region"] : [])];
    const cols: number[][] = [...(Object.values(w.x) as number[][]), w.weights, ...(extra ? [w.region] : [])];
    return { Y: [["y"], ...(w.y as number[]).map((v) => [v])], X: [names, ...(w.y as number[]).map((_: number, i: number) => cols.map((c) => c[i]))] };
  };
  test("coefficients (1e-10); HC0, HC1 (vcovHC), classical (vcov) and cluster by region (vcovCL HC1) to 1e-9", () => {
    for (const [se, opt] of [["HC0", "se=HC0"], ["HC1", "se=HC1"], ["classical", "se=classical"], ["cluster_region", "cluster=region"]]) {
      const { Y, X } = sheetWith(se === "cluster_region");
      const t = table(call(reg, "FIT", Y, X, `form=level-level; estimator=ppml; weights=w; ${opt}`));
      expectAll(t.slice(1).map((r) => r[2]), w.coefficients, 1e-10, `coefficients ${se}`);
      expectAll(t.slice(1).map((r) => r[3]), w.se[se], 1e-9, `errors ${se}`);
    }
  });
});

describe("the pane's view carries the few-clusters caution (Cameron and Miller 2015; common practice: about 30)", () => {
  test("10 firms: a caution naming firm; 200 firm-year pairs are not few", () => {
    const c = OLS.find((o) => o.name === "grunfeld_oneway") as Case;
    const api = (globalThis as { Elasticell?: { elasticitiesView: (...a: unknown[]) => { ok: boolean; value: { clusterCaution: string | null } } } }).Elasticell;
    if (!api) throw new Error("dist/functions.js did not publish globalThis.Elasticell");
    const { Y, X } = sheet(c);
    const v = api.elasticitiesView(Y, X, "form=level-level; absorb=firm; cluster=firm");
    expect(v.ok).toBe(true);
    expect(v.value.clusterCaution).toMatch(/^Few clusters: firm has 10;/);
    expect(api.elasticitiesView(Y, X, "form=level-level; absorb=firm; se=HC1").value.clusterCaution).toBeNull();
  });
});
