/**
 * PPML: Poisson pseudo-maximum likelihood for an exponential mean, E[y | x] = exp(x'b).
 *
 * y stays in levels, zeros included; the x side is as the form says, so under log-log each
 * coefficient of a logged x is an elasticity of E[y | x]. Consistent whenever the mean is right,
 * whatever the variance — the reason to prefer it to log-linear OLS under heteroskedasticity (Santos
 * Silva and Tenreyro 2006, "The log of gravity", Rev. Econ. Stat. 88(4)).
 *
 * Estimation: iteratively reweighted least squares (McCullagh and Nelder 1989, §2.5) on the engine's
 * Householder QR: z = η + (y − μ)/μ regressed on X with weights μ, step-halving if the deviance
 * rises; converged when both the relative change of the deviance and the largest relative change
 * of a coefficient fall below PPML_TOL. Existence (Santos Silva and Tenreyro 2010, Economics
 * Letters 107): if a combination of regressors is zero wherever y > 0 and of one sign where y = 0,
 * the estimates do not exist; that is checked first and named.
 *
 * Covariances at the converged estimate, with W = diag(μ̂) and u = y − μ̂: HC0 =
 * (XᵀWX)⁻¹ Xᵀdiag(u²)X (XᵀWX)⁻¹, HC1 = HC0·n/(n − k), classical = φ(XᵀWX)⁻¹ with the Pearson
 * dispersion φ = Σ u²/μ̂ /(n − k). They are the OLS sandwich formulas on the weighted design √μ̂·X with
 * the Pearson residuals u/√μ̂, so the same code computes them.
 */
import { mapped } from "./blocks";
import { expOf } from "./kernel";
import { scaled, workingUnit } from "./scaling";
import { leastSquares, type QrFit } from "./leastSquares";
import { normalQuantile, normalTwoSided } from "./distributions";
import { fail, unavailable, rowsPhrase, RowList } from "./problems";
import { Model } from "./fit";
import { LOG, type Dataset, type Transform } from "./transforms";
import type { CovarianceInput } from "./covariance";
import type { EstimatorInfo } from "./estimators";
import { ppmlAbsorbed } from "./ppmlAbsorbed";
import type { ScoreModel } from "./panelCovariance";

/** Convergence tolerance on the relative change of the deviance and of the coefficients. */
export const PPML_TOL = 1e-12;
export const PPML_MAX_ITER = 200;

function deviance(y: Float64Array, mu: Float64Array, w: Float64Array | null = null): number {
  let d = 0;
  for (let i = 0; i < y.length; i++) {
    const yi = y[i];
    const m = mu[i];
    d += (w ? w[i] : 1) * (yi > 0 ? yi * Math.log(yi / m) - (yi - m) : m);
  }
  return 2 * d;
}

export interface PpmlStatistics {
  deviance: number;
  pseudoRSquared: number;
  iterations: number;
  zerosKept: number;
  dispersion: number;
}

/** Poisson pseudo-maximum likelihood: y in levels, zeros kept, an exponential mean. */
export const PPML_INFO: EstimatorInfo = Object.freeze({
  id: "ppml",
  title: "PPML",
  seTypes: ["HC1", "HC0", "classical", "cluster"],
  defaultSe: "HC1",
  logsY: false,
  negativeY: false,
  residualVariance: false,
  exponentialMean: true,
  statistic: "z",
  noResidualVariance: "drop estimator=ppml (PPML has no residual variance to test or retransform)",
} as const);

export class PpmlFit extends Model {
  readonly estimator = "ppml" as const;
  readonly info = PPML_INFO;
  /** The factor of the weighted design √μ̂·X at the converged estimate. */
  readonly qr: QrFit;
  private readonly covInput: CovarianceInput;
  readonly meanTransform: Transform = LOG;
  private readonly beta: Float64Array;
  /** μ̂, the fitted mean of y. */
  readonly mu: Float64Array;
  readonly iterations: number;
  readonly devianceValue: number;

  /** The PPML scores of a fit with fixed effects (null without them: the base class builds them). */
  private readonly absorbedScores: ScoreModel | null = null;

