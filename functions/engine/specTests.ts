/**
 * Specification tests on a fitted OLS model: did the logs give constant spread, symmetric errors and
 * the right functional form?
 *
 * - Breusch–Pagan, studentized (Koenker 1981, J. Econometrics 17): n·R² of e² on the model's
 *   regressors, chi-square with (regressors − 1) df. The default, robust to non-normal errors.
 * - Breusch–Pagan, original (Breusch and Pagan 1979, Econometrica 47): half the explained sum of
 *   squares of e²/σ̂² (σ̂² = RSS/n) on the same regressors.
 * - White (1980, Econometrica 48): n·R² of e² on the regressors, their squares (binary columns'
 *   squares are the columns themselves and are dropped) and all pairwise cross-products.
 * - White's special form: n·R² of e² on ŷ and ŷ², 2 df.
 * - Jarque–Bera (1980, Economics Letters 6): n/6·(S² + (K − 3)²/4) with moments of the residuals
 *   taken with n denominators, chi-square 2 df.
 * - RESET (Ramsey 1969, JRSS B 31): F test of ŷ² and ŷ³ added to the model.
 *
 * These agree with R's lmtest::bptest and lmtest::resettest (test/reference/diagnostics.test.ts).
 * Every statistic here is invariant to the units of y and of each regressor, so residuals, fitted
 * values and regressors of extreme magnitude are first scaled by powers of two (scaling.ts): e² and
 * e⁴, x² and ŷ³ then stay finite, and the statistic is unchanged.
 * Each auxiliary regression runs on the engine's QR; an auxiliary column that is an exact combination
 * of earlier ones is dropped and the degrees of freedom count only the columns kept. Breusch–Pagan
 * (on the fit's design) and RESET (the fit's design with two columns added) reuse the fit's factor
 * when factorReusable(fit); White's test factorises its own, larger design.
 */
import { leastSquares, projectOnFactor, RANK_TOL, rssOnFactor } from "./leastSquares";
import { chiSquareSf, fisherSf } from "./distributions";
import { count, fail, requireFeasible, unavailable } from "./problems";
import { factsOf, type OlsFit } from "./fit";
import type { QrFit } from "./leastSquares";
import { working } from "./scaling";

export interface TestResult {
  name: string;
  statistic: number;
  /** Degrees of freedom: one number for chi-square, two for F. */
  df: number[];
  pValue: number;
  /** What a rejection at 5% means, and what not rejecting means, in plain words. */
  reading: string;
}

interface AuxFit {
  rss: number;
  tss: number;
  /** Columns kept (intercept included). */
  kept: number;
}

/**
 * Regresses v on an intercept and the columns W, dropping columns that depend on earlier ones.
 * Returns the RSS, the centred TSS and the number of columns kept.
 */
export function auxiliary(v: Float64Array, W: Float64Array[]): AuxFit {
  const n = v.length;
  let cols = [new Float64Array(n).fill(1), ...W];
  for (;;) {
    if (cols.length >= n) {
      fail(`the auxiliary regression has ${count(cols.length, "term")} for ${count(n, "row")}; it needs more rows than terms`);
    }
    const ls = leastSquares(cols, v, false);
    if (ls.qr) {
      let mean = 0;
      for (let i = 0; i < n; i++) mean += v[i];
      mean /= n;
      let tss = 0;
      for (let i = 0; i < n; i++) tss += (v[i] - mean) * (v[i] - mean);
      return { rss: ls.qr.rss, tss, kept: cols.length };
    }
    const drop = ls.dependent.column;
    if (drop === 0) unavailable("the auxiliary regression's variable is zero in every row, so the test is undefined");
    cols = cols.filter((_, j) => j !== drop);
  }
}

/** Condition estimate of the fit's design above which its factor is not reused for an auxiliary regression. */
export const REUSE_CONDITION = 1e6;

/**
 * Whether an auxiliary regression on the fit's design (or on it with columns added) may reuse the fit's
 * factor: a plain fit (no weights, no fixed effects) whose solution was not refined and whose
 * condition estimate is below REUSE_CONDITION. Otherwise the auxiliary design is factorised anew.
 */
export function factorReusable(fit: { plain: boolean; qr: QrFit }): boolean {
  return fit.plain && !fit.qr.refined && fit.qr.condition < REUSE_CONDITION;
}

/**
 * v on the fit's own design (intercept and regressors, as Breusch–Pagan uses it) through the fit's QR
 * factor: the corrected semi-normal equations (rssOnFactor: two passes of n·k) instead of a new
 * factorisation.
 * Only for a plain fit with an intercept whose regressors enter unscaled and whose design is well
 * conditioned; null otherwise (the caller factorises the auxiliary design itself).
 */
