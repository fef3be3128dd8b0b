/**
 * Intake: cell ranges as the host passes them → numeric columns and a report of what was left out.
 *
 * The catalogue's "Ranges" rules, in one place: a first row that is all text is a header row; numbers
 * are used as they are; TRUE/FALSE count as 1/0; null, undefined, "" (and white space) are blank; a
 * row with a blank, text, error or non-finite cell in y or any x column is left out (listwise) and
 * counted, with its sheet row number kept. Rows at the bottom that are blank in y and in every x
 * column (a whole-column reference) are not observations: they are trimmed and not counted.
 * A single-row y is data laid out across: y and x are then read with variables in rows.
 *
 * Cost: one pass over the cells. Columns are Float64Array (column-major), compacted in place.
 */
import { fail, count, rowsPhrase, nearest } from "./problems";

/** Why a cell cannot be used. 0 = usable. */
export const enum CellIssue {
  None = 0,
  Blank = 1,
  Text = 2,
  Error = 3,
  NonFinite = 4,
}

/** Where a range starts on its sheet (1-based); null when the host did not say. */
export interface Origin {
  row: number;
  column: number;
}

export interface RangeRead {
  names: string[];
  header: boolean;
  /** One array per column, NaN where the cell is unusable (empty for key columns). */
  columns: Float64Array[];
  /** Key columns only (others null): each cell's key text, null when blank or an error. */
  keys: (string | null)[][] | null[];
  /** Per column, how many data rows hold text that is not a number (numeric columns only). */
  textCells: Int32Array;
  /** Per data row, the first issue found in that row (CellIssue.None when usable). */
  issues: Uint8Array;
  rows: number;
  /** Sheet row (or range row when the origin is unknown) of the first data row. */
  firstRow: number;
}

function isErrorCell(v: object): boolean {
  const code = (v as { code?: unknown }).code;
  return typeof code === "string" && code.startsWith("#");
}

/** Turns one cell into a number, or NaN with the issue stored in ISSUE[0]. */
const ISSUE = new Uint8Array(1);
function cellNumber(v: unknown): number {
  if (typeof v === "number") {
    if (v === v && v !== Infinity && v !== -Infinity) return v;
    ISSUE[0] = CellIssue.NonFinite;
    return NaN;
  }
  if (typeof v === "boolean") return v ? 1 : 0;
  if (v === null || v === undefined) {
    ISSUE[0] = CellIssue.Blank;
    return NaN;
  }
  if (typeof v === "string") {
    ISSUE[0] = v.trim() === "" ? CellIssue.Blank : CellIssue.Text;
    return NaN;
  }
  if (typeof v === "object") {
    if (isErrorCell(v)) {
      ISSUE[0] = CellIssue.Error;
      return NaN;
    }
    // A data-type cell (formatted number, entity) may arrive as an object with a basicValue.
    const basic = (v as { basicValue?: unknown }).basicValue;
    if (basic !== undefined && typeof basic !== "object") return cellNumber(basic);
  }
  ISSUE[0] = CellIssue.Text;
  return NaN;
}

function isBlankCell(v: unknown): boolean {
  return v === null || v === undefined || (typeof v === "string" && v.trim() === "");
}

function isHeaderCell(v: unknown): boolean {
  return typeof v === "string" && v.trim() !== "";
}

/** Checks that a range argument is a non-empty rectangular 2-D array. */
export function asMatrix(cells: unknown, what: string): unknown[][] {
  if (!Array.isArray(cells)) {
    if (cells === null || cells === undefined) fail(`${what} is missing: give a range of cells`);
    return [[cells]];
  }
  if (cells.length === 0) fail(`${what} is an empty range`);
  if (!Array.isArray(cells[0])) return (cells as unknown[]).map((v) => [v]);
  const width = (cells[0] as unknown[]).length;
  if (width === 0) fail(`${what} is an empty range`);
  for (let i = 1; i < cells.length; i++) {
    const r = cells[i];
    if (!Array.isArray(r) || r.length !== width) fail(`${what} is not a rectangular range`);
  }
  return cells as unknown[][];
}

/** Swaps rows and columns (for data laid out across). */
export function transpose(cells: unknown[][]): unknown[][] {
  const h = cells.length;
  const w = cells[0].length;
  const out: unknown[][] = new Array(w);
  for (let j = 0; j < w; j++) {
    const r = new Array(h);
    for (let i = 0; i < h; i++) r[i] = cells[i][j];
    out[j] = r;
  }
  return out;
}

