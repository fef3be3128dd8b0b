/**
 * Tests that reuse the fit's factor (FORMCHECK, TESTS) against a new factorisation of the same
 * auxiliary design.
 *
 * References: the engine's Householder QR on the full auxiliary design (leastSquares, which
 * test/host/nist.test.ts checks against the NIST StRD certified values, with its covariances from
 * covariance.ts, checked against sandwich::vcovHC in test/reference/ols.test.ts). The reused paths rest
 * on two published identities: the corrected semi-normal equations (Björck 1996, Numerical Methods for
 * Least Squares Problems, §2.4.6 and §6.6.5) for a right-hand side on the fit's own design, and the
 * partitioned regression theorem (Frisch and Waugh 1933, Econometrica 1; Lovell 1963, JASA 58) for
 * columns added to it; the Box–Cox slope is the derivative of −n/2·log RSS(λ) (Box and Cox 1964,
 * JRSS B 26), checked here against a central difference. They must agree with the new factorisation
 * to 1e-12 of each quantity's scale on well-conditioned designs, and ill-conditioned designs must take
 * the new factorisation. Data: seeded invented rows (a simulation input, not a statistical reference).
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import * as ls from "../../functions/engine/leastSquares";
import { leastSquares, projectOnFactor, roughRssOnFactor, rssOnFactor, SIDE_ROWS } from "../../functions/engine/leastSquares";
import { boxCox, boxCoxOnLogs, boxCoxProfileOf, levelOnLogFactor, peTest } from "../../functions/engine/formCheck";
import { auxiliary, breuschPaganKoenker, breuschPaganOf, breuschPaganOriginal, factorReusable, jarqueBera, jarqueBeraOf, reset, REUSE_CONDITION } from "../../functions/engine/specTests";
import { hcCovariance, classicalCovariance, leastSquaresInput } from "../../functions/engine/covariance";
import { fisherSf } from "../../functions/engine/distributions";
import { EXACT_FIT, OlsFit } from "../../functions/engine/fit";
import { LEVEL } from "../../functions/engine/transforms";
import { Rng } from "../simulation/rng";

/** Rows of a log-log demand model; `collinear` makes the third regressor nearly the first (κ ≥ 1e6). */
function rows(n: number, seed: number, collinear = false): { y: unknown[][]; x: unknown[][] } {
  const g = new Rng(seed);
  const y: unknown[][] = [["Units"]];
  const x: unknown[][] = [["Price", "Footfall", "Income"]];
  for (let i = 0; i < n; i++) {
    const p = 1 + 2 * g.next();
    const f = 50 + 100 * g.next();
    const inc = collinear ? p * (1 + 1e-8 * g.normal()) : 30 + 40 * g.next();
    y.push([Math.exp(3 - 1.4 * Math.log(p) + 0.8 * Math.log(f) + 0.3 * Math.log(inc) + 0.3 * g.normal() + 0.2 * Math.log(p) ** 2)]);
    x.push([p, f, inc]);
  }
  return { y, x };
}

function olsCase(n: number, seed: number, options = "form=log-log", collinear = false): OlsFit {
  const { y, x } = rows(n, seed, collinear);
  return fitUncached({ y, x, options: parseOptions(options), yOrigin: null, xOrigin: null }) as OlsFit;
}

function levelTwin(logFit: OlsFit): OlsFit {
  const d = logFit.data;
  return new OlsFit({ ...d, y: Float64Array.from(d.y, Math.exp), yTransform: LEVEL }, logFit.intercept);
}

const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

/** The numbers of columns of the designs factorised while `run` runs. */
function factorisations<T>(run: () => T): { value: T; columns: number[] } {
  const spy = jest.spyOn(ls, "leastSquares");
  try {
    const value = run();
    return { value, columns: spy.mock.calls.map((c) => c[0].length) };
  } finally {
    spy.mockRestore();
  }
}

