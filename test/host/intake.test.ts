/**
 * Through the host's door (dist/functions.js): what the analyst reads about the ranges and the options
 * text: interval headers, exact row lists, text columns, numbers stored as text, zeros and negatives
 * apart, headers with empty or repeated cells, PREDICT's new_x header, BYGROUP's key rule, and
 * options typed in the wrong place. The data are invented for shapes and messages; the only numbers
 * compared are the add-in's own results against each other (same model, different layout).
 */
import { call, HostError, loadFunctions, lookup, rows } from "../harness/loadFunctions";

const reg = loadFunctions();

const units = [120, 95, 130, 80, 150, 110, 90, 140, 100, 125];
const price = [2.0, 2.4, 1.9, 2.8, 1.7, 2.1, 2.5, 1.8, 2.3, 2.0];
const foot = [100, 98, 105, 90, 110, 101, 95, 108, 97, 103];
const promo = [0, 0, 1, 0, 1, 0, 0, 1, 0, 1];
const Y = rows([units], ["Units"]);
const X = rows([price, foot, promo], ["Price", "Footfall", "Promo"]);

function err(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v)}`);
  return v;
}
const table = (v: unknown): unknown[][] => {
  if (!Array.isArray(v)) throw new Error(`expected a table, got ${JSON.stringify(v)}`);
  return v as unknown[][];
};

describe("interval headers name the level in our own words (item 23)", () => {
  it("FIT, ELASTICITIES, EFFECTS and PREDICT head their interval ends Low (90%) / High (90%) under level=0.9", () => {
    const o = "level=0.9";
    expect(table(call(reg, "FIT", Y, X, o))[0].slice(6)).toEqual(["Low (90%)", "High (90%)"]);
    expect(table(call(reg, "ELASTICITIES", Y, X, o))[0].slice(4, 6)).toEqual(["Low (90%)", "High (90%)"]);
    expect(table(call(reg, "EFFECTS", Y, X, o))[0].slice(3)).toEqual(["Low (90%)", "High (90%)"]);
    const newX = rows([[2.2], [100], [1]], ["Price", "Footfall", "Promo"]);
    expect(table(call(reg, "PREDICT", Y, X, newX, `${o}; interval=mean`))[0]).toEqual(["Predicted Units", "Low (90%)", "High (90%)"]);
  });

  it("no table header anywhere says Lower or Upper", () => {
    const newX = rows([[2.2], [100], [1]], ["Price", "Footfall", "Promo"]);
    const heads = [
      call(reg, "FIT", Y, X, null), call(reg, "ELASTICITIES", Y, X, null), call(reg, "EFFECTS", Y, X, null),
      call(reg, "PREDICT", Y, X, newX, "interval=individual"), call(reg, "TESTS", Y, X, null),
      call(reg, "FORMCHECK", Y, X, null), call(reg, "SUMMARY", Y, X, null),
    ].map((t) => table(t)[0].join(" | "));
    for (const h of heads) expect(h).not.toMatch(/Lower|Upper/);
  });
});

describe("row lists and text columns (items 14, 18)", () => {
  it("a failure over all 468 rows names them exactly, with sheet rows", () => {
    const y = [["Units"], ...new Array(468).fill(null).map(() => [null])];
    const x = [["Price"], ...Array.from({ length: 468 }, (_, i) => [2 + i / 100])];
    const e = err(call(reg, "FIT", y, x, null, { parameterAddresses: ["Sales!C1:C469", "Sales!D1:D469", null] }));
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toContain("all 468 rows (2–469)");
    expect(e.message).not.toMatch(/and \d+ more\)/);
  });

  it("a text column in x (Region) is named with what to do", () => {
    const region = ["North", "South", "North", "East", "South", "East", "North", "South", "East", "North"];
    const e = err(call(reg, "FIT", Y, rows([price, region], ["Price", "Region"]), null));
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toBe('Region holds text in all 10 rows (for example "North" in row 2): name it in factors= (indicator terms), absorb= (fixed effects) or cluster=, leave it out of x, or use ELX.BYGROUP with it as keys');
  });
});

describe("zeros, negatives and numbers stored as text (item 17)", () => {
  it("SUMMARY under zeros=drop counts rows lost to a zero apart from rows lost to a negative", () => {
    const p = [0, ...price.slice(1, 5), -1.5, ...price.slice(6)];
    const s = table(call(reg, "SUMMARY", Y, rows([p, foot], ["Price", "Footfall"]), "zeros=drop"));
    expect(lookup(s, "Observations used")).toBe(8);
    expect(lookup(s, "Rows left out: zero or blank under a log")).toBe(1);
    expect(lookup(s, "Rows left out: negative under a log")).toBe(1);
  });

  it("under zeros=stop a negative price is called a data error and not sent to zeros=shift", () => {
    const p = [...price.slice(0, 5), -1.5, ...price.slice(6)];
    const e = err(call(reg, "FIT", Y, rows([p, foot], ["Price", "Footfall"]), null));
    expect(e.message).toMatch(/^Price has 1 negative value \(row 7\); a negative Price is usually a data error/);
    expect(e.message).not.toContain("use zeros=drop, zeros=shift");
  });

  it("numbers stored as text (7,49) are left out, and SUMMARY names their rows and the decimal comma", () => {
    const p: unknown[] = price.slice();
    p[3] = "2,80";
    p[6] = "2,50";
    const s = table(call(reg, "SUMMARY", Y, rows([p, foot], ["Price", "Footfall"]), null, { parameterAddresses: ["Sales!C4:C14", "Sales!D4:E14", null] }));
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(2);
    expect(lookup(s, "Of these, numbers stored as text")).toMatch(/^rows 8 and 11 \(for example "2,80" in Price, row 8\): these look like numbers with a decimal comma/);
  });
});

describe("headers (item 20)", () => {
  it("a header row with one empty cell is a header: the column is named x3 and SUMMARY says so", () => {
    const x = rows([price, foot, promo], ["Price", "Footfall", ""]);
    const f = table(call(reg, "FIT", Y, x, null));
    expect(f.map((r) => r[0])).toEqual(["Term", "(Intercept)", "Price", "Footfall", "x3"]);
    // the same numbers as with a full header: the header row was not read as data
    expect(f.slice(1).map((r) => r.slice(2))).toEqual(table(call(reg, "FIT", Y, X, null)).slice(1).map((r) => r.slice(2)));
    expect(lookup(table(call(reg, "SUMMARY", Y, x, null)), "Columns without a header")).toMatch(/^x3: its header cell is empty/);
  });

  it("repeated headers p (2), p, p give three different term names", () => {
    const f = table(call(reg, "FIT", Y, rows([price, foot, promo], ["p (2)", "p", "p"]), null));
    expect(f.map((r) => r[0])).toEqual(["Term", "(Intercept)", "p (2)", "p", "p (3)"]);
  });

  it("PREDICT accepts a new_x with the same header as x, repeated names included, in any order", () => {
    const x = rows([price, foot, promo], ["p", "Footfall", "p"]);
    const plain = table(call(reg, "PREDICT", Y, x, [[2.2, 100, 1], [1.9, 104, 0]], null));
    const same = table(call(reg, "PREDICT", Y, x, [["p", "Footfall", "p"], [2.2, 100, 1], [1.9, 104, 0]], null));
    expect(same.slice(1)).toEqual(plain);
    const reordered = table(call(reg, "PREDICT", Y, x, [["Footfall", "p (2)", "p"], [100, 1, 2.2], [104, 0, 1.9]], null));
    expect(reordered.slice(1)).toEqual(plain);
  });

  it("BYGROUP: 1 and \"1\" are one group, spaces at the ends are trimmed, case is kept, error keys count with blank ones", () => {
    const n = 24;
    const yy = Array.from({ length: n }, (_, i) => 100 + ((i * 37) % 23));
    const pp = Array.from({ length: n }, (_, i) => 1.5 + ((i * 13) % 7) / 10);
    const keys = Array.from({ length: n }, (_, i) => [[1, "1", " 1 ", 1], ["North", " North", "North ", "North"], ["north", "north", "north", "north"]][i % 3][Math.floor(i / 3) % 4]);
    keys[22] = { code: "#N/A" } as unknown as string;
    keys[23] = null as unknown as string;
    const t = table(call(reg, "BYGROUP", [["Store"], ...keys.map((k) => [k])], rows([yy], ["Units"]), rows([pp], ["Price"]), null));
    expect(t.map((r) => r[0])).toEqual(["Group", "1", "North", "north", "(blank key)"]);
    expect(t.map((r) => r[1])).toEqual(["Observations", 8, 7, 7, 2]);
    expect(t[4][2]).toBe("rows whose key is blank or an error are left out");
  });
});

describe("options typed in the wrong place or shape (item 19)", () => {
  it("a comma between options is told to use ;", () => {
    const e = err(call(reg, "FIT", Y, X, "zeros=drop,se=HC1"));
    expect(e.message).toContain('separate options with ";"');
    expect(e.message).toContain('"zeros=drop; se=HC1"');
  });

  it("options typed into HETEROTEST's test argument are pointed to the last argument", () => {
    const e = err(call(reg, "HETEROTEST", Y, X, "zeros=drop", null));
    expect(e.code).toBe("#VALUE!");
    expect(e.message).toContain("the test argument holds options");
    expect(e.message).toContain('ELX.HETEROTEST(y, x, "bp", "zeros=drop")');
    // the right place gives a p-value
    expect(typeof table(call(reg, "HETEROTEST", Y, X, "bp", "zeros=drop"))[0][0]).toBe("number");
  });

  it("levels=Promo week finds the header Promo week", () => {
    const x = rows([price, foot.map((v) => v - 89)], ["Price", "Promo week"]);
    const f = table(call(reg, "FIT", Y, x, "levels=Promo week"));
    expect(f.map((r) => r[1])).toEqual(["Transform", "constant", "log", "level"]);
  });

  it("a 100,000-character input is quoted cut to 60 characters with …", () => {
    const long = "x".repeat(100_000);
    for (const [id, args] of [["FIT", [Y, X, long]], ["FIT", [Y, X, `se=${long}`]], ["ELASTICITY", [Y, X, long, null]], ["HETEROTEST", [Y, X, long, null]]] as [string, unknown[]][]) {
      const e = err(call(reg, id, ...args));
      expect(String(e.message).length).toBeLessThan(400);
      expect(e.message).toContain(`${"x".repeat(59)}…`);
    }
  });
});
