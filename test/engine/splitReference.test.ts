/**
 * The split fit on the R reference cases, against R and against the single-thread engine.
 *
 * Sources: test/reference/ols.json (R stats::lm with sandwich::vcovHC HC0–HC3 and vcov, t, p =
 * 2·pt(−|t|, df), intervals b ∓ qt((1 + level)/2, df)·se, summary(m)$r.squared; written by
 * test/reference/scripts/ols.R) and test/reference/diagnostics.json (lmtest::bptest(m), the
 * studentized Breusch–Pagan test; test/reference/scripts/diagnostics.R). Datasets trees, mtcars,
 * LifeCycleSavings and airquality (42 rows with NA, left out as blanks) from R's datasets package.
 *
 * Each case is fitted over 1, 2, 3, 5 and 8 local parts of random sizes (empty parts included) and
 * random chunk sizes (1 row upwards):
 * - against R: 1e-9 relative with a 1e-12 absolute floor, as test/reference/ols.test.ts;
 * - against the single-thread engine (ELX.FIT / ELX.HETEROTEST's engine on the same rows): 1e-12
 *   relative (an interval's ends on the scale of |b| + q·se); a p-value to 1e-12 times its condition number |d log p / d log statistic| (p far in
 *   its tail magnifies the last bits of its statistic: p ≈ 1e-20 at t = 17 has condition ≈ 300).
 */
import * as fs from "fs";
import * as path from "path";
import { rel, randomChunks, randomShares, single, spec, split, worst } from "./splitHelpers";
import { chiSquareSf, studentTwoSided } from "../../functions/engine/distributions";
import { Rng } from "../simulation/rng";
import type { ColumnFitSpec } from "../../functions/engine/columnFitTypes";

type BySe = Record<string, number[]>;
interface FormRef {
  n: number;
  terms: string[];
  coefficients: number[];
  se: BySe;
  t: BySe;
  p: BySe;
  intervals: Record<"ci95", Record<string, { lower: number[]; upper: number[] }>>;
  summary: { r_squared: number };
}
interface CaseRef { y: string; x: string[]; rows: number; rows_with_na: number; data: Record<string, (number | null)[]>; forms: Record<string, FormRef> }
const ols = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../reference/ols.json"), "utf8")) as { cases: Record<string, CaseRef> };
const diag = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../reference/diagnostics.json"), "utf8")) as {
  cases: Record<string, { forms: Record<string, { n: number; tests: { bp: { statistic: number; df: number; p_value: number } } }> }>;
};

const SE = ["classical", "HC0", "HC1", "HC2", "HC3"] as const;
const FORMS = ["log-log", "log-level", "level-log", "level-level"] as const;
const PARTS = [1, 2, 3, 5, 8];

function near(a: number, e: number): boolean {
  return Math.abs(a - e) <= Math.max(1e-12, 1e-9 * Math.abs(e));
}

/** |d log p / d log x| of p = f(x), by central differences. */
function pCondition(f: (x: number) => number, x: number): number {
  const h = 1e-5;
  const a = f(x * (1 + h));
  const b = f(x * (1 - h));
  if (!(a > 0 && b > 0)) return Infinity;
  return Math.abs(Math.log(a) - Math.log(b)) / (2 * h);
}

function columnsOf(c: CaseRef): { y: Float64Array; x: Float64Array[] } {
  const col = (name: string) => Float64Array.from(c.data[name], (v) => (v === null ? NaN : v));
  return { y: col(c.y), x: c.x.map(col) };
}

const worstVsSingle: Record<string, number> = {};
const worstVsR: Record<string, number> = {};
function note(table: Record<string, number>, key: string, v: number): void {
  table[key] = Math.max(table[key] ?? 0, v);
}

