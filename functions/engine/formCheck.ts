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
 *   come from LR = 2(ℓ(λ̂) − ℓ(λ₀)) on 1 df. Only y changes with λ, so the fit's factor is reused
 *   (boxCoxProfileOf): ℓ(λ) and its slope cost two passes over the rows (corrected semi-normal
 *   equations, Björck 1996), the 21-point grid that brackets λ̂ is screened (rough values with an error
 *   bound: its even points, then the odd neighbours of the best), λ̂ is the zero
 *   of the slope next to the grid's best point (Brent), and the interval's ends are found by Newton's
 *   method from the quadratic approximation, inside the grid's brackets: about a dozen λ in all.
 * - PE test (MacKinnon, White and Davidson 1983, J. Econometrics 21): log(ŷ_levels) − ŷ_logs added to
 *   the level model, and ŷ_levels − exp(ŷ_logs) added to the log model; a significant t rejects the
 *   model it was added to. Rows whose level fitted value is ≤ 0 cannot enter the log and are left
 *   out of that auxiliary regression (counted). t uses the chosen covariance (the default HC3), as
 *   lmtest::petest(…, vcov = …) does. The added column goes onto the fit's factor by partitioned
 *   regression (addedVariableOnFactor); see DEVELOPERS.md for when a new factorisation is made.
 */
import { mapped } from "./blocks";
import { conditionEstimate, SIDE_ROWS, leastSquares, projectOnFactor, RANK_TOL, roughRssOnFactor, rssOnFactor, upperInverse, type QrFit } from "./leastSquares";
import { factorReusable, fittedOf, REUSE_CONDITION } from "./specTests";
import { chiSquareQuantile, chiSquareSf, studentTwoSided } from "./distributions";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, leastSquaresInput, leveragesOf, LEVERAGE_TOL } from "./covariance";
import { fail, unavailable } from "./problems";
import type { OlsFit } from "./fit";
import type { SeType } from "./options";
import { brentMax, brentRoot } from "./optimize";
import { stableSum } from "./transforms";
import { scaled, working, workingUnit } from "./scaling";
import { kernel } from "./kernel";

export const LAMBDA_MIN = -2;
export const LAMBDA_MAX = 2;
/** λ̂ is located to this width (well inside the 1e-6 the reported digits need). */
export const LAMBDA_TOL = 1e-9;
/** The grid's spacing: screened λ that are multiples of it share one exp per row. */
const SCREEN_STEP = (LAMBDA_MAX - LAMBDA_MIN) / 20;

export interface BoxCox {
  lambda: number;
  lower: number | null;
  upper: number | null;
  pLog: number;
  pLevels: number;
  onBoundary: boolean;
  logLik: (lambda: number) => number;
}

/**
 * The Box–Cox profile: ℓ(λ) and its slope dℓ/dλ (each λ computed once, then kept), and a rough ℓ for
 * screening a grid in one pass, with a bound of its error.
 */
export interface BoxCoxProfile {
  ll: (lambda: number) => number;
  slope: (lambda: number) => number;
  /** Screens the given λ together in one pass (exact values where the factor is not reused). */
  screen: (lambdas: readonly number[]) => void;
  /** ℓ(λ) if computed, else the screened value; and the bound of its error (0 when computed). */
  rough: (lambda: number) => { ll: number; err: number };
  /** The λ computed so far, with their slopes. */
  computed: () => [number, number][];
  /**
   * Takes ℓ(λ) and its slope from the residuals of a fit of w(λ) on the same design already made
   * (r·unit are the residuals of w(λ)): one pass without the design.
   */
  seed: (lambda: number, r: Float64Array, unit: number) => void;
  /** Whether the fit's factor is reused (false: each λ is a new factorisation, for ill-conditioned designs). */
  reused: boolean;
}

/**
 * The profile of y with logs `logY` on the design X with the factor `qr` (the same x side in logs or
 * in levels: only y changes with λ). With a well-conditioned design every λ reuses the factor through
 * rssOnFactor (two passes over the rows), and a grid is screened in one pass (roughRssOnFactor); when
 * the fit was refined or its condition estimate reaches REUSE_CONDITION, each λ is factorised anew.
 * The slope is dℓ/dλ = −n·rᵀw′(λ)/RSS (r ⊥ X, so only the change of w moves the RSS), with
 * w′ = (u·e^{λu} − w)/λ, or its series u²/2 + λu³/3 + λ²u⁴/8 + λ³u⁵/30 where |λu| < 1e-4.
 */
