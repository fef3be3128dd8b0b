/**
 * Distributions: tail probabilities and quantiles of the normal, Student t, F and chi-square laws.
 *
 * Every p-value in Elasticell comes from here. Upper tails are computed directly from the upper
 * regularized incomplete gamma and beta functions (never as 1 − cdf), so a p-value of 1e-200 keeps
 * its digits. The special functions come from stdlib (@stdlib/math-base-special-gammainc and
 * -betainc, ports of the Boost.Math algorithms: continued fractions and series chosen by region, with
 * stated accuracy near machine precision). Quantiles start from stdlib's distribution packages and
 * are then refined by Newton's method on the log of our own tail probability (in log x, kept inside
 * a bracket), because those packages alone lose digits far out and for large df (stdlib's
 * chi-square quantile is 5e-4 off at 10,000 df; its normal quantile is −∞ below p ≈ 1e-16): a
 * quantile is then as accurate as the tail function it inverts (near p = ½ the t and normal
 * quantiles invert the central probability P(0 < T < t) instead, whose tiny values keep their
 * digits). Two regions of stdlib's incomplete gamma and beta are routed around (regularizedGamma,
 * fisherTailsWholeA, with the numbers that made it necessary). Measured accuracy against R 4.x
 * (pt, pf, pchisq, pnorm, qt, qnorm, qchisq, qf) is in test/engine/distributions.test.ts; the
 * reasons for the choice are in DEVELOPERS.md.
 *
 * Cost: O(1) per call (iterations of the continued fractions grow slowly with the arguments).
 * Example: studentTwoSided(2.2281388519862744, 10) ≈ 0.05.
 */
import gammainc from "@stdlib/math-base-special-gammainc";
import betainc from "@stdlib/math-base-special-betainc";
import erfc from "@stdlib/math-base-special-erfc";
import tQuantileLib from "@stdlib/stats-base-dists-t-quantile";
import normalQuantileLib from "@stdlib/stats-base-dists-normal-quantile";
import chiSquareQuantileLib from "@stdlib/stats-base-dists-chisquare-quantile";
import fQuantileLib from "@stdlib/stats-base-dists-f-quantile";

// Temme's uniform asymptotic expansion of the incomplete gamma for a large shape, from the same
// stdlib package (0.3.1, pinned): a file of its lib/ folder, because the package exports only the
// dispatcher, which uses the expansion in a narrower window than its accuracy allows (see
// regularizedGamma). Returns Q(a, x) for x ≥ a and P(a, x) for x < a.
// eslint-disable-next-line @typescript-eslint/no-var-requires
const igammaTemmeLarge = require("@stdlib/math-base-special-gammainc/lib/igamma_temme_large.js") as (
  a: number,
  x: number,
) => number;

const SQRT1_2 = Math.SQRT1_2;
const LN_SQRT_2PI = 0.5 * Math.log(2 * Math.PI);

/**
 * log Γ(x) for x > 0: Stirling's series (terms to 1/(1188 x⁹), from the Bernoulli numbers) after
 * shifting x up to at least 15 with Γ(x) = Γ(x + 1)/x; absolute error below about 1e-15 there.
 * Used only for the Newton slopes of the quantile refinement, where it affects the speed of
 * convergence and not the answer.
 */
function logGamma(x: number): number {
  let z = x;
  let logProduct = 0;
  while (z < 15) {
    logProduct += Math.log(z);
    z += 1;
  }
  const w = 1 / (z * z);
  const series = (1 / 12 + w * (-1 / 360 + w * (1 / 1260 + w * (-1 / 1680 + w / 1188)))) / z;
  return (z - 0.5) * Math.log(z) - z + LN_SQRT_2PI + series - logProduct;
}

/**
 * The x > 0 at which a monotone tail probability equals target (0 < target ≤ ½): Newton's method on
 * log tail(x) − log target with log x as the variable (tails far out behave like powers or
 * exponentials of x, where this step is nearly exact), the step applied as x·e^Δ so that x keeps
 * its full precision, and a bracket (geometric bisection) whenever a step would leave it.
 * logDensity enters only the step size. `increasing`: tail grows with x (a lower tail).
 * Returns the iterate whose tail is closest to target in relative terms (∞ or 0 when the root lies
 * beyond the doubles).
 */
