/**
 * Through the host's door: dist/functions.js loaded with a CustomFunctions shim, every function called
 * by its formula id with 2-D arrays shaped and typed as the host passes them (blanks as null,
 * undefined or "", booleans, text, error objects), checking values, shapes and the
 * error messages an analyst reads. The data here are invented for shapes and messages; numbers are
 * checked only against the definitions in README.md (t = b/se, 100(e^b − 1), Kennedy 1981); the
 * statistical references (R, NIST) are in test/reference and test/host/nist.test.ts.
 */
import { call, HostError, loadFunctions, lookup, metadataIds, rows } from "../harness/loadFunctions";

const reg = loadFunctions();

// A small data set of our own (invented, for shapes and messages; not a statistical reference).
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

/** Every number in an output is finite (no NaN or Infinity shown as a number). */
function allFinite(t: unknown): boolean {
  if (Array.isArray(t)) return t.every(allFinite);
  return typeof t !== "number" || Number.isFinite(t);
}

describe("registration", () => {
  it("registers exactly the functions listed in functions.json", () => {
    expect([...reg.keys()].sort()).toEqual(metadataIds().sort());
    for (const id of ["FIT", "ELASTICITY", "ELASTICITIES", "EFFECTS", "SUMMARY", "ZEROS"]) expect(reg.has(id)).toBe(true);
  });
});

describe("shapes and values", () => {
  it("FIT spills a header row and one row per term, intercept first", () => {
    const t = call(reg, "FIT", Y, X, null) as unknown[][];
    expect(t.length).toBe(5);
    expect(t[0]).toEqual(["Term", "Transform", "Coefficient", "Std. error (HC3)", "t", "p-value", "Low (95%)", "High (95%)"]);
    expect(t.map((r) => r[0])).toEqual(["Term", "(Intercept)", "Price", "Footfall", "Promo"]);
    expect(t.map((r) => r[1])).toEqual(["Transform", "constant", "log", "log", "level"]);
    expect(t.every((r) => r.length === 8)).toBe(true);
    expect(allFinite(t)).toBe(true);
    // t = coefficient / standard error, by definition
    expect((t[2][4] as number)).toBeCloseTo((t[2][2] as number) / (t[2][3] as number), 12);
  });

  it("headers=false drops the header row; level=0.9 relabels the interval", () => {
    const t = call(reg, "FIT", Y, X, "headers=false; level=0.9") as unknown[][];
    expect(t.length).toBe(4);
    expect(t[0][0]).toBe("(Intercept)");
    const h = call(reg, "FIT", Y, X, "level=0.9") as unknown[][];
    expect(h[0][6]).toBe("Low (90%)");
  });

  it("ELASTICITY returns one number equal to the log-log coefficient, by name or by column number", () => {
    const t = call(reg, "FIT", Y, X, null) as unknown[][];
    const byName = call(reg, "ELASTICITY", Y, X, "Price", null) as unknown[][];
    const byNumber = call(reg, "ELASTICITY", Y, X, 1, null) as unknown[][];
    expect(byName).toEqual([[t[2][2]]]);
    expect(byNumber).toEqual(byName);
  });

  it("ELASTICITIES leaves the binary term's cells empty (not #N/A) and points to EFFECTS", () => {
    const t = call(reg, "ELASTICITIES", Y, X, null) as unknown[][];
    expect(t.length).toBe(4);
    expect(t[3][0]).toBe("Promo");
    // empty cells, not error values: a SUM over the Elasticity column must still work
    expect(t[3].slice(2, 6)).toEqual(["", "", "", ""]);
    expect(t[3][6]).toBe("binary: see ELX.EFFECTS");
    // a log-log elasticity is the same at every point: the column says so, not "constant" (the intercept's word)
    expect(t[1][6]).toBe("everywhere (constant elasticity)");
  });

  it("ELASTICITIES under log-level evaluates b·x̄ at the mean and says where", () => {
    const f = call(reg, "FIT", Y, X, "form=log-level") as unknown[][];
    const e = call(reg, "ELASTICITIES", Y, X, "form=log-level") as unknown[][];
    const meanPrice = price.reduce((a, b) => a + b, 0) / price.length;
    expect(e[1][2] as number).toBeCloseTo((f[2][2] as number) * meanPrice, 12);
    expect(e[1][6]).toBe(`mean Price = ${Number(meanPrice.toPrecision(6))}`);
  });

  it("EFFECTS gives 100(e^b − 1) for the binary term", () => {
    const f = call(reg, "FIT", Y, X, null) as unknown[][];
    const e = call(reg, "EFFECTS", Y, X, null) as unknown[][];
    expect(e.length).toBe(2);
    expect(e[1][0]).toBe("Promo");
    expect(e[1][1] as number).toBeCloseTo(100 * Math.expm1(f[4][2] as number), 10);
    // Kennedy's correction lowers the effect by half the variance inside the exponent
    const V = (f[4][3] as number) ** 2;
    expect(e[1][2] as number).toBeCloseTo(100 * Math.expm1((f[4][2] as number) - V / 2), 10);
  });

  it("SUMMARY is a two-column table with counts and fit statistics, and a caution", () => {
    const s = call(reg, "SUMMARY", Y, X, null) as unknown[][];
    expect(s.every((r) => r.length === 2)).toBe(true);
    expect(lookup(s, "Observations used")).toBe(10);
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(0);
    expect(String(lookup(s, "Caution"))).toMatch(/not causes/);
    expect(allFinite(s)).toBe(true);
  });

  it("ZEROS counts values, blanks, zeros and negatives per column", () => {
    const z = call(reg, "ZEROS", [["Units", "Price"], [0, 2], [null, 1.5], [-1, ""], [4, "n/a"], [5, 0]], null) as unknown[][];
    expect(z[0]).toEqual(["Column", "Values", "Blank or non-numeric", "Zeros", "Negatives", "Rows a plain log would lose"]);
    expect(z[1]).toEqual(["Units", 4, 1, 1, 1, 2]);
    expect(z[2]).toEqual(["Price", 3, 2, 1, 0, 1]);
    expect(z[3]).toEqual(["All columns (rows)", 2, 3, "", "", 3]);
  });
});

