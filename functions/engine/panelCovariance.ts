/**
 * Covariances for panels: classical and HC0–HC3 after absorbing fixed effects, cluster-robust one-
 * and two-way, HAC within panel units, and Driscoll–Kraay.
 *
 * Every estimator is given as a `ScoreModel`: the columns X the bread's QR factor was computed on
 * (OLS: the √w-scaled absorbed regressors; PPML: √μ̂·x̃; 2SLS: the fitted X̂), the factor itself, and a
 * residual u per row such that the score of row i is x_i·u_i. As in covariance.ts the work is in the
 * orthonormal space of the factor: z_i = R⁻ᵀ x_i, the meat is built from the scores z_i u_i, and
 * V = R⁻¹ (meat) R⁻ᵀ, never forming XᵀX.
 *
 * - classical: s²(XᵀX)⁻¹ with s² = Σu²/(n − k − a).
 * - HC0 u², HC1 u²·n/(n − k − a), HC2 u²/(1 − h), HC3 u²/(1 − h)², with h = h̃ + the fixed effects'
 *   share (one key: w_i/W_g, so 1/n_g without weights); two keys have no exact leverage: refused.
 * - cluster (Liang and Zeger 1986): V = c·B(Σ_g s_g s_gᵀ)B, s_g = Σ_{i∈g} x_i u_i, c = G/(G−1)·(n−1)/(n−p),
 *   p = k + a − a_n (a_n: absorbed parameters of fixed effects nested within a cluster variable).
 *   Two-way (Cameron, Gelbach and Miller 2011): V₁ + V₂ − V₁₂, each with its own G/(G−1) (G₁₂ the
 *   distinct pairs) and the common (n−1)/(n−p); not repaired: a negative variance is reported.
 *   t with G − 1 df (two-way: the smaller G).
 * - HAC within panels: the Newey–West meat computed inside each unit (a contiguous block of rows in
 *   time order) and summed, Bartlett weights 1 − l/(L+1), no small-sample factor.
 * - Driscoll and Kraay (1998): h_t = Σ_{i∈t} x_i u_i per period; S = Σ_{|l|≤L} w_l Σ_t h_t h_{t−l}ᵀ,
 *   Bartlett weights over the periods in time order; V = B S B; no small-sample factor.
 */
import { mapped } from "./blocks";
import { fail, requireFeasible, rowsPhrase } from "./problems";
import type { QrFit } from "./leastSquares";
import { BLOCK, defaultLags, forEachQBlock, LEVERAGE_TOL, originalUnits, sandwich as unitSandwich } from "./covariance";
import { recode } from "./absorb";

export interface ScoreModel {
  /** The columns the factor was computed on (n rows each). */
  X: Float64Array[];
  /** Householder factor of X (R, R⁻¹, column scales). */
  qr: QrFit;
  /** Per-row residual in the space of X: the score of row i is x_i·u_i. */
  u: Float64Array;
  /** Absorbed parameters a (0 without fixed effects). */
  absorbed: number;
  /**
   * The fixed effects' share of each row's leverage (one key: w_i/W_g), zeros without fixed effects;
   * null when exact leverage is not available (two keys).
   */
  leverageOffset: Float64Array | null;
  /** Sheet row of each row, for messages (default: 1-based position). */
  rowNumbers?: Int32Array;
  /** Why HC2/HC3 are refused when leverageOffset is null (default: the two-key reason). */
  noLeverage?: string;
}

export interface PanelCovariance {
  /** Row-major k×k. */
  V: Float64Array;
  /** Degrees of freedom for t, p and intervals. */
  df: number;
  /** Label for output headers. */
  label: string;
  /** Terms (0-based) whose variance came out negative (two-way cluster): to be shown as not available. */
  negative: number[];
  /** Clusters per variable (cluster), lags (HAC, DK), small-sample factors (cluster). */
  groups?: number[];
  lags?: number;
  factors?: number[];
}

/** R⁻¹ M R⁻ᵀ in the coefficients' units of the factorised columns. */
function sandwich(qr: QrFit, M: Float64Array): Float64Array {
  return originalUnits(unitSandwich(qr, M), qr.scale, 1);
}

function rowName(m: ScoreModel, i: number): number {
  return m.rowNumbers ? m.rowNumbers[i] : i + 1;
}

function dfResid(m: ScoreModel): number {
  return m.qr.n - m.qr.k - m.absorbed;
}

function symmetrise(M: Float64Array, k: number): void {
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
}

function negatives(V: Float64Array, k: number): number[] {
  const out: number[] = [];
  for (let j = 0; j < k; j++) if (!(V[j * k + j] >= 0)) out.push(j);
  return out;
}

