/**
 * The pane's host module (taskpane/host.ts) against office-addin-mock stand-ins for the host's
 * request context: reading the selection and typed addresses (clipped to the used range, blank told
 * from zero by value types), the no-overwrite rule and the formula block writer.
 * The cell contents are invented for shapes only.
 */
import { OfficeMockObject } from "office-addin-mock";
import { engineValues, Host, isEmptyCell, type FormulaBlock, type Runner } from "../../taskpane/host";

type Seed = Record<string, unknown>;

/** A sheet seed: its used range, the ranges the test lets the code read, and getRange creating others on demand. */
function sheetSeed(name: string, used: string | null, ranges: Record<string, Seed>): Seed {
  return {
    name,
    used: { address: used ? `${name}!${used}` : "" },
    ranges,
    getUsedRangeOrNullObject(this: any) {
      return this.used;
    },
    getRange(this: any, address: string) {
      if (!this.ranges[address]) this.ranges.addMock(address);
      return this.ranges[address];
    },
  };
}

interface Fixture {
  context: any;
  run: Runner;
  sheet: any;
}

/** The mock context: workbook → worksheets (Sales, and a null object for other names) and a selection. */
function fixture(opts: { used: string | null; ranges: Record<string, Seed>; selection?: string }): Fixture {
  const seed = {
    workbook: {
      selection: { address: opts.selection ?? "Sales!A1", worksheet: sheetSeed("Sales", opts.used, opts.ranges) },
      worksheets: {
        Sales: sheetSeed("Sales", opts.used, opts.ranges),
        missing: { name: "" },
        getItemOrNullObject(this: any, n: string) {
          return n.toLowerCase() === "sales" ? this.Sales : this.missing;
        },
        getActiveWorksheet(this: any) {
          return this.Sales;
        },
      },
      getSelectedRange(this: any) {
        return this.selection;
      },
    },
  };
  const context: any = new OfficeMockObject(seed);
  // isNullObject is not a loadable property in the host; it is known after sync. Set it directly.
  const wb = context.workbook;
  for (const s of [wb.worksheets.Sales, wb.selection.worksheet]) {
    s.isNullObject = false;
    s.used.isNullObject = opts.used === null;
  }
  wb.worksheets.missing.isNullObject = true;
  const mockSync = context.sync.bind(context);
  // The mock resolves nested properties over a few microtasks; let them settle after each sync.
  context.sync = async () => {
    await mockSync();
    await new Promise((r) => setTimeout(r, 0));
  };
  const run: Runner = (batch) => batch(context);
  return { context, run, sheet: wb.worksheets.Sales };
}

const units: Seed = {
  values: [["Units"], [120], [""], [0], ["#N/A"]],
  valueTypes: [["String"], ["Double"], ["Empty"], ["Double"], ["Error"]],
};

describe("reading ranges", () => {
  it("reads the selection with values and value types, and hands blanks and errors to the engine as the host does", async () => {
    const f = fixture({ used: "A1:G5", ranges: { "C1:C5": units }, selection: "Sales!C1:C5" });
    const r = await new Host(f.run).readSelection();
    if (!r.ok) throw new Error(r.message);
    expect(r.value.address).toBe("Sales!C1:C5");
    expect(r.value.clipped).toBe(false);
    expect(r.value.values).toEqual([["Units"], [120], [""], [0], ["#N/A"]]);
    expect(r.value.types[2][0]).toBe("Empty");
    // blank → null (not 0), a real zero stays 0, an error cell → { code }
    expect(engineValues(r.value)).toEqual([["Units"], [120], [null], [0], [{ code: "#N/A", message: "error cell" }]]);
  });

  it("clips a whole-column selection to the sheet's used rows", async () => {
    const f = fixture({ used: "A1:G5", ranges: { "C1:C5": units }, selection: "Sales!C:C" });
    const r = await new Host(f.run).readSelection();
    if (!r.ok) throw new Error(r.message);
    expect(r.value.address).toBe("Sales!C1:C5");
    expect(r.value.requested).toBe("Sales!C:C");
    expect(r.value.clipped).toBe(true);
    expect(r.value.values.length).toBe(5);
  });

  it("refuses a selection of several areas with a sentence", async () => {
    const f = fixture({ used: "A1:G5", ranges: {}, selection: "Sales!A1:A3,C1:C3" });
    const r = await new Host(f.run).readSelection();
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(/several areas; select one block/);
  });

  it("reads a typed address on the active sheet, and says when a sheet is missing, a range is empty or the text is no address", async () => {
    const f = fixture({ used: "A1:G5", ranges: { "C1:C5": units } });
    const host = new Host(f.run);
    const typed = await host.readAddress("C1:C9");
    if (!typed.ok) throw new Error(typed.message);
    expect(typed.value.address).toBe("Sales!C1:C5");
    const missing = await host.readAddress("Stock!A1:A3");
    expect(missing).toEqual({ ok: false, message: 'there is no sheet named "Stock" in this workbook' });
    const outside = await host.readAddress("K1:K9");
    expect(outside.ok).toBe(false);
    if (!outside.ok) expect(outside.message).toBe("Sales!K1:K9 is empty (the sheet's values lie in A1:G5)");
    const bad = await host.readAddress("prices please");
    expect(bad.ok).toBe(false);
    const empty = await new Host(fixture({ used: null, ranges: {} }).run).readAddress("A1:A4");
    expect(empty.ok).toBe(false);
    if (!empty.ok) expect(empty.message).toMatch(/holds no values/);
  });

  it("turns a host failure into a sentence instead of throwing", async () => {
    const run: Runner = () => Promise.reject(new Error("RichApi.Error: the workbook is busy"));
    const r = await new Host(run).readSelection();
    expect(r).toEqual({ ok: false, message: "the selection could not be read (RichApi.Error: the workbook is busy)" });
  });
});

