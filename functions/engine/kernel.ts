/**
 * The inner loops of the least-squares core, behind one small interface with two implementations:
 *
 * - "js": plain JavaScript loops (the reference, and the fallback everywhere);
 * - "wasm": the same loops in WebAssembly with 128-bit SIMD (wasm/assembly/kernel.ts, compiled by
 *   scripts/build-wasm.js into wasm/kernelBytes.ts), bitwise equal to "js" because every sum keeps
 *   the same order of operations (test/engine/kernel.test.ts).
 *
 * The WebAssembly module is compiled on first use: synchronously where the host allows it (Node, Web
 * Workers), in the background on a browser page's main thread, which compiles only modules under
 * 4 KB synchronously; until it is ready the JavaScript kernel serves. Where WebAssembly or its SIMD
 * instructions are missing, or the page's content security policy refuses compilation (it needs
 * 'wasm-unsafe-eval'), the JavaScript kernel is used for good. The engine stays synchronous and gives
 * the same numbers either way. DEVELOPERS.md describes the build and the choice of default.
 */
import { axpyBlock, dotBlock } from "./blocks";
import { KERNEL_WASM_HEX } from "./wasm/kernelBytes";

export type KernelName = "js" | "wasm";

/**
 * Buffers of one blocked QR and the reduction of a block in them. T is row-major (k+1)×(k+1), C
 * holds k+1 columns of `rows` doubles (column j at j·rows), tau k entries. Valid until the next
 * qrWorkspace call of the same kernel.
 */
export interface QrWorkspace {
  T: Float64Array;
  C: Float64Array;
  tau: Float64Array;
  /** Rows start … start+m−1 of [X/scale | y] into C: column j is x_j·inv_j, column k is y. */
  load(X: Float64Array[], y: Float64Array, inv: Float64Array, start: number, m: number): void;
  /**
   * Householder reduction of the first m rows of C against the running triangle T: afterwards
   * column j of C holds reflector j below its implicit leading 1 (in T's row j) and tau[j] its
   * factor, 0 where the column had nothing below the diagonal (the identity).
   */
  reduce(m: number): void;
}

/**
 * Buffers of a pass over the rows of Q = X_s R⁻¹ (covariance.ts), block by block. Z holds k columns
 * of `rows` doubles (column j at j·rows), w `rows` weights, h `rows` leverages, M a row-major k×k
 * sum (zeroed). Valid until the next workspace call of the same kernel.
 */
export interface QWorkspace {
  Z: Float64Array;
  w: Float64Array;
  h: Float64Array;
  M: Float64Array;
  /** Rows start … start+m−1 of Q into Z: z_j = (x_j/s_j − Σ_{l<j} R_lj z_l)/R_jj. */
  qRows(X: Float64Array[], start: number, m: number): void;
  /** h_i = Σ_j z_ji² for i < m: the leverages of the block's rows. */
  leverage(m: number): void;
  /** M_ab += Σ_{i<m} w_i z_ai z_bi for b ≥ a (the upper triangle of a sandwich's meat). */
  meat(m: number): void;
  /**
   * w from the residuals e[start … start+m−1] and the leverages in h: kind 0 (HC0) e², 1 (HC1) e²·f,
   * 2 (HC2) e²/(1 − h), 3 (HC3) e²/((1 − h)(1 − h)); a row with h ≥ limit gets 0 and is counted
   * (returned), for the caller to name.
   */
  hcWeights(e: Float64Array, start: number, m: number, kind: number, f: number, limit: number): number;
}

/**
 * What a column's later passes would compute, taken while it is at hand: max|v| (maxAbs's) and Σv²
 * (sumSquares's, the same double), with the column they describe (a reader checks it is the same array).
 */
export interface ColumnFacts {
  col: Float64Array;
  maxAbs: number;
  sumSq: number;
}

/**
 * Passes over whole columns (of any length). They use no workspace, so they may run between a
 * workspace's calls.
 */
