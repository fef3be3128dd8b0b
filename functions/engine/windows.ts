/**
 * Windows over the data and periods of a time column, for rolling fits and break tests.
 *
 * Rolling windows: `window` consecutive usable rows (or, with a time column, `window` consecutive
 * periods), moved on by `step`; with `expanding` the start stays at the first row and the end moves
 * on by `step`. Windows end where the data end: the last rows are reached only when the step fits
 * (the layout counts the rows no window reaches). Every window is fitted afresh, exactly as a
 * separate fit on its rows alone (leastSquares and the covariance functions on those rows; HAC lags
 * default from the window's own row count), so a window's numbers never depend on the others.
 *
 * Periods: numbers sort ascending; text keeps the order of first appearance in the sheet. A period
 * is a set of rows chosen by value, wherever they stand; inside a window, rows keep sheet order.
 * The rows of one series (the whole sheet, or one unit of a panel) must run in period order: a row
 * whose period comes before an earlier row's of the same series is refused, because it is almost
 * always a sort mistake (text periods sorted newest first would otherwise run backwards in time)
 * and order-dependent errors (HAC) would mix times. Rows with a blank period are left out and
 * counted, as with every role column.
 */
import { mapped, mappedInt } from "./blocks";
import { leastSquares, type Dependency } from "./leastSquares";
import { classicalCovariance, defaultLags, hacCovariance, hcCovariance, leastSquaresInput, originalUnits } from "./covariance";
import { ElxProblem, count, fail } from "./problems";
import type { BreakCovariance } from "./breaks";
import type { KeyColumn } from "./intake";

export interface WindowSpec {
  /** Rows (or periods) per window; with expanding, of the first window. */
  window: number;
  /** Rows (or periods) the window moves on by. */
  step: number;
  expanding: boolean;
}

export interface Window {
  /** Positions (0-based, into the rows given) of the window's rows, in sheet order. */
  rows: Int32Array;
  /** First and last period (with a time column) or sheet row of the window. */
  from: string | number;
  to: string | number;
}

export interface WindowLayout {
  unit: "rows" | "periods";
  windows: Window[];
  /** The ordering rule, in words, for the output. */
  order: string;
  /** Rows (rows layout) or periods (periods layout) after the last window that no window reaches. */
  notReached: number;
  /** Sheet rows left out because their period is blank. */
  blankTime: number[];
}

function wholeAtLeast(v: number, min: number): boolean {
  return Number.isInteger(v) && v >= min;
}

function checkSpec(spec: WindowSpec, length: number, unit: string, unitPlural: string, units: string): void {
  if (!wholeAtLeast(spec.window, 1)) fail(`window=${spec.window} must be a whole number of ${units} (1 or more)`);
  if (!wholeAtLeast(spec.step, 1)) fail(`step=${spec.step} must be a whole number of ${units} (1 or more)`);
  if (spec.window > length) fail(`window=${spec.window} is longer than the data, which have ${count(length, unit, unitPlural)}: use window=${length} or less`);
}

/** Window starts and ends (end exclusive) over `length` units. */
function spans(spec: WindowSpec, length: number): { spans: [number, number][]; notReached: number } {
  const out: [number, number][] = [];
  if (spec.expanding) {
    for (let end = spec.window; end <= length; end += spec.step) out.push([0, end]);
  } else {
    for (let start = 0; start + spec.window <= length; start += spec.step) out.push([start, start + spec.window]);
  }
  return { spans: out, notReached: length - out[out.length - 1][1] };
}

/**
 * Windows of consecutive usable rows.
 * @param rowNumbers sheet row of each usable row (From and To show them)
 * @param k coefficients per fit (the intercept counts): a window must have more rows
 */
export function rowWindows(rowNumbers: Int32Array, spec: WindowSpec, k: number): WindowLayout {
  const n = rowNumbers.length;
  checkSpec(spec, n, "usable row", "usable rows", "rows");
  if (spec.window <= k) fail(`window=${spec.window} is too short for ${k} coefficients (the intercept counts): each window needs at least ${k + 1} rows`);
  const { spans: s, notReached } = spans(spec, n);
  const windows = s.map(([a, b]): Window => {
    const rows = new Int32Array(b - a);
    for (let i = 0; i < rows.length; i++) rows[i] = a + i;
    return { rows, from: rowNumbers[a], to: rowNumbers[b - 1] };
  });
  return { unit: "rows", windows, order: "consecutive usable rows in sheet order", notReached, blankTime: [] };
}

