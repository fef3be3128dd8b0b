/**
 * The analyst's own data for the preview: a block pasted from any spreadsheet (tab-separated, header
 * row on top) or a CSV file, read into cell values. Pure: text in, rows of values and plain-words
 * notes out; nothing is sent anywhere.
 *
 * Rules (each departure from the plain case is reported in a note, never guessed silently):
 * - fields may be quoted ("…", with "" for a quote inside); a quoted field may hold the separator or
 *   a line break; a quote never closed is reported;
 * - CSV files may be separated by commas, semicolons or tabs (the first line decides, and a note says
 *   so when it is not a comma);
 * - numbers become numbers (1248, -1.5, 2.5e3, 12%); TRUE/FALSE become booleans; the error codes a
 *   spreadsheet copies (#N/A, #VALUE!, …) become error cells; everything else stays text exactly as
 *   written, and numbers with a leading zero (007) stay text, as codes;
 * - commas inside numbers are read per column: a column whose numbers only fit a decimal comma (2,84)
 *   is read with decimal commas, one whose numbers only fit thousands separators (1,234.5) without
 *   them, and a column where they could mean either (1,234 alone) or both stays text; each case is
 *   reported with its column;
 * - rows shorter than the header are filled with blanks, longer rows keep their extra fields in
 *   columns beyond the header; both are counted with their line numbers;
 * - empty lines at the top and bottom are dropped; empty lines inside are kept as blank rows (the
 *   functions leave blank rows out and count them), and counted.
 */
import type { CellValue } from "./workbook";

export interface ImportResult {
  rows: CellValue[][];
  width: number;
  /** Plain sentences: what was read, and every departure from the plain case. */
  notes: string[];
}

/** The most cells the preview takes at once (about 200,000 rows of 10 columns). */
export const MAX_IMPORT_CELLS = 2_000_000;

const ERROR_CODES = new Set(["#N/A", "#VALUE!", "#DIV/0!", "#NUM!", "#NULL!", "#NAME?", "#REF!", "#SPILL!", "#CALC!", "#GETTING_DATA"]);
const PLAIN = /^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i;
const PERCENT = /^[+-]?(\d+\.?\d*|\.\d+)%$/;
const LEADING_ZERO = /^[+-]?0\d/;
/** 1,234 alone: a thousands separator or a decimal comma. */
const AMBIGUOUS = /^[+-]?\d{1,3},\d{3}$/;
/** Only a decimal comma reads these: 2,84 · 12,5 · 1.234,5 · 1234,567. */
const DECIMAL_COMMA = /^[+-]?(\d+|\d{1,3}(\.\d{3})+),\d+$/;
/** Only thousands separators read these: 1,234.5 · 12,345,678. */
const THOUSANDS = /^[+-]?\d{1,3}(,\d{3})+(\.\d+)?$/;

function lines(list: number[]): string {
  const shown = list.slice(0, 5).join(", ");
  return list.length > 5 ? `${shown} and ${list.length - 5} more` : shown;
}

const plural = (n: number, one: string, many = `${one}s`): string => `${n.toLocaleString("en-GB")} ${n === 1 ? one : many}`;

/** Splits the text into records of fields (quotes understood), with each record's first line number. */
function records(text: string, sep: string): { fields: string[]; quoted: boolean[]; line: number }[] | { error: string } {
  const out: { fields: string[]; quoted: boolean[]; line: number }[] = [];
  let fields: string[] = [];
  let quoted: boolean[] = [];
  let field = "";
  let isQuoted = false;
  let line = 1;
  let start = 1;
  let i = 0;
  const n = text.length;
  const endField = () => {
    fields.push(field);
    quoted.push(isQuoted);
    field = "";
    isQuoted = false;
  };
  while (i < n) {
    const ch = text[i];
    if (ch === '"' && field === "" && !isQuoted) {
      // A quoted field: read to the closing quote ("" is a quote inside).
      const opened = line;
      isQuoted = true;
      i++;
      let closed = false;
      while (i < n) {
        if (text[i] === '"') {
          if (text[i + 1] === '"') {
            field += '"';
            i += 2;
            continue;
          }
          closed = true;
          i++;
          break;
        }
        if (text[i] === "\n") line++;
        field += text[i];
        i++;
      }
      if (!closed) return { error: `a quote opened on line ${opened} is never closed, so the rest of the text would be one field; check the quotes there` };
      // Anything between the closing quote and the separator is kept (as a spreadsheet does).
      while (i < n && text[i] !== sep && text[i] !== "\n") field += text[i++];
      continue;
    }
    if (ch === sep) {
      endField();
      i++;
      continue;
    }
    if (ch === "\n") {
      endField();
      out.push({ fields, quoted, line: start });
      fields = [];
      quoted = [];
      line++;
      start = line;
      i++;
      continue;
    }
    field += ch;
    i++;
  }
  if (field !== "" || fields.length > 0 || isQuoted) {
    endField();
    out.push({ fields, quoted, line: start });
  }
  return out;
}

