/**
 * estimator=2sls as a Model: the prepared dataset's regressors, with those named in endogenous=
 * instrumented by the instruments= columns (transformed as the x side by prepare), fitted by iv.ts.
 *
 * Z = the instruments, the regressors not named endogenous and the intercept. With absorb= the fixed
 * effects are absorbed from y, every regressor and every instrument first (the Absorber on the rows,
 * weighted under weights=), so the slopes equal those of 2SLS with one 0/1 column per absorbed value
 * among both X and Z (Frisch–Waugh–Lovell applies to both stages, as the indicators are exogenous);
 * a = the absorbed parameters counts in every df. With weights= every column is scaled by √w (R's
 * ivreg(weights =)).
 *
 * Covariances come from the Model's dispatch on covarianceInput(): the columns X̂ (demeaned, ×√w) and
 * their factor with the structural residuals e = y − Xb as the scores. So classical
 * e'e/(n−k−a)·(X̂ᵀX̂)⁻¹, HC0, HC1, HAC, cluster (one- and two-way), Driscoll–Kraay and HAC within
 * panels are those of covariance.ts and panelCovariance.ts with X̂ in place of X. HC2 and HC3 are
 * refused: their leverage has no agreed form for 2SLS.
 *
 * What reads a residual variance: PREDICT and SMEARING use the structural residuals (Duan's mean of
 * exp(e), the normal factor exp(s²/2) with s² = e'e/(n−k−a)); residual tests (TESTS, HETEROTEST,
 * NORMALTEST, FORMCHECK) and single-outcome intervals are refused (see README.md).
 */
import { mapped } from "./blocks";
import { Model } from "./fit";
import { fitIv, IvFit } from "./iv";
import { ivCheck, type CheckCovariance, type IvCheck } from "./ivCheck";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, originalUnits, type Covariance, type CovarianceInput } from "./covariance";
import { clusterCovariance, driscollKraay, panelClassical, panelHac, panelHc, type PanelCovariance, type ScoreModel } from "./panelCovariance";
import { collinearWithEffects, prepareAbsorption, weightedMean } from "./absorb";
import { studentQuantile, studentTwoSided } from "./distributions";
import { count, fail, unavailable } from "./problems";
import type { Dataset, Transform } from "./transforms";
import type { Options, SeType } from "./options";
import type { EstimatorInfo } from "./estimators";
import type { QrFit } from "./leastSquares";

export const IV_INFO: EstimatorInfo = Object.freeze({
  id: "2sls",
  title: "two-stage least squares",
  seTypes: ["HC1", "HC0", "classical", "HAC", "cluster", "DK"],
  defaultSe: "HC1",
  logsY: true,
  negativeY: true,
  residualVariance: false,
  exponentialMean: false,
  statistic: "t",
  noResidualVariance: "the residual tests and form checks read ordinary least-squares residuals, which 2SLS does not give: drop estimator=2sls for them (ELX.IVCHECK checks the instruments)",
  smearsResiduals: true,
} as const);

/** Why HC2 and HC3 are refused under 2SLS. */
export function hcLeverageRefusal(type: string): string {
  return `se=${type} is not available for two-stage least squares: its leverage correction has no agreed form there; use se=HC1 (the default), se=HC0, se=HAC or cluster=`;
}

export class TwoStageFit extends Model {
  readonly estimator = "2sls" as const;
  readonly info = IV_INFO;
  /** The 2SLS fit on the (demeaned) columns, without an intercept under absorb=. */
  readonly iv: IvFit;
  readonly qr: QrFit;
  /** Names of the regressors named endogenous and of the instruments, in the fit's order. */
  readonly endogenousNames: string[];
  readonly instrumentNames: string[];
  private readonly covInput: CovarianceInput;