/** The periods of a time column. */
export interface Periods {
  name: string;
  /** Period index of each row (0-based, in period order); −1 for a blank period. */
  rank: Int32Array;
  /** The periods in order (numbers ascending, text in first-appearance order). */
  labels: (string | number)[];
  numeric: boolean;
  /** The ordering rule in words. */
  order: string;
  /** Sheet rows whose period is blank (left out). */
  blankRows: number[];
}

function periodValue(v: unknown): string | number | null {
  if (v === null || v === undefined) return null;
  if (typeof v === "number") return Number.isFinite(v) ? v : null;
  if (typeof v === "string") return v.trim() === "" ? null : v.trim();
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  if (typeof v === "object") {
    const basic = (v as { basicValue?: unknown }).basicValue;
    if (basic !== undefined && typeof basic !== "object") return periodValue(basic);
  }
  return null; // error cells: no period
}

function unitText(v: unknown): string {
  const p = periodValue(v);
  return p === null ? "" : String(p);
}

/**
 * Reads a time column: one value per row (aligned with rowNumbers).
 * @param units the panel's unit of each row, or null for one series
 */
export function readPeriods(values: readonly unknown[], rowNumbers: Int32Array, name: string, units: readonly unknown[] | null = null): Periods {
  const n = values.length;
  const vals = values.map(periodValue);
  const blankRows: number[] = [];
  let firstNumber = -1;
  let firstText = -1;
  vals.forEach((v, i) => {
    if (v === null) blankRows.push(rowNumbers[i]);
    else if (typeof v === "number") {
      if (firstNumber < 0) firstNumber = i;
    } else if (firstText < 0) firstText = i;
  });
  if (firstNumber < 0 && firstText < 0) fail(`${name} is blank in every row: give each row its period (week number, month, quarter)`);
  if (firstNumber >= 0 && firstText >= 0) {
    fail(`${name} mixes numbers (sheet row ${rowNumbers[firstNumber]}: ${vals[firstNumber]}) and text (sheet row ${rowNumbers[firstText]}: "${vals[firstText]}"): give every period as a number or every period as text`);
  }
  const numeric = firstNumber >= 0;
  let labels: (string | number)[];
  const index = new Map<string | number, number>();
  if (numeric) {
    labels = [...new Set(vals.filter((v): v is number => v !== null) as number[])].sort((a, b) => a - b);
  } else {
    labels = [];
    for (const v of vals) if (v !== null && !index.has(v)) {
      index.set(v, labels.length);
      labels.push(v);
    }
  }
  if (numeric) labels.forEach((l, i) => index.set(l, i));
  const rank = new Int32Array(n);
  for (let i = 0; i < n; i++) rank[i] = vals[i] === null ? -1 : (index.get(vals[i] as string | number) as number);
  const order = orderRule(name, numeric);
  checkPeriodOrder(name, rank, (i) => vals[i] as string | number, rowNumbers, units ? (i) => unitText(units[i]) : null, numeric);
  return { name, rank, labels, numeric, order, blankRows };
}

function orderRule(name: string, numeric: boolean): string {
  return numeric ? `periods of ${name} in ascending order of their values` : `periods of ${name} in the order they first appear in the sheet`;
}

/** Refuses a series (the whole sheet, or one unit) whose rows go back in period order. */
function checkPeriodOrder(name: string, rank: Int32Array, value: (i: number) => string | number, rowNumbers: Int32Array, unitOf: ((i: number) => string) | null, numeric: boolean): void {
  const n = rank.length;
  const last = new Map<string, number>();
  for (let i = 0; i < n; i++) {
    if (rank[i] < 0) continue;
    const u = unitOf ? unitOf(i) : "";
    const p = last.get(u);
    if (p !== undefined && rank[i] < rank[p]) {
      const where = unitOf ? ` within ${u === "" ? "the rows with a blank unit" : `unit ${u}`}` : "";
      fail(`${name} is not in time order${where}: sheet row ${rowNumbers[i]} (${value(i)}) comes after sheet row ${rowNumbers[p]} (${value(p)}). ` +
        `Periods count ${numeric ? "in ascending order of their values" : "in the order they first appear in the sheet"}, and each series' rows must follow that order: ` +
        `sort the rows by ${name}${numeric ? " (smallest first)" : " (oldest first)"}${unitOf ? "" : ", or, for several stores or products, name the unit column in panel="}`);
    }
    last.set(u, i);
  }
}

