/**
 * estimator=2sls and ELX.IVCHECK through the built bundle (dist/functions.js), with the options as an
 * analyst types them, against R.
 *
 * Sources: test/reference/iv.json, written by `Rscript test/reference/scripts/iv.R` (R's AER::ivreg
 * with sandwich; versions and commands in the JSON), on AER's open datasets:
 *   - CigarettesSW 1995 (cig95), log packs on log real price instrumented by the sales tax and the
 *     cigarette tax (over-identified), log real income exogenous; the same weighted by population
 *     (cig95w, ivreg(weights =)); both years clustered by state (cigpanel, vcovCL(type = "HC1"));
 *     without an intercept (cig95_noint, where the Sargan statistic is n·e'P_Z e/e'e, computed in R);
 *   - PSID1976 participants (mroz): log wage on education (instrumented by the parents' education)
 *     in a log-level model, read as percent effects through ELX.EFFECTS: 100(e^b − 1) and Kennedy's
 *     (1981) 100(e^(b − V/2) − 1) from R's b and standard error; two endogenous regressors (mroz_two);
 *   - CigarettesSW both years with state fixed effects and errors clustered by state (the JSON's
 *     "absorbed" entry): ivreg with factor(state) in both parts; vcovCL(type = "HC0", cadjust = TRUE)
 *     times (n − 1)/(n − p), p the slopes, since the state effects are nested in the clusters.
 * The cells get y and x in levels and take the logs themselves (form=log-log with levels=tdiff,ctax
 * for the tax instruments, which R enters in levels; y1995 is binary and stays in levels), so the
 * inputs are exp of the JSON's logged columns.
 * Tolerances: coefficients 1e-10 relative; standard errors, first-stage F, Wu–Hausman and Sargan 1e-9.
 */
import * as fs from "fs";
import * as path from "path";
import { call, expectClose as close, loadFunctions, lookup, rows, HostError, type CellFn } from "../harness/loadFunctions";

interface Diag {
  row: string;
  df1: number;
  df2: number | null;
  statistic: number;
  p: number;
}
interface IvCase {
  n: number;
  intercept: boolean;
  y: number[];
  x_names: string[];
  x: number[][];
  endogenous: string[];
  instrument_names: string[];
  instruments: number[][];
  weights: number[] | null;
  clusters: string[] | null;
  coefficients: number[];
  se: Record<string, number[]>;
  hac_lags: number;
  diagnostics: Record<string, Diag[]>;
  partial_r2: number[];
  sargan_uncentred: number | null;
  sargan_uncentred_p: number | null;
}
interface FeCase {
  n: number;
  absorbed: number;
  y: number[];
  x_names: string[];
  x: number[][];
  instrument_names: string[];
  instruments: number[][];
  state: string[];
  weights: number[] | null;
  coefficients: number[];
  se: Record<string, number[]>;
  diagnostics: Record<string, Diag[]>;
  r2: number;
}
const ref = JSON.parse(fs.readFileSync(path.join(__dirname, "iv.json"), "utf8")) as {
  cases: Record<string, IvCase>;
  absorbed: Record<string, FeCase>;
};

const COEF = 1e-10;
const STAT = 1e-9;
let reg: Map<string, CellFn>;
const worst = new Map<string, number>();

beforeAll(() => {
  reg = loadFunctions();
});

afterAll(() => {
  // eslint-disable-next-line no-console
  console.log(`2SLS cells against R: worst relative error by kind\n${[...worst.entries()].map(([k, v]) => `  ${k.padEnd(20)} ${v.toExponential(2)}`).join("\n")}`);
});

/** expectClose, recording the worst relative error per tolerance class. */
function expectClose(actual: unknown, expected: number, rel: number, abs: number, what: string): void {
  close(actual, expected, rel, abs, what);
  const kind = rel === COEF ? "coefficients (1e-10)" : "errors, F, p (1e-9)";
  const r = expected === 0 ? 0 : Math.abs((actual as number) - expected) / Math.abs(expected);
  worst.set(kind, Math.max(worst.get(kind) ?? 0, r));
}

