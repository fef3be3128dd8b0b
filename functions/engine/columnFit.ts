/**
 * A least-squares fit from numeric column blocks, split by rows into parts: the driver.
 *
 * The rows live in parts (one per worker, or all in this thread: localExecutor); the driver sends
 * each part the steps of splitLeastSquares.ts and combines their answers. The numbers are those of
 * ELX.FIT and ELX.HETEROTEST on the same rows: the same transforms and counts of rows left out
 * (transforms.ts prepare), the same column scaling, factor and refinement (leastSquares.ts, with the
 * parts' triangles merged: tall-skinny QR), the same covariances (covariance.ts: classical, HC0–HC3
 * with leverages h_i = |R⁻ᵀx_i|²) and the same studentized Breusch–Pagan test (specTests.ts: on the
 * fit's own factor when the design allows it, else its auxiliary regression, itself split). Sums over
 * rows are added part by part, so results agree with the single-thread engine to rounding (one part:
 * the same factor bit for bit).
 *
 * Refusals are ElxProblems worded as the cell path words them. isCancelled() is asked before every
 * step; a FitCancelled is thrown when it answers true.
 */
import { mapped } from "./blocks";
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec, LeftOut, PartExecutor, PartOp } from "./columnFitTypes";
import {
  appendOp, applyPartOp, chunkBuffers, mergeTriangles, newPartState,
  type BpSolveAnswer, type Merged, type NormsAnswer, type PartState, type PassesAnswer, type PrepareAnswer, type RefineStepAnswer, type ResidualsAnswer, type ScanAnswer,
} from "./splitLeastSquares";
import { applyQ, forwardSolveRt, rssErrorBound, solveTriangle, type Dependency, type QrFit, type TriangleSolve } from "./leastSquares";
import { classicalCovariance, sandwich, type CovarianceInput } from "./covariance";
import { count, ElxProblem, fail, RowList, rowsPhrase, unavailable } from "./problems";
import { describeNonPositive } from "./transforms";
import { EXACT_FIT, INTERCEPT } from "./fit";
import { REUSE_CONDITION } from "./specTests";
import { workingUnitOfMax } from "./scaling";
import { chiSquareSf, studentQuantile, studentTwoSided } from "./distributions";

/** Thrown when isCancelled() answers true between two steps. */
export class FitCancelled extends Error {
  readonly cancelled = true;
  constructor() {
    super("the fit was stopped");
    this.name = "FitCancelled";
  }
}

/** Whether an error is the cancellation of a fit (also after a structured clone, by its name). */
export function isFitCancelled(e: unknown): boolean {
  return e instanceof FitCancelled || (typeof e === "object" && e !== null && (e as { name?: unknown }).name === "FitCancelled");
}

/** At most this many rows' fitted values and residuals come back for the picture. */
export const SAMPLE_ROWS = 4000;

/**
 * Parts kept in this thread (tests, and the page when no worker can start). `pause`, when given, is
 * awaited before every step (the page passes a yield to its event loop).
 */
export function localExecutor(parts: number, pause?: () => Promise<void>): PartExecutor & { states: PartState[] } {
  if (!(Number.isInteger(parts) && parts >= 1)) throw new Error(`parts must be a whole number ≥ 1 (got ${parts})`);
  const states = Array.from({ length: parts }, newPartState);
  return {
    parts,
    states,
    async send(part: number, op: PartOp): Promise<unknown> {
      if (pause) await pause();
      return applyPartOp(states[part], op).answer;
    },
  };
}

/** Splits full columns into chunks of `chunkRows` rows (or the given sizes, in turn), from data row `rowStart`. */
export function chunksOf(y: Float64Array, x: Float64Array[], chunkRows: number | readonly number[], rowStart = 0): ColumnChunk[] {
  const out: ColumnChunk[] = [];
  let t = 0;
  for (let s = 0; s < y.length;) {
    const size = typeof chunkRows === "number" ? chunkRows : chunkRows[t++ % chunkRows.length];
    const e = Math.min(y.length, s + Math.max(1, size));
    out.push({ rowStart: rowStart + s, y: y.slice(s, e), x: x.map((c) => c.slice(s, e)) });
    s = e;
  }
  return out;
}

