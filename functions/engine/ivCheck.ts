/**
 * Checks of a two-stage least squares fit: are the instruments strong, does the regressor look
 * endogenous, do the instruments agree?
 *
 * - First stage, per endogenous regressor x_j: x_j on Z against x_j on the exogenous part of Z
 *   (intercept and exogenous regressors). Classical F = ((RSS_r − RSS_u)/q)/(RSS_u/(n − k_Z)), q the
 *   number of excluded instruments; the same hypothesis as a Wald F b_Iᵀ V_I⁻¹ b_I / q with the
 *   chosen covariance of the first stage; partial R² = (RSS_r − RSS_u)/RSS_r. Both F on (q, n − k_Z)
 *   df.
 * - Wu–Hausman (Wu 1973; Hausman 1978), regression form: the first-stage residuals v̂ of every
 *   endogenous regressor added to the structural equation estimated by OLS; F of v̂ = 0, classical
 *   ((RSS_r − RSS_u)/p)/(RSS_u/(n − k − p)) and as a Wald F with the chosen covariance, on
 *   (p, n − k − p) df. Adding X̂'s endogenous columns instead of v̂ spans the same space, so the
 *   classical F is the same, and the Wald F too (a linear reparametrisation).
 * - Sargan (1958): n·e'P_Z e/e'e of the structural residuals e on Z (the uncentred R² of e on Z;
 *   with an intercept e has mean zero, so it equals the centred one), chi-square with q − p df, only
 *   when there are more instruments than endogenous regressors.
 *
 * These are R's AER summary(ivreg, diagnostics = TRUE) ("Weak instruments", "Wu-Hausman", "Sargan"),
 * robust rows with summary(m, vcov. = <covariance function>, diagnostics = TRUE); AER centres the
 * Sargan R² also without an intercept, where the two can differ (test/reference/iv.test.ts).
 *
 * Reading: a first-stage F below 10 reads as weak instruments (Staiger and Stock 1997, a rule of
 * thumb, common practice); a Sargan rejection at 5% means at least one instrument is invalid, not
 * which one.
 */
import { leastSquares, type LeastSquares, type QrFit } from "./leastSquares";
import { chiSquareSf, fisherSf } from "./distributions";
import { ElxProblem, fail, unavailable } from "./problems";
import { sandwichCovariance, type CovarianceInput, type IvFit, type IvSe } from "./iv";

/**
 * The chosen covariance for the auxiliary regressions (first stages, Wu–Hausman) when the fit comes
 * from a model with role columns: `of` returns V in the coefficients' own units for any
 * least-squares input on the fit's rows; `absorbed` fixed-effect parameters count in every df.
 */
export interface CheckCovariance {
  label: string;
  absorbed: number;
  /** Whether it is the classical covariance (the Wald F then equals the classical F). */
  classical: boolean;
  of(input: CovarianceInput): Float64Array;
}

/** The rule-of-thumb first-stage F below which instruments read as weak (Staiger and Stock 1997). */
export const WEAK_F = 10;

export interface FirstStageCheck {
  name: string;
  /** Classical F of the excluded instruments. */
  f: number;
  p: number;
  /** Wald F with the chosen covariance (NaN when it is undefined: see chosenProblem). */
  fChosen: number;
  pChosen: number;
  /** Why the chosen-covariance F is undefined (a singular covariance), or null. */
  chosenProblem: ElxProblem | null;
  df1: number;
  df2: number;
  partialR2: number;
}

export interface WuHausman {
  f: number;
  p: number;
  fChosen: number;
  pChosen: number;
  chosenProblem: ElxProblem | null;
  df1: number;
  df2: number;
  /** Coefficients of the first-stage residuals in the augmented regression. */
  coef: Float64Array;
}

export interface Sargan {
  statistic: number;
  df: number;
  p: number;
}

export interface IvCheck {
  firstStages: FirstStageCheck[];
  wuHausman: WuHausman;
  /** null when exactly identified. */
  sargan: Sargan | null;
  /** The covariance the "chosen" rows use. */
  seLabel: string;
  /** Whether some first-stage F (classical or chosen) is below WEAK_F. */
  weak: boolean;
  reading: string;
}