  constructor(data: Dataset, o: Options) {
    const keys = data.roles.absorb;
    super(data, o.intercept && keys.length === 0);
    const n = this.n;
    const w = data.roles.weights;
    const roles = data.roles;
    if (o.endogenous.length === 0) fail("estimator=2sls needs endogenous=: name the regressors that respond to y (for example endogenous=Price)");
    if (roles.instruments.length === 0) fail("estimator=2sls needs instruments=: name the columns of x that move the endogenous regressors but not y directly (for example instruments=Flour cost)");
    const endogenous = o.endogenous.map((name) => {
      const inst = roles.instrumentNames.find((v) => v.toLowerCase() === name.toLowerCase());
      if (inst !== undefined) fail(`${inst} is named both in endogenous= and in instruments=: an endogenous regressor is instrumented by other columns, never by itself; remove it from one of them`);
      const j = data.xNames.findIndex((v) => v.toLowerCase() === name.toLowerCase());
      if (j >= 0) return data.xNames[j];
      if (/^\d+$/.test(name)) {
        const c = Number(name) - 1;
        if (c >= 0 && c < data.columnNames.length && data.regressorOf[c] >= 0) return data.xNames[data.regressorOf[c]];
      }
      return name; // fitIv names it as not a regressor, with the nearest name
    });
    let y = data.y;
    let x = data.x;
    let z = roles.instruments;
    if (keys.length > 0) {
      const prep = prepareAbsorption(keys.map((k) => ({ name: k.name, codes: k.codes })), w);
      const ab = prep.absorber;
      this.absorber = ab;
      this.absorbed = ab.absorbed;
      if (this.dfResid < 1) fail(`${count(n, "row")} leave no residual degrees of freedom for ${count(this.k, "slope")} and ${count(this.absorbed, "absorbed parameter")}: use fewer regressors or coarser fixed effects`);
      const within = (c: Float64Array, name: string, what: string): Float64Array => {
        const d = ab.demean(c);
        if (collinearWithEffects(c, d, w)) fail(`${what}${name} ${ab.explainedPhrase()} (collinear with the fixed effects): its effect cannot be told apart from them; remove it from ${what ? "instruments=" : "x"} or absorb fewer keys`);
        return d;
      };
      y = ab.demean(data.y);
      x = data.x.map((c, j) => within(c, data.xNames[j], ""));
      z = roles.instruments.map((c, m) => within(c, roles.instrumentNames[m], "instrument "));
    }
    this.iv = fitIv({
      y,
      x,
      xNames: data.xNames,
      endogenous,
      instruments: z,
      instrumentNames: roles.instrumentNames,
      intercept: this.intercept,
      weights: w,
      rowNumbers: data.rowNumbers,
    });
    this.qr = this.iv.factor;
    this.endogenousNames = this.iv.firstStages.map((f) => f.name);
    this.instrumentNames = roles.instrumentNames.slice();
    const base = this.iv.covarianceInput;
    this.covInput = { ...base, dfResid: this.dfResid };
  }

  get coef(): Float64Array {
    return this.iv.coef;
  }

  /** Structural residuals y − ŷ (fixed effects included), unweighted. */
  get resid(): Float64Array {
    return this.iv.resid;
  }

  get fitted(): Float64Array {
    return this.memo("fitted", () => mapped(this.data.y, (v, i) => v - this.iv.resid[i]));
  }

  get meanTransform(): Transform {
    return this.data.yTransform;
  }

  /** s² = Σw e²/(n − k − a) of the structural residuals. */
  get s2(): number {
    return this.iv.rss / this.dfResid;
  }

  covarianceInput(): CovarianceInput {
    return this.covInput;
  }

  covariance(type: SeType, lags: number | null = null): Covariance {
    if (type === "HC2" || type === "HC3") fail(hcLeverageRefusal(type));
    return super.covariance(type, lags);
  }

  criticalValue(level: number, cov?: Covariance): number {
    return studentQuantile(0.5 + level / 2, cov?.df ?? this.dfResid);
  }

  pValue(t: number, cov?: Covariance): number {
    return studentTwoSided(t, cov?.df ?? this.dfResid);
  }

  isExact(): boolean {
    return this.iv.exact;
  }

  requireResidualVariation(what: string): void {
    if (this.iv.exact) unavailable(`the fit is exact (every residual is zero up to rounding), so ${what} undefined`);
  }

