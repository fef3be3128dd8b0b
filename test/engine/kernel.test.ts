/**
 * The WebAssembly kernel against the JavaScript kernel (functions/engine/kernel.ts). The two run the
 * same floating-point operations in the same order (the dot product's four partial sums are the
 * lanes of two SIMD accumulators; no fused multiply-add), so the comparison is bitwise: every
 * double equal, including the sign of zero. The reference for the numbers themselves is the
 * JavaScript kernel, which the rest of the suite checks against NIST StRD and R
 * (test/host/nist.test.ts, test/reference/); test/engine/kernelCells.test.ts runs those checks
 * through the cells under both kernels.
 */
import { spawnSync } from "child_process";
import * as path from "path";
import { jsKernel, kernel, useKernel, wasmKernel, WASM_BY_DEFAULT, type Kernel } from "../../functions/engine/kernel";
import { KERNEL_WASM_BYTES } from "../../functions/engine/wasm/kernelBytes";
import { BLOCK_ROWS, leastSquares } from "../../functions/engine/leastSquares";

function rng(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Indices where two arrays differ bit for bit (Object.is: −0 ≠ +0, NaN = NaN). */
function bitDiff(a: ArrayLike<number>, b: ArrayLike<number>): number[] {
  expect(a.length).toBe(b.length);
  const out: number[] = [];
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) out.push(i);
  return out;
}

const wasm = wasmKernel() as Kernel;

/** One or more blocks reduced by a kernel from the same start: returns T, C and tau after the last. */
function reduceWith(K: Kernel, k: number, blocks: { m: number; fill: (j: number, i: number) => number }[], T0?: Float64Array) {
  const rows = BLOCK_ROWS;
  const ws = K.qrWorkspace(k, rows);
  if (T0) ws.T.set(T0);
  for (const b of blocks) {
    for (let j = 0; j <= k; j++) for (let i = 0; i < b.m; i++) ws.C[j * rows + i] = b.fill(j, i);
    ws.reduce(b.m);
  }
  return { T: ws.T.slice(), C: ws.C.slice(), tau: ws.tau.slice() };
}

function expectSame(k: number, blocks: { m: number; fill: (j: number, i: number) => number }[], T0?: Float64Array) {
  // the values are drawn once, so both kernels see the same blocks
  const fixed = blocks.map((b) => {
    const v = new Float64Array((k + 1) * b.m);
    for (let j = 0; j <= k; j++) for (let i = 0; i < b.m; i++) v[j * b.m + i] = b.fill(j, i);
    return { m: b.m, fill: (j: number, i: number) => v[j * b.m + i] };
  });
  const a = reduceWith(jsKernel, k, fixed, T0);
  const b = reduceWith(wasm, k, fixed, T0);
  expect({ T: bitDiff(a.T, b.T), C: bitDiff(a.C, b.C), tau: bitDiff(a.tau, b.tau) }).toEqual({ T: [], C: [], tau: [] });
  return a;
}

describe("the WebAssembly module", () => {
  it("compiles here (Node has WebAssembly with SIMD) and is the default exactly when WASM_BY_DEFAULT says so", () => {
    expect(wasm).not.toBeNull();
    expect(wasm.name).toBe("wasm");
    useKernel("default");
    expect(kernel().name).toBe(WASM_BY_DEFAULT ? "wasm" : "js");
  });

  it("is a small module (its size is stated in kernelBytes.ts; past 4 KB a page's main thread compiles it in the background)", () => {
    expect(KERNEL_WASM_BYTES).toBeGreaterThan(1000);
    expect(KERNEL_WASM_BYTES).toBeLessThan(64 * 1024);
  });

  it("committed bytes (wasm/kernelBytes.ts) are what the AssemblyScript source compiles to", () => {
    const root = path.resolve(__dirname, "../..");
    const r = spawnSync(process.execPath, [path.join(root, "scripts", "build-wasm.js"), "--check"], { cwd: root, encoding: "utf8" });
    expect(r.stderr).toBe("");
    expect(r.status).toBe(0);
  });
});

