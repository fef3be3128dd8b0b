/**
 * HETEROTEST, NORMALTEST, TESTS, SUMMARY (retransformation factors, VIFs, condition number),
 * SMEARING, PREDICT and FORMCHECK against R, through the built bundle.
 *
 * Source of every expected number: test/reference/diagnostics.json, written by
 * `Rscript test/reference/scripts/diagnostics.R` (run from the repository root) with R 4.2.2,
 * lmtest 0.9.40, sandwich 3.0.2 and MASS 7.3.58.2 (versions and commands are recorded in the JSON).
 * Per dataset and form, with m <- lm(formula, data = used), used = na.omit(dataset[, c(y, x)]):
 *   BP (Koenker)        lmtest::bptest(m)
 *   BP (original)       lmtest::bptest(m, studentize = FALSE)
 *   White               lmtest::bptest(m, ~ (x1 + ...)^2 + I(x1^2) + ..., data = used)
 *                       (x terms transformed as in the model; no squares of binary columns)
 *   White (special)     lmtest::bptest(m, ~ fitted(m) + I(fitted(m)^2), data = used)
 *   Jarque–Bera         n/6 (S² + (K − 3)²/4), n-denominator moments of resid(m), chi-square 2 df
 *                       (Jarque and Bera 1980; trees log-log also confirmed with statsmodels 0.13.5
 *                       statsmodels.stats.stattools.jarque_bera, recorded in the JSON)
 *   RESET               lmtest::resettest(m, power = 2:3, type = "fitted")
 *   VIF                 1 / (1 − summary(lm(X[, j] ~ X[, -c(1, j)]))$r.squared)
 *   condition number    max(d) / min(d), d = svd(X scaled to unit-length columns)$d, X = model.matrix(m)
 *   Duan / normal       mean(exp(resid(m))), exp(summary(m)$sigma^2 / 2)
 *   predictions         predict(m, new_x, interval = "confidence" | "prediction", level = 0.95 | 0.9)
 *                       on the log scale; HC3 mean-interval bounds fit ∓ t·sqrt(x0' vcovHC(m, "HC3") x0)
 *                       (exponentiated and multiplied by the factor here, as the interface prescribes)
 *   FORMCHECK           MASS::boxcox(y ~ <x side>, data = used, lambda = seq(-2, 2, 0.001)) and
 *                       optimize() on MASS's profile log-likelihood (tol 1e-10); LR interval ends by
 *                       uniroot; LR p-values for λ = 0 and 1; lmtest::petest(lm(y ~ X), lm(log(y) ~ X),
 *                       vcov. = function(m) sandwich::vcovHC(m, type = "HC3")) and without vcov.
 *                       (classical); skewness, Jarque–Bera p and bptest p of both fits.
 * Datasets: trees, mtcars, LifeCycleSavings and airquality from R's datasets package; forms log-log
 * and log-level.
 *
 * Data are fed as the host would: 2-D row arrays with a header row of the column names; R's NA
 * cells (airquality) arrive as blanks (null in y, "" in x).
 * Tolerances: statistics, p-values, factors, predictions and intervals 1e-9 relative with a 1e-12
 * absolute floor near zero; Box–Cox λ̂ and its interval ends 1e-6 absolute.
 */
import * as fs from "fs";
import * as path from "path";
import { loadFunctions, HostError, type CellFn } from "../harness/loadFunctions";