/** The separator of a CSV file, from its first non-empty line outside quotes. */
export function detectSeparator(text: string): "," | ";" | "\t" {
  const first = text.split("\n").find((l) => l.trim() !== "") ?? "";
  const outside = first.replace(/"(?:[^"]|"")*"/g, "");
  const count = (c: string) => outside.split(c).length - 1;
  if (count("\t") > 0) return "\t";
  return count(";") > count(",") ? ";" : ",";
}

type Kind = "number" | "percent" | "boolean" | "error" | "decimal" | "thousands" | "ambiguous" | "code" | "text" | "blank";

function classify(raw: string): Kind {
  const t = raw.trim();
  if (t === "") return "blank";
  if (PLAIN.test(t)) return LEADING_ZERO.test(t) && !/^[+-]?0\./.test(t) ? "code" : "number";
  if (PERCENT.test(t)) return "percent";
  if (/^(true|false)$/i.test(t)) return "boolean";
  if (ERROR_CODES.has(t.toUpperCase())) return "error";
  if (AMBIGUOUS.test(t)) return "ambiguous";
  if (DECIMAL_COMMA.test(t)) return "decimal";
  if (THOUSANDS.test(t)) return "thousands";
  return "text";
}

/**
 * Reads delimited text (a pasted block: tab-separated; a CSV file: separator detected) into rows of
 * cell values, the first row being the header.
 */