function table(result: unknown, where: string): unknown[][] {
  if (result instanceof HostError) throw new Error(`${where}: the function returned ${result.code} ${result.message}`);
  return result as unknown[][];
}

function problem(result: unknown): HostError {
  if (!(result instanceof HostError)) throw new Error(`expected an error value, got ${JSON.stringify(result).slice(0, 300)}`);
  return result;
}

/** The cell name of a JSON column: logged columns lose their "l" (the cells take the log). */
const LOGGED: Record<string, string> = { lrprice: "rprice", lrincome: "rincome" };

interface Sheet {
  y: unknown[][];
  x: unknown[][];
  opts: string;
  names: string[];
}

/** A case as sheet ranges and options text: CigarettesSW in log-log, PSID1976 in log-level. */
function sheet(c: IvCase, extra = ""): Sheet {
  const cig = c.x_names.includes("lrprice");
  const names = c.x_names.map((v) => LOGGED[v] ?? v);
  const cols: unknown[][] = c.x.map((col, j) => (LOGGED[c.x_names[j]] ? col.map(Math.exp) : col));
  const head = [...names, ...c.instrument_names];
  cols.push(...c.instruments);
  const parts = [`estimator=2sls`, `endogenous=${c.endogenous.map((v) => LOGGED[v] ?? v).join(",")}`, `instruments=${c.instrument_names.join(",")}`];
  parts.push(cig ? `form=log-log; levels=${c.instrument_names.join(",")}` : "form=log-level");
  if (c.weights) {
    cols.push(c.weights);
    head.push("population");
    parts.push("weights=population");
  }
  if (c.clusters) {
    cols.push(c.clusters);
    head.push("state");
    parts.push("cluster=state");
  }
  if (!c.intercept) parts.push("intercept=false");
  if (extra) parts.push(extra);
  return { y: rows([c.y.map(Math.exp)], [cig ? "packs" : "wage"]), x: rows(cols, head), opts: parts.join("; "), names };
}

/** FIT's Coefficient and Std. error columns by term. */
function fitColumns(s: Sheet, se: string): { coef: number[]; se: number[]; header: unknown[] } {
  const t = table(call(reg, "FIT", s.y, s.x, `${s.opts}; ${se}`), "FIT");
  return { coef: t.slice(1).map((r) => r[2] as number), se: t.slice(1).map((r) => r[3] as number), header: t[0] };
}

function diagRow(d: Diag[], prefix: string): Diag {
  const r = d.find((v) => v.row.startsWith(prefix));
  if (!r) throw new Error(`no ${prefix} row in the reference`);
  return r;
}

const SE_OPTION: Record<string, (c: IvCase) => string> = {
  classical: () => "se=classical",
  HC0: () => "se=HC0",
  HC1: () => "se=HC1",
  HAC: (c) => `se=HAC; lags=${c.hac_lags}`,
  cluster: () => "se=cluster",
};

