/**
 * Covariance estimators for OLS coefficients: classical, HC0–HC3 and HAC (Newey–West).
 *
 * All work in the orthonormal space of the QR factor: row i of Q is z_i = R⁻ᵀ x_i (x_i scaled as in
 * the factorisation), so the leverage is h_i = |z_i|² and every sandwich is
 * V = R⁻¹ (Σ ω_i z_i z_iᵀ) R⁻ᵀ, never forming XᵀX. Weights ω_i (MacKinnon and White 1985; White 1980):
 * HC0 e², HC1 e²·n/(n−k), HC2 e²/(1−h), HC3 e²/(1−h)². HAC (Newey and West 1987): the meat adds
 * Σ_l w_l Σ_t (g_t g_{t−l}ᵀ + g_{t−l} g_tᵀ) with g_t = z_t e_t, Bartlett weights w_l = 1 − l/(L+1),
 * observations in sheet order, no prewhitening and no small-sample factor — the same as R's
 * sandwich::NeweyWest(m, lag = L, prewhite = FALSE, adjust = FALSE).
 *
 * Cost: one pass over the rows with O(k²) work per row (HAC: O(k²·L) per row).
 */
import { fail, rowsPhrase } from "./problems";
import { forwardSolveRt, type QrFit } from "./leastSquares";
import type { SeType } from "./options";

/** Leverage at or above 1 − LEVERAGE_TOL counts as 1: HC2/HC3 are then undefined. */
export const LEVERAGE_TOL = 1e-10;

/** Default HAC lag length floor(4 (n/100)^(2/9)) (Newey and West 1994, common practice). */
export function defaultLags(n: number): number {
  return Math.floor(4 * Math.pow(n / 100, 2 / 9));
}

/** Leverages h_i = |R⁻ᵀ x_i|² of the design rows. */
export function leverages(X: Float64Array[], qr: QrFit): Float64Array {
  const { n, k, R, scale } = qr;
  const h = new Float64Array(n);
  const z = new Float64Array(k);
  const inv = Array.from(scale, (s) => 1 / s);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) z[j] = X[j][i] * inv[j];
    forwardSolveRt(R, k, z);
    let s = 0;
    for (let j = 0; j < k; j++) s += z[j] * z[j];
    h[i] = s;
  }
  return h;
}

/** Rinv · M · Rinvᵀ for symmetric M (row-major k×k), then back to the columns' original units. */
function sandwich(qr: QrFit, M: Float64Array): Float64Array {
  const { k, Rinv, scale } = qr;
  const T = new Float64Array(k * k); // T = Rinv · M
  for (let i = 0; i < k; i++) {
    for (let j = 0; j < k; j++) {
      let s = 0;
      for (let m = i; m < k; m++) s += Rinv[i * k + m] * M[m * k + j];
      T[i * k + j] = s;
    }
  }
  const V = new Float64Array(k * k);
  for (let i = 0; i < k; i++) {
    for (let j = i; j < k; j++) {
      let s = 0;
      for (let m = j; m < k; m++) s += T[i * k + m] * Rinv[j * k + m];
      const v = s / (scale[i] * scale[j]);
      V[i * k + j] = v;
      V[j * k + i] = v;
    }
  }
  return V;
}

/** Classical covariance s²(XᵀX)⁻¹ = s² R⁻¹R⁻ᵀ. */
export function classicalCovariance(qr: QrFit): Float64Array {
  const { k, n } = qr;
  const s2 = qr.rss / (n - k);
  const I = new Float64Array(k * k);
  for (let j = 0; j < k; j++) I[j * k + j] = s2;
  return sandwich(qr, I);
}

/**
 * Heteroskedasticity-consistent covariance HC0–HC3.
 * @param X design columns; qr their factorisation; h leverages (needed for HC2, HC3)
 * @param rowNumbers sheet rows, to name a row whose leverage is 1
 */
export function hcCovariance(X: Float64Array[], qr: QrFit, type: "HC0" | "HC1" | "HC2" | "HC3", h: Float64Array, rowNumbers: Int32Array): Float64Array {
  const { n, k, R, scale, resid } = qr;
  if (type === "HC2" || type === "HC3") {
    const ones: number[] = [];
    for (let i = 0; i < n; i++) if (h[i] >= 1 - LEVERAGE_TOL) ones.push(rowNumbers[i]);
    if (ones.length > 0) {
      fail(`${rowsPhrase(ones)} alone ${ones.length === 1 ? "determines" : "determine"} a coefficient (leverage 1), so ${type} is undefined; use se=HC1 or se=HC0, or add rows`);
    }
  }
  const M = new Float64Array(k * k);
  const z = new Float64Array(k);
  const inv = Array.from(scale, (s) => 1 / s);
  const hc1 = n / (n - k);
  for (let i = 0; i < n; i++) {
    const e = resid[i];
    let w = e * e;
    if (type === "HC1") w *= hc1;
    else if (type === "HC2") w /= 1 - h[i];
    else if (type === "HC3") w /= (1 - h[i]) * (1 - h[i]);
    if (w === 0) continue;
    for (let j = 0; j < k; j++) z[j] = X[j][i] * inv[j];
    forwardSolveRt(R, k, z);
    for (let a = 0; a < k; a++) {
      const wa = w * z[a];
      for (let b = a; b < k; b++) M[a * k + b] += wa * z[b];
    }
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
  return sandwich(qr, M);
}

/** Newey–West HAC covariance with L lags (Bartlett weights, no prewhitening, no df factor). */
export function hacCovariance(X: Float64Array[], qr: QrFit, L: number): Float64Array {
  const { n, k, R, scale, resid } = qr;
  if (L > n - 1) fail(`lags=${L} is more than the data allow: with ${n} rows use at most lags=${n - 1} (the default is ${defaultLags(n)})`);
  const G: Float64Array[] = [];
  for (let j = 0; j < k; j++) G.push(new Float64Array(n));
  const z = new Float64Array(k);
  const inv = Array.from(scale, (s) => 1 / s);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < k; j++) z[j] = X[j][i] * inv[j];
    forwardSolveRt(R, k, z);
    const e = resid[i];
    for (let j = 0; j < k; j++) G[j][i] = z[j] * e;
  }
  const M = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      const ga = G[a];
      const gb = G[b];
      let s = 0;
      for (let t = 0; t < n; t++) s += ga[t] * gb[t];
      M[a * k + b] += s;
    }
  }
  for (let l = 1; l <= L; l++) {
    const wl = 1 - l / (L + 1);
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) {
        // Γ_l[a][b] = Σ_t g_t[a] g_{t−l}[b]; the meat adds w_l (Γ_l + Γ_lᵀ)
        const ga = G[a];
        const gb = G[b];
        let s = 0;
        for (let t = l; t < n; t++) s += ga[t] * gb[t - l];
        s *= wl;
        if (a <= b) M[a * k + b] += s;
        if (b <= a) M[b * k + a] += s;
      }
    }
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
  return sandwich(qr, M);
}

export interface Covariance {
  type: SeType;
  /** Row-major k×k. */
  V: Float64Array;
  /** Lag length used, for HAC. */
  lags?: number;
  /** Label for output headers: "HC3", "HAC, 4 lags". */
  label: string;
}
