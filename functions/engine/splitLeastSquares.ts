/**
 * Least squares split by rows: the steps each part applies to the rows it holds, and the merge of the
 * parts' triangles. The driver (columnFit.ts) sends the steps; a part lives in a Web Worker or in this
 * thread, so every step is a plain, structured-cloneable object (PartOp) and every answer carries only
 * numbers, plain objects and typed arrays.
 *
 * The method is the tall-skinny QR (Demmel, Grigori, Hoemmen and Langou 2012, "Communication-optimal
 * parallel and sequential QR and LU factorizations", SIAM J. Sci. Comput. 34(1)): part p factors its
 * rows [X_p/scale | y_p] by the same row-blocked Householder QR as the single-thread engine
 * (leastSquares.ts blockedQr, starting from a zero triangle) into T_p = [R_p | Qᵀ_p y_p]; the merge
 * stacks the P triangles and reduces them by Householder reflections, taking T_0 as the running
 * triangle and the other tops as k-row blocks (the sequential TSQR step again, so one part gives the
 * single-thread factor bit for bit). Every step is orthogonal, so the merged R is the R of a backward
 * stable Householder QR of the whole design, without forming XᵀX.
 *
 * Refinement across parts (Björck 1967, as leastSquares.ts refine): the stacked problem is
 * [0; X] with P·k zero top rows (k per part) above the data rows. Its orthogonal factor is
 * M·diag(P_0 … P_{P−1}): each part applies its own reflectors to its k top entries and its rows
 * (applyQ on the part), the merge applies its reflectors to the P stacked tops (applyQ in the driver).
 * The residual's top entries are kept by the driver per part; the data rows' residuals stay in the part.
 *
 * Second passes (residuals, R², leverage, the HC meat, the Breusch–Pagan sums) are sums over rows:
 * each part returns its partial sums and the driver adds them in part order.
 */
import type { ColumnChunk, PartOp } from "./columnFitTypes";
import { applyQ, augmentedResidual, blockedQr, twoProdErr, type BlockReflectors } from "./leastSquares";
import { BLOCK, LEVERAGE_TOL } from "./covariance";
import { RowList, type RowRuns } from "./problems";
import { dotBlock, mapped } from "./blocks";
import { jsKernel, kernel } from "./kernel";

/** Codes of ColumnChunk.issues and of a part's rows: usable, blank, not a number. */
const USABLE = 0;
const BLANK = 1;
const NOT_NUMBER = 2;

/** One design held by a part: its columns, its response, and what the steps left there. */
interface PartDesign {
  X: Float64Array[];
  y: Float64Array;
  blocks: BlockReflectors[] | null;
  resid: Float64Array | null;
  /** Refinement: the running residual r and the correction f of the data rows. */
  r: Float64Array | null;
  f: Float64Array | null;
  /** Σx² and max|x| per column, in norms' order, when "prepare" computed them alongside the logs. */
  norms?: { sumSq: number[]; maxAbs: number[] };
}

/** The state of one part's rows where the part lives (a worker or this thread). */
export interface PartState {
  /** Rows appended (all of them, usable or not). */
  rows: number;
  /** x columns (fixed by the first chunk; −1 before it). */
  kx: number;
  /** Storage of the rows as appended: raw y, x, issue code and data row index (capacity ≥ rows). */
  rawY: Float64Array;
  rawX: Float64Array[];
  issue: Uint8Array;
  index: Int32Array;
  /** After "prepare": the usable rows, transformed (views of the storage), and their data row indices. */
  n: number;
  y: Float64Array | null;
  x: Float64Array[] | null;
  rowIndex: Int32Array | null;
  designs: Record<string, PartDesign>;
  /** What "prepare" did (its parameters and answer), so that a fit with the same transforms reuses the rows. */
  prepared: { key: string; answer: PrepareAnswer } | null;
  /** The last "scan" (its parameters and answer): after "prepare" the storage no longer holds the raw rows. */
  scanned: { key: string; answer: ScanAnswer } | null;
  /** Per column (y, then x): every value appended (NaN aside) is > 0; set by append, read by scan. */
  positive?: boolean[];
  /** The intercept's column of ones (prepare), and the residuals' buffer (passes), kept between fits. */
  ones?: Float64Array;
  residBuffer?: Float64Array;
}

/** A new, empty part. */
export function newPartState(): PartState {
  return {
    rows: 0, kx: -1, rawY: new Float64Array(0), rawX: [], issue: new Uint8Array(0), index: new Int32Array(0),
    n: 0, y: null, x: null, rowIndex: null, designs: {}, prepared: null, scanned: null, positive: undefined, ones: undefined, residBuffer: undefined,
  };
}

/** The step kinds a part understands (see the answer types below). */
export type SplitOpKind = "reserve" | "append" | "scan" | "prepare" | "norms" | "factor" | "residuals" | "bpSums" | "refineStart" | "refineStep" | "refineApply" | "center" | "passes" | "bpSolve" | "auxDesign" | "auxDrop" | "release" | "clear";

/** What applyPartOp gives back: the answer (structured-cloneable) and the buffers that may move with it. */
export interface PartAnswer {
  answer: unknown;
  transfer?: ArrayBuffer[];
}

/** The buffers of a chunk, to move with an append step instead of copying them. */
export function chunkBuffers(chunk: ColumnChunk): ArrayBuffer[] {
  const out = new Set<ArrayBuffer>();
  out.add(chunk.y.buffer as ArrayBuffer);
  for (const c of chunk.x) out.add(c.buffer as ArrayBuffer);
  if (chunk.issues) out.add(chunk.issues.buffer as ArrayBuffer);
  return [...out];
}

/** The step that appends a chunk's rows to a part (the part copies them into its storage). */
export function appendOp(chunk: ColumnChunk): PartOp {
  return { kind: "append", rowStart: chunk.rowStart, y: chunk.y, x: chunk.x, issues: chunk.issues ?? null };
}

// ---------------------------------------------------------------------------------------------
// Answers

/** Counts of a column's values ≤ 0 among the usable rows, with their sheet rows. */
export interface NonPositiveCounts {
  zeros: number;
  negatives: number;
  zeroRows: RowRuns;
  negativeRows: RowRuns;
}