describe("block reduction: WebAssembly equals JavaScript bitwise", () => {
  const r = rng(7);
  const random = (j: number, i: number) => (r() - 0.5) * (1 + j) + (i % 3 === 0 ? 1e-3 : 0);

  it.each([1, 2, 3, 4, 5, 7, 8, 9, 31, 100, 255, BLOCK_ROWS])("one block of m = %i rows, k = 10", (m) => {
    expectSame(10, [{ m, fill: random }]);
  });

  it.each([1, 2, 3, 6, 20])("k = %i, several full and partial blocks against the running triangle", (k) => {
    expectSame(k, [{ m: BLOCK_ROWS, fill: random }, { m: 17, fill: random }, { m: BLOCK_ROWS, fill: random }, { m: 3, fill: random }]);
  });

  it.each([1, 3, 256])("loading m = %i rows of [X/scale | y] into the block (copies, then the scaling products)", (m) => {
    const k = 5;
    const n = 300;
    const u = rng(m);
    const X = Array.from({ length: k }, () => Float64Array.from({ length: n }, () => (u() - 0.5) * 1e3));
    const y = Float64Array.from({ length: n }, () => u() - 0.5);
    const inv = Float64Array.from({ length: k }, () => 1 / (0.1 + u()));
    const blocks = [jsKernel, wasm].map((K) => {
      const ws = K.qrWorkspace(k, BLOCK_ROWS);
      ws.load(X, y, inv, n - m, m);
      return ws.C.slice();
    });
    expect(bitDiff(blocks[0], blocks[1])).toEqual([]);
    expect(blocks[1][BLOCK_ROWS * k + m - 1]).toBe(y[n - 1]);
  });

  it("k = 0 (y alone) leaves everything as it was", () => {
    const a = expectSame(0, [{ m: 5, fill: random }]);
    expect(a.T[0]).toBe(0);
  });

  it("zero columns take the tau = 0 path (identity) and record tau 0, also after earlier blocks set it", () => {
    // first block, T = 0: a zero column stays zero under the earlier reflections
    const zeroCol3 = (j: number, i: number) => (j === 3 ? 0 : random(j, i));
    const first = expectSame(6, [{ m: 40, fill: zeroCol3 }]);
    expect(first.tau[3]).toBe(0);
    expect(first.tau[2]).not.toBe(0);
    // a later block whose leading columns are zero: their tau set by the first block goes back to 0
    const zeroLead = (j: number, i: number) => (j < 4 ? 0 : random(j, i));
    const a = expectSame(6, [{ m: 40, fill: random }, { m: 40, fill: zeroLead }]);
    expect(Array.from(a.tau.slice(0, 4))).toEqual([0, 0, 0, 0]);
    expect(a.tau[4]).not.toBe(0);
    const allZero = expectSame(4, [{ m: 9, fill: () => 0 }]);
    expect(Array.from(allZero.tau)).toEqual([0, 0, 0, 0]);
  });

  it("a running triangle with negative and positive diagonal entries (both signs of beta)", () => {
    const k = 5;
    const T0 = new Float64Array((k + 1) * (k + 1));
    for (let i = 0; i <= k; i++) for (let j = i; j <= k; j++) T0[i * (k + 1) + j] = (i === j ? (i % 2 ? -1 : 1) * (1 + i) : r() - 0.5);
    expectSame(k, [{ m: 13, fill: random }], T0);
  });

  it("extreme magnitudes (1e-150, 1e150) and signed zeros", () => {
    const tiny = (j: number, i: number) => (i % 5 === 0 ? -0 : random(j, i) * (j % 2 ? 1e-150 : 1e150));
    expectSame(4, [{ m: 11, fill: tiny }, { m: 6, fill: tiny }]);
  });
});