export interface ColumnOps {
  /** col[i] = log col[i] for every i, Math.log's values (fdlibm's log: V8's Math.log is fdlibm's). */
  logInPlace(col: Float64Array): void;
  /** logInPlace, and the logged column's facts from the same read: max|log x| and Σ(log x)² in order. */
  logWithFacts(col: Float64Array): ColumnFacts;
  /** max_i |v_i| (0 for an empty column; NaN never counts). */
  maxAbs(v: Float64Array): number;
  /** The compensated sum of col (Neumaier's, over the even and the odd rows, then combined) and how many values are ≤ 0. */
  scan(col: Float64Array): { sum: number; low: number };
  /** Σ v_i², one addition after another in order (the plain loop's sum). */
  sumSquares(v: Float64Array): number;
  /** r[i] = y[i] − b_0·X_0[i] − b_1·X_1[i] − …, the products subtracted in order of j, for every row. */
  residuals(X: Float64Array[], b: Float64Array, y: Float64Array, r: Float64Array): void;
  /** out[i] = Math.exp(s·src[i]) for every i (fdlibm's exp: V8's Math.exp is fdlibm's); out may be src. */
  expScaled(src: Float64Array, s: number, out: Float64Array): void;
  /** out[i] = Math.expm1(λ·src[i])/λ + c for every i (fdlibm's expm1, as V8's Math.expm1); out may be src. */
  expm1Scaled(src: Float64Array, lambda: number, c: number, out: Float64Array): void;
}

/**
 * Buffers of L right-hand sides projected on k columns, block by block (leastSquares.ts's
 * rssOnFactor): V and D hold L sides of `rows` doubles each (side l at l·rows). Valid until the next
 * workspace call of the same kernel.
 */
export interface SidesWorkspace {
  V: Float64Array;
  D: Float64Array;
  /** The block's columns are rows start … start+m−1 of X. */
  load(X: Float64Array[], start: number, m: number): void;
  /** g[o + j] += Σ_{i<m} X_j[i]·V_l[i] for j < k (each sum as dotBlock's, then added). */
  dots(l: number, m: number, g: Float64Array, o: number): void;
  /** V_l[i] −= b[o + j]·X_j[i] for j = 0 … k−1 in order, skipping zero factors. */
  subtract(l: number, m: number, b: Float64Array, o: number): void;
  /** Σ_{i<m} V_l[i]² (dotBlock's order). */
  selfDot(l: number, m: number): number;
  /** Σ_{i<m} V_l[i]·D_l[i] (dotBlock's order). */
  crossDot(l: number, m: number): number;
  /** The block's rows start … start+m−1 of u, and of a where given, for lattice and slope. */
  aux(u: Float64Array, a: Float64Array | null, start: number, m: number): void;
  /**
   * V_l[i] = (b^|q| − 1)·inv + c with b = a_i for q > 0 and b = 1/a_i for q < 0, the power a chain of
   * |q| products from 1; V_l[i] = u_i + c for q = 0 (u and a from aux).
   */
  lattice(l: number, m: number, q: number, inv: number, c: number): void;
  /**
   * D_l[i] = the Box–Cox transform's derivative in λ from u_i (aux) and w_i = V_l[i] (constant c0
   * included): u²(1/2 + x(1/3 + x(1/8 + x/30))) with x = λu where |x| < 1e-4 or |λ| < 1e-12, else
   * (u(λ(w − c0) + 1) − (w − c0))/λ; plus c1.
   */
  slope(l: number, m: number, lambda: number, c0: number, c1: number): void;
}

export interface Kernel extends ColumnOps {
  readonly name: KernelName;
  /** Buffers for L sides on k columns, blocks of `rows` rows. */
  sidesWorkspace(k: number, L: number, rows: number): SidesWorkspace;
  /** Zeroed buffers for a blocked QR of k columns and y, with blocks of `rows` rows. */
  qrWorkspace(k: number, rows: number): QrWorkspace;
  /** Buffers for passes over the rows of Q with the factor R (row-major k×k) and inv_j = 1/s_j. */
  qWorkspace(R: Float64Array, inv: Float64Array, k: number, rows: number): QWorkspace;
}

/** (s0 + c0) + (s1 + c1) for two compensated sums: the two leading parts added by one more Neumaier step. */
function combineSums(s0: number, c0: number, s1: number, c1: number): number {
  const t = s0 + s1;
  const c = c0 + c1 + (Math.abs(s0) >= Math.abs(s1) ? s0 - t + s1 : s1 - t + s0);
  return t + c;
}