describe.each(["cig95", "cig95w", "cigpanel", "mroz", "mroz_two", "cig95_noint"])("2SLS cells on %s against AER::ivreg with sandwich (iv.json)", (label) => {
  const c = ref.cases[label];

  test.each(Object.keys(c.se))("ELX.FIT with %s errors: coefficients to 1e-10, errors to 1e-9", (type) => {
    const s = sheet(c);
    const f = fitColumns(s, SE_OPTION[type](c));
    c.coefficients.forEach((b, j) => expectClose(f.coef[j], b, COEF, 1e-14, `${label} coefficient ${j}`));
    c.se[type].forEach((v, j) => expectClose(f.se[j], v, STAT, 1e-14, `${label} ${type} se ${j}`));
  });

  test.each(Object.keys(c.diagnostics).filter((t) => t !== "classical"))("ELX.IVCHECK with %s errors: first-stage F, Wu–Hausman and Sargan to 1e-9", (type) => {
    const s = sheet(c);
    const t = table(call(reg, "IVCHECK", s.y, s.x, `${s.opts}; ${SE_OPTION[type](c)}`), "IVCHECK");
    expect(t[0]).toEqual(["Test", "Statistic", "df", "p-value", "Reading at the 5% level"]);
    const classical = c.diagnostics.classical;
    const chosen = c.diagnostics[type];
    const label0 = (r: unknown[]) => String(r[0]);
    c.endogenous.forEach((e, j) => {
      const name = LOGGED[e] ?? e;
      const fsRows = t.filter((r) => label0(r).startsWith(`First-stage F: ${name} (`));
      expect(fsRows).toHaveLength(2);
      const refRow = (d: Diag[]) => (c.endogenous.length === 1 ? diagRow(d, "Weak instruments") : diagRow(d, `Weak instruments (${e})`));
      expectClose(fsRows[0][1], refRow(classical).statistic, STAT, 0, `${label} first-stage F classical ${e}`);
      expectClose(fsRows[0][3], refRow(classical).p, STAT, 1e-300, `${label} first-stage p classical ${e}`);
      expect(fsRows[0][2]).toBe(`${refRow(classical).df1}, ${refRow(classical).df2}`);
      expectClose(fsRows[1][1], refRow(chosen).statistic, STAT, 0, `${label} first-stage F ${type} ${e}`);
      expectClose(fsRows[1][3], refRow(chosen).p, STAT, 1e-300, `${label} first-stage p ${type} ${e}`);
      expectClose(lookup(t, `Partial R²: ${name}`), c.partial_r2[j], STAT, 0, `${label} partial R² ${e}`);
    });
    const wu = t.filter((r) => label0(r).startsWith("Wu–Hausman ("));
    expectClose(wu[0][1], diagRow(classical, "Wu-Hausman").statistic, STAT, 0, `${label} Wu–Hausman classical`);
    expectClose(wu[0][3], diagRow(classical, "Wu-Hausman").p, STAT, 0, `${label} Wu–Hausman p classical`);
    expectClose(wu[1][1], diagRow(chosen, "Wu-Hausman").statistic, STAT, 0, `${label} Wu–Hausman ${type}`);
    expectClose(wu[1][3], diagRow(chosen, "Wu-Hausman").p, STAT, 0, `${label} Wu–Hausman p ${type}`);
    expect(wu[1][2]).toBe(`${diagRow(chosen, "Wu-Hausman").df1}, ${diagRow(chosen, "Wu-Hausman").df2}`);
    const sargan = t.find((r) => label0(r) === "Sargan (n·R²)") as unknown[];
    // with an intercept AER's Sargan (n times the centred R² of e on Z) is n·e'P_Z e/e'e; without one
    // the uncentred form is the one computed (iv.R's "sargan_uncentred")
    const sRef = c.intercept ? diagRow(classical, "Sargan") : { statistic: c.sargan_uncentred as number, p: c.sargan_uncentred_p as number, df1: diagRow(classical, "Sargan").df1 };
    expectClose(sargan[1], sRef.statistic, STAT, 0, `${label} Sargan`);
    expectClose(sargan[3], sRef.p, STAT, 0, `${label} Sargan p`);
    expect(sargan[2]).toBe(sRef.df1);
  });
});

