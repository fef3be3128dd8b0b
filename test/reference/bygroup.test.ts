/**
 * ELX.BYGROUP through the built bundle: each group's row equals ELX.ELASTICITIES (and SUMMARY's R²
 * or pseudo R², HETEROTEST's Breusch–Pagan p) called on that group's rows alone, exactly (1e-12
 * relative), on open panel datasets and on the demo data; one group against R directly; groups that
 * cannot be fitted carry their reason while the others still come.
 *
 * Sources:
 *   datasets::CO2 (uptake ~ conc by Plant) and datasets::Orange (circumference ~ age by Tree), as
 *   written into test/reference/ppml.json by `Rscript test/reference/scripts/ppml.R` (R 4.2.2,
 *   sandwich 3.0.2, lmtest 0.9.40). R numbers for Plant "Qn1" in that JSON ("bygroup"):
 *     m <- lm(log(uptake) ~ log(conc), data = subset(CO2, Plant == "Qn1"))
 *     coef(m)[2]; sqrt(diag(sandwich::vcovHC(m, type = "HC3")))[2]; summary(m)$r.squared;
 *     lmtest::bptest(m)$p.value
 *     glm(uptake ~ log(conc), family = quasipoisson, subset, control = glm.control(epsilon = 1e-14,
 *       maxit = 200), start = coef(m0)); sqrt(diag(sandwich::vcovHC(., type = "HC1")))[2];
 *       cor(uptake, fitted)^2
 *   data/demo.json: the invented demo data (scripts/make-demo-data.js, seeded); only self-consistency
 *   (BYGROUP against ELASTICITIES on the same rows) is checked on it.
 * The failing-group cases relabel keys of the CO2 and demo rows (documented at each case); the data
 * themselves are unchanged.
 */
import * as fs from "fs";
import * as path from "path";
import { call, loadFunctions, rows, HostError, type CellFn } from "../harness/loadFunctions";

const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "ppml.json"), "utf8")) as {
  r_version: string;
  bygroup: {
    keys: string[];
    uptake: number[];
    conc: number[];
    group: string;
    ols: { n: number; elasticity: number; se_hc3: number; r_squared: number; bp_p: number };
    ppml: { elasticity: number; se_hc1: number; pseudo_r2: number };
    orange: { tree: number[]; age: number[]; circumference: number[] };
  };
};
const demo = JSON.parse(fs.readFileSync(path.join(__dirname, "../../data/demo.json"), "utf8")) as {
  columns: string[];
  rows: unknown[][];
};

const EXACT = 1e-12;
let reg: Map<string, CellFn>;
let worstExact = 0;
let worstExactWhere = "";
const worstR = new Map<string, number>();

beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  // eslint-disable-next-line no-console
  console.log(`BYGROUP against single-group calls: worst relative difference ${worstExact.toExponential(2)} (${worstExactWhere})\n` +
    `BYGROUP Qn1 against R (${ref.r_version}):\n${[...worstR.entries()].map(([k, v]) => `  ${k.padEnd(28)} ${v.toExponential(2)}`).join("\n")}`);
});

function table(result: unknown, where: string): unknown[][] {
  if (result instanceof HostError) throw new Error(`${where}: the function returned ${result.code} ${result.message}`);
  if (!Array.isArray(result)) throw new Error(`${where}: expected a 2-D array, got ${JSON.stringify(result)}`);
  return result as unknown[][];
}

function value(t: unknown[][], label: string): unknown {
  const row = t.find((r) => r[0] === label);
  if (!row) throw new Error(`no row labelled ${label}; labels: ${t.map((r) => r[0]).join(" | ")}`);
  return row[1];
}

/** Same number to 1e-12 relative (the group's row and the single-group call share the code path). */
function same(actual: unknown, expected: unknown, where: string): void {
  if (expected === "") {
    // a binary term: ELASTICITIES leaves the cell empty; BYGROUP too, or says it is binary in that group
    expect(actual === "" || actual === "binary in this group: see ELX.EFFECTS").toBe(true);
    return;
  }
  if (expected instanceof HostError) {
    expect(actual).toBeInstanceOf(HostError);
    expect((actual as HostError).code).toBe(expected.code);
    return;
  }
  if (typeof actual !== "number" || typeof expected !== "number" || !Number.isFinite(actual) || !Number.isFinite(expected)) {
    throw new Error(`${where}: expected numbers, got ${JSON.stringify(actual)} and ${JSON.stringify(expected)}`);
  }
  const d = Math.abs(actual - expected);
  const rel = expected === 0 ? d : d / Math.abs(expected);
  if (rel > worstExact) {
    worstExact = rel;
    worstExactWhere = where;
  }
  if (!(d <= EXACT * Math.abs(expected) || d === 0)) throw new Error(`${where}: BYGROUP ${actual}, single-group call ${expected} (rel ${rel.toExponential(3)})`);
}

