/**
 * Simulation check (seeded, invented data, as the rules allow for simulations): with a known price
 * elasticity and errors whose spread grows with the distance of log price from its centre, the 95%
 * HC3 intervals of ELX.ELASTICITIES cover the truth in 93–97% of 2,000 replications, while the
 * classical intervals, which assume a constant spread, visibly undercover. The theory: White (1980),
 * Econometrica 48(4); MacKinnon and White (1985), J. Econometrics 29, on HC3 in small samples.
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { elasticity } from "../../functions/engine/elasticity";
import { Rng } from "./rng";

const TRUE_PRICE = -1.3;
const TRUE_FOOT = 0.6;

describe("interval coverage under heteroskedasticity (2,000 replications, n = 120)", () => {
  it("HC3 covers in 93–97%; classical undercovers", () => {
    const rng = new Rng(20261202);
    const reps = 2000;
    const n = 120;
    const o = parseOptions("");
    let hc3 = 0;
    let classical = 0;
    for (let r = 0; r < reps; r++) {
      const y: number[][] = [];
      const x: number[][] = [];
      for (let i = 0; i < n; i++) {
        const lp = 0.4 * rng.normal();
        const lf = 0.3 * rng.normal();
        const sd = 0.05 + 0.9 * Math.abs(lp); // spread rises away from the centre of log price
        const ly = 4 + TRUE_PRICE * lp + TRUE_FOOT * lf + sd * rng.normal();
        y.push([Math.exp(ly)]);
        x.push([Math.exp(lp), Math.exp(lf)]);
      }
      const fit = fitUncached({ y, x, options: o, yOrigin: null, xOrigin: null });
      const a = elasticity(fit, 0, fit.covariance("HC3"), 0.95, "mean");
      const b = elasticity(fit, 0, fit.covariance("classical"), 0.95, "mean");
      if (a.lower <= TRUE_PRICE && TRUE_PRICE <= a.upper) hc3++;
      if (b.lower <= TRUE_PRICE && TRUE_PRICE <= b.upper) classical++;
    }
    const pHc3 = hc3 / reps;
    const pCl = classical / reps;
    console.log(`coverage of the 95% price-elasticity interval over ${reps} replications: HC3 ${(100 * pHc3).toFixed(1)}%, classical ${(100 * pCl).toFixed(1)}%`);
    expect(pHc3).toBeGreaterThanOrEqual(0.93);
    expect(pHc3).toBeLessThanOrEqual(0.97);
    expect(pCl).toBeLessThan(0.9);
  });
});