/**
 * Appends full columns to an executor's parts: part p gets the next partRows[p] rows (contiguous, in
 * order), in chunks as chunksOf cuts them. For tests and for callers that hold the whole columns.
 */
export async function appendColumns(exec: PartExecutor, y: Float64Array, x: Float64Array[], partRows: readonly number[], chunkRows: number | readonly number[] = 4096): Promise<void> {
  if (partRows.length !== exec.parts) throw new Error("one row count per part");
  let at = 0;
  for (let p = 0; p < exec.parts; p++) {
    const e = at + partRows[p];
    for (const ch of chunksOf(y.subarray(at, e), x.map((c) => c.subarray(at, e)), chunkRows, at)) {
      await exec.send(p, appendOp(ch), chunkBuffers(ch));
    }
    at = e;
  }
  if (at !== y.length) throw new Error("the parts' rows do not add up to the columns' length");
}

/** Rows per part for `n` rows in `parts` nearly equal contiguous shares. */
export function equalShares(n: number, parts: number): number[] {
  return Array.from({ length: parts }, (_, p) => Math.floor(((p + 1) * n) / parts) - Math.floor((p * n) / parts));
}

/** The fit of one design split across the parts: what leastSquares.ts gives, without the residuals. */
interface SplitQr {
  n: number;
  k: number;
  R: Float64Array;
  Rinv: Float64Array;
  scale: Float64Array;
  coef: Float64Array;
  rss: number;
  condition: number;
  refined: boolean;
  /** From the residual pass: Σy, Σy² of the design's response and max|e|. */
  sumY: number;
  sumY2: number;
  maxResid: number;
  /** The residuals are left to the next step (rss, sumY, sumY2, maxResid NaN until then). */
  pending: boolean;
}

type SplitLs = { qr: SplitQr; dependent: null } | { qr: null; dependent: Dependency };

/** Sends one step to every part (null: none to that part) and waits for all the answers. */
class Rounds {
  done = 0;
  total: number;
  constructor(readonly exec: PartExecutor, private readonly rows: number, steps: number, private readonly progress?: (done: number, total: number) => void, private readonly isCancelled?: () => boolean) {
    this.total = rows * steps;
  }

  async all<T>(op: (p: number) => PartOp | null): Promise<T[]> {
    if (this.isCancelled && this.isCancelled()) throw new FitCancelled();
    const out = await Promise.all(Array.from({ length: this.exec.parts }, (_, p) => {
      const o = op(p);
      return o ? this.exec.send(p, o) : Promise.resolve(null);
    }));
    if (this.isCancelled && this.isCancelled()) throw new FitCancelled();
    this.done += this.rows;
    if (this.done > this.total) this.total = this.done;
    if (this.progress) this.progress(this.done, this.total);
    return out as T[];
  }
}

/** ‖x_j‖ from the parts' sums, as leastSquares.ts norm2 (one part: the same number). */
function columnNorms(answers: NormsAnswer[], k: number): Float64Array {
  const scale = new Float64Array(k);
  for (let j = 0; j < k; j++) {
    let s = 0;
    for (const a of answers) s += a.sumSq[j];
    if (s > 1e-280 && s < 1e280) {
      scale[j] = Math.sqrt(s);
      continue;
    }
    let m = 0;
    for (const a of answers) m = Math.max(m, a.maxAbs[j]);
    if (m === 0) continue;
    let t = 0;
    for (const a of answers) {
      const mp = a.maxAbs[j];
      if (mp === 0) continue;
      // a part whose own Σx² was safe sent no scaled sum: Σ(x/max)² = Σx²/max² then
      const tp = Number.isNaN(a.scaledSumSq[j]) ? a.sumSq[j] / (mp * mp) : a.scaledSumSq[j];
      const r = mp / m;
      t += tp * (r * r);
    }
    scale[j] = m * Math.sqrt(t);
  }
  return scale;
}

