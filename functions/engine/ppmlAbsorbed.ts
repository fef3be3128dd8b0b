/**
 * PPML with fixed effects: the Poisson pseudo-likelihood with one intercept per absorbed value,
 * E[y | x, keys] = exp(x'b + α_g (+ γ_t)), without forming the indicator columns.
 *
 * Each IRLS step (McCullagh and Nelder 1989, §2.5) demeans the working response z = η + (y − μ)/μ and
 * the regressors with the working weights ω = w·μ (the weighted within transformation of Correia,
 * Guimarães and Zylkin 2020, "Fast Poisson estimation with high-dimensional fixed effects"),
 * regresses √ω·z̃ on √ω·X̃ with the engine's QR, and takes the new linear predictor as
 * η = z − ẽ (the working residual of the full model equals that of the demeaned one). If the deviance
 * rises, η is halved back towards the previous one (every such η is again x'b + fixed effects).
 * Converged when the relative change of the deviance is below PPML_TOL and the largest relative
 * change of a slope below √PPML_TOL (IRLS converges quadratically, so the slopes are then good to
 * about PPML_TOL).
 *
 * Rows left out first, repeatedly until nothing changes: every row of an absorbed value whose y is 0
 * in every row (its intercept has no finite estimate: it runs to −∞), and singletons.
 *
 * Covariances at the converged estimate come from `scores()`: the columns √ω̂·x̃ (x̃ demeaned with the
 * weights ω̂) and u = √w·(y − μ̂)/√μ̂, so the score is w·x̃_i(y_i − μ̂_i) and the bread (X̃ᵀŴX̃)⁻¹;
 * panelHc's HC1 is then HC0·n/(n − k − a) = n/(n − p_all).
 */
import { mapped } from "./blocks";
import { expOf } from "./kernel";
import { leastSquares, type QrFit } from "./leastSquares";
import { count, fail, unavailable } from "./problems";
import { Absorber, collinearWithEffects, dropSingletons, keepRows, recode, type FixedEffectKey } from "./absorb";
import type { ScoreModel } from "./panelCovariance";

/** Convergence tolerance (as for PPML without fixed effects) and the iteration limit. */
export const PPML_TOL = 1e-12;
export const PPML_MAX_ITER = 200;

export interface PpmlAbsorbedInput {
  y: Float64Array;
  X: Float64Array[];
  names: string[];
  yName: string;
  keys: FixedEffectKey[];
  /** Positive weights (weighted PPML), or null. */
  weights?: Float64Array | null;
  /** Rows already usable (null: all). */
  keep?: Uint8Array | null;
  maxIter?: number;
}

export interface PpmlAbsorbedFit {
  coef: Float64Array;
  /** μ̂ on the rows kept. */
  mu: Float64Array;
  /** Rows (of those given) kept. */
  keep: Uint8Array;
  /** Rows left out because their absorbed value has y = 0 in every row, per key, and the values. */
  allZeroRows: number;
  allZeroValues: number;
  singletons: number;
  n: number;
  k: number;
  absorbed: number;
  iterations: number;
  deviance: number;
  /** The absorber at the converged working weights. */
  absorber: Absorber;
  scores: ScoreModel;
}

function deviance(y: Float64Array, mu: Float64Array, w: Float64Array | null): number {
  let d = 0;
  for (let i = 0; i < y.length; i++) {
    const yi = y[i];
    const m = mu[i];
    d += (w ? w[i] : 1) * (yi > 0 ? yi * Math.log(yi / m) - (yi - m) : m);
  }
  return 2 * d;
}

/** Leaves out absorbed values with y = 0 in every row and singletons, until nothing changes. */
export function leaveOut(y: Float64Array, keys: Int32Array[], keep0: Uint8Array | null): { keep: Uint8Array; zeroRows: number; zeroValues: number; singletons: number } {
  const n = y.length;
  let keep: Uint8Array = keep0 ? Uint8Array.from(keep0) : new Uint8Array(n).fill(1);
  let zeroRows = 0;
  let zeroValues = 0;
  let singletons = 0;
  for (;;) {
    let changed = false;
    for (const codes of keys) {
      let mx = 0;
      for (let i = 0; i < n; i++) if (codes[i] > mx) mx = codes[i];
      const pos = new Uint8Array(mx + 1);
      const present = new Uint8Array(mx + 1);
      for (let i = 0; i < n; i++) {
        if (!keep[i]) continue;
        present[codes[i]] = 1;
        if (y[i] > 0) pos[codes[i]] = 1;
      }
      for (let g = 0; g <= mx; g++) if (present[g] && !pos[g]) zeroValues++;
      for (let i = 0; i < n; i++) {
        if (keep[i] && !pos[codes[i]]) {
          keep[i] = 0;
          zeroRows++;
          changed = true;
        }
      }
    }
    const s = dropSingletons(keys, keep);
    if (s.dropped > 0) {
      singletons += s.dropped;
      keep = s.keep;
      changed = true;
    }
    if (!changed) break;
  }
  return { keep, zeroRows, zeroValues, singletons };
}

