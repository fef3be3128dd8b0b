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

/** Column j of the k columns at pC (stride apart) times inv[j] (at pInv), for the first m rows. */
export function scaleColumns(pC: usize, pInv: usize, k: i32, m: i32, stride: i32): void {
  const colBytes = <usize>stride << 3;
  for (let j = 0; j < k; j++) scale(pC + <usize>j * colBytes, m, load<f64>(pInv + (<usize>j << 3)));
}

/**
 * dot() for four columns b0..b3 at once against the same a: each column keeps its own two
 * accumulators and its own order of operations (so each result is dot(a, bq, m, sq) exactly), while
 * the four independent chains of additions keep the processor busy where one chain would wait on
 * the latency of the previous addition. Results go to out[0..3].
 */
function dot4(a: usize, b: usize, step: usize, m: i32, p: usize): void {
  const b1 = b + step;
  const b2 = b1 + step;
  const b3 = b2 + step;
  let x0 = f64x2.replace_lane(f64x2.splat(0), 0, load<f64>(p));
  let x1 = f64x2.replace_lane(f64x2.splat(0), 0, load<f64>(p, 8));
  let x2 = f64x2.replace_lane(f64x2.splat(0), 0, load<f64>(p, 16));
  let x3 = f64x2.replace_lane(f64x2.splat(0), 0, load<f64>(p, 24));
  let y0 = f64x2.splat(0);
  let y1 = f64x2.splat(0);
  let y2 = f64x2.splat(0);
  let y3 = f64x2.splat(0);
  let i = 0;
  for (; i + 3 < m; i += 4) {
    const o = <usize>i << 3;
    const v = v128.load(a + o);
    const u = v128.load(a + o, 16);
    x0 = f64x2.add(x0, f64x2.mul(v, v128.load(b + o)));
    y0 = f64x2.add(y0, f64x2.mul(u, v128.load(b + o, 16)));
    x1 = f64x2.add(x1, f64x2.mul(v, v128.load(b1 + o)));
    y1 = f64x2.add(y1, f64x2.mul(u, v128.load(b1 + o, 16)));
    x2 = f64x2.add(x2, f64x2.mul(v, v128.load(b2 + o)));
    y2 = f64x2.add(y2, f64x2.mul(u, v128.load(b2 + o, 16)));
    x3 = f64x2.add(x3, f64x2.mul(v, v128.load(b3 + o)));
    y3 = f64x2.add(y3, f64x2.mul(u, v128.load(b3 + o, 16)));
  }
  let t0 = f64x2.extract_lane(x0, 0);
  let t1 = f64x2.extract_lane(x1, 0);
  let t2 = f64x2.extract_lane(x2, 0);
  let t3 = f64x2.extract_lane(x3, 0);
  for (; i < m; i++) {
    const o = <usize>i << 3;
    const v = load<f64>(a + o);
    t0 += v * load<f64>(b + o);
    t1 += v * load<f64>(b1 + o);
    t2 += v * load<f64>(b2 + o);
    t3 += v * load<f64>(b3 + o);
  }
  store<f64>(p, t0 + f64x2.extract_lane(x0, 1) + (f64x2.extract_lane(y0, 0) + f64x2.extract_lane(y0, 1)));
  store<f64>(p, t1 + f64x2.extract_lane(x1, 1) + (f64x2.extract_lane(y1, 0) + f64x2.extract_lane(y1, 1)), 8);
  store<f64>(p, t2 + f64x2.extract_lane(x2, 1) + (f64x2.extract_lane(y2, 0) + f64x2.extract_lane(y2, 1)), 16);
  store<f64>(p, t3 + f64x2.extract_lane(x3, 1) + (f64x2.extract_lane(y3, 0) + f64x2.extract_lane(y3, 1)), 24);
}

/** axpy() for four columns b0..b3 with factors w[0..3]: one load of a serves the four. */
function axpy4(a: usize, b: usize, step: usize, m: i32, p: usize): void {
  const b1 = b + step;
  const b2 = b1 + step;
  const b3 = b2 + step;
  const w0 = load<f64>(p);
  const w1 = load<f64>(p, 8);
  const w2 = load<f64>(p, 16);
  const w3 = load<f64>(p, 24);
  const W0 = f64x2.splat(w0);
  const W1 = f64x2.splat(w1);
  const W2 = f64x2.splat(w2);
  const W3 = f64x2.splat(w3);
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    const v = v128.load(a + o);
    v128.store(b + o, f64x2.sub(v128.load(b + o), f64x2.mul(W0, v)));
    v128.store(b1 + o, f64x2.sub(v128.load(b1 + o), f64x2.mul(W1, v)));
    v128.store(b2 + o, f64x2.sub(v128.load(b2 + o), f64x2.mul(W2, v)));
    v128.store(b3 + o, f64x2.sub(v128.load(b3 + o), f64x2.mul(W3, v)));
  }
  if (i < m) {
    const o = <usize>i << 3;
    const v = load<f64>(a + o);
    store<f64>(b + o, load<f64>(b + o) - w0 * v);
    store<f64>(b1 + o, load<f64>(b1 + o) - w1 * v);
    store<f64>(b2 + o, load<f64>(b2 + o) - w2 * v);
    store<f64>(b3 + o, load<f64>(b3 + o) - w3 * v);
  }
}