describe("readings and the rest of the functions on a 2SLS fit", () => {
  test("IVCHECK's reading on CigarettesSW 1995: strong instruments, the rule of thumb named as such, and the caution", () => {
    const s = sheet(ref.cases.cig95);
    const t = table(call(reg, "IVCHECK", s.y, s.x, s.opts), "IVCHECK");
    const reading = String(lookup(t, "Reading"));
    expect(reading).toMatch(/^The instruments are not weak by the rule of thumb first-stage F ≥ 10 \(Staiger and Stock 1997; common practice\)\./);
    expect(String(lookup(t, "Caution"))).toMatch(/^No test can prove that an instrument has no direct effect on demand/);
    // the default errors of 2SLS are HC1
    expect(t.some((r) => r[0] === "First-stage F: rprice (HC1)")).toBe(true);
  });

  test("IVCHECK on an exactly identified fit: Sargan is #N/A with its reason (AER reports no Sargan row either)", () => {
    const c = ref.cases.mroz_father;
    const s = sheet(c);
    const t = table(call(reg, "IVCHECK", s.y, s.x, s.opts), "IVCHECK");
    const row = t.find((r) => r[0] === "Sargan (n·R²)") as unknown[];
    expect(problem(row[1]).code).toBe("#N/A");
    expect(problem(row[1]).message).toBe("Sargan needs more instruments than endogenous regressors: exactly identified here");
    expectClose(t.find((r) => String(r[0]) === "First-stage F: education (classical)")?.[1], diagRow(c.diagnostics.classical, "Weak instruments").statistic, STAT, 0, "mroz_father F");
  });

  test("ELX.EFFECTS on PSID1976 (log-level): the percent effect of education from R's 2SLS coefficient, Kennedy-corrected with its HC1 variance", () => {
    const c = ref.cases.mroz;
    const s = sheet(c);
    const t = table(call(reg, "EFFECTS", s.y, s.x, `${s.opts}; se=HC1`), "EFFECTS");
    const row = t.find((r) => r[0] === "education") as unknown[];
    const b = c.coefficients[1];
    const v = c.se.HC1[1] ** 2;
    expectClose(row[1], 100 * Math.expm1(b), COEF, 0, "percent effect");
    expectClose(row[2], 100 * Math.expm1(b - v / 2), STAT, 0, "Kennedy-corrected");
  });

  test("ELASTICITIES of the log-log 2SLS fit are its coefficients (constant elasticities), with its errors", () => {
    const c = ref.cases.cig95;
    const s = sheet(c);
    const t = table(call(reg, "ELASTICITIES", s.y, s.x, `${s.opts}; se=HC1`), "ELASTICITIES");
    expectClose(t[1][2], c.coefficients[1], COEF, 0, "price elasticity");
    expectClose(t[1][3], c.se.HC1[1], STAT, 0, "its error");
    expectClose(table(call(reg, "ELASTICITY", s.y, s.x, "rprice", s.opts), "ELASTICITY")[0][0], c.coefficients[1], COEF, 0, "ELASTICITY");
  });

  test("SUMMARY says what was instrumented and by what, and shows the first-stage F and the R² of R's summary(ivreg)", () => {
    const c = ref.cases.cig95;
    const s = sheet(c);
    const t = table(call(reg, "SUMMARY", s.y, s.x, s.opts), "SUMMARY");
    expect(lookup(t, "Instrumented")).toBe("rprice (instrumented by tdiff and ctax)");
    expect(lookup(t, "Exogenous (their own instruments)")).toBe("intercept, rincome");
    expectClose(lookup(t, "First-stage F: rprice (classical)"), diagRow(c.diagnostics.classical, "Weak instruments").statistic, STAT, 0, "F");
    expectClose(lookup(t, "First-stage F: rprice (HC1)"), diagRow(c.diagnostics.HC1, "Weak instruments").statistic, STAT, 0, "F HC1");
    expectClose(lookup(t, "R² (structural residuals)"), (ref.cases.cig95 as unknown as { r2: number }).r2, STAT, 0, "R²");
  });

  test("PREDICT reads the 2SLS coefficients and Duan's factor of the structural residuals (the one SMEARING shows)", () => {
    const c = ref.cases.cig95;
    const s = sheet(c);
    const smear = table(call(reg, "SMEARING", s.y, s.x, s.opts), "SMEARING")[0][0] as number;
    // Duan (1983): the mean of exp(e) over the residuals y − Xb with R's coefficients
    let sum = 0;
    for (let i = 0; i < c.n; i++) sum += Math.exp(c.y[i] - c.coefficients[0] - c.coefficients[1] * c.x[0][i] - c.coefficients[2] * c.x[1][i]);
    expectClose(smear, sum / c.n, 1e-9, 0, "smearing");
    const p = table(call(reg, "PREDICT", s.y, s.x, [["rprice", "rincome"], [1.2, 30]], s.opts), "PREDICT");
    expectClose(p[1][0], Math.exp(c.coefficients[0] + c.coefficients[1] * Math.log(1.2) + c.coefficients[2] * Math.log(30)) * smear, 1e-10, 0, "prediction");
  });

  test("BYGROUP fits 2SLS per group: each row equals the FIT of that group's rows alone; Breusch–Pagan is not read from 2SLS residuals", () => {
    const c = ref.cases.cigpanel;
    const s = sheet(c);
    const year = c.x[2].map((v) => (v === 1 ? "1995" : "1985"));
    // y1995 is constant within a year: the group fits leave it out
    const keep = [0, 1, 3, 4];
    const x = s.x.map((r) => keep.map((j) => r[j]));
    const opts = s.opts.replace("; cluster=state", "");
    const t = table(call(reg, "BYGROUP", rows([year], ["year"]), s.y, x, `${opts}; se=HC1`), "BYGROUP");
    expect(t[0]).toEqual(["Group", "Observations", "Elasticity: rprice", "Std. error: rprice", "Elasticity: rincome", "Std. error: rincome", "R²", "Breusch–Pagan p"]);
    const r95 = t.find((r) => r[0] === "1995") as unknown[];
    const c95 = ref.cases.cig95;
    expectClose(r95[2], c95.coefficients[1], COEF, 0, "1995 price elasticity");
    expectClose(r95[3], c95.se.HC1[1], STAT, 0, "1995 error");
    expect(problem(r95[7]).code).toBe("#N/A");
  });
});

