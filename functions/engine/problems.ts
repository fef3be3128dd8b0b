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

/** Lists at most `max` row numbers, then "and N more". */
export function listRows(rows: readonly number[], max = 8): string {
  if (rows.length <= max) return rows.join(", ");
  return `${rows.slice(0, max).join(", ")} and ${rows.length - max} more`;
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
  const w = word.toLowerCase();
  for (const c of candidates) {
    const d = editDistance(w, c.toLowerCase());
    if (d < bestD) {
      bestD = d;
      best = c;
    }
  }
  return best;
}

/** "row 6" or "rows 6, 7 and 3 more". */
export function rowsPhrase(rows: readonly number[], max = 8): string {
  return `${rows.length === 1 ? "row" : "rows"} ${listRows(rows, max)}`;
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
