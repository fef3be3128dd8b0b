/**
 * Invariants of log-log least squares that need no reference values (they follow from the algebra of
 * logs and of least squares with an intercept): scaling a regressor by c moves only the intercept,
 * by −b·log c; scaling y by c moves the intercept by log c; row order does not matter; the log
 * residuals sum to zero; inputs are not mutated.
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { Rng } from "../simulation/rng";

function data(n: number, seed: number): { y: number[][]; x: number[][] } {
  const r = new Rng(seed);
  const y: number[][] = [];
  const x: number[][] = [];
  for (let i = 0; i < n; i++) {
    const p = Math.exp(0.3 * r.normal());
    const f = Math.exp(0.2 * r.normal());
    x.push([p, f, r.next() < 0.3 ? 1 : 0]);
    y.push([Math.exp(3 - 1.2 * Math.log(p) + 0.5 * Math.log(f) + 0.1 * r.normal())]);
  }
  return { y, x };
}

const o = parseOptions("");
const fitOf = (y: unknown[][], x: unknown[][]) => fitUncached({ y, x, options: o, yOrigin: null, xOrigin: null });

describe("log-log invariants", () => {
  const { y, x } = data(400, 7);
  const base = fitOf(y, x);

  it("scaling price by c changes only the intercept, by −b·log c", () => {
    const c = 100; // pence instead of pounds
    const f2 = fitOf(y, x.map((r) => [r[0] * c, r[1], r[2]]));
    expect(f2.coef[1]).toBeCloseTo(base.coef[1], 11);
    expect(f2.coef[2]).toBeCloseTo(base.coef[2], 11);
    expect(f2.coef[0]).toBeCloseTo(base.coef[0] - base.coef[1] * Math.log(c), 10);
  });

  it("scaling y by c moves the intercept by log c", () => {
    const c = 12; // dozens to loaves
    const f2 = fitOf(y.map((r) => [r[0] * c]), x);
    expect(f2.coef[0]).toBeCloseTo(base.coef[0] + Math.log(c), 11);
    expect(f2.coef[1]).toBeCloseTo(base.coef[1], 11);
  });

  it("row order does not matter", () => {
    const idx = y.map((_, i) => i).reverse();
    const f2 = fitOf(idx.map((i) => y[i]), idx.map((i) => x[i]));
    for (let j = 0; j < 4; j++) expect(f2.coef[j]).toBeCloseTo(base.coef[j], 12);
    expect(f2.covariance("HC3").V[5]).toBeCloseTo(base.covariance("HC3").V[5], 14);
  });

  it("with an intercept the log residuals sum to zero", () => {
    const s = base.resid.reduce((a, b) => a + b, 0);
    expect(Math.abs(s)).toBeLessThan(1e-11);
  });

  it("does not mutate the cells it is given", () => {
    const { y: y2, x: x2 } = data(50, 8);
    const ys = JSON.stringify(y2);
    const xs = JSON.stringify(x2);
    fitOf(y2, x2);
    expect(JSON.stringify(y2)).toBe(ys);
    expect(JSON.stringify(x2)).toBe(xs);
  });
});