/**
 * One block of the row-blocked Householder QR: the m rows of the k + 1 columns at pC (the scaled
 * design and y) are reduced against the running triangle T (row-major (k+1)×(k+1) at pT). On return
 * column j of C holds reflector j below its implicit leading 1 and tau[j] its factor (0: identity).
 * pW: scratch for k + 4 doubles.
 *
 * For reflector j the JavaScript kernel takes the later columns c one at a time: w = t·(T_jc + v·C_c),
 * T_jc −= w, C_c −= w·v. Column c's dot product reads C_c before its own update and no other
 * column's, so here all the dot products come first (four columns at a time), then all the updates:
 * the same operations on every number, in the same order.
 */
export function reduceBlock(pT: usize, pC: usize, pTau: usize, k: i32, m: i32, stride: i32, pW: usize): void {
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
    // w_c = t·(T_jc + v·C_c) for every later column c, in pW[c]
    for (let c = j + 1; c < k1; c++) store<f64>(pW + (<usize>c << 3), load<f64>(tj + (<usize>c << 3)));
    let c = j + 1;
    for (; c + 3 < k1; c += 4) dot4(cj, pC + <usize>c * colBytes, colBytes, m, pW + (<usize>c << 3));
    for (; c < k1; c++) {
      const pw = pW + (<usize>c << 3);
      store<f64>(pw, dot(cj, pC + <usize>c * colBytes, m, load<f64>(pw)));
    }
    for (c = j + 1; c < k1; c++) {
      const pw = pW + (<usize>c << 3);
      const w = t * load<f64>(pw);
      store<f64>(pw, w);
      const tjc = tj + (<usize>c << 3);
      store<f64>(tjc, load<f64>(tjc) - w);
    }
    c = j + 1;
    for (; c + 3 < k1; c += 4) axpy4(cj, pC + <usize>c * colBytes, colBytes, m, pW + (<usize>c << 3));
    for (; c < k1; c++) axpy(cj, pC + <usize>c * colBytes, m, load<f64>(pW + (<usize>c << 3)));
  }
}

/**
 * Rows of Q = X_s R⁻¹ for one block, in place: the k columns at pZ hold the design rows x_j, scaled
 * here by inv_j = 1/s_j (at pInv); R is row-major k×k at pR. Column by column,
 * z_j = (x_j·inv_j − Σ_{l<j} R_lj z_l)/R_jj with the
 * earlier columns taken two at a time, z_j − (R_lj z_l + R_{l+1,j} z_{l+1}), as the JavaScript
 * kernel does; two such pairs share one pass over z_j (the same operations in the same order).
 */
export function qRowsBlock(pZ: usize, pR: usize, pInv: usize, k: i32, m: i32, stride: i32): void {
  const colBytes = <usize>stride << 3;
  for (let j = 0; j < k; j++) {
    const zj = pZ + <usize>j * colBytes;
    scale(zj, m, load<f64>(pInv + (<usize>j << 3)));
    let l = 0;
    for (; l + 3 < j; l += 4) {
      const r0 = load<f64>(pR + (<usize>(l * k + j) << 3));
      const r1 = load<f64>(pR + (<usize>((l + 1) * k + j) << 3));
      const r2 = load<f64>(pR + (<usize>((l + 2) * k + j) << 3));
      const r3 = load<f64>(pR + (<usize>((l + 3) * k + j) << 3));
      const z0 = pZ + <usize>l * colBytes;
      const z1 = z0 + colBytes;
      const z2 = z1 + colBytes;
      const z3 = z2 + colBytes;
      const R0 = f64x2.splat(r0);
      const R1 = f64x2.splat(r1);
      const R2 = f64x2.splat(r2);
      const R3 = f64x2.splat(r3);
      let i = 0;
      for (; i + 1 < m; i += 2) {
        const o = <usize>i << 3;
        let z = f64x2.sub(v128.load(zj + o), f64x2.add(f64x2.mul(R0, v128.load(z0 + o)), f64x2.mul(R1, v128.load(z1 + o))));
        z = f64x2.sub(z, f64x2.add(f64x2.mul(R2, v128.load(z2 + o)), f64x2.mul(R3, v128.load(z3 + o))));
        v128.store(zj + o, z);
      }
      if (i < m) {
        const o = <usize>i << 3;
        let z = load<f64>(zj + o) - (r0 * load<f64>(z0 + o) + r1 * load<f64>(z1 + o));
        z = z - (r2 * load<f64>(z2 + o) + r3 * load<f64>(z3 + o));
        store<f64>(zj + o, z);
      }
    }
    for (; l + 1 < j; l += 2) {
      const r0 = load<f64>(pR + (<usize>(l * k + j) << 3));
      const r1 = load<f64>(pR + (<usize>((l + 1) * k + j) << 3));
      const z0 = pZ + <usize>l * colBytes;
      const z1 = z0 + colBytes;
      const R0 = f64x2.splat(r0);
      const R1 = f64x2.splat(r1);
      let i = 0;
      for (; i + 1 < m; i += 2) {
        const o = <usize>i << 3;
        v128.store(zj + o, f64x2.sub(v128.load(zj + o), f64x2.add(f64x2.mul(R0, v128.load(z0 + o)), f64x2.mul(R1, v128.load(z1 + o)))));
      }
      if (i < m) {
        const o = <usize>i << 3;
        store<f64>(zj + o, load<f64>(zj + o) - (r0 * load<f64>(z0 + o) + r1 * load<f64>(z1 + o)));
      }
    }
    if (l < j) axpy(pZ + <usize>l * colBytes, zj, m, load<f64>(pR + (<usize>(l * k + j) << 3)));
    scale(zj, m, 1 / load<f64>(pR + (<usize>(j * k + j) << 3)));
  }
}

