/**
 * Two-stage least squares on plain columns: y, the regressors (some named endogenous), the excluded
 * instruments, an intercept flag and optional positive weights.
 *
 * Z = [intercept, the regressors not named endogenous, the instruments]; X = [intercept, every
 * regressor]. Two QR stages, never the normal equations:
 *   1. Each endogenous column x_j is regressed on Z by Householder QR (leastSquares): its fitted
 *      part x̂_j = x_j − r_j is Q_Z Q_Zᵀ x_j. The exogenous columns are in Z, so they project onto
 *      themselves and are kept exactly. X̂ = P_Z X.
 *   2. y is regressed on X̂ by Householder QR: b = (X̂ᵀX̂)⁻¹X̂ᵀy, and the factor R of X̂ is the
 *      bread of every covariance: (X̂ᵀX̂)⁻¹ = R⁻¹R⁻ᵀ (in the scaled columns of leastSquares).
 * The structural residuals use the actual X: e = y − Xb. Covariances are those of the existing
 * covariance module on X̂'s factor with e as the score residuals (classical e'e/(n−k)·(X̂ᵀX̂)⁻¹;
 * HC0, HC1 = HC0·n/(n−k); Newey–West HAC), plus one-way cluster-robust errors
 * G/(G−1)·(n−1)/(n−k)·B(Σ_g s_g s_gᵀ)B with s_g = Σ_{i∈g} x̂_i e_i (Liang and Zeger 1986). These are
 * the conventions of R's AER::ivreg with sandwich::vcovHC, vcovCL(type = "HC1") and NeweyWest
 * (test/reference/iv.test.ts). HC2 and HC3 are refused: their leverage has no agreed meaning for
 * 2SLS.
 *
 * Weights w (weighted 2SLS, as ivreg(weights =)): y, X and Z are multiplied by √w and everything
 * above is done on the weighted columns; the structural residuals e are reported unweighted, and the
 * score residuals are √w·e.
 *
 * `covarianceInput` is covariance.ts's CovarianceInput: the columns X̂ as used, their QR factor, the
 * score residuals √w·e, e'e and n − k; the one-way cluster covariance is panelCovariance.ts's on the
 * same record, and ivModel.ts hands it to the Model's dispatch for every other type (two-way
 * cluster, Driscoll–Kraay, HAC within panels, fixed effects).
 *
 * Cost: one QR of Z per endogenous regressor and one QR of X̂, each about 2·n·k² flops.
 */
import { mapped, mappedInt } from "./blocks";
import { leastSquares, type Dependency, type QrFit } from "./leastSquares";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, originalUnits, type CovarianceInput } from "./covariance";
import { clusterCovariance } from "./panelCovariance";
import { codesOf } from "./absorb";
import { studentQuantile, studentTwoSided } from "./distributions";
import { count, fail, nearest, unavailable } from "./problems";

export const INTERCEPT = "(Intercept)";

/**
 * Relative size of Σwe² (to Σwy²) below which a fit counts as exact: fit.ts's EXACT_FIT, repeated
 * here so that this module stays free of the Model classes (ivModel.ts builds on both).
 */
const EXACT_FIT = 1e-24;

/** What a 2SLS fit is computed from: plain columns, all of the same length. */
export interface IvData {
  y: Float64Array;
  /** Regressor columns (without the intercept), as they enter the model (already transformed). */
  x: Float64Array[];
  xNames: string[];
  /** Names, among xNames, of the regressors that respond to y. */
  endogenous: readonly string[];
  /** Excluded instruments, transformed as the regressors are. */
  instruments: Float64Array[];
  instrumentNames: string[];
  intercept: boolean;
  /** Positive weights (weighted 2SLS), or null. */
  weights?: Float64Array | null;
  /** Sheet rows of the data rows, for messages (default 1, 2, …). */
  rowNumbers?: Int32Array;
}

