/**
 * Loaded first on the preview page, from localhost: the globals the host would provide, so that the
 * real dist/functions.js and taskpane.js run unchanged.
 *   CustomFunctions — associate(id, fn) fills the preview workbook's registry (the host's
 *                     registration path), with the host's Error class and ErrorCode values;
 *   Excel.run       — runs a batch against the preview workbook through the in-page adapter;
 *   Office.onReady  — resolves with host "Excel" once the page (and the workbook) is ready.
 * Never the real office.js and nothing from the network.
 */
import { Workbook } from "./workbook";
import { PreviewContext } from "./excelAdapter";

class PreviewFunctionError {
  constructor(public code: string, public message?: string) {}
}

const ErrorCode = {
  invalidValue: "#VALUE!",
  notAvailable: "#N/A",
  divisionByZero: "#DIV/0!",
  invalidNumber: "#NUM!",
  nullReference: "#NULL!",
  invalidName: "#NAME?",
  invalidReference: "#REF!",
};

const book = new Workbook(["Sales"]);
const g = globalThis as unknown as Record<string, unknown>;
g.ElxPreviewWorkbook = book;

g.CustomFunctions = {
  associate(a: string | Record<string, (...args: unknown[]) => unknown>, f?: (...args: unknown[]) => unknown) {
    if (typeof a === "string") book.registry.set(a.toUpperCase(), f as (...args: unknown[]) => unknown);
    else for (const k of Object.keys(a)) book.registry.set(k.toUpperCase(), a[k]);
  },
  Error: PreviewFunctionError,
  ErrorCode,
};

g.Excel = {
  /** Excel.run(batch), or Excel.run(context, batch) to work in an earlier batch's context (removing an event handler). */
  async run<T>(a: ((context: PreviewContext) => Promise<T>) | PreviewContext, b?: (context: PreviewContext) => Promise<T>): Promise<T> {
    const context = a instanceof PreviewContext ? a : new PreviewContext(book);
    const batch = (a instanceof PreviewContext ? b : a) as (context: PreviewContext) => Promise<T>;
    const result = await batch(context);
    await context.sync();
    return result;
  },
};

/**
 * The document's settings (Office.context.document.settings): a key-value store saved with the
 * workbook. Here it lives as long as the page (and in sessionStorage, so a reload keeps it).
 */
const SETTINGS_KEY = "elx-preview-settings";
const stored: Record<string, unknown> = (() => {
  try {
    return JSON.parse(sessionStorage.getItem(SETTINGS_KEY) ?? "{}") as Record<string, unknown>;
  } catch {
    return {};
  }
})();
const settings = {
  get(name: string): unknown {
    return name in stored ? stored[name] : null;
  },
  set(name: string, value: unknown): void {
    stored[name] = JSON.parse(JSON.stringify(value));
  },
  remove(name: string): void {
    delete stored[name];
  },
  saveAsync(callback?: (r: { status: string }) => void): void {
    try {
      sessionStorage.setItem(SETTINGS_KEY, JSON.stringify(stored));
    } catch {
      // a page without storage keeps the settings in memory only
    }
    setTimeout(() => callback?.({ status: "succeeded" }), 0);
  },
};

let markReady: () => void = () => undefined;
const ready = new Promise<void>((resolve) => {
  markReady = resolve;
});
/** The preview page calls this once the workbook holds its data and formulas. */
g.ElxPreviewReady = () => markReady();

g.Office = {
  context: { document: { settings } },
  AsyncResultStatus: { Succeeded: "succeeded", Failed: "failed" },
  HostType: { Excel: "Excel" },
  PlatformType: { OfficeOnline: "OfficeOnline" },
  onReady(callback?: (info: { host: string; platform: string }) => void) {
    const info = { host: "Excel", platform: "OfficeOnline" };
    return ready.then(() => {
      if (callback) callback(info);
      return info;
    });
  },
};
