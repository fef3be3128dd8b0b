/**
 * FIT, ELASTICITY, ELASTICITIES, EFFECTS and SUMMARY against R, through the built bundle.
 *
 * Source of every expected number: test/reference/ols.json, written by
 * `Rscript test/reference/scripts/ols.R` (run from the repository root) with R 4.2.2 and
 * sandwich 3.0.2 (versions and commands are recorded in the JSON). Per dataset and form:
 *   m <- lm(formula, data = <dataset>)                       (na.omit: listwise, as the add-in)
 *   coefficients coef(m); classical sqrt(diag(vcov(m)));
 *   HC0..HC3 sqrt(diag(sandwich::vcovHC(m, type = "HC0".."HC3")));
 *   HAC sqrt(diag(sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE))),
 *       L = floor(4 * (n / 100)^(2 / 9));
 *   t = b / se; p = 2 * pt(-abs(t), df.residual(m)); intervals b -/+ qt((1 + level) / 2, df) * se;
 *   summary(m)$r.squared, $adj.r.squared, $sigma, $fstatistic, pf(F, df1, df2, lower.tail = FALSE);
 *   logLik(m); AIC(m); BIC(m);
 *   elasticities and percent effects from the definitions in the interface notes, computed in R
 *   (a definition check: factor at the means or medians of the rows used; Kennedy 1981 correction).
 * Datasets: trees, mtcars, LifeCycleSavings and airquality from R's datasets package.
 *
 * Data are fed as the host would: 2-D row arrays with a header row of the column names; R's NA
 * cells (airquality) arrive as blanks (null in y, "" in x).
 * Tolerance: 1e-9 relative with a 1e-12 absolute floor near zero, for every number.
 */
import * as fs from "fs";
import * as path from "path";
import { call, loadFunctions, HostError, type CellFn } from "../harness/loadFunctions";
import { ReferenceChecker, expectNa, table } from "../harness/reference";

type BySe = Record<string, number[]>;
type Intervals = Record<"ci95" | "ci90", Record<string, { lower: number[]; upper: number[] }>>;
interface ElasticitySet {
  centre_y: number;
  centre_x: number[];
  factor: number[];
  estimate: number[];
  se: BySe;
  intervals: Intervals;
}
interface FormRef {
  formula: string;
  n: number;
  k: number;
  df_residual: number;
  hac_lag: number;
  terms: string[];
  transforms: string[];
  binary: boolean[];
  coefficients: number[];
  se: BySe;
  t: BySe;
  p: BySe;
  intervals: Intervals;
  summary: {
    r_squared: number; adj_r_squared: number; sigma: number; f_statistic: number; f_p_value: number;
    log_likelihood: number; aic: number; bic: number; r_aic: number; r_bic: number;
  };
  elasticities: { mean: ElasticitySet; median: ElasticitySet };
  effects: null | { terms: string[]; percent?: number[]; corrected?: BySe; intervals?: Intervals };
}
interface CaseRef {
  y: string;
  x: string[];
  rows: number;
  rows_with_na: number;
  data: Record<string, (number | null)[]>;
  forms: Record<string, FormRef>;
}
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "ols.json"), "utf8")) as {
  r_version: string;
  cases: Record<string, CaseRef>;
  extra_hac_lags: { dataset: string; form: string; lags: number; se: number[] };
};

const REL = 1e-9;
const ABS = 1e-12;
const SE_TYPES = ["classical", "HC0", "HC1", "HC2", "HC3", "HAC"] as const;
const FORMS = ["log-log", "log-level", "level-log", "level-level"] as const;

/** Worst relative error seen per quantity group, printed at the end. */
const checker = new ReferenceChecker(REL, ABS);
const check = (actual: unknown, expected: number, group: string, where: string): void => checker.check(actual, expected, group, where);

/** The SUMMARY row whose label is `label` (a note in parentheses after it is accepted). */
function summaryValue(t: unknown[][], label: string): unknown {
  const row = t.find((r) => r[0] === label) ?? t.find((r) => typeof r[0] === "string" && (r[0] as string).startsWith(`${label} (`));
  if (!row) throw new Error(`SUMMARY has no row labelled ${label}; labels: ${t.map((r) => r[0]).join(" | ")}`);
  return row[1];
}