export interface ScanAnswer {
  usable: number;
  blank: number;
  notNumber: number;
  /** Sheet rows of every row not usable (blank or not a number). */
  unusableRows: RowRuns;
  /** Per column (y first, then x): rows whose value is not a number (for the "no usable row" message). */
  badCells: number[];
  /** Per x column: every usable value is 0 or 1. */
  binary: boolean[];
  /** Per x column: equal to y in every usable row. */
  sameAsY: boolean[];
  /** y, then every x column. */
  nonPositive: NonPositiveCounts[];
}

export interface PrepareAnswer {
  n: number;
  dropped: number;
  droppedNegative: number;
  droppedRows: RowRuns;
  /** Per x column: the first value and whether every value of the part equals it (NaN, true when n = 0). */
  first: number[];
  constant: boolean[];
  /** max|y| and max|x_j| of the transformed rows (for the units of the scaled y and of the tests). */
  yMax: number;
  /** Σy of the transformed rows, in row order (R²'s first mean). */
  ySum: number;
  xMax: number[];
  /** The fit design's column sums for its norms (the step "norms" on it, computed here). */
  norms: NormsAnswer;
}

export interface NormsAnswer {
  /** Per column: Σx², max|x|, Σ(x/max|x|)² (NaN where Σx² alone is safe: see norms). */
  sumSq: number[];
  maxAbs: number[];
  scaledSumSq: number[];
}

export interface ResidualsAnswer {
  n: number;
  rss: number;
  maxAbs: number;
  sumY: number;
  sumY2: number;
}

export interface RefineStepAnswer {
  top: Float64Array;
  gHi: Float64Array;
  gLo: Float64Array;
}

export interface PassesAnswer {
  /** Σ(y − mean) for the mean's correction. */
  corr: number;
  /** The residuals' sums when the step computed the residuals itself (coef given), else null. */
  resid: ResidualsAnswer | null;
  /** The HC meat Σ ω z zᵀ (row-major k×k, upper triangle), or null. */
  meat: Float64Array | null;
  /** Sheet rows with leverage 1 under HC2/HC3. */
  leverageOne: RowRuns;
  /** Breusch–Pagan on the fit's factor: Σ_i x_ij v_i per column, Σv² and Σv (v = e² in the test's unit). */
  bpG: Float64Array | null;
  bpVV: number;
  bpSum: number;
  sample: { fitted: Float64Array; residuals: Float64Array; rows: Int32Array };
}

export interface BpSolveAnswer {
  /** Xᵀr for the correction (empty unless asked). */
  t: Float64Array;
  /** Σr² before the correction. */
  rr: number;
  /** Σ(v − mean)². */
  tss: number;
  /** Σ(y − centre)² of the fit's y when a centre was given (else 0). */
  ss: number;
}

// ---------------------------------------------------------------------------------------------
// The steps

function grow(state: PartState, need: number, kx: number): void {
  if (need <= state.rawY.length) return;
  const cap = Math.max(need, Math.ceil(state.rawY.length * 1.5), 1024);
  const y = new Float64Array(cap);
  y.set(state.rawY.subarray(0, state.rows));
  const x: Float64Array[] = [];
  for (let j = 0; j < kx; j++) {
    const c = new Float64Array(cap);
    if (state.rawX[j]) c.set(state.rawX[j].subarray(0, state.rows));
    x.push(c);
  }
  const issue = new Uint8Array(cap);
  issue.set(state.issue.subarray(0, state.rows));
  const index = new Int32Array(cap);
  index.set(state.index.subarray(0, state.rows));
  state.rawY = y;
  state.rawX = x;
  state.issue = issue;
  state.index = index;
}

/** Room for `rows` rows of `kx` x columns, so that appending never copies the rows already held. */
function reserve(state: PartState, op: PartOp): PartAnswer {
  const kx = op.kx as number;
  if (state.kx < 0) state.kx = kx;
  if (state.kx !== kx) throw new Error(`the part holds ${state.kx} x columns, not ${kx}`);
  const need = op.rows as number;
  if (need > state.rawY.length) {
    const keep = state.rows;
    const y = new Float64Array(need);
    y.set(state.rawY.subarray(0, keep));
    const x = Array.from({ length: kx }, (_, j) => {
      const c = new Float64Array(need);
      if (state.rawX[j]) c.set(state.rawX[j].subarray(0, keep));
      return c;
    });
    const issue = new Uint8Array(need);
    issue.set(state.issue.subarray(0, keep));
    const index = new Int32Array(need);
    index.set(state.index.subarray(0, keep));
    Object.assign(state, { rawY: y, rawX: x, issue, index });
  }
  return { answer: { rows: state.rows, capacity: state.rawY.length } };
}

function append(state: PartState, op: PartOp): PartAnswer {
  const y = op.y as Float64Array;
  const x = op.x as Float64Array[];
  const issues = op.issues as Uint8Array | null;
  const rowStart = op.rowStart as number;
  if (state.y) throw new Error("rows cannot be appended to a part after it was prepared");
  if (state.kx < 0) state.kx = x.length;
  if (x.length !== state.kx) throw new Error(`a chunk has ${x.length} x columns, the part ${state.kx}`);
  const m = y.length;
  for (const c of x) if (c.length !== m) throw new Error("a chunk's columns differ in length");
  const at = state.rows;
  grow(state, at + m, state.kx);
  state.rawY.set(y, at);
  for (let j = 0; j < state.kx; j++) state.rawX[j].set(x[j], at);
  // a row's code: its issue as read, else the first column (y, then x in order) that is not a number
  const code = state.issue.subarray(at, at + m);
  issueCodes(issues, code);
  // y, then x: whether every value read so far (NaN aside) is > 0, so that scan can skip the column
  if (at === 0) state.positive = new Array<boolean>(state.kx + 1).fill(true);
  const positive = state.positive as boolean[];
  positive[0] = markColumn(y, code) && positive[0];
  for (let j = 0; j < state.kx; j++) positive[j + 1] = markColumn(x[j], code) && positive[j + 1];
  rowIndices(state.index, at, rowStart, m);
  state.rows += m;
  return { answer: { rows: state.rows } };
}