/**
 * The periods of a time column as intake reads it (a key column over the rows used: codes in
 * ascending order of the numbers when every key is a number, else in first-appearance order), with
 * the same order rule as readPeriods. Blank periods never reach here: intake leaves those rows out
 * and counts them.
 * @param panel the unit of each row (panel=), or null for one series
 */
export function periodsOfKey(time: KeyColumn, rowNumbers: Int32Array, panel: KeyColumn | null): Periods {
  const labels: (string | number)[] = time.numericOrder ? time.labels.map(Number) : time.labels.slice();
  const rank = Int32Array.from(time.codes);
  checkPeriodOrder(time.name, rank, (i) => labels[rank[i]], rowNumbers, panel ? (i) => panel.labels[panel.codes[i]] : null, time.numericOrder);
  return { name: time.name, rank, labels, numeric: time.numericOrder, order: orderRule(time.name, time.numericOrder), blankRows: [] };
}

/**
 * Windows of `window` consecutive periods.
 * @param k coefficients per fit: a window with k rows or fewer shows why when fitted; if no window
 *   has more, the layout is refused
 */
export function periodWindows(periods: Periods, spec: WindowSpec, k: number): WindowLayout {
  const P = periods.labels.length;
  checkSpec(spec, P, `period of ${periods.name}`, `periods of ${periods.name}`, "periods");
  const { spans: s, notReached } = spans(spec, P);
  const n = periods.rank.length;
  const rank = periods.rank;
  let most = 0;
  const windows = s.map(([a, b]): Window => {
    let m = 0;
    for (let i = 0; i < n; i++) if (rank[i] >= a && rank[i] < b) m++;
    const rows = new Int32Array(m);
    m = 0;
    for (let i = 0; i < n; i++) if (rank[i] >= a && rank[i] < b) rows[m++] = i;
    most = Math.max(most, m);
    return { rows, from: periods.labels[a], to: periods.labels[b - 1] };
  });
  if (most <= k) fail(`window=${spec.window} periods of ${periods.name} hold at most ${count(most, "row")}, too few for ${k} coefficients (the intercept counts): use a longer window (each needs at least ${k + 1} rows)`);
  return { unit: "periods", windows, order: periods.order, notReached, blankTime: periods.blankRows };
}

export interface WindowOutcome<T> {
  window: Window;
  value: T | null;
  problem: ElxProblem | null;
}

/** Runs `fit` on every window; a window that cannot be fitted keeps its problem and the others still come. */
export function eachWindow<T>(layout: WindowLayout, fit: (w: Window) => T): WindowOutcome<T>[] {
  return layout.windows.map((window) => {
    try {
      return { window, value: fit(window), problem: null };
    } catch (e) {
      if (!(e instanceof ElxProblem)) throw e;
      return { window, value: null, problem: e };
    }
  });
}

export interface WindowFit {
  n: number;
  coef: Float64Array;
  se: Float64Array;
  rss: number;
  /** "HC3", "HAC, 4 lags". */
  label: string;
}

/**
 * Least squares and standard errors on the rows of one window, exactly as a fit on those rows alone.
 * @param X design columns (the intercept, when wanted, a column of ones); names one per column
 * @param lags HAC lags (null: floor(4(m/100)^(2/9)) of the window's m rows)
 */