/** Host-style inputs: y column and x columns as 2-D row arrays with a header row; NA → blank. */
function inputs(c: CaseRef): { y: unknown[][]; x: unknown[][] } {
  const y: unknown[][] = [[c.y], ...c.data[c.y].map((v) => [v === null ? null : v])];
  const n = c.data[c.y].length;
  const x: unknown[][] = [c.x.slice()];
  for (let i = 0; i < n; i++) x.push(c.x.map((name) => (c.data[name][i] === null ? "" : c.data[name][i])));
  return { y, x };
}

function seLabel(se: string, f: FormRef): string {
  return se === "HAC" ? `HAC, ${f.hac_lag} lag${f.hac_lag === 1 ? "" : "s"}` : se;
}

let reg: Map<string, CellFn>;
beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  console.log(checker.report(`worst relative error against R (${ref.r_version}) per quantity`, 34));
});

// Fixture guard: asserts on the JSON only. The engine is checked on each quantity named here by the
// tests below: the rows left out and used (SUMMARY "Rows left out: blank or non-numeric" = 42 and
// "Observations used" = 111 for airquality) and the transforms (FIT's Transform column).
describe("fixture guard: reference data", () => {
  it("fixture guard: four datasets in four forms, with the rows R left out", () => {
    expect(Object.keys(ref.cases).sort()).toEqual(["LifeCycleSavings", "airquality", "mtcars", "trees"]);
    for (const c of Object.values(ref.cases)) expect(Object.keys(c.forms).sort()).toEqual([...FORMS].sort());
    // airquality: 37 NA in Ozone, 7 in Solar.R, 2 rows with both (R: sum(!complete.cases(...)))
    expect(ref.cases.airquality.rows_with_na).toBe(42);
    expect(ref.cases.airquality.forms["log-log"].n).toBe(111);
    // mtcars: am is 0/1 and stays in levels under a log x side
    expect(ref.cases.mtcars.forms["log-log"].transforms).toEqual(["constant", "log", "log", "level"]);
  });
});

