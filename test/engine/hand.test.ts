/**
 * A fit small enough to check by hand: log-log, one regressor, six rows.
 *
 * Source of the expected numbers: the arithmetic below, done by hand with the closed-form least
 * squares formulas for one regressor (slope Sxy/Sxx, intercept ȳ − b·x̄, classical variance
 * s²/Sxx) and White's (1980) HC0 sandwich, which for one regressor is Σ cᵢ²eᵢ² / Sxx². The numbers
 * are invented so that the arithmetic comes out exact (an arithmetic check, not a statistical one):
 * every x and y is a power of 2, so every log is a whole multiple of ln 2 and everything below is
 * in units of ln 2 (written L).
 *
 *   x = 1, 2, 4, 8, 16, 32        u = log x / L = 0, 1, 2, 3, 4, 5
 *   y = 4, 2, 8, 16, 16, 128      v = log y / L = 2, 1, 3, 4, 4, 7
 *
 *   means of logs   ū = 15/6 = 2.5 (·L)            v̄ = 21/6 = 3.5 (·L)
 *   cᵢ = uᵢ − ū     −2.5, −1.5, −0.5, 0.5, 1.5, 2.5
 *   vᵢ − v̄          −1.5, −2.5, −0.5, 0.5, 0.5, 3.5
 *   Sxx = Σ cᵢ²     6.25 + 2.25 + 0.25 + 0.25 + 2.25 + 6.25 = 17.5 (·L²)
 *   Sxy = Σ cᵢ(vᵢ − v̄)  3.75 + 3.75 + 0.25 + 0.25 + 0.75 + 8.75 = 17.5 (·L²)
 *   slope b = Sxy/Sxx = 1 (L cancels: an elasticity of exactly 1)
 *   intercept a = v̄ − b·ū = 3.5 − 2.5 = 1 (·L), i.e. a = ln 2
 *   fitted a + b·u = 1, 2, 3, 4, 5, 6;  residuals eᵢ = 1, −1, 0, 0, −1, 1 (·L)
 *   RSS = Σ eᵢ² = 4 (·L²);  s² = RSS/(n − 2) = 4/4 = 1 (·L²), so s = ln 2
 *   TSS = Σ (vᵢ − v̄)² = 2.25 + 6.25 + 0.25 + 0.25 + 0.25 + 12.25 = 21.5 (·L²)
 *   R² = 1 − 4/21.5 = 35/43;  adjusted R² = 1 − (8/43)·(5/4) = 33/43;  F = (17.5/1)/(4/4) = 17.5
 *   classical SE(b) = s/√Sxx = L/(L·√17.5) = 1/√17.5;  t = b/SE(b) = √17.5 (= √F)
 *   classical SE(a) = s·√(1/n + ū²/Sxx) = L·√(1/6 + 6.25/17.5) = L·√(7/42 + 15/42) = L·√(11/21)
 *   HC0 SE(b) = √(Σ cᵢ²eᵢ²)/Sxx = √(6.25 + 2.25 + 0 + 0 + 2.25 + 6.25)/17.5 = √17/17.5
 *   HC0 SE(a): a's weights wᵢ = 1/n − ū·cᵢ/Sxx = 1/6 − cᵢ/7 = 11/21, 8/21, ·, ·, −1/21, −4/21 on the
 *     rows with eᵢ ≠ 0, so Var(a) = Σ wᵢ²eᵢ² = L²·(121 + 64 + 1 + 16)/441, SE(a) = L·√202/21
 *   HC1 = HC0·√(n/(n − k)) = HC0·√(6/4)
 *   Gaussian log-likelihood with the ML variance RSS/n = 4L²/6:
 *     ℓ = −(n/2)·(ln 2π + ln(RSS/n) + 1) = −3·(ln 2π + ln(2L²/3) + 1)
 *   AIC = −2ℓ + 2·(k + 1) = −2ℓ + 6;  BIC = −2ℓ + 3·ln 6   (k = 2 with the intercept)
 */
import { call, loadFunctions, HostError, type CellFn } from "../harness/loadFunctions";

const L = Math.LN2;
const TOL = 1e-12;

const y = [["y"], [4], [2], [8], [16], [16], [128]];
const x = [["x"], [1], [2], [4], [8], [16], [32]];