/**
 * The meat of a sandwich for one block: with weights w (m doubles at pw) and the rows of Q at pZ,
 * W_a = w·z_a (k columns at pWs) and M_ab += Σ_i W_ai z_bi for b ≥ a (row-major k×k at pM), each
 * sum in the dot product's order, started from 0 and then added to M_ab. pS: scratch for 4 doubles.
 */
export function meatBlock(pZ: usize, pw: usize, pWs: usize, pM: usize, pS: usize, k: i32, m: i32, stride: i32): void {
  const colBytes = <usize>stride << 3;
  for (let a = 0; a < k; a++) {
    const za = pZ + <usize>a * colBytes;
    const wa = pWs + <usize>a * colBytes;
    let i = 0;
    for (; i + 1 < m; i += 2) {
      const o = <usize>i << 3;
      v128.store(wa + o, f64x2.mul(v128.load(pw + o), v128.load(za + o)));
    }
    if (i < m) {
      const o = <usize>i << 3;
      store<f64>(wa + o, load<f64>(pw + o) * load<f64>(za + o));
    }
  }
  for (let a = 0; a < k; a++) {
    const wa = pWs + <usize>a * colBytes;
    const ma = pM + (<usize>(a * k) << 3);
    let b = a;
    for (; b + 3 < k; b += 4) {
      v128.store(pS, f64x2.splat(0));
      v128.store(pS, f64x2.splat(0), 16);
      dot4(wa, pZ + <usize>b * colBytes, colBytes, m, pS);
      const mb = ma + (<usize>b << 3);
      store<f64>(mb, load<f64>(mb) + load<f64>(pS));
      store<f64>(mb, load<f64>(mb, 8) + load<f64>(pS, 8), 8);
      store<f64>(mb, load<f64>(mb, 16) + load<f64>(pS, 16), 16);
      store<f64>(mb, load<f64>(mb, 24) + load<f64>(pS, 24), 24);
    }
    for (; b < k; b++) {
      const mb = ma + (<usize>b << 3);
      store<f64>(mb, load<f64>(mb) + dot(wa, pZ + <usize>b * colBytes, m, 0));
    }
  }
}

/** Leverages of one block: h_i = Σ_j z_ji² (j ascending, from 0) for i < m, into ph. */
export function leverageBlock(pZ: usize, ph: usize, k: i32, m: i32, stride: i32): void {
  const colBytes = <usize>stride << 3;
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    let h = f64x2.splat(0);
    for (let j = 0; j < k; j++) {
      const z = v128.load(pZ + <usize>j * colBytes + o);
      h = f64x2.add(h, f64x2.mul(z, z));
    }
    v128.store(ph + o, h);
  }
  if (i < m) {
    const o = <usize>i << 3;
    let h: f64 = 0;
    for (let j = 0; j < k; j++) {
      const z = load<f64>(pZ + <usize>j * colBytes + o);
      h += z * z;
    }
    store<f64>(ph + o, h);
  }
}

// ---------------------------------------------------------------------------------------------
// Column operations (the JavaScript kernel's ColumnOps, on a chunk the caller copied in)
// ---------------------------------------------------------------------------------------------

/** b[i] −= w·a[i] for i < m (the residual step r ← r − b_j·x_j, in the JavaScript loop's arithmetic). */
export function axpyColumn(pa: usize, pb: usize, m: i32, w: f64): void {
  axpy(pa, pb, m, w);
}

/** max(m0, max_{i<m} |a[i]|), as the JavaScript loop `if (|a| > best) best = |a|` (NaN never wins). */
export function maxAbsColumn(p: usize, m: i32, m0: f64): f64 {
  let acc = f64x2.splat(m0);
  let i = 0;
  for (; i + 1 < m; i += 2) acc = f64x2.pmax(acc, f64x2.abs(v128.load(p + (<usize>i << 3))));
  let best = f64x2.extract_lane(acc, 0);
  const b1 = f64x2.extract_lane(acc, 1);
  if (b1 > best) best = b1;
  for (; i < m; i++) {
    const a = abs<f64>(load<f64>(p + (<usize>i << 3)));
    if (a > best) best = a;
  }
  return best;
}

/**
 * Continues two compensated sums (Neumaier's), one over the even and one over the odd rows: (s, c)
 * of the even rows at pS[0], pS[2] and of the odd rows at pS[1], pS[3] (a chunk starts at an even
 * row; a last odd row goes to the even sums), writing them back; returns how many values are ≤ 0.
 */
