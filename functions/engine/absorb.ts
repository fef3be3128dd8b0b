/**
 * Fixed effects absorbed without forming their indicator columns (Frisch–Waugh–Lovell).
 *
 * Keys are integer codes 0..G−1 over the rows (one or two keys). `prepareAbsorption` leaves out
 * singletons — rows whose value of some key occurs once — repeatedly until none remain (Correia 2015,
 * "Singletons, cluster-robust standard errors and fixed effects"), then gives an `Absorber` on the rows
 * kept, whose `demean` replaces a column by its residual from the (weighted) least squares projection
 * on the indicator columns of the keys.
 *
 * One key: exact weighted group demeaning, x − Σ_g w x / Σ_g w, with a second pass on the deviations.
 *
 * Two keys A and B (B the one with fewer values): the residual is r = M_A(x − D_B γ), where γ solves
 * the reduced normal equations D_Bᵀ W M_A D_B γ = D_Bᵀ W M_A x (M_A: exact weighted demeaning by A).
 * They are solved by conjugate gradients preconditioned by the weight totals of B, applying the
 * operator through two passes of group sums (never forming a matrix); this is alternating
 * projections between the two sets of indicator columns accelerated by conjugate gradients, and
 * exact after at most G_B steps in exact arithmetic (a balanced panel needs one). The residual is
 * kept as a vector and the CG residual recomputed from it each step. Converged when every weighted
 * mean of r within a value of B is at most ABSORB_TOL times the weighted root mean square of M_A x
 * (the means within A are zero by construction): r is then orthogonal to every indicator column to
 * that relative accuracy. Not converged within ABSORB_MAX_ITER steps is refused with a message.
 *
 * Absorbed parameters a: one key G; two keys G_A + G_B − C, with C the connected components of the
 * bipartite graph whose edges are the rows (Abowd, Creecy and Kramarz 2002), found by union–find.
 */
import { mapped, mappedInt } from "./blocks";
import { count, fail } from "./problems";
import { leastSquares, type QrFit } from "./leastSquares";

/** Relative size of the within-group means of B left after the two-way solve. */
export const ABSORB_TOL = 1e-13;
/** Conjugate-gradient steps allowed for one column of a two-way absorption. */
export const ABSORB_MAX_ITER = 2000;
/** A regressor whose length after absorbing is below this share of its length is collinear with the fixed effects. */
export const ABSORBED_COLLINEAR = 1e-10;

/** One fixed effect: its name (for messages) and each row's code 0..G−1. */
export interface FixedEffectKey {
  name: string;
  codes: Int32Array;
}

/** Integer codes 0..G−1 in order of first appearance for any per-row values (text or numbers). */
export function codesOf(values: ArrayLike<string | number>): { codes: Int32Array; levels: number } {
  const map = new Map<string | number, number>();
  const codes = new Int32Array(values.length);
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    let c = map.get(v);
    if (c === undefined) {
      c = map.size;
      map.set(v, c);
    }
    codes[i] = c;
  }
  return { codes, levels: map.size };
}

/**
 * Period codes 0..T−1 in time order: numbers ascending, text in order of first appearance (so that
 * Driscoll–Kraay lags run over periods in time order).
 */
export function timeCodes(values: ArrayLike<string | number>): { codes: Int32Array; levels: number } {
  const distinct: (string | number)[] = [];
  const seen = new Set<string | number>();
  let numeric = true;
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!seen.has(v)) {
      seen.add(v);
      distinct.push(v);
      if (typeof v !== "number") numeric = false;
    }
  }
  if (numeric) distinct.sort((a, b) => (a as number) - (b as number));
  const map = new Map<string | number, number>(distinct.map((v, t) => [v, t]));
  return { codes: mappedInt({ length: values.length }, (_, i) => map.get(values[i]) as number), levels: distinct.length };
}

