/**
 * Least squares by Householder QR, row-blocked, on column-major Float64Array columns.
 *
 * Each column is first scaled to unit length (so the rank test and the condition number do not
 * depend on units). The rows are then taken in blocks of BLOCK_ROWS: each block is copied into a
 * small cache-resident buffer and reduced by Householder reflections against the running triangle R
 * (the sequential "tall and skinny" QR; Golub and Van Loan, Matrix Computations, 4th ed., §5.2 and
 * §6.5; LAPACK's xTPQRT does the same step). Every reflection is an orthogonal Householder step, so
 * the method has the backward stability of ordinary Householder QR, never forming XᵀX, while reading
 * the data once. Coefficients come from back substitution on R; residuals are recomputed from the
 * original columns.
 *
 * Accuracy: where the design is ill-conditioned or the coefficients differ widely in size, the
 * solution is refined through the augmented system with double-double residuals (Björck 1967),
 * which recovers the digits a single solve loses (NIST Wampler, Filip, Longley; see the LRE table in
 * test/host/nist.test.ts).
 *
 * Rank: with unit columns, |R_jj| at the end is the length of the part of column j orthogonal to the
 * earlier ones. Below RANK_TOL the column is taken as a linear combination of them and the fit is
 * refused with the combination named; an ill-conditioned full-rank design (NIST Filip, smallest
 * |R_jj| about 5e-8 after scaling) is solved.
 *
 * Cost: about 2·n·k² flops and one pass over the data (two when refinement is needed).
 */
import { mapped } from "./blocks";
import { count, fail } from "./problems";
import { kernel, type SidesWorkspace } from "./kernel";

/**
 * Relative length below which a column counts as a linear combination of the earlier ones. Exact
 * collinearity leaves about sqrt(n)·ε (≈ 1e-13 at n = 10^6); NIST Filip, the most ill-conditioned
 * full-rank design we accept, leaves about 5e-8 (test/engine/leastSquares.test.ts measures it).
 */
export const RANK_TOL = 1e-11;

/** Rows per block: BLOCK_ROWS·(k+1) doubles stay in the processor's cache for k up to about 20. */
export const BLOCK_ROWS = 256;

/**
 * Rows per block of the projections on a factor (rssOnFactor, roughRssOnFactor, projectOnFactor):
 * each block's columns are copied once into the kernel's buffers and read by a few vector
 * operations, so longer blocks cost fewer copies and calls.
 */
export const SIDE_ROWS = 2048;

/**
 * When κ·max|c|/min|c| (κ the 1-norm condition estimate of the column-scaled design, c the scaled
 * coefficients) exceeds this, some coefficient may have lost more than 4 of its 16 digits in one
 * solve, and the solution is refined.
 */
export const REFINE_ABOVE = 1e4;

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
  rss: number;
  /** 1-norm condition estimate of the column-scaled design. */
  condition: number;
  /** Whether the solution was refined. */
  refined: boolean;
}

/** The first column that depends on earlier ones, and on which (empty: the column is all zeros). */
export interface Dependency {
  column: number;
  on: number[];
}

function norm2(a: Float64Array, known: number | null = null): number {
  const s = known ?? kernel().sumSquares(a);
  if (s > 1e-280 && s < 1e280) return Math.sqrt(s);
  let m = 0; // rescale to avoid overflow or underflow
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]));
  if (m === 0) return 0;
  let t = 0;
  for (let i = 0; i < a.length; i++) {
    const v = a[i] / m;
    t += v * v;
  }
  return m * Math.sqrt(t);
}

/** Reflectors of one block, kept only when the solution is to be refined. */
export interface BlockReflectors {
  start: number;
  rows: number;
  tau: Float64Array;
  /** k vectors of `rows` entries (the implicit leading 1 sits in the running triangle's row j). */
  v: Float64Array;
}

/**
 * Row-blocked Householder QR of the scaled design [X/scale | y].
 * T (row-major (k+1)×(k+1)) receives R in its leading k×k block and Qᵀy in its column k.
 */
