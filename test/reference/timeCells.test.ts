/**
 * ELX.ROLLING and ELX.BREAKTEST through the built bundle (dist/functions.js, as the host calls them)
 * against R, on the datasets of test/reference/breaks.json.
 *
 * Source of every expected number: test/reference/breaks.json, written by
 * `Rscript test/reference/scripts/breaks.R` (R 4.2.2; strucchange 1.5-3, sandwich 3.0-2,
 * lmtest 0.9-40, plm 2.6-2; versions recorded in the JSON):
 *   Chow F, p        strucchange::sctest(y ~ 0 + X, type = "Chow", point = p)
 *   Wald F, p        lmtest::waldtest(restricted, interacted, vcov = V, test = "F") with
 *                    V = sandwich::vcovHC(type = "HC0".."HC3") or sandwich::NeweyWest(lag = L,
 *                    prewhite = FALSE, adjust = FALSE), on centred regressors (the statistic is
 *                    invariant to that change of columns, and R keeps more digits so)
 *   per-term         coef and vcov of the interacted lm: b, b + d, d, se(d), p = 2 pt(−|t|, n − 2k)
 *   sup-F            strucchange::Fstats(y ~ 0 + X, from = trim) and sctest(., type = "supF")
 *                    (statistic, Hansen 1997 p-value, breakpoint)
 *   windows          lm on each window's rows with the same covariances (HAC lags from the
 *                    window's rows)
 * Data: datasets::Nile (Nile ~ 1), strucchange::USIncExp (log expenditure ~ log income),
 * datasets::Seatbelts (log DriversKilled ~ log kms + log PetrolPrice, the seat-belt law from data
 * row 170), plm::Grunfeld (log inv ~ log value + log capital, 10 firms × 20 years in firm order:
 * windows of 8 years moved by 4, and a break from 1945).
 *
 * How the JSON's columns reach the cells: logged columns are passed as exp(·) with form=log-log
 * (the engine takes their logs again, so the regression is R's; an elasticity is then the
 * coefficient itself). Nile ~ 1 has no regressor, which a cell call always has: x is a column of
 * 2s with form=level-level and intercept=false, so the coefficient is half R's intercept (the mean
 * of the window), the elasticity b·x̄/ȳ is 1 and its error is R's se/R's coefficient.
 *
 * Tolerances: Chow F 1e-10 relative and p 1e-10 (relative to pf's upper tail; absolute against
 * sctest's 1 − pf); Wald F and p 1e-9; per-term changes and errors 1e-9; sup-F 1e-9 and its p-value
 * 1e-6 absolute (strucchange forms 1 − pchisq); every window's elasticities and errors 1e-10.
 * The identities (a window of every row against ELX.ELASTICITIES; the classical Wald against the
 * Chow F from three ELX.SUMMARY residual errors) need no reference: 1e-13 and 1e-9.
 */
import * as fs from "fs";
import * as path from "path";
import { call, loadFunctions, HostError, type CellFn } from "../harness/loadFunctions";
import { Rng } from "../simulation/rng";

interface FRef { F: number; p: number; df1?: number; df2?: number }
interface TermsRef { se_before: number[]; se_after: number[]; se_difference: number[]; t: number[]; p: number[] }
interface BreakRef {
  point: number; n: number; k: number; hac_lag: number;
  chow: FRef;
  before: number[]; after: number[]; difference: number[];
  wald: Record<string, FRef>;
  wald_centred: Record<string, FRef>;
  terms: Record<string, TermsRef>;
}
interface SupRef { trim: number; from: number; to: number; breakpoint: number; statistic: number; p: number }
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
  series: Record<string, SeriesRef>;
};

const SE = ["classical", "HC0", "HC1", "HC2", "HC3", "HAC"];
let reg: Map<string, CellFn>;
const worst = new Map<string, { err: number; where: string }>();

beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  // eslint-disable-next-line no-console
  console.log(`ROLLING and BREAKTEST through the bundle against R (${ref.r_version}): worst errors (relative; "abs" absolute)\n` +
    [...worst.entries()].map(([k, v]) => `  ${k.padEnd(28)} ${v.err.toExponential(2)}  (${v.where})`).join("\n"));
});

