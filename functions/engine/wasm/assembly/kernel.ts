/**
 * The WebAssembly kernel (AssemblyScript, compiled by scripts/build-wasm.js into ../kernelBytes.ts).
 *
 * The same loops as the JavaScript kernel in ../../kernel.ts, with two doubles per 128-bit SIMD
 * instruction. Every sum keeps the JavaScript kernel's order of operations (the dot product's four
 * partial sums s0..s3 are the lanes of two f64x2 accumulators, combined as (s0 + s1) + (s2 + s3);
 * WebAssembly has no fused multiply-add in these instructions), so the results are bitwise equal.
 *
 * Memory belongs to the caller: every argument p* is a byte offset into this module's memory,
 * 16-byte aligned, of column-major blocks whose columns are `stride` doubles apart.
 */

/** Where the caller's buffers may start (past this module's own static data). */
export function heapBase(): usize {
  return (__heap_base + 15) & ~(<usize>15);
}

/** s0 + Σ_{i<m} a[i]·b[i], in the JavaScript kernel's order (dotBlock in ../../blocks.ts). */
// @ts-ignore: decorator
@inline
function dot(a: usize, b: usize, m: i32, s0: f64): f64 {
  let acc0 = f64x2.replace_lane(f64x2.splat(0), 0, s0);
  let acc1 = f64x2.splat(0);
  let i = 0;
  for (; i + 3 < m; i += 4) {
    const o = <usize>i << 3;
    acc0 = f64x2.add(acc0, f64x2.mul(v128.load(a + o), v128.load(b + o)));
    acc1 = f64x2.add(acc1, f64x2.mul(v128.load(a + o, 16), v128.load(b + o, 16)));
  }
  let t0 = f64x2.extract_lane(acc0, 0);
  for (; i < m; i++) {
    const o = <usize>i << 3;
    t0 += load<f64>(a + o) * load<f64>(b + o);
  }
  return t0 + f64x2.extract_lane(acc0, 1) + (f64x2.extract_lane(acc1, 0) + f64x2.extract_lane(acc1, 1));
}

/** b[i] −= w·a[i] for i < m. */
// @ts-ignore: decorator
@inline
function axpy(a: usize, b: usize, m: i32, w: f64): void {
  const W = f64x2.splat(w);
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    v128.store(b + o, f64x2.sub(v128.load(b + o), f64x2.mul(W, v128.load(a + o))));
  }
  if (i < m) {
    const o = <usize>i << 3;
    store<f64>(b + o, load<f64>(b + o) - w * load<f64>(a + o));
  }
}

/** a[i] ·= s for i < m. */
// @ts-ignore: decorator
@inline
function scale(a: usize, m: i32, s: f64): void {
  const S = f64x2.splat(s);
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    v128.store(a + o, f64x2.mul(v128.load(a + o), S));
  }
  if (i < m) {
    const o = <usize>i << 3;
    store<f64>(a + o, load<f64>(a + o) * s);
  }
}

/**
 * One block of the row-blocked Householder QR: the m rows of the k + 1 columns at pC (the scaled
 * design and y) are reduced against the running triangle T (row-major (k+1)×(k+1) at pT). On return
 * column j of C holds reflector j below its implicit leading 1 and tau[j] its factor (0: identity).
 */
export function reduceBlock(pT: usize, pC: usize, pTau: usize, k: i32, m: i32, stride: i32): void {
  const k1 = k + 1;
  const colBytes = <usize>stride << 3;
  for (let j = 0; j < k; j++) {
    const cj = pC + <usize>j * colBytes;
    const tj = pT + (<usize>(j * k1) << 3);
    const ss = dot(cj, cj, m, 0);
    if (ss == 0) {
      store<f64>(pTau + (<usize>j << 3), 0);
      continue;
    }
    const rjj = load<f64>(tj + (<usize>j << 3));
    const alpha = sqrt<f64>(rjj * rjj + ss);
    const beta = rjj >= 0 ? -alpha : alpha;
    const v0 = rjj - beta;
    const t = (beta - rjj) / beta;
    scale(cj, m, 1 / v0);
    store<f64>(tj + (<usize>j << 3), beta);
    store<f64>(pTau + (<usize>j << 3), t);
    for (let c = j + 1; c < k1; c++) {
      const cc = pC + <usize>c * colBytes;
      const tjc = tj + (<usize>c << 3);
      const w = t * dot(cj, cc, m, load<f64>(tjc));
      store<f64>(tjc, load<f64>(tjc) - w);
      axpy(cj, cc, m, w);
    }
  }
}
