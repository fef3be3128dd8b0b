/**
 * The pane's one door to the spreadsheet host. Every workbook read and write goes through this module,
 * through a runner that is Excel.run in the host (and in the preview, the preview's stand-in for it).
 *
 * Reads: the selection or a typed address, clipped to the used part of its sheet (a whole column such
 * as C:C is read as C1:C<last used row>), with each cell's value type so that a blank is told from a
 * zero. Writes: a block of formulas at a chosen cell, only after the whole block has been checked to
 * be empty; when anything is there, nothing is written and another place is offered.
 */
import { columnCount, formatAddress, intersect, MAX_COLUMNS, MAX_ROWS, offsetCell, parseAddress, rowCount, type Address } from "./address";

/** Runs one batch of host calls against a request context (Excel.run in the host). */
export type Runner = <T>(batch: (context: Excel.RequestContext) => Promise<T>) => Promise<T>;

export type Outcome<T> = { ok: true; value: T } | { ok: false; message: string };

/** Host value types as Range.valueTypes reports them. */
export type ValueType = "Empty" | "Double" | "String" | "Boolean" | "Error" | "Integer" | "Unknown" | "RichValue";

/** What the pane reads of one range. */
export interface RangeSnapshot {
  /** The rectangle read (after clipping to the used range), with its sheet. */
  area: Address;
  /** The address as read, e.g. "Sales!C1:C1249". */
  address: string;
  /** The address asked for (whole columns stay C:C). */
  requested: string;
  values: unknown[][];
  types: ValueType[][];
  /** True when the request reached past the used range and was cut to it. */
  clipped: boolean;
}

/** Largest number of cells read at once (the host's web limit is 5,000,000 per read). */
export const MAX_READ_CELLS = 5_000_000;

/** A cell of a formula block: offsets from the block's top left, and what to put there. */
export interface BlockCell {
  row: number;
  column: number;
  /** A formula ("=ELX.FIT(...)") or a plain text label. */
  content: string;
}

export interface FormulaBlock {
  /** Rows and columns the block needs, spilled results included. */
  height: number;
  width: number;
  cells: BlockCell[];
}

export type WriteResult =
  | { ok: true; address: string }
  | { ok: false; message: string; occupied: string[]; suggestion: string | null };

/** "1 row", "3 rows". */
function plural(n: number, word: string): string {
  return `${n} ${word}${n === 1 ? "" : "s"}`;
}

function message(e: unknown): string {
  if (e && typeof e === "object" && "message" in e) return String((e as { message: unknown }).message);
  return String(e);
}

/** Parses a sheet-qualified address as the host reports it ("Sales!A1:B2" or "'My sheet'!A1"). */
function hostAddress(text: unknown, what: string): Address {
  const p = parseAddress(String(text));
  if (!p.ok) throw new Error(`the host reported ${what} as "${String(text)}", which cannot be read`);
  return p.value;
}

/** Is a cell empty, from its value, value type and formula (a spilled result has a value and no formula). */
export function isEmptyCell(value: unknown, type?: unknown, formula?: unknown): boolean {
  if (formula !== undefined && formula !== null && formula !== "") return false;
  if (type !== undefined && type !== null && type !== "Empty") return false;
  return value === "" || value === null || value === undefined;
}

/** Plain cell values for the cell functions: blanks → null, error cells → { code }. */
export function engineValues(snapshot: RangeSnapshot): unknown[][] {
  const { values, types } = snapshot;
  return values.map((row, i) =>
    row.map((v, j) => {
      const t = types[i]?.[j];
      if (t === "Empty") return null;
      if (t === "Error") return { code: typeof v === "string" && v.startsWith("#") ? v : "#VALUE!", message: "error cell" };
      return v;
    }),
  );
}

export class Host {
  constructor(private readonly run: Runner) {}

