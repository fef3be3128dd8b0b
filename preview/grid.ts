/**
 * The preview's sheet view: a name box (the selection's address; type one and press Enter to
 * select it), a formula bar (the active cell's formula; edit it and press Enter to recalculate), and
 * the grid, drawn only for the rows in view so that large sheets stay quick. Mouse: click, drag or
 * shift-click to select; click a column letter to select the whole column. Keyboard: arrows move
 * (shift extends), Enter or F2 goes to the formula bar.
 */
import { columnLetters, formatAddress, MAX_COLUMNS, MAX_ROWS, parseAddress } from "../taskpane/address";
import { isError, key, type CellValue, type Workbook } from "./workbook";

const ROW_HEIGHT = 21;
const OVERSCAN = 12;

/** Column classes and their widths in px (kept equal to preview.css). */
const COLUMN_WIDTHS: Record<string, number> = { "pv-wide": 84, "pv-data": 60, "pv-gap": 36, "pv-mid": 92 };
/** The demo sheet's layout (data in A:G, a gap, formulas from I); other sheets get even, wide columns. */
function columnClass(c: number, demoLayout = true): string {
  if (!demoLayout) return "pv-wide";
  return c === 1 ? "pv-wide" : c <= 7 ? "pv-data" : c === 8 ? "pv-gap" : "pv-mid";
}
/** Longest run of empty cells a text may draw over, to its right. */
const MAX_OVERFLOW_COLUMNS = 12;

const esc = (s: string): string => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");

/** How a cell shows a value (a short general number format, like a spreadsheet's). */
export function display(v: CellValue): string {
  if (v === null || v === "") return "";
  if (typeof v === "number") {
    if (Number.isInteger(v) && Math.abs(v) < 1e11) return String(v);
    const a = Math.abs(v);
    if (a !== 0 && (a < 1e-4 || a >= 1e11)) return v.toExponential(4);
    return String(Number(v.toPrecision(6)));
  }
  if (typeof v === "boolean") return v ? "TRUE" : "FALSE";
  if (isError(v)) return v.code;
  return String(v);
}

/** A cell that shows nothing and holds nothing (text may draw over it). */
function isEmpty(c: { input: string | null; value: CellValue } | undefined): boolean {
  return !c || (c.input === null && (c.value === null || c.value === ""));
}

export class GridView {
  private readonly scroller: HTMLElement;
  private readonly table: HTMLTableElement;
  private readonly nameBox: HTMLInputElement;
  private readonly formulaBar: HTMLInputElement;
  private readonly cellNote: HTMLElement;
  private anchor = { row: 1, column: 1 };
  private dragging = false;
  private columns = 16;
  private rows = 60;
  private frame = 0;
  renderCount = 0;

  constructor(private readonly root: HTMLElement, private readonly book: Workbook) {
    root.innerHTML = `
      <div class="pv-bar">
        <label for="pv-name">Cell</label><input id="pv-name" class="pv-name" type="text" spellcheck="false" autocomplete="off" aria-describedby="pv-help" />
        <label for="pv-formula">Formula</label><input id="pv-formula" class="pv-formula" type="text" spellcheck="false" autocomplete="off" aria-describedby="pv-help" />
      </div>
      <p id="pv-help" class="pv-help">Type an address in Cell and press Enter to select it; edit a formula and press Enter to see it recalculate.</p>
      <div class="pv-import">
        <label for="pv-file">Your own data: open a CSV file</label> <input id="pv-file" type="file" accept=".csv,.tsv,.txt,text/csv,text/plain" aria-describedby="pv-import-help" />
        <p id="pv-import-help" class="pv-help">or paste (Ctrl+V) into the sheet a block copied from any spreadsheet, header row included. Either opens in a new sheet of this page; nothing leaves this machine.</p>
      </div>
      <div id="pv-import-note" class="pv-import-note" aria-live="polite"></div>
      <p id="pv-note" class="pv-note" aria-live="polite"></p>
      <div class="pv-scroll" tabindex="0" aria-label="Sheet ${esc(book.activeSheet.name)}: arrow keys move, shift extends, Enter edits">
        <table class="pv-grid" aria-label="Sheet ${esc(book.activeSheet.name)}"><colgroup></colgroup><thead></thead><tbody></tbody></table>
      </div>
      <nav class="pv-tabs" aria-label="Sheets"></nav>`;
    this.scroller = root.querySelector(".pv-scroll") as HTMLElement;
    this.table = root.querySelector("table") as HTMLTableElement;
    this.nameBox = root.querySelector("#pv-name") as HTMLInputElement;
    this.formulaBar = root.querySelector("#pv-formula") as HTMLInputElement;
    this.cellNote = root.querySelector("#pv-note") as HTMLElement;
    this.scroller.addEventListener("scroll", () => this.schedule());
    this.scroller.addEventListener("mousedown", (e) => this.mouseDown(e));
    this.scroller.addEventListener("mouseover", (e) => this.mouseOver(e));
    document.addEventListener("mouseup", () => {
      this.dragging = false;
    });
    this.scroller.addEventListener("keydown", (e) => this.key(e));
    this.nameBox.addEventListener("keydown", (e) => {
      if (e.key === "Enter") this.selectAddress(this.nameBox.value);
    });
    this.formulaBar.addEventListener("keydown", (e) => {
      if (e.key === "Enter") this.commit();
      if (e.key === "Escape") this.syncBars();
    });
    book.onChange(() => this.refresh());
    book.onSelect(() => {
      const sel = this.book.selection;
      this.anchor = { row: sel.top, column: sel.left };
      this.refresh();
      this.scrollIntoView(sel);
    });
    this.refresh();
  }