// Small loops, each in its own function: a part step runs once per fit, and V8 optimises a hot loop
// kept apart from the step's other loops (called once per column or block) far sooner and more
// stably than the same loop inlined in a long step, which would be recompiled each time the step
// reaches a loop it has not run yet (measured: DEVELOPERS.md, the split engine's figures).

/** The codes of rows as read: USABLE where `issues` says 0 (or there are none), else BLANK or NOT_NUMBER. */
function issueCodes(issues: Uint8Array | null, code: Uint8Array): void {
  if (!issues) {
    code.fill(USABLE);
    return;
  }
  for (let i = 0; i < code.length; i++) {
    const c = issues[i];
    code[i] = c === 0 ? USABLE : c === 1 ? BLANK : NOT_NUMBER;
  }
}

/**
 * A usable row whose value in this column is not a finite number: BLANK (NaN) or NOT_NUMBER
 * (±Infinity). Answers whether every value other than NaN is > 0 (so none is counted by scan's signs).
 */
function markColumn(c: Float64Array, code: Uint8Array): boolean {
  const low = finiteLow(c, code.length);
  if (low === low) return low > 0; // all finite (low is their minimum)
  for (let i = 0; i < code.length; i++) {
    if (code[i] !== USABLE) continue;
    const v = c[i];
    if (v - v !== 0) code[i] = v !== v ? BLANK : NOT_NUMBER;
  }
  return lowest(c, code.length) > 0;
}

/**
 * The smallest of c[0 … m) when all are finite, else NaN (a Σ 0·c_i beside the minimum: 0 when all
 * are finite, NaN otherwise; two of each, no branch but the minimum's).
 */
function finiteLow(c: Float64Array, m: number): number {
  let s0 = 0;
  let s1 = 0;
  let m0 = Infinity;
  let m1 = Infinity;
  let i = 0;
  for (; i + 1 < m; i += 2) {
    const a = c[i];
    const b = c[i + 1];
    s0 += a * 0;
    s1 += b * 0;
    if (a < m0) m0 = a;
    if (b < m1) m1 = b;
  }
  if (i < m) {
    s0 += c[i] * 0;
    if (c[i] < m0) m0 = c[i];
  }
  return s0 + s1 === 0 ? Math.min(m0, m1) : NaN;
}

/** The smallest of c[0 … m) other than NaN (Infinity when there is none). */
function lowest(c: Float64Array, m: number): number {
  let low = Infinity;
  for (let i = 0; i < m; i++) if (c[i] < low) low = c[i];
  return low;
}

function rowIndices(index: Int32Array, at: number, rowStart: number, m: number): void {
  for (let i = 0; i < m; i++) index[at + i] = rowStart + i;
}

/** A part that never received a chunk still answers for every column (with no rows). */
function ensureColumns(state: PartState, kx: number): void {
  if (state.kx < 0) state.kx = kx;
  if (state.kx !== kx) throw new Error(`the part holds ${state.kx} x columns, the fit names ${kx}`);
  while (state.rawX.length < kx) state.rawX.push(new Float64Array(state.rawY.length));
}

function allUsable(issue: Uint8Array, rows: number): boolean {
  for (let i = 0; i < rows; i++) if (issue[i] !== USABLE) return false;
  return true;
}

/** The rows not usable added to `to` (sheet rows); answers [blank, not a number]. */
function unusableRows(issue: Uint8Array, index: Int32Array, rows: number, firstRow: number, to: RowList): [number, number] {
  let blank = 0;
  let notNumber = 0;
  for (let i = 0; i < rows; i++) {
    if (issue[i] === USABLE) continue;
    if (issue[i] === BLANK) blank++;
    else notNumber++;
    to.add(firstRow + index[i]);
  }
  return [blank, notNumber];
}

/** Rows not usable whose value in this column is not a finite number. */
function notFinite(c: Float64Array, issue: Uint8Array, rows: number): number {
  let bad = 0;
  for (let i = 0; i < rows; i++) if (issue[i] !== USABLE && !(c[i] - c[i] === 0)) bad++;
  return bad;
}

/** A column's zeros and negatives among the usable rows (all rows when `all`), with their sheet rows. */
function signs(c: Float64Array, rows: number, all: boolean, issue: Uint8Array, index: Int32Array, firstRow: number, to: { zeros: number; negatives: number; zeroRows: RowList; negativeRows: RowList }): void {
  for (let i = 0; i < rows; i++) {
    const v = c[i];
    if (v > 0 || (!all && issue[i] !== USABLE)) continue;
    if (v === 0) {
      to.zeros++;
      to.zeroRows.add(firstRow + index[i]);
    } else if (v < 0) {
      to.negatives++;
      to.negativeRows.add(firstRow + index[i]);
    }
  }
}

/** Over the usable rows: 1 when every value is 0 or 1, plus 2 when every value equals y's. */
function binaryAndSame(c: Float64Array, y: Float64Array, rows: number, all: boolean, issue: Uint8Array): number {
  let bin = true;
  let same = true;
  for (let i = 0; i < rows && (bin || same); i++) {
    if (!all && issue[i] !== USABLE) continue;
    const v = c[i];
    if (v !== 0 && v !== 1) bin = false;
    if (v !== y[i]) same = false;
  }
  return (bin ? 1 : 0) + (same ? 2 : 0);
}

