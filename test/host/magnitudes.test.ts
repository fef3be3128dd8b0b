/**
 * Through the host's door: data of extreme magnitude (|y| or |x| near 1e−150, 1e77, 1e153) give the
 * numbers of the same data in ordinary units, never a false message ("y does not vary", "the fit is
 * exact") and never NaN. The reference is scaling invariance, a property of least squares: with y
 * multiplied by s_y and an x column by s_x, t, p, R², F, elasticities and their intervals, every
 * residual test, Duan's factor and the Box–Cox / PE results do not change, and level-y coefficients
 * and standard errors scale by s_y (the textbook result on units of measurement, e.g. Greene,
 * Econometric Analysis, cited from memory; each test statistic's invariance follows from its
 * definition: n·R², F and moment ratios do not change when a column is multiplied by a constant).
 * Data: 300 rows of the seeded demo data.
 */
import * as fs from "fs";
import * as path from "path";
import { call, HostError, loadFunctions } from "../harness/loadFunctions";

const reg = loadFunctions();
const demo = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../data/demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };
const col = (n: string) => demo.columns.indexOf(n);
const NAMES = ["Price", "Footfall", "Promo", "Income"];
const use = demo.rows.filter((r) => ["Units", ...NAMES].every((n) => typeof r[col(n)] === "number") && (r[col("Units")] as number) > 0 && (r[col("Footfall")] as number) > 0).slice(0, 300);

function ranges(sy: number, sx: number): [unknown[][], unknown[][]] {
  const y = [["Units"], ...use.map((r) => [(r[col("Units")] as number) * sy])];
  // Promo is 0/1 and stays as it is; the other regressors are rescaled
  const x = [NAMES, ...use.map((r) => NAMES.map((n) => (n === "Promo" ? r[col(n)] : (r[col(n)] as number) * sx)))];
  return [y, x];
}

/** Relative agreement: rounding of the rescaled data moves results by about κ·1e−16. */
const REL = 1e-9;
const LAMBDA_ABS = 1e-7;

let worst = 0;
let worstWhere = "";

function same(a: unknown, b: unknown, where: string, rel = REL, abs = 0): void {
  if (b instanceof HostError) {
    if (!(a instanceof HostError)) throw new Error(`${where}: expected the error "${b.message}", got ${JSON.stringify(a)}`);
    expect(a.message).toBe(b.message);
    return;
  }
  if (typeof b === "string") {
    expect(a).toBe(b);
    return;
  }
  if (typeof a !== "number" || !Number.isFinite(a)) throw new Error(`${where}: expected a number near ${b}, got ${a instanceof HostError ? `${a.code} ${a.message}` : JSON.stringify(a)}`);
  const d = Math.abs(a - (b as number));
  const r = d / Math.max(Math.abs(b as number), 1e-300);
  if (abs === 0 && r > worst) {
    worst = r;
    worstWhere = where;
  }
  if (!(d <= Math.max(rel * Math.abs(b as number), abs))) throw new Error(`${where}: ${a} against ${b} (rel ${r.toExponential(2)})`);
}

function run(id: string, sy: number, sx: number, form: string): unknown[][] {
  const [y, x] = ranges(sy, sx);
  const t = call(reg, id, y, x, `form=${form}`);
  if (t instanceof HostError) throw new Error(`${id} ${form} y×${sy} x×${sx}: ${t.code} ${t.message}`);
  return t as unknown[][];
}

/** Every number in a result is finite, and no error cell says "does not vary" or "exact". */
function honest(t: unknown[][], where: string): void {
  for (const r of t) {
    for (const c of r) {
      if (typeof c === "number" && !Number.isFinite(c)) throw new Error(`${where}: a non-finite number`);
      if (c instanceof HostError && /does not vary|is exact|cannot be computed/.test(c.message ?? "")) throw new Error(`${where}: false message "${c.message}"`);
      if (typeof c === "string" && /NaN|Infinity/.test(c)) throw new Error(`${where}: "${c}"`);
    }
  }
}

const FORMS = ["level-level", "log-log", "log-level", "level-log"];
const SCALES = [1e-150, 1e77, 1e153];
const CASES: [string, (s: number) => [number, number]][] = [
  ["y", (s) => [s, 1]],
  ["x", (s) => [1, s]],
  ["y and x", (s) => [s, s]],
];
const SUMMARY_INVARIANT = ["R²", "Adjusted R²", "F statistic", "F p-value", "Smearing factor (Duan)", "Normal-theory factor", "Largest VIF", "VIF: Price", "VIF: Footfall", "VIF: Promo", "VIF: Income"];

