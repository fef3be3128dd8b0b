/**
 * Through the host's door: the HAC lag length. Too many lags give false precision, because the
 * least-squares scores x_t·e_t sum to zero (Xᵀe = 0): with L near n and Bartlett weights near 1 the
 * autocovariances cancel the variance term and the Newey–West errors collapse toward zero (Newey and
 * West 1987 for the estimator; the cap of a tenth of the rows is common practice). lags= without
 * se=HAC would be silently ignored, so it is refused. Data: the seeded demo data (data/demo.json).
 */
import * as fs from "fs";
import * as path from "path";
import { call, HostError, loadFunctions } from "../harness/loadFunctions";

const reg = loadFunctions();
const demo = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../data/demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };
const col = (name: string) => demo.columns.indexOf(name);
// The first 451 rows with Units and Footfall above zero (no zero policy needed).
const use = demo.rows.filter((r) => (r[col("Units")] as number) > 0 && (r[col("Footfall")] as number) > 0 && typeof r[col("Price")] === "number").slice(0, 451);
const Y = [["Units"], ...use.map((r) => [r[col("Units")]])];
const X = [["Price", "Footfall"], ...use.map((r) => [r[col("Price")], r[col("Footfall")]])];

function err(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v)}`);
  return v;
}

describe("the largest lag length", () => {
  it("lags=400 on 451 rows is refused with the bound and the reason", () => {
    expect(use.length).toBe(451);
    const e = err(call(reg, "FIT", Y, X, "se=HAC; lags=400"));
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toBe("lags=400 is too many for 451 rows: use at most lags=45 (a tenth of the rows, common practice; the default is 5); with more lags the HAC errors shrink toward zero and look more precise than they are");
  });

  it("lags=45 (the bound) is accepted, lags=46 is not", () => {
    expect(Array.isArray(call(reg, "FIT", Y, X, "se=HAC; lags=45"))).toBe(true);
    expect(err(call(reg, "FIT", Y, X, "se=HAC; lags=46")).message).toMatch(/^lags=46 is too many for 451 rows/);
  });

  it("the reason for the bound holds on these data: the least-squares scores x_t·e_t sum to zero", () => {
    // Σ_t e_t = 0 and Σ_t x_t e_t = 0 for the fitted residuals, so with all lags at weight near 1
    // the Bartlett sum cancels its own variance term.
    const fit = call(reg, "FIT", Y, X, "form=level-level; se=HC3") as unknown[][];
    const b = fit.slice(1).map((r) => r[2] as number);
    let s0 = 0;
    let s1 = 0;
    let scale = 0;
    use.forEach((r) => {
      const p = r[col("Price")] as number;
      const f = r[col("Footfall")] as number;
      const e = (r[col("Units")] as number) - b[0] - b[1] * p - b[2] * f;
      s0 += e;
      s1 += p * e;
      scale += Math.abs(p * e);
    });
    expect(Math.abs(s0) / scale).toBeLessThan(1e-10);
    expect(Math.abs(s1) / scale).toBeLessThan(1e-10);
  });

  it("the default lag length is always accepted, also on few rows (there the bound is the default)", () => {
    const few = [Y.slice(0, 11), X.slice(0, 11)];
    expect(Array.isArray(call(reg, "FIT", few[0], few[1], "se=HAC"))).toBe(true);
    // 10 rows: default ⌊4·(0.1)^(2/9)⌋ = 2 and a tenth of the rows is 1: the bound is 2
    expect(Array.isArray(call(reg, "FIT", few[0], few[1], "se=HAC; lags=2"))).toBe(true);
    expect(err(call(reg, "FIT", few[0], few[1], "se=HAC; lags=3")).message).toMatch(/use at most lags=2 \(the default lag length, more than a tenth of these rows\)/);
  });
});

describe("lags= without se=HAC", () => {
  it.each([
    ["lags=4", "lags=4 applies only to se=HAC (Newey–West errors) and se=DK (Driscoll–Kraay); the default errors are HC3 (HC1 for ppml): add se=HAC, or remove lags="],
    ["se=HC1; lags=4", "lags=4 applies only to se=HAC (Newey–West errors) and se=DK (Driscoll–Kraay), not se=HC1: add se=HAC, or remove lags="],
  ])("%s is refused instead of silently ignored", (opts, message) => {
    for (const id of ["FIT", "ELASTICITIES", "SUMMARY"]) expect(err(call(reg, id, Y, X, opts)).message).toBe(message);
  });
});
