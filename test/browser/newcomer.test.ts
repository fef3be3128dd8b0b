/**
 * What a newcomer meets, in headless Chromium (Debian's /usr/bin/chromium through playwright-core,
 * launched as in preview.test.ts): the README's steps followed literally (the default zeros=stop
 * refuses the demo data and the pane says so first, with the zero choices one click away), the
 * formula writer's room and its word on formulas that return errors, the sheet view (text overflow,
 * scrolling to an address and to a written block), the pane's tables in its narrow width, the
 * analyst's own data pasted or opened into a new sheet, the pane page without the host's script, the
 * pages' Content-Security-Policy and escaping, and the interval headers. No request may leave the
 * test's localhost server.
 *
 * Engine values come from dist/functions.js loaded in this Jest process (test/harness/loadFunctions.ts)
 * with the same cells and parameter addresses the page passes; the demo data and the pasted tables are
 * invented, so these checks compare the page with the engine, not with a statistical reference.
 */
import * as fs from "fs";
import * as os from "os";
import * as path from "path";
import { chromium, type BrowserContext, type Page } from "playwright-core";
import { call, HostError, loadFunctions } from "../harness/loadFunctions";

// eslint-disable-next-line @typescript-eslint/no-var-requires
const { serve } = require("../../scripts/serve.js") as { serve: (o: { root: string; port?: number }) => Promise<{ url: string; close: () => Promise<void> }> };

