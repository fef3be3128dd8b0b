/**
 * The content key (cache.ts hashCells) changes whenever one cell changes, and the one-pass read of
 * the host's rows (intake.ts readGrid) gives readYX the same columns, counts, names and messages as
 * readYX from the cells alone. No statistics here: every expectation compares two readings of the
 * same invented cells, or keys of contents that differ.
 */
import { readGrid, readYX, type RawData } from "../../functions/engine/intake";
import { getFit, fitUncached, clearCache } from "../../functions/engine/model";
import { hashCells } from "../../functions/engine/cache";
import { parseOptions } from "../../functions/engine/options";
import { ElxProblem } from "../../functions/engine/problems";
import { Rng } from "../simulation/rng";

/** Cells of every kind the host can pass, and near twins of each other. */
const KINDS: unknown[] = [
  0, -0, 1, 1 + Number.EPSILON, -2.5, 1e-300, 5e-324, 123456789.125, NaN, Infinity, -Infinity,
  null, undefined, "", " ", "a", "0", "NaN", "7,49", "1.234,5", true, false,
  { code: "#N/A", message: "x" }, { code: "#VALUE!" }, { basicValue: 3 }, { basicValue: "3" },
];

function randomRows(rng: Rng, height: number, width: number, oddShare: number): unknown[][] {
  const rows: unknown[][] = [];
  for (let i = 0; i < height; i++) {
    const r: unknown[] = [];
    for (let j = 0; j < width; j++) {
      r.push(rng.next() < oddShare ? KINDS[Math.floor(rng.next() * KINDS.length)] : Math.round(rng.next() * 1000) / 8 + 0.5);
    }
    rows.push(r);
  }
  return rows;
}

describe("readGrid", () => {
  it("gives no grid for what is not a rectangular range of rows (asMatrix takes those and says what is wrong)", () => {
    expect(readGrid(7)).toBeNull();
    expect(readGrid([])).toBeNull();
    expect(readGrid([[]])).toBeNull();
    expect(readGrid([1, 2, 3])).toBeNull();
    expect(readGrid([[1, 2], [3]])).toBeNull();
    expect(readGrid([[1], 2])).toBeNull();
  });

  it("its columns hold the cells of rows of finite numbers, and its odd rows are row 0 and those with a cell that is not a finite number", () => {
    const rows = [["p", "q"], [1, 2], [3, "x"], [NaN, 4], [-0, 5], [null, 6], [7, Infinity], [8, 9]];
    const g = readGrid(rows);
    expect(g).not.toBeNull();
    expect(Array.from(g!.odd)).toEqual([1, 0, 1, 1, 0, 1, 1, 0]);
    // the rows that are not odd: their cells as they are (-0 kept); odd rows are read from the cells again
    const clean = [1, 4, 7];
    expect(clean.map((i) => g!.columns[0][i])).toEqual([1, -0, 8]);
    expect(Object.is(g!.columns[0][4], -0)).toBe(true);
    expect(clean.map((i) => g!.columns[1][i])).toEqual([2, 5, 9]);
  });
});

