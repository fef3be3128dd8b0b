/**
 * Break tests and windows: identities that hold for any data (no reference needed), the shared-work
 * sup-F against a separate fit per candidate on ill-conditioned data, and every bad input's message.
 *
 * Identities (algebra, stated beside each test):
 *   - Chow (1960): F = ((RSS_pooled − RSS_1 − RSS_2)/k) / ((RSS_1 + RSS_2)/(n − 2k)) equals the
 *     classical Wald F of the k interaction terms;
 *   - a window covering every row is the full fit;
 *   - sup-F's statistic at a candidate is k times the Chow F at that break.
 * Data: the Seatbelts series of test/reference/breaks.json (datasets::Seatbelts) and seeded invented
 * designs (polynomials in a narrow range, for ill-conditioning).
 */
import * as fs from "fs";
import * as path from "path";
import { breakAt, candidateRange, hansenSupFPValue, quadraticInverse, supF, type BreakData } from "../../functions/engine/breaks";
import { leastSquares, type QrFit } from "../../functions/engine/leastSquares";
import { hcCovariance, leastSquaresInput, originalUnits } from "../../functions/engine/covariance";
import { breakByPeriod, breakByRow, eachWindow, fitRows, periodWindows, readPeriods, rowWindows } from "../../functions/engine/windows";
import { ElxProblem } from "../../functions/engine/problems";
import { Rng } from "../simulation/rng";

const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "../reference/breaks.json"), "utf8")) as {
  series: Record<string, { names: string[]; y: number[]; X: number[][] }>;
};

function seriesData(name: string): BreakData {
  const s = ref.series[name];
  return { X: s.X.map((c) => Float64Array.from(c)), y: Float64Array.from(s.y), names: s.names, rowNumbers: Int32Array.from(s.y, (_, i) => i + 2) };
}

/** A full-rank least-squares fit (the test data are never collinear). */
function qrOf(X: Float64Array[], y: Float64Array, refine = true): QrFit {
  const ls = leastSquares(X, y, refine);
  if (!ls.qr) throw new Error("unexpected collinearity");
  return ls.qr;
}

function rel(a: number, b: number): number {
  return Math.abs(a - b) / Math.max(Math.abs(b), 1e-300);
}

/** Polynomial design 1, u, u², u³ with u in [lo, lo + 1]: condition number about 8e4 (lo = 5) to 4e6 (lo = 20) after scaling (more in each regime). */
function illConditioned(n: number, seed: number, breakAt: number, lo: number): BreakData {
  const r = new Rng(seed);
  const u = Float64Array.from({ length: n }, (_, i) => lo + i / n + 0.01 * r.next());
  const X = [new Float64Array(n).fill(1), u, u.map((v) => v * v), u.map((v) => v * v * v)];
  const y = Float64Array.from(u, (v, i) => 3 - 0.5 * v + 0.002 * v * v * v + (i >= breakAt ? 0.3 + 0.05 * (v - lo) : 0) + 0.05 * r.normal());
  return { X, y, names: ["(Intercept)", "u", "u²", "u³"], rowNumbers: Int32Array.from(u, (_, i) => i + 2) };
}

function expectProblem(f: () => unknown, pattern: RegExp, kind: "value" | "na" = "value"): string {
  try {
    f();
  } catch (e) {
    if (!(e instanceof ElxProblem)) throw e;
    expect(e.kind).toBe(kind);
    expect(e.message).toMatch(pattern);
    return e.message;
  }
  throw new Error(`expected a problem matching ${pattern}`);
}