/** Classical covariance with s² = Σu²/(n − k − a). */
export function panelClassical(m: ScoreModel): PanelCovariance {
  const { k } = m.qr;
  const df = dfResid(m);
  let ss = 0;
  for (let i = 0; i < m.u.length; i++) ss += m.u[i] * m.u[i];
  const I = new Float64Array(k * k);
  for (let j = 0; j < k; j++) I[j * k + j] = ss / df;
  return { V: sandwich(m.qr, I), df, label: "classical", negative: [] };
}

/** HC0–HC3 of the indicator regression (HC1 with n − k − a; HC2/HC3 with h = h̃ + the fixed effects' share). */
export function panelHc(m: ScoreModel, type: "HC0" | "HC1" | "HC2" | "HC3"): PanelCovariance {
  const { n, k } = m.qr;
  const needH = type === "HC2" || type === "HC3";
  if (needH && !m.leverageOffset) {
    fail(m.noLeverage ?? `se=${type} needs each row's leverage, which two absorbed fixed effects do not give exactly: use se=cluster (errors that allow for correlation within a key) or se=HC1`);
  }
  const df = dfResid(m);
  const hc1 = n / df;
  const off = m.leverageOffset;
  const u = m.u;
  const M = new Float64Array(k * k);
  const w = new Float64Array(BLOCK);
  const ones: number[] = [];
  forEachQBlock(m.X, m.qr, (start, rows, Z) => {
    for (let i = 0; i < rows; i++) {
      const e2 = u[start + i] * u[start + i];
      if (type === "HC0") w[i] = e2;
      else if (type === "HC1") w[i] = e2 * hc1;
      else {
        let h = (off as Float64Array)[start + i];
        for (let j = 0; j < k; j++) h += Z[j * BLOCK + i] * Z[j * BLOCK + i];
        if (h >= 1 - LEVERAGE_TOL) {
          ones.push(rowName(m, start + i));
          w[i] = 0;
        } else w[i] = type === "HC2" ? e2 / (1 - h) : e2 / ((1 - h) * (1 - h));
      }
    }
    for (let a = 0; a < k; a++) {
      for (let b = a; b < k; b++) {
        let s = 0;
        const oa = a * BLOCK;
        const ob = b * BLOCK;
        for (let i = 0; i < rows; i++) s += w[i] * Z[oa + i] * Z[ob + i];
        M[a * k + b] += s;
      }
    }
  });
  if (ones.length > 0) {
    fail(`${rowsPhrase(ones)} alone ${ones.length === 1 ? "determines" : "determine"} a coefficient or a fixed effect (leverage 1), so ${type} is undefined; use se=HC1 or se=cluster`);
  }
  symmetrise(M, k);
  return { V: sandwich(m.qr, M), df, label: type, negative: [] };
}

/** Σ of the scores z_i u_i within each group: G×k row-major. */
function groupScoreSums(m: ScoreModel, codes: Int32Array, G: number): Float64Array {
  const k = m.qr.k;
  const S = new Float64Array(G * k);
  const u = m.u;
  forEachQBlock(m.X, m.qr, (start, rows, Z) => {
    for (let j = 0; j < k; j++) {
      const o = j * BLOCK;
      for (let i = 0; i < rows; i++) S[codes[start + i] * k + j] += Z[o + i] * u[start + i];
    }
  });
  return S;
}

/** Σ_g s_g s_gᵀ (upper triangle filled, then symmetrised). */
function outerSum(S: Float64Array, G: number, k: number): Float64Array {
  const M = new Float64Array(k * k);
  for (let g = 0; g < G; g++) {
    const o = g * k;
    for (let a = 0; a < k; a++) {
      const sa = S[o + a];
      if (sa === 0) continue;
      for (let b = a; b < k; b++) M[a * k + b] += sa * S[o + b];
    }
  }
  symmetrise(M, k);
  return M;
}

export interface ClusterKey {
  name: string;
  /** Codes over the rows of the fit (any non-negative integers). */
  codes: Int32Array;
}

/**
 * Cluster-robust covariance, one- or two-way.
 * @param nestedAbsorbed a_n: absorbed parameters of the fixed effects nested within a cluster variable
 *   (Absorber.nestedAbsorbed), 0 without fixed effects
 */
