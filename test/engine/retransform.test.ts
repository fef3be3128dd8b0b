/**
 * Retransformation factors small enough to check by hand, through SMEARING, SUMMARY and PREDICT.
 *
 * Source of the expected numbers: the arithmetic below with the definitions of Duan (1983),
 * "Smearing estimate: a nonparametric retransformation method", JASA 78(383), 605–610: the smearing
 * factor is the mean of exp(eᵢ) over the log-scale residuals; and the normal-theory factor
 * exp(s²/2) with s² = RSS/(n − k). The numbers are invented so that the arithmetic comes out exact
 * (an arithmetic check, not a statistical one): every y is a power of 2 and the residuals are whole
 * multiples of L = ln 2, so exp(eᵢ) is a power of 2.
 *
 * Case A: log-log, one regressor, six rows.
 *   x = 1, 1, 2, 2, 4, 4            u = log x / L = 0, 0, 1, 1, 2, 2
 *   y = 16, 4, 16, 64, 256, 64      v = log y / L = 4, 2, 4, 6, 8, 6
 *   the pair means of v are 3, 5, 7 = 3 + 2u, and the deviations eᵢ = 1, −1, −1, 1, 1, −1 (·L) are
 *   orthogonal to the intercept (Σe = 0) and to u (Σu·e = 0·0 + 1·0 + 2·0 = 0), so least squares
 *   gives intercept 3L, slope 2, fitted 3, 3, 5, 5, 7, 7 (·L) and residuals e.
 *   Duan: mean of exp(eᵢ) = (2 + ½ + ½ + 2 + 2 + ½)/6 = 7.5/6 = 1.25
 *   s² = Σe²/(n − k) = 6L²/(6 − 2) = 1.5L²;  normal-theory factor exp(s²/2) = exp(0.75L²)
 *   prediction at x0 = 2: exp(3L + 2·L) = 2⁵ = 32; with Duan 32·1.25 = 40; normal 32·exp(0.75L²)
 *
 * Case B: log-level, one regressor, five rows.
 *   x = 1, 2, 3, 4, 5
 *   y = 4, 1, 8, 64, 16             log y / L = 2, 0, 3, 6, 4 = x + e, e = 1, −2, 0, 2, −1 (·L)
 *   Σe = 0 and Σx·e = 1 − 4 + 0 + 8 − 5 = 0, so least squares gives intercept 0, slope L, residuals e.
 *   Duan: (2 + ¼ + 1 + 4 + ½)/5 = 7.75/5 = 1.55
 *   s² = (1 + 4 + 0 + 4 + 1)L²/(5 − 2) = 10L²/3;  normal-theory factor exp(5L²/3)
 *   prediction at x0 = 3: exp(3L) = 8; with Duan 8·1.55 = 12.4
 *
 * Case A in form level-level: y in levels, so SMEARING is 1 (interface definition, not arithmetic).
 */
import { loadFunctions, HostError, type CellFn } from "../harness/loadFunctions";

const L = Math.LN2;
const TOL = 1e-12;

const yA = [["Loaves"], [16], [4], [16], [64], [256], [64]];
const xA = [["Footfall"], [1], [1], [2], [2], [4], [4]];
const yB = [["Loaves"], [4], [1], [8], [64], [16]];
const xB = [["Week"], [1], [2], [3], [4], [5]];

function show(v: unknown): string {
  return v instanceof HostError ? `${v.code} ${v.message ?? ""}` : JSON.stringify(v);
}

function close(actual: unknown, expected: number, what: string): void {
  if (typeof actual !== "number") throw new Error(`${what}: expected ${expected}, got ${show(actual)}`);
  const err = Math.abs(actual - expected);
  if (!(err <= TOL * Math.max(1, Math.abs(expected)))) {
    throw new Error(`${what}: got ${actual}, hand arithmetic gives ${expected} (difference ${err})`);
  }
}

let reg: Map<string, CellFn>;
beforeAll(() => {
  reg = loadFunctions();
});

/** Calls a cell function by id; an id missing from the bundle fails with a clear message. */
function invoke(id: string, ...args: unknown[]): unknown {
  const fn = reg.get(id);
  if (!fn) throw new Error(`ELX.${id} is not registered in dist/functions.js (registered: ${[...reg.keys()].join(", ")})`);
  try {
    return fn(...args);
  } catch (e) {
    if (e instanceof HostError) return e;
    throw e;
  }
}

