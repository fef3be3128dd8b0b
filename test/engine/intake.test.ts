/**
 * The intake and its messages: exact row lists, the header rule, unique names, text columns, numbers
 * stored as text, zeros and negatives apart, the key rule of BYGROUP, the options parser. No
 * statistics here: every expectation is a count, a name or a sentence worked out by hand from the
 * invented cells below.
 */
import { readYX, uniqueNames, isHeaderRow, xColumnNames, looksNumeric, textColumnMessage, TEXT_COLUMN_CHOICES } from "../../functions/engine/intake";
import { prepare, matchName, resolveColumn } from "../../functions/engine/transforms";
import { parseOptions } from "../../functions/engine/options";
import { groupKey, fitGroups } from "../../functions/engine/byGroup";
import { ElxProblem, RowList, rowsPhrase, quote } from "../../functions/engine/problems";

/** The message of the problem `run` throws (fails the test when it throws nothing). */
function message(run: () => unknown): string {
  try {
    run();
  } catch (e) {
    if (e instanceof ElxProblem) return e.message;
    throw e;
  }
  throw new Error("expected a problem, got none");
}

const col = (header: string, values: unknown[]): unknown[][] => [[header], ...values.map((v) => [v])];
const cols = (header: string[], columns: unknown[][]): unknown[][] => [header, ...columns[0].map((_, i) => columns.map((c) => c[i]))];

describe("row lists are exact (item 14)", () => {
  it("a list covering every row says all N rows with their range, not a count of the first 200", () => {
    const l = new RowList();
    for (let r = 2; r <= 469; r++) l.add(r);
    expect(l.count).toBe(468);
    expect(l.phrase(5, 468)).toBe("all 468 rows (2–469)");
    expect(l.phrase(5)).toBe("rows 2–469");
  });

  it("consecutive rows are compressed into ranges; pairs and single rows stay as numbers", () => {
    expect(rowsPhrase([9, 2, 3, 4, 5, 12, 13])).toBe("rows 2–5, 9 and 12, 13");
    expect(rowsPhrase([6])).toBe("row 6");
    expect(rowsPhrase([3, 4])).toBe("rows 3, 4");
  });

  it("beyond the runs shown, the count of the other rows is exact, however many rows there are", () => {
    // every other row from 2 to 6000: 3000 single-row runs, more than the list keeps as runs
    const l = new RowList();
    for (let r = 2; r <= 6000; r += 2) l.add(r);
    expect(l.count).toBe(3000);
    expect(l.phrase(3)).toBe("rows 2, 4, 6 and 2997 more rows");
    expect(l.firstRows(4)).toEqual([2, 4, 6, 8]);
  });

  it("a failure over all 468 rows says so exactly (the old message said 'first: rows 2, 3, 4, 5, 6 and 195 more')", () => {
    const y = col("Units", new Array(468).fill(null));
    const x = col("Price", Array.from({ length: 468 }, (_, i) => 2 + i / 100));
    const m = message(() => readYX(y, x, null, null));
    expect(m).toContain("all 468 rows (2–469) have a blank, text or error cell");
    expect(m).toContain("Units in every row");
    expect(m).not.toMatch(/more\)/);
  });

  it("zeros in 300 scattered rows are counted exactly in the zeros=stop message", () => {
    const units = Array.from({ length: 600 }, (_, i) => (i % 2 === 0 ? 0 : 10 + i));
    const y = col("Units", units);
    const x = col("Price", units.map((_, i) => 2 + i / 1000));
    const m = message(() => prepare(readYX(y, x, null, null), parseOptions("")));
    // data rows 2..601; zeros at even offsets: rows 2, 4, 6, …, 600
    expect(m).toContain("Units has 300 values that are zero or blank (rows 2, 4, 6, 8, 10, 12, 14, 16 and 292 more rows)");
  });
});