describe("leastSquares under both kernels: the same fit bit for bit", () => {
  function design(n: number, k: number, seed: number, spread: number) {
    const u = rng(seed);
    const X = [new Float64Array(n).fill(1)];
    for (let j = 1; j < k; j++) X.push(Float64Array.from({ length: n }, (_, i) => (j === 1 ? i / n : u()) * spread ** j));
    const y = Float64Array.from({ length: n }, (_, i) => X.reduce((s, c, j) => s + (j + 1) * c[i], 0) + u() - 0.5);
    return { X, y };
  }
  afterAll(() => useKernel("default"));

  it.each([
    [3, 2, 1],
    [257, 4, 1],
    [1000, 10, 1],
    [2049, 6, 1e3], // ill-conditioned: the refinement path keeps the reflectors of every block
    [700, 150, 1], // a wide design: the module's memory grows for it
  ])("n = %i, k = %i (column spread %d): coefficients, R, residuals, condition, refinement", (n, k, spread) => {
    const { X, y } = design(n, k, n + k, spread);
    useKernel("js");
    const a = leastSquares(X, y).qr!;
    useKernel("wasm");
    const b = leastSquares(X, y).qr!;
    expect(b.refined).toBe(a.refined);
    expect({ coef: bitDiff(a.coef, b.coef), R: bitDiff(a.R, b.R), resid: bitDiff(a.resid, b.resid), rss: Object.is(a.rss, b.rss), cond: Object.is(a.condition, b.condition) })
      .toEqual({ coef: [], R: [], resid: [], rss: true, cond: true });
  });

  it("the ill-conditioned case does take the refinement path", () => {
    const { X, y } = design(2049, 6, 2055, 1e3);
    expect(leastSquares(X, y).qr!.refined).toBe(true);
  });
});

describe("fallback to the JavaScript kernel", () => {
  const real = (globalThis as any).WebAssembly;
  afterEach(() => {
    (globalThis as any).WebAssembly = real;
  });
  function freshKernelModule(): typeof import("../../functions/engine/kernel") {
    let mod: typeof import("../../functions/engine/kernel") | undefined;
    jest.isolateModules(() => {
      mod = require("../../functions/engine/kernel");
    });
    return mod!;
  }

  it("without WebAssembly: wasmKernel() is null and the engine uses the JavaScript kernel", () => {
    (globalThis as any).WebAssembly = undefined;
    const m = freshKernelModule();
    expect(m.wasmKernel()).toBeNull();
    expect(m.kernel().name).toBe("js");
    expect(m.useKernel("wasm").name).toBe("js");
  });

  it("when compilation is refused (a content security policy without 'wasm-unsafe-eval', or no SIMD): the JavaScript kernel, also after the background attempt", async () => {
    const refusal = "WebAssembly.Module(): Refused to compile or instantiate WebAssembly module because 'wasm-unsafe-eval' is not an allowed source";
    (globalThis as any).WebAssembly = {
      ...real,
      Module: function Refused() {
        throw new real.CompileError(refusal);
      },
      instantiate: () => Promise.reject(new real.CompileError(refusal)),
    };
    const m = freshKernelModule();
    expect(m.wasmKernel()).toBeNull();
    expect(m.kernel().name).toBe("js");
    expect(await m.wasmKernelReady()).toBeNull();
    expect(m.wasmKernel()).toBeNull();
    expect(m.kernel().name).toBe("js");
  });

  it("on a page's main thread, which refuses to compile a module over 4 KB synchronously: the JavaScript kernel until the background compilation is done, then the WebAssembly kernel", async () => {
    (globalThis as any).WebAssembly = {
      ...real,
      Module: function TooLarge() {
        throw new RangeError("WebAssembly.Module(): Argument 0 is larger than 4KB. Use WebAssembly.compile or compile on a worker thread.");
      },
    };
    const m = freshKernelModule();
    expect(m.kernel().name).toBe("js");
    expect(m.wasmKernel()).toBeNull();
    const ready = await m.wasmKernelReady();
    expect(ready?.name).toBe("wasm");
    expect(m.kernel().name).toBe("wasm");
    // and it gives the JavaScript kernel's numbers (here one column operation; the rest below)
    const v = Float64Array.from({ length: 1001 }, (_, i) => 0.5 + i * 0.37);
    const a = v.slice();
    const b = v.slice();
    m.jsKernel.logInPlace(a);
    m.kernel().logInPlace(b);
    expect(bitDiff(a, b)).toEqual([]);
  });
});