export function scanColumn(p: usize, m: i32, pS: usize): i32 {
  let s = v128.load(pS);
  let c = v128.load(pS, 16);
  let low = i64x2.splat(0);
  const zero = f64x2.splat(0);
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const v = v128.load(p + (<usize>i << 3));
    const t = f64x2.add(s, v);
    const big = f64x2.add(f64x2.sub(s, t), v); // |s| ≥ |v|: (s − t) + v
    const small = f64x2.add(f64x2.sub(v, t), s); // else (v − t) + s
    c = f64x2.add(c, v128.bitselect(big, small, f64x2.ge(f64x2.abs(s), f64x2.abs(v))));
    s = t;
    low = i64x2.sub(low, f64x2.le(v, zero)); // a true lane is −1
  }
  let count = <i32>(i64x2.extract_lane(low, 0) + i64x2.extract_lane(low, 1));
  if (i < m) {
    const v = load<f64>(p + (<usize>i << 3));
    const s0 = f64x2.extract_lane(s, 0);
    const t = s0 + v;
    const c0 = f64x2.extract_lane(c, 0) + (abs<f64>(s0) >= abs<f64>(v) ? s0 - t + v : v - t + s0);
    s = f64x2.replace_lane(s, 0, t);
    c = f64x2.replace_lane(c, 0, c0);
    if (v <= 0) count++;
  }
  v128.store(pS, s);
  v128.store(pS, c, 16);
  return count;
}

// fdlibm's __ieee754_log (the log of V8's Math.log), its constants and its steps, two lanes at once
const LN2_HI: f64 = 6.93147180369123816490e-01;
const LN2_LO: f64 = 1.90821492927058770002e-10;
const LG1: f64 = 6.666666666666735130e-01;
const LG2: f64 = 3.999999999940941908e-01;
const LG3: f64 = 2.857142874366239149e-01;
const LG4: f64 = 2.222219843214978396e-01;
const LG5: f64 = 1.818357216161805012e-01;
const LG6: f64 = 1.531383769920937332e-01;
const LG7: f64 = 1.479819860511658591e-01;

/**
 * In place a[i] = log a[i] for i < m (m even), by fdlibm's steps on both lanes: x = 2^k·(1 + f) with
 * 1 + f in [√2/2, √2), s = f/(2 + f), log(1 + f) = f − hfsq + s·(hfsq + R(s²)), and fdlibm's own
 * branches (|f| < 2^−20; the two forms chosen by the leading bits of f) taken as lane selections.
 * Every lane computes every branch with the same operations fdlibm performs on the branch it takes,
 * so the selected value is fdlibm's. Returns the number of pairs holding a value that is not a
 * positive normal double (zero, negative, subnormal, infinite, NaN): the caller then logs that chunk
 * itself (logColumn below; logPair is one pair, 1 when it holds such a value).
 */
// @ts-ignore: decorator
@inline
function logPair(o: usize): i32 {
  const one = f64x2.splat(1.0);
  const half = f64x2.splat(0.5);
  const x = v128.load(o);
  let hx = i64x2.shr_u(x, 32); // the high word, as fdlibm reads it (the sign bit makes it large)
  const bad = v128.any_true(v128.or(i64x2.gt_s(i64x2.splat(0x00100000), hx), i64x2.gt_s(hx, i64x2.splat(0x7fefffff)))) ? 1 : 0;
  let k = i64x2.sub(i64x2.shr_u(hx, 20), i64x2.splat(1023));
  hx = v128.and(hx, i64x2.splat(0x000fffff));
  const up = v128.and(i64x2.add(hx, i64x2.splat(0x95f64)), i64x2.splat(0x100000));
  // x or x/2 into [√2/2, √2): the new high word, the low word kept
  const xm = v128.or(i64x2.shl(v128.or(hx, v128.xor(up, i64x2.splat(0x3ff00000))), 32), v128.and(x, i64x2.splat(0xffffffff)));
  k = i64x2.add(k, i64x2.shr_u(up, 20));
  const f = f64x2.sub(xm, one);
  const dk = f64x2.convert_low_i32x4_s(v128.shuffle<i32>(k, k, 0, 2, 0, 2));
  const tiny = i64x2.gt_s(i64x2.splat(3), v128.and(i64x2.add(hx, i64x2.splat(2)), i64x2.splat(0x000fffff)));
  const s = f64x2.div(f, f64x2.add(f64x2.splat(2.0), f));
  const z = f64x2.mul(s, s);
  const w = f64x2.mul(z, z);
  const wide = i64x2.gt_s(v128.or(i64x2.sub(hx, i64x2.splat(0x6147a)), i64x2.sub(i64x2.splat(0x6b851), hx)), i64x2.splat(0));
  const t1 = f64x2.mul(w, f64x2.add(f64x2.splat(LG2), f64x2.mul(w, f64x2.add(f64x2.splat(LG4), f64x2.mul(w, f64x2.splat(LG6))))));
  const t2 = f64x2.mul(z, f64x2.add(f64x2.splat(LG1), f64x2.mul(w, f64x2.add(f64x2.splat(LG3), f64x2.mul(w, f64x2.add(f64x2.splat(LG5), f64x2.mul(w, f64x2.splat(LG7))))))));
  const R = f64x2.add(t2, t1);
  const hi = f64x2.mul(dk, f64x2.splat(LN2_HI));
  const lo = f64x2.mul(dk, f64x2.splat(LN2_LO));
  const hfsq = f64x2.mul(f64x2.mul(half, f), f);
  // (fdlibm's k = 0 forms equal these with dk = 0: a − b = −(b − a) and v ± 0 = v in IEEE arithmetic)
  const a = f64x2.sub(hi, f64x2.sub(f64x2.sub(hfsq, f64x2.add(f64x2.mul(s, f64x2.add(hfsq, R)), lo)), f));
  const b = f64x2.sub(hi, f64x2.sub(f64x2.sub(f64x2.mul(s, f64x2.sub(f, R)), lo), f));
  const r1 = f64x2.mul(f64x2.mul(f, f), f64x2.sub(half, f64x2.mul(f64x2.splat(0.33333333333333333), f)));
  const c0 = f64x2.sub(hi, f64x2.sub(f64x2.sub(r1, lo), f));
  const c = v128.bitselect(f64x2.add(hi, lo), c0, f64x2.eq(f, f64x2.splat(0)));
  v128.store(o, v128.bitselect(c, v128.bitselect(a, b, wide), tiny));
  return bad;
}

