/**
 * The preview page: the demo data (data/demo.json, made by scripts/make-demo-data.js) as a sheet,
 * a set of ELX formulas evaluated live by the real dist/functions.js, and the real pane beside it,
 * talking to the sheet through taskpane/host.ts and the in-page adapter (preview/excelAdapter.ts).
 *
 * Runs after office-stub.js, functions.js and taskpane.js. `?rows=1000000` shows a seeded synthetic
 * sheet of that many rows × 11 columns instead (preview/synthetic.ts; `&seed=7` draws another): its
 * values are computed when read, never stored, and the pane fits it by its big-range path.
 */
import css from "./preview.css";
import demo from "../data/demo.json";
import { GridView } from "./grid";
import { parseAddress } from "../taskpane/address";
import { parseDelimited, sheetName } from "./importData";
import type { CellValue, FunctionMetadata, Workbook } from "./workbook";
import { SYNTHETIC_COLUMNS, SYNTHETIC_SEED, syntheticRow } from "./synthetic";

/** Largest synthetic sheet: the host's last row less the header. */
const MAX_SYNTHETIC_ROWS = 1_048_575;

const g = globalThis as unknown as Record<string, unknown>;
const book = g.ElxPreviewWorkbook as Workbook;
const sheet = book.activeSheet;

/** Options of the panel formulas: store fixed effects and errors clustered by store. */
const FE = "zeros=drop; absorb=Branch; cluster=Branch";
/** 2SLS with the flour cost index as the instrument for Price (x D:J: Period is named so it is not a regressor). */
const IV = `${FE}; time=Period; estimator=2sls; endogenous=Price; instruments=FlourCost`;
/** The four stores a rival opens near (rows 2..417): periods, one series per store, HC1 errors. */
const TIME = "zeros=drop; time=Period; panel=Branch; se=HC1";

/**
 * The formulas on the demo sheet: label above, formula below, in column M (the data fill A:K).
 * A formula whose function is not registered in this build (`needs`) is left out.
 */
export const DEMO_FORMULAS: { at: string; label: string; formula: string; needs?: string }[] = [
  { at: "M2", label: "Coefficients: log-log, HC3, weeks with zero sales left out", formula: '=ELX.FIT(C1:C1249, D1:G1249, "zeros=drop")' },
  { at: "M9", label: "Elasticities at the means, with intervals", formula: '=ELX.ELASTICITIES(C1:C1249, D1:G1249, "zeros=drop")' },
  { at: "M16", label: "Price elasticity, one number", formula: '=ELX.ELASTICITY(C1:C1249, D1:G1249, "Price", "zeros=drop")' },
  { at: "M19", label: "Percent effect of a promotion week", formula: '=ELX.EFFECTS(C1:C1249, D1:G1249, "zeros=drop")' },
  { at: "M23", label: "Zeros and blanks per column", formula: "=ELX.ZEROS(C1:G1249)" },
  { at: "M32", label: "Specification tests", formula: '=ELX.TESTS(C1:C1249, D1:G1249, "zeros=drop")' },
  { at: "M41", label: "What a plain log does with the zero weeks", formula: "=ELX.FIT(C1:C1249, D1:G1249)" },
  { at: "M44", label: "Fit summary", formula: '=ELX.SUMMARY(C1:C1249, D1:G1249, "zeros=drop")' },
  { at: "M74", label: "Pooled over the 12 stores, errors clustered by store (Branch)", formula: '=ELX.ELASTICITIES(C1:C1249, D1:H1249, "zeros=drop; cluster=Branch")' },
  { at: "M81", label: "Store fixed effects (absorb=Branch), errors clustered by store", formula: `=ELX.ELASTICITIES(C1:C1249, D1:H1249, "${FE}")` },
  { at: "M88", label: "Two-stage least squares, FlourCost as the instrument for Price", formula: `=ELX.ELASTICITIES(C1:C1249, D1:J1249, "${IV}")`, needs: "IVCHECK" },
  { at: "M95", label: "Is FlourCost a strong instrument? (first stage, Wu–Hausman)", formula: `=ELX.IVCHECK(C1:C1249, D1:J1249, "${IV}")`, needs: "IVCHECK" },
  { at: "M103", label: "Rival stores (rows 2–417): elasticities over 52-week windows, store effects in each", formula: `=ELX.ROLLING(C1:C417, D1:I417, 52, "${TIME}; absorb=Branch; step=13")`, needs: "ROLLING" },
  { at: "M112", label: "Rival stores: did the model change in week 61?", formula: `=ELX.BREAKTEST(C1:C417, D1:I417, 61, "${TIME}")`, needs: "BREAKTEST" },
];

function place(at: string, input: string): { row: number; column: number; input: string } {
  const p = parseAddress(at);
  if (!p.ok) throw new Error(p.message);
  return { row: p.value.top, column: p.value.left, input };
}

