/**
 * The preview page in headless Chromium (the system's or the packaged one, chosen by
 * scripts/browser.js and driven by playwright-core; no browser download): the demo sheet's formulas against the engine's own values, a formula edited
 * live, the pane's zero warning with counts worked out here from data/demo.json, the formula writer
 * refusing an occupied target, the PPML choice, odd selections, an accessibility check of the pane
 * (axe-core), and the README's screenshots taken into the ignored test-output/screenshots. The page must make no request outside this test's
 * localhost server, load no remote script or font, and log no error.
 *
 * The engine's values come from dist/functions.js loaded in this Jest process through the host's
 * registration path (test/harness/loadFunctions.ts), with the same cells and parameter addresses the
 * preview passes; the demo data are invented (scripts/make-demo-data.js), so these checks compare the
 * page with the engine, not with a statistical reference (that is test/reference's job).
 */
import * as fs from "fs";
import * as path from "path";
import type { Page } from "playwright-core";
import { launchBrowser, type LaunchedBrowser } from "../harness/browser";
import { call, HostError, loadFunctions, metadataIds } from "../harness/loadFunctions";

// eslint-disable-next-line @typescript-eslint/no-var-requires
const { serve } = require("../../scripts/serve.js") as { serve: (o: { root: string; port?: number }) => Promise<{ url: string; close: () => Promise<void> }> };