  /** Whether the active sheet uses the demo's column layout. */
  private demoLayout(): boolean {
    return this.book.activeSheet === this.book.sheets[0] && !this.book.activeSheet.base;
  }

  private columnWidth(c: number): number {
    return COLUMN_WIDTHS[columnClass(c, this.demoLayout())];
  }

  /** Scrolls the grid so that the top left of the area is in view, across and down. */
  scrollIntoView(a: { top: number; left: number }): void {
    const head = 20;
    const rowHead = 46;
    const y = (a.top - 1) * ROW_HEIGHT;
    if (y < this.scroller.scrollTop || y > this.scroller.scrollTop + this.scroller.clientHeight - head - 3 * ROW_HEIGHT) this.scroller.scrollTop = Math.max(0, y - ROW_HEIGHT);
    let x = 0;
    for (let c = 1; c < a.left; c++) x += this.columnWidth(c);
    const w = this.columnWidth(a.left);
    if (x < this.scroller.scrollLeft || x + w > this.scroller.scrollLeft + this.scroller.clientWidth - rowHead) this.scroller.scrollLeft = Math.max(0, x - this.columnWidth(Math.max(1, a.left - 1)));
    this.draw();
  }

  /** Shows another sheet of the workbook, with A1 selected. */
  showSheet(name: string): void {
    const sheet = this.book.sheet(name);
    if (!sheet) return;
    this.book.select(sheet, { sheet: sheet.name, top: 1, left: 1, bottom: 1, right: 1 });
  }

  private drawTabs(): void {
    const nav = this.root.querySelector(".pv-tabs") as HTMLElement;
    nav.innerHTML = this.book.sheets.map((sh) => `<button type="button" data-sheet="${esc(sh.name)}"${sh === this.book.activeSheet ? ' aria-current="true" class="pv-tab-on"' : ""}>${esc(sh.name)}</button>`).join("");
    for (const b of Array.from(nav.querySelectorAll("button"))) b.addEventListener("click", () => this.showSheet((b as HTMLElement).dataset.sheet as string));
    const label = `Sheet ${this.book.activeSheet.name}`;
    this.scroller.setAttribute("aria-label", `${label}: arrow keys move, shift extends, Enter edits`);
    this.table.setAttribute("aria-label", label);
  }

  /** Re-measures the sheet and redraws. */
  refresh(): void {
    this.drawTabs();
    const used = this.book.activeSheet.usedBounds();
    const sel = this.book.selection;
    // Draw as far as the used cells and the selection reach (a whole column or row does not stretch the grid).
    this.columns = Math.max(16, (used?.right ?? 0) + 2, sel.left === 1 && sel.right >= MAX_COLUMNS ? 0 : sel.right + 2);
    this.rows = Math.max(60, (used?.bottom ?? 0) + 20, sel.top === 1 && sel.bottom >= MAX_ROWS ? 0 : sel.bottom + 20);
    const cols = ['<col class="pv-rowhead-col">'];
    const demo = this.demoLayout();
    for (let c = 1; c <= this.columns; c++) cols.push(`<col class="${columnClass(c, demo)}">`);
    (this.table.querySelector("colgroup") as HTMLElement).innerHTML = cols.join("");
    // A fixed-layout table needs its width (the same widths as preview.css gives the columns).
    let width = 46;
    for (let c = 1; c <= this.columns; c++) width += COLUMN_WIDTHS[columnClass(c, demo)];
    this.table.style.width = `${width}px`;
    const head = ['<tr><th class="pv-corner" scope="col"><span class="pv-sr">Row</span></th>'];
    for (let c = 1; c <= this.columns; c++) head.push(`<th scope="col" data-col="${c}">${columnLetters(c)}</th>`);
    head.push("</tr>");
    (this.table.querySelector("thead") as HTMLElement).innerHTML = head.join("");
    this.draw();
    this.syncBars();
  }