describe("identities", () => {
  it("Chow's F from the three residual sums of squares equals the classical Wald F of the interactions (Seatbelts, several breaks)", () => {
    const d = seriesData("seatbelts");
    const n = d.y.length;
    const k = d.X.length;
    let worst = 0;
    for (const point of [20, 64, 100, 169]) {
      const r = breakAt(d, point, "classical");
      const chow3 = ((r.rss.pooled - r.rss.before - r.rss.after) / k) / ((r.rss.before + r.rss.after) / (n - 2 * k));
      // the Wald form dᵀ V_dd⁻¹ d / k with V the classical covariance of the interacted fit
      const Vdd = new Float64Array(k * k);
      for (let a = 0; a < k; a++) for (let b = 0; b < k; b++) Vdd[a * k + b] = r.V[(k + a) * 2 * k + (k + b)];
      const wald = (quadraticInverse(Vdd, r.coef.subarray(k), k) as number) / k;
      worst = Math.max(worst, rel(wald, chow3), rel(r.chow.statistic, chow3));
      expect(rel(wald, chow3)).toBeLessThan(1e-10);
      expect(r.wald.statistic).toBe(r.chow.statistic);
      expect(rel(r.chow.statistic, chow3)).toBeLessThan(1e-10);
      expect(rel(r.wald.pValue, r.chow.pValue)).toBeLessThan(1e-9);
    }
    // eslint-disable-next-line no-console
    console.log(`classical Wald F against Chow's three-RSS F: worst relative difference ${worst.toExponential(2)}`);
  });

  it("sup-F at every candidate is k times the Chow F at that break (Seatbelts)", () => {
    const d = seriesData("seatbelts");
    const s = supF(d, 0.15);
    for (const point of [s.from, s.point, 100, s.to]) {
      const r = breakAt(d, point, "classical");
      expect(rel(s.stats[point - s.from], d.X.length * r.chow.statistic)).toBeLessThan(1e-10);
    }
  });

  it("a window covering every row is the full fit, to the last bit (Seatbelts, HC3)", () => {
    const d = seriesData("seatbelts");
    const n = d.y.length;
    const layout = rowWindows(d.rowNumbers, { window: n, step: 1, expanding: false }, 3);
    expect(layout.windows.length).toBe(1);
    const w = fitRows(d.X, d.y, d.names, d.rowNumbers, layout.windows[0].rows, "HC3");
    const full = qrOf(d.X, d.y);
    const V = originalUnits(hcCovariance(leastSquaresInput(d.X, full, d.rowNumbers), "HC3", null).V, full.scale, 1);
    for (let j = 0; j < 3; j++) {
      expect(w.coef[j]).toBe(full.coef[j]);
      expect(w.se[j]).toBe(Math.sqrt(V[j * 3 + j]));
    }
  });
});

