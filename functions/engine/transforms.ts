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
import { mapped, mappedInt } from "./blocks";
import { kernel, type ColumnFacts } from "./kernel";
import { cut, fail, count, quote, rowsPhrase, nearest, RowList } from "./problems";
import type { Options } from "./options";
import { subsetRoles, type RawData, type RoleColumns } from "./intake";
import { estimatorOf } from "./estimators";
import { dropSingletons } from "./absorb";
import { leaveOut } from "./ppmlAbsorbed";

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

/** Kahan–Babuška (Neumaier) sum for means of long columns (the kernel's scan: over the even and the odd rows, then combined). */
export function stableSum(a: ArrayLike<number>): number {
  return kernel().scan(a instanceof Float64Array ? a : Float64Array.from(a)).sum;
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
  leftOutBlankRows: RowList;
  /** Of the rows left out, those with text that reads as a number ("7,49"), and the first such cell. */
  numericTextRows: RowList;
  numericTextExample: RawData["numericTextExample"];
  /** Names given to columns whose header cell was empty. */
  unnamed: string[];
  /** Rows left out under zeros=drop because a logged column was ≤ 0 (all of them). */
  leftOutNonPositive: number;
  leftOutNonPositiveRows: RowList;
  /** Of those, the rows with a negative value in a logged column (the rest had a zero or blank). */
  leftOutNegative: number;
  /** Means in original units, of the rows used. */
  yMean: number;
  xMeans: number[];
  /**
   * Facts of y and of each x column taken while it was transformed (max|v| and Σv²; null where the
   * column was not logged here): readers check that the facts' column is the one they read.
   */
  yFacts: ColumnFacts | null;
  xFacts: (ColumnFacts | null)[];
  /** How many values ≤ 0 the y column had among the rows read (before any drop), and of them how many < 0. */
  yNonPositive: number;
  yNegative: number;
  /** Zeros in y among the rows used (zeros=shift/ihs keep them; PPML keeps them). */
  yZerosUsed: number;
  /** The role columns over the rows used; instruments transformed as the x side. */
  roles: RoleColumns;
  instrumentTransforms: Transform[];
  /** Every column of the x range by name, and the index in x of each (−1: a role column). */
  columnNames: string[];
  regressorOf: Int32Array;
  /** Rows left out because their weight was zero or negative. */
  leftOutWeight: number;
  leftOutWeightRows: RowList;
  /** For each column of x, the factor column whose indicator it is (null for regressors). */
  factorOf: (string | null)[];
  /** Rows left out by absorb=: singletons, and (PPML) values whose y is zero in every row; those rows. */
  leftOutSingleton: number;
  leftOutAllZero: number;
  allZeroValues: number;
  leftOutAbsorbedRows: RowList;
}


/** A name as compared: ends trimmed, inner runs of white space as one space, any case. */
function nameKey(s: string): string {
  return s.trim().replace(/\s+/g, " ").toLowerCase();
}

/**
 * The column of `names` that `typed` names: equal after trimming and ignoring case and repeated
 * spaces ("Promo week" finds "Promo  Week"), else the one column equal with every space removed
 * ("Promoweek"), else -1.
 */
export function matchName(typed: string, names: readonly string[]): number {
  const t = nameKey(typed);
  const i = names.findIndex((n) => nameKey(n) === t);
  if (i >= 0) return i;
  const squash = (s: string) => s.replace(/\s+/g, "").toLowerCase();
  const hits = names.map((n, j) => (squash(n) === squash(typed) ? j : -1)).filter((j) => j >= 0);
  return hits.length === 1 ? hits[0] : -1;
}

/**
 * Resolves a term of a fit: a name in x (regressors and factor indicators such as "Region: North"),
 * or a 1-based column number of the x range; a role column is named as such.
 */
export function resolveTerm(term: unknown, data: Pick<Dataset, "xNames" | "columnNames" | "regressorOf" | "roles">, what = "term"): number {
  if (typeof term === "string" && term.trim() !== "") {
    const t = term.trim().toLowerCase();
    const i = data.xNames.findIndex((n) => n.toLowerCase() === t);
    if (i >= 0) return i;
  }
  if (data.columnNames.length === data.xNames.length && data.regressorOf.every((r, j) => r === j)) return resolveColumn(term, data.xNames, what);
  const c = resolveColumn(term, data.columnNames, what);
  const r = data.regressorOf[c];
  if (r >= 0) return r;
  const name = data.columnNames[c];
  const roles = data.roles;
  const isFactor = roles.factors.some((f) => f.name === name);
  if (isFactor) {
    const terms = data.xNames.filter((n) => n.startsWith(`${name}: `));
    return fail(`${name} is a factors= column: its terms are ${terms.join(", ")}; name one of them`);
  }
  return fail(`${name} is a role column (keys, weights or instruments), not a regressor; name a regressor (${data.xNames.join(", ")})`);
}

