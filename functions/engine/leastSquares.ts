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
  /** 1-norm condition estimate of the column-scaled design. */
  condition: number;
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
  const Rinv = upperInverse(R, k);
  const condition = conditionEstimate(R, Rinv, k);
  const coef = new Float64Array(k);
  for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
  let resid: Float64Array;
  let big = 0;
  let small = Infinity;
  for (let j = 0; j < k; j++) {
    big = Math.max(big, Math.abs(c[j]));
    small = Math.min(small, Math.abs(c[j]));
  }
  // Predicted digits lost in the smallest coefficient: κ·max|c|/min|c| (normwise error bounds
  // do not protect small components, as NIST Wampler's intercept shows).
  if (condition * (big / small) > REFINE_ABOVE) {
    resid = refine(X, y, A, tau, R, scale, c, coef);
  } else {
    resid = new Float64Array(n);
    for (let i = 0; i < n; i++) resid[i] = y[i];
    for (let j = 0; j < k; j++) {
      const bj = coef[j];
      const xj = X[j];
      for (let i = 0; i < n; i++) resid[i] -= bj * xj[i];
    }
  }
  const fitted = new Float64Array(n);
  let rss = 0;
  for (let i = 0; i < n; i++) {
    const e = resid[i];
    fitted[i] = y[i] - e;
    rss += e * e;
  }
  return { n, k, R, Rinv, scale, coef, resid, fitted, rss, condition };
}

/**
 * When κ·max|c|/min|c| (κ the 1-norm condition estimate of the column-scaled design, c the scaled
 * coefficients) exceeds this, some coefficient may have lost more than 4 of its 16 digits in one
 * solve, and the solution is refined.
 */
export const REFINE_ABOVE = 1e4;

/** κ₁(R) = ‖R‖₁‖R⁻¹‖₁ of the column-scaled design. */
function conditionEstimate(R: Float64Array, Rinv: Float64Array, k: number): number {
  let a = 0;
  let b = 0;
  for (let j = 0; j < k; j++) {
    let sa = 0;
    let sb = 0;
    for (let i = 0; i <= j; i++) {
      sa += Math.abs(R[i * k + j]);
      sb += Math.abs(Rinv[i * k + j]);
    }
    a = Math.max(a, sa);
    b = Math.max(b, sb);
  }
  return a * b;
}

// Error-free transformations for double-double residuals (Dekker 1971; Ogita, Rump and Oishi 2005).
const SPLIT = 134217729; // 2^27 + 1
function twoProdErr(a: number, b: number, p: number): number {
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  return ((ah * bh - p) + ah * bl + al * bh) + al * bl;
}

/** y_i − r_i − Σ_j b_j x_ij for every row, accumulated in double-double. */
function augmentedResidual(X: Float64Array[], y: Float64Array, r: Float64Array | null, coef: Float64Array, out: Float64Array): void {
  const n = y.length;
  const k = X.length;
  for (let i = 0; i < n; i++) {
    let hi = y[i];
    let lo = 0;
    if (r) {
      const v = -r[i];
      const s = hi + v;
      const bb = s - hi;
      lo += (hi - (s - bb)) + (v - bb);
      hi = s;
    }
    for (let j = 0; j < k; j++) {
      const p = -coef[j] * X[j][i];
      const pe = twoProdErr(-coef[j], X[j][i], p);
      const s = hi + p;
      const bb = s - hi;
      lo += (hi - (s - bb)) + (p - bb) + pe;
      hi = s;
    }
    out[i] = hi + lo;
  }
}

/** Σ_i a_i b_i in double-double (Dot2). */
function dot2(a: Float64Array, b: Float64Array): number {
  let hi = 0;
  let lo = 0;
  for (let i = 0; i < a.length; i++) {
    const p = a[i] * b[i];
    const pe = twoProdErr(a[i], b[i], p);
    const s = hi + p;
    const bb = s - hi;
    lo += (hi - (s - bb)) + (p - bb) + pe;
    hi = s;
  }
  return hi + lo;
}

/** Applies Qᵀ (forward = true) or Q to v in place, from the stored reflectors. */
function applyQ(A: Float64Array[], tau: Float64Array, v: Float64Array, forward: boolean): void {
  const k = A.length;
  const n = v.length;
  for (let s = 0; s < k; s++) {
    const j = forward ? s : k - 1 - s;
    const a = A[j];
    let w = v[j];
    for (let i = j + 1; i < n; i++) w += a[i] * v[i];
    w *= tau[j];
    v[j] -= w;
    for (let i = j + 1; i < n; i++) v[i] -= w * a[i];
  }
}

/**
 * Iterative refinement of the least squares solution through the augmented system
 * [I X; Xᵀ 0][r; c] = [y; 0] (Björck 1967, "Iterative refinement of linear least squares
 * solutions I", BIT 7), with its residuals in double-double and the corrections solved by the same
 * QR. It recovers the digits an ill-conditioned design (NIST Wampler, Filip) loses in one solve, also
 * when the residual is large. Updates c and coef in place; returns the residual vector.
 */
function refine(X: Float64Array[], y: Float64Array, A: Float64Array[], tau: Float64Array, R: Float64Array, scale: Float64Array, c: Float64Array, coef: Float64Array): Float64Array {
  const n = y.length;
  const k = X.length;
  const r = new Float64Array(n);
  augmentedResidual(X, y, null, coef, r); // r₀ = y − Xb
  const f = new Float64Array(n);
  const g = new Float64Array(k);
  for (let iter = 0; iter < 4; iter++) {
    augmentedResidual(X, y, r, coef, f); // f = y − r − Xb
    for (let j = 0; j < k; j++) g[j] = -dot2(X[j], r) / scale[j]; // g = −X_sᵀ r
    applyQ(A, tau, f, true); // f ← Qᵀf = [u1; u2]
    // p1 = R⁻ᵀ g
    const p1 = Float64Array.from(g);
    forwardSolveRt(R, k, p1);
    const dc = new Float64Array(k);
    for (let i = k - 1; i >= 0; i--) {
      let s = f[i] - p1[i];
      for (let j = i + 1; j < k; j++) s -= R[i * k + j] * dc[j];
      dc[i] = s / R[i * k + i];
    }
    // dr = Q [p1; u2]
    for (let j = 0; j < k; j++) f[j] = p1[j];
    applyQ(A, tau, f, false);
    let change = 0;
    let size = 0;
    for (let j = 0; j < k; j++) {
      c[j] += dc[j];
      coef[j] = c[j] / scale[j];
      change = Math.max(change, Math.abs(dc[j]));
      size = Math.max(size, Math.abs(c[j]));
    }
    for (let i = 0; i < n; i++) r[i] += f[i];
    if (change <= 4 * Number.EPSILON * size) break;
  }
  // Final residuals recomputed from the refined coefficients, in double-double.
  augmentedResidual(X, y, null, coef, r);
  return r;
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