function close(actual: unknown, expected: number, rel: number, group: string, where: string, abs = 1e-300): void {
  if (typeof actual !== "number" || !Number.isFinite(actual)) throw new Error(`${where}: got ${JSON.stringify(actual)}, R gives ${expected}`);
  const err = Math.abs(actual - expected);
  const r = expected === 0 ? err : err / Math.abs(expected);
  const w = worst.get(group);
  if (!w || r > w.err) worst.set(group, { err: r, where });
  if (!(err <= Math.max(rel * Math.abs(expected), abs))) throw new Error(`${where}: got ${actual}, R gives ${expected} (rel ${r.toExponential(3)}; tolerance ${rel})`);
}

function closeAbs(actual: unknown, expected: number, abs: number, group: string, where: string): void {
  if (typeof actual !== "number") throw new Error(`${where}: got ${JSON.stringify(actual)}`);
  const err = Math.abs(actual - expected);
  const w = worst.get(group);
  if (!w || err > w.err) worst.set(group, { err, where });
  if (!(err <= abs)) throw new Error(`${where}: got ${actual}, R gives ${expected} (abs ${err.toExponential(3)})`);
}

/** The cells of a series: header row, y and x (logged columns as exp), and their addresses (data from sheet row 2). */
interface Cells { y: unknown[][]; x: unknown[][]; inv: { parameterAddresses: string[] }; options: string; logLog: boolean }

function cellsOf(name: string, extra: { header: string; values: unknown[] }[] = []): Cells {
  const s = ref.series[name];
  const n = s.y.length;
  const logLog = name !== "nile";
  const regs = logLog ? s.X.slice(1) : [s.X[0].map(() => 2)];
  const heads = logLog ? s.names.slice(1).map((v) => v.replace(/^log\((.*)\)$/, "$1")) : ["two"];
  const cols = [...regs.map((c) => (logLog ? c.map(Math.exp) : c)), ...extra.map((e) => e.values)];
  const y: unknown[][] = [["y"], ...s.y.map((v) => [logLog ? Math.exp(v) : v])];
  const x: unknown[][] = [[...heads, ...extra.map((e) => e.header)]];
  for (let i = 0; i < n; i++) x.push(cols.map((c) => c[i]));
  const last = String.fromCharCode(65 + cols.length);
  return { y, x, inv: { parameterAddresses: [`Data!A1:A${n + 1}`, `Data!B1:${last}${n + 1}`] }, options: logLog ? "" : "form=level-level; intercept=false", logLog };
}

function opts(c: Cells, more: string): string {
  return [c.options, more].filter((s) => s !== "").join("; ");
}

function tableOf(result: unknown, where: string): unknown[][] {
  if (result instanceof HostError) throw new Error(`${where}: ${result.code} ${result.message}`);
  return result as unknown[][];
}

function rowOf(t: unknown[][], label: string | RegExp): unknown[] {
  const r = t.find((row) => (typeof label === "string" ? row[0] === label : typeof row[0] === "string" && label.test(row[0])));
  if (!r) throw new Error(`no row ${label}: ${t.map((row) => row[0]).join(" | ")}`);
  return r;
}

function seOption(type: string, lag: number): string {
  return type === "HAC" ? `se=HAC; lags=${lag}` : `se=${type}`;
}

/** Checks BREAKTEST's tests and per-term rows against one break of the JSON. */
function checkBreak(c: Cells, at: unknown, b: BreakRef, more: string, where: string, types = SE): void {
  for (const type of types) {
    const t = tableOf(call(reg, "BREAKTEST", c.y, c.x, at, opts(c, [more, seOption(type, b.hac_lag)].filter((s) => s).join("; ")), c.inv), where);
    const w = `${where} ${type}`;
    const chow = rowOf(t, "Chow F (classical errors)");
    close(chow[1], b.chow.F, 1e-10, "Chow F", w);
    close(chow[3], b.wald.classical.p, 1e-10, "Chow p (pf upper tail)", w);
    closeAbs(chow[3], b.chow.p, 1e-10, "Chow p (sctest, abs)", w);
    expect(chow[2]).toBe(`${b.k}, ${b.n - 2 * b.k}`);
    const wald = rowOf(t, /^Wald F/);
    close(wald[1], b.wald_centred[type].F, 1e-9, "Wald F", w);
    close(wald[3], b.wald_centred[type].p, 1e-9, "Wald p", w);
    // one row per regressor (the intercept has no elasticity), after the "Term" header
    const head = t.findIndex((row) => row[0] === "Term");
    const names = c.logLog ? ref.series[where.split(" ")[0]]?.names ?? [] : [];
    for (let j = 1; j < b.k; j++) {
      const row = t[head + j];
      const tw = `${w} ${names[j] ?? j}`;
      close(row[1], b.before[j], 1e-9, "per-term elasticities", `${tw} before`);
      close(row[2], b.after[j], 1e-9, "per-term elasticities", `${tw} after`);
      close(row[3], b.difference[j], 1e-9, "per-term elasticities", `${tw} difference`, 1e-12);
      close(row[4], b.terms[type].se_difference[j], 1e-9, "per-term errors, p", `${tw} se`);
      close(row[5], b.terms[type].p[j], 1e-9, "per-term errors, p", `${tw} p`);
    }
  }
}