export function parseDelimited(input: string, options: { separator?: "," | ";" | "\t"; source?: string } = {}): ImportResult | { error: string } {
  const text = input.replace(/^\uFEFF/, "").replace(/\r\n?/g, "\n");
  const sep = options.separator ?? detectSeparator(text);
  const source = options.source ?? "the data";
  const recs = records(text, sep);
  if ("error" in recs) return { error: `${source}: ${recs.error}` };
  const empty = (r: { fields: string[] }) => r.fields.every((f) => f.trim() === "");
  let first = 0;
  while (first < recs.length && empty(recs[first])) first++;
  let last = recs.length - 1;
  while (last >= first && empty(recs[last])) last--;
  if (first > last) return { error: `${source} holds no values` };
  const body = recs.slice(first, last + 1);
  const headerWidth = body[0].fields.length;
  // a loop, not Math.max(...): spreading more than about 125,000 rows into arguments overflows the stack
  let width = 0;
  for (const r of body) if (r.fields.length > width) width = r.fields.length;
  if (body.length * width > MAX_IMPORT_CELLS) return { error: `${source} has ${plural(body.length, "row")} × ${plural(width, "column")}, more than the ${MAX_IMPORT_CELLS.toLocaleString("en-GB")} cells this preview takes; keep the columns you need` };
  const notes: string[] = [];
  if (sep !== "," && options.separator === undefined) notes.push(`Fields are separated by ${sep === ";" ? "semicolons" : "tabs"} (read from the first line).`);
  const short: number[] = [];
  const long: number[] = [];
  const blankLines: number[] = [];
  body.forEach((r, i) => {
    if (i === 0) return;
    if (empty(r)) blankLines.push(r.line);
    else if (r.fields.length < headerWidth) short.push(r.line);
    else if (r.fields.length > headerWidth) long.push(r.line);
  });
  // Per column: how commas inside numbers are to be read.
  const header = body[0].fields.map((f) => f.trim());
  const name = (j: number) => (header[j] ? `"${header[j]}"` : `column ${j + 1}`);
  const commaRule: ("decimal" | "thousands" | "text")[] = [];
  for (let j = 0; j < width; j++) {
    let dec = 0;
    let tho = 0;
    let amb = 0;
    for (let i = 1; i < body.length; i++) {
      const k = classify(body[i].fields[j] ?? "");
      if (k === "decimal") dec++;
      else if (k === "thousands") tho++;
      else if (k === "ambiguous") amb++;
    }
    if (dec + tho + amb === 0) {
      commaRule.push("text");
      continue;
    }
    const example = (kind: Kind) => body.slice(1).map((r) => (r.fields[j] ?? "").trim()).find((f) => classify(f) === kind);
    if (dec > 0 && tho === 0) {
      commaRule.push("decimal");
      notes.push(`${name(j)}: ${plural(dec + amb, "value")} written with a decimal comma (such as ${example(dec > 0 ? "decimal" : "ambiguous")}) read as decimal numbers${amb ? `, 1,234 as 1.234` : ""}.`);
    } else if (tho > 0 && dec === 0) {
      commaRule.push("thousands");
      notes.push(`${name(j)}: ${plural(tho + amb, "value")} written with thousands separators (such as ${example("thousands")}) read without them.`);
    } else {
      commaRule.push("text");
      notes.push(dec > 0
        ? `${name(j)}: commas mean a decimal comma in some values (${example("decimal")}) and thousands separators in others (${example("thousands")}), so ${plural(dec + tho + amb, "value")} with a comma stay text; write them one way and paste again.`
        : `${name(j)}: ${plural(amb, "value")} such as ${example("ambiguous")} could mean a thousand and more or a decimal, so they stay text; write them without the comma, or with a decimal point, and paste again.`);
    }
  }
  let numbers = 0;
  let texts = 0;
  let percents = 0;
  let codes = 0;
  let errors = 0;
  let booleans = 0;
  const rows: CellValue[][] = body.map((r, i) => {
    const out: CellValue[] = new Array(width).fill(null);
    for (let j = 0; j < width; j++) {
      const raw = r.fields[j];
      if (raw === undefined) continue;
      if (i === 0) {
        out[j] = raw.trim() === "" ? null : raw.trim();
        continue;
      }
      const t = raw.trim();
      const k = classify(raw);
      let v: CellValue;
      switch (k) {
        case "blank":
          v = null;
          break;
        case "number":
          v = Number(t);
          break;
        case "percent":
          v = Number(t.slice(0, -1)) / 100;
          percents++;
          break;
        case "boolean":
          v = t.toLowerCase() === "true";
          booleans++;
          break;
        case "error":
          v = { code: t.toUpperCase(), message: "an error value in the pasted data" };
          errors++;
          break;
        case "decimal":
        case "thousands":
        case "ambiguous":
          if (commaRule[j] === "decimal") v = Number(t.replace(/\./g, "").replace(",", "."));
          else if (commaRule[j] === "thousands") v = Number(t.replace(/,/g, ""));
          else v = raw;
          break;
        case "code":
          v = raw;
          codes++;
          break;
        default:
          v = raw;
      }
      if (typeof v === "number") numbers++;
      else if (typeof v === "string") texts++;
      out[j] = v;
    }
    return out;
  });
  const nonText = rows[0].map((v, j) => ({ v: body[0].fields[j] ?? "", j })).filter(({ v }) => v.trim() !== "" && classify(v) !== "text" && classify(v) !== "code");
  notes.unshift(`Read ${plural(body.length - 1, "data row")} × ${plural(width, "column")} below a header row: ${plural(numbers, "number")}, ${plural(texts, "text cell")}${booleans ? ` (TRUE and FALSE are booleans)` : ""}.`);
  if (nonText.length > 0) notes.push(`The first row holds ${nonText.length === width ? "only numbers" : `numbers (${nonText.map((c) => c.v.trim()).slice(0, 3).join(", ")})`}, so it is not a header row: the functions will name the columns y, x1, x2…; copy the header row with the data to keep the names.`);
  else if (header.slice(0, headerWidth).some((h) => h === "")) notes.push(`The header row has ${plural(header.slice(0, headerWidth).filter((h) => h === "").length, "empty cell")}: name every column so the results can name them.`);
  if (short.length) notes.push(`${plural(short.length, "row")} had fewer fields than the header (line ${lines(short)}): the missing cells are blank.`);
  if (long.length) notes.push(`${plural(long.length, "row")} had more fields than the header (line ${lines(long)}): the extra fields are in columns beyond the header, without a name.`);
  if (blankLines.length) notes.push(`${plural(blankLines.length, "empty line")} inside the data (line ${lines(blankLines)}) ${blankLines.length === 1 ? "is a blank row" : "are blank rows"}: the functions leave blank rows out and count them.`);
  if (percents) notes.push(`${plural(percents, "value")} written as percentages (12%) read as fractions (0.12).`);
  if (codes) notes.push(`${plural(codes, "number")} with a leading zero (such as 007) ${codes === 1 ? "stays" : "stay"} text, as codes.`);
  if (errors) notes.push(`${plural(errors, "error value")} (#N/A and the like) kept as error cells: the functions leave those rows out and count them.`);
  return { rows, width, notes };
}

/** A sheet name from a file name: without the extension, without the characters a sheet name cannot hold, at most 31 characters, not yet taken. */
export function sheetName(base: string, taken: (name: string) => boolean): string {
  const clean = base.replace(/\.[A-Za-z0-9]{1,5}$/, "").replace(/[\][:*?/\\']/g, " ").replace(/\s+/g, " ").trim().slice(0, 31) || "Data";
  if (!taken(clean)) return clean;
  for (let i = 2; ; i++) {
    const suffix = ` (${i})`;
    const name = `${clean.slice(0, 31 - suffix.length)}${suffix}`;
    if (!taken(name)) return name;
  }
}