/** The column operations in plain JavaScript. */
const jsColumnOps: ColumnOps = {
  logInPlace(col: Float64Array): void {
    for (let i = 0; i < col.length; i++) col[i] = Math.log(col[i]);
  },
  logWithFacts(col: Float64Array): ColumnFacts {
    jsColumnOps.logInPlace(col);
    return { col, maxAbs: jsColumnOps.maxAbs(col), sumSq: jsColumnOps.sumSquares(col) };
  },
  maxAbs(v: Float64Array): number {
    let m = 0;
    for (let i = 0; i < v.length; i++) {
      const a = Math.abs(v[i]);
      if (a > m) m = a;
    }
    return m;
  },
  scan(col: Float64Array): { sum: number; low: number } {
    // two Neumaier sums, over the even and over the odd rows, combined by one more compensated step
    let s0 = 0;
    let c0 = 0;
    let s1 = 0;
    let c1 = 0;
    let low = 0;
    let i = 0;
    for (; i + 1 < col.length; i += 2) {
      const v = col[i];
      const t = s0 + v;
      c0 += Math.abs(s0) >= Math.abs(v) ? s0 - t + v : v - t + s0;
      s0 = t;
      const u = col[i + 1];
      const t1 = s1 + u;
      c1 += Math.abs(s1) >= Math.abs(u) ? s1 - t1 + u : u - t1 + s1;
      s1 = t1;
      if (v <= 0) low++;
      if (u <= 0) low++;
    }
    if (i < col.length) {
      const v = col[i];
      const t = s0 + v;
      c0 += Math.abs(s0) >= Math.abs(v) ? s0 - t + v : v - t + s0;
      s0 = t;
      if (v <= 0) low++;
    }
    return { sum: combineSums(s0, c0, s1, c1), low };
  },
  sumSquares(v: Float64Array): number {
    let s = 0;
    for (let i = 0; i < v.length; i++) s += v[i] * v[i];
    return s;
  },
  residuals(X: Float64Array[], b: Float64Array, y: Float64Array, r: Float64Array): void {
    r.set(y);
    const n = y.length;
    for (let j = 0; j < X.length; j++) {
      const bj = b[j];
      const xj = X[j];
      for (let i = 0; i < n; i++) r[i] -= bj * xj[i];
    }
  },
  expScaled(src: Float64Array, s: number, out: Float64Array): void {
    for (let i = 0; i < src.length; i++) out[i] = Math.exp(s * src[i]);
  },
  expm1Scaled(src: Float64Array, lambda: number, c: number, out: Float64Array): void {
    for (let i = 0; i < src.length; i++) out[i] = Math.expm1(lambda * src[i]) / lambda + c;
  },
};

/** Rows start … start+m−1 of Q into Z (column j at j·rows), as whole-block vector operations. */
function jsQRows(X: Float64Array[], R: Float64Array, inv: Float64Array, k: number, rows: number, start: number, m: number, Z: Float64Array): void {
  for (let j = 0; j < k; j++) {
    const o = j * rows;
    const src = X[j];
    const s = inv[j];
    for (let i = 0; i < m; i++) Z[o + i] = src[start + i] * s;
    // two earlier columns per pass: half the passes over the block
    let l = 0;
    for (; l + 1 < j; l += 2) {
      const r0 = R[l * k + j];
      const r1 = R[(l + 1) * k + j];
      const o0 = l * rows;
      const o1 = o0 + rows;
      for (let i = 0; i < m; i++) Z[o + i] -= r0 * Z[o0 + i] + r1 * Z[o1 + i];
    }
    if (l < j) {
      const r0 = R[l * k + j];
      const o0 = l * rows;
      for (let i = 0; i < m; i++) Z[o + i] -= r0 * Z[o0 + i];
    }
    const d = 1 / R[j * k + j];
    for (let i = 0; i < m; i++) Z[o + i] *= d;
  }
}