  /** Reads the current selection (a single area), clipped to the used range of its sheet. */
  readSelection(): Promise<Outcome<RangeSnapshot>> {
    return this.guard("the selection", async (context) => {
      const selected = context.workbook.getSelectedRange();
      selected.load("address");
      await context.sync();
      const requested = String(selected.address);
      if (requested.includes(",")) return { ok: false, message: `the selection ${requested} has several areas; select one block of cells` };
      return this.readArea(context, selected.worksheet, hostAddress(requested, "the selection"), requested);
    });
  }

  /** Reads a typed address; without a sheet name, on the active sheet. */
  readAddress(text: string): Promise<Outcome<RangeSnapshot>> {
    const parsed = parseAddress(text);
    if (!parsed.ok) return Promise.resolve(parsed);
    return this.guard(`"${text}"`, async (context) => {
      const sheets = context.workbook.worksheets;
      const sheet = parsed.value.sheet ? sheets.getItemOrNullObject(parsed.value.sheet) : sheets.getActiveWorksheet();
      sheet.load("name");
      await context.sync();
      if (sheet.isNullObject) return { ok: false, message: `there is no sheet named "${parsed.value.sheet}" in this workbook` };
      return this.readArea(context, sheet, { ...parsed.value, sheet: String(sheet.name) }, text.trim());
    });
  }

  /**
   * The cells of a block that are not empty (values, spilled results or formulas), as addresses;
   * at most `limit` of them.
   */
  findOccupied(anchorText: string, height: number, width: number, limit = 6): Promise<Outcome<{ area: Address; occupied: string[] }>> {
    return this.guard(`the cells at ${anchorText}`, async (context) => {
      const target = await this.targetArea(context, anchorText, height, width);
      if (!target.ok) return target;
      const occupied = await this.occupiedIn(context, target.value.sheet, target.value.area, limit);
      return { ok: true, value: { area: target.value.area, occupied } };
    });
  }

  /**
   * Writes a formula block with its top left at the anchor cell, after checking, in the same batch,
   * that every cell of the block (the room its results spill into included) is empty. If any is not,
   * nothing is written: the result lists them and suggests a free place right of the used range.
   */
  writeBlock(anchorText: string, block: FormulaBlock): Promise<WriteResult> {
    return this.run(async (context) => {
      const target = await this.targetArea(context, anchorText, block.height, block.width);
      if (!target.ok) return { ok: false, message: target.message, occupied: [], suggestion: null } as WriteResult;
      const { sheet, area } = target.value;
      const occupied = await this.occupiedIn(context, sheet, area, 6);
      if (occupied.length > 0) {
        const suggestion = await this.freePlace(context, sheet, area, block);
        const where = formatAddress(area, { sheet: false });
        const list = occupied.length > 5 ? `${occupied.slice(0, 5).join(", ")} and more` : occupied.join(", ");
        return {
          ok: false,
          occupied,
          suggestion,
          message: `Nothing was written: the block needs ${where} (${plural(block.height, "row")} × ${plural(block.width, "column")}) and ${list} ${occupied.length === 1 ? "is" : "are"} not empty.` +
            (suggestion ? ` ${suggestion} is free.` : " Choose another cell."),
        } as WriteResult;
      }
      for (const cell of block.cells) {
        const at = offsetCell(area, cell.row, cell.column);
        sheet.getRange(formatAddress(at, { sheet: false })).formulas = [[cell.content]];
      }
      // Select the block, so the host scrolls to it and the analyst sees where it went.
      const written = sheet.getRange(formatAddress(area, { sheet: false }));
      if (typeof (written as { select?: unknown }).select === "function") written.select();
      await context.sync();
      return { ok: true, address: formatAddress(area) } as WriteResult;
    }).catch((e: unknown) => ({ ok: false, message: `Nothing was written: the host refused (${message(e)}).`, occupied: [], suggestion: null }) as WriteResult);
  }

