/**
 * The preview's stand-in for the host's workbook API, over the preview workbook: just the part that
 * taskpane/host.ts uses (selected range, worksheets by name or active, used range, getRange, load,
 * values, valueTypes, formulas, sync). Like the host, properties must be loaded and synced before
 * they are read (reading one early throws), and writes are applied at sync.
 */
import { formatAddress, MAX_ROWS, parseAddress, quoteSheet, type Address } from "../taskpane/address";
import { isError, SLICE_ROWS, type Sheet, type Workbook } from "./workbook";

/**
 * A turn for the page: a message through a channel (setTimeout(0) is held back to 4 ms once nested,
 * which at twenty turns a block would be most of a big read's time).
 */
function turn(): Promise<void> {
  if (typeof MessageChannel === "undefined") return new Promise((r) => setTimeout(r, 0));
  return new Promise((resolve) => {
    const c = new MessageChannel();
    c.port1.onmessage = () => {
      c.port1.close();
      resolve();
    };
    c.port2.postMessage(0);
  });
}

class NotLoaded extends Error {
  constructor(property: string) {
    super(`The property '${property}' is not available. Before reading the property's value, call the load method on the containing object and call "context.sync()" on the associated request context.`);
  }
}

abstract class Proxy {
  protected readonly wanted = new Set<string>();
  protected readonly data: Record<string, unknown> = {};
  /** Set by load(); a sync resolves only proxies with something new to load (and fresh ones). */
  dirty = true;
  constructor(protected readonly context: PreviewContext) {
    context.track(this);
  }
  load(props?: string | string[] | Record<string, boolean>): this {
    const list = props === undefined ? ["*"] : typeof props === "string" ? props.split(",") : Array.isArray(props) ? props : Object.keys(props).filter((k) => props[k]);
    for (const p of list) this.wanted.add(p.trim());
    this.dirty = true;
    return this;
  }
  protected get<T>(name: string): T {
    if (!(name in this.data)) throw new NotLoaded(name);
    return this.data[name] as T;
  }
  /** Fills the loaded properties; true when that read cells (the sync then gives the page a turn). */
  abstract resolve(): boolean | void | Promise<boolean>;
}

function addressText(sheet: string, a: Address): string {
  const whole = a.top === 1 && a.bottom === MAX_ROWS;
  const body = formatAddress({ ...a, sheet: null });
  return `${quoteSheet(sheet)}!${whole ? body.replace(/\d+/g, "") : body}`;
}

