/**
 * Breusch–Pagan from the fit's own factor: the auxiliary regression of e² (or e²/σ̂²) on the fit's
 * design reuses the fit's QR through the corrected semi-normal equations instead of factorising again.
 * Reference: the same statistic from a new Householder factorisation of the auxiliary design
 * (specTests.auxiliary), which the R comparisons in test/reference/diagnostics.test.ts check against
 * lmtest::bptest; both must agree to 1e-12 relative. Data: seeded invented rows (a simulation input,
 * not a statistical reference).
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { auxiliary, breuschPaganKoenker, breuschPaganOriginal, onFitDesign, REUSE_CONDITION } from "../../functions/engine/specTests";
import type { OlsFit } from "../../functions/engine/fit";
import { chiSquareSf } from "../../functions/engine/distributions";
import { Rng } from "../simulation/rng";

function breuschPaganOriginalDirectP(a: { rss: number; tss: number; kept: number }): number {
  return chiSquareSf((a.tss - a.rss) / 2, a.kept - 1);
}

function data(n: number, seed: number, spread: number): { y: unknown[][]; x: unknown[][] } {
  const g = new Rng(seed);
  const r = () => g.next();
  const y: unknown[][] = [["Units"]];
  const x: unknown[][] = [["Price", "Footfall", "Income"]];
  for (let i = 0; i < n; i++) {
    const p = 1 + 2 * r();
    const f = 50 + 100 * r();
    const inc = 30 + 40 * r();
    const noise = (r() - 0.5) * (0.2 + spread * Math.log(p));
    y.push([Math.exp(3 - 1.4 * Math.log(p) + 0.8 * Math.log(f) + 0.3 * Math.log(inc) + noise)]);
    x.push([p, f, inc]);
  }
  return { y, x };
}

function fitOf(seed: number, spread: number): OlsFit {
  const { y, x } = data(3000, seed, spread);
  return fitUncached({ y, x, options: parseOptions("form=log-log"), yOrigin: null, xOrigin: null }) as OlsFit;
}

describe("Breusch–Pagan reuses the fit's factor", () => {
  it("takes the reuse path on a plain, well-conditioned fit", () => {
    const fit = fitOf(1, 1);
    expect(fit.qr.condition).toBeLessThan(REUSE_CONDITION);
    const e2 = Float64Array.from(fit.resid, (v) => v * v);
    expect(onFitDesign(fit, e2)).not.toBeNull();
  });

  for (const [seed, spread] of [[1, 1], [2, 0], [3, 3]] as const) {
    // Both statistics are differences (n·(1 − RSS/TSS), (TSS − RSS)/2): they are compared on the scale of
    // the difference's terms (n, TSS/2), where both computations carry their rounding.
    it(`studentized and original statistics equal a new factorisation of the auxiliary design to 1e-12 of their scale (seed ${seed})`, () => {
      const fit = fitOf(seed, spread);
      const e = fit.resid;
      const e2 = Float64Array.from(e, (v) => v * v);
      const direct = auxiliary(e2, fit.data.x);
      const statDirect = fit.n * (1 - direct.rss / direct.tss);
      const k = breuschPaganKoenker(fit);
      expect(Math.abs(k.statistic - statDirect) / fit.n).toBeLessThan(1e-12);
      expect(k.df).toEqual([direct.kept - 1]);
      const sigma2 = e.reduce((s, v) => s + v * v, 0) / fit.n;
      const g = Float64Array.from(e, (v) => (v * v) / sigma2);
      const a = auxiliary(g, fit.data.x);
      const o = breuschPaganOriginal(fit);
      expect(Math.abs(o.statistic - (a.tss - a.rss) / 2) / (a.tss / 2)).toBeLessThan(1e-12);
      expect(Math.abs(o.pValue - breuschPaganOriginalDirectP(a))).toBeLessThan(1e-10);
    });
  }

  it("does not reuse the factor of a fit without an intercept (its design lacks the auxiliary intercept)", () => {
    const { y, x } = data(500, 4, 1);
    const fit = fitUncached({ y, x, options: parseOptions("form=log-log; intercept=false"), yOrigin: null, xOrigin: null }) as OlsFit;
    expect(onFitDesign(fit, Float64Array.from(fit.resid, (v) => v * v))).toBeNull();
  });
});
