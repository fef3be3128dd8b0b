/**
 * Rolling windows through the estimator interface: the cells are read once (intake), the windows
 * are laid out over the usable rows (or, with time=, over periods), and each window's rows go
 * through the same transforms and estimator as a separate fit of those rows alone (the route of
 * byGroup.ts), so every model option applies inside the window: forms, zeros, weights, fixed
 * effects and clusters counted within the window, estimator=ppml. A window that cannot be fitted
 * keeps its reason and the others still come.
 *
 * Layout rules (windows.ts): windows of `window` consecutive usable rows, or of `window`
 * consecutive periods of the time column (numbers ascending, text in first-appearance order; each
 * series, the whole sheet or each unit of panel=, must run in that order); moved on by `step`; with
 * expanding the first row stays and the end moves on.
 */
import { readYX, subsetRoles, type Origin, type RawData } from "./intake";
import { prepare, type Prelogged } from "./transforms";
import { estimatorOf } from "./estimators";
import { ElxProblem, RowList, fail } from "./problems";
import { modelKey, type Options } from "./options";
import { BoundedCache, hashCells, type Sized } from "./cache";
import { periodsOfKey, periodWindows, rowWindows, type Window, type WindowLayout } from "./windows";
import type { AnyFit } from "./model";

export interface WindowFitResult {
  window: Window;
  /** Usable rows of the window (before any zeros=drop or singletons). */
  rows: number;
  fit: AnyFit | null;
  problem: ElxProblem | null;
}

export interface RollingWindows {
  layout: WindowLayout;
  windows: WindowFitResult[];
  xNames: string[];
  yName: string;
  /** Rows left out by intake (a blank, text or error cell in y, x or a role column such as time=). */
  leftOut: number;
  leftOutRows: RowList;
  /** Rows left out because their weight (weights=) is zero or negative. */
  leftOutWeight: number;
  /** The time column's name, when windows count periods. */
  timeName: string | null;
}

/** The window length in force: the argument, else window= in the options. */
export function windowLength(arg: unknown, o: Options): number {
  let v = arg;
  if (Array.isArray(v)) v = Array.isArray(v[0]) ? v[0][0] : v[0];
  if (v === null || v === undefined || v === "") {
    if (o.window !== null) return o.window;
    return fail("window is missing: give the number of rows per window (or, with time=, of periods), for example 52");
  }
  const w = typeof v === "number" ? v : typeof v === "string" && /^\s*\d+\s*$/.test(v) ? Number(v) : NaN;
  if (!Number.isInteger(w) || w < 1) fail(`window=${String(v)} must be a whole number of rows (or, with time=, of periods), 1 or more, for example 52`);
  if (o.window !== null && o.window !== w) fail(`the window is given twice, as ${w} and as window=${o.window} in the options: keep one`);
  return w;
}

/** Whether positions idx are consecutive (windows of rows always are). */
function isRun(idx: Int32Array): boolean {
  const m = idx.length;
  return m > 0 && idx[m - 1] - idx[0] === m - 1;
}

/** The values of c at positions idx: a view of c when they are consecutive, else a gathered copy. */
function viewOrGather(c: Float64Array, idx: Int32Array): Float64Array {
  const m = idx.length;
  if (isRun(idx)) return c.subarray(idx[0], idx[0] + m);
  const out = new Float64Array(m);
  for (let i = 0; i < m; i++) out[i] = c[idx[i]];
  return out;
}

/**
 * Math.log of every usable row of y and of the regressors, once for all windows, when the form logs
 * them (the log of a value does not depend on the window; which columns a window logs, its zero
 * policy, binary columns and means are still decided in prepare() on the window's own rows).
 */
function logsOnce(raw: RawData, o: Options): Prelogged | null {
  const logY = estimatorOf(o).logsY && o.form.startsWith("log-");
  const logX = o.form.endsWith("-log");
  if (!logY && !logX) return null;
  const log = (c: Float64Array) => {
    const out = new Float64Array(c.length);
    for (let i = 0; i < c.length; i++) out[i] = Math.log(c[i]);
    return out;
  };
  return { y: logY ? log(raw.y) : null, x: raw.x.map((c) => (logX ? log(c) : null)) };
}