describe("sup-F shares its work; it matches a separate fit per candidate on ill-conditioned data", () => {
  /** Worst relative differences between the sweeps and a separate (refined) fit at every candidate. */
  function compare(lo: number): { condition: number; rss: number; stat: number; plainQr: number; reported: number } {
    const n = 300;
    const d = illConditioned(n, 7, 180, lo);
    const full = qrOf(d.X, d.y);
    const s = supF(d, 0.15);
    expect(s.skipped).toBe(0);
    const k = d.X.length;
    let rss = 0;
    let stat = 0;
    let plainQr = 0;
    let smallest = Infinity;
    for (let point = s.from; point <= s.to; point++) {
      const cols = (f: (c: Float64Array) => Float64Array) => d.X.map(f);
      const a = qrOf(cols((c) => c.subarray(0, point)), d.y.subarray(0, point));
      const b = qrOf(cols((c) => c.subarray(point)), d.y.subarray(point));
      const a0 = qrOf(cols((c) => c.subarray(0, point)), d.y.subarray(0, point), false);
      const i = point - s.from;
      rss = Math.max(rss, rel(s.rssBefore[i], a.rss), rel(s.rssAfter[i], b.rss));
      plainQr = Math.max(plainQr, rel(a0.rss, a.rss));
      // Chow's three-RSS statistic from the separate refined fits: its cancellation costs at most
      // RSS_pooled/(RSS_pooled − RSS_1 − RSS_2) ≤ 14 times their rounding here (checked below)
      const diff = full.rss - a.rss - b.rss;
      smallest = Math.min(smallest, diff / full.rss);
      stat = Math.max(stat, rel(s.stats[i], diff / ((a.rss + b.rss) / (n - 2 * k))));
    }
    expect(smallest).toBeGreaterThan(0.05);
    const reported = rel(s.statistic, k * breakAt(d, s.point, "classical").chow.statistic);
    expect(Math.abs(s.point - 180)).toBeLessThan(15);
    return { condition: full.condition, rss, stat, plainQr, reported };
  }
  it("κ ≈ 8e4 (cubic in [5, 6]): RSS before and after, and the statistic, at every candidate to 1e-10", () => {
    const r = compare(5);
    // eslint-disable-next-line no-console
    console.log(`sup-F sweeps, condition ${r.condition.toExponential(1)}: worst relative difference to separate fits RSS ${r.rss.toExponential(2)}, statistic ${r.stat.toExponential(2)} (an unrefined QR per candidate: ${r.plainQr.toExponential(2)})`);
    expect(r.condition).toBeGreaterThan(5e4);
    expect(r.rss).toBeLessThan(1e-10);
    expect(r.stat).toBeLessThan(1e-10);
    expect(r.reported).toBeLessThan(1e-12);
  });
  it("κ ≈ 4e6 (cubic in [20, 21]): every candidate to 1e-8, as an ordinary QR fit per candidate; the reported maximum refitted to 1e-12", () => {
    const r = compare(20);
    // eslint-disable-next-line no-console
    console.log(`sup-F sweeps, condition ${r.condition.toExponential(1)}: worst relative difference to separate fits RSS ${r.rss.toExponential(2)}, statistic ${r.stat.toExponential(2)} (an unrefined QR per candidate: ${r.plainQr.toExponential(2)}); reported maximum ${r.reported.toExponential(2)}`);
    expect(r.condition).toBeGreaterThan(1e6);
    expect(r.rss).toBeLessThan(1e-8);
    expect(r.stat).toBeLessThan(1e-8);
    expect(r.reported).toBeLessThan(1e-12);
  });

  it("a candidate where one regime's columns are collinear is skipped and counted", () => {
    const n = 120;
    const r = new Rng(3);
    const promo = Float64Array.from({ length: n }, (_, i) => (i >= 40 && r.next() < 0.5 ? 1 : 0)); // zero in rows 1–40
    const x = Float64Array.from({ length: n }, () => r.normal());
    const y = Float64Array.from(x, (v, i) => 1 + v + 0.5 * promo[i] + r.normal());
    const d: BreakData = { X: [new Float64Array(n).fill(1), x, promo], y, names: ["(Intercept)", "x", "Promo"], rowNumbers: Int32Array.from(y, (_, i) => i + 2) };
    const s = supF(d, 0.15);
    // a break after `point` rows leaves Promo all zero before it while point ≤ the first row with Promo = 1
    const firstOne = promo.indexOf(1);
    expect(firstOne).toBeGreaterThanOrEqual(40);
    expect(s.skipped).toBe(firstOne - s.from + 1);
    expect(Number.isNaN(s.stats[0])).toBe(true);
    expect(Number.isFinite(s.statistic)).toBe(true);
    expectProblem(() => breakAt(d, 30, "HC3"), /Promo is zero in every row before the break \(sheet rows 2–31\)/);
  });
});

