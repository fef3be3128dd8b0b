/**
 * Intake: cell ranges as the host passes them → numeric columns and a report of what was left out.
 *
 * The range rules of README's function reference, in one place: a first row whose non-empty cells are
 * all text is a header row (an empty cell there takes its default name); numbers
 * are used as they are; TRUE/FALSE count as 1/0; null, undefined, "" (and white space) are blank; a
 * row with a blank, text, error or non-finite cell in y or any x column is left out (listwise) and
 * counted, with its sheet row number kept. Columns of x named in a role option (absorb, factors,
 * cluster, panel, time: keys compared by their text; weights, instruments: numbers) are not regressors
 * and go through the same listwise deletion. Rows at the bottom that are blank in y and in every x
 * column (a whole-column reference) are not observations: they are trimmed and not counted.
 * A single-row y is data laid out across: y and x are then read with variables in rows.
 *
 * Cost: one pass over the cells. Columns are Float64Array (column-major), compacted in place.
 */
import { mapped, mappedInt } from "./blocks";
import { cut, fail, count, quote, rowsPhrase, nearest, RowList } from "./problems";

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
  /** The header's names as typed (empty cells by their default names), or the default names; not yet unique. */
  names: string[];
  header: boolean;
  /** Columns whose header cell was empty (0-based): they carry their default name. */
  unnamed: number[];
  /** One array per column, NaN where the cell is unusable (empty for key columns). */
  columns: Float64Array[];
  /** Key columns only (others null): each cell's key text, null when blank or an error. */
  keys: ((string | null)[] | null)[];
  /** Per data row, the first issue found in that row (CellIssue.None when usable). */
  issues: Uint8Array;
  rows: number;
  /** Sheet row (or range row when the origin is unknown) of the first data row. */
  firstRow: number;
  /** Per column, the text cells among the data rows and the first one (data row index, its text). */
  text: TextCells[];
  /** Per data row, 1 when a cell of it is text that reads as a number ("7,49"); null when none is. */
  numericText: Uint8Array | null;
}

/** Text cells of one column. */
export interface TextCells {
  count: number;
  /** Of these, cells whose text reads as a number. */
  numeric: number;
  /** Data row index and text of the first text cell, and of the first that reads as a number (-1, "" when none). */
  first: number;
  firstText: string;
  firstNumeric: number;
  firstNumericText: string;
}

function isErrorCell(v: object): boolean {
  const code = (v as { code?: unknown }).code;
  return typeof code === "string" && code.startsWith("#");
}

