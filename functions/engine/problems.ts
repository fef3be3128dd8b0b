/**
 * Problems: the one way the engine reports data it cannot use.
 *
 * The engine throws an `ElxProblem` for anything the analyst must fix (wrong shapes, zeros under a log,
 * collinear columns, unknown options). The cell layer turns it into the host's error value with the
 * message; the pane turns it into a sentence. A genuine bug is any other exception, which the cell
 * layer still catches and reports as an internal error, so nothing reaches the host uncaught.
 *
 * Message style: lower-case start is not required (messages are read in a cell's error flag), but each
 * message says what is wrong and what to do, in the analyst's words, and names columns and rows.
 */

/** `value` shows as #VALUE! (bad input), `na` as #N/A (a result that does not exist for these data). */
export type ProblemKind = "value" | "na";

export class ElxProblem extends Error {
  readonly kind: ProblemKind;
  constructor(message: string, kind: ProblemKind = "value") {
    super(message);
    this.kind = kind;
    this.name = "ElxProblem";
  }
}

/** Throws a #VALUE! problem. */
export function fail(message: string): never {
  throw new ElxProblem(message, "value");
}

/** Throws a #N/A problem. */
export function unavailable(message: string): never {
  throw new ElxProblem(message, "na");
}

/** How many runs of consecutive rows a RowList keeps; its count stays exact beyond them. */
const KEEP_RUNS = 1000;

/** A RowList as plain data: runs start…end and the exact number of rows. */
export interface RowRuns {
  starts: number[];
  ends: number[];
  total: number;
}

/**
 * Sheet rows in ascending order, kept as runs of consecutive rows (2–469 is one run), with an exact
 * count. At most KEEP_RUNS runs are stored, so a list over a million scattered rows stays small; the
 * count and the phrase ("and 450 more rows") stay exact.
 */
export class RowList {
  private readonly starts: number[] = [];
  private readonly ends: number[] = [];
  private total = 0;

  /** Adds a row; rows must come in ascending order. */
  add(row: number): void {
    const n = this.ends.length;
    if (n > 0 && this.ends[n - 1] === row - 1) this.ends[n - 1] = row;
    else if (n < KEEP_RUNS) {
      this.starts.push(row);
      this.ends.push(row);
    }
    this.total++;
  }

  /** How many rows were added (exact). */
  get count(): number {
    return this.total;
  }

  /** The first row, or null when empty. */
  get first(): number | null {
    return this.starts.length > 0 ? this.starts[0] : null;
  }

  /** The first `max` rows (fewer when the list is shorter), in order. */
  firstRows(max: number): number[] {
    const out: number[] = [];
    for (let r = 0; r < this.starts.length && out.length < max; r++) {
      for (let v = this.starts[r]; v <= this.ends[r] && out.length < max; v++) out.push(v);
    }
    return out;
  }

  /** The list as plain data (runs and exact count), to send between threads; see fromRuns. */
  toRuns(): RowRuns {
    return { starts: this.starts.slice(), ends: this.ends.slice(), total: this.total };
  }

  /**
   * The union of lists sent as runs (each over its own rows: no row in two of them), in ascending
   * order, adjacent runs joined, at most KEEP_RUNS runs kept; the count is the exact sum.
   */
  static fromRuns(lists: readonly RowRuns[]): RowList {
    const l = new RowList();
    const runs: [number, number][] = [];
    for (const r of lists) {
      for (let i = 0; i < r.starts.length; i++) runs.push([r.starts[i], r.ends[i]]);
      l.total += r.total;
    }
    runs.sort((a, b) => a[0] - b[0]);
    for (const [a, b] of runs) {
      const n = l.ends.length;
      if (n > 0 && l.ends[n - 1] >= a - 1) l.ends[n - 1] = Math.max(l.ends[n - 1], b);
      else if (n < KEEP_RUNS) {
        l.starts.push(a);
        l.ends.push(b);
      }
    }
    return l;
  }

  /** A list of rows given in any order (duplicates counted once). */
  static of(rows: readonly number[]): RowList {
    const l = new RowList();
    const sorted = Float64Array.from(rows).sort();
    for (let i = 0; i < sorted.length; i++) if (i === 0 || sorted[i] !== sorted[i - 1]) l.add(sorted[i]);
    return l;
  }

