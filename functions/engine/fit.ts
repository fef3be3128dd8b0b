/**
 * The OLS fit: computed once from a prepared dataset, read by every cell function.
 *
 * Like a results object in statsmodels, expensive parts (leverages, each covariance type, medians)
 * are computed on first use and memoised, without side effects on other fields.
 */
import { mapped } from "./blocks";
import { count, fail, quote, unavailable } from "./problems";
import { leastSquares, type Dependency, type QrFit } from "./leastSquares";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, leastSquaresInput, originalUnits, standardError, type Covariance, type CovarianceInput } from "./covariance";
import { normalised, scaled, workingUnit } from "./scaling";
import { originalMedian, transformLabel, type Dataset, type Transform } from "./transforms";
import { kernel, type ColumnFacts } from "./kernel";
import { fisherSf, studentQuantile, studentTwoSided } from "./distributions";
import type { SeType } from "./options";
import { requireSeType, type EstimatorInfo } from "./estimators";
import { clusterCovariance, driscollKraay, panelClassical, panelHac, panelHc, type PanelCovariance, type ScoreModel } from "./panelCovariance";
import { fitAbsorbed, prepareAbsorption, recoverEffects, type Absorber, type RecoveredEffects } from "./absorb";

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
  /** R² of the data after absorbing the fixed effects (null without fixed effects). */
  withinRSquared?: number | null;
}

/**
 * What every estimator's fit shares: the terms and design built from the dataset, its degrees of
 * freedom, and readers of a covariance computed from the estimator's explicit covariance input.
 */