/** Σ of double-double partial sums (hi_p, lo_p), compensated (one part: hi + lo). */
function sumParts(hi: number[], lo: number[]): number {
  let s = 0;
  let e = 0;
  for (let p = 0; p < hi.length; p++) {
    const t = s + hi[p];
    const bb = t - s;
    e += (s - (t - bb)) + (hi[p] - bb) + lo[p];
    s = t;
  }
  return s + e;
}

/**
 * Least squares of one design held by the parts, as leastSquares.ts solves it: unit columns, the
 * merged factor, the rank test, one solve, and Björck's refinement across the parts when
 * κ·max|c|/min|c| > REFINE_ABOVE (and refineWhenNeeded); then the residuals in the parts.
 */
async function splitLeastSquares(rounds: Rounds, design: string, k: number, unit: number, refineWhenNeeded: boolean, deferResiduals = false, known: NormsAnswer[] | null = null): Promise<SplitLs> {
  // the fit's column norms come with "prepare"'s answers: one round fewer
  const norms = known ?? (await rounds.all<NormsAnswer>(() => ({ kind: "norms", design, parts: rounds.exec.parts })));
  const scale = columnNorms(norms, k);
  for (let j = 0; j < k; j++) if (scale[j] === 0) return { qr: null, dependent: { column: j, on: [] } };
  const inv = mapped(scale, (s) => 1 / s);
  const factor = async (keep: boolean): Promise<Merged> => {
    const Ts = await rounds.all<{ T: Float64Array }>(() => ({ kind: "factor", design, inv, keep, unit }));
    return mergeTriangles(Ts.map((a) => a.T), k, keep);
  };
  let merged = await factor(false);
  const first = solveTriangle(merged.T, k, refineWhenNeeded);
  if (!first.solve) return { qr: null, dependent: first.dependent };
  let { R, Rinv, c } = first.solve;
  const { condition, refine: refined } = first.solve;
  const coef = new Float64Array(k);
  if (refined) {
    // factor again keeping every reflector (the same arithmetic, so the same R), then refine
    merged = await factor(true);
    ({ R, Rinv, c } = solveTriangle(merged.T, k, false).solve as TriangleSolve);
    for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
    await refineAcross(rounds, design, merged, R, scale, c, coef);
  } else {
    for (let j = 0; j < k; j++) coef[j] = c[j] / scale[j];
  }
  if (deferResiduals && !refined) {
    // the residuals in the parts' next pass over the rows ("passes" with coef)
    return { qr: { n: 0, k, R, Rinv, scale, coef, rss: NaN, condition, refined, sumY: NaN, sumY2: NaN, maxResid: NaN, pending: true }, dependent: null };
  }
  const res = await rounds.all<ResidualsAnswer>(() => ({ kind: "residuals", design, coef, refined }));
  let rss = 0;
  let sumY = 0;
  let sumY2 = 0;
  let maxResid = 0;
  let n = 0;
  for (const a of res) {
    rss += a.rss;
    sumY += a.sumY;
    sumY2 += a.sumY2;
    maxResid = Math.max(maxResid, a.maxAbs);
    n += a.n;
  }
  return { qr: { n, k, R, Rinv, scale, coef, rss, condition, refined, sumY, sumY2, maxResid, pending: false }, dependent: null };
}

/**
 * Björck's refinement (leastSquares.ts refine) on the stacked problem [0; X] with k zero top rows per
 * part: the parts apply their reflectors to their tops and rows, the merge's reflectors act on the
 * stacked tops here. Updates c and coef in place; the parts keep r (their final residuals follow).
 */