export class RangeProxy extends Proxy {
  private pendingFormulas: unknown[][] | null = null;
  constructor(context: PreviewContext, private readonly sheetRef: SheetProxy, private readonly area: (() => Address | null) | Address | null) {
    super(context);
  }
  get worksheet(): SheetProxy {
    return this.sheetRef;
  }
  private rect(): Address | null {
    return typeof this.area === "function" ? this.area() : this.area;
  }
  get isNullObject(): boolean {
    return this.get<boolean>("isNullObject");
  }
  get address(): string {
    return this.get<string>("address");
  }
  get values(): unknown[][] {
    return this.get<unknown[][]>("values");
  }
  get valueTypes(): string[][] {
    return this.get<string[][]>("valueTypes");
  }
  get formulas(): unknown[][] {
    return this.get<unknown[][]>("formulas");
  }
  /** Sets plain values (applied at sync): numbers exactly, texts as typed constants, "" clears. */
  set values(v: unknown[][]) {
    const rows = v.map((line) => line.map((c) => (c === null || c === undefined ? "" : typeof c === "boolean" ? (c ? "TRUE" : "FALSE") : String(c))));
    this.context.queueWrite(() => {
      const a = this.rect();
      const sheet = this.sheetRef.sheet();
      if (!a || !sheet) return;
      const updates: { row: number; column: number; input: string }[] = [];
      rows.forEach((line, i) => line.forEach((input, j) => updates.push({ row: a.top + i, column: a.left + j, input })));
      this.context.book.setInputs(sheet, updates);
    });
  }
  set formulas(v: unknown[][]) {
    this.pendingFormulas = v;
    this.context.queueWrite(() => this.applyFormulas());
  }
  /** Selects the range (applied at sync), making its sheet the active one; the sheet view scrolls to it. */
  select(): void {
    this.context.queueWrite(() => {
      const a = this.rect();
      const sheet = this.sheetRef.sheet();
      if (a && sheet) this.context.book.select(sheet, a);
    });
  }
  private applyFormulas(): void {
    const a = this.rect();
    const sheet = this.sheetRef.sheet();
    if (!a || !sheet || !this.pendingFormulas) return;
    const updates: { row: number; column: number; input: string }[] = [];
    this.pendingFormulas.forEach((line, i) => line.forEach((v, j) => updates.push({ row: a.top + i, column: a.left + j, input: v === null || v === undefined ? "" : String(v) })));
    this.pendingFormulas = null;
    this.context.book.setInputs(sheet, updates);
  }
  /**
   * Values of the computed sheet: its rows computed in slices of SLICE_ROWS with a turn for the page
   * between them (the host answers a request in its own process; here the work shares the page's
   * thread), then the response's arrays made at once, as the host's response is parsed on arrival.
   */
  private async resolveComputed(sheet: Sheet, a: Address): Promise<boolean> {
    for (let top = a.top; top <= a.bottom; top += SLICE_ROWS) {
      sheet.baseSlice(top, Math.min(a.bottom, top + SLICE_ROWS - 1));
      if (top + SLICE_ROWS <= a.bottom) await turn();
    }
    this.data.values = sheet.valuesBlock(a);
    return true;
  }
  resolve(): boolean | Promise<boolean> {
    const a = this.rect();
    const sheet = this.sheetRef.sheet();
    this.data.isNullObject = !a || !sheet;
    if (!a || !sheet) return false;
    this.data.address = addressText(sheet.name, a);
    const need = (p: string) => this.wanted.has(p) || this.wanted.has("*");
    const wantValues = need("values");
    const wantTypes = need("valueTypes");
    const wantFormulas = need("formulas");
    if (wantValues || wantTypes || wantFormulas) {
      const cells = (a.bottom - a.top + 1) * (a.right - a.left + 1);
      if (cells > 5_000_000) throw new Error("The request payload size has exceeded the limit.");
      // The response's worst case: a double as JSON text takes up to 24 bytes with its separator, a
      // value type about 10, a formula as long as its text (numbers: as their value).
      const reads = this.context.book.reads;
      reads.requests++;
      reads.largestCells = Math.max(reads.largestCells, cells);
      reads.largestBytes = Math.max(reads.largestBytes, cells * ((wantValues ? 24 : 0) + (wantTypes ? 10 : 0) + (wantFormulas ? 24 : 0)));
      if (sheet.base && wantValues && !wantTypes && !wantFormulas) return this.resolveComputed(sheet, a);
      const values: unknown[][] = [];
      const types: string[][] = [];
      const formulas: unknown[][] = [];
      for (let r = a.top; r <= a.bottom; r++) {
        const vr: unknown[] = [];
        const tr: string[] = [];
        const fr: unknown[] = [];
        for (let c = a.left; c <= a.right; c++) {
          const cell = sheet.get(r, c);
          const v = cell ? cell.value : null;
          if (typeof v === "number") {
            vr.push(v);
            if (wantTypes) tr.push("Double");
          } else if (v === null || v === "") {
            vr.push("");
            if (wantTypes) tr.push("Empty");
          } else if (isError(v)) {
            vr.push(v.code);
            if (wantTypes) tr.push("Error");
          } else {
            vr.push(v);
            if (wantTypes) tr.push(typeof v === "boolean" ? "Boolean" : "String");
          }
          if (wantFormulas) fr.push(cell && cell.input !== null ? (cell.input.startsWith("=") ? cell.input : v) : "");
        }
        if (wantValues) values.push(vr);
        if (wantTypes) types.push(tr);
        if (wantFormulas) formulas.push(fr);
      }
      if (wantValues) this.data.values = values;
      if (wantTypes) this.data.valueTypes = types;
      if (wantFormulas) this.data.formulas = formulas;
      return true;
    }
    return false;
  }
}

