/**
 * Simulation check (seeded, invented data, as the rules allow for simulations): a log-log demand
 * curve whose price is set in response to the demand shock.
 *
 *   log q = 3 − 1.5·log p + 0.4·income + u,            u ~ N(0, 0.5²)
 *   log p = π·(cost₁ + cost₂) + 0.5·u + 0.3·v,           cost₁, cost₂, income, v ~ N(0, 1)
 *
 * The cost shifters move price and are unrelated to u: valid excluded instruments (over-identified
 * by one, so the 2SLS mean exists). Price responds to u, so OLS is biased: its probability limit is
 * −1.5 + cov(log p, u)/var(log p) = −1.5 + 0.125/(2π² + 0.1525).
 *
 * Strong instruments (π = 0.6, n = 250, 1,500 replications): OLS is far from −1.5; the 2SLS mean is
 * within 4 Monte Carlo standard errors of −1.5; the 95% classical and HC1 intervals cover −1.5 in
 * 93–97% of the replications (Monte Carlo sd of a 95% rate over 1,500: 0.56 points); the checks read
 * "not weak" every time.
 * Weak instruments (π = 0.0247: concentration n·2π²/0.1525 ≈ 2, so the expected first-stage F is
 * about 1 + 2/2 = 2): the mean first-stage F over 500 replications is between 1.6 and 2.4, the check flags weak
 * instruments (F below 10; Staiger and Stock 1997, Econometrica 65(3), a rule of thumb, common practice) in at least
 * 95% of replications, and the 2SLS estimates are pulled towards OLS (Staiger and Stock's point).
 */
import { fitIv } from "../../functions/engine/iv";
import { ivCheck } from "../../functions/engine/ivCheck";
import { leastSquares, type QrFit } from "../../functions/engine/leastSquares";
import { studentQuantile } from "../../functions/engine/distributions";
import { Rng } from "./rng";

const TRUE = -1.5;

function draw(rng: Rng, n: number, pi: number) {
  const y = new Float64Array(n);
  const lp = new Float64Array(n);
  const income = new Float64Array(n);
  const c1 = new Float64Array(n);
  const c2 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = 0.5 * rng.normal();
    income[i] = rng.normal();
    c1[i] = rng.normal();
    c2[i] = rng.normal();
    lp[i] = pi * (c1[i] + c2[i]) + 0.5 * u + 0.3 * rng.normal();
    y[i] = 3 + TRUE * lp[i] + 0.4 * income[i] + u;
  }
  return { y, x: [lp, income], xNames: ["Price", "Income"], endogenous: ["Price"], instruments: [c1, c2], instrumentNames: ["Cost A", "Cost B"], intercept: true };
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
}

describe("2SLS with a price set in response to demand (seeded simulation)", () => {
  test("strong cost shifters: OLS biased, 2SLS centred on the truth, 95% intervals cover about 95%", () => {
    const cpu = process.cpuUsage();
    const rng = new Rng(20261203);
    const reps = 1500;
    const n = 250;
    const pi = 0.6;
    const one = new Float64Array(n).fill(1);
    const iv: number[] = [];
    const ols: number[] = [];
    let coverClassical = 0;
    let coverHc1 = 0;
    let notWeak = 0;
    const q = studentQuantile(0.975, n - 3);
    for (let r = 0; r < reps; r++) {
      const d = draw(rng, n, pi);
      const fit = fitIv(d);
      const b = fit.coef[1];
      iv.push(b);
      ols.push((leastSquares([one, ...d.x], d.y).qr as QrFit).coef[1]);
      const sc = fit.standardErrors(fit.covariance({ type: "classical" }))[1];
      const sh = fit.standardErrors(fit.covariance({ type: "HC1" }))[1];
      if (Math.abs(b - TRUE) <= q * sc) coverClassical++;
      if (Math.abs(b - TRUE) <= q * sh) coverHc1++;
      if (r < 200 && !ivCheck(fit, { type: "HC1" }).weak) notWeak++;
    }
    const mean = iv.reduce((a, v) => a + v, 0) / reps;
    const sd = Math.sqrt(iv.reduce((a, v) => a + (v - mean) ** 2, 0) / (reps - 1));
    const olsMean = ols.reduce((a, v) => a + v, 0) / reps;
    const olsLimit = TRUE + 0.125 / (2 * pi * pi + 0.1525);
    console.log(`strong instruments, ${reps} replications of n = ${n}: OLS mean ${olsMean.toFixed(4)} (limit ${olsLimit.toFixed(4)}), 2SLS mean ${mean.toFixed(4)} (truth ${TRUE}, MC se ${(sd / Math.sqrt(reps)).toFixed(4)}), coverage classical ${(100 * coverClassical / reps).toFixed(1)}%, HC1 ${(100 * coverHc1 / reps).toFixed(1)}%, read as not weak ${notWeak}/200; ${(process.cpuUsage(cpu).user / 1e6).toFixed(1)} s of CPU`);
    expect(Math.abs(olsMean - olsLimit)).toBeLessThan(0.01);
    expect(olsMean - TRUE).toBeGreaterThan(0.1);
    expect(Math.abs(mean - TRUE)).toBeLessThan(4 * sd / Math.sqrt(reps));
    expect(coverClassical / reps).toBeGreaterThanOrEqual(0.93);
    expect(coverClassical / reps).toBeLessThanOrEqual(0.97);
    expect(coverHc1 / reps).toBeGreaterThanOrEqual(0.93);
    expect(coverHc1 / reps).toBeLessThanOrEqual(0.97);
    expect(notWeak).toBe(200);
  });

  test("a weak cost shifter (first-stage F near 2) is flagged, and 2SLS drifts towards OLS", () => {
    const cpu = process.cpuUsage();
    const rng = new Rng(7);
    const reps = 500;
    const n = 250;
    const pi = Math.sqrt((2 * 0.1525) / (2 * n)); // concentration n·2π²/0.1525 = 2
    const fs: number[] = [];
    const iv: number[] = [];
    let flagged = 0;
    let readingSaysWeak = 0;
    for (let r = 0; r < reps; r++) {
      const fit = fitIv(draw(rng, n, pi));
      const chk = ivCheck(fit, { type: "classical" });
      fs.push(chk.firstStages[0].f);
      iv.push(fit.coef[1]);
      if (chk.weak) flagged++;
      if (/^Weak instruments: the first-stage F is below 10 for Price \([\d.]+\) \(Staiger and Stock 1997; a rule of thumb, common practice\)/.test(chk.reading)) readingSaysWeak++;
    }
    const mF = median(fs);
    const meanF = fs.reduce((a, v) => a + v, 0) / reps;
    const mIv = median(iv);
    const olsLimit = TRUE + 0.125 / (2 * pi * pi + 0.1525);
    console.log(`weak instrument (pi = ${pi.toFixed(4)}), ${reps} replications: mean first-stage F ${meanF.toFixed(2)} (median ${mF.toFixed(2)}), flagged weak ${(100 * flagged / reps).toFixed(1)}%, median 2SLS ${mIv.toFixed(3)} (truth ${TRUE}, OLS limit ${olsLimit.toFixed(3)}); ${(process.cpuUsage(cpu).user / 1e6).toFixed(1)} s of CPU`);
    expect(meanF).toBeGreaterThan(1.6);
    expect(meanF).toBeLessThan(2.4);
    expect(flagged / reps).toBeGreaterThanOrEqual(0.95);
    expect(readingSaysWeak).toBe(flagged);
    // pulled at least a third of the way from the truth towards the OLS limit
    expect(mIv - TRUE).toBeGreaterThan((olsLimit - TRUE) / 3);
  });
});
