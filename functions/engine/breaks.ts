/**
 * Did the model change? Chow (1960) F, the same hypothesis as a Wald F with a robust covariance,
 * and sup-F over unknown break points (Andrews 1993) with Hansen's (1997) p-value.
 *
 * Every test is on the model with every regressor (the intercept included) interacted with a
 * second-regime indicator D (D = 1 from the break on): y = X·b + (D∘X)·d + e. The k interaction
 * coefficients d are the changes; "before" is b, "after" is b + d.
 *
 * - Chow F: the classical Wald F of d = 0, df (k, n − 2k). It equals Chow's
 *   ((RSS_pooled − RSS_1 − RSS_2)/k) / ((RSS_1 + RSS_2)/(n − 2k)), computed so from three refined
 *   fits; when the difference is under 1e-3 of RSS_pooled (cancellation), the extra sum of squares
 *   is taken instead from the QR factor of the interacted design: with the interactions last, it is
 *   ‖R₂₂·d‖² (the last k entries of Qᵀy), a sum of squares with no cancellation.
 * - Wald F with the chosen covariance V (HC0–HC3, HAC on the interacted design):
 *   dᵀ V_dd⁻¹ d / k on df (k, n − 2k), as lmtest::waldtest(test = "F"). V for the per-term errors
 *   comes from functions/engine/covariance.ts; the statistic inverts the meat's interaction block
 *   in the QR's orthonormal space instead of V_dd (robustWaldForm), which keeps the digits an
 *   ill-conditioned design costs V_dd.
 * - sup-F: the largest Wald statistic in Andrews' form (k times the Chow F) over every break that
 *   leaves at least ⌊trim·n⌋ rows and more than k rows in each regime (strucchange::Fstats with
 *   from = trim). The p-value is Hansen's (1997) approximation as strucchange::pvalue.Fstats
 *   computes it (functions/engine/hansen1997.ts holds the coefficients).
 *
 * sup-F shares all the work between candidates. With e the residuals of the pooled fit (Xᵀe = 0),
 * A_r = X_rᵀX_r the cross-products of regime r and s_t = Σ_{i≤t} x_i e_i (= −Σ_{i>t} x_i e_i),
 *   RSS_pooled − RSS_1(t) − RSS_2(t) = s_tᵀ (A_1⁻¹ + A_2⁻¹) s_t = ‖R_1⁻ᵀ s_t‖² + ‖R_2⁻ᵀ s_t‖²
 * with R_r the triangular factor of regime r: again a sum of squares with no cancellation. R_1(t)
 * and R_2(t), with the residual sums of squares RSS_1(t) and RSS_2(t) in the last entry of the
 * factor of [X y], are updated row by row with Givens rotations (Golub and Van Loan, Matrix
 * Computations, 4th ed., §6.5.2: updating a QR factorisation by a row), forward for the first
 * regime and backward for the second. Each update is orthogonal, so as stable (normwise) as a
 * fresh QR per candidate. Two changes that leave every regime's residuals unchanged keep digits:
 * the sweeps run on the centred columns when there is an intercept, and on the pooled residual e
 * in place of y. The largest statistic is then refitted from separate refined fits, so that the
 * reported sup-F and its break are those of separate fits.
 * Cost: O(n·k²) for all candidates together, against O(n²·k²) for a fit per candidate.
 */
import { mapped } from "./blocks";
import { forwardSolveRt, leastSquares, RANK_TOL, type Dependency, type QrFit } from "./leastSquares";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, leastSquaresInput, originalUnits } from "./covariance";
import { chiSquareSf, fisherSf, studentTwoSided } from "./distributions";
import { count, fail, unavailable } from "./problems";
import { HANSEN_SUP_F } from "./hansen1997";

/** The covariance the robust row (and the per-term errors) use. */
export type BreakCovariance = "classical" | "HC0" | "HC1" | "HC2" | "HC3" | "HAC";

/** Plain inputs: design columns (the intercept, when wanted, is a column of ones), y, names. */
export interface BreakData {
  /** Design columns, each of length n, in the row order the regimes follow. */
  X: Float64Array[];
  y: Float64Array;
  /** One name per column of X. */
  names: string[];
  /** Sheet row of each data row (messages name them). */
  rowNumbers: Int32Array;
}