describe("the content key changes when any one cell changes", () => {
  const base = (): unknown[][] => [["Units", "Price"], [10, 2], [12, 1.75], [0, 2.2], [15, 1.5], [20, 1.2]];

  it("every cell, changed to each of 26 kinds of value: every variant has its own key", () => {
    const keys = new Map<string, string>();
    keys.set(hashCells(base(), 2), "base");
    for (let i = 0; i < 6; i++) {
      for (let j = 0; j < 2; j++) {
        for (const v of KINDS) {
          const rows = base();
          if (Object.is(rows[i][j], v)) continue;
          rows[i][j] = v;
          const k = hashCells(rows, 2);
          const what = `row ${i} column ${j} = ${String(v)}`;
          // equal content in a different cell of the same kind (0 and -0, 5e-324) would share a key only by chance
          expect(keys.get(k) ?? what).toBe(what);
          keys.set(k, what);
        }
      }
    }
    expect(keys.size).toBeGreaterThan(300);
  });

  it("0 and -0, blank and 0, blank and \"\", the text NaN and the number NaN, TRUE and 1 are different content", () => {
    const one = (v: unknown) => hashCells([["y"], [1], [v], [3]], 1);
    expect(one(0)).not.toBe(one(-0));
    expect(one(null)).not.toBe(one(0));
    expect(one(null)).not.toBe(one(""));
    expect(one(null)).not.toBe(one(undefined));
    expect(one("NaN")).not.toBe(one(NaN));
    expect(one(true)).not.toBe(one(1));
    expect(one("1")).not.toBe(one(1));
    expect(one(1)).not.toBe(one(1 + Number.EPSILON));
  });

  it("a cell moved to another row, or the same cells in another shape, change the key", () => {
    expect(hashCells([[1, 2], [3, 4]], 2)).not.toBe(hashCells([[3, 4], [1, 2]], 2));
    expect(hashCells([[1, 2], [3, 4]], 2)).not.toBe(hashCells([[1], [2], [3], [4]], 2));
    expect(hashCells([[1, 2], [3, 4]], 2)).not.toBe(hashCells([[1, 2, 3, 4]], 2));
    expect(hashCells([[1, 2]], 1)).not.toBe(hashCells([[1, 2]], 2));
  });

  it("one changed cell anywhere in 25,000 × 10 numbers changes the key (the size of one call)", () => {
    const rng = new Rng(7);
    const rows: unknown[][] = [Array.from({ length: 10 }, (_, j) => `x${j + 1}`)];
    for (let i = 0; i < 25000; i++) rows.push(Array.from({ length: 10 }, () => Math.exp(rng.normal())));
    const k0 = hashCells(rows, 2);
    for (let t = 0; t < 20; t++) {
      const i = 1 + Math.floor(rng.next() * 25000);
      const j = Math.floor(rng.next() * 10);
      const copy = rows.slice();
      copy[i] = rows[i].slice();
      copy[i][j] = (rows[i][j] as number) * (1 + 1e-15);
      expect(hashCells(copy, 2)).not.toBe(k0);
      copy[i][j] = rows[i][j];
      expect(hashCells(copy, 2)).toBe(k0);
    }
  });
});

/** readYX's result, or the message of the problem it raised. */
function reading(run: () => RawData): RawData | string {
  try {
    return run();
  } catch (e) {
    if (e instanceof ElxProblem) return `problem: ${e.message}`;
    throw e;
  }
}

/** Plain arrays for the comparison (a grid's columns are views of its own, one row longer with a header). */
function plain(r: RawData | string): unknown {
  if (typeof r === "string") return r;
  return JSON.parse(JSON.stringify(r, (_, v) => (ArrayBuffer.isView(v) ? Array.from(v as unknown as ArrayLike<number>, (x) => (Object.is(x, -0) ? "-0" : Number.isNaN(x) ? "NaN" : x)) : v)));
}

function same(y: unknown[][], x: unknown[][], options: string): void {
  const o = parseOptions(options);
  const without = reading(() => readYX(y, x, { row: 4, column: 2 }, { row: 4, column: 3 }, o));
  const grids = { y: readGrid(y), x: readGrid(x) };
  const through = reading(() => readYX(y, x, { row: 4, column: 2 }, { row: 4, column: 3 }, o, grids));
  expect(plain(through)).toEqual(plain(without));
}

