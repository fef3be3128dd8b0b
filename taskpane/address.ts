/**
 * Sheet addresses as an analyst types them and as the host reports them: "C1:C1249", "Sales!$D$1:$G$1249",
 * "'Store sales'!B3", whole columns "C:C" and whole rows "2:5". Pure functions, no host API.
 */

/** Sheet size limits of the host's grid (rows, columns). */
export const MAX_ROWS = 1048576;
export const MAX_COLUMNS = 16384;

/** A rectangle on a sheet, 1-based and inclusive; sheet null when the text named none. */
export interface Address {
  sheet: string | null;
  top: number;
  left: number;
  bottom: number;
  right: number;
}

export type Parsed<T> = { ok: true; value: T } | { ok: false; message: string };

/** 1 → "A", 27 → "AA". */
export function columnLetters(column: number): string {
  let s = "";
  let c = column;
  while (c > 0) {
    const m = (c - 1) % 26;
    s = String.fromCharCode(65 + m) + s;
    c = Math.floor((c - 1) / 26);
  }
  return s;
}

/** "A" → 1, "aa" → 27; 0 when the text is not letters. */
export function columnNumber(letters: string): number {
  if (!/^[A-Za-z]{1,3}$/.test(letters)) return 0;
  let c = 0;
  for (const ch of letters.toUpperCase()) c = c * 26 + (ch.charCodeAt(0) - 64);
  return c;
}

/** A sheet name as a formula needs it: quoted when it holds anything but letters, digits, _ and . */
export function quoteSheet(name: string): string {
  return /^[A-Za-z_][A-Za-z0-9_.]*$/.test(name) ? name : `'${name.replace(/'/g, "''")}'`;
}

/** Splits "Sheet!ref" (the sheet may be quoted with '' for a quote); the ref part is returned as typed. */
function splitSheet(text: string): Parsed<{ sheet: string | null; ref: string }> {
  const t = text.trim();
  if (t.startsWith("'")) {
    let i = 1;
    let name = "";
    while (i < t.length) {
      if (t[i] === "'") {
        if (t[i + 1] === "'") {
          name += "'";
          i += 2;
          continue;
        }
        break;
      }
      name += t[i];
      i++;
    }
    if (t[i] !== "'" || t[i + 1] !== "!") return { ok: false, message: `"${text}" opens a quoted sheet name but does not close it with '! before the cells` };
    return { ok: true, value: { sheet: name, ref: t.slice(i + 2) } };
  }
  const bang = t.lastIndexOf("!");
  if (bang === 0) return { ok: false, message: `"${text}" has no sheet name before the !` };
  if (bang > 0) return { ok: true, value: { sheet: t.slice(0, bang), ref: t.slice(bang + 1) } };
  return { ok: true, value: { sheet: null, ref: t } };
}

type Corner = { row: number | null; column: number | null };

function corner(part: string): Corner | null {
  const m = /^\$?([A-Za-z]{0,3})\$?(\d*)$/.exec(part);
  if (!m || (m[1] === "" && m[2] === "")) return null;
  const column = m[1] === "" ? null : columnNumber(m[1]);
  const row = m[2] === "" ? null : Number(m[2]);
  return { row, column };
}

/**
 * Parses an address. Whole columns ("C:E") span every row and whole rows ("2:5") every column, as the
 * host reads them; the reader clips them to the used part of the sheet.
 * @example parseAddress("Sales!$C$1:$C$1249") // { sheet: "Sales", top: 1, left: 3, bottom: 1249, right: 3 }
 */
export function parseAddress(text: string): Parsed<Address> {
  if (typeof text !== "string" || text.trim() === "") return { ok: false, message: "no address given: type one such as C1:C157, or use the selection" };
  const split = splitSheet(text);
  if (!split.ok) return split;
  const { sheet, ref } = split.value;
  const parts = ref.replace(/\s+/g, "").split(":");
  if (parts.length > 2 || parts[0] === "") return { ok: false, message: `"${text}" is not a cell address; write it like C1:C157 or Sales!D1:G157` };
  const a = corner(parts[0]);
  const b = parts.length === 2 ? corner(parts[1]) : a;
  if (!a || !b) return { ok: false, message: `"${text}" is not a cell address; write it like C1:C157 or Sales!D1:G157` };
  const wholeColumns = a.row === null && b.row === null && a.column !== null && b.column !== null;
  const wholeRows = a.column === null && b.column === null && a.row !== null && b.row !== null;
  if (!wholeColumns && !wholeRows && (a.row === null || a.column === null || b.row === null || b.column === null)) {
    return { ok: false, message: `"${text}" mixes a column and a row reference; write it like C1:C157, C:C or 2:5` };
  }
  if (parts.length === 1 && (wholeColumns || wholeRows)) return { ok: false, message: `"${text}" is not a cell address; a whole column is written C:C` };
  const top = wholeColumns ? 1 : Math.min(a.row as number, b.row as number);
  const bottom = wholeColumns ? MAX_ROWS : Math.max(a.row as number, b.row as number);
  const left = wholeRows ? 1 : Math.min(a.column as number, b.column as number);
  const right = wholeRows ? MAX_COLUMNS : Math.max(a.column as number, b.column as number);
  if (top < 1 || left < 1 || bottom > MAX_ROWS || right > MAX_COLUMNS) return { ok: false, message: `"${text}" lies outside the sheet (at most ${MAX_ROWS} rows and column ${columnLetters(MAX_COLUMNS)})` };
  return { ok: true, value: { sheet, top, left, bottom, right } };
}

/** Writes an address; absolute adds $ signs (for formulas); the sheet is included when known and asked for. */
export function formatAddress(a: Address, options: { sheet?: boolean; absolute?: boolean } = {}): string {
  const d = options.absolute ? "$" : "";
  const prefix = options.sheet !== false && a.sheet ? `${quoteSheet(a.sheet)}!` : "";
  const tl = `${d}${columnLetters(a.left)}${d}${a.top}`;
  if (a.top === a.bottom && a.left === a.right) return prefix + tl;
  return `${prefix}${tl}:${d}${columnLetters(a.right)}${d}${a.bottom}`;
}

/** The common part of two rectangles (the sheet of the first is kept), or null when they do not meet. */
export function intersect(a: Address, b: Address): Address | null {
  const top = Math.max(a.top, b.top);
  const left = Math.max(a.left, b.left);
  const bottom = Math.min(a.bottom, b.bottom);
  const right = Math.min(a.right, b.right);
  if (top > bottom || left > right) return null;
  return { sheet: a.sheet, top, left, bottom, right };
}

export function rowCount(a: Address): number {
  return a.bottom - a.top + 1;
}

export function columnCount(a: Address): number {
  return a.right - a.left + 1;
}

/** The address of the cell at (row, column) offsets from a rectangle's top left. */
export function offsetCell(a: Address, rowOffset: number, columnOffset: number): Address {
  const top = a.top + rowOffset;
  const left = a.left + columnOffset;
  return { sheet: a.sheet, top, left, bottom: top, right: left };
}