export function fitRows(X: Float64Array[], y: Float64Array, names: string[], rowNumbers: Int32Array, rows: Int32Array, covariance: BreakCovariance, lags: number | null = null): WindowFit {
  const m = rows.length;
  const contiguous = m > 0 && rows[m - 1] - rows[0] === m - 1;
  const pick = (c: Float64Array) => (contiguous ? c.slice(rows[0], rows[0] + m) : mapped(rows, (i) => c[i]));
  const Xw = X.map(pick);
  const yw = pick(y);
  const rn = contiguous ? rowNumbers.slice(rows[0], rows[0] + m) : mappedInt(rows, (i) => rowNumbers[i]);
  const k = X.length;
  if (m <= k) fail(`${count(m, "usable row")} in this window ${m === 1 ? "is" : "are"} too few for ${k} coefficients (the intercept counts): need at least ${k + 1}`);
  const ls = leastSquares(Xw, yw);
  if (!ls.qr) {
    const d = ls.dependent as Dependency;
    const name = names[d.column];
    if (d.on.length === 0) return fail(`${name} is zero in every row of this window: the window cannot estimate it`);
    const on = d.on.map((i) => names[i]);
    const list = on.length === 1 ? on[0] : `${on.slice(0, -1).join(", ")} and ${on[on.length - 1]}`;
    return fail(`${name} is an exact linear combination of ${list} in this window (for example, it does not vary there): the window cannot estimate it; use a longer window`);
  }
  const qr = ls.qr;
  const input = leastSquaresInput(Xw, qr, rn);
  let W: Float64Array;
  let label: string = covariance;
  if (covariance === "classical") W = classicalCovariance(input);
  else if (covariance === "HAC") {
    const L = lags ?? defaultLags(m);
    W = hacCovariance(input, L);
    label = `HAC, ${L} lag${L === 1 ? "" : "s"}`;
  } else W = hcCovariance(input, covariance, null).V;
  const V = originalUnits(W, qr.scale, 1);
  const se = new Float64Array(k);
  for (let j = 0; j < k; j++) se[j] = Math.sqrt(Math.max(0, V[j * k + j]));
  return { n: m, coef: qr.coef, se, rss: qr.rss, label };
}

/**
 * Where a break falls when it is given as a period, and the rows in period order.
 * The rows are put in period order (stable: within a period, sheet order), so that the second
 * regime is a tail of that order; breaks can only fall between periods.
 * @param at the first period of the second regime; null: the last period
 * @returns order: positions of the rows with a period, in period order; point: rows before the
 *   break in that order; allowed[p] = 1 where a break after p rows falls between two periods
 */
export function breakByPeriod(periods: Periods, at: unknown): { order: Int32Array; point: number; allowed: Uint8Array; atLabel: string | number } {
  const P = periods.labels.length;
  const rank = periods.rank;
  const counts = new Int32Array(P + 1);
  for (let i = 0; i < rank.length; i++) if (rank[i] >= 0) counts[rank[i] + 1]++;
  for (let p = 0; p < P; p++) counts[p + 1] += counts[p];
  const used = counts[P];
  const order = new Int32Array(used);
  const next = counts.slice(0, P);
  for (let i = 0; i < rank.length; i++) if (rank[i] >= 0) order[next[rank[i]]++] = i;
  let r: number;
  if (at === null || at === undefined || at === "") r = P - 1;
  else {
    const v = periodValue(at);
    let want: string | number | null = v;
    if (periods.numeric && typeof v === "string" && v.trim() !== "" && Number.isFinite(Number(v))) want = Number(v);
    if (!periods.numeric && typeof v === "number") want = String(v);
    r = want === null ? -1 : periods.labels.indexOf(want);
    if (r < 0) {
      const first = periods.labels[0];
      const lastLabel = periods.labels[P - 1];
      fail(`at=${v === null ? "(blank)" : v} is not a period of ${periods.name}: give the first period of the second regime, one of ${periods.labels.length} periods from ${first} to ${lastLabel}`);
    }
    if (r === 0) fail(`at=${v} is the first period of ${periods.name}, which leaves no rows before the break: give a later period`);
  }
  if (P < 2) fail(`${periods.name} has only one period, so no break between periods can be tested`);
  const allowed = new Uint8Array(used + 1);
  for (let p = 1; p < P; p++) allowed[counts[p]] = 1;
  return { order, point: counts[r], allowed, atLabel: periods.labels[r] };
}

/** The 0-based break point for `at` given as a 1-based usable row (the first row of the second regime). */
export function breakByRow(at: number, n: number): number {
  if (!Number.isInteger(at) || at < 2 || at > n) {
    fail(`at=${at} is outside the data: give the row (2 to ${n}, counting usable rows from 1) where the second regime starts`);
  }
  return at - 1;
}