interface Chi2 { statistic: number; df: number; p_value: number }
interface Bounds { lower: number[]; upper: number[] }
interface LevelPred { t_critical: number; confidence: Bounds; prediction: Bounds; hc3_mean: Bounds }
interface FormRef {
  formula: string;
  n: number;
  k: number;
  df_residual: number;
  terms: string[];
  binary: boolean[];
  sigma2: number;
  tests: {
    bp: Chi2; bp_original: Chi2; white: Chi2 & { formula: string }; white_special: Chi2;
    jarque_bera: Chi2 & { skewness: number; kurtosis: number };
    reset: { statistic: number; df: number[]; p_value: number };
  };
  vif: number[];
  largest_vif: number;
  condition_number: number;
  smearing: { duan: number; normal: number };
  predict: { log_fit: number[]; se_classical: number[]; se_hc3: number[]; levels: Record<"ci95" | "ci90", LevelPred> };
}
interface PeRef { t_log: number; t_lin: number; p_log: number; p_lin: number }
interface FormCheckRef {
  formula_levels: string;
  formula_logs: string;
  boxcox: {
    lambda_hat: number;
    interval95: { lower: number | null; upper: number | null };
    lr_p_lambda0: number;
    lr_p_lambda1: number;
  };
  pe_hc3: PeRef;
  pe_classical: PeRef;
  pe_rows_left_out: number;
  skewness: { log: number; lin: number };
  jb_p: { log: number; lin: number };
  bp_p: { log: number; lin: number };
}
interface CaseRef {
  y: string;
  x: string[];
  rows: number;
  rows_with_na: number;
  data: Record<string, (number | null)[]>;
  new_x: Record<string, number[]>;
  new_x_data_row: number;
  forms: Record<string, FormRef>;
  formcheck: Record<string, FormCheckRef>;
}
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "diagnostics.json"), "utf8")) as {
  r_version: string;
  packages: Record<string, string>;
  statsmodels_check: { available: boolean; statistic?: number; p_value?: number; max_relative_difference_to_R_formula?: number };
  cases: Record<string, CaseRef>;
};

const REL = 1e-9;
const ABS = 1e-12;
const LAMBDA_ABS = 1e-6;
const FORMS = ["log-log", "log-level"] as const;
const DIAGNOSTIC_IDS = ["SMEARING", "PREDICT", "HETEROTEST", "NORMALTEST", "TESTS", "FORMCHECK", "SUMMARY"];

/** Worst error seen per quantity group, printed at the end. */
const worst = new Map<string, { err: number; where: string; kind: "rel" | "abs" }>();

function show(v: unknown): string {
  return v instanceof HostError ? `${v.code} ${v.message ?? ""}` : JSON.stringify(v);
}

function record(group: string, err: number, where: string, kind: "rel" | "abs"): void {
  const w = worst.get(group);
  if (!w || err > w.err) worst.set(group, { err, where, kind });
}

/** Relative comparison with an absolute floor (1e-9 / 1e-12). */
function check(actual: unknown, expected: number, group: string, where: string): void {
  if (typeof actual !== "number" || !Number.isFinite(actual)) {
    throw new Error(`${where}: expected a finite number near ${expected} (R), got ${show(actual)}`);
  }
  const err = Math.abs(actual - expected);
  const rel = expected === 0 ? err : err / Math.abs(expected);
  record(group, rel, where, "rel");
  if (!(err <= Math.max(REL * Math.abs(expected), ABS))) {
    throw new Error(`${where}: got ${actual}, R gives ${expected} (abs ${err.toExponential(3)}, rel ${rel.toExponential(3)}; tolerance ${REL} rel / ${ABS} abs)`);
  }
}

/** Absolute comparison for Box–Cox λ values (1e-6). */
function checkLambda(actual: unknown, expected: number, group: string, where: string): void {
  if (typeof actual !== "number" || !Number.isFinite(actual)) {
    throw new Error(`${where}: expected a finite number near ${expected} (R), got ${show(actual)}`);
  }
  const err = Math.abs(actual - expected);
  record(group, err, where, "abs");
  if (!(err <= LAMBDA_ABS)) throw new Error(`${where}: got ${actual}, R gives ${expected} (abs ${err.toExponential(3)}; tolerance ${LAMBDA_ABS} abs)`);
}