export abstract class Model {
  abstract readonly estimator: EstimatorInfo["id"];
  /** What the engine may ask of this estimator (see estimators.ts). */
  abstract readonly info: EstimatorInfo;
  readonly data: Dataset;
  readonly intercept: boolean;
  readonly terms: Term[];
  /**
   * The regressors as the estimator uses them. The columns are the dataset's own (no copy) as long
   * as the estimator does not change them; an estimator that demeans or weights works on copies, so
   * that means and medians of the data stay those of the rows used.
   */
  readonly design: Float64Array[];
  readonly n: number;
  readonly k: number;
  /** Parameters estimated besides the k coefficients shown (absorbed fixed effects). */
  absorbed = 0;
  /** The fixed effects absorbed (null without absorb=). */
  absorber: Absorber | null = null;
  /** The factor of the columns the covariances are computed on. */
  abstract readonly qr: QrFit;
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
    checkShape(data, this.k, intercept);
  }

  abstract get coef(): Float64Array;
  /** Fitted values on the scale of the mean (OLS: the transformed y; PPML: μ̂ in y's units). */
  abstract get fitted(): Float64Array;
  /** How y enters the mean: the elasticity's g (OLS: y's transform; PPML: log, as E[y|x] = exp(x'b)). */
  abstract readonly meanTransform: Transform;

  /** Residual degrees of freedom: n − k − absorbed parameters. */
  get dfResid(): number {
    return this.n - this.k - this.absorbed;
  }

  /** The explicit input of every covariance of this fit (computed once). */
  abstract covarianceInput(): CovarianceInput;

  /** The covariance of the coefficients of the given type (memoised). */
  covariance(type: SeType, lags: number | null = null): Covariance {
    requireSeType(this.info, type);
    const L = type === "HAC" ? lags ?? defaultLags(this.n) : 0;
    const key = type === "HAC" ? `HAC${L}` : type === "DK" ? `DK${lags ?? ""}` : type;
    let c = this.covCache.get(key);
    if (!c) {
      let W: Float64Array;
      const input = this.covarianceInput();
      const unit = this.covUnit;
      const scale = input.factor.scale;
      const panel = this.panelCovariance(type, lags);
      if (panel) {
        // panel covariances come in the coefficients' units of the factorised columns: back to W
        const k = this.k;
        W = mapped(panel.V, (v, i) => v * scale[Math.floor(i / k)] * scale[i % k]);
        c = { type, W, scale, unit, V: originalUnits(W, scale, unit), df: panel.df === this.dfResid ? undefined : panel.df, negative: panel.negative, lags: panel.lags, groups: panel.groups, label: panel.label };
        this.covCache.set(key, c);
        return c;
      }
      if (type === "classical") W = classicalCovariance(input);
      else if (type === "HAC") W = hacCovariance(input, L);
      else if (type === "cluster" || type === "DK") return fail("unreachable covariance type");
      else {
        const r = hcCovariance(input, type, this.leverageCache);
        if (r.h) this.leverageCache = r.h;
        W = r.V;
      }
      c = { type, W, scale, unit, V: originalUnits(W, scale, unit), lags: type === "HAC" ? L : undefined, label: type === "HAC" ? `HAC, ${count(L, "lag")}` : type };
      this.covCache.set(key, c);
    }
    return c;
  }

  /** The covariance input as the panel covariances read it (scores x_i·u_i in the factor's space). */
  protected scoreModel(): ScoreModel {
    return this.memo("scoreModel", () => {
      const c = this.covarianceInput();
      const offset = this.absorber ? this.absorber.leverageOffset() : new Float64Array(this.n);
      return { X: c.columns, qr: c.factor, u: c.scores, absorbed: this.absorbed, leverageOffset: offset, rowNumbers: c.rowNumbers };
    });
  }

  /**
   * Covariances that need the role columns or absorbed parameters: cluster-robust (cluster=), Driscoll–
   * Kraay (time=), HAC within panel units (panel=), and every type of a fit with fixed effects; null
   * for the plain types of a fit without them (computed by covariance.ts).
   */
  private panelCovariance(type: SeType, lags: number | null): PanelCovariance | null {
    const roles = this.data.roles;
    if (type === "cluster") {
      if (roles.cluster.length === 0) fail("se=cluster needs cluster= naming the column of clusters (for example cluster=Store)");
      const keys = roles.cluster.map((c) => ({ name: c.name, codes: c.codes }));
      const nested = this.absorber ? this.absorber.nestedAbsorbed(keys.map((k) => k.codes)) : 0;
      return clusterCovariance(this.scoreModel(), keys, nested);
    }
    if (type === "DK") {
      if (!roles.time) fail("se=DK needs time= naming the column of periods (for example time=Week)");
      return driscollKraay(this.scoreModel(), roles.time.codes, lags);
    }
    if (type === "HAC" && roles.panel) return panelHac(this.scoreModel(), roles.panel.codes, lags, roles.panel.name);
    if (this.absorbed === 0) return null;
    if (type === "classical") return panelClassical(this.scoreModel());
    if (type === "HAC") return null;
    return panelHc(this.scoreModel(), type);
  }

  /** A column with the fixed effects absorbed and scaled by √w, as the covariance columns are (itself without either). */
  within(col: Float64Array): Float64Array {
    let out = this.absorber ? this.absorber.demean(col) : col;
    const w = this.data.roles.weights;
    if (w) out = mapped(out, (v, i) => v * Math.sqrt(w[i]));
    return out;
  }

  /**
   * The absorbed effects of the values seen in the fit, recovered from the fitted effects (fitted
   * value minus x'b on the scale of the linear predictor: OLS the transformed y, PPML log μ̂).
   */
  private recovered(): RecoveredEffects {
    return this.memo("recoveredEffects", () => {
      const f = this.fitted;
      const b = this.coef;
      const X = this.design;
      const expo = this.info.exponentialMean;
      const d = mapped(f, (v, i) => {
        let s = expo ? Math.log(v) : v;
        for (let j = 0; j < X.length; j++) s -= b[j] * X[j][i];
        return s;
      });
      return recoverEffects(this.data.roles.absorb.map((k) => ({ codes: k.codes, levels: k.labels.length })), d);
    });
  }

  /**
   * What the fixed effects add to x0'b for a new row with these values of the absorbed keys (key text,
   * in absorb= order): α_g, or α_g + γ_t; a value not seen among the rows used (or, under two keys, a
   * pair from two unconnected parts of the data) has no estimated effect and is refused, named.
   */
  absorbedEffect(values: readonly (string | null)[], rowLabel: string): number {
    const keys = this.data.roles.absorb;
    if (keys.length === 0) return 0;
    const r = this.recovered();
    const codes = keys.map((k, m) => {
      const v = values[m];
      if (v === null) fail(`${rowLabel}: ${k.name} is blank; give a value of ${k.name} seen in the fit (its fixed effect is added to the prediction)`);
      const c = k.labels.indexOf(v);
      if (c < 0) fail(`${rowLabel}: ${k.name} ${quote(v)} was not among the rows fitted, so its fixed effect is unknown: predict only for values of ${k.name} in the data (or leave ${k.name} out of absorb=)`);
      return c;
    });
    if (keys.length === 2 && r.components[0][codes[0]] !== r.components[1][codes[1]]) {
      fail(`${rowLabel}: ${keys[0].name} ${quote(values[0] as string)} and ${keys[1].name} ${quote(values[1] as string)} lie in parts of the data that share no row, so their effects cannot be added: predict for a pair connected through the rows fitted`);
    }
    let s = 0;
    codes.forEach((c, m) => (s += r.effects[m][c]));
    return s;
  }

  /** The unit of the covariances computed on `qr`: standard errors are √W times it (OLS: y's scale). */
  protected get covUnit(): number {
    return 1;
  }

  /** Standard errors under a covariance (NaN where a two-way cluster variance came out negative). */
  standardErrors(c: Covariance): Float64Array {
    const se = new Float64Array(this.k);
    for (let j = 0; j < this.k; j++) se[j] = c.negative && c.negative.includes(j) ? NaN : standardError(c, j);
    return se;
  }

  /** The quantile for a two-sided interval at `level` (Student t for OLS, normal for PPML), under `cov`'s df. */
  abstract criticalValue(level: number, cov?: Covariance): number;

  /** Two-sided p-value of a t (or z) statistic under `cov`'s df. */
  abstract pValue(t: number, cov?: Covariance): number;

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