export function logColumn(p: usize, m: i32): i32 {
  let bad = 0;
  let i = 0;
  // four pairs per step: their independent chains of operations overlap in the processor
  for (; i + 7 < m; i += 8) {
    const o = p + (<usize>i << 3);
    bad += logPair(o);
    bad += logPair(o + 16);
    bad += logPair(o + 32);
    bad += logPair(o + 48);
  }
  for (; i < m; i += 2) bad += logPair(p + (<usize>i << 3));
  return bad;
}

// fdlibm's __ieee754_exp and expm1 (those of V8's Math.exp and Math.expm1), two lanes at once: their
// constants, and every branch of the ordinary domain computed on both lanes and selected per lane
const INVLN2: f64 = 1.44269504088896338700e+00;
const P1: f64 = 1.66666666666666019037e-01;
const P2: f64 = -2.77777777770155933842e-03;
const P3: f64 = 6.61375632143793436117e-05;
const P4: f64 = -1.65339022054652515390e-06;
const P5: f64 = 4.13813679705723846039e-08;
const Q1: f64 = -3.33333333333331316428e-02;
const Q2: f64 = 1.58730158725481460165e-03;
const Q3: f64 = -7.93650757867487942473e-05;
const Q4: f64 = 4.00821782732936239552e-06;
const Q5: f64 = -2.01099218183624371326e-07;

/** 2^k as a double for the integer k held (as a double) in each lane of dk, |k| ≤ 1022. */
// @ts-ignore: decorator
@inline
function twoTo(dk: v128): v128 {
  const k = i64x2.extend_low_i32x4_s(i32x4.trunc_sat_f64x2_s_zero(dk));
  return i64x2.shl(i64x2.add(k, i64x2.splat(1023)), 52);
}

/**
 * fdlibm's k of the reduction x = k·ln2 + (hi − lo), as doubles: ±1 below 1.5·ln2 (high word of |x|
 * under 0x3ff0a2b2), else trunc(x/ln2 ± 1/2); hi = x − k·ln2_hi and lo = k·ln2_lo then are fdlibm's
 * (its ±1 forms are these with k = ±1).
 */
// @ts-ignore: decorator
@inline
function reductionK(x: v128, hx: v128): v128 {
  const neg = f64x2.lt(x, f64x2.splat(0));
  const near = i64x2.gt_s(i64x2.splat(0x3ff0a2b2), hx);
  const kt = f64x2.trunc(f64x2.add(f64x2.mul(f64x2.splat(INVLN2), x), v128.bitselect(f64x2.splat(-0.5), f64x2.splat(0.5), neg)));
  return v128.bitselect(v128.bitselect(f64x2.splat(-1.0), f64x2.splat(1.0), neg), kt, near);
}

/**
 * fdlibm's exp of the pair at o (times sc), stored back; 1 when a lane is outside (−708, 708) or NaN
 * (where fdlibm scales subnormals, overflows or passes specials through; the caller then computes the
 * chunk itself). The reduction by reductionK above 0.5·ln2, none at or below it, and 1 + x below
 * 2^−28, as fdlibm's branches, selected per lane.
 */