describe("column operations (logs, largest magnitude, compensated sum, residuals): WebAssembly equals JavaScript bitwise", () => {
  const r = rng(20261203);
  /** Lengths around the operations' chunk of 2,048 rows and odd ones (the last lane of a pair). */
  const LENGTHS = [0, 1, 2, 3, 7, 2047, 2048, 2049, 5001];

  it("logInPlace gives Math.log's values, bit for bit, on values spread over the whole range of doubles and near 1", () => {
    const n = 60000;
    const v = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const e = Math.floor(r() * 2040) - 1020; // every binary exponent of a normal double
      v[i] = i % 4 === 0 ? 1 + (r() - 0.5) * Math.pow(2, -1 - 50 * r()) : (0.5 + r()) * Math.pow(2, i % 4 === 1 ? e : e / 64);
    }
    v.set([1, 2, 0.5, Math.SQRT2, Math.SQRT1_2, Number.MAX_VALUE, 2.2250738585072014e-308, 1 + Number.EPSILON, 1 - Number.EPSILON / 2], 0);
    const a = v.slice();
    wasm.logInPlace(a);
    const ref = Float64Array.from(v, Math.log);
    expect(bitDiff(a, ref)).toEqual([]);
    const b = v.slice();
    jsKernel.logInPlace(b);
    expect(bitDiff(a, b)).toEqual([]);
  });

  it("logWithFacts logs as logInPlace and gives maxAbs's and sumSquares's doubles of the logged column", () => {
    for (const n of LENGTHS) {
      const v = Float64Array.from({ length: n }, () => Math.exp((r() - 0.5) * 20));
      if (n > 100) v[77] = 0; // a chunk handed to Math.log (−Infinity): its facts too
      for (const K of [wasm, jsKernel]) {
        const a = v.slice();
        const f = K.logWithFacts(a);
        expect(f.col).toBe(a);
        expect(bitDiff(a, Float64Array.from(v, Math.log))).toEqual([]);
        expect(Object.is(f.maxAbs, jsKernel.maxAbs(a))).toBe(true);
        expect(Object.is(f.sumSq, jsKernel.sumSquares(a))).toBe(true);
      }
    }
  });

  it("logInPlace hands a chunk with zero, negative, subnormal, infinite or NaN values to Math.log (−Infinity, NaN, the subnormal's log)", () => {
    for (const odd of [0, -1, 5e-324, 1e-310, Infinity, NaN, -0]) {
      const v = Float64Array.from({ length: 3001 }, (_, i) => 1 + i / 7);
      v[1234] = odd;
      const a = v.slice();
      wasm.logInPlace(a);
      expect(bitDiff(a, Float64Array.from(v, Math.log))).toEqual([]);
    }
  });

  it("maxAbs and scan equal the JavaScript loops (signed zeros, NaN ignored by maxAbs, values ≤ 0 counted by scan)", () => {
    for (const n of LENGTHS) {
      const v = Float64Array.from({ length: n }, () => (r() - 0.3) * Math.pow(10, Math.floor(r() * 20) - 10));
      if (n > 5) {
        v[3] = -0;
        v[4] = 0;
      }
      expect(Object.is(wasm.maxAbs(v), jsKernel.maxAbs(v))).toBe(true);
      const a = wasm.scan(v);
      const b = jsKernel.scan(v);
      expect(Object.is(a.sum, b.sum)).toBe(true);
      expect(a.low).toBe(b.low);
    }
    const withNaN = Float64Array.from([1, NaN, -3, 2]);
    expect(wasm.maxAbs(withNaN)).toBe(3);
    expect(jsKernel.maxAbs(withNaN)).toBe(3);
  });

  it("scan's compensated sum is stableSum's: 1e16 + 1 − 1e16 in a long column keeps the 1s (Neumaier's algorithm; the exact sum is known)", () => {
    const n = 5000;
    const v = new Float64Array(n).fill(1);
    v[0] = 1e16;
    v[n - 1] = -1e16;
    expect(wasm.scan(v).sum).toBe(n - 2);
    expect(jsKernel.scan(v).sum).toBe(n - 2);
  });

  it("sumSquares equals the plain loop's sum in order (the same double), also past one chunk", () => {
    for (const n of LENGTHS) {
      const v = Float64Array.from({ length: n }, () => (r() - 0.5) * Math.pow(10, Math.floor(r() * 8) - 4));
      let s = 0;
      for (let i = 0; i < n; i++) s += v[i] * v[i];
      expect(Object.is(wasm.sumSquares(v), s)).toBe(true);
      expect(Object.is(jsKernel.sumSquares(v), s)).toBe(true);
    }
  });

  it("residuals equal the JavaScript loop, for several columns and lengths", () => {
    for (const n of LENGTHS) {
      const k = 1 + (n % 5);
      const X = Array.from({ length: k }, () => Float64Array.from({ length: n }, () => r() * 10 - 5));
      const y = Float64Array.from({ length: n }, () => r() * 100);
      const b = Float64Array.from({ length: k }, () => r() - 0.5);
      const ra = new Float64Array(n);
      const rb = new Float64Array(n);
      wasm.residuals(X, b, y, ra);
      jsKernel.residuals(X, b, y, rb);
      expect(bitDiff(ra, rb)).toEqual([]);
    }
  });
});