  /**
   * Where a typed address lies once clipped to its sheet's used cells, without reading any value:
   * what the pane needs to choose between one read and the chunked reader (taskpane/chunks.ts).
   */
  measure(text: string): Promise<Outcome<{ area: Address; requested: string; clipped: boolean; used: Address }>> {
    const parsed = parseAddress(text);
    if (!parsed.ok) return Promise.resolve(parsed);
    return this.guard(`"${text}"`, async (context) => {
      const sheets = context.workbook.worksheets;
      const sheet = parsed.value.sheet ? sheets.getItemOrNullObject(parsed.value.sheet) : sheets.getActiveWorksheet();
      sheet.load("name");
      await context.sync();
      if (sheet.isNullObject) return { ok: false, message: `there is no sheet named "${parsed.value.sheet}" in this workbook` };
      const used = sheet.getUsedRangeOrNullObject(true);
      used.load("address");
      await context.sync();
      const area0: Address = { ...parsed.value, sheet: String(sheet.name) };
      if (used.isNullObject) return { ok: false, message: `${formatAddress(area0)} is empty: the sheet ${String(sheet.name)} holds no values` };
      const usedArea = hostAddress(used.address, "the used range");
      const area = intersect(area0, usedArea);
      if (!area) return { ok: false, message: `${formatAddress(area0)} is empty (the sheet's values lie in ${formatAddress({ ...usedArea, sheet: null })})` };
      const clipped = area.top !== area0.top || area.bottom !== area0.bottom || area.left !== area0.left || area.right !== area0.right;
      return { ok: true, value: { area, requested: text.trim(), clipped, used: { ...usedArea, sheet: String(sheet.name) } } };
    });
  }

  /** The values only (no value types, no formulas) of several areas, in one request. */
  readValues(areas: Address[]): Promise<Outcome<unknown[][][]>> {
    return this.guard(areas.map((a) => formatAddress(a)).join(" and "), async (context) => {
      const ranges = areas.map((a) => {
        const r = context.workbook.worksheets.getItem(a.sheet as string).getRange(formatAddress(a, { sheet: false }));
        r.load("values");
        return r;
      });
      await context.sync();
      return { ok: true, value: ranges.map((r) => r.values as unknown[][]) };
    });
  }

  /**
   * Watches the sheets for edits (the worksheet change event) until stop(): `changed()` gives the
   * first edited address inside one of the areas, or null. Where the host has no change events,
   * `watching` is false and the caller must check another way.
   */
  async watch(areas: Address[]): Promise<{ watching: boolean; changed: () => string | null; stop: () => Promise<void> }> {
    let first: string | null = null;
    const handles: { remove(): void; context?: unknown }[] = [];
    try {
      await this.run(async (context) => {
        const names = [...new Set(areas.map((a) => a.sheet as string))];
        for (const name of names) {
          const sheet = context.workbook.worksheets.getItem(name) as unknown as { onChanged?: { add(h: (e: { address?: string }) => Promise<void>): { remove(): void; context?: unknown } } };
          if (!sheet.onChanged) throw new Error("no change events");
          handles.push(
            sheet.onChanged.add(async (e) => {
              if (first !== null) return;
              const p = parseAddress(String(e.address ?? ""));
              const hit = p.ok ? areas.find((a) => a.sheet === name && intersect({ ...p.value, sheet: name }, a)) : areas.find((a) => a.sheet === name);
              if (hit) first = `${formatAddress({ sheet: name, top: p.ok ? p.value.top : hit.top, left: p.ok ? p.value.left : hit.left, bottom: p.ok ? p.value.bottom : hit.top, right: p.ok ? p.value.right : hit.left })}`;
            }),
          );
        }
        await context.sync();
      });
    } catch {
      return { watching: false, changed: () => null, stop: async () => undefined };
    }
    return {
      watching: true,
      changed: () => first,
      stop: async () => {
        const excel = (globalThis as unknown as { Excel?: { run?: (c: unknown, b: (c: Excel.RequestContext) => Promise<void>) => Promise<void> } }).Excel;
        for (const h of handles) {
          try {
            // a handler is removed in the context it was added in
            if (h.context && excel?.run) await excel.run(h.context, async (c) => { h.remove(); await c.sync(); });
            else h.remove();
          } catch {
            // the document may be closing: nothing left to stop
          }
        }
      },
    };
  }