describe("zeros and negatives under a log are counted and named apart (item 17)", () => {
  const units = [10, 12, 9, 15, 20, 14, 11, 13];
  const y = col("Units", units);

  it("zeros and negatives of one column get their own counts, rows and advice", () => {
    const x = col("Price", [2, 0, 0, 1.5, 1.2, -1.6, 1.9, 2.1]);
    const m = message(() => prepare(readYX(y, x, null, null), parseOptions("")));
    expect(m).toContain("Price has 2 values that are zero or blank (rows 3, 4) and 1 negative value (row 7)");
    expect(m).toContain("a log cannot take zero: use zeros=drop, zeros=shift or zeros=ihs");
    expect(m).toContain("a negative Price is usually a data error");
    expect(m).toContain("levels=Price");
  });

  it("negatives alone are not offered zeros=shift as a fix: they are a data error to check", () => {
    const x = col("Price", [2, 1.8, -2.2, 1.5, 1.2, 1.6, 1.9, 2.1]);
    const m = message(() => prepare(readYX(y, x, null, null), parseOptions("")));
    expect(m).toMatch(/^Price has 1 negative value \(row 4\); a negative Price is usually a data error/);
    expect(m).not.toContain("use zeros=drop, zeros=shift");
    expect(m).toContain("zeros=shift is meant for zeros, not for them");
  });

  it("a negative y is pointed to levels for y, not to PPML or a shift", () => {
    const yn = col("Units", [10, -12, 9, 15, 20, 14, 11, 13]);
    const x = col("Price", [2, 1.8, 2.2, 1.5, 1.2, 1.6, 1.9, 2.1]);
    const m = message(() => prepare(readYX(yn, x, null, null), parseOptions("")));
    expect(m).toContain("Units has 1 negative value (row 3)");
    expect(m).toContain("model Units in levels (form=level-log)");
    expect(m).not.toContain("estimator=ppml");
  });

  it("under zeros=shift a value at or below −c is a data error to check, not a case for a larger shift", () => {
    const x = col("Price", [2, 1.8, -2.2, 1.5, 1.2, 1.6, 1.9, 2.1]);
    const m = message(() => prepare(readYX(y, x, null, null), parseOptions("zeros=shift")));
    expect(m).toContain("Price has 1 negative value (row 4), at or below −1, which log(v + 1) cannot take");
    expect(m).toContain("data error");
    expect(m).not.toMatch(/larger shift/);
  });

  it("zeros=drop counts the rows it leaves out for a zero apart from those for a negative", () => {
    const x = col("Price", [2, 0, 0, 1.5, 1.2, -1.6, 1.9, 2.1]);
    const d = prepare(readYX(y, x, null, null), parseOptions("zeros=drop"));
    expect(d.n).toBe(5);
    expect(d.leftOutNonPositive).toBe(3);
    expect(d.leftOutNegative).toBe(1);
    expect(d.leftOutNonPositiveRows.phrase()).toBe("rows 3, 4 and 7");
  });
});

describe("numbers stored as text are named, with decimal commas (item 17)", () => {
  it("a few cells like 7,49 are left out, counted, and their rows named", () => {
    const y = col("Units", [10, 12, 9, 15, 20, 14, 11, 13]);
    const x = col("Price", [2, "7,49", 2.2, 1.5, "1,20", 1.6, 1.9, 2.1]);
    const raw = readYX(y, x, { row: 4, column: 3 }, { row: 4, column: 4 });
    expect(raw.leftOutBlank).toBe(2);
    expect(raw.numericTextRows.phrase()).toBe("rows 6 and 9");
    expect(raw.numericTextExample).toEqual({ column: "Price", row: 6, text: "7,49" });
  });

  it("a column of numbers stored as text is refused with the column, a row and the decimal comma named", () => {
    const y = col("Units", [10, 12, 9, 15]);
    const x = cols(["Price", "Footfall"], [["2,10", "1,80", "2,20", "1,50"], [100, 98, 105, 90]]);
    const m = message(() => readYX(y, x, null, null));
    expect(m).toMatch(/^Price holds numbers stored as text in all 4 rows \(for example "2,10" in row 2\): these look like numbers with a decimal comma/);
  });

  it("text that reads as a number: decimal commas, thousands, currency and percent; words do not", () => {
    for (const t of ["7,49", "1.234,5", "12 500", "€3.20", "15%", " -0.5 "]) expect(looksNumeric(t)).toBe(true);
    for (const t of ["North", "Week 3", "2024-01-05", "n/a", "-", ""]) expect(looksNumeric(t)).toBe(false);
  });
});