function againstR(actual: unknown, expected: number, rel: number, what: string): void {
  if (typeof actual !== "number") throw new Error(`${what}: expected a number, got ${JSON.stringify(actual)}`);
  const r = Math.abs(actual - expected) / Math.abs(expected);
  worstR.set(what, Math.max(worstR.get(what) ?? 0, r));
  if (!(r <= rel)) throw new Error(`${what}: got ${actual}, R gives ${expected} (rel ${r.toExponential(3)}, tolerance ${rel})`);
}

interface Panel {
  keys: unknown[];
  y: unknown[];
  yName: string;
  x: unknown[][];
  xNames: string[];
}

function keyText(v: unknown): string | null {
  if (v === null || v === undefined) return null;
  if (typeof v === "string") return v.trim() === "" ? null : v.trim();
  return String(v);
}

/** Distinct keys in first-appearance order, with their row indices. */
function groupsOf(keys: unknown[]): Map<string, number[]> {
  const g = new Map<string, number[]>();
  keys.forEach((k, i) => {
    const t = keyText(k);
    if (t === null) return;
    if (!g.has(t)) g.set(t, []);
    (g.get(t) as number[]).push(i);
  });
  return g;
}

function ranges(p: Panel, idx?: number[]): { y: unknown[][]; x: unknown[][] } {
  const pick = <T>(a: T[]) => (idx ? idx.map((i) => a[i]) : a);
  return { y: rows([pick(p.y)], [p.yName]), x: rows(p.x.map(pick), p.xNames) };
}

/**
 * Calls BYGROUP and checks every fitted group's row against ELASTICITIES, SUMMARY and HETEROTEST on
 * that group's rows alone. Returns the BYGROUP table and the rows of the groups that could not be fitted.
 */
function checkAgainstSingleGroups(p: Panel, options: string | null, label: string, binaryTerms: string[] = []): { t: unknown[][]; failed: Map<string, unknown[]> } {
  const { y, x } = ranges(p);
  const t = table(call(reg, "BYGROUP", rows([p.keys], ["Key"]), y, x, options), `BYGROUP ${label}`);
  const ppml = (options ?? "").includes("estimator=ppml");
  const header = ["Group", "Observations"];
  p.xNames.forEach((n) => header.push(`Elasticity: ${n}${binaryTerms.includes(n) ? " (binary: see ELX.EFFECTS)" : ""}`, `Std. error: ${n}`));
  header.push(ppml ? "Pseudo R²" : "R²");
  if (!ppml) header.push("Breusch–Pagan p");
  expect(t[0]).toEqual(header);
  const groups = groupsOf(p.keys);
  const blanks = p.keys.filter((k) => keyText(k) === null).length;
  expect(t.length).toBe(1 + groups.size + (blanks > 0 ? 1 : 0));
  expect(t.slice(1, 1 + groups.size).map((r) => r[0])).toEqual([...groups.keys()]);
  const failed = new Map<string, unknown[]>();
  [...groups.entries()].forEach(([key, idx], g) => {
    const row = t[g + 1];
    expect(row.length).toBe(header.length);
    if (typeof row[2] === "string" && row[2].startsWith("cannot fit: ")) {
      expect(row.slice(3).every((c) => c === "")).toBe(true);
      failed.set(key, row);
      return;
    }
    const where = `${label} group ${key}`;
    const sub = ranges(p, idx);
    const e = table(call(reg, "ELASTICITIES", sub.y, sub.x, options), `ELASTICITIES ${where}`);
    const s = table(call(reg, "SUMMARY", sub.y, sub.x, options), `SUMMARY ${where}`);
    expect(row[1]).toBe(value(s, "Observations used"));
    p.xNames.forEach((n, j) => {
      same(row[2 + 2 * j], e[j + 1][2], `${where} elasticity ${n}`);
      same(row[3 + 2 * j], e[j + 1][3], `${where} std. error ${n}`);
    });
    if (ppml) {
      same(row[2 + 2 * p.xNames.length], value(s, "Pseudo R² (squared correlation of y and fitted)"), `${where} pseudo R²`);
    } else {
      same(row[2 + 2 * p.xNames.length], value(s, "R²"), `${where} R²`);
      const bp = table(call(reg, "HETEROTEST", sub.y, sub.x, "bp", options), `HETEROTEST ${where}`);
      same(row[3 + 2 * p.xNames.length], bp[0][0], `${where} Breusch–Pagan p`);
    }
  });
  if (blanks > 0) {
    const last = t[t.length - 1];
    expect(last.slice(0, 3)).toEqual(["(blank key)", blanks, "rows whose key is blank or an error are left out"]);
    expect(last.slice(3).every((c) => c === "")).toBe(true);
  }
  return { t, failed };
}