describe("readYX through the grid reads what it reads from the cells", () => {
  const y = (): unknown[][] => [["Units"], [10], [12], [9], [15], [20], [14], [11], [13]];
  const x = (): unknown[][] => [["Price", "Promo", "Store"], [2, 0, "A"], [1.8, 1, "B"], [2.2, 0, "A"], [1.5, 1, "C"], [1.2, 1, "B"], [1.6, 0, "A"], [1.9, 1, "C"], [2.1, 0, "B"]];

  it("clean numbers, with and without a header row", () => {
    const xs = x().map((r) => r.slice(0, 2));
    same(y(), xs, "");
    same(y().slice(1), xs.slice(1), "");
  });

  it("blanks, text, numbers stored as text, errors, NaN, ±Infinity, TRUE/FALSE and -0 in y and x", () => {
    const yy = y();
    const xx = x().map((r) => r.slice(0, 2));
    yy[2][0] = null;
    yy[4][0] = "7,49";
    xx[3][0] = { code: "#N/A" };
    xx[5][1] = true;
    xx[6][0] = NaN;
    xx[7][1] = -Infinity;
    xx[8][1] = -0;
    yy[8][0] = " ";
    same(yy, xx, "");
    same(yy, xx, "form=level-level");
  });

  it("key columns (cluster=, absorb=, factors=) with text and numbers, and weights with a zero", () => {
    const xx = x();
    xx[2][2] = 7;
    xx[4][2] = null;
    same(y(), xx, "cluster=Store");
    same(y(), xx, "absorb=Store");
    same(y(), xx, "factors=Store");
    const xw = x().map((r, i) => (i === 0 ? [...r.slice(0, 2), "W"] : [...r.slice(0, 2), i === 3 ? 0 : i]));
    same(y(), xw, "weights=W");
  });

  it("trailing blank rows, a blank header cell, the shared header rule and a text column refused", () => {
    const yy = [...y(), [null], [""]];
    const xx = [...x().map((r) => r.slice(0, 2)), [null, null], ["", null]];
    same(yy, xx, "");
    const unnamed = x().map((r, i) => (i === 0 ? ["Price", ""] : r.slice(0, 2)));
    same(y(), unnamed, "");
    same([[null], ...y().slice(1)], x().map((r) => r.slice(0, 2)), "");
    same(y(), x(), ""); // Store is text: the message names it
  });

  it("y laid out across one row (read transposed, without the grid), and mismatched heights", () => {
    same([[10, 12, 9, 15, 20]], [[2, 1.8, 2.2, 1.5, 1.2]], "");
    same(y(), x().slice(0, 5), "");
    same([[null], [null]], [[null], [null]], "");
  });

  it("random ranges with every kind of cell in some rows", () => {
    const rng = new Rng(99);
    for (let t = 0; t < 300; t++) {
      const h = 2 + Math.floor(rng.next() * 30);
      const w = 1 + Math.floor(rng.next() * 3);
      const yy = randomRows(rng, h, 1, 0.1);
      const xx = randomRows(rng, h, w, 0.1);
      if (rng.next() < 0.7) {
        yy[0] = ["y"];
        xx[0] = xx[0].map((_, j) => `v${j}`);
      }
      same(yy, xx, rng.next() < 0.5 ? "form=level-level" : "");
    }
  });
});

describe("getFit reads a miss through the grid", () => {
  it("after a hit, new contents of the same shape are fitted from their own cells, and cached fits keep their columns", () => {
    clearCache();
    const o = parseOptions("form=log-log; se=HC3");
    const rows = (shift: number) => {
      const y: unknown[][] = [["Units"]];
      const x: unknown[][] = [["Price", "Promo"]];
      for (let i = 0; i < 40; i++) {
        y.push([100 + ((i * 37 + shift) % 23)]);
        x.push([1 + ((i * 13 + shift) % 7) / 10, i % 2]);
      }
      return { y, x };
    };
    const a = rows(0);
    const first = getFit({ y: a.y, x: a.x, options: o, yOrigin: null, xOrigin: null });
    expect(getFit({ y: rows(0).y, x: rows(0).x, options: o, yOrigin: null, xOrigin: null })).toBe(first); // a hit
    for (const shift of [1, 2, 3]) {
      const b = rows(shift);
      const fit = getFit({ y: b.y, x: b.x, options: o, yOrigin: null, xOrigin: null });
      const fresh = fitUncached({ y: rows(shift).y, x: rows(shift).x, options: o, yOrigin: null, xOrigin: null });
      expect(Array.from(fit.coef)).toEqual(Array.from(fresh.coef));
      expect(getFit({ y: rows(shift).y, x: rows(shift).x, options: o, yOrigin: null, xOrigin: null })).toBe(fit);
    }
    // the fits in the cache keep their own columns: none was overwritten by a later read
    const again = fitUncached({ y: rows(0).y, x: rows(0).x, options: o, yOrigin: null, xOrigin: null });
    expect(Array.from(first.data.y)).toEqual(Array.from(again.data.y));
    expect(first.data.x.map((c) => Array.from(c))).toEqual(again.data.x.map((c) => Array.from(c)));
  });
});
