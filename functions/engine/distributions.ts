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
 * quantile is then as accurate as the tail function it inverts. Measured accuracy against R 4.x
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
 * Returns the iterate whose tail is closest to target in relative terms.
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
  return best;
}

/** A usable positive starting value, or the fallback. */
function startingValue(candidate: number, fallback: () => number): number {
  return Number.isFinite(candidate) && candidate > 0 ? candidate : fallback();
}

/**
 * The two arguments of the incomplete beta for Student's t, x = t²/(df + t²) and its complement
 * df/(df + t²), formed without cancellation and without overflow of t² for huge |t|.
 */
function studentBetaArguments(a: number, df: number): { small: boolean; x: number } {
  const t2 = a * a;
  if (t2 < df) return { small: true, x: t2 / (df + t2) };
  const ratio = df / a / a; // df / t², no overflow
  return { small: false, x: ratio / (1 + ratio) };
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
  const z = solveTail(small, normalSf, (v) => -0.5 * v * v - LN_SQRT_2PI, false, start);
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
  const arg = studentBetaArguments(Math.abs(t), df);
  const half = arg.small
    ? 0.5 * betainc(arg.x, 0.5, df / 2, true, true)
    : 0.5 * betainc(arg.x, df / 2, 0.5, true, false);
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
  const arg = studentBetaArguments(a, df);
  return arg.small
    ? betainc(arg.x, 0.5, df / 2, true, true)
    : betainc(arg.x, df / 2, 0.5, true, false);
}

/** The t with P(T ≤ t) = p on df degrees of freedom. */
export function studentQuantile(p: number, df: number): number {
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
  const t = solveTail(small, (v) => studentSf(v, df), logDensity, false, start);
  return p < 0.5 ? -t : t;
}

/** P(X > x) for chi-square with df degrees of freedom: the upper regularized gamma Q(df/2, x/2). */
export function chiSquareSf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 1;
  if (x === Infinity) return 0;
  return gammainc(x / 2, df / 2, true, true);
}

/** P(X ≤ x) for chi-square with df degrees of freedom. */
export function chiSquareCdf(x: number, df: number): number {
  if (Number.isNaN(x) || !(df > 0)) return NaN;
  if (x <= 0) return 0;
  if (x === Infinity) return 1;
  return gammainc(x / 2, df / 2, true, false);
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
 * P(F > f) for the F law with (d1, d2) degrees of freedom:
 * I_{d2/(d2+d1·f)}(d2/2, d1/2), with the complement taken as an upper tail when it is the small side.
 */
export function fisherSf(f: number, d1: number, d2: number): number {
  if (Number.isNaN(f) || !(d1 > 0) || !(d2 > 0)) return NaN;
  if (f <= 0) return 1;
  if (f === Infinity) return 0;
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