/**
 * The rows at positions idx of the raw data, as a separate call on those rows would read them.
 * @param views y and x as views of raw's columns where the rows are consecutive (only for prepare()
 *   with logs, which then never writes into them)
 */
function subsetRaw(raw: RawData, idx: Int32Array, views: boolean): RawData {
  const m = idx.length;
  // windows of rows are runs of consecutive positions: a plain copy (Float64Array.from with a
  // mapping function is many times slower than a loop or a slice)
  const run = isRun(idx);
  const pick = (c: Float64Array) => {
    if (run) return views ? c.subarray(idx[0], idx[0] + m) : c.slice(idx[0], idx[0] + m);
    const out = new Float64Array(m);
    for (let i = 0; i < m; i++) out[i] = c[idx[i]];
    return out;
  };
  const rowNumbers = run ? raw.rowNumbers.slice(idx[0], idx[0] + m) : new Int32Array(m);
  if (!run) for (let i = 0; i < m; i++) rowNumbers[i] = raw.rowNumbers[idx[i]];
  return {
    ...raw,
    y: pick(raw.y),
    x: raw.x.map(pick),
    rowNumbers,
    roles: subsetRoles(raw.roles, idx),
    leftOutBlank: 0,
    leftOutBlankRows: new RowList(),
    leftOutWeight: 0,
    leftOutWeightRows: new RowList(),
    numericTextRows: new RowList(),
    numericTextExample: null,
  };
}

/**
 * Lays out the windows and fits each one.
 * @param length rows (or periods) per window
 */
export function fitWindows(y: unknown, x: unknown, length: number, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): RollingWindows {
  const raw = readYX(y, x, yOrigin, xOrigin, o);
  // The coefficients of a window: the regressors, one indicator per factor value but the first,
  // and the intercept (not with fixed effects). Counted from the raw columns, so that the windows'
  // rows are prepared once each and the whole data not at all.
  const indicators = raw.roles.factors.reduce((sum, f) => sum + Math.max(0, f.labels.length - 1), 0);
  const k = raw.xNames.length + indicators + (o.intercept && o.absorb.length === 0 ? 1 : 0);
  const spec = { window: length, step: o.step, expanding: o.expanding };
  const time = raw.roles.time;
  const layout = time
    ? periodWindows(periodsOfKey(time, raw.rowNumbers, raw.roles.panel), spec, k)
    : rowWindows(raw.rowNumbers, spec, k);
  const build = estimatorOf(o).build;
  const logs = logsOnce(raw, o);
  const windows = layout.windows.map((window): WindowFitResult => {
    const rows = window.rows.length;
    try {
      if (rows === 0) fail("no usable row in these periods");
      const part = (c: Float64Array | null) => (c ? viewOrGather(c, window.rows) : null);
      const windowLogs = logs ? { y: part(logs.y), x: logs.x.map(part) } : null;
      const data = prepare(subsetRaw(raw, window.rows, windowLogs !== null), o, windowLogs);
      return { window, rows, fit: build(data, o) as AnyFit, problem: null };
    } catch (e) {
      if (!(e instanceof ElxProblem)) throw e;
      return { window, rows, fit: null, problem: e };
    }
  });
  return {
    layout, windows, xNames: raw.xNames, yName: raw.yName, leftOut: raw.leftOutBlank, leftOutRows: raw.leftOutBlankRows,
    leftOutWeight: raw.leftOutWeight, timeName: time ? time.name : null,
  };
}

const windowCache = new BoundedCache<RollingWindows & Sized>(8, 20_000_000);

/** The fitted windows for these cells and options, from the cache when seen before. */
export function getWindows(y: unknown, x: unknown, length: number, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): RollingWindows {
  const p = (q: Origin | null) => (q ? `${q.row},${q.column}` : "-");
  const key = [hashCells(y, 1), hashCells(x, 2), modelKey(o), length, o.step, o.expanding, p(yOrigin), p(xOrigin)].join("/");
  const hit = windowCache.get(key);
  if (hit) return hit;
  const r = fitWindows(y, x, length, o, yOrigin, xOrigin);
  const size = r.windows.reduce((s, e) => s + (e.fit ? e.fit.n * (e.fit.k + 6) : 1), 0);
  windowCache.set(key, { ...r, size });
  return r;
}