export function boxCoxProfileOf(X: Float64Array[], qr: QrFit, intercept: boolean, logY: Float64Array): BoxCoxProfile {
  const n = logY.length;
  // u = log(y/ẏ), centred on zero: the transform below never sees the units of y
  const u = Float64Array.from(logY);
  const logGm = stableSum(u) / n;
  for (let i = 0; i < n; i++) u[i] -= logGm;
  /** The constant of the transform without an intercept, and its derivative in λ (zero with one). */
  const shift = (lambda: number): [number, number] => {
    if (intercept) return [0, 0];
    const g = logGm;
    if (Math.abs(lambda) < 1e-12) return [g, -(g * g) / 2];
    const c = -Math.expm1(-lambda * g) / lambda;
    if (!Number.isFinite(c)) unavailable("without an intercept Box–Cox depends on the units of y, and at these magnitudes its transform exceeds what double precision holds: rescale y (for example to thousands) or use intercept=true");
    return [c, (g * Math.exp(-lambda * g) - c) / lambda];
  };
  // w(λ) = expm1(λu)/λ, which tends to u as λ → 0 (expm1 keeps the digits there)
  const transform = (lambda: number, c: number, out: Float64Array, o: number, start: number, m: number) => {
    if (Math.abs(lambda) < 1e-12) for (let i = 0; i < m; i++) out[o + i] = u[start + i] + c;
    else kernel().expm1Scaled(u.subarray(start, start + m), lambda, c, out.subarray(o, o + m));
  };
  // e^{SCREEN_STEP·u}, the one exp per row every screened λ on the lattice is a power of (made once)
  let stepExp: Float64Array | null = null;
  const stepPowers = (): Float64Array => {
    if (!stepExp) {
      stepExp = new Float64Array(n);
      kernel().expScaled(u, SCREEN_STEP, stepExp);
    }
    return stepExp;
  };
  /**
   * ‖r·unit‖² and (r·unit)ᵀw′(λ), block by block in the sides workspace: w(λ) into V (from `w` when
   * it is already made, else transformed), its derivative into D by the kernel's slope, then V ← r·unit.
   */
  const residualSums = (l: number, c: [number, number], w: Float64Array | null, r: Float64Array, unit: number): { rss: number; cross: number } => {
    const ws = kernel().sidesWorkspace(1, 1, SIDE_ROWS);
    const { V } = ws;
    let rss = 0;
    let cross = 0;
    for (let start = 0; start < n; start += SIDE_ROWS) {
      const m = Math.min(SIDE_ROWS, n - start);
      if (w) V.set(w.subarray(start, start + m));
      else transform(l, c[0], V, 0, start, m);
      ws.aux(u, null, start, m);
      ws.slope(0, m, l, c[0], c[1]);
      for (let i = 0; i < m; i++) V[i] = r[start + i] * unit;
      rss += ws.selfDot(0, m);
      cross += ws.crossDot(0, m);
    }
    return { rss, cross };
  };
  const reused = !qr.refined && qr.condition < REUSE_CONDITION;
  const known = new Map<number, { ll: number; slope: number }>();
  const screened = new Map<number, { ll: number; err: number }>();
  const yt = new Float64Array(n);
  const value = (rss: number) => (-n / 2) * Math.log(rss);
  const compute = (l: number): { ll: number; slope: number } => {
    let got = known.get(l);
    if (got) return got;
    const c = shift(l);
    if (!reused) {
      transform(l, c[0], yt, 0, 0, n);
      const ls = leastSquares(X, yt);
      if (!ls.qr) return unavailable("the design is singular");
      const { cross } = residualSums(l, c, yt, ls.qr.resid, 1);
      got = { ll: value(ls.qr.rss), slope: (-n * cross) / ls.qr.rss };
    } else {
      // the transform is computed once, in the first pass, and kept for the second
      const out = rssOnFactor(X, qr, 1, (start, m, V, pass, D, ws) => {
        if (pass === 0) transform(l, c[0], yt, start, start, m);
        V.set(yt.subarray(start, start + m));
        if (D) {
          ws.aux(u, null, start, m);
          ws.slope(0, m, l, c[0], c[1]);
        }
      }, true);
      got = { ll: value(out.rss[0]), slope: (-n * (out.cross as Float64Array)[0]) / out.rss[0] };
    }
    known.set(l, got);
    return got;
  };
  const screen = (lambdas: readonly number[]): void => {
    const todo = [...new Set(lambdas.filter((l) => !known.has(l) && !screened.has(l)))];
    if (todo.length === 0) return;
    if (!reused) {
      todo.forEach(compute);
      return;
    }
    const c = todo.map((l) => shift(l)[0]);
    // λ on the lattice of SCREEN_STEP (the grid and ±5): e^{λu} = a^m with a = e^{u·step}, one exp per
    // row for all of them; a^m carries (|m| + 1)ε of rounding, taken into the error bound below
    const L = todo.length;
    const mult = todo.map((l) => Math.round(l / SCREEN_STEP));
    // powers up to 10 (the grid); λ off the lattice or beyond it (±5) take their own expm1
    const lattice = mult.map((m, i) => Math.abs(m) <= 10 && Math.abs(m * SCREEN_STEP - todo[i]) <= 1e-12 * (1 + Math.abs(todo[i])));
    const onLattice = lattice.some((x) => x);
    const inv = todo.map((l) => 1 / l);
    const E = onLattice ? stepPowers() : null;
    const out = roughRssOnFactor(X, qr, L, (start, m, V, ws) => {
      // λ off the lattice: their own transform, as computed λ have it
      for (let l = 0; l < L; l++) if (!lattice[l]) transform(todo[l], c[l], V, l * SIDE_ROWS, start, m);
      if (!E) return;
      ws.aux(u, E, start, m);
      for (let l = 0; l < L; l++) if (lattice[l]) ws.lattice(l, m, mult[l], inv[l], c[l]);
    });
    todo.forEach((l, i) => {
      let bound = out.bound[i];
      if (lattice[i] && mult[i] !== 0) {
        // ‖δw‖ ≤ (|m| + 2)ε(√n + |λ|·‖w‖)/|λ|; the RSS moves by at most 2‖δw‖√RSS + ‖δw‖²
        const dw = ((Math.abs(mult[i]) + 2) * Number.EPSILON * (Math.sqrt(n) + Math.abs(l) * Math.sqrt(out.vv[i]))) / Math.abs(l);
        const rss = out.rss[i];
        bound += rss > 0 ? (2 * dw) / Math.sqrt(rss) + (dw * dw) / rss : Infinity;
      }
      screened.set(l, { ll: value(out.rss[i]), err: (n / 2) * bound });
    });
  };
  const rough = (l: number): { ll: number; err: number } => {
    const k = known.get(l);
    if (k) return { ll: k.ll, err: 0 };
    return screened.get(l) ?? { ll: compute(l).ll, err: 0 };
  };
  const computed = (): [number, number][] => [...known.entries()].map(([l, v]) => [l, v.slope]);
  const seed = (l: number, r: Float64Array, unit: number): void => {
    if (known.has(l)) return;
    const c = shift(l);
    const { rss, cross } = residualSums(l, c, null, r, unit);
    known.set(l, { ll: value(rss), slope: (-n * cross) / rss });
  };
  return { ll: (l) => compute(l).ll, slope: (l) => compute(l).slope, screen, rough, computed, seed, reused };
}

