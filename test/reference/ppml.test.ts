/**
 * estimator=ppml (FIT, ELASTICITIES, ELASTICITY, EFFECTS, PREDICT, SUMMARY), the Santos Silva and
 * Tenreyro (2010) existence check, the shift and IHS fits with their elasticities, and the SUMMARY
 * "PPML contrast" rows, against R through the built bundle.
 *
 * Source of every expected number: test/reference/ppml.json, written by
 * `Rscript test/reference/scripts/ppml.R` (run from the repository root) with R 4.2.2, sandwich
 * 3.0.2, lmtest 0.9.40, MASS 7.3.58.2 and pscl 1.5.5 (Debian's r-cran-* packages; versions and
 * commands are recorded in the JSON). PPML, per case:
 *   m0 <- glm(f, family = quasipoisson, data = used, control = glm.control(epsilon = 1e-14, maxit = 200))
 *   m  <- glm(f, family = quasipoisson, data = used, control = <same>, start = coef(m0))   (refit: the
 *         weights of R's glm are otherwise those of its second-to-last iteration)
 *   coef(m); sqrt(diag(sandwich::vcovHC(m, type = "HC0" | "HC1"))); classical sqrt(diag(vcov(m)));
 *   z = b / se; p = 2 * pnorm(-abs(z)); b -/+ qnorm((1 + level) / 2) * se; deviance(m);
 *   cor(y, fitted(m))^2; sum(residuals(m, "pearson")^2) / df.residual(m);
 *   elasticity b (logged x) or b * mean(x) / median(x) (level x); percent effects 100 * expm1(b),
 *   100 * expm1(b - se^2 / 2) (Kennedy 1981), 100 * expm1(interval ends);
 *   predictions exp(x0'b), exp(x0'b -/+ qnorm((1 + level) / 2) * sqrt(x0' V x0)).
 * Shift and IHS: lm(log(art + c) ~ ...), c = 1 and 0.5, and lm(asinh(art) ~ ...) with
 *   sandwich::vcovHC HC0..HC3 and vcov(m); elasticity b * h'(x)x / (g'(y)y) at the means or medians
 *   (g'(y)y = y / (y + c) for log(y + c), y / sqrt(y^2 + 1) for asinh: Bellemare and Wichman 2020).
 * Datasets: MASS::ships, pscl::bioChemists, datasets::esoph (each with many zeros in y).
 *
 * Tolerances: PPML coefficients, elasticities, percent effects and predictions 1e-8
 * relative; PPML errors and everything computed from them (z, p, intervals, corrected effects,
 * prediction bounds, dispersion) 1e-7 relative; shift and IHS fits and elasticities 1e-9 relative;
 * each with a 1e-12 absolute floor. The worst relative error per quantity is printed at the end.
 */
import * as fs from "fs";
import * as path from "path";
import { call, loadFunctions, rows, HostError, type CellFn } from "../harness/loadFunctions";
import { ReferenceChecker, table } from "../harness/reference";

type BySe = Record<string, number[]>;
type Intervals = Record<"ci95" | "ci90", Record<string, { lower: number[]; upper: number[] }>>;
interface ElasticitySet {
  centre_x: number[];
  centre_y?: number;
  factor: (number | null)[];
  estimate: (number | null)[];
  se: Record<string, (number | null)[]>;
  intervals: Record<"ci95" | "ci90", Record<string, { lower: (number | null)[]; upper: (number | null)[] }>>;
}
interface PpmlCase {
  source: string;
  options: string;
  y: string;
  x: string[];
  data: Record<string, number[]>;
  rows: number;
  rows_dropped: number;
  formula: string;
  command: string;
  n: number;
  k: number;
  zeros: number;
  terms: string[];
  transforms: string[];
  binary: boolean[];
  coefficients: number[];
  se: BySe;
  z: BySe;
  p: BySe;
  intervals: Intervals;
  deviance: number;
  pseudo_r2: number;
  dispersion: number;
  refit_se_change: number;
  elasticities: { mean: ElasticitySet; median: ElasticitySet };
  effects: { terms: string[]; percent: number[]; corrected: BySe; intervals: Intervals };
  new_x: Record<string, number[]>;
  predict: Record<"ci95" | "ci90", Record<string, { fit: number[]; lower: number[]; upper: number[] }>>;
}
interface ShiftCase {
  options: string;
  y: string;
  x: string[];
  formula: string;
  n: number;
  k: number;
  y_transform: string;
  terms: string[];
  transforms: string[];
  binary: boolean[];
  coefficients: number[];
  se: BySe;
  t: BySe;
  p: BySe;
  intervals: Intervals;
  r_squared: number;
  sigma: number;
  elasticities: { mean: ElasticitySet; median: ElasticitySet };
}
interface ContrastTerm { term: string; ols: number; lower: number; upper: number; ppml: number; outside: boolean }

