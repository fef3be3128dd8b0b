/**
 * Break tests and rolling windows (functions/engine/breaks.ts, functions/engine/windows.ts) against
 * R, called directly on arrays (these engine modules are not yet behind a cell function).
 *
 * Source of every expected number: test/reference/breaks.json, written by
 * `Rscript test/reference/scripts/breaks.R` (run from the repository root) with R 4.2.2,
 * strucchange 1.5-3, sandwich 3.0-2, lmtest 0.9-40 and plm (versions recorded in the JSON):
 *   Chow F, p        strucchange::sctest(y ~ 0 + X, type = "Chow", point = p)
 *   Wald F, p        lmtest::waldtest(restricted, interacted, vcov = V, test = "F") with V = vcov,
 *                    sandwich::vcovHC(type = "HC0".."HC3"), sandwich::NeweyWest(lag = L,
 *                    prewhite = FALSE, adjust = FALSE), L = floor(4 (n/100)^(2/9)); also the same
 *                    waldtest with the regressors centred first (the statistic is invariant to
 *                    that change of columns; on Seatbelts the uncentred R value keeps only about
 *                    9.5 digits, the centred one agrees with ours to about 1e-12)
 *   per-term         coef and V of the interacted lm: before b, after b + d, difference d, their
 *                    errors, t = d/se, p = 2 pt(−|t|, n − 2k)
 *   sup-F            strucchange::Fstats(y ~ 0 + X, from = trim) (every candidate's statistic,
 *                    the breakpoint, λ) and strucchange::sctest(., type = "supF") (statistic, p)
 *   Hansen (1997)    strucchange:::pvalue.Fstats(x, "supF", k, λ) on a grid and the coefficient
 *                    table strucchange:::sc.beta.sup
 *   windows          lm per window with the same covariances (HAC lags from the window's rows)
 * Data: datasets::Nile (Nile ~ 1), strucchange::USIncExp (log expenditure ~ log income),
 * datasets::Seatbelts (log DriversKilled ~ log kms + log PetrolPrice, break at the seat-belt law,
 * row 170), plm::Grunfeld (log inv ~ log value + log capital, 10 firms × 20 years in firm order:
 * windows and a break counted in years).
 *
 * Tolerances (relative, with an absolute floor of 1e-12 where the value is near zero):
 *   Chow F and p 1e-10 (p also against sctest's 1 − pf, which loses digits below 1e-12: 1e-10
 *   absolute there); residual sums of squares and regime coefficients 1e-10; Wald F, p 1e-9
 *   against the centred waldtest and 1e-8 against the uncentred one; per-term errors 1e-9; sup-F statistics 1e-9, its p-value 1e-6 absolute (strucchange forms
 *   1 − pchisq, so its tiny p-values are rounding); Hansen grid 1e-6 absolute (1e-12 reached);
 *   every window's coefficients and errors 1e-10.
 */
import * as fs from "fs";
import * as path from "path";
import { breakAt, hansenSupFPValue, supF, type BreakCovariance, type BreakData } from "../../functions/engine/breaks";
import { HANSEN_SUP_F } from "../../functions/engine/hansen1997";
import { breakByPeriod, eachWindow, fitRows, periodWindows, readPeriods, rowWindows } from "../../functions/engine/windows";

interface FRef { F: number; p: number; df1?: number; df2?: number }
interface TermsRef { se_before: number[]; se_after: number[]; se_difference: number[]; t: number[]; p: number[] }
interface BreakRef {
  point: number; n: number; k: number; hac_lag: number;
  chow: FRef;
  rss: { pooled: number; before: number; after: number };
  before: number[]; after: number[]; difference: number[];
  wald: Record<string, FRef>;
  wald_centred: Record<string, FRef>;
  terms: Record<string, TermsRef>;
}
interface SupRef { trim: number; from: number; to: number; lambda: number; breakpoint: number; statistic: number; p: number; stats: number[] }
interface RollRef { window: number; step: number; expanding: boolean; windows: { first: number; last: number; coef: number[]; se: Record<string, number[]> }[] }
interface SeriesRef {
  names: string[]; y: number[]; X: number[][];
  break_at?: BreakRef; supf?: SupRef; supf_trim25?: SupRef; rolling?: RollRef[];
  year?: number[]; firm?: number[];
  windows?: { from: number; to: number; n: number; coef: number[]; se: Record<string, number[]> }[];
  break_1945?: BreakRef;
}
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "breaks.json"), "utf8")) as {
  r_version: string;
  packages: Record<string, string>;
  series: Record<string, SeriesRef>;
  hansen: { grid: { k: number; lambda: number; x: number; p: number }[]; table: { b0: number[]; b1: number[]; df: number[] } };
};

const TYPES: BreakCovariance[] = ["classical", "HC0", "HC1", "HC2", "HC3", "HAC"];
const worst = new Map<string, { rel: number; where: string }>();