export function clusterCovariance(m: ScoreModel, clusters: ClusterKey[], nestedAbsorbed = 0): PanelCovariance {
  const { n, k } = m.qr;
  if (clusters.length < 1 || clusters.length > 2) fail("cluster= takes one or two columns");
  const coded = clusters.map((c) => {
    if (c.codes.length !== n) throw new Error("cluster length");
    const r = recode(c.codes);
    if (r.levels < 2) fail(`${c.name} has one value in every row used, so there is only one cluster: cluster by a column with several values, or use se=HC1`);
    return { name: c.name, ...r };
  });
  const p = k + m.absorbed - nestedAbsorbed;
  if (!(n - p > 0)) fail(`too few rows for cluster-robust errors with ${p} parameters`);
  const common = (n - 1) / (n - p);
  const part = (codes: Int32Array, G: number): { M: Float64Array; c: number } => {
    const M = outerSum(groupScoreSums(m, codes, G), G, k);
    return { M, c: (G / (G - 1)) * common };
  };
  const parts: { M: Float64Array; c: number; sign: number }[] = coded.map((c) => ({ ...part(c.codes, c.levels), sign: 1 }));
  const groups = coded.map((c) => c.levels);
  if (coded.length === 2) {
    const pair = new Int32Array(n);
    const G2 = coded[1].levels;
    const a = coded[0].codes;
    const b = coded[1].codes;
    if (coded[0].levels * G2 < 2 ** 31) for (let i = 0; i < n; i++) pair[i] = a[i] * G2 + b[i];
    else {
      const map = new Map<number, number>();
      for (let i = 0; i < n; i++) {
        const key = a[i] * G2 + b[i];
        let c = map.get(key);
        if (c === undefined) map.set(key, (c = map.size));
        pair[i] = c;
      }
    }
    const r = recode(pair);
    // With one row per pair and n large, G₁₂/(G₁₂−1) is still the factor (the heteroskedasticity part).
    parts.push({ ...(r.levels > 1 ? part(r.codes, r.levels) : { M: new Float64Array(k * k), c: 0 }), sign: -1 });
    groups.push(r.levels);
  }
  const M = new Float64Array(k * k);
  for (const q of parts) for (let j = 0; j < k * k; j++) M[j] += q.sign * q.c * q.M[j];
  const V = sandwich(m.qr, M);
  const G = Math.min(...coded.map((c) => c.levels));
  const label = coded.length === 1
    ? `cluster: ${coded[0].name}, ${coded[0].levels} clusters`
    : `cluster: ${coded[0].name} (${coded[0].levels}) × ${coded[1].name} (${coded[1].levels})`;
  return { V, df: G - 1, label, negative: negatives(V, k), groups, factors: parts.map((q) => q.c) };
}

/** Starting row of each row's unit, checking that each unit is one contiguous block of rows. */
function unitBlocks(m: ScoreModel, units: Int32Array, unitName: string): { start: Int32Array; longest: number } {
  const n = units.length;
  const start = new Int32Array(n);
  const seen = new Set<number>();
  let longest = 0;
  let s = 0;
  for (let i = 0; i < n; i++) {
    if (i > 0 && units[i] !== units[i - 1]) {
      seen.add(units[i - 1]);
      if (seen.has(units[i])) {
        fail(`the rows of each ${unitName} must be together, in time order, for HAC within panels: row ${rowName(m, i)} returns to a ${unitName} seen before; sort the data by ${unitName} and then by time`);
      }
      longest = Math.max(longest, i - s);
      s = i;
    }
    start[i] = s;
  }
  longest = Math.max(longest, n - s);
  return { start, longest };
}

/** Per-row scores z_i u_i as k columns. */
function rowScores(m: ScoreModel): Float64Array[] {
  const { n, k } = m.qr;
  const G: Float64Array[] = [];
  for (let j = 0; j < k; j++) G.push(new Float64Array(n));
  forEachQBlock(m.X, m.qr, (start, rows, Z) => {
    for (let j = 0; j < k; j++) {
      const g = G[j];
      const o = j * BLOCK;
      for (let i = 0; i < rows; i++) g[start + i] = Z[o + i] * m.u[start + i];
    }
  });
  return G;
}

/**
 * Newey–West HAC inside each panel unit, summed over units.
 * @param units each row's unit; a unit's rows must be contiguous and in time order
 * @param lags L (default floor(4 (T/100)^(2/9)), T the most rows of one unit)
 */