/** What a worksheet change handler receives (the part the pane reads). */
export interface ChangeEvent {
  type: "WorksheetChanged";
  address: string;
  worksheetId: string;
  changeType: string;
  source: "Local";
}

export class SheetProxy extends Proxy {
  constructor(context: PreviewContext, readonly sheet: () => Sheet | undefined) {
    super(context);
  }
  get name(): string {
    return this.get<string>("name");
  }
  get isNullObject(): boolean {
    return this.get<boolean>("isNullObject");
  }
  getRange(address: string): RangeProxy {
    const p = parseAddress(address);
    if (!p.ok) throw new Error(`getRange: ${p.message}`);
    return new RangeProxy(this.context, this, { ...p.value, sheet: null });
  }
  /**
   * The worksheet's change event: handlers run after cells of this sheet are typed or cleared (not
   * after recalculation). add() registers at the next sync; remove() on its result unregisters.
   */
  get onChanged(): { add(handler: (e: ChangeEvent) => Promise<unknown> | void): { remove(): void; context: PreviewContext } } {
    const ctx = this.context;
    const target = this.sheet;
    return {
      add(handler) {
        let off: (() => void) | null = null;
        ctx.queueWrite(() => {
          off = ctx.book.onEdit((sheet, area) => {
            if (sheet !== target()) return;
            void handler({ type: "WorksheetChanged", address: formatAddress({ ...area, sheet: null }), worksheetId: sheet.name, changeType: "RangeEdited", source: "Local" });
          });
        });
        return {
          context: ctx,
          remove() {
            ctx.queueWrite(() => off?.());
          },
        };
      },
    };
  }
  getUsedRangeOrNullObject(valuesOnly?: boolean): RangeProxy {
    void valuesOnly;
    return new RangeProxy(this.context, this, () => this.sheet()?.usedBounds() ?? null);
  }
  resolve(): void {
    const s = this.sheet();
    this.data.isNullObject = !s;
    this.data.name = s ? s.name : undefined;
  }
}

export class PreviewContext {
  private proxies: Proxy[] = [];
  private writes: (() => void)[] = [];
  readonly workbook: {
    getSelectedRange(): RangeProxy;
    worksheets: { getItem(name: string): SheetProxy; getItemOrNullObject(name: string): SheetProxy; getActiveWorksheet(): SheetProxy };
  };
  constructor(readonly book: Workbook) {
    const ctx = this;
    this.workbook = {
      getSelectedRange() {
        const sel = { ...book.selection };
        const sheet = new SheetProxy(ctx, () => book.sheet(sel.sheet ?? book.activeSheet.name));
        return new RangeProxy(ctx, sheet, sel);
      },
      worksheets: {
        getItem(name: string) {
          if (!book.sheet(name)) throw new Error(`The requested resource doesn't exist (sheet ${name}).`);
          return new SheetProxy(ctx, () => book.sheet(name));
        },
        getItemOrNullObject(name: string) {
          return new SheetProxy(ctx, () => book.sheet(name));
        },
        getActiveWorksheet() {
          const s = book.activeSheet;
          return new SheetProxy(ctx, () => s);
        },
      },
    };
  }
  /** @internal */
  track(p: Proxy): void {
    this.proxies.push(p);
  }
  /** @internal */
  queueWrite(f: () => void): void {
    this.writes.push(f);
  }
  /** Applies queued writes, then fills every loaded property. */
  async sync(): Promise<void> {
    const writes = this.writes;
    this.writes = [];
    for (const w of writes) w();
    for (const p of this.proxies) {
      if (!p.dirty && writes.length === 0) continue;
      p.dirty = false;
      // the host answers a request in its own process; here it shares the page's thread, so each
      // range read is followed by a turn for the page (a request for y and x is two shorter tasks)
      if (await p.resolve()) await turn();
    }
    await new Promise((r) => setTimeout(r, 0));
  }
}
