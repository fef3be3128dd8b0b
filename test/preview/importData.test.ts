/**
 * The preview's reader of pasted blocks and CSV files (preview/importData.ts): quoted fields,
 * separators, decimal commas and thousands separators read per column and reported, ragged rows,
 * empty lines, types. The texts are invented for these shapes only.
 */
import { detectSeparator, parseDelimited, sheetName, type ImportResult } from "../../preview/importData";

function read(text: string, separator?: "," | ";" | "\t"): ImportResult {
  const r = parseDelimited(text, { separator });
  if ("error" in r) throw new Error(r.error);
  return r;
}

describe("reading a pasted block or a CSV file", () => {
  it("turns numbers into numbers and keeps text as text (a block copied from a spreadsheet)", () => {
    const r = read("Store\tUnits\tPrice\tPromo\tCode\nNorthgate\t239\t2.84\tTRUE\t007\nRiver St\t-12\t2.5e1\tfalse\tA-12\n", "\t");
    expect(r.rows).toEqual([
      ["Store", "Units", "Price", "Promo", "Code"],
      ["Northgate", 239, 2.84, true, "007"],
      ["River St", -12, 25, false, "A-12"],
    ]);
    expect(r.notes[0]).toBe("Read 2 data rows × 5 columns below a header row: 4 numbers, 4 text cells (TRUE and FALSE are booleans).");
    expect(r.notes).toContain("1 number with a leading zero (such as 007) stays text, as codes.");
  });

  it("reads quoted fields with separators, quotes and line breaks inside", () => {
    const r = read('Name,Note,Units\n"Harrow, east","said ""closed""",3\n"two\nlines",,4\n');
    expect(r.rows).toEqual([["Name", "Note", "Units"], ["Harrow, east", 'said "closed"', 3], ["two\nlines", null, 4]]);
  });

  it("refuses a quote that is never closed, naming its line", () => {
    expect(parseDelimited('a,b\n1,"open\n2,3\n', { source: "The file x.csv" })).toEqual({ error: "The file x.csv: a quote opened on line 2 is never closed, so the rest of the text would be one field; check the quotes there" });
  });

  it("detects semicolons and reads a column of decimal commas as numbers, saying so", () => {
    const text = "Week;Price;Units\n1;2,84;239\n2;2,5;0\n3;1.234,5;12\n";
    expect(detectSeparator(text)).toBe(";");
    const r = read(text);
    expect(r.rows.slice(1)).toEqual([[1, 2.84, 239], [2, 2.5, 0], [3, 1234.5, 12]]);
    expect(r.notes).toContain("Fields are separated by semicolons (read from the first line).");
    expect(r.notes).toContain('"Price": 3 values written with a decimal comma (such as 2,84) read as decimal numbers.');
  });

  it("reads thousands separators in quoted CSV numbers, and keeps a column of 1,234 alone as text, saying why", () => {
    const r = read('Units,Revenue,Count\n1,"12,345.5","1,234"\n2,"1,000","2,500"\n');
    expect(r.rows.slice(1)).toEqual([[1, 12345.5, "1,234"], [2, 1000, "2,500"]]);
    expect(r.notes).toContain('"Revenue": 2 values written with thousands separators (such as 12,345.5) read without them.');
    expect(r.notes).toContain('"Count": 2 values such as 1,234 could mean a thousand and more or a decimal, so they stay text; write them without the comma, or with a decimal point, and paste again.');
  });

  it("keeps a column that mixes decimal commas and thousands separators as text", () => {
    const r = read("A\tB\n1\t2,5\n2\t1,234.5\n", "\t");
    expect(r.rows.slice(1)).toEqual([[1, "2,5"], [2, "1,234.5"]]);
    expect(r.notes.some((n) => n.startsWith('"B": commas mean a decimal comma in some values (2,5) and thousands separators in others (1,234.5)'))).toBe(true);
  });

  it("fills short rows with blanks, keeps the extra fields of long rows, and counts both with their lines", () => {
    const r = read("y,x\n1,2\n3\n4,5,6\n", ",");
    expect(r.width).toBe(3);
    expect(r.rows).toEqual([["y", "x", null], [1, 2, null], [3, null, null], [4, 5, 6]]);
    expect(r.notes).toContain("1 row had fewer fields than the header (line 3): the missing cells are blank.");
    expect(r.notes).toContain("1 row had more fields than the header (line 4): the extra fields are in columns beyond the header, without a name.");
  });

  it("drops empty lines at the ends and keeps those inside as counted blank rows", () => {
    const r = read("\n\ny\tx\n1\t2\n\n3\t4\n\n\n", "\t");
    expect(r.rows).toEqual([["y", "x"], [1, 2], [null, null], [3, 4]]);
    expect(r.notes).toContain("1 empty line inside the data (line 5) is a blank row: the functions leave blank rows out and count them.");
  });

  it("reads percentages as fractions and spreadsheet error codes as error cells, and reports both", () => {
    const r = read("y\tx\n12%\t#N/A\n", "\t");
    expect(r.rows[1]).toEqual([0.12, { code: "#N/A", message: "an error value in the pasted data" }]);
    expect(r.notes).toContain("1 value written as percentages (12%) read as fractions (0.12).");
    expect(r.notes.some((n) => n.startsWith("1 error value (#N/A and the like) kept as error cells"))).toBe(true);
  });

  it("says when the first row is not a header row", () => {
    const r = read("1\t2\n3\t4\n", "\t");
    expect(r.notes.some((n) => n.startsWith("The first row holds only numbers, so it is not a header row"))).toBe(true);
  });

  it("handles Windows line ends and a byte-order mark", () => {
    expect(read("\uFEFFy,x\r\n1,2\r\n").rows).toEqual([["y", "x"], [1, 2]]);
  });

  it("reads a file of 300,000 rows (past what spreading the rows into arguments would take) and refuses one past 2,000,000 cells by its size", () => {
    const lines = ["Units,Price"];
    for (let i = 0; i < 300000; i++) lines.push(`${100 + (i % 50)},${(2 + (i % 7) / 10).toFixed(1)}`);
    const r = read(lines.join("\n"));
    expect(r.rows.length).toBe(300001);
    expect(r.rows[300000]).toEqual([149, 2]); // row 299,999: 100 + 49, 2 + 0/10
    const wide = ["a,b,c,d,e,f,g"];
    for (let i = 0; i < 300000; i++) wide.push("1,2,3,4,5,6,7");
    expect(parseDelimited(wide.join("\n"), { source: "The file big.csv" })).toEqual({ error: "The file big.csv has 300,001 rows × 7 columns, more than the 2,000,000 cells this preview takes; keep the columns you need" });
  });

  it("refuses empty text", () => {
    expect(parseDelimited("\n \n", { source: "The pasted block" })).toEqual({ error: "The pasted block holds no values" });
  });

  it("names a sheet after its file, without characters a sheet name cannot hold, and not twice", () => {
    const taken = new Set(["sales q3"]);
    expect(sheetName("sales q3.csv", (n) => taken.has(n))).toBe("sales q3 (2)");
    expect(sheetName("a/b:c*.csv", () => false)).toBe("a b c");
    expect(sheetName("x".repeat(40) + ".csv", () => false)).toHaveLength(31);
  });
});