describe("a text column in x is named with what to do (item 18)", () => {
  const y = col("Units", [10, 12, 9, 15, 20, 14]);

  it("Region holds text: name it in a role option, leave it out of x, or use ELX.BYGROUP with it as keys", () => {
    const x = cols(["Price", "Region"], [[2, 1.8, 2.2, 1.5, 1.2, 1.6], ["North", "South", "North", "East", "South", "East"]]);
    expect(message(() => readYX(y, x, null, null))).toBe('Region holds text in all 6 rows (for example "North" in row 2): name it in factors= (indicator terms), absorb= (fixed effects) or cluster=, leave it out of x, or use ELX.BYGROUP with it as keys');
  });

  it("a column that is text in most rows is refused too; text in a few rows is left out and counted", () => {
    const most = cols(["Price", "Region"], [[2, 1.8, 2.2, 1.5, 1.2, 1.6], ["North", 1, "North", "East", "South", 2]]);
    expect(message(() => readYX(y, most, null, null))).toMatch(/^Region holds text in 4 of 6 rows/);
    const few = cols(["Price", "Footfall"], [[2, 1.8, 2.2, 1.5, 1.2, 1.6], [100, "n/a", 105, 90, 110, 101]]);
    expect(readYX(y, few, null, null).leftOutBlank).toBe(1);
  });

  it("the choices are one list, the role options first", () => {
    expect(TEXT_COLUMN_CHOICES[0]).toBe("name it in factors= (indicator terms), absorb= (fixed effects) or cluster=");
    expect(textColumnMessage("Region", "", false, ["leave it out of x"])).toBe("Region holds text: leave it out of x");
  });

  it("a y column of text is told that y must hold numbers", () => {
    const x = col("Price", [2, 1.8, 2.2, 1.5, 1.2, 1.6]);
    expect(message(() => readYX(col("Store", ["a", "b", "c", "d", "e", "f"]), x, null, null))).toMatch(/^Store holds text in all 6 rows.*y must be a column of numbers/);
  });
});

describe("headers (item 20)", () => {
  it("a first row whose non-empty cells are all text is a header; an empty header cell gets its default name", () => {
    expect(isHeaderRow(["Price", null, "Promo"])).toBe(true);
    expect(isHeaderRow(["Price", "", "Promo"])).toBe(true);
    expect(isHeaderRow([null, null])).toBe(false);
    expect(isHeaderRow(["Price", 2, "Promo"])).toBe(false);
    const y = col("Units", [10, 12, 9, 15, 20, 14]);
    const x = cols(["Price", "Footfall", ""], [[2, 1.8, 2.2, 1.5, 1.2, 1.6], [100, 98, 105, 90, 110, 101], [0, 1, 0, 1, 1, 0]]);
    const raw = readYX(y, x, null, null);
    expect(raw.xNames).toEqual(["Price", "Footfall", "x3"]);
    expect(raw.unnamed).toEqual(["x3"]);
    expect(raw.y.length).toBe(6); // the header row was not read as a data row
  });

  it("an empty y header beside x's header row is a header too (same height)", () => {
    const y = [[null], [10], [12], [9], [15]];
    const x = col("Price", [2, 1.8, 2.2, 1.5]);
    const raw = readYX(y, x, null, null);
    expect(raw.yName).toBe("y");
    expect(raw.unnamed).toEqual(["y"]);
    expect(raw.y.length).toBe(4);
  });

  it("names are unique whatever the input: p (2), p, p become p (2), p, p (3)", () => {
    expect(uniqueNames(["p (2)", "p", "p"])).toEqual(["p (2)", "p", "p (3)"]);
    expect(uniqueNames(["p", "P", "p (2)", "p"])).toEqual(["p", "P (3)", "p (2)", "p (4)"]);
    const y = col("Units", [10, 12, 9, 15, 20]);
    const x = cols(["p (2)", "p", "p"], [[2, 1.8, 2.2, 1.5, 1.2], [100, 98, 105, 90, 110], [5, 3, 4, 8, 7]]);
    const names = readYX(y, x, null, null).xNames;
    expect(new Set(names.map((n) => n.toLowerCase())).size).toBe(3);
    expect(names).toEqual(["p (2)", "p", "p (3)"]);
    // new_x with the same header gets the same names, so PREDICT matches it
    expect(xColumnNames("Units", ["p (2)", "p", "p"])).toEqual(names);
  });
});

