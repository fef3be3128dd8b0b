/**
 * The inner loops of the least-squares core, behind one small interface with two implementations:
 *
 * - "js": plain JavaScript loops (the reference, and the fallback everywhere);
 * - "wasm": the same loops in WebAssembly with 128-bit SIMD (wasm/assembly/kernel.ts, compiled by
 *   scripts/build-wasm.js into wasm/kernelBytes.ts), bitwise equal to "js" because every sum keeps
 *   the same order of operations (test/engine/kernel.test.ts).
 *
 * The WebAssembly module is compiled synchronously on first use: it is under 4 KB, the size browsers
 * allow for synchronous compilation on a page's main thread (test/engine/kernel.test.ts keeps it
 * so). Where WebAssembly or its SIMD instructions are missing, or the page's content security policy
 * refuses compilation (it needs 'wasm-unsafe-eval'), the JavaScript kernel is used; the engine stays
 * synchronous and gives the same numbers either way. DEVELOPERS.md describes the build and the
 * choice of default.
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
}

export interface Kernel {
  readonly name: KernelName;
  /** Zeroed buffers for a blocked QR of k columns and y, with blocks of `rows` rows. */
  qrWorkspace(k: number, rows: number): QrWorkspace;
  /** Buffers for passes over the rows of Q with the factor R (row-major k×k) and inv_j = 1/s_j. */
  qWorkspace(R: Float64Array, inv: Float64Array, k: number, rows: number): QWorkspace;
}

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
}

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
  const base = x.heapBase();
  const align = (b: number) => (b + 15) & ~15;
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
      const r = regions([k * rows, k * rows, rows, k * k, k * k, 4, rows, k]);
      if (!r) return jsKernel.qWorkspace(R, inv, k, rows);
      const [Z, , w, M, Rw, , h, invw] = r.views;
      const [pZ, pWs, pw, pM, pR, pS, ph, pInv] = r.offsets;
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
      };
    },
  };
}

let wasmLoaded: Kernel | null | undefined; // undefined: not tried yet

/** The WebAssembly kernel, compiled on first call; null where WebAssembly, its SIMD or the page's policy refuse it. */
export function wasmKernel(): Kernel | null {
  if (wasmLoaded !== undefined) return wasmLoaded;
  wasmLoaded = null;
  try {
    if (typeof WebAssembly !== "object") return null;
    const module = new WebAssembly.Module(hexBytes(KERNEL_WASM_HEX));
    const instance = new WebAssembly.Instance(module, {});
    wasmLoaded = wasmKernelOf(instance.exports as unknown as KernelExports);
  } catch {
    wasmLoaded = null; // no SIMD, or compilation refused (content security policy): the JavaScript kernel
  }
  return wasmLoaded;
}

/**
 * Whether the WebAssembly kernel is used when available. Measured by scripts/bench-kernel.js
 * (`npm run bench`); it is switched on only where it is at least twice as fast as the JavaScript
 * kernel on the block factorisation (DEVELOPERS.md gives the figures).
 */
export const WASM_BY_DEFAULT = true;

let active: Kernel | null = null;

/** The kernel in force. */
export function kernel(): Kernel {
  if (active === null) active = (WASM_BY_DEFAULT ? wasmKernel() : null) ?? jsKernel;
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