const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "ppml.json"), "utf8")) as {
  r_version: string;
  ppml: Record<string, PpmlCase>;
  existence: { y: string; x: string[]; options: string; sep_one: number[]; sep_one_nonzero_rows: number[]; art_positive_where_sep_one_nonzero: number };
  shift: Record<string, ShiftCase>;
  contrast: { options: string; rows_lost: number; n_ols: number; terms: Record<string, ContrastTerm> };
};

const COEF = 1e-8;
const ERR = 1e-7;
const SHIFT = 1e-9;
const ABS = 1e-12;
const PPML_SE = ["HC1", "HC0", "classical"] as const;
const OLS_SE = ["classical", "HC0", "HC1", "HC2", "HC3"] as const;
const LEVELS = [[0.95, "ci95"], [0.9, "ci90"]] as const;

/** Worst relative error seen per quantity group, printed at the end. */
const checker = new ReferenceChecker(1e-9, ABS);
const check = (actual: unknown, expected: number, rel: number, group: string, where: string): void => checker.check(actual, expected, group, where, rel);

function hostError(result: unknown, code: string, where: string): HostError {
  if (!(result instanceof HostError)) throw new Error(`${where}: expected a ${code} error, got ${JSON.stringify(result)}`);
  expect(result.code).toBe(code);
  return result;
}

function value(t: unknown[][], label: string): unknown {
  const row = t.find((r) => r[0] === label);
  if (!row) throw new Error(`no row labelled ${label}; labels: ${t.map((r) => r[0]).join(" | ")}`);
  return row[1];
}

/** Host-style y and x ranges with a header row. */
function inputs(data: Record<string, number[]>, y: string, x: string[]): { y: unknown[][]; x: unknown[][] } {
  return { y: rows([data[y]], [y]), x: rows(x.map((v) => data[v]), x) };
}

const bio = ref.ppml.bioChemists.data;

let reg: Map<string, CellFn>;
beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  console.log(checker.report(`worst relative error against R (${ref.r_version}) per quantity`, 40));
});

// Fixture guard: asserts on the JSON only. The engine is checked on each quantity named here by the
// tests below: zeros kept and observations used (SUMMARY "Zeros kept in …" and "Observations used"),
// and the errors the refit stabilised (FIT std. errors of every type against R).
describe("fixture guard: reference data", () => {
  it("fixture guard: the PPML cases have many zeros in y, and R's refit made the errors stable", () => {
    expect(Object.keys(ref.ppml).sort()).toEqual(["bioChemists", "bioChemists_loglevel", "bioChemists_sep_both", "esoph", "ships"]);
    // R: sum(incidents == 0) among service > 0; sum(art == 0); sum(ncases == 0) among ncontrols > 0
    expect([ref.ppml.ships.zeros, ref.ppml.bioChemists.zeros, ref.ppml.esoph.zeros]).toEqual([8, 275, 29]);
    expect([ref.ppml.ships.n, ref.ppml.bioChemists.n, ref.ppml.esoph.n]).toEqual([34, 915, 76]);
    for (const c of Object.values(ref.ppml)) expect(c.refit_se_change).toBeLessThan(1e-7);
  });
});