describe("BYGROUP keys: one rule (item 20)", () => {
  it("a key is the cell's text: 1 and \"1\" are one key, spaces at the ends are trimmed, case is kept, blanks and errors have none", () => {
    expect(groupKey(1)).toBe(groupKey("1"));
    expect(groupKey(" 1 ")).toBe("1");
    expect(groupKey(1.5)).toBe("1.5");
    expect(groupKey("1.50")).toBe("1.50");
    expect(groupKey("  North ")).toBe("North");
    expect(groupKey("north")).not.toBe(groupKey("North"));
    expect(groupKey(true)).toBe("TRUE");
    for (const v of [null, undefined, "", "   ", { code: "#N/A" }, { code: "#DIV/0!" }, NaN]) expect(groupKey(v)).toBeNull();
  });

  it("fitGroups applies it: merged, trimmed and case-kept groups; error keys counted with the blank ones", () => {
    const units = [10, 12, 9, 15, 20, 14, 11, 13, 16, 18, 17, 12, 10, 14];
    const price = [2, 1.8, 2.2, 1.5, 1.2, 1.6, 1.9, 2.1, 1.4, 1.3, 1.35, 1.85, 2.05, 1.55];
    const keys = [1, "1", " 1", 1, "North", "North ", "north", "north", "North", { code: "#N/A" }, null, "north", 1, "North"];
    const g = fitGroups(col("Store", keys), col("Units", units), col("Price", price), parseOptions(""), null, null);
    expect(g.groups.map((e) => [e.key, e.rows])).toEqual([["1", 5], ["North", 4], ["north", 3]]);
    expect(g.blankKeys).toBe(2);
  });
});

describe("options (item 19)", () => {
  it("a comma between options is told to use ;", () => {
    const m = message(() => parseOptions("zeros=drop,se=HC1"));
    expect(m).toBe('"zeros=drop,se=HC1" holds 2 options: separate options with ";", not "," or a space (write "zeros=drop; se=HC1")');
    expect(message(() => parseOptions("zeros=drop se=HC1"))).toContain('(write "zeros=drop; se=HC1")');
  });

  it("levels= keeps the spaces inside a column name, so levels=Promo week finds the header Promo week", () => {
    expect(parseOptions("levels=Promo week, Price").levels).toEqual(["Promo week", "Price"]);
    expect(resolveColumn("Promo week", ["Price", "Promo week"])).toBe(1);
    expect(resolveColumn("promo  WEEK", ["Price", "Promo week"])).toBe(1);
    expect(matchName("Promoweek", ["Price", "Promo week"])).toBe(1);
    const y = col("Units", [10, 12, 9, 15, 20, 14]);
    const x = cols(["Price", "Promo week"], [[2, 1.8, 2.2, 1.5, 1.2, 1.6], [3, 1, 2, 5, 4, 2]]);
    const d = prepare(readYX(y, x, null, null), parseOptions("levels=Promo week"));
    expect(d.xTransforms.map((t) => t.kind)).toEqual(["log", "level"]);
  });

  it("a message quotes a 100,000-character input cut to 60 characters with …", () => {
    const long = "a".repeat(100_000);
    for (const text of [long, `${long}=1`, `se=${long}`, `level=${"9".repeat(100_000)}`]) {
      const m = message(() => parseOptions(text));
      expect(m.length).toBeLessThan(400);
      expect(m).toContain("…");
    }
    expect(message(() => resolveColumn(long, ["Price"]))).toContain(quote(long));
    expect(quote(long)).toBe(`"${"a".repeat(59)}…"`);
    // a header of 100,000 characters is cut in the list of columns too
    const m = message(() => resolveColumn("Prise", ["Price", long]));
    expect(m.length).toBeLessThan(400);
    expect(m).toContain(`${"a".repeat(59)}…`);
    const t = message(() => readYX(col("Units", [1, 2, 3]), cols(["Price", long], [[2, 3, 4], ["a", "b", "c"]]), null, null));
    expect(t.length).toBeLessThan(400);
  });
});