let reg: Map<string, CellFn>;
beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  const lines = [...worst.entries()].map(([k, v]) => `${k.padEnd(44)} ${v.kind} ${v.err.toExponential(2)}  (${v.where})`);
  // eslint-disable-next-line no-console
  console.log(`worst error against R (${ref.r_version}) per quantity\n${lines.join("\n")}`);
});

/**
 * Calls a cell function by id as the host does. An id missing from the bundle fails the test with
 * a clear message (these tests are never skipped).
 */
function invoke(id: string, ...args: unknown[]): unknown {
  const fn = reg.get(id);
  if (!fn) {
    throw new Error(`ELX.${id} is not registered in dist/functions.js (registered: ${[...reg.keys()].join(", ")}); run npm run build first`);
  }
  try {
    return fn(...args);
  } catch (e) {
    if (e instanceof HostError) return e;
    throw e;
  }
}

function table(result: unknown, where: string): unknown[][] {
  if (result instanceof HostError) throw new Error(`${where}: the function returned ${result.code} ${result.message}`);
  if (!Array.isArray(result) || !result.every((r) => Array.isArray(r))) throw new Error(`${where}: expected a 2-D array, got ${show(result)}`);
  return result as unknown[][];
}

/** The single cell of a [[v]] result. */
function single(result: unknown, where: string): unknown {
  const t = table(result, where);
  if (t.length !== 1 || t[0].length !== 1) throw new Error(`${where}: expected a 1×1 result, got ${show(result)}`);
  return t[0][0];
}

/** The row labelled `label` in a table whose first column holds labels. */
function rowOf(t: unknown[][], label: string, what: string): unknown[] {
  const row = t.find((r) => r[0] === label);
  if (!row) throw new Error(`${what} has no row labelled "${label}"; labels: ${t.map((r) => r[0]).join(" | ")}`);
  return row;
}

/** Host-style inputs: y column and x columns as 2-D row arrays with a header row; NA → blank. */
function inputs(c: CaseRef): { y: unknown[][]; x: unknown[][] } {
  const y: unknown[][] = [[c.y], ...c.data[c.y].map((v) => [v === null ? null : v])];
  const n = c.data[c.y].length;
  const x: unknown[][] = [c.x.slice()];
  for (let i = 0; i < n; i++) x.push(c.x.map((name) => (c.data[name][i] === null ? "" : c.data[name][i])));
  return { y, x };
}

/** new_x rows for PREDICT in the given column order, with or without a header row. */
function newRows(c: CaseRef, order: string[], header: boolean): unknown[][] {
  const out: unknown[][] = header ? [order.slice()] : [];
  const m = c.new_x[order[0]].length;
  for (let i = 0; i < m; i++) out.push(order.map((name) => c.new_x[name][i]));
  return out;
}

// Fixture guard: asserts on the JSON only. The engine is checked on the quantities behind it by the
// tests below: the rows R left out (SUMMARY's counts in test/reference/ols.test.ts on the same data),
// PREDICT against R at the new_x rows, and the Jarque–Bera value statsmodels confirmed (NORMALTEST and TESTS
// against R).
describe("fixture guard: reference data", () => {
  it("fixture guard: four datasets in the two log-y forms, with R's rows left out and the statsmodels confirmation", () => {
    expect(Object.keys(ref.cases).sort()).toEqual(["LifeCycleSavings", "airquality", "mtcars", "trees"]);
    for (const c of Object.values(ref.cases)) {
      expect(Object.keys(c.forms).sort()).toEqual([...FORMS].sort());
      expect(Object.keys(c.formcheck).sort()).toEqual([...FORMS].sort());
      // each dataset's first new row equals a data row (R: stopifnot in diagnostics.R)
      c.x.forEach((name) => expect(c.new_x[name][0]).toBe(c.data[name][c.new_x_data_row - 1]));
    }
    // airquality: R's sum(!complete.cases(airquality[, c("Ozone", "Solar.R", "Wind", "Temp")])) = 42
    expect(ref.cases.airquality.rows_with_na).toBe(42);
    expect(ref.cases.airquality.forms["log-log"].n).toBe(111);
    // mtcars: am is 0/1 and stays in levels under a log x side (R formula log(mpg) ~ log(hp) + log(wt) + am)
    expect(ref.cases.mtcars.forms["log-log"].formula).toBe("log(mpg) ~ log(hp) + log(wt) + am");
    // statsmodels.stats.stattools.jarque_bera(resid) for trees log-log agreed with the R formula
    expect(ref.statsmodels_check.available).toBe(true);
    expect(ref.statsmodels_check.max_relative_difference_to_R_formula as number).toBeLessThan(1e-12);
  });

  it("the diagnostic functions are registered in the bundle", () => {
    const missing = DIAGNOSTIC_IDS.filter((id) => !reg.has(id));
    if (missing.length > 0) {
      throw new Error(`not registered in dist/functions.js: ${missing.join(", ")} (registered: ${[...reg.keys()].join(", ")})`);
    }
  });
});