for (const [dataset, c] of Object.entries(ref.cases)) {
  const { y, x } = inputs(c);
  describe(`${dataset}: ${c.y} ~ ${c.x.join(" + ")}`, () => {
    for (const form of FORMS) {
      const f = c.forms[form];
      describe(`${form} (R: ${f.formula})`, () => {
        for (const se of SE_TYPES) {
          it(`FIT ${dataset} ${form} se=${se}: coefficients, std. errors, t, p-values, 95% intervals`, () => {
            const where = `${dataset} ${form} se=${se}`;
            const t = table(call(reg, "FIT", y, x, `form=${form}; se=${se}`), `FIT ${where}`);
            expect(t.length).toBe(f.k + 1);
            f.terms.forEach((term, j) => {
              const row = t[j + 1];
              expect(row[0]).toBe(term);
              expect(row[1]).toBe(f.transforms[j]);
              check(row[2], f.coefficients[j], "FIT coefficient", `${where} ${term} coefficient`);
              check(row[3], f.se[se][j], `FIT std. error ${se}`, `${where} ${term} std. error`);
              check(row[4], f.t[se][j], "FIT t", `${where} ${term} t`);
              check(row[5], f.p[se][j], "FIT p-value", `${where} ${term} p-value`);
              check(row[6], f.intervals.ci95[se].lower[j], "FIT interval 95%", `${where} ${term} lower 95%`);
              check(row[7], f.intervals.ci95[se].upper[j], "FIT interval 95%", `${where} ${term} upper 95%`);
            });
          });

          it(`FIT ${dataset} ${form} se=${se} level=0.9: 90% intervals`, () => {
            const where = `${dataset} ${form} se=${se} level=0.9`;
            const t = table(call(reg, "FIT", y, x, `form=${form}; se=${se}; level=0.9`), `FIT ${where}`);
            f.terms.forEach((term, j) => {
              check(t[j + 1][6], f.intervals.ci90[se].lower[j], "FIT interval 90%", `${where} ${term} lower 90%`);
              check(t[j + 1][7], f.intervals.ci90[se].upper[j], "FIT interval 90%", `${where} ${term} upper 90%`);
            });
          });

          for (const at of ["mean", "median"] as const) {
            it(`ELASTICITIES ${dataset} ${form} se=${se} at=${at}: elasticities, std. errors, 95% and 90% intervals`, () => {
              const e = f.elasticities[at];
              for (const [level, key] of [[0.95, "ci95"], [0.9, "ci90"]] as const) {
                const where = `${dataset} ${form} se=${se} at=${at} level=${level}`;
                const t = table(call(reg, "ELASTICITIES", y, x, `form=${form}; se=${se}; at=${at}; level=${level}`), `ELASTICITIES ${where}`);
                expect(t.length).toBe(c.x.length + 1);
                c.x.forEach((name, j) => {
                  const row = t[j + 1];
                  expect(row[0]).toBe(name);
                  expect(row[1]).toBe(f.transforms[j + 1]);
                  if (f.binary[j]) {
                    expect(row.slice(2, 6)).toEqual(["", "", "", ""]); // empty, not #N/A (a sum over the column still works)
                    expect(row[6]).toBe("binary: see ELX.EFFECTS");
                    return;
                  }
                  check(row[2], e.estimate[j], "ELASTICITIES elasticity", `${where} ${name} elasticity`);
                  check(row[3], e.se[se][j], "ELASTICITIES std. error", `${where} ${name} std. error`);
                  check(row[4], e.intervals[key][se].lower[j], "ELASTICITIES interval", `${where} ${name} lower`);
                  check(row[5], e.intervals[key][se].upper[j], "ELASTICITIES interval", `${where} ${name} upper`);
                  const logX = f.transforms[j + 1] === "log";
                  const logY = form.startsWith("log-");
                  if (logX && logY) expect(row[6]).toBe("everywhere (constant elasticity)");
                  else expect(String(row[6])).toContain(at);
                  if (!logX) expect(String(row[6])).toContain(`${at} ${name} = `);
                  if (!logY) expect(String(row[6])).toContain(`${at} ${c.y} = `);
                });
              }
            });
          }

          if (f.effects && f.effects.terms.length > 0) {
            const fx = f.effects;
            it(`EFFECTS ${dataset} ${form} se=${se}: percent effects, Kennedy corrected, 95% and 90% intervals`, () => {
              for (const [level, key] of [[0.95, "ci95"], [0.9, "ci90"]] as const) {
                const where = `${dataset} ${form} se=${se} level=${level}`;
                const t = table(call(reg, "EFFECTS", y, x, `form=${form}; se=${se}; level=${level}`), `EFFECTS ${where}`);
                expect(t.map((r) => r[0]).slice(1)).toEqual(fx.terms);
                fx.terms.forEach((name, j) => {
                  const row = t[j + 1];
                  check(row[1], (fx.percent as number[])[j], "EFFECTS percent effect", `${where} ${name} percent effect`);
                  check(row[2], (fx.corrected as BySe)[se][j], "EFFECTS corrected (Kennedy)", `${where} ${name} corrected`);
                  check(row[3], (fx.intervals as Intervals)[key][se].lower[j], "EFFECTS interval", `${where} ${name} lower`);
                  check(row[4], (fx.intervals as Intervals)[key][se].upper[j], "EFFECTS interval", `${where} ${name} upper`);
                });
              }
            });
          }
        }

        it(`FIT ${dataset} ${form}: header row names the std. error type and the level`, () => {
          for (const se of SE_TYPES) {
            const t95 = table(call(reg, "FIT", y, x, `form=${form}; se=${se}`), "FIT");
            expect(t95[0]).toEqual(["Term", "Transform", "Coefficient", `Std. error (${seLabel(se, f)})`, "t", "p-value", "Low (95%)", "High (95%)"]);
          }
          const t90 = table(call(reg, "FIT", y, x, `form=${form}; level=0.9`), "FIT");
          expect(t90[0]).toEqual(["Term", "Transform", "Coefficient", "Std. error (HC3)", "t", "p-value", "Low (90%)", "High (90%)"]);
          const tDefault = table(call(reg, "FIT", y, x, form === "log-log" ? null : `form=${form}`), "FIT");
          expect(tDefault[0][3]).toBe("Std. error (HC3)");
        });

        it(`SUMMARY ${dataset} ${form}: rows used and left out, R², adjusted R², sigma, F and p, log-likelihood, AIC, BIC`, () => {
          const where = `${dataset} ${form}`;
          const s = f.summary;
          // AIC(m) and BIC(m) in R count the error variance already: the same numbers (checked in ols.R)
          expect(s.aic).toBe(s.r_aic);
          expect(s.bic).toBe(s.r_bic);
          for (const se of SE_TYPES) {
            const t = table(call(reg, "SUMMARY", y, x, `form=${form}; se=${se}`), `SUMMARY ${where}`);
            expect(t[0]).toEqual(["Statistic", "Value"]);
            expect(summaryValue(t, "Observations used")).toBe(f.n);
            expect(summaryValue(t, "Rows left out: blank or non-numeric")).toBe(c.rows_with_na);
            expect(summaryValue(t, "Rows left out: zero or blank under a log")).toBe(0);
            expect(summaryValue(t, "Rows left out: negative under a log")).toBe(0);
            check(summaryValue(t, "R²"), s.r_squared, "SUMMARY R²", `${where} R²`);
            check(summaryValue(t, "Adjusted R²"), s.adj_r_squared, "SUMMARY adjusted R²", `${where} adjusted R²`);
            check(summaryValue(t, "Residual std. error"), s.sigma, "SUMMARY residual std. error", `${where} sigma`);
            check(summaryValue(t, "F statistic"), s.f_statistic, "SUMMARY F statistic", `${where} F`);
            check(summaryValue(t, "F p-value"), s.f_p_value, "SUMMARY F p-value", `${where} F p-value`);
            check(summaryValue(t, "Log-likelihood"), s.log_likelihood, "SUMMARY log-likelihood", `${where} log-likelihood`);
            check(summaryValue(t, "AIC"), s.aic, "SUMMARY AIC", `${where} AIC`);
            check(summaryValue(t, "BIC"), s.bic, "SUMMARY BIC", `${where} BIC`);
          }
        });

        it(`ELASTICITY ${dataset} ${form}: one value per term, by name and by column number, at the mean and the median`, () => {
          c.x.forEach((name, j) => {
            for (const at of ["mean", "median"] as const) {
              const opts = `form=${form}; at=${at}`;
              const byName = call(reg, "ELASTICITY", y, x, name, opts);
              const byNumber = call(reg, "ELASTICITY", y, x, j + 1, opts);
              const where = `${dataset} ${form} at=${at} ${name}`;
              if (f.binary[j]) {
                const e = byName instanceof HostError ? byName : (table(byName, where)[0][0] as unknown);
                expectNa(e, `${where} (binary)`);
                continue;
              }
              check(table(byName, where)[0][0], f.elasticities[at].estimate[j], "ELASTICITY", `${where} by name`);
              check(table(byNumber, where)[0][0], f.elasticities[at].estimate[j], "ELASTICITY", `${where} by number`);
            }
          });
        });
      });
    }
  });
}

describe("HAC with an explicit lag length", () => {
  it("FIT trees log-log se=HAC lags=1: std. errors equal sandwich::NeweyWest(m, lag = 1, prewhite = FALSE, adjust = FALSE)", () => {
    const extra = ref.extra_hac_lags;
    const c = ref.cases[extra.dataset];
    const { y, x } = inputs(c);
    const t = table(call(reg, "FIT", y, x, `form=${extra.form}; se=HAC; lags=${extra.lags}`), "FIT trees lags=1");
    extra.se.forEach((s, j) => check(t[j + 1][3], s, "FIT std. error HAC lags=1", `trees log-log lags=1 ${c.forms[extra.form].terms[j]}`));
  });
});