describe("solves on the fit's factor (corrected semi-normal equations)", () => {
  const f = olsCase(3000, 11);
  const v = Float64Array.from(f.resid, (e, i) => e * e + Math.sin(i));
  const fresh = leastSquares(f.design, v, false).qr!;

  it("projectOnFactor gives the coefficients, residuals and RSS of a new factorisation to 1e-12", () => {
    const r = new Float64Array(f.n);
    const p = projectOnFactor(f.design, f.qr, v, r);
    expect(rel(p.rss, fresh.rss)).toBeLessThan(1e-12);
    p.c.forEach((c, j) => expect(Math.abs(c / f.qr.scale[j] - fresh.coef[j])).toBeLessThan(1e-12 * Math.max(...fresh.coef.map(Math.abs))));
    let worst = 0;
    let size = 0;
    for (let i = 0; i < f.n; i++) {
      worst = Math.max(worst, Math.abs(r[i] - fresh.resid[i]));
      size = Math.max(size, Math.abs(v[i]));
    }
    expect(worst).toBeLessThan(1e-12 * size);
  });

  it("rssOnFactor, one side or several in the same passes, gives the RSS of new factorisations to 1e-12", () => {
    const w = Float64Array.from(v, (a, i) => a * (1 + 0.5 * Math.cos(i)));
    const freshW = leastSquares(f.design, w, false).qr!;
    const out = rssOnFactor(f.design, f.qr, 2, (start, m, V) => {
      for (let i = 0; i < m; i++) {
        V[i] = v[start + i];
        V[SIDE_ROWS + i] = w[start + i];
      }
    });
    expect(rel(out.rss[0], fresh.rss)).toBeLessThan(1e-12);
    expect(rel(out.rss[1], freshW.rss)).toBeLessThan(1e-12);
  });

  it("the one-pass screening RSS stays within the error bound it reports", () => {
    const out = roughRssOnFactor(f.design, f.qr, 1, (start, m, V) => {
      for (let i = 0; i < m; i++) V[i] = v[start + i];
    });
    expect(Number.isFinite(out.bound[0])).toBe(true);
    expect(rel(out.rss[0], fresh.rss)).toBeLessThanOrEqual(out.bound[0]);
  });
});

describe("Box–Cox profile on the fit's factor", () => {
  const logFit = olsCase(4000, 12);
  const levelFit = levelTwin(logFit);
  const u = logFit.data.y;
  const n = logFit.n;
  const gm = u.reduce((s, a) => s + a, 0) / n;
  const freshLl = (l: number) => {
    const w = Float64Array.from(u, (a) => (l === 0 ? a - gm : Math.expm1(l * (a - gm)) / l));
    return (-n / 2) * Math.log(leastSquares(logFit.design, w).qr!.rss);
  };

  it("reuses the factor of a well-conditioned fit, and ℓ(λ) equals a new factorisation's to 1e-12 of n", () => {
    const p = boxCoxProfileOf(logFit.design, logFit.qr, true, u);
    expect(p.reused).toBe(true);
    const lambdas = [-2, -0.7, -0.1, 0, 0.3, 1, 2, 5];
    const { value, columns } = factorisations(() => lambdas.map((l) => p.ll(l)));
    expect(columns).toEqual([]);
    lambdas.forEach((l, i) => expect(Math.abs(value[i] - freshLl(l))).toBeLessThan(1e-12 * n));
  });

  it("its slope equals a central difference of ℓ (to 1e-6 relative)", () => {
    const p = boxCoxProfileOf(logFit.design, logFit.qr, true, u);
    for (const l of [-1.5, -0.2, 1e-6, 0, 0.4, 1.7]) {
      const d = 1e-5;
      const diff = (freshLl(l + d) - freshLl(l - d)) / (2 * d);
      expect(Math.abs(p.slope(l) - diff)).toBeLessThan(1e-6 * Math.max(1, Math.abs(diff)));
    }
  });

  it("λ̂, its interval and the LR p-values from the log fit equal those of the level fit's own profile", () => {
    // boxCox(levelFit) takes log y from y in levels and evaluates ℓ(0), ℓ(1) on the factor; the log
    // fit's path takes them from the two fits' residuals
    const a = boxCoxOnLogs(logFit, 0.95, levelFit);
    const b = boxCox(levelFit, 0.95);
    expect(Math.abs(a.lambda - b.lambda)).toBeLessThan(1e-9);
    expect(Math.abs((a.lower as number) - (b.lower as number))).toBeLessThan(1e-10);
    expect(Math.abs((a.upper as number) - (b.upper as number))).toBeLessThan(1e-10);
    expect(rel(a.pLog, b.pLog)).toBeLessThan(1e-9);
    expect(Math.abs(a.pLevels - b.pLevels)).toBeLessThan(1e-12);
  });

  it("an ill-conditioned design is factorised anew for every λ (and still finds the maximum)", () => {
    const bad = olsCase(800, 13, "form=log-log", true);
    expect(bad.qr.condition).toBeGreaterThanOrEqual(REUSE_CONDITION);
    const p = boxCoxProfileOf(bad.design, bad.qr, true, bad.data.y);
    expect(p.reused).toBe(false);
    const { value: bc, columns } = factorisations(() => boxCoxOnLogs(bad, 0.95));
    expect(columns.length).toBeGreaterThan(5);
    expect(columns.every((c) => c === bad.k)).toBe(true);
    expect(bc.logLik(bc.lambda)).toBeGreaterThanOrEqual(Math.max(bc.logLik(bc.lambda - 1e-4), bc.logLik(bc.lambda + 1e-4)));
  });
});