function solveTail(
  target: number,
  tail: (x: number) => number,
  logDensity: (x: number) => number,
  increasing: boolean,
  start: number,
): number {
  const logTarget = Math.log(target);
  let x = Math.min(Math.max(start, Number.MIN_VALUE), Number.MAX_VALUE);
  let lo = 0;
  let hi = Infinity;
  let best = x;
  let bestGap = Infinity;
  for (let iteration = 0; iteration < 200; iteration++) {
    const t = tail(x);
    const gap = Math.log(t) - logTarget;
    if (Math.abs(gap) < bestGap) {
      best = x;
      bestGap = Math.abs(gap);
    }
    if (gap === 0 || Number.isNaN(gap)) break;
    const rising = increasing ? gap : -gap; // increases with x
    if (rising < 0) lo = Math.max(lo, x);
    else hi = Math.min(hi, x);
    let next = NaN;
    if (Number.isFinite(gap) && t > 0) {
      // d(rising)/d(log x) = x·density(x)/tail(x)
      const slope = Math.exp(Math.log(x) + logDensity(x) - Math.log(t));
      const step = Math.min(Math.max(-rising / slope, -50), 50);
      next = Math.min(x * Math.exp(step), Number.MAX_VALUE);
    }
    if (!(next > lo && next < hi)) {
      if (hi === Infinity) next = Math.min(x * 1e10, Number.MAX_VALUE);
      else if (lo === 0) next = Math.max(x * 1e-10, Number.MIN_VALUE);
      else next = Math.sqrt(lo) * Math.sqrt(hi);
    }
    if (Math.abs(next - x) <= 2 * Number.EPSILON * x) {
      const lastGap = Math.abs(Math.log(tail(next)) - logTarget);
      if (lastGap < bestGap) best = next;
      break;
    }
    x = next;
  }
  // a root beyond the largest double, or below the smallest, is reported as ∞ or 0
  if (best >= Number.MAX_VALUE) return Infinity;
  if (best <= Number.MIN_VALUE) return 0;
  return best;
}

/** A usable positive starting value, or the fallback. */
function startingValue(candidate: number, fallback: () => number): number {
  return Number.isFinite(candidate) && candidate > 0 ? candidate : fallback();
}

/**
 * P(|T| > a) for a ≥ 0 on df degrees of freedom: I_{t²/(df+t²)}(½, df/2) taken as an upper tail
 * while t² < df, else I_{df/(df+t²)}(df/2, ½) with df/(df + t²) formed as q/(1 + q), q = df/a/a, so
 * neither cancels nor overflows. Where q falls below the normal range (|t| > 1e140·√df, which
 * matters only for df below about 2), the leading term x^(df/2)/((df/2)·B(df/2, ½)) is exact to
 * double precision (the next term is smaller by a factor x < 1e-280) and is taken in logs.
 */
function studentTwoTails(a: number, df: number): number {
  const t2 = a * a;
  if (t2 < df) return betainc(t2 / (df + t2), 0.5, df / 2, true, true);
  const q = df / a / a;
  if (q > 1e-280) return betainc(q / (1 + q), df / 2, 0.5, true, false);
  const h = df / 2;
  const logX = Math.log(df) - 2 * Math.log(a);
  const logBeta = logGamma(h) + 0.5 * Math.log(Math.PI) - logGamma(h + 0.5);
  return Math.exp(h * logX - Math.log(h) - logBeta);
}

/** P(Z ≤ z) for a standard normal Z. */
export function normalCdf(z: number): number {
  return 0.5 * erfc(-z * SQRT1_2);
}

/** P(Z > z) for a standard normal Z (survival function). */
export function normalSf(z: number): number {
  return 0.5 * erfc(z * SQRT1_2);
}

/** Two-sided normal p-value P(|Z| > |z|). */
export function normalTwoSided(z: number): number {
  return erfc(Math.abs(z) * SQRT1_2);
}

/** The z with P(Z ≤ z) = p. */
export function normalQuantile(p: number): number {
  if (Number.isNaN(p) || p < 0 || p > 1) return NaN;
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p === 0.5) return 0;
  const small = p < 0.5 ? p : 1 - p; // 1 − p is exact for p ≥ ½
  const start = startingValue(-normalQuantileLib(small, 0, 1), () => Math.sqrt(-2 * Math.log(small)));
  const logDensity = (v: number) => -0.5 * v * v - LN_SQRT_2PI;
  const centre = Math.abs(p - 0.5); // exact for ¼ ≤ p ≤ ¾
  // near the centre, solve P(0 < Z < z) = |p − ½| = ½·P(χ²₁ ≤ z²) (keeps tiny z exact)
  const z = centre < 0.25
    ? solveTail(centre, (v) => 0.5 * gammainc((v * v) / 2, 0.5, true, false), logDensity, true, start)
    : solveTail(small, normalSf, logDensity, false, start);
  return p < 0.5 ? -z : z;
}

