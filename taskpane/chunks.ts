/**
 * The pane's chunked reader for ranges past what a formula carries. It reads the y and x ranges in
 * row blocks well under the host's request limits, turns each block straight into a ColumnChunk of
 * doubles (NaN where a cell is not a number, each cell's kind counted per column and each row's
 * first reason kept) and hands it on; the cells of a block are dropped once converted, so the range
 * is never held as cell arrays. DEVELOPERS.md describes the block size and the limits.
 *
 * The limits, from the platform's figures (one custom-function call carries about 5 MB; one host
 * request or response at most 5 MB; one range read at most 5,000,000 cells):
 *   - a formula carries y and x together up to FORMULA_MAX_CELLS cells: a number costs up to 20 bytes
 *     in a call's payload (17 significant digits, sign or point, separator), 5,000,000 / 20 = 250,000
 *     cells, 25,000 rows × 10 columns; past that the pane takes the chunked path;
 *   - a block is BLOCK_CELLS cells: a values response costs at most 25 bytes a cell (a double's 17
 *     digits, sign, point, exponent "e-308" and separator), 100,000 × 25 = 2.5 MB, half the 5 MB
 *     response limit and a fiftieth of the 5,000,000-cell read limit; rows per block =
 *     ⌊100,000 / (y and x columns)⌋, 9,090 rows at 11 columns;
 *   - the chunked path takes up to BIG_MAX_CELLS = 12,000,000 cells (a whole sheet's 1,048,575 rows
 *     × 11 columns fits; 96 MB as doubles); larger ranges are refused with the limit.
 *
 * Data changing while the blocks are read: the reader listens to the host's worksheet change event
 * on the ranges' sheets while it reads, and stops with the first changed address inside the ranges.
 * Where the host has no change event, it reads the first block again at the end and compares a
 * checksum (a change elsewhere is then not seen: the pane says so).
 */
import { columnCount, formatAddress, rowCount, type Address } from "./address";
import type { Host, Outcome } from "./host";
import type { ColumnChunk } from "../functions/engine/columnFitTypes";
import { defaultXName, headerNames, isHeaderRow, uniqueNames } from "../functions/engine/intake";

export const FORMULA_MAX_CELLS = 250_000;
export const BLOCK_CELLS = 100_000;
export const BIG_MAX_CELLS = 12_000_000;

const fmt = (n: number): string => n.toLocaleString("en-GB");

/** What one column held, over the data rows read. */
export interface ColumnTally {
  name: string;
  role: "y" | "x";
  numbers: number;
  blank: number;
  text: number;
  /** Of the numbers, how many were TRUE/FALSE (read as 1/0). */
  logical: number;
  error: number;
  zeros: number;
  negatives: number;
  /** Numbers other than 0 and 1 (none: a binary column, kept in levels under a log x side). */
  other: number;
}

/** The ranges as the chunked reader will read them. */
export interface BigPlan {
  y: Address;
  x: Address;
  header: boolean;
  yName: string;
  xNames: string[];
  /** Data rows below the header. */
  rows: number;
  /** Sheet row of the first data row. */
  firstRow: number;
  rowsPerBlock: number;
}

export type Plan = { ok: true; value: BigPlan } | { ok: false; message: string };

/** Whether ranges of this size go the chunked way (more cells than a formula carries). */
export function needsChunks(y: Address, x: Address): boolean {
  return rowCount(y) * (columnCount(y) + columnCount(x)) > FORMULA_MAX_CELLS;
}

/** Rows per block for this many columns (at least one). */
export function rowsPerBlock(columns: number, cells = BLOCK_CELLS): number {
  return Math.max(1, Math.floor(cells / Math.max(1, columns)));
}