/** t of z added to y ~ X from a new factorisation of [X, z] (what peTest did before reusing the fit). */
function freshAddedT(X: Float64Array[], z: Float64Array, y: Float64Array, se: "classical" | "HC0" | "HC1" | "HC2" | "HC3"): number {
  const cols = [...X, z];
  const q = leastSquares(cols, y, false).qr!;
  const k = cols.length;
  const input = leastSquaresInput(cols, q, new Int32Array(q.n).map((_, i) => i + 1));
  const V = se === "classical" ? classicalCovariance(input) : hcCovariance(input, se, null).V;
  return (q.coef[k - 1] * q.scale[k - 1]) / Math.sqrt(V[(k - 1) * k + k - 1]);
}

describe("PE test adds its column to the fit (partitioned regression)", () => {
  it("an ill-conditioned fit is not reused: both sides factorise [X, z] anew", () => {
    const logFit = olsCase(800, 19, "form=log-log", true);
    const levelFit = levelTwin(logFit);
    const { columns } = factorisations(() => peTest(logFit, levelFit, "HC3", null));
    expect(columns).toEqual([logFit.k + 1, logFit.k + 1]);
  });

  for (const [label, n, seed] of [["every level fitted value above zero", 2500, 14], ["rows with a level fitted value ≤ 0 left out", 2500, 15]] as const) {
    it(`t equals a new factorisation of [X, z] to 1e-12 for every covariance type (${label})`, () => {
      // y to the power 0.5 keeps every level fitted value above zero; to the power 2.5 it spreads y
      // enough that the level fit goes below zero on some rows
      const { y, x } = rows(n, seed);
      for (let i = 1; i < y.length; i++) y[i] = [Math.pow(y[i][0] as number, seed === 15 ? 2.5 : 0.5)];
      const logFit = fitUncached({ y, x, options: parseOptions("form=log-log"), yOrigin: null, xOrigin: null }) as OlsFit;
      const levelFit = levelTwin(logFit);
      const fl = levelFit.fitted;
      const fg = logFit.fitted;
      const keep: number[] = [];
      for (let i = 0; i < n; i++) if (fl[i] > 0) keep.push(i);
      if (seed === 15) expect(keep.length).toBeLessThan(n);
      else expect(keep.length).toBe(n);
      const sub = (c: Float64Array) => Float64Array.from(keep, (i) => c[i]);
      const zLevels = Float64Array.from(keep, (i) => Math.log(fl[i]) - fg[i]);
      const zLogs = Float64Array.from(fl, (v, i) => v - Math.exp(fg[i]));
      for (const se of ["classical", "HC0", "HC1", "HC2", "HC3"] as const) {
        const { value: pe, columns } = factorisations(() => peTest(logFit, levelFit, se, null));
        expect(columns).toEqual([]); // both sides on the fits' factors (the kept rows' from a downdate)
        expect(rel(pe.logs.t, freshAddedT(logFit.design, zLogs, logFit.data.y, se))).toBeLessThan(1e-12);
        expect(rel(pe.levels.t, freshAddedT(levelFit.design.map(sub), zLevels, sub(levelFit.data.y), se))).toBeLessThan(1e-12);
        expect(pe.levels.leftOut).toBe(n - keep.length);
      }
    });
  }
});