/**
 * P(T > t) for Student's t with df degrees of freedom. For t ≥ 0 this is
 * ½·I_{t²/(df+t²)}(½, df/2) taken as an upper incomplete beta, so both the argument and its
 * complement df/(df+t²) are formed without cancellation.
 */
export function studentSf(t: number, df: number): number {
  if (Number.isNaN(t) || !(df > 0)) return NaN;
  if (t === Infinity) return 0;
  if (t === -Infinity) return 1;
  const half = 0.5 * studentTwoTails(Math.abs(t), df);
  return t >= 0 ? half : 1 - half;
}

/** P(T ≤ t) for Student's t with df degrees of freedom. */
export function studentCdf(t: number, df: number): number {
  return studentSf(-t, df);
}

/** Two-sided p-value P(|T| > |t|). */
export function studentTwoSided(t: number, df: number): number {
  const a = Math.abs(t);
  if (Number.isNaN(a) || !(df > 0)) return NaN;
  if (a === Infinity) return 0;
  return studentTwoTails(a, df);
}

/** The t with P(T ≤ t) = p on df degrees of freedom. */
export function studentQuantile(p: number, df: number): number {
  // Intervals ask for the same few quantiles again and again (every term, every PREDICT row, every
  // BYGROUP group with the same df), and each costs some 100 µs of refinement: remember them.
  const key = `${p}|${df}`;
  const hit = QUANTILE_MEMO.get(key);
  if (hit !== undefined) return hit;
  const q = studentQuantileUncached(p, df);
  if (QUANTILE_MEMO.size >= QUANTILE_MEMO_SIZE) QUANTILE_MEMO.delete(QUANTILE_MEMO.keys().next().value as string);
  QUANTILE_MEMO.set(key, q);
  return q;
}

const QUANTILE_MEMO = new Map<string, number>();
const QUANTILE_MEMO_SIZE = 512;

function studentQuantileUncached(p: number, df: number): number {
  if (Number.isNaN(p) || Number.isNaN(df) || !(df > 0) || p < 0 || p > 1) return NaN;
  if (df === Infinity) return normalQuantile(p);
  if (p === 0) return -Infinity;
  if (p === 1) return Infinity;
  if (p === 0.5) return 0;
  const small = p < 0.5 ? p : 1 - p; // 1 − p is exact for p ≥ ½
  // far out P(T > t) behaves like a power t^(−df); that gives the fallback start
  const start = startingValue(-tQuantileLib(small, df), () => Math.min(Math.pow(small, -1 / df), 1e300));
  const logConstant = logGamma((df + 1) / 2) - logGamma(df / 2) - 0.5 * Math.log(df * Math.PI);
  const logDensity = (v: number) =>
    logConstant - ((df + 1) / 2) * (v > 1e150 ? 2 * Math.log(v) - Math.log(df) : Math.log1p((v * v) / df));
  const centre = Math.abs(p - 0.5); // exact for ¼ ≤ p ≤ ¾
  // near the centre, solve P(0 < T < t) = |p − ½| = ½·I_{t²/(df+t²)}(½, df/2) (keeps tiny t exact)
  const t = centre < 0.25
    ? solveTail(centre, (v) => 0.5 * betainc((v * v) / (df + v * v), 0.5, df / 2, true, false), logDensity, true, start)
    : solveTail(small, (v) => studentSf(v, df), logDensity, false, start);
  return p < 0.5 ? -t : t;
}

/**
 * The regularized incomplete gamma Q(s, x) (upper) or P(s, x) (lower), from stdlib's gammainc with
 * two corrections, each measured against R's pgamma (test/engine/distributions.test.ts):
 *
 * 1. Large shapes near the centre, s ≥ 500 and |x − s| ≤ 0.4·s: Temme's expansion directly
 *    (within 3e-13 of R there). stdlib's dispatcher uses it only while (x − s)²/s² < 20/s, and its
 *    series and continued fractions just outside that window lose digits as s grows: 1.4e-11 at
 *    chi-square x = 220,000 on 200,000 df, 5e-11 at s = 1e6, x = 0.99e6.
 * 2. stdlib 0.3.1 has a slip in the asymptotic series it uses when x > 1000 and (s < x or
 *    |s − 50| < x): the falling factorial starts at s instead of s − 1 (Boost's
 *    incomplete_tgamma_large_x_series, which it ports, starts at a − 1), so what it returns there
 *    is (s/x)·Q(s + 1, x), 2.5% off at s = x = 1001. Called at s − 1, the same code returns
 *    ((s − 1)/x)·Q(s, x), which is undone here. In that region P(s, x) ≥ 0.05 (s < x + 50,
 *    x > 1000), so P = 1 − Q keeps its digits; with s ≤ 1 its Q is below e^(−1000) and underflows
 *    either way. A later stdlib with the slip fixed would fail the large-df chi-square checks.
 */