  private schedule(): void {
    if (this.frame) return;
    this.frame = requestAnimationFrame(() => {
      this.frame = 0;
      this.draw();
    });
  }

  /** Draws the rows in view (plus a margin), with spacer rows above and below. */
  draw(): void {
    const sheet = this.book.activeSheet;
    const view = this.scroller.clientHeight || 600;
    const first = Math.max(1, Math.floor(this.scroller.scrollTop / ROW_HEIGHT) - OVERSCAN);
    const last = Math.min(this.rows, first + Math.ceil(view / ROW_HEIGHT) + 2 * OVERSCAN);
    const sel = this.book.selection;
    const act = this.book.active;
    const html: string[] = [];
    html.push(`<tr class="pv-spacer" aria-hidden="true"><td colspan="${this.columns + 1}" style="height:${(first - 1) * ROW_HEIGHT}px"></td></tr>`);
    for (let r = first; r <= last; r++) {
      html.push(`<tr><th scope="row">${r}</th>`);
      for (let c = 1; c <= this.columns; c++) {
        const cell = sheet.get(r, c);
        const v = cell ? cell.value : null;
        const cls: string[] = [];
        if (cell?.input?.startsWith("=")) cls.push("pv-f");
        if (cell?.spillFrom !== undefined) cls.push("pv-s");
        if (isError(v)) cls.push("pv-e");
        else if (typeof v === "number") cls.push("pv-n");
        // Text draws over the empty cells to its right, and no further (a spreadsheet's rule).
        let over = 0;
        if (!isError(v) && typeof v === "string" && v !== "") {
          let room = this.columnWidth(c) - 6;
          for (let n = c + 1; n <= Math.min(this.columns, c + MAX_OVERFLOW_COLUMNS) && isEmpty(sheet.get(r, n)); n++) room += this.columnWidth(n);
          if (room > this.columnWidth(c) - 6) {
            cls.push("pv-over");
            over = room;
          }
        }
        if (r >= sel.top && r <= sel.bottom && c >= sel.left && c <= sel.right) cls.push("pv-sel");
        if (r === act.row && c === act.column) cls.push("pv-act");
        const text = display(v);
        const title = isError(v) && v.message ? ` title="${esc(`${v.code} ${v.message}`)}"` : text.length > 10 ? ` title="${esc(text)}"` : "";
        const content = over ? `<span class="pv-spill" style="width:${over}px">${esc(text)}</span>` : esc(text);
        html.push(`<td data-a="${columnLetters(c)}${r}"${cls.length ? ` class="${cls.join(" ")}"` : ""}${title}>${content}</td>`);
      }
      html.push("</tr>");
    }
    html.push(`<tr class="pv-spacer" aria-hidden="true"><td colspan="${this.columns + 1}" style="height:${(this.rows - last) * ROW_HEIGHT}px"></td></tr>`);
    (this.table.querySelector("tbody") as HTMLElement).innerHTML = html.join("");
    this.renderCount++;
  }

  private cellAt(e: Event): { row: number; column: number } | null {
    const t = (e.target as HTMLElement).closest("td[data-a], th[data-col]") as HTMLElement | null;
    if (!t) return null;
    if (t.dataset.col) return { row: 0, column: Number(t.dataset.col) };
    const p = parseAddress(t.dataset.a as string);
    return p.ok ? { row: p.value.top, column: p.value.left } : null;
  }

  private mouseDown(e: MouseEvent): void {
    const at = this.cellAt(e);
    if (!at) return;
    if (at.row === 0) {
      this.select({ row: 1, column: at.column }, { row: MAX_ROWS, column: at.column }, { row: 1, column: at.column });
      return;
    }
    e.preventDefault();
    this.scroller.focus();
    if (e.shiftKey) this.select(this.anchor, at, this.book.active);
    else {
      this.anchor = at;
      this.select(at, at, at);
    }
    this.dragging = true;
  }