/** RESET's F from a new factorisation of [X, ŷ², ŷ³] (centred ŷ, as reset() builds them). */
function freshReset(f: OlsFit): number {
  const fitted = f.fitted;
  const m = fitted.reduce((s, v) => s + v, 0) / f.n;
  const c = Float64Array.from(fitted, (v) => v - m);
  const q = leastSquares([...f.design, Float64Array.from(c, (v) => v * v), Float64Array.from(c, (v) => v * v * v)], f.data.y, false).qr!;
  return ((f.qr.rss - q.rss) / 2) / (q.rss / (f.dfResid - 2));
}

describe("RESET adds ŷ² and ŷ³ to the fit (partitioned regression)", () => {
  it("F and p equal a new factorisation of [X, ŷ², ŷ³] to 1e-12 on a well-conditioned fit", () => {
    const f = olsCase(3000, 16);
    expect(factorReusable(f)).toBe(true);
    const { value: r, columns } = factorisations(() => reset(f));
    expect(columns).toEqual([2]); // only the regression of e on the two added columns' residuals
    const F = freshReset(f);
    expect(rel(r.statistic, F)).toBeLessThan(1e-12);
    expect(r.df).toEqual([2, f.dfResid - 2]);
    expect(rel(r.pValue, fisherSf(F, 2, f.dfResid - 2))).toBeLessThan(1e-9);
  });

  it("an ill-conditioned fit is not reused: RESET factorises [X, ŷ², ŷ³] anew", () => {
    const f = olsCase(800, 17, "form=log-log", true);
    expect(factorReusable(f)).toBe(false);
    const { value: r, columns } = factorisations(() => reset(f));
    expect(columns).toEqual([f.k + 2]);
    expect(rel(r.statistic, freshReset(f))).toBeLessThan(1e-9);
  });
});

describe("the two forms of Breusch–Pagan share one auxiliary regression", () => {
  it("the original form's statistic equals a new factorisation of e²/σ̂² on the regressors to 1e-12 of TSS/2", () => {
    const f = olsCase(3000, 18);
    const e = f.resid;
    const sigma2 = e.reduce((s, v) => s + v * v, 0) / f.n;
    const a = auxiliary(Float64Array.from(e, (v) => (v * v) / sigma2), f.data.x);
    const o = breuschPaganOriginal(f);
    expect(Math.abs(o.statistic - (a.tss - a.rss) / 2) / (a.tss / 2)).toBeLessThan(1e-12);
  });
});

describe("FORMCHECK's level model on the log fit's factor", () => {
  it("residuals, fitted values, Jarque–Bera and Breusch–Pagan equal those of a new level fit to 1e-12", () => {
    const logFit = olsCase(3000, 20);
    const twin = levelTwin(logFit);
    const { value: side, columns } = factorisations(() => levelOnLogFactor(logFit, EXACT_FIT));
    expect(columns).toEqual([]);
    expect(side).not.toBeNull();
    const s = side!;
    const ySize = Math.max(...twin.data.y);
    for (let i = 0; i < logFit.n; i++) {
      expect(Math.abs(s.fitted[i] - twin.fitted[i])).toBeLessThan(1e-12 * ySize);
      expect(Math.abs(s.scaledResid[i] * s.yUnit - twin.resid[i])).toBeLessThan(1e-12 * ySize);
    }
    expect(rel(s.qr.rss * s.yUnit ** 2, twin.rss)).toBeLessThan(1e-12);
    expect(rel(jarqueBeraOf(s.scaledResid).statistic, jarqueBera(twin).statistic)).toBeLessThan(1e-11);
    // n·R²: compared on the scale n of its two terms
    expect(Math.abs(breuschPaganOf(logFit, s.scaledResid).statistic - breuschPaganKoenker(twin).statistic) / logFit.n).toBeLessThan(1e-12);
  });

  it("an ill-conditioned log fit gets a level fit of its own", () => {
    expect(levelOnLogFactor(olsCase(800, 21, "form=log-log", true), EXACT_FIT)).toBeNull();
  });
});