// @ts-ignore: decorator
@inline
function expPair(o: usize, sc: f64): i32 {
  const one = f64x2.splat(1.0);
  const two = f64x2.splat(2.0);
  const x = f64x2.mul(f64x2.splat(sc), v128.load(o));
  const ax = f64x2.abs(x);
  const bad = i64x2.all_true(f64x2.lt(ax, f64x2.splat(708.0))) ? 0 : 1;
  const hx = i64x2.shr_u(ax, 32);
  const reduced = i64x2.gt_s(hx, i64x2.splat(0x3fd62e42));
  const tiny = i64x2.gt_s(i64x2.splat(0x3e300000), hx);
  const dk = reductionK(x, hx);
  const hi = f64x2.sub(x, f64x2.mul(dk, f64x2.splat(LN2_HI)));
  const lo = f64x2.mul(dk, f64x2.splat(LN2_LO));
  const xr = v128.bitselect(f64x2.sub(hi, lo), x, reduced);
  const t = f64x2.mul(xr, xr);
  const poly = f64x2.add(f64x2.splat(P1), f64x2.mul(t, f64x2.add(f64x2.splat(P2), f64x2.mul(t, f64x2.add(f64x2.splat(P3), f64x2.mul(t, f64x2.add(f64x2.splat(P4), f64x2.mul(t, f64x2.splat(P5)))))))));
  const c = f64x2.sub(xr, f64x2.mul(t, poly));
  const xc = f64x2.mul(xr, c);
  const r0 = f64x2.sub(one, f64x2.sub(f64x2.div(xc, f64x2.sub(c, two)), xr));
  const y = f64x2.sub(one, f64x2.sub(f64x2.sub(lo, f64x2.div(xc, f64x2.sub(two, c))), hi));
  // only one of the two quotients is used per lane: r0 where no reduction, y·2^k where there is one
  const r = v128.bitselect(f64x2.mul(y, twoTo(dk)), r0, reduced);
  v128.store(o, v128.bitselect(f64x2.add(one, x), r, tiny));
  return bad;
}

/** In place a[i] = exp(sc·a[i]) for i < m (m even); returns the pairs expPair refused. */
export function expColumn(p: usize, m: i32, sc: f64): i32 {
  let bad = 0;
  let i = 0;
  // two pairs per step: their independent chains of operations overlap in the processor
  for (; i + 3 < m; i += 4) {
    const o = p + (<usize>i << 3);
    bad += expPair(o, sc);
    bad += expPair(o + 16, sc);
  }
  for (; i < m; i += 2) bad += expPair(p + (<usize>i << 3), sc);
  return bad;
}

/**
 * fdlibm expm1's correction term e of the reduced argument xr, with hxs = xr·(xr/2): r1 = 1 + hxs·Q(hxs),
 * t = 3 − r1·xr/2, e = hxs·((r1 − t)/(6 − xr·t)).
 */
// @ts-ignore: decorator
@inline
function expm1E(xr: v128, hxs: v128): v128 {
  const hfx = f64x2.mul(f64x2.splat(0.5), xr);
  const r1 = f64x2.add(f64x2.splat(1.0), f64x2.mul(hxs, f64x2.add(f64x2.splat(Q1), f64x2.mul(hxs, f64x2.add(f64x2.splat(Q2), f64x2.mul(hxs, f64x2.add(f64x2.splat(Q3), f64x2.mul(hxs, f64x2.add(f64x2.splat(Q4), f64x2.mul(hxs, f64x2.splat(Q5)))))))))));
  const t = f64x2.sub(f64x2.splat(3.0), f64x2.mul(r1, hfx));
  return f64x2.mul(hxs, f64x2.div(f64x2.sub(r1, t), f64x2.sub(f64x2.splat(6.0), f64x2.mul(xr, t))));
}

/**
 * expm1(λ·a)/λ + c0 of the pair at o by fdlibm's expm1, stored back; 1 when a lane of λ·a is outside
 * (−38, 38) or NaN (where fdlibm returns −1, overflows or passes specials through). The reduction as
 * expPair's, with its correction c = (hi − x) − lo; fdlibm's seven forms by k (0, −1, 1, ≤ −2, 2 … 19,
 * 20 … 56, and x itself below 2^−54) computed on both lanes and selected per lane.
 */
