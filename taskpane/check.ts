/**
 * The pane's data check: what the chosen log form will do to the y and x ranges, per column and per
 * row, before any number is trusted. It follows the range rules of README's function reference (a first row all text is
 * a header row; TRUE/FALSE count as 1/0; a row with a blank, text or error cell is left out; a binary
 * 0/1 column stays in levels under a log x side) and tells blank from zero by the host's value types.
 *
 * The row pass is chunked: it yields to the page between chunks so that 100,000-row ranges keep
 * the pane responsive, and reports progress.
 */
import type { RangeSnapshot, ValueType } from "./host";
import { defaultXName, headerNames, isHeaderRow as engineHeaderRow, uniqueNames } from "../functions/engine/intake";

export type Form = "log-log" | "log-level" | "level-log" | "level-level";
export type Estimator = "ols" | "ppml";

export interface ColumnCheck {
  name: string;
  /** "key": a role column (fixed effects, clusters, periods, weights, instrument): not a regressor, never logged. */
  role: "y" | "x" | "key";
  /** Numbers (and TRUE/FALSE) among the data rows. */
  values: number;
  blank: number;
  text: number;
  errors: number;
  zeros: number;
  negatives: number;
  /** Zeros and negatives among the rows that are otherwise usable (what a log would lose). */
  zerosUsable: number;
  negativesUsable: number;
  binary: boolean;
  constant: boolean;
  /** Whether the chosen form takes the log of this column. */
  logged: boolean;
  /** Sheet rows (first few) holding text, and holding error cells. */
  textRows: number[];
  errorRows: number[];
}

export type Severity = "problem" | "warning" | "note";
export interface Sentence {
  severity: Severity;
  text: string;
}

export interface CheckResult {
  /** False when the ranges cannot be fitted at all (shape problems); the sentences say why. */
  canFit: boolean;
  rows: number;
  usable: number;
  leftOutBlank: number;
  blankRows: number[];
  /** Usable rows a plain log would lose (a zero or negative in a logged column). */
  lostToLog: number;
  columns: ColumnCheck[];
  sentences: Sentence[];
  yHeader: boolean;
  xHeader: boolean;
}

export interface CheckInput {
  y: RangeSnapshot;
  x: RangeSnapshot;
  form: Form;
  estimator: Estimator;
  /** Names of x columns that the chosen options give a role (keys, weights, instrument). */
  roles?: Set<string>;
}

/** Rows per chunk of the row pass (about 10 ms of work each on this machine's pane at 5 columns). */
export const CHUNK_ROWS = 20000;
const KEEP_ROWS = 5;

export const yieldToPage = (): Promise<void> => new Promise((resolve) => setTimeout(resolve, 0));

const fmt = (n: number): string => n.toLocaleString("en-GB");
const plural = (n: number, one: string, many = `${one}s`): string => `${fmt(n)} ${n === 1 ? one : many}`;

function rowsList(rows: number[], total: number): string {
  const shown = rows.slice(0, KEEP_ROWS).join(", ");
  return total > rows.length || total > KEEP_ROWS ? `${shown} …` : shown;
}

/**
 * The engine's header rule (a first row whose non-empty cells are all text, at least one), with the
 * host's value types where it gave them: a cell typed as a number is never a header cell.
 */
function isHeaderRow(values: unknown[], types: ValueType[] | undefined): boolean {
  return engineHeaderRow(values) && values.every((v, j) => !types || types[j] === "String" || types[j] === "Empty" || v === null || v === "");
}

function transpose<T>(m: T[][]): T[][] {
  const h = m.length;
  const w = h ? m[0].length : 0;
  const out: T[][] = [];
  for (let j = 0; j < w; j++) {
    const r: T[] = new Array(h);
    for (let i = 0; i < h; i++) r[i] = m[i][j];
    out.push(r);
  }
  return out;
}

/** Kind of one cell: 0 number, 1 blank, 2 text, 3 error; the number goes to NUM[0]. */
const NUM = new Float64Array(1);
function cellKind(v: unknown, t: ValueType | undefined): number {
  if (t === "Empty") return 1;
  if (t === "Error") return 3;
  if (typeof v === "number") {
    if (v - v !== 0) return 3;
    NUM[0] = v;
    return 0;
  }
  if (typeof v === "boolean") {
    NUM[0] = v ? 1 : 0;
    return 0;
  }
  if (v === null || v === undefined) return 1;
  if (typeof v === "string") return v.trim() === "" ? 1 : v.startsWith("#") && t === undefined ? 3 : 2;
  if (typeof v === "object" && typeof (v as { code?: unknown }).code === "string") return 3;
  return 2;
}