function isBlankCell(v: unknown): boolean {
  return v === null || v === undefined || (typeof v === "string" && v.trim() === "");
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

function isHeaderCell(v: unknown): boolean {
  return typeof v === "string" && v.trim() !== "";
}

/**
 * The header rule: a first row whose non-empty cells are all text, with at least one, is a header row.
 * An empty cell in it does not make it data; that column gets its default name (x3, y).
 */
export function isHeaderRow(row: readonly unknown[]): boolean {
  let text = false;
  for (const v of row) {
    if (isHeaderCell(v)) text = true;
    else if (!isBlankCell(v)) return false;
  }
  return text;
}

/**
 * Makes names unique whatever the input: the first of equal names (case-insensitive) keeps it, each
 * later one gets the smallest " (2)", " (3)", … that no other column has, so "p (2)", "p", "p" become
 * "p (2)", "p", "p (3)".
 */
export function uniqueNames(names: readonly string[]): string[] {
  const taken = new Set<string>();
  const out: (string | null)[] = names.map((n) => {
    const k = n.toLowerCase();
    if (taken.has(k)) return null;
    taken.add(k);
    return n;
  });
  return out.map((n, j) => {
    if (n !== null) return n;
    let c = 2;
    while (taken.has(`${names[j]} (${c})`.toLowerCase())) c++;
    const name = `${names[j]} (${c})`;
    taken.add(name.toLowerCase());
    return name;
  });
}

/**
 * The column names of a header row as typed: each cell's text trimmed, an empty cell its default name
 * (listed in `unnamed`). Not yet unique: see uniqueNames and xColumnNames.
 */
export function headerNames(row: readonly unknown[], defaultNames: (j: number) => string): { names: string[]; unnamed: number[] } {
  const unnamed: number[] = [];
  const names = row.map((v, j) => {
    if (isHeaderCell(v)) return String(v).trim();
    unnamed.push(j);
    return defaultNames(j);
  });
  return { names, unnamed };
}

/** The default name of column j of x: x1, x2, … */
export function defaultXName(j: number): string {
  return `x${j + 1}`;
}

/**
 * The names readYX gives the columns of x under this header row and y's name: unique across y and x.
 * PREDICT matches new_x's header through it, so a new_x with x's header finds x's columns.
 */
export function xColumnNames(yName: string, xHeader: readonly unknown[]): string[] {
  return uniqueNames([yName, ...headerNames(xHeader, defaultXName).names]).slice(1);
}

/**
 * Text that reads as a number: "7,49", "1.234,5", "12 500", "€3.20", "15%". Such a cell is still
 * text (left out, counted) but the messages name it, since it is usually a number imported with the
 * wrong decimal separator or stored as text.
 */
export function looksNumeric(text: string): boolean {
  return /^[-+]?[$€£¥]?\s?[-+]?(\d{1,3}([ .,'\u00a0\u202f]\d{3})+|\d+)?([.,]\d+)?([eE][-+]?\d+)?\s?[%$€£¥]?$/.test(text.trim()) && /\d/.test(text);
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
 * A range read once into columns: every row of finite numbers straight into them, the other rows
 * flagged for readRange to read from the cells. One tight pass that sees only rows of numbers.
 */
export interface CellGrid {
  /** The rows it was read from (readRange uses the grid only for these very rows). */
  cells: unknown[][];
  height: number;
  width: number;
  /** Per column, one value per row: the cells of each row that is not odd, as they are; odd rows hold no meaning (readRange reads them from the cells). */
  columns: Float64Array[];
  /** 1 for a row readRange reads again from the cells: row 0, and any row with a cell that is not a finite number. */
  odd: Uint8Array;
}

/**
 * One pass over a rectangular 2-D array of rows: the columns and the rows that need a closer look.
 * Anything else (a scalar, a list, ragged rows) gives null: read it the usual way, which also says
 * what is wrong with it.
 */
export function readGrid(v: unknown): CellGrid | null {
  if (!Array.isArray(v) || v.length === 0) return null;
  const first: unknown = v[0];
  if (!Array.isArray(first) || first.length === 0) return null;
  const h = v.length;
  const w = first.length;
  const columns: Float64Array[] = [];
  for (let j = 0; j < w; j++) columns.push(new Float64Array(h));
  const odd = new Uint8Array(h);
  odd[0] = 1; // row 0 (usually the header's text) is left to readRange, so the loop sees rows of numbers
  if (w === 1) return readGridColumn(v, columns, odd);
  for (let i = 1; i < h; i++) {
    const row: unknown = v[i];
    if (!Array.isArray(row) || row.length !== w) return null;
    let bad = 0;
    let j = 0;
    for (; j < w; j++) {
      const c: unknown = row[j];
      if (typeof c !== "number") break;
      columns[j][i] = c;
      if (c - c !== 0) bad = 1; // NaN or ±Infinity
    }
    odd[i] = j < w ? 1 : bad;
  }
  return { cells: v as unknown[][], height: h, width: w, columns, odd };
}

/**
 * readGrid's loop for a single column (y, or a lone x): the same result without the inner loop
 * (measured 27 → 15 ms for 10^6 rows), and readGrid's own loop then sees wider rows only.
 */
function readGridColumn(v: unknown[], columns: Float64Array[], odd: Uint8Array): CellGrid | null {
  const h = v.length;
  const col = columns[0];
  for (let i = 1; i < h; i++) {
    const row: unknown = v[i];
    if (!Array.isArray(row) || row.length !== 1) return null;
    const c: unknown = row[0];
    if (typeof c === "number") {
      col[i] = c;
      if (c - c !== 0) odd[i] = 1; // NaN or ±Infinity
    } else odd[i] = 1;
  }
  return { cells: v as unknown[][], height: h, width: 1, columns, odd };
}

/**
 * Reads one range into numeric columns (and key columns as their key text).
 * @param cells row-major 2-D array of cell values
 * @param defaultNames names to use without a header row
 * @param originRow sheet row of the range's first row (1 when unknown: rows are then range rows)
 * @param keyColumns columns read as keys: text is a value there, blank and error cells are issues
 * @param grid these cells already read by readGrid: its columns are used (as views), and only its
 *   odd rows are read again from the cells
 */
export function readRange(cells: unknown[][], defaultNames: (j: number) => string, originRow: number, header = isHeaderRow(cells[0]), keyColumns: ReadonlySet<number> = NO_KEYS, grid: CellGrid | null = null): RangeRead {
  const width = cells[0].length;
  const start = header ? 1 : 0;
  const rows = cells.length - start;
  let names: string[] = [];
  let unnamed: number[] = [];
  if (header) ({ names, unnamed } = headerNames(cells[0], defaultNames));
  else for (let j = 0; j < width; j++) names.push(defaultNames(j));
  if (grid !== null && (grid.cells !== cells || grid.width !== width)) grid = null;
  const columns: Float64Array[] = [];
  const keys: ((string | null)[] | null)[] = [];
  const keyList: number[] = [];
  for (let j = 0; j < width; j++) {
    const isKey = keyColumns.has(j);
    columns.push(isKey ? new Float64Array(0) : grid !== null ? grid.columns[j].subarray(start) : new Float64Array(rows));
    keys.push(isKey ? new Array<string | null>(rows) : null);
    if (isKey) keyList.push(j);
  }
  const odd = grid !== null ? grid.odd.subarray(start) : null;
  const text: TextCells[] = [];
  for (let j = 0; j < width; j++) text.push({ count: 0, numeric: 0, first: -1, firstText: "", firstNumeric: -1, firstNumericText: "" });
  let numericText: Uint8Array | null = null;
  const issues = new Uint8Array(rows);
  const plain = keyColumns.size === 0;
  for (let i = 0; i < rows; i++) {
    if (odd !== null && odd[i] === 0) {
      // every cell a finite number, already in the columns: only key columns take their text
      if (keyList.length > 0) {
        const r = cells[i + start];
        for (let q = 0; q < keyList.length; q++) (keys[keyList[q]] as (string | null)[])[i] = keyText(r[keyList[q]]);
      }
      continue;
    }
    const row = cells[i + start];
    if (plain) {
      // the usual row: finite numbers only (its issue stays 0); any other cell goes the full way below
      let j = 0;
      for (; j < width; j++) {
        const v = row[j];
        if (typeof v !== "number" || v - v !== 0) break;
        columns[j][i] = v;
      }
      if (j === width) continue;
    }
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
        if (issue === 0 && ISSUE[0] !== 0) issue = ISSUE[0];
        if (ISSUE[0] === CellIssue.Text) {
          const t = text[j];
          const shown = typeof v === "string" ? v.trim() : String(v);
          if (t.count++ === 0) {
            t.first = i;
            t.firstText = shown;
          }
          if (typeof v === "string" && looksNumeric(v)) {
            if (t.numeric++ === 0) {
              t.firstNumeric = i;
              t.firstNumericText = shown;
            }
            (numericText ??= new Uint8Array(rows))[i] = 1;
          }
        }
      }
      columns[j][i] = x;
    }
    issues[i] = issue;
  }
  return { names, header, unnamed, columns, keys, issues, rows, firstRow: originRow + start, text, numericText };
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
  leftOutWeightRows: RowList;
  /** y then x columns, compacted to the usable rows. */
  y: Float64Array;
  x: Float64Array[];
  /** Sheet (or range) row number of each usable row. */
  rowNumbers: Int32Array;
  /** Rows left out because a cell was blank, text, an error or not finite. */
  leftOutBlank: number;
  leftOutBlankRows: RowList;
  /** Of those, the rows with a cell that is text reading as a number ("7,49"), and the first such cell. */
  numericTextRows: RowList;
  numericTextExample: { column: string; row: number; text: string } | null;
  /** Names given to columns whose header cell was empty ("x3", "y"). */
  unnamed: string[];
  /** Rows at the bottom blank in every column, trimmed and not counted (whole-column references). */
  trailingBlank: number;
  /** Sheet (or range) row of the first data row, and the number of data rows read (after trimming). */
  firstRow: number;
  dataRows: number;
  /** Whether y had a header row (a keys range beside it then has one too). */
  yHeader: boolean;
}

/**
 * What to do with a column of x that holds text. Options that give text columns a role join this
 * list at the front (for example "name it in factors=").
 */
export const TEXT_COLUMN_CHOICES: readonly string[] = [
  "name it in factors= (indicator terms), absorb= (fixed effects) or cluster=", "leave it out of x", "use ELX.BYGROUP with it as keys",
];

/** "a, b, or c" (the last choice after ", or"; two choices: "a, or b"). */
function orList(choices: readonly string[]): string {
  return choices.length === 1 ? choices[0] : `${choices.slice(0, -1).join(", ")}, or ${choices[choices.length - 1]}`;
}

/**
 * The message for a column that is text in most rows: "Region holds text …: leave it out of x, or use
 * ELX.BYGROUP with it as keys". `where` says in how many rows, with an example.
 */
export function textColumnMessage(name: string, where: string, isY: boolean, choices: readonly string[] = TEXT_COLUMN_CHOICES): string {
  return isY
    ? `${name} holds text${where}: y must be a column of numbers (check that the y range is the sales or quantity column)`
    : `${name} holds text${where}: ${orList(choices)}`;
}

/** The advice for numbers stored as text, with "decimal comma" when the example has one. */
export function numericTextAdvice(example: string): string {
  const comma = /\d,\d/.test(example);
  return comma
    ? "these look like numbers with a decimal comma, stored as text: convert them to numbers (replace the comma by the decimal separator the sheet uses, or import the file again with the right separator)"
    : "these look like numbers stored as text: convert them to numbers (for example with the sheet's text-to-number conversion, or by importing the file again)";
}

/**
 * Refuses a column that is text in more than half of the data rows: it is not a regressor (a region,
 * a product name) or its numbers are stored as text, and listwise deletion would drop most rows.
 */
function refuseTextColumns(r: RangeRead, rows: number, isY: boolean): void {
  r.text.forEach((t, j) => {
    if (2 * t.count <= rows) return;
    const name = cut(r.names[j]);
    const of = t.count === rows ? (rows === 1 ? "in its only row" : `in all ${rows} rows`) : `in ${t.count} of ${rows} rows`;
    if (2 * t.numeric > t.count) {
      fail(`${name} holds numbers stored as text ${of} (for example ${quote(t.firstNumericText)} in row ${r.firstRow + t.firstNumeric}): ${numericTextAdvice(t.firstNumericText)}`);
    }
    fail(textColumnMessage(name, ` ${of} (for example ${quote(t.firstText)} in row ${r.firstRow + t.first})`, isY));
  });
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
  const codes = mappedInt(kept, (i) => remap[col.codes[i]]);
  return { name: col.name, codes, labels, numericOrder: col.numericOrder };
}

/** The role columns restricted to some of their rows (kept[w] = old row index). */
export function subsetRoles(r: RoleColumns, kept: ArrayLike<number>): RoleColumns {
  const pick = (c: Float64Array) => mapped(kept, (i) => c[i]);
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

/**
 * Reads y and x together: headers, shapes, listwise deletion with counts and row numbers.
 * @param yCells the y range (one column, or one row for data laid out across)
 * @param xCells the x range (one or more columns, same height as y)
 * @param yOrigin, xOrigin where the ranges start on the sheet, when the host said
 * @param roles the columns of x named in role options: keys (absorb, factors, cluster, panel, time)
 *   are read as text, weights and instruments as numbers; the rest are the regressors
 * @param grids yCells and xCells already read by readGrid (used only while they are these very rows)
 */
export function readYX(yCells: unknown, xCells: unknown, yOrigin: Origin | null, xOrigin: Origin | null, roles: RoleSpec = NO_ROLES, grids: { y: CellGrid | null; x: CellGrid | null } | null = null): RawData {
  // a grid of these very cells has checked the shape already
  const yGrid = grids !== null && grids.y !== null && grids.y.cells === yCells ? grids.y : null;
  const xGrid = grids !== null && grids.x !== null && grids.x.cells === xCells ? grids.x : null;
  let ym = yGrid ? yGrid.cells : asMatrix(yCells, "y");
  let xm = xGrid ? xGrid.cells : asMatrix(xCells, "x");
  let yRow = yOrigin?.row ?? 1;
  let xRow = xOrigin?.row ?? 1;
  if (ym.length === 1 && ym[0].length > 1) {
    // y laid out across one row: variables are in rows, observations in columns.
    if (xm[0].length !== ym[0].length) {
      fail(`y is one row of ${ym[0].length} cells, so x must have ${ym[0].length} columns with one regressor per row (it has ${count(xm[0].length, "column")})`);
    }
    ym = transpose(ym);
    xm = transpose(xm);
    yRow = yOrigin?.column ?? 1;
    xRow = xOrigin?.column ?? 1;
  } else if (ym[0].length !== 1) {
    fail(`y must be one column (it has ${ym[0].length} columns); put the regressors in x`);
  }
  // Ranges of the same height share the header row: when one starts with a header, a first row of
  // the other that is blank in every cell is its header too (its columns keep their default names).
  let yHead = isHeaderRow(ym[0]);
  let xHead = isHeaderRow(xm[0]);
  if (ym.length === xm.length && yHead !== xHead) {
    if (!yHead && ym[0].every(isBlankCell)) yHead = true;
    if (!xHead && xm[0].every(isBlankCell)) xHead = true;
  }
  // Which columns of x have a role: keys are read as text, weights and instruments as numbers.
  const yFirst = yHead ? headerNames(ym[0], () => "y").names[0] : "y";
  const rangeNames = xColumnNames(yFirst, xHead ? xm[0] : xm[0].map(() => null));
  const role = new Array<string | null>(rangeNames.length).fill(null);
  const keyCols = new Set<number>();
  const claim = (ref: string, key: string, isKey: boolean): number => {
    const j = roleColumn(ref, rangeNames, key);
    const had = role[j];
    if (had !== null && had !== key) {
      const keyRoles = ["absorb", "cluster", "panel", "time"];
      // A key may be absorbed, clustered on, a panel unit and a period at once; nothing else doubles up.
      if (!(keyRoles.includes(had) && keyRoles.includes(key))) {
        fail(`${cut(rangeNames[j])} is named in both ${had}= and ${key}=; a column can take only one of these roles (factors= makes indicator terms, absorb= fixed effects, weights= and instruments= are numbers)`);
      }
    }
    if (had === null) role[j] = key;
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
  const regressorCols: number[] = [];
  for (let j = 0; j < rangeNames.length; j++) if (role[j] === null) regressorCols.push(j);
  if (regressorCols.length === 0 && factorCols.length === 0 && absorbCols.length === 0) {
    fail("every column of x has a role (keys, weights or instruments): x needs at least one regressor");
  }

  const yr = readRange(ym, () => "y", yRow, yHead, NO_KEYS, yGrid);
  const xr = readRange(xm, defaultXName, xRow, xHead, keyCols, xGrid);
  if (yr.rows !== xr.rows) {
    fail(`y has ${count(yr.rows, "row")} of data and x has ${xr.rows}${yr.header || xr.header ? " (after the header row)" : ""}; give both ranges the same rows`);
  }
  if (yr.rows === 0) fail("y and x have a header row but no data rows below it");
  let rows = yr.rows;
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
  if (rows === 0) fail("y and x are blank in every row: check that the ranges hold the data");
  // Names unique across y and x (a y header equal to an x header would make two terms alike).
  const names = uniqueNames([yr.names[0], ...xr.names]);
  yr.names = [names[0]];
  xr.names = names.slice(1);
  refuseTextColumns(yr, rows, true);
  for (const j of [weightCol, ...instrumentCols]) {
    if (j >= 0 && 2 * xr.text[j].count > rows) fail(`${cut(xr.names[j])} holds text, but ${role[j]}= needs numbers: check the column, or name it in absorb=, factors= or cluster= if it is a key`);
  }
  refuseTextColumns(xr, rows, false);
  const y = yr.columns[0];
  const x = regressorCols.map((j) => xr.columns[j]);
  const k = x.length;
  const wCol = weightCol >= 0 ? xr.columns[weightCol] : null;
  const zCols = instrumentCols.map((j) => xr.columns[j]);
  const used = new Int32Array(rows);
  const weightRows = new RowList();
  let leftOutWeight = 0;
  const rowNumbers = new Int32Array(rows);
  const blankRows = new RowList();
  const numericRows = new RowList();
  const numericText = yr.numericText || xr.numericText;
  let leftOut = 0;
  let w = 0;
  if (wCol === null && !anyIssue(yr.issues, xr.issues, rows)) w = keepAll(used, rowNumbers, yr.firstRow, rows); // the usual range: every row used, nothing moves
  else for (let i = 0; i < rows; i++) {
    if (yr.issues[i] !== 0 || xr.issues[i] !== 0) {
      leftOut++;
      blankRows.add(yr.firstRow + i);
      if (numericText && (yr.numericText?.[i] || xr.numericText?.[i])) numericRows.add(yr.firstRow + i);
      continue;
    }
    if (wCol && !(wCol[i] > 0)) {
      leftOutWeight++;
      weightRows.add(yr.firstRow + i);
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
  if (w === 0 && leftOutWeight > 0 && leftOut === 0) {
    fail(`every row's weight in ${cut(rangeNames[weightCol])} is zero or negative; weights= needs positive weights`);
  }
  if (w === 0) {
    // Name the columns that are unusable most often, so the analyst knows where to look.
    const cols = [...yr.names, ...xr.names].map((name, j) => {
      let bad = 0;
      const kc = j === 0 ? null : xr.keys[j - 1];
      if (kc) for (let i = 0; i < rows; i++) bad += kc[i] === null ? 1 : 0;
      else {
        const c = j === 0 ? yr.columns[0] : xr.columns[j - 1];
        for (let i = 0; i < rows; i++) if (c[i] !== c[i]) bad++;
      }
      return { name, bad };
    }).filter((c) => c.bad > 0).sort((a, b) => b.bad - a.bad).slice(0, 3);
    const worst = cols.map((c) => `${c.name} in ${c.bad === rows ? "every row" : count(c.bad, "row")}`).join(", ");
    fail(`no row has a number in y and in every x column: ${rowsPhrase(blankRows, 5, rows)} ${rows === 1 ? "has" : "have"} a blank, text or error cell (${worst}); check that the ranges hold the data`);
  }
  const example = numericRows.count > 0 ? firstNumericText(yr, xr) : null;
  const unnamed = [...yr.unnamed.map(() => yr.names[0]), ...xr.unnamed.map((j) => xr.names[j])];
  const usedRows = used.subarray(0, w);
  const keyOf = (j: number) => keyColumn(xr.names[j], xr.keys[j] as (string | null)[], usedRows);
  const roleColumns: RoleColumns = {
    absorb: absorbCols.map(keyOf),
    factors: factorCols.map(keyOf),
    cluster: clusterCols.map(keyOf),
    panel: panelCol >= 0 ? keyOf(panelCol) : null,
    time: timeCol >= 0 ? keyOf(timeCol) : null,
    weights: wCol ? wCol.subarray(0, w) : null,
    weightsName: weightCol >= 0 ? xr.names[weightCol] : null,
    instruments: zCols.map((c) => c.subarray(0, w)),
    instrumentNames: instrumentCols.map((j) => xr.names[j]),
  };
  const regressorOf = new Int32Array(xr.names.length).fill(-1);
  regressorCols.forEach((j, r) => (regressorOf[j] = r));
  return {
    yName: yr.names[0],
    xNames: regressorCols.map((j) => xr.names[j]),
    columnNames: xr.names,
    regressorOf,
    roles: roleColumns,
    leftOutWeight,
    leftOutWeightRows: weightRows,
    y: y.subarray(0, w),
    x: x.map((c) => c.subarray(0, w)),
    rowNumbers: rowNumbers.subarray(0, w),
    leftOutBlank: leftOut,
    leftOutBlankRows: blankRows,
    numericTextRows: numericRows,
    numericTextExample: example,
    unnamed,
    trailingBlank: trailing,
    firstRow: yr.firstRow,
    dataRows: rows,
    yHeader: yr.header,
  };
}

/** Whether any of the first `rows` rows has an issue in y or in x. */
function anyIssue(a: Uint8Array, b: Uint8Array, rows: number): boolean {
  for (let i = 0; i < rows; i++) if ((a[i] | b[i]) !== 0) return true;
  return false;
}

/** Every row used, in place: used[i] = i and its sheet row. Returns the count. */
function keepAll(used: Int32Array, rowNumbers: Int32Array, firstRow: number, rows: number): number {
  for (let i = 0; i < rows; i++) {
    used[i] = i;
    rowNumbers[i] = firstRow + i;
  }
  return rows;
}

/** The first cell (in sheet order) holding text that reads as a number, in y or x. */
function firstNumericText(yr: RangeRead, xr: RangeRead): { column: string; row: number; text: string } | null {
  let best: { column: string; row: number; text: string } | null = null;
  for (const r of [yr, xr]) {
    r.text.forEach((t, j) => {
      if (t.numeric > 0 && (best === null || r.firstRow + t.firstNumeric < best.row)) {
        best = { column: r.names[j], row: r.firstRow + t.firstNumeric, text: t.firstNumericText };
      }
    });
  }
  return best;
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
