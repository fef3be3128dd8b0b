/**
 * The split fit's handling of rows and bad input: counts of rows left out, the refusals (worded as
 * the cell path words them: the same messages where the options are the same), cancellation,
 * progress, the sample of rows for the picture, and steps that survive a structured clone (what a
 * Web Worker receives). Numbers are compared with the single-thread engine on the same rows (checked
 * against NIST StRD and R elsewhere); the data are invented (simulation inputs).
 */
import { appendColumns, chunksOf, columnFit, equalShares, FitCancelled, isFitCancelled, localExecutor, SAMPLE_ROWS } from "../../functions/engine/columnFit";
import { appendOp, applyPartOp, chunkBuffers, newPartState } from "../../functions/engine/splitLeastSquares";
import type { ColumnFitSpec, PartExecutor, PartOp } from "../../functions/engine/columnFitTypes";
import { ElxProblem } from "../../functions/engine/problems";
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { agree, rel, single, spec, split } from "./splitHelpers";
import { Rng } from "../simulation/rng";

function demand(n: number, seed: number): { y: Float64Array; x: Float64Array[] } {
  const g = new Rng(seed);
  const p = new Float64Array(n);
  const f = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    p[i] = 1 + 2 * g.next();
    f[i] = 10 + 90 * g.next();
    y[i] = Math.exp(2 - 1.2 * Math.log(p[i]) + 0.5 * Math.log(f[i]) + 0.2 * g.normal());
  }
  return { y, x: [p, f] };
}

/** The cell path's message for the same rows (header row, so data start at sheet row 2), or "". */
function cellMessage(y: Float64Array, x: Float64Array[], sp: ColumnFitSpec): string {
  try {
    single(y, x, sp);
    return "";
  } catch (e) {
    if (e instanceof ElxProblem) return e.message;
    throw e;
  }
}

async function splitMessage(y: Float64Array, x: Float64Array[], sp: ColumnFitSpec, parts = 3, chunk: number | number[] = 5): Promise<string> {
  try {
    await split(y, x, { ...sp, firstRow: 2 }, equalShares(y.length, parts), chunk);
    return "";
  } catch (e) {
    if (e instanceof ElxProblem) return e.message;
    throw e;
  }
}

const SP = spec("Units", ["Price", "Footfall"]);

describe("rows left out, counted as the cell path counts them", () => {
  it("blank and non-numeric rows (NaN, ±Infinity, chunk issue codes) are left out and counted by reason; the fit equals the single-thread one on the rows kept", async () => {
    const { y, x } = demand(400, 1);
    y[3] = NaN;
    x[0][10] = NaN;
    x[1][11] = Infinity;
    x[1][12] = -Infinity;
    const exec = localExecutor(3);
    await appendColumns(exec, y, x, [150, 0, 250], [7, 1, 30]);
    const s = await columnFit(exec, SP);
    expect(s.rowsRead).toBe(400);
    expect(s.leftOut).toEqual({ blank: 2, notNumber: 2, nonPositive: 0 });
    expect(s.n).toBe(396);
    const keep = (c: Float64Array) => c.filter((_, i) => ![3, 10, 11, 12].includes(i));
    const one = single(keep(y), x.map(keep), SP);
    agree(s, one);
    // issue codes from the reader: 1 blank, 2–4 text/error/non-finite (intake.ts CellIssue)
    const ex2 = localExecutor(2);
    const chunks = chunksOf(y, x, 100);
    for (const [i, ch] of chunks.entries()) {
      const issues = new Uint8Array(ch.y.length);
      if (i === 1) issues[5] = 3; // an error cell in a row whose numbers were read as NaN
      if (i === 2) issues[0] = 1;
      if (i === 1) ch.x[0][5] = NaN;
      if (i === 2) ch.y[0] = NaN;
      await ex2.send(i % 2, appendOp({ ...ch, issues }), chunkBuffers(ch));
    }
    const s2 = await columnFit(ex2, SP);
    expect(s2.leftOut).toEqual({ blank: 3, notNumber: 3, nonPositive: 0 });
  });

  it("zeros=drop: rows with a logged value ≤ 0 are left out and counted (as the cell path's leftOutNonPositive); the numbers equal the cell path's", async () => {
    const { y, x } = demand(300, 2);
    y[5] = 0;
    x[0][7] = -1;
    x[1][9] = 0;
    const sp = spec("Units", ["Price", "Footfall"], { zeros: "drop" });
    const exec = localExecutor(4);
    await appendColumns(exec, y, x, [100, 50, 0, 150], 9);
    const s = await columnFit(exec, sp);
    const o = parseOptions("form=log-log; zeros=drop");
    const cellFit = fitUncached({ y: [["Units"], ...Array.from(y, (v) => [v])], x: [["Price", "Footfall"], ...Array.from(y, (_, i) => [x[0][i], x[1][i]])], options: o, yOrigin: null, xOrigin: null });
    expect(s.leftOut.nonPositive).toBe(cellFit.data.leftOutNonPositive);
    expect(s.leftOut.nonPositive).toBe(3);
    agree(s, single(y, x, sp));
  });

  it("a binary 0/1 column stays in levels under a log x side (as transforms.ts decides), also when its 0s and 1s fall in different parts", async () => {
    const { y, x } = demand(200, 3);
    const promo = Float64Array.from({ length: 200 }, (_, i) => (i < 120 ? 0 : 1));
    const sp = spec("Units", ["Price", "Footfall", "Promo"]);
    const s = await split(y, [...x, promo], sp, [120, 80], 13);
    agree(s, single(y, [...x, promo], sp));
  });
});