for (const [name, c] of Object.entries(ref.ppml)) {
  const { y, x } = inputs(c.data, c.y, c.x);
  describe(`PPML ${name} (${c.source}; R: ${c.formula}; options "${c.options}")`, () => {
    for (const se of PPML_SE) {
      it(`FIT se=${se}: coefficients, std. errors, z, normal p-values, 95% and 90% intervals`, () => {
        for (const [level, key] of LEVELS) {
          const where = `${name} se=${se} level=${level}`;
          const t = table(call(reg, "FIT", y, x, `${c.options}; se=${se}; level=${level}`), `FIT ${where}`);
          const pct = Math.round(level * 100);
          expect(t[0]).toEqual(["Term", "Transform", "Coefficient", `Std. error (${se})`, "z", "p-value", `Low (${pct}%)`, `High (${pct}%)`]);
          expect(t.length).toBe(c.k + 1);
          c.terms.forEach((term, j) => {
            const r = t[j + 1];
            expect(r[0]).toBe(term);
            expect(r[1]).toBe(c.transforms[j]);
            check(r[2], c.coefficients[j], COEF, "PPML coefficient", `${where} ${term}`);
            check(r[3], c.se[se][j], ERR, `PPML std. error ${se}`, `${where} ${term}`);
            check(r[4], c.z[se][j], ERR, "PPML z", `${where} ${term}`);
            check(r[5], c.p[se][j], ERR, "PPML p-value", `${where} ${term}`);
            check(r[6], c.intervals[key][se].lower[j], ERR, "PPML interval", `${where} ${term} lower`);
            check(r[7], c.intervals[key][se].upper[j], ERR, "PPML interval", `${where} ${term} upper`);
          });
        }
      });

      for (const at of ["mean", "median"] as const) {
        it(`ELASTICITIES se=${se} at=${at}: b for a logged x, b·x̄ for a level x; binary terms #N/A`, () => {
          const e = c.elasticities[at];
          for (const [level, key] of LEVELS) {
            const where = `${name} se=${se} at=${at} level=${level}`;
            const t = table(call(reg, "ELASTICITIES", y, x, `${c.options}; se=${se}; at=${at}; level=${level}`), `ELASTICITIES ${where}`);
            expect(t[0][3]).toBe(`Std. error (${se})`);
            c.x.forEach((v, j) => {
              const r = t[j + 1];
              expect(r[0]).toBe(v);
              if (c.binary[j]) {
                expect(r.slice(2, 6)).toEqual(["", "", "", ""]); // empty, not #N/A
                expect(r[6]).toBe("binary: see ELX.EFFECTS");
                return;
              }
              check(r[2], e.estimate[j] as number, COEF, "PPML elasticity", `${where} ${v}`);
              check(r[3], e.se[se][j] as number, ERR, "PPML elasticity std. error", `${where} ${v}`);
              check(r[4], e.intervals[key][se].lower[j] as number, ERR, "PPML elasticity interval", `${where} ${v} lower`);
              check(r[5], e.intervals[key][se].upper[j] as number, ERR, "PPML elasticity interval", `${where} ${v} upper`);
              if (c.transforms[j + 1] === "log") expect(r[6]).toBe("everywhere (constant elasticity)");
              else expect(String(r[6])).toContain(`${at} ${v} = `);
            });
          }
        });
      }

      it(`EFFECTS se=${se}: percent effects of the level regressors, Kennedy corrected, intervals`, () => {
        const fx = c.effects;
        for (const [level, key] of LEVELS) {
          const where = `${name} se=${se} level=${level}`;
          const t = table(call(reg, "EFFECTS", y, x, `${c.options}; se=${se}; level=${level}`), `EFFECTS ${where}`);
          expect(t.slice(1).map((r) => r[0])).toEqual(fx.terms);
          fx.terms.forEach((v, j) => {
            const r = t[j + 1];
            check(r[1], fx.percent[j], COEF, "PPML percent effect", `${where} ${v}`);
            check(r[2], fx.corrected[se][j], ERR, "PPML corrected effect (Kennedy)", `${where} ${v}`);
            check(r[3], fx.intervals[key][se].lower[j], ERR, "PPML effect interval", `${where} ${v} lower`);
            check(r[4], fx.intervals[key][se].upper[j], ERR, "PPML effect interval", `${where} ${v} upper`);
          });
        }
      });

      it(`PREDICT se=${se} interval=mean: exp(x0'b) and exp(x0'b ± z·se), no retransformation factor`, () => {
        const nx = rows(c.x.map((v) => c.new_x[v]), c.x);
        const m = c.new_x[c.x[0]].length;
        for (const [level, key] of LEVELS) {
          const where = `${name} se=${se} level=${level}`;
          const p = c.predict[key][se];
          for (const retransform of ["duan", "normal", "none"]) {
            const t = table(call(reg, "PREDICT", y, x, nx, `${c.options}; se=${se}; level=${level}; interval=mean; retransform=${retransform}`), `PREDICT ${where}`);
            const pct = Math.round(level * 100);
            expect(t[0]).toEqual([`Predicted ${c.y}`, `Low (${pct}%)`, `High (${pct}%)`]);
            expect(t.length).toBe(m + 1);
            for (let i = 0; i < m; i++) {
              check(t[i + 1][0], p.fit[i], COEF, "PPML prediction", `${where} row ${i + 1} retransform=${retransform}`);
              check(t[i + 1][1], p.lower[i], ERR, "PPML prediction bound", `${where} row ${i + 1} lower`);
              check(t[i + 1][2], p.upper[i], ERR, "PPML prediction bound", `${where} row ${i + 1} upper`);
            }
          }
        }
      });
    }

    it("FIT without se=: HC1 is the PPML default", () => {
      const t = table(call(reg, "FIT", y, x, c.options), "FIT default se");
      expect(t[0][3]).toBe("Std. error (HC1)");
      c.terms.forEach((term, j) => check(t[j + 1][3], c.se.HC1[j], ERR, "PPML std. error HC1", `${name} default se ${term}`));
    });

    it("ELASTICITY: one value per non-binary term, by name and by column number", () => {
      c.x.forEach((v, j) => {
        if (c.binary[j]) return;
        for (const at of ["mean", "median"] as const) {
          const opts = `${c.options}; at=${at}`;
          check(table(call(reg, "ELASTICITY", y, x, v, opts), v)[0][0], c.elasticities[at].estimate[j] as number, COEF, "PPML elasticity", `${name} ELASTICITY ${v} at=${at}`);
          check(table(call(reg, "ELASTICITY", y, x, j + 1, opts), v)[0][0], c.elasticities[at].estimate[j] as number, COEF, "PPML elasticity", `${name} ELASTICITY #${j + 1} at=${at}`);
        }
      });
    });

    it("SUMMARY: rows in order; observations, zeros kept, deviance, pseudo R², Pearson dispersion, iterations", () => {
      for (const se of PPML_SE) {
        const t = table(call(reg, "SUMMARY", y, x, `${c.options}; se=${se}`), `SUMMARY ${name}`);
        expect(t.map((r) => r[0])).toEqual([
          "Statistic", "Form", "Estimator", "Std. errors", "Observations used", "Rows left out: blank or non-numeric",
          "Rows left out: zero or blank under a log", "Rows left out: negative under a log", `Zeros kept in ${c.y}`, "Deviance",
          "Pseudo R² (squared correlation of y and fitted)", "Pearson dispersion", "Iterations", "Caution",
        ]);
        expect(String(value(t, "Estimator"))).toContain("PPML");
        expect(value(t, "Std. errors")).toBe(se);
        expect(value(t, "Observations used")).toBe(c.n);
        expect(value(t, "Rows left out: blank or non-numeric")).toBe(0);
        expect(value(t, "Rows left out: zero or blank under a log")).toBe(c.rows_dropped);
        expect(value(t, "Rows left out: negative under a log")).toBe(0);
        expect(value(t, `Zeros kept in ${c.y}`)).toBe(c.zeros);
        check(value(t, "Deviance"), c.deviance, COEF, "PPML deviance", name);
        check(value(t, "Pseudo R² (squared correlation of y and fitted)"), c.pseudo_r2, COEF, "PPML pseudo R²", name);
        check(value(t, "Pearson dispersion"), c.dispersion, ERR, "PPML Pearson dispersion", name);
        const it = value(t, "Iterations");
        expect(Number.isInteger(it)).toBe(true);
        expect(it as number).toBeGreaterThan(1);
        expect(it as number).toBeLessThanOrEqual(200);
        expect(String(value(t, "Caution"))).toContain("not causes");
      }
    });
  });
}