/**
 * The text by which a key cell (a role column's, or ELX.BYGROUP's keys) is compared: numbers by
 * their shortest decimal text (so 1 and "1" are one key), text trimmed of surrounding spaces with
 * its case kept, TRUE/FALSE as those words; blank and error cells have no key (null).
 */
export function keyText(v: unknown): string | null {
  if (v === null || v === undefined) return null;
  if (typeof v === "string") return v.trim() === "" ? null : v.trim();
  if (typeof v === "number") return Number.isFinite(v) ? String(v) : null;
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  if (typeof v === "object") {
    const basic = (v as { basicValue?: unknown }).basicValue;
    if (basic !== undefined && typeof basic !== "object") return keyText(basic);
  }
  return null; // error cells and anything else: no key
}

/**
 * Reads one range into numeric columns (and key columns as their key text).
 * @param cells row-major 2-D array of cell values
 * @param defaultNames names to use without a header row
 * @param originRow sheet row of the range's first row (1 when unknown: rows are then range rows)
 * @param keyColumns columns read as keys: text is a value there, blank and error cells are issues
 */
export function readRange(cells: unknown[][], defaultNames: (j: number) => string, originRow: number, keyColumns: ReadonlySet<number> = NO_KEYS): RangeRead {
  const width = cells[0].length;
  const header = cells[0].every(isHeaderCell);
  const start = header ? 1 : 0;
  const rows = cells.length - start;
  const names: string[] = [];
  for (let j = 0; j < width; j++) names.push(header ? String(cells[0][j]).trim() : defaultNames(j));
  const columns: Float64Array[] = [];
  const keys: (string | null)[][] | null[] = [];
  for (let j = 0; j < width; j++) {
    const isKey = keyColumns.has(j);
    columns.push(new Float64Array(isKey ? 0 : rows));
    (keys as ((string | null)[] | null)[]).push(isKey ? new Array<string | null>(rows) : null);
  }
  const textCells = new Int32Array(width);
  const issues = new Uint8Array(rows);
  for (let i = 0; i < rows; i++) {
    const row = cells[i + start];
    let issue = 0;
    for (let j = 0; j < width; j++) {
      const v = row[j];
      const kc = keys[j];
      if (kc) {
        const t = keyText(v);
        kc[i] = t;
        if (t === null && issue === 0) issue = isBlankCell(v) ? CellIssue.Blank : CellIssue.Error;
        continue;
      }
      let x: number;
      if (typeof v === "number" && v - v === 0) x = v; // fast path: a finite number
      else {
        ISSUE[0] = 0;
        x = cellNumber(v);
        if (ISSUE[0] === CellIssue.Text) textCells[j]++;
        if (issue === 0 && ISSUE[0] !== 0) issue = ISSUE[0];
      }
      columns[j][i] = x;
    }
    issues[i] = issue;
  }
  return { names, header, columns, keys, textCells, issues, rows, firstRow: originRow + start };
}

const NO_KEYS: ReadonlySet<number> = new Set();

/** The role options, as typed: columns of x named by header or 1-based number. */
export interface RoleSpec {
  absorb: readonly string[];
  factors: readonly string[];
  cluster: readonly string[];
  panel: string | null;
  time: string | null;
  weights: string | null;
  instruments: readonly string[];
}

export const NO_ROLES: RoleSpec = Object.freeze({ absorb: [], factors: [], cluster: [], panel: null, time: null, weights: null, instruments: [] });

/** A key column over the rows used: a code per row and the distinct keys in code order. */
export interface KeyColumn {
  name: string;
  codes: Int32Array;
  labels: string[];
  /** Whether codes follow ascending numbers (every key a number) rather than first appearance. */
  numericOrder: boolean;
}

/** The role columns over the rows used (compacted like y and x). */
export interface RoleColumns {
  absorb: KeyColumn[];
  factors: KeyColumn[];
  cluster: KeyColumn[];
  panel: KeyColumn | null;
  time: KeyColumn | null;
  weights: Float64Array | null;
  weightsName: string | null;
  instruments: Float64Array[];
  instrumentNames: string[];
}