async function refineAcross(rounds: Rounds, design: string, merged: Merged, R: Float64Array, scale: Float64Array, c: Float64Array, coef: Float64Array): Promise<void> {
  const k = c.length;
  const P = rounds.exec.parts;
  const mblocks = merged.blocks ?? [];
  const rTop = Array.from({ length: P }, () => new Float64Array(k));
  await rounds.all(() => ({ kind: "refineStart", design, coef }));
  const g = new Float64Array(k);
  const dc = new Float64Array(k);
  for (let iter = 0; iter < 4; iter++) {
    const steps = await rounds.all<RefineStepAnswer>((p) => ({ kind: "refineStep", design, coef, rTop: rTop[p] }));
    for (let j = 0; j < k; j++) g[j] = -sumParts(steps.map((s) => s.gHi[j]), steps.map((s) => s.gLo[j])) / scale[j];
    const top0 = Float64Array.from(steps[0].top);
    const rest = new Float64Array((P - 1) * k);
    for (let p = 1; p < P; p++) rest.set(steps[p].top, (p - 1) * k);
    applyQ(mblocks, k, top0, rest, true); // the merge's reflectors on the stacked tops
    const p1 = Float64Array.from(g);
    forwardSolveRt(R, k, p1); // p1 = R⁻ᵀ g
    for (let i = k - 1; i >= 0; i--) {
      let s = top0[i] - p1[i];
      for (let j = i + 1; j < k; j++) s -= R[i * k + j] * dc[j];
      dc[i] = s / R[i * k + i];
    }
    top0.set(p1);
    applyQ(mblocks, k, top0, rest, false);
    const applied = await rounds.all<{ top: Float64Array }>((p) => ({ kind: "refineApply", design, top: p === 0 ? top0 : rest.slice((p - 1) * k, p * k) }));
    let change = 0;
    let size = 0;
    for (let j = 0; j < k; j++) {
      c[j] += dc[j];
      coef[j] = c[j] / scale[j];
      change = Math.max(change, Math.abs(dc[j]));
      size = Math.max(size, Math.abs(c[j]));
    }
    for (let p = 0; p < P; p++) for (let j = 0; j < k; j++) rTop[p][j] += applied[p].top[j];
    if (change <= 4 * Number.EPSILON * size) break;
  }
}

/** "A, B and C". */
function andList(names: string[]): string {
  return names.length === 1 ? names[0] : `${names.slice(0, -1).join(", ")} and ${names[names.length - 1]}`;
}

/** The cell path's wording of a column that depends on earlier ones (fit.ts explainDependency). */
function explainDependency(d: Dependency, terms: string[]): never {
  const name = terms[d.column];
  if (d.on.length === 0) return fail(`${name} is zero in every row used: remove it from x`);
  return fail(`${name} is an exact linear combination of ${andList(d.on.map((i) => terms[i]))} (collinear): remove one of these columns`);
}

/** The hard limits of the split fit, checked before any row is touched. */
function checkSpec(spec: ColumnFitSpec, parts: number): void {
  if (!(parts >= 1)) throw new Error("an executor needs at least one part");
  if (!(spec.level > 0 && spec.level < 1)) fail(`the interval level must lie between 0 and 1 (got ${spec.level}); 0.95 gives 95% intervals`);
  if (spec.xNames.length === 0 && !spec.intercept) fail("give at least one x column, or fit with an intercept");
  if (!["classical", "HC0", "HC1", "HC2", "HC3"].includes(spec.se)) fail(`se=${String(spec.se)} is not available for a fit of this size: use se=HC3, HC0, HC1, HC2 or classical`);
}

/**
 * Fits the rows appended to the executor's parts under `spec`. `progress(done, total)` counts rows
 * gone through the steps (total grows when refinement or an auxiliary regression adds passes).
 */