describe("cells as the host passes them", () => {
  it("blank cells as null, undefined or \"\" leave the row out and are counted", () => {
    for (const blank of [null, undefined, "", "  "]) {
      const y = rows([[...units.slice(0, 9), blank]], ["Units"]);
      const s = call(reg, "SUMMARY", y, X, null) as unknown[][];
      expect(lookup(s, "Observations used")).toBe(9);
      expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(1);
    }
  });

  it("text and error cells leave their rows out, counted", () => {
    const xs = rows([price.map((v, i) => (i === 2 ? "two" : i === 5 ? { code: "#DIV/0!" } : v)), foot, promo], ["Price", "Footfall", "Promo"]);
    const s = call(reg, "SUMMARY", Y, xs, null) as unknown[][];
    expect(lookup(s, "Observations used")).toBe(8);
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(2);
  });

  it("TRUE/FALSE count as 1/0 (a boolean promotion flag equals its 0/1 form)", () => {
    const xb = rows([price, foot, promo.map((v) => v === 1)], ["Price", "Footfall", "Promo"]);
    expect(call(reg, "FIT", Y, xb, null)).toEqual(call(reg, "FIT", Y, X, null));
  });

  it("non-finite numbers are left out like non-numeric cells, counted", () => {
    const y = rows([[NaN, Infinity, ...units.slice(2)]], ["Units"]);
    const s = call(reg, "SUMMARY", y, X, null) as unknown[][];
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(2);
  });

  it("without header rows the names are y, x1, x2 …", () => {
    const t = call(reg, "FIT", units.map((v) => [v]), rows([price, foot]), null) as unknown[][];
    expect(t.map((r) => r[0])).toEqual(["Term", "(Intercept)", "x1", "x2"]);
  });

  it("a single-row y reads data laid out across, with x one regressor per row", () => {
    const across = call(reg, "FIT", [["Units", ...units]], [["Price", ...price], ["Footfall", ...foot]], null);
    const down = call(reg, "FIT", Y, rows([price, foot], ["Price", "Footfall"]), null);
    expect(across).toEqual(down);
  });

  it("trailing rows blank in every column (a whole-column reference) are not observations", () => {
    const y = [...Y, [null], [null]];
    const x = [...X, [null, null, null], [null, null, null]];
    const s = call(reg, "SUMMARY", y, x, null) as unknown[][];
    expect(lookup(s, "Observations used")).toBe(10);
    expect(lookup(s, "Rows left out: blank or non-numeric")).toBe(0);
  });

  it("messages name sheet rows when the host gives the parameter addresses", () => {
    const y = rows([[...units.slice(0, 3), 0, ...units.slice(4)]], ["Units"]);
    const e = err(call(reg, "FIT", y, X, null, { parameterAddresses: ["Data!C4:C14", "Data!D4:F14", null] }));
    // header in row 4, data rows 5–14: the zero is the fourth data row, sheet row 8
    expect(e.message).toContain("row 8");
  });
});