export function blockedQr(X: Float64Array[], y: Float64Array, inv: Float64Array, keep: BlockReflectors[] | null): Float64Array {
  const k = X.length;
  const k1 = k + 1;
  const n = y.length;
  const B = BLOCK_ROWS;
  const T = new Float64Array(k1 * k1);
  const ws = kernel().qrWorkspace(k, B);
  ws.T.set(T);
  const C = ws.C;
  for (let start = 0; start < n; start += B) {
    const m = Math.min(B, n - start);
    ws.load(X, y, inv, start, m); // the block's rows of [X/scale | y] into C
    ws.reduce(m); // Householder reflections of the block against T (kernel.ts)
    if (keep) {
      const v = new Float64Array(k * m);
      for (let j = 0; j < k; j++) for (let i = 0; i < m; i++) v[j * m + i] = C[j * B + i];
      keep.push({ start, rows: m, tau: ws.tau.slice(), v });
    }
  }
  T.set(ws.T);
  return T;
}

/** A least-squares solution, or the first column that depends on earlier ones (the rank question). */
export type LeastSquares = { qr: QrFit; dependent: null } | { qr: null; dependent: Dependency };

/**
 * Solves min ||y − Xb|| by Householder QR, or answers which column makes the design rank-deficient.
 * @param X columns of the design (not modified), all of length n
 * @param y the response (not modified)
 * @param refineWhenNeeded false for auxiliary regressions whose statistic needs only the residual
 *   sum of squares or one t ratio to working accuracy (as R's lm.fit gives them)
 * @param sumSq Σx_j² of column j where already known (kernel().sumSquares's double), else null
 * @returns `{ qr }` for a full-rank design, else `{ dependent }`: the first column within RANK_TOL of
 *   the span of earlier ones, with the columns it depends on (none: the column is all zeros)
 */