export async function columnFit(
  exec: PartExecutor,
  spec: ColumnFitSpec,
  progress?: (done: number, total: number) => void,
  isCancelled?: () => boolean,
): Promise<ColumnFitResult> {
  const P = exec.parts;
  checkSpec(spec, P);
  if (isCancelled && isCancelled()) throw new FitCancelled();
  const firstRow = spec.firstRow ?? 1;
  const kx = spec.xNames.length;
  const logY = spec.form.startsWith("log-");
  const logX = spec.form.endsWith("-log");

  // 1. What the rows hold: unusable cells, binary columns, y among the x columns, values ≤ 0.
  const scanRounds = new Rounds(exec, 0, 1, undefined, isCancelled);
  const scans = await scanRounds.all<ScanAnswer>(() => ({ kind: "scan", kx, firstRow }));
  let usable = 0;
  const leftOut: LeftOut = { blank: 0, notNumber: 0, nonPositive: 0 };
  for (const s of scans) {
    usable += s.usable;
    leftOut.blank += s.blank;
    leftOut.notNumber += s.notNumber;
  }
  const rowsRead = usable + leftOut.blank + leftOut.notNumber;
  // the rounds of the usual path: scan, prepare, factor, passes, bpSolve, release
  const rounds = new Rounds(exec, rowsRead, 6, progress, isCancelled);
  rounds.done = rowsRead;
  if (rowsRead > 0 && progress) progress(rounds.done, rounds.total); // the rows checked
  if (rowsRead === 0) fail("no data rows were read: check that the ranges hold the data below their headers");
  const names = [spec.yName, ...spec.xNames];
  if (usable === 0) {
    const unusable = RowList.fromRuns(scans.map((s) => s.unusableRows));
    const cols = names.map((name, j) => ({ name, bad: scans.reduce((a, s) => a + (s.badCells[j] ?? 0), 0) }))
      .filter((c) => c.bad > 0).sort((a, b) => b.bad - a.bad).slice(0, 3);
    const worst = cols.map((c) => `${c.name} in ${c.bad === rowsRead ? "every row" : count(c.bad, "row")}`).join(", ");
    fail(`no row has a number in y and in every x column: ${rowsPhrase(unusable, 5, rowsRead)} ${rowsRead === 1 ? "has" : "have"} a blank, text or error cell (${worst}); check that the ranges hold the data`);
  }
  const binary = spec.xNames.map((_, j) => scans.every((s) => s.usable === 0 || s.binary[j]));
  if (usable >= 2) {
    spec.xNames.forEach((name, j) => {
      if (scans.every((s) => s.usable === 0 || s.sameAsY[j])) {
        fail(`${name} (column ${j + 1} of x) holds the same values as y (${spec.yName}) in every row used: y cannot explain itself (the fit would be exact and its t-values meaningless); take the y column out of the x range`);
      }
    });
  }
  const logged = binary.map((b) => logX && !b);
  const offenders: string[] = [];
  const zeroNames: string[] = [];
  const negativeNames: string[] = [];
  let yNegative = false;
  names.forEach((name, c) => {
    if (c === 0 ? !logY : !logged[c - 1]) return;
    const np = {
      zeros: scans.reduce((a, s) => a + s.nonPositive[c].zeros, 0),
      negatives: scans.reduce((a, s) => a + s.nonPositive[c].negatives, 0),
      zeroRows: RowList.fromRuns(scans.map((s) => s.nonPositive[c].zeroRows)),
      negativeRows: RowList.fromRuns(scans.map((s) => s.nonPositive[c].negativeRows)),
    };
    if (np.zeros + np.negatives === 0) return;
    offenders.push(describeNonPositive(name, np));
    if (np.zeros > 0) zeroNames.push(name);
    if (np.negatives > 0) {
      negativeNames.push(name);
      if (c === 0) yNegative = true;
    }
  });
  if (offenders.length > 0 && spec.zeros === "stop") {
    const advice: string[] = [];
    if (zeroNames.length > 0) advice.push(`a log cannot take zero: leave those rows out with zeros=drop (counted), or fit ${andList(zeroNames)} in levels (another form)`);
    if (negativeNames.length > 0) {
      advice.push(`a negative ${negativeNames.join(" or ")} is usually a data error (a price, quantity or income below zero): check and correct those rows; if the negative values are real, ${yNegative ? `model ${spec.yName} in levels, ` : ""}use a form that keeps them in levels or leave those rows out with zeros=drop (counted)`);
    }
    fail(`${offenders.join("; ")}; ${advice.join("; ")}`);
  }

  // 2. The rows used, transformed, in the parts.
  const drop = offenders.length > 0; // zeros=drop here
  const preps = await rounds.all<PrepareAnswer>(() => ({ kind: "prepare", kx, logY, logged, drop, intercept: spec.intercept, firstRow, parts: P }));
  let n = 0;
  for (const a of preps) {
    n += a.n;
    leftOut.nonPositive += a.dropped;
  }
  if (drop && n === 0) fail(`every row has a zero, blank or negative value in a column to be logged (${offenders.join("; ")}); nothing is left to fit: choose a form that keeps those columns in levels`);
  const terms = [...(spec.intercept ? [INTERCEPT] : []), ...spec.xNames];
  const k = terms.length;
  if (n <= k) {
    const left = leftOut.blank + leftOut.notNumber + leftOut.nonPositive;
    fail(`${count(n, "usable row")} ${n === 1 ? "is" : "are"} too few for ${count(k, "coefficient")}${spec.intercept ? " (the intercept counts)" : ""}: need at least ${k + 1}${left > 0 ? `; ${count(left, "row was", "rows were")} left out` : ""}`);
  }
  spec.xNames.forEach((name, j) => {
    const withRows = preps.filter((a) => a.n > 0);
    const first = withRows[0].first[j];
    if (withRows.every((a) => a.constant[j] && a.first[j] === first)) {
      if (spec.intercept) fail(`${name} has the same value in every row used, so it cannot be told apart from the intercept: remove it from x`);
      if (first === 0) fail(`${name} is zero in every row used: remove it from x`);
    }
  });
  const yUnit = workingUnitOfMax(Math.max(...preps.map((a) => a.yMax)));
  const xUnits = spec.xNames.map((_, j) => workingUnitOfMax(Math.max(...preps.map((a) => a.xMax[j]))));

  // 3. The factor and the solve (refined when the design needs it); the residuals come with the
  // second passes unless the refinement computed them.
  const ls = await splitLeastSquares(rounds, "fit", k, yUnit, true, true, preps.map((a) => a.norms));
  if (!ls.qr) return explainDependency(ls.dependent, terms);
  const qr = ls.qr;
  const df = n - k;

  // 4. The second passes: the residuals, the HC meat, the Breusch–Pagan sums, the sample of rows.
  const hc = spec.se === "classical" ? null : spec.se;
  // Breusch–Pagan on the fit's factor when the design allows it (and the fit is not exact, and
  // e lies in scaling.ts's window: else its sums again in e's unit, below)
  const reuseDesign = spec.intercept && !qr.refined && qr.condition < REUSE_CONDITION && xUnits.every((u) => u === 1) && kx > 0;
  const stride = Math.max(1, Math.ceil(n / SAMPLE_ROWS));
  const offsets: number[] = [];
  let at = 0;
  for (const a of preps) {
    offsets.push(at);
    at += a.n;
  }
  // R²'s first mean from prepare's Σy: y/yUnit (a power of two) sums to Σy/yUnit exactly, as the
  // residual pass would sum it
  const mean0 = (preps.reduce((s, a) => s + a.ySum, 0) * (1 / yUnit)) / n;
  const passes = await rounds.all<PassesAnswer>((p) => ({
    kind: "passes", R: qr.R, scale: qr.scale, hc, hc1: n / df, yUnit, mean: mean0, coef: qr.pending ? qr.coef : null,
    bpUnit: reuseDesign ? (qr.pending ? 1 : workingUnitOfMax(qr.maxResid)) : null, stride, offset: offsets[p], firstRow,
  }));
  if (qr.pending) {
    let rss = 0;
    let sumY = 0;
    let sumY2 = 0;
    let maxResid = 0;
    for (const a of passes) {
      const r = a.resid as ResidualsAnswer;
      rss += r.rss;
      sumY += r.sumY;
      sumY2 += r.sumY2;
      maxResid = Math.max(maxResid, r.maxAbs);
    }
    Object.assign(qr, { n, rss, sumY, sumY2, maxResid, pending: false });
  }
  // an exact fit's residuals are rounding noise: t, p and the tests are undefined (fit.ts isExact)
  const exact = qr.rss > EXACT_FIT * qr.sumY2 ? "" : `the fit is exact (every residual is zero up to rounding): ${spec.yName} is an exact linear combination of the regressors, which usually means it was computed from them or that an x column is ${spec.yName} in another form; that leaves t, p and the tests undefined`;
  const eUnit = workingUnitOfMax(qr.maxResid);
  const reuse = !exact && reuseDesign;
  const ones = RowList.fromRuns(passes.map((a) => a.leverageOne));
  if (ones.count > 0) fail(`${rowsPhrase(ones)} alone ${ones.count === 1 ? "determines" : "determine"} a coefficient (leverage 1), so ${spec.se} is undefined; use se=HC1 or se=HC0, or add rows`);
  const view = { n, k, R: qr.R, Rinv: qr.Rinv, scale: qr.scale } as QrFit;
  let W: Float64Array;
  if (hc) {
    const M = new Float64Array(k * k);
    for (const a of passes) {
      const m = a.meat as Float64Array;
      for (let i = 0; i < k * k; i++) M[i] += m[i];
    }
    for (let a = 0; a < k; a++) for (let b = 0; b < a; b++) M[a * k + b] = M[b * k + a];
    W = sandwich(view, M);
  } else {
    W = classicalCovariance({ factor: view, ssr: qr.rss, dfResid: df } as CovarianceInput);
  }
  let corr = 0;
  for (const a of passes) corr += a.corr;
  const mean = mean0 + corr / n;

  // R²'s centred sum of squares (with an intercept), alongside the first Breusch–Pagan solve.
  let tss: number;
  let bp: ColumnFitResult["breuschPagan"] = null;
  let bpNote = "";
  const bpResult = (rss: number, vtss: number, kept: number) => {
    const dfBp = kept - 1;
    if (dfBp <= 0) bpNote = "Breusch–Pagan needs at least one regressor besides the intercept";
    else if (!(vtss > 0)) bpNote = "Breusch–Pagan is undefined: the squared residuals do not vary";
    else {
      const stat = n * (1 - rss / vtss);
      bp = { statistic: stat, df: dfBp, p: chiSquareSf(stat, dfBp) };
    }
  };
  if (reuse) {
    // on the fit's factor: corrected semi-normal equations, as leastSquares.ts rssOnFactor (its
    // first pass in "passes", its second in "bpSolve", the correction in closed form)
    let sums: { bpG: Float64Array | null; bpVV: number; bpSum: number }[] = passes;
    if (eUnit !== 1) {
      // "passes" took e in scaling.ts's window (unit 1): its sums again in e's unit
      sums = await rounds.all<{ bpG: Float64Array; bpVV: number; bpSum: number }>(() => ({ kind: "bpSums", bpUnit: eUnit }));
    }
    const c = new Float64Array(k);
    for (let j = 0; j < k; j++) {
      let s = 0;
      for (const a of sums) s += (a.bpG as Float64Array)[j];
      c[j] = s / qr.scale[j];
    }
    forwardSolveRt(qr.R, k, c);
    let pv = 0;
    for (let j = 0; j < k; j++) pv += c[j] * c[j];
    const vv = sums.reduce((s, a) => s + a.bpVV, 0);
    const correct = rssErrorBound(qr.condition, n, k, vv, vv - pv) > 1e-16;
    for (let i = k - 1; i >= 0; i--) {
      let s = c[i];
      for (let j = i + 1; j < k; j++) s -= qr.R[i * k + j] * c[j];
      c[i] = s / qr.R[i * k + i];
    }
    const b = mapped(c, (v, j) => v / qr.scale[j]);
    const vMean = sums.reduce((s, a) => s + a.bpSum, 0) / n;
    const second = await rounds.all<BpSolveAnswer>(() => ({ kind: "bpSolve", b, bpUnit: eUnit, mean: vMean, correct, center: mean }));
    tss = second.reduce((s, a) => s + a.ss, 0);
    let rss = second.reduce((s, a) => s + a.rr, 0);
    if (correct) {
      const t = new Float64Array(k);
      for (let j = 0; j < k; j++) {
        let s = 0;
        for (const a of second) s += a.t[j];
        t[j] = s / qr.scale[j];
      }
      forwardSolveRt(qr.R, k, t);
      for (let j = 0; j < k; j++) rss -= t[j] * t[j];
    }
    bpResult(rss, second.reduce((s, a) => s + a.tss, 0), k);
  } else {
    const centred = await rounds.all<{ ss: number }>(() => ({ kind: "center", design: "fit", mean }));
    tss = centred.reduce((s, a) => s + a.ss, 0);
    if (exact) bpNote = exact;
    else if (kx > 0) {
      try {
        await auxiliaryBp(rounds, xUnits, eUnit, n, bpResult);
      } catch (e) {
        if (!(e instanceof ElxProblem)) throw e;
        bpNote = e.message;
      }
    } else bpNote = "Breusch–Pagan needs at least one regressor besides the intercept";
  }
  if (!spec.intercept) tss = qr.sumY2;

  // 5. The table's numbers, in y's units.
  const coefficients = Array.from(qr.coef, (v) => (yUnit === 1 ? v : v * yUnit));
  const standardErrors = coefficients.map((_, j) => (Math.sqrt(Math.max(0, W[j * k + j])) / qr.scale[j]) * yUnit);
  const crit = studentQuantile(0.5 + spec.level / 2, df);
  const t = coefficients.map((b, j) => (exact ? NaN : b / standardErrors[j]));
  const p = t.map((v) => (exact ? NaN : studentTwoSided(v, df)));
  const lower = coefficients.map((b, j) => b - crit * standardErrors[j]);
  const upper = coefficients.map((b, j) => b + crit * standardErrors[j]);
  const rSquared = tss > 0 ? 1 - qr.rss / tss : NaN;
  const shown = [...coefficients, ...standardErrors, ...(exact ? coefficients : t), ...(exact ? coefficients : p), ...lower, ...upper, rSquared];
  const bad = shown.findIndex((v) => !Number.isFinite(v));
  if (bad >= 0) {
    const j = bad % k;
    fail(`the fit gives a number that is not finite for ${bad === shown.length - 1 ? "R²" : terms[j]} (a standard error of zero, or values too extreme for double precision): check the data for extreme or repeated values`);
  }
  await rounds.all(() => ({ kind: "release" }));
  const sample = joinSamples(passes.map((a) => a.sample));
  const result: ColumnFitResult = {
    rowsRead, n, leftOut, terms, coefficients, standardErrors, t, p, lower, upper,
    seLabel: spec.se, dfResid: df, rss: qr.rss * yUnit * yUnit, rSquared, breuschPagan: bp, sample,
    condition: qr.condition, refined: qr.refined, parts: P,
  };
  if (bp === null) result.breuschPaganNote = bpNote;
  if (exact) result.exact = exact;
  return result;
}