/**
 * A root of f in [lo, hi] (f below zero at lo when negAtLo, else above) by Newton's steps from
 * `start`, each kept inside the shrinking bracket and replaced by bisection when it would leave it;
 * returns the first step that moves less than tol (its error is then of the order of tol²).
 */
function bracketedNewton(f: (x: number) => number, df: (x: number) => number, lo: number, hi: number, negAtLo: boolean, start: number, tol: number): number {
  let x = start > lo && start < hi ? start : 0.5 * (lo + hi);
  let fx = f(x);
  for (let iter = 0; iter < 100; iter++) {
    if (fx === 0) return x;
    if (fx < 0 === negAtLo) lo = x;
    else hi = x;
    let next = x - fx / df(x);
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    if (Math.abs(next - x) <= tol || hi - lo <= tol) return next;
    x = next;
    fx = f(x);
  }
  return x;
}

/** The Box–Cox profile log-likelihood of a positive y on the design of `fit` (y in levels). */
export function boxCoxProfile(fit: OlsFit): (lambda: number) => number {
  return levelProfile(fit).ll;
}

function levelProfile(fit: OlsFit): BoxCoxProfile {
  const y = fit.data.y;
  const n = y.length;
  for (let i = 0; i < n; i++) {
    if (!(y[i] > 0)) {
      fail(`Box–Cox needs y above zero, and ${fit.data.yName} has zero or negative values (row ${fit.data.rowNumbers[i]}): use zeros= with the log model, or estimator=ppml, which keeps zeros`);
    }
  }
  const logY = new Float64Array(n);
  for (let i = 0; i < n; i++) logY[i] = Math.log(y[i]);
  return boxCoxProfileOf(fit.design, fit.qr, fit.intercept, logY);
}