export function onFitDesign(fit: OlsFit, v: Float64Array): AuxFit | null {
  if (!fit.intercept || !factorReusable(fit)) return null;
  const W = regressors(fit);
  if (W.some((c, j) => c !== fit.data.x[j])) return null;
  const n = v.length;
  const rss = rssOnFactor(fit.design, fit.qr, 1, (start, m, V) => V.set(v.subarray(start, start + m))).rss[0];
  let mean = 0;
  for (let i = 0; i < n; i++) mean += v[i];
  mean /= n;
  let tss = 0;
  for (let i = 0; i < n; i++) tss += (v[i] - mean) * (v[i] - mean);
  return { rss, tss, kept: fit.k };
}

/** The model's regressors other than the intercept (as fitted: transformed; scaled if extreme). */
function regressors(fit: OlsFit): Float64Array[] {
  // max|x| from the log's read, where it describes the column
  return fit.memo("test:regressors", () => fit.data.x.map((c, j) => working(c, factsOf(fit.data, j, c)?.maxAbs ?? null)));
}

/** Residuals in a unit where their fourth powers are finite (the tests do not depend on it). */
function testResiduals(fit: OlsFit): Float64Array {
  return working(fit.qr.resid);
}

/** Squares of the values, in a loop (typed-array from() with a function is many times slower). */
function squares(e: Float64Array): Float64Array {
  const out = new Float64Array(e.length);
  for (let i = 0; i < e.length; i++) out[i] = e[i] * e[i];
  return out;
}

function squaredResiduals(fit: OlsFit): Float64Array {
  return squares(testResiduals(fit));
}

/** ŷ = y − e on the fitted scale (the values of fit.fitted), kept with the fit. */
export function fittedOf(fit: OlsFit): Float64Array {
  return fit.memo("test:fitted", () => {
    const y = fit.data.y;
    const e = fit.resid;
    const f = new Float64Array(fit.n);
    for (let i = 0; i < f.length; i++) f[i] = y[i] - e[i];
    return f;
  });
}

/** Fitted values minus their mean, in a unit where their cubes are finite. */
function centredFitted(fit: OlsFit): Float64Array {
  const f = fittedOf(fit);
  let m = 0;
  for (let i = 0; i < f.length; i++) m += f[i];
  m /= f.length;
  const c = new Float64Array(f.length);
  for (let i = 0; i < f.length; i++) c[i] = f[i] - m;
  return working(c);
}

/** Fitted values in a unit where their cubes are finite. */
function testFitted(fit: OlsFit): Float64Array {
  return working(fittedOf(fit));
}

function requireSpread(fit: OlsFit): void {
  fit.requireResidualVariation("this test");
}

const HET_REJECT = "spread of the errors changes with the regressors: use robust errors (se=HC3, the default) and read intervals with care";
const HET_KEEP = "no evidence against a constant spread";

function nR2(e2: Float64Array, W: Float64Array[], name: string, reuse: AuxFit | null = null): TestResult {
  const a = reuse ?? auxiliary(e2, W);
  const df = a.kept - 1;
  if (df <= 0) unavailable(`${name} needs at least one regressor besides the intercept`);
  if (!(a.tss > 0)) unavailable(`${name} is undefined: the squared residuals do not vary`);
  const stat = e2.length * (1 - a.rss / a.tss);
  const p = chiSquareSf(stat, df);
  return { name, statistic: stat, df: [df], pValue: p, reading: p < 0.05 ? HET_REJECT : HET_KEEP };
}

/**
 * e² on the regressors, once per fit for both forms of Breusch–Pagan (e²/σ̂² of the original form is
 * e² divided by a constant: its sums of squares are those of e² divided by σ̂⁴).
 */
function squaresOnRegressors(fit: OlsFit): { e2: Float64Array; aux: AuxFit } {
  return fit.memo("test:e2-aux", () => {
    const e2 = squaredResiduals(fit);
    return { e2, aux: onFitDesign(fit, e2) ?? auxiliary(e2, regressors(fit)) };
  });
}

/** Studentized Breusch–Pagan (Koenker 1981). */
export function breuschPaganKoenker(fit: OlsFit): TestResult {
  requireSpread(fit);
  const { e2, aux } = squaresOnRegressors(fit);
  return nR2(e2, regressors(fit), "Breusch–Pagan (Koenker, studentized)", aux);
}

