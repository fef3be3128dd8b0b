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