export interface RawData {
  yName: string;
  /** Names of the regressors: the columns of x that have no role. */
  xNames: string[];
  /** Every column of the x range by its name, and the regressor index of each (−1: a role column). */
  columnNames: string[];
  regressorOf: Int32Array;
  roles: RoleColumns;
  /** Rows left out because their weight was zero or negative. */
  leftOutWeight: number;
  leftOutWeightRows: number[];
  /** y then x columns, compacted to the usable rows. */
  y: Float64Array;
  x: Float64Array[];
  /** Sheet (or range) row number of each usable row. */
  rowNumbers: Int32Array;
  /** Rows left out because a cell was blank, text, an error or not finite. */
  leftOutBlank: number;
  leftOutBlankRows: number[];
  /** Rows at the bottom blank in every column, trimmed and not counted (whole-column references). */
  trailingBlank: number;
  /** Sheet (or range) row of the first data row, and the number of data rows read (after trimming). */
  firstRow: number;
  dataRows: number;
  /** Whether y had a header row (a keys range beside it then has one too). */
  yHeader: boolean;
}

/** Resolves a role option's column (header name, case-insensitive, or 1-based number) in the x range. */
function roleColumn(ref: string, names: readonly string[], key: string): number {
  const t = ref.trim();
  let i = names.findIndex((n) => n.toLowerCase() === t.toLowerCase());
  if (i < 0) i = names.findIndex((n) => n.replace(/\s+/g, "").toLowerCase() === t.replace(/\s+/g, "").toLowerCase());
  if (i >= 0) return i;
  if (/^\d+$/.test(t)) {
    const c = Number(t);
    if (c >= 1 && c <= names.length) return c - 1;
    fail(`${key}=${t}: x has ${count(names.length, "column")}; give a number from 1 to ${names.length} or a header name`);
  }
  return fail(`${key}=${t} is not a column of x; did you mean ${key}=${nearest(t, names)}? (columns: ${names.join(", ")})`);
}

/** Codes for a key column: ascending numbers when every key is a number, else first appearance. */
function keyColumn(name: string, text: (string | null)[], rows: Int32Array): KeyColumn {
  const n = rows.length;
  const seen = new Map<string, number>();
  const labels: string[] = [];
  const codes = new Int32Array(n);
  for (let w = 0; w < n; w++) {
    const t = text[rows[w]] as string;
    let c = seen.get(t);
    if (c === undefined) {
      c = labels.length;
      seen.set(t, c);
      labels.push(t);
    }
    codes[w] = c;
  }
  const numericOrder = labels.length > 0 && labels.every((l) => /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(l));
  if (numericOrder) {
    const order = labels.map((l, c) => ({ v: Number(l), c })).sort((a, b) => a.v - b.v);
    const remap = new Int32Array(labels.length);
    order.forEach((e, r) => (remap[e.c] = r));
    for (let w = 0; w < n; w++) codes[w] = remap[codes[w]];
    return { name, codes, labels: order.map((e) => labels[e.c]), numericOrder };
  }
  return { name, codes, labels, numericOrder };
}

/** A key column restricted to some of its rows (kept[w] = old row index), recoded to the keys left. */
export function subsetKeys(col: KeyColumn, kept: ArrayLike<number>): KeyColumn {
  const remap = new Int32Array(col.labels.length).fill(-1);
  const present = new Uint8Array(col.labels.length);
  for (let w = 0; w < kept.length; w++) present[col.codes[kept[w]]] = 1;
  const labels: string[] = [];
  for (let c = 0; c < col.labels.length; c++) {
    if (present[c]) {
      remap[c] = labels.length;
      labels.push(col.labels[c]);
    }
  }
  const codes = Int32Array.from({ length: kept.length }, (_, w) => remap[col.codes[kept[w]]]);
  return { name: col.name, codes, labels, numericOrder: col.numericOrder };
}

/** The role columns restricted to some of their rows (kept[w] = old row index). */
export function subsetRoles(r: RoleColumns, kept: ArrayLike<number>): RoleColumns {
  const pick = (c: Float64Array) => Float64Array.from({ length: kept.length }, (_, w) => c[kept[w]]);
  const keys = (c: KeyColumn) => subsetKeys(c, kept);
  return {
    absorb: r.absorb.map(keys),
    factors: r.factors.map(keys),
    cluster: r.cluster.map(keys),
    panel: r.panel ? keys(r.panel) : null,
    time: r.time ? keys(r.time) : null,
    weights: r.weights ? pick(r.weights) : null,
    weightsName: r.weightsName,
    instruments: r.instruments.map(pick),
    instrumentNames: r.instrumentNames,
  };
}

/** Makes names unique by adding " (2)", " (3)" to repeats. */
function uniqueNames(names: string[]): string[] {
  const seen = new Map<string, number>();
  return names.map((n) => {
    const k = n.toLowerCase();
    const c = (seen.get(k) ?? 0) + 1;
    seen.set(k, c);
    return c === 1 ? n : `${n} (${c})`;
  });
}

const KEEP_ROW_NUMBERS = 200;