/** Original Breusch–Pagan (1979): ESS/2 of e²/σ̂² on the regressors. */
export function breuschPaganOriginal(fit: OlsFit): TestResult {
  requireSpread(fit);
  const n = fit.n;
  const { e2, aux } = squaresOnRegressors(fit);
  let ss = 0;
  for (let i = 0; i < n; i++) ss += e2[i];
  const sigma4 = (ss / n) * (ss / n);
  const a = { rss: aux.rss / sigma4, tss: aux.tss / sigma4, kept: aux.kept };
  const df = a.kept - 1;
  if (df <= 0) unavailable("Breusch–Pagan needs at least one regressor besides the intercept");
  const stat = (a.tss - a.rss) / 2;
  const p = chiSquareSf(stat, df);
  return { name: "Breusch–Pagan (original)", statistic: stat, df: [df], pValue: p, reading: p < 0.05 ? HET_REJECT : HET_KEEP };
}

/** White (1980): squares (not of binary columns) and cross-products. */
export function white(fit: OlsFit): TestResult {
  requireSpread(fit);
  const X = regressors(fit);
  const n = fit.n;
  const product = (ca: Float64Array, cb: Float64Array) => {
    const out = new Float64Array(n);
    for (let i = 0; i < n; i++) out[i] = ca[i] * cb[i];
    return out;
  };
  const W: Float64Array[] = [...X];
  X.forEach((c, j) => {
    if (!fit.data.binary[j]) W.push(product(c, c));
  });
  for (let a = 0; a < X.length; a++) {
    for (let b = a + 1; b < X.length; b++) W.push(product(X[a], X[b]));
  }
  const p = W.length + 1;
  requireFeasible(n * p * p, `White's test with ${p} auxiliary terms on ${n} rows`, `use test "white-special", or a sample of the rows`);
  if (W.length + 1 >= n) {
    fail(`White's test needs ${W.length + 1} auxiliary terms (regressors, squares and cross-products) but the fit has only ${n} rows; use the special form, test "white-special"`);
  }
  return nR2(squaredResiduals(fit), W, "White");
}

/** White's special form: e² on ŷ and ŷ². */
export function whiteSpecial(fit: OlsFit): TestResult {
  requireSpread(fit);
  const f = testFitted(fit);
  return nR2(squaredResiduals(fit), [f, squares(f)], "White (special form)");
}

/** Skewness and kurtosis of the residuals with n denominators. */
export function moments(e0: Float64Array): { skewness: number; kurtosis: number } {
  const e = working(e0); // skewness and kurtosis do not depend on the units
  const n = e.length;
  let mean = 0;
  for (let i = 0; i < n; i++) mean += e[i];
  mean /= n;
  let m2 = 0;
  let m3 = 0;
  let m4 = 0;
  for (let i = 0; i < n; i++) {
    const d = e[i] - mean;
    const d2 = d * d;
    m2 += d2;
    m3 += d2 * d;
    m4 += d2 * d2;
  }
  m2 /= n;
  m3 /= n;
  m4 /= n;
  return { skewness: m3 / Math.pow(m2, 1.5), kurtosis: m4 / (m2 * m2) };
}

/** Jarque–Bera test of normal residuals. */
export function jarqueBera(fit: OlsFit): TestResult {
  requireSpread(fit);
  return jarqueBeraOf(testResiduals(fit));
}

/**
 * Breusch–Pagan (studentized) of residuals e of another y on the same design as `fit` (the level
 * model's residuals solved on the log fit's factor, in FORMCHECK); e in any unit.
 */
export function breuschPaganOf(fit: OlsFit, e: Float64Array): TestResult {
  const w = working(e);
  const e2 = squares(w);
  return nR2(e2, regressors(fit), "Breusch–Pagan (Koenker, studentized)", onFitDesign(fit, e2));
}

/** Jarque–Bera of residuals e (any unit: the moments are taken in a working unit). */
export function jarqueBeraOf(e: Float64Array): TestResult {
  const { skewness: S, kurtosis: K } = moments(e);
  const n = e.length;
  const stat = (n / 6) * (S * S + ((K - 3) * (K - 3)) / 4);
  const p = chiSquareSf(stat, 2);
  return {
    name: "Jarque–Bera",
    statistic: stat,
    df: [2],
    pValue: p,
    reading: p < 0.05
      ? `residuals are not normal (skewness ${S.toFixed(2)}, kurtosis ${K.toFixed(2)}): prefer Duan's smearing factor to the normal one; large samples still give valid robust intervals`
      : "no evidence against normal residuals",
  };
}