/** b_Iᵀ V_I⁻¹ b_I / q for the coefficients `idx`, by Cholesky of V_I. */
function waldF(b: Float64Array, V: Float64Array, k: number, idx: number[], what: string): number {
  const q = idx.length;
  const L = new Float64Array(q * q);
  for (let i = 0; i < q; i++) {
    for (let j = 0; j <= i; j++) {
      let s = V[idx[i] * k + idx[j]];
      for (let m = 0; m < j; m++) s -= L[i * q + m] * L[j * q + m];
      if (i === j) {
        if (!(s > 0)) unavailable(`the covariance of ${what} is singular under these errors, so its Wald F is undefined: use se=HC1 or more rows (or more clusters)`);
        L[i * q + i] = Math.sqrt(s);
      } else L[i * q + j] = s / L[j * q + j];
    }
  }
  const z = new Float64Array(q);
  let w = 0;
  for (let i = 0; i < q; i++) {
    let s = b[idx[i]];
    for (let m = 0; m < i; m++) s -= L[i * q + m] * z[m];
    z[i] = s / L[i * q + i];
    w += z[i] * z[i];
  }
  return w / q;
}

/** The factor of a least-squares fit that must be of full rank (its columns were checked by the fit). */
function fullRank(ls: LeastSquares, what: string): QrFit {
  return ls.qr ?? fail(`${what} has collinear columns: remove one of the collinear regressors or instruments`);
}

/** Chosen-covariance Wald F of coefficients `idx` of an OLS fit on `design`. */
function chosenF(fit: IvFit, design: Float64Array[], qr: QrFit, idx: number[], se: IvSe, what: string, chosen: CheckCovariance | null): number {
  const n = qr.n;
  const k = qr.k;
  const input = { columns: design, factor: qr, scores: qr.resid, ssr: qr.rss, dfResid: n - k - (chosen ? chosen.absorbed : 0), rowNumbers: fit.rowNumbers };
  const V = chosen ? chosen.of(input) : sandwichCovariance(input, se, fit.rowNumbers, "two-stage least squares").V;
  return waldF(qr.coef, V, k, idx, what);
}

/** The chosen-covariance F, or NaN with the problem when that covariance is singular there. */
function tolerant(compute: () => number): { value: number; problem: ElxProblem | null } {
  try {
    return { value: compute(), problem: null };
  } catch (e) {
    if (e instanceof ElxProblem && e.kind === "na") return { value: NaN, problem: e };
    throw e;
  }
}

function fmt(v: number): string {
  return v >= 100 ? v.toFixed(0) : v >= 10 ? v.toFixed(1) : v.toFixed(2);
}