describe.each(["cigpanel_fe", "cigpanel_fe_w"])("2SLS with fixed effects and clustered errors (%s: CigarettesSW, state effects, clustered by state)", (label) => {
  const c = ref.absorbed[label];
  const cols: unknown[][] = [c.x[0].map(Math.exp), c.x[1].map(Math.exp), c.x[2], ...c.instruments, c.state];
  const head = ["rprice", "rincome", "y1995", "tdiff", "ctax", "state"];
  if (c.weights) {
    cols.push(c.weights);
    head.push("population");
  }
  const x = rows(cols, head);
  const y = rows([c.y.map(Math.exp)], ["packs"]);
  const base = `estimator=2sls; endogenous=rprice; instruments=tdiff,ctax; levels=tdiff,ctax; absorb=state${c.weights ? "; weights=population" : ""}`;

  test.each(["classical", "HC1", "cluster"])("ELX.FIT with %s errors: slopes to 1e-10, errors to 1e-9 (ivreg with factor(state), sandwich)", (type) => {
    const t = table(call(reg, "FIT", y, x, `${base}; ${type === "cluster" ? "cluster=state" : `se=${type}`}`), "FIT");
    expect(t.slice(1).map((r) => r[0])).toEqual(["rprice", "rincome", "y1995"]);
    c.coefficients.forEach((b, j) => expectClose(t[j + 1][2], b, COEF, 0, `coefficient ${j}`));
    c.se[type].forEach((v, j) => expectClose(t[j + 1][3], v, STAT, 0, `${type} se ${j}`));
  });

  test.each(["HC1", "cluster"])("ELX.IVCHECK with %s errors: first-stage F and Wu–Hausman with df n − k − a, Sargan", (type) => {
    const t = table(call(reg, "IVCHECK", y, x, `${base}; ${type === "cluster" ? "cluster=state" : `se=${type}`}`), "IVCHECK");
    const cl = c.diagnostics.classical;
    const ch = c.diagnostics[type];
    const fsRows = t.filter((r) => String(r[0]).startsWith("First-stage F: rprice ("));
    expectClose(fsRows[0][1], diagRow(cl, "Weak instruments").statistic, STAT, 0, "F classical");
    expect(fsRows[0][2]).toBe(`2, ${diagRow(cl, "Weak instruments").df2}`);
    expectClose(fsRows[1][1], diagRow(ch, "Weak instruments").statistic, STAT, 0, `F ${type}`);
    expectClose(fsRows[1][3], diagRow(ch, "Weak instruments").p, STAT, 0, `p ${type}`);
    const wu = t.filter((r) => String(r[0]).startsWith("Wu–Hausman ("));
    expectClose(wu[0][1], diagRow(cl, "Wu-Hausman").statistic, STAT, 0, "Wu–Hausman classical");
    expectClose(wu[1][1], diagRow(ch, "Wu-Hausman").statistic, STAT, 0, `Wu–Hausman ${type}`);
    expectClose(wu[1][3], diagRow(ch, "Wu-Hausman").p, STAT, 0, `Wu–Hausman p ${type}`);
    expect(wu[1][2]).toBe(`1, ${diagRow(ch, "Wu-Hausman").df2}`);
    const sargan = t.find((r) => r[0] === "Sargan (n·R²)") as unknown[];
    expectClose(sargan[1], diagRow(cl, "Sargan").statistic, STAT, 0, "Sargan");
  });

  test("SUMMARY names the absorbed effects and gives the R² of the indicator regression", () => {
    const t = table(call(reg, "SUMMARY", y, x, `${base}; cluster=state`), "SUMMARY");
    expect(lookup(t, "Fixed effects absorbed")).toBe("state");
    expect(lookup(t, "Absorbed parameters")).toBe(c.absorbed);
    expectClose(lookup(t, "R² (structural residuals)"), c.r2, STAT, 0, "R²");
  });
});