/** RESET with powers 2 and 3 of the fitted values (lmtest::resettest, type = "fitted"). */
export function reset(fit: OlsFit): TestResult {
  requireSpread(fit);
  // y, ŷ and the RSS in units of yUnit (F does not depend on the units of y), ŷ² and ŷ³ scaled.
  // With an intercept, ŷ is centred first: (ŷ − c)² and (ŷ − c)³ span the same space as ŷ² and ŷ³
  // together with the intercept and ŷ (a combination of the regressors), so F is the same, but the
  // powers are no longer nearly collinear when ŷ sits far from zero (log y of values near 1e150).
  // With fixed effects, y, ŷ² and ŷ³ are absorbed as the regressors were (the columns of the
  // covariance input), so the auxiliary regression has the same fixed effects.
  const f = fit.intercept || fit.absorbed > 0 ? centredFitted(fit) : testFitted(fit);
  const rss0 = fit.qr.rss;
  const n = fit.n;
  const k = fit.k;
  if (fit.dfResid <= 2) fail(`RESET needs more than ${k + fit.absorbed + 2} rows (the fit has ${n})`);
  const f2 = new Float64Array(n);
  const f3 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    f2[i] = f[i] * f[i];
    f3[i] = f2[i] * f[i];
  }
  const reused = resetOnFit(fit, f2, f3);
  let added: number;
  let rss1: number;
  if (reused) ({ added, rss1 } = reused);
  else {
    const y = fit.within(fit.scaledY);
    const cols = [...fit.covarianceInput().columns, fit.within(f2), fit.within(f3)];
    // ŷ³ may depend on ŷ² and the regressors (for example with one binary regressor): then ŷ² alone.
    added = 2;
    let ls = leastSquares(cols, y, false);
    if (!ls.qr) {
      added = 1;
      ls = leastSquares(cols.slice(0, k + 1), y, false);
    }
    if (!ls.qr) return unavailable("RESET is undefined here: the powers of the fitted values are combinations of the regressors");
    rss1 = ls.qr.rss;
  }
  const df2 = fit.dfResid - added;
  const stat = ((rss0 - rss1) / added) / (rss1 / df2);
  const p = fisherSf(stat, added, df2);
  return {
    name: "RESET (fitted², fitted³)",
    statistic: stat,
    df: [added, df2],
    pValue: p,
    reading: p < 0.05
      ? "powers of the fitted values add explanation: the functional form may be wrong (try another form or add terms)"
      : "no evidence against the functional form",
  };
}

/**
 * RESET's auxiliary regression through the fit's factor (partitioned regression, Frisch–Waugh–Lovell):
 * ŷ² and ŷ³ on X's residual, z̃ = M z (projectOnFactor), then the fit's residuals e = My on [z̃₂, z̃₃]
 * (a regression of two columns): its RSS is that of y on [X, ŷ², ŷ³]. The rank decisions are those of a
 * new factorisation of [X, ŷ², ŷ³] with unit columns: |R| of ŷ² is ‖z̃₂‖/‖z₂‖, that of ŷ³ the small
 * regression's |R₂₂| times ‖z̃₃‖/‖z₃‖. Null (a new factorisation decides) for a fit whose factor is not
 * reused (factorReusable) or when a column is within a factor 100 of the rank threshold.
 */
function resetOnFit(fit: OlsFit, f2: Float64Array, f3: Float64Array): { added: number; rss1: number } | null {
  if (!factorReusable(fit)) return null;
  const n = fit.n;
  const t2 = new Float64Array(n);
  const t3 = new Float64Array(n);
  const s2 = projectOnFactor(fit.design, fit.qr, f2, t2).rss;
  const s3 = projectOnFactor(fit.design, fit.qr, f3, t3).rss;
  let n2 = 0;
  let n3 = 0;
  for (let i = 0; i < n; i++) {
    n2 += f2[i] * f2[i];
    n3 += f3[i] * f3[i];
  }
  const limit = 100 * RANK_TOL;
  if (!(Math.sqrt(s2 / n2) > limit)) return null;
  const e = fit.scaledResid;
  const two = leastSquares([t2, t3], e, false);
  if (two.qr) {
    const r22 = Math.abs(two.qr.R[3]) * Math.sqrt(s3 / n3);
    if (r22 > limit) return { added: 2, rss1: two.qr.rss };
    if (r22 >= RANK_TOL / 100) return null;
  }
  const one = leastSquares([t2], e, false);
  return one.qr ? { added: 1, rss1: one.qr.rss } : null;
}

export type HeteroTest = "bp" | "bp-original" | "white" | "white-special";

export function heteroTest(fit: OlsFit, test: HeteroTest): TestResult {
  switch (test) {
    case "bp": return breuschPaganKoenker(fit);
    case "bp-original": return breuschPaganOriginal(fit);
    case "white": return white(fit);
    case "white-special": return whiteSpecial(fit);
  }
}