export interface FTest {
  statistic: number;
  df1: number;
  df2: number;
  pValue: number;
}

export interface TermChange {
  name: string;
  before: number;
  after: number;
  difference: number;
  seBefore: number;
  seAfter: number;
  seDifference: number;
  /** difference / seDifference. */
  t: number;
  /** Two-sided p of t on n − 2k df (Student t, as every OLS covariance type here). */
  pValue: number;
}

export interface BreakAtResult {
  n: number;
  k: number;
  /** Rows in the first regime: the second regime starts at data row point + 1 (1-based). */
  point: number;
  rss: { pooled: number; before: number; after: number };
  chow: FTest;
  wald: FTest & { covariance: BreakCovariance; label: string; lags?: number };
  terms: TermChange[];
  /** Coefficients of the interacted model: b (k) then d (k). */
  coef: Float64Array;
  /** Their covariance under the chosen type, row-major 2k×2k. */
  V: Float64Array;
}

/** Relative size of RSS (to Σy²) below which the interacted fit counts as exact. */
const EXACT = 1e-24;

function sliceColumns(X: Float64Array[], from: number, to: number): Float64Array[] {
  return X.map((c) => c.subarray(from, to));
}

function nameList(names: string[]): string {
  return names.length === 1 ? names[0] : `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}`;
}

/** Refuses a break that leaves a regime with k rows or fewer, or falls outside the data. */
export function checkBreakPoint(n: number, k: number, point: number, rowNumbers: Int32Array): void {
  if (!Number.isInteger(point) || point < 1 || point > n - 1) {
    fail(`the break must start the second regime at a data row from 2 to ${n} (data row 1 would leave nothing before it); data row ${point + 1} is outside the data`);
  }
  const need = k + 1;
  const side = (rows: number, which: string) => {
    if (rows < need) {
      fail(`a break at data row ${point + 1} (sheet row ${rowNumbers[point]}) leaves ${count(rows, "row")} ${which} it, too few for ${k} coefficients (the intercept counts): each regime needs at least ${need} rows; move the break`);
    }
  };
  side(point, "before");
  side(n - point, "from");
}

function regimeFit(d: BreakData, from: number, to: number, side: string): QrFit {
  const rows = `sheet rows ${d.rowNumbers[from]}–${d.rowNumbers[to - 1]}`;
  const ls = leastSquares(sliceColumns(d.X, from, to), d.y.subarray(from, to));
  if (ls.qr) return ls.qr;
  const dep = ls.dependent as Dependency;
  const name = d.names[dep.column];
  if (dep.on.length === 0) return fail(`${name} is zero in every row ${side} the break (${rows}), so its change cannot be estimated: move the break or leave ${name} out of x`);
  return fail(`${name} is an exact linear combination of ${nameList(dep.on.map((i) => d.names[i]))} in the rows ${side} the break (${rows}) (for example, it does not vary there), so its change cannot be estimated: move the break or leave ${name} out of x`);
}

/** The pooled fit of every row, or the collinearity in words. */
function pooledFit(d: BreakData): QrFit {
  const ls = leastSquares(d.X, d.y);
  if (ls.qr) return ls.qr;
  const dep = ls.dependent as Dependency;
  const name = d.names[dep.column];
  if (dep.on.length === 0) return fail(`${name} is zero in every row used: remove it from x`);
  return fail(`${name} is an exact linear combination of ${nameList(dep.on.map((i) => d.names[i]))} (collinear): remove one of these columns`);
}

/** The interacted design [X, D∘X] with D = 1 from row `point` (0-based) on. */
export function interactedDesign(X: Float64Array[], point: number): Float64Array[] {
  const out = X.slice();
  for (const c of X) {
    const z = new Float64Array(c.length);
    z.set(c.subarray(point), point);
    out.push(z);
  }
  return out;
}

/**
 * dᵀ V⁻¹ d for a symmetric positive definite V (row-major m×m), by Cholesky after scaling V to unit
 * diagonal (which removes the units' part of its condition). Null when V is not positive definite.
 */