describe("exponentials (expScaled, expm1Scaled): WebAssembly equals Math.exp and Math.expm1 bit for bit", () => {
  const r = rng(20261204);
  const LENGTHS = [0, 1, 2, 3, 7, 2047, 2048, 2049, 5001];
  /**
   * Arguments spread over every branch of fdlibm's exp and expm1: below 2^−54 and 2^−28 (x itself,
   * 1 + x), up to 0.5·ln2 (no reduction), 0.5–1.5·ln2 (k = ±1), k from −56 to 56 in expm1 (its forms
   * for k ≤ −2, 2 … 19 and 20 … 56) and up to ±708 in exp, with the branch edges themselves.
   */
  function spread(n: number): Float64Array {
    const scales = [1e-300, 1e-17, 1e-9, 1e-3, 0.1, 0.34, 0.5, 1, 1.04, 2, 5, 13.9, 14, 30, 38, 300, 707];
    const v = Float64Array.from({ length: n }, (_, i) => (r() * 2 - 1) * scales[i % scales.length]);
    const L = Math.LN2;
    v.set([0, -0, 0.5 * L, -0.5 * L, 1.5 * L, -1.5 * L, 19.5 * L, 20 * L, -20 * L, 56 * L - 1e-9, 37.99, -37.99, 707.9, -707.9, 2 ** -54, 2 ** -28, -(2 ** -28)], 0);
    return v;
  }

  it("exp(s·x) for s = 1, 0.2 and −1.7 on 60,000 arguments: Math.exp's doubles, and the JavaScript kernel's", () => {
    const v = spread(60001);
    for (const s of [1, 0.2, -1.7]) {
      const a = new Float64Array(v.length);
      wasm.expScaled(v, s, a);
      expect(bitDiff(a, Float64Array.from(v, (x) => Math.exp(s * x)))).toEqual([]);
      const b = new Float64Array(v.length);
      jsKernel.expScaled(v, s, b);
      expect(bitDiff(a, b)).toEqual([]);
    }
  });

  it("expm1(λ·x)/λ + c for λ from −5 to 5 (and 1.3e−5) on 60,000 arguments: Math.expm1's doubles, and the JavaScript kernel's", () => {
    const v = spread(60001).map((x) => x / 8); // λ·x from −5·38/8 to 5·38/8 (past the module's domain at the largest)
    for (const [lambda, c] of [[0.37, 0], [-2, 0.5], [1.3e-5, -1], [5, 0], [-5, 2], [1, 0]]) {
      const a = new Float64Array(v.length);
      wasm.expm1Scaled(v, lambda, c, a);
      expect(bitDiff(a, Float64Array.from(v, (x) => Math.expm1(lambda * x) / lambda + c))).toEqual([]);
      const b = new Float64Array(v.length);
      jsKernel.expm1Scaled(v, lambda, c, b);
      expect(bitDiff(a, b)).toEqual([]);
    }
  });

  it("hand a chunk outside their ordinary domain (|s·x| ≥ 708, |λ·x| ≥ 38, ±Infinity, NaN) to Math.exp and Math.expm1, also in place and at odd lengths", () => {
    for (const n of LENGTHS) {
      const v = Float64Array.from({ length: n }, () => r() * 4 - 2);
      if (n > 3) v.set([800, -800, Infinity, NaN], n - 4);
      const e = v.slice();
      wasm.expScaled(e, 1, e);
      expect(bitDiff(e, Float64Array.from(v, Math.exp))).toEqual([]);
      const f = v.slice();
      wasm.expm1Scaled(f, 20, 0.25, f);
      expect(bitDiff(f, Float64Array.from(v, (x) => Math.expm1(20 * x) / 20 + 0.25))).toEqual([]);
    }
  });
});

