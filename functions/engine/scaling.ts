/**
 * Exact rescaling by powers of two, for data of extreme magnitude (|y| near 1e-150 or 1e150).
 *
 * Multiplying by a power of two changes only the exponent of a double, so it loses no digit (away
 * from the subnormal range): a least-squares fit, a test statistic or a correlation computed on
 * columns scaled this way is the same to the last bit as the unscaled one whenever the latter does
 * not overflow or underflow. Squares (residual sums of squares, e², e⁴ in the tests) are what
 * overflow first: 1e155² is beyond the largest double, and (1e-150)² is below the smallest normal.
 * Every statistic that is invariant to the units of a column (t, p, R², F, the tests, λ̂ of Box–Cox)
 * is therefore computed on columns scaled to a maximum magnitude in [0.5, 1) when their magnitude
 * leaves [2^−100, 2^100] (about 1e−30 to 1e30); inside that window fourth powers stay far from
 * overflow and underflow, and columns are used as they are (no copy, the same bits as before).
 */
import { kernel } from "./kernel";

/** Below and above these magnitudes a column is rescaled before squares are taken. */
export const WINDOW_LOW = Math.pow(2, -100);
export const WINDOW_HIGH = Math.pow(2, 100);

function maxAbs(v: ArrayLike<number>): number {
  if (v instanceof Float64Array) return kernel().maxAbs(v);
  let m = 0;
  for (let i = 0; i < v.length; i++) {
    const a = Math.abs(v[i]);
    if (a > m) m = a;
  }
  return m;
}

/** 1 when max|v| lies in [2^−100, 2^100] (or v is all zero), else unitOf(v); max|v| is taken from `knownMax` when given. */
export function workingUnit(v: ArrayLike<number>, knownMax: number | null = null): number {
  return workingUnitOfMax(knownMax ?? maxAbs(v));
}

/** workingUnit of a column whose max|v| is m. */
export function workingUnitOfMax(m: number): number {
  return m === 0 || (m >= WINDOW_LOW && m <= WINDOW_HIGH) ? 1 : powerOfTwoAbove(m);
}

/** v itself when its magnitude is inside the window, else a copy scaled by a power of two (max|v| from `knownMax` when given). */
export function working(v: Float64Array, knownMax: number | null = null): Float64Array {
  const u = workingUnit(v, knownMax);
  return u === 1 ? v : scaled(v, u);
}

/** The power of two 2^e with max|v|·2^−e in [0.5, 1) (1 for an all-zero or non-finite column). */
export function unitOf(v: ArrayLike<number>): number {
  return powerOfTwoAbove(maxAbs(v));
}

/** The power of two 2^e with m·2^−e in [0.5, 1); 1 for 0 or a non-finite m. */
export function powerOfTwoAbove(m: number): number {
  if (!(m > 0) || !Number.isFinite(m)) return 1;
  let e = Math.floor(Math.log2(m)) + 1;
  // log2 may round at exact powers of two: settle e so that 2^(e−1) ≤ m < 2^e
  if (Math.pow(2, e - 1) > m) e--;
  else if (Math.pow(2, e) <= m) e++;
  // keep 2^e and 2^−e both normal doubles (the extremes are beyond any data this is meant for)
  return Math.pow(2, Math.min(1023, Math.max(-1021, e)));
}

/** v·(1/unit), exact when unit is a power of two. */
export function scaled(v: ArrayLike<number>, unit: number): Float64Array {
  const inv = 1 / unit;
  const out = new Float64Array(v.length);
  for (let i = 0; i < v.length; i++) out[i] = v[i] * inv;
  return out;
}

/** A copy scaled to a maximum magnitude in [0.5, 1). */
export function normalised(v: ArrayLike<number>): Float64Array {
  return scaled(v, unitOf(v));
}