describe.each(["nile", "usincexp", "seatbelts"])("BREAKTEST on %s: Chow, Wald and sup-F against strucchange, lmtest and sandwich", (name) => {
  const s = ref.series[name];
  it("at the known break: Chow F and p, the Wald F under every covariance, per-term changes", () => {
    const b = s.break_at as BreakRef;
    // at is the data row where the second regime starts: R's point (rows before) + 1
    checkBreak(cellsOf(name), b.point + 1, b, "", name);
  });
  it("without at and time=: sup-F, its Hansen (1997) p-value and the most likely break as a sheet row", () => {
    const c = cellsOf(name);
    for (const sup of [s.supf, s.supf_trim25].filter((v): v is SupRef => v !== undefined)) {
      const t = tableOf(call(reg, "BREAKTEST", c.y, c.x, null, opts(c, `trim=${sup.trim}`), c.inv), name);
      const row = rowOf(t, `sup-F (unknown break, trim ${sup.trim})`);
      close(row[1], sup.statistic, 1e-9, "sup-F statistic", `${name} trim ${sup.trim}`);
      closeAbs(row[3], sup.p, 1e-6, "sup-F p (abs)", `${name} trim ${sup.trim}`);
      expect(row[4]).toBe(sup.breakpoint + 2); // data row breakpoint + 1 is sheet row breakpoint + 2
      // the Chow and Wald rows are at that break, without p-values (the break was chosen by the search)
      const chow = rowOf(t, "Chow F (classical errors)");
      expect(chow[4]).toBe(sup.breakpoint + 2);
      expect(chow[3]).toBeInstanceOf(HostError);
      expect((chow[3] as HostError).message).toMatch(/chosen by the search/);
      expect(String(row[6])).toMatch(/not a cause/);
    }
  });
});

describe("BREAKTEST's readings say in words whether each elasticity changed", () => {
  it("USIncExp from data row 201: the income elasticity changed (lmtest: p ≈ 8e-99 under HC3); Seatbelts from row 170: no clear change in either elasticity (p 0.34 and 0.82)", () => {
    const u = cellsOf("usincexp");
    const t = tableOf(call(reg, "BREAKTEST", u.y, u.x, 201, null, u.inv), "usincexp");
    expect(rowOf(t, "income")[6]).toBe("the elasticity changed from 0.955 to 1.03 (p < 0.0001): a change at the 5% level");
    const c = cellsOf("seatbelts");
    const b = tableOf(call(reg, "BREAKTEST", c.y, c.x, 170, null, c.inv), "seatbelts");
    expect(rowOf(b, "kms")[6]).toBe("no clear change at the 5% level (-0.08721 before, -0.6214 after, p = 0.3387)");
    expect(rowOf(b, "PetrolPrice")[6]).toMatch(/^no clear change at the 5% level/);
    expect(rowOf(b, "(caution)")[6]).toMatch(/^Associations, not causes/);
  });
});