/**
 * Runs the data check.
 * @param progress called with the fraction of rows done, after each chunk
 */
export async function checkData(input: CheckInput, progress: (fraction: number) => void = () => undefined): Promise<CheckResult> {
  const sentences: Sentence[] = [];
  const fail = (text: string): CheckResult => ({
    canFit: false, rows: 0, usable: 0, leftOutBlank: 0, blankRows: [], lostToLog: 0, columns: [], yHeader: false, xHeader: false,
    sentences: [...sentences, { severity: "problem", text }],
  });
  let yv = input.y.values;
  let yt = input.y.types;
  let xv = input.x.values;
  let xt = input.x.types;
  let yFirst = input.y.area.top;
  let xFirst = input.x.area.top;
  let unit = "row";
  const yCells = yv.length * (yv[0]?.length ?? 0);
  if (yCells === 0 || xv.length === 0) return fail("A range is empty: select the cells that hold the data.");
  if (yv.length === 1 && yv[0].length === 1) {
    return fail(`y is a single cell (${input.y.address}): select the whole column of the dependent variable, its header cell included.`);
  }
  if (yv.length === 1 && yv[0].length > 1) {
    // Data laid out across: variables in rows, observations in columns (as the engine reads them).
    if (xv[0].length !== yv[0].length) return fail(`y is one row of ${fmt(yv[0].length)} cells, so x must have ${fmt(yv[0].length)} columns with one regressor per row (it has ${fmt(xv[0].length)}).`);
    yv = transpose(yv);
    yt = transpose(yt);
    xv = transpose(xv);
    xt = transpose(xt);
    yFirst = input.y.area.left;
    xFirst = input.x.area.left;
    unit = "column";
  } else if (yv[0].length !== 1) {
    return fail(`y has ${fmt(yv[0].length)} columns (${input.y.address}); y must be one column: put the regressors in x.`);
  }
  if (xv.length === 1 && xv[0].length === 1 && yv.length > 2) {
    sentences.push({ severity: "warning", text: `x is a single cell (${input.x.address}): select the regressor columns, header row included.` });
  }
  let yHeader = isHeaderRow(yv[0], yt[0]);
  let xHeader = isHeaderRow(xv[0], xt[0]);
  // As in the engine: ranges of the same height share the header row, so a blank first row beside a
  // header is a header too.
  const blankRow = (r: unknown[]) => r.every((v) => v === null || v === undefined || (typeof v === "string" && v.trim() === ""));
  if (yv.length === xv.length && yHeader !== xHeader) {
    if (!yHeader && blankRow(yv[0])) yHeader = true;
    if (!xHeader && blankRow(xv[0])) xHeader = true;
  }
  const yRows = yv.length - (yHeader ? 1 : 0);
  const xRows = xv.length - (xHeader ? 1 : 0);
  if (yRows === 0 || xRows === 0) return fail("The ranges hold a header row but no data rows below it.");
  if (yRows !== xRows) {
    const note = yHeader !== xHeader ? ` (only ${yHeader ? "y" : "x"} starts with a header row: select the same rows for both)` : "";
    return fail(`y has ${plural(yRows, "data row")} and x has ${fmt(xRows)}${note}; give both ranges the same ${unit}s.`);
  }
  const rows = yRows;
  const k = xv[0].length;
  // Names as the engine gives them: empty header cells by their default names, unique across y and x.
  const names = uniqueNames([
    yHeader ? headerNames(yv[0], () => "y").names[0] : "y",
    ...(xHeader ? headerNames(xv[0], defaultXName).names : Array.from({ length: k }, (_, j) => defaultXName(j))),
  ]);
  const logY = input.estimator === "ols" && (input.form === "log-log" || input.form === "log-level");
  const logX = input.form === "log-log" || input.form === "level-log";

  const width = k + 1;
  const roleSet = input.roles ?? new Set<string>();
  const cols: ColumnCheck[] = names.map((name, j) => ({
    name, role: j === 0 ? "y" : roleSet.has(name) ? "key" : "x", values: 0, blank: 0, text: 0, errors: 0, zeros: 0, negatives: 0, zerosUsable: 0, negativesUsable: 0,
    binary: true, constant: true, logged: false, textRows: [], errorRows: [],
  }));
  const first = new Float64Array(width).fill(NaN);
  const usableRow = new Uint8Array(rows);
  // Per row: which columns (bit j) hold a value ≤ 0; up to 31 columns tracked exactly by bits.
  const nonPositive = new Uint32Array(rows);
  const wide = width > 31;
  const nonPositiveWide: Uint8Array[] = wide ? cols.map(() => new Uint8Array(rows)) : [];
  let usable = 0;
  const blankRows: number[] = [];
  const y0 = yHeader ? 1 : 0;
  const x0 = xHeader ? 1 : 0;

  for (let start = 0; start < rows; start += CHUNK_ROWS) {
    const end = Math.min(rows, start + CHUNK_ROWS);
    for (let i = start; i < end; i++) {
      let ok = true;
      let mask = 0;
      const sheetRow = yFirst + y0 + i;
      for (let j = 0; j < width; j++) {
        const v = j === 0 ? yv[i + y0][0] : xv[i + x0][j - 1];
        const t = j === 0 ? yt[i + y0]?.[0] : xt[i + x0]?.[j - 1];
        const kind = cellKind(v, t);
        const c = cols[j];
        if (c.role === "key" && (kind === 0 || kind === 2)) {
          // a key holds text or numbers; only a blank or an error leaves the row out
          c.values++;
          continue;
        }
        if (kind !== 0) {
          ok = false;
          if (kind === 1) c.blank++;
          else if (kind === 2) {
            c.text++;
            if (c.textRows.length < KEEP_ROWS) c.textRows.push(j === 0 ? sheetRow : xFirst + x0 + i);
          } else {
            c.errors++;
            if (c.errorRows.length < KEEP_ROWS) c.errorRows.push(j === 0 ? sheetRow : xFirst + x0 + i);
          }
          continue;
        }
        const n = NUM[0];
        c.values++;
        if (n === 0) c.zeros++;
        else if (n < 0) c.negatives++;
        if (n !== 0 && n !== 1) c.binary = false;
        if (first[j] !== first[j]) first[j] = n;
        else if (n !== first[j]) c.constant = false;
        if (n <= 0) {
          if (wide) nonPositiveWide[j][i] = 1;
          else mask |= 1 << j;
        }
      }
      if (ok) {
        usableRow[i] = 1;
        usable++;
        nonPositive[i] = mask;
      } else if (blankRows.length < KEEP_ROWS) blankRows.push(sheetRow);
    }
    progress(end / rows);
    if (end < rows) await yieldToPage();
  }

  // Which columns a plain log takes: y under a log-y OLS form; x columns under a log x side unless binary.
  let loggedMask = 0;
  cols.forEach((c, j) => {
    c.binary = c.binary && c.values > 0 && c.role !== "key";
    if (c.role === "key") c.constant = false;
    c.logged = c.role === "key" ? false : j === 0 ? logY : logX && !c.binary;
    if (c.logged && !wide) loggedMask |= 1 << j;
  });
  let lost = 0;
  for (let i = 0; i < rows; i++) {
    if (!usableRow[i]) continue;
    let m = nonPositive[i];
    if (wide) {
      m = 0;
      for (let j = 0; j < width; j++) if (cols[j].logged && nonPositiveWide[j][i]) m = 1;
    } else m &= loggedMask;
    if (m !== 0) lost++;
    // Zeros and negatives among usable rows, per column.
    for (let j = 0; j < width; j++) {
      const isNonPos = wide ? nonPositiveWide[j][i] === 1 : (nonPositive[i] & (1 << j)) !== 0;
      if (!isNonPos) continue;
      const v = j === 0 ? yv[i + y0][0] : xv[i + x0][j - 1];
      const n = typeof v === "boolean" ? (v ? 1 : 0) : (v as number);
      if (n === 0) cols[j].zerosUsable++;
      else cols[j].negativesUsable++;
    }
  }

  const leftOutBlank = rows - usable;
  describe(sentences, cols, { rows, usable, leftOutBlank, blankRows, lost, yHeader, xHeader, estimator: input.estimator, unit });
  const canFit = usable > 0;
  if (usable === 0) sentences.unshift({ severity: "problem", text: `No ${unit} has a number in y and in every x column: all ${plural(rows, unit)} have a blank, text or error cell. Check that the ranges hold the data.` });
  return { canFit, rows, usable, leftOutBlank, blankRows, lostToLog: lost, columns: cols, sentences, yHeader, xHeader };
}