/** Resolves a term given by header name or 1-based column number; suggests the nearest name. */
export function resolveColumn(term: unknown, names: readonly string[], what = "term"): number {
  if (typeof term === "number") {
    if (Number.isInteger(term) && term >= 1 && term <= names.length) return term - 1;
    return fail(`${what} ${term} is not a column of x: give a number from 1 to ${names.length} or a header name (${names.map((n) => cut(n)).join(", ")})`);
  }
  if (typeof term === "string" && term.trim() !== "") {
    const t = term.trim();
    const i = matchName(t, names);
    if (i >= 0) return i;
    if (/^\d+$/.test(t)) return resolveColumn(Number(t), names, what);
    return fail(`${what} ${quote(t)} is not a column of x; did you mean ${cut(nearest(t, names) ?? "")}? (columns: ${names.map((n) => cut(n)).join(", ")})`);
  }
  return fail(`give the ${what} as a header name or a column number of x (${names.map((n) => cut(n)).join(", ")})`);
}

export interface NonPositive {
  zeros: number;
  negatives: number;
  zeroRows: RowList;
  negativeRows: RowList;
}

/** With the column's stableSum, taken in the same pass (its mean when no row is left out later). */
interface ColumnScan extends NonPositive {
  sum: number;
}

/** The zeros and negatives of a column, and its compensated sum (stableSum's), in one pass of the kernel when every value is above zero. */
function nonPositive(col: Float64Array, rowNumbers: Int32Array): ColumnScan {
  const np: ColumnScan = { zeros: 0, negatives: 0, zeroRows: new RowList(), negativeRows: new RowList(), sum: 0 };
  // the sum and the count in one pass of the kernel; the rows are listed only when some value is ≤ 0
  const quick = kernel().scan(col);
  np.sum = quick.sum;
  if (quick.low === 0) return np;
  for (let i = 0; i < col.length; i++) {
    const v = col[i];
    if (v <= 0) {
      if (v === 0) {
        np.zeros++;
        np.zeroRows.add(rowNumbers[i]);
      } else {
        np.negatives++;
        np.negativeRows.add(rowNumbers[i]);
      }
    }
  }
  return np;
}

/** "Price has 2 values that are zero or blank (rows 3, 4) and 1 negative value (row 7)". */
export function describeNonPositive(name: string, np: NonPositive): string {
  const parts: string[] = [];
  if (np.zeros > 0) parts.push(`${np.zeros === 1 ? "1 value that is zero or blank" : `${np.zeros} values that are zero or blank`} (${rowsPhrase(np.zeroRows)})`);
  if (np.negatives > 0) parts.push(`${count(np.negatives, "negative value")} (${rowsPhrase(np.negativeRows)})`);
  return `${name} has ${parts.join(" and ")}`;
}

/**
 * The advice for negative values under a log: a data error to check, not a case for zeros=shift.
 * @param yName y's name when y is among them (null otherwise)
 * @param also a choice to offer beside levels and zeros=drop when the values are real
 */
function negativeAdvice(names: string[], yName: string | null, o: Options, also = ""): string {
  const real: string[] = [];
  const xs = names.filter((n) => n !== yName);
  if (yName !== null) real.push(`model ${yName} in levels (form=level-${o.form.endsWith("-log") ? "log" : "level"})`);
  if (xs.length > 0) real.push(`keep ${xs.join(" and ")} in levels (levels=${xs.join(",")})`);
  if (also !== "") real.push(also);
  return `a negative ${names.join(" or ")} is usually a data error (a price, quantity or income below zero): check and correct those rows (zeros=shift is meant for zeros, not for them); if the negative values are real, ${real.join(", ")} or leave those rows out with zeros=drop (counted)`;
}

/**
 * Math.log of raw.y and of each column of raw.x (regressors, then instruments), row by row, computed
 * beforehand by a caller that prepares many subsets of the same cells (rolling windows). A null
 * entry is logged here. The values are the ones this function would compute itself; they are used
 * only where a column's transform is the plain log and no row was left out on the way. With them,
 * raw.y and raw.x may be views of the caller's columns: prepare() then reads them and writes only
 * into copies of its own.
 */
export interface Prelogged {
  y: Float64Array | null;
  x: (Float64Array | null)[];
}

