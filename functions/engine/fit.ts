/**
 * The OLS fit: computed once from a prepared dataset, read by every cell function.
 *
 * Like a results object in statsmodels, expensive parts (leverages, each covariance type, medians)
 * are computed on first use and memoised, without side effects on other fields.
 */
import { count, fail, unavailable } from "./problems";
import { leastSquares, type Dependency, type QrFit } from "./leastSquares";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, originalUnits, standardError, type Covariance } from "./covariance";
import { originalMedian, transformLabel, type Dataset, type Transform } from "./transforms";
import { fisherSf, studentQuantile, studentTwoSided } from "./distributions";
import type { SeType } from "./options";
import { normalised, scaled, workingUnit } from "./scaling";

export const INTERCEPT = "(Intercept)";

/** Relative size of RSS (to Σy²) below which a fit counts as exact: far below any real data's noise. */
export const EXACT_FIT = 1e-24;

export interface Term {
  name: string;
  /** Index in dataset.x, or −1 for the intercept. */
  column: number;
  transform: Transform | null;
  binary: boolean;
}

export interface FitStatistics {
  rSquared: number;
  adjRSquared: number;
  sigma: number;
  fStatistic: number | null;
  fDf1: number;
  fDf2: number;
  fPValue: number | null;
  logLik: number;
  aic: number;
  bic: number;
}

/**
 * What every estimator's fit shares: the terms and design built from the dataset, and readers of a
 * covariance computed on a QR factor (the design's for OLS, the weighted design's for PPML).
 */
export abstract class Model {
  abstract readonly estimator: "ols" | "ppml";
  readonly data: Dataset;
  readonly intercept: boolean;
  readonly terms: Term[];
  readonly design: Float64Array[];
  readonly n: number;
  readonly k: number;
  readonly dfResid: number;
  /** The factor and columns the covariances are computed on, and their residuals (qr.resid). */
  abstract readonly qr: QrFit;
  protected abstract readonly covDesign: Float64Array[];
  protected leverageCache: Float64Array | null = null;
  private readonly covCache = new Map<string, Covariance>();
  private medianCache = new Map<number, number>();
  private readonly memos = new Map<string, unknown>();

  constructor(data: Dataset, intercept: boolean) {
    this.data = data;
    this.intercept = intercept;
    const terms: Term[] = [];
    const design: Float64Array[] = [];
    if (intercept) {
      terms.push({ name: INTERCEPT, column: -1, transform: null, binary: false });
      design.push(new Float64Array(data.n).fill(1));
    }
    data.x.forEach((c, j) => {
      terms.push({ name: data.xNames[j], column: j, transform: data.xTransforms[j], binary: data.binary[j] });
      design.push(c);
    });
    this.terms = terms;
    this.design = design;
    this.n = data.n;
    this.k = design.length;
    this.dfResid = this.n - this.k;
    checkShape(data, this.k, intercept);
  }

  abstract get coef(): Float64Array;
  /** Fitted values on the scale of the mean (OLS: the transformed y; PPML: μ̂ in y's units). */
  abstract get fitted(): Float64Array;
  /** How y enters the mean: the elasticity's g (OLS: y's transform; PPML: log, as E[y|x] = exp(x'b)). */
  abstract readonly meanTransform: Transform;

  /** Refuses a covariance type the estimator does not offer. */
  protected checkSeType(type: SeType): void {
    void type;
  }

  /** The unit of the covariances computed on `qr`: standard errors are √V times it (OLS: y's scale). */
  protected get covUnit(): number {
    return 1;
  }

  /** The covariance of the coefficients of the given type (memoised). */
  covariance(type: SeType, lags: number | null = null): Covariance {
    this.checkSeType(type);
    const L = type === "HAC" ? lags ?? defaultLags(this.n) : 0;
    const key = type === "HAC" ? `HAC${L}` : type;
    let c = this.covCache.get(key);
    if (!c) {
      let W: Float64Array;
      if (type === "classical") W = classicalCovariance(this.qr);
      else if (type === "HAC") W = hacCovariance(this.covDesign, this.qr, L);
      else {
        const r = hcCovariance(this.covDesign, this.qr, type, this.leverageCache, this.data.rowNumbers);
        if (r.h) this.leverageCache = r.h;
        W = r.V;
      }
      const unit = this.covUnit;
      c = { type, W, scale: this.qr.scale, unit, V: originalUnits(W, this.qr.scale, unit), lags: type === "HAC" ? L : undefined, label: type === "HAC" ? `HAC, ${L} lag${L === 1 ? "" : "s"}` : type };
      this.covCache.set(key, c);
    }
    return c;
  }

  /** Standard errors under a covariance. */
  standardErrors(c: Covariance): Float64Array {
    const se = new Float64Array(this.k);
    for (let j = 0; j < this.k; j++) se[j] = standardError(c, j);
    return se;
  }