describe.each(["nile", "usincexp", "seatbelts"])("ROLLING on %s: every window against lm and sandwich", (name) => {
  it("elasticities and errors of every window, every covariance type", () => {
    const s = ref.series[name];
    const c = cellsOf(name);
    for (const roll of s.rolling as RollRef[]) {
      for (const type of SE) {
        const o = opts(c, [`step=${roll.step}`, roll.expanding ? "expanding=true" : "", type === "HAC" ? "se=HAC" : `se=${type}`].filter((v) => v).join("; "));
        const t = tableOf(call(reg, "ROLLING", c.y, c.x, roll.window, o, c.inv), name);
        const body = t.slice(1).filter((row) => typeof row[0] === "number");
        expect(body.length).toBe(roll.windows.length);
        body.forEach((row, wi) => {
          const rw = roll.windows[wi];
          const w = `${name} ${roll.window}/${roll.step}${roll.expanding ? " expanding" : ""} rows ${rw.first}–${rw.last} ${type}`;
          expect(row[0]).toBe(rw.first + 1);
          expect(row[1]).toBe(rw.last + 1);
          expect(row[2]).toBe(rw.last - rw.first + 1);
          if (c.logLog) {
            for (let j = 1; j < rw.coef.length; j++) {
              close(row[1 + 2 * j], rw.coef[j], 1e-10, "window elasticities", `${w} term ${j}`);
              close(row[2 + 2 * j], rw.se[type][j], 1e-10, "window errors", `${w} term ${j}`);
            }
          } else {
            close(row[3], 1, 1e-12, "window elasticities", w);
            close(row[4], rw.se[type][0] / rw.coef[0], 1e-10, "window errors", w);
          }
        });
      }
    }
  });
});

describe("plm::Grunfeld: windows and a break counted in years (time=year; panel=firm), rows in firm order", () => {
  const s = ref.series.grunfeld;
  const c = cellsOf("grunfeld", [{ header: "year", values: s.year as number[] }, { header: "firm", values: s.firm as number[] }]);
  it("windows of 8 years moved by 4 equal lm on the rows of those years, with the years as From and To", () => {
    for (const type of ["classical", "HC0", "HC1", "HC2", "HC3"]) {
      const t = tableOf(call(reg, "ROLLING", c.y, c.x, 8, `time=year; panel=firm; step=4; se=${type}`, c.inv), "Grunfeld");
      const rw = s.windows as NonNullable<SeriesRef["windows"]>;
      const body = t.slice(1).filter((row) => typeof row[0] === "number");
      expect(body.length).toBe(rw.length);
      body.forEach((row, wi) => {
        const r = rw[wi];
        expect(row[0]).toBe(r.from);
        expect(row[1]).toBe(r.to);
        expect(row[2]).toBe(r.n);
        for (let j = 1; j < 3; j++) {
          close(row[1 + 2 * j], r.coef[j], 1e-10, "window elasticities", `Grunfeld ${r.from}–${r.to} ${type} ${j}`);
          close(row[2 + 2 * j], r.se[type][j], 1e-10, "window errors", `Grunfeld ${r.from}–${r.to} ${type} ${j}`);
        }
      });
      expect(String(rowOf(t, "(periods)")[3])).toMatch(/ascending order of their values/);
    }
  });
  it("a break from 1945 on: Chow, Wald under HC0–HC3 and per-term changes, the second regime named by its year", () => {
    const b = s.break_1945 as BreakRef;
    checkBreak(c, 1945, b, "time=year; panel=firm", "grunfeld", ["classical", "HC0", "HC1", "HC2", "HC3"]);
    const t = tableOf(call(reg, "BREAKTEST", c.y, c.x, 1945, "time=year; panel=firm", c.inv), "Grunfeld");
    expect(rowOf(t, "Chow F (classical errors)")[4]).toBe(1945);
  });
  it("time= without at tests the last period against the ones before", () => {
    const t = tableOf(call(reg, "BREAKTEST", c.y, c.x, null, "time=year; panel=firm", c.inv), "Grunfeld");
    expect(rowOf(t, "Chow F (classical errors)")[4]).toBe(1954);
    expect(typeof rowOf(t, "Chow F (classical errors)")[3]).toBe("number");
  });
});