function close(actual: unknown, expected: number, what: string): void {
  if (typeof actual !== "number") {
    throw new Error(`${what}: expected ${expected}, got ${actual instanceof HostError ? `${actual.code} ${actual.message}` : JSON.stringify(actual)}`);
  }
  const err = Math.abs(actual - expected);
  if (!(err <= TOL * Math.max(1, Math.abs(expected)))) {
    throw new Error(`${what}: got ${actual}, hand arithmetic gives ${expected} (difference ${err})`);
  }
}

function rowsOf(result: unknown): unknown[][] {
  if (!Array.isArray(result)) throw new Error(`expected a table, got ${result instanceof HostError ? `${result.code} ${result.message}` : JSON.stringify(result)}`);
  return result as unknown[][];
}

/** The SUMMARY row whose label is `label` (a note in parentheses after it is accepted). */
function summaryValue(t: unknown[][], label: string): unknown {
  const row = t.find((r) => r[0] === label) ?? t.find((r) => typeof r[0] === "string" && (r[0] as string).startsWith(`${label} (`));
  if (!row) throw new Error(`SUMMARY has no row labelled ${label}`);
  return row[1];
}

let reg: Map<string, CellFn>;
beforeAll(() => {
  reg = loadFunctions();
});

describe("hand-checked log-log fit with one regressor (six rows, powers of 2)", () => {
  it("FIT classical: intercept ln 2, slope 1, SE(b) = 1/√17.5, SE(a) = ln 2·√(11/21), t = √17.5", () => {
    const t = rowsOf(call(reg, "FIT", y, x, "se=classical"));
    expect(t[1].slice(0, 2)).toEqual(["(Intercept)", "constant"]);
    expect(t[2].slice(0, 2)).toEqual(["x", "log"]);
    close(t[1][2], L, "intercept");
    close(t[2][2], 1, "slope");
    close(t[1][3], L * Math.sqrt(11 / 21), "classical SE of the intercept");
    close(t[2][3], 1 / Math.sqrt(17.5), "classical SE of the slope");
    close(t[2][4], Math.sqrt(17.5), "t of the slope");
    close(t[1][4], 1 / Math.sqrt(11 / 21), "t of the intercept (ln 2 / (ln 2·√(11/21)))");
  });

  it("FIT HC0: SE(b) = √17/17.5, SE(a) = ln 2·√202/21; HC1 = HC0·√(6/4)", () => {
    const t0 = rowsOf(call(reg, "FIT", y, x, "se=HC0"));
    close(t0[2][3], Math.sqrt(17) / 17.5, "HC0 SE of the slope");
    close(t0[1][3], (L * Math.sqrt(202)) / 21, "HC0 SE of the intercept");
    close(t0[2][4], 17.5 / Math.sqrt(17), "HC0 t of the slope");
    const t1 = rowsOf(call(reg, "FIT", y, x, "se=HC1"));
    close(t1[2][3], (Math.sqrt(17) / 17.5) * Math.sqrt(1.5), "HC1 SE of the slope");
    close(t1[1][3], ((L * Math.sqrt(202)) / 21) * Math.sqrt(1.5), "HC1 SE of the intercept");
  });

  it("SUMMARY: n = 6, s = ln 2, R² = 35/43, adjusted 33/43, F = 17.5, ℓ, AIC, BIC as written out", () => {
    const t = rowsOf(call(reg, "SUMMARY", y, x, null));
    expect(summaryValue(t, "Observations used")).toBe(6);
    expect(summaryValue(t, "Rows left out: blank or non-numeric")).toBe(0);
    expect(summaryValue(t, "Rows left out: zero or blank under a log")).toBe(0);
    expect(summaryValue(t, "Rows left out: negative under a log")).toBe(0);
    close(summaryValue(t, "Residual std. error"), L, "residual std. error s");
    close(summaryValue(t, "R²"), 35 / 43, "R²");
    close(summaryValue(t, "Adjusted R²"), 33 / 43, "adjusted R²");
    close(summaryValue(t, "F statistic"), 17.5, "F");
    const logLik = -3 * (Math.log(2 * Math.PI) + Math.log((2 * L * L) / 3) + 1);
    close(summaryValue(t, "Log-likelihood"), logLik, "log-likelihood");
    close(summaryValue(t, "AIC"), -2 * logLik + 6, "AIC");
    close(summaryValue(t, "BIC"), -2 * logLik + 3 * Math.log(6), "BIC");
  });

  it("ELASTICITY: the log-log slope itself, 1", () => {
    const e = rowsOf(call(reg, "ELASTICITY", y, x, "x", null));
    close(e[0][0], 1, "elasticity");
  });
});