function rowsOf(result: unknown, what: string): unknown[][] {
  if (!Array.isArray(result)) throw new Error(`${what}: expected a table, got ${show(result)}`);
  return result as unknown[][];
}

function summaryValue(t: unknown[][], label: string): unknown {
  const row = t.find((r) => r[0] === label);
  if (!row) throw new Error(`SUMMARY has no row labelled ${label}; labels: ${t.map((r) => r[0]).join(" | ")}`);
  return row[1];
}

describe("case A: log-log, six rows, residuals ±ln 2", () => {
  it("SMEARING: Duan 1.25 (default and retransform=duan), normal exp(0.75·ln²2)", () => {
    close(rowsOf(invoke("SMEARING", yA, xA, null), "SMEARING A")[0][0], 1.25, "Duan factor (default)");
    close(rowsOf(invoke("SMEARING", yA, xA, "retransform=duan"), "SMEARING A")[0][0], 1.25, "Duan factor");
    close(rowsOf(invoke("SMEARING", yA, xA, "retransform=normal"), "SMEARING A")[0][0], Math.exp(0.75 * L * L), "normal-theory factor");
  });

  it("SUMMARY: Smearing factor (Duan) 1.25, Normal-theory factor exp(0.75·ln²2), residual std. error ln 2·√1.5", () => {
    const t = rowsOf(invoke("SUMMARY", yA, xA, null), "SUMMARY A");
    close(summaryValue(t, "Smearing factor (Duan)"), 1.25, "SUMMARY Duan factor");
    close(summaryValue(t, "Normal-theory factor"), Math.exp(0.75 * L * L), "SUMMARY normal-theory factor");
    close(summaryValue(t, "Residual std. error"), L * Math.sqrt(1.5), "residual std. error s");
  });

  it("PREDICT at Footfall = 2: 32 (none), 40 (duan), 32·exp(0.75·ln²2) (normal)", () => {
    const nx = [["Footfall"], [2]];
    const none = rowsOf(invoke("PREDICT", yA, xA, nx, "retransform=none; interval=none"), "PREDICT A none");
    expect(none[0]).toEqual(["Predicted Loaves"]);
    close(none[1][0], 32, "prediction without retransformation");
    close(rowsOf(invoke("PREDICT", yA, xA, nx, "retransform=duan; interval=none"), "PREDICT A duan")[1][0], 40, "prediction with Duan");
    close(rowsOf(invoke("PREDICT", yA, xA, nx, "retransform=normal; interval=none"), "PREDICT A normal")[1][0], 32 * Math.exp(0.75 * L * L), "prediction with the normal factor");
  });

  it("SMEARING with y in levels (form=level-level) is 1", () => {
    close(rowsOf(invoke("SMEARING", yA, xA, "form=level-level"), "SMEARING A levels")[0][0], 1, "factor with y in levels");
  });
});

describe("case B: log-level, five rows, residuals 1, −2, 0, 2, −1 (·ln 2)", () => {
  it("SMEARING: Duan 1.55, normal exp(5·ln²2/3)", () => {
    close(rowsOf(invoke("SMEARING", yB, xB, "form=log-level"), "SMEARING B")[0][0], 1.55, "Duan factor");
    close(rowsOf(invoke("SMEARING", yB, xB, "form=log-level; retransform=normal"), "SMEARING B")[0][0], Math.exp((5 * L * L) / 3), "normal-theory factor");
  });

  it("SUMMARY: Smearing factor (Duan) 1.55, Normal-theory factor exp(5·ln²2/3)", () => {
    const t = rowsOf(invoke("SUMMARY", yB, xB, "form=log-level"), "SUMMARY B");
    close(summaryValue(t, "Smearing factor (Duan)"), 1.55, "SUMMARY Duan factor");
    close(summaryValue(t, "Normal-theory factor"), Math.exp((5 * L * L) / 3), "SUMMARY normal-theory factor");
    close(summaryValue(t, "Residual std. error"), L * Math.sqrt(10 / 3), "residual std. error s");
  });

  it("PREDICT at Week = 3 with Duan: 8·1.55 = 12.4", () => {
    const t = rowsOf(invoke("PREDICT", yB, xB, [["Week"], [3]], "form=log-level; retransform=duan; interval=none"), "PREDICT B");
    close(t[1][0], 12.4, "prediction with Duan");
  });
});