function scan(state: PartState, op: PartOp): PartAnswer {
  const firstRow = op.firstRow as number;
  const kx = op.kx as number;
  const key = JSON.stringify([kx, firstRow]);
  if (state.y) {
    // the rows were transformed in place by an earlier fit: what they held then
    if (state.scanned?.key !== key) throw new Error("this part's rows were already transformed for a fit: append them again");
    return { answer: state.scanned.answer };
  }
  ensureColumns(state, kx);
  const rows = state.rows;
  const unusable = new RowList();
  const badCells = new Array<number>(kx + 1).fill(0);
  let usable = 0;
  let blank = 0;
  let notNumber = 0;
  const binary = new Array<boolean>(kx).fill(true);
  const sameAsY = new Array<boolean>(kx).fill(true);
  const np = Array.from({ length: kx + 1 }, () => ({ zeros: 0, negatives: 0, zeroRows: new RowList(), negativeRows: new RowList() }));
  const { rawY, rawX, issue, index } = state;
  // column by column: the rows not usable first, then each column over the usable rows
  if (!allUsable(issue, rows)) {
    const counts = unusableRows(issue, index, rows, firstRow, unusable);
    blank = counts[0];
    notNumber = counts[1];
    badCells[0] = notFinite(rawY, issue, rows);
    for (let j = 0; j < kx; j++) badCells[j + 1] = notFinite(rawX[j], issue, rows);
  }
  usable = rows - blank - notNumber;
  const all = usable === rows;
  // a column whose values were all > 0 as appended has no zeros or negatives to count
  const positive = state.positive ?? [];
  if (!positive[0]) signs(rawY, rows, all, issue, index, firstRow, np[0]);
  for (let j = 0; j < kx; j++) {
    if (!positive[j + 1]) signs(rawX[j], rows, all, issue, index, firstRow, np[j + 1]);
    const both = binaryAndSame(rawX[j], rawY, rows, all, issue);
    binary[j] = (both & 1) !== 0;
    sameAsY[j] = (both & 2) !== 0;
  }
  const answer: ScanAnswer = {
    usable, blank, notNumber, unusableRows: unusable.toRuns(), badCells, binary, sameAsY,
    nonPositive: np.map((c) => ({ zeros: c.zeros, negatives: c.negatives, zeroRows: c.zeroRows.toRuns(), negativeRows: c.negativeRows.toRuns() })),
  };
  state.scanned = { key, answer };
  return { answer };
}

/**
 * The usable rows (and under zeros=drop those with every logged value > 0) moved up in place, in
 * order; answers [rows kept, rows dropped, of which with a negative value].
 */
function keepRows(state: PartState, kx: number, logY: boolean, logged: boolean[], drop: boolean, firstRow: number, droppedRows: RowList): [number, number, number] {
  const { rawY, rawX, issue, index } = state;
  const rows = state.rows;
  if (!drop && allUsable(issue, rows)) return [rows, 0, 0];
  let dropped = 0;
  let droppedNegative = 0;
  let w = 0;
  for (let i = 0; i < rows; i++) {
    if (issue[i] !== USABLE) continue;
    if (drop) {
      let bad = logY && rawY[i] <= 0;
      let negative = logY && rawY[i] < 0;
      for (let j = 0; j < kx; j++) {
        if (logged[j] && rawX[j][i] <= 0) {
          bad = true;
          if (rawX[j][i] < 0) negative = true;
        }
      }
      if (bad) {
        dropped++;
        if (negative) droppedNegative++;
        droppedRows.add(firstRow + index[i]);
        continue;
      }
    }
    if (w !== i) {
      rawY[w] = rawY[i];
      for (let j = 0; j < kx; j++) rawX[j][w] = rawX[j][i];
      index[w] = index[i];
    }
    w++;
  }
  return [w, dropped, droppedNegative];
}

/** Rows per block of prepare's log and sums (the block stays in the processor's first cache between the two). */
const PREPARE_ROWS = 2048;

/** y logged in place (when logY), block by block, with out = [Σy in row order, max|y|]. */
function transformY(y: Float64Array, logY: boolean, out: Float64Array): void {
  out[0] = 0;
  out[1] = 0;
  for (let s = 0; s < y.length; s += PREPARE_ROWS) {
    const e = Math.min(y.length, s + PREPARE_ROWS);
    if (logY) kernel().logInPlace(y.subarray(s, e)); // Math.log's values, as the cell path logs
    sumAndMax(y, s, e, out);
  }
}

/** Rows from … to − 1 added to out = [Σv in row order, max|v|]. */
function sumAndMax(c: Float64Array, from: number, to: number, out: Float64Array): void {
  let s = out[0];
  let m = out[1];
  for (let i = from; i < to; i++) {
    const v = c[i];
    s += v;
    const b = Math.abs(v);
    if (b > m) m = b;
  }
  out[0] = s;
  out[1] = m;
}

/** The intercept's column of n ones, kept by the part for later fits of the same rows. */
function onesColumn(state: PartState, n: number): Float64Array {
  if (!state.ones || state.ones.length !== n) state.ones = new Float64Array(n).fill(1);
  return state.ones;
}

/**
 * Keeps the usable rows (and, under zeros=drop, those with every logged value > 0), in place, then
 * logs y and the logged x columns as the cell path does (Math.log, column by column), and builds the
 * fit's design: a column of ones when there is an intercept, then the x columns.
 */
function prepare(state: PartState, op: PartOp): PartAnswer {
  const logY = op.logY as boolean;
  const logged = op.logged as boolean[];
  const drop = op.drop as boolean;
  const intercept = op.intercept as boolean;
  const firstRow = op.firstRow as number;
  const kx = op.kx as number;
  // The rows are transformed in place (no second copy of a big range): a part's rows serve fits with
  // the same transforms and rows (another se= or level); other transforms need the rows again.
  const key = JSON.stringify([kx, logY, logged, drop, intercept, firstRow]);
  if (state.y) {
    if (state.prepared?.key !== key) throw new Error("this part's rows were already transformed for a fit with other transforms: append them again for this one");
    const d = state.designs.fit;
    state.designs = { fit: { X: d.X, y: state.y, blocks: null, resid: null, r: null, f: null, norms: d.norms } };
    return { answer: state.prepared.answer };
  }
  ensureColumns(state, kx);
  const { rawY, rawX, index } = state;
  const droppedRows = new RowList();
  const kept = keepRows(state, kx, logY, logged, drop, firstRow, droppedRows);
  const n = kept[0];
  const dropped = kept[1];
  const droppedNegative = kept[2];
  const y = rawY.subarray(0, n);
  const x = rawX.slice(0, kx).map((c) => c.subarray(0, n));
  // per column: the log (in place), then the first value and constancy, max|x| and Σx² (norms)
  const st = new Float64Array(3);
  transformY(y, logY, st);
  const ySum = st[0];
  const yMax = st[1];
  const first: number[] = [];
  const constant: boolean[] = [];
  const xMax: number[] = [];
  const sumSq: number[] = [];
  for (let j = 0; j < kx; j++) {
    const c = x[j];
    if (logged[j]) {
      // the kernel's log (Math.log's values) with max|x| and Σx² in order from the same read (norm2's sums)
      const f = kernel().logWithFacts(c);
      xMax.push(f.maxAbs);
      sumSq.push(f.sumSq);
    } else {
      xMax.push(kernel().maxAbs(c));
      sumSq.push(kernel().sumSquares(c));
    }
    // constant when every value equals the first (the scan stops at the first that differs)
    let i = 1;
    while (i < n && c[i] === c[0]) i++;
    first.push(n > 0 ? c[0] : NaN);
    constant.push(i >= n);
  }
  state.n = n;
  state.y = y;
  state.x = x;
  state.rowIndex = index.subarray(0, n);
  const design: Float64Array[] = [];
  const norms = { sumSq: [...sumSq], maxAbs: [...xMax] };
  if (intercept) {
    design.push(onesColumn(state, n));
    norms.sumSq.unshift(n); // Σ1² added one by one: exact
    norms.maxAbs.unshift(n > 0 ? 1 : 0);
  }
  design.push(...x);
  state.designs = { fit: { X: design, y, blocks: null, resid: null, r: null, f: null, norms } };
  const fitNorms = normsOf(state.designs.fit, (op.parts as number | undefined) ?? 1);
  const answer: PrepareAnswer = { n, dropped, droppedNegative, droppedRows: droppedRows.toRuns(), first, constant, yMax, ySum, xMax, norms: fitNorms };
  state.prepared = { key, answer };
  return { answer };
}