export function quadraticInverse(V: Float64Array, d: Float64Array, m: number): number | null {
  const s = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    const v = V[i * m + i];
    if (!(v > 0)) return null;
    s[i] = 1 / Math.sqrt(v);
  }
  const L = new Float64Array(m * m);
  for (let j = 0; j < m; j++) {
    let dj = V[j * m + j] * s[j] * s[j];
    for (let p = 0; p < j; p++) dj -= L[j * m + p] * L[j * m + p];
    if (!(dj > 1e-14)) return null;
    const ljj = Math.sqrt(dj);
    L[j * m + j] = ljj;
    for (let i = j + 1; i < m; i++) {
      let v = V[i * m + j] * s[i] * s[j];
      for (let p = 0; p < j; p++) v -= L[i * m + p] * L[j * m + p];
      L[i * m + j] = v / ljj;
    }
  }
  // z = L⁻¹ (s∘d); the form is ‖z‖²
  const z = new Float64Array(m);
  let q = 0;
  for (let i = 0; i < m; i++) {
    let v = d[i] * s[i];
    for (let p = 0; p < i; p++) v -= L[i * m + p] * z[p];
    z[i] = v / L[i * m + i];
    q += z[i] * z[i];
  }
  return q;
}

/**
 * The interacted fit at a break and its extra sum of squares: with the interactions last, the extra
 * sum of squares of d is ‖R₂₂·c₂‖² (c the scaled coefficients; the last k entries of Qᵀy).
 */
function interactedFit(d: BreakData, point: number): { Z: Float64Array[]; qr: QrFit; extra: number } {
  const k = d.X.length;
  const Z = interactedDesign(d.X, point);
  const ls = leastSquares(Z, d.y);
  const qr = ls.qr ?? fail("the columns of x are collinear within one regime: move the break or leave a column out of x");
  const m = 2 * k;
  let extra = 0;
  for (let i = k; i < m; i++) {
    let v = 0;
    for (let j = i; j < m; j++) v += qr.R[i * m + j] * qr.coef[j] * qr.scale[j];
    extra += v * v;
  }
  return { Z, qr, extra };
}

/**
 * The extra sum of squares of a break, from the more accurate of two routes: Chow's difference
 * RSS_pooled − RSS_1 − RSS_2 of three separate (refined) fits when it is not small against
 * RSS_pooled (its rounding is then at most about 1e3·ε relative), else ‖R₂₂·c₂‖² of the interacted
 * fit, which has no cancellation but carries the interacted design's condition.
 */
function chowExtra(pooled: number, before: number, after: number, triangle: number): number {
  const diff = pooled - before - after;
  return diff > 1e-3 * pooled ? diff : triangle;
}

/**
 * Chow F, the Wald F under `covariance`, and the per-term changes, for a known break.
 * @param point rows in the first regime (the second starts at 0-based row `point`)
 * @param lags HAC lag length (null: floor(4(n/100)^(2/9)) of the n rows used)
 */
