/**
 * Simulation checks of retransformation and of the Breusch–Pagan test (seeded, invented data, as
 * simulations may use).
 *
 * 1. Retransformation (Duan 1983, JASA 78): with skewed, non-normal log-scale errors
 *    ε = σ(χ²₃ − 3)/√6, the mean of y at x0 is exp(x0'b)·E[e^ε], where E[e^ε] = e^(−3t)(1 − 2t)^(−3/2)
 *    with t = σ/√6 (the chi-square moment generating function). exp(x0'b̂) alone estimates
 *    exp(x0'b)·e^(E ε) = exp(x0'b): low by the factor 1/E[e^ε]; Duan's factor removes the bias.
 * 2. Size and power of the studentized Breusch–Pagan test (Koenker 1981): with homoskedastic normal
 *    errors it rejects at 5% in 4–6% of 2,000 replications; with variance rising in x, in most.
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { duanFactor } from "../../functions/engine/retransform";
import { breuschPaganKoenker } from "../../functions/engine/specTests";
import type { OlsFit } from "../../functions/engine/fit";
import { Rng } from "./rng";

const o = parseOptions("");

function chiSquare3(r: Rng): number {
  const a = r.normal();
  const b = r.normal();
  const c = r.normal();
  return a * a + b * b + c * c;
}

describe("Duan's factor under skewed log-scale errors (600 replications, n = 250)", () => {
  it("the smeared prediction is within Monte Carlo error of the true mean; exp(x'b) alone is low by 1/E[e^ε]", () => {
    const r = new Rng(7031);
    const sigma = 0.5;
    const t = sigma / Math.sqrt(6);
    const mgf = Math.exp(-3 * t) * Math.pow(1 - 2 * t, -1.5); // E[e^ε], exact
    const b0 = 3;
    const b1 = -1.2;
    const p0 = 1.5; // predict at price 1.5
    const trueMean = Math.exp(b0 + b1 * Math.log(p0)) * mgf;
    const reps = 600;
    const n = 250;
    const duan: number[] = [];
    const naive: number[] = [];
    for (let rep = 0; rep < reps; rep++) {
      const y: number[][] = [];
      const x: number[][] = [];
      for (let i = 0; i < n; i++) {
        const p = Math.exp(0.4 * r.normal());
        const eps = (sigma * (chiSquare3(r) - 3)) / Math.sqrt(6);
        y.push([Math.exp(b0 + b1 * Math.log(p) + eps)]);
        x.push([p]);
      }
      const fit = fitUncached({ y, x, options: o, yOrigin: null, xOrigin: null }) as OlsFit;
      const m = fit.coef[0] + fit.coef[1] * Math.log(p0);
      naive.push(Math.exp(m));
      duan.push(Math.exp(m) * duanFactor(fit));
    }
    const mean = (a: number[]) => a.reduce((s, v) => s + v, 0) / a.length;
    const sd = (a: number[]) => Math.sqrt(a.reduce((s, v) => s + (v - mean(a)) ** 2, 0) / (a.length - 1));
    const mcDuan = sd(duan) / Math.sqrt(reps);
    const ratio = mean(naive) / trueMean;
    console.log(`true mean ${trueMean.toFixed(3)}; Duan ${mean(duan).toFixed(3)} (MC s.e. ${mcDuan.toFixed(3)}); exp(x'b) alone ${mean(naive).toFixed(3)}, ratio ${ratio.toFixed(4)} against theory 1/E[e^ε] = ${(1 / mgf).toFixed(4)}`);
    expect(Math.abs(mean(duan) - trueMean)).toBeLessThan(3 * mcDuan);
    expect(Math.abs(ratio - 1 / mgf)).toBeLessThan(0.01);
    expect(ratio).toBeLessThan(0.9);
  });
});

describe("studentized Breusch–Pagan at 5% (2,000 replications, n = 100)", () => {
  function rejectionRate(hetero: boolean, seed: number): number {
    const r = new Rng(seed);
    let reject = 0;
    const reps = 2000;
    for (let rep = 0; rep < reps; rep++) {
      const y: number[][] = [];
      const x: number[][] = [];
      for (let i = 0; i < 100; i++) {
        const lp = 0.5 * r.normal();
        const sd = hetero ? 0.1 * Math.exp(1.2 * lp) : 0.2;
        y.push([Math.exp(2 - lp + sd * r.normal())]);
        x.push([Math.exp(lp)]);
      }
      const fit = fitUncached({ y, x, options: o, yOrigin: null, xOrigin: null }) as OlsFit;
      if (breuschPaganKoenker(fit).pValue < 0.05) reject++;
    }
    return reject / reps;
  }

  it("rejects in 4–6% under constant spread and in most replications when the spread rises with x", () => {
    const size = rejectionRate(false, 11);
    const power = rejectionRate(true, 12);
    console.log(`Breusch–Pagan (Koenker) rejection at 5%: ${(100 * size).toFixed(1)}% with constant spread, ${(100 * power).toFixed(1)}% with spread rising in x`);
    expect(size).toBeGreaterThanOrEqual(0.04);
    expect(size).toBeLessThanOrEqual(0.06);
    expect(power).toBeGreaterThan(0.8);
  });
});