/** The covariance types a 2SLS fit offers, and what they need. */
export interface IvSe {
  type: "classical" | "HC0" | "HC1" | "HC2" | "HC3" | "HAC" | "cluster";
  /** HAC lag length; null or absent: floor(4 (n/100)^(2/9)). */
  lags?: number | null;
  /** cluster: one key per row (numbers or text; rows with the same key form a cluster). */
  clusters?: ArrayLike<number | string>;
}

export type { CovarianceInput };

export interface IvCovariance {
  /** Row-major k×k. */
  V: Float64Array;
  /** Degrees of freedom of t statistics and intervals (n − k; cluster: G − 1). */
  df: number;
  label: string;
  lags?: number;
  clusters?: number;
}

/** One endogenous regressor's first stage: x_j on Z. */
export interface FirstStage {
  name: string;
  /** Index of the regressor in the coefficient vector. */
  index: number;
  /** QR of Z (weighted when weights are given) with x_j's residuals. */
  qr: QrFit;
  /** Fitted values x̂_j (on the weighted scale when weighted). */
  fitted: Float64Array;
}

/** The names of Z's columns, for messages: which are instruments. */
interface ZColumn {
  name: string;
  instrument: boolean;
}

/** Equality of two columns, value by value. */
function sameColumn(a: Float64Array, b: Float64Array): boolean {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

function isConstant(c: Float64Array): { constant: boolean; value: number } {
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < c.length; i++) {
    if (c[i] < min) min = c[i];
    if (c[i] > max) max = c[i];
  }
  return { constant: min === max, value: min };
}

function listNames(names: string[]): string {
  if (names.length === 0) return "nothing";
  return names.length === 1 ? names[0] : `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}`;
}

function scaled(c: Float64Array, sw: Float64Array | null): Float64Array {
  if (!sw) return c;
  const out = new Float64Array(c.length);
  for (let i = 0; i < c.length; i++) out[i] = c[i] * sw[i];
  return out;
}

/** Checks the roles: endogenous among the regressors, instruments apart from them, enough of them. */
function checkRoles(d: IvData): number[] {
  const n = d.y.length;
  const bad = (what: string, c: Float64Array) => c.length !== n && fail(`${what} has ${c.length} rows but y has ${n}: every column must have the same rows`);
  d.x.forEach((c, j) => bad(d.xNames[j], c));
  d.instruments.forEach((c, j) => bad(d.instrumentNames[j], c));
  if (d.weights && d.weights.length !== n) fail(`the weights have ${d.weights.length} rows but y has ${n}: every column must have the same rows`);
  if (d.endogenous.length === 0) fail("two-stage least squares needs endogenous=: name the regressors that respond to y (e.g. endogenous=Price)");
  if (d.instruments.length === 0) fail("two-stage least squares needs instruments=: name the excluded instruments (e.g. a cost shifter that moves price but not demand)");
  const endo: number[] = [];
  for (const name of d.endogenous) {
    let j = d.xNames.indexOf(name);
    if (j < 0) j = d.xNames.findIndex((v) => v.toLowerCase() === name.toLowerCase());
    if (j < 0) {
      if (d.instrumentNames.some((v) => v.toLowerCase() === name.toLowerCase())) {
        fail(`${name} is named in endogenous= but it is an instrument: an endogenous column must be a regressor in x, and an instrument must not be one`);
      }
      const hint = nearest(name, d.xNames);
      fail(`endogenous=${name} is not one of the regressors (${listNames(d.xNames)})${hint ? `: did you mean ${hint}?` : ""}`);
    }
    if (endo.includes(j)) fail(`${d.xNames[j]} is named twice in endogenous=: name it once`);
    endo.push(j);
  }
  d.instrumentNames.forEach((name, m) => {
    const j = d.xNames.findIndex((v) => v.toLowerCase() === name.toLowerCase());
    if (j >= 0) {
      if (endo.includes(j)) fail(`${name} is named both endogenous and as an instrument: an instrument must be a column outside the regressors that moves ${name}'s driver, not ${name} itself`);
      fail(`${name} is both a regressor and an instrument: an excluded instrument must be left out of the regressors (an exogenous regressor is its own instrument already); remove it from x or from instruments=`);
    }
    if (d.instrumentNames.slice(0, m).some((v) => v.toLowerCase() === name.toLowerCase())) fail(`${name} is named twice in instruments=: name it once`);
  });
  const p = endo.length;
  const q = d.instruments.length;
  if (q < p) {
    fail(`${count(p, "regressor is", "regressors are")} named endogenous but only ${count(q, "instrument is", "instruments are")} given: two-stage least squares needs at least as many excluded instruments as endogenous regressors; add instruments or name fewer regressors endogenous`);
  }
  d.instruments.forEach((c, m) => {
    const name = d.instrumentNames[m];
    const { constant, value } = isConstant(c);
    if (constant && (d.intercept || value === 0)) {
      fail(d.intercept
        ? `instrument ${name} has the same value in every row used, so it cannot be told apart from the intercept and moves nothing: remove it from instruments=`
        : `instrument ${name} is zero in every row used: remove it from instruments=`);
    }
    for (const j of endo) {
      if (sameColumn(c, d.x[j])) fail(`instrument ${name} holds the same values as the endogenous regressor ${d.xNames[j]}: an instrument must be a different column that moves ${d.xNames[j]} from outside`);
    }
  });
  if (d.weights) {
    const w = d.weights;
    for (let i = 0; i < n; i++) {
      if (!(w[i] > 0 && Number.isFinite(w[i]))) fail(`weight ${w[i]} in row ${d.rowNumbers ? d.rowNumbers[i] : i + 1} is not a positive number: weights must be positive`);
    }
  }
  return endo;
}