for (const [name, c] of Object.entries(ols.cases)) {
  const { y, x } = columnsOf(c);
  describe(`${name}: ${c.y} ~ ${c.x.join(" + ")} (R datasets)`, () => {
    for (const form of FORMS) {
      for (const se of SE) {
        it(`${name} ${form} se=${se}: split over 1–8 parts equals R (sandwich/lm, 1e-9) and the single-thread engine (1e-12)`, async () => {
          const f = c.forms[form];
          const sp: ColumnFitSpec = spec(c.y, c.x, { form, se });
          const one = single(y, x, sp);
          const g = new Rng(name.length * 1000 + form.length * 10 + se.length);
          for (const P of PARTS) {
            const s = await split(y, x, sp, randomShares(y.length, P, g), P === 3 ? 1 : randomChunks(g, 12));
            // rows used and left out, as R's na.omit
            expect(s.n).toBe(f.n);
            expect(s.leftOut.blank).toBe(c.rows_with_na);
            expect(s.terms).toEqual(f.terms);
            // against R
            f.terms.forEach((_, j) => {
              const ci = f.intervals.ci95[se];
              const pairs: [string, number, number][] = [
                ["coefficients", s.coefficients[j], f.coefficients[j]], ["standardErrors", s.standardErrors[j], f.se[se][j]],
                ["t", s.t[j], f.t[se][j]], ["p", s.p[j], f.p[se][j]], ["intervals", s.lower[j], ci.lower[j]], ["intervals", s.upper[j], ci.upper[j]],
              ];
              for (const [q, a, e] of pairs) {
                note(worstVsR, q, rel(a, e));
                expect({ q, j, a, ok: near(a, e) }).toEqual({ q, j, a, ok: true });
              }
            });
            note(worstVsR, "rSquared", rel(s.rSquared, f.summary.r_squared));
            expect(near(s.rSquared, f.summary.r_squared)).toBe(true);
            // against the single-thread engine
            const w = worst(s, one);
            for (const [q, v] of Object.entries(w)) {
              if (q === "p" || q === "bpP") continue;
              note(worstVsSingle, q, v);
              expect({ q, v, ok: v <= 1e-12 }).toEqual({ q, v, ok: true });
            }
            s.p.forEach((pv, j) => {
              const d = rel(pv, one.p[j]);
              const k = pCondition((t) => studentTwoSided(t, s.dfResid), Math.abs(one.t[j]));
              note(worstVsSingle, "p (÷ its condition)", d / Math.max(1, k));
              expect(d).toBeLessThanOrEqual(1e-12 * Math.max(1, k));
            });
          }
        });
      }
    }
    for (const form of ["log-log", "log-level"] as const) {
      it(`${name} ${form}: studentized Breusch–Pagan over 1–8 parts equals lmtest::bptest (1e-9) and ELX.HETEROTEST's engine (1e-12)`, async () => {
        const r = diag.cases[name].forms[form].tests.bp;
        const sp = spec(c.y, c.x, { form });
        const one = single(y, x, sp);
        const g = new Rng(name.length * 77 + form.length);
        for (const P of PARTS) {
          const s = await split(y, x, sp, randomShares(y.length, P, g), randomChunks(g, 7));
          const bp = s.breuschPagan;
          expect(bp).not.toBeNull();
          expect(bp!.df).toBe(r.df);
          note(worstVsR, "bpStatistic", rel(bp!.statistic, r.statistic));
          note(worstVsR, "bpP", rel(bp!.p, r.p_value));
          expect(near(bp!.statistic, r.statistic)).toBe(true);
          expect(near(bp!.p, r.p_value)).toBe(true);
          const ds = rel(bp!.statistic, one.bp!.statistic);
          const dp = rel(bp!.p, one.bp!.p);
          const k = pCondition((v) => chiSquareSf(v, r.df), one.bp!.statistic);
          note(worstVsSingle, "bpStatistic", ds);
          note(worstVsSingle, "bpP (÷ its condition)", dp / Math.max(1, k));
          expect(ds).toBeLessThanOrEqual(1e-12);
          expect(dp).toBeLessThanOrEqual(1e-12 * Math.max(1, k));
        }
      });
    }
  });
}

afterAll(() => {
  console.log(`R reference cases: worst relative difference, split vs single-thread\n${JSON.stringify(worstVsSingle, null, 1)}\nsplit vs R\n${JSON.stringify(worstVsR, null, 1)}`);
});
