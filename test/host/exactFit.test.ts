/**
 * Through the host's door: y among the regressors, and exact fits. An exact fit's residuals are
 * rounding noise, so its standard errors are too: t would be astronomically large and p zero. The
 * data are invented (small ranges); the rule is the definition t = b/se with se → 0.
 */
import { call, HostError, loadFunctions, lookup, rows } from "../harness/loadFunctions";

const reg = loadFunctions();
const units = [120, 95, 130, 80, 150, 110, 90, 140, 100, 125, 105, 135];
const price = [2.0, 2.4, 1.9, 2.8, 1.7, 2.1, 2.5, 1.8, 2.3, 2.0, 2.2, 1.9];
const foot = [100, 98, 105, 90, 110, 101, 95, 108, 97, 103, 99, 107];
const Y = rows([units], ["Units"]);

function err(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v)}`);
  return v;
}

describe("y inside the x range", () => {
  it.each(["log-log", "level-level", "level-log", "log-level"])("is refused, naming the column, under %s", (form) => {
    const X = rows([price, units, foot], ["Price", "Units", "Footfall"]);
    const e = err(call(reg, "FIT", Y, X, `form=${form}`));
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toMatch(/^Units \(2\) \(column 2 of x\) holds the same values as y \(Units\) in every row used: .*take the y column out of the x range/);
  });

  it("is refused under PPML and in every function that fits (one message, from the shared fit)", () => {
    const X = rows([units, price], ["Units", "Price"]);
    for (const [id, extra] of [["FIT", "estimator=ppml"], ["ELASTICITIES", ""], ["SUMMARY", ""], ["TESTS", ""], ["FORMCHECK", ""]]) {
      const e = err(call(reg, id, Y, X, extra));
      expect(e.message).toMatch(/^Units \(2\) \(column 1 of x\) holds the same values as y/);
    }
  });
});

describe("an exact fit that is not y itself", () => {
  it("y in other units (dozens) among the regressors: t and p are #N/A and the column is named", () => {
    const X = rows([price, units.map((u) => u / 12)], ["Price", "Dozens"]);
    const t = call(reg, "FIT", Y, X, "form=level-level") as unknown[][];
    for (const r of t.slice(1)) {
      for (const c of [r[4], r[5]]) {
        expect(err(c).code).toBe("#N/A");
        expect(err(c).message).toBe("the fit is exact (every residual is zero up to rounding): Dozens is an exact linear function of Units (y itself, or y in other units): remove it from x; that leaves t and p undefined");
      }
    }
    // without the exact-fit rule t would be b/se with se at rounding level: above 1e10
    expect(Math.abs((t[3][2] as number) / (t[3][3] as number))).toBeGreaterThan(1e10);
  });

  it("y computed from two regressors: says what an exact fit usually means; SUMMARY's F and log-likelihood are #N/A", () => {
    const total = price.map((p, i) => 3 * p + 0.5 * foot[i]);
    const X = rows([price, foot], ["Price", "Footfall"]);
    const y = rows([total], ["Revenue"]);
    const t = call(reg, "FIT", y, X, "form=level-level") as unknown[][];
    expect(err(t[1][4]).message).toMatch(/^the fit is exact \(every residual is zero up to rounding\): Revenue is an exact linear combination of the regressors, which usually means it was computed from them/);
    const s = call(reg, "SUMMARY", y, X, "form=level-level") as unknown[][];
    expect(err(lookup(s, "F statistic")).message).toMatch(/exact fit/);
    expect(err(lookup(s, "Log-likelihood")).message).toMatch(/exact fit/);
    const tests = call(reg, "TESTS", y, X, "form=level-level") as unknown[][];
    expect(err(tests[1][1]).message).toMatch(/^the fit is exact .*; that leaves this test undefined$/);
  });
});