export function panelHac(m: ScoreModel, units: Int32Array, lags: number | null = null, unitName = "unit"): PanelCovariance {
  const { n, k } = m.qr;
  if (units.length !== n) throw new Error("unit length");
  const { start, longest } = unitBlocks(m, units, unitName);
  const L = lags ?? defaultLags(longest);
  if (L > longest - 1) fail(`lags=${L} is more than the panel allows: the longest ${unitName} has ${longest} rows, so use at most lags=${Math.max(0, longest - 1)} (the default is ${defaultLags(longest)})`);
  requireFeasible(n * k * k * (L + 1), `HAC within panels with ${L} lags on ${n} rows and ${k} terms`, "use fewer lags (lags=), or se=cluster");
  const G = rowScores(m);
  const M = new Float64Array(k * k);
  for (let a = 0; a < k; a++) {
    for (let b = a; b < k; b++) {
      let s = 0;
      const ga = G[a];
      const gb = G[b];
      for (let t = 0; t < n; t++) s += ga[t] * gb[t];
      M[a * k + b] += s;
    }
  }
  for (let l = 1; l <= L; l++) {
    const wl = 1 - l / (L + 1);
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) {
        const ga = G[a];
        const gb = G[b];
        let s = 0;
        for (let t = l; t < n; t++) if (t - l >= start[t]) s += ga[t] * gb[t - l];
        s *= wl;
        if (a <= b) M[a * k + b] += s;
        if (b <= a) M[b * k + a] += s;
      }
    }
  }
  symmetrise(M, k);
  return { V: sandwich(m.qr, M), df: dfResid(m), label: `HAC within ${unitName}, ${L} lag${L === 1 ? "" : "s"}`, negative: [], lags: L };
}

/**
 * Driscoll–Kraay covariance.
 * @param periods each row's period as 0..T−1 in time order (null: refused, se=DK needs time=)
 * @param lags L (default floor(4 (T/100)^(2/9)), T the number of periods)
 */
export function driscollKraay(m: ScoreModel, periods: Int32Array | null, lags: number | null = null): PanelCovariance {
  const { n, k } = m.qr;
  if (!periods) return fail("se=DK needs the period of each row: name the week or quarter column in time=");
  if (periods.length !== n) throw new Error("period length");
  let T = 0;
  for (let i = 0; i < n; i++) {
    if (periods[i] < 0) throw new Error("negative period code");
    if (periods[i] + 1 > T) T = periods[i] + 1;
  }
  if (T < 2) fail("se=DK needs at least 2 periods in time=");
  const L = lags ?? defaultLags(T);
  if (L > T - 1) fail(`lags=${L} is more than ${T} periods allow: use at most lags=${T - 1} (the default is ${defaultLags(T)})`);
  const H = groupScoreSums(m, periods, T); // T×k, row t = h_t
  const M = outerSum(H, T, k);
  for (let l = 1; l <= L; l++) {
    const wl = 1 - l / (L + 1);
    for (let a = 0; a < k; a++) {
      for (let b = 0; b < k; b++) {
        let s = 0;
        for (let t = l; t < T; t++) s += H[t * k + a] * H[(t - l) * k + b];
        s *= wl;
        M[a * k + b] += s;
        M[b * k + a] += s;
      }
    }
  }
  return { V: sandwich(m.qr, M), df: dfResid(m), label: `Driscoll–Kraay, ${L} lag${L === 1 ? "" : "s"}`, negative: [], lags: L, groups: [T] };
}

/** Fewer clusters than this make cluster-robust errors unreliable (Cameron and Miller 2015; common practice). */
export const FEW_CLUSTERS = 30;

/** A caution for cluster columns with fewer than FEW_CLUSTERS clusters (null when every column has enough). */
export function fewClustersNote(names: readonly string[], groups: readonly number[] | undefined): string | null {
  if (!groups) return null;
  const few = names.map((n, m) => ({ n, g: groups[m] })).filter((c) => c.g < FEW_CLUSTERS);
  if (few.length === 0) return null;
  return `Few clusters: ${few.map((c) => `${c.n} has ${c.g}`).join(", ")}; with fewer than about ${FEW_CLUSTERS} clusters the clustered errors tend to be too small (Cameron and Miller 2015; common practice), so read p-values and intervals with care.`;
}

/** The reason to show (as #N/A) for a term whose two-way cluster variance came out negative. */
export function negativeVarianceReason(term: string): string {
  return `the two-way clustered variance of ${term} came out negative (V₁ + V₂ − V₁₂ is not repaired), so it has no standard error: cluster by one key only, or use se=DK`;
}

/** Standard errors; a negative variance gives NaN, which the cell layer must turn into #N/A with negativeVarianceReason. */
export function panelStandardErrors(c: PanelCovariance, k: number): Float64Array {
  return mapped({ length: k }, (_, j) => (c.V[j * k + j] >= 0 ? Math.sqrt(c.V[j * k + j]) : NaN));
}