  private mouseOver(e: MouseEvent): void {
    if (!this.dragging) return;
    // A drag ends when the button is up, even if the mouseup was not delivered (it is not, in some
    // Chromium versions, when the redraw replaced the cell it was pressed on).
    if ((e.buttons & 1) === 0) {
      this.dragging = false;
      return;
    }
    const at = this.cellAt(e);
    if (!at || at.row === 0) return;
    // Redrawing replaces the cell under the pointer, and some browsers answer with another
    // mouseover on the same cell: redraw only when the corner moves.
    const sel = this.book.selection;
    const top = Math.min(this.anchor.row, at.row);
    const left = Math.min(this.anchor.column, at.column);
    const bottom = Math.max(this.anchor.row, at.row);
    const right = Math.max(this.anchor.column, at.column);
    if (sel.top === top && sel.left === left && sel.bottom === bottom && sel.right === right) return;
    this.select(this.anchor, at, this.book.active);
  }

  private key(e: KeyboardEvent): void {
    const moves: Record<string, [number, number]> = { ArrowUp: [-1, 0], ArrowDown: [1, 0], ArrowLeft: [0, -1], ArrowRight: [0, 1] };
    if (e.key === "Enter" || e.key === "F2") {
      e.preventDefault();
      this.formulaBar.focus();
      return;
    }
    const m = moves[e.key];
    if (!m) return;
    e.preventDefault();
    const sel = this.book.selection;
    if (e.shiftKey) {
      // Extend from the anchor to the moved far corner.
      const far = { row: this.anchor.row === sel.top ? sel.bottom : sel.top, column: this.anchor.column === sel.left ? sel.right : sel.left };
      const to = { row: Math.max(1, far.row + m[0]), column: Math.max(1, far.column + m[1]) };
      this.select(this.anchor, to, this.book.active);
    } else {
      const a = this.book.active;
      const to = { row: Math.max(1, a.row + m[0]), column: Math.max(1, a.column + m[1]) };
      this.anchor = to;
      this.select(to, to, to);
    }
  }

  /** Selects the rectangle spanned by two corners and makes `active` the active cell. */
  select(a: { row: number; column: number }, b: { row: number; column: number }, active: { row: number; column: number }): void {
    this.book.selection = { sheet: this.book.activeSheet.name, top: Math.min(a.row, b.row), left: Math.min(a.column, b.column), bottom: Math.max(a.row, b.row), right: Math.max(a.column, b.column) };
    this.book.active = active;
    const s = this.book.selection;
    const beyond = (s.bottom < MAX_ROWS && s.bottom + 20 > this.rows) || (s.right < MAX_COLUMNS && s.right + 2 > this.columns);
    if (beyond) this.refresh();
    else {
      this.draw();
      this.syncBars();
    }
  }

  /** Selects a typed address ("C1:C1249", "Sales!D1:G1249", "C:C") and scrolls it into view. */
  selectAddress(text: string): boolean {
    const p = parseAddress(text);
    if (!p.ok || (p.value.sheet && !this.book.sheet(p.value.sheet))) {
      this.cellNote.textContent = p.ok ? `There is no sheet ${p.value.sheet} in this preview.` : p.message;
      return false;
    }
    const a = p.value;
    this.anchor = { row: a.top, column: a.left };
    this.select({ row: a.top, column: a.left }, { row: a.bottom, column: a.right }, { row: a.top, column: a.left });
    this.scrollIntoView(a);
    return true;
  }

  private syncBars(): void {
    const sel = this.book.selection;
    const whole = sel.top === 1 && sel.bottom === MAX_ROWS;
    this.nameBox.value = whole ? `${columnLetters(sel.left)}:${columnLetters(sel.right)}` : formatAddress({ ...sel, sheet: null });
    const a = this.book.active;
    const cell = this.book.activeSheet.get(a.row, a.column);
    this.formulaBar.value = cell?.input ?? (cell?.spillFrom !== undefined ? display(cell.value) : "");
    this.formulaBar.readOnly = cell?.spillFrom !== undefined;
    const v = cell?.value ?? null;
    this.cellNote.textContent = isError(v) ? `${columnLetters(a.column)}${a.row}: ${v.code} ${v.message ?? ""}` : cell?.spillFrom !== undefined ? `${columnLetters(a.column)}${a.row} is part of a spilled result.` : "";
  }

  /** Puts the formula bar's text into the active cell and recalculates. */
  commit(): void {
    const a = this.book.active;
    const cell = this.book.activeSheet.get(a.row, a.column);
    if (cell?.spillFrom !== undefined) return;
    this.book.setInputs(this.book.activeSheet, [{ row: a.row, column: a.column, input: this.formulaBar.value }]);
  }

  /** The cell's shown text (for tests and the benchmark). */
  shown(address: string): string {
    const p = parseAddress(address);
    if (!p.ok) return "";
    const c = this.book.activeSheet.get(p.value.top, p.value.left);
    return display(c ? c.value : null);
  }
}

export { key };