describe("bad input: an error value with a message that says what to do", () => {
  const cases: [string, () => unknown, RegExp][] = [
    ["ranges of different heights", () => call(reg, "FIT", Y.slice(0, 8), X, null), /y has 7 rows of data and x has 10/],
    ["too few rows for the terms", () => call(reg, "FIT", Y.slice(0, 4), X.slice(0, 4), null), /3 usable rows are too few for 4 coefficients/],
    ["a constant column", () => call(reg, "FIT", Y, rows([price, foot.map(() => 100)], ["Price", "Footfall"]), null), /Footfall has the same value in every row/],
    ["exactly collinear columns", () => call(reg, "FIT", Y, rows([price, foot, price.map((p, i) => p * p * foot[i] ** 3)], ["Price", "Footfall", "Mix"]), null), /Mix is an exact linear combination of (the intercept, )?Price and Footfall|Mix is an exact linear combination of .*Price.*Footfall/],
    ["an all-blank range", () => call(reg, "FIT", units.map(() => [null]), X.slice(1), null), /no row has a number in y and in every x column/],
    ["zeros in y under zeros=stop", () => call(reg, "FIT", rows([[0, ...units.slice(1)]], ["Units"]), X, null), /Units has 1 value that is zero or blank \(row 2\); a log cannot take zero: use zeros=drop, zeros=shift, zeros=ihs or estimator=ppml/],
    ["a negative x under zeros=stop", () => call(reg, "FIT", Y, rows([[-1, ...price.slice(1)], foot], ["Price", "Footfall"]), null), /Price has 1 negative value \(row 2\).*levels=/],
    ["a term that does not exist", () => call(reg, "ELASTICITY", Y, X, "Prise", null), /"Prise" is not a column of x; did you mean Price\?/],
    ["a column number out of range", () => call(reg, "ELASTICITY", Y, X, 7, null), /term 7 is not a column of x/],
    ["an unknown option key", () => call(reg, "FIT", Y, X, "from=log-level"), /unknown option "from"; did you mean form\?/],
    ["an unknown option value", () => call(reg, "FIT", Y, X, "se=HC4"), /se=HC4 is not a valid choice; did you mean se=HC3\?/],
    ["a level given as a percent", () => call(reg, "FIT", Y, X, "level=95"), /level=95 must lie between 0.5 and 0.999/],
    ["more lags than the rows support", () => call(reg, "FIT", Y, X, "se=HAC; lags=9"), /lags=9 is too many for 10 rows: use at most lags=2/],
    ["a binary term asked for an elasticity", () => call(reg, "ELASTICITY", Y, X, "Promo", null), /Promo is binary.*ELX\.EFFECTS/],
    ["percent effects with y in levels", () => call(reg, "EFFECTS", Y, X, "form=level-level"), /percent effects need y in logs/],
    ["y with two columns", () => call(reg, "FIT", X, Y, null), /y must be one column/],
    ["options that are not text", () => call(reg, "FIT", Y, X, 5), /options must be text/],
  ];
  for (const [what, run, message] of cases) {
    it(what, () => {
      const e = err(run());
      expect(["#VALUE!", "#N/A"]).toContain(e.code);
      expect(e.message).toMatch(message);
    });
  }

  it("zeros=drop leaves the zero rows out and counts them", () => {
    const y = rows([[0, 0, ...units.slice(2)]], ["Units"]);
    const s = call(reg, "SUMMARY", y, X, "zeros=drop") as unknown[][];
    expect(lookup(s, "Observations used")).toBe(8);
    expect(lookup(s, "Rows left out: zero or blank under a log")).toBe(2);
  });

  it("zeros=shift and zeros=ihs transform only the column with zeros and say so", () => {
    const y = rows([[0, ...units.slice(1)]], ["Units"]);
    const sh = call(reg, "FIT", y, X, "zeros=shift; shift=0.5") as unknown[][];
    expect(sh.map((r) => r[1])).toEqual(["Transform", "constant", "log", "log", "level"]);
    const ys = call(reg, "ELASTICITIES", y, X, "zeros=shift; shift=0.5") as unknown[][];
    expect(String(ys[1][6])).toMatch(/^mean Units = /);
    const ih = call(reg, "FIT", Y, rows([[0, ...price.slice(1)], foot, promo], ["Price", "Footfall", "Promo"]), "zeros=ihs") as unknown[][];
    expect(ih.map((r) => r[1])).toEqual(["Transform", "constant", "asinh", "log", "level"]);
    const neg = err(call(reg, "FIT", rows([[-2, ...units.slice(1)]], ["Units"]), X, "zeros=shift; shift=1"));
    expect(neg.message).toMatch(/negative value \(row 2\).*at or below −1.*data error.*zeros=ihs/);
    expect(neg.message).not.toMatch(/larger shift/);
  });

  it("never returns NaN or Infinity as a number, even for an exact fit", () => {
    const x1 = [1, 2, 3, 4, 5, 6];
    const y = x1.map((v) => [Math.exp(1 + 2 * Math.log(v))]);
    for (const id of ["FIT", "ELASTICITIES", "SUMMARY"]) {
      const t = call(reg, id, y, x1.map((v) => [v]), null);
      expect(Array.isArray(t)).toBe(true); // a table (with error cells where a number is undefined), not one error
      expect(allFinite(t)).toBe(true);
    }
  });
});
