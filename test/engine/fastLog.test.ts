/**
 * The in-place logarithm against the platform's Math.log (itself fdlibm's correctly-rounded-within-
 * one-ulp log): at most one unit in the last place apart on a million values spread over the whole
 * double range, and identical handling of 0, negatives, subnormals, infinity and NaN.
 */
import { logInPlace } from "../../functions/engine/fastLog";
import { Rng } from "../simulation/rng";

function ulpDistance(a: number, b: number): number {
  if (a === b) return 0;
  const buf = new Float64Array([a, b]);
  const i = new BigInt64Array(buf.buffer);
  const d = i[0] - i[1];
  return Number(d < BigInt(0) ? -d : d);
}

describe("logInPlace", () => {
  it("agrees with Math.log to within one ulp over the double range", () => {
    const r = new Rng(99);
    const n = 1_000_000;
    const x = new Float64Array(n);
    for (let i = 0; i < n; i++) x[i] = Math.exp((r.next() - 0.5) * 1400); // 1e-304 … 1e304
    for (let i = 0; i < 1000; i++) x[i] = 1 + (r.next() - 0.5) * 1e-6; // near 1, where cancellation bites
    const y = Float64Array.from(x);
    logInPlace(y);
    let worst = 0;
    for (let i = 0; i < n; i++) worst = Math.max(worst, ulpDistance(y[i], Math.log(x[i])));
    expect(worst).toBeLessThanOrEqual(1);
  });

  it("exact values and special cases match Math.log", () => {
    const x = Float64Array.from([1, 2, Math.E, 0.5, 1024, 0, -1, 5e-324, 2.2e-308, Infinity, NaN, Number.MAX_VALUE, Number.MIN_VALUE]);
    const y = Float64Array.from(x);
    logInPlace(y);
    Array.from(x).forEach((v, i) => {
      const m = Math.log(v);
      if (Number.isNaN(m)) expect(Number.isNaN(y[i])).toBe(true);
      else expect(ulpDistance(y[i], m)).toBeLessThanOrEqual(1);
    });
    expect(y[0]).toBe(0);
  });
});