describe("existence of the PPML estimates (Santos Silva and Tenreyro 2010)", () => {
  const e = ref.existence;
  it("fires when a regressor is zero wherever y > 0 and of one sign in some zero rows, naming it and the paper", () => {
    // the constructed column (ppml.R): 1 on every third row with art = 0, 0 elsewhere
    expect(e.art_positive_where_sep_one_nonzero).toBe(0);
    const data = { ...bio, sep_one: e.sep_one };
    const { y, x } = inputs(data, e.y, e.x);
    const err = hostError(call(reg, "FIT", y, x, e.options), "#VALUE!", "FIT with sep_one");
    expect(err.message).toContain("do not exist");
    expect(err.message).toContain("Santos Silva and Tenreyro 2010");
    expect(err.message).toContain("sep_one is zero in every row where art is above zero");
    // sheet rows = data rows + 1 (header row)
    expect(err.message).toContain(`rows ${e.sep_one_nonzero_rows.slice(0, 3).map((r) => r + 1).join(", ")}`);
    for (const fn of ["ELASTICITIES", "SUMMARY", "EFFECTS"]) {
      const r = hostError(call(reg, fn, y, x, e.options), "#VALUE!", fn);
      expect(r.message).toContain("sep_one");
    }
  });

  it("does not fire when the column is zero on y > 0 rows but of both signs on zero rows (R's fit exists: bioChemists_sep_both)", () => {
    const c = ref.ppml.bioChemists_sep_both;
    const { y, x } = inputs(c.data, c.y, c.x);
    const t = table(call(reg, "FIT", y, x, c.options), "FIT sep_both");
    c.terms.forEach((term, j) => check(t[j + 1][2], c.coefficients[j], COEF, "PPML coefficient", `sep_both ${term}`));
    const sep = c.data.sep_both;
    const art = c.data.art;
    expect(sep.every((v, i) => art[i] === 0 || v === 0)).toBe(true);
    expect(sep.some((v) => v > 0) && sep.some((v) => v < 0)).toBe(true);
  });
});