/** The loops in plain JavaScript. */
export const jsKernel: Kernel = {
  name: "js",
  ...jsColumnOps,
  sidesWorkspace(k: number, L: number, rows: number): SidesWorkspace {
    const V = new Float64Array(L * rows);
    const D = new Float64Array(L * rows);
    let X: Float64Array[] = [];
    let at = 0;
    let U: Float64Array = new Float64Array(0);
    let A: Float64Array | null = null;
    let from = 0;
    return {
      V,
      D,
      load(cols: Float64Array[], start: number): void {
        X = cols;
        at = start;
      },
      dots(l: number, m: number, g: Float64Array, o: number): void {
        for (let j = 0; j < k; j++) g[o + j] += dotBlock(X[j], at, V, l * rows, m);
      },
      subtract(l: number, m: number, b: Float64Array, o: number): void {
        const ov = l * rows;
        for (let j = 0; j < k; j++) {
          const w = b[o + j];
          if (w === 0) continue;
          const col = X[j];
          for (let i = 0; i < m; i++) V[ov + i] -= w * col[at + i];
        }
      },
      selfDot: (l: number, m: number) => dotBlock(V, l * rows, V, l * rows, m),
      crossDot: (l: number, m: number) => dotBlock(V, l * rows, D, l * rows, m),
      aux(u: Float64Array, a: Float64Array | null, start: number): void {
        U = u;
        A = a;
        from = start;
      },
      lattice(l: number, m: number, q: number, inv: number, c: number): void {
        const ov = l * rows;
        if (q === 0) {
          for (let i = 0; i < m; i++) V[ov + i] = U[from + i] + c;
          return;
        }
        const times = Math.abs(q);
        const E = A as Float64Array;
        for (let i = 0; i < m; i++) {
          const b = q > 0 ? E[from + i] : 1 / E[from + i];
          let p = b;
          for (let t = 1; t < times; t++) p *= b;
          V[ov + i] = (p - 1) * inv + c;
        }
      },
      slope(l: number, m: number, lambda: number, c0: number, c1: number): void {
        const ov = l * rows;
        const small = Math.abs(lambda) < 1e-12;
        for (let i = 0; i < m; i++) {
          const v = U[from + i];
          const x = lambda * v;
          const wi = V[ov + i] - c0;
          D[ov + i] = (small || Math.abs(x) < 1e-4 ? v * v * (0.5 + x * (1 / 3 + x * (1 / 8 + x / 30))) : (v * (lambda * wi + 1) - wi) / lambda) + c1;
        }
      },
    };
  },
  qrWorkspace(k: number, rows: number): QrWorkspace {
    const k1 = k + 1;
    const T = new Float64Array(k1 * k1);
    const C = new Float64Array(k1 * rows);
    const tau = new Float64Array(k);
    const load = (X: Float64Array[], y: Float64Array, inv: Float64Array, start: number, m: number): void => {
      for (let j = 0; j < k; j++) {
        const src = X[j];
        const s = inv[j];
        const o = j * rows;
        for (let i = 0; i < m; i++) C[o + i] = src[start + i] * s;
      }
      const oy = k * rows;
      for (let i = 0; i < m; i++) C[oy + i] = y[start + i];
    };
    const reduce = (m: number): void => {
      for (let j = 0; j < k; j++) {
        const oj = j * rows;
        const ss = dotBlock(C, oj, C, oj, m);
        if (ss === 0) {
          tau[j] = 0;
          continue; // nothing below the diagonal to annihilate: the identity, tau = 0
        }
        const rjj = T[j * k1 + j];
        const alpha = Math.sqrt(rjj * rjj + ss);
        const beta = rjj >= 0 ? -alpha : alpha;
        const v0 = rjj - beta;
        const t = (beta - rjj) / beta;
        const iv0 = 1 / v0;
        for (let i = 0; i < m; i++) C[oj + i] *= iv0;
        T[j * k1 + j] = beta;
        tau[j] = t;
        for (let c = j + 1; c < k1; c++) {
          const oc = c * rows;
          const w = t * dotBlock(C, oj, C, oc, m, T[j * k1 + c]);
          T[j * k1 + c] -= w;
          axpyBlock(C, oj, oc, m, w);
        }
      }
    };
    return { T, C, tau, load, reduce };
  },
  qWorkspace(R: Float64Array, inv: Float64Array, k: number, rows: number): QWorkspace {
    const Z = new Float64Array(k * rows);
    const W = new Float64Array(k * rows);
    const w = new Float64Array(rows);
    const h = new Float64Array(rows);
    const M = new Float64Array(k * k);
    return {
      Z,
      w,
      h,
      M,
      qRows: (X, start, m) => jsQRows(X, R, inv, k, rows, start, m, Z),
      leverage(m: number): void {
        h.fill(0, 0, m);
        for (let j = 0; j < k; j++) {
          const o = j * rows;
          for (let i = 0; i < m; i++) h[i] += Z[o + i] * Z[o + i];
        }
      },
      meat(m: number): void {
        for (let a = 0; a < k; a++) {
          const o = a * rows;
          for (let i = 0; i < m; i++) W[o + i] = w[i] * Z[o + i];
        }
        for (let a = 0; a < k; a++) {
          for (let b = a; b < k; b++) M[a * k + b] += dotBlock(W, a * rows, Z, b * rows, m);
        }
      },
      hcWeights(e: Float64Array, start: number, m: number, kind: number, f: number, limit: number): number {
        let ones = 0;
        for (let i = 0; i < m; i++) {
          const ei = e[start + i];
          const e2 = ei * ei;
          let wi = e2;
          if (kind === 1) wi = e2 * f;
          else if (kind >= 2) {
            const hi = h[i];
            if (hi >= limit) {
              ones++;
              wi = 0;
            } else wi = kind === 2 ? e2 / (1 - hi) : e2 / ((1 - hi) * (1 - hi));
          }
          w[i] = wi;
        }
        return ones;
      },
    };
  },
};

