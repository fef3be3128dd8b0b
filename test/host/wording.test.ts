/**
 * Through the host's door: the words an analyst reads must say exactly what was computed. The counts
 * they state are worked out here from data/demo.json (the seeded demo data) or from the small
 * invented ranges below; no statistical value is checked in this file.
 */
import * as fs from "fs";
import * as path from "path";
import { call, HostError, loadFunctions, lookup, rows } from "../harness/loadFunctions";

const reg = loadFunctions();
const demo = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../data/demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };
const col = (name: string) => demo.columns.indexOf(name);
const Y = [["Units"], ...demo.rows.map((r) => [r[col("Units")]])];
const X = [["Price", "Footfall", "Promo", "Income"], ...demo.rows.map((r) => ["Price", "Footfall", "Promo", "Income"].map((c) => r[col(c)]))];
const INVOCATION = { parameterAddresses: ["Sheet1!C1:C1249", "Sheet1!D1:G1249"] };

function err(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v)}`);
  return v;
}

describe("SUMMARY's PPML contrast says how many zero rows PPML keeps", () => {
  it("on the demo data: 2 of the 32 zero weeks stay in; the 30 closed weeks drop out through log Footfall", () => {
    // Counted from the data: zero Units among complete rows, and those whose logged regressors are > 0.
    const complete = demo.rows.filter((r) => ["Units", "Price", "Footfall", "Promo", "Income"].every((c) => typeof r[col(c)] === "number"));
    const zero = complete.filter((r) => r[col("Units")] === 0);
    const kept = zero.filter((r) => (r[col("Price")] as number) > 0 && (r[col("Footfall")] as number) > 0 && (r[col("Income")] as number) > 0);
    expect([zero.length, kept.length]).toEqual([32, 2]);
    const s = call(reg, "SUMMARY", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    expect(lookup(s, "Rows the log of Units lost (zero or blank)")).toBe(32);
    const text = String(lookup(s, "PPML contrast"));
    expect(text).toContain("PPML, which keeps 2 of the 32 rows with Units = 0 (the other 30 are left out of PPML too: a logged regressor is zero or negative in those rows)");
    expect(text).not.toContain("keeps the 32");
  });

  it("when no logged regressor is zero, PPML keeps every zero row and the text says so", () => {
    // the demo rows with Footfall > 0 only: every zero week left is a stock-out, kept by PPML
    const keep = demo.rows.map((r, i) => ({ r, i })).filter(({ r }) => typeof r[col("Footfall")] === "number" && (r[col("Footfall")] as number) > 0);
    const y = [["Units"], ...keep.map(({ r }) => [r[col("Units")]])];
    const x = [["Price", "Footfall"], ...keep.map(({ r }) => [r[col("Price")], r[col("Footfall")]])];
    const zeros = keep.filter(({ r }) => r[col("Units")] === 0).length;
    expect(zeros).toBe(2);
    const s = call(reg, "SUMMARY", y, x, "zeros=drop") as unknown[][];
    expect(String(lookup(s, "PPML contrast"))).toMatch(/^PPML, which keeps the 2 rows with Units = 0, gives/);
  });
});

describe("ELASTICITIES and BYGROUP: binary terms leave their cells empty and say where to look", () => {
  it("ELASTICITIES: no error cell in a binary row, so a sum over the Elasticity column works", () => {
    const t = call(reg, "ELASTICITIES", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    const promo = t.find((r) => r[0] === "Promo") as unknown[];
    expect(promo.slice(2, 6)).toEqual(["", "", "", ""]);
    expect(promo[6]).toBe("binary: see ELX.EFFECTS");
    expect(t.slice(1).every((r) => r.every((c) => !(c instanceof HostError)))).toBe(true);
  });

  it("log-log elasticities are evaluated 'everywhere (constant elasticity)', not 'constant'", () => {
    const t = call(reg, "ELASTICITIES", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    expect(t.find((r) => r[0] === "Price")?.[6]).toBe("everywhere (constant elasticity)");
  });

  it("BYGROUP: a term binary in every group has empty cells and its header says where to look", () => {
    const keys = [["Store"], ...demo.rows.map((r) => [r[col("Store")]])];
    const t = call(reg, "BYGROUP", keys, Y, X, "zeros=drop") as unknown[][];
    expect(t[0][6]).toBe("Elasticity: Promo (binary: see ELX.EFFECTS)");
    expect(t[0][7]).toBe("Std. error: Promo");
    for (const r of t.slice(1)) expect(r.slice(6, 8)).toEqual(["", ""]);
    expect(t.slice(1).every((r) => r.every((c) => !(c instanceof HostError)))).toBe(true);
  });

  it("BYGROUP: a term binary in one group only says so in that group's cell", () => {
    // Invented: Mix takes only 0 and 1 in group A, other values in group B.
    const keys = [["Key"], ...["A", "A", "A", "A", "A", "A", "B", "B", "B", "B", "B", "B"].map((k) => [k])];
    const y = rows([[10, 12, 9, 14, 11, 13, 20, 22, 19, 25, 21, 24]], ["Units"]);
    const x = rows([[2, 1.8, 2.2, 1.6, 2.1, 1.7, 2, 1.9, 2.3, 1.5, 2.2, 1.6], [0, 1, 0, 1, 1, 0, 0.5, 2, 1, 3, 0.2, 2.5]], ["Price", "Mix"]);
    const t = call(reg, "BYGROUP", keys, y, x, "form=level-level") as unknown[][];
    expect(t[0][4]).toBe("Elasticity: Mix");
    expect(t[1].slice(4, 6)).toEqual(["binary in this group: see ELX.EFFECTS", ""]);
    expect(typeof t[2][4]).toBe("number");
  });
});

describe("singular and plural", () => {
  it("one row left out: '1 row was left out'", () => {
    const e = err(call(reg, "FIT", [["y"], [1], [2], [null]], [["x"], [1], [3], [4]], "form=level-level"));
    expect(e.message).toContain("2 usable rows are too few for 2 coefficients (the intercept counts): need at least 3; 1 row was left out");
  });

  it("one coefficient: 'too few for 1 coefficient'", () => {
    const e = err(call(reg, "FIT", [["y"], [1]], [["x"], [1]], "form=level-level; intercept=false"));
    expect(e.message).toContain("1 usable row is too few for 1 coefficient");
    expect(e.message).not.toContain("1 coefficients");
  });

  it("one lag: 'HAC, 1 lag'", () => {
    const t = call(reg, "FIT", Y, X, "zeros=drop; se=HAC; lags=1", INVOCATION) as unknown[][];
    expect(t[0][3]).toBe("Std. error (HAC, 1 lag)");
  });

  it("new_x with one column against x with two: 'new_x has 1 column'", () => {
    const e = err(call(reg, "PREDICT", Y, [X[0].slice(0, 2), ...X.slice(1).map((r) => r.slice(0, 2))], [[2]], "zeros=drop", INVOCATION));
    expect(e.message).toMatch(/^new_x has 1 column but x has 2/);
  });
});

describe("the demo script's headings", () => {
  it("no heading says functions arrive in later builds (every function is in this build)", () => {
    const text = fs.readFileSync(path.resolve(__dirname, "../../scripts/demo.js"), "utf8");
    const headings = [...text.matchAll(/heading\("([^"]*)"\)/g)].map((m) => m[1]);
    expect(headings.length).toBeGreaterThan(5);
    for (const h of headings) expect(h).not.toMatch(/later build|arrive/i);
  });
});