describe("identities (no reference needed)", () => {
  it("a window covering every row equals ELX.ELASTICITIES on the same cells (Seatbelts, HC3 and HAC)", () => {
    const c = cellsOf("seatbelts");
    const n = c.y.length - 1;
    for (const se of ["se=HC3", "se=HAC"]) {
      const roll = tableOf(call(reg, "ROLLING", c.y, c.x, n, se, c.inv), "rolling");
      const el = tableOf(call(reg, "ELASTICITIES", c.y, c.x, se, c.inv), "elasticities");
      expect(roll.length).toBe(2);
      for (let j = 0; j < 2; j++) {
        close(roll[1][3 + 2 * j], el[1 + j][2] as number, 1e-13, "identity: whole window", `${se} term ${j}`);
        close(roll[1][4 + 2 * j], el[1 + j][3] as number, 1e-13, "identity: whole window", `${se} term ${j} se`);
      }
    }
  });

  it("every window equals ELX.ELASTICITIES on that window's rows alone, with fixed effects and clusters within the window (Grunfeld, years) and with estimator=ppml (Seatbelts)", () => {
    const s = ref.series.grunfeld;
    const g = cellsOf("grunfeld", [{ header: "year", values: s.year as number[] }, { header: "firm", values: s.firm as number[] }]);
    const fe = "absorb=firm; cluster=firm";
    const t = tableOf(call(reg, "ROLLING", g.y, g.x, 8, `time=year; panel=firm; step=4; ${fe}`, g.inv), "fe windows");
    const body = t.slice(1).filter((row) => typeof row[0] === "number");
    expect(body.length).toBe(4);
    for (const row of body) {
      const keep = (s.year as number[]).map((yr, i) => (yr >= (row[0] as number) && yr <= (row[1] as number) ? i + 1 : -1)).filter((i) => i > 0);
      const y = [g.y[0], ...keep.map((i) => g.y[i])];
      const x = [g.x[0], ...keep.map((i) => g.x[i])];
      const el = tableOf(call(reg, "ELASTICITIES", y, x, `time=year; panel=firm; ${fe}`, null), "fe elasticities");
      for (let j = 0; j < 2; j++) {
        close(row[3 + 2 * j], el[1 + j][2] as number, 1e-13, "identity: window = its own call", `Grunfeld ${row[0]}–${row[1]} ${fe} term ${j}`);
        close(row[4 + 2 * j], el[1 + j][3] as number, 1e-13, "identity: window = its own call", `Grunfeld ${row[0]}–${row[1]} ${fe} se ${j}`);
      }
    }
    const c = cellsOf("seatbelts");
    const pt = tableOf(call(reg, "ROLLING", c.y, c.x, 60, "step=44; estimator=ppml", c.inv), "ppml windows");
    const pb = pt.slice(1).filter((row) => typeof row[0] === "number");
    expect(pb.length).toBe(4);
    for (const row of pb) {
      const from = (row[0] as number) - 1;
      const to = (row[1] as number) - 1;
      const el = tableOf(call(reg, "ELASTICITIES", [c.y[0], ...c.y.slice(from, to + 1)], [c.x[0], ...c.x.slice(from, to + 1)], "estimator=ppml", null), "ppml elasticities");
      for (let j = 0; j < 2; j++) {
        close(row[3 + 2 * j], el[1 + j][2] as number, 1e-13, "identity: window = its own call", `Seatbelts ppml ${row[0]}–${row[1]} term ${j}`);
        close(row[4 + 2 * j], el[1 + j][3] as number, 1e-13, "identity: window = its own call", `Seatbelts ppml ${row[0]}–${row[1]} se ${j}`);
      }
    }
  });

  it("every window equals ELX.ELASTICITIES on its rows alone on seeded ill-conditioned data (near-collinear logs, a large offset, a column binary in some windows, zeros in some windows), under every form and zero policy", () => {
    // Invented, seeded data for an identity only (no reference values): windows reuse logs taken
    // once over all rows, so each window must still be exactly its own call.
    const rng = new Rng(20261204);
    const n = 240;
    const y: unknown[][] = [["Units"]];
    const x: unknown[][] = [["Price", "Twin", "Income", "Promo"]];
    for (let i = 0; i < n; i++) {
      const a = Math.exp(0.3 * rng.normal());
      const twin = a * Math.exp(1e-7 * rng.normal()); // log(Twin) = log(Price) + 1e-7·noise
      const income = 1e9 * Math.exp(1e-3 * rng.normal()); // log ≈ 20.7 with a spread of 1e-3
      const promo = i < 120 ? (rng.next() < 0.5 ? 0 : 1) : Math.exp(0.2 * rng.normal()); // 0/1 in the first half only
      let units = Math.exp(2 - 1.3 * Math.log(a) + 0.5 * Math.log(twin) + 0.2 * rng.normal());
      if (i === 150 || i === 200) units = 0; // zeros in later windows only
      y.push([units]);
      x.push([a, twin, income, promo]);
    }
    let compared = 0;
    for (const o of ["", "se=HC1", "se=HAC", "zeros=drop", "zeros=shift", "zeros=ihs", "form=log-level", "form=level-log; se=classical"]) {
      const t = tableOf(call(reg, "ROLLING", y, x, 60, `step=20; ${o}`, null), `ill-conditioned windows ${o}`);
      const body = t.slice(1).filter((row) => typeof row[0] === "number");
      expect(body.length).toBe(10);
      for (const row of body) {
        const from = row[0] as number; // sheet rows: the header is row 1, so sheet row r is y[r − 1]
        const to = row[1] as number;
        const el = call(reg, "ELASTICITIES", [y[0], ...y.slice(from - 1, to)], [x[0], ...x.slice(from - 1, to)], o, null);
        if (typeof row[3] === "string" && (row[3] as string).startsWith("cannot fit")) {
          expect(el).toBeInstanceOf(HostError);
          continue;
        }
        const e = tableOf(el, `ill-conditioned elasticities ${o} ${from}–${to}`);
        for (let j = 0; j < 4; j++) {
          const est = row[3 + 2 * j];
          if (typeof est !== "number") continue; // binary in this window: no elasticity in either table
          close(est, e[1 + j][2] as number, 1e-12, "identity: window = its own call (ill-conditioned)", `${o} ${from}–${to} term ${j}`);
          close(row[4 + 2 * j], e[1 + j][3] as number, 1e-12, "identity: window = its own call (ill-conditioned)", `${o} ${from}–${to} se ${j}`);
          compared++;
        }
      }
    }
    expect(compared).toBeGreaterThan(150);
  });

  it("BREAKTEST's classical Wald equals the Chow F from three residual sums of squares (ELX.SUMMARY on each regime and on all rows)", () => {
    const c = cellsOf("seatbelts");
    const n = c.y.length - 1;
    const k = 3;
    const at = 170;
    const t = tableOf(call(reg, "BREAKTEST", c.y, c.x, at, "se=classical", c.inv), "breaktest");
    const rss = (from: number, to: number) => {
      const y = [c.y[0], ...c.y.slice(from, to + 1)];
      const x = [c.x[0], ...c.x.slice(from, to + 1)];
      const sum = tableOf(call(reg, "SUMMARY", y, x, null, null), "summary");
      const sigma = rowOf(sum, "Residual std. error")[1] as number;
      return sigma * sigma * (to - from + 1 - k);
    };
    const pooled = rss(1, n);
    const r1 = rss(1, at - 1);
    const r2 = rss(at, n);
    const chow3 = ((pooled - r1 - r2) / k) / ((r1 + r2) / (n - 2 * k));
    close(rowOf(t, /^Wald F/)[1], chow3, 1e-9, "identity: Chow from 3 RSS", "Seatbelts");
    expect(rowOf(t, /^Wald F/)[1]).toBe(rowOf(t, "Chow F (classical errors)")[1]);
  });
});