  /** A document setting (saved with the workbook), or null. */
  getSetting(name: string): unknown {
    const s = documentSettings();
    return s ? s.get(name) : null;
  }

  /** Sets and saves a document setting; false when the host has no document settings or the save failed. */
  async setSetting(name: string, value: unknown): Promise<boolean> {
    const s = documentSettings();
    if (!s) return false;
    s.set(name, value);
    return new Promise((resolve) => s.saveAsync((r) => resolve(!r || String(r.status).toLowerCase() === "succeeded")));
  }

  /**
   * Writes a block of plain values (numbers and texts; "" leaves a cell empty) with its top left at
   * the anchor cell, under the same rule as writeBlock: only after checking, in the same batch, that
   * every cell of the block is empty; otherwise nothing is written and a free place is offered.
   */
  writeValues(anchorText: string, rows: ValuesBlock): Promise<WriteResult> {
    const height = rows.length;
    const width = Math.max(1, ...rows.map((r) => r.length));
    return this.run(async (context) => {
      const target = await this.targetArea(context, anchorText, height, width);
      if (!target.ok) return { ok: false, message: target.message, occupied: [], suggestion: null } as WriteResult;
      const { sheet, area } = target.value;
      const occupied = await this.occupiedIn(context, sheet, area, 6);
      if (occupied.length > 0) {
        const suggestion = await this.freePlace(context, sheet, area, { height, width, cells: [] });
        const list = occupied.length > 5 ? `${occupied.slice(0, 5).join(", ")} and more` : occupied.join(", ");
        return {
          ok: false,
          occupied,
          suggestion,
          message: `Nothing was written: the values block needs ${formatAddress(area, { sheet: false })} (${plural(height, "row")} × ${plural(width, "column")}) and ${list} ${occupied.length === 1 ? "is" : "are"} not empty.` + (suggestion ? ` ${suggestion} is free.` : " Choose another cell."),
        } as WriteResult;
      }
      const range = sheet.getRange(formatAddress(area, { sheet: false }));
      range.values = padded(rows, width);
      if (typeof (range as { select?: unknown }).select === "function") range.select();
      await context.sync();
      return { ok: true, address: formatAddress(area) } as WriteResult;
    }).catch((e: unknown) => ({ ok: false, message: `Nothing was written: the host refused (${message(e)}).`, occupied: [], suggestion: null }) as WriteResult);
  }

  /** Whether a values block still holds what the pane wrote (null), or why not, without writing. */
  async stillOwn(area: Address, expected: ValuesBlock): Promise<string | null> {
    const r = await this.rewriteOwn(area, expected, null);
    return r.ok ? null : r.message;
  }