function designOf(state: PartState, op: PartOp): PartDesign {
  const d = state.designs[op.design as string];
  if (!d) throw new Error(`the part holds no design ${String(op.design)}`);
  return d;
}

/**
 * Σx² in the order leastSquares.ts norm2 sums it, and max|x|; Σ(x/max|x|)² (NaN when not computed)
 * only where this part's Σx² could take the total out of [1e-280, 1e280] (at or below 1e-280, or at
 * or above 1e280/parts): the driver then combines the scaled sums, as norm2 rescales.
 */
function norms(state: PartState, op: PartOp): PartAnswer {
  return { answer: normsOf(designOf(state, op), (op.parts as number | undefined) ?? 1) };
}

function normsOf(d: PartDesign, parts: number): NormsAnswer {
  const sumSq: number[] = [];
  const mx: number[] = [];
  const scaledSumSq: number[] = [];
  for (let j = 0; j < d.X.length; j++) {
    const a = d.X[j];
    let s = 0;
    let m = 0;
    if (d.norms) {
      s = d.norms.sumSq[j];
      m = d.norms.maxAbs[j];
    } else {
      for (let i = 0; i < a.length; i++) {
        const v = a[i];
        s += v * v;
        const b = Math.abs(v);
        if (b > m) m = b;
      }
    }
    let t = NaN;
    if (m > 0 && !(s > 1e-280 && s < 1e280 / parts)) {
      t = 0;
      for (let i = 0; i < a.length; i++) {
        const v = a[i] / m;
        t += v * v;
      }
    }
    sumSq.push(s);
    mx.push(m);
    scaledSumSq.push(t);
  }
  return { sumSq, maxAbs: mx, scaledSumSq };
}

/** The part's row-blocked Householder QR of [X/scale | y/unit] from a zero triangle: T, (k+1)×(k+1). */
function factor(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  const inv = op.inv as Float64Array;
  const unit = (op.unit as number | undefined) ?? 1;
  if (unit !== 1 && d === state.designs.fit && d.y === state.y) {
    // the fit's y divided by a power of two (exact), as OlsFit does for extreme magnitudes
    const yu = new Float64Array(d.y.length);
    const s = 1 / unit;
    for (let i = 0; i < yu.length; i++) yu[i] = d.y[i] * s;
    d.y = yu;
  }
  const keep = op.keep ? ([] as BlockReflectors[]) : null;
  const T = blockedQr(d.X, d.y, inv, keep);
  d.blocks = keep;
  return { answer: { T }, transfer: [T.buffer as ArrayBuffer] };
}

/** Rows per block of the residual step's fused pass. */
const PASS_ROWS = 1024;

/**
 * r = y − Σ b_j x_j (in the order of leastSquares.ts), kept in the part; the partial sums. One pass
 * over the rows, block by block: every row's arithmetic and every sum's order are those of separate
 * passes over whole columns, so the numbers are the same.
 */
function residuals(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  const coef = op.coef as Float64Array;
  const n = d.y.length;
  const y = d.y;
  const X = d.X;
  const resid = new Float64Array(n);
  if (op.refined) {
    augmentedResidual(X, y, null, coef, resid); // the final residuals of the refinement
    d.r = null;
    d.f = null;
    d.blocks = null; // k reflector entries per row: freed as soon as the refinement is over
  }
  d.resid = resid;
  const sums = new ResidualSums();
  for (let start = 0; start < n; start += PASS_ROWS) {
    const end = Math.min(n, start + PASS_ROWS);
    if (!op.refined) residualRows(X, y, coef, resid, start, end);
    sums.add(resid, y, start, end);
  }
  const answer: ResidualsAnswer = sums.answer(n);
  return { answer };
}

/**
 * resid_i = y_i − Σ_j b_j x_ij for rows start … end − 1, the columns subtracted in order. Four
 * columns per sweep of the rows: ((((r − b_0x_0) − b_1x_1) − b_2x_2) − b_3x_3) is the same arithmetic
 * as four sweeps of one column, with a quarter of the loads and stores of r.
 */
function residualRows(X: Float64Array[], y: Float64Array, coef: Float64Array, resid: Float64Array, start: number, end: number): void {
  for (let i = start; i < end; i++) resid[i] = y[i];
  const k = X.length;
  let j = 0;
  for (; j + 3 < k; j += 4) subtractFour(X, coef, j, resid, start, end, 0);
  for (; j < k; j++) subtractOne(X[j], coef[j], resid, start, end, 0);
}

/** r[i − shift] −= b·x[i] for i in [from, to). */
function subtractOne(x: Float64Array, b: number, r: Float64Array, from: number, to: number, shift: number): void {
  for (let i = from; i < to; i++) r[i - shift] -= b * x[i];
}

