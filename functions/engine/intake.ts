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
import { fail, count, rowsPhrase } from "./problems";

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
  /** One array per column, NaN where the cell is unusable. */
  columns: Float64Array[];
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
 * Reads one range into numeric columns.
 * @param cells row-major 2-D array of cell values
 * @param defaultNames names to use without a header row
 * @param originRow sheet row of the range's first row (1 when unknown: rows are then range rows)
 */
export function readRange(cells: unknown[][], defaultNames: (j: number) => string, originRow: number): RangeRead {
  const width = cells[0].length;
  const header = cells[0].every(isHeaderCell);
  const start = header ? 1 : 0;
  const rows = cells.length - start;
  const names: string[] = [];
  for (let j = 0; j < width; j++) names.push(header ? String(cells[0][j]).trim() : defaultNames(j));
  const columns: Float64Array[] = [];
  for (let j = 0; j < width; j++) columns.push(new Float64Array(rows));
  const issues = new Uint8Array(rows);
  for (let i = 0; i < rows; i++) {
    const row = cells[i + start];
    let issue = 0;
    for (let j = 0; j < width; j++) {
      const v = row[j];
      let x: number;
      if (typeof v === "number" && v - v === 0) x = v; // fast path: a finite number
      else {
        ISSUE[0] = 0;
        x = cellNumber(v);
        if (issue === 0 && ISSUE[0] !== 0) issue = ISSUE[0];
      }
      columns[j][i] = x;
    }
    issues[i] = issue;
  }
  return { names, header, columns, issues, rows, firstRow: originRow + start };
}

export interface RawData {
  yName: string;
  xNames: string[];
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
export function readYX(yCells: unknown, xCells: unknown, yOrigin: Origin | null, xOrigin: Origin | null): RawData {
  let ym = asMatrix(yCells, "y");
  let xm = asMatrix(xCells, "x");
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
  const yr = readRange(ym, () => "y", yRow);
  const xr = readRange(xm, (j) => `x${j + 1}`, xRow);
  if (yr.rows !== xr.rows) {
    fail(`y has ${count(yr.rows, "row")} of data and x has ${xr.rows}${yr.header || xr.header ? " (after the header row)" : ""}; give both ranges the same rows`);
  }
  if (yr.rows === 0) fail("y and x have a header row but no data rows below it");
  const k = xr.columns.length;
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
  const y = yr.columns[0];
  const x = xr.columns;
  const rowNumbers = new Int32Array(rows);
  const blankRows: number[] = [];
  let leftOut = 0;
  let w = 0;
  for (let i = 0; i < rows; i++) {
    if (yr.issues[i] !== 0 || xr.issues[i] !== 0) {
      leftOut++;
      if (blankRows.length < KEEP_ROW_NUMBERS) blankRows.push(yr.firstRow + i);
      continue;
    }
    if (w !== i) {
      y[w] = y[i];
      for (let j = 0; j < k; j++) x[j][w] = x[j][i];
    }
    rowNumbers[w] = yr.firstRow + i;
    w++;
  }
  if (w === 0) {
    fail(`no row has a number in y and in every x column: all ${count(rows, "row")} have a blank, text or error cell${rows <= 8 ? "" : " (first: " + rowsPhrase(blankRows, 5) + ")"}; check that the ranges hold the data`);
  }
  return {
    yName: yr.names[0],
    xNames: uniqueNames(xr.names),
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