/** Whether a column after absorbing is too short (relative to before) to be anything but rounding. */
export function collinearWithEffects(before: Float64Array, after: Float64Array, w: ArrayLike<number> | null): boolean {
  let b = 0;
  let a = 0;
  for (let i = 0; i < before.length; i++) {
    const wi = w ? w[i] : 1;
    b += wi * before[i] * before[i];
    a += wi * after[i] * after[i];
  }
  return !(a > ABSORBED_COLLINEAR * ABSORBED_COLLINEAR * b);
}

/** Renumbers codes 0..G−1 in order of first appearance over the rows where keep is set. */
export function recode(codes: Int32Array, keep: Uint8Array | null = null): { codes: Int32Array; levels: number } {
  let maxCode = 0;
  for (let i = 0; i < codes.length; i++) if (codes[i] > maxCode) maxCode = codes[i];
  const map = new Int32Array(maxCode + 1).fill(-1);
  let m = 0;
  for (let i = 0; i < codes.length; i++) if (!keep || keep[i]) m++;
  const out = new Int32Array(m);
  let levels = 0;
  let o = 0;
  for (let i = 0; i < codes.length; i++) {
    if (keep && !keep[i]) continue;
    const c = codes[i];
    if (c < 0) throw new Error("negative key code");
    if (map[c] < 0) map[c] = levels++;
    out[o++] = map[c];
  }
  return { codes: out, levels };
}

/** The rows where keep is set, as a new column. */
export function keepRows(col: Float64Array, keep: Uint8Array): Float64Array {
  let m = 0;
  for (let i = 0; i < keep.length; i++) if (keep[i]) m++;
  const out = new Float64Array(m);
  let o = 0;
  for (let i = 0; i < keep.length; i++) if (keep[i]) out[o++] = col[i];
  return out;
}

/**
 * Rows with a usable weight (finite and above zero): the mask, how many are left out and the first of
 * them (0-based), for the caller's count in its message.
 */
export function usableWeights(w: Float64Array): { keep: Uint8Array; leftOut: number; leftOutRows: number[] } {
  const keep = new Uint8Array(w.length);
  const leftOutRows: number[] = [];
  let leftOut = 0;
  for (let i = 0; i < w.length; i++) {
    if (w[i] > 0 && Number.isFinite(w[i])) keep[i] = 1;
    else {
      leftOut++;
      if (leftOutRows.length < 50) leftOutRows.push(i);
    }
  }
  return { keep, leftOut, leftOutRows };
}

/** Weighted mean Σ w x / Σ w (plain mean without weights), with a correction pass. */
export function weightedMean(x: Float64Array, w: Float64Array | null = null): number {
  let sw = 0;
  let s = 0;
  for (let i = 0; i < x.length; i++) {
    const wi = w ? w[i] : 1;
    sw += wi;
    s += wi * x[i];
  }
  const m = s / sw;
  let c = 0;
  for (let i = 0; i < x.length; i++) c += (w ? w[i] : 1) * (x[i] - m);
  return m + c / sw;
}

/**
 * Leaves out singletons of every key, repeatedly until none remain. `keep` (optional) marks the rows
 * already usable; returns the new mask and how many rows it left out.
 */
export function dropSingletons(keys: Int32Array[], keep: Uint8Array | null = null): { keep: Uint8Array; dropped: number; rounds: number } {
  const n = keys[0].length;
  const k = keep ? Uint8Array.from(keep) : new Uint8Array(n).fill(1);
  const counts = keys.map((c) => {
    let mx = 0;
    for (let i = 0; i < n; i++) if (c[i] > mx) mx = c[i];
    return new Int32Array(mx + 1);
  });
  let dropped = 0;
  let rounds = 0;
  for (;;) {
    counts.forEach((cnt) => cnt.fill(0));
    for (let i = 0; i < n; i++) if (k[i]) for (let j = 0; j < keys.length; j++) counts[j][keys[j][i]]++;
    let changed = 0;
    for (let i = 0; i < n; i++) {
      if (!k[i]) continue;
      for (let j = 0; j < keys.length; j++) {
        if (counts[j][keys[j][i]] === 1) {
          k[i] = 0;
          changed++;
          break;
        }
      }
    }
    if (changed === 0) break;
    dropped += changed;
    rounds++;
  }
  return { keep: k, dropped, rounds };
}