// @ts-ignore: decorator
@inline
function expm1Pair(o: usize, lambda: f64, c0: f64): i32 {
  const one = f64x2.splat(1.0);
  const half = f64x2.splat(0.5);
  const x = f64x2.mul(f64x2.splat(lambda), v128.load(o));
  const ax = f64x2.abs(x);
  const bad = i64x2.all_true(f64x2.lt(ax, f64x2.splat(38.0))) ? 0 : 1;
  const hx = i64x2.shr_u(ax, 32);
  const reduced = i64x2.gt_s(hx, i64x2.splat(0x3fd62e42));
  const tiny = i64x2.gt_s(i64x2.splat(0x3c900000), hx);
  if (!v128.any_true(v128.or(reduced, tiny))) {
    // both lanes in fdlibm's first form (2^−54 ≤ |x| ≤ ln2/2, no reduction): only its steps, the
    // same operations as the selection below would keep
    const hxs0 = f64x2.mul(x, f64x2.mul(half, x));
    const e0 = expm1E(x, hxs0);
    const first = f64x2.sub(x, f64x2.sub(f64x2.mul(x, e0), hxs0));
    v128.store(o, f64x2.add(f64x2.div(first, f64x2.splat(lambda)), f64x2.splat(c0)));
    return 0;
  }
  const dk = reductionK(x, hx);
  const hi = f64x2.sub(x, f64x2.mul(dk, f64x2.splat(LN2_HI)));
  const lo = f64x2.mul(dk, f64x2.splat(LN2_LO));
  const xr = v128.bitselect(f64x2.sub(hi, lo), x, reduced);
  const cc = v128.and(f64x2.sub(f64x2.sub(hi, xr), lo), reduced);
  const hxs = f64x2.mul(xr, f64x2.mul(half, xr));
  const e = expm1E(xr, hxs);
  const res0 = f64x2.sub(xr, f64x2.sub(f64x2.mul(xr, e), hxs));
  const e2 = f64x2.sub(f64x2.sub(f64x2.mul(xr, f64x2.sub(e, cc)), cc), hxs);
  const resM1 = f64x2.sub(f64x2.mul(half, f64x2.sub(xr, e2)), half);
  const resP1 = v128.bitselect(
    f64x2.mul(f64x2.splat(-2.0), f64x2.sub(e2, f64x2.add(xr, half))),
    f64x2.add(one, f64x2.mul(f64x2.splat(2.0), f64x2.sub(xr, e2))),
    f64x2.lt(xr, f64x2.splat(-0.25)),
  );
  const pk = twoTo(dk);
  const mk = twoTo(f64x2.neg(dk)); // 2^−k
  const resLow = f64x2.sub(f64x2.mul(f64x2.sub(one, f64x2.sub(e2, xr)), pk), one);
  const resMid = f64x2.mul(f64x2.sub(f64x2.sub(one, mk), f64x2.sub(e2, xr)), pk);
  const resHigh = f64x2.mul(f64x2.add(f64x2.sub(xr, f64x2.add(e2, mk)), one), pk);
  const k = i64x2.extend_low_i32x4_s(i32x4.trunc_sat_f64x2_s_zero(dk));
  let r = v128.bitselect(resHigh, resMid, i64x2.gt_s(k, i64x2.splat(19)));
  r = v128.bitselect(resLow, r, i64x2.gt_s(i64x2.splat(-1), k));
  r = v128.bitselect(resP1, r, i64x2.eq(k, i64x2.splat(1)));
  r = v128.bitselect(resM1, r, i64x2.eq(k, i64x2.splat(-1)));
  r = v128.bitselect(r, res0, reduced);
  r = v128.bitselect(x, r, tiny);
  v128.store(o, f64x2.add(f64x2.div(r, f64x2.splat(lambda)), f64x2.splat(c0)));
  return bad;
}

/** In place a[i] = expm1(λ·a[i])/λ + c0 for i < m (m even); returns the pairs expm1Pair refused. */
export function expm1Column(p: usize, m: i32, lambda: f64, c0: f64): i32 {
  let bad = 0;
  let i = 0;
  for (; i + 3 < m; i += 4) {
    const o = p + (<usize>i << 3);
    bad += expm1Pair(o, lambda, c0);
    bad += expm1Pair(o + 16, lambda, c0);
  }
  for (; i < m; i += 2) bad += expm1Pair(p + (<usize>i << 3), lambda, c0);
  return bad;
}

// ---------------------------------------------------------------------------------------------
// Sides on a block of columns (the projections of leastSquares.ts's rssOnFactor)
// ---------------------------------------------------------------------------------------------

/** g[j] += Σ_{i<m} X_j[i]·v[i] for j < k (each sum as dot() from 0, then added to g[j]). */
export function dotsBlock(pX: usize, pv: usize, k: i32, m: i32, stride: i32, pg: usize): void {
  const colBytes = <usize>stride << 3;
  for (let j = 0; j < k; j++) {
    const o = pg + (<usize>j << 3);
    store<f64>(o, load<f64>(o) + dot(pX + <usize>j * colBytes, pv, m, 0));
  }
}

/** v[i] −= b_j·X_j[i] for j = 0 … k−1 in order, skipping b_j = 0, for i < m (column by column, as the JavaScript loop). */
export function subtractBlock(pX: usize, pv: usize, pb: usize, k: i32, m: i32, stride: i32): void {
  const colBytes = <usize>stride << 3;
  for (let j = 0; j < k; j++) {
    const w = load<f64>(pb + (<usize>j << 3));
    if (w != 0) axpy(pX + <usize>j * colBytes, pv, m, w);
  }
}

/** Σ_{i<m} a[i]·b[i] (dot() from 0). */
export function dotColumn(pa: usize, pb: usize, m: i32): f64 {
  return dot(pa, pb, m, 0);
}

/** max(m0, max |a[i]|) and s0 + Σ a[i]² in order for i < m, into pS[0] and pS[1] (both carried in from there). */
export function factsColumn(p: usize, m: i32, pS: usize): void {
  store<f64>(pS, maxAbsColumn(p, m, load<f64>(pS)));
  store<f64>(pS, sumSquaresColumn(p, m, load<f64>(pS, 8)), 8);
}

/** s0 + a[0]² + a[1]² + … in order, one addition after another (the JavaScript loop's sum, bit for bit). */
export function sumSquaresColumn(p: usize, m: i32, s0: f64): f64 {
  let s = s0;
  for (let i = 0; i < m; i++) {
    const v = load<f64>(p + (<usize>i << 3));
    s += v * v;
  }
  return s;
}