describe("bad input through the cells: an error value with a message each", () => {
  const c = cellsOf("seatbelts");
  const n = c.y.length - 1;
  const err = (v: unknown, code: string, pattern: RegExp) => {
    expect(v).toBeInstanceOf(HostError);
    expect((v as HostError).code).toBe(code);
    expect((v as HostError).message).toMatch(pattern);
  };
  it("a window longer than the data", () => {
    err(call(reg, "ROLLING", c.y, c.x, n + 1, null, c.inv), "#VALUE!", new RegExp(`window=${n + 1} is longer than the data, which have ${n} usable rows: use window=${n} or less`));
  });
  it("a window shorter than the terms need", () => {
    err(call(reg, "ROLLING", c.y, c.x, 3, null, c.inv), "#VALUE!", /window=3 is too short for 3 coefficients \(the intercept counts\): each window needs at least 4 rows/);
  });
  it("a window given twice, and a window that is not a whole number", () => {
    err(call(reg, "ROLLING", c.y, c.x, 60, "window=50", c.inv), "#VALUE!", /given twice, as 60 and as window=50/);
    err(call(reg, "ROLLING", c.y, c.x, 2.5, null, c.inv), "#VALUE!", /must be a whole number of rows/);
  });
  it("at outside the data", () => {
    err(call(reg, "BREAKTEST", c.y, c.x, n + 1, null, c.inv), "#VALUE!", new RegExp(`at=${n + 1} is outside the data: give the row \\(2 to ${n}, counting usable rows from 1\\)`));
    err(call(reg, "BREAKTEST", c.y, c.x, "June", null, c.inv), "#VALUE!", /at=June is not a row number: without time= give the data row/);
  });
  it("at leaving a regime with too few rows", () => {
    err(call(reg, "BREAKTEST", c.y, c.x, 3, null, c.inv), "#VALUE!", /leaves 2 rows before it, too few for 3 coefficients \(the intercept counts\): each regime needs at least 4 rows; move the break/);
  });
  it("a period that is not in the time column", () => {
    const g = cellsOf("grunfeld", [{ header: "year", values: ref.series.grunfeld.year as number[] }, { header: "firm", values: ref.series.grunfeld.firm as number[] }]);
    err(call(reg, "BREAKTEST", g.y, g.x, 1990, "time=year; panel=firm", g.inv), "#VALUE!", /at=1990 is not a period of year: give the first period of the second regime, one of 20 periods from 1935 to 1954/);
  });
  it("time= with blanks: those rows are left out of every window and counted", () => {
    const s = ref.series.grunfeld;
    const year: unknown[] = (s.year as number[]).slice();
    year[0] = null; // firm 1, 1935 (sheet row 2)
    year[25] = ""; // firm 2, 1940 (sheet row 27)
    const g = cellsOf("grunfeld", [{ header: "year", values: year }, { header: "firm", values: s.firm as number[] }]);
    const t = tableOf(call(reg, "ROLLING", g.y, g.x, 8, "time=year; panel=firm; step=4", g.inv), "blanks");
    const left = rowOf(t, "(left out)");
    expect(left[2]).toBe(2);
    expect(String(left[3])).toMatch(/rows 2 and 27 have a blank, text or error cell in y, x or year and are in no window/);
    // the first window (1935–1942) loses both rows: 80 − 2
    expect(t[1][0]).toBe(1935);
    expect(t[1][2]).toBe(78);
    const b = tableOf(call(reg, "BREAKTEST", g.y, g.x, 1945, "time=year; panel=firm", g.inv), "blanks");
    const bl = rowOf(b, "(left out)");
    expect(bl[1]).toBe(2);
    expect(String(bl[6])).toMatch(/rows with a blank, text or error cell in y, x or year are in neither regime/);
    expect(rowOf(b, "Chow F (classical errors)")[2]).toBe("3, 192"); // 198 rows used
  });
  it("periods out of order in the sheet", () => {
    const s = ref.series.usincexp;
    const month = Array.from({ length: s.y.length }, (_, i) => i + 1);
    [month[10], month[11]] = [month[11], month[10]];
    const u = cellsOf("usincexp", [{ header: "month", values: month }]);
    err(call(reg, "ROLLING", u.y, u.x, 120, "time=month; step=40", u.inv), "#VALUE!", /month is not in time order: sheet row 13 \(11\) comes after sheet row 12 \(12\)\. Periods count in ascending order of their values.*sort the rows by month \(smallest first\)/);
    err(call(reg, "BREAKTEST", u.y, u.x, null, "time=month", u.inv), "#VALUE!", /month is not in time order/);
  });
  it("a window that cannot be fitted shows its reason in its row; the others still come", () => {
    const x = c.x.map((r) => r.slice());
    for (let i = 1; i <= 60; i++) x[i][0] = 1000; // kms constant in the first window
    const t = tableOf(call(reg, "ROLLING", c.y, x, 60, "step=12", c.inv), "cannot fit");
    expect(t[1][0]).toBe(2);
    expect(String(t[1][3])).toMatch(/^cannot fit: kms has the same value in every row used, so it cannot be told apart from the intercept/);
    // the next window (sheet rows 14–73) has kms varying from sheet row 62 on: it is fitted
    expect(typeof t[2][3]).toBe("number");
    expect(t.slice(1).filter((r) => typeof r[3] === "number").length).toBe(11);
  });
  it("options with no defined break test", () => {
    err(call(reg, "BREAKTEST", c.y, c.x, 170, "estimator=ppml", c.inv), "#VALUE!", /tests least-squares fits; estimator=ppml has no break test here/);
    err(call(reg, "BREAKTEST", c.y, c.x, 170, "se=DK", c.inv), "#VALUE!", /se=DK is not offered by ELX.BREAKTEST/);
  });
});