  /** The quantile for a two-sided interval at `level` (Student t for OLS, normal for PPML). */
  abstract criticalValue(level: number): number;

  /** Two-sided p-value of a t (or z) statistic. */
  abstract pValue(t: number): number;

  /** Mean or median, in original units, of x column j (−1: y) over the rows used. */
  centre(column: number, at: "mean" | "median"): number {
    if (at === "mean") return column < 0 ? this.data.yMean : this.data.xMeans[column];
    let m = this.medianCache.get(column);
    if (m === undefined) {
      m = column < 0
        ? originalMedian(this.data.y, this.data.yTransform)
        : originalMedian(this.data.x[column], this.data.xTransforms[column]);
      this.medianCache.set(column, m);
    }
    return m;
  }

  /** A derived result computed once per fit (tests, factors, collinearity). */
  memo<T>(key: string, compute: () => T): T {
    if (this.memos.has(key)) return this.memos.get(key) as T;
    const v = compute();
    this.memos.set(key, v);
    return v;
  }

  termLabel(t: Term): string {
    return t.transform ? transformLabel(t.transform) : "constant";
  }

  /** Index in the coefficient vector of x column j. */
  coefIndex(column: number): number {
    return column + (this.intercept ? 1 : 0);
  }
}

export class OlsFit extends Model {
  readonly estimator = "ols" as const;
  /**
   * The factorisation of the design with y divided by `yUnit`: 1 for ordinary data, a power of two
   * near max|y| when |y| leaves [2^−100, 2^100] (scaling.ts). Its coefficients, residuals, RSS and
   * covariances are in units of yUnit; dividing by a power of two is exact, and it keeps squares
   * finite for y as large as 1e155 or as small as 1e−150. Read coef, resid and rss for y's own units.
   */
  readonly qr: QrFit;
  readonly yUnit: number;
  protected readonly covDesign: Float64Array[];
  private statsCache: FitStatistics | null = null;

  get meanTransform(): Transform {
    return this.data.yTransform;
  }

  constructor(data: Dataset, intercept: boolean) {
    super(data, intercept);
    const terms = this.terms;
    this.yUnit = workingUnit(data.y);
    this.qr = leastSquares(this.design, scaled(data.y, this.yUnit), (d) => explainDependency(d, terms));
    this.covDesign = this.design;
  }

  protected get covUnit(): number {
    return this.yUnit;
  }

  /** y divided by yUnit (max magnitude in [0.5, 1)): for sums of squares that must not overflow. */
  get scaledY(): Float64Array {
    return this.yUnit === 1 ? this.data.y : this.memo("scaledY", () => scaled(this.data.y, this.yUnit));
  }

  get coef(): Float64Array {
    return this.yUnit === 1 ? this.qr.coef : this.memo("coef", () => Float64Array.from(this.qr.coef, (v) => v * this.yUnit));
  }

  /** Residuals in y's units (qr.resid: in units of yUnit). */
  get resid(): Float64Array {
    return this.yUnit === 1 ? this.qr.resid : this.memo("resid", () => Float64Array.from(this.qr.resid, (v) => v * this.yUnit));
  }

  /** Fitted values ŷ = y − e on the fitted scale (computed on first use). */
  get fitted(): Float64Array {
    return this.memo("fitted", () => {
      const y = this.data.y;
      const e = this.resid;
      return Float64Array.from(y, (v, i) => v - e[i]);
    });
  }

  /** RSS in y's units (Infinity when that overflows: statistics use qr.rss, in units of yUnit). */
  get rss(): number {
    return this.qr.rss * this.yUnit * this.yUnit;
  }

  /** Residual variance s² = RSS/(n − k). */
  get s2(): number {
    return this.rss / this.dfResid;
  }

  /** The Student t quantile for a two-sided interval at `level`, on n − k df. */
  criticalValue(level: number): number {
    return studentQuantile(0.5 + level / 2, this.dfResid);
  }

  pValue(t: number): number {
    return studentTwoSided(t, this.dfResid);
  }