/**
 * Decides each column's transform, applies the zero policy and transforms in place.
 * @param raw the columns from intake (mutated: transformed and compacted; with logs, y and x are
 *   left as they are)
 * @param o parsed options (form, levels, zeros, shift, estimator)
 * @param logs the same rows already logged, when the caller has them (see Prelogged)
 */
export function prepare(raw: RawData, o: Options, logs: Prelogged | null = null): Dataset {
  const info = estimatorOf(o);
  const logY = info.logsY && o.form.startsWith("log-");
  const logX = o.form.endsWith("-log");
  raw.x.forEach((c, j) => {
    if (sameValues(c, raw.y)) {
      fail(`${raw.xNames[j]} (column ${j + 1} of x) holds the same values as y (${raw.yName}) in every row used: y cannot explain itself (the fit would be exact and its t-values meaningless); take the y column out of the x range`);
    }
  });
  // Instruments take the x side's transform, so they join the regressors until the end.
  const kx = raw.x.length;
  const allX = [...raw.x, ...raw.roles.instruments];
  const allNames = [...raw.xNames, ...raw.roles.instrumentNames];
  const k = allX.length;
  const binary = allX.map(isBinary);
  const keepLevel = new Array<boolean>(k).fill(false);
  for (const t of o.levels) {
    const c = resolveColumn(t, raw.columnNames, "levels= column");
    const r = raw.regressorOf[c];
    const z = raw.roles.instrumentNames.indexOf(raw.columnNames[c]);
    if (r >= 0) keepLevel[r] = true;
    else if (z >= 0) keepLevel[kx + z] = true;
    else fail(`levels=${cut(String(t))}: ${cut(raw.columnNames[c])} is a key or weights column, which is never logged; name a regressor or an instrument`);
  }
  const logged = allX.map((_, j) => logX && !binary[j] && !keepLevel[j]);

  // Counts of values ≤ 0 in each column that a log would take, zeros and negatives apart.
  const yNp = nonPositive(raw.y, raw.rowNumbers);
  if (!info.negativeY && yNp.negatives > 0) {
    fail(`${raw.yName} has ${count(yNp.negatives, "negative value")} (${rowsPhrase(yNp.negativeRows)}); ${info.title} models a mean that cannot be negative, and a negative quantity is usually a data error: check and correct those rows`);
  }
  const npx = allX.map((c, j) => (logged[j] ? nonPositive(c, raw.rowNumbers) : null));
  const hit = (np: NonPositive | null) => np !== null && np.zeros + np.negatives > 0;
  const offenders: string[] = [];
  const zeroNames: string[] = [];
  const negativeNames: string[] = [];
  const yHit = logY && hit(yNp);
  if (yHit) {
    offenders.push(describeNonPositive(raw.yName, yNp));
    if (yNp.zeros > 0) zeroNames.push(raw.yName);
    if (yNp.negatives > 0) negativeNames.push(raw.yName);
  }
  npx.forEach((np, j) => {
    if (np === null || !hit(np)) return;
    offenders.push(describeNonPositive(allNames[j], np));
    if (np.zeros > 0) zeroNames.push(allNames[j]);
    if (np.negatives > 0) negativeNames.push(allNames[j]);
  });

  let y = raw.y;
  let x = allX;
  let rowNumbers = raw.rowNumbers;
  let roles = raw.roles;
  let dropped = 0;
  let droppedNegative = 0;
  const droppedRows = new RowList();
  const yT: Transform = logY ? LOG : LEVEL;
  const xT: Transform[] = logged.map((l) => (l ? LOG : LEVEL));
  let yTransform = yT;

  if (offenders.length > 0) {
    if (o.zeros === "stop") {
      const advice: string[] = [];
      if (zeroNames.length > 0) {
        const fixes = ["zeros=drop", "zeros=shift", "zeros=ihs"];
        const yZero = zeroNames.includes(raw.yName) && yHit;
        if (yZero) fixes.push("estimator=ppml");
        advice.push(`a log cannot take zero: use ${fixes.slice(0, -1).join(", ")} or ${fixes[fixes.length - 1]}${yZero ? "" : ", or keep the column in levels with levels="}`);
      }
      if (negativeNames.length > 0) advice.push(negativeAdvice(negativeNames, yHit && yNp.negatives > 0 ? raw.yName : null, o));
      fail(`${offenders.join("; ")}; ${advice.join("; ")}`);
    }
    if (o.zeros === "drop") {
      if (logs) {
        // raw's columns are the caller's: compact copies
        y = y.slice();
        x = x.map((c) => c.slice());
      }
      const n0 = y.length;
      const kept = new Int32Array(n0);
      let w = 0;
      for (let i = 0; i < n0; i++) {
        let bad = logY && y[i] <= 0;
        let negative = logY && y[i] < 0;
        for (let j = 0; j < k; j++) {
          if (logged[j] && x[j][i] <= 0) {
            bad = true;
            if (x[j][i] < 0) negative = true;
          }
        }
        if (bad) {
          dropped++;
          if (negative) droppedNegative++;
          droppedRows.add(rowNumbers[i]);
          continue;
        }
        if (w !== i) {
          y[w] = y[i];
          for (let j = 0; j < k; j++) x[j][w] = x[j][i];
          rowNumbers[w] = rowNumbers[i];
        }
        kept[w] = i;
        w++;
      }
      y = y.subarray(0, w);
      x = x.map((c) => c.subarray(0, w));
      rowNumbers = rowNumbers.subarray(0, w);
      if (w === 0) fail(`every row has a zero, blank or negative value in a column to be logged (${offenders.join("; ")}); nothing is left to fit: use zeros=shift, zeros=ihs or estimator=ppml`);
      roles = { ...subsetRoles({ ...roles, instruments: [] }, kept.subarray(0, w)), instruments: x.slice(kx), instrumentNames: roles.instrumentNames };
    } else {
      // shift or ihs: only in the logged columns that contain a value ≤ 0.
      const replace = (name: string, col: Float64Array, np: NonPositive, isY: boolean): Transform => {
        if (o.zeros === "ihs") return { kind: "asinh" };
        const c = o.shift;
        const below = new RowList();
        for (let i = 0; i < col.length; i++) if (col[i] + c <= 0) below.add(rowNumbers[i]);
        if (below.count > 0) {
          fail(`${name} has ${count(np.negatives, "negative value")} (${rowsPhrase(np.negativeRows)}), ${below.count === np.negatives ? `${np.negatives === 1 ? "" : "all "}at or below −${c}` : `${below.count} of them at or below −${c} (${rowsPhrase(below)})`}, which log(v + ${c}) cannot take; ${negativeAdvice([name], isY ? name : null, o, "use zeros=ihs")}`);
        }
        return { kind: "shift", c };
      };
      if (yHit) yTransform = replace(raw.yName, y, yNp, true);
      npx.forEach((np, j) => {
        if (np !== null && hit(np)) xT[j] = replace(allNames[j], x[j], np, false);
      });
    }
  }

  // Fixed effects: values seen in one row only (singletons) carry no information on the slopes, and
  // under PPML a value whose y is zero in every row has no finite effect: such rows are left out.
  let singletons = 0;
  let allZeroRows = 0;
  let allZeroValues = 0;
  const singletonRows = new RowList();
  if (roles.absorb.length > 0) {
    const codes = roles.absorb.map((c) => c.codes);
    const d = info.exponentialMean ? null : dropSingletons(codes);
    const r = d ? { keep: d.keep, zeroRows: 0, zeroValues: 0, singletons: d.dropped } : leaveOut(y, codes, null);
    const keep = r.keep;
    singletons = r.singletons;
    allZeroRows = r.zeroRows;
    allZeroValues = r.zeroValues;
    if (singletons + allZeroRows > 0) {
      const kept: number[] = [];
      for (let i = 0; i < keep.length; i++) {
        if (keep[i]) kept.push(i);
        else singletonRows.add(rowNumbers[i]);
      }
      if (kept.length === 0) {
        fail(`every value of ${roles.absorb.map((c) => c.name).join(" and ")} occurs in only one row${info.exponentialMean ? " or has y = 0 in every row" : ""}, so fixed effects leave nothing to estimate from: absorb a coarser column, or leave absorb= out`);
      }
      const pick = (c: Float64Array) => mapped(kept, (i) => c[i]);
      y = pick(y);
      x = x.map(pick);
      rowNumbers = mappedInt(kept, (i) => rowNumbers[i]);
      roles = { ...subsetRoles({ ...roles, instruments: [] }, kept), instruments: x.slice(kx), instrumentNames: roles.instrumentNames };
    }
  }

  const n = y.length;
  const wts = roles.weights;
  const mean = (c: Float64Array) => (wts ? weightedMean(c, wts) : stableSum(c) / n);
  // a column still raw's own has every row it was read with: its sum and zeros were counted above
  const yMean = !wts && y === raw.y ? yNp.sum / n : mean(y);
  const xMeans = x.slice(0, kx).map((c, j) => {
    const np = npx[j];
    return !wts && np !== null && c === allX[j] ? np.sum / n : mean(c);
  });
  let yZerosUsed = 0;
  if (y === raw.y) yZerosUsed = yNp.zeros;
  else for (let i = 0; i < n; i++) if (y[i] === 0) yZerosUsed++;
  // The caller's logs apply only while the rows are still raw's rows (nothing dropped or compacted),
  // and are used as given (a dataset's columns are only read after this); a column still raw's own
  // is then the caller's too, and is copied before it is transformed.
  const own = (c: Float64Array, original: Float64Array) => (logs && c === original ? c.slice() : c);
  const ly = logs && y === raw.y && yTransform.kind === "log" ? logs.y : null;
  let yFacts: ColumnFacts | null = null;
  if (ly) y = ly;
  else {
    y = own(y, raw.y);
    if (yTransform.kind !== "level") yFacts = transformInPlace(y, yTransform);
  }
  const facts: (ColumnFacts | null)[] = x.map(() => null);
  x = x.map((c, j) => {
    const lx = logs && c === allX[j] && xT[j].kind === "log" ? logs.x[j] ?? null : null;
    if (lx) return lx;
    const out = own(c, allX[j]);
    if (xT[j].kind !== "level") facts[j] = transformInPlace(out, xT[j]);
    return out;
  });
  const regressors = x.slice(0, kx);
  const xNames = raw.xNames.slice();
  const xTransforms = xT.slice(0, kx);
  const xBinary = binary.slice(0, kx);
  const factorOf: (string | null)[] = xNames.map(() => null);
  for (const f of roles.factors) {
    for (const ind of indicators(f.codes, f.labels, f.name)) {
      regressors.push(ind.column);
      xNames.push(ind.name);
      xTransforms.push(LEVEL);
      xBinary.push(true);
      xMeans.push(mean(ind.column));
      factorOf.push(f.name);
    }
  }
  return {
    yName: raw.yName,
    xNames,
    y,
    x: regressors,
    yTransform,
    xTransforms,
    binary: xBinary,
    n,
    rowNumbers,
    leftOutBlank: raw.leftOutBlank,
    leftOutBlankRows: raw.leftOutBlankRows,
    numericTextRows: raw.numericTextRows,
    numericTextExample: raw.numericTextExample,
    unnamed: raw.unnamed,
    leftOutNonPositive: dropped,
    leftOutNonPositiveRows: droppedRows,
    leftOutNegative: droppedNegative,
    yMean,
    xMeans,
    yFacts,
    xFacts: facts.slice(0, kx).concat(regressors.slice(kx).map(() => null)),
    yNonPositive: yNp.zeros + yNp.negatives,
    yNegative: yNp.negatives,
    yZerosUsed,
    roles: { ...roles, instruments: x.slice(kx) },
    instrumentTransforms: xT.slice(kx),
    columnNames: raw.columnNames,
    regressorOf: raw.regressorOf,
    leftOutWeight: raw.leftOutWeight,
    leftOutWeightRows: raw.leftOutWeightRows,
    factorOf,
    leftOutSingleton: singletons,
    leftOutAllZero: allZeroRows,
    allZeroValues,
    leftOutAbsorbedRows: singletonRows,
  };
}