function regularizedGamma(x: number, s: number, upper: boolean): number {
  const sigma = (x - s) / s;
  if (s >= 500 && Math.abs(sigma) <= 0.4) {
    const temme = igammaTemmeLarge(s, x); // Q for x ≥ s, P below; the other side is ≥ about ½
    const q = x >= s ? temme : 1 - temme;
    return upper ? q : x >= s ? 1 - temme : temme;
  }
  const slipRegion = x > 1000 && (s < x || Math.abs(s - 50) / x < 1) && s > 1;
  if (!slipRegion) return gammainc(x, s, true, upper);
  const q = Math.min(1, (x / (s - 1)) * gammainc(x, s - 1, true, true));
  return upper ? q : 1 - q;
}

/** P(X > x) for chi-square with df degrees of freedom: the upper regularized gamma Q(df/2, x/2). */
export function chiSquareSf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return regularizedGamma(x / 2, df / 2, true);
}

/** P(X ≤ x) for chi-square with df degrees of freedom. */
export function chiSquareCdf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return regularizedGamma(x / 2, df / 2, false);
}

/** The x with P(X ≤ x) = p for chi-square with df degrees of freedom. */
export function chiSquareQuantile(p: number, df: number): number {
  if (Number.isNaN(p) || Number.isNaN(df) || !(df > 0) || p < 0 || p > 1) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const lower = p <= 0.5;
  const target = lower ? p : 1 - p; // 1 − p is exact for p ≥ ½
  const k = df / 2;
  const logConstant = -k * Math.LN2 - logGamma(k);
  const logDensity = (x: number) => (k - 1) * Math.log(x) + logConstant - x / 2;
  const start = startingValue(chiSquareQuantileLib(p, df), () => {
    // Wilson–Hilferty (1931), then the small-x form P(X ≤ x) ≈ (x/2)^k / Γ(k + 1)
    const z = normalQuantile(p);
    const c = 2 / (9 * df);
    const wh = df * Math.pow(1 - c + z * Math.sqrt(c), 3);
    return wh > 0 ? wh : 2 * Math.exp((Math.log(p) + logGamma(k + 1)) / k);
  });
  return solveTail(
    target,
    lower ? (x) => chiSquareCdf(x, df) : (x) => chiSquareSf(x, df),
    logDensity,
    lower,
    start,
  );
}

/**
 * Both tails of F(d1, d2) at f when a = d1/2 is a whole number, by the finite sum
 *   P(F > f) = 1 − I_x(a, b) = Σ_{j=0}^{a−1} T_j,   T_j = y^b·x^j·Γ(b + j)/(Γ(b)·j!),
 * with b = d2/2, x = d1·f/(d2 + d1·f), y = d2/(d2 + d1·f); this follows from the recurrence
 * I_x(a, b) − I_x(a + 1, b) = x^a·y^b/(a·B(a, b)) and I_x(1, b) = 1 − y^b (DLMF §8.17(i)), and the
 * terms of j ≥ a add up to I_x(a, b) = P(F ≤ f). All terms are positive; log y is taken as
 * −log1p(d1·f/d2), and the terms are scaled by the largest one (found by a compensated sum of
 * their logs), so nothing cancels, overflows or underflows early.
 * Why: stdlib's betainc loses digits for a whole-number a ≥ 2 (d1 even, from 4) once b is large,
 * measured against R's pf: 2e-11 at F(30, 1e6), 8e-11 at F(10, 1000001), 2e-10 at F(30, 999),
 * 1e-10 at F(6..30, 901), 4e-5 at F(50, 99999), and 0 instead of 6.8e-297 at f = 50 on (30, 1e6);
 * odd d1 was not affected. This sum stays within 2e-13 of R for d1 ≤ 1000, d2 ≥ 100. Used for
 * 2 ≤ a ≤ 500 and d2 ≥ 100 (at most a terms for P(F > f)).
 */