  statistics(): FitStatistics {
    if (this.statsCache) return this.statsCache;
    const { n, k } = this;
    // in units of yUnit: R², F and the likelihood's RSS term do not overflow for extreme y
    const y = this.scaledY;
    let tss = 0;
    if (this.intercept) {
      let mean = 0;
      for (let i = 0; i < n; i++) mean += y[i];
      mean /= n;
      // second pass for accuracy
      let corr = 0;
      for (let i = 0; i < n; i++) corr += y[i] - mean;
      mean += corr / n;
      for (let i = 0; i < n; i++) tss += (y[i] - mean) * (y[i] - mean);
    } else {
      for (let i = 0; i < n; i++) tss += y[i] * y[i];
    }
    const rss = this.qr.rss;
    const dfModel = k - (this.intercept ? 1 : 0);
    const rSquared = tss > 0 ? 1 - rss / tss : NaN;
    const adjRSquared = 1 - (1 - rSquared) * ((n - (this.intercept ? 1 : 0)) / this.dfResid);
    const sigma = Math.sqrt(rss / this.dfResid) * this.yUnit;
    let fStatistic: number | null = null;
    let fPValue: number | null = null;
    const exact = this.isExact();
    if (dfModel > 0 && rss > 0 && !exact) {
      fStatistic = ((tss - rss) / dfModel) / (rss / this.dfResid);
      fPValue = fisherSf(fStatistic, dfModel, this.dfResid);
    }
    // unbounded for an exact fit (RSS is rounding noise): NaN, shown as #N/A with the reason
    const logLik = exact ? NaN : -0.5 * n * (Math.log(2 * Math.PI) + Math.log(rss / n) + 2 * Math.log(this.yUnit) + 1);
    const aic = -2 * logLik + 2 * (k + 1);
    const bic = -2 * logLik + (k + 1) * Math.log(n);
    this.statsCache = { rSquared, adjRSquared, sigma, fStatistic, fDf1: dfModel, fDf2: this.dfResid, fPValue, logLik, aic, bic };
    return this.statsCache;
  }

  /** Refuses a perfect fit where a quantity needs residual variation. */
  requireResidualVariation(what: string): void {
    if (this.isExact()) unavailable(`${this.exactReason()}; that leaves ${what} undefined`);
  }

  /**
   * What an exact fit usually means, in the analyst's words: an x column that alone is a linear
   * function of y (y in other units, or y itself) is named; otherwise y was computed from the regressors.
   */
  exactReason(): string {
    return this.memo("exactReason", () => {
      const head = "the fit is exact (every residual is zero up to rounding)";
      const y = this.data.y;
      for (let j = 0; j < this.data.x.length; j++) {
        if (squaredCorrelation(this.data.x[j], y) > 1 - 1e-10) {
          return `${head}: ${this.data.xNames[j]} is an exact linear function of ${this.data.yName} (y itself, or y in other units): remove it from x`;
        }
      }
      return `${head}: ${this.data.yName} is an exact linear combination of the regressors, which usually means it was computed from them (a formula, a total, a share) or that y sits among them in another form: fit y as it was measured`;
    });
  }

  /**
   * An exact fit: the residuals are rounding noise. RSS below EXACT_FIT·Σy² (Σy² uncentred, so the
   * rule does not depend on where y is centred) cannot be told from zero in double precision.
   */
  isExact(): boolean {
    return this.memo("exact", () => {
      let yy = 0;
      const y = this.scaledY;
      for (let i = 0; i < y.length; i++) yy += y[i] * y[i];
      return !(this.qr.rss > EXACT_FIT * yy);
    });
  }
}

/** Squared correlation of two columns (two-pass means, scaled against overflow); 0 when either is constant. */
function squaredCorrelation(a0: Float64Array, b0: Float64Array): number {
  const a = normalised(a0);
  const b = normalised(b0);
  const n = a.length;
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < n; i++) {
    ma += a[i];
    mb += b[i];
  }
  ma /= n;
  mb /= n;
  let saa = 0;
  let sbb = 0;
  let sab = 0;
  for (let i = 0; i < n; i++) {
    const da = a[i] - ma;
    const db = b[i] - mb;
    saa += da * da;
    sbb += db * db;
    sab += da * db;
  }
  return saa > 0 && sbb > 0 ? (sab / saa) * (sab / sbb) : 0;
}

function checkShape(data: Dataset, k: number, intercept: boolean): void {
  const n = data.n;
  if (n <= k) {
    const left = data.leftOutBlank + data.leftOutNonPositive;
    fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few for ${count(k, "coefficient")}${intercept ? " (the intercept counts)" : ""}: need at least ${k + 1}${left > 0 ? `; ${count(left, "row was", "rows were")} left out` : ""}`);
  }
  // Constant regressors: a clearer message than the rank check's.
  data.x.forEach((c, j) => {
    let min = Infinity;
    let max = -Infinity;
    for (let i = 0; i < c.length; i++) {
      if (c[i] < min) min = c[i];
      if (c[i] > max) max = c[i];
    }
    if (min === max) {
      if (intercept) fail(`${data.xNames[j]} has the same value in every row used, so it cannot be told apart from the intercept: remove it from x`);
      if (min === 0) fail(`${data.xNames[j]} is zero in every row used: remove it from x`);
    }
  });
}

function explainDependency(d: Dependency, terms: Term[]): never {
  const name = terms[d.column].name;
  if (d.on.length === 0) return fail(`${name} is zero in every row used: remove it from x`);
  const others = d.on.map((i) => terms[i].name);
  const list = others.length === 1 ? others[0] : `${others.slice(0, -1).join(", ")} and ${others[others.length - 1]}`;
  return fail(`${name} is an exact linear combination of ${list} (collinear): remove one of these columns`);
}