  /**
   * Rewrites a values block this pane wrote, after checking, in the same request, that every cell
   * still holds what was written there (numbers compared to the 15 significant digits a cell keeps
   * when typed; texts exactly). When any differs, nothing is written and the cells are named.
   */
  rewriteOwn(area: Address, expected: ValuesBlock, next: ValuesBlock | null): Promise<WriteResult> {
    return this.run(async (context) => {
      const sheet = context.workbook.worksheets.getItemOrNullObject(area.sheet as string);
      sheet.load("name");
      await context.sync();
      if (sheet.isNullObject) return { ok: false, message: `Nothing was written: the sheet ${area.sheet} of the block is gone.`, occupied: [], suggestion: null } as WriteResult;
      const width = columnCount(area);
      if (next && (next.length !== rowCount(area) || next.some((r) => r.length > width))) {
        return { ok: false, message: `Nothing was written: the refreshed results need ${plural(next.length, "row")} × ${plural(Math.max(...next.map((r) => r.length)), "column")}, not the block's ${formatAddress(area)}. Write them as a new block.`, occupied: [], suggestion: null } as WriteResult;
      }
      const range = sheet.getRange(formatAddress(area, { sheet: false }));
      range.load("values, formulas");
      await context.sync();
      const values = range.values as unknown[][];
      const formulas = range.formulas as unknown as unknown[][];
      const was = padded(expected, width);
      const differs: string[] = [];
      for (let i = 0; i < was.length; i++) {
        for (let j = 0; j < width; j++) {
          const f = formulas?.[i]?.[j];
          const formula = typeof f === "string" && f.startsWith("=");
          if ((formula || !sameCell(values?.[i]?.[j], was[i][j])) && differs.length < 6) differs.push(formatAddress(offsetCell({ ...area, sheet: null }, i, j)));
        }
      }
      if (differs.length > 0) {
        return { ok: false, occupied: differs, suggestion: null, message: `Nothing was written: ${differs.length > 5 ? `${differs.slice(0, 5).join(", ")} and more` : differs.join(", ")} no longer ${differs.length === 1 ? "holds" : "hold"} what the pane wrote there, so the block is not the pane's to overwrite. Clear the block and write a new one, or write the refreshed results elsewhere.` } as WriteResult;
      }
      if (!next) return { ok: true, address: formatAddress(area) } as WriteResult;
      range.values = padded(next, width);
      await context.sync();
      return { ok: true, address: formatAddress(area) } as WriteResult;
    }).catch((e: unknown) => ({ ok: false, message: `Nothing was written: the host refused (${message(e)}).`, occupied: [], suggestion: null }) as WriteResult);
  }

  private async guard<T>(what: string, body: (context: Excel.RequestContext) => Promise<Outcome<T>>): Promise<Outcome<T>> {
    try {
      return await this.run(body);
    } catch (e) {
      return { ok: false, message: `${what} could not be read (${message(e)})` };
    }
  }

  private async readArea(context: Excel.RequestContext, sheet: Excel.Worksheet, asked: Address, requested: string): Promise<Outcome<RangeSnapshot>> {
    const used = sheet.getUsedRangeOrNullObject(true);
    used.load("address");
    sheet.load("name");
    await context.sync();
    const sheetName = String(sheet.name);
    const area0: Address = { ...asked, sheet: sheetName };
    if (used.isNullObject) return { ok: false, message: `${formatAddress(area0)} is empty: the sheet ${sheetName} holds no values` };
    const usedArea = hostAddress(used.address, "the used range");
    const area = intersect(area0, usedArea);
    if (!area) return { ok: false, message: `${formatAddress(area0)} is empty (the sheet's values lie in ${formatAddress({ ...usedArea, sheet: null })})` };
    const cells = rowCount(area) * columnCount(area);
    if (cells > MAX_READ_CELLS) return { ok: false, message: `${formatAddress(area)} holds ${cells.toLocaleString("en-GB")} cells, more than the ${MAX_READ_CELLS.toLocaleString("en-GB")} the host reads at once; choose fewer rows or columns` };
    const range = sheet.getRange(formatAddress(area, { sheet: false }));
    range.load("values, valueTypes");
    await context.sync();
    const clipped = area.top !== area0.top || area.bottom !== area0.bottom || area.left !== area0.left || area.right !== area0.right;
    return {
      ok: true,
      value: { area, address: formatAddress(area), requested, values: range.values as unknown[][], types: range.valueTypes as unknown as ValueType[][], clipped },
    };
  }