const co2 = (): Panel => ({
  keys: ref.bygroup.keys.slice(),
  y: ref.bygroup.uptake,
  yName: "uptake",
  x: [ref.bygroup.conc],
  xNames: ["conc"],
});

function demoPanel(xNames: string[]): Panel {
  const col = (n: string) => demo.rows.map((r) => {
    const v = r[demo.columns.indexOf(n)];
    return v === null ? "" : v; // a blank cell arrives as ""
  });
  return { keys: col("Store"), y: col("Units"), yName: "Units", x: xNames.map(col), xNames };
}

describe("BYGROUP on datasets::CO2 (uptake ~ conc by Plant)", () => {
  it("12 plants in first-appearance order; each row equals ELASTICITIES/SUMMARY/HETEROTEST on that plant's rows", () => {
    const { t, failed } = checkAgainstSingleGroups(co2(), null, "CO2 log-log");
    expect(failed.size).toBe(0);
    expect(t.length).toBe(13);
  });

  it("honours the options: se=HC1, at=median, form=log-level, level-level, estimator=ppml", () => {
    for (const o of ["se=HC1", "se=classical; at=median", "form=log-level", "form=level-level; at=median", "estimator=ppml", "estimator=ppml; se=HC0; form=log-level"]) {
      const { failed } = checkAgainstSingleGroups(co2(), o, `CO2 ${o}`);
      expect(failed.size).toBe(0);
    }
  });

  it("Plant Qn1 against R: lm(log(uptake) ~ log(conc)) with HC3, R², bptest; glm quasipoisson with HC1", () => {
    const b = ref.bygroup;
    const { y, x } = ranges(co2());
    const k = rows([b.keys], ["Plant"]);
    const t = table(call(reg, "BYGROUP", k, y, x, null), "BYGROUP CO2");
    const row = t.find((r) => r[0] === b.group) as unknown[];
    expect(row[1]).toBe(b.ols.n);
    againstR(row[2], b.ols.elasticity, 1e-9, "OLS elasticity");
    againstR(row[3], b.ols.se_hc3, 1e-9, "OLS HC3 std. error");
    againstR(row[4], b.ols.r_squared, 1e-9, "OLS R²");
    againstR(row[5], b.ols.bp_p, 1e-9, "Breusch–Pagan p");
    const tp = table(call(reg, "BYGROUP", k, y, x, "estimator=ppml"), "BYGROUP CO2 ppml");
    const rp = tp.find((r) => r[0] === b.group) as unknown[];
    againstR(rp[2], b.ppml.elasticity, 1e-8, "PPML elasticity");
    againstR(rp[3], b.ppml.se_hc1, 1e-7, "PPML HC1 std. error");
    againstR(rp[4], b.ppml.pseudo_r2, 1e-8, "PPML pseudo R²");
  });
});

describe("BYGROUP on datasets::Orange with numeric keys (circumference ~ age by Tree)", () => {
  it("numeric keys become text; each row equals ELASTICITIES on that tree's rows", () => {
    const o = ref.bygroup.orange;
    const p: Panel = { keys: o.tree, y: o.circumference, yName: "circumference", x: [o.age], xNames: ["age"] };
    const { t, failed } = checkAgainstSingleGroups(p, null, "Orange");
    expect(failed.size).toBe(0);
    expect(t.slice(1).map((r) => r[0])).toEqual(["1", "2", "3", "4", "5"]);
    expect(checkAgainstSingleGroups(p, "estimator=ppml", "Orange ppml").failed.size).toBe(0);
  });
});