/** Box–Cox on the fit of y in levels. */
export function boxCox(levelFit: OlsFit, level: number): BoxCox {
  return boxCoxSearch(levelProfile(levelFit), level);
}

/**
 * Box–Cox from the fit of log y on the same x side: the profile needs log y and the design's factor
 * only, so the fit in levels is not needed for it.
 */
export function boxCoxOnLogs(logFit: OlsFit, level: number, levelFit: LevelModel | null = null): BoxCox {
  const p = boxCoxProfileOf(logFit.design, logFit.qr, logFit.intercept, logFit.data.y);
  if (logFit.intercept) {
    // with an intercept w(0) = log y − log ẏ and w(1) = y/ẏ − 1 have the residuals of the two fits
    // (the second divided by ẏ): ℓ(0) and ℓ(1) come from them without a pass over the design
    p.seed(0, logFit.scaledResid, logFit.yUnit);
    if (levelFit && levelFit.n === logFit.n) {
      const logGm = stableSum(logFit.data.y) / logFit.n;
      p.seed(1, levelFit.scaledResid, levelFit.yUnit * Math.exp(-logGm));
    }
  }
  return boxCoxSearch(p, level);
}

function boxCoxSearch(p: BoxCoxProfile, level: number): BoxCox {
  const ll = p.ll;
  // A grid brackets the maximum (the profile can have a shallow shoulder). The grid and the ends of
  // the interval's search are screened (one pass for many λ); where the screened values cannot decide
  // a comparison (within their error bound), the λ involved are computed.
  const grid = Math.round((LAMBDA_MAX - LAMBDA_MIN) / SCREEN_STEP);
  const reach = 5; // search the interval's ends a little beyond [−2, 2]
  const points: number[] = [];
  for (let i = 0; i <= grid; i++) points.push(LAMBDA_MIN + ((LAMBDA_MAX - LAMBDA_MIN) * i) / grid);
  // The grid's even points first; its best point lies next to the best of those (the best even point
  // is at least as high as its even neighbours), so only that point's odd neighbours are added.
  const seen = new Set<number>();
  const look = (list: number[]) => {
    p.screen(list.map((i) => points[i]));
    list.forEach((i) => seen.add(i));
  };
  const bestOf = (list: number[]) => list.reduce((m, i) => (p.rough(points[i]).ll > p.rough(points[m]).ll ? i : m), list[0]);
  const even = points.map((_, i) => i).filter((i) => i % 2 === 0);
  p.screen([-reach, reach]);
  look(even);
  const middle = bestOf(even);
  look([middle - 1, middle + 1].filter((i) => i >= 0 && i <= grid));
  let best = 0;
  for (;;) {
    const known = [...seen].sort((x, y) => x - y);
    best = bestOf(known);
    const top = p.rough(points[best]);
    const unsure = known.filter((i) => {
      const r = p.rough(points[i]);
      return i !== best && r.err + top.err > 0 && r.ll + r.err >= top.ll - top.err;
    });
    if (unsure.length === 0) break;
    [best, ...unsure].forEach((i) => ll(points[i]));
    // the best may have moved to an even point whose odd neighbours were not looked at
    const more = [best - 1, best + 1].filter((i) => i >= 0 && i <= grid && !seen.has(i));
    if (more.length > 0) look(more);
  }
  // λ̂: the zero of the slope between the grid's neighbours of the best point (Brent's method on the
  // slope), or Brent's search on ℓ itself where the slope does not change sign there (an edge).
  const a = points[Math.max(0, best - 1)];
  const b = points[Math.min(grid, best + 1)];
  let lambda = p.slope(a) > 0 && p.slope(b) < 0 ? brentRoot(p.slope, a, b, LAMBDA_TOL) : NaN;
  if (Number.isNaN(lambda) || !(ll(lambda) >= ll(points[best]))) lambda = brentMax(ll, a, b, LAMBDA_TOL);
  const top = ll(lambda);
  const drop = chiSquareQuantile(level, 1) / 2;
  const cut = top - drop;
  const h = (l: number) => ll(l) - cut;
  const belowCut = (l: number): boolean => {
    const r = p.rough(l);
    return Math.abs(r.ll - cut) > r.err ? r.ll < cut : h(l) < 0;
  };
  // The curvature at λ̂ from the computed λ nearest to it (the search's last steps), for the first
  // guess of each end: λ̂ ∓ √(2·drop/curvature), the ends of the quadratic approximation.
  let curvature = NaN;
  let nearest = Infinity;
  for (const [l, s] of p.computed()) {
    const d = Math.abs(l - lambda);
    if (d > 1e-6 * (1 + Math.abs(lambda)) && d < nearest) {
      nearest = d;
      curvature = -s / (l - lambda);
    }
  }
  const guess = (side: -1 | 1) => lambda + side * Math.sqrt((2 * drop) / curvature);
  // Each end is searched between λ̂ and the nearest λ of the grid (or ±reach) already below the cut.
  const end = (side: -1 | 1): number | null => {
    if (!belowCut(side * reach)) return null;
    let from = side * reach;
    const order = [...seen].sort((x, y) => (side < 0 ? x - y : y - x));
    for (const i of order) {
      const g = points[i];
      if ((side < 0 ? g < lambda : g > lambda) && belowCut(g)) from = g;
    }
    return side < 0
      ? bracketedNewton(h, p.slope, from, lambda, true, guess(-1), 1e-11)
      : bracketedNewton(h, p.slope, lambda, from, false, guess(1), 1e-11);
  };
  const lower = end(-1);
  const upper = end(1);
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

/**
 * The level model as FORMCHECK reads it: a fit of its own (OlsFit has these members), or the same rows
 * and design solved on the log fit's factor (levelOnLogFactor).
 */
export interface LevelModel {
  n: number;
  k: number;
  design: Float64Array[];
  /** Its factor (R, scale, condition) with its coefficients, residuals and RSS in units of yUnit. */
  qr: QrFit;
  plain: boolean;
  yUnit: number;
  data: { y: Float64Array };
  scaledY: Float64Array;
  scaledResid: Float64Array;
  fitted: Float64Array;
}

/**
 * y in levels on the log fit's rows and design through the log fit's factor (projectOnFactor): the
 * residuals and fitted values of the level model without a new factorisation. Null when the factor is
 * not reused (factorReusable) or the level fit is exact (RSS at most exactFit·Σy², the rule of
 * OlsFit.isExact); then the level model is fitted anew (and says what is wrong).
 */
export function levelOnLogFactor(logFit: OlsFit, exactFit: number): LevelModel | null {
  if (!factorReusable(logFit)) return null;
  const n = logFit.n;
  const ly = logFit.data.y;
  const y = new Float64Array(n);
  kernel().expScaled(ly, 1, y);
  const yUnit = workingUnit(y);
  const scaledY = yUnit === 1 ? y : scaled(y, yUnit);
  const r = new Float64Array(n);
  const { c, rss } = projectOnFactor(logFit.design, logFit.qr, scaledY, r);
  if (!(rss > exactFit * kernel().sumSquares(scaledY))) return null;
  const fitted = new Float64Array(n);
  for (let i = 0; i < n; i++) fitted[i] = y[i] - r[i] * yUnit;
  const qr: QrFit = { ...logFit.qr, coef: mapped(c, (v, j) => v / logFit.qr.scale[j]), resid: r, rss, refined: false };
  return { n, k: logFit.k, design: logFit.design, qr, plain: true, yUnit, data: { y }, scaledY, scaledResid: r, fitted };
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

/**
 * The factor of the design's rows `keep` from the fit's factor, without a new factorisation: the
 * Cholesky factor of RᵀR − Σ x_s,i x_s,iᵀ over the rows left out (same column scaling). As a
 * preconditioner of the corrected semi-normal equations it serves as R does: both satisfy
 * RᵀR = X_sᵀX_s up to rounding of the order of ε‖X_s‖². Null when fewer than half the rows are kept or
 * they leave the design ill-conditioned (or singular): then they are factorised anew.
 */
function keptRowsFactor(X: Float64Array[], qr: QrFit, keep: Int32Array): QrFit | null {
  // RᵀR − X_DᵀX_D cancels when most rows go: then the rows kept are factorised anew
  if (keep.length < qr.n / 2) return null;
  const k = qr.k;
  const R = qr.R;
  const G = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    for (let j = i; j < k; j++) {
      let s = 0;
      for (let m = 0; m <= i; m++) s += R[m * k + i] * R[m * k + j];
      G[i * k + j] = s;
    }
  }
  const row = new Float64Array(k);
  let next = 0;
  for (let r = 0; r < qr.n; r++) {
    if (next < keep.length && keep[next] === r) {
      next++;
      continue;
    }
    for (let j = 0; j < k; j++) row[j] = X[j][r] / qr.scale[j];
    for (let i = 0; i < k; i++) for (let j = i; j < k; j++) G[i * k + j] -= row[i] * row[j];
  }
  const U = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    let d = G[j * k + j];
    for (let m = 0; m < j; m++) d -= U[m * k + j] * U[m * k + j];
    if (!(d > 0)) return null;
    const ujj = Math.sqrt(d);
    U[j * k + j] = ujj;
    for (let c = j + 1; c < k; c++) {
      let v = G[j * k + c];
      for (let m = 0; m < j; m++) v -= U[m * k + j] * U[m * k + c];
      U[j * k + c] = v / ujj;
    }
  }
  const Rinv = upperInverse(U, k);
  const condition = conditionEstimate(U, Rinv, k); // κ₁, as leastSquares estimates it
  if (!(condition < REUSE_CONDITION)) return null;
  const n = keep.length;
  return { n, k, R: U, Rinv, scale: qr.scale, coef: new Float64Array(k), resid: new Float64Array(0), rss: NaN, condition, refined: false };
}