const ROOT = path.resolve(__dirname, "../..");
const DIST = path.join(ROOT, "dist");
const CHROMIUM = process.env.ELX_CHROMIUM || "/usr/bin/chromium";
const demo = JSON.parse(fs.readFileSync(path.join(ROOT, "data", "demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };
const README = fs.readFileSync(path.join(ROOT, "README.md"), "utf8");

const N = demo.rows.length;
const Y = [[demo.columns[2]], ...demo.rows.map((r) => [r[2]])];
const X = [demo.columns.slice(3, 7), ...demo.rows.map((r) => r.slice(3, 7))];
const INVOCATION = { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:G${N + 1}`] };
const reg = loadFunctions();
const engine = (id: string, ...args: unknown[]) => call(reg, id, ...args);
const OPTS = (zeros: string) => `form=log-log; se=HC3; zeros=${zeros}; level=0.95`;
const short = (v: number) => String(Number(v.toPrecision(3))).replace("-", "−");

let server: { url: string; close: () => Promise<void> };
let context: BrowserContext;
let page: Page;
let userDir: string;
const outside: string[] = [];
const problems: string[] = [];

beforeAll(async () => {
  if (!fs.existsSync(CHROMIUM)) throw new Error(`${CHROMIUM} is missing: install Debian's chromium (apt-get install -y chromium); .ci/run does this`);
  server = await serve({ root: DIST });
  userDir = fs.mkdtempSync(path.join(os.tmpdir(), "elx-chromium-"));
  context = await chromium.launchPersistentContext(userDir, {
    executablePath: CHROMIUM,
    headless: true,
    args: ["--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run"],
    viewport: { width: 1400, height: 900 },
  });
  // Every page of the context: nothing may leave the test's server (the host's script is answered by the tests' own routes).
  context.on("request", (r) => {
    if (!r.url().startsWith(`${server.url}/`) && !r.url().startsWith("https://appsforoffice.microsoft.com/")) outside.push(r.url());
  });
  page = context.pages()[0] ?? (await context.newPage());
  watch(page);
  await openPreview();
}, 60000);

afterAll(async () => {
  if (context) await context.close();
  if (server) await server.close();
  if (userDir) fs.rmSync(userDir, { recursive: true, force: true });
});

function watch(p: Page): void {
  p.on("console", (m) => {
    if (m.type() === "error" || m.type() === "warning") problems.push(`console ${m.type()}: ${m.text()}`);
  });
  p.on("pageerror", (e) => problems.push(`page error: ${e.message}`));
}

/** A fresh preview (the demo workbook as it loads). */
async function openPreview(): Promise<void> {
  await page.goto(`${server.url}/preview.html`);
  await page.waitForFunction(() => (window as any).ElxPreview && (window as any).ElxPane, null, { timeout: 20000 });
}

async function selectInGrid(address: string): Promise<void> {
  await page.fill("#pv-name", address);
  await page.press("#pv-name", "Enter");
}

async function useSelection(field: "elx-y" | "elx-x", expected: string): Promise<void> {
  await page.click(`#${field}-sel`);
  await page.waitForFunction(([id, v]) => (document.getElementById(id) as HTMLInputElement).value === v, [field, expected], { timeout: 5000 });
}

/** Waits until the pane has finished more runs (or writes) than before. */
async function after(counter: "completedRuns" | "completedWrites", action: () => Promise<void>): Promise<void> {
  const before = await page.evaluate((c) => (window as any).ElxPane[c], counter);
  await action();
  await page.waitForFunction(([c, b]) => (window as any).ElxPane[c as string] > (b as number), [counter, before], { timeout: 30000 });
}

const runCheck = () => after("completedRuns", () => page.click("#elx-run"));

async function write(target: string): Promise<string> {
  await page.fill("#elx-target", target);
  await after("completedWrites", () => page.click("#elx-write-btn"));
  return (await page.textContent("#elx-write-msg")) ?? "";
}

/** The README's steps: select the Units column and Price to Income, *Use selection* for each, *Check ranges and model*. */
async function readmeSteps(): Promise<void> {
  await selectInGrid("C1:C1249");
  await useSelection("elx-y", "Sales!C1:C1249");
  await selectInGrid("D1:G1249");
  await useSelection("elx-x", "Sales!D1:G1249");
  await runCheck();
}

/** Inputs of the active sheet's cells in a rectangle (row-major), for the written block. */
async function inputs(address: string): Promise<{ at: string; input: string | null; value: unknown }[]> {
  return page.evaluate((a) => {
    const w = (window as any).ElxPreviewWorkbook;
    const m = /^(?:.*!)?([A-Z]+)(\d+):([A-Z]+)(\d+)$/.exec(a) as RegExpExecArray;
    const col = (s: string) => [...s].reduce((n, ch) => n * 26 + ch.charCodeAt(0) - 64, 0);
    const letters = (n: number) => {
      let s = "";
      while (n > 0) {
        s = String.fromCharCode(65 + ((n - 1) % 26)) + s;
        n = Math.floor((n - 1) / 26);
      }
      return s;
    };
    const out: { at: string; input: string | null; value: unknown }[] = [];
    for (let r = Number(m[2]); r <= Number(m[4]); r++) {
      for (let c = col(m[1]); c <= col(m[3]); c++) {
        const cell = w.activeSheet.get(r, c);
        if (cell) out.push({ at: `${letters(c)}${r}`, input: cell.input, value: cell.value });
      }
    }
    return out;
  }, address);
}

/** Pastes text into the sheet the way a browser delivers Ctrl+V (a paste event with the clipboard's text). */
async function paste(text: string): Promise<void> {
  await selectInGrid("B3");
  await page.click('td[data-a="B3"]');
  await page.evaluate((t) => {
    const data = new DataTransfer();
    data.setData("text/plain", t);
    (document.querySelector(".pv-scroll") as HTMLElement).dispatchEvent(new ClipboardEvent("paste", { clipboardData: data, bubbles: true, cancelable: true }));
  }, text);
}

/** Narrows the pane to the host's usual narrowest width (320 px), or back to the preview's. */
async function narrowPane(on: boolean): Promise<void> {
  await page.evaluate((narrow) => {
    const pane = document.getElementById("elx-pane") as HTMLElement;
    pane.style.flex = narrow ? "0 0 320px" : "";
    pane.style.width = narrow ? "320px" : "";
  }, on);
}

/** Whether an element's box lies inside the visible part of the sheet's scroller (under its sticky headers). */
async function inView(selector: string): Promise<boolean> {
  return page.evaluate((sel) => {
    const el = document.querySelector(sel) as HTMLElement | null;
    if (!el) return false;
    const box = el.getBoundingClientRect();
    const sc = (document.querySelector(".pv-scroll") as HTMLElement).getBoundingClientRect();
    return box.left >= sc.left + 40 && box.right <= sc.right && box.top >= sc.top + 18 && box.bottom <= sc.bottom;
  }, selector);
}

describe("the engine on the page", () => {
  it("compiles the engine's WebAssembly kernel in the background on the page's main thread (over 4 KB: not allowed synchronously there), and the engine then uses it", async () => {
    await page.waitForFunction(() => (window as any).Elasticell?.kernelName() === "wasm", null, { timeout: 20000 });
    expect(problems.filter((p) => /WebAssembly|wasm/i.test(p))).toEqual([]);
  });
});

describe("the README's steps, followed literally (item 6)", () => {
  it("say first that the default zeros=stop refuses the demo data, and offer the zero choices in one click", async () => {
    await readmeSteps();
    expect(await page.inputValue("#elx-zeros")).toBe("stop");
    const stop = engine("ELASTICITIES", Y, X, OPTS("stop"), INVOCATION) as HostError;
    expect(stop).toBeInstanceOf(HostError);
    // The refusal comes before the data check, says why in the engine's words, and holds the ways out.
    const verdict = page.locator("#elx-verdict");
    await expect(verdict.isVisible()).resolves.toBe(true);
    expect(await page.textContent("#elx-elasticity-error")).toBe(`With zeros=stop (stop and tell me) the model does not run on these ranges: ${stop.message}.`);
    const order = await page.evaluate(() => {
      const v = document.getElementById("elx-verdict") as HTMLElement;
      const c = document.getElementById("elx-check") as HTMLElement;
      return v.compareDocumentPosition(c) & Node.DOCUMENT_POSITION_FOLLOWING ? "verdict first" : "check first";
    });
    expect(order).toBe("verdict first");
    const offers = await page.locator("#elx-verdict button").allTextContents();
    expect(offers).toEqual(["Leave those rows out (zeros=drop)", "log(v + 1) (zeros=shift)", "asinh (zeros=ihs)", "PPML, zero y kept (estimator=ppml)"]);
    // The first way out has the keyboard, and no picture is drawn over a fit that does not exist.
    expect(await page.evaluate(() => (document.activeElement as HTMLElement).textContent)).toBe("Leave those rows out (zeros=drop)");
    expect(await page.locator("#elx-pictures").isVisible()).toBe(false);
    expect(await page.locator("#elx-pane").textContent()).not.toContain("no fit (");
    // One click: zeros=drop is chosen and the check runs again, with every picture.
    await after("completedRuns", () => page.click("#elx-verdict button >> nth=0"));
    expect(await page.inputValue("#elx-zeros")).toBe("drop");
    expect(await page.locator("#elx-verdict").isVisible()).toBe(false);
    expect(await page.locator("#elx-pictures figure svg").count()).toBe(4);
    expect(await page.locator("#elx-pane").textContent()).not.toContain("no fit (");
    const drop = engine("ELASTICITIES", Y, X, OPTS("drop"), INVOCATION) as unknown[][];
    expect(await page.locator("#elx-pictures table tbody tr >> nth=0").locator("td").first().textContent()).toBe(short(drop[1][2] as number));
  });

  it("and the PPML offer sets the estimator and runs, as the README says", async () => {
    await page.selectOption("#elx-zeros", "stop");
    await runCheck();
    await after("completedRuns", () => page.click('#elx-verdict button[data-estimator="ppml"]'));
    expect(await page.inputValue("#elx-estimator")).toBe("ppml");
    expect(await page.inputValue("#elx-se")).toBe("HC1");
    const ppml = engine("ELASTICITIES", Y, X, "form=log-log; estimator=ppml; se=HC1; zeros=drop; level=0.95", INVOCATION);
    if (ppml instanceof HostError) expect(await page.textContent("#elx-elasticity-error")).toContain(ppml.message);
    else expect(await page.locator("#elx-pictures table tbody tr >> nth=0").locator("td").first().textContent()).toBe(short((ppml as unknown[][])[1][2] as number));
    await page.selectOption("#elx-estimator", "ols");
    await page.selectOption("#elx-se", "HC3");
  });

  it("name in the README exactly the buttons the pane shows, in the order a reader presses them", async () => {
    const quick = README.slice(README.indexOf("## Quick start"), README.indexOf("**Your own data**")).replace(/\s+/g, " ");
    const pressed = [...quick.matchAll(/press \*([^*]+)\*/g)].map((m) => m[1]);
    expect(pressed).toEqual(["Use selection", "Use selection", "Check ranges and model", "Leave those rows out (zeros=drop)"]);
    await page.selectOption("#elx-zeros", "stop");
    await runCheck();
    const buttons = await page.locator("#elx-pane button").allTextContents();
    for (const label of pressed) expect(buttons).toContain(label);
    // The README says what the reader sees after the check: the refusal and its count of zero rows.
    const lost = await page.evaluate(() => (window as any).ElxPane.state.check.lostToLog);
    expect(quick).toContain(`refuses the ${lost} rows`);
  });
});

describe("the formula writer (item 7)", () => {
  it("reserves the room of the results the formulas give once the data are fixed, and says they return errors now", async () => {
    await openPreview();
    await readmeSteps(); // zeros=stop: every formula returns #VALUE! on these data
    const msg = await write("W2");
    expect(msg).toMatch(/^Written at Sales!W2:[A-Z]+\d+: 5 formulas \(ELX\.FIT, ELX\.ELASTICITIES, ELX\.EFFECTS, ELX\.TESTS, ELX\.SUMMARY\), but all of them return an error for these ranges and options now: /);
    const stop = engine("FIT", Y, X, OPTS("stop"), INVOCATION) as HostError;
    expect(msg).toContain(stop.message);
    expect(msg).not.toContain("with room for their results.");
    const area = /Written at (Sales![A-Z]+\d+:[A-Z]+\d+)/.exec(msg)?.[1] as string;
    // Fix the data the way an analyst might (the zero weeks set to 1): now every formula has a result,
    // and none of them may run into the cells of the next one.
    const fixes = demo.rows.map((r, i) => ({ r, row: i + 2 })).filter(({ r }) => r[2] === 0 || r[4] === 0);
    await page.evaluate((rows) => {
      const w = (window as any).ElxPreviewWorkbook;
      const updates: { row: number; column: number; input: string }[] = [];
      for (const f of rows) {
        if (f.units === 0) updates.push({ row: f.row, column: 3, input: "1" });
        if (f.footfall === 0) updates.push({ row: f.row, column: 5, input: "1" });
      }
      w.setInputs(w.activeSheet, updates);
    }, fixes.map(({ r, row }) => ({ row, units: r[2], footfall: r[4] })));
    const formulas = (await inputs(area)).filter((c) => c.input?.startsWith("=ELX."));
    expect(formulas.map((c) => /^=ELX\.(\w+)/.exec(c.input as string)?.[1])).toEqual(["FIT", "ELASTICITIES", "EFFECTS", "TESTS", "SUMMARY"]);
    for (const f of formulas) {
      const v = f.value as { code?: string; message?: string } | null;
      if (v && typeof v === "object" && v.code) throw new Error(`${f.at} (${f.input}) shows ${v.code}: ${v.message}`);
    }
  });

  it("after a failed check, writes nothing for the previous ranges", async () => {
    await page.selectOption("#elx-zeros", "drop");
    await runCheck();
    await page.fill("#elx-y", "Stock!A1:A9");
    await runCheck();
    const count = await page.evaluate(() => (window as any).ElxPreviewWorkbook.activeSheet.cells.size);
    const msg = await write("AH2");
    expect(msg).toBe('Nothing was written: the last check did not pass (y: there is no sheet named "Stock" in this workbook). Fix the ranges and check again; the block is written for the ranges and options of a check that passed.');
    expect(await page.evaluate(() => (window as any).ElxPreviewWorkbook.activeSheet.cells.size)).toBe(count);
    // …and the writer no longer describes the block of the previous ranges.
    expect(await page.textContent("#elx-write-what")).not.toContain("Sales!C1:C1249");
    await page.fill("#elx-y", "Sales!C1:C1249");
  });
});

describe("the sheet view and the pane's tables (item 8)", () => {
  it("draws long text only over empty cells: a label stops at the next non-empty cell", async () => {
    await openPreview();
    // M1 holds a long label; put something in O1, two cells to its right.
    await page.evaluate(() => (window as any).ElxPreview.setInput("O1", "note"));
    const r = await page.evaluate(() => {
      const td = document.querySelector('td[data-a="M1"]') as HTMLElement;
      const walker = document.createTreeWalker(td, NodeFilter.SHOW_TEXT);
      const text = walker.nextNode() as Text;
      const range = document.createRange();
      range.selectNodeContents(text);
      let right = range.getBoundingClientRect().right;
      // What is visible: the text's box cut by every box on the way up that clips its overflow.
      for (let el: HTMLElement | null = text.parentElement; el && !el.classList.contains("pv-scroll"); el = el.parentElement) {
        if (getComputedStyle(el).overflowX !== "visible") right = Math.min(right, el.getBoundingClientRect().right);
      }
      return { right, next: (document.querySelector('td[data-a="O1"]') as HTMLElement).getBoundingClientRect().left, over: (document.querySelector('td[data-a="N1"]') as HTMLElement).getBoundingClientRect().left };
    });
    expect(r.right).toBeLessThanOrEqual(r.next + 0.5);
    // …and still runs over the empty N1.
    expect(r.right).toBeGreaterThan(r.over);
  });

  it("scrolls to an address typed in the Cell box, across and down", async () => {
    expect(await inView('td[data-a="AB300"]')).toBe(false);
    await selectInGrid("AB300");
    expect(await inView('td[data-a="AB300"]')).toBe(true);
    await selectInGrid("A1");
    expect(await inView('td[data-a="A1"]')).toBe(true);
  });

  it("scrolls to the block the pane has just written, and selects it", async () => {
    await page.fill("#elx-y", "Sales!C1:C1249");
    await page.fill("#elx-x", "Sales!D1:G1249");
    await page.selectOption("#elx-zeros", "drop");
    await runCheck();
    const msg = await write("AE120");
    expect(msg).toMatch(/^Written at Sales!AE120:/);
    expect(await page.inputValue("#pv-name")).toMatch(/^AE120:/);
    expect(await inView('td[data-a="AE120"]')).toBe(true);
  });

  it("lists exactly the functions the writer puts in the sheet", async () => {
    const said = (await page.textContent("#elx-write-what")) ?? "";
    const listed = [...said.matchAll(/ELX\.(\w+)/g)].map((m) => m[1]);
    const area = /Written at (Sales![A-Z]+\d+:[A-Z]+\d+)/.exec((await page.textContent("#elx-write-msg")) ?? "")?.[1] as string;
    const written = (await inputs(area)).filter((c) => c.input?.startsWith("=ELX.")).map((c) => /^=ELX\.(\w+)/.exec(c.input as string)?.[1]);
    expect(listed).toEqual(written);
    expect(written).toHaveLength(5);
  });

  it("keeps each interval and each choice's name on one line in the zero-choices table, and the table inside the pane's width", async () => {
    await narrowPane(true);
    const r = await page.evaluate(() => {
      const table = document.getElementById("elx-choices-table") as HTMLTableElement;
      const wrap = table.parentElement as HTMLElement;
      const cells = Array.from(table.querySelectorAll("td, tbody th"));
      const lineHeight = parseFloat(getComputedStyle(cells[0]).lineHeight) || 18;
      const wrapped = cells.filter((td) => {
        const range = document.createRange();
        range.selectNodeContents(td);
        return range.getClientRects().length > 1 || range.getBoundingClientRect().height > 1.5 * lineHeight;
      }).map((td) => td.textContent);
      return { wrapped, overflow: wrap.scrollWidth - wrap.clientWidth, headers: Array.from(table.querySelectorAll("thead th")).map((th) => th.textContent) };
    });
    expect(r.wrapped).toEqual([]);
    expect(r.overflow).toBeLessThanOrEqual(0);
    expect(r.headers).toEqual(["Choice", "Elasticity", "Low (95%)", "High (95%)", "Rows used"]);
    await narrowPane(false);
  });

  it("shows every column of the data-check table inside the pane at the host's narrow width, for twelve regressors", async () => {
    await narrowPane(true);
    const names = Array.from({ length: 12 }, (_, j) => `Driver ${j + 1}`);
    const lines = [["Sales", ...names].join("\t")];
    for (let i = 0; i < 60; i++) lines.push([String(100 + ((i * 37) % 50)), ...names.map((_, j) => String(1 + ((i * (j + 3)) % 17) + j / 10))].join("\t"));
    await paste(lines.join("\n"));
    await page.fill("#elx-y", "Pasted!A1:A61");
    await page.fill("#elx-x", "Pasted!B1:M61");
    await runCheck();
    const r = await page.evaluate(() => {
      const table = document.getElementById("elx-check-table") as HTMLTableElement;
      const wrap = table.parentElement as HTMLElement;
      const pane = document.getElementById("elx-pane") as HTMLElement;
      const paneBox = pane.getBoundingClientRect();
      const cells = Array.from(table.querySelectorAll("th, td")).filter((c) => {
        const b = c.getBoundingClientRect();
        return b.right > paneBox.right + 0.5 || b.left < paneBox.left - 0.5;
      });
      return { rows: Array.from(table.querySelectorAll("tbody tr")).map((tr) => (tr.querySelector("th") as HTMLElement).textContent), cut: cells.length, overflow: wrap.scrollWidth - wrap.clientWidth };
    });
    expect(r.rows).toEqual(["Sales (y)", ...names]);
    expect(r.cut).toBe(0);
    expect(r.overflow).toBeLessThanOrEqual(0);
    await narrowPane(false);
  });
});

describe("the analyst's own data in the preview (item 9)", () => {
  it("takes a block pasted from a spreadsheet into a new sheet, and the pane fits it as the engine does", async () => {
    await openPreview();
    // Invented weekly figures, as a spreadsheet copies them: tab-separated, header row on top.
    const rows = Array.from({ length: 40 }, (_, i) => [i + 1, Math.round(200 * Math.exp(-1.1 * Math.log(2 + (i % 7) / 10) + 0.02 * ((i * 13) % 11))), (2 + (i % 7) / 10).toFixed(2), i % 5 === 0 ? 1 : 0]);
    const text = ["Week\tLoaves\tPrice\tOffer", ...rows.map((r) => r.join("\t"))].join("\r\n") + "\r\n";
    await paste(text);
    await expect(page.locator(".pv-tabs button").allTextContents()).resolves.toEqual(["Sales", "Pasted"]);
    expect(await page.locator(".pv-tabs button[aria-current=true]").textContent()).toBe("Pasted");
    expect(await page.locator("#pv-import-note").textContent()).toContain("Read 40 data rows × 4 columns below a header row: 160 numbers, 0 text cells.");
    const got = await page.evaluate(() => {
      const s = (window as any).ElxPreviewWorkbook.sheet("Pasted");
      return [s.value(1, 2), s.value(2, 2), s.value(2, 3), s.value(41, 4)];
    });
    expect(got).toEqual(["Loaves", rows[0][1], Number(rows[0][2]), rows[39][3]]);
    // The newcomer's route: a column letter for y, a drag for x, the pane's buttons.
    await page.click('th[data-col="2"]');
    await useSelection("elx-y", "Pasted!B:B");
    await selectInGrid("C1:D41");
    await useSelection("elx-x", "Pasted!C1:D41");
    await page.selectOption("#elx-zeros", "stop");
    await runCheck();
    const y = [["Loaves"], ...rows.map((r) => [r[1]])];
    const x = [["Price", "Offer"], ...rows.map((r) => [Number(r[2]), r[3]])];
    const el = engine("ELASTICITIES", y, x, OPTS("stop"), { parameterAddresses: ["Pasted!B1:B41", "Pasted!C1:D41"] }) as unknown[][];
    expect(await page.locator("#elx-pictures table tbody tr >> nth=0").locator("td").allTextContents()).toEqual([el[1][2], el[1][4], el[1][5]].map((v) => short(v as number)));
    expect(await page.locator("#elx-verdict").isVisible()).toBe(false);
  });

  it("opens a CSV file into a new sheet: quoted fields, decimal commas reported, ragged rows, empty lines", async () => {
    const csv = [
      "Store;Week;Price;Units;Note",
      'Northgate;1;2,84;239;"closed early; rain"',
      "Northgate;2;2,5;0",
      "",
      'River St;1;1.234,5;12;"said ""no"""',
      "River St;2;3,1;40;extra;field",
      "",
    ].join("\n");
    await page.setInputFiles("#pv-file", { name: "harrow week 1-2.csv", mimeType: "text/csv", buffer: Buffer.from(csv, "utf8") });
    await page.waitForFunction(() => !!(window as any).ElxPreviewWorkbook.sheet("harrow week 1-2"), null, { timeout: 5000 });
    const values = await page.evaluate(() => {
      const s = (window as any).ElxPreviewWorkbook.sheet("harrow week 1-2");
      const out: unknown[][] = [];
      for (let r = 1; r <= 5; r++) out.push([1, 2, 3, 4, 5, 6].map((c) => s.value(r, c)));
      return out;
    });
    expect(values).toEqual([
      ["Store", "Week", "Price", "Units", "Note", null],
      ["Northgate", 1, 2.84, 239, "closed early; rain", null],
      ["Northgate", 2, 2.5, 0, null, null],
      [null, null, null, null, null, null],
      ["River St", 1, 1234.5, 12, 'said "no"', null],
    ]);
    const notes = await page.locator("#pv-import-note li").allTextContents();
    expect(notes).toEqual([
      "Read 5 data rows × 6 columns below a header row: 12 numbers, 8 text cells.",
      "Fields are separated by semicolons (read from the first line).",
      '"Price": 4 values written with a decimal comma (such as 2,84) read as decimal numbers.',
      "1 row had fewer fields than the header (line 3): the missing cells are blank.",
      "1 row had more fields than the header (line 6): the extra fields are in columns beyond the header, without a name.",
      "1 empty line inside the data (line 4) is a blank row: the functions leave blank rows out and count them.",
    ]);
    expect(await page.textContent("#pv-import-note")).toContain("The file harrow week 1-2.csv is in the new sheet harrow week 1-2");
  });
});

describe("the pane page without the host, and the pages' protections (item 10)", () => {
  it("says within seconds that the host's script could not load (offline), instead of Loading… forever", async () => {
    const p = await context.newPage();
    await p.route("https://appsforoffice.microsoft.com/**", (r) => r.abort("internetdisconnected"));
    await p.goto(`${server.url}/taskpane.html`);
    await p.waitForSelector("#elx-load-problem", { timeout: 3000 });
    const text = await p.textContent("#elx-load-problem");
    expect(text).toContain("The spreadsheet host's script (office.js, loaded from appsforoffice.microsoft.com) could not load");
    expect(text).toContain("This machine may be offline");
    expect(await p.textContent("#elx-pane")).not.toContain("Loading");
    await p.close();
  });

  it("says so when the host's script loads but the host never answers", async () => {
    const p = await context.newPage();
    // A stand-in office.js whose onReady never resolves (the page opened outside a working host).
    await p.route("https://appsforoffice.microsoft.com/**", (r) => r.fulfill({ contentType: "text/javascript", body: "window.Office = { onReady: function () { return new Promise(function () {}); } }; window.CustomFunctions = { associate: function () {}, Error: function () {}, ErrorCode: {} };" }));
    await p.goto(`${server.url}/taskpane.html`);
    expect(await p.textContent("#elx-pane")).toContain("Loading Elasticell");
    await p.waitForSelector("#elx-load-problem", { timeout: 9000 });
    expect(await p.textContent("#elx-load-problem")).toContain("The spreadsheet host has not answered after several seconds");
    await p.close();
  });

  it("serves both pages with a Content-Security-Policy that refuses inline and remote scripts", async () => {
    const p = await context.newPage();
    await p.goto(`${server.url}/preview.html`);
    await p.waitForFunction(() => (window as any).ElxPreview && (window as any).ElxPane, null, { timeout: 20000 });
    const policy = await p.evaluate(() => (document.querySelector('meta[http-equiv="Content-Security-Policy"]') as HTMLMetaElement | null)?.content ?? "");
    expect(policy).toMatch(/default-src 'none'/);
    // WebAssembly may be compiled ('wasm-unsafe-eval' does not allow eval of script text); workers from this origin only
    expect(policy).toMatch(/script-src 'self' 'wasm-unsafe-eval';/);
    expect(policy).toMatch(/worker-src 'self';/);
    expect(policy).not.toMatch(/'unsafe-eval'/);
    const blocked = await p.evaluate(async () => {
      const seen: string[] = [];
      document.addEventListener("securitypolicyviolation", (e) => seen.push(e.violatedDirective));
      const s = document.createElement("script");
      s.textContent = "window.__elxInline = 1";
      document.body.appendChild(s);
      await new Promise((r) => setTimeout(r, 100));
      return { ran: (window as any).__elxInline === 1, seen };
    });
    expect(blocked.ran).toBe(false);
    expect(blocked.seen).toEqual(["script-src-elem"]);
    await p.close();
    const pane = fs.readFileSync(path.join(DIST, "taskpane.html"), "utf8");
    const panePolicy = /http-equiv="?Content-Security-Policy"?\s+content="([^"]+)"/.exec(pane)?.[1] ?? "";
    expect(panePolicy).toMatch(/script-src 'self' 'wasm-unsafe-eval' https:\/\/appsforoffice\.microsoft\.com/);
    expect(panePolicy).toMatch(/worker-src 'self';/);
    expect(panePolicy).not.toMatch(/'unsafe-eval'/);
    expect(panePolicy).not.toMatch(/script-src[^;]*'unsafe-inline'/);
    expect(panePolicy).toMatch(/object-src 'none'/);
  });

  it("shows markup in the analyst's headers as text, everywhere it reaches the pane", async () => {
    await paste(['<img src=x id="elx-bad">Sales\t<b id="elx-bad2">Price</b>\tPromo', ...Array.from({ length: 30 }, (_, i) => `${50 + ((i * 7) % 13)}\t${2 + (i % 5) / 10}\t${i % 3 === 0 ? 1 : 0}`)].join("\n"));
    const sheet = await page.locator(".pv-tabs button[aria-current=true]").textContent();
    await page.fill("#elx-y", `'${sheet}'!A1:A31`);
    await page.fill("#elx-x", `'${sheet}'!B1:C31`);
    await page.selectOption("#elx-zeros", "drop");
    await runCheck();
    expect(await page.locator("#elx-bad, #elx-bad2").count()).toBe(0);
    expect(await page.locator("#elx-check-table").textContent()).toContain('<b id="elx-bad2">Price</b>');
    expect(await page.locator("#elx-pictures").textContent()).toContain('<b id="elx-bad2">Price</b>');
    expect(await page.locator('td[data-a="A1"]').textContent()).toBe('<img src=x id="elx-bad">Sales');
  });
});