/** Connected components of the bipartite graph of two keys (rows are edges), by union–find. */
export function connectedComponents(a: Int32Array, ga: number, b: Int32Array, gb: number): number {
  const parent = new Int32Array(ga + gb);
  for (let i = 0; i < parent.length; i++) parent[i] = i;
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]];
      x = parent[x];
    }
    return x;
  };
  let components = ga + gb;
  for (let i = 0; i < a.length; i++) {
    const ra = find(a[i]);
    const rb = find(ga + b[i]);
    if (ra !== rb) {
      parent[ra] = rb;
      components--;
    }
  }
  return components;
}

/** Whether every value of the key lies within one cluster (the key is nested within the clusters). */
export function nestedWithin(key: Int32Array, levels: number, cluster: Int32Array): boolean {
  const seen = new Int32Array(levels).fill(-1);
  for (let i = 0; i < key.length; i++) {
    const g = key[i];
    if (seen[g] < 0) seen[g] = cluster[i];
    else if (seen[g] !== cluster[i]) return false;
  }
  return true;
}

interface GroupKey {
  name: string;
  codes: Int32Array;
  levels: number;
  /** Σ w over each value (the row count without weights). */
  total: Float64Array;
  /** Row count of each value. */
  rows: Int32Array;
}

function groupKey(name: string, codes: Int32Array, levels: number, w: Float64Array | null): GroupKey {
  const total = new Float64Array(levels);
  const rows = new Int32Array(levels);
  for (let i = 0; i < codes.length; i++) {
    total[codes[i]] += w ? w[i] : 1;
    rows[codes[i]]++;
  }
  return { name, codes, levels, total, rows };
}

/** The fixed effects on the rows kept: demeaning, absorbed counts, nesting, leverage offsets. */
export class Absorber {
  readonly n: number;
  readonly keys: readonly GroupKey[];
  readonly weights: Float64Array | null;
  /** Absorbed parameters a (one key: G; two: G₁ + G₂ − C). */
  readonly absorbed: number;
  /** Connected components of the two keys' graph (1 for one key). */
  readonly components: number;
  /** Most conjugate-gradient steps one column needed so far (0 for one key). */
  maxIterations = 0;
  private readonly sumA: Float64Array;
  private readonly gB: Float64Array;

  /**
   * @param keys one or two keys with codes 0..G−1 on these rows (every code present)
   * @param weights positive weights (null: all 1)
   * @param components of the two keys' graph, when already known
   */
  constructor(keys: { name: string; codes: Int32Array; levels: number }[], weights: Float64Array | null, components: number | null = null) {
    if (keys.length < 1 || keys.length > 2) throw new Error("one or two keys");
    this.n = keys[0].codes.length;
    this.weights = weights;
    let gk = keys.map((k) => groupKey(k.name, k.codes, k.levels, weights));
    // The key with more values is demeaned exactly; the other carries the conjugate gradients.
    if (gk.length === 2 && gk[1].levels > gk[0].levels) gk = [gk[1], gk[0]];
    this.keys = gk;
    this.components = gk.length === 1 ? 1 : components ?? connectedComponents(gk[0].codes, gk[0].levels, gk[1].codes, gk[1].levels);
    this.absorbed = gk.length === 1 ? gk[0].levels : gk[0].levels + gk[1].levels - this.components;
    this.sumA = new Float64Array(gk[0].levels);
    this.gB = new Float64Array(gk.length === 2 ? gk[1].levels : 0);
  }

  /** The same keys with other weights (PPML's working weights change every step). */
  reweighted(weights: Float64Array | null): Absorber {
    return new Absorber(this.keys.map((k) => ({ name: k.name, codes: k.codes, levels: k.levels })), weights, this.components);
  }