interface KernelExports {
  memory: WebAssembly.Memory;
  heapBase(): number;
  reduceBlock(pT: number, pC: number, pTau: number, k: number, m: number, stride: number, pW: number): void;
  qRowsBlock(pZ: number, pR: number, pInv: number, k: number, m: number, stride: number): void;
  scaleColumns(pC: number, pInv: number, k: number, m: number, stride: number): void;
  meatBlock(pZ: number, pw: number, pWs: number, pM: number, pS: number, k: number, m: number, stride: number): void;
  leverageBlock(pZ: number, ph: number, k: number, m: number, stride: number): void;
  axpyColumn(pa: number, pb: number, m: number, w: number): void;
  latticeSide(pv: number, pu: number, pa: number, m: number, q: number, inv: number, c: number): void;
  slopeSide(pd: number, pw: number, pu: number, m: number, lambda: number, c0: number, c1: number): void;
  maxAbsColumn(p: number, m: number, m0: number): number;
  scanColumn(p: number, m: number, pS: number): number;
  logColumn(p: number, m: number): number;
  dotsBlock(pX: number, pv: number, k: number, m: number, stride: number, pg: number): void;
  subtractBlock(pX: number, pv: number, pb: number, k: number, m: number, stride: number): void;
  dotColumn(pa: number, pb: number, m: number): number;
  sumSquaresColumn(p: number, m: number, s0: number): number;
  hcWeightsBlock(pe: number, ph: number, pw: number, m: number, kind: number, f: number, limit: number): number;
  factsColumn(p: number, m: number, pS: number): void;
  expColumn(p: number, m: number, s: number): number;
  expm1Column(p: number, m: number, lambda: number, c: number): number;
}

/** Rows per chunk of the column operations (two chunks and a pair of sums sit at the start of the heap). */
const CHUNK = 2048;

/** Workspaces larger than this (k in the thousands) use the JavaScript kernel instead of growing the module's memory further. */
const MAX_WASM_BYTES = 64 * 1024 * 1024;
const PAGE = 65536;

function hexBytes(hex: string): Uint8Array<ArrayBuffer> {
  const b = new Uint8Array(hex.length / 2);
  for (let i = 0; i < b.length; i++) b[i] = parseInt(hex.slice(2 * i, 2 * i + 2), 16);
  return b;
}