  /**
   * @param maxIter iteration limit (tests lower it to reach the non-convergence message)
   *
   * With weights= each row's pseudo-likelihood term is multiplied by its weight (R's glm(weights =)):
   * the working weights are w·μ, the scores w·x(y − μ̂). With absorb= the fit is ppmlAbsorbed's (no
   * intercept of its own; the rows whose absorbed value has y = 0 throughout and the singletons are
   * already left out by prepare).
   */
  constructor(data: Dataset, intercept: boolean, maxIter = PPML_MAX_ITER) {
    const keys = data.roles.absorb;
    super(data, intercept && keys.length === 0);
    const wts = data.roles.weights;
    if (keys.length > 0) {
      const r = ppmlAbsorbed({
        y: data.y,
        X: this.design,
        names: this.terms.map((t) => t.name),
        yName: data.yName,
        keys: keys.map((k) => ({ name: k.name, codes: k.codes })),
        weights: wts,
        maxIter,
      });
      if (r.n !== this.n) throw new Error("PPML rows left out after prepare");
      this.beta = r.coef;
      this.mu = r.mu;
      this.iterations = r.iterations;
      this.devianceValue = r.deviance;
      this.absorbed = r.absorbed;
      this.absorber = r.absorber;
      this.qr = r.scores.qr;
      let ssr = 0;
      for (let i = 0; i < this.n; i++) ssr += r.scores.u[i] * r.scores.u[i];
      this.absorbedScores = { ...r.scores, rowNumbers: data.rowNumbers };
      this.covInput = { columns: r.scores.X, factor: r.scores.qr, scores: r.scores.u, ssr, dfResid: this.dfResid, rowNumbers: data.rowNumbers };
      return;
    }
    // With an intercept PPML is equivariant to the units of y (y·s moves the intercept by log s and
    // nothing else), so y of extreme magnitude is fitted divided by a power of two and the intercept,
    // μ̂ and the deviance are put back afterwards; the iterations then start near the answer.
    const unit = intercept ? workingUnit(data.y) : 1;
    const y = unit === 1 ? data.y : scaled(data.y, unit);
    const n = this.n;
    let positive = 0;
    for (let i = 0; i < n; i++) if (y[i] > 0) positive++;
    if (positive === 0) fail(`${data.yName} is zero in every row used: PPML needs some rows above zero`);
    this.checkExistence(positive);
    const X = this.design;
    const k = this.k;
    let mu: Float64Array = mapped(y, (v) => v + 0.1);
    let eta: Float64Array = mapped(mu, Math.log);
    let beta: Float64Array = new Float64Array(k);
    let dev = deviance(y, mu, wts);
    let iter = 0;
    let converged = false;
    const A: Float64Array[] = X.map(() => new Float64Array(n));
    const z = new Float64Array(n);
    let lastQr: QrFit | null = null;
    const explain = (): never => unavailable("the weighted design lost rank during PPML iterations (a regressor separates the zeros): check regressors that are zero wherever y is above zero");
    for (iter = 1; iter <= maxIter; iter++) {
      for (let i = 0; i < n; i++) {
        const s = Math.sqrt((wts ? wts[i] : 1) * mu[i]);
        z[i] = (eta[i] + (y[i] - mu[i]) / mu[i]) * s;
        for (let j = 0; j < k; j++) A[j][i] = X[j][i] * s;
      }
      lastQr = leastSquares(A, z).qr ?? explain();
      let next: Float64Array = Float64Array.from(lastQr.coef);
      let newEta = linear(X, next);
      let newMu = expOf(newEta);
      let newDev = deviance(y, newMu, wts);
      // Step halving when the deviance is not finite or rises (as R's glm.fit does).
      for (let h = 0; h < 40 && iter > 1 && (!Number.isFinite(newDev) || newDev > dev * (1 + 1e-12)); h++) {
        next = mapped(next, (v, j) => (v + beta[j]) / 2);
        newEta = linear(X, next);
        newMu = expOf(newEta);
        newDev = deviance(y, newMu, wts);
      }
      if (!Number.isFinite(newDev)) break;
      let change = 0;
      for (let j = 0; j < k; j++) change = Math.max(change, Math.abs(next[j] - beta[j]) / Math.max(1, Math.abs(next[j])));
      const devChange = Math.abs(newDev - dev) / (Math.abs(newDev) + 0.1);
      beta = next;
      eta = newEta;
      mu = newMu;
      dev = newDev;
      if (iter > 1 && devChange < PPML_TOL && change < Math.sqrt(PPML_TOL)) {
        converged = true;
        break;
      }
    }
    if (!converged || !lastQr) {
      unavailable(`PPML did not converge in ${maxIter} iterations (deviance ${Number.isFinite(dev * unit) ? (dev * unit).toPrecision(6) : "not finite"}): look for a regressor that separates the zero rows, or rescale very large regressors`);
    }
    if (unit !== 1) {
      const shift = Math.log(unit);
      beta[0] += shift;
      eta = mapped(eta, (v) => v + shift);
      mu = mapped(mu, (v) => v * unit);
      dev *= unit;
    }
    const yOwn = data.y;
    this.beta = beta;
    this.mu = mu;
    this.iterations = iter;
    this.devianceValue = dev;
    // The factor at the converged μ̂ carries the covariances: weighted design √μ̂·X, Pearson residuals.
    for (let i = 0; i < n; i++) {
      const s = Math.sqrt((wts ? wts[i] : 1) * mu[i]);
      z[i] = (eta[i] + (yOwn[i] - mu[i]) / mu[i]) * s;
      for (let j = 0; j < k; j++) A[j][i] = X[j][i] * s;
    }
    const q = leastSquares(A, z).qr ?? explain();
    // √w·(y − μ̂)/√μ̂: with the columns √(wμ̂)·x the score of a row is w·x(y − μ̂)
    const pearson = mapped(yOwn, (v, i) => ((wts ? Math.sqrt(wts[i]) : 1) * (v - mu[i])) / Math.sqrt(mu[i]));
    let ssr = 0;
    for (let i = 0; i < n; i++) ssr += pearson[i] * pearson[i];
    this.qr = q;
    this.covInput = { columns: A, factor: q, scores: pearson, ssr, dfResid: this.dfResid, rowNumbers: data.rowNumbers };
  }