  /** x − (weighted) group means of key A, into out (may be x); the second pass removes what rounding left. */
  private demeanA(x: Float64Array, out: Float64Array, passes = 2): void {
    const { codes, total } = this.keys[0];
    const w = this.weights;
    const s = this.sumA;
    const n = this.n;
    for (let pass = 0; pass < passes; pass++) {
      const src = pass === 0 ? x : out;
      s.fill(0);
      if (w) for (let i = 0; i < n; i++) s[codes[i]] += w[i] * src[i];
      else for (let i = 0; i < n; i++) s[codes[i]] += src[i];
      for (let g = 0; g < s.length; g++) s[g] /= total[g];
      for (let i = 0; i < n; i++) out[i] = src[i] - s[codes[i]];
    }
  }

  /** g_t = Σ_{i∈t} w_i v_i over the values t of key B. */
  private sumsB(v: Float64Array, g: Float64Array): void {
    const codes = this.keys[1].codes;
    const w = this.weights;
    g.fill(0);
    if (w) for (let i = 0; i < this.n; i++) g[codes[i]] += w[i] * v[i];
    else for (let i = 0; i < this.n; i++) g[codes[i]] += v[i];
  }

  /**
   * The column after absorbing the fixed effects, into `out` (a new array when omitted; may be x
   * itself, to demean in place); returns out. `lastIterations` says how many conjugate-gradient
   * steps it took (0 for one key).
   */
  demean(x: Float64Array, out: Float64Array = new Float64Array(this.n)): Float64Array {
    this.lastIterations = this.solve(x, out, this.iterationLimit);
    return out;
  }

  /** Conjugate-gradient steps allowed per column (tests lower it to reach the refusal). */
  iterationLimit = ABSORB_MAX_ITER;

  /** Conjugate-gradient steps of the last demean. */
  lastIterations = 0;

  private solve(x: Float64Array, out: Float64Array, maxIter: number): number {
    if (x.length !== this.n) throw new Error("column length");
    if (this.keys.length === 1) {
      this.demeanA(x, out);
      return 0;
    }
    const n = this.n;
    const w = this.weights;
    const B = this.keys[1];
    const bc = B.codes;
    const WB = B.total;
    const GB = B.levels;
    let xx = 0; // before r overwrites x (out may be x)
    for (let i = 0; i < n; i++) xx += (w ? w[i] : 1) * x[i] * x[i];
    const r = out;
    this.demeanA(x, r); // r = M_A x, γ = 0
    let ss = 0;
    let sw = 0;
    for (let i = 0; i < n; i++) {
      const wi = w ? w[i] : 1;
      ss += wi * r[i] * r[i];
      sw += wi;
    }
    const scale = Math.sqrt(ss / sw);
    if (scale === 0) return 0;
    // M_A x already at rounding level: the full residual is no longer (the caller names the column).
    if (scale <= 1e-3 * ABSORBED_COLLINEAR * Math.sqrt(xx / sw)) return 0;
    const limit = ABSORB_TOL * scale;
    const g = this.gB; // residual of the reduced equations: B-sums of r
    const zv = new Float64Array(GB);
    const p = new Float64Array(GB);
    const q = new Float64Array(GB);
    const v = new Float64Array(n);
    const worst = (): number => {
      let m = 0;
      for (let t = 0; t < GB; t++) m = Math.max(m, Math.abs(g[t]) / WB[t]);
      return m;
    };
    this.sumsB(r, g);
    let rz = 0;
    for (let t = 0; t < GB; t++) {
      zv[t] = g[t] / WB[t];
      p[t] = zv[t];
      rz += g[t] * zv[t];
    }
    let iter = 0;
    let off = worst();
    while (off > limit) {
      if (iter >= maxIter) {
        fail(`the fixed effects ${this.keys[0].name} and ${B.name} could not be separated to full accuracy in ${maxIter} rounds (means within ${B.name} still off by ${(off / scale).toExponential(1)} of the spread): they are nearly nested or barely connected; absorb only one of them and give the other as indicator terms`);
      }
      iter++;
      // v = M_A D_B p ; q = D_Bᵀ W v
      for (let i = 0; i < n; i++) v[i] = p[bc[i]];
      this.demeanA(v, v, 1); // a search direction: one pass is accurate enough (r's B-sums are recomputed)
      this.sumsB(v, q);
      let pq = 0;
      for (let t = 0; t < GB; t++) pq += p[t] * q[t];
      if (!(pq > 0)) break; // nothing left to remove (rounding level)
      const alpha = rz / pq;
      for (let i = 0; i < n; i++) r[i] -= alpha * v[i];
      this.sumsB(r, g); // the residual recomputed from r, not by recurrence
      off = worst();
      let rzNew = 0;
      for (let t = 0; t < GB; t++) {
        zv[t] = g[t] / WB[t];
        rzNew += g[t] * zv[t];
      }
      const beta = rzNew / rz;
      rz = rzNew;
      for (let t = 0; t < GB; t++) p[t] = zv[t] + beta * p[t];
    }
    if (off > limit) {
      fail(`the fixed effects ${this.keys[0].name} and ${B.name} could not be separated to full accuracy (means within ${B.name} still off by ${(off / scale).toExponential(1)} of the spread): absorb only one of them and give the other as indicator terms`);
    }
    this.maxIterations = Math.max(this.maxIterations, iter);
    return iter;
  }