/** A two-stage least squares fit: coefficients, residuals, first stages and covariances. */
export class IvFit {
  readonly n: number;
  readonly k: number;
  readonly dfResid: number;
  readonly intercept: boolean;
  /** Coefficient names: (Intercept) first when there is one, then the regressors in order. */
  readonly names: string[];
  /** Index in the coefficient vector of each endogenous regressor. */
  readonly endogenousIndex: number[];
  /** X (weighted when weighted), intercept first. */
  readonly design: Float64Array[];
  /** Z (weighted when weighted): intercept, exogenous regressors, instruments. */
  readonly instrumentsDesign: Float64Array[];
  /** Index in Z of the first excluded instrument (they are the last columns). */
  readonly firstInstrument: number;
  /** X̂ = P_Z X (weighted when weighted). */
  readonly projected: Float64Array[];
  readonly firstStages: FirstStage[];
  readonly coef: Float64Array;
  /** Structural residuals y − Xb (unweighted). */
  readonly resid: Float64Array;
  /** y (weighted when weighted), as fitted. */
  readonly yUsed: Float64Array;
  /** √w, or null. */
  readonly sqrtWeights: Float64Array | null;
  readonly rowNumbers: Int32Array;
  /** Σ w e² (e'e unweighted). */
  readonly rss: number;
  /**
   * The covariance input: the columns X̂ (×√w), their factor, the score residuals √w·e and e'e; its
   * dfResid is n − k (a fit on demeaned columns counts its absorbed parameters itself).
   */
  readonly covarianceInput: CovarianceInput;
  /** The Householder factor of X̂ (the bread of every covariance). */
  readonly factor: QrFit;
  /** Σ w e² below EXACT_FIT·Σ w y²: the residuals are rounding noise. */
  readonly exact: boolean;
  private readonly covCache = new Map<string, IvCovariance>();
  private readonly memos = new Map<string, unknown>();