describe("PPML bad input", () => {
  const c = ref.ppml.ships;
  const { y, x } = inputs(c.data, c.y, c.x);
  it("a negative y is an error that counts it and names its row", () => {
    const yneg = y.map((r, i) => (i === 3 ? [-1] : r));
    const err = hostError(call(reg, "FIT", yneg, x, c.options), "#VALUE!", "negative y");
    expect(err.message).toContain("incidents has 1 negative value (row 4)");
  });
  it("se=HC3 (and HC2, HAC) are errors under ppml", () => {
    for (const se of ["HC3", "HC2", "HAC"]) {
      const err = hostError(call(reg, "FIT", y, x, `${c.options}; se=${se}`), "#VALUE!", `se=${se}`);
      expect(err.message).toContain(`se=${se} is not offered with estimator=ppml`);
    }
  });
  it("interval=individual under ppml gives error cells, no numbers", () => {
    const nx = rows(c.x.map((v) => c.new_x[v]), c.x);
    const out = call(reg, "PREDICT", y, x, nx, `${c.options}; interval=individual`);
    // either the whole call or every value cell is an error that names the option
    if (out instanceof HostError) {
      expect(out.message).toContain("interval=individual");
      return;
    }
    const t = table(out, "PREDICT individual");
    for (const r of t.slice(1)) {
      for (const cell of r) {
        expect(cell).toBeInstanceOf(HostError);
        expect((cell as HostError).message).toContain("interval=individual");
      }
    }
  });
  it("a y that is zero in every row is an error", () => {
    const y0 = y.map((r, i) => (i === 0 ? r : [0]));
    const err = hostError(call(reg, "FIT", y0, x, c.options), "#VALUE!", "all-zero y");
    expect(err.message).toContain("zero in every row");
  });
});