const ROOT = path.resolve(__dirname, "../..");
const DIST = path.join(ROOT, "dist");
const SHOTS = path.join(ROOT, "test-output", "screenshots");
// eslint-disable-next-line @typescript-eslint/no-var-requires
const { takeScreenshots } = require("../../scripts/screenshots.js") as { takeScreenshots: (page: Page, dir: string) => Promise<string[]> };
const demo = JSON.parse(fs.readFileSync(path.join(ROOT, "data", "demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };

// The demo sheet as the preview lays it out: A..K = Store, Week, Units, Price, Footfall, Promo, Income,
// Branch, Period, FlourCost, Rival; row 1 headers; the formulas in column M.
const N = demo.rows.length;
const Y = [[demo.columns[2]], ...demo.rows.map((r) => [r[2]])];
const X = [demo.columns.slice(3, 7), ...demo.rows.map((r) => r.slice(3, 7))];
const INVOCATION = { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:G${N + 1}`] };
const reg = loadFunctions();
const engine = (id: string, ...args: unknown[]) => call(reg, id, ...args);

/** What the preview's cells show for a number (preview/grid.ts display), restated here. */
function shown(v: unknown): string {
  if (typeof v !== "number") return String(v);
  if (Number.isInteger(v) && Math.abs(v) < 1e11) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-4 || a >= 1e11)) return v.toExponential(4);
  return String(Number(v.toPrecision(6)));
}

let server: { url: string; close: () => Promise<void> };
let browser: LaunchedBrowser;
let page: Page;
const outside: string[] = [];
const problems: string[] = [];

async function cell(address: string): Promise<unknown> {
  return page.evaluate((a) => (window as any).ElxPreview.value(a), address);
}

/** The values of a rectangle of the preview sheet, as a matrix. */
async function block(top: number, left: number, rows: number, columns: number): Promise<unknown[][]> {
  return page.evaluate(([t, l, h, w]) => {
    const p = (window as any).ElxPreview;
    const out: unknown[][] = [];
    for (let i = 0; i < h; i++) {
      const r: unknown[] = [];
      for (let j = 0; j < w; j++) {
        let c = "";
        let n = l + j;
        while (n > 0) {
          c = String.fromCharCode(65 + ((n - 1) % 26)) + c;
          n = Math.floor((n - 1) / 26);
        }
        r.push(p.value(`${c}${t + i}`));
      }
      out.push(r);
    }
    return out;
  }, [top, left, rows, columns]);
}

function sameTable(page: unknown[][], eng: unknown[][], what: string): void {
  expect(page.length).toBe(eng.length);
  eng.forEach((row, i) =>
    row.forEach((v, j) => {
      const got = page[i][j];
      if (typeof v === "number") {
        if (typeof got !== "number") throw new Error(`${what} [${i}][${j}]: expected ${v}, page shows ${JSON.stringify(got)}`);
        expect(Math.abs(got - v)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(v)));
      } else if (v instanceof HostError) {
        expect((got as { code?: string }).code).toBe(v.code);
      } else expect(got).toEqual(v);
    }),
  );
}

/** Presses a pane's "Use selection" button and waits for the address to arrive in its field. */
async function useSelection(field: "elx-y" | "elx-x", expected: string): Promise<void> {
  await page.click(`#${field}-sel`);
  await page.waitForFunction(([id, v]) => (document.getElementById(id) as HTMLInputElement).value === v, [field, expected], { timeout: 5000 }).catch(() => undefined);
  expect(await page.inputValue(`#${field}`)).toBe(expected);
}

async function selectInGrid(address: string): Promise<void> {
  await page.fill("#pv-name", address);
  await page.press("#pv-name", "Enter");
}

/** Clicks the pane's check button and waits for that run to finish. */
async function runCheck(): Promise<void> {
  const before = await page.evaluate(() => (window as any).ElxPane.completedRuns);
  await page.click("#elx-run");
  await page.waitForFunction((b) => (window as any).ElxPane.completedRuns > b, before, { timeout: 30000 });
}

async function setRanges(y: string, x: string, zeros: string, estimator = "ols"): Promise<void> {
  await page.fill("#elx-y", y);
  await page.fill("#elx-x", x);
  await page.selectOption("#elx-estimator", estimator);
  await page.selectOption("#elx-zeros", zeros);
}

beforeAll(async () => {
  server = await serve({ root: DIST });
  browser = await launchBrowser({ viewport: { width: 1400, height: 900 } });
  page = browser.page;
  page.on("request", (r) => {
    if (!r.url().startsWith(`${server.url}/`)) outside.push(r.url());
  });
  page.on("console", (m) => {
    if (m.type() === "error" || m.type() === "warning") problems.push(`console ${m.type()}: ${m.text()}`);
  });
  page.on("pageerror", (e) => problems.push(`page error: ${e.message}`));
  await page.goto(`${server.url}/preview.html`);
  await page.waitForFunction(() => (window as any).ElxPreview && (window as any).ElxPane, null, { timeout: 20000 });
}, 60000);

afterAll(async () => {
  if (browser) await browser.close();
  if (server) await server.close();
});

describe("the preview workbook", () => {
  it("registers every function of functions.json through CustomFunctions.associate", async () => {
    const ids = await page.evaluate(() => [...(window as any).ElxPreviewWorkbook.registry.keys()].sort());
    expect(ids).toEqual(metadataIds().sort());
    await expect(page.textContent("#pv-registered")).resolves.toBe(`${ids.length} ELX functions registered by functions.js.`);
  });

  it("shows the demo data and formula results equal to the engine's values", async () => {
    expect(await cell("A1")).toBe("Store");
    expect(await cell("C2")).toBe(demo.rows[0][2]);
    expect(await cell(`G${N + 1}`)).toBe(demo.rows[N - 1][6]);
    const fit = engine("FIT", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    sameTable(await block(2, 13, fit.length, fit[0].length), fit, "FIT at M2");
    const el = engine("ELASTICITIES", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    sameTable(await block(9, 13, el.length, el[0].length), el, "ELASTICITIES at M9");
    const one = engine("ELASTICITY", Y, X, "Price", "zeros=drop", INVOCATION) as unknown[][];
    sameTable([[await cell("M16")]], one, "ELASTICITY at M16");
    const zeros = engine("ZEROS", [demo.columns.slice(2, 7), ...demo.rows.map((r) => r.slice(2, 7))], null) as unknown[][];
    sameTable(await block(23, 13, zeros.length, zeros[0].length), zeros, "ZEROS at M23");
    const summary = engine("SUMMARY", Y, X, "zeros=drop", INVOCATION) as unknown[][];
    sameTable(await block(44, 13, summary.length, 2), summary, "SUMMARY at M44");
    // The plain log stops at the zero weeks with the engine's own message.
    const plain = engine("FIT", Y, X, null, INVOCATION) as HostError;
    expect(plain).toBeInstanceOf(HostError);
    expect(await cell("M41")).toEqual({ code: plain.code, message: plain.message });
    // Cells show the numbers in a short general format.
    const shownText = await page.evaluate(() => (window as any).ElxPreview.shown("O4"));
    expect(shownText).toBe(shown(fit[2][2]));
    expect(await page.locator('td[data-a="O4"]').textContent()).toBe(shown(fit[2][2]));
  });

  it("shows the panel story: pooled against store fixed effects, clustered by store, equal to the engine's values", async () => {
    const xp = [demo.columns.slice(3, 8), ...demo.rows.map((r) => r.slice(3, 8))];
    const at = { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:H${N + 1}`] };
    const pooled = engine("ELASTICITIES", Y, xp, "zeros=drop; cluster=Branch", at) as unknown[][];
    const fe = engine("ELASTICITIES", Y, xp, "zeros=drop; absorb=Branch; cluster=Branch", at) as unknown[][];
    expect(pooled[0][3]).toMatch(/cluster.*Branch, 12 clusters/);
    sameTable(await block(74, 13, pooled.length, pooled[0].length), pooled, "pooled ELASTICITIES at M74");
    sameTable(await block(81, 13, fe.length, fe[0].length), fe, "fixed-effects ELASTICITIES at M81");
    // the fixed-effects price elasticity differs from the pooled one (store effects correlated with price)
    expect(Math.abs((fe[1][2] as number) - (pooled[1][2] as number))).toBeGreaterThan(0.2);
    // The instrument and change-over-time formulas are on the sheet only when this build registers them.
    const ids = await page.evaluate(() => [...(window as any).ElxPreviewWorkbook.registry.keys()]);
    const input = (a: string) => page.evaluate((x) => (window as any).ElxPreview.input(x), a);
    expect(await input("M88")).toBe(ids.includes("IVCHECK") ? '=ELX.ELASTICITIES(C1:C1249, D1:J1249, "zeros=drop; absorb=Branch; cluster=Branch; time=Period; estimator=2sls; endogenous=Price; instruments=FlourCost")' : null);
    expect(await input("M103")).toBe(ids.includes("ROLLING") ? '=ELX.ROLLING(C1:C417, D1:I417, 52, "zeros=drop; time=Period; panel=Branch; se=HC1; absorb=Branch; step=13")' : null);
    if (ids.includes("IVCHECK")) {
      const xi = [demo.columns.slice(3, 10), ...demo.rows.map((r) => r.slice(3, 10))];
      const iv = engine("ELASTICITIES", Y, xi, "zeros=drop; absorb=Branch; cluster=Branch; time=Period; estimator=2sls; endogenous=Price; instruments=FlourCost", { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:J${N + 1}`] }) as unknown[][];
      sameTable(await block(88, 13, iv.length, iv[0].length), iv, "2SLS ELASTICITIES at M88");
    }
  });

  it("selects with the mouse (click, shift-click) and the keyboard (shift+arrow), as the name box shows", async () => {
    await page.click('td[data-a="D1"]');
    await page.click('td[data-a="G3"]', { modifiers: ["Shift"] });
    expect(await page.inputValue("#pv-name")).toBe("D1:G3");
    await page.keyboard.press("Shift+ArrowDown");
    expect(await page.inputValue("#pv-name")).toBe("D1:G4");
    expect(await page.inputValue("#pv-formula")).toBe("Price");
    await useSelection("elx-x", "Sales!D1:G4");
  });

  it("recalculates when an analyst edits a formula's options in the formula bar", async () => {
    await selectInGrid("M2");
    await expect(page.inputValue("#pv-formula")).resolves.toBe('=ELX.FIT(C1:C1249, D1:G1249, "zeros=drop")');
    const before = await cell("P4");
    await page.fill("#pv-formula", '=ELX.FIT(C1:C1249, D1:G1249, "zeros=drop; se=HC1; level=0.9")');
    await page.press("#pv-formula", "Enter");
    const fit = engine("FIT", Y, X, "zeros=drop; se=HC1; level=0.9", INVOCATION) as unknown[][];
    expect(fit[0][3]).toBe("Std. error (HC1)");
    expect(await cell("P2")).toBe("Std. error (HC1)");
    expect(fit[0][6]).toBe("Low (90%)");
    expect(await cell("S2")).toBe(fit[0][6]);
    sameTable(await block(2, 13, fit.length, fit[0].length), fit, "edited FIT at M2");
    expect(await cell("P4")).not.toBe(before);
    expect(await page.locator('td[data-a="P2"]').textContent()).toBe("Std. error (HC1)");
    // Put the demo formula back for the tests that follow.
    await page.fill("#pv-formula", '=ELX.FIT(C1:C1249, D1:G1249, "zeros=drop")');
    await page.press("#pv-formula", "Enter");
    expect(await cell("P2")).toBe("Std. error (HC3)");
  });
});

describe("the pane on the demo data", () => {
  // Counts worked out here from data/demo.json: usable rows have a number in Units and every x column.
  const isNum = (v: unknown) => typeof v === "number" && Number.isFinite(v);
  const usable = demo.rows.filter((r) => [2, 3, 4, 5, 6].every((j) => isNum(r[j])));
  const zeroUnits = usable.filter((r) => r[2] === 0).length;
  const zeroFootfall = usable.filter((r) => r[4] === 0).length;
  // Promo (column 5) is binary and stays in levels; Units, Price, Footfall and Income are logged.
  const lost = usable.filter((r) => [2, 3, 4, 6].some((j) => (r[j] as number) <= 0)).length;

  it("reads ranges from the selection and warns about the zeros with the right counts", async () => {
    await selectInGrid("C1:C1249");
    await useSelection("elx-y", "Sales!C1:C1249");
    await selectInGrid("D1:G1249");
    await useSelection("elx-x", "Sales!D1:G1249");
    await page.selectOption("#elx-zeros", "stop");
    await runCheck();
    expect(zeroUnits).toBeGreaterThan(0);
    const sentences = await page.locator("#elx-sentences li").allTextContents();
    expect(sentences).toContain(`Warning:${zeroUnits} of ${usable.length.toLocaleString("en-GB")} rows have zero Units; a plain log drops them and biases the elasticity.`);
    expect(sentences).toContain(`Warning:${zeroFootfall} of ${usable.length.toLocaleString("en-GB")} rows have zero Footfall; a plain log drops them and biases the elasticity.`);
    expect(sentences.some((s) => s.startsWith(`Warning:In all a plain log would lose ${lost} of ${usable.length.toLocaleString("en-GB")} rows. Choose: leave them out and say so (zeros=drop), log(v + c) (zeros=shift), inverse hyperbolic sine (zeros=ihs), or PPML (estimator=ppml)`))).toBe(true);
    expect(sentences).toContain(`Warning:${N - usable.length} of ${N.toLocaleString("en-GB")} rows have a blank, text or error cell in y or x and are left out (rows 434, 769, 999).`);
    // The per-column table: Units' zeros over all data rows.
    const unitsRow = await page.locator("#elx-check-table tbody tr").first().locator("td").allTextContents();
    expect(unitsRow).toEqual([String(demo.rows.filter((r) => isNum(r[2])).length.toLocaleString("en-GB")), "0", String(demo.rows.filter((r) => r[2] === 0).length), "0", "log"]);
    // The zero choices side by side, "leave out" equal to the engine's zeros=drop elasticity.
    const drop = engine("ELASTICITIES", Y, X, "form=log-log; se=HC3; zeros=drop; level=0.95", INVOCATION) as unknown[][];
    const priceRow = await page.locator('#elx-choices-table tr[data-choice="drop"][data-term="Price"] td').first().textContent();
    expect(priceRow?.startsWith(String(Number((drop[1][2] as number).toPrecision(3))).replace("-", "−"))).toBe(true);
    // PPML: a column when the engine fits it, else its message as a sentence.
    const ppml = engine("ELASTICITIES", Y, X, "form=log-log; estimator=ppml; se=HC1; zeros=drop; level=0.95", INVOCATION);
    if (ppml instanceof HostError) {
      expect(await page.locator('[data-choice-error="ppml"]').textContent()).toContain(ppml.message);
    } else {
      expect(await page.locator('#elx-choices-table tr[data-choice="ppml"][data-term="Price"] th').textContent()).toBe("PPML (HC1)");
      const cells = await page.locator('#elx-choices-table tr[data-choice="ppml"][data-term="Price"] td').allTextContents();
      expect(cells[0].startsWith(String(Number(((ppml as unknown[][])[1][2] as number).toPrecision(3))).replace("-", "−"))).toBe(true);
    }
    // With zeros=stop the fits stop, and the pictures say why in a sentence.
    expect(await page.locator("#elx-elasticity-error").textContent()).toContain("a log cannot take zero");
  });

  it("draws the pictures with the tests' p-values once a zero choice is made", async () => {
    await page.selectOption("#elx-zeros", "drop");
    await runCheck();
    expect(await page.locator("#elx-pictures figure svg").count()).toBe(4);
    const bp = engine("HETEROTEST", Y, X, "bp", "form=log-log; se=HC3; zeros=drop; level=0.95", INVOCATION) as number[][];
    const p = bp[0][0];
    expect(await page.locator('#elx-pictures figure[data-form="log-log"] figcaption').textContent()).toContain(p < 0.0001 ? "Breusch–Pagan p < 0.0001" : `Breusch–Pagan p = ${p.toFixed(4)}`);
    const jb = engine("NORMALTEST", Y, X, "form=log-log; se=HC3; zeros=drop; level=0.95", INVOCATION) as number[][];
    expect(await page.locator("#elx-qq figcaption").textContent()).toContain(jb[0][0] < 0.0001 ? "Jarque–Bera p < 0.0001" : `Jarque–Bera p = ${jb[0][0].toFixed(4)}`);
    expect(await page.locator("#elx-tests li").count()).toBe(6);
  });

  it("refuses to write the formula block over occupied cells, then writes it at the offered place", async () => {
    await page.fill("#elx-target", "M2");
    const before = await page.evaluate(() => (window as any).ElxPane.completedWrites);
    await page.click("#elx-write-btn");
    await page.waitForFunction((b) => (window as any).ElxPane.completedWrites > b, before);
    const refusal = await page.textContent("#elx-refusal");
    const m = /^Nothing was written: the block needs M2:T\d+ \(\d+ rows × 8 columns\) and M2, N2, O2, P2, Q2 and more are not empty\. ([A-Z]+)2 is free\.$/.exec(refusal ?? "");
    expect(m).not.toBeNull();
    const free = (m as RegExpExecArray)[1];
    const freeColumn = [...free].reduce((a, ch) => 26 * a + ch.charCodeAt(0) - 64, 0);
    // The sheet is unchanged.
    expect(await page.evaluate(() => (window as any).ElxPreview.input("M2"))).toBe('=ELX.FIT(C1:C1249, D1:G1249, "zeros=drop")');
    expect(await page.evaluate(() => (window as any).ElxPreview.input("M1"))).toBe("Coefficients: log-log, HC3, weeks with zero sales left out");
    // Accept the offer: the block lands at the free cell and its formulas evaluate live.
    await page.click("#elx-write-there");
    await page.waitForFunction((b) => (window as any).ElxPane.completedWrites > b + 1, before);
    expect(await page.locator("#elx-write-msg").textContent()).toContain(`Written at Sales!${free}2:`);
    const opts = "form=log-log; se=HC3; zeros=drop; level=0.95";
    expect(await page.evaluate((f) => (window as any).ElxPreview.input(`${f}5`), free)).toBe(`=ELX.FIT(Sales!$C$1:$C$1249, Sales!$D$1:$G$1249, "${opts}")`);
    const fit = engine("FIT", Y, X, opts, INVOCATION) as unknown[][];
    sameTable(await block(5, freeColumn, fit.length, fit[0].length), fit, "written FIT at row 5 of the block");
    // Writing again there is refused: the block is there now.
    await page.fill("#elx-target", `${free}2`);
    await page.click("#elx-write-btn");
    await page.waitForFunction((b) => (window as any).ElxPane.completedWrites > b + 2, before);
    expect(await page.locator("#elx-refusal").textContent()).toContain("Nothing was written");
  });

  it("shows the PPML results when the engine fits PPML, and a sentence when it does not", async () => {
    const ppml = engine("ELASTICITIES", Y, X, "form=log-log; estimator=ppml; se=HC1; zeros=drop; level=0.95", INVOCATION);
    await setRanges("Sales!C1:C1249", "Sales!D1:G1249", "drop", "ppml");
    await expect(page.inputValue("#elx-se")).resolves.toBe("HC1");
    await runCheck();
    if (ppml instanceof HostError) {
      expect(await page.locator("#elx-elasticity-error").textContent()).toContain(`PPML did not run for these ranges: ${ppml.message}`);
    } else {
      const t = ppml as unknown[][];
      expect(await page.locator("#elx-elasticities").count()).toBe(1);
      const first = await page.locator("#elx-pictures table tbody tr").first().locator("td").first().textContent();
      expect(first).toBe(String(Number((t[1][2] as number).toPrecision(3))).replace("-", "−"));
    }
    await page.selectOption("#elx-estimator", "ols");
    await page.selectOption("#elx-se", "HC3");
  });

  it("answers odd selections with a sentence and changes nothing", async () => {
    const count = await page.evaluate(() => (window as any).ElxPreviewWorkbook.activeSheet.cells.size);
    await setRanges("C5", "D1:G1249", "drop");
    await runCheck();
    expect(await page.locator("#elx-sentences").textContent()).toContain("y is a single cell (Sales!C5)");
    await setRanges("C1:C100", "D1:G50", "drop");
    await runCheck();
    expect(await page.locator("#elx-sentences").textContent()).toContain("y has 99 data rows and x has 49; give both ranges the same rows.");
    await setRanges("Stock!A1:A9", "D1:G9", "drop");
    await runCheck();
    expect(await page.locator("#elx-status").textContent()).toContain('y: there is no sheet named "Stock" in this workbook.');
    await setRanges("C1:C1249", "A1:A1249", "drop");
    await runCheck();
    expect(await page.locator("#elx-sentences").textContent()).toContain("Store holds no numbers, only text");
    // A whole column chosen by its letter is read down to the last used row.
    await page.click('th[data-col="3"]');
    await useSelection("elx-y", "Sales!C:C");
    await setRanges("Sales!C:C", "D:G", "stop");
    await runCheck();
    expect(await page.locator("#elx-check-body").textContent()).toContain("y Sales!C1:C1249, x Sales!D1:G1249 (cut to the sheet's used cells)");
    expect(await page.evaluate(() => (window as any).ElxPreviewWorkbook.activeSheet.cells.size)).toBe(count);
  });
});

describe("the pane's panel choices: key columns, fixed effects, clusters, the instrument", () => {
  const XP = [demo.columns.slice(3, 8), ...demo.rows.map((r) => r.slice(3, 8))];
  it("names the key column, writes absorb= and cluster= into the options and shows the engine's values", async () => {
    await setRanges("Sales!C1:C1249", "Sales!D1:H1249", "drop");
    await runCheck();
    expect(await page.locator("#elx-roles-note").textContent()).toBe("Key columns in x: Branch (12 values). Choose them for fixed effects or clusters.");
    expect(await page.locator("#elx-sentences").textContent()).toContain("Branch (text, 12 values) looks like a key column");
    await page.selectOption("#elx-absorb", "Branch");
    await page.selectOption("#elx-cluster", "Branch");
    await runCheck();
    const opts = "form=log-log; se=cluster; zeros=drop; level=0.95; absorb=Branch; cluster=Branch";
    const el = engine("ELASTICITIES", Y, XP, opts, { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:H${N + 1}`] }) as unknown[][];
    const first = await page.locator("#elx-pictures table tbody tr").first().locator("td").first().textContent();
    expect(first).toBe(String(Number((el[1][2] as number).toPrecision(3))).replace("-", "−"));
    const assume = await page.locator("#elx-assume-body").textContent();
    expect(assume).toContain("That removes only differences between them that do not change over time");
    expect(assume).toContain("Here G = 12. With fewer than about 30 clusters these errors are themselves unreliable");
    // The writer puts the same options in the formulas, and they evaluate to the engine's values.
    await page.fill("#elx-target", "AH2");
    const before = await page.evaluate(() => (window as any).ElxPane.completedWrites);
    await page.click("#elx-write-btn");
    await page.waitForFunction((b) => (window as any).ElxPane.completedWrites > b, before);
    expect(await page.evaluate(() => (window as any).ElxPreview.input("AH5"))).toBe(`=ELX.FIT(Sales!$C$1:$C$1249, Sales!$D$1:$H$1249, "${opts}")`);
    const fit = engine("FIT", Y, XP, opts, { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:H${N + 1}`] }) as unknown[][];
    sameTable(await block(5, 34, fit.length, fit[0].length), fit, "written fixed-effects FIT at AH5");
    // Weights: the chosen column is written as weights= and the pane shows the weighted fit's elasticity.
    await page.selectOption("#elx-weights", "Footfall");
    await runCheck();
    const wOpts = `${opts}; weights=Footfall`;
    const wel = engine("ELASTICITIES", Y, XP, wOpts, { parameterAddresses: [`Sales!C1:C${N + 1}`, `Sales!D1:H${N + 1}`] }) as unknown[][];
    expect(await page.textContent("#elx-write-what")).toContain(`"${wOpts}"`);
    const wFirst = await page.locator("#elx-pictures table tbody tr").first().locator("td").first().textContent();
    expect(wFirst).toBe(String(Number((wel[1][2] as number).toPrecision(3))).replace("-", "−"));
    expect(await page.locator("#elx-assume-body").textContent()).toContain("weights=Footfall counts each row in proportion to Footfall");
    await page.selectOption("#elx-weights", "");
    await page.selectOption("#elx-absorb", "");
    await page.selectOption("#elx-cluster", "");
  });

  it("with a price and a cost column says what an instrument must satisfy", async () => {
    await setRanges("Sales!C1:C1249", "Sales!D1:J1249", "drop");
    await runCheck();
    await page.selectOption("#elx-absorb", "Branch");
    await runCheck();
    expect(await page.locator("#elx-roles-note").textContent()).toBe("Key columns in x: Branch (12 values), Period (104 values). Choose them for fixed effects or clusters.");
    const text = await page.locator("#elx-instrument-section").textContent();
    expect(text).toContain("A cost column such as FlourCost can serve as an instrument for Price");
    expect(text).toContain("no direct effect on demand");
    expect(text).toContain("No test can prove the second condition");
    // With a period column (Period, written as time=) the pane draws the path over rolling windows
    // and the break test's reading, when this build registers ROLLING and BREAKTEST.
    const rolling = await page.evaluate(() => typeof (window as any).Elasticell.functions.ROLLING === "function");
    expect(await page.locator("#elx-rolling").count()).toBe(rolling ? 1 : 0);
    if (rolling) expect(await page.locator("#elx-break-reading").textContent()).toMatch(/^Break test over the pooled rows \(form=log-log; se=HC1; zeros=drop; level=0\.95; time=Period; panel=Branch\): sup-F p/);
    const registered = await page.evaluate(() => typeof (window as any).Elasticell.functions.IVCHECK === "function");
    const offered = await page.locator("#elx-instrument option").allTextContents();
    if (!registered) {
      expect(text).toContain("not in this build of the functions");
      expect(offered).toEqual(["none (least squares)"]);
    } else {
      expect(offered[1]).toBe("FlourCost");
      await page.selectOption("#elx-instrument", "FlourCost");
      await runCheck();
      expect(await page.locator("#elx-iv-table tbody tr").count()).toBe(2);
      await page.selectOption("#elx-instrument", "");
    }
    if (rolling) {
      // The writer adds ROLLING and BREAKTEST with their own options (HC1, the panel unit, the step).
      await runCheck();
      await page.fill("#elx-target", "AR2");
      const before = await page.evaluate(() => (window as any).ElxPane.completedWrites);
      await page.click("#elx-write-btn");
      await page.waitForFunction((b) => (window as any).ElxPane.completedWrites > b, before);
      const written = await page.evaluate(() => Array.from((window as any).ElxPreviewWorkbook.activeSheet.cells.values()).map((c: any) => c.input).filter((t: any) => typeof t === "string" && /^=ELX\.(ROLLING|BREAKTEST)\(Sales/.test(t)));
      expect(written).toEqual([
        '=ELX.ROLLING(Sales!$C$1:$C$1249, Sales!$D$1:$J$1249, 52, "form=log-log; se=HC1; zeros=drop; level=0.95; absorb=Branch; time=Period; panel=Branch; step=13")',
        '=ELX.BREAKTEST(Sales!$C$1:$C$1249, Sales!$D$1:$J$1249, 53, "form=log-log; se=HC1; zeros=drop; level=0.95; time=Period; panel=Branch")',
      ]);
    }
    await page.selectOption("#elx-absorb", "");
  });
});

describe("accessibility, screenshots and network", () => {
  it("has no serious or critical axe-core violations in the pane", async () => {
    await setRanges("Sales!C1:C1249", "Sales!D1:G1249", "drop");
    await runCheck();
    // From the test's own origin: the page's Content-Security-Policy takes scripts from there only.
    await page.route(`${server.url}/axe.min.js`, (r) => r.fulfill({ path: require.resolve("axe-core/axe.min.js"), contentType: "text/javascript" }));
    await page.addScriptTag({ url: `${server.url}/axe.min.js` });
    const result = await page.evaluate(async () => {
      const axe = (window as any).axe;
      const r = await axe.run("#elx-pane", { resultTypes: ["violations"] });
      return r.violations.map((v: any) => ({ id: v.id, impact: v.impact, nodes: v.nodes.length, help: v.help }));
    });
    const serious = result.filter((v: { impact: string }) => v.impact === "serious" || v.impact === "critical");
    expect(serious).toEqual([]);
  });

  it("takes the README's pictures of the preview and of the pane (the steps of npm run screenshots) into test-output/screenshots", async () => {
    for (const f of ["preview.png", "pane.png"]) fs.rmSync(path.join(SHOTS, f), { force: true });
    const files = await takeScreenshots(page, SHOTS);
    expect(files).toEqual([path.join(SHOTS, "preview.png"), path.join(SHOTS, "pane.png"), path.join(SHOTS, "pane-panel.png")]);
    for (const f of files) expect(fs.statSync(f).size).toBeGreaterThan(20000);
  });

  it("made no request outside localhost, loaded no remote script or font, and logged no error", async () => {
    const remote = await page.evaluate(() => ({
      scripts: Array.from(document.scripts).map((s) => s.src).filter((s) => s && !s.startsWith(location.origin)),
      fonts: [...(document as any).fonts].map((f: any) => f.family),
      styles: Array.from(document.styleSheets).map((s) => s.href).filter((h) => h && !h.startsWith(location.origin)),
    }));
    expect(remote).toEqual({ scripts: [], fonts: [], styles: [] });
    expect(outside).toEqual([]);
    expect(problems).toEqual([]);
  });
});
