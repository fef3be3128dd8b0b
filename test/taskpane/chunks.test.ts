/**
 * The pane's chunked reader (taskpane/chunks.ts) and the values-block writer (taskpane/host.ts
 * writeValues, rewriteOwn) over the preview's workbook stand-in (preview/workbook.ts and
 * excelAdapter.ts, the same host calls as Excel.run): block sizes under the request limits, every
 * cell converted to a double or NaN with its kind counted, rows left out by their first reason,
 * ranges refused past the ceiling, edits while reading detected, Cancel, and a block never written
 * over a non-empty cell. Counts are worked out here from the sheet's own cells; no statistics.
 */
import { Host, type Runner } from "../../taskpane/host";
import { BIG_MAX_CELLS, BLOCK_CELLS, FORMULA_MAX_CELLS, needsChunks, planChunks, readChunks, rowsPerBlock, type BigPlan } from "../../taskpane/chunks";
import { talliesHtml } from "../../taskpane/bigResults";
import { PreviewContext } from "../../preview/excelAdapter";
import { Workbook, type CellValue } from "../../preview/workbook";
import { SYNTHETIC_COLUMNS, syntheticRow } from "../../preview/synthetic";
import type { ColumnChunk } from "../../functions/engine/columnFitTypes";
import { parseAddress, type Address } from "../../taskpane/address";

function hostOver(book: Workbook): Host {
  const run: Runner = async (batch) => {
    const context = new PreviewContext(book);
    const r = await batch(context as unknown as Excel.RequestContext);
    await context.sync();
    return r;
  };
  return new Host(run);
}

const area = (text: string): Address => {
  const p = parseAddress(text);
  if (!p.ok) throw new Error(p.message);
  return { ...p.value, sheet: p.value.sheet ?? "Sales" };
};

/** A small sheet: y in A, x in B:C, with a blank, a text, a logical and an error cell planted. */
function smallBook(rows: number): Workbook {
  const book = new Workbook(["Sales"]);
  const cells: CellValue[][] = [["Units", "Price", "Promo"]];
  for (let i = 0; i < rows; i++) cells.push([10 + i, 2 + (i % 7) / 10, i % 3 === 0 ? 1 : 0]);
  cells[5][1] = null; // blank Price (data row 4)
  cells[9][2] = "n/a"; // text Promo (data row 8)
  cells[12][0] = true; // a logical y (data row 11)
  cells[20][1] = { code: "#N/A" }; // an error Price (data row 19)
  cells[21][1] = "x"; // text Price and blank Promo in one row: counted once, as its first reason (text)
  cells[21][2] = null;
  book.loadValues(book.activeSheet, 1, 1, cells);
  return book;
}

async function readAll(host: Host, plan: BigPlan, o: Parameters<typeof readChunks>[3] = {}): Promise<{ chunks: ColumnChunk[]; outcome: Awaited<ReturnType<typeof readChunks>> }> {
  const chunks: ColumnChunk[] = [];
  const outcome = await readChunks(host, plan, async (c) => {
    chunks.push(c);
  }, o);
  return { chunks, outcome };
}

describe("the chunked reader's limits", () => {
  it("takes the chunked path past 250,000 cells of y and x (what one call's 5 MB carries at 20 bytes a number)", () => {
    expect(FORMULA_MAX_CELLS).toBe(5_000_000 / 20);
    expect(needsChunks(area("A1:A25000"), area("B1:J25000"))).toBe(false); // 250,000 cells
    expect(needsChunks(area("A1:A25001"), area("B1:J25001"))).toBe(true);
  });

  it("blocks of 100,000 cells: 2.5 MB of values at 25 bytes a cell, half the 5 MB limit; 9,090 rows at 11 columns", () => {
    expect(BLOCK_CELLS * 25).toBeLessThanOrEqual(5_000_000 / 2);
    expect(rowsPerBlock(11)).toBe(9090);
    expect(rowsPerBlock(500_000)).toBe(1);
  });

  it("refuses a range past 12,000,000 cells with the limit, before reading a value", async () => {
    const book = new Workbook(["Sales"]);
    const host = hostOver(book);
    const r = await planChunks(host, area("A1:A1048576"), area("B1:L1048576"));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toBe(`Sales!A1:A1048576 and Sales!B1:L1048576 hold 12,582,912 cells, more than the ${BIG_MAX_CELLS.toLocaleString("en-GB")} the pane reads in blocks (1,000,000 rows at 12 columns); choose fewer rows or columns`);
    expect(book.reads.requests).toBe(0);
  });

  it("refuses ranges whose rows do not line up (a header on one side only, different lengths, y of two columns)", async () => {
    const book = smallBook(30);
    const host = hostOver(book);
    const header = await planChunks(host, area("A1:A31"), area("B2:C32"));
    expect(header).toEqual({ ok: false, message: "y starts with a header row and x does not, so their rows would not line up: give both ranges from the same first row (the header row)" });
    const lengths = await planChunks(host, area("A1:A31"), area("B1:C21"));
    expect(lengths).toEqual({ ok: false, message: "y has 30 data rows and x 20: give both ranges the same rows" });
    const wide = await planChunks(host, area("A1:B31"), area("C1:C31"));
    expect(wide).toEqual({ ok: false, message: "y (Sales!A1:B31) has 2 columns: give y as one column" });
  });
});

