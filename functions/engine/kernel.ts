/**
 * The inner loops of the least-squares core, behind one small interface with two implementations:
 *
 * - "js": plain JavaScript loops (the reference, and the fallback everywhere);
 * - "wasm": the same loops in WebAssembly with 128-bit SIMD (wasm/assembly/kernel.ts, compiled by
 *   scripts/build-wasm.js into wasm/kernelBytes.ts), bitwise equal to "js" because every sum keeps
 *   the same order of operations (test/engine/kernel.test.ts).
 *
 * The WebAssembly module is compiled synchronously on first use (it is under 1 KB, well below the
 * size browsers allow for synchronous compilation on a page's main thread). Where WebAssembly or
 * its SIMD instructions are missing, or the page's content security policy refuses compilation
 * (it needs 'wasm-unsafe-eval'), the JavaScript kernel is used; the engine stays synchronous and
 * gives the same numbers either way. DEVELOPERS.md describes the build and the choice of default.
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
  /**
   * Householder reduction of the first m rows of C against the running triangle T: afterwards
   * column j of C holds reflector j below its implicit leading 1 (in T's row j) and tau[j] its
   * factor, 0 where the column had nothing below the diagonal (the identity).
   */
  reduce(m: number): void;
}

export interface Kernel {
  readonly name: KernelName;
  /** Zeroed buffers for a blocked QR of k columns and y, with blocks of `rows` rows. */
  qrWorkspace(k: number, rows: number): QrWorkspace;
}

/** The loops in plain JavaScript. */
export const jsKernel: Kernel = {
  name: "js",
  qrWorkspace(k: number, rows: number): QrWorkspace {
    const k1 = k + 1;
    const T = new Float64Array(k1 * k1);
    const C = new Float64Array(k1 * rows);
    const tau = new Float64Array(k);
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
    return { T, C, tau, reduce };
  },
};

interface KernelExports {
  memory: WebAssembly.Memory;
  heapBase(): number;
  reduceBlock(pT: number, pC: number, pTau: number, k: number, m: number, stride: number, pW: number): void;
}

/** Workspaces larger than this (k above about 1,400) use the JavaScript kernel instead of growing the module's memory further. */
const MAX_WASM_BYTES = 64 * 1024 * 1024;
const PAGE = 65536;

function hexBytes(hex: string): Uint8Array<ArrayBuffer> {
  const b = new Uint8Array(hex.length / 2);
  for (let i = 0; i < b.length; i++) b[i] = parseInt(hex.substr(2 * i, 2), 16);
  return b;
}

/** The WebAssembly kernel over an instantiated module. */
function wasmKernelOf(x: KernelExports): Kernel {
  const base = x.heapBase();
  const align = (b: number) => (b + 15) & ~15;
  return {
    name: "wasm",
    qrWorkspace(k: number, rows: number): QrWorkspace {
      const k1 = k + 1;
      const pT = base;
      const pTau = align(pT + 8 * k1 * k1);
      const pC = align(pTau + 8 * k);
      const pW = align(pC + 8 * k1 * rows);
      const end = pW + 8 * (k1 + 4);
      if (end > MAX_WASM_BYTES) return jsKernel.qrWorkspace(k, rows);
      const have = x.memory.buffer.byteLength;
      if (end > have) x.memory.grow(Math.ceil((end - have) / PAGE));
      const buf = x.memory.buffer; // after any growth: views of the old buffer are detached
      const T = new Float64Array(buf, pT, k1 * k1);
      const tau = new Float64Array(buf, pTau, k);
      const C = new Float64Array(buf, pC, k1 * rows);
      T.fill(0);
      tau.fill(0);
      C.fill(0);
      return { T, C, tau, reduce: (m: number) => x.reduceBlock(pT, pC, pTau, k, m, rows, pW) };
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