export function breakAt(d: BreakData, point: number, covariance: BreakCovariance, lags: number | null = null): BreakAtResult {
  const k = d.X.length;
  const n = d.y.length;
  if (n <= 2 * k) fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few to test a break in ${k} coefficients (the intercept counts): need at least ${2 * k + 2}`);
  checkBreakPoint(n, k, point, d.rowNumbers);
  const before = regimeFit(d, 0, point, "before");
  const after = regimeFit(d, point, n, "from");
  const pooled = pooledFit(d);
  const { Z, qr, extra } = interactedFit(d, point);
  let yy = 0;
  for (let i = 0; i < n; i++) yy += d.y[i] * d.y[i];
  if (!(qr.rss > EXACT * yy)) unavailable("the model with a break fits the data exactly (every residual is zero up to rounding), so the break tests are undefined");
  const df2 = n - 2 * k;
  const m = 2 * k;
  const chowF = (chowExtra(pooled.rss, before.rss, after.rss, extra) / k) / ((before.rss + after.rss) / df2);
  const chow: FTest = { statistic: chowF, df1: k, df2, pValue: fisherSf(chowF, k, df2) };
  let W: Float64Array;
  let L: number | undefined;
  const input = leastSquaresInput(Z, qr, d.rowNumbers);
  if (covariance === "classical") W = classicalCovariance(input);
  else if (covariance === "HAC") {
    L = lags ?? defaultLags(n);
    W = hacCovariance(input, L);
  } else W = hcCovariance(input, covariance, null).V;
  const V = originalUnits(W, qr.scale, 1);
  const q = covariance === "classical" ? chowF * k : robustWaldForm(Z, qr, covariance, L ?? 0);
  if (q === null) unavailable(`the ${covariance} covariance of the changes is not positive definite for this break (too few rows on one side carry the change), so its Wald test is undefined: use se=classical or move the break`);
  const waldF = q / k;
  const label = covariance === "HAC" ? `HAC, ${L} lag${L === 1 ? "" : "s"}` : covariance;
  const wald = { statistic: waldF, df1: k, df2, pValue: fisherSf(waldF, k, df2), covariance, label, lags: L };
  const terms: TermChange[] = d.names.map((name, j) => {
    const b = qr.coef[j];
    const c = qr.coef[k + j];
    const vb = V[j * m + j];
    const vc = V[(k + j) * m + (k + j)];
    const vbc = V[j * m + (k + j)];
    const seDifference = Math.sqrt(Math.max(0, vc));
    const t = c / seDifference;
    return {
      name,
      before: b,
      after: b + c,
      difference: c,
      seBefore: Math.sqrt(Math.max(0, vb)),
      seAfter: Math.sqrt(Math.max(0, vb + vc + 2 * vbc)),
      seDifference,
      t,
      pValue: studentTwoSided(t, df2),
    };
  });
  return { n, k, point, rss: { pooled: pooled.rss, before: before.rss, after: after.rss }, chow, wald, terms, coef: qr.coef, V };
}

/**
 * dᵀ V_dd⁻¹ d for the interaction block d of the interacted fit, in the orthonormal space of its QR
 * factor: with the interactions last, R is block upper triangular, so V_dd = R₂₂⁻¹ M₂₂ R₂₂⁻ᵀ (M the
 * meat Σ ω_i z_i z_iᵀ in that space, z_i = R⁻ᵀ x_i) and dᵀ V_dd⁻¹ d = uᵀ M₂₂⁻¹ u with u = R₂₂ d
 * (scaled). The weights are those of functions/engine/covariance.ts (HC0 e², HC1 e²·n/(n−2k),
 * HC2 e²/(1−h), HC3 e²/(1−h)²; HAC Bartlett sums of g_t = z_t e_t). Inverting M₂₂ instead of V_dd
 * keeps the digits an ill-conditioned design would cost (V_dd's condition is about that of R₂₂
 * squared times M₂₂'s). The covariance itself (for the per-term errors) comes from covariance.ts,
 * which has already refused leverage 1 and infeasible HAC requests.
 */
function robustWaldForm(Z: Float64Array[], qr: QrFit, type: Exclude<BreakCovariance, "classical">, L: number): number | null {
  const { n, R, scale, coef, resid } = qr;
  const m = Z.length;
  const k = m / 2;
  const u = new Float64Array(k);
  for (let i = k; i < m; i++) {
    let v = 0;
    for (let j = i; j < m; j++) v += R[i * m + j] * coef[j] * scale[j];
    u[i - k] = v;
  }
  const M = new Float64Array(k * k);
  const z = new Float64Array(m);
  const inv = mapped(scale, (v) => 1 / v);
  const hac = type === "HAC";
  const G = hac ? new Float64Array(n * k) : null; // g_t, row-major n×k
  const hc1 = n / (n - m);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < m; j++) z[j] = Z[j][i] * inv[j];
    forwardSolveRt(R, m, z);
    const e = resid[i];
    if (G) {
      for (let a = 0; a < k; a++) G[i * k + a] = z[k + a] * e;
      continue;
    }
    let w = e * e;
    if (type === "HC1") w *= hc1;
    else if (type === "HC2" || type === "HC3") {
      let h = 0;
      for (let j = 0; j < m; j++) h += z[j] * z[j];
      w = type === "HC2" ? w / (1 - h) : w / ((1 - h) * (1 - h));
    }
    for (let a = 0; a < k; a++) {
      const wa = w * z[k + a];
      for (let b = a; b < k; b++) M[a * k + b] += wa * z[k + b];
    }
  }
  if (G) {
    for (let l = 0; l <= L; l++) {
      const wl = l === 0 ? 1 : 1 - l / (L + 1);
      for (let a = 0; a < k; a++) {
        for (let b = 0; b < k; b++) {
          if (l === 0 && b < a) continue;
          let s = 0;
          for (let t = l; t < n; t++) s += G[t * k + a] * G[(t - l) * k + b];
          s *= wl;
          if (l === 0) M[a * k + b] += s;
          else {
            // the meat adds w_l (Γ_l + Γ_lᵀ), Γ_l[a][b] = Σ_t g_t[a] g_{t−l}[b]
            if (a <= b) M[a * k + b] += s;
            if (b <= a) M[b * k + a] += s;
          }
        }
      }
    }
  }
  for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
  return quadraticInverse(M, u, k);
}

export interface SupFResult {
  n: number;
  k: number;
  /** The Wald statistic in Andrews' form (k·F) at the most likely break. */
  statistic: number;
  pValue: number;
  /** Rows in the first regime at the most likely break (the second starts at data row point + 1). */
  point: number;
  /** First and last candidate (rows in the first regime), as strucchange::Fstats's from and to. */
  from: number;
  to: number;
  /** λ = ((n − from)·to)/(from·(n − to)), which selects Hansen's row. */
  lambda: number;
  /** k·F at every candidate from … to (index point − from); NaN where a candidate is skipped. */
  stats: Float64Array;
  /** Candidates left out because a regime's columns are collinear there, or not allowed. */
  skipped: number;
  /** Residual sums of squares of the two regimes at every candidate (index point − from). */
  rssBefore: Float64Array;
  rssAfter: Float64Array;
}

/** The candidate range of strucchange::Fstats(from = trim): at least ⌊trim·n⌋ and more than k rows in each regime. */
export function candidateRange(n: number, k: number, trim: number): { from: number; to: number } {
  if (!(trim > 0 && trim < 0.5)) fail(`trim=${trim} must be between 0.05 and 0.45: the share of rows at each end where no break is placed`);
  let from = Math.floor(trim * n);
  let to = n - from;
  if (from < k + 1) from = k + 1;
  if (to > n - k - 1) to = n - k - 1;
  if (from > to) {
    fail(`${count(n, "usable row")} leave no break point with at least ${Math.max(Math.floor(trim * n), k + 1)} rows on each side for ${k} coefficients (the intercept counts): use more rows${Math.floor(trim * n) > k + 1 ? " or a smaller trim" : ""}`);
  }
  return { from, to };
}

/**
 * One sweep of Givens updates over the rows in `order`, filling, for each candidate point, the
 * regime's ‖R⁻ᵀ s‖² (num), its RSS and whether its columns have full rank.
 * Columns are scaled by `inv` (unit length over all rows), e by `yInv`. The last column of the
 * factor is the pooled residual e rather than y: X_r·b̂ lies in the span of X_r, so regressing e on
 * X_r leaves the same residuals as regressing y, and the size of ‖y‖ against ‖e‖ (an R² near 1)
 * costs no digits in RSS_r.
 * @param forward true: rows 0, 1, … (first regime, point = rows so far); false: rows n−1, n−2, …
 *   (second regime, point = index of the last row added)
 */
function sweep(X: Float64Array[], y: Float64Array, e: Float64Array, inv: Float64Array, yInv: number, from: number, to: number, forward: boolean, num: Float64Array, rss: Float64Array, ok: Uint8Array): void {
  const k = X.length;
  const k1 = k + 1;
  const n = y.length;
  const T = new Float64Array(k1 * k1);
  const w = new Float64Array(k1);
  const s = new Float64Array(k); // score sums, with Neumaier compensation
  const sc = new Float64Array(k);
  const css = new Float64Array(k); // column sums of squares of the regime
  const z = new Float64Array(k);
  const visit = (point: number) => {
    const at = point - from;
    for (let j = 0; j < k; j++) {
      if (!(css[j] > 0) || !(Math.abs(T[j * k1 + j]) >= RANK_TOL * Math.sqrt(css[j]))) {
        ok[at] = 0;
        return;
      }
    }
    let q = 0;
    for (let j = 0; j < k; j++) {
      let v = s[j] + sc[j];
      for (let p = 0; p < j; p++) v -= T[p * k1 + j] * z[p];
      z[j] = v / T[j * k1 + j];
      q += z[j] * z[j];
    }
    num[at] = q;
    const r = T[k * k1 + k];
    rss[at] = r * r;
    ok[at] = 1;
  };
  const add = (i: number) => {
    const ei = e[i] * yInv;
    for (let j = 0; j < k; j++) {
      const a = X[j][i] * inv[j];
      w[j] = a;
      css[j] += a * a;
      const p = a * ei;
      const t = s[j] + p; // Neumaier's compensated sum
      sc[j] += Math.abs(s[j]) >= Math.abs(p) ? (s[j] - t) + p : (p - t) + s[j];
      s[j] = t;
    }
    w[k] = ei; // the pooled residual in place of y: the same regime residuals, no large ‖y‖ to lose digits to
    for (let j = 0; j < k1; j++) {
      const b = w[j];
      if (b === 0) continue;
      const o = j * k1;
      const a = T[o + j];
      const r = Math.sqrt(a * a + b * b);
      const c = a / r;
      const sn = b / r;
      T[o + j] = r;
      for (let m = j + 1; m < k1; m++) {
        const t = T[o + m];
        const u = w[m];
        T[o + m] = c * t + sn * u;
        w[m] = c * u - sn * t;
      }
    }
  };
  if (forward) {
    for (let i = 0; i < to; i++) {
      add(i);
      const point = i + 1;
      if (point >= from) visit(point);
    }
  } else {
    for (let i = n - 1; i >= from; i--) {
      add(i);
      if (i <= to) visit(i);
    }
  }
}

/**
 * The columns the sweeps work on: with a constant column (the intercept) in X, every other column
 * centred at its mean. This is a change of columns X → X·A, under which every regime's residuals
 * and the statistic are unchanged; the centred difference x_i − x̄ is computed with an error
 * relative to itself (and the error of x̄ moves the column along the intercept only, inside the
 * span), so the centred design is the same problem, better conditioned (log price near 1.5 ± 0.1
 * otherwise nearly repeats the intercept). Without a constant column, X as it is.
 */
function sweepColumns(X: Float64Array[]): Float64Array[] {
  const constant = (c: Float64Array) => c.length > 0 && c[0] !== 0 && c.every((v) => v === c[0]);
  if (!X.some(constant)) return X;
  return X.map((c) => {
    if (constant(c)) return c;
    const n = c.length;
    let m = 0;
    for (let i = 0; i < n; i++) m += c[i];
    m /= n;
    let corr = 0;
    for (let i = 0; i < n; i++) corr += c[i] - m;
    m += corr / n;
    return mapped(c, (v) => v - m);
  });
}

/**
 * sup-F over every candidate break in candidateRange(n, k, trim).
 * @param allowed when given, allowed[point] = 1 marks the candidates that may be used (breaks
 *   between periods); the others are skipped
 */
export function supF(d: BreakData, trim: number, allowed: Uint8Array | null = null): SupFResult {
  const k = d.X.length;
  const n = d.y.length;
  if (n <= 2 * k + 1) fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few to look for a break in ${k} coefficients (the intercept counts): need at least ${2 * k + 2}`);
  const { from, to } = candidateRange(n, k, trim);
  const pooled = pooledFit(d);
  const W = sweepColumns(d.X);
  const inv = mapped(W, (c) => {
    let ss = 0;
    for (let i = 0; i < n; i++) ss += c[i] * c[i];
    return 1 / Math.sqrt(ss);
  });
  let yn = 0;
  for (let i = 0; i < n; i++) yn = Math.max(yn, Math.abs(d.y[i]));
  if (yn === 0) unavailable("y is zero in every row used, so no break can be tested");
  let yy = 0;
  for (let i = 0; i < n; i++) yy += (d.y[i] / yn) * (d.y[i] / yn);
  const yInv = 1 / (yn * Math.sqrt(yy));
  const c = to - from + 1;
  const num1 = new Float64Array(c);
  const num2 = new Float64Array(c);
  const rss1 = new Float64Array(c);
  const rss2 = new Float64Array(c);
  const ok1 = new Uint8Array(c);
  const ok2 = new Uint8Array(c);
  sweep(W, d.y, pooled.resid, inv, yInv, from, to, true, num1, rss1, ok1);
  sweep(W, d.y, pooled.resid, inv, yInv, from, to, false, num2, rss2, ok2);
  const stats = new Float64Array(c);
  const df2 = n - 2 * k;
  const y2 = 1 / (yInv * yInv);
  let best = -1;
  let bestStat = -Infinity;
  let skipped = 0;
  let exact = 0;
  for (let a = 0; a < c; a++) {
    rss1[a] *= y2;
    rss2[a] *= y2;
    if (!ok1[a] || !ok2[a] || (allowed !== null && !allowed[from + a])) {
      stats[a] = NaN;
      skipped++;
      continue;
    }
    const u = rss1[a] + rss2[a];
    if (!(u > EXACT * y2)) {
      stats[a] = NaN;
      exact++;
      continue;
    }
    const st = ((num1[a] + num2[a]) * y2) / (u / df2);
    stats[a] = st;
    if (st > bestStat) {
      bestStat = st;
      best = a;
    }
  }
  if (best >= 0) {
    // The sweeps are normwise backward stable, as an ordinary QR fit per candidate; the reported
    // statistic is refitted from separate refined fits (as breakAt computes the Chow F) at every
    // candidate within 1e-6 of the largest, so that the maximum and its place are those of
    // separate fits.
    const near: number[] = [];
    for (let a = 0; a < c; a++) if (stats[a] >= bestStat * (1 - 1e-6)) near.push(a);
    near.sort((p, q) => stats[q] - stats[p]);
    let refBest = -1;
    let refStat = -Infinity;
    for (const a of near.slice(0, 8)) {
      const point = from + a;
      const f = interactedFit(d, point);
      const r1 = regimeFit(d, 0, point, "before").rss;
      const r2 = regimeFit(d, point, n, "from").rss;
      const st = chowExtra(pooled.rss, r1, r2, f.extra) / ((r1 + r2) / df2);
      stats[a] = st;
      if (st > refStat || (st === refStat && a < refBest)) {
        refStat = st;
        refBest = a;
      }
    }
    best = refBest;
    bestStat = refStat;
  }
  if (exact > 0) unavailable(`the model with a break fits the data exactly at ${count(exact, "candidate break")} (every residual is zero up to rounding), so sup-F is undefined`);
  if (best < 0) {
    fail(`no candidate break between data rows ${from + 1} and ${to + 1} can be tested: at every one the columns of x are collinear within one regime (a column that does not vary on one side); leave that column out of x`);
  }
  const lambda = ((n - from) * to) / (from * (n - to));
  return { n, k, statistic: bestStat, pValue: hansenSupFPValue(bestStat, k, lambda), point: from + best, from, to, lambda, stats, skipped, rssBefore: rss1, rssAfter: rss2 };
}