describe("windows", () => {
  const d = seriesData("seatbelts");
  it("a window that cannot be fitted shows why; the others still come", () => {
    const n = d.y.length;
    const dummy = Float64Array.from({ length: n }, (_, i) => (i >= 100 && i % 3 === 0 ? 1 : 0));
    const X = [...d.X, dummy];
    const names = [...d.names, "Promo"];
    const layout = rowWindows(d.rowNumbers, { window: 50, step: 25, expanding: false }, 4);
    const out = eachWindow(layout, (w) => fitRows(X, d.y, names, d.rowNumbers, w.rows, "HC3"));
    expect(out.map((o) => o.problem === null)).toEqual([false, false, false, true, true, true]); // Promo is 0 before row 100
    expect((out[0].problem as ElxProblem).message).toBe("Promo is zero in every row of this window: the window cannot estimate it");
  });
  it("expanding windows keep the first row and count the rows no window reaches", () => {
    const layout = rowWindows(d.rowNumbers, { window: 100, step: 40, expanding: true }, 3);
    expect(layout.windows.map((w) => [w.from, w.to])).toEqual([[2, 101], [2, 141], [2, 181]]);
    expect(layout.notReached).toBe(192 - 180);
    expect(layout.order).toBe("consecutive usable rows in sheet order");
  });
  it("text periods in first-appearance order; a blank period leaves its row out, counted", () => {
    const t = ["Q1", "Q1", "Q2", null, "Q3", "Q3", "Q4", "", "Q4", "Q5"];
    const rn = Int32Array.from(t, (_, i) => i + 2);
    const p = readPeriods(t, rn, "Quarter");
    expect(p.labels).toEqual(["Q1", "Q2", "Q3", "Q4", "Q5"]);
    expect(p.blankRows).toEqual([5, 9]);
    expect(p.order).toBe("periods of Quarter in the order they first appear in the sheet");
    const layout = periodWindows(p, { window: 2, step: 1, expanding: false }, 1);
    expect(layout.windows.map((w) => [w.from, w.to, Array.from(w.rows)])).toEqual([
      ["Q1", "Q2", [0, 1, 2]], ["Q2", "Q3", [2, 4, 5]], ["Q3", "Q4", [4, 5, 6, 8]], ["Q4", "Q5", [6, 8, 9]],
    ]);
    expect(layout.blankTime).toEqual([5, 9]);
  });
  it("numbers sort ascending; a panel's units may repeat the periods", () => {
    const year = [2001, 2002, 2003, 2001, 2002, 2003];
    const unit = ["A", "A", "A", "B", "B", "B"];
    const p = readPeriods(year, Int32Array.from(year, (_, i) => i + 2), "Year", unit);
    expect(p.labels).toEqual([2001, 2002, 2003]);
    const b = breakByPeriod(p, 2002);
    expect(Array.from(b.order)).toEqual([0, 3, 1, 4, 2, 5]);
    expect(b.point).toBe(2);
    expect(Array.from(b.allowed)).toEqual([0, 0, 1, 0, 1, 0, 0]);
    expect(breakByPeriod(p, null).point).toBe(4); // no `at`: the last period is the second regime
  });
});

describe("breaks between periods (plm::Grunfeld from test/reference/breaks.json, 10 firms × 20 years)", () => {
  it("sup-F with breaks only between years is the largest k·Chow F over the year boundaries", () => {
    const g = JSON.parse(fs.readFileSync(path.join(__dirname, "../reference/breaks.json"), "utf8")).series.grunfeld as { names: string[]; y: number[]; X: number[][]; year: number[]; firm: number[] };
    const rn = Int32Array.from(g.y, (_, i) => i + 2);
    const periods = readPeriods(g.year, rn, "year", g.firm);
    const b = breakByPeriod(periods, null);
    const pick = (a: number[]) => Float64Array.from(b.order, (i) => a[i]);
    const d: BreakData = { X: g.X.map(pick), y: pick(g.y), names: g.names, rowNumbers: Int32Array.from(b.order, (i) => rn[i]) };
    const s = supF(d, 0.15, b.allowed);
    let best = -Infinity;
    let bestPoint = -1;
    for (let point = s.from; point <= s.to; point++) {
      if (!b.allowed[point]) {
        expect(Number.isNaN(s.stats[point - s.from])).toBe(true);
        continue;
      }
      const st = 3 * breakAt(d, point, "classical").chow.statistic;
      expect(rel(s.stats[point - s.from], st)).toBeLessThan(1e-10);
      if (st > best) {
        best = st;
        bestPoint = point;
      }
    }
    expect(s.point).toBe(bestPoint);
    expect(s.point % 10).toBe(0); // 10 rows per year
    expect(rel(s.statistic, best)).toBeLessThan(1e-12);
  });
});

