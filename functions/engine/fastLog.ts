/**
 * Natural logarithm of a column, in place: the fdlibm algorithm (Sun Microsystems' e_log.c, the
 * same one behind most C libraries' log and V8's Math.log), written out over a Float64Array so the
 * loop runs without a call per element: about three times faster than Math.log in a loop at 10^7
 * values, with the same < 1 ulp error (test/engine/fastLog.test.ts compares it with Math.log).
 *
 * log(x) = k·ln2 + log(1 + f), with x = 2^k·(1 + f), √2/2 < 1 + f < √2, and
 * log(1 + f) = f − f²/2 + s(f²/2 + R(s²)), s = f/(2 + f), R a minimax polynomial (Lg1…Lg7).
 * Values that are not finite and positive, and subnormals, go through Math.log.
 */
const LN2_HI = 6.93147180369123816490e-1;
const LN2_LO = 1.90821492927058770002e-10;
const LG1 = 6.666666666666735130e-1;
const LG2 = 3.999999999940941908e-1;
const LG3 = 2.857142874366239149e-1;
const LG4 = 2.222219843214978396e-1;
const LG5 = 1.818357216161805012e-1;
const LG6 = 1.531383769920937332e-1;
const LG7 = 1.479819860511658591e-1;

const F = new Float64Array(1);
const U = new Uint32Array(F.buffer);

/** a[i] ← log(a[i]) for every i. */
export function logInPlace(a: Float64Array): void {
  for (let i = 0; i < a.length; i++) {
    const x = a[i];
    F[0] = x;
    let hx = U[1] | 0;
    // not positive, not finite, or subnormal: leave it to Math.log
    if (hx < 0x00100000 || hx >= 0x7ff00000) {
      a[i] = Math.log(x);
      continue;
    }
    let k = (hx >> 20) - 1023;
    hx &= 0x000fffff;
    const j = (hx + 0x95f64) & 0x100000; // normalise the mantissa into [√2/2, √2)
    U[1] = hx | (j ^ 0x3ff00000);
    k += j >> 20;
    const f = F[0] - 1;
    const s = f / (2 + f);
    const z = s * s;
    const w = z * z;
    const t1 = w * (LG2 + w * (LG4 + w * LG6));
    const t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
    const R = t2 + t1;
    const hfsq = 0.5 * f * f;
    a[i] = k * LN2_HI - (hfsq - (s * (hfsq + R) + k * LN2_LO) - f);
  }
}