describe("refusals, worded as the cell path words them", () => {
  it("no usable row: the same message as the cell path (rows named from the sheet's first data row)", async () => {
    const { y, x } = demand(12, 4);
    y.fill(NaN);
    const m = await splitMessage(y, x, SP);
    expect(m).toMatch(/^no row has a number in y and in every x column: all 12 rows \(2–13\)/);
    expect(m).toBe(cellMessage(y, x, SP));
  });

  it("zeros=stop with zeros and negatives in logged columns: counted and named with their rows, as the cell path names them", async () => {
    const { y, x } = demand(60, 5);
    x[0][4] = 0;
    x[0][40] = 0;
    y[8] = -2;
    const m = await splitMessage(y, x, SP, 4, 3);
    const cell = cellMessage(y, x, SP);
    const offenders = "Units has 1 negative value (row 10); Price has 2 values that are zero or blank (rows 6 and 42)";
    expect(cell.startsWith(offenders)).toBe(true);
    expect(m.startsWith(offenders)).toBe(true);
    expect(m).toMatch(/zeros=drop/);
  });

  it("too few rows for the coefficients (k ≥ n): the cell path's message", async () => {
    const { y, x } = demand(3, 6);
    const m = await splitMessage(y, x, SP, 2, 1);
    expect(m).toBe("3 usable rows are too few for 3 coefficients (the intercept counts): need at least 4");
    expect(m).toBe(cellMessage(y, x, SP));
  });

  it("a column all zero, a constant column and a collinear column: the cell path's messages naming the terms", async () => {
    const { y, x } = demand(50, 7);
    const zero = new Float64Array(50);
    const lvl = spec("Units", ["Price", "Footfall", "Z"], { form: "level-level" });
    expect(await splitMessage(y, [...x, zero], lvl)).toBe(cellMessage(y, [...x, zero], lvl));
    const noInt = { ...lvl, intercept: false };
    expect(await splitMessage(y, [...x, zero], noInt)).toBe("Z is zero in every row used: remove it from x");
    expect(cellMessage(y, [...x, zero], noInt)).toBe("Z is zero in every row used: remove it from x");
    const both = Float64Array.from(x[0], (v, i) => 2 * v - 3 * x[1][i]);
    const m = await splitMessage(y, [...x, both], lvl, 5, 2);
    expect(m).toBe("Z is an exact linear combination of (Intercept), Price and Footfall (collinear): remove one of these columns".replace("(Intercept), ", ""));
    expect(m).toBe(cellMessage(y, [...x, both], lvl));
  });

  it("y among the x columns: the cell path's message", async () => {
    const { y, x } = demand(30, 8);
    const sp = spec("Units", ["Price", "Units copy"]);
    expect(await splitMessage(y, [x[0], Float64Array.from(y)], sp)).toBe(cellMessage(y, [x[0], Float64Array.from(y)], sp));
  });

  it("HC3 with a row of leverage 1: the cell path's message, naming the row", async () => {
    const { y, x } = demand(40, 9);
    const dummy = new Float64Array(40);
    dummy[17] = 1;
    const sp = spec("Units", ["Price", "Footfall", "Only"], { form: "log-level" });
    const m = await splitMessage(y, [...x, dummy], sp, 3, 4);
    expect(m).toMatch(/^row 19 alone determines a coefficient \(leverage 1\), so HC3 is undefined/);
    expect(m).toBe(cellMessage(y, [...x, dummy], sp));
  });

  it("an exact fit gives its reason instead of t and p (as ELX.FIT shows #N/A there) and no Breusch–Pagan; every number shown is finite", async () => {
    const { x } = demand(80, 10);
    const y = Float64Array.from(x[0], (v, i) => 3 + 2 * v - 0.5 * x[1][i]);
    const s = await split(y, x, spec("y", ["Price", "Footfall"], { form: "level-level" }), [30, 50], 7);
    expect(s.exact).toMatch(/^the fit is exact/);
    expect(s.breuschPagan).toBeNull();
    expect(s.breuschPaganNote).toBe(s.exact);
    for (const v of [...s.coefficients, ...s.standardErrors, ...s.lower, ...s.upper, s.rSquared]) expect(Number.isFinite(v)).toBe(true);
    expect(rel(s.coefficients[1], 2)).toBeLessThan(1e-12);
  });

  it("residuals below scaling.ts's window (y near 1e-28, every e below 2^-100): the Breusch–Pagan sums are taken again in e's unit and every number equals the cell path's", async () => {
    const { x } = demand(400, 12);
    const g = new Rng(13);
    const y = Float64Array.from(x[0], (v, i) => 1e-28 * (3 + 2 * v - 0.01 * x[1][i]) + 2e-32 * (1 + v) * g.normal());
    const sp = spec("y", ["Price", "Footfall"], { form: "level-level" });
    const one = single(y, x, sp);
    const s = await split(y, x, sp, [150, 250], 64);
    expect(s.exact).toBeUndefined();
    expect(Math.max(...Array.from(s.sample.residuals, Math.abs))).toBeLessThan(Math.pow(2, -100)); // below the window
    agree(s, one);
  });

  it("all rows of a part left out, a part with no rows at all, and chunks of 1 row: the same numbers", async () => {
    const { y, x } = demand(90, 11);
    for (let i = 30; i < 60; i++) y[i] = NaN;
    const one = single(y.filter((v) => !Number.isNaN(v)), x.map((c) => c.filter((_, i) => !(i >= 30 && i < 60))), SP);
    const s = await split(y, x, SP, [30, 30, 0, 30], 1);
    expect(s.leftOut.blank).toBe(30);
    agree(s, one);
  });
});