/** First-stage strength, Wu–Hausman and Sargan for a 2SLS fit, with a one-line reading. */
export function ivCheck(fit: IvFit, se: IvSe, chosen: CheckCovariance | null = null): IvCheck {
  fit.requireResidualVariation("the instrument checks are");
  const seLabel = chosen ? chosen.label : fit.covariance(se).label; // refuses HC2/HC3 and an exact fit first
  const a = chosen ? chosen.absorbed : 0;
  const classicalChosen = chosen ? chosen.classical : se.type === "classical";
  const n = fit.n;
  const Z = fit.instrumentsDesign;
  const kz = Z.length;
  const q = kz - fit.firstInstrument;
  const exogZ = Z.slice(0, fit.firstInstrument);
  const instIdx = Array.from({ length: q }, (_, m) => fit.firstInstrument + m);

  const firstStages: FirstStageCheck[] = fit.firstStages.map((fs) => {
    const xj = fit.design[fs.index];
    const rssU = fs.qr.rss;
    let rssR: number;
    if (exogZ.length > 0) rssR = fullRank(leastSquares(exogZ, xj), "the first stage").rss;
    else {
      rssR = 0;
      for (let i = 0; i < n; i++) rssR += xj[i] * xj[i];
    }
    if (!(rssU > 0)) unavailable(`the instruments predict ${fs.name} exactly (first-stage residuals all zero), so its first-stage F is undefined`);
    const df2 = n - kz - a;
    const f = ((rssR - rssU) / q) / (rssU / df2);
    const ch = classicalChosen ? { value: f, problem: null } : tolerant(() => chosenF(fit, Z, fs.qr, instIdx, se, `${fs.name}'s first stage`, chosen));
    const fChosen = ch.value;
    return { name: fs.name, f, p: fisherSf(f, q, df2), fChosen, pChosen: ch.problem ? NaN : fisherSf(fChosen, q, df2), chosenProblem: ch.problem, df1: q, df2, partialR2: (rssR - rssU) / rssR };
  });

  // Wu–Hausman: y on [X, v̂], against y on X.
  const p = fit.firstStages.length;
  const k = fit.k;
  const V = fit.firstStages.map((fs) => fs.qr.resid);
  const aug = [...fit.design, ...V];
  if (n <= k + p + a) fail(`the Wu–Hausman regression has ${k + p} terms for ${n} rows; it needs more rows than terms`);
  const qrU = fullRank(leastSquares(aug, fit.yUsed), "the Wu–Hausman regression");
  const qrR = fullRank(leastSquares(fit.design, fit.yUsed), "the structural equation");
  const df2 = n - k - p - a;
  if (!(qrU.rss > 0)) unavailable("the Wu–Hausman regression fits exactly, so its F is undefined");
  const whF = ((qrR.rss - qrU.rss) / p) / (qrU.rss / df2);
  const vIdx = Array.from({ length: p }, (_, m) => k + m);
  const wch = classicalChosen ? { value: whF, problem: null } : tolerant(() => chosenF(fit, aug, qrU, vIdx, se, "the first-stage residuals in the Wu–Hausman regression", chosen));
  const whChosen = wch.value;
  const wuHausman: WuHausman = {
    f: whF,
    p: fisherSf(whF, p, df2),
    fChosen: whChosen,
    pChosen: wch.problem ? NaN : fisherSf(whChosen, p, df2),
    chosenProblem: wch.problem,
    df1: p,
    df2,
    coef: qrU.coef.slice(k),
  };

  // Sargan: n·(1 − RSS(e on Z)/e'e), the structural residuals as fitted (weighted: √w·e).
  let sargan: Sargan | null = null;
  if (q > p) {
    const e = fit.covarianceInput.scores;
    const ee = fit.rss;
    const aux = fullRank(leastSquares(Z, e, false), "the Sargan regression");
    const statistic = n * (1 - aux.rss / ee);
    sargan = { statistic, df: q - p, p: chiSquareSf(statistic, q - p) };
  }

  // the smaller of the two F (the classical one alone where the chosen one is undefined)
  const low = (r: FirstStageCheck) => (Number.isFinite(r.fChosen) ? Math.min(r.f, r.fChosen) : r.f);
  const weakOnes = firstStages.filter((r) => low(r) < WEAK_F);
  const parts: string[] = [];
  if (weakOnes.length > 0) {
    const list = weakOnes.map((r) => `${r.name} (${fmt(low(r))})`);
    const named = list.length === 1 ? list[0] : `${list.slice(0, -1).join(", ")} and ${list[list.length - 1]}`;
    parts.push(`Weak instruments: the first-stage F is below 10 for ${named} (Staiger and Stock 1997; a rule of thumb, common practice), so the 2SLS estimates and intervals may be far off, pulled towards OLS; find a stronger instrument.`);
  } else {
    parts.push("The instruments are not weak by the rule of thumb first-stage F ≥ 10 (Staiger and Stock 1997; common practice).");
  }
  const whP = Number.isFinite(wuHausman.pChosen) ? wuHausman.pChosen : wuHausman.p;
  parts.push(whP < 0.05
    ? `Wu–Hausman rejects at 5% (p = ${whP.toPrecision(2)}): OLS and 2SLS differ beyond chance, so ${p === 1 ? `${fit.firstStages[0].name} looks endogenous` : "the named regressors look endogenous"}.`
    : `Wu–Hausman does not reject at 5% (p = ${whP.toPrecision(2)}): no sign that OLS and 2SLS differ; OLS is more precise if the regressors are in fact exogenous.`);
  if (sargan) {
    parts.push(sargan.p < 0.05
      ? `Sargan rejects at 5% (p = ${sargan.p.toPrecision(2)}): at least one instrument is invalid (related to the error), though the test cannot say which.`
      : `Sargan does not reject at 5% (p = ${sargan.p.toPrecision(2)}): no sign that the instruments disagree (this cannot show them valid).`);
  } else {
    parts.push("Sargan needs more instruments than endogenous regressors (exactly identified here).");
  }
  return { firstStages, wuHausman, sargan, seLabel, weak: weakOnes.length > 0, reading: parts.join(" ") };
}