/** Ordinary least squares on the transformed columns. */
export const OLS_INFO: EstimatorInfo = Object.freeze({
  id: "ols",
  title: "least squares",
  seTypes: ["HC3", "HC0", "HC1", "HC2", "classical", "HAC", "cluster", "DK"],
  defaultSe: "HC3",
  logsY: true,
  negativeY: true,
  residualVariance: true,
  exponentialMean: false,
  statistic: "t",
  noResidualVariance: "",
} as const);

export class OlsFit extends Model {
  readonly estimator = "ols" as const;
  readonly info = OLS_INFO;
  /**
   * The factorisation of the design with y divided by `yUnit`: 1 for ordinary data, a power of two
   * near max|y| when |y| leaves [2^−100, 2^100] (scaling.ts). Its coefficients, residuals, RSS and
   * covariances are in units of yUnit; dividing by a power of two is exact, and it keeps squares
   * finite for y as large as 1e155 or as small as 1e−150. Read coef, resid and rss for y's own units.
   */
  readonly qr: QrFit;
  readonly yUnit: number;
  private statsCache: FitStatistics | null = null;

  get meanTransform(): Transform {
    return this.data.yTransform;
  }

  /** y − ŷ on the fitted scale (fixed effects included), unweighted, in units of yUnit. */
  private readonly residuals: Float64Array;
  private readonly covInput: CovarianceInput;
  /** R² of the full model and of the absorbed (within) data, for fits with fixed effects. */
  private readonly absorbedR2: { full: number; within: number } | null = null;