/** Reads the header rows and checks the shapes; refuses ranges past BIG_MAX_CELLS with the limit. */
export async function planChunks(host: Host, y: Address, x: Address, blockCells = BLOCK_CELLS): Promise<Plan> {
  const columns = columnCount(y) + columnCount(x);
  const cells = rowCount(y) * columns;
  if (columnCount(y) !== 1) return { ok: false, message: `y (${formatAddress(y)}) has ${columnCount(y)} columns: give y as one column` };
  if (Math.max(rowCount(y), rowCount(x)) * columns > BIG_MAX_CELLS) {
    return { ok: false, message: `${formatAddress(y)} and ${formatAddress(x)} hold ${fmt(Math.max(rowCount(y), rowCount(x)) * columns)} cells, more than the ${fmt(BIG_MAX_CELLS)} the pane reads in blocks (${fmt(Math.floor(BIG_MAX_CELLS / columns))} rows at ${columns} columns); choose fewer rows or columns` };
  }
  void cells;
  const head = await host.readValues([{ ...y, bottom: y.top }, { ...x, bottom: x.top }]);
  if (!head.ok) return head;
  const [yRow, xRow] = [head.value[0][0] ?? [], head.value[1][0] ?? []];
  const yHeader = isHeaderRow(yRow);
  const xHeader = isHeaderRow(xRow);
  if (yHeader !== xHeader) {
    return { ok: false, message: `${yHeader ? "y" : "x"} starts with a header row and ${yHeader ? "x" : "y"} does not, so their rows would not line up: give both ranges from the same first row (the header row)` };
  }
  const header = yHeader;
  const yRows = rowCount(y) - (header ? 1 : 0);
  const xRows = rowCount(x) - (header ? 1 : 0);
  if (yRows !== xRows) return { ok: false, message: `y has ${fmt(yRows)} data rows and x ${fmt(xRows)}: give both ranges the same rows` };
  if (yRows < 1) return { ok: false, message: "there are no data rows below the header" };
  const yName = header ? headerNames(yRow, () => "y").names[0] : "y";
  const xNames = uniqueNames(header ? headerNames(xRow, defaultXName).names : xRow.map((_, j) => defaultXName(j)));
  return { ok: true, value: { y, x, header, yName, xNames, rows: yRows, firstRow: y.top + (header ? 1 : 0), rowsPerBlock: rowsPerBlock(columns, blockCells) } };
}

export interface ReadOptions {
  /** Called after each block with the data rows read so far. */
  progress?: (rowsRead: number, rows: number) => void;
  /** Asked between blocks: true stops the reading. */
  cancelled?: () => boolean;
}

export type ReadOutcome =
  | { ok: true; tallies: ColumnTally[]; leftOut: { blank: number; notNumber: number }; rowsRead: number; blocks: number; watched: boolean }
  | { ok: false; reason: "cancelled" | "changed" | "host" | "text"; message: string };

const ERROR_CODES = /^#(NULL!|DIV\/0!|VALUE!|REF!|NAME\?|NUM!|N\/A|GETTING_DATA|SPILL!|CALC!|FIELD!|BUSY!|BLOCKED!|CONNECT!|EXTERNAL!|PYTHON!|UNKNOWN!)$/;

/** The issue code of a cell that is neither a number nor TRUE/FALSE (intake.ts CellIssue: 1 blank, 2 text, 3 an error) and the tally it counts in. */
function kindOf(v: unknown, t: ColumnTally): number {
  if (v === "" || v === null || v === undefined) {
    t.blank++;
    return 1;
  }
  if (typeof v === "string" && ERROR_CODES.test(v)) {
    t.error++;
    return 3;
  }
  t.text++;
  return 2;
}

/** A checksum of a block's cells (numbers and texts), to see whether it changed. */
function checksum(blocks: unknown[][][]): number {
  let h = 0;
  for (const b of blocks) for (const row of b) for (const v of row) {
    const s = typeof v === "number" ? v.toString() : String(v);
    for (let i = 0; i < s.length; i++) h = (Math.imul(h, 31) + s.charCodeAt(i)) | 0;
    h = (Math.imul(h, 31) + 7) | 0;
  }
  return h;
}

/**
 * How many rows of a one-column area hold a value (not blank), and the last of them, read in blocks
 * of rowsPerBlock(1) rows: what lies below a values block's ranges after rows were added.
 */
export async function countFilled(host: Host, column: Address): Promise<Outcome<{ rows: number; last: number }>> {
  const step = rowsPerBlock(1);
  let rows = 0;
  let last = 0;
  for (let top = column.top; top <= column.bottom; top += step) {
    const part = { ...column, right: column.left, top, bottom: Math.min(column.bottom, top + step - 1) };
    const read = await host.readValues([part]);
    if (!read.ok) return read;
    read.value[0].forEach((line, i) => {
      const v = line[0];
      if (v !== "" && v !== null && v !== undefined) {
        rows++;
        last = part.top + i;
      }
    });
  }
  return { ok: true, value: { rows, last } };
}

/**
 * Reads the planned ranges block by block and hands each block to `sink` as a ColumnChunk (its
 * buffers are the sink's). Stops at Cancel, at an edit inside the ranges, or at a host refusal.
 */
