/**
 * The pane's data check (taskpane/check.ts) on small invented ranges, counted by hand: blanks told
 * from zeros by value types, binary columns, rows a plain log would lose, and the sentences for odd
 * selections (one cell, different heights, text in the middle, error cells).
 */
import { checkData } from "../../taskpane/check";
import type { RangeSnapshot, ValueType } from "../../taskpane/host";

function snap(address: string, top: number, values: unknown[][]): RangeSnapshot {
  const types: ValueType[][] = values.map((r) => r.map((v) => (v === "" || v === null ? "Empty" : typeof v === "number" ? "Double" : typeof v === "boolean" ? "Boolean" : typeof v === "string" && v.startsWith("#") ? "Error" : "String")));
  const area = { sheet: "Sales", top, left: 3, bottom: top + values.length - 1, right: 3 + values[0].length - 1 };
  return { area, address, requested: address, values, types, clipped: false };
}

const Y = snap("Sales!C1:C7", 1, [["Units"], [120], [0], [95], [""], [0], [130]]);
const X = snap("Sales!D1:E7", 1, [["Price", "Promo"], [2.1, 0], [2.4, 1], [0, 0], [2.2, 1], [2.0, 0], ["n/a", 1]]);

describe("data check", () => {
  it("counts per column and finds the rows a plain log would lose (log-log)", async () => {
    const c = await checkData({ y: Y, x: X, form: "log-log", estimator: "ols" });
    expect(c.canFit).toBe(true);
    expect(c.rows).toBe(6);
    // rows 5 (blank Units) and 7 (text Price) are left out; usable: rows 2, 3, 4, 6
    expect(c.usable).toBe(4);
    expect(c.blankRows).toEqual([5, 7]);
    const [units, price, promo] = c.columns;
    expect([units.values, units.blank, units.zeros, units.zerosUsable]).toEqual([5, 1, 2, 2]);
    expect([price.values, price.text, price.zeros, price.textRows]).toEqual([5, 1, 1, [7]]);
    expect(promo.binary).toBe(true);
    expect(promo.logged).toBe(false);
    // usable rows with a zero in Units (3, 6) or Price (4): three rows lost
    expect(c.lostToLog).toBe(3);
    const text = c.sentences.map((s) => s.text);
    expect(text).toContain("2 of 4 rows have zero Units; a plain log drops them and biases the elasticity.");
    expect(text).toContain("1 of 4 rows has zero Price; a plain log drops them and biases the elasticity.");
    expect(text.some((t) => t.startsWith("In all a plain log would lose 3 of 4 rows."))).toBe(true);
    expect(text.some((t) => t.startsWith("Price has text in rows 7"))).toBe(true);
    expect(text).toContain("Promo is binary (0/1): it stays in levels and gets a percent effect, not an elasticity.");
  });

  it("loses nothing to a log when nothing is logged (level-level), and only the zero y under log-level", async () => {
    const lv = await checkData({ y: Y, x: X, form: "level-level", estimator: "ols" });
    expect(lv.lostToLog).toBe(0);
    const ll = await checkData({ y: Y, x: X, form: "log-level", estimator: "ols" });
    expect(ll.lostToLog).toBe(2);
    const ppml = await checkData({ y: Y, x: X, form: "log-log", estimator: "ppml" });
    expect(ppml.lostToLog).toBe(1); // PPML keeps the zero y; the zero Price is still logged
  });

  it("says what is wrong with odd selections instead of failing", async () => {
    const one = await checkData({ y: snap("Sales!C1", 1, [[5]]), x: X, form: "log-log", estimator: "ols" });
    expect(one.canFit).toBe(false);
    expect(one.sentences[0].text).toMatch(/^y is a single cell \(Sales!C1\)/);
    const short = await checkData({ y: snap("Sales!C1:C4", 1, [["Units"], [1], [2], [3]]), x: X, form: "log-log", estimator: "ols" });
    expect(short.canFit).toBe(false);
    expect(short.sentences[0].text).toBe("y has 3 data rows and x has 6; give both ranges the same rows.");
    const wide = await checkData({ y: X, x: X, form: "log-log", estimator: "ols" });
    expect(wide.sentences[0].text).toMatch(/^y has 2 columns/);
    const errs = await checkData({ y: snap("Sales!C1:C4", 1, [["Units"], [1], ["#DIV/0!"], [3]]), x: snap("Sales!D1:D4", 1, [["Price"], [1], [2], [3]]), form: "log-log", estimator: "ols" });
    expect(errs.columns[0].errors).toBe(1);
    expect(errs.sentences.map((s) => s.text)).toContain("Units has 1 error cell (rows 3); those rows are left out.");
  });

  it("works through large ranges in chunks and reports progress", async () => {
    const n = 45000;
    const yv: unknown[][] = [["Units"]];
    const xv: unknown[][] = [["Price"]];
    for (let i = 0; i < n; i++) {
      yv.push([i % 100 === 0 ? 0 : 10 + (i % 7)]);
      xv.push([1 + (i % 5)]);
    }
    const seen: number[] = [];
    const c = await checkData({ y: snap("S!C1", 1, yv), x: snap("S!D1", 1, xv), form: "log-log", estimator: "ols" }, (f) => seen.push(f));
    expect(seen).toEqual([20000 / n, 40000 / n, 1]);
    expect(c.lostToLog).toBe(450);
  });
});

describe("the data check reads headers and names as the engine does (one intake rule)", () => {
  // The rule is the engine's (functions/engine/intake.ts, readYX): a first row whose non-empty cells
  // are all text is a header; an empty header cell takes its default name; names are unique across y and x.
  it("a header row with one empty cell is a header, and that column is called x2", async () => {
    const y = snap("Sales!C1:C4", 1, [["Units"], [120], [95], [130]]);
    const x = snap("Sales!D1:E4", 1, [["Price", ""], [2.1, 3], [2.4, 4], [2.2, 5]]);
    const c = await checkData({ y, x, form: "level-level", estimator: "ols" });
    expect(c.rows).toBe(3);
    expect(c.columns.map((col) => col.name)).toEqual(["Units", "Price", "x2"]);
  });

  it("duplicate headers get the engine's unique names (p, p (2), p (3))", async () => {
    const y = snap("Sales!C1:C4", 1, [["p"], [120], [95], [130]]);
    const x = snap("Sales!D1:E4", 1, [["p", "p"], [2.1, 3], [2.4, 4], [2.2, 5]]);
    const c = await checkData({ y, x, form: "level-level", estimator: "ols" });
    expect(c.columns.map((col) => col.name)).toEqual(["p", "p (2)", "p (3)"]);
  });
});