describe("Driscoll–Kraay and HAC within panels on a 2SLS fit (identities)", () => {
  // Driscoll and Kraay (1998): S = Σ_{|l|≤L} w_l Σ_t h_t h_{t−l}ᵀ with h_t the scores summed over
  // period t. Here there are T = 2 periods, so the default L = ⌊4(2/100)^(2/9)⌋ = 1 (w_1 = 1/2), and
  // the 2SLS scores sum to zero (X̂ᵀe = 0), so h_2 = −h_1 and S = h_1h_1ᵀ: half of the meat of the
  // errors clustered by period, Σ_t h_t h_tᵀ = 2h_1h_1ᵀ, which carry the factor G/(G−1)·(n−1)/(n−k)
  // (Liang and Zeger 1986; the factor as sandwich::vcovCL(type = "HC1")). HAC within panels with no
  // lags is HC0 (against R's vcovHC in iv.json).
  const c = ref.cases.cigpanel;
  const s = sheet(c);
  const year = c.x[2].map((v) => (v === 1 ? 1995 : 1985));
  const x = s.x.map((r, i) => [...r, i === 0 ? "year" : year[i - 1]]);
  const opts = s.opts.replace("; cluster=state", "; panel=state");
  test("se=DK over two years equals the cluster-by-year errors without their factor, halved in variance; panel HAC with lags=0 equals HC0", () => {
    const dk = table(call(reg, "FIT", s.y, x, `${opts}; time=year; se=DK`), "FIT DK");
    const byYear = table(call(reg, "FIT", s.y, x, `${opts}; cluster=year`), "FIT cluster");
    const n = c.n;
    const k = 4;
    const factor = (2 / 1) * ((n - 1) / (n - k)) * 2;
    for (let j = 1; j <= k; j++) expectClose(dk[j][3], (byYear[j][3] as number) / Math.sqrt(factor), STAT, 0, `DK ${j}`);
    // HAC within panels needs each state's rows together: sorted by state (HC0 does not depend on order)
    const order = c.clusters!.map((g, i) => ({ g, i })).sort((a, b) => (a.g < b.g ? -1 : a.g > b.g ? 1 : a.i - b.i)).map((v) => v.i + 1);
    const sortRows = (r: unknown[][]) => [r[0], ...order.map((i) => r[i])];
    const ph = table(call(reg, "FIT", sortRows(s.y), sortRows(s.x), `${opts}; se=HAC; lags=0`), "FIT panel HAC");
    c.se.HC0.forEach((v, j) => expectClose(ph[j + 1][3], v, STAT, 0, `panel HAC ${j}`));
    // two periods give a meat of rank one: the Wald F of two instruments is undefined under DK and
    // says so in its own cells, while the classical rows and Sargan still come
    const chk = table(call(reg, "IVCHECK", s.y, x, `${opts}; time=year; se=DK`), "IVCHECK DK");
    const dkRow = chk.find((r) => String(r[0]).startsWith("First-stage F: rprice (Driscoll–Kraay")) as unknown[];
    expect(problem(dkRow[1]).code).toBe("#N/A");
    expect(problem(dkRow[1]).message).toBe("the covariance of rprice's first stage is singular under these errors, so its Wald F is undefined: use se=HC1 or more rows (or more clusters)");
    expectClose(chk.find((r) => r[0] === "First-stage F: rprice (classical)")?.[1], diagRow(c.diagnostics.classical, "Weak instruments").statistic, STAT, 0, "classical F beside DK");
    // one restriction: the Wu–Hausman Wald F is defined under DK too
    expect(typeof (chk.find((r) => String(r[0]).startsWith("Wu–Hausman (Driscoll–Kraay")) as unknown[])[1]).toBe("number");
  });
});