export async function readChunks(host: Host, plan: BigPlan, sink: (chunk: ColumnChunk) => Promise<void>, o: ReadOptions = {}): Promise<ReadOutcome> {
  const kx = plan.xNames.length;
  const tallies: ColumnTally[] = [plan.yName, ...plan.xNames].map((name, j) => ({ name, role: j === 0 ? "y" : "x", numbers: 0, blank: 0, text: 0, logical: 0, error: 0, zeros: 0, negatives: 0, other: 0 }));
  const leftOut = { blank: 0, notNumber: 0 };
  const head = plan.header ? 1 : 0;
  const watch = await host.watch([plan.y, plan.x]);
  let firstSum: number | null = null;
  let blocks = 0;
  const changedMessage = (where: string) => `${where} changed while the pane read the ranges, so the rows read do not all come from one state of the data; nothing was fitted. Check again once the data are settled`;
  try {
    for (let start = 0; start < plan.rows; start += plan.rowsPerBlock) {
      if (o.cancelled?.()) return { ok: false, reason: "cancelled", message: "stopped while reading" };
      const m = Math.min(plan.rowsPerBlock, plan.rows - start);
      const yTop = plan.y.top + head + start;
      const xTop = plan.x.top + head + start;
      const read = await host.readValues([{ ...plan.y, top: yTop, bottom: yTop + m - 1 }, { ...plan.x, top: xTop, bottom: xTop + m - 1 }]);
      if (!read.ok) return { ok: false, reason: "host", message: read.message };
      const [yv, xv] = read.value;
      if (start === 0 && !watch.watching) firstSum = checksum([yv, xv]);
      const y = new Float64Array(m);
      const x = Array.from({ length: kx }, () => new Float64Array(m));
      const issues = new Uint8Array(m);
      for (let i = 0; i < m; i++) {
        let issue = 0;
        const yRow = yv[i];
        const y0 = yRow ? yRow[0] : "";
        // TRUE/FALSE count as 1/0, as the cells' intake (intake.ts) and the pane's data check read them
        const v = typeof y0 === "boolean" ? (y0 ? 1 : 0) : y0;
        if (typeof v === "number" && Number.isFinite(v)) {
          y[i] = v;
          const t = tallies[0];
          t.numbers++;
          if (v !== y0) t.logical++;
          if (v === 0) t.zeros++;
          else if (v < 0) t.negatives++;
          if (v !== 0 && v !== 1) t.other++;
        } else {
          y[i] = NaN;
          issue = kindOf(v, tallies[0]);
        }
        const xRow = xv[i] ?? [];
        for (let j = 0; j < kx; j++) {
          const w0 = xRow[j];
          const w = typeof w0 === "boolean" ? (w0 ? 1 : 0) : w0;
          const t = tallies[j + 1];
          if (typeof w === "number" && Number.isFinite(w)) {
            x[j][i] = w;
            t.numbers++;
            if (w !== w0) t.logical++;
            if (w === 0) t.zeros++;
            else if (w < 0) t.negatives++;
            if (w !== 0 && w !== 1) t.other++;
          } else {
            x[j][i] = NaN;
            const k = kindOf(w, t);
            if (issue === 0) issue = k;
          }
        }
        issues[i] = issue;
        if (issue === 1) leftOut.blank++;
        else if (issue > 1) leftOut.notNumber++;
      }
      blocks++;
      if (start === 0) {
        // A column of text (a key, a label) cannot be a regressor: say so before reading on.
        const textual = tallies.find((t) => t.numbers === 0 && t.text > 0);
        if (textual) return { ok: false, reason: "text", message: `${textual.role === "y" ? "y" : `the x column ${textual.name}`} holds text (${fmt(textual.text)} of the first ${fmt(m)} rows, no numbers): ranges this large take numeric columns only; leave it out of x or give its values as numbers` };
      }
      await sink({ rowStart: start, y, x, issues });
      o.progress?.(start + m, plan.rows);
      const where = watch.changed();
      if (where) return { ok: false, reason: "changed", message: changedMessage(where) };
    }
    // the host delivers change events after its own queue: give it one turn before the last look
    await new Promise((r) => setTimeout(r, 0));
    const where = watch.changed();
    if (where) return { ok: false, reason: "changed", message: changedMessage(where) };
    if (firstSum !== null) {
      const m = Math.min(plan.rowsPerBlock, plan.rows);
      const again = await host.readValues([{ ...plan.y, top: plan.y.top + head, bottom: plan.y.top + head + m - 1 }, { ...plan.x, top: plan.x.top + head, bottom: plan.x.top + head + m - 1 }]);
      if (again.ok && checksum(again.value) !== firstSum) return { ok: false, reason: "changed", message: changedMessage(`The first ${fmt(m)} rows`) };
    }
    return { ok: true, tallies, leftOut, rowsRead: plan.rows, blocks, watched: watch.watching };
  } finally {
    await watch.stop();
  }
}