describe("bad input: each gets its message", () => {
  const d = seriesData("seatbelts");
  const rn = d.rowNumbers;
  it("a window longer than the data", () => {
    expectProblem(() => rowWindows(rn, { window: 500, step: 1, expanding: false }, 3), /^window=500 is longer than the data, which have 192 usable rows: use window=192 or less$/);
    const p = readPeriods([2001, 2002, 2003], Int32Array.from([2, 3, 4]), "Year");
    expectProblem(() => periodWindows(p, { window: 4, step: 1, expanding: false }, 1), /^window=4 is longer than the data, which have 3 periods of Year: use window=3 or less$/);
  });
  it("a window shorter than the terms need", () => {
    expectProblem(() => rowWindows(rn, { window: 3, step: 1, expanding: false }, 3), /^window=3 is too short for 3 coefficients \(the intercept counts\): each window needs at least 4 rows$/);
    const p = readPeriods([1, 2, 3, 4, 5, 6], Int32Array.from([2, 3, 4, 5, 6, 7]), "Week");
    expectProblem(() => periodWindows(p, { window: 2, step: 1, expanding: false }, 3), /^window=2 periods of Week hold at most 2 rows, too few for 3 coefficients/);
  });
  it("a window or step that is not a whole number", () => {
    expectProblem(() => rowWindows(rn, { window: 12.5, step: 1, expanding: false }, 3), /^window=12.5 must be a whole number of rows/);
    expectProblem(() => rowWindows(rn, { window: 12, step: 0, expanding: false }, 3), /^step=0 must be a whole number of rows/);
  });
  it("at outside the data", () => {
    expectProblem(() => breakByRow(0, 192), /^at=0 is outside the data: give the row \(2 to 192, counting usable rows from 1\) where the second regime starts$/);
    expectProblem(() => breakByRow(193, 192), /^at=193 is outside the data/);
    expectProblem(() => breakAt(d, 192, "HC3"), /data row 193 is outside the data/);
  });
  it("at leaving a regime with too few rows", () => {
    expectProblem(() => breakAt(d, 3, "HC3"), /^a break at data row 4 \(sheet row 5\) leaves 3 rows before it, too few for 3 coefficients \(the intercept counts\): each regime needs at least 4 rows; move the break$/);
    expectProblem(() => breakAt(d, 190, "HC3"), /leaves 2 rows from it/);
  });
  it("at that is not a period, or the first period", () => {
    const p = readPeriods([2001, 2002, 2003], Int32Array.from([2, 3, 4]), "Year");
    expectProblem(() => breakByPeriod(p, 1999), /^at=1999 is not a period of Year: give the first period of the second regime, one of 3 periods from 2001 to 2003$/);
    expectProblem(() => breakByPeriod(p, 2001), /^at=2001 is the first period of Year/);
  });
  it("a time column that is blank everywhere, or mixes numbers and text", () => {
    expectProblem(() => readPeriods([null, "", null], Int32Array.from([2, 3, 4]), "Week"), /^Week is blank in every row/);
    expectProblem(() => readPeriods([1, "W2", 3], Int32Array.from([2, 3, 4]), "Week"), /^Week mixes numbers \(sheet row 2: 1\) and text \(sheet row 3: "W2"\)/);
  });
  it("periods out of order in the sheet: the message states the ordering rule", () => {
    const m = expectProblem(() => readPeriods([2001, 2003, 2002], Int32Array.from([2, 3, 4]), "Year"), /^Year is not in time order: sheet row 4 \(2002\) comes after sheet row 3 \(2003\)/);
    expect(m).toMatch(/Periods count in ascending order of their values/);
    expect(m).toMatch(/sort the rows by Year \(smallest first\), or, for several stores or products, name the unit column in panel=$/);
    const t = expectProblem(() => readPeriods(["Jan", "Feb", "Jan"], Int32Array.from([2, 3, 4]), "Month"), /^Month is not in time order/);
    expect(t).toMatch(/in the order they first appear in the sheet/);
    expectProblem(() => readPeriods([1, 2, 1, 3], Int32Array.from([2, 3, 4, 5]), "Week", ["A", "A", "A", "B"]), /^Week is not in time order within unit A: sheet row 4 \(1\) comes after sheet row 3 \(2\)/);
  });
  it("more than 40 terms: Hansen's table ends there", () => {
    expectProblem(() => hansenSupFPValue(10, 41, 30), /^the sup-F p-value \(Hansen 1997\) is tabulated for at most 40 coefficients; this model has 41: use fewer terms$/, "na");
  });
  it("a trim outside its range, or too few rows for any break", () => {
    expectProblem(() => candidateRange(100, 2, 0.6), /^trim=0.6 must be between 0.05 and 0.45/);
    expectProblem(() => supF({ ...d, X: d.X.map((c) => c.subarray(0, 7)), y: d.y.subarray(0, 7), rowNumbers: rn.subarray(0, 7) }, 0.15), /^7 usable rows are too few to look for a break in 3 coefficients/);
  });
});
