/**
 * The preview's workbook: a sparse grid of cells on named sheets, formulas of the form
 * =ELX.NAME(arg, …) evaluated by the functions that dist/functions.js registered through
 * CustomFunctions.associate (the host's path), spilled into the cells below and to the right as the
 * host spills them (#SPILL! when the room is taken). No value is precomputed: every formula is
 * evaluated from the cells whenever a cell changes.
 *
 * What the preview does like the web host: blank cells reach `any` parameters as null; an omitted
 * optional argument is null; null inside a returned matrix shows as 0; the invocation carries the
 * formula's address and its parameters' addresses. What it does not: functions nested inside other
 * expressions, recalculation of only the dependents (everything is recalculated; the fit cache makes
 * that cheap), and whole-column references are passed down to the last used row, not the sheet's end.
 */
import { columnLetters, formatAddress, parseAddress, quoteSheet, type Address } from "../taskpane/address";

export interface ErrorValue {
  code: string;
  message?: string;
}
export type CellValue = number | string | boolean | null | ErrorValue;

export interface Cell {
  /** What was typed: a formula ("=…") or a constant's text; null for a spilled cell. */
  input: string | null;
  value: CellValue;
  /** For a spilled cell, the key of the formula cell it came from. */
  spillFrom?: number;
  /** For a formula cell, the size of its result. */
  spill?: { rows: number; columns: number };
  /** A cleared cell over a computed base value (it reads as blank). */
  cleared?: boolean;
}

export type CellFunction = (...args: unknown[]) => unknown;

export interface FunctionMetadata {
  id: string;
  parameters: { name: string; dimensionality?: string; optional?: boolean; repeating?: boolean }[];
  options?: { requiresAddress?: boolean; requiresParameterAddresses?: boolean };
}

const KEY_COLUMNS = 20000;
export const key = (row: number, column: number): number => row * KEY_COLUMNS + column;
export const rowOf = (k: number): number => Math.floor(k / KEY_COLUMNS);
export const columnOf = (k: number): number => k % KEY_COLUMNS;

export function isError(v: unknown): v is ErrorValue {
  return !!v && typeof v === "object" && typeof (v as { code?: unknown }).code === "string" && (v as { code: string }).code.startsWith("#");
}

/**
 * Values a sheet computes instead of storing (the synthetic big sheet): `rows` × `columns` from A1,
 * each row produced on demand. Cells typed over it (formulas, values blocks, edits) take precedence.
 */
export interface SheetBase {
  rows: number;
  columns: number;
  /** The values of one 1-based sheet row, columns 1..columns (null: blank). */
  row(r: number): CellValue[];
}

/**
 * Rows of the computed sheet computed at a time (about 2 ms of work), and how many such slices are
 * kept: a block of the pane's reader is at most 100,000 cells, so 100 slices hold every row of one
 * block while y and then x are read over it (at 11 columns, 8.8 MB outside the JS heap).
 */
export const SLICE_ROWS = 1000;
const MAX_SLICES = 100;

/** Base values of rows top..bottom: numbers row-major in `numbers`, other values by index in `other`. */
export interface BaseSlice {
  top: number;
  bottom: number;
  numbers: Float64Array;
  other: Map<number, CellValue>;
}

/** A computed cell: its typed text is made only when asked for (the formula bar), not for every read. */
class BaseCell implements Cell {
  constructor(readonly value: CellValue) {}
  get input(): string | null {
    return typeof this.value === "object" ? null : String(this.value);
  }
}

export class Sheet {
  readonly cells = new Map<number, Cell>();
  private bounds: Address | null | undefined = undefined;
  private baseRow = -1;
  private baseValues: CellValue[] = [];
  /** Computed values under the typed cells, or null. */
  base: SheetBase | null = null;
  constructor(public name: string) {}

  /** A computed cell (null when the base has nothing there). */
  private baseCell(row: number, column: number): Cell | undefined {
    const b = this.base;
    if (!b || row < 1 || row > b.rows || column < 1 || column > b.columns) return undefined;
    if (row !== this.baseRow) {
      this.baseValues = b.row(row);
      this.baseRow = row;
    }
    const v = this.baseValues[column - 1];
    return v === null || v === undefined ? undefined : new BaseCell(v);
  }

  /** Call after changing cells (the used bounds are recomputed on the next read). */
  touch(): void {
    this.bounds = undefined;
  }

  get(row: number, column: number): Cell | undefined {
    const c = this.cells.get(key(row, column));
    if (c !== undefined || !this.base) return c && c.cleared ? undefined : c;
    return this.baseCell(row, column);
  }