interface Totals {
  rows: number;
  usable: number;
  leftOutBlank: number;
  blankRows: number[];
  lost: number;
  yHeader: boolean;
  xHeader: boolean;
  estimator: Estimator;
  unit: string;
}

function describe(out: Sentence[], cols: ColumnCheck[], t: Totals): void {
  const lossy = cols.filter((c) => c.logged && c.zerosUsable + c.negativesUsable > 0);
  for (const c of lossy) {
    const parts: string[] = [];
    if (c.zerosUsable > 0) parts.push(`zero ${c.name}`);
    if (c.negativesUsable > 0) parts.push(`${c.zerosUsable > 0 ? fmt(c.negativesUsable) + " " : ""}negative ${c.name}`);
    const count = c.zerosUsable > 0 ? c.zerosUsable : c.negativesUsable;
    const text = c.zerosUsable > 0 && c.negativesUsable > 0
      ? `${fmt(c.zerosUsable)} of ${fmt(t.usable)} ${t.unit}s have zero ${c.name} and ${fmt(c.negativesUsable)} negative ${c.name}`
      : `${fmt(count)} of ${fmt(t.usable)} ${t.unit}s ${count === 1 ? "has" : "have"} ${parts[0]}`;
    out.push({ severity: "warning", text: `${text}; a plain log drops them and biases the elasticity.` });
  }
  if (lossy.length > 0) {
    const yLossy = lossy.some((c) => c.role === "y");
    out.push({
      severity: "warning",
      text: `In all a plain log would lose ${fmt(t.lost)} of ${fmt(t.usable)} ${t.unit}s. Choose: leave them out and say so (zeros=drop), log(v + c) (zeros=shift), inverse hyperbolic sine (zeros=ihs), or PPML (estimator=ppml), which keeps ${yLossy ? "them" : "zeros in y"}. The table below shows the elasticity under each choice.`,
    });
  } else if (cols.some((c) => c.logged)) {
    out.push({ severity: "note", text: `No zero or negative value in a logged column: a plain log keeps all ${fmt(t.usable)} usable ${t.unit}s.` });
  }
  if (t.estimator === "ppml" && cols[0].negatives > 0) {
    out.push({ severity: "problem", text: `${cols[0].name} has ${plural(cols[0].negatives, "negative value")}: PPML models a mean that is never negative, so y must be zero or above.` });
  }
  if (t.leftOutBlank > 0) {
    out.push({ severity: "warning", text: `${fmt(t.leftOutBlank)} of ${fmt(t.rows)} ${t.unit}s have a blank, text or error cell in y or x and are left out (${t.unit}s ${rowsList(t.blankRows, t.leftOutBlank)}).` });
  }
  for (const c of cols) {
    if (c.text > 0 && c.values > 0) {
      out.push({ severity: "warning", text: `${c.name} has text in ${t.unit}s ${rowsList(c.textRows, c.text)} among its numbers (a second header row, a note, or numbers stored as text?); those ${t.unit}s are left out.` });
    } else if (c.text > 0 && c.values === 0) {
      out.push({ severity: "problem", text: `${c.name} holds no numbers, only text: is it a label column? Leave it out of the ranges.` });
    }
    if (c.errors > 0) out.push({ severity: "warning", text: `${c.name} has ${plural(c.errors, "error cell")} (${t.unit}s ${rowsList(c.errorRows, c.errors)}); those ${t.unit}s are left out.` });
    if (c.binary && c.role === "x") out.push({ severity: "note", text: `${c.name} is binary (0/1): it stays in levels and gets a percent effect, not an elasticity.` });
    if (c.constant && c.values > 1 && !c.binary) out.push({ severity: "warning", text: `${c.name} does not vary in these rows: the fit cannot tell it from the intercept.` });
  }
  if (!t.yHeader) out.push({ severity: "note", text: "y has no header row (its first cell is not text), so it is called y." });
  if (!t.xHeader) out.push({ severity: "note", text: "x has no header row, so its columns are called x1, x2, …" });
}