  /**
   * The part of each row's leverage that the fixed effects carry, for HC2/HC3: one key w_i/W_g (1/n_g
   * without weights), so that h_ii = h̃_ii + w_i/W_g. Null for two keys (no exact closed form).
   */
  leverageOffset(): Float64Array | null {
    if (this.keys.length !== 1) return null;
    const { codes, total } = this.keys[0];
    const w = this.weights;
    return mapped(codes, (g, i) => (w ? w[i] : 1) / total[g]);
  }

  /**
   * a_n: the absorbed parameters of the keys nested within one of the cluster variables, counted for
   * those keys by themselves (one nested key: its G; both: G₁ + G₂ − C).
   */
  nestedAbsorbed(clusters: Int32Array[]): number {
    const nested = this.keys.filter((k) => clusters.some((c) => nestedWithin(k.codes, k.levels, c)));
    if (nested.length === 0) return 0;
    if (nested.length === 1) return nested[0].levels;
    return this.absorbed;
  }

  /** The keys' names (the key with more values first). */
  get keyNames(): string[] {
    return this.keys.map((k) => k.name);
  }

  /** "does not vary within Store" / "is a sum of a Store part and a Week part", for messages. */
  explainedPhrase(): string {
    const [a, b] = this.keyNames;
    return b === undefined ? `does not vary within ${a}` : `is a sum of a ${a} part and a ${b} part`;
  }
}

export interface Absorption {
  /** Rows (of the rows given) that are kept. */
  keep: Uint8Array;
  /** Rows given that were usable before singletons were left out. */
  usable: number;
  /** Singleton rows left out. */
  singletons: number;
  absorber: Absorber;
}

/**
 * Leaves out singletons and builds the absorber on the remaining rows.
 * @param keys one or two keys over the same rows
 * @param weights positive weights on the same rows (or null)
 * @param keep rows already usable (or null: all); rows with an unusable weight must be unset here
 * @param options `allowOneValue` accepts a key with a single value (the same as an intercept)
 */