describe("one set of parts, several fits", () => {
  it("the same parts fitted again with another se= and level give what a fresh set of parts gives; another form is refused as a programming error (the rows were logged in place)", async () => {
    const { y, x } = demand(700, 16);
    const exec = localExecutor(3);
    await appendColumns(exec, y, x, [200, 300, 200], 50);
    const first = await columnFit(exec, SP);
    const again = await columnFit(exec, { ...SP, se: "classical", level: 0.9 });
    const fresh = await split(y, x, { ...SP, se: "classical", level: 0.9 }, [200, 300, 200], 50);
    expect(again.coefficients).toEqual(first.coefficients);
    expect(again.standardErrors).toEqual(fresh.standardErrors);
    expect(again.lower).toEqual(fresh.lower);
    expect(again.breuschPagan).toEqual(fresh.breuschPagan);
    expect(again.leftOut).toEqual(fresh.leftOut);
    await expect(columnFit(exec, { ...SP, form: "level-level" })).rejects.toThrow(/other transforms/);
  });
});

describe("cancellation, progress and the sample", () => {
  it("isCancelled is asked between steps: a fit stopped after its third step throws FitCancelled (recognised also by name, after a structured clone)", async () => {
    const { y, x } = demand(500, 12);
    const exec = localExecutor(2);
    await appendColumns(exec, y, x, [250, 250], 64);
    let asked = 0;
    const err = await columnFit(exec, SP, undefined, () => ++asked > 5).then(() => null, (e: unknown) => e);
    expect(err).toBeInstanceOf(FitCancelled);
    expect(isFitCancelled(err)).toBe(true);
    expect(isFitCancelled(structuredClone({ name: (err as Error).name, message: (err as Error).message }))).toBe(true);
    expect(isFitCancelled(new ElxProblem("x"))).toBe(false);
  });

  it("progress goes up to its total and ends there", async () => {
    const { y, x } = demand(300, 13);
    const exec = localExecutor(3);
    await appendColumns(exec, y, x, equalShares(300, 3), 50);
    const seen: [number, number][] = [];
    await columnFit(exec, SP, (d, t) => seen.push([d, t]));
    expect(seen.length).toBeGreaterThan(4);
    for (let i = 1; i < seen.length; i++) expect(seen[i][0]).toBeGreaterThan(seen[i - 1][0]);
    for (const [d, t] of seen) expect(d).toBeLessThanOrEqual(t);
    const [d, t] = seen[seen.length - 1];
    expect(d).toBe(t);
  });

  it(`the sample: at most ${SAMPLE_ROWS} evenly spaced rows, the same rows for any split, fitted + residual = log y of that row`, async () => {
    const n = 10007;
    const { y, x } = demand(n, 14);
    const a = await split(y, x, SP, [n], 1000);
    const b = await split(y, x, SP, [2000, 0, 5007, 3000], [1, 333, 4096]);
    expect(a.sample.rows.length).toBeLessThanOrEqual(SAMPLE_ROWS);
    expect(a.sample.rows.length).toBeGreaterThan(SAMPLE_ROWS / 2);
    expect(Array.from(b.sample.rows)).toEqual(Array.from(a.sample.rows));
    const step = a.sample.rows[1] - a.sample.rows[0];
    for (let i = 1; i < a.sample.rows.length; i++) expect(a.sample.rows[i] - a.sample.rows[i - 1]).toBe(step);
    a.sample.rows.forEach((r, i) => {
      expect(Math.abs(a.sample.fitted[i] + a.sample.residuals[i] - Math.log(y[r]))).toBeLessThan(1e-12);
      expect(rel(b.sample.residuals[i], a.sample.residuals[i])).toBeLessThan(1e-9);
    });
  });
});

describe("steps as a worker receives them", () => {
  /** An executor that structured-clones every step and answer, as postMessage does. */
  function clonedExecutor(parts: number): PartExecutor {
    const states = Array.from({ length: parts }, newPartState);
    return {
      parts,
      async send(part: number, op: PartOp): Promise<unknown> {
        return structuredClone(applyPartOp(states[part], structuredClone(op)).answer);
      },
    };
  }

  it("every step and answer survives a structured clone, and the fit is the same as in this thread", async () => {
    const { y, x } = demand(2000, 15);
    const sp = spec("Units", ["Price", "Footfall"], { se: "HC2" });
    const exec = clonedExecutor(3);
    await appendColumns(exec, y, x, [700, 600, 700], 256);
    const s = await columnFit(exec, sp);
    const local = await split(y, x, sp, [700, 600, 700], 256);
    expect(s.coefficients).toEqual(local.coefficients);
    expect(s.standardErrors).toEqual(local.standardErrors);
    expect(s.breuschPagan).toEqual(local.breuschPagan);
  });

  it("an unknown step is a programming error, not a data problem", () => {
    expect(() => applyPartOp(newPartState(), { kind: "nonsense" })).toThrow(/unknown part step/);
  });
});