/** Columns j … j+3 subtracted as subtractOne would, one after the other, in one sweep. */
function subtractFour(X: Float64Array[], b: Float64Array, j: number, r: Float64Array, from: number, to: number, shift: number): void {
  const b0 = b[j];
  const b1 = b[j + 1];
  const b2 = b[j + 2];
  const b3 = b[j + 3];
  const x0 = X[j];
  const x1 = X[j + 1];
  const x2 = X[j + 2];
  const x3 = X[j + 3];
  for (let i = from; i < to; i++) r[i - shift] = (((r[i - shift] - b0 * x0[i]) - b1 * x1[i]) - b2 * x2[i]) - b3 * x3[i];
}

/** Σe², max|e|, Σy and Σy², added in row order block by block (the order of one pass over the rows). */
class ResidualSums {
  private rss = 0;
  private maxAbs = 0;
  private sumY = 0;
  private sumY2 = 0;
  add(resid: Float64Array, y: Float64Array, start: number, end: number): void {
    let { rss, maxAbs, sumY, sumY2 } = this;
    for (let i = start; i < end; i++) {
      const e = resid[i];
      rss += e * e;
      const a = Math.abs(e);
      if (a > maxAbs) maxAbs = a;
      const v = y[i];
      sumY += v;
      sumY2 += v * v;
    }
    // (field by field: an Object.assign here made one object per block)
    this.rss = rss;
    this.maxAbs = maxAbs;
    this.sumY = sumY;
    this.sumY2 = sumY2;
  }
  answer(n: number): ResidualsAnswer {
    return { n, rss: this.rss, maxAbs: this.maxAbs, sumY: this.sumY, sumY2: this.sumY2 };
  }
}

/** Refinement, first step: r₀ = y − Xb in double-double. */
function refineStart(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  if (!d.blocks) throw new Error("refinement needs the part's reflectors (factor with keep)");
  const n = d.y.length;
  d.r = new Float64Array(n);
  d.f = new Float64Array(n);
  augmentedResidual(d.X, d.y, null, op.coef as Float64Array, d.r);
  return { answer: { n } };
}

/** Σ a_i b_i in double-double, as (hi, lo). */
function dot2Parts(a: Float64Array, b: Float64Array): [number, number] {
  let hi = 0;
  let lo = 0;
  for (let i = 0; i < a.length; i++) {
    const p = a[i] * b[i];
    const pe = twoProdErr(a[i], b[i], p);
    const s = hi + p;
    const bb = s - hi;
    lo += (hi - (s - bb)) + (p - bb) + pe;
    hi = s;
  }
  return [hi, lo];
}

/**
 * Refinement, one iteration's part-local half: f = y − r − Xb, the partial Xᵀr (double-double), and
 * the part's reflectors applied forward to [−rTop_p; f]: answers the part's k top entries.
 */
function refineStep(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  const k = d.X.length;
  const r = d.r as Float64Array;
  const f = d.f as Float64Array;
  augmentedResidual(d.X, d.y, r, op.coef as Float64Array, f);
  const rTop = op.rTop as Float64Array;
  const top = new Float64Array(k);
  for (let j = 0; j < k; j++) top[j] = -rTop[j];
  const gHi = new Float64Array(k);
  const gLo = new Float64Array(k);
  for (let j = 0; j < k; j++) [gHi[j], gLo[j]] = dot2Parts(d.X[j], r);
  applyQ(d.blocks as BlockReflectors[], k, top, f, true);
  const answer: RefineStepAnswer = { top, gHi, gLo };
  return { answer };
}

/** Refinement, the other half: the part's reflectors applied backward to [top_p; f] (the correction), r += f. */
function refineApply(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  const k = d.X.length;
  const top = Float64Array.from(op.top as Float64Array);
  const f = d.f as Float64Array;
  const r = d.r as Float64Array;
  applyQ(d.blocks as BlockReflectors[], k, top, f, false);
  for (let i = 0; i < r.length; i++) r[i] += f[i];
  return { answer: { top } };
}

/** Σ(y − mean) and Σ(y − mean)² of the design's response, for a two-pass mean and a centred sum of squares. */
function center(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, op);
  const mean = op.mean as number;
  let corr = 0;
  let ss = 0;
  for (let i = 0; i < d.y.length; i++) {
    const v = d.y[i] - mean;
    corr += v;
    ss += v * v;
  }
  return { answer: { corr, ss } };
}

/** HC weight kinds of hcWeights. */
const HC_KIND = { HC0: 0, HC1: 1, HC2: 2, HC3: 3 } as const;

/**
 * The second passes over the fit's rows, in one pass of Q's rows: the residuals r = y − Σ b_j x_j
 * when coef is given (as the step "residuals" computes them, with its sums); the HC meat Σ ω_i z_i z_iᵀ with z_i = R⁻ᵀx_i and h_i = |z_i|² (as covariance.ts hcCovariance,
 * on the kernel's workspace); the first pass of Breusch–Pagan on the fit's own design, v = (e/eUnit)²
 * (as specTests.ts onFitDesign, leastSquares.ts rssOnFactor's first pass: Xᵀv and Σv² by blocks);
 * and the sample of rows for the picture.
 */