describe("shift and IHS fits and elasticities (pscl::bioChemists; R lm with sandwich)", () => {
  const xAll = (s: ShiftCase) => inputs(bio, s.y, s.x);
  for (const [name, s] of Object.entries(ref.shift)) {
    describe(`${name} (R: ${s.formula}; options "${s.options}")`, () => {
      const { y, x } = xAll(s);
      it("FIT: transforms only the columns with zeros; coefficients, errors of every type, t, p, intervals", () => {
        for (const se of OLS_SE) {
          for (const [level, key] of LEVELS) {
            const where = `${name} se=${se} level=${level}`;
            const t = table(call(reg, "FIT", y, x, `${s.options}; se=${se}; level=${level}`), `FIT ${where}`);
            expect(t[0][3]).toBe(`Std. error (${se})`);
            expect(t[0][4]).toBe("t");
            s.terms.forEach((term, j) => {
              const r = t[j + 1];
              expect(r[0]).toBe(term);
              expect(r[1]).toBe(s.transforms[j]);
              check(r[2], s.coefficients[j], SHIFT, "shift/IHS coefficient", `${where} ${term}`);
              check(r[3], s.se[se][j], SHIFT, "shift/IHS std. error", `${where} ${term}`);
              check(r[4], s.t[se][j], SHIFT, "shift/IHS t", `${where} ${term}`);
              check(r[5], s.p[se][j], SHIFT, "shift/IHS p-value", `${where} ${term}`);
              check(r[6], s.intervals[key][se].lower[j], SHIFT, "shift/IHS interval", `${where} ${term} lower`);
              check(r[7], s.intervals[key][se].upper[j], SHIFT, "shift/IHS interval", `${where} ${term} upper`);
            });
          }
        }
      });

      it("ELASTICITIES at the mean and the median: b·h′(x̄)x̄/(g′(ȳ)ȳ), |factor|·SE, the point named", () => {
        for (const at of ["mean", "median"] as const) {
          const e = s.elasticities[at];
          for (const se of OLS_SE) {
            for (const [level, key] of LEVELS) {
              const where = `${name} se=${se} at=${at} level=${level}`;
              const t = table(call(reg, "ELASTICITIES", y, x, `${s.options}; se=${se}; at=${at}; level=${level}`), `ELASTICITIES ${where}`);
              s.x.forEach((v, j) => {
                const r = t[j + 1];
                expect(r[0]).toBe(v);
                expect(r[1]).toBe(s.transforms[j + 1]);
                if (s.binary[j]) {
                  expect(r.slice(2, 6)).toEqual(["", "", "", ""]); // empty, not #N/A
                  return;
                }
                check(r[2], e.estimate[j] as number, SHIFT, "shift/IHS elasticity", `${where} ${v}`);
                check(r[3], e.se[se][j] as number, SHIFT, "shift/IHS elasticity std. error", `${where} ${v}`);
                check(r[4], e.intervals[key][se].lower[j] as number, SHIFT, "shift/IHS elasticity interval", `${where} ${v} lower`);
                check(r[5], e.intervals[key][se].upper[j] as number, SHIFT, "shift/IHS elasticity interval", `${where} ${v} upper`);
                // y is transformed in every case here, so its point is always named; x's when not a plain log
                expect(String(r[6])).toContain(`${at} art = `);
                if (s.transforms[j + 1] !== "log") expect(String(r[6])).toContain(`${at} ${v} = `);
                else expect(String(r[6])).not.toContain(`${at} ${v} = `);
              });
            }
          }
        }
      });

      it("SUMMARY: fit statistics on the transformed scale; R² and residual std. error", () => {
        const t = table(call(reg, "SUMMARY", y, x, s.options), `SUMMARY ${name}`);
        expect(value(t, "Fit statistics on the scale of")).toBe(s.y_transform === "asinh" ? "asinh(y)" : s.y_transform.replace("v", "y"));
        expect(value(t, "Observations used")).toBe(s.n);
        check(value(t, "R²"), s.r_squared, SHIFT, "shift/IHS R²", name);
        check(value(t, "Residual std. error"), s.sigma, SHIFT, "shift/IHS residual std. error", name);
      });
    });
  }

  it("the transform labels: log(v+1), log(v+0.5), asinh; phd (no zeros) keeps the plain log", () => {
    expect(ref.shift.shift1.transforms).toEqual(["constant", "level", "level", "level", "log", "log(v+1)"]);
    expect(ref.shift.shift05.transforms).toEqual(["constant", "level", "level", "level", "log", "log(v+0.5)"]);
    expect(ref.shift.ihs.transforms).toEqual(["constant", "level", "level", "level", "log", "asinh"]);
  });

  it("EFFECTS under zeros=shift is #N/A: the coefficients are not percent changes of y", () => {
    const { y, x } = xAll(ref.shift.shift1);
    const err = hostError(call(reg, "EFFECTS", y, x, ref.shift.shift1.options), "#N/A", "EFFECTS shift");
    expect(err.message).toContain("zeros=shift");
  });
});