describe("sides on a block of columns (rssOnFactor's passes): WebAssembly equals JavaScript bitwise", () => {
  const r = rng(77);
  for (const [k, L, m] of [[1, 1, 1], [3, 2, 256], [11, 1, 255], [6, 3, 7], [17, 2, 130]]) {
    it(`k = ${k}, ${L} side(s), ${m} rows, with a zero factor skipped`, () => {
      const n = m + 40;
      const X = Array.from({ length: k }, () => Float64Array.from({ length: n }, () => r() * 4 - 2));
      const sides = Float64Array.from({ length: L * BLOCK_ROWS }, () => r() * 3);
      const cross = Float64Array.from({ length: L * BLOCK_ROWS }, () => r() - 0.5);
      const coef = Float64Array.from({ length: L * k }, (_, i) => (i % 3 === 1 ? 0 : r() - 0.5));
      const run = (K: Kernel) => {
        const ws = K.sidesWorkspace(k, L, BLOCK_ROWS);
        ws.V.set(sides);
        ws.D.set(cross);
        ws.load(X, 40, m);
        const g = new Float64Array(L * k).fill(0.25);
        const out: number[] = [];
        for (let l = 0; l < L; l++) {
          ws.dots(l, m, g, l * k);
          ws.subtract(l, m, coef, l * k);
          out.push(ws.selfDot(l, m), ws.crossDot(l, m));
        }
        return { g, V: ws.V.slice(), out };
      };
      const a = run(jsKernel);
      const b = run(wasm);
      expect({ g: bitDiff(a.g, b.g), V: bitDiff(a.V, b.V), out: bitDiff(a.out, b.out) }).toEqual({ g: [], V: [], out: [] });
    });
  }
});