function fisherTailsWholeA(f: number, d1: number, d2: number): { sf: number; cdf: number } {
  const a = d1 / 2;
  const b = d2 / 2;
  const ratio = (d1 * f) / d2;
  const x = ratio / (1 + ratio);
  const logX = Math.log(x);
  const logT0 = -b * Math.log1p(ratio); // log T_0 = b·log y
  // log T_j by a compensated (Neumaier) running sum; the terms rise to one mode and then fall
  let logT = logT0;
  let carry = 0;
  let mode = 0;
  let logMax = logT0;
  for (let j = 0; j < a - 1; j++) {
    const step = logX + Math.log((b + j) / (j + 1));
    const total = logT + step;
    carry += Math.abs(logT) >= Math.abs(step) ? logT - total + step : step - total + logT;
    logT = total;
    if (logT + carry > logMax) {
      logMax = logT + carry;
      mode = j + 1;
    }
  }
  // T_j / T_mode, summed outward from the mode
  let sum = 1;
  let term = 1;
  for (let j = mode; j > 0; j--) {
    term *= j / (x * (b + j - 1)); // T_{j−1} = T_j · j / (x·(b + j − 1))
    sum += term;
  }
  term = 1;
  for (let j = mode; j < a - 1; j++) {
    term *= (x * (b + j)) / (j + 1);
    sum += term;
  }
  const scale = Math.exp(logMax);
  const sf = sum * scale;
  if (sf <= 0.5) return { sf, cdf: 1 - sf };
  // P(F ≤ f) < ½: the remaining terms j ≥ a (they fall from here on, since f is below the median)
  let rest = 0;
  for (let j = a - 1; j < a + 1e6; j++) {
    term *= (x * (b + j)) / (j + 1);
    rest += term;
    if (term <= 1e-17 * rest) break;
  }
  return { sf, cdf: rest * scale };
}

/** Whether fisherTailsWholeA is the more accurate route for these degrees of freedom. */
function useWholeASum(d1: number, d2: number): boolean {
  const a = d1 / 2;
  return Number.isInteger(a) && a >= 2 && a <= 500 && d2 >= 100 && Number.isFinite(d2);
}

/**
 * P(F > f) for the F law with (d1, d2) degrees of freedom:
 * I_{d2/(d2+d1·f)}(d2/2, d1/2), with the complement taken as an upper tail when it is the small side
 * (the finite sum above for an even d1 from 4 to 1000 with d2 ≥ 100).
 */
export function fisherSf(f: number, d1: number, d2: number): number {
  if (Number.isNaN(f) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (f <= 0) return 1;
  if (f === Infinity) return 0;
  if (useWholeASum(d1, d2)) return fisherTailsWholeA(f, d1, d2).sf;
  const denom = d2 + d1 * f;
  const x = d2 / denom;
  return x < 0.5
    ? betainc(x, d2 / 2, d1 / 2, true, false)
    : betainc((d1 * f) / denom, d1 / 2, d2 / 2, true, true);
}

/** P(F ≤ f) for the F law with (d1, d2) degrees of freedom. */
export function fisherCdf(f: number, d1: number, d2: number): number {
  if (Number.isNaN(f) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (f <= 0) return 0;
  if (f === Infinity) return 1;
  if (useWholeASum(d1, d2)) return fisherTailsWholeA(f, d1, d2).cdf;
  const denom = d2 + d1 * f;
  const x = (d1 * f) / denom;
  return x < 0.5
    ? betainc(x, d1 / 2, d2 / 2, true, false)
    : betainc(d2 / denom, d2 / 2, d1 / 2, true, true);
}

/** The f with P(F ≤ f) = p for the F law with (d1, d2) degrees of freedom. */
export function fisherQuantile(p: number, d1: number, d2: number): number {
  if (Number.isNaN(p) || Number.isNaN(d1) || Number.isNaN(d2) || !(d1 > 0) || !(d2 > 0) || p < 0 || p > 1) return NaN;
  if (p === 0) return 0;
  if (p === 1) return Infinity;
  const lower = p <= 0.5;
  const target = lower ? p : 1 - p; // 1 − p is exact for p ≥ ½
  const a = d1 / 2;
  const b = d2 / 2;
  const logBeta = logGamma(a) + logGamma(b) - logGamma(a + b);
  const logDensity = (f: number) => {
    const denom = d1 * f + d2;
    return a * Math.log((d1 * f) / denom) + b * Math.log(d2 / denom) - Math.log(f) - logBeta;
  };
  const start = startingValue(fQuantileLib(p, d1, d2), () => chiSquareQuantile(p, d1) / d1);
  return solveTail(
    target,
    lower ? (f) => fisherCdf(f, d1, d2) : (f) => fisherSf(f, d1, d2),
    logDensity,
    lower,
    start,
  );
}