/**
 * The sandwich weights of one block from the residuals e (at pe) and leverages h (at ph), into pw:
 * kind 0 e², 1 e²·f (HC1, f = n/df), 2 e²/(1 − h), 3 e²/((1 − h)(1 − h)). Returns how many rows have
 * h ≥ limit (kinds 2 and 3: their weights are undefined; the caller names the rows).
 */
export function hcWeightsBlock(pe: usize, ph: usize, pw: usize, m: i32, kind: i32, f: f64, limit: f64): i32 {
  let ones = 0;
  for (let i = 0; i < m; i++) {
    const o = <usize>i << 3;
    const e = load<f64>(pe + o);
    const e2 = e * e;
    let w = e2;
    if (kind == 1) w = e2 * f;
    else if (kind >= 2) {
      const h = load<f64>(ph + o);
      if (h >= limit) {
        ones++;
        w = 0;
      } else w = kind == 2 ? e2 / (1 - h) : e2 / ((1 - h) * (1 - h));
    }
    store<f64>(pw + o, w);
  }
  return ones;
}

// ---------------------------------------------------------------------------------------------
// Box–Cox sides (formCheck.ts's profile): the screened lattice and the transform's derivative
// ---------------------------------------------------------------------------------------------

/**
 * v[i] = (b^|q| − 1)·inv + c for i < m, with b = a[i] when q > 0 and b = 1/a[i] when q < 0, the power
 * by multiplying 1 by b |q| times in turn (the JavaScript loop's chain); v[i] = u[i] + c when q = 0.
 */
export function latticeSide(pv: usize, pu: usize, pa: usize, m: i32, q: i32, inv: f64, c: f64): void {
  const C = f64x2.splat(c);
  let i = 0;
  if (q == 0) {
    for (; i + 1 < m; i += 2) {
      const o = <usize>i << 3;
      v128.store(pv + o, f64x2.add(v128.load(pu + o), C));
    }
    if (i < m) {
      const o = <usize>i << 3;
      store<f64>(pv + o, load<f64>(pu + o) + c);
    }
    return;
  }
  const ONE = f64x2.splat(1);
  const INV = f64x2.splat(inv);
  const times = q > 0 ? q : -q;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    const a = v128.load(pa + o);
    const b = q > 0 ? a : f64x2.div(ONE, a);
    let p = b;
    for (let t = 1; t < times; t++) p = f64x2.mul(p, b);
    v128.store(pv + o, f64x2.add(f64x2.mul(f64x2.sub(p, ONE), INV), C));
  }
  if (i < m) {
    const o = <usize>i << 3;
    const a = load<f64>(pa + o);
    const b = q > 0 ? a : 1 / a;
    let p = b;
    for (let t = 1; t < times; t++) p *= b;
    store<f64>(pv + o, (p - 1) * inv + c);
  }
}

/**
 * d[i] = w′(λ) at row i from u[i] and w[i] (the transform with its constant c0): the series
 * u²(1/2 + x(1/3 + x(1/8 + x/30))), x = λu, where |x| < 1e-4 or λ is (nearly) zero, else
 * (u(λ(w − c0) + 1) − (w − c0))/λ; plus c1. For i < m.
 */
export function slopeSide(pd: usize, pw: usize, pu: usize, m: i32, lambda: f64, c0: f64, c1: f64): void {
  const small = abs<f64>(lambda) < 1e-12;
  const L = f64x2.splat(lambda);
  const C0 = f64x2.splat(c0);
  const C1 = f64x2.splat(c1);
  const ONE = f64x2.splat(1);
  const HALF = f64x2.splat(0.5);
  const THIRD = f64x2.splat(1.0 / 3.0);
  const EIGHTH = f64x2.splat(1.0 / 8.0);
  const THIRTY = f64x2.splat(30);
  const NEAR = f64x2.splat(1e-4);
  const ALL = i64x2.splat(small ? -1 : 0);
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const o = <usize>i << 3;
    const v = v128.load(pu + o);
    const x = f64x2.mul(L, v);
    const wi = f64x2.sub(v128.load(pw + o), C0);
    const series = f64x2.mul(f64x2.mul(v, v), f64x2.add(HALF, f64x2.mul(x, f64x2.add(THIRD, f64x2.mul(x, f64x2.add(EIGHTH, f64x2.div(x, THIRTY)))))));
    const exact = f64x2.div(f64x2.sub(f64x2.mul(v, f64x2.add(f64x2.mul(L, wi), ONE)), wi), L);
    const near = v128.or(ALL, f64x2.lt(f64x2.abs(x), NEAR));
    v128.store(pd + o, f64x2.add(v128.bitselect(series, exact, near), C1));
  }
  if (i < m) {
    const o = <usize>i << 3;
    const v = load<f64>(pu + o);
    const x = lambda * v;
    const wi = load<f64>(pw + o) - c0;
    store<f64>(pd + o, (small || abs<f64>(x) < 1e-4 ? v * v * (0.5 + x * (1.0 / 3.0 + x * (1.0 / 8.0 + x / 30))) : (v * (lambda * wi + 1) - wi) / lambda) + c1);
  }
}