describe("extreme magnitudes give the numbers of ordinary units", () => {
  afterAll(() => console.log(`extreme magnitudes: worst relative difference to ordinary units ${worst.toExponential(2)} (${worstWhere})`));

  for (const form of FORMS) {
    const base = Object.fromEntries(["FIT", "ELASTICITIES", "SUMMARY", "TESTS", "FORMCHECK"].map((id) => [id, run(id, 1, 1, form)]));
    for (const [what, scales] of CASES) {
      for (const s of SCALES) {
        const [sy, sx] = scales(s);
        it(`${form}, ${what} × ${s}: FIT t and p, ELASTICITIES, SUMMARY, TESTS and FORMCHECK agree; no NaN, no false message`, () => {
          const where = `${form} ${what}×${s}`;
          const fit = run("FIT", sy, sx, form);
          honest(fit, `${where} FIT`);
          fit.slice(1).forEach((r, j) => {
            // a log shifts by the log of the scale: the intercept (not the slopes) moves then
            if (r[0] === "(Intercept)" && form !== "level-level") return;
            same(r[4], base.FIT[j + 1][4], `${where} FIT t ${r[0]}`);
            same(r[5], base.FIT[j + 1][5], `${where} FIT p ${r[0]}`);
          });
          if (form === "level-level" && sx === 1) {
            // level y, x unchanged: every coefficient and standard error scales by s_y
            fit.slice(1).forEach((r, j) => {
              same((r[2] as number) / sy, base.FIT[j + 1][2], `${where} FIT coefficient/s ${r[0]}`);
              same((r[3] as number) / sy, base.FIT[j + 1][3], `${where} FIT std. error/s ${r[0]}`);
            });
          }
          const el = run("ELASTICITIES", sy, sx, form);
          honest(el, `${where} ELASTICITIES`);
          el.slice(1).forEach((r, j) => [2, 3, 4, 5].forEach((c) => same(r[c], base.ELASTICITIES[j + 1][c], `${where} ELASTICITIES ${r[0]} col ${c}`)));
          const sm = run("SUMMARY", sy, sx, form);
          honest(sm, `${where} SUMMARY`);
          for (const label of SUMMARY_INVARIANT) {
            const a = sm.find((r) => r[0] === label);
            const b = base.SUMMARY.find((r) => r[0] === label);
            if (b) same(a?.[1], b[1], `${where} SUMMARY ${label}`);
          }
          const sigma = (t: unknown[][]) => t.find((r) => r[0] === "Residual std. error")?.[1] as number;
          same(sigma(sm) / (form.startsWith("level") ? sy : 1), sigma(base.SUMMARY), `${where} SUMMARY residual std. error`);
          const ts = run("TESTS", sy, sx, form);
          honest(ts, `${where} TESTS`);
          ts.slice(1).forEach((r, j) => {
            same(r[1], base.TESTS[j + 1][1], `${where} TESTS ${r[0]} statistic`, 1e-7);
            same(r[3], base.TESTS[j + 1][3], `${where} TESTS ${r[0]} p`, 1e-7);
          });
          if (form.startsWith("log") && sx === 1) {
            // FORMCHECK compares logs and levels of y on the same x side; the y side is what is rescaled here
            const fc = run("FORMCHECK", sy, sx, form);
            honest(fc, `${where} FORMCHECK`);
            fc.slice(1).forEach((r, j) => {
              const b = base.FORMCHECK[j + 1];
              if (String(r[0]).startsWith("Box–Cox") && String(r[0]) !== "Box–Cox LR p-value") same(r[1], b[1], `${where} FORMCHECK ${r[0]}`, 0, LAMBDA_ABS);
              else if (r[0] === "Reading") expect(r.slice(1)).toEqual(b.slice(1));
              else [1, 2].forEach((c) => same(r[c], b[c], `${where} FORMCHECK ${r[0]} col ${c}`, 1e-7));
            });
          }
        });
      }
    }
  }
});

describe("PREDICT at extreme magnitudes of y: predictions and their intervals scale with y", () => {
  const newX = [NAMES, [3, 90, 0, 100], [2.5, 110, 1, 95]];
  for (const form of ["level-level", "log-log"]) {
    for (const interval of ["mean", "individual"]) {
      const opts = `form=${form}; interval=${interval}`;
      const [y0, x0] = ranges(1, 1);
      const base = call(reg, "PREDICT", y0, x0, newX, opts) as unknown[][];
      for (const s of SCALES) {
        it(`${form}, interval=${interval}, y × ${s}`, () => {
          const [y, x] = ranges(s, 1);
          const t = call(reg, "PREDICT", y, x, newX, opts) as unknown[][];
          honest(t, `PREDICT ${form} ${interval} y×${s}`);
          t.slice(1).forEach((r, i) => [0, 1, 2].forEach((c) => same((r[c] as number) / s, base[i + 1][c], `PREDICT ${form} ${interval} y×${s} row ${i + 1} col ${c}`)));
        });
      }
    }
  }
});

describe("PPML at extreme magnitudes of y (y·s moves only the intercept, by log s)", () => {
  const base = run("FIT", 1, 1, "log-log; estimator=ppml");
  const baseEl = run("ELASTICITIES", 1, 1, "log-log; estimator=ppml");
  const baseSm = run("SUMMARY", 1, 1, "log-log; estimator=ppml");
  for (const s of SCALES) {
    it(`y × ${s}: slopes, z, p, elasticities and pseudo R² agree; the intercept moves by log s`, () => {
      const where = `ppml y×${s}`;
      const fit = run("FIT", s, 1, "log-log; estimator=ppml");
      honest(fit, where);
      same(fit[1][2] as number, (base[1][2] as number) + Math.log(s), `${where} intercept`, 1e-9);
      fit.slice(2).forEach((r, j) => [2, 3, 4, 5].forEach((c) => same(r[c], base[j + 2][c], `${where} ${r[0]} col ${c}`)));
      const el = run("ELASTICITIES", s, 1, "log-log; estimator=ppml");
      el.slice(1).forEach((r, j) => [2, 3, 4, 5].forEach((c) => same(r[c], baseEl[j + 1][c], `${where} elasticity ${r[0]} col ${c}`)));
      const label = "Pseudo R² (squared correlation of y and fitted)";
      same(run("SUMMARY", s, 1, "log-log; estimator=ppml").find((r) => r[0] === label)?.[1], baseSm.find((r) => r[0] === label)?.[1], `${where} pseudo R²`);
    });
  }
});