async function start(): Promise<void> {
  const style = document.createElement("style");
  style.textContent = css;
  document.head.appendChild(style);
  const params = new URLSearchParams(location.search);
  const big = Number(params.get("rows") ?? "0");
  // The host reads the functions' metadata (parameters, address options) from functions.json.
  const meta = (await (await fetch("functions.json")).json()) as { functions: FunctionMetadata[] };
  for (const f of meta.functions) book.metadata.set(f.id.toUpperCase(), f);
  const missing = [...book.metadata.keys()].filter((id) => !book.registry.has(id));
  const note = document.getElementById("pv-registered") as HTMLElement;
  note.textContent = `${book.registry.size} ELX functions registered by functions.js${missing.length ? `; listed but not registered: ${missing.join(", ")}` : ""}.`;
  if (big > 0) {
    const rows = Math.min(Math.floor(big), MAX_SYNTHETIC_ROWS);
    const seed = Number(params.get("seed") ?? SYNTHETIC_SEED) >>> 0;
    sheet.base = { rows: rows + 1, columns: SYNTHETIC_COLUMNS.length, row: (r) => (r === 1 ? SYNTHETIC_COLUMNS : syntheticRow(seed, r - 2)) };
    sheet.touch();
    const about = document.querySelector(".pv-header p") as HTMLElement | null;
    if (about) about.textContent = "The sheet holds invented rows of a bakery chain's weekly sales, computed from a seed when read (preview/synthetic.ts), never stored; the pane on the right reads them in blocks and fits them off the page, as it does with a range too large for one formula.";
    (document.getElementById("pv-title") as HTMLElement).textContent = `Synthetic sheet: ${rows.toLocaleString("en-GB")} rows × ${SYNTHETIC_COLUMNS.length} columns of invented bakery-chain sales (seed ${seed}); y A1:A${rows + 1}, x B1:K${rows + 1}`;
  } else {
    const columns = demo.columns as string[];
    book.loadValues(sheet, 1, 1, [columns, ...(demo.rows as CellValue[][])]);
    const inputs: { row: number; column: number; input: string }[] = [];
    for (const f of DEMO_FORMULAS) {
      if (f.needs && !book.registry.has(f.needs)) continue;
      const p = parseAddress(f.at);
      if (!p.ok) continue;
      inputs.push({ row: p.value.top - 1, column: p.value.left, input: f.label });
      inputs.push({ row: p.value.top, column: p.value.left, input: f.formula });
    }
    book.setInputs(sheet, inputs);
  }
  const grid = new GridView(document.getElementById("pv-sheet") as HTMLElement, book);
  wireImport(grid);
  const firstRenderMs = performance.now();
  g.ElxPreview = {
    book,
    grid,
    firstRenderMs,
    recalcMs: book.lastRecalcMs,
    /** The value in a cell of the active sheet (a number, text, boolean, null or { code, message }). */
    value(address: string): unknown {
      const p = parseAddress(address);
      if (!p.ok) return undefined;
      const c = sheet.get(p.value.top, p.value.left);
      return c ? c.value : null;
    },
    shown: (address: string) => grid.shown(address),
    select: (address: string) => grid.selectAddress(address),
    setInput(address: string, input: string): void {
      book.setInputs(sheet, [place(address, input)]);
    },
    input(address: string): string | null {
      const p = parseAddress(address);
      if (!p.ok) return null;
      return sheet.get(p.value.top, p.value.left)?.input ?? null;
    },
  };
  (g.ElxPreviewReady as () => void)();
}

/** Reads pasted or opened text into a new sheet and shows it; the notes say what was read and how. */
export function importText(grid: GridView, text: string, how: { separator?: "\t"; source: string; base: string }): boolean {
  const note = document.getElementById("pv-import-note") as HTMLElement;
  const r = parseDelimited(text, { separator: how.separator, source: how.source });
  if ("error" in r) {
    note.className = "pv-import-note pv-import-bad";
    note.textContent = `Nothing was added: ${r.error}.`;
    return false;
  }
  const name = sheetName(how.base, (n) => !!book.sheet(n));
  const sheet = book.addSheet(name);
  book.loadValues(sheet, 1, 1, r.rows);
  grid.showSheet(name);
  const esc = (t: string) => t.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;");
  note.className = "pv-import-note";
  note.innerHTML = `<p><strong>${esc(how.source)} is in the new sheet ${esc(name)}</strong> (the tabs below the grid switch sheets). Select its y column (click the column letter) and press <em>Use selection</em> in the pane, then the x columns.</p><ul>${r.notes.map((n) => `<li>${esc(n)}</li>`).join("")}</ul>`;
  return true;
}

function wireImport(grid: GridView): void {
  const file = document.getElementById("pv-file") as HTMLInputElement;
  file.addEventListener("change", () => {
    const f = file.files?.[0];
    if (!f) return;
    const reader = new FileReader();
    reader.onload = () => {
      importText(grid, String(reader.result ?? ""), { source: `The file ${f.name}`, base: f.name });
      file.value = "";
    };
    reader.onerror = () => {
      (document.getElementById("pv-import-note") as HTMLElement).textContent = `The file ${f.name} could not be read (${reader.error?.message ?? "unknown reason"}).`;
    };
    reader.readAsText(f);
  });
  // A block pasted anywhere but in a text field (the pane's fields, the name box, the formula bar).
  document.addEventListener("paste", (e) => {
    const target = e.target as HTMLElement | null;
    if (target && target.closest && target.closest("input, textarea, select, [contenteditable]")) return;
    const text = e.clipboardData?.getData("text/plain") ?? "";
    if (text.trim() === "") return;
    e.preventDefault();
    // Spreadsheets copy a block as tab-separated text.
    importText(grid, text, { separator: "\t", source: "The pasted block", base: "Pasted" });
  });
}

document.addEventListener("DOMContentLoaded", () => {
  start().catch((e: unknown) => {
    const el = document.getElementById("pv-registered");
    if (el) el.textContent = `The preview could not start: ${e instanceof Error ? e.message : String(e)}`;
  });
});