describe("bad inputs to estimator=2sls get a message that says what to do", () => {
  const c = ref.cases.cig95;
  const s = sheet(c);
  const msg = (opts: string, x = s.x, id = "FIT") => problem(call(reg, id, s.y, x, opts)).message;

  test("estimator=2sls without instruments= or without endogenous=", () => {
    expect(msg("estimator=2sls; endogenous=rprice; levels=tdiff,ctax")).toBe("estimator=2sls needs instruments=: name the columns of x that move the endogenous regressors but not y directly (for example instruments=Flour cost)");
    expect(msg("estimator=2sls; instruments=tdiff,ctax; levels=tdiff,ctax")).toBe("estimator=2sls needs endogenous=: name the regressors that respond to y (for example endogenous=Price)");
  });

  test("fewer instruments than endogenous regressors", () => {
    expect(msg("estimator=2sls; endogenous=rprice,rincome; instruments=tdiff; levels=tdiff")).toBe("2 regressors are named endogenous but only 1 instrument is given: two-stage least squares needs at least as many excluded instruments as endogenous regressors; add instruments or name fewer regressors endogenous");
  });

  test("an instrument also named endogenous", () => {
    expect(msg("estimator=2sls; endogenous=tdiff; instruments=tdiff,ctax; levels=tdiff,ctax")).toBe("tdiff is named both in endogenous= and in instruments=: an endogenous regressor is instrumented by other columns, never by itself; remove it from one of them");
  });

  test("an endogenous name that is not a regressor", () => {
    expect(msg("estimator=2sls; endogenous=rprise; instruments=tdiff,ctax; levels=tdiff,ctax")).toBe("endogenous=rprise is not one of the regressors (rprice and rincome): did you mean rprice?");
  });

  test("an instrument that repeats a regressor, one that is constant, one collinear with the exogenous regressors: each named", () => {
    const withCol = (name: string, values: unknown[]) => s.x.map((r, i) => [...r, i === 0 ? name : values[i - 1]]);
    const copy = withCol("income copy", c.x[1].map(Math.exp));
    expect(msg("estimator=2sls; endogenous=rprice; instruments=tdiff,income copy; levels=tdiff", copy)).toBe("instrument income copy is an exact linear combination of rincome (collinear), so it adds nothing the other instruments and exogenous regressors do not already hold: remove it from instruments=");
    const constant = withCol("flat", new Array(c.n).fill(3));
    expect(msg("estimator=2sls; endogenous=rprice; instruments=tdiff,flat; levels=tdiff,flat", constant)).toBe("instrument flat has the same value in every row used, so it cannot be told apart from the intercept and moves nothing: remove it from instruments=");
    const combo = withCol("mix", c.x[1].map((v, i) => 2 * v + 0.5 * c.instruments[0][i]));
    expect(msg("estimator=2sls; endogenous=rprice; instruments=tdiff,mix; levels=tdiff,mix", combo)).toBe("instrument mix is an exact linear combination of rincome and tdiff (collinear), so it adds nothing the other instruments and exogenous regressors do not already hold: remove it from instruments=");
  });

  test("instruments with PPML are not offered; with least squares they ask for estimator=2sls", () => {
    expect(msg("estimator=ppml; endogenous=rprice; instruments=tdiff,ctax; levels=tdiff,ctax")).toBe("instruments= with estimator=ppml is not offered: instrumental variables are available for least squares only (estimator=2sls); drop instruments= for PPML, or use estimator=2sls");
    expect(msg("endogenous=rprice; instruments=tdiff,ctax; levels=tdiff,ctax")).toBe("instruments= applies to two-stage least squares: add estimator=2sls (with both endogenous= and instruments=), or drop instruments=");
  });

  test("HC2 and HC3 are refused; residual tests, single-outcome intervals and IVCHECK without 2SLS say why", () => {
    expect(msg(`${s.opts}; se=HC3`)).toBe("se=HC3 is not available for two-stage least squares: its leverage correction has no agreed form there; use se=HC1 (the default), se=HC0, se=HAC or cluster=");
    expect(msg(`${s.opts}; se=HC2`, s.x, "IVCHECK")).toMatch(/^se=HC2 is not available for two-stage least squares/);
    expect(msg(s.opts, s.x, "TESTS")).toBe("ELX.TESTS applies to least-squares fits of log or level y; the residual tests and form checks read ordinary least-squares residuals, which 2SLS does not give: drop estimator=2sls for them (ELX.IVCHECK checks the instruments)");
    expect(msg("form=log-log; levels=tdiff,ctax", s.x, "IVCHECK")).toMatch(/^ELX\.IVCHECK checks a two-stage least squares fit: add estimator=2sls/);
    const p = table(call(reg, "PREDICT", s.y, s.x, [["rprice", "rincome"], [1.2, 30]], `${s.opts}; interval=individual`), "PREDICT");
    expect(problem(p[1][0]).message).toBe("interval=individual needs a distribution for single outcomes; two-stage least squares models only the mean: use interval=mean");
  });

  test("an instrument that does not vary within the fixed effects is named", () => {
    const fe = ref.absorbed.cigpanel_fe;
    const stateLevel = fe.state.map((v) => v.charCodeAt(0) + v.charCodeAt(1) / 100);
    const x = rows([fe.x[0].map(Math.exp), fe.x[1].map(Math.exp), fe.instruments[0], stateLevel, fe.state], ["rprice", "rincome", "tdiff", "region", "state"]);
    const y = rows([fe.y.map(Math.exp)], ["packs"]);
    expect(problem(call(reg, "FIT", y, x, "estimator=2sls; endogenous=rprice; instruments=tdiff,region; levels=tdiff,region; absorb=state")).message).toBe("instrument region does not vary within state (collinear with the fixed effects): its effect cannot be told apart from them; remove it from instruments= or absorb fewer keys");
  });
});