function close(actual: number, expected: number, rel: number, group: string, where: string, abs = 1e-12): void {
  if (!Number.isFinite(actual)) throw new Error(`${where}: got ${actual}, R gives ${expected}`);
  const err = Math.abs(actual - expected);
  const r = expected === 0 ? err : err / Math.abs(expected);
  const w = worst.get(group);
  if (!w || r > w.rel) worst.set(group, { rel: r, where });
  if (!(err <= Math.max(rel * Math.abs(expected), abs))) {
    throw new Error(`${where}: got ${actual}, R gives ${expected} (rel ${r.toExponential(3)}; tolerance ${rel})`);
  }
}

function closeAbs(actual: number, expected: number, abs: number, group: string, where: string): void {
  const err = Math.abs(actual - expected);
  const w = worst.get(group);
  if (!w || err > w.rel) worst.set(group, { rel: err, where });
  if (!(err <= abs)) throw new Error(`${where}: got ${actual}, R gives ${expected} (abs ${err.toExponential(3)}; tolerance ${abs})`);
}

afterAll(() => {
  // eslint-disable-next-line no-console
  console.log(`breaks against R (${ref.r_version}; ${Object.entries(ref.packages).map(([k, v]) => `${k} ${v}`).join(", ")}): worst errors (relative; "abs" groups absolute)\n` +
    [...worst.entries()].map(([k, v]) => `  ${k.padEnd(30)} ${v.rel.toExponential(2)}  (${v.where})`).join("\n"));
});

function dataOf(s: SeriesRef, order: Int32Array | null = null): BreakData {
  const pick = (a: number[]) => (order ? Float64Array.from(order, (i) => a[i]) : Float64Array.from(a));
  const n = s.y.length;
  return {
    X: s.X.map(pick),
    y: pick(s.y),
    names: s.names,
    rowNumbers: order ? Int32Array.from(order, (i) => i + 2) : Int32Array.from({ length: n }, (_, i) => i + 2),
  };
}

function checkBreak(d: BreakData, b: BreakRef, where: string): void {
  for (const type of TYPES) {
    const r = breakAt(d, b.point, type, type === "HAC" ? b.hac_lag : null);
    const w = `${where} ${type}`;
    if (type === "classical") {
      close(r.chow.statistic, b.chow.F, 1e-10, "Chow F (sctest)", w);
      closeAbs(r.chow.pValue, b.chow.p, 1e-10, "Chow p (sctest, abs)", w);
      close(r.chow.pValue, b.wald.classical.p, 1e-10, "Chow p (pf upper tail)", w);
      close(r.rss.pooled, b.rss.pooled, 1e-10, "RSS", `${w} pooled`);
      close(r.rss.before, b.rss.before, 1e-10, "RSS", `${w} before`);
      close(r.rss.after, b.rss.after, 1e-10, "RSS", `${w} after`);
      r.terms.forEach((t, j) => {
        close(t.before, b.before[j], 1e-10, "coefficients before/after", `${w} ${t.name} before`);
        close(t.after, b.after[j], 1e-10, "coefficients before/after", `${w} ${t.name} after`);
        close(t.difference, b.difference[j], 1e-10, "difference", `${w} ${t.name}`, 1e-12 * Math.abs(b.before[j]));
      });
    }
    const wr = b.wald[type];
    expect(r.wald.df1).toBe(-(wr.df1 as number));
    expect(r.wald.df2).toBe(wr.df2);
    const wc = b.wald_centred[type];
    close(r.wald.statistic, wc.F, 1e-9, "Wald F (centred)", w);
    close(r.wald.pValue, wc.p, 1e-9, "Wald p (centred)", w, 1e-300);
    close(r.wald.statistic, wr.F, 1e-8, "Wald F (as given)", w);
    close(r.wald.pValue, wr.p, 1e-8, "Wald p (as given)", w, 1e-300);
    const tr = b.terms[type];
    r.terms.forEach((t, j) => {
      close(t.seBefore, tr.se_before[j], 1e-9, "per-term errors", `${w} ${t.name} se before`);
      close(t.seAfter, tr.se_after[j], 1e-9, "per-term errors", `${w} ${t.name} se after`);
      close(t.seDifference, tr.se_difference[j], 1e-9, "per-term errors", `${w} ${t.name} se difference`);
      close(t.t, tr.t[j], 1e-9, "per-term t, p", `${w} ${t.name} t`);
      close(t.pValue, tr.p[j], 1e-9, "per-term t, p", `${w} ${t.name} p`);
    });
  }
}

function checkSup(d: BreakData, s: SupRef, where: string): void {
  const r = supF(d, s.trim);
  expect(r.from).toBe(s.from);
  expect(r.to).toBe(s.to);
  expect(r.point).toBe(s.breakpoint);
  expect(r.skipped).toBe(0);
  close(r.lambda, s.lambda, 1e-14, "lambda", where);
  expect(r.stats.length).toBe(s.stats.length);
  s.stats.forEach((v, i) => close(r.stats[i], v, 1e-9, "sup-F: every candidate", `${where} candidate ${s.from + i}`));
  close(r.statistic, s.statistic, 1e-9, "sup-F statistic", where);
  closeAbs(r.pValue, s.p, 1e-6, "sup-F p (abs)", where);
}