  /**
   * Least squares of the transformed y on the design: plain; weighted (every column and y scaled by
   * √w, so every covariance is that of the scaled regression, as R's lm(weights =)); or with fixed
   * effects absorbed (the slopes of the regression with one 0/1 column per absorbed value, without an
   * intercept of their own: Frisch–Waugh–Lovell, through the absorber's exact demeaning).
   */
  constructor(data: Dataset, intercept: boolean) {
    const keys = data.roles.absorb;
    super(data, intercept && keys.length === 0);
    const terms = this.terms;
    const w = data.roles.weights;
    this.yUnit = workingUnit(data.y, data.yFacts?.col === data.y ? data.yFacts.maxAbs : null);
    // plain least squares reads y without writing it: no copy when it needs no rescaling (v·1 = v)
    const y = this.yUnit === 1 && keys.length === 0 && !w ? data.y : scaled(data.y, this.yUnit);
    if (keys.length > 0) {
      const prep = prepareAbsorption(keys.map((k) => ({ name: k.name, codes: k.codes })), w);
      const fe = fitAbsorbed(prep.absorber, y, this.design, terms.map((t) => t.name));
      this.absorber = prep.absorber;
      this.absorbed = fe.absorbed;
      this.qr = fe.qr;
      this.residuals = fe.resid;
      this.absorbedR2 = { full: fe.rSquared, within: fe.withinRSquared };
      this.covInput = { columns: fe.X, factor: fe.qr, scores: fe.u, ssr: fe.qr.rss, dfResid: this.dfResid, rowNumbers: data.rowNumbers };
    } else if (w) {
      const sw = mapped(w, Math.sqrt);
      const Xs = this.design.map((c) => mapped(c, (v, i) => v * sw[i]));
      const ls = leastSquares(Xs, mapped(y, (v, i) => v * sw[i]));
      this.qr = ls.qr ?? explainDependency(ls.dependent as Dependency, terms);
      const u = this.qr.resid;
      this.residuals = mapped(u, (v, i) => v / sw[i]);
      this.covInput = { columns: Xs, factor: this.qr, scores: u, ssr: this.qr.rss, dfResid: this.dfResid, rowNumbers: data.rowNumbers };
    } else {
      // Σx² of the logged columns came with their logs (the same doubles sumSquares gives); the intercept's is n
      const known = this.design.map((c, j) => (this.intercept && j === 0 ? data.n : factsOf(data, j - (this.intercept ? 1 : 0), c)?.sumSq ?? null));
      const ls = leastSquares(this.design, y, true, known);
      this.qr = ls.qr ?? explainDependency(ls.dependent as Dependency, terms);
      this.residuals = this.qr.resid;
      this.covInput = leastSquaresInput(this.design, this.qr, data.rowNumbers, this.dfResid);
    }
  }

  covarianceInput(): CovarianceInput {
    return this.covInput;
  }

  protected get covUnit(): number {
    return this.yUnit;
  }

  /** y divided by yUnit (max magnitude in [0.5, 1)): for sums of squares that must not overflow. */
  get scaledY(): Float64Array {
    return this.yUnit === 1 ? this.data.y : this.memo("scaledY", () => scaled(this.data.y, this.yUnit));
  }

  get coef(): Float64Array {
    return this.yUnit === 1 ? this.qr.coef : this.memo("coef", () => mapped(this.qr.coef, (v) => v * this.yUnit));
  }

  /** Residuals in y's units. */
  get resid(): Float64Array {
    return this.yUnit === 1 ? this.residuals : this.memo("resid", () => mapped(this.residuals, (v) => v * this.yUnit));
  }

  /** Residuals in units of yUnit (for sums of squares and the tests). */
  get scaledResid(): Float64Array {
    return this.residuals;
  }

  /** Fitted values ŷ = y − e on the fitted scale (computed on first use). */
  get fitted(): Float64Array {
    return this.memo("fitted", () => {
      const y = this.data.y;
      const e = this.resid;
      return mapped(y, (v, i) => v - e[i]);
    });
  }

  /** Whether the fit is plain least squares (no weights, no fixed effects): what the residual tests assume. */
  get plain(): boolean {
    return this.absorbed === 0 && this.data.roles.weights === null;
  }

  /** RSS in y's units (Infinity when that overflows: statistics use qr.rss, in units of yUnit). */
  get rss(): number {
    return this.qr.rss * this.yUnit * this.yUnit;
  }

  /** Residual variance s² = RSS/(n − k − a). */
  get s2(): number {
    return this.rss / this.dfResid;
  }

  /** The Student t quantile for a two-sided interval at `level`, on n − k − a df (clusters: G − 1). */
  criticalValue(level: number, cov?: Covariance): number {
    return studentQuantile(0.5 + level / 2, cov?.df ?? this.dfResid);
  }