describe("interval headers (item 23, the pane's part)", () => {
  it("labels the pane's intervals Low (level) and High (level), following the level option", async () => {
    await page.fill("#elx-y", "Sales!C1:C1249");
    await page.fill("#elx-x", "Sales!D1:G1249");
    await page.selectOption("#elx-level", "0.9");
    await runCheck();
    const heads = await page.locator("#elx-pictures table thead th").allTextContents();
    expect(heads).toEqual(["Term", "Elasticity", "Low (90%)", "High (90%)"]);
    expect(await page.locator("#elx-elasticities figcaption").textContent()).toContain("90% intervals");
    // The numbers are the engine's, whatever its table's headers say.
    const el = engine("ELASTICITIES", Y, X, "form=log-log; se=HC3; zeros=drop; level=0.9", INVOCATION) as unknown[][];
    expect(await page.locator("#elx-pictures table tbody tr >> nth=0").locator("td").allTextContents()).toEqual([el[1][2], el[1][4], el[1][5]].map((v) => short(v as number)));
    expect(await page.locator("#elx-pane").textContent()).not.toMatch(/Lower|Upper/);
    await page.selectOption("#elx-level", "0.95");
  });
});

describe("network and console", () => {
  it("made no request outside localhost and logged no error on the preview", async () => {
    expect(outside).toEqual([]);
    expect(problems).toEqual([]);
  });
});
