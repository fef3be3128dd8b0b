/**
 * Logs or levels? Evidence for choosing the transform of y, with the same x side.
 *
 * - Box–Cox (1964, JRSS B 26): the profile log-likelihood of λ in (y^λ − 1)/λ (log y at λ = 0),
 *   with the Jacobian taken in by dividing by the geometric mean ẏ of y to the power λ − 1, as R's
 *   MASS::boxcox does: ℓ(λ) = −n/2·log RSS(λ). That transform is ẏ·w(λ) plus a constant, with
 *   w(λ) = ((y/ẏ)^λ − 1)/λ = expm1(λ·log(y/ẏ))/λ (the geometric-mean scaling of Box and Cox 1964),
 *   so with an intercept ℓ(λ) = −n/2·log RSS(w(λ)) up to a constant that does not depend on λ: λ̂, its
 *   interval and the LR p-values are those of MASS::boxcox, and they do not depend on the units of y.
 *   Computing w directly matters: (y^λ − 1)/λ at y = 10^8 and λ = −2 is −1/λ plus 10^−16, which the
 *   subtraction loses entirely (λ̂ moved from 0.376 to −1.84 when y was rescaled by 10^8); y/ẏ is near 1
 *   whatever the units. Without an intercept the constant is not absorbed and the model itself depends
 *   on the units of y: there w(λ) + (1 − ẏ^−λ)/λ is fitted, MASS's transform divided by ẏ.
 *   λ̂ is maximised on [−2, 2]; the likelihood-ratio
 *   interval is {λ : ℓ(λ) ≥ ℓ(λ̂) − χ²₁(level)/2}; the p-values of λ = 0 (logs) and λ = 1 (levels)
 *   come from LR = 2(ℓ(λ̂) − ℓ(λ₀)) on 1 df. Only y changes with λ, so the QR of x is reused: each
 *   λ costs a solve with R and one correction step (corrected semi-normal equations, Björck 1987),
 *   a few passes over the data instead of a new factorisation; a 21-point grid brackets λ̂ and Brent's
 *   methods locate it and the interval's ends in about ten evaluations each.
 * - PE test (MacKinnon, White and Davidson 1983, J. Econometrics 21): log(ŷ_levels) − ŷ_logs added to
 *   the level model, and ŷ_levels − exp(ŷ_logs) added to the log model; a significant t rejects the
 *   model it was added to. Rows whose level fitted value is ≤ 0 cannot enter the log and are left
 *   out of that auxiliary regression (counted). t uses the chosen covariance (the default HC3), as
 *   lmtest::petest(…, vcov = …) does.
 */
import { leastSquares, residualSS } from "./leastSquares";
import { chiSquareQuantile, chiSquareSf, studentTwoSided } from "./distributions";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, leastSquaresInput } from "./covariance";
import { fail, unavailable } from "./problems";
import type { OlsFit } from "./fit";
import type { SeType } from "./options";
import { brentMax, brentRoot } from "./optimize";
import { stableSum } from "./transforms";
import { working } from "./scaling";

export const LAMBDA_MIN = -2;
export const LAMBDA_MAX = 2;
/** λ̂ is located to this width (well inside the 1e-6 the reported digits need). */
export const LAMBDA_TOL = 1e-9;

export interface BoxCox {
  lambda: number;
  lower: number | null;
  upper: number | null;
  pLog: number;
  pLevels: number;
  onBoundary: boolean;
  logLik: (lambda: number) => number;
}

/** The Box–Cox profile log-likelihood of a positive y on the design of `fit` (y in levels). */
export function boxCoxProfile(fit: OlsFit): (lambda: number) => number {
  const y = fit.data.y;
  const n = y.length;
  for (let i = 0; i < n; i++) {
    if (!(y[i] > 0)) {
      fail(`Box–Cox needs y above zero, and ${fit.data.yName} has zero or negative values (row ${fit.data.rowNumbers[i]}): use zeros= with the log model, or estimator=ppml, which keeps zeros`);
    }
  }
  // u = log(y/ẏ), centred on zero: the transform below never sees the units of y
  const u = Float64Array.from(y, Math.log);
  const logGm = stableSum(u) / n;
  for (let i = 0; i < n; i++) u[i] -= logGm;
  const qr = fit.qr;
  const X = fit.design;
  const yt = new Float64Array(n);
  const r = new Float64Array(n);
  const intercept = fit.intercept;
  return (lambda: number) => {
    // w(λ) = expm1(λu)/λ, which tends to u as λ → 0 (expm1 keeps the digits there)
    if (Math.abs(lambda) < 1e-12) yt.set(u);
    else for (let i = 0; i < n; i++) yt[i] = Math.expm1(lambda * u[i]) / lambda;
    if (!intercept) {
      const c = Math.abs(lambda) < 1e-12 ? logGm : -Math.expm1(-lambda * logGm) / lambda;
      if (!Number.isFinite(c)) unavailable("without an intercept Box–Cox depends on the units of y, and at these magnitudes its transform exceeds what double precision holds: rescale y (for example to thousands) or use intercept=true");
      for (let i = 0; i < n; i++) yt[i] += c;
    }
    const rss = qr.refined ? solvedRss(X, yt) : residualSS(X, qr, yt, r);
    return (-n / 2) * Math.log(rss);
  };
}

/** RSS of v on a design already known to have full rank (refactored for the refined case). */
function solvedRss(X: Float64Array[], v: Float64Array): number {
  const ls = leastSquares(X, v);
  return ls.qr ? ls.qr.rss : unavailable("the design is singular");
}