  /**
   * The rows as words: "row 6", "rows 3, 4 and 9", "rows 2–5, 9 and 12–20", "rows 2–5, 9, 12–20 and
   * 450 more rows" (at most `max` runs shown, the rest counted exactly), or, when `outOf` (the number
   * of rows there are) equals the count, "all 468 rows" with their range when they are consecutive.
   */
  phrase(max = 8, outOf?: number): string {
    const n = this.total;
    if (n === 0) return "no row";
    if (outOf !== undefined && n === outOf && n > 1) {
      return this.starts.length === 1 ? `all ${n} rows (${this.starts[0]}–${this.ends[0]})` : `all ${n} rows`;
    }
    const parts: string[] = [];
    let shown = 0;
    for (let r = 0; r < this.starts.length && parts.length < max; r++) {
      const a = this.starts[r];
      const b = this.ends[r];
      if (b === a) parts.push(String(a));
      else if (b === a + 1) parts.push(`${a}, ${b}`);
      else parts.push(`${a}–${b}`);
      shown += b - a + 1;
    }
    const rest = n - shown;
    const list = rest > 0
      ? `${parts.join(", ")} and ${count(rest, "more row")}`
      : parts.length === 1 ? parts[0] : `${parts.slice(0, -1).join(", ")} and ${parts[parts.length - 1]}`;
    return `${n === 1 ? "row" : "rows"} ${list}`;
  }
}

/** Lists the rows as words (see RowList.phrase), without the leading "row"/"rows". */
export function listRows(rows: readonly number[] | RowList, max = 8): string {
  return rowsPhrase(rows, max).replace(/^rows? /, "");
}

/** Levenshtein distance, for "did you mean" suggestions. */
export function editDistance(a: string, b: string): number {
  const m = a.length;
  const n = b.length;
  let prev = new Array<number>(n + 1);
  let cur = new Array<number>(n + 1);
  for (let j = 0; j <= n; j++) prev[j] = j;
  for (let i = 1; i <= m; i++) {
    cur[0] = i;
    for (let j = 1; j <= n; j++) {
      const cost = a[i - 1] === b[j - 1] ? 0 : 1;
      cur[j] = Math.min(prev[j] + 1, cur[j - 1] + 1, prev[j - 1] + cost);
    }
    [prev, cur] = [cur, prev];
  }
  return prev[n];
}

/** The candidate nearest to `word` (case-insensitive), for a "did you mean" hint. */
export function nearest(word: string, candidates: readonly string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  // A suggestion is for a slip of a few letters: a long input is compared by its start only.
  const w = word.slice(0, 100).toLowerCase();
  for (const c of candidates) {
    const d = editDistance(w, c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return best;
}

/** "row 6", "rows 6, 7 and 12–20", "rows 2–9, 14 and 3 more rows", "all 468 rows (2–469)": see RowList.phrase. */
export function rowsPhrase(rows: readonly number[] | RowList, max = 8, outOf?: number): string {
  return (rows instanceof RowList ? rows : RowList.of(rows)).phrase(max, outOf);
}

/** Quotes text typed by the analyst for a message, cut to `max` characters with "…". */
export function quote(text: string, max = 60): string {
  const t = text.length > max ? `${text.slice(0, max - 1)}…` : text;
  return `"${t}"`;
}

/** Text typed by the analyst, cut to `max` characters with "…" (no quotes). */
export function cut(text: string, max = 60): string {
  return text.length > max ? `${text.slice(0, max - 1)}…` : text;
}

/** Plural helper: "1 row", "3 rows". */
export function count(n: number, singular: string, plural = `${singular}s`): string {
  return `${n} ${n === 1 ? singular : plural}`;
}

/**
 * The most multiply–adds one cell function may spend in a single synchronous call: about 5 s at the
 * 1.3 ns per multiply–add measured on a 2-core machine (the benchmark), the time after which a
 * desktop host restarts add-ins that do not answer. Larger requests are refused with a way out.
 */
export const MAX_SYNC_WORK = 4e9;

/** Refuses work that would block the host too long; `what` names it, `instead` says what to do. */
export function requireFeasible(work: number, what: string, instead: string): void {
  if (work > MAX_SYNC_WORK) {
    fail(`${what} needs about ${(work / 1e9).toFixed(1)} billion operations, which would freeze the spreadsheet for several seconds or more: ${instead}`);
  }
}