  covarianceInput(): CovarianceInput {
    return this.covInput;
  }

  /** With fixed effects: ppmlAbsorbed's scores (no exact leverage, so HC2/HC3 stay refused). */
  protected scoreModel(): ScoreModel {
    return this.absorbedScores ?? super.scoreModel();
  }

  /** Santos Silva and Tenreyro (2010): a combination zero where y > 0 and one-signed where y = 0. */
  private checkExistence(positive: number): void {
    const y = this.data.y;
    const n = this.n;
    const rowsPos: number[] = [];
    for (let i = 0; i < n; i++) if (y[i] > 0) rowsPos.push(i);
    const sub = (c: Float64Array) => mapped(rowsPos, (i) => c[i]);
    let cols = this.design.map((c, j) => ({ j, c }));
    // Check dependencies on the y > 0 rows one at a time, dropping each dependent column found.
    for (let guard = 0; guard < this.k; guard++) {
      if (positive <= cols.length) break;
      const d = leastSquares(cols.map((e) => sub(e.c)), new Float64Array(positive)).dependent;
      if (!d) return;
      const target = cols[d.column];
      const basis = d.on.map((i) => cols[i]);
      // The combination z = x_target − Σ c_m x_m, exact on the y > 0 rows.
      let zAll: Float64Array;
      if (basis.length === 0) zAll = target.c;
      else {
        const fitPos = leastSquares(basis.map((e) => sub(e.c)), sub(target.c)).qr;
        if (!fitPos) return; // the basis is itself dependent: the fit's own rank check names it
        zAll = mapped(target.c, (v, i) => {
          let s = v;
          basis.forEach((e, m) => (s -= fitPos.coef[m] * e.c[i]));
          return s;
        });
      }
      let scale = 0;
      for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(zAll[i]));
      const tol = 1e-9 * Math.max(scale, 1e-300);
      let pos = false;
      let neg = false;
      const where = new RowList();
      for (let i = 0; i < n; i++) {
        if (y[i] > 0) continue;
        if (zAll[i] > tol) pos = true;
        else if (zAll[i] < -tol) neg = true;
        if (Math.abs(zAll[i]) > tol) where.add(this.data.rowNumbers[i]);
      }
      const name = this.terms[target.j].name;
      if (!(pos && neg) && where.count > 0) {
        const on = basis.map((e) => this.terms[e.j].name);
        const what = on.length === 0
          ? `${name} is zero in every row where ${this.data.yName} is above zero`
          : `${name} is a fixed combination of ${on.join(", ")} in every row where ${this.data.yName} is above zero`;
        fail(`the PPML estimates do not exist (Santos Silva and Tenreyro 2010): ${what}, and departs from it only in zero rows (${rowsPhrase(where, 5)}); remove ${name} from x, or leave out those rows`);
      }
      if (where.count === 0) return; // exactly collinear in all rows: the rank check of the fit names it
      cols = cols.filter((_, i) => i !== d.column);
    }
  }

  get coef(): Float64Array {
    return this.beta;
  }

  /** y − μ̂ in y's units. */
  get resid(): Float64Array {
    return mapped(this.data.y, (v, i) => v - this.mu[i]);
  }

  get fitted(): Float64Array {
    return this.mu;
  }

  criticalValue(level: number): number {
    return normalQuantile(0.5 + level / 2);
  }

  pValue(z: number): number {
    return normalTwoSided(z);
  }

  statistics(): PpmlStatistics {
    return this.memo("ppmlStats", () => {
      // the squared correlation does not depend on units: extreme y and μ̂ are scaled first
      const unit = workingUnit(this.data.y);
      const y = unit === 1 ? this.data.y : scaled(this.data.y, unit);
      const mu = unit === 1 ? this.mu : scaled(this.mu, unit);
      const n = this.n;
      let my = 0;
      let mm = 0;
      for (let i = 0; i < n; i++) {
        my += y[i];
        mm += mu[i];
      }
      my /= n;
      mm /= n;
      let sxy = 0;
      let sxx = 0;
      let syy = 0;
      for (let i = 0; i < n; i++) {
        const a = y[i] - my;
        const b = mu[i] - mm;
        sxy += a * b;
        sxx += a * a;
        syy += b * b;
      }
      return {
        deviance: this.devianceValue,
        pseudoRSquared: (sxy / sxx) * (sxy / syy),
        iterations: this.iterations,
        zerosKept: this.data.yZerosUsed,
        dispersion: this.covInput.ssr / this.dfResid,
      };
    });
  }
}

function linear(X: Float64Array[], b: Float64Array): Float64Array {
  const n = X[0].length;
  const out = new Float64Array(n);
  for (let j = 0; j < X.length; j++) {
    const bj = b[j];
    const c = X[j];
    for (let i = 0; i < n; i++) out[i] += bj * c[i];
  }
  return out;
}