/**
 * Reads y and x together: headers, shapes, listwise deletion with counts and row numbers.
 * @param yCells the y range (one column, or one row for data laid out across)
 * @param xCells the x range (one or more columns, same height as y)
 * @param yOrigin, xOrigin where the ranges start on the sheet, when the host said
 */
export function readYX(yCells: unknown, xCells: unknown, yOrigin: Origin | null, xOrigin: Origin | null, roles: RoleSpec = NO_ROLES): RawData {
  let ym = asMatrix(yCells, "y");
  let xm = asMatrix(xCells, "x");
  let yRow = yOrigin?.row ?? 1;
  let xRow = xOrigin?.row ?? 1;
  if (ym.length === 1 && ym[0].length > 1) {
    // y laid out across one row: variables are in rows, observations in columns.
    if (xm[0].length !== ym[0].length) {
      fail(`y is one row of ${ym[0].length} cells, so x must have ${ym[0].length} columns with one regressor per row (it has ${xm[0].length} columns)`);
    }
    ym = transpose(ym);
    xm = transpose(xm);
    yRow = yOrigin?.column ?? 1;
    xRow = xOrigin?.column ?? 1;
  } else if (ym[0].length !== 1) {
    fail(`y must be one column (it has ${ym[0].length} columns); put the regressors in x`);
  }
  // Which columns of x have a role: keys are read as text, weights and instruments as numbers.
  const xHeader = xm[0].every(isHeaderCell);
  const rangeNames = uniqueNames(xm[0].map((v, j) => (xHeader ? String(v).trim() : `x${j + 1}`)));
  const role = new Array<string | null>(rangeNames.length).fill(null);
  const keyCols = new Set<number>();
  const claim = (ref: string, key: string, isKey: boolean): number => {
    const j = roleColumn(ref, rangeNames, key);
    const had = role[j];
    if (had !== null && had !== key) {
      const keyRoles = ["absorb", "cluster", "panel", "time"];
      // A key may be absorbed, clustered on, a panel unit and a period at once; nothing else doubles up.
      if (!(keyRoles.includes(had) && keyRoles.includes(key))) {
        fail(`${rangeNames[j]} is named in both ${had}= and ${key}=; a column can take only one of these roles (factors= makes indicator terms, absorb= fixed effects, weights= and instruments= are numbers)`);
      }
    }
    if (had === null || key === "factors") role[j] = key;
    if (isKey) keyCols.add(j);
    return j;
  };
  const absorbCols = roles.absorb.map((r) => claim(r, "absorb", true));
  const factorCols = roles.factors.map((r) => claim(r, "factors", true));
  const clusterCols = roles.cluster.map((r) => claim(r, "cluster", true));
  const panelCol = roles.panel === null ? -1 : claim(roles.panel, "panel", true);
  const timeCol = roles.time === null ? -1 : claim(roles.time, "time", true);
  const weightCol = roles.weights === null ? -1 : claim(roles.weights, "weights", false);
  const instrumentCols = roles.instruments.map((r) => claim(r, "instruments", false));

  const yr = readRange(ym, () => "y", yRow);
  const xr = readRange(xm, (j) => `x${j + 1}`, xRow, keyCols);
  if (yr.rows !== xr.rows) {
    fail(`y has ${count(yr.rows, "row")} of data and x has ${xr.rows}${yr.header || xr.header ? " (after the header row)" : ""}; give both ranges the same rows`);
  }
  if (yr.rows === 0) fail("y and x have a header row but no data rows below it");
  const regressorCols: number[] = [];
  for (let j = 0; j < rangeNames.length; j++) if (role[j] === null) regressorCols.push(j);
  if (regressorCols.length === 0 && factorCols.length === 0 && roles.absorb.length === 0) {
    fail("every column of x has a role (keys, weights or instruments): x needs at least one regressor");
  }
  let rows = yr.rows;
  // A regressor column of text is a key column nobody named: say what to do with it.
  const textual = (j: number) => xr.textCells[j] > 0 && xr.textCells[j] * 2 >= rows;
  for (const j of [...regressorCols, weightCol, ...instrumentCols]) {
    if (j < 0 || !textual(j)) continue;
    const name = rangeNames[j];
    if (role[j] === "weights" || role[j] === "instruments") fail(`${name} holds text, but ${role[j]}= needs numbers: check the column`);
    fail(`${name} holds text: name it in factors= (indicator terms), absorb= (fixed effects) or cluster=, or leave it out of x`);
  }
  // Trim trailing rows that are blank in every column: not observations.
  let trailing = 0;
  const yStart = yr.header ? 1 : 0;
  const xStart = xr.header ? 1 : 0;
  while (rows > 0) {
    const i = rows - 1;
    if (yr.issues[i] !== CellIssue.Blank || xr.issues[i] !== CellIssue.Blank) break;
    if (!ym[i + yStart].every(isBlankCell) || !xm[i + xStart].every(isBlankCell)) break;
    rows--;
    trailing++;
  }
  const y = yr.columns[0];
  const x = regressorCols.map((j) => xr.columns[j]);
  const wCol = weightCol >= 0 ? xr.columns[weightCol] : null;
  const zCols = instrumentCols.map((j) => xr.columns[j]);
  const k = x.length;
  const used = new Int32Array(rows);
  const rowNumbers = new Int32Array(rows);
  const blankRows: number[] = [];
  const weightRows: number[] = [];
  let leftOut = 0;
  let leftOutWeight = 0;
  let w = 0;
  for (let i = 0; i < rows; i++) {
    if (yr.issues[i] !== 0 || xr.issues[i] !== 0) {
      leftOut++;
      if (blankRows.length < KEEP_ROW_NUMBERS) blankRows.push(yr.firstRow + i);
      continue;
    }
    if (wCol && !(wCol[i] > 0)) {
      leftOutWeight++;
      if (weightRows.length < KEEP_ROW_NUMBERS) weightRows.push(yr.firstRow + i);
      continue;
    }
    if (w !== i) {
      y[w] = y[i];
      for (let j = 0; j < k; j++) x[j][w] = x[j][i];
      if (wCol) wCol[w] = wCol[i];
      for (const z of zCols) z[w] = z[i];
    }
    used[w] = i;
    rowNumbers[w] = yr.firstRow + i;
    w++;
  }
  if (w === 0) {
    const all = rows <= 8 ? "" : ` (${rowsPhrase(blankRows, 5)})`;
    if (leftOutWeight > 0 && leftOut === 0) fail(`every row's weight in ${rangeNames[weightCol]} is zero or negative; weights= needs positive weights`);
    fail(`no row has a number in y and in every x column: all ${count(rows, "row")} have a blank, text or error cell${all}; check that the ranges hold the data`);
  }
  const usedRows = used.subarray(0, w);
  const keyOf = (j: number) => keyColumn(rangeNames[j], xr.keys[j] as (string | null)[], usedRows);
  const roleColumns: RoleColumns = {
    absorb: absorbCols.map(keyOf),
    factors: factorCols.map(keyOf),
    cluster: clusterCols.map(keyOf),
    panel: panelCol >= 0 ? keyOf(panelCol) : null,
    time: timeCol >= 0 ? keyOf(timeCol) : null,
    weights: wCol ? wCol.subarray(0, w) : null,
    weightsName: weightCol >= 0 ? rangeNames[weightCol] : null,
    instruments: zCols.map((c) => c.subarray(0, w)),
    instrumentNames: instrumentCols.map((j) => rangeNames[j]),
  };
  const regressorOf = new Int32Array(rangeNames.length).fill(-1);
  regressorCols.forEach((j, r) => (regressorOf[j] = r));
  return {
    yName: yr.names[0],
    xNames: regressorCols.map((j) => rangeNames[j]),
    columnNames: rangeNames,
    regressorOf,
    roles: roleColumns,
    leftOutWeight,
    leftOutWeightRows: weightRows,
    y: y.subarray(0, w),
    x: x.map((c) => c.subarray(0, w)),
    rowNumbers: rowNumbers.subarray(0, w),
    leftOutBlank: leftOut,
    leftOutBlankRows: blankRows,
    trailingBlank: trailing,
    firstRow: yr.firstRow,
    dataRows: rows,
    yHeader: yr.header,
  };
}

/** Parses the start of an address such as "Sheet1!$B$3:$D$40", "'My sheet'!B3" or "A:A" into its origin. */
export function originOf(address: unknown): Origin | null {
  if (typeof address !== "string" || address === "") return null;
  const bang = address.lastIndexOf("!");
  const ref = (bang >= 0 ? address.slice(bang + 1) : address).replace(/\$/g, "");
  const first = ref.split(":")[0];
  const m = /^([A-Za-z]{0,3})(\d*)$/.exec(first);
  if (!m) return null;
  let col = 0;
  for (const ch of m[1].toUpperCase()) col = col * 26 + (ch.charCodeAt(0) - 64);
  return { row: m[2] === "" ? 1 : Number(m[2]), column: col === 0 ? 1 : col };
}