/** The WebAssembly kernel over an instantiated module. */
function wasmKernelOf(x: KernelExports): Kernel {
  const align = (b: number) => (b + 15) & ~15;
  // the column operations' chunks A and B and their pair of sums, before every workspace
  const pA = x.heapBase();
  const pB = pA + 8 * CHUNK;
  const pS = pB + 8 * CHUNK;
  const base = align(pS + 32);
  if (base > x.memory.buffer.byteLength) x.memory.grow(Math.ceil((base - x.memory.buffer.byteLength) / PAGE));
  const chunkA = () => new Float64Array(x.memory.buffer, pA, CHUNK);
  const chunkB = () => new Float64Array(x.memory.buffer, pB, CHUNK);
  /** acc through step(m, acc) for each chunk of v in turn, the chunk copied into A first. */
  const fold = (v: Float64Array, acc: number, step: (m: number, acc: number) => number): number => {
    const A = chunkA();
    for (let s = 0; s < v.length; s += CHUNK) {
      const m = Math.min(CHUNK, v.length - s);
      A.set(v.subarray(s, s + m));
      acc = step(m, acc);
    }
    return acc;
  };
  /**
   * out = f(src) chunk by chunk in the module: each chunk copied into A (an odd one padded with `pad`,
   * a value inside the operation's domain), run over it (it returns how many pairs it could not
   * take), copied out; a chunk the module refuses is computed by the JavaScript twin. `after(m)` then
   * sees the chunk's results in A.
   */
  const mapChunks = (src: Float64Array, out: Float64Array, pad: number, run: (m: number) => number, twin: (part: Float64Array, dst: Float64Array) => void, after: ((m: number) => void) | null = null): void => {
    const A = chunkA();
    for (let s = 0; s < src.length; s += CHUNK) {
      const m = Math.min(CHUNK, src.length - s);
      const part = src.subarray(s, s + m);
      A.set(part);
      if (m & 1) A[m] = pad;
      const dst = out.subarray(s, s + m);
      if (run((m + 1) & ~1) === 0) dst.set(A.subarray(0, m));
      else {
        twin(part, dst);
        if (after) A.set(dst);
      }
      if (after) after(m);
    }
  };
  /** The log of each chunk in the module; with facts, max|log x| and Σ(log x)² of the logged chunks into S. */
  const logChunks = (col: Float64Array, facts: boolean): Float64Array => {
    const S = new Float64Array(x.memory.buffer, pS, 2);
    S[0] = 0;
    S[1] = 0;
    // a chunk with a value that is not a positive normal double takes Math.log's answers (−Infinity, NaN…)
    mapChunks(col, col, 1, (m) => x.logColumn(pA, m), (_, dst) => jsColumnOps.logInPlace(dst), facts ? (m) => x.factsColumn(pA, m, pS) : null);
    return Float64Array.from(S);
  };
  const columnOps: ColumnOps = {
    expScaled(src: Float64Array, sc: number, out: Float64Array): void {
      mapChunks(src, out, 0, (m) => x.expColumn(pA, m, sc), (part, dst) => jsColumnOps.expScaled(part, sc, dst));
    },
    expm1Scaled(src: Float64Array, lambda: number, c: number, out: Float64Array): void {
      mapChunks(src, out, 0, (m) => x.expm1Column(pA, m, lambda, c), (part, dst) => jsColumnOps.expm1Scaled(part, lambda, c, dst));
    },
    logInPlace(col: Float64Array): void {
      logChunks(col, false);
    },
    logWithFacts(col: Float64Array): ColumnFacts {
      const S = logChunks(col, true);
      return { col, maxAbs: S[0], sumSq: S[1] };
    },
    maxAbs: (v: Float64Array) => fold(v, 0, (m, best) => x.maxAbsColumn(pA, m, best)),
    scan(col: Float64Array): { sum: number; low: number } {
      const S = new Float64Array(x.memory.buffer, pS, 4);
      S.fill(0);
      const low = fold(col, 0, (m, count) => count + x.scanColumn(pA, m, pS));
      return { sum: combineSums(S[0], S[2], S[1], S[3]), low };
    },
    sumSquares: (v: Float64Array) => fold(v, 0, (m, sum) => x.sumSquaresColumn(pA, m, sum)),
    residuals(X: Float64Array[], b: Float64Array, y: Float64Array, r: Float64Array): void {
      const A = chunkA();
      const B = chunkB();
      const n = y.length;
      for (let s = 0; s < n; s += CHUNK) {
        const m = Math.min(CHUNK, n - s);
        A.set(y.subarray(s, s + m));
        for (let j = 0; j < X.length; j++) {
          B.set(X[j].subarray(s, s + m));
          x.axpyColumn(pB, pA, m, b[j]);
        }
        r.set(A.subarray(0, m), s);
      }
    },
  };
  let generation = 0;
  /**
   * Views of consecutive regions of sizes[i] doubles in the module's memory, growing it when needed
   * (growth detaches every earlier view, so a workspace is valid only until the next one: each
   * checks its generation before use and throws rather than read a detached view).
   */
  const regions = (sizes: number[]): { views: Float64Array[]; offsets: number[]; check: () => void } | null => {
    const offsets: number[] = [];
    let end = base;
    for (const n of sizes) {
      offsets.push(end);
      end = align(end + 8 * n);
    }
    if (end > MAX_WASM_BYTES) return null;
    const have = x.memory.buffer.byteLength;
    if (end > have) {
      try {
        x.memory.grow(Math.ceil((end - have) / PAGE));
      } catch {
        return null; // the memory could not grow: the JavaScript kernel's own arrays instead
      }
    }
    const buf = x.memory.buffer;
    const views = sizes.map((n, i) => new Float64Array(buf, offsets[i], n));
    for (const v of views) v.fill(0);
    const mine = ++generation;
    const check = () => {
      if (mine !== generation) throw new Error("a WebAssembly kernel workspace was used after a newer one was made");
    };
    return { views, offsets, check };
  };
  return {
    name: "wasm",
    ...columnOps,
    sidesWorkspace(k: number, L: number, rows: number): SidesWorkspace {
      // the block's columns `stride` doubles apart: 8 more than the rows, so that they do not all fall
      // on the same sets of the processor's cache (2,048 doubles apart they would, 16 KB each)
      const stride = rows + 8;
      const r = regions([k * stride, L * rows, L * rows, k, k, rows, rows]);
      if (!r) return jsKernel.sidesWorkspace(k, L, rows);
      const [Xb, V, D, g, b, Ub, Ab] = r.views;
      const [pX, pV, pD, pg, pb, pU, pA] = r.offsets;
      return {
        V,
        D,
        load(X: Float64Array[], start: number, m: number): void {
          r.check();
          for (let j = 0; j < k; j++) Xb.set(X[j].subarray(start, start + m), j * stride);
        },
        dots(l: number, m: number, out: Float64Array, o: number): void {
          r.check();
          for (let j = 0; j < k; j++) g[j] = out[o + j];
          x.dotsBlock(pX, pV + 8 * l * rows, k, m, stride, pg);
          for (let j = 0; j < k; j++) out[o + j] = g[j];
        },
        subtract(l: number, m: number, coef: Float64Array, o: number): void {
          r.check();
          for (let j = 0; j < k; j++) b[j] = coef[o + j];
          x.subtractBlock(pX, pV + 8 * l * rows, pb, k, m, stride);
        },
        selfDot(l: number, m: number): number {
          r.check();
          const p = pV + 8 * l * rows;
          return x.dotColumn(p, p, m);
        },
        crossDot(l: number, m: number): number {
          r.check();
          return x.dotColumn(pV + 8 * l * rows, pD + 8 * l * rows, m);
        },
        aux(u: Float64Array, a: Float64Array | null, start: number, m: number): void {
          r.check();
          Ub.set(u.subarray(start, start + m));
          if (a) Ab.set(a.subarray(start, start + m));
        },
        lattice(l: number, m: number, q: number, inv: number, c: number): void {
          r.check();
          x.latticeSide(pV + 8 * l * rows, pU, pA, m, q, inv, c);
        },
        slope(l: number, m: number, lambda: number, c0: number, c1: number): void {
          r.check();
          x.slopeSide(pD + 8 * l * rows, pV + 8 * l * rows, pU, m, lambda, c0, c1);
        },
      };
    },
    qrWorkspace(k: number, rows: number): QrWorkspace {
      const k1 = k + 1;
      const r = regions([k1 * k1, k, k1 * rows, k1 + 4, k]);
      if (!r) return jsKernel.qrWorkspace(k, rows);
      const [T, tau, C, , invw] = r.views;
      const [pT, pTau, pC, pW, pInv] = r.offsets;
      // copies of the rows, then the scaling in the module: the same products as the JavaScript loop
      const load = (X: Float64Array[], y: Float64Array, inv: Float64Array, start: number, m: number): void => {
        r.check();
        for (let j = 0; j < k; j++) C.set(X[j].subarray(start, start + m), j * rows);
        C.set(y.subarray(start, start + m), k * rows);
        invw.set(inv);
        x.scaleColumns(pC, pInv, k, m, rows);
      };
      const reduce = (m: number): void => {
        r.check();
        x.reduceBlock(pT, pC, pTau, k, m, rows, pW);
      };
      return { T, C, tau, load, reduce };
    },
    qWorkspace(R: Float64Array, inv: Float64Array, k: number, rows: number): QWorkspace {
      const r = regions([k * rows, k * rows, rows, k * k, k * k, 4, rows, k, rows]);
      if (!r) return jsKernel.qWorkspace(R, inv, k, rows);
      const [Z, , w, M, Rw, , h, invw, eb] = r.views;
      const [pZ, pWs, pw, pM, pR, pS, ph, pInv, pe] = r.offsets;
      Rw.set(R);
      invw.set(inv);
      return {
        Z,
        w,
        h,
        M,
        qRows(X: Float64Array[], start: number, m: number): void {
          r.check();
          for (let j = 0; j < k; j++) Z.set(X[j].subarray(start, start + m), j * rows);
          x.qRowsBlock(pZ, pR, pInv, k, m, rows);
        },
        leverage(m: number): void {
          r.check();
          x.leverageBlock(pZ, ph, k, m, rows);
        },
        meat(m: number): void {
          r.check();
          x.meatBlock(pZ, pw, pWs, pM, pS, k, m, rows);
        },
        hcWeights(e: Float64Array, start: number, m: number, kind: number, f: number, limit: number): number {
          r.check();
          eb.set(e.subarray(start, start + m));
          return x.hcWeightsBlock(pe, ph, pw, m, kind, f, limit);
        },
      };
    },
  };
}