describe("the no-overwrite rule", () => {
  it("counts values, spilled results and formulas as occupied, and only true blanks as empty", () => {
    expect(isEmptyCell("", "Empty", "")).toBe(true);
    expect(isEmptyCell(0, "Double", "")).toBe(false); // a zero is a value
    expect(isEmptyCell("x", "String", "")).toBe(false); // a spilled or typed value
    expect(isEmptyCell("", "Empty", "=A1")).toBe(false); // a formula that shows nothing
    expect(isEmptyCell("#SPILL!", "Error", "=ELX.FIT(A1:A3,B1:B3)")).toBe(false);
  });

  const block: FormulaBlock = {
    height: 3,
    width: 2,
    cells: [
      { row: 0, column: 0, content: "Elasticell: Units on Price" },
      { row: 2, column: 0, content: '=ELX.FIT(Sales!$C$1:$C$5, Sales!$D$1:$D$5, "zeros=drop")' },
    ],
  };

  it("checks the whole block and writes nothing when a cell is taken, offering a free place right of the used range", async () => {
    const target: Seed = {
      values: [["", ""], ["", 7], ["", ""]],
      valueTypes: [["Empty", "Empty"], ["Empty", "Double"], ["Empty", "Empty"]],
      formulas: [["", ""], ["", 7], ["", ""]],
    };
    const f = fixture({ used: "A1:J5", ranges: { "I1:J3": target } });
    const r = await new Host(f.run).writeBlock("I1", block);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.occupied).toEqual(["J2"]);
    expect(r.suggestion).toBe("L1");
    expect(r.message).toBe("Nothing was written: the block needs I1:J3 (3 rows × 2 columns) and J2 is not empty. L1 is free.");
    // No cell of the block was written.
    expect(f.sheet.ranges.I1).toBeUndefined();
    expect(f.sheet.ranges.I3).toBeUndefined();
    expect(f.sheet.ranges["I1:J3"].formulas).toEqual([["", ""], ["", 7], ["", ""]]);
  });

  it("writes each content cell of the block once the whole block is empty", async () => {
    const empty: Seed = {
      values: [["", ""], ["", ""], ["", ""]],
      valueTypes: [["Empty", "Empty"], ["Empty", "Empty"], ["Empty", "Empty"]],
      formulas: [["", ""], ["", ""], ["", ""]],
    };
    let selected = 0;
    const f = fixture({ used: "A1:G5", ranges: { "L1:M3": { ...empty, select: () => selected++ } } });
    const r = await new Host(f.run).writeBlock("Sales!L1", block);
    expect(r).toEqual({ ok: true, address: "Sales!L1:M3" });
    // The written block is selected, so the host scrolls to it.
    expect(selected).toBe(1);
    expect(f.sheet.ranges.L1.formulas).toEqual([["Elasticell: Units on Price"]]);
    expect(f.sheet.ranges.L3.formulas).toEqual([['=ELX.FIT(Sales!$C$1:$C$5, Sales!$D$1:$D$5, "zeros=drop")']]);
    expect(f.sheet.ranges.L2).toBeUndefined();
  });

  it("refuses a target on a missing sheet or off the sheet's edge, writing nothing", async () => {
    const f = fixture({ used: "A1:G5", ranges: {} });
    const host = new Host(f.run);
    const missing = await host.writeBlock("Stock!A1", block);
    expect(missing).toEqual({ ok: false, message: 'there is no sheet named "Stock" in this workbook', occupied: [], suggestion: null });
    const edge = await host.writeBlock("XFD1048576", block);
    expect(edge.ok).toBe(false);
    if (!edge.ok) expect(edge.message).toMatch(/would run off the sheet/);
  });

  it("reports the occupied cells of a block without writing (findOccupied)", async () => {
    const target: Seed = {
      values: [["a", ""], ["", ""], ["", ""]],
      valueTypes: [["String", "Empty"], ["Empty", "Empty"], ["Empty", "Empty"]],
      formulas: [["a", ""], ["", ""], ["=B9", ""]],
    };
    const f = fixture({ used: "A1:G5", ranges: { "B2:C4": target } });
    const r = await new Host(f.run).findOccupied("B2", 3, 2);
    if (!r.ok) throw new Error(r.message);
    expect(r.value.occupied).toEqual(["B2", "B4"]);
  });
});