  private async targetArea(context: Excel.RequestContext, anchorText: string, height: number, width: number): Promise<Outcome<{ sheet: Excel.Worksheet; area: Address }>> {
    const parsed = parseAddress(anchorText);
    if (!parsed.ok) return parsed;
    const a = parsed.value;
    if (a.top !== a.bottom || a.left !== a.right) {
      // A range is accepted as a target when it is at least as large as the block; its top left is used.
      if (rowCount(a) < height || columnCount(a) < width) return { ok: false, message: `the block needs ${plural(height, "row")} × ${plural(width, "column")}; give one cell for its top left corner (for example I2)` };
    }
    const sheets = context.workbook.worksheets;
    const sheet = a.sheet ? sheets.getItemOrNullObject(a.sheet) : sheets.getActiveWorksheet();
    sheet.load("name");
    await context.sync();
    if (sheet.isNullObject) return { ok: false, message: `there is no sheet named "${a.sheet}" in this workbook` };
    const area: Address = { sheet: String(sheet.name), top: a.top, left: a.left, bottom: a.top + height - 1, right: a.left + width - 1 };
    if (area.bottom > MAX_ROWS || area.right > MAX_COLUMNS) return { ok: false, message: `a block of ${plural(height, "row")} × ${plural(width, "column")} at ${anchorText} would run off the sheet; choose a cell further up or left` };
    return { ok: true, value: { sheet, area } };
  }

  private async occupiedIn(context: Excel.RequestContext, sheet: Excel.Worksheet, area: Address, limit: number): Promise<string[]> {
    const range = sheet.getRange(formatAddress(area, { sheet: false }));
    range.load("values, valueTypes, formulas");
    await context.sync();
    const values = range.values as unknown[][];
    const types = range.valueTypes as unknown as unknown[][];
    const formulas = range.formulas as unknown as unknown[][];
    const found: string[] = [];
    for (let i = 0; i < values.length && found.length < limit; i++) {
      for (let j = 0; j < values[i].length && found.length < limit; j++) {
        if (!isEmptyCell(values[i][j], types?.[i]?.[j], formulas?.[i]?.[j])) found.push(formatAddress(offsetCell({ ...area, sheet: null }, i, j)));
      }
    }
    return found;
  }

  /** A place for the block right of the used range (one blank column between), same top row. */
  private async freePlace(context: Excel.RequestContext, sheet: Excel.Worksheet, area: Address, block: FormulaBlock): Promise<string | null> {
    const used = sheet.getUsedRangeOrNullObject(false);
    used.load("address");
    await context.sync();
    if (used.isNullObject) return null;
    const u = hostAddress(used.address, "the used range");
    const left = u.right + 2;
    if (left + block.width - 1 <= MAX_COLUMNS) return formatAddress({ sheet: null, top: area.top, left, bottom: area.top, right: left });
    const top = u.bottom + 2;
    if (top + block.height - 1 <= MAX_ROWS) return formatAddress({ sheet: null, top, left: area.left, bottom: top, right: area.left });
    return null;
  }
}

/** A block of plain values: numbers, and texts ("" for an empty cell); rows may be shorter than the widest. */
export type ValuesBlock = (string | number)[][];

function padded(rows: ValuesBlock, width: number): (string | number)[][] {
  return rows.map((r) => (r.length === width ? r : [...r, ...new Array<string>(width - r.length).fill("")]));
}

/** Whether a cell read back holds what was written (numbers to 15 significant digits, as a cell keeps them). */
export function sameCell(now: unknown, written: string | number): boolean {
  if (typeof written === "number") return typeof now === "number" && now.toPrecision(15) === written.toPrecision(15);
  if (written === "") return now === "" || now === null || now === undefined;
  return typeof now === "string" && now === written;
}

interface DocumentSettings {
  get(name: string): unknown;
  set(name: string, value: unknown): void;
  saveAsync(callback: (r: { status: unknown } | undefined) => void): void;
}

/** The document's settings (Office.context.document.settings), when the host provides them. */
function documentSettings(): DocumentSettings | null {
  const o = (globalThis as unknown as { Office?: { context?: { document?: { settings?: DocumentSettings } } } }).Office;
  const s = o?.context?.document?.settings;
  return s && typeof s.get === "function" && typeof s.set === "function" ? s : null;
}

/** The host's runner: Excel.run, when the host (or the preview's stand-in) provides it. */
export function hostRunner(): Runner | null {
  const g = globalThis as unknown as { Excel?: { run?: unknown } };
  if (!g.Excel || typeof g.Excel.run !== "function") return null;
  return <T>(batch: (context: Excel.RequestContext) => Promise<T>) => Excel.run(batch);
}