/** The auxiliary regression of e² on an intercept and the regressors (specTests.ts auxiliary), split. */
async function auxiliaryBp(rounds: Rounds, xUnits: number[], eUnit: number, n: number, done: (rss: number, tss: number, kept: number) => void): Promise<void> {
  await rounds.all(() => ({ kind: "auxDesign", units: xUnits, eUnit }));
  let kept = 1 + xUnits.length;
  for (;;) {
    if (kept >= n) fail(`the auxiliary regression has ${count(kept, "term")} for ${count(n, "row")}; it needs more rows than terms`);
    const ls = await splitLeastSquares(rounds, "aux", kept, 1, false);
    if (ls.qr) {
      const mean = ls.qr.sumY / n;
      const c = await rounds.all<{ ss: number }>(() => ({ kind: "center", design: "aux", mean }));
      done(ls.qr.rss, c.reduce((s, a) => s + a.ss, 0), kept);
      return;
    }
    const drop = ls.dependent.column;
    if (drop === 0) unavailable("the auxiliary regression's variable is zero in every row, so the test is undefined");
    await rounds.all(() => ({ kind: "auxDrop", column: drop }));
    kept--;
  }
}

function joinSamples(s: PassesAnswer["sample"][]): ColumnFitResult["sample"] {
  const m = s.reduce((a, b) => a + b.rows.length, 0);
  const fitted = new Float64Array(m);
  const residuals = new Float64Array(m);
  const rows = new Int32Array(m);
  let at = 0;
  for (const b of s) {
    fitted.set(b.fitted, at);
    residuals.set(b.residuals, at);
    rows.set(b.rows, at);
    at += b.rows.length;
  }
  return { fitted, residuals, rows };
}