describe("reading in blocks", () => {
  it("converts every cell to a double or NaN (TRUE/FALSE to 1/0, as the cells' intake), counts each kind per column and each left-out row once, by its first reason", async () => {
    const book = smallBook(30);
    const host = hostOver(book);
    const plan = await planChunks(host, area("A1:A31"), area("B1:C31"), 21); // 7 rows per block of 3 columns
    expect(plan.ok).toBe(true);
    if (!plan.ok) return;
    expect(plan.value).toMatchObject({ header: true, yName: "Units", xNames: ["Price", "Promo"], rows: 30, firstRow: 2, rowsPerBlock: 7 });
    const { chunks, outcome } = await readAll(host, plan.value);
    expect(chunks.map((c) => [c.rowStart, c.y.length])).toEqual([[0, 7], [7, 7], [14, 7], [21, 7], [28, 2]]);
    expect(book.reads.largestCells).toBe(7 * 2); // x's block (y's is read in the same request)
    const y = chunks.flatMap((c) => Array.from(c.y));
    const price = chunks.flatMap((c) => Array.from(c.x[0]));
    const issues = chunks.flatMap((c) => Array.from(c.issues as Uint8Array));
    expect(y[0]).toBe(10);
    expect(y[11]).toBe(1); // TRUE, read as the cells' intake reads it
    expect(Number.isNaN(price[4])).toBe(true);
    expect(price[5]).toBeCloseTo(2.5, 15);
    // 1 blank, 2 text, 3 error (intake.ts CellIssue); the row with text then a blank: text; TRUE is a number
    expect([issues[4], issues[8], issues[11], issues[19], issues[20]]).toEqual([1, 2, 0, 3, 2]);
    expect(issues.filter((v) => v !== 0)).toHaveLength(4);
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    expect(outcome.leftOut).toEqual({ blank: 1, notNumber: 3 });
    expect(outcome.tallies.map((t) => [t.name, t.numbers, t.blank, t.text, t.logical, t.error])).toEqual([
      ["Units", 30, 0, 0, 1, 0],
      ["Price", 27, 1, 1, 0, 1],
      ["Promo", 28, 1, 1, 0, 0],
    ]);
    expect(outcome.tallies[2].other).toBe(0); // Promo is 0/1: binary
    expect(outcome.watched).toBe(true);
    // the data check the pane shows: TRUE/FALSE among the numbers, named under the table
    const html = talliesHtml(outcome.tallies, "log-log");
    expect(html).toContain('<th scope="row">Units (y)</th><td>30</td><td>0</td><td>0</td>'); // values, blank/text/error, zeros
    expect(html).toContain('<th scope="row">Price</th><td>27</td><td>3</td>');
    expect(html).toContain("TRUE/FALSE cells, counted among the numbers and read as 1/0 (as formulas read them): Units 1.");
  });

  it("reads the synthetic sheet's rows exactly as generated, without building its cells", async () => {
    const book = new Workbook(["Sales"]);
    const rows = 20000;
    book.activeSheet.base = { rows: rows + 1, columns: 11, row: (r) => (r === 1 ? SYNTHETIC_COLUMNS : syntheticRow(7, r - 2)) };
    const host = hostOver(book);
    const plan = await planChunks(host, area(`A1:A${rows + 1}`), area(`B1:K${rows + 1}`));
    if (!plan.ok) throw new Error(plan.message);
    const { chunks, outcome } = await readAll(host, plan.value);
    expect(chunks).toHaveLength(Math.ceil(rows / 9090));
    expect(book.activeSheet.cells.size).toBe(0);
    for (const i of [0, 9089, 9090, 12345, rows - 1]) {
      const c = chunks.find((k) => k.rowStart <= i && i < k.rowStart + k.y.length) as ColumnChunk;
      const want = syntheticRow(7, i);
      const got = [c.y[i - c.rowStart], ...c.x.map((col) => col[i - c.rowStart])];
      want.forEach((v, j) => (typeof v === "number" ? expect(got[j]).toBe(v) : expect(Number.isNaN(got[j])).toBe(true)));
    }
    expect(outcome.ok && outcome.leftOut).toEqual({ blank: 0, notNumber: 1 }); // row 12345 holds "n/a"
    expect(book.reads.largestBytes).toBeLessThanOrEqual(2.5e6);
  });

  it("stops with the changed cell when the data are edited while the blocks are read", async () => {
    const book = smallBook(30);
    const host = hostOver(book);
    const plan = await planChunks(host, area("A1:A31"), area("B1:C31"), 21);
    if (!plan.ok) throw new Error(plan.message);
    const { chunks, outcome } = await readAll(host, plan.value, {
      progress: (read) => {
        if (read === 7) book.setInputs(book.activeSheet, [{ row: 25, column: 2, input: "9.99" }]);
      },
    });
    expect(outcome).toEqual({ ok: false, reason: "changed", message: "Sales!B25 changed while the pane read the ranges, so the rows read do not all come from one state of the data; nothing was fitted. Check again once the data are settled" });
    expect(chunks).toHaveLength(1);
    // an edit outside the ranges does not stop it
    const again = await readAll(host, plan.value, {
      progress: (read) => {
        if (read === 7) book.setInputs(book.activeSheet, [{ row: 3, column: 9, input: "note" }]);
      },
    });
    expect(again.outcome.ok).toBe(true);
  });

  it("stops at Cancel between blocks, and refuses a text column after the first block", async () => {
    const book = smallBook(30);
    const host = hostOver(book);
    const plan = await planChunks(host, area("A1:A31"), area("B1:C31"), 21);
    if (!plan.ok) throw new Error(plan.message);
    let stop = false;
    const { chunks, outcome } = await readAll(host, plan.value, { progress: () => (stop = true), cancelled: () => stop });
    expect(outcome).toEqual({ ok: false, reason: "cancelled", message: "stopped while reading" });
    expect(chunks).toHaveLength(1);
    const words = new Workbook(["Sales"]);
    words.loadValues(words.activeSheet, 1, 1, [["Units", "Store"], ...Array.from({ length: 10 }, (_, i) => [i + 1, `Store ${i}`])]);
    const h2 = hostOver(words);
    const p2 = await planChunks(h2, area("A1:A11"), area("B1:B11"));
    if (!p2.ok) throw new Error(p2.message);
    const r2 = await readAll(h2, p2.value);
    expect(r2.outcome).toEqual({ ok: false, reason: "text", message: "the x column Store holds text (10 of the first 10 rows, no numbers): ranges this large take numeric columns only; leave it out of x or give its values as numbers" });
  });
});