/**
 * Hansen's (1997) approximate asymptotic p-value of sup-F with k restrictions and trimming
 * parameter λ, exactly as strucchange::pvalue.Fstats(type = "supF") computes it: τ = λ when λ < 1,
 * else 1/(1 + √λ); p_j = P(χ²_{d_j} > max(0, b0_j + b1_j·x)) for the 25 tabulated τ_j = 0.51 − j/50;
 * linear interpolation in τ between rows, the χ²_k tail at τ = 0.5, the τ = 0.01 row below it.
 * Upper tails are computed directly (strucchange forms 1 − pchisq, the same to about 1e-16).
 */
export function hansenSupFPValue(x: number, k: number, lambda: number): number {
  if (k > 40) unavailable(`the sup-F p-value (Hansen 1997) is tabulated for at most 40 coefficients; this model has ${k}: use fewer terms`);
  const tau = lambda < 1 ? lambda : 1 / (1 + Math.sqrt(lambda));
  const base = (k - 1) * 25 * 3;
  const pp = (j: number) => {
    // j is 1-based as in the table
    const o = base + (j - 1) * 3;
    const v = HANSEN_SUP_F[o] + HANSEN_SUP_F[o + 1] * x;
    return chiSquareSf(v > 0 ? v : 0, HANSEN_SUP_F[o + 2]);
  };
  if (tau === 0.5) return chiSquareSf(x, k);
  if (tau <= 0.01) return pp(25);
  if (tau >= 0.49) return ((0.5 - tau) * pp(1) + (tau - 0.49) * chiSquareSf(x, k)) * 100;
  const taua = (0.51 - tau) * 50;
  const tau1 = Math.floor(taua);
  return (tau1 + 1 - taua) * pp(tau1) + (taua - tau1) * pp(tau1 + 1);
}