  constructor(d: IvData) {
    const endo = checkRoles(d);
    const n = d.y.length;
    this.n = n;
    this.intercept = d.intercept;
    this.rowNumbers = d.rowNumbers ?? mappedInt({ length: n }, (_, i) => i + 1);
    const sw = d.weights ? mapped(d.weights, Math.sqrt) : null;
    this.sqrtWeights = sw;
    const off = d.intercept ? 1 : 0;
    const one = sw ? Float64Array.from(sw) : new Float64Array(n).fill(1);
    const X: Float64Array[] = [];
    const names: string[] = [];
    if (d.intercept) {
      X.push(one);
      names.push(INTERCEPT);
    }
    d.x.forEach((c, j) => {
      X.push(scaled(c, sw));
      names.push(d.xNames[j]);
    });
    this.names = names;
    this.design = X;
    const k = X.length;
    this.k = k;
    this.dfResid = n - k;
    this.endogenousIndex = endo.map((j) => j + off);
    const Z: Float64Array[] = [];
    const zCols: ZColumn[] = [];
    if (d.intercept) {
      Z.push(one);
      zCols.push({ name: INTERCEPT, instrument: false });
    }
    d.x.forEach((_, j) => {
      if (endo.includes(j)) return;
      Z.push(X[j + off]);
      zCols.push({ name: d.xNames[j], instrument: false });
    });
    this.firstInstrument = Z.length;
    d.instruments.forEach((c, m) => {
      Z.push(scaled(c, sw));
      zCols.push({ name: d.instrumentNames[m], instrument: true });
    });
    this.instrumentsDesign = Z;
    if (n <= Z.length) {
      fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few for a first stage with ${Z.length} columns (intercept, exogenous regressors and instruments): need at least ${Z.length + 1}`);
    }
    const endoNames = endo.map((j) => d.xNames[j]);
    // Stage 1: each endogenous column on Z.
    const Xhat = X.slice();
    const firstStages: FirstStage[] = [];
    endo.forEach((j, s) => {
      const xj = X[j + off];
      const ls = leastSquares(Z, xj);
      const qr = ls.qr ?? explainInstrumentDependency(ls.dependent as Dependency, zCols);
      const fitted = new Float64Array(n);
      for (let i = 0; i < n; i++) fitted[i] = xj[i] - qr.resid[i];
      Xhat[j + off] = fitted;
      firstStages.push({ name: endoNames[s], index: j + off, qr, fitted });
    });
    this.firstStages = firstStages;
    this.projected = Xhat;
    // A first-stage prediction at rounding level (the instruments and exogenous regressors are
    // exactly orthogonal to x_j): the QR scales every column to unit length, so check it here.
    for (const fs of firstStages) {
      const xj = X[fs.index];
      let a = 0;
      let b = 0;
      for (let i = 0; i < n; i++) {
        a += fs.fitted[i] * fs.fitted[i];
        b += xj[i] * xj[i];
      }
      if (!(a > 1e-22 * b)) {
        fail(`the instruments and exogenous regressors do not move ${fs.name} at all (its first-stage prediction is zero in every row): the model is not identified; use instruments that move ${fs.name}`);
      }
    }
    // Stage 2: y on X̂.
    const y = scaled(d.y, sw);
    this.yUsed = y;
    const ls2 = leastSquares(Xhat, y);
    if (!ls2.qr) {
      // The regressors themselves collinear (an endogenous one included) say so first.
      const lx = leastSquares(X, y, false);
      if (!lx.qr) explainRegressorDependency(lx.dependent as Dependency, names);
      explainProjectedDependency(ls2.dependent as Dependency, names, this.endogenousIndex);
    }
    const second = ls2.qr as QrFit;
    const b = second.coef;
    this.coef = b;
    // Structural residuals with the actual X.
    const eW = new Float64Array(n);
    eW.set(y);
    for (let c = 0; c < k; c++) {
      const bc = b[c];
      const xc = X[c];
      for (let i = 0; i < n; i++) eW[i] -= bc * xc[i];
    }
    let rss = 0;
    let yy = 0;
    for (let i = 0; i < n; i++) {
      rss += eW[i] * eW[i];
      yy += y[i] * y[i];
    }
    this.rss = rss;
    this.exact = !(rss > EXACT_FIT * yy);
    this.resid = sw ? mapped(eW, (v, i) => v / sw[i]) : eW;
    this.factor = second;
    this.covarianceInput = { columns: Xhat, factor: second, scores: eW, ssr: rss, dfResid: n - k, rowNumbers: this.rowNumbers };
  }

  /** Fitted values Xb (unweighted). */
  get fitted(): Float64Array {
    const sw = this.sqrtWeights;
    return mapped(this.resid, (e, i) => (sw ? this.yUsed[i] / sw[i] : this.yUsed[i]) - e);
  }

  /** σ̂ = √(Σw e²/(n − k)). */
  get sigma(): number {
    return Math.sqrt(this.rss / this.dfResid);
  }

  /** The coefficient covariance of the given type (memoised). */
  covariance(se: IvSe): IvCovariance {
    if (this.exact && se.type !== "HC2" && se.type !== "HC3") this.requireResidualVariation("the errors of the coefficients are");
    const key = se.type === "HAC" ? `HAC${se.lags ?? defaultLags(this.n)}` : se.type;
    if (se.type === "cluster") return sandwichCovariance(this.covarianceInput, se, this.rowNumbers, "two-stage least squares");
    let c = this.covCache.get(key);
    if (!c) {
      c = sandwichCovariance(this.covarianceInput, se, this.rowNumbers, "two-stage least squares");
      this.covCache.set(key, c);
    }
    return c;
  }

  /**
   * R² = 1 − Σw e²/Σw (y − ȳ_w)² with the structural residuals (without an intercept, Σw y² below),
   * as R's summary(ivreg); it can be negative, since 2SLS does not minimise Σe². Adjusted R² uses
   * (n − 1)/(n − k) (n/(n − k) without an intercept).
   */
  statistics(): { rSquared: number; adjRSquared: number; sigma: number } {
    return this.memo("statistics", () => {
      const n = this.n;
      const sw = this.sqrtWeights;
      let tss = 0;
      if (this.intercept) {
        let sy = 0;
        let s = 0;
        for (let i = 0; i < n; i++) {
          const w = sw ? sw[i] * sw[i] : 1;
          sy += w * (sw ? this.yUsed[i] / sw[i] : this.yUsed[i]);
          s += w;
        }
        const mean = sy / s;
        for (let i = 0; i < n; i++) {
          const w = sw ? sw[i] * sw[i] : 1;
          const d = (sw ? this.yUsed[i] / sw[i] : this.yUsed[i]) - mean;
          tss += w * d * d;
        }
      } else {
        for (let i = 0; i < n; i++) tss += this.yUsed[i] * this.yUsed[i];
      }
      const rSquared = 1 - this.rss / tss;
      const adjRSquared = 1 - (1 - rSquared) * ((n - (this.intercept ? 1 : 0)) / this.dfResid);
      return { rSquared, adjRSquared, sigma: this.sigma };
    });
  }

  /** A derived result computed once per fit (checks, factors). */
  memo<T>(key: string, compute: () => T): T {
    if (this.memos.has(key)) return this.memos.get(key) as T;
    const v = compute();
    this.memos.set(key, v);
    return v;
  }

  /** Refuses an exact fit where a quantity needs residual variation. */
  requireResidualVariation(what: string): void {
    if (this.exact) unavailable(`the fit is exact (every residual is zero up to rounding), so ${what} undefined`);
  }

  standardErrors(c: IvCovariance): Float64Array {
    return mapped({ length: this.k }, (_, j) => Math.sqrt(Math.max(0, c.V[j * this.k + j])));
  }

  /** Coefficient table under a covariance: estimate, error, t, p and the interval at `level`. */
  coefficientTable(se: IvSe, level = 0.95): { name: string; estimate: number; se: number; t: number; p: number; low: number; high: number }[] {
    const c = this.covariance(se);
    const s = this.standardErrors(c);
    const q = studentQuantile(0.5 + level / 2, c.df);
    return this.names.map((name, j) => {
      const t = this.coef[j] / s[j];
      return { name, estimate: this.coef[j], se: s[j], t, p: studentTwoSided(t, c.df), low: this.coef[j] - q * s[j], high: this.coef[j] + q * s[j] };
    });
  }
}

/** Fits 2SLS (throws an ElxProblem with a message for bad input). */
export function fitIv(d: IvData): IvFit {
  return new IvFit(d);
}

function explainInstrumentDependency(d: Dependency, z: ZColumn[]): never {
  const col = z[d.column];
  if (d.on.length === 0) {
    return fail(col.instrument ? `instrument ${col.name} is zero in every row used: remove it from instruments=` : `${col.name} is zero in every row used: remove it from x`);
  }
  const others = listNames(d.on.map((i) => z[i].name));
  if (col.instrument) {
    return fail(`instrument ${col.name} is an exact linear combination of ${others} (collinear), so it adds nothing the other instruments and exogenous regressors do not already hold: remove it from instruments=`);
  }
  return fail(`${col.name} is an exact linear combination of ${others} (collinear): remove one of these columns`);
}

function explainRegressorDependency(d: Dependency, names: string[]): never {
  if (d.on.length === 0) return fail(`${names[d.column]} is zero in every row used: remove it from x`);
  return fail(`${names[d.column]} is an exact linear combination of ${listNames(d.on.map((i) => names[i]))} (collinear): remove one of these columns`);
}

function explainProjectedDependency(d: Dependency, names: string[], endo: number[]): never {
  const name = names[d.column];
  const others = listNames(d.on.map((i) => names[i]));
  if (endo.includes(d.column) || d.on.some((i) => endo.includes(i))) {
    return fail(`the instruments do not move ${endo.length === 1 ? names[endo[0]] : "the endogenous regressors"} apart from the other regressors (the first-stage prediction of ${name} is a combination of ${others || "nothing"}): the model is not identified; use instruments that each move an endogenous regressor`);
  }
  return fail(`${name} is an exact linear combination of ${others} (collinear): remove one of these columns`);
}

/**
 * The covariance of a least-squares-type estimator from its explicit input record, in the
 * coefficients' own units: classical, HC0, HC1 and HAC from covariance.ts, one-way cluster from
 * panelCovariance.ts (G/(G−1)·(n−1)/(n−k), as sandwich::vcovCL(type = "HC1")).
 * @param what names the estimator in the HC2/HC3 refusal
 */
export function sandwichCovariance(input: CovarianceInput, se: IvSe, rowNumbers: Int32Array, what: string): IvCovariance {
  const { factor: qr, dfResid } = input;
  const n = qr.n;
  if (se.type === "HC2" || se.type === "HC3") {
    fail(`se=${se.type} is not available for ${what}: its leverage correction has no agreed form there; use se=HC1 (or HC0), se=HAC, or cluster=`);
  }
  if (!(input.ssr > 0)) unavailable("the residuals are all zero (an exact fit), so the errors of the coefficients are undefined");
  const own = (W: Float64Array) => originalUnits(W, qr.scale, 1);
  switch (se.type) {
    case "classical":
      return { V: own(classicalCovariance(input)), df: dfResid, label: "classical" };
    case "HC0":
    case "HC1":
      return { V: own(hcCovariance(input, se.type, null).V), df: dfResid, label: se.type };
    case "HAC": {
      const L = se.lags ?? defaultLags(n);
      return { V: own(hacCovariance(input, L)), df: dfResid, label: `HAC, ${L} lag${L === 1 ? "" : "s"}`, lags: L };
    }
    case "cluster": {
      if (!se.clusters) fail("se=cluster needs a cluster column: name it in cluster=");
      const keys = se.clusters as ArrayLike<number | string>;
      if (keys.length !== n) fail(`the cluster column has ${keys.length} rows but the data have ${n}: give one cluster key per row`);
      const { codes, levels } = codesOf(keys);
      if (levels < 2) fail(`cluster-robust errors need at least 2 clusters; the cluster column has ${levels}: use se=HC1 or a cluster column with more values`);
      const c = clusterCovariance({ X: input.columns, qr, u: input.scores, absorbed: n - qr.k - dfResid, leverageOffset: null, rowNumbers }, [{ name: "the cluster column", codes }]);
      return { V: c.V, df: c.df, label: `cluster (${levels} clusters)`, clusters: levels };
    }
    default:
      return fail(`se=${se.type} is not available for ${what}`);
  }
}
