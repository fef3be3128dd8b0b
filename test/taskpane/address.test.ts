/**
 * Address parsing and writing for the pane (taskpane/address.ts): the forms an analyst types and the
 * host reports. Expected values follow the spreadsheet's A1 notation (column letters base 26 without
 * a zero: A=1, Z=26, AA=27; sheet limits 1,048,576 rows and 16,384 columns = XFD).
 */
import { columnLetters, columnNumber, formatAddress, intersect, parseAddress, quoteSheet } from "../../taskpane/address";

function ok(text: string) {
  const p = parseAddress(text);
  if (!p.ok) throw new Error(`${text}: ${p.message}`);
  return p.value;
}

describe("column letters", () => {
  it("converts both ways at the edges of one, two and three letters", () => {
    for (const [n, s] of [[1, "A"], [26, "Z"], [27, "AA"], [52, "AZ"], [702, "ZZ"], [703, "AAA"], [16384, "XFD"]] as [number, string][]) {
      expect(columnLetters(n)).toBe(s);
      expect(columnNumber(s)).toBe(n);
      expect(columnNumber(s.toLowerCase())).toBe(n);
    }
    expect(columnNumber("A1")).toBe(0);
  });
});

describe("parseAddress", () => {
  it("reads a plain range, with and without $ signs, corners in any order", () => {
    expect(ok("C1:C1249")).toEqual({ sheet: null, top: 1, left: 3, bottom: 1249, right: 3 });
    expect(ok("$D$1:$G$1249")).toEqual({ sheet: null, top: 1, left: 4, bottom: 1249, right: 7 });
    expect(ok("G9:D2")).toEqual({ sheet: null, top: 2, left: 4, bottom: 9, right: 7 });
    expect(ok(" b3 ")).toEqual({ sheet: null, top: 3, left: 2, bottom: 3, right: 2 });
  });

  it("reads sheet names, plain and quoted (with a doubled quote inside)", () => {
    expect(ok("Sales!I2")).toMatchObject({ sheet: "Sales", top: 2, left: 9 });
    expect(ok("'Store sales'!A1:B2")).toMatchObject({ sheet: "Store sales", bottom: 2, right: 2 });
    expect(ok("'Bob''s data'!C:C")).toMatchObject({ sheet: "Bob's data", top: 1, bottom: 1048576, left: 3, right: 3 });
  });

  it("reads whole columns and whole rows to the sheet's edges", () => {
    expect(ok("C:E")).toEqual({ sheet: null, top: 1, left: 3, bottom: 1048576, right: 5 });
    expect(ok("2:5")).toEqual({ sheet: null, top: 2, left: 1, bottom: 5, right: 16384 });
  });

  it("refuses what is not an address, with a sentence", () => {
    for (const bad of ["", "hello world", "C1:C2:C3", "C:7", "!A1", "'Sales!A1", "C", "XFE1", "A1048577"]) {
      const p = parseAddress(bad);
      expect(p.ok).toBe(false);
      if (!p.ok) expect(p.message.length).toBeGreaterThan(10);
    }
  });
});

describe("formatAddress and intersect", () => {
  it("writes addresses back, absolute and sheet-qualified when asked", () => {
    const a = ok("Sales!C1:C1249");
    expect(formatAddress(a)).toBe("Sales!C1:C1249");
    expect(formatAddress(a, { absolute: true })).toBe("Sales!$C$1:$C$1249");
    expect(formatAddress(a, { sheet: false })).toBe("C1:C1249");
    expect(formatAddress(ok("'Store sales'!B2"))).toBe("'Store sales'!B2");
    expect(quoteSheet("Q1.2026")).toBe("Q1.2026");
    expect(quoteSheet("2026")).toBe("'2026'");
  });

  it("clips a whole column to a used range, and says null when they do not meet", () => {
    expect(intersect(ok("Sales!C:C"), ok("A1:G1249"))).toEqual({ sheet: "Sales", top: 1, left: 3, bottom: 1249, right: 3 });
    expect(intersect(ok("K1:K9"), ok("A1:G1249"))).toBeNull();
  });
});