describe("values blocks", () => {
  it("are written only into empty cells, and rewritten only while they hold what was written", async () => {
    const book = smallBook(30);
    const host = hostOver(book);
    const block = [["Elasticell values"], ["Rows used", 30, "of", 30], ["Price", -1.2345678901234567]];
    const over = await host.writeValues("B2", block);
    expect(over.ok).toBe(false);
    if (!over.ok) expect(over.message).toMatch(/^Nothing was written: the values block needs B2:E4 \(3 rows × 4 columns\) and B2, C2, B3, C3, B4 and more are not empty\. E2 is free\.$/);
    expect(book.activeSheet.get(2, 2)?.value).toBe(2);
    const ok = await host.writeValues("F2", block);
    expect(ok).toEqual({ ok: true, address: "Sales!F2:I4" });
    expect(book.activeSheet.get(4, 7)?.value).toBe(-1.2345678901234567);
    expect(book.activeSheet.get(2, 7)).toBeUndefined(); // the padding of a short row leaves its cell empty
    const next = [["Elasticell values"], ["Rows used", 29, "of", 30], ["Price", -1.25]];
    expect(await host.rewriteOwn(area("F2:I4"), block, next)).toEqual({ ok: true, address: "Sales!F2:I4" });
    expect(book.activeSheet.get(4, 7)?.value).toBe(-1.25);
    book.setInputs(book.activeSheet, [{ row: 3, column: 9, input: "mine" }]);
    const refused = await host.rewriteOwn(area("F2:I4"), next, block);
    expect(refused.ok).toBe(false);
    if (!refused.ok) expect(refused.message).toBe("Nothing was written: I3 no longer holds what the pane wrote there, so the block is not the pane's to overwrite. Clear the block and write a new one, or write the refreshed results elsewhere.");
    expect(book.activeSheet.get(4, 7)?.value).toBe(-1.25);
    expect(book.activeSheet.get(3, 9)?.value).toBe("mine");
  });
});