export function prepareAbsorption(keys: FixedEffectKey[], weights: Float64Array | null, keep: Uint8Array | null = null, options: { allowOneValue?: boolean } = {}): Absorption {
  if (keys.length < 1 || keys.length > 2) fail("absorb= takes one or two columns");
  const n = keys[0].codes.length;
  keys.forEach((k) => {
    if (k.codes.length !== n) throw new Error("key lengths differ");
  });
  let usable = 0;
  for (let i = 0; i < n; i++) if (!keep || keep[i]) usable++;
  if (weights) {
    for (let i = 0; i < n; i++) if ((!keep || keep[i]) && !(weights[i] > 0 && Number.isFinite(weights[i]))) throw new Error("weights must be positive on the rows kept (leave the others out with usableWeights)");
  }
  keys.forEach((k) => {
    const r = recode(k.codes, keep);
    if (r.levels === 1 && !options.allowOneValue) {
      fail(`${k.name} has the same value in every row used, so absorbing it is only an intercept: remove it from absorb=`);
    }
  });
  const s = dropSingletons(keys.map((k) => k.codes), keep);
  const kept = usable - s.dropped;
  if (kept === 0) {
    fail(`every value of ${keys.map((k) => k.name).join(" and ")} occurs in only one row (${count(usable, "singleton")}), so fixed effects leave nothing to estimate from: absorb a coarser column, or leave absorb= out`);
  }
  const coded = keys.map((k) => ({ name: k.name, ...recode(k.codes, s.keep) }));
  coded.forEach((k) => {
    if (k.levels === 1 && !options.allowOneValue) {
      fail(`after leaving out ${count(s.dropped, "singleton row")}, ${k.name} has one value left, so absorbing it is only an intercept: remove it from absorb=`);
    }
  });
  const w = weights ? keepRows(weights, s.keep) : null;
  return { keep: s.keep, usable, singletons: s.dropped, absorber: new Absorber(coded, w) };
}

/** A least squares fit of the absorbed design. */
export interface AbsorbedFit {
  /** Slopes, in the order of the columns given. */
  coef: Float64Array;
  /** Factor of the √w-scaled absorbed design (the bread of every covariance). */
  qr: QrFit;
  /** The √w-scaled absorbed columns the factor was computed on. */
  X: Float64Array[];
  /** √w-scaled residuals (the residuals of the scaled regression; scores are X_i·u_i). */
  u: Float64Array;
  /** Residuals y − ŷ of the full model, unscaled. */
  resid: Float64Array;
  n: number;
  k: number;
  absorbed: number;
  /** n − k − a. */
  dfResid: number;
  /** R² of the full model (fixed effects included) and of the absorbed (within) data. */
  rSquared: number;
  withinRSquared: number;
  absorber: Absorber;
}

/**
 * OLS (or WLS) of y on the columns of X after absorbing the fixed effects: leastSquares() on the
 * √w-scaled demeaned columns without an intercept. y and X are the rows the absorber holds.
 */
export function fitAbsorbed(absorber: Absorber, y: Float64Array, X: Float64Array[], names: string[]): AbsorbedFit {
  const n = absorber.n;
  const k = X.length;
  const a = absorber.absorbed;
  const w = absorber.weights;
  if (n - k - a < 1) {
    fail(`${count(n, "row")} leave no residual degrees of freedom for ${count(k, "slope")} and ${count(a, "absorbed parameter")}: use fewer regressors or coarser fixed effects`);
  }
  const sw = w ? mapped(w, Math.sqrt) : null;
  const yt = new Float64Array(n);
  absorber.demean(y, yt);
  const Xt = X.map((c, j) => {
    const d = new Float64Array(n);
    absorber.demean(c, d);
    if (collinearWithEffects(c, d, w)) {
      fail(`${names[j]} ${absorber.explainedPhrase()} (collinear with the fixed effects): its effect cannot be told apart from them; remove it from x or absorb fewer keys`);
    }
    if (sw) for (let i = 0; i < n; i++) d[i] *= sw[i];
    return d;
  });
  if (sw) for (let i = 0; i < n; i++) yt[i] *= sw[i];
  const ls = leastSquares(Xt, yt);
  if (!ls.qr) {
    const d = ls.dependent;
    const name = names[d.column];
    if (d.on.length === 0) return fail(`${name} ${absorber.explainedPhrase()} (collinear with the fixed effects): remove it from x`);
    return fail(`${name} is, after absorbing ${absorber.keyNames.join(" and ")}, an exact linear combination of ${d.on.map((i) => names[i]).join(", ")} (collinear): remove one of these columns`);
  }
  const qr = ls.qr;
  const u = qr.resid;
  const resid = sw ? mapped(u, (v, i) => v / sw[i]) : u;
  const ybar = weightedMean(y, w);
  let tss = 0;
  let within = 0;
  for (let i = 0; i < n; i++) {
    const wi = w ? w[i] : 1;
    tss += wi * (y[i] - ybar) * (y[i] - ybar);
    within += yt[i] * yt[i];
  }
  return {
    coef: qr.coef,
    qr,
    X: Xt,
    u,
    resid,
    n,
    k,
    absorbed: a,
    dfResid: n - k - a,
    rSquared: 1 - qr.rss / tss,
    withinRSquared: 1 - qr.rss / within,
    absorber,
  };
}

