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
 *
 * Units: the functions below return W = R⁻¹(Σ ω z zᵀ)R⁻ᵀ, the covariance of the coefficients of the
 * unit-length columns (c_j = b_j·‖x_j‖), in the units of the y that was factorised. The covariance of
 * b is V_ij = W_ij/(‖x_i‖‖x_j‖); standard errors are read from W (standardError), so that a column or
 * a y of extreme magnitude (1e155, 1e−150) cannot push V_jj out of the range of doubles while the
 * standard error itself is an ordinary number.
 */
import { mapped } from "./blocks";
import { count, fail, requireFeasible, rowsPhrase } from "./problems";
import type { QrFit } from "./leastSquares";
import { kernel } from "./kernel";
import type { SeType } from "./options";

/**
 * What a covariance of the coefficients needs, made explicit so that every estimator supplies its
 * own: the columns the sandwich is computed on and their QR factor (the bread B = R⁻¹R⁻ᵀ in the
 * factor's scaled units), the score residuals u_i (the meat is Σ u_i² z_i z_iᵀ with z_i the rows of
 * Q), the residual sum of squares and degrees of freedom for the classical form, and the sheet rows.
 * OLS: the design and its residuals. PPML: the weighted design √μ̂·X and the Pearson residuals
 * (y − μ̂)/√μ̂. Estimators that absorb parameters give dfResid = n − k − absorbed.
 */
export interface CovarianceInput {
  columns: Float64Array[];
  factor: QrFit;
  scores: Float64Array;
  ssr: number;
  dfResid: number;
  rowNumbers: Int32Array;
}

/** The covariance input of a plain least-squares fit of y on X with factor qr. */
export function leastSquaresInput(X: Float64Array[], qr: QrFit, rowNumbers: Int32Array, dfResid = qr.n - qr.k): CovarianceInput {
  return { columns: X, factor: qr, scores: qr.resid, ssr: qr.rss, dfResid, rowNumbers };
}

/** Leverage at or above 1 − LEVERAGE_TOL counts as 1: HC2/HC3 are then undefined. */
export const LEVERAGE_TOL = 1e-10;

/** Default HAC lag length floor(4 (n/100)^(2/9)) (Newey and West 1994, common practice). */
export function defaultLags(n: number): number {
  return Math.floor(4 * Math.pow(n / 100, 2 / 9));
}

/**
 * The most lags accepted on n rows: a tenth of the rows, or the default when that is larger (common
 * practice). Why a bound at all: the scores g_t = x_t e_t of a least-squares fit sum to zero
 * (Xᵀe = 0), so the sample autocovariances over all lags cancel Γ_0 exactly; as L approaches n the
 * Bartlett weights approach 1 and the estimate is pulled toward zero, giving errors smaller than
 * HC3's (false precision). Even well below that, the usual t and normal critical values hold only
 * while L/n is small (Kiefer and Vogelsang 2005, Econometric Theory 21, fixed-b asymptotics).
 */
export function maxLags(n: number): number {
  return Math.max(defaultLags(n), Math.floor(n / 10));
}

/** Rows per block in the passes below (k·BLOCK doubles stay in cache). */
export const BLOCK = 256;

/**
 * Visits the rows of Q = X_s R⁻¹ block by block: visit(start, m, Z) with rows start … start+m−1 in
 * Z (column-major, column j at j·BLOCK), z_j = (x_j/s_j − Σ_{l<j} R_lj z_l)/R_jj, computed by the
 * kernel in force (kernel.ts). Z is valid during the visit only.
 */
export function forEachQBlock(X: Float64Array[], qr: QrFit, visit: (start: number, m: number, Z: Float64Array) => void): void {
  const inv = mapped(qr.scale, (s) => 1 / s);
  const ws = kernel().qWorkspace(qr.R, inv, qr.k, BLOCK);
  for (let start = 0; start < qr.n; start += BLOCK) {
    const m = Math.min(BLOCK, qr.n - start);
    ws.qRows(X, start, m);
    visit(start, m, ws.Z);
  }
}

/** Leverages of a design from its factor, h_i = ‖R⁻ᵀx_i‖² of the scaled row (Σ_j z_ji², j ascending), by the kernel in force. */
export function leveragesOf(X: Float64Array[], qr: QrFit): Float64Array {
  const h = new Float64Array(qr.n);
  const inv = mapped(qr.scale, (s) => 1 / s);
  const ws = kernel().qWorkspace(qr.R, inv, qr.k, BLOCK);
  for (let start = 0; start < qr.n; start += BLOCK) {
    const m = Math.min(BLOCK, qr.n - start);
    ws.qRows(X, start, m);
    ws.leverage(m);
    h.set(ws.h.subarray(0, m), start);
  }
  return h;
}

/** Rinv · M · Rinvᵀ for symmetric M (row-major k×k), in the space of the unit-length columns. */
export function sandwich(qr: QrFit, M: Float64Array): Float64Array {
  const { k, Rinv } = qr;
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
      V[i * k + j] = s;
      V[j * k + i] = s;
    }
  }
  return V;
}

/** Classical covariance s²(XᵀX)⁻¹ = s² R⁻¹R⁻ᵀ, s² = SSR/df (as W, see Units above). */
export function classicalCovariance(c: CovarianceInput): Float64Array {
  const qr = c.factor;
  const k = qr.k;
  const s2 = c.ssr / c.dfResid;
  const I = new Float64Array(k * k);
  for (let j = 0; j < k; j++) I[j * k + j] = s2;
  return sandwich(qr, I);
}

/**
 * Heteroskedasticity-consistent covariance HC0–HC3, in one blocked pass over the rows.
 * HC1 scales HC0 by n/df. @param h leverages when known (HC2 and HC3 compute them in the same pass
 * otherwise, and return them)
 */
