/**
 * The formula block writer's layout (taskpane/formulas.ts): where labels, formulas and the room for
 * spilled results go, and how the formula text is written. Expected layouts are worked by hand from
 * the rule: title, blank row, then per item a label row, the formula row and its result's rows, a
 * blank row; a caution line last.
 */
import { buildBlock, CAUTION_LINE, formulaText, stringLiteral } from "../../taskpane/formulas";

describe("formula text", () => {
  it("writes =ELX.ID(y, x, extra, \"options\") and doubles quotes inside the options", () => {
    expect(formulaText("FIT", "Sales!$C$1:$C$9", "Sales!$D$1:$G$9", "form=log-log; zeros=drop")).toBe('=ELX.FIT(Sales!$C$1:$C$9, Sales!$D$1:$G$9, "form=log-log; zeros=drop")');
    expect(formulaText("HETEROTEST", "A1:A5", "B1:B5", "", ['"white"'])).toBe('=ELX.HETEROTEST(A1:A5, B1:B5, "white")');
    expect(stringLiteral('say "hi"')).toBe('"say ""hi"""');
  });
});

describe("block layout", () => {
  it("leaves room for each result and puts the caution last", () => {
    const b = buildBlock({
      y: "S!$C$1:$C$9",
      x: "S!$D$1:$E$9",
      options: "zeros=drop",
      title: "Elasticell: Units on Price, Footfall",
      items: [
        { id: "FIT", label: "Coefficients", height: 4, width: 8 },
        { id: "SUMMARY", label: "Summary", height: 25, width: 2 },
      ],
    });
    // rows: 0 title, 2 label, 3 formula (+3 more result rows to 6), 7 blank, 8 label, 9 formula (to 33), 34 blank, 35 caution
    expect(b.cells.map((c) => [c.row, c.column])).toEqual([[0, 0], [2, 0], [3, 0], [8, 0], [9, 0], [35, 0]]);
    expect(b.cells[2].content).toBe('=ELX.FIT(S!$C$1:$C$9, S!$D$1:$E$9, "zeros=drop")');
    expect(b.cells[5].content).toBe(CAUTION_LINE);
    expect(b.height).toBe(36);
    expect(b.width).toBe(8);
  });

  it("reserves one row for a result that came back as an error", () => {
    const b = buildBlock({ y: "A1:A3", x: "B1:B3", options: "", title: "t", items: [{ id: "FIT", label: "l", height: 0, width: 0 }] });
    expect(b.height).toBe(6);
    expect(b.width).toBe(1);
  });
});
