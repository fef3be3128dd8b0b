/**
 * Simulation checks of the break tests (seeded, invented data, as the rules allow for simulations).
 *
 * A log-log demand line, log q = 2 − 1.2·log p + e, n = 200, the known break after row 60.
 *   - Size under no break with heteroskedastic errors: the spread of e is 2.5 times larger in the
 *     first (smaller) regime and grows with |log p|. The robust Wald F (HC3) rejects at the 5%
 *     level close to 5% of the time (a little above: HC tests in a regime of 60 rows run slightly
 *     liberal); the classical Chow F, which assumes one error variance, rejects far more often. The theory: Toyoda (1974), J. Econometrics 2, and Schmidt and Sickles (1977),
 *     Econometrica 45, on the Chow test under unequal variances; White (1980) and MacKinnon and
 *     White (1985) on HC3.
 *   - Power: the elasticity moves from −1.2 to −0.7 at the break (same errors); both tests detect it.
 *   - sup-F (Andrews 1993, Hansen 1997 p-values, trim 0.15) with homoskedastic errors: size near 5%,
 *     and power against a smaller break (−1.2 → −0.9) at an unknown point.
 * Bands are wide enough for the Monte Carlo error (500 and 600 replications: about ±2 points at 5%) and the
 * finite-sample error of asymptotic p-values; the figures are printed.
 */
import { breakAt, supF, type BreakData } from "../../functions/engine/breaks";
import { Rng } from "./rng";

const N = 200;
const POINT = 60;

function draw(rng: Rng, slopeAfter: number, hetero: boolean): BreakData {
  const lp = new Float64Array(N);
  const y = new Float64Array(N);
  for (let i = 0; i < N; i++) {
    lp[i] = 0.3 * rng.normal();
    const slope = i >= POINT ? slopeAfter : -1.2;
    // heteroskedastic: 2.5 times the spread before the break, and a spread that grows with |log p|
    const sd = hetero ? (i < POINT ? 0.25 : 0.1) * (1 + Math.abs(lp[i]) / 0.6) / 1.5 : 0.15;
    y[i] = 2 + slope * lp[i] + sd * rng.normal();
  }
  return { X: [new Float64Array(N).fill(1), lp], y, names: ["(Intercept)", "log(price)"], rowNumbers: Int32Array.from(y, (_, i) => i + 2) };
}

describe("break tests under heteroskedasticity (500 replications, n = 200, break after row 60)", () => {
  it("robust Wald (HC3) holds its 5% size where the classical Chow test does not; both have power against a real break", () => {
    const rng = new Rng(20261203);
    const reps = 500;
    let chowSize = 0;
    let waldSize = 0;
    let chowPower = 0;
    let waldPower = 0;
    for (let r = 0; r < reps; r++) {
      const a = breakAt(draw(rng, -1.2, true), POINT, "HC3");
      if (a.chow.pValue < 0.05) chowSize++;
      if (a.wald.pValue < 0.05) waldSize++;
      const b = breakAt(draw(rng, -0.7, true), POINT, "HC3");
      if (b.chow.pValue < 0.05) chowPower++;
      if (b.wald.pValue < 0.05) waldPower++;
    }
    const pct = (c: number) => (100 * c) / reps;
    // eslint-disable-next-line no-console
    console.log(`no break, heteroskedastic: Chow rejects ${pct(chowSize).toFixed(1)}%, HC3 Wald ${pct(waldSize).toFixed(1)}% at 5%\n` +
      `elasticity −1.2 → −0.7: Chow rejects ${pct(chowPower).toFixed(1)}%, HC3 Wald ${pct(waldPower).toFixed(1)}%`);
    expect(pct(waldSize)).toBeGreaterThan(2.5);
    expect(pct(waldSize)).toBeLessThan(9);
    expect(pct(chowSize)).toBeGreaterThan(15);
    expect(pct(waldPower)).toBeGreaterThan(70);
  });

  it("sup-F with homoskedastic errors: size near 5% with Hansen's p-values; power against a break at an unknown point", () => {
    const rng = new Rng(77);
    const reps = 600;
    const powerReps = 150;
    let size = 0;
    let power = 0;
    let near = 0;
    for (let r = 0; r < reps; r++) if (supF(draw(rng, -1.2, false), 0.15).pValue < 0.05) size++;
    for (let r = 0; r < powerReps; r++) {
      const s = supF(draw(rng, -0.9, false), 0.15);
      if (s.pValue < 0.05) power++;
      if (Math.abs(s.point - POINT) <= 10) near++;
    }
    const pct = (c: number) => (100 * c) / reps;
    // eslint-disable-next-line no-console
    console.log(`sup-F, no break: rejects ${pct(size).toFixed(1)}% of ${reps} at 5%; break −1.2 → −0.9 after row 60: rejects ${((100 * power) / powerReps).toFixed(1)}% of ${powerReps}, most likely break within 10 rows of the true one in ${((100 * near) / powerReps).toFixed(1)}%`);
    expect(pct(size)).toBeGreaterThan(2.5);
    expect(pct(size)).toBeLessThan(8);
    expect((100 * power) / powerReps).toBeGreaterThan(70);
  });
});
