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

/** The host's runner: Excel.run, when the host (or the preview's stand-in) provides it. */
export function hostRunner(): Runner | null {
  const g = globalThis as unknown as { Excel?: { run?: unknown } };
  if (!g.Excel || typeof g.Excel.run !== "function") return null;
  return <T>(batch: (context: Excel.RequestContext) => Promise<T>) => Excel.run(batch);
}
