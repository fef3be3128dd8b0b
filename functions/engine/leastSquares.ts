/**
 * Least squares by Householder QR on column-major Float64Array columns.
 *
 * Each column is first scaled to unit length (so the rank test and the condition number do not
 * depend on units), then reduced by Householder reflections (Golub and Van Loan, Matrix
 * Computations, 4th ed., Algorithm 5.2.1), never through the normal equations. The reflections are
 * applied column by column on contiguous typed arrays, one pass per column pair, which is what makes
 * n = 10^6 fast in plain JavaScript. Coefficients come from back substitution on R; residuals are
 * recomputed from the original columns.
 *
 * Rank: after reflecting the earlier columns, the part of unit column j orthogonal to them has length
 * |R_jj|. Below RANK_TOL the column is (numerically) a linear combination of the earlier ones and the
 * fit is refused with the combination named. An ill-conditioned full-rank design (NIST Filip, whose
 * smallest |R_jj| is about 1e-11 after scaling) is solved.
 *
 * Cost: about 2·n·k² flops and k²/2 passes over n doubles; memory one working copy of X.
 */
import { fail } from "./problems";

/**
 * Relative length below which a column counts as a linear combination of the earlier ones. Exact
 * collinearity leaves about sqrt(n)·ε ≈ 1e-13 at n = 10^6; NIST Filip, the most ill-conditioned
 * full-rank design we accept, leaves about 4e-11 (measured in test/engine/leastSquares.test.ts).
 */
export const RANK_TOL = 1e-12;

export interface QrFit {
  n: number;
  k: number;
  /** R of the scaled design, row-major k×k (upper triangle). */
  R: Float64Array;
  /** Inverse of R, row-major k×k (upper triangle). */
  Rinv: Float64Array;
  /** Column norms: scaled column j = x_j / scale[j]. */
  scale: Float64Array;
  /** Coefficients in the original units of the columns. */
  coef: Float64Array;
  resid: Float64Array;
  fitted: Float64Array;
  rss: number;
}

function norm2(a: Float64Array, from: number): number {
  let s = 0;
  for (let i = from; i < a.length; i++) s += a[i] * a[i];
  if (s > 1e-280 && s < 1e280) return Math.sqrt(s);
  // Rescale to avoid overflow or underflow.
  let m = 0;
  for (let i = from; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
  if (m === 0) return 0;
  let t = 0;
  for (let i = from; i < a.length; i++) {
    const v = a[i] / m;
    t += v * v;
  }
  return m * Math.sqrt(t);
}

/** The result of a rank check: the first column that depends on earlier ones, and on which. */
export interface Dependency {
  column: number;
  on: number[];
}

/**
 * Solves min ||y − Xb|| by Householder QR.
 * @param X columns of the design (not modified), all of length n
 * @param y the response (not modified)
 * @param onDependent called with the first dependent column; it should throw a problem
 */
export function leastSquares(X: Float64Array[], y: Float64Array, onDependent: (d: Dependency) => never): QrFit {
  const k = X.length;
  const n = y.length;
  if (n <= k) fail(`${n} usable rows are too few for ${k} coefficients`);
  const scale = new Float64Array(k);
  const A: Float64Array[] = new Array(k);
  for (let j = 0; j < k; j++) {
    const s = norm2(X[j], 0);
    if (s === 0) onDependent({ column: j, on: [] });
    scale[j] = s;
    const a = new Float64Array(n);
    const src = X[j];
    const inv = 1 / s;
    for (let i = 0; i < n; i++) a[i] = src[i] * inv;
    A[j] = a;
  }
  const b = Float64Array.from(y);
  const R = new Float64Array(k * k);
  const tau = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    const a = A[j];
    const alpha = norm2(a, j);
    if (alpha < RANK_TOL) onDependent({ column: j, on: dependencyOf(R, A, j, k) });
    const ajj = a[j];
    const beta = ajj >= 0 ? -alpha : alpha;
    const v0 = ajj - beta;
    const t = (beta - ajj) / beta;
    tau[j] = t;
    // v = a[j:] / v0 with v[j] = 1, stored below the diagonal
    const iv0 = 1 / v0;
    for (let i = j + 1; i < n; i++) a[i] *= iv0;
    a[j] = beta;
    R[j * k + j] = beta;
    for (let c = j + 1; c <= k; c++) {
      const col = c < k ? A[c] : b;
      let w = col[j];
      for (let i = j + 1; i < n; i++) w += a[i] * col[i];
      w *= t;
      col[j] -= w;
      for (let i = j + 1; i < n; i++) col[i] -= w * a[i];
      if (c < k) R[j * k + c] = col[j];
    }
  }
  // Back substitution: R c = (Qᵀy)[0:k]
  const c = new Float64Array(k);
  for (let i = k - 1; i >= 0; i--) {
    let s = b[i];
    for (let j = i + 1; j < k; j++) s -= R[i * k + j] * c[j];
    c[i] = s / R[i * k + i];
  }
  const coef = new Float64Array(k);
  for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
  const Rinv = upperInverse(R, k);
  const fitted = new Float64Array(n);
  for (let j = 0; j < k; j++) {
    const bj = coef[j];
    const xj = X[j];
    for (let i = 0; i < n; i++) fitted[i] += bj * xj[i];
  }
  const resid = new Float64Array(n);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    const e = y[i] - fitted[i];
    resid[i] = e;
    rss += e * e;
  }
  return { n, k, R, Rinv, scale, coef, resid, fitted, rss };
}

/** Inverse of an upper-triangular row-major k×k matrix. */
export function upperInverse(R: Float64Array, k: number): Float64Array {
  const Ri = new Float64Array(k * k);
  for (let j = 0; j < k; j++) {
    Ri[j * k + j] = 1 / R[j * k + j];
    for (let i = j - 1; i >= 0; i--) {
      let s = 0;
      for (let m = i + 1; m <= j; m++) s += R[i * k + m] * Ri[m * k + j];
      Ri[i * k + j] = -s / R[i * k + i];
    }
  }
  return Ri;
}

/**
 * Which earlier columns column j depends on: solve R[0:j,0:j] c = (Qᵀ a_j)[0:j] and keep the
 * coefficients that matter.
 */
function dependencyOf(R: Float64Array, A: Float64Array[], j: number, k: number): number[] {
  const col = A[j];
  const c = new Float64Array(j);
  for (let i = j - 1; i >= 0; i--) {
    let s = col[i];
    for (let m = i + 1; m < j; m++) s -= R[i * k + m] * c[m];
    c[i] = s / R[i * k + i];
  }
  let big = 0;
  for (let i = 0; i < j; i++) big = Math.max(big, Math.abs(c[i]));
  const on: number[] = [];
  for (let i = 0; i < j; i++) if (Math.abs(c[i]) > 1e-6 * big) on.push(i);
  return on;
}

/**
 * Solves Rᵀ z = v in place for one row (forward substitution); R row-major upper k×k.
 * Used to map a design row into the orthonormal Q space: z = R⁻ᵀ x_i is row i of Q.
 */
export function forwardSolveRt(R: Float64Array, k: number, v: Float64Array): void {
  for (let j = 0; j < k; j++) {
    let s = v[j];
    for (let m = 0; m < j; m++) s -= R[m * k + j] * v[m];
    v[j] = s / R[j * k + j];
  }
}