function passes(state: PartState, op: PartOp): PartAnswer {
  const d = state.designs.fit;
  const X = d.X;
  const k = X.length;
  const y = d.y;
  const n = y.length;
  const R = op.R as Float64Array;
  const scale = op.scale as Float64Array;
  const hc = op.hc as "HC0" | "HC1" | "HC2" | "HC3" | null;
  const hc1 = op.hc1 as number;
  const firstRow = op.firstRow as number;
  const yUnit = op.yUnit as number;
  const coef = (op.coef as Float64Array | null | undefined) ?? null;
  if (coef) d.resid = residBuffer(state, n);
  const resid = d.resid as Float64Array;
  const rowIndex = state.rowIndex as Int32Array;
  const eUnit = op.bpUnit as number | null;
  const mean = op.mean as number;

  const running = new Float64Array(1);
  const rsum = coef ? new ResidualSums() : null;
  const ones = new RowList();
  const hcKind = hc ? HC_KIND[hc] : -1;
  const needH = hc === "HC2" || hc === "HC3";
  const inv = new Float64Array(k);
  for (let j = 0; j < k; j++) inv[j] = 1 / scale[j];
  const ws = hc ? kernel().qWorkspace(R, inv, k, BLOCK) : null;
  const bp = eUnit !== null ? new BpFirstPass(k, 1 / eUnit) : null;
  for (let start = 0; start < n; start += BLOCK) {
    const m = Math.min(BLOCK, n - start);
    const end = start + m;
    addDifferences(y, mean, start, end, running);
    if (coef && rsum) {
      residualRows(X, y, coef, resid, start, end);
      rsum.add(resid, y, start, end);
    }
    if (ws) {
      ws.qRows(X, start, m);
      if (needH) ws.leverage(m);
      if (ws.hcWeights(resid, start, m, hcKind, hc1, 1 - LEVERAGE_TOL) > 0) {
        for (let i = 0; i < m; i++) if (ws.h[i] >= 1 - LEVERAGE_TOL) ones.add(firstRow + rowIndex[start + i]);
      }
      ws.meat(m); // M_ab += Σ w_i z_ai z_bi, b ≥ a
    }
    if (bp) bp.add(X, resid, start, m);
  }
  const meat = ws ? ws.M.slice() : null;

  const stride = op.stride as number;
  const offset = op.offset as number;
  let first = (stride - (offset % stride)) % stride;
  const count = first < n ? Math.floor((n - 1 - first) / stride) + 1 : 0;
  const fitted = new Float64Array(count);
  const res = new Float64Array(count);
  const rows = new Int32Array(count);
  for (let t = 0; t < count; t++, first += stride) {
    const e = resid[first] * yUnit;
    res[t] = e;
    fitted[t] = (state.y as Float64Array)[first] - e; // ŷ = y − e in the transformed y's units
    rows[t] = rowIndex[first];
  }
  const residAnswer: ResidualsAnswer | null = rsum ? rsum.answer(n) : null;
  const answer: PassesAnswer = {
    corr: running[0], resid: residAnswer, meat, leverageOne: ones.toRuns(),
    bpG: bp ? bp.g : null, bpVV: bp ? bp.vv : 0, bpSum: bp ? bp.sum : 0, sample: { fitted, residuals: res, rows },
  };
  return { answer, transfer: [fitted.buffer as ArrayBuffer, res.buffer as ArrayBuffer, rows.buffer as ArrayBuffer] };
}

/** The part's buffer of n residuals (kept between fits of the same rows). */
function residBuffer(state: PartState, n: number): Float64Array {
  if (!state.residBuffer || state.residBuffer.length !== n) state.residBuffer = new Float64Array(n);
  return state.residBuffer;
}

/** running[0] += Σ (y_i − mean) over rows start … end − 1, in row order. */
function addDifferences(y: Float64Array, mean: number, start: number, end: number, running: Float64Array): void {
  let s = running[0];
  for (let i = start; i < end; i++) s += y[i] - mean;
  running[0] = s;
}

/** v = (e/eUnit)² of rows start … start + m − 1 into b[0 … m) (specTests.ts squaredResiduals); answers Σv in row order added to s. */
function squaredBlock(resid: Float64Array, start: number, m: number, vInv: number, b: Float64Array, s: number): number {
  for (let i = 0; i < m; i++) {
    const e = resid[start + i] * vInv;
    const v = e * e;
    b[i] = v;
    s += v;
  }
  return s;
}

/**
 * The first pass of Breusch–Pagan on the fit's design (the first pass of leastSquares.ts rssOnFactor),
 * block by block of BLOCK rows from the part's first row, inside the fused passes: Σ_i x_ij v_i per
 * column and Σv² by dotBlock, Σv in row order.
 */
class BpFirstPass {
  readonly g: Float64Array;
  vv = 0;
  sum = 0;
  private readonly b = new Float64Array(BLOCK);
  constructor(k: number, private readonly vInv: number) {
    this.g = new Float64Array(k);
  }

  add(X: Float64Array[], resid: Float64Array, start: number, m: number): void {
    const b = this.b;
    this.sum = squaredBlock(resid, start, m, this.vInv, b, this.sum);
    this.vv += dotBlock(b, 0, b, 0, m);
    for (let j = 0; j < X.length; j++) this.g[j] += dotBlock(X[j], start, b, 0, m);
  }
}

/**
 * The first pass of Breusch–Pagan again with another unit, v = (e/eUnit)² (for a fit whose residuals
 * fall outside scaling.ts's window, after "passes" assumed unit 1).
 */
function bpSums(state: PartState, op: PartOp): PartAnswer {
  const d = state.designs.fit;
  const resid = d.resid as Float64Array;
  const n = resid.length;
  const bp = new BpFirstPass(d.X.length, 1 / (op.bpUnit as number));
  for (let start = 0; start < n; start += BLOCK) bp.add(d.X, resid, start, Math.min(BLOCK, n - start));
  return { answer: { bpG: bp.g, bpVV: bp.vv, bpSum: bp.sum } };
}

/**
 * The second pass of Breusch–Pagan on the fit's factor (leastSquares.ts rssOnFactor): r = v −
 * Σ b_j x_j block by block, Σr² and, when the driver asks for the correction, Xᵀr; Σ(v − mean)² in row
 * order; and, when a centre is given, Σ(y − centre)² of the fit's y (R²'s centred sum) in the same pass.
 */
function bpSolve(state: PartState, op: PartOp): PartAnswer {
  const d = state.designs.fit;
  const resid = d.resid as Float64Array;
  if (!resid) throw new Error("the Breusch–Pagan sums were not started");
  const b = op.b as Float64Array;
  const vInv = 1 / (op.bpUnit as number);
  const mean = op.mean as number;
  const correct = op.correct as boolean;
  const X = d.X;
  const k = X.length;
  const n = resid.length;
  const withCentre = op.center !== null && op.center !== undefined;
  const centre = withCentre ? (op.center as number) : 0;
  const fy = state.y as Float64Array;
  const r = new Float64Array(BLOCK);
  const t = new Float64Array(correct ? k : 0);
  const sums = new Float64Array(3); // Σ(v − mean)², Σ(y − centre)², scratch
  let rr = 0;
  for (let start = 0; start < n; start += BLOCK) {
    const m = Math.min(BLOCK, n - start);
    squaredBlock(resid, start, m, vInv, r, 0);
    addCentred(r, 0, m, mean, sums, 0);
    subtractColumns(X, b, start, m, r);
    rr += dotBlock(r, 0, r, 0, m);
    if (correct) for (let j = 0; j < k; j++) t[j] += dotBlock(X[j], start, r, 0, m);
    if (withCentre) addCentred(fy, start, m, centre, sums, 1);
  }
  const answer: BpSolveAnswer = { t, rr, tss: sums[0], ss: sums[1] };
  return { answer };
}