const TEST_ROWS = [
  ["bp", "Breusch–Pagan (Koenker, studentized)"],
  ["bp_original", "Breusch–Pagan (original)"],
  ["white", "White"],
  ["white_special", "White (special form)"],
  ["jarque_bera", "Jarque–Bera"],
  ["reset", "RESET (fitted², fitted³)"],
] as const;

for (const [dataset, c] of Object.entries(ref.cases)) {
  const { y, x } = inputs(c);
  describe(`${dataset}: ${c.y} ~ ${c.x.join(" + ")}`, () => {
    for (const form of FORMS) {
      const f = c.forms[form];
      const opt = `form=${form}`;
      describe(`${form} (R: ${f.formula})`, () => {
        it(`HETEROTEST ${dataset} ${form}: p-values of bp, bp-original, white, white-special`, () => {
          const where = `${dataset} ${form} HETEROTEST`;
          // R: lmtest::bptest(m)$p.value
          check(single(invoke("HETEROTEST", y, x, "bp", opt), `${where} bp`), f.tests.bp.p_value, "HETEROTEST bp p", `${where} bp`);
          // R: lmtest::bptest(m)$p.value (the test argument left out: bp is the default)
          check(single(invoke("HETEROTEST", y, x, null, opt), `${where} default`), f.tests.bp.p_value, "HETEROTEST bp p", `${where} default test`);
          // R: lmtest::bptest(m, studentize = FALSE)$p.value
          check(single(invoke("HETEROTEST", y, x, "bp-original", opt), `${where} bp-original`), f.tests.bp_original.p_value, "HETEROTEST bp-original p", `${where} bp-original`);
          // R: lmtest::bptest(m, <white formula>, data = used)$p.value, white formula as in the JSON
          check(single(invoke("HETEROTEST", y, x, "white", opt), `${where} white`), f.tests.white.p_value, "HETEROTEST white p", `${where} white (R: ${f.tests.white.formula})`);
          // R: lmtest::bptest(m, ~ fitted(m) + I(fitted(m)^2), data = used)$p.value
          check(single(invoke("HETEROTEST", y, x, "white-special", opt), `${where} white-special`), f.tests.white_special.p_value, "HETEROTEST white-special p", `${where} white-special`);
        });

        it(`NORMALTEST ${dataset} ${form}: Jarque–Bera p-value`, () => {
          // R: pchisq(n/6 * (S^2 + (K - 3)^2/4), 2, lower.tail = FALSE) with n-denominator moments of resid(m)
          check(single(invoke("NORMALTEST", y, x, opt), `${dataset} ${form} NORMALTEST`), f.tests.jarque_bera.p_value, "NORMALTEST Jarque–Bera p", `${dataset} ${form} NORMALTEST`);
        });

        it(`TESTS ${dataset} ${form}: statistic, df and p-value of BP, BP original, White, White special, Jarque–Bera, RESET`, () => {
          const where = `${dataset} ${form} TESTS`;
          const t = table(invoke("TESTS", y, x, opt), where);
          expect(t[0]).toEqual(["Test", "Statistic", "df", "p-value", "Reading at the 5% level"]);
          expect(t.slice(1).map((r) => r[0])).toEqual(TEST_ROWS.map(([, label]) => label));
          for (const [key, label] of TEST_ROWS) {
            const row = rowOf(t, label, where);
            const r = f.tests[key];
            // R: bptest(...)$statistic / $parameter / $p.value, the JB formula, resettest(m, power = 2:3, type = "fitted")
            check(row[1], r.statistic, `TESTS ${key} statistic`, `${where} ${label} statistic`);
            check(row[3], r.p_value, `TESTS ${key} p-value`, `${where} ${label} p-value`);
            if (key === "reset") {
              // R: resettest(...)$parameter = c(df1, df2), shown as text "df1, df2"
              expect(row[2]).toBe(`${f.tests.reset.df[0]}, ${f.tests.reset.df[1]}`);
            } else {
              // R: bptest(...)$parameter; 2 for Jarque–Bera
              expect(row[2]).toBe((r as Chi2).df);
            }
            expect(typeof row[4]).toBe("string");
            expect((row[4] as string).length).toBeGreaterThan(0);
          }
        });

        it(`SUMMARY ${dataset} ${form}: Duan and normal-theory factors, VIFs, largest VIF, condition number`, () => {
          const where = `${dataset} ${form} SUMMARY`;
          const t = table(invoke("SUMMARY", y, x, opt), where);
          const labels = t.map((r) => r[0]);
          const vifLabels = c.x.map((name) => `VIF: ${name}`);
          const expectedOrder = ["BIC", "Smearing factor (Duan)", "Normal-theory factor", "Largest VIF", ...vifLabels, "Condition number"];
          const at = labels.indexOf("BIC");
          expect(labels.slice(at, at + expectedOrder.length)).toEqual(expectedOrder);
          // R: mean(exp(resid(m)))
          check(rowOf(t, "Smearing factor (Duan)", where)[1], f.smearing.duan, "SUMMARY Duan factor", `${where} Duan`);
          // R: exp(summary(m)$sigma^2 / 2)
          check(rowOf(t, "Normal-theory factor", where)[1], f.smearing.normal, "SUMMARY normal factor", `${where} normal factor`);
          // R: max over j of 1 / (1 - summary(lm(X[, j] ~ X[, -c(1, j)]))$r.squared)
          check(rowOf(t, "Largest VIF", where)[1], f.largest_vif, "SUMMARY VIF", `${where} largest VIF`);
          c.x.forEach((name, j) => {
            // R: 1 / (1 - summary(lm(X[, j + 1] ~ X[, -c(1, j + 1)]))$r.squared), X = model.matrix(m)
            check(rowOf(t, `VIF: ${name}`, where)[1], f.vif[j], "SUMMARY VIF", `${where} VIF ${name}`);
          });
          // R: d <- svd(X / rep(sqrt(colSums(X^2)), each = n))$d; max(d) / min(d)
          check(rowOf(t, "Condition number", where)[1], f.condition_number, "SUMMARY condition number", `${where} condition number`);
        });

        it(`SMEARING ${dataset} ${form}: Duan (default and retransform=duan) and retransform=normal`, () => {
          const where = `${dataset} ${form} SMEARING`;
          // R: mean(exp(resid(m)))
          check(single(invoke("SMEARING", y, x, opt), where), f.smearing.duan, "SMEARING Duan", `${where} default`);
          check(single(invoke("SMEARING", y, x, `${opt}; retransform=duan`), where), f.smearing.duan, "SMEARING Duan", `${where} retransform=duan`);
          // R: exp(summary(m)$sigma^2 / 2)
          check(single(invoke("SMEARING", y, x, `${opt}; retransform=normal`), where), f.smearing.normal, "SMEARING normal", `${where} retransform=normal`);
        });

        const factors = { none: 1, duan: f.smearing.duan, normal: f.smearing.normal } as const;
        const p = f.predict;
        for (const retransform of ["none", "duan", "normal"] as const) {
          const factor = factors[retransform];
          for (const [level, key] of [[0.95, "ci95"], [0.9, "ci90"]] as const) {
            const pct = key === "ci95" ? "95" : "90";
            const lv = p.levels[key];
            const base = `${opt}; retransform=${retransform}; level=${level}`;

            it(`PREDICT ${dataset} ${form} retransform=${retransform} level=${level} interval=mean se=classical: point and mean interval`, () => {
              const where = `${dataset} ${form} PREDICT retransform=${retransform} level=${level} interval=mean se=classical`;
              const t = table(invoke("PREDICT", y, x, newRows(c, c.x, true), `${base}; interval=mean; se=classical`), where);
              expect(t[0]).toEqual([`Predicted ${c.y}`, `Low (${pct}%)`, `High (${pct}%)`]);
              expect(t.length).toBe(p.log_fit.length + 1);
              p.log_fit.forEach((m, i) => {
                // R: exp(predict(m, new_x)) * factor (factor: 1, mean(exp(resid(m))) or exp(sigma^2/2))
                check(t[i + 1][0], Math.exp(m) * factor, "PREDICT point", `${where} row ${i + 1} predicted`);
                // R: exp(predict(m, new_x, interval = "confidence", level = level)[, c("lwr", "upr")]) * factor
                check(t[i + 1][1], Math.exp(lv.confidence.lower[i]) * factor, "PREDICT mean interval (classical)", `${where} row ${i + 1} lower`);
                check(t[i + 1][2], Math.exp(lv.confidence.upper[i]) * factor, "PREDICT mean interval (classical)", `${where} row ${i + 1} upper`);
              });
            });

            it(`PREDICT ${dataset} ${form} retransform=${retransform} level=${level} interval=mean (default HC3): mean interval`, () => {
              const where = `${dataset} ${form} PREDICT retransform=${retransform} level=${level} interval=mean se=HC3 (default)`;
              const t = table(invoke("PREDICT", y, x, newRows(c, c.x, true), `${base}; interval=mean`), where);
              expect(t[0]).toEqual([`Predicted ${c.y}`, `Low (${pct}%)`, `High (${pct}%)`]);
              p.log_fit.forEach((m, i) => {
                check(t[i + 1][0], Math.exp(m) * factor, "PREDICT point", `${where} row ${i + 1} predicted`);
                // R: exp(fit -/+ qt((1 + level)/2, df.residual(m)) * sqrt(x0' sandwich::vcovHC(m, type = "HC3") x0)) * factor
                check(t[i + 1][1], Math.exp(lv.hc3_mean.lower[i]) * factor, "PREDICT mean interval (HC3)", `${where} row ${i + 1} lower`);
                check(t[i + 1][2], Math.exp(lv.hc3_mean.upper[i]) * factor, "PREDICT mean interval (HC3)", `${where} row ${i + 1} upper`);
              });
            });

            it(`PREDICT ${dataset} ${form} retransform=${retransform} level=${level} interval=individual: prediction interval`, () => {
              const where = `${dataset} ${form} PREDICT retransform=${retransform} level=${level} interval=individual`;
              const t = table(invoke("PREDICT", y, x, newRows(c, c.x, true), `${base}; interval=individual`), where);
              expect(t[0]).toEqual([`Predicted ${c.y}`, `Low (${pct}%)`, `High (${pct}%)`]);
              p.log_fit.forEach((m, i) => {
                check(t[i + 1][0], Math.exp(m) * factor, "PREDICT point", `${where} row ${i + 1} predicted`);
                // R: exp(predict(m, new_x, interval = "prediction", level = level)[, c("lwr", "upr")]), no factor
                check(t[i + 1][1], Math.exp(lv.prediction.lower[i]), "PREDICT individual interval", `${where} row ${i + 1} lower`);
                check(t[i + 1][2], Math.exp(lv.prediction.upper[i]), "PREDICT individual interval", `${where} row ${i + 1} upper`);
              });
            });
          }

          it(`PREDICT ${dataset} ${form} retransform=${retransform} interval=none: points only; columns matched by name; no header without one`, () => {
            const where = `${dataset} ${form} PREDICT retransform=${retransform} interval=none`;
            // columns of new_x in reverse order, with a header row: matched by name
            const reversed = c.x.slice().reverse();
            const t = table(invoke("PREDICT", y, x, newRows(c, reversed, true), `${opt}; retransform=${retransform}; interval=none`), where);
            expect(t[0]).toEqual([`Predicted ${c.y}`]);
            expect(t.length).toBe(p.log_fit.length + 1);
            // R: exp(predict(m, new_x)) * factor
            p.log_fit.forEach((m, i) => check(t[i + 1][0], Math.exp(m) * factor, "PREDICT point", `${where} row ${i + 1} (columns reversed)`));
            // without a header row in new_x: the columns in x's order, and no header row in the output
            const u = table(invoke("PREDICT", y, x, newRows(c, c.x, false), `${opt}; retransform=${retransform}; interval=mean; se=classical`), where);
            expect(u.length).toBe(p.log_fit.length);
            p.log_fit.forEach((m, i) => {
              check(u[i][0], Math.exp(m) * factor, "PREDICT point", `${where} row ${i + 1} (no header)`);
              // R: exp(predict(m, new_x, interval = "confidence")[, "lwr"]) * factor
              check(u[i][1], Math.exp(p.levels.ci95.confidence.lower[i]) * factor, "PREDICT mean interval (classical)", `${where} row ${i + 1} lower (no header)`);
            });
          });
        }

        const fc = c.formcheck[form];
        for (const se of ["HC3", "classical"] as const) {
          it(`FORMCHECK ${dataset} ${form} se=${se}: Box–Cox λ̂, interval, LR p-values, PE test, skewness, JB and BP p of both fits`, () => {
            const where = `${dataset} ${form} FORMCHECK se=${se}`;
            const options = se === "HC3" ? opt : `${opt}; se=classical`;
            const t = table(invoke("FORMCHECK", y, x, options), where);
            expect(t[0]).toEqual(["Check", "y in logs", "y in levels"]);
            const bc = fc.boxcox;
            // R: optimize(<MASS::boxcox profile of lm(y ~ X)>, c(-2, 2), maximum = TRUE, tol = 1e-10)$maximum
            const hat = rowOf(t, "Box–Cox λ̂", where);
            checkLambda(hat[1], bc.lambda_hat, "FORMCHECK Box–Cox λ̂", `${where} λ̂ (R: ${fc.formula_levels})`);
            expect(hat[2]).toBe("");
            // R: uniroot(function(l) prof(l) - (prof(hat) - qchisq(0.95, 1)/2), c(-2, hat) and c(hat, 2))$root
            const lo = rowOf(t, "Box–Cox interval lower (95%)", where);
            const hi = rowOf(t, "Box–Cox interval upper (95%)", where);
            checkLambda(lo[1], bc.interval95.lower as number, "FORMCHECK Box–Cox interval", `${where} interval lower`);
            checkLambda(hi[1], bc.interval95.upper as number, "FORMCHECK Box–Cox interval", `${where} interval upper`);
            expect(lo[2]).toBe("");
            expect(hi[2]).toBe("");
            // R: pchisq(2 * (prof(hat) - prof(0)), 1, lower.tail = FALSE) and the same at lambda = 1
            const lr = rowOf(t, "Box–Cox LR p-value", where);
            check(lr[1], bc.lr_p_lambda0, "FORMCHECK Box–Cox LR p", `${where} LR p (λ = 0)`);
            check(lr[2], bc.lr_p_lambda1, "FORMCHECK Box–Cox LR p", `${where} LR p (λ = 1)`);
            // R: lmtest::petest(lm(y ~ X), lm(log(y) ~ X), vcov. = function(m) sandwich::vcovHC(m, type = "HC3"))
            //    (se=classical: lmtest::petest(lm(y ~ X), lm(log(y) ~ X))); row 2 (M2 plus fitted(M1) − exp(fitted(M2)))
            //    gives t_log, row 1 (M1 plus log(fitted(M1)) − fitted(M2)) gives t_lin
            const pe = se === "HC3" ? fc.pe_hc3 : fc.pe_classical;
            const peT = rowOf(t, "PE test t (this form, other as alternative)", where);
            check(peT[1], pe.t_log, `FORMCHECK PE t (${se})`, `${where} PE t (logs)`);
            check(peT[2], pe.t_lin, `FORMCHECK PE t (${se})`, `${where} PE t (levels)`);
            const peP = rowOf(t, "PE test p-value", where);
            check(peP[1], pe.p_log, `FORMCHECK PE p (${se})`, `${where} PE p (logs)`);
            check(peP[2], pe.p_lin, `FORMCHECK PE p (${se})`, `${where} PE p (levels)`);
            // R: mean(d^3) / mean(d^2)^1.5, d = resid - mean(resid), of lm(log(y) ~ X) and lm(y ~ X)
            const sk = rowOf(t, "Residual skewness", where);
            check(sk[1], fc.skewness.log, "FORMCHECK residual skewness", `${where} skewness (logs)`);
            check(sk[2], fc.skewness.lin, "FORMCHECK residual skewness", `${where} skewness (levels)`);
            // R: Jarque–Bera formula p of both fits
            const jb = rowOf(t, "Jarque–Bera p-value", where);
            check(jb[1], fc.jb_p.log, "FORMCHECK Jarque–Bera p", `${where} JB p (logs)`);
            check(jb[2], fc.jb_p.lin, "FORMCHECK Jarque–Bera p", `${where} JB p (levels)`);
            // R: lmtest::bptest(lm(log(y) ~ X))$p.value, lmtest::bptest(lm(y ~ X))$p.value
            const bp = rowOf(t, "Breusch–Pagan p-value", where);
            check(bp[1], fc.bp_p.log, "FORMCHECK Breusch–Pagan p", `${where} BP p (logs)`);
            check(bp[2], fc.bp_p.lin, "FORMCHECK Breusch–Pagan p", `${where} BP p (levels)`);
            const reading = rowOf(t, "Reading", where);
            expect(["logs preferred", "levels preferred", "both rejected", "no clear choice"]).toContain(reading[1]);
            expect(typeof reading[2]).toBe("string");
            expect((reading[2] as string).length).toBeGreaterThan(0);
          });
        }

        it(`FORMCHECK ${dataset} ${form}: PE test rows left out (fitted level ≤ 0) = ${fc.pe_rows_left_out}, layout [0, count]`, () => {
          const where = `${dataset} ${form} FORMCHECK`;
          const t = table(invoke("FORMCHECK", y, x, opt), where);
          // R: sum(fitted(lm(y ~ X)) <= 0) (those rows are NaN in petest's log of the fitted values of M1 and dropped by lm)
          // layout: [0, count]: the rows belong to the level model's auxiliary regression ("y in levels")
          const left = rowOf(t, "PE test: rows left out (fitted level ≤ 0)", where);
          if (left[1] !== 0 || left[2] !== fc.pe_rows_left_out) {
            throw new Error(`${where} PE rows left out: got [${show(left[1])}, ${show(left[2])}], expected [0, ${fc.pe_rows_left_out}] (R: sum(fitted(lm(y ~ X)) <= 0); layout [0, count])`);
          }
        });
      });
    }
  });
}