  pValue(t: number, cov?: Covariance): number {
    return studentTwoSided(t, cov?.df ?? this.dfResid);
  }

  statistics(): FitStatistics {
    if (this.statsCache) return this.statsCache;
    const { n, k } = this;
    if (this.absorbedR2 || this.data.roles.weights) {
      this.statsCache = this.weightedOrAbsorbedStatistics();
      return this.statsCache;
    }
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

  /**
   * Statistics of a weighted or fixed-effects fit, as R's summary.lm and logLik.lm give them for
   * lm(weights =) with one 0/1 column per absorbed value: R² about the weighted mean (the full model's
   * with fixed effects), F of the slopes (within, with fixed effects), ℓ = ½Σlog w − n/2·(log 2π + 1 −
   * log n + log Σwe²), AIC and BIC counting every absorbed parameter and the error variance.
   */
  private weightedOrAbsorbedStatistics(): FitStatistics {
    const { n, k } = this;
    const y = this.scaledY;
    const w = this.data.roles.weights;
    const rss = this.qr.rss; // in units of yUnit
    const df = this.dfResid;
    const exact = this.isExact();
    let rSquared: number;
    let fStatistic: number | null = null;
    let fPValue: number | null = null;
    let dfModel: number;
    let within: number | null = null;
    if (this.absorbedR2) {
      rSquared = this.absorbedR2.full;
      within = this.absorbedR2.within;
      dfModel = k;
      const withinTss = rss / (1 - within);
      if (k > 0 && rss > 0 && !exact) {
        fStatistic = ((withinTss - rss) / k) / (rss / df);
        fPValue = fisherSf(fStatistic, k, df);
      }
    } else {
      let sw = 0;
      let swy = 0;
      for (let i = 0; i < n; i++) {
        const wi = w ? w[i] : 1;
        sw += wi;
        swy += wi * y[i];
      }
      const m = this.intercept ? swy / sw : 0;
      let tss = 0;
      for (let i = 0; i < n; i++) tss += (w ? w[i] : 1) * (y[i] - m) * (y[i] - m);
      rSquared = tss > 0 ? 1 - rss / tss : NaN;
      dfModel = k - (this.intercept ? 1 : 0);
      if (dfModel > 0 && rss > 0 && !exact) {
        fStatistic = ((tss - rss) / dfModel) / (rss / df);
        fPValue = fisherSf(fStatistic, dfModel, df);
      }
    }
    const p = k + this.absorbed;
    const adjRSquared = 1 - (1 - rSquared) * ((n - (this.intercept || this.absorbed > 0 ? 1 : 0)) / df);
    let sumLogW = 0;
    if (w) for (let i = 0; i < n; i++) sumLogW += Math.log(w[i]);
    const logLik = exact ? NaN : 0.5 * sumLogW - 0.5 * n * (Math.log(2 * Math.PI) + 1 - Math.log(n) + Math.log(rss) + 2 * Math.log(this.yUnit));
    return {
      rSquared, adjRSquared, sigma: Math.sqrt(rss / df) * this.yUnit, fStatistic, fDf1: dfModel, fDf2: df, fPValue,
      logLik, aic: -2 * logLik + 2 * (p + 1), bic: -2 * logLik + (p + 1) * Math.log(n), withinRSquared: within,
    };
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
    return this.memo("exact", () => !(this.qr.rss > EXACT_FIT * kernel().sumSquares(this.scaledY)));
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
    // constant when every value equals the first (the scan stops at the first that differs)
    const first = c[0];
    let i = 1;
    while (i < c.length && c[i] === first) i++;
    if (i === c.length) {
      if (intercept) fail(`${data.xNames[j]} has the same value in every row used, so it cannot be told apart from the intercept: remove it from x`);
      if (first === 0) fail(`${data.xNames[j]} is zero in every row used: remove it from x`);
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

/** The facts of x column j of the dataset when they describe the column c (null otherwise). */
export function factsOf(data: Dataset, j: number, c: Float64Array): ColumnFacts | null {
  const f = j >= 0 ? data.xFacts[j] : null;
  return f && f.col === c ? f : null;
}