describe("Box–Cox sides (the screened lattice and the transform's slope): WebAssembly equals JavaScript bitwise", () => {
  const r = rng(91);
  const step = 0.2;
  // u spans the series' switch at |λu| = 1e-4 and large |λu|; a = e^{step·u}, as formCheck.ts makes it
  const make = (n: number) => {
    const u = Float64Array.from({ length: n }, (_, i) => (i % 5 === 0 ? (r() - 0.5) * 1e-3 : (r() - 0.5) * 6));
    const a = Float64Array.from(u, (v) => Math.exp(step * v));
    return { u, a };
  };
  for (const [m, start] of [[1, 0], [2, 3], [255, 5], [256, 0], [131, 40]]) {
    it(`${m} rows from row ${start}: every power −10 … 10, and the slope at λ from −2 to 2 (0 included)`, () => {
      const { u, a } = make(start + m + 8);
      const qs = Array.from({ length: 21 }, (_, i) => i - 10);
      const lambdas = [-2, -0.6, -1e-13, 0, 1e-5, 0.4, 1, 2];
      const run = (K: Kernel) => {
        const ws = K.sidesWorkspace(3, qs.length, BLOCK_ROWS);
        ws.aux(u, a, start, m);
        qs.forEach((q, l) => ws.lattice(l, m, q, q === 0 ? 0 : 1 / (q * step), 0.125 * l));
        const V = ws.V.slice();
        const D: number[] = [];
        lambdas.forEach((lam, l) => {
          ws.slope(l, m, lam, 0.125 * l, -0.5);
          D.push(...ws.D.subarray(l * BLOCK_ROWS, l * BLOCK_ROWS + m));
        });
        return { V, D };
      };
      const js = run(jsKernel);
      const w = run(wasm);
      expect({ V: bitDiff(js.V, w.V), D: bitDiff(js.D, w.D) }).toEqual({ V: [], D: [] });
    });
  }

  it("the lattice is expm1(qhu)/(qh) + c within (|q| + 2)ε, and the slope is d/dλ of expm1(λu)/λ (JavaScript kernel)", () => {
    // references: the identity e^{qhu} = (e^{hu})^q, and w′(λ) = (u·e^{λu} − w)/λ with w = expm1(λu)/λ
    // (its Taylor series u²/2 + λu³/3 + λ²u⁴/8 + … where λu is small), computed by Math.expm1 and Math.exp
    const m = 200;
    const { u, a } = make(m);
    const ws = jsKernel.sidesWorkspace(1, 1, BLOCK_ROWS);
    ws.aux(u, a, 0, m);
    for (const q of [-10, -3, -1, 1, 4, 10]) {
      const lam = q * step;
      ws.lattice(0, m, q, 1 / lam, 0.5);
      for (let i = 0; i < m; i++) {
        const want = Math.expm1(lam * u[i]) / lam;
        const scale = Math.abs(want) + Math.exp(lam * u[i]) / Math.abs(lam);
        expect(Math.abs(ws.V[i] - 0.5 - want)).toBeLessThanOrEqual((Math.abs(q) + 4) * Number.EPSILON * scale);
      }
    }
    for (const lam of [-1.5, -0.2, 0, 0.3, 2]) {
      for (let i = 0; i < m; i++) ws.V[i] = lam === 0 ? u[i] : Math.expm1(lam * u[i]) / lam;
      ws.slope(0, m, lam, 0, 0);
      for (let i = 0; i < m; i++) {
        const v = u[i];
        const want = Math.abs(lam * v) < 1e-3 ? v * v * (1 / 2 + (lam * v) / 3 + (lam * lam * v * v) / 8) : (v * Math.exp(lam * v) - Math.expm1(lam * v) / lam) / lam;
        expect(Math.abs(ws.D[i] - want)).toBeLessThanOrEqual(1e-9 * (1 + Math.abs(want)));
      }
    }
  });
});