describe("SUMMARY's PPML contrast for a log-log OLS fit that dropped zero rows (pscl::bioChemists)", () => {
  it("counts the rows the log lost and lists the terms whose PPML elasticity is outside the OLS interval", () => {
    const k = ref.contrast;
    const { y, x } = inputs(bio, "art", ["fem", "mar", "kid5", "phd", "ment"]);
    const t = table(call(reg, "SUMMARY", y, x, k.options), "SUMMARY contrast");
    expect(value(t, "Observations used")).toBe(k.n_ols);
    expect(value(t, "Rows left out: zero or blank under a log")).toBe(k.rows_lost);
    expect(value(t, "Rows the log of art lost (zero or blank)")).toBe(k.rows_lost);
    const text = String(value(t, "PPML contrast"));
    const fmt = (v: number) => Number(v.toPrecision(4)).toString();
    const outside = Object.values(k.terms).filter((e) => e.outside);
    // R: kid5 and ment outside, phd inside (ppml.R, "contrast")
    expect(outside.map((e) => e.term)).toEqual(["kid5", "ment"]);
    expect(text).toContain("materially different");
    for (const e of Object.values(k.terms)) {
      const piece = `${e.term} ${fmt(e.ppml)} against ${fmt(e.ols)} [${fmt(e.lower)}, ${fmt(e.upper)}]`;
      if (e.outside) expect(text).toContain(piece);
      else expect(text).not.toContain(`${e.term} `);
    }
  });

  it("has no contrast rows when nothing was dropped from y (a logic check: esoph's ncases + 1, no zeros left in y)", () => {
    const { y, x } = inputs(ref.ppml.esoph.data, "ncases", ["ncontrols", "age"]);
    const t = table(call(reg, "SUMMARY", y.map((r, i) => (i === 0 ? r : [(r[0] as number) + 1])), x, "zeros=drop; levels=age"), "SUMMARY no contrast");
    expect(t.some((r) => String(r[0]).startsWith("Rows the log of"))).toBe(false);
    expect(t.some((r) => r[0] === "PPML contrast")).toBe(false);
  });
});