export function ppmlAbsorbed(input: PpmlAbsorbedInput): PpmlAbsorbedFit {
  const { names, yName } = input;
  const maxIter = input.maxIter ?? PPML_MAX_ITER;
  const k = input.X.length;
  for (let i = 0; i < input.y.length; i++) {
    if (input.keep && !input.keep[i]) continue;
    if (!(input.y[i] >= 0)) fail(`${yName} has a negative value: PPML needs y at or above zero`);
    if (input.weights && !(input.weights[i] > 0 && Number.isFinite(input.weights[i]))) throw new Error("weights must be positive on the rows kept (leave the others out with usableWeights)");
  }
  const lo = leaveOut(input.y, input.keys.map((c) => c.codes), input.keep ?? null);
  const keep = lo.keep;
  const y = keepRows(input.y, keep);
  const n = y.length;
  if (n === 0) fail(`every value of ${input.keys.map((c) => c.name).join(" and ")} has ${yName} = 0 in all its rows or occurs once: PPML with these fixed effects has nothing to estimate`);
  const X = input.X.map((c) => keepRows(c, keep));
  const w = input.weights ? keepRows(input.weights, keep) : null;
  const coded = input.keys.map((c) => ({ name: c.name, ...recode(c.codes, keep) }));
  coded.forEach((c) => {
    if (c.levels === 1) fail(`${c.name} has the same value in every row used, so absorbing it is only an intercept: remove it from absorb=`);
  });
  const base = new Absorber(coded, null);
  const a = base.absorbed;
  if (n - k - a < 1) fail(`${count(n, "row")} leave nothing to estimate ${count(k, "slope")} and ${count(a, "absorbed parameter")} from`);

  let ybar = 0;
  for (let i = 0; i < n; i++) ybar += y[i];
  ybar /= n;
  let mu: Float64Array = mapped(y, (v) => (v + ybar) / 2);
  let eta: Float64Array = mapped(mu, Math.log);
  let dev = deviance(y, mu, w);
  let beta: Float64Array = new Float64Array(k);
  let converged = false;
  let iter = 0;
  const z = new Float64Array(n);
  const omega = new Float64Array(n);
  const collinear = (d: { column: number; on: number[] }): never =>
    d.on.length === 0
      ? fail(`${names[d.column]} ${base.explainedPhrase()} in the rows PPML can use (collinear with the fixed effects): remove it from x`)
      : fail(`${names[d.column]} is, after absorbing ${base.keyNames.join(" and ")}, an exact linear combination of ${d.on.map((j) => names[j]).join(", ")} (collinear): remove one of these columns`);
  const step = (): { coef: Float64Array; etaNew: Float64Array; qr: QrFit; Xs: Float64Array[]; ab: Absorber } => {
    for (let i = 0; i < n; i++) {
      z[i] = eta[i] + (y[i] - mu[i]) / mu[i];
      omega[i] = (w ? w[i] : 1) * mu[i];
    }
    const ab = base.reweighted(Float64Array.from(omega));
    const zt = new Float64Array(n);
    ab.demean(z, zt);
    const Xs = X.map((c, j) => {
      const d = new Float64Array(n);
      ab.demean(c, d);
      if (collinearWithEffects(c, d, omega)) collinear({ column: j, on: [] });
      return d;
    });
    for (let i = 0; i < n; i++) {
      const s = Math.sqrt(omega[i]);
      zt[i] *= s;
      for (let j = 0; j < k; j++) Xs[j][i] *= s;
    }
    const ls = leastSquares(Xs, zt);
    const qr = ls.qr ?? collinear(ls.dependent as { column: number; on: number[] });
    const etaNew = mapped(z, (v, i) => v - qr.resid[i] / Math.sqrt(omega[i]));
    return { coef: Float64Array.from(qr.coef), etaNew, qr, Xs, ab };
  };
  for (iter = 1; iter <= maxIter; iter++) {
    const s = step();
    let etaNew = s.etaNew;
    let next = s.coef;
    let muNew = expOf(etaNew);
    let devNew = deviance(y, muNew, w);
    for (let h = 0; h < 40 && iter > 1 && (!Number.isFinite(devNew) || devNew > dev * (1 + 1e-12)); h++) {
      etaNew = mapped(etaNew, (v, i) => (v + eta[i]) / 2);
      next = mapped(next, (v, j) => (v + beta[j]) / 2);
      muNew = expOf(etaNew);
      devNew = deviance(y, muNew, w);
    }
    if (!Number.isFinite(devNew)) break;
    let change = 0;
    for (let j = 0; j < k; j++) change = Math.max(change, Math.abs(next[j] - beta[j]) / Math.max(1, Math.abs(next[j])));
    const devChange = Math.abs(devNew - dev) / (Math.abs(devNew) + 0.1);
    beta = next;
    eta = etaNew;
    mu = muNew;
    dev = devNew;
    if (iter > 1 && devChange < PPML_TOL && change < Math.sqrt(PPML_TOL)) {
      converged = true;
      break;
    }
  }
  if (!converged) {
    unavailable(`PPML with fixed effects did not converge in ${maxIter} iterations (deviance ${Number.isFinite(dev) ? dev.toPrecision(6) : "not finite"}): look for a regressor that separates the zero rows within the fixed effects, or rescale very large regressors`);
  }
  // The factor at the converged μ̂ carries the covariances.
  const fin = step();
  const u = mapped(y, (v, i) => (w ? Math.sqrt(w[i]) : 1) * (v - mu[i]) / Math.sqrt(mu[i]));
  const scores: ScoreModel = {
    X: fin.Xs,
    qr: fin.qr,
    u,
    absorbed: a,
    leverageOffset: null,
    noLeverage: "se=HC2 and se=HC3 are not offered with estimator=ppml and fixed effects: use se=HC1 or se=cluster",
  };
  return {
    coef: beta,
    mu,
    keep,
    allZeroRows: lo.zeroRows,
    allZeroValues: lo.zeroValues,
    singletons: lo.singletons,
    n,
    k,
    absorbed: a,
    iterations: iter,
    deviance: dev,
    absorber: fin.ab,
    scores,
  };
}
