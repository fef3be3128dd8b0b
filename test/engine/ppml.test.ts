/**
 * PPML's iteration control. The numbers themselves are checked against R's glm(quasipoisson) in
 * test/reference/ppml.test.ts; here: the iteration count on a well-posed problem, and the message an
 * analyst gets when the iterations run out (reached by lowering the limit, since the existence check
 * catches the usual causes of non-convergence before iterating).
 */
import { readYX } from "../../functions/engine/intake";
import { prepare } from "../../functions/engine/transforms";
import { parseOptions } from "../../functions/engine/options";
import { PpmlFit } from "../../functions/engine/ppml";
import { Rng } from "../simulation/rng";

function data() {
  const r = new Rng(5);
  const y: unknown[][] = [["Units"]];
  const x: unknown[][] = [["Price"]];
  for (let i = 0; i < 300; i++) {
    const p = Math.exp(0.3 * r.normal());
    const mu = Math.exp(2 - 1.1 * Math.log(p));
    y.push([r.next() < 0.2 ? 0 : Math.round(mu * Math.exp(0.3 * r.normal()))]);
    x.push([p]);
  }
  return prepare(readYX(y, x, null, null), parseOptions("estimator=ppml"));
}

describe("PPML iterations", () => {
  it("converges in a handful of Newton steps on a well-posed problem", () => {
    const fit = new PpmlFit(data(), true);
    expect(fit.iterations).toBeGreaterThan(2);
    expect(fit.iterations).toBeLessThan(15);
  });

  it("says so, with the deviance and what to look for, when the iterations run out", () => {
    expect(() => new PpmlFit(data(), true, 2)).toThrow(/PPML did not converge in 2 iterations \(deviance [\d.]+\): look for a regressor that separates the zero rows, or rescale very large regressors/);
  });
});