/** Σ w v / Σ w with compensated sums. */
export function weightedMean(v: Float64Array, w: Float64Array): number {
  const p = new Float64Array(v.length);
  for (let i = 0; i < v.length; i++) p[i] = w[i] * v[i];
  return stableSum(p) / stableSum(w);
}

/**
 * One 0/1 column per value of a factor except the first in sheet order (the reference level),
 * named "Column: value", in order of first appearance.
 */
function indicators(codes: Int32Array, labels: string[], name: string): { name: string; column: Float64Array }[] {
  const order: number[] = [];
  const seen = new Uint8Array(labels.length);
  for (let i = 0; i < codes.length; i++) {
    const c = codes[i];
    if (!seen[c]) {
      seen[c] = 1;
      order.push(c);
    }
  }
  if (order.length < 2) fail(`${name} has one value (${labels[order[0]]}) in the rows used, so factors= makes no indicator term: remove it from factors=`);
  return order.slice(1).map((c) => ({ name: `${name}: ${labels[c]}`, column: mapped(codes, (v) => (v === c ? 1 : 0)) }));
}

/** Transforms col in place; for the log, returns the logged column's facts (taken in the same read). */
function transformInPlace(col: Float64Array, t: Transform): ColumnFacts | null {
  if (t.kind === "log") return kernel().logWithFacts(col); // Math.log's values
  for (let i = 0; i < col.length; i++) col[i] = apply(t, col[i]);
  return null;
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