  /**
   * R² = 1 − Σw e²/Σw(y − ȳ_w)² with the structural residuals (it can be negative: 2SLS does not
   * minimise Σe²), adjusted with (n − 1)/(n − k − a); under absorb= also the within R² (of the
   * demeaned y). As R's summary(ivreg) on the indicator regression.
   */
  statistics(): { rSquared: number; adjRSquared: number; sigma: number; withinRSquared: number | null } {
    return this.memo("statistics", () => {
      const { n } = this;
      const y = this.data.y;
      const w = this.data.roles.weights;
      const rss = this.iv.rss;
      let tss = 0;
      let tssWithin = 0;
      const centred = this.intercept || this.absorbed > 0;
      const m = centred ? weightedMean(y, w) : 0;
      for (let i = 0; i < n; i++) tss += (w ? w[i] : 1) * (y[i] - m) * (y[i] - m);
      if (this.absorbed > 0) {
        const yt = this.iv.yUsed; // demeaned y, ×√w
        for (let i = 0; i < n; i++) tssWithin += yt[i] * yt[i];
      }
      const rSquared = tss > 0 ? 1 - rss / tss : NaN;
      const adjRSquared = 1 - (1 - rSquared) * ((n - (centred ? 1 : 0)) / this.dfResid);
      return { rSquared, adjRSquared, sigma: Math.sqrt(this.s2), withinRSquared: this.absorbed > 0 ? 1 - rss / tssWithin : null };
    });
  }

  /** First-stage F, Wu–Hausman and Sargan with the chosen covariance (memoised per type). */
  check(type: SeType, lags: number | null): IvCheck {
    if (type === "HC2" || type === "HC3") fail(hcLeverageRefusal(type));
    const label = this.covariance(type, lags).label;
    return this.memo(`ivcheck:${type}:${lags ?? ""}`, () => {
      const chosen: CheckCovariance = { label, absorbed: this.absorbed, classical: type === "classical", of: (input) => this.auxiliaryCovariance(input, type, lags) };
      return ivCheck(this.iv, { type: "classical" }, chosen);
    });
  }

  /**
   * The chosen covariance of an auxiliary least-squares regression on this fit's rows (a first stage
   * or the Wu–Hausman regression), by the same dispatch as the fit's own: V in the coefficients' units.
   */
  private auxiliaryCovariance(input: CovarianceInput, type: SeType, lags: number | null): Float64Array {
    const roles = this.data.roles;
    const offset = this.absorber ? this.absorber.leverageOffset() : new Float64Array(this.n);
    const m: ScoreModel = { X: input.columns, qr: input.factor, u: input.scores, absorbed: this.absorbed, leverageOffset: offset, rowNumbers: input.rowNumbers };
    let panel: PanelCovariance | null = null;
    if (type === "cluster") {
      if (roles.cluster.length === 0) fail("se=cluster needs cluster= naming the column of clusters (for example cluster=Store)");
      const keys = roles.cluster.map((c) => ({ name: c.name, codes: c.codes }));
      panel = clusterCovariance(m, keys, this.absorber ? this.absorber.nestedAbsorbed(keys.map((k) => k.codes)) : 0);
    } else if (type === "DK") {
      if (!roles.time) fail("se=DK needs time= naming the column of periods (for example time=Week)");
      panel = driscollKraay(m, roles.time.codes, lags);
    } else if (type === "HAC" && roles.panel) panel = panelHac(m, roles.panel.codes, lags, roles.panel.name);
    else if (this.absorbed > 0 && type === "classical") panel = panelClassical(m);
    else if (this.absorbed > 0 && type !== "HAC") panel = panelHc(m, type as "HC0" | "HC1");
    if (panel) {
      if (panel.negative.length > 0) unavailable("a variance of the two-way clustered covariance came out negative, so this Wald F is undefined: cluster by one column");
      return panel.V;
    }
    const scale = input.factor.scale;
    let W: Float64Array;
    if (type === "classical") W = classicalCovariance(input);
    else if (type === "HAC") W = hacCovariance(input, lags ?? defaultLags(this.n));
    else W = hcCovariance(input, type as "HC0" | "HC1", null).V;
    return originalUnits(W, scale, 1);
  }

  /** "Price (by Flour cost and Fuel cost)" for the summary. */
  instrumentedPhrase(): string {
    const list = (v: string[]) => (v.length === 1 ? v[0] : `${v.slice(0, -1).join(", ")} and ${v[v.length - 1]}`);
    return `${list(this.endogenousNames)} (instrumented by ${list(this.instrumentNames)})`;
  }
}
