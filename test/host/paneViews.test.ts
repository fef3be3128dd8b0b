/**
 * The pane reads results through typed views on globalThis.Elasticell, never through a spilled
 * table's column positions or header text: the views carry the same numbers as the cells (the same
 * cached fit and memoised tests). Data: the committed demo data (invented, seeded).
 */
import * as fs from "fs";
import * as path from "path";
import { call, loadFunctions } from "../harness/loadFunctions";

const reg = loadFunctions();
const demo = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../data/demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };
const col = (name: string) => demo.columns.indexOf(name);
const Y = [["Units"], ...demo.rows.map((r) => [r[col("Units")]])];
const X = [["Price", "Footfall", "Promo", "Income"], ...demo.rows.map((r) => ["Price", "Footfall", "Promo", "Income"].map((c) => r[col(c)]))];

interface TestItem { name: string; statistic: number | null; df: number[]; pValue: number | null; rejected: boolean | null; reading: string }
type Api = { testsView: (...a: unknown[]) => { ok: true; value: TestItem[] } | { ok: false; message: string } };

describe("testsView: the tests of ELX.TESTS as numbers", () => {
  const api = (globalThis as { Elasticell?: Api }).Elasticell as Api;

  it("has one item per row of ELX.TESTS with the same statistic, df and p-value", () => {
    expect(api).toBeDefined();
    const table = call(reg, "TESTS", Y, X, "zeros=drop") as unknown[][];
    const v = api.testsView(Y, X, "zeros=drop");
    if (!v.ok) throw new Error(v.message);
    expect(v.value.map((t) => t.name)).toEqual(table.slice(1).map((r) => r[0]));
    v.value.forEach((t, i) => {
      const row = table[i + 1];
      expect(t.statistic).toBe(row[1]);
      expect(t.pValue).toBe(row[3]);
      expect(t.df.join(", ")).toBe(String(row[2]));
      expect(String(row[4]).endsWith(t.reading)).toBe(true);
      expect(t.rejected).toBe((t.pValue as number) < 0.05);
    });
  });

  it("answers with the engine's message where ELX.TESTS refuses (weights=)", () => {
    const Xw = X.map((r, i) => [...r, i === 0 ? "w" : 1]);
    const v = api.testsView(Y, Xw, "zeros=drop; weights=w");
    expect(v.ok).toBe(false);
    if (!v.ok) expect(v.message).toMatch(/assume unweighted least squares/);
  });
});

describe("rollingView and breakView: ELX.ROLLING and ELX.BREAKTEST as numbers", () => {
  type Views = {
    rollingView: (...a: unknown[]) => { ok: true; value: { terms: string[]; windows: { from: unknown; to: unknown; rows: number; estimates: (number | null)[]; errors: (number | null)[] }[] } } | { ok: false; message: string };
    breakView: (...a: unknown[]) => { ok: true; value: { supF: { statistic: number; pValue: number; start: unknown } | null } } | { ok: false; message: string };
  };
  const api = (globalThis as { Elasticell?: Views }).Elasticell as Views;
  // the four rival stores come first in the demo sheet (rows 2–417): one series per Branch
  const head = ["Price", "Footfall", "Promo", "Income", "Branch", "Period"];
  const Y4 = Y.slice(0, 417);
  const X4 = [head, ...demo.rows.slice(0, 416).map((r) => head.map((c) => r[col(c)]))];

  it("every window's elasticity and error equal the ELX.ROLLING cells", () => {
    const opts = "zeros=drop; absorb=Branch; time=Period; panel=Branch; step=13; se=HC1";
    const t = call(reg, "ROLLING", Y4, X4, 52, opts) as unknown[][];
    const v = api.rollingView(Y4, X4, 52, opts);
    if (!v.ok) throw new Error(v.message);
    const rows = t.slice(1).filter((r) => typeof r[0] === "number");
    expect(v.value.windows.length).toBe(rows.length);
    v.value.windows.forEach((w, i) => {
      expect([w.from, w.to, w.rows]).toEqual(rows[i].slice(0, 3));
      v.value.terms.forEach((_, j) => {
        if (w.estimates[j] === null) return;
        expect(w.estimates[j]).toBe(rows[i][3 + 2 * j]);
        expect(w.errors[j]).toBe(rows[i][4 + 2 * j]);
      });
    });
  });

  it("the sup-F row's statistic, p-value and most likely start equal the ELX.BREAKTEST cells", () => {
    const opts = "zeros=drop; time=Period; panel=Branch; se=HC1";
    const t = call(reg, "BREAKTEST", Y4, X4, 61, opts) as unknown[][];
    const sup = t.find((r) => String(r[0]).startsWith("sup-F")) as unknown[];
    const v = api.breakView(Y4, X4, 61, opts);
    if (!v.ok || !v.value.supF) throw new Error("no sup-F in the view");
    expect([v.value.supF.statistic, v.value.supF.pValue, v.value.supF.start]).toEqual([sup[1], sup[3], sup[4]]);
  });
});