export function boxCox(levelFit: OlsFit, level: number): BoxCox {
  const ll = boxCoxProfile(levelFit);
  // A grid brackets the maximum (the profile can have a shallow shoulder), then Brent's search.
  const grid = 20;
  let best = LAMBDA_MIN;
  let bestLl = -Infinity;
  for (let i = 0; i <= grid; i++) {
    const l = LAMBDA_MIN + ((LAMBDA_MAX - LAMBDA_MIN) * i) / grid;
    const v = ll(l);
    if (v > bestLl) {
      bestLl = v;
      best = l;
    }
  }
  const step = (LAMBDA_MAX - LAMBDA_MIN) / grid;
  const lambda = brentMax(ll, Math.max(LAMBDA_MIN, best - step), Math.min(LAMBDA_MAX, best + step), LAMBDA_TOL);
  const top = ll(lambda);
  const cut = top - chiSquareQuantile(level, 1) / 2;
  const h = (l: number) => ll(l) - cut;
  const reach = 5; // search the interval's ends a little beyond [−2, 2]
  const lower = h(-reach) < 0 ? brentRoot(h, -reach, lambda, 1e-11) : null;
  const upper = h(reach) < 0 ? brentRoot(h, lambda, reach, 1e-11) : null;
  return {
    lambda,
    lower,
    upper,
    pLog: chiSquareSf(Math.max(0, 2 * (top - ll(0))), 1),
    pLevels: chiSquareSf(Math.max(0, 2 * (top - ll(1))), 1),
    onBoundary: lambda - LAMBDA_MIN < 1e-6 || LAMBDA_MAX - lambda < 1e-6,
    logLik: ll,
  };
}

export interface PeSide {
  t: number;
  p: number;
  /** Rows left out (level fitted value ≤ 0), for the level model's side. */
  leftOut: number;
}

/** t of the last coefficient of y on [X, z], with the given covariance type. */
function addedVariableT(X: Float64Array[], z0: Float64Array, y0: Float64Array, se: SeType, lags: number | null): { t: number; df: number } {
  // t does not depend on the units of y or z: extreme ones are scaled so that no square overflows
  const z = working(z0);
  const y = working(y0);
  const cols = [...X, z];
  const ls = leastSquares(cols, y, false);
  if (!ls.qr) return unavailable("the PE test's added variable is a combination of the regressors here, so the test is undefined");
  const q = ls.qr;
  const k = cols.length;
  let V: Float64Array;
  const input = leastSquaresInput(cols, q, new Int32Array(q.n).map((_, i) => i + 1));
  if (se === "classical") V = classicalCovariance(input);
  else if (se === "HAC") V = hacCovariance(input, lags ?? defaultLags(q.n));
  else if (se === "cluster" || se === "DK") return unavailable(`the PE test with se=${se} is not computed here: use se=HC1 or se=HC3 for FORMCHECK`);
  else V = hcCovariance(input, se, null).V;
  const j = k - 1;
  // V is the covariance of the unit-length columns' coefficients c_j = b_j·‖x_j‖ (covariance.ts)
  return { t: (q.coef[j] * q.scale[j]) / Math.sqrt(V[j * k + j]), df: q.n - k };
}

/** The PE test both ways, from the log-y and the level-y fits on the same x side. */
export function peTest(logFit: OlsFit, levelFit: OlsFit, se: SeType, lags: number | null): { levels: PeSide; logs: PeSide } {
  const n = levelFit.n;
  const fl = levelFit.fitted;
  const fg = logFit.fitted;
  // Level model + log(ŷ_levels) − ŷ_logs, on rows with ŷ_levels > 0.
  const keep: number[] = [];
  for (let i = 0; i < n; i++) if (fl[i] > 0) keep.push(i);
  const sub = (c: Float64Array) => Float64Array.from(keep, (i) => c[i]);
  const zLevels = Float64Array.from(keep, (i) => Math.log(fl[i]) - fg[i]);
  const a = addedVariableT(levelFit.design.map(sub), zLevels, sub(levelFit.data.y), se, lags);
  const zLogs = Float64Array.from(fl, (v, i) => v - Math.exp(fg[i]));
  const b = addedVariableT(logFit.design, zLogs, logFit.data.y, se, lags);
  return {
    levels: { t: a.t, p: studentTwoSided(a.t, a.df), leftOut: n - keep.length },
    logs: { t: b.t, p: studentTwoSided(b.t, b.df), leftOut: 0 },
  };
}

/** One line that reads the evidence at 5% without overclaiming. */
export function readEvidence(bc: BoxCox, pe: { levels: PeSide; logs: PeSide }): { verdict: string; why: string } {
  const known = [bc.lambda, bc.pLog, bc.pLevels, pe.logs.p, pe.levels.p].every(Number.isFinite);
  if (!known) {
    return { verdict: "no reading", why: "some of the Box–Cox or PE results cannot be computed for these data (see the rows above), so no choice between logs and levels is read from them" };
  }
  const logsOk = pe.logs.p >= 0.05 && bc.pLog >= 0.05;
  const levelsOk = pe.levels.p >= 0.05 && bc.pLevels >= 0.05;
  const fmt = (v: number) => (!Number.isFinite(v) ? "not computable here" : v < 0.001 ? "< 0.001" : v.toFixed(3));
  const why = `Box–Cox λ̂ = ${bc.lambda.toFixed(3)} (p of logs ${fmt(bc.pLog)}, of levels ${fmt(bc.pLevels)}); PE test p against logs ${fmt(pe.logs.p)}, against levels ${fmt(pe.levels.p)}`;
  if (logsOk && !levelsOk) return { verdict: "logs preferred", why };
  if (levelsOk && !logsOk) return { verdict: "levels preferred", why };
  if (!logsOk && !levelsOk) return { verdict: "both rejected", why: `${why}; consider another transform or other regressors` };
  return { verdict: "no clear choice", why: `${why}; the data do not separate the two forms` };
}