/** sums[at] += Σ (a_i − c)² over a[from … from + m), in row order. */
function addCentred(a: Float64Array, from: number, m: number, c: number, sums: Float64Array, at: number): void {
  let s = sums[at];
  for (let i = from; i < from + m; i++) {
    const u = a[i] - c;
    s += u * u;
  }
  sums[at] = s;
}

/**
 * r[i] −= Σ_j b_j x_j[start + i] for i < m, column by column, skipping zero coefficients (leastSquares.ts
 * subtractCombination's order); four columns per sweep where none of the four is skipped.
 */
function subtractColumns(X: Float64Array[], b: Float64Array, start: number, m: number, r: Float64Array): void {
  const k = X.length;
  let j = 0;
  for (; j + 3 < k; j += 4) {
    if (b[j] !== 0 && b[j + 1] !== 0 && b[j + 2] !== 0 && b[j + 3] !== 0) subtractFour(X, b, j, r, start, start + m, start);
    else for (let q = j; q < j + 4; q++) if (b[q] !== 0) subtractOne(X[q], b[q], r, start, start + m, start);
  }
  for (; j < k; j++) if (b[j] !== 0) subtractOne(X[j], b[j], r, start, start + m, start);
}

/**
 * The auxiliary design of a Breusch–Pagan test that cannot reuse the fit's factor (specTests.ts
 * auxiliary): a column of ones and the x columns divided by their test units, with v = (e/eUnit)².
 */
function auxDesign(state: PartState, op: PartOp): PartAnswer {
  const units = op.units as number[];
  const eUnit = op.eUnit as number;
  const n = state.n;
  const x = state.x as Float64Array[];
  const resid = state.designs.fit.resid as Float64Array;
  const cols: Float64Array[] = [new Float64Array(n).fill(1)];
  x.forEach((c, j) => {
    const u = units[j];
    if (u === 1) cols.push(c);
    else {
      const inv = 1 / u;
      cols.push(mapped(c, (v) => v * inv));
    }
  });
  const inv = 1 / eUnit;
  const v = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const e = resid[i] * inv;
    v[i] = e * e;
  }
  state.designs.aux = { X: cols, y: v, blocks: null, resid: null, r: null, f: null };
  return { answer: { n } };
}

/** Leaves one column out of the auxiliary design (one that depends on earlier ones). */
function auxDrop(state: PartState, op: PartOp): PartAnswer {
  const d = designOf(state, { kind: "auxDrop", design: "aux" });
  const drop = op.column as number;
  d.X = d.X.filter((_, j) => j !== drop);
  d.blocks = null;
  d.resid = null;
  return { answer: { k: d.X.length } };
}

/** Applies one step to the part it holds. Data problems come back in the answers (the driver words them). */
export function applyPartOp(state: PartState, op: PartOp): PartAnswer {
  switch (op.kind as SplitOpKind) {
    case "reserve": return reserve(state, op);
    case "append": return append(state, op);
    case "scan": return scan(state, op);
    case "prepare": return prepare(state, op);
    case "norms": return norms(state, op);
    case "factor": return factor(state, op);
    case "residuals": return residuals(state, op);
    case "refineStart": return refineStart(state, op);
    case "refineStep": return refineStep(state, op);
    case "refineApply": return refineApply(state, op);
    case "center": return center(state, op);
    case "passes": return passes(state, op);
    case "bpSums": return bpSums(state, op);
    case "bpSolve": return bpSolve(state, op);
    case "auxDesign": return auxDesign(state, op);
    case "auxDrop": return auxDrop(state, op);
    case "release": {
      // what a finished fit leaves: the tests' designs, the residuals and reflectors (the rows stay)
      const fit = state.designs.fit;
      if (fit) state.designs = { fit: { X: fit.X, y: state.y as Float64Array, blocks: null, resid: null, r: null, f: null, norms: fit.norms } };
      return { answer: { rows: state.rows } };
    }
    case "clear": {
      Object.assign(state, newPartState());
      return { answer: { rows: 0 } };
    }
    default:
      throw new Error(`unknown part step ${String(op.kind)}`);
  }
}

// ---------------------------------------------------------------------------------------------
// The merge (in the driver's thread)

/** The merged triangle of the parts and, when kept, the merge's reflectors on the stacked tops. */
export interface Merged {
  T: Float64Array;
  /** Reflectors on the stacked tops of parts 1…P−1 (start = (p−1)·k), with part 0's top as the running triangle. */
  blocks: BlockReflectors[] | null;
}

/**
 * Stacks the parts' triangles T_p (row-major (k+1)×(k+1): R_p and Qᵀ_p y_p in rows 0…k−1) and
 * reduces them by Householder reflections: T_0 is the running triangle, each further T_p's k rows a
 * block reduced against it, exactly as blockedQr reduces a block of data rows (Demmel, Grigori,
 * Hoemmen and Langou 2012, the TSQR reduction with a flat tree). One part: T_0 itself.
 */
export function mergeTriangles(Ts: readonly Float64Array[], k: number, keep: boolean): Merged {
  const k1 = k + 1;
  const blocks: BlockReflectors[] | null = keep ? [] : null;
  const m = k; // rows per block: the k top rows of a part's triangle
  // the block reduction of the blocked QR (the JavaScript kernel: a few k×k blocks, no need for more)
  const ws = jsKernel.qrWorkspace(k, m);
  const { C, tau } = ws;
  ws.T.set(Ts[0]);
  for (let p = 1; p < Ts.length; p++) {
    const S = Ts[p];
    for (let c = 0; c < k1; c++) for (let i = 0; i < m; i++) C[c * m + i] = S[i * k1 + c];
    ws.reduce(m);
    if (blocks) {
      const v = new Float64Array(k * m);
      for (let j = 0; j < k; j++) for (let i = 0; i < m; i++) v[j * m + i] = C[j * m + i];
      blocks.push({ start: (p - 1) * k, rows: m, tau: Float64Array.from(tau), v });
    }
  }
  return { T: Float64Array.from(ws.T), blocks };
}
