/**
 * Through the host's door, the diagnostic, prediction and group functions: registration, shapes and the messages an
 * analyst reads on bad input. Data invented for shapes and messages; the statistical references are
 * in test/reference (R's lmtest, sandwich, MASS, glm).
 */
import { call, HostError, loadFunctions, lookup, rows } from "../harness/loadFunctions";
import { Rng } from "../simulation/rng";

const reg = loadFunctions();
const units = [120, 95, 130, 80, 150, 110, 90, 140, 100, 125, 105, 135];
const price = [2.0, 2.4, 1.9, 2.8, 1.7, 2.1, 2.5, 1.8, 2.3, 2.0, 2.2, 1.9];
const foot = [100, 98, 105, 90, 110, 101, 95, 108, 97, 103, 99, 107];
const promo = [0, 0, 1, 0, 1, 0, 0, 1, 0, 1, 0, 1];
const Y = rows([units], ["Units"]);
const X = rows([price, foot, promo], ["Price", "Footfall", "Promo"]);

function err(v: unknown): HostError {
  if (!(v instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(v)}`);
  return v;
}

describe("registration of the later functions", () => {
  it.each(["SMEARING", "PREDICT", "HETEROTEST", "NORMALTEST", "TESTS", "FORMCHECK", "BYGROUP"])("%s is registered", (id) => {
    expect(reg.has(id)).toBe(true);
  });
});

describe("shapes", () => {
  it("SMEARING and the p-value functions return one number", () => {
    for (const [id, args] of [["SMEARING", [null]], ["HETEROTEST", [null, null]], ["NORMALTEST", [null]]] as const) {
      const v = call(reg, id, Y, X, ...args) as unknown[][];
      expect(v.length).toBe(1);
      expect(v[0].length).toBe(1);
      expect(typeof v[0][0]).toBe("number");
    }
  });

  it("PREDICT keeps one row per new_x row; a header row in new_x matches columns by name and heads the output", () => {
    const plain = call(reg, "PREDICT", Y, X, [[2, 100, 0], [1.8, 104, 1]], null) as unknown[][];
    expect(plain.length).toBe(2);
    expect(plain[0].length).toBe(1);
    const named = call(reg, "PREDICT", Y, X, [["Promo", "Price", "Footfall"], [0, 2, 100], [1, 1.8, 104]], "interval=mean") as unknown[][];
    expect(named[0]).toEqual(["Predicted Units", "Low (95%)", "High (95%)"]);
    expect(named[1][0]).toBeCloseTo(plain[0][0] as number, 12);
    expect((named[1][1] as number) < (named[1][0] as number) && (named[1][0] as number) < (named[1][2] as number)).toBe(true);
  });

  it("PREDICT gives an error for the bad row only", () => {
    const out = call(reg, "PREDICT", Y, X, [[2, 100, 0], [0, 100, 0], [null, 100, 1], [1.8, 104, 1]], null) as unknown[][];
    expect(typeof out[0][0]).toBe("number");
    expect(err(out[1][0]).message).toMatch(/new_x row 2: Price is zero/);
    expect(err(out[2][0]).message).toMatch(/new_x row 3: Price is blank/);
    expect(typeof out[3][0]).toBe("number");
  });

  it("TESTS has six tests with statistic, df, p-value and a reading", () => {
    const t = call(reg, "TESTS", Y, X, null) as unknown[][];
    expect(t[0]).toEqual(["Test", "Statistic", "df", "p-value", "Reading at the 5% level"]);
    expect(t.map((r) => r[0]).slice(1)).toEqual([
      "Breusch–Pagan (Koenker, studentized)", "Breusch–Pagan (original)", "White", "White (special form)", "Jarque–Bera", "RESET (fitted², fitted³)",
    ]);
    expect(t[6][2]).toBe("2, 6"); // RESET F on 2 and n − k − 2 = 12 − 4 − 2 df
    for (const r of t.slice(1)) expect(String(r[4])).toMatch(/^(rejected|not rejected): /);
  });

  it("SUMMARY carries the retransformation factors, VIFs and the condition number", () => {
    const s = call(reg, "SUMMARY", Y, X, null) as unknown[][];
    for (const label of ["Smearing factor (Duan)", "Normal-theory factor", "Largest VIF", "VIF: Price", "VIF: Footfall", "VIF: Promo", "Condition number"]) {
      expect(typeof lookup(s, label)).toBe("number");
    }
    expect(lookup(s, "Largest VIF")).toBe(Math.max(lookup(s, "VIF: Price") as number, lookup(s, "VIF: Footfall") as number, lookup(s, "VIF: Promo") as number));
  });

  it("FORMCHECK reads the evidence in one of four words", () => {
    const f = call(reg, "FORMCHECK", Y, X, null) as unknown[][];
    expect(f[0]).toEqual(["Check", "y in logs", "y in levels"]);
    expect(["logs preferred", "levels preferred", "both rejected", "no clear choice"]).toContain(lookup(f, "Reading"));
  });

  it("BYGROUP gives a row per key in first-appearance order, and a row for blank keys", () => {
    const keys = [["Store"], ...units.map((_, i) => [i === 5 ? "" : i % 2 === 0 ? "North" : "South"])];
    const t = call(reg, "BYGROUP", keys, rows([[...units, ...units]], ["Units"]).slice(0, 13), X, "se=HC1") as unknown[][];
    expect(t.map((r) => r[0])).toEqual(["Group", "North", "South", "(blank key)"]);
    expect(t[3][1]).toBe(1);
  });
});

describe("bad input", () => {
  const cases: [string, () => unknown, RegExp][] = [
    ["new_x of the wrong width", () => call(reg, "PREDICT", Y, X, [[2, 100]], null), /new_x has 2 columns but x has 3/],
    ["new_x with an unknown header", () => call(reg, "PREDICT", Y, X, [["Prise", "Footfall", "Promo"], [2, 100, 0]], null), /new_x has no column Price|"Prise" is not a column of x; did you mean Price/],
    ["an unknown heteroskedasticity test", () => call(reg, "HETEROTEST", Y, X, "whit", null), /test "whit" is not known; did you mean white\?/],
    ["White with more terms than rows", () => call(reg, "HETEROTEST", Y.slice(0, 9), rows([price, foot, promo, price.map((p, i) => p * foot[i] % 7 + 1)], ["Price", "Footfall", "Promo", "Other"]).slice(0, 9), "white", null), /White's test needs \d+ auxiliary terms.*white-special/],
    ["a perfect fit leaves tests undefined", () => call(reg, "NORMALTEST", [1, 2, 3, 4, 5, 6].map((v) => [Math.exp(1 + 2 * Math.log(v)) * 1]), [1, 2, 3, 4, 5, 6].map((v) => [v]), null), /exact|undefined/],
    ["FORMCHECK with zeros in y", () => call(reg, "FORMCHECK", rows([[0, ...units.slice(1)]], ["Units"]), X, null), /Box–Cox.*above zero.*zeros=drop.*estimator=ppml/],
    ["tests under ppml", () => call(reg, "TESTS", Y, X, "estimator=ppml"), /least-squares fits.*drop estimator=ppml/],
    ["negative y under ppml", () => call(reg, "FIT", rows([[-3, ...units.slice(1)]], ["Units"]), X, "estimator=ppml"), /Units has 1 negative value \(row 2\); PPML/],
    ["HC3 under ppml", () => call(reg, "FIT", Y, X, "estimator=ppml; se=HC3"), /se=HC3 is not offered with estimator=ppml/],
    ["an individual interval under ppml", () => (call(reg, "PREDICT", Y, X, [[2, 100, 0]], "estimator=ppml; interval=individual") as unknown[][])[0][0], /PPML models only the mean: use interval=mean/],
    ["keys of another height", () => call(reg, "BYGROUP", [["a"], ["b"]], Y, X, null), /keys has 2 rows but y has 13/],
  ];
  for (const [what, run, message] of cases) {
    it(what, () => {
      const e = err(run());
      expect(["#VALUE!", "#N/A"]).toContain(e.code);
      expect(e.message).toMatch(message);
    });
  }

  it("FORMCHECK with zeros=drop compares both forms on the rows above zero", () => {
    const y = rows([[0, ...units.slice(1)]], ["Units"]);
    const dropped = call(reg, "FORMCHECK", y, X, "zeros=drop") as unknown[][];
    const by = call(reg, "FORMCHECK", rows([units.slice(1)], ["Units"]), [X[0], ...X.slice(2)], null) as unknown[][];
    expect(lookup(dropped, "Box–Cox λ̂") as number).toBeCloseTo(lookup(by, "Box–Cox λ̂") as number, 9);
  });

  it("under ppml the zeros in y are kept and counted", () => {
    const y = rows([[0, 0, ...units.slice(2)]], ["Units"]);
    const s = call(reg, "SUMMARY", y, X, "estimator=ppml") as unknown[][];
    expect(lookup(s, "Zeros kept in Units")).toBe(2);
    expect(lookup(s, "Observations used")).toBe(12);
    const f = call(reg, "FIT", y, X, "estimator=ppml") as unknown[][];
    expect(f[0][4]).toBe("z");
  });

  it("the existence check names a regressor that is zero wherever y is above zero", () => {
    const y = rows([[0, 0, 0, ...units.slice(3)]], ["Units"]);
    const flag = units.map((_, i) => (i < 2 ? 1 : 0));
    const e = err(call(reg, "FIT", y, rows([price, flag], ["Price", "Closed"]), "estimator=ppml"));
    expect(e.message).toMatch(/PPML estimates do not exist \(Santos Silva and Tenreyro 2010\): Closed is zero in every row where Units is above zero/);
  });
});

describe("shift and asinh on y say which transform the elasticity used", () => {
  it("the Evaluated at column names log(v+c) or asinh for y", () => {
    const y = rows([[0, ...units.slice(1)]], ["Units"]);
    const sh = call(reg, "ELASTICITIES", y, X, "zeros=shift; shift=0.5") as unknown[][];
    expect(String(sh[1][6])).toMatch(/^mean Units = [\d.]+, Units taken as log\(v\+0\.5\)$/);
    const ih = call(reg, "ELASTICITIES", y, X, "zeros=ihs") as unknown[][];
    expect(String(ih[1][6])).toMatch(/Units taken as asinh$/);
  });
});

describe("work that would freeze the host is refused with a way out", () => {
  it("HAC with very many lags on many rows", () => {
    const r = new Rng(3);
    const n = 40000;
    const y: unknown[][] = [["Units"]];
    const x: unknown[][] = [["Price", "Footfall", "Income", "Rain", "Heat"]];
    for (let i = 0; i < n; i++) {
      const p = Math.exp(0.2 * r.normal());
      y.push([Math.exp(3 - p + 0.1 * r.normal())]);
      x.push([p, Math.exp(0.1 * r.normal()), Math.exp(0.1 * r.normal()), Math.exp(0.1 * r.normal()), Math.exp(0.1 * r.normal())]);
    }
    // 40,000 rows × 6 terms² × 4,001 lags ≈ 5.8 billion operations (4,000 lags: the most 40,000 rows support)
    const e = err(call(reg, "FIT", y, x, "se=HAC; lags=4000"));
    expect(e.message).toMatch(/HAC with 4000 lags on 40000 rows and 6 terms needs about 5\.8 billion operations.*use fewer lags/);
    // the same data with the default lag length are fine
    expect(Array.isArray(call(reg, "FIT", y, x, "se=HAC"))).toBe(true);
  });
});