describe("Hansen (1997) p-values as strucchange computes them", () => {
  it("the coefficient table equals strucchange's sc.beta.sup entry for entry", () => {
    const t = ref.hansen.table;
    expect(HANSEN_SUP_F.length).toBe(3 * t.b0.length);
    const differ: string[] = [];
    for (let i = 0; i < t.b0.length; i++) {
      if (HANSEN_SUP_F[3 * i] !== t.b0[i] || HANSEN_SUP_F[3 * i + 1] !== t.b1[i] || HANSEN_SUP_F[3 * i + 2] !== t.df[i]) differ.push(`row ${i + 1}`);
    }
    expect(differ).toEqual([]);
  });
  it("p-values on a grid of k, λ and x equal pvalue.Fstats to 1e-6 absolute", () => {
    for (const g of ref.hansen.grid) {
      closeAbs(hansenSupFPValue(g.x, g.k, g.lambda), g.p, 1e-6, "Hansen grid (abs)", `k=${g.k} λ=${g.lambda} x=${g.x}`);
    }
  });
});

describe.each(["nile", "usincexp", "seatbelts"])("%s", (name) => {
  const s = ref.series[name];
  it("Chow F, the Wald F under every covariance and the per-term changes at the known break", () => {
    checkBreak(dataOf(s), s.break_at as BreakRef, name);
  });
  it("sup-F: every candidate's statistic, the break, λ and Hansen's p-value", () => {
    checkSup(dataOf(s), s.supf as SupRef, name);
    if (s.supf_trim25) checkSup(dataOf(s), s.supf_trim25, `${name} trim 0.25`);
  });
  it("every rolling window's coefficients and errors equal lm on its rows", () => {
    const d = dataOf(s);
    for (const roll of s.rolling as RollRef[]) {
      const layout = rowWindows(d.rowNumbers, { window: roll.window, step: roll.step, expanding: roll.expanding }, d.X.length);
      expect(layout.windows.length).toBe(roll.windows.length);
      for (const type of TYPES) {
        const out = eachWindow(layout, (w) => fitRows(d.X, d.y, d.names, d.rowNumbers, w.rows, type));
        out.forEach((o, wi) => {
          const rw = roll.windows[wi];
          const where = `${name} window ${roll.window}/${roll.step}${roll.expanding ? " expanding" : ""} rows ${rw.first}–${rw.last} ${type}`;
          expect(o.problem).toBeNull();
          expect(o.window.from).toBe(rw.first + 1); // sheet rows: data row 1 is sheet row 2
          expect(o.window.to).toBe(rw.last + 1);
          const f = o.value as NonNullable<typeof o.value>;
          f.coef.forEach((c, j) => close(c, rw.coef[j], 1e-10, "window coefficients", `${where} coef ${j}`));
          f.se.forEach((v, j) => close(v, rw.se[type][j], 1e-10, "window errors", `${where} se ${j}`));
        });
      }
    }
  });
});

describe("plm::Grunfeld: windows and a break counted in years, rows in firm order", () => {
  const s = ref.series.grunfeld;
  const n = s.y.length;
  const rowNumbers = Int32Array.from({ length: n }, (_, i) => i + 2);
  const periods = readPeriods(s.year as number[], rowNumbers, "year", s.firm as number[]);
  it("windows of 8 years moved by 4 equal lm on the rows of those years", () => {
    const d = dataOf(s);
    const layout = periodWindows(periods, { window: 8, step: 4, expanding: false }, 3);
    expect(layout.order).toBe("periods of year in ascending order of their values");
    const rw = s.windows as NonNullable<SeriesRef["windows"]>;
    expect(layout.windows.length).toBe(rw.length);
    for (const type of ["classical", "HC0", "HC1", "HC2", "HC3"] as BreakCovariance[]) {
      eachWindow(layout, (w) => fitRows(d.X, d.y, d.names, d.rowNumbers, w.rows, type)).forEach((o, wi) => {
        const r = rw[wi];
        expect(o.window.from).toBe(r.from);
        expect(o.window.to).toBe(r.to);
        const f = o.value as NonNullable<typeof o.value>;
        expect(f.n).toBe(r.n);
        f.coef.forEach((c, j) => close(c, r.coef[j], 1e-10, "window coefficients", `Grunfeld ${r.from}–${r.to} coef ${j}`));
        f.se.forEach((v, j) => close(v, r.se[type][j], 1e-10, "window errors", `Grunfeld ${r.from}–${r.to} ${type} se ${j}`));
      });
    }
  });
  it("a break from 1945 on: Chow, Wald and per-term changes on the rows in year order", () => {
    const b = breakByPeriod(periods, 1945);
    const br = s.break_1945 as BreakRef;
    expect(b.point).toBe(br.point);
    checkBreak(dataOf(s, b.order), br, "Grunfeld 1945");
  });
});
