/**
 * The fit cache: one fit per distinct content (the host passes fresh arrays on every call), and the
 * options parser. No statistics here.
 */
import { getFit, clearCache, cacheStats } from "../../functions/engine/model";
import { hashCells } from "../../functions/engine/cache";
import { parseOptions, seTypeOf, modelKey } from "../../functions/engine/options";
import { ElxProblem } from "../../functions/engine/problems";

const yRows = () => [["Units"], [10], [12], [9], [15], [20], [14], [11]];
const xRows = () => [["Price", "Promo"], [2, 0], [1.8, 1], [2.2, 0], [1.5, 1], [1.2, 1], [1.6, 0], [1.9, 1]];

describe("fit cache keyed by content", () => {
  beforeEach(() => clearCache());

  it("equal content in fresh arrays reuses the same fit object", () => {
    const o = parseOptions("se=HC3");
    const a = getFit({ y: yRows(), x: xRows(), options: o, yOrigin: null, xOrigin: null });
    const b = getFit({ y: yRows(), x: xRows(), options: parseOptions("se=HC1; level=0.9; at=median"), yOrigin: null, xOrigin: null });
    expect(b).toBe(a); // se, level and at are read from the fit, not part of it
    expect(cacheStats().hits).toBe(1);
  });

  it("a changed cell, a changed form or a changed origin gives a new fit", () => {
    const o = parseOptions("");
    const a = getFit({ y: yRows(), x: xRows(), options: o, yOrigin: null, xOrigin: null });
    const y2 = yRows();
    y2[3][0] = 9.000000001;
    expect(getFit({ y: y2, x: xRows(), options: o, yOrigin: null, xOrigin: null })).not.toBe(a);
    expect(getFit({ y: yRows(), x: xRows(), options: parseOptions("form=log-level"), yOrigin: null, xOrigin: null })).not.toBe(a);
    expect(getFit({ y: yRows(), x: xRows(), options: o, yOrigin: { row: 3, column: 2 }, xOrigin: null })).not.toBe(a);
  });

  it("0, blank (null), \"\" and FALSE in the same cell are different content: four fits, none reused", () => {
    // level-level, so that a 0 is a valid observation rather than a refusal under a log
    const o = parseOptions("form=level-level");
    const fits = [0, null, "", false].map((cell) => {
      const y = yRows() as unknown[][];
      y[2][0] = cell;
      return getFit({ y, x: xRows(), options: o, yOrigin: null, xOrigin: null });
    });
    expect(new Set(fits).size).toBe(4);
    expect(cacheStats()).toMatchObject({ hits: 0, misses: 4, entries: 4 });
    // the 0 and FALSE (read as 0) are observations; the blank and "" leave their row out
    expect(fits.map((f) => f.n)).toEqual([7, 6, 6, 7]);
    expect(hashCells([[0]])).not.toBe(hashCells([[null]]));
    expect(hashCells([[null]])).not.toBe(hashCells([[""]]));
    expect(hashCells([[0]])).not.toBe(hashCells([[false]]));
  });

  it("a problem is cached too and thrown again for the same input", () => {
    const y = yRows();
    y[1][0] = 0;
    const run = () => getFit({ y, x: xRows(), options: parseOptions(""), yOrigin: null, xOrigin: null });
    expect(run).toThrow(ElxProblem);
    expect(run).toThrow(/zero or blank/);
    expect(cacheStats().hits).toBe(1);
  });
});

describe("options text", () => {
  it("keys and values are case-insensitive and spaces are ignored", () => {
    const o = parseOptions(" FORM = Log-Level ;SE=hac; Lags = 3 ; level=0.9 ; Intercept=FALSE ");
    expect([o.form, o.se, o.lags, o.level, o.intercept]).toEqual(["log-level", "HAC", 3, 0.9, false]);
  });

  it("defaults: log-log, HC3 for OLS and HC1 for PPML, 95%", () => {
    expect(parseOptions("").form).toBe("log-log");
    expect(seTypeOf(parseOptions(""))).toBe("HC3");
    expect(seTypeOf(parseOptions("estimator=ppml"))).toBe("HC1");
    expect(parseOptions(null).level).toBe(0.95);
  });

  it("only model options enter the cache key", () => {
    expect(modelKey(parseOptions("se=HC0; level=0.9"))).toBe(modelKey(parseOptions("")));
    expect(modelKey(parseOptions("zeros=shift; shift=2"))).not.toBe(modelKey(parseOptions("zeros=shift; shift=1")));
  });

  it.each([
    ["lags=-1", /whole number/],
    ["lags=2.5", /whole number/],
    ["shift=0", /above 0/],
    ["level=abc", /not a number/],
    ["se", /not of the form key=value/],
    ["se=HC3; se=HC1", /given twice/],
    ["at=middle", /did you mean at=median/],
    ["zeros=keep", /valid: stop, drop, shift, ihs/],
  ])("%s is refused with a hint", (text, message) => {
    expect(() => parseOptions(text)).toThrow(message);
  });
});