describe("BYGROUP on the demo data (Units by Store)", () => {
  it("OLS log-log, zeros=drop: Price, Footfall elasticities; Promo (binary) empty cells, its header says where to look; blank cells left out", () => {
    const p = demoPanel(["Price", "Footfall", "Promo"]);
    const { t, failed } = checkAgainstSingleGroups(p, "zeros=drop", "demo OLS", ["Promo"]);
    expect(failed.size).toBe(0);
    expect(t.length).toBe(13);
    expect(t[0][6]).toBe("Elasticity: Promo (binary: see ELX.EFFECTS)");
    for (const r of t.slice(1)) expect(r.slice(6, 8)).toEqual(["", ""]); // not #N/A: sums over the column still work
    // 1248 rows, 30 closed weeks (Units 0, Footfall 0) and 2 stock-outs dropped by the log, 3 blank cells
    expect(t.slice(1).reduce((s, r) => s + (r[1] as number), 0)).toBe(1248 - 32 - 3);
  });

  it("estimator=ppml, zeros=drop: the stock-out zeros are kept, closed weeks (Footfall 0) dropped", () => {
    const p = demoPanel(["Price", "Footfall", "Promo"]);
    const { t, failed } = checkAgainstSingleGroups(p, "estimator=ppml; zeros=drop", "demo PPML", ["Promo"]);
    expect(failed.size).toBe(0);
    expect(t.slice(1).reduce((s, r) => s + (r[1] as number), 0)).toBe(1248 - 30 - 3);
  });
});

describe("BYGROUP groups that cannot be fitted carry reasons; the others still come", () => {
  it("a key with one row, a group whose regressor has no variation, blank keys (CO2, keys relabelled)", () => {
    const p = co2();
    // the first Qn1 row gets its own key; the conc = 95 rows of plants Mc1..Mc3 get the key "conc95"
    p.keys[0] = "lone";
    ref.bygroup.conc.forEach((c, i) => {
      if (c === 95 && String(p.keys[i]).startsWith("Mc")) p.keys[i] = "conc95";
    });
    p.keys[10] = "";
    p.keys[20] = null;
    p.keys[30] = "   ";
    for (const o of [null, "estimator=ppml"]) {
      const { t, failed } = checkAgainstSingleGroups(p, o, `CO2 relabelled ${o ?? "ols"}`);
      expect([...failed.keys()]).toEqual(["lone", "conc95"]);
      const lone = failed.get("lone") as unknown[];
      expect(lone[1]).toBe(1);
      expect(lone[2]).toContain("too few");
      const flat = failed.get("conc95") as unknown[];
      expect(flat[1]).toBe(3);
      expect(flat[2]).toContain("conc has the same value in every row");
      // 12 plants + lone + conc95 + the blank-key row
      expect(t.length).toBe(1 + 14 + 1);
      expect(t[t.length - 1][1]).toBe(3);
    }
  });

  it("a group whose y is all zero under ppml (demo: the zero-sales weeks relabelled 'closed')", () => {
    // Price only: in the zero weeks of this draw Promo is 0 as well, so a Promo column would equal y
    // there and be refused for that reason first.
    const p = demoPanel(["Price"]);
    p.keys = p.keys.map((k, i) => (p.y[i] === 0 ? "closed" : k));
    const { t, failed } = checkAgainstSingleGroups(p, "estimator=ppml", "demo ppml closed");
    expect([...failed.keys()]).toEqual(["closed"]);
    const closed = failed.get("closed") as unknown[];
    expect(closed[1]).toBe(32);
    expect(closed[2]).toContain("Units is zero in every row used");
    expect(t.length).toBe(1 + 13);
  });

  it("a keys range of another height is an error", () => {
    const p = co2();
    const { y, x } = ranges(p);
    const k = rows([p.keys], ["Plant"]);
    for (const keys of [k.slice(0, -1), [...k, ["extra"]], k.slice(0, 40)]) {
      const r = call(reg, "BYGROUP", keys, y, x, null);
      expect(r).toBeInstanceOf(HostError);
      expect((r as HostError).code).toBe("#VALUE!");
      expect((r as HostError).message).toContain(`keys has ${keys.length} rows but y has ${y.length}`);
    }
  });

  it("keys of two columns are an error", () => {
    const p = co2();
    const { y, x } = ranges(p);
    const r = call(reg, "BYGROUP", rows([p.keys, p.keys], ["A", "B"]), y, x, null);
    expect(r).toBeInstanceOf(HostError);
    expect((r as HostError).message).toContain("keys must be one column");
  });
});
