/**
 * Transforms: the four functional forms, binary columns, `levels=`, and the zero policies.
 *
 * Under a log side every column is logged except binary 0/1 columns and those named in `levels=`.
 * A logged column with values ≤ 0 is handled by the zero policy: `stop` (an error that counts them
 * and names their rows), `drop` (leave out every row where any logged column is ≤ 0, counted),
 * `shift` (log(v + c) in that column only) or `ihs` (inverse hyperbolic sine, asinh, in that column
 * only). Columns are transformed in place; their means in original units are taken first, and
 * medians are recovered later from the transformed values (every transform here is increasing).
 *
 * Sources: Bellemare and Wichman (2020), "Elasticities and the inverse hyperbolic sine
 * transformation", Oxford Bulletin of Economics and Statistics 82(1), for asinh.
 */
import { fail, count, rowsPhrase, nearest } from "./problems";
import type { Options } from "./options";
import type { RawData } from "./intake";

export type Transform =
  | { kind: "level" }
  | { kind: "log" }
  | { kind: "shift"; c: number }
  | { kind: "asinh" };

export const LEVEL: Transform = { kind: "level" };
export const LOG: Transform = { kind: "log" };

/** The label shown in the Transform column. */
export function transformLabel(t: Transform): string {
  switch (t.kind) {
    case "level": return "level";
    case "log": return "log";
    case "shift": return `log(v+${t.c})`;
    case "asinh": return "asinh";
  }
}

/** g(v). */
export function apply(t: Transform, v: number): number {
  switch (t.kind) {
    case "level": return v;
    case "log": return Math.log(v);
    // log1p keeps digits when v is small relative to c
    case "shift": return Math.log(t.c) + Math.log1p(v / t.c);
    case "asinh": return Math.asinh(v);
  }
}

/** g⁻¹(u): back to original units. */
export function invert(t: Transform, u: number): number {
  switch (t.kind) {
    case "level": return u;
    case "log": return Math.exp(u);
    case "shift": return Math.exp(u) - t.c;
    case "asinh": return Math.sinh(u);
  }
}

/** v·g′(v), the factor that turns dg into a relative change of v. */
export function relativeSlope(t: Transform, v: number): number {
  switch (t.kind) {
    case "level": return v;
    case "log": return 1;
    case "shift": return v / (v + t.c);
    case "asinh": return v / Math.sqrt(v * v + 1);
  }
}

export function isLogLike(t: Transform): boolean {
  return t.kind !== "level";
}