describe("rows of Q, leverages and the sandwich's meat: WebAssembly equals JavaScript bitwise", () => {
  const rows = 256;
  /** A well-conditioned upper-triangular R (row-major k×k) with both signs on the diagonal. */
  function triangle(k: number, u: () => number): Float64Array {
    const R = new Float64Array(k * k);
    for (let i = 0; i < k; i++) for (let j = i; j < k; j++) R[i * k + j] = i === j ? (i % 3 === 1 ? -1 : 1) * (1 + u()) : u() - 0.5;
    return R;
  }
  function passes(K: Kernel, X: Float64Array[], R: Float64Array, inv: Float64Array, w: Float64Array, sizes: number[]) {
    const k = X.length;
    const ws = K.qWorkspace(R, inv, k, rows);
    const Zs: number[] = [];
    const hs: number[] = [];
    let start = 0;
    for (const m of sizes) {
      ws.qRows(X, start, m);
      for (let j = 0; j < k; j++) for (let i = 0; i < m; i++) Zs.push(ws.Z[j * rows + i]);
      ws.leverage(m);
      hs.push(...ws.h.subarray(0, m));
      for (let i = 0; i < m; i++) ws.w[i] = w[start + i];
      ws.meat(m);
      start += m;
    }
    return { Z: Zs, h: hs, M: Array.from(ws.M) };
  }

  it.each([
    [1, [1]],
    [2, [3, 256]],
    [3, [2, 5]],
    [4, [256, 7]],
    [5, [1, 255, 9]],
    [7, [256, 256, 3]],
    [10, [256, 131, 1]],
    [13, [64, 33]],
  ])("k = %i, blocks of %j rows", (k, sizes) => {
    const u = rng(100 + k);
    const n = sizes.reduce((a, b) => a + b, 0);
    const X = Array.from({ length: k }, (_, j) => Float64Array.from({ length: n }, () => (u() - 0.5) * 10 ** (j % 3)));
    const inv = Float64Array.from({ length: k }, (_, j) => 1 / (1 + j + u()));
    const w = Float64Array.from({ length: n }, (_, i) => (i % 7 === 3 ? 0 : u() * 3));
    const R = triangle(k, u);
    const a = passes(jsKernel, X, R, inv, w, sizes);
    const b = passes(wasm, X, R, inv, w, sizes);
    expect({ Z: bitDiff(a.Z, b.Z), h: bitDiff(a.h, b.h), M: bitDiff(a.M, b.M) }).toEqual({ Z: [], h: [], M: [] });
    expect(a.M.some((v) => v !== 0)).toBe(true);
  });

  it("HC weights of every kind (e², e²·n/df, e²/(1 − h), e²/(1 − h)²), a row at leverage 1 counted and given 0", () => {
    const r = rng(5);
    const m = 131;
    const e = Float64Array.from({ length: m + 9 }, () => r() * 2 - 1);
    const h = Float64Array.from({ length: m }, () => r() * 0.9);
    h[17] = 1;
    h[40] = 1 - 1e-12;
    for (const kind of [0, 1, 2, 3]) {
      const run = (K: Kernel) => {
        const ws = K.qWorkspace(new Float64Array([1]), new Float64Array([1]), 1, BLOCK_ROWS);
        ws.h.set(h);
        const ones = ws.hcWeights(e, 9, m, kind, 1.0625, 1 - 1e-10);
        return { ones, w: ws.w.slice(0, m) };
      };
      const a = run(jsKernel);
      const b = run(wasm);
      expect(b.ones).toBe(a.ones);
      expect(a.ones).toBe(kind >= 2 ? 2 : 0);
      expect(bitDiff(a.w, b.w)).toEqual([]);
      if (kind === 3) expect(a.w[5]).toBe((e[14] * e[14]) / ((1 - h[5]) * (1 - h[5])));
    }
  });

  it("a workspace used after a newer one was made throws instead of reading stale memory", () => {
    const old = wasm.qWorkspace(new Float64Array([1]), new Float64Array([1]), 1, rows);
    wasm.qrWorkspace(3, rows);
    expect(() => old.meat(1)).toThrow(/newer one/);
  });
});