let wasmLoaded: Kernel | null | undefined; // undefined: not tried yet, or still compiling
let compiling: Promise<Kernel | null> | null = null;

function kernelOf(instance: WebAssembly.Instance): Kernel {
  return wasmKernelOf(instance.exports as unknown as KernelExports);
}

/**
 * The WebAssembly kernel; null where WebAssembly, its SIMD or the page's policy refuse it, and while
 * it is still compiling. It is compiled synchronously on first call where the host allows that; a
 * browser page's main thread compiles only small modules synchronously (4 KB in Chromium), so there
 * it is compiled in the background instead and the JavaScript kernel serves until it is ready (the
 * same numbers either way).
 */
export function wasmKernel(): Kernel | null {
  if (wasmLoaded !== undefined) return wasmLoaded;
  if (compiling !== null) return null;
  if (typeof WebAssembly !== "object") return (wasmLoaded = null);
  const bytes = hexBytes(KERNEL_WASM_HEX);
  try {
    wasmLoaded = kernelOf(new WebAssembly.Instance(new WebAssembly.Module(bytes), {}));
  } catch {
    // too large to compile synchronously here, or refused (no SIMD, content security policy): the
    // background compilation tells which; a refusal leaves the JavaScript kernel for good
    if (typeof WebAssembly.instantiate !== "function") return (wasmLoaded = null);
    compiling = WebAssembly.instantiate(bytes, {}).then(
      (r) => {
        try {
          wasmLoaded = kernelOf(r.instance);
        } catch {
          wasmLoaded = null;
        }
        return wasmLoaded;
      },
      () => (wasmLoaded = null),
    );
    return null;
  }
  return wasmLoaded;
}