/**
 * t of z added to the regression of y on X (e: y's residuals on X), through X's factor (partitioned
 * regression, Frisch–Waugh–Lovell): z̃ = z on X's residual (projectOnFactor), b = z̃ᵀe/z̃ᵀz̃, the full
 * model's residuals e − b·z̃ and leverages h_i + z̃_i²/z̃ᵀz̃, and the variance of b from the last row of
 * (XᵀX)⁻¹Xᵀ, which is z̃ᵀ/z̃ᵀz̃: s²/z̃ᵀz̃ (classical), Σ z̃_i²ω_i/(z̃ᵀz̃)² (HC0–HC3). The same numbers as
 * a new factorisation of [X, z] (test/engine/reuse.test.ts). Null where that factorisation is needed:
 * se=HAC, z (nearly) a combination of X, or a row of leverage 1 (which it then names).
 */
function addedVariableOnFactor(X: Float64Array[], qr: QrFit, e: Float64Array, z0: Float64Array, se: SeType, leverages: () => Float64Array): { t: number; df: number } | null {
  if (!(se === "classical" || se === "HC0" || se === "HC1" || se === "HC2" || se === "HC3")) return null;
  const z = working(z0);
  const n = qr.n;
  const df = n - qr.k - 1;
  if (df <= 0) return null;
  const zt = new Float64Array(n);
  const zz = projectOnFactor(X, qr, z, zt).rss;
  const z2 = kernel().sumSquares(z);
  if (!(zz > 1e4 * RANK_TOL * RANK_TOL * z2)) return null;
  let ze = 0;
  for (let i = 0; i < n; i++) ze += zt[i] * e[i];
  const b = ze / zz;
  let v: number;
  if (se === "classical") {
    let ss = 0;
    for (let i = 0; i < n; i++) {
      const u = e[i] - b * zt[i];
      ss += u * u;
    }
    v = ss / df / zz;
  } else {
    // one loop per kind, so that the loop holds no test of the kind
    let s = 0;
    if (se === "HC0" || se === "HC1") {
      const f = se === "HC1" ? n / df : 1; // u²·1 is u² exactly
      for (let i = 0; i < n; i++) {
        const u = e[i] - b * zt[i];
        s += zt[i] * zt[i] * (u * u * f);
      }
    } else {
      const h = leverages();
      const hc3 = se === "HC3";
      for (let i = 0; i < n; i++) {
        const u = e[i] - b * zt[i];
        const hi = h[i] + (zt[i] * zt[i]) / zz;
        if (hi >= 1 - LEVERAGE_TOL) return null;
        const w = u * u;
        s += zt[i] * zt[i] * (hc3 ? w / ((1 - hi) * (1 - hi)) : w / (1 - hi));
      }
    }
    v = s / (zz * zz);
  }
  return { t: b / Math.sqrt(v), df };
}