  value(row: number, column: number): CellValue {
    const c = this.get(row, column);
    return c ? c.value : null;
  }

  /** Base rows computed lately, by their first row: numbers in typed arrays, kept off the young generation. */
  private readonly slices = new Map<number, BaseSlice>();
  private slicesOf: SheetBase | null = null;

  /**
   * Computes (or finds) the base values of rows top..bottom, every base column: numbers row-major in a
   * Float64Array, anything else (text, blank, an error) by its index in `other`. A typed array's
   * values live outside the JS heap, so slices held between the page's turns cost a minor collection
   * nothing to keep (arrays of rows held that long are copied by every scavenge they survive).
   */
  baseSlice(top: number, bottom: number): BaseSlice | null {
    const b = this.base;
    if (!b) return null;
    if (this.slicesOf !== b) {
      this.slices.clear();
      this.slicesOf = b;
    }
    const hit = this.slices.get(top);
    if (hit && hit.bottom === bottom) return hit;
    const width = b.columns;
    const numbers = new Float64Array((bottom - top + 1) * width);
    const other = new Map<number, CellValue>();
    for (let r = top; r <= bottom; r++) {
      const row = r >= 1 && r <= b.rows ? b.row(r) : [];
      const at = (r - top) * width;
      for (let c = 0; c < width; c++) {
        const v = row[c] ?? null;
        if (typeof v === "number") numbers[at + c] = v;
        else other.set(at + c, v);
      }
    }
    const slice = { top, bottom, numbers, other };
    // the slices of one block (y and then x read over the same rows compute them once)
    if (this.slices.size >= MAX_SLICES) this.slices.delete(this.slices.keys().next().value as number);
    this.slices.set(top, slice);
    return slice;
  }

  /**
   * The values of a rectangle as the host's values property gives them ("" for blank, an error's
   * code), from the base slices of SLICE_ROWS rows starting at `a.top` (computed now unless
   * baseSlice computed them already), with typed cells laid over them.
   */
  valuesBlock(a: { top: number; left: number; bottom: number; right: number }): unknown[][] {
    const b = this.base;
    const out: unknown[][] = new Array(a.bottom - a.top + 1);
    const width = a.right - a.left + 1;
    const typed = this.cells.size > 0;
    for (let top = a.top; top <= a.bottom; top += SLICE_ROWS) {
      const bottom = Math.min(a.bottom, top + SLICE_ROWS - 1);
      const slice = this.baseSlice(top, bottom);
      for (let r = top; r <= bottom; r++) {
        const line: unknown[] = new Array(width);
        const at = (r - top) * (b ? b.columns : 0);
        for (let c = a.left; c <= a.right; c++) {
          let v: CellValue = null;
          if (slice && c <= (b as SheetBase).columns) {
            const i = at + c - 1;
            v = slice.other.size > 0 && slice.other.has(i) ? (slice.other.get(i) as CellValue) : slice.numbers[i];
          }
          if (typed) {
            const t = this.cells.get(key(r, c));
            if (t) v = t.cleared ? null : t.value;
          }
          line[c - a.left] = v === null ? "" : isError(v) ? v.code : v;
        }
        out[r - a.top] = line;
      }
    }
    return out;
  }

  /** Whether a computed value lies under this cell. */
  hasBase(row: number, column: number): boolean {
    return this.baseCell(row, column) !== undefined;
  }

  /** Bounds of the cells holding something (a value, a spilled value or an input), or null. */
  usedBounds(): Address | null {
    if (this.bounds === undefined) this.bounds = this.computeBounds();
    return this.bounds ? { ...this.bounds } : null;
  }

  private computeBounds(): Address | null {
    let top = Infinity;
    let left = Infinity;
    let bottom = -Infinity;
    let right = -Infinity;
    if (this.base && this.base.rows > 0 && this.base.columns > 0) {
      top = 1;
      left = 1;
      bottom = this.base.rows;
      right = this.base.columns;
    }
    for (const [k, c] of this.cells) {
      if (c.input === null && (c.value === null || c.value === "")) continue;
      const r = rowOf(k);
      const col = columnOf(k);
      if (r < top) top = r;
      if (r > bottom) bottom = r;
      if (col < left) left = col;
      if (col > right) right = col;
    }
    return bottom < 0 ? null : { sheet: this.name, top, left, bottom, right };
  }
}

/** A constant typed into a cell: a number, TRUE/FALSE, or text. */
export function literal(text: string): CellValue {
  const t = text.trim();
  if (t === "") return null;
  if (/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t)) return Number(t);
  if (/^true$/i.test(t)) return true;
  if (/^false$/i.test(t)) return false;
  return text;
}