/** Whether two columns hold the same values in every row (y included among the regressors). */
function sameValues(a: Float64Array, b: Float64Array): boolean {
  if (a.length < 2) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

function isBinary(col: Float64Array): boolean {
  for (let i = 0; i < col.length; i++) {
    const v = col[i];
    if (v !== 0 && v !== 1) return false;
  }
  return true;
}

/** Kahan–Babuška (Neumaier) sum, for means of long columns. */
export function stableSum(a: ArrayLike<number>): number {
  let s = 0;
  let c = 0;
  for (let i = 0; i < a.length; i++) {
    const v = a[i];
    const t = s + v;
    c += Math.abs(s) >= Math.abs(v) ? s - t + v : v - t + s;
    s = t;
  }
  return s + c;
}

export interface Dataset {
  yName: string;
  xNames: string[];
  /** Transformed y and x columns, used rows only. */
  y: Float64Array;
  x: Float64Array[];
  yTransform: Transform;
  xTransforms: Transform[];
  binary: boolean[];
  n: number;
  rowNumbers: Int32Array;
  leftOutBlank: number;
  leftOutBlankRows: number[];
  /** Rows left out under zeros=drop because a logged column was ≤ 0. */
  leftOutNonPositive: number;
  leftOutNonPositiveRows: number[];
  /** Means in original units, of the rows used. */
  yMean: number;
  xMeans: number[];
  /** How many values ≤ 0 the y column had among the rows read (before any drop). */
  yNonPositive: number;
  /** Zeros in y among the rows used (zeros=shift/ihs keep them; PPML keeps them). */
  yZerosUsed: number;
}

/** Resolves a term given by header name or 1-based column number; suggests the nearest name. */
export function resolveColumn(term: unknown, names: readonly string[], what = "term"): number {
  if (typeof term === "number") {
    if (Number.isInteger(term) && term >= 1 && term <= names.length) return term - 1;
    return fail(`${what} ${term} is not a column of x: give a number from 1 to ${names.length} or a header name (${names.join(", ")})`);
  }
  if (typeof term === "string" && term.trim() !== "") {
    const t = term.trim();
    const i = names.findIndex((n) => n.toLowerCase() === t.toLowerCase());
    if (i >= 0) return i;
    if (/^\d+$/.test(t)) return resolveColumn(Number(t), names, what);
    return fail(`${what} "${t}" is not a column of x; did you mean ${nearest(t, names)}? (columns: ${names.join(", ")})`);
  }
  return fail(`give the ${what} as a header name or a column number of x (${names.join(", ")})`);
}

interface NonPositive {
  zeros: number;
  negatives: number;
  rows: number[];
}

function nonPositive(col: Float64Array, rowNumbers: Int32Array): NonPositive {
  let zeros = 0;
  let negatives = 0;
  const rows: number[] = [];
  for (let i = 0; i < col.length; i++) {
    const v = col[i];
    if (v <= 0) {
      if (v === 0) zeros++;
      else negatives++;
      if (rows.length < 200) rows.push(rowNumbers[i]);
    }
  }
  return { zeros, negatives, rows };
}

function describeNonPositive(name: string, np: NonPositive): string {
  const parts: string[] = [];
  if (np.zeros > 0) parts.push(`${np.zeros} ${np.zeros === 1 ? "value that is zero or blank" : "values that are zero or blank"}`);
  if (np.negatives > 0) parts.push(`${count(np.negatives, "negative value")}`);
  return `${name} has ${parts.join(" and ")} (${rowsPhrase(np.rows)})`;
}

/**
 * Decides each column's transform, applies the zero policy and transforms in place.
 * @param raw the columns from intake (mutated: transformed and compacted)
 * @param o parsed options (form, levels, zeros, shift, estimator)
 */
export function prepare(raw: RawData, o: Options): Dataset {
  const k = raw.x.length;
  const ppml = o.estimator === "ppml";
  const logY = !ppml && o.form.startsWith("log-");
  const logX = o.form.endsWith("-log");
  raw.x.forEach((c, j) => {
    if (sameValues(c, raw.y)) {
      fail(`${raw.xNames[j]} (column ${j + 1} of x) holds the same values as y (${raw.yName}) in every row used: y cannot explain itself (the fit would be exact and its t-values meaningless); take the y column out of the x range`);
    }
  });
  const binary = raw.x.map(isBinary);
  const keepLevel = new Array<boolean>(k).fill(false);
  for (const t of o.levels) keepLevel[resolveColumn(t, raw.xNames, "levels= column")] = true;
  const logged = raw.x.map((_, j) => logX && !binary[j] && !keepLevel[j]);

  // Counts of values ≤ 0 in each column that a log would take.
  const yNp = nonPositive(raw.y, raw.rowNumbers);
  if (ppml && yNp.negatives > 0) {
    const rows: number[] = [];
    raw.y.forEach((v, i) => {
      if (v < 0 && rows.length < 200) rows.push(raw.rowNumbers[i]);
    });
    fail(`${raw.yName} has ${count(yNp.negatives, "negative value")} (${rowsPhrase(rows)}); PPML models a mean that cannot be negative: check the data`);
  }
  const npx = raw.x.map((c, j) => (logged[j] ? nonPositive(c, raw.rowNumbers) : null));
  const offenders: string[] = [];
  if (logY && yNp.rows.length > 0) offenders.push(describeNonPositive(raw.yName, yNp));
  npx.forEach((np, j) => {
    if (np && np.rows.length > 0) offenders.push(describeNonPositive(raw.xNames[j], np));
  });

  let y = raw.y;
  let x = raw.x;
  let rowNumbers = raw.rowNumbers;
  let dropped = 0;
  const droppedRows: number[] = [];
  const yT: Transform = logY ? LOG : LEVEL;
  const xT: Transform[] = logged.map((l) => (l ? LOG : LEVEL));
  let yTransform = yT;

  if (offenders.length > 0) {
    if (o.zeros === "stop") {
      const yHit = logY && yNp.rows.length > 0;
      const fixes = ["zeros=drop", "zeros=shift", "zeros=ihs"];
      if (yHit) fixes.push("estimator=ppml");
      fail(`${offenders.join("; ")}; a log cannot take them: use ${fixes.slice(0, -1).join(", ")} or ${fixes[fixes.length - 1]}${yHit ? "" : ", or keep the column in levels with levels="}`);
    }
    if (o.zeros === "drop") {
      const n0 = y.length;
      let w = 0;
      for (let i = 0; i < n0; i++) {
        let bad = logY && y[i] <= 0;
        for (let j = 0; j < k && !bad; j++) if (logged[j] && x[j][i] <= 0) bad = true;
        if (bad) {
          dropped++;
          if (droppedRows.length < 200) droppedRows.push(rowNumbers[i]);
          continue;
        }
        if (w !== i) {
          y[w] = y[i];
          for (let j = 0; j < k; j++) x[j][w] = x[j][i];
          rowNumbers[w] = rowNumbers[i];
        }
        w++;
      }
      y = y.subarray(0, w);
      x = x.map((c) => c.subarray(0, w));
      rowNumbers = rowNumbers.subarray(0, w);
      if (w === 0) fail(`every row has a zero, blank or negative value in a column to be logged (${offenders.join("; ")}); nothing is left to fit: use zeros=shift, zeros=ihs or estimator=ppml`);
    } else {
      // shift or ihs: only in the logged columns that contain a value ≤ 0.
      const replace = (name: string, col: Float64Array): Transform => {
        if (o.zeros === "ihs") return { kind: "asinh" };
        const c = o.shift;
        for (let i = 0; i < col.length; i++) {
          if (col[i] + c <= 0) fail(`${name} has values at or below −${c} (row ${rowNumbers[i]}), so log(v + ${c}) cannot take them: use a larger shift= or zeros=ihs`);
        }
        return { kind: "shift", c };
      };
      if (logY && yNp.rows.length > 0) yTransform = replace(raw.yName, y);
      npx.forEach((np, j) => {
        if (np && np.rows.length > 0) xT[j] = replace(raw.xNames[j], x[j]);
      });
    }
  }

  const n = y.length;
  const yMean = stableSum(y) / n;
  const xMeans = x.map((c) => stableSum(c) / n);
  let yZerosUsed = 0;
  for (let i = 0; i < n; i++) if (y[i] === 0) yZerosUsed++;
  if (yTransform.kind !== "level") transformInPlace(y, yTransform);
  x.forEach((c, j) => {
    if (xT[j].kind !== "level") transformInPlace(c, xT[j]);
  });
  return {
    yName: raw.yName,
    xNames: raw.xNames,
    y,
    x,
    yTransform,
    xTransforms: xT,
    binary,
    n,
    rowNumbers,
    leftOutBlank: raw.leftOutBlank,
    leftOutBlankRows: raw.leftOutBlankRows,
    leftOutNonPositive: dropped,
    leftOutNonPositiveRows: droppedRows,
    yMean,
    xMeans,
    yNonPositive: yNp.zeros + yNp.negatives,
    yZerosUsed,
  };
}

function transformInPlace(col: Float64Array, t: Transform): void {
  if (t.kind === "log") {
    for (let i = 0; i < col.length; i++) col[i] = Math.log(col[i]);
  } else {
    for (let i = 0; i < col.length; i++) col[i] = apply(t, col[i]);
  }
}

/**
 * Median in original units of a transformed column (transforms are increasing, so the order
 * statistics carry over; for an even count the two middle values are averaged in original units).
 */
export function originalMedian(col: Float64Array, t: Transform): number {
  const s = Float64Array.from(col).sort();
  const n = s.length;
  const mid = n >> 1;
  if (n % 2 === 1) return invert(t, s[mid]);
  return (invert(t, s[mid - 1]) + invert(t, s[mid])) / 2;
}