export function hcCovariance(c: CovarianceInput, type: "HC0" | "HC1" | "HC2" | "HC3", h: Float64Array | null): { V: Float64Array; h: Float64Array | null } {
  const { columns: X, factor: qr, scores: resid, rowNumbers } = c;
  const { n, k } = qr;
  const needH = type === "HC2" || type === "HC3";
  // Leverages are computed in the same pass when they are needed and not known yet.
  const lev = needH ? h ?? new Float64Array(n) : null;
  const fillH = needH && h === null;
  const inv = mapped(qr.scale, (s) => 1 / s);
  const ws = kernel().qWorkspace(qr.R, inv, k, BLOCK);
  const hc1 = n / c.dfResid;
  const ones: number[] = [];
  const kind = type === "HC0" ? 0 : type === "HC1" ? 1 : type === "HC2" ? 2 : 3;
  const limit = 1 - LEVERAGE_TOL;
  for (let start = 0; start < n; start += BLOCK) {
    const m = Math.min(BLOCK, n - start);
    ws.qRows(X, start, m);
    if (lev) {
      if (fillH) {
        ws.leverage(m);
        lev.set(ws.h.subarray(0, m), start);
      } else ws.h.set(lev.subarray(start, start + m));
    }
    // w_i from e_i (and h_i): e², e²·n/df, e²/(1 − h), e²/(1 − h)²; a row with h = 1 is named below
    if (ws.hcWeights(resid, start, m, kind, hc1, limit) > 0) {
      for (let i = 0; i < m; i++) if ((lev as Float64Array)[start + i] >= limit) ones.push(rowNumbers[start + i]);
    }
    ws.meat(m); // M_ab += Σ w_i z_ai z_bi, b ≥ a
  }
  const M = ws.M.slice();
  if (ones.length > 0) {
    fail(`${rowsPhrase(ones)} alone ${ones.length === 1 ? "determines" : "determine"} a coefficient (leverage 1), so ${type} is undefined; use se=HC1 or se=HC0, or add rows`);
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
  return { V: sandwich(qr, M), h: lev };
}

/** Newey–West HAC covariance with L lags (Bartlett weights, no prewhitening, no df factor). */
export function hacCovariance(c: CovarianceInput, L: number): Float64Array {
  const { columns: X, factor: qr, scores: resid } = c;
  const { n, k } = qr;
  const most = maxLags(n);
  if (L > most) {
    const why = most > Math.floor(n / 10) ? "the default lag length, more than a tenth of these rows" : `a tenth of the rows, common practice; the default is ${defaultLags(n)}`;
    fail(`lags=${L} is too many for ${n} rows: use at most lags=${most} (${why}); with more lags the HAC errors shrink toward zero and look more precise than they are`);
  }
  requireFeasible(n * k * k * (L + 1), `HAC with ${count(L, "lag")} on ${n} rows and ${count(k, "term")}`, "use fewer lags (lags=), a sample of the rows, or se=HC3");
  const G: Float64Array[] = [];
  for (let j = 0; j < k; j++) G.push(new Float64Array(n));
  forEachQBlock(X, qr, (start, m, Z) => {
    for (let j = 0; j < k; j++) {
      const g = G[j];
      const o = j * BLOCK;
      for (let i = 0; i < m; i++) g[start + i] = Z[o + i] * resid[start + i];
    }
  });
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
  /** Row-major k×k covariance of the coefficients of the unit-length columns, in units of `unit`². */
  W: Float64Array;
  /** The column lengths ‖x_j‖ of the factorised design. */
  scale: Float64Array;
  /** The power of two y was divided by before the factorisation (OLS: yUnit; PPML: 1). */
  unit: number;
  /** Row-major k×k covariance of the coefficients in their own units (entries may under- or overflow at extreme magnitudes: read errors through standardError). */
  V: Float64Array;
  /** Degrees of freedom of t, p and intervals when they are not the fit's residual df (clusters: G − 1). */
  df?: number;
  /** Terms whose variance came out negative (two-way clusters, not repaired): shown as not available. */
  negative?: number[];
  /** Lag length used, for HAC. */
  lags?: number;
  /** Clusters per cluster= column (two-way: then the distinct pairs), or the periods of DK. */
  groups?: number[];
  /** Label for output headers: "HC3", "HAC, 4 lags". */
  label: string;
}

/** V_ij = W_ij·unit²/(‖x_i‖‖x_j‖): the covariance in the coefficients' own units. */
export function originalUnits(W: Float64Array, scale: Float64Array, unit: number): Float64Array {
  const k = scale.length;
  const V = new Float64Array(k * k);
  for (let i = 0; i < k; i++) for (let j = 0; j < k; j++) V[i * k + j] = ((W[i * k + j] * unit) / scale[i]) * (unit / scale[j]);
  return V;
}

/** The standard error of coefficient j: √W_jj·unit/‖x_j‖. */
export function standardError(c: Covariance, j: number): number {
  const k = c.scale.length;
  if (c.negative && c.negative.includes(j)) return NaN; // a two-way cluster variance below zero
  return (Math.sqrt(Math.max(0, c.W[j * k + j])) / c.scale[j]) * c.unit;
}

/** The standard error of the combination x0ᵀb: √(Σ (x0_i/‖x_i‖) W_ij (x0_j/‖x_j‖))·unit. */
export function combinationError(c: Covariance, x0: Float64Array): number {
  const k = c.scale.length;
  const u = mapped(x0, (v, i) => v / c.scale[i]);
  let s = 0;
  for (let a = 0; a < k; a++) {
    let r = 0;
    for (let b = 0; b < k; b++) r += c.W[a * k + b] * u[b];
    s += u[a] * r;
  }
  return Math.sqrt(Math.max(0, s)) * c.unit;
}