type Arg = { kind: "ref"; address: Address; text: string } | { kind: "value"; value: CellValue } | { kind: "omitted" };

const REF = /^(?:'((?:[^']|'')+)'!|([A-Za-z_][A-Za-z0-9_.]*)!)?(\$?[A-Za-z]{1,3}\$?\d+(?::\$?[A-Za-z]{1,3}\$?\d+)?|\$?[A-Za-z]{1,3}:\$?[A-Za-z]{1,3}|\$?\d+:\$?\d+)(?![A-Za-z0-9_(])/;

/** Parses =NAME(arg, …); throws a message when the text is not such a formula. */
export function parseFormula(text: string, defaultSheet: string): { name: string; args: Arg[] } {
  let s = text.trim();
  if (!s.startsWith("=")) throw new Error("a formula starts with =");
  s = s.slice(1).trim();
  const m = /^([A-Za-z_][A-Za-z0-9_.]*)\s*\(/.exec(s);
  if (!m) throw new Error("write the formula as =ELX.NAME(y, x, \"options\")");
  const name = m[1];
  let i = m[0].length;
  const args: Arg[] = [];
  const skip = () => {
    while (i < s.length && /\s/.test(s[i])) i++;
  };
  let expectArg = true;
  for (;;) {
    skip();
    if (i >= s.length) throw new Error("the formula is missing its closing )");
    const ch = s[i];
    if (ch === ")") {
      if (args.length > 0 && expectArg) args.push({ kind: "omitted" });
      i++;
      break;
    }
    if (ch === ",") {
      if (expectArg) args.push({ kind: "omitted" });
      expectArg = true;
      i++;
      continue;
    }
    if (!expectArg) throw new Error(`a comma is missing before "${s.slice(i, i + 12)}"`);
    const rest = s.slice(i);
    if (ch === '"') {
      let j = i + 1;
      let str = "";
      while (j < s.length) {
        if (s[j] === '"') {
          if (s[j + 1] === '"') {
            str += '"';
            j += 2;
            continue;
          }
          break;
        }
        str += s[j];
        j++;
      }
      if (j >= s.length) throw new Error("a text argument is missing its closing quote");
      args.push({ kind: "value", value: str });
      i = j + 1;
    } else if (/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?(?![A-Za-z0-9_:$])/i.test(rest)) {
      const num = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?/i.exec(rest) as RegExpExecArray;
      args.push({ kind: "value", value: Number(num[0]) });
      i += num[0].length;
    } else if (/^(true|false)(?![A-Za-z0-9_(])/i.test(rest)) {
      const b = /^(true|false)/i.exec(rest) as RegExpExecArray;
      args.push({ kind: "value", value: b[0].toLowerCase() === "true" });
      i += b[0].length;
    } else {
      const r = REF.exec(rest);
      if (!r) throw new Error(`"${rest.slice(0, 16)}" is not a cell range, a number or a "text"`);
      const sheet = r[1] !== undefined ? r[1].replace(/''/g, "'") : r[2] !== undefined ? r[2] : defaultSheet;
      const p = parseAddress(r[3]);
      if (!p.ok) throw new Error(p.message);
      args.push({ kind: "ref", address: { ...p.value, sheet }, text: r[0] });
      i += r[0].length;
    }
    expectArg = false;
  }
  skip();
  if (i < s.length) throw new Error(`unexpected "${s.slice(i, i + 12)}" after the closing )`);
  return { name, args };
}

export class Workbook {
  readonly sheets: Sheet[] = [];
  activeSheet: Sheet;
  /** The selection: a rectangle on the active sheet (whole columns reach the sheet's last row). */
  selection: Address;
  /** The active cell (the formula bar shows its input). */
  active: { row: number; column: number } = { row: 1, column: 1 };
  readonly registry = new Map<string, CellFunction>();
  readonly metadata = new Map<string, FunctionMetadata>();
  private readonly listeners: (() => void)[] = [];
  recalcCount = 0;
  lastRecalcMs = 0;

  constructor(sheetNames: string[]) {
    for (const n of sheetNames) this.sheets.push(new Sheet(n));
    this.activeSheet = this.sheets[0];
    this.selection = { sheet: this.activeSheet.name, top: 1, left: 1, bottom: 1, right: 1 };
  }

  sheet(name: string): Sheet | undefined {
    return this.sheets.find((s) => s.name.toLowerCase() === name.toLowerCase());
  }

  private readonly selectListeners: (() => void)[] = [];

  /** Called when the selection is set from outside the sheet view (the pane's host calls). */
  onSelect(f: () => void): void {
    this.selectListeners.push(f);
  }

  /** Selects a rectangle of a sheet (which becomes the active sheet); the active cell is its top left. */
  select(sheet: Sheet, a: Address): void {
    this.activeSheet = sheet;
    this.selection = { sheet: sheet.name, top: a.top, left: a.left, bottom: a.bottom, right: a.right };
    this.active = { row: a.top, column: a.left };
    for (const f of this.selectListeners) f();
  }

  /** Adds a sheet (a name not yet taken) at the end of the workbook. */
  addSheet(name: string): Sheet {
    if (this.sheet(name)) throw new Error(`a sheet named ${name} exists`);
    const s = new Sheet(name);
    this.sheets.push(s);
    return s;
  }

  onChange(f: () => void): void {
    this.listeners.push(f);
  }

  private readonly editListeners: ((sheet: Sheet, area: Address) => void)[] = [];

  /** Called when cells are typed or cleared (not when formulas recalculate): the host's worksheet change event. */
  onEdit(f: (sheet: Sheet, area: Address) => void): () => void {
    this.editListeners.push(f);
    return () => {
      const i = this.editListeners.indexOf(f);
      if (i >= 0) this.editListeners.splice(i, 1);
    };
  }

  /** Host read requests served (cells in the largest one, and its worst-case response size): what the chunked reader must keep small. */
  readonly reads = { requests: 0, largestCells: 0, largestBytes: 0 };

  changed(): void {
    for (const f of this.listeners) f();
  }

  /** Sets what is typed into cells (formulas or constants; "" clears), then recalculates once. */
  setInputs(sheet: Sheet, updates: { row: number; column: number; input: string }[]): void {
    for (const u of updates) {
      const k = key(u.row, u.column);
      if (u.input === "") {
        if (sheet.hasBase(u.row, u.column)) sheet.cells.set(k, { input: null, value: null, cleared: true });
        else sheet.cells.delete(k);
      } else sheet.cells.set(k, { input: u.input, value: u.input.startsWith("=") ? null : literal(u.input) });
    }
    sheet.touch();
    if (updates.length > 0) {
      const rows = updates.map((u) => u.row);
      const cols = updates.map((u) => u.column);
      const area: Address = { sheet: sheet.name, top: Math.min(...rows), left: Math.min(...cols), bottom: Math.max(...rows), right: Math.max(...cols) };
      for (const f of [...this.editListeners]) f(sheet, area);
    }
    this.recalc();
  }

  /** Bulk load of constants (no recalculation). */
  loadValues(sheet: Sheet, top: number, left: number, rows: CellValue[][]): void {
    rows.forEach((r, i) =>
      r.forEach((v, j) => {
        if (v === null || v === "") return;
        sheet.cells.set(key(top + i, left + j), { input: typeof v === "object" ? null : String(v), value: v });
      }),
    );
    sheet.touch();
  }

  /** Values of a rectangle as the host passes them to `any[][]` parameters (blank → null). */
  rangeValues(a: Address): CellValue[][] {
    const sheet = this.sheet(a.sheet ?? this.activeSheet.name);
    if (!sheet) return [[{ code: "#REF!", message: `no sheet ${a.sheet}` }]];
    let bottom = a.bottom;
    let right = a.right;
    const used = sheet.usedBounds();
    // Whole columns or rows: down to the last used row / across to the last used column.
    if (used && (a.bottom - a.top > 100000 || a.right - a.left > 1000)) {
      bottom = Math.max(a.top, Math.min(a.bottom, used.bottom));
      right = Math.max(a.left, Math.min(a.right, used.right));
    }
    const out: CellValue[][] = [];
    for (let r = a.top; r <= bottom; r++) {
      const row: CellValue[] = new Array(right - a.left + 1);
      for (let c = a.left; c <= right; c++) {
        const v = sheet.value(r, c);
        row[c - a.left] = v === "" ? null : v;
      }
      out.push(row);
    }
    return out;
  }

  /** Evaluates every formula cell of every sheet, in row then column order, and spills the results. */
  recalc(): void {
    const t0 = performance.now();
    for (const sheet of this.sheets) {
      for (const [k, c] of [...sheet.cells]) if (c.spillFrom !== undefined) sheet.cells.delete(k);
      sheet.touch();
      const formulas = [...sheet.cells.entries()].filter(([, c]) => c.input !== null && c.input.startsWith("=")).sort((a, b) => a[0] - b[0]);
      for (const [k, c] of formulas) {
        const result = this.evaluate(sheet, rowOf(k), columnOf(k), c.input as string);
        this.spill(sheet, k, c, result);
        sheet.touch();
      }
    }
    this.recalcCount++;
    this.lastRecalcMs = performance.now() - t0;
    this.changed();
  }

  private spill(sheet: Sheet, k: number, c: Cell, result: CellValue[][]): void {
    const r0 = rowOf(k);
    const c0 = columnOf(k);
    const rows = result.length;
    const columns = rows ? result[0].length : 0;
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < columns; j++) {
        if (i === 0 && j === 0) continue;
        const other = sheet.get(r0 + i, c0 + j);
        if (other && (other.input !== null || other.spillFrom !== undefined)) {
          c.value = { code: "#SPILL!", message: `the result needs ${formatAddress({ sheet: null, top: r0, left: c0, bottom: r0 + rows - 1, right: c0 + columns - 1 })} and ${columnLetters(c0 + j)}${r0 + i} is not empty` };
          c.spill = { rows: 1, columns: 1 };
          return;
        }
      }
    }
    c.value = rows ? result[0][0] : null;
    c.spill = { rows, columns };
    for (let i = 0; i < rows; i++) {
      for (let j = 0; j < columns; j++) {
        if (i === 0 && j === 0) continue;
        sheet.cells.set(key(r0 + i, c0 + j), { input: null, value: result[i][j], spillFrom: k });
      }
    }
  }

  /** Runs one formula as the host would and returns its result as a matrix of cell values. */
  evaluate(sheet: Sheet, row: number, column: number, text: string): CellValue[][] {
    let parsed: { name: string; args: Arg[] };
    try {
      parsed = parseFormula(text, sheet.name);
    } catch (e) {
      return [[{ code: "#NAME?", message: `cannot read the formula: ${(e as Error).message}` }]];
    }
    const upper = parsed.name.toUpperCase();
    if (!upper.startsWith("ELX.")) return [[{ code: "#NAME?", message: `${parsed.name} is not a function of this preview (it evaluates ELX functions)` }]];
    const id = upper.slice(4);
    const fn = this.registry.get(id);
    const meta = this.metadata.get(id);
    if (!fn || !meta) return [[{ code: "#NAME?", message: `ELX.${id} is not a registered function` }]];
    const params = meta.parameters;
    if (parsed.args.length > params.length) return [[{ code: "#VALUE!", message: `ELX.${id} takes at most ${params.length} arguments (${params.map((p) => p.name).join(", ")})` }]];
    const args: unknown[] = [];
    const addresses: string[] = [];
    for (let i = 0; i < params.length; i++) {
      const a: Arg = parsed.args[i] ?? { kind: "omitted" };
      const p = params[i];
      if (a.kind === "omitted") {
        if (!p.optional) return [[{ code: "#VALUE!", message: `ELX.${id} needs its ${p.name} argument` }]];
        args.push(null);
        addresses.push("");
      } else if (a.kind === "value") {
        args.push(p.dimensionality === "matrix" ? [[a.value]] : a.value);
        addresses.push("");
      } else {
        const vals = this.rangeValues(a.address);
        if (p.dimensionality === "matrix") args.push(vals);
        else if (vals.length === 1 && vals[0].length === 1) args.push(vals[0][0]);
        else return [[{ code: "#VALUE!", message: `${p.name} takes one value, not the range ${a.text}` }]];
        addresses.push(`${quoteSheet(a.address.sheet as string)}!${a.text.replace(/^.*!/, "").replace(/\$/g, "")}`);
      }
    }
    if (meta.options?.requiresAddress || meta.options?.requiresParameterAddresses) {
      args.push({ address: `${quoteSheet(sheet.name)}!${columnLetters(column)}${row}`, parameterAddresses: addresses, functionName: `ELX.${id}` });
    }
    try {
      const r = fn(...args);
      if (Array.isArray(r)) {
        if (r.length === 0 || !Array.isArray(r[0])) return [[{ code: "#VALUE!", message: "the function returned a malformed result" }]];
        return (r as unknown[][]).map((line) => line.map((v) => (v === null || v === undefined ? 0 : (v as CellValue))));
      }
      return [[r === null || r === undefined ? 0 : (r as CellValue)]];
    } catch (e) {
      if (isError(e)) return [[{ code: e.code, message: e.message }]];
      return [[{ code: "#VALUE!", message: e instanceof Error ? e.message : String(e) }]];
    }
  }
}