/** The WebAssembly kernel once it is compiled (null where it cannot be): for a caller that prefers to wait. */
export function wasmKernelReady(): Promise<Kernel | null> {
  const now = wasmKernel();
  return compiling !== null && wasmLoaded === undefined ? compiling : Promise.resolve(now);
}

/**
 * Whether the WebAssembly kernel is used when available. Measured by scripts/bench-kernel.js
 * (`npm run bench`); it is switched on only where it is at least twice as fast as the JavaScript
 * kernel on the block factorisation (DEVELOPERS.md gives the figures).
 */
export const WASM_BY_DEFAULT = true;

let active: Kernel | null = null;

/** The kernel in force (the JavaScript kernel while the WebAssembly one is still compiling). */
/** A new column of exp(v_i): Math.exp's doubles, by the kernel in force. */
export function expOf(v: Float64Array): Float64Array {
  const out = new Float64Array(v.length);
  kernel().expScaled(v, 1, out);
  return out;
}

export function kernel(): Kernel {
  if (active !== null) return active;
  const wasm = WASM_BY_DEFAULT ? wasmKernel() : null;
  if (wasm === null && WASM_BY_DEFAULT && wasmLoaded === undefined) return jsKernel; // compiling: ask again next time
  active = wasm ?? jsKernel;
  return active;
}

/**
 * Chooses the kernel (tests and benchmarks compare the two): "default" restores the usual choice.
 * @returns the kernel now in force ("js" when "wasm" was asked for and is unavailable)
 */
export function useKernel(name: KernelName | "default"): Kernel {
  active = name === "js" ? jsKernel : name === "wasm" ? wasmKernel() ?? jsKernel : null;
  return kernel();
}