export function leastSquares(X: Float64Array[], y: Float64Array, refineWhenNeeded = true, sumSq: (number | null)[] | null = null): LeastSquares {
  const k = X.length;
  const n = y.length;
  if (n <= k) fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few for ${count(k, "coefficient")}`);
  const scale = new Float64Array(k);
  const inv = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    const s = norm2(X[j], sumSq?.[j] ?? null);
    if (s === 0) return { qr: null, dependent: { column: j, on: [] } };
    scale[j] = s;
    inv[j] = 1 / s;
  }
  const first = solveTriangle(blockedQr(X, y, inv, null), k, refineWhenNeeded);
  if (!first.solve) return { qr: null, dependent: first.dependent };
  let { R, Rinv, c } = first.solve;
  const { condition, refine: refined } = first.solve;
  const coef = new Float64Array(k);
  let resid: Float64Array;
  if (refined) {
    // Factor again keeping the reflectors (the same arithmetic, so the same R), then refine.
    const blocks: BlockReflectors[] = [];
    ({ R, Rinv, c } = solveTriangle(blockedQr(X, y, inv, blocks), k, false).solve as TriangleSolve);
    for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
    resid = refine(X, y, blocks, R, scale, c, coef);
  } else {
    for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
    resid = new Float64Array(n);
    kernel().residuals(X, coef, y, resid);
  }
  const rss = kernel().sumSquares(resid);
  return { qr: { n, k, R, Rinv, scale, coef, resid, rss, condition, refined }, dependent: null };
}

/** What the triangle of a factorisation gives: R, R⁻¹, the scaled solution c, κ₁ and whether to refine. */
export interface TriangleSolve {
  R: Float64Array;
  Rinv: Float64Array;
  c: Float64Array;
  condition: number;
  refine: boolean;
}

/**
 * From T (row-major (k+1)×(k+1): R of the unit-column design in its leading k×k block, Qᵀy in column
 * k): the rank test, back substitution and the refinement question. Predicted digits lost in the
 * smallest coefficient are κ·max|c|/min|c| (normwise error bounds do not protect small components, as
 * NIST Wampler's intercept shows): above REFINE_ABOVE, and when refineWhenNeeded, refine.
 */
export function solveTriangle(T: Float64Array, k: number, refineWhenNeeded: boolean): { solve: TriangleSolve; dependent: null } | { solve: null; dependent: Dependency } {
  const k1 = k + 1;
  const R = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = i; j < k; j++) R[i * k + j] = T[i * k1 + j];
  for (let j = 0; j < k; j++) {
    if (!(Math.abs(R[j * k + j]) >= RANK_TOL)) return { solve: null, dependent: { column: j, on: dependencyOf(R, k, j) } };
  }
  const c = new Float64Array(k);
  for (let i = k - 1; i >= 0; i--) {
    let s = T[i * k1 + k];
    for (let j = i + 1; j < k; j++) s -= R[i * k + j] * c[j];
    c[i] = s / R[i * k + i];
  }
  const Rinv = upperInverse(R, k);
  const condition = conditionEstimate(R, Rinv, k);
  let big = 0;
  let small = Infinity;
  for (let j = 0; j < k; j++) {
    big = Math.max(big, Math.abs(c[j]));
    small = Math.min(small, Math.abs(c[j]));
  }
  return { solve: { R, Rinv, c, condition, refine: refineWhenNeeded && condition * (big / small) > REFINE_ABOVE }, dependent: null };
}

/** κ₁(R) = ‖R‖₁‖R⁻¹‖₁ of the column-scaled design. */
export function conditionEstimate(R: Float64Array, Rinv: Float64Array, k: number): number {
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
export function twoProdErr(a: number, b: number, p: number): number {
  let t = SPLIT * a;
  const ah = t - (t - a);
  const al = a - ah;
  t = SPLIT * b;
  const bh = t - (t - b);
  const bl = b - bh;
  return ((ah * bh - p) + ah * bl + al * bh) + al * bl;
}

/** out_i = y_i − r_i − Σ_j b_j x_ij for every row, accumulated in double-double. */
export function augmentedResidual(X: Float64Array[], y: Float64Array, r: Float64Array | null, coef: Float64Array, out: Float64Array): void {
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

/** Σ_i a_i b_i in double-double (Dot2 of Ogita, Rump and Oishi). */
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

/**
 * Applies the orthogonal factor of the blocked QR to the (k + n)-vector [top; v]: Pᵀ (forward) or P.
 * The blocked QR reduces [0; X] to [R; 0], so P acts on k leading "triangle" rows and the n data rows.
 */
export function applyQ(blocks: BlockReflectors[], k: number, top: Float64Array, v: Float64Array, forward: boolean): void {
  const nb = blocks.length;
  for (let s = 0; s < nb; s++) {
    const blk = blocks[forward ? s : nb - 1 - s];
    const { start, rows: m, tau, v: V } = blk;
    for (let q = 0; q < k; q++) {
      const j = forward ? q : k - 1 - q;
      const t = tau[j];
      if (t === 0) continue;
      const o = j * m;
      let w = top[j];
      for (let i = 0; i < m; i++) w += V[o + i] * v[start + i];
      w *= t;
      top[j] -= w;
      for (let i = 0; i < m; i++) v[start + i] -= w * V[o + i];
    }
  }
}

/**
 * Iterative refinement of the least squares solution through the augmented system
 * [I X; Xᵀ 0][r; c] = [y; 0] (Björck 1967, "Iterative refinement of linear least squares
 * solutions I", BIT 7), with its residuals in double-double and the corrections solved with the same
 * factorisation. It recovers the digits an ill-conditioned design loses in one solve, also when the
 * residual is large. Updates c and coef in place; returns the residuals.
 */
function refine(X: Float64Array[], y: Float64Array, blocks: BlockReflectors[], R: Float64Array, scale: Float64Array, c: Float64Array, coef: Float64Array): Float64Array {
  const n = y.length;
  const k = X.length;
  const r = new Float64Array(n);
  const rTop = new Float64Array(k); // the residual's part in the k leading rows (zero at the solution)
  augmentedResidual(X, y, null, coef, r); // r₀ = y − Xb
  const f = new Float64Array(n);
  const fTop = new Float64Array(k);
  const g = new Float64Array(k);
  const dc = new Float64Array(k);
  for (let iter = 0; iter < 4; iter++) {
    augmentedResidual(X, y, r, coef, f); // f = y − r − Xb
    for (let j = 0; j < k; j++) fTop[j] = -rTop[j];
    for (let j = 0; j < k; j++) g[j] = -dot2(X[j], r) / scale[j]; // g = −X_sᵀ r
    applyQ(blocks, k, fTop, f, true); // [u1; u2] = Pᵀ f
    const p1 = Float64Array.from(g);
    forwardSolveRt(R, k, p1); // p1 = R⁻ᵀ g
    for (let i = k - 1; i >= 0; i--) {
      let s = fTop[i] - p1[i];
      for (let j = i + 1; j < k; j++) s -= R[i * k + j] * dc[j];
      dc[i] = s / R[i * k + i];
    }
    fTop.set(p1);
    applyQ(blocks, k, fTop, f, false); // dr = P [p1; u2]
    let change = 0;
    let size = 0;
    for (let j = 0; j < k; j++) {
      c[j] += dc[j];
      coef[j] = c[j] / scale[j];
      change = Math.max(change, Math.abs(dc[j]));
      size = Math.max(size, Math.abs(c[j]));
      rTop[j] += fTop[j];
    }
    for (let i = 0; i < n; i++) r[i] += f[i];
    if (change <= 4 * Number.EPSILON * size) break;
  }
  augmentedResidual(X, y, null, coef, r); // final residuals from the refined coefficients
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
 * Which earlier columns column j depends on: with unit columns, column j ≈ Σ_i c_i col_i where
 * R[0:j,0:j] c = R[0:j, j]; keep the coefficients that matter.
 */
export function dependencyOf(R: Float64Array, k: number, j: number): number[] {
  const c = new Float64Array(j);
  for (let i = j - 1; i >= 0; i--) {
    let s = R[i * k + j];
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
 * Solves Rᵀ z = v in place (forward substitution); R row-major upper k×k.
 * Maps a scaled design row into the orthonormal space: z = R⁻ᵀ x_i is row i of Q.
 */
export function forwardSolveRt(R: Float64Array, k: number, v: Float64Array): void {
  for (let j = 0; j < k; j++) {
    let s = v[j];
    for (let m = 0; m < j; m++) s -= R[m * k + j] * v[m];
    v[j] = s / R[j * k + j];
  }
}

/**
 * RSS of v on the design with the factor R: c = R⁻¹R⁻ᵀX_sᵀv, then one correction step
 * (corrected semi-normal equations, Björck 1996, Numerical Methods for Least Squares Problems; accurate for the well-conditioned designs this is
 * used on). It reuses a fit's factor for another right-hand side: two passes of n·k over the rows, no
 * new factorisation. `r` receives the residuals.
 */
export function residualSS(X: Float64Array[], qr: QrFit, v: Float64Array, r: Float64Array): number {
  const k = X.length;
  const n = v.length;
  const c = new Float64Array(k);
  const solve = (rhs: Float64Array, out: Float64Array) => {
    const g = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      const col = X[j];
      let s0 = 0;
      let s1 = 0;
      let i = 0;
      for (; i + 1 < n; i += 2) {
        s0 += col[i] * rhs[i];
        s1 += col[i + 1] * rhs[i + 1];
      }
      if (i < n) s0 += col[i] * rhs[i];
      g[j] = (s0 + s1) / qr.scale[j];
    }
    forwardSolveRt(qr.R, k, g);
    for (let i = k - 1; i >= 0; i--) {
      let s = g[i];
      for (let j = i + 1; j < k; j++) s -= qr.R[i * k + j] * out[j];
      out[i] = s / qr.R[i * k + i];
    }
  };
  const residual = () => {
    r.set(v);
    for (let j = 0; j < k; j++) {
      const b = c[j] / qr.scale[j];
      const col = X[j];
      for (let i = 0; i < n; i++) r[i] -= b * col[i];
    }
  };
  solve(v, c);
  residual();
  const dc = new Float64Array(k);
  solve(r, dc);
  for (let j = 0; j < k; j++) c[j] += dc[j];
  residual();
  let rss = 0;
  for (let i = 0; i < n; i++) rss += r[i] * r[i];
  return rss;
}

/** c ← (RᵀR)⁻¹ c in place: a forward solve with Rᵀ, then a back solve with R. */
export function semiNormalSolve(R: Float64Array, k: number, c: Float64Array): void {
  forwardSolveRt(R, k, c);
  for (let i = k - 1; i >= 0; i--) {
    let s = c[i];
    for (let j = i + 1; j < k; j++) s -= R[i * k + j] * c[j];
    c[i] = s / R[i * k + i];
  }
}

/**
 * v on the design X through its factor `qr` (as residualSS, the corrected semi-normal equations),
 * keeping what a partitioned regression needs: the coefficients c of the column-scaled design
 * (b_j = c_j / scale_j) and the corrected residuals, written to r. Three passes over the rows: X_sᵀv;
 * the residual, with X_sᵀr summed block by block while the block is in cache; the correction. Accurate
 * for a well-conditioned X only: callers fall back to a new factorisation when qr.condition is large.
 */
export function projectOnFactor(X: Float64Array[], qr: QrFit, v: Float64Array, r: Float64Array): { c: Float64Array; rss: number } {
  const k = X.length;
  const n = v.length;
  const scale = qr.scale;
  const ws = kernel().sidesWorkspace(k, 1, SIDE_ROWS);
  const { V } = ws;
  /** For each block of rows: src's rows as the side, X's rows loaded, then step(start, m). */
  const blocks = (src: Float64Array, step: (start: number, m: number) => void): void => {
    for (let start = 0; start < n; start += SIDE_ROWS) {
      const m = Math.min(SIDE_ROWS, n - start);
      V.set(src.subarray(start, start + m));
      ws.load(X, start, m);
      step(start, m);
    }
  };
  const c = new Float64Array(k);
  blocks(v, (_, m) => ws.dots(0, m, c, 0));
  for (let j = 0; j < k; j++) c[j] /= scale[j];
  semiNormalSolve(qr.R, k, c);
  const b = mapped(c, (cj, j) => cj / scale[j]);
  const t = new Float64Array(k);
  blocks(v, (start, m) => {
    ws.subtract(0, m, b, 0);
    ws.dots(0, m, t, 0);
    r.set(V.subarray(0, m), start);
  });
  for (let j = 0; j < k; j++) t[j] /= scale[j];
  semiNormalSolve(qr.R, k, t);
  const bt = mapped(t, (tj, j) => tj / scale[j]);
  let rss = 0;
  blocks(r, (start, m) => {
    ws.subtract(0, m, bt, 0);
    rss += ws.selfDot(0, m);
    r.set(V.subarray(0, m), start);
  });
  for (let j = 0; j < k; j++) c[j] += t[j];
  return { c, rss };
}

/**
 * Relative error bound of an RSS found without the correction step, or by the normal-equations
 * formula ‖v‖² − ‖R⁻ᵀX_sᵀv‖²: ε²(κ√(nk) + kκ²)²·‖v‖²/RSS, times 100 for safety (κ the condition estimate;
 * the rounding of X_sᵀv and the backward error of R, each amplified by κ through the projection).
 */
export function rssErrorBound(kappa: number, n: number, k: number, vv: number, rss: number): number {
  const e = Number.EPSILON * (kappa * Math.sqrt(n * k) + k * kappa * kappa);
  return rss > 0 ? 100 * e * e * (vv / rss) : Infinity;
}

/**
 * The first pass over L sides (rssOnFactor, roughRssOnFactor): block by block of SIDE_ROWS rows,
 * fill(start, m) writes the sides into ws.V, and g[l·k + j] += X_jᵀv_l, vv[l] += ‖v_l‖².
 */
function sidesFirstPass(ws: SidesWorkspace, X: Float64Array[], n: number, L: number, fill: (start: number, m: number) => void): { g: Float64Array; vv: Float64Array } {
  const k = X.length;
  const g = new Float64Array(L * k);
  const vv = new Float64Array(L);
  for (let start = 0; start < n; start += SIDE_ROWS) {
    const m = Math.min(SIDE_ROWS, n - start);
    fill(start, m);
    ws.load(X, start, m);
    for (let l = 0; l < L; l++) {
      vv[l] += ws.selfDot(l, m);
      ws.dots(l, m, g, l * k);
    }
  }
  return { g, vv };
}

/**
 * RSS of L right-hand sides on the design X through its factor `qr`, each side generated block by
 * block: fill(start, m, V, pass, D) writes rows [start, start + m) of side l to V[l·SIDE_ROWS + i], and
 * is called once per block in each of the two passes (a side is never held whole). Pass 1: X_sᵀv and
 * the semi-normal solution c; pass 2: r = v − X_s c and ‖r‖². The error of ‖r‖² is ‖X_s δc‖², second
 * order in the error δc of c; where its bound (rssErrorBound) exceeds 1e-16 the correction step of the
 * corrected semi-normal equations is taken too, in closed form: t = X_sᵀr is summed in pass 2, and the
 * corrected residual r − X_s(RᵀR)⁻¹t has squared length ‖r‖² − ‖R⁻ᵀt‖² (no third pass). Same accuracy
 * as residualSS, for the well-conditioned designs it is used on.
 * With `cross`, fill also writes a second vector d per side to D in pass 2 (same layout), and rᵀd is
 * returned per side (r before any correction, which would change it only by a term of the order of the
 * rounding; for search directions, not for reported values).
 */
export function rssOnFactor(
  X: Float64Array[], qr: QrFit, L: number,
  fill: (start: number, m: number, V: Float64Array, pass: 0 | 1, D: Float64Array | null, ws: SidesWorkspace) => void,
  cross = false,
): { rss: Float64Array; cross: Float64Array | null } {
  const k = X.length;
  const n = qr.n;
  const B = SIDE_ROWS;
  const scale = qr.scale;
  const ws = kernel().sidesWorkspace(k, L, B);
  const { V } = ws;
  const D = cross ? ws.D : null;
  const { g, vv } = sidesFirstPass(ws, X, n, L, (start, m) => fill(start, m, V, 0, null, ws));
  const c = new Float64Array(k);
  const coefs = new Float64Array(L * k);
  const correct = new Uint8Array(L);
  for (let l = 0; l < L; l++) {
    for (let j = 0; j < k; j++) c[j] = g[l * k + j] / scale[j];
    forwardSolveRt(qr.R, k, c);
    let pv = 0;
    for (let j = 0; j < k; j++) pv += c[j] * c[j];
    correct[l] = rssErrorBound(qr.condition, qr.n, k, vv[l], vv[l] - pv) > 1e-16 ? 1 : 0;
    for (let i = k - 1; i >= 0; i--) {
      let s = c[i];
      for (let j = i + 1; j < k; j++) s -= qr.R[i * k + j] * c[j];
      c[i] = s / qr.R[i * k + i];
    }
    for (let j = 0; j < k; j++) coefs[l * k + j] = c[j] / scale[j];
  }
  const rr = new Float64Array(L);
  const rd = cross ? new Float64Array(L) : null;
  const t = new Float64Array(L * k);
  for (let start = 0; start < n; start += B) {
    const m = Math.min(B, n - start);
    fill(start, m, V, 1, D, ws);
    ws.load(X, start, m);
    for (let l = 0; l < L; l++) {
      ws.subtract(l, m, coefs, l * k);
      rr[l] += ws.selfDot(l, m);
      if (rd) rd[l] += ws.crossDot(l, m);
      if (correct[l]) ws.dots(l, m, t, l * k);
    }
  }
  const rss = new Float64Array(L);
  for (let l = 0; l < L; l++) {
    let corr = 0;
    if (correct[l]) {
      for (let j = 0; j < k; j++) c[j] = t[l * k + j] / scale[j];
      forwardSolveRt(qr.R, k, c);
      for (let j = 0; j < k; j++) corr += c[j] * c[j];
    }
    rss[l] = rr[l] - corr;
  }
  return { rss, cross: rd };
}

/**
 * One pass for L sides (generated as in rssOnFactor): the RSS by the normal-equations formula
 * ‖v‖² − ‖R⁻ᵀX_sᵀv‖², with a bound of its relative error, 10ε(√n + kκ²)·‖v‖²/RSS (Infinity where the
 * formula cancels away, RSS below 1e-6·‖v‖²), and ‖v‖² itself. For screening many sides (a grid), never
 * for a reported value.
 */
export function roughRssOnFactor(X: Float64Array[], qr: QrFit, L: number, fill: (start: number, m: number, V: Float64Array, ws: SidesWorkspace) => void): { rss: Float64Array; bound: Float64Array; vv: Float64Array } {
  const k = X.length;
  const n = qr.n;
  const ws = kernel().sidesWorkspace(k, L, SIDE_ROWS);
  const { g, vv } = sidesFirstPass(ws, X, n, L, (start, m) => fill(start, m, ws.V, ws));
  const rss = new Float64Array(L);
  const bound = new Float64Array(L);
  const c = new Float64Array(k);
  for (let l = 0; l < L; l++) {
    for (let j = 0; j < k; j++) c[j] = g[l * k + j] / qr.scale[j];
    forwardSolveRt(qr.R, k, c);
    let pv = 0;
    for (let j = 0; j < k; j++) pv += c[j] * c[j];
    rss[l] = vv[l] - pv;
    // rounding of the two sums (ε√n·‖v‖²) and the backward error of R (kκ²ε·‖v‖²), relative to RSS
    const kappa = qr.condition;
    bound[l] = rss[l] > 1e-6 * vv[l] ? (10 * Number.EPSILON * (Math.sqrt(n) + k * kappa * kappa) * vv[l]) / rss[l] : Infinity;
  }
  return { rss, bound, vv };
}