/** addedVariableOnFactor on a plain fit's own design and residuals (the fit's factor reused), or null. */
function addedVariableOnFit(fit: LevelModel, z: Float64Array, se: SeType, leverages: () => Float64Array): { t: number; df: number } | null {
  // e: the fit's residuals in units of yUnit (the t ratio does not depend on y's units)
  return factorReusable(fit) ? addedVariableOnFactor(fit.design, fit.qr, fit.scaledResid, z, se, leverages) : null;
}

/** The PE test both ways, from the log-y and the level-y fits on the same x side. */
export function peTest(logFit: OlsFit, levelFit: LevelModel, se: SeType, lags: number | null): { levels: PeSide; logs: PeSide } {
  const n = levelFit.n;
  const fl = levelFit.fitted;
  const fg = fittedOf(logFit);
  // Both fits have the same design (and so the same leverages); computed once, when needed.
  const leverages = () => logFit.memo("designLeverages", () => leveragesOf(logFit.design, logFit.qr));
  // Level model + log(ŷ_levels) − ŷ_logs, on rows with ŷ_levels > 0.
  let kept = 0;
  for (let i = 0; i < n; i++) if (fl[i] > 0) kept++;
  let a: { t: number; df: number } | null = null;
  const k = kernel();
  if (kept === n) {
    const zLevels = fl.slice();
    k.logInPlace(zLevels);
    for (let i = 0; i < n; i++) zLevels[i] -= fg[i];
    a = addedVariableOnFit(levelFit, zLevels, se, leverages) ?? addedVariableT(levelFit.design, zLevels, levelFit.data.y, se, lags);
  } else {
    const m = kept;
    const keep = new Int32Array(m);
    for (let i = 0, j = 0; i < n; i++) if (fl[i] > 0) keep[j++] = i;
    const sub = (c: Float64Array) => {
      const out = new Float64Array(m);
      for (let i = 0; i < m; i++) out[i] = c[keep[i]];
      return out;
    };
    const zLevels = sub(fl);
    k.logInPlace(zLevels);
    for (let i = 0; i < m; i++) zLevels[i] -= fg[keep[i]];
    const Xk = levelFit.design.map(sub);
    // the level model on the rows kept: the factor of those rows from the fit's, when it serves
    const qk = factorReusable(levelFit) ? keptRowsFactor(levelFit.design, levelFit.qr, keep) : null;
    if (qk) {
      const ek = new Float64Array(m);
      projectOnFactor(Xk, qk, working(sub(levelFit.scaledY)), ek);
      a = addedVariableOnFactor(Xk, qk, ek, zLevels, se, () => leveragesOf(Xk, qk));
    }
    a = a ?? addedVariableT(Xk, zLevels, sub(levelFit.data.y), se, lags);
  }
  const zLogs = new Float64Array(n);
  k.expScaled(fg, 1, zLogs);
  for (let i = 0; i < n; i++) zLogs[i] = fl[i] - zLogs[i];
  const b = addedVariableOnFit(logFit, zLogs, se, leverages) ?? addedVariableT(logFit.design, zLogs, logFit.data.y, se, lags);
  return {
    levels: { t: a.t, p: studentTwoSided(a.t, a.df), leftOut: n - kept },
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