export interface RecoveredEffects {
  /** One array per key: the effect of each value (code). */
  effects: Float64Array[];
  /** Two keys: the connected component of each value of each key (one key: all 0). */
  components: Int32Array[];
}

/**
 * The absorbed effects of each value from the fitted effects d_i (the fitted value minus x_i'b on the
 * fitted scale): one key, α_g = the mean of d over g's rows; two keys, d_i = α_g + γ_t solved by
 * alternating means (α from d − γ, then γ from d − α) until no effect moves by more than `tol`
 * times max|d|. Under two keys only α_g + γ_t is identified, and only for values in one connected
 * component of the graph of the two keys; `components` tells which.
 */
export function recoverEffects(keys: { codes: Int32Array; levels: number }[], d: Float64Array, tol = ABSORB_TOL, maxIter = 100 * ABSORB_MAX_ITER): RecoveredEffects {
  const n = d.length;
  const mean = (codes: Int32Array, levels: number, v: (i: number) => number): Float64Array => {
    const s = new Float64Array(levels);
    const c = new Float64Array(levels);
    for (let i = 0; i < n; i++) {
      s[codes[i]] += v(i);
      c[codes[i]]++;
    }
    for (let g = 0; g < levels; g++) s[g] = c[g] > 0 ? s[g] / c[g] : 0;
    return s;
  };
  if (keys.length === 1) {
    const [a] = keys;
    return { effects: [mean(a.codes, a.levels, (i) => d[i])], components: [new Int32Array(a.levels)] };
  }
  const [a, b] = keys;
  let scale = 0;
  for (let i = 0; i < n; i++) scale = Math.max(scale, Math.abs(d[i]));
  let alpha: Float64Array = new Float64Array(a.levels);
  let gamma: Float64Array = new Float64Array(b.levels);
  for (let it = 0; it < maxIter; it++) {
    const alphaNew = mean(a.codes, a.levels, (i) => d[i] - gamma[b.codes[i]]);
    const gammaNew = mean(b.codes, b.levels, (i) => d[i] - alphaNew[a.codes[i]]);
    let change = 0;
    for (let g = 0; g < a.levels; g++) change = Math.max(change, Math.abs(alphaNew[g] - alpha[g]));
    for (let t = 0; t < b.levels; t++) change = Math.max(change, Math.abs(gammaNew[t] - gamma[t]));
    alpha = alphaNew;
    gamma = gammaNew;
    if (change <= tol * Math.max(scale, 1e-300)) break;
  }
  // components by union–find over the rows (edges between a value of each key)
  const parent = new Int32Array(a.levels + b.levels);
  for (let i = 0; i < parent.length; i++) parent[i] = i;
  const find = (x: number): number => {
    while (parent[x] !== x) {
      parent[x] = parent[parent[x]];
      x = parent[x];
    }
    return x;
  };
  for (let i = 0; i < n; i++) {
    const ra = find(a.codes[i]);
    const rb = find(a.levels + b.codes[i]);
    if (ra !== rb) parent[ra] = rb;
  }
  const ca = mappedInt({ length: a.levels }, (_, g) => find(g));
  const cb = mappedInt({ length: b.levels }, (_, t) => find(a.levels + t));
  return { effects: [alpha, gamma], components: [ca, cb] };
}
