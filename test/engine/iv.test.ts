/**
 * Two-stage least squares on columns: every bad input gets a problem with a message that names the
 * column and says what to do, and identities that need no reference. The numbers themselves are
 * checked against R's AER::ivreg in test/reference/iv.test.ts.
 */
import { fitIv, type IvData } from "../../functions/engine/iv";
import { ivCheck } from "../../functions/engine/ivCheck";
import { ElxProblem } from "../../functions/engine/problems";
import { leastSquares, type QrFit } from "../../functions/engine/leastSquares";
import { Rng } from "../simulation/rng";

/** Demand with a price that responds to the demand shock, a cost shifter and income. */
function market(n = 200, seed = 3): IvData {
  const r = new Rng(seed);
  const y = new Float64Array(n);
  const price = new Float64Array(n);
  const income = new Float64Array(n);
  const cost = new Float64Array(n);
  const wage = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = r.normal();
    income[i] = r.normal();
    cost[i] = r.normal();
    wage[i] = r.normal();
    price[i] = 0.8 * cost[i] + 0.4 * wage[i] + 0.5 * u + 0.3 * r.normal();
    y[i] = 2 - 1.2 * price[i] + 0.5 * income[i] + u;
  }
  return { y, x: [price, income], xNames: ["Price", "Income"], endogenous: ["Price"], instruments: [cost, wage], instrumentNames: ["Cost", "Wage"], intercept: true };
}

function problem(f: () => unknown): ElxProblem {
  try {
    f();
  } catch (e) {
    if (e instanceof ElxProblem) return e;
    throw e;
  }
  throw new Error("expected a problem, got a result");
}

describe("2SLS bad input: a message each", () => {
  test("fewer instruments than endogenous regressors", () => {
    const d = market();
    const p = problem(() => fitIv({ ...d, endogenous: ["Price", "Income"], instruments: [d.instruments[0]], instrumentNames: ["Cost"] }));
    expect(p.kind).toBe("value");
    expect(p.message).toBe("2 regressors are named endogenous but only 1 instrument is given: two-stage least squares needs at least as many excluded instruments as endogenous regressors; add instruments or name fewer regressors endogenous");
  });

  test("an instrument that is also a regressor", () => {
    const d = market();
    const p = problem(() => fitIv({ ...d, instruments: [d.instruments[0], d.x[1]], instrumentNames: ["Cost", "Income"] }));
    expect(p.message).toMatch(/^Income is both a regressor and an instrument: an excluded instrument must be left out of the regressors .* remove it from x or from instruments=$/);
  });

  test("an instrument named endogenous", () => {
    const d = market();
    const p = problem(() => fitIv({ ...d, instrumentNames: ["Cost", "Price"] }));
    expect(p.message).toMatch(/^Price is named both endogenous and as an instrument/);
    const q = problem(() => fitIv({ ...d, endogenous: ["Wage"] }));
    expect(q.message).toMatch(/^Wage is named in endogenous= but it is an instrument: an endogenous column must be a regressor in x/);
  });

  test("an endogenous name not among the regressors, with the nearest name", () => {
    const p = problem(() => fitIv({ ...market(), endogenous: ["Prise"] }));
    expect(p.message).toBe("endogenous=Prise is not one of the regressors (Price and Income): did you mean Price?");
  });

  test("no endogenous regressor, no instrument", () => {
    expect(problem(() => fitIv({ ...market(), endogenous: [] })).message).toMatch(/^two-stage least squares needs endogenous=/);
    expect(problem(() => fitIv({ ...market(), endogenous: [], instruments: [], instrumentNames: [] })).message).toMatch(/needs endogenous=/);
    expect(problem(() => fitIv({ ...market(), instruments: [], instrumentNames: [] })).message).toMatch(/^two-stage least squares needs instruments=/);
  });

  test("a constant instrument is named", () => {
    const d = market();
    const p = problem(() => fitIv({ ...d, instruments: [d.instruments[0], new Float64Array(d.y.length).fill(3)] }));
    expect(p.message).toBe("instrument Wage has the same value in every row used, so it cannot be told apart from the intercept and moves nothing: remove it from instruments=");
    const q = problem(() => fitIv({ ...d, intercept: false, instruments: [d.instruments[0], new Float64Array(d.y.length)] }));
    expect(q.message).toBe("instrument Wage is zero in every row used: remove it from instruments=");
  });

  test("an instrument collinear with the exogenous regressors is named, with what it depends on", () => {
    const d = market();
    const dup = Float64Array.from(d.x[1], (v) => 2 * v + 3);
    const p = problem(() => fitIv({ ...d, instruments: [d.instruments[0], dup] }));
    expect(p.message).toBe("instrument Wage is an exact linear combination of (Intercept) and Income (collinear), so it adds nothing the other instruments and exogenous regressors do not already hold: remove it from instruments=");
    const two = Float64Array.from(d.instruments[0], (v, i) => v - d.x[1][i]);
    const q = problem(() => fitIv({ ...d, instruments: [d.instruments[0], two] }));
    expect(q.message).toMatch(/^instrument Wage is an exact linear combination of Income and Cost \(collinear\)/);
  });

  test("an instrument holding the endogenous regressor's own values", () => {
    const d = market();
    const p = problem(() => fitIv({ ...d, instruments: [d.instruments[0], Float64Array.from(d.x[0])] }));
    expect(p.message).toBe("instrument Wage holds the same values as the endogenous regressor Price: an instrument must be a different column that moves Price from outside");
  });

  test("instruments that do not move the endogenous regressor at all: not identified", () => {
    const n = 40;
    const z = Float64Array.from({ length: n }, (_, i) => (i % 2 === 0 ? 1 : -1));
    const x = Float64Array.from({ length: n }, (_, i) => (i % 4 < 2 ? 1 : -1)); // orthogonal to z, mean 0
    const y = Float64Array.from({ length: n }, (_, i) => x[i] + 0.1 * Math.sin(i));
    const p = problem(() => fitIv({ y, x: [x], xNames: ["Price"], endogenous: ["Price"], instruments: [z], instrumentNames: ["Cost"], intercept: true }));
    expect(p.message).toBe("the instruments and exogenous regressors do not move Price at all (its first-stage prediction is zero in every row): the model is not identified; use instruments that move Price");
  });

  test("two endogenous regressors the instruments move only together: not identified, named", () => {
    const n = 64;
    const r = new Rng(11);
    const z1 = Float64Array.from({ length: n }, (_, i) => (i % 2 === 0 ? 1 : -1));
    const z2 = Float64Array.from({ length: n }, (_, i) => (i % 8 < 4 ? 1 : -1));
    const w = Float64Array.from({ length: n }, (_, i) => (i % 4 < 2 ? 1 : -1)); // orthogonal to 1, z1, z2
    const x1 = Float64Array.from(z1, (v, i) => v + 0.3 * z2[i] + r.normal());
    const x2 = Float64Array.from(x1, (v, i) => 2 * v + w[i]); // P_Z x2 = 2 P_Z x1
    const y = Float64Array.from(x1, (v) => v + r.normal());
    const p = problem(() => fitIv({ y, x: [x1, x2], xNames: ["Price", "Promo"], endogenous: ["Price", "Promo"], instruments: [z1, z2], instrumentNames: ["Cost", "Wage"], intercept: true }));
    expect(p.message).toBe("the instruments do not move the endogenous regressors apart from the other regressors (the first-stage prediction of Promo is a combination of Price): the model is not identified; use instruments that each move an endogenous regressor");
  });

  test("an endogenous regressor collinear with the other regressors gets the collinearity message", () => {
    const d = market();
    const price = Float64Array.from(d.x[1], (v) => 2 * v + 1);
    const p = problem(() => fitIv({ ...d, x: [d.x[1], price], xNames: ["Income", "Price"] }));
    expect(p.message).toBe("Price is an exact linear combination of (Intercept) and Income (collinear): remove one of these columns");
  });

  test("HC2 and HC3 are refused with a way out", () => {
    const fit = fitIv(market());
    for (const type of ["HC2", "HC3"] as const) {
      const p = problem(() => fit.covariance({ type }));
      expect(p.message).toBe(`se=${type} is not available for two-stage least squares: its leverage correction has no agreed form there; use se=HC1 (or HC0), se=HAC, or cluster=`);
      expect(problem(() => ivCheck(fit, { type })).message).toMatch(new RegExp(`^se=${type} is not available`));
    }
  });

  test("weights that are not positive, clusters that are too few, columns of other lengths", () => {
    const d = market();
    const w = new Float64Array(d.y.length).fill(1);
    w[7] = 0;
    expect(problem(() => fitIv({ ...d, weights: w })).message).toBe("weight 0 in row 8 is not a positive number: weights must be positive");
    const fit = fitIv(d);
    expect(problem(() => fit.covariance({ type: "cluster", clusters: new Array(d.y.length).fill("A") })).message).toMatch(/^cluster-robust errors need at least 2 clusters; the cluster column has 1/);
    expect(problem(() => fit.covariance({ type: "cluster" })).message).toBe("se=cluster needs a cluster column: name it in cluster=");
    expect(problem(() => fitIv({ ...d, instruments: [d.instruments[0], d.instruments[1].subarray(1)] })).message).toBe(`Wage has ${d.y.length - 1} rows but y has ${d.y.length}: every column must have the same rows`);
  });

  test("too few rows for the first stage", () => {
    const d = market(4);
    expect(problem(() => fitIv(d)).message).toBe("4 usable rows are too few for a first stage with 4 columns (intercept, exogenous regressors and instruments): need at least 5");
  });

  test("an exact fit has no errors (#N/A)", () => {
    const d = market();
    const y = Float64Array.from(d.y, (_, i) => 1 + 2 * d.x[0][i] - d.x[1][i]);
    const fit = fitIv({ ...d, y });
    const p = problem(() => fit.covariance({ type: "HC1" }));
    expect(p.kind).toBe("na");
    expect(p.message).toBe("the fit is exact (every residual is zero up to rounding), so the errors of the coefficients are undefined");
    expect(problem(() => ivCheck(fit, { type: "classical" })).kind).toBe("na");
  });
});

describe("2SLS identities (no reference needed)", () => {
  test("exactly identified, 2SLS is the instrumental-variable estimator (Z'X)^-1 Z'y, solved here by QR of Z'X", () => {
    // Source: the IV estimator of the exactly identified case (e.g. Wooldridge, Introductory
    // Econometrics, ch. 15): with as many instruments as endogenous regressors, b = (Z'X)^-1 Z'y.
    const d = market();
    const dj = { ...d, instruments: [d.instruments[0]], instrumentNames: ["Cost"] };
    const fit = fitIv(dj);
    // Z'X b = Z'y  ⇔  Z'(y − Xb) = 0: the structural residuals are orthogonal to every column of Z
    for (const z of fit.instrumentsDesign) {
      let s = 0;
      let scale = 0;
      for (let i = 0; i < fit.n; i++) {
        s += z[i] * fit.resid[i];
        scale += Math.abs(z[i] * fit.resid[i]);
      }
      expect(Math.abs(s)).toBeLessThan(1e-12 * scale);
    }
  });

  test("over-identified, the structural residuals are orthogonal to X̂ (the 2SLS normal equations)", () => {
    // Source: the definition b = (X̂'X̂)^-1 X̂'y with X̂ = P_Z X gives X̂'(y − Xb) = X̂'(y − X̂b) = 0.
    const fit = fitIv(market());
    for (const c of fit.projected) {
      let s = 0;
      let scale = 0;
      for (let i = 0; i < fit.n; i++) {
        s += c[i] * fit.resid[i];
        scale += Math.abs(c[i] * fit.resid[i]);
      }
      expect(Math.abs(s)).toBeLessThan(1e-12 * scale);
    }
  });

  test("unit weights give the unweighted fit; doubling every weight changes nothing", () => {
    // Source: weighted 2SLS multiplies y, X and Z by √w (as R's ivreg(weights =)); a common factor
    // cancels in b and in every sandwich.
    const d = market();
    const a = fitIv(d);
    const b = fitIv({ ...d, weights: new Float64Array(d.y.length).fill(1) });
    const c = fitIv({ ...d, weights: new Float64Array(d.y.length).fill(2) });
    a.coef.forEach((v, j) => {
      expect(b.coef[j]).toBeCloseTo(v, 12);
      expect(c.coef[j]).toBeCloseTo(v, 12);
    });
    const sa = a.standardErrors(a.covariance({ type: "HC1" }));
    const sc = c.standardErrors(c.covariance({ type: "HC1" }));
    sa.forEach((v, j) => expect(sc[j] / v).toBeCloseTo(1, 12));
  });

  test("row order does not change coefficients or HC1 errors", () => {
    // Property: every sum in 2SLS and HC1 runs over rows, so a permutation leaves them unchanged.
    const d = market();
    const n = d.y.length;
    const perm = Array.from({ length: n }, (_, i) => (i * 37) % n);
    const p = (c: Float64Array) => Float64Array.from(perm, (i) => c[i]);
    const a = fitIv(d);
    const b = fitIv({ ...d, y: p(d.y), x: d.x.map(p), instruments: d.instruments.map(p) });
    a.coef.forEach((v, j) => expect(b.coef[j] / v).toBeCloseTo(1, 12));
    const sa = a.standardErrors(a.covariance({ type: "HC1" }));
    const sb = b.standardErrors(b.covariance({ type: "HC1" }));
    sa.forEach((v, j) => expect(sb[j] / v).toBeCloseTo(1, 12));
  });

  test("the first-stage F in the checks is that of the first-stage regression itself", () => {
    // Source: the F statistic of q exclusion restrictions from the restricted and unrestricted
    // residual sums of squares, ((RSS_r − RSS_u)/q)/(RSS_u/(n − k)) (e.g. Wooldridge, ch. 4).
    const d = market();
    const fit = fitIv(d);
    const chk = ivCheck(fit, { type: "classical" });
    const one = new Float64Array(d.y.length).fill(1);
    const u = (leastSquares([one, d.x[1], ...d.instruments], d.x[0]).qr as QrFit);
    const r = (leastSquares([one, d.x[1]], d.x[0]).qr as QrFit);
    const f = ((r.rss - u.rss) / 2) / (u.rss / (d.y.length - 4));
    expect(chk.firstStages[0].f / f).toBeCloseTo(1, 12);
    expect(chk.firstStages[0].df1).toBe(2);
    expect(chk.reading).toMatch(/^The instruments are not weak by the rule of thumb first-stage F ≥ 10 \(Staiger and Stock 1997; common practice\)\. Wu–Hausman rejects at 5%/);
  });
});

describe("the reading of the checks", () => {
  test("names each weakly instrumented regressor with its F, and says the Sargan result means some instrument, not which", () => {
    // Source for the threshold: Staiger and Stock (1997), Econometrica 65(3): first-stage F below 10
    // (a rule of thumb, common practice). Invented data: a pure-noise shifter (weak), and a valid cost shifter beside one tied to the error (Sargan).
    const d = market(300, 9);
    const r = new Rng(9);
    const weakZ = Float64Array.from({ length: 300 }, () => r.normal());
    const bad = Float64Array.from(d.y, (v, i) => 0.8 * (v - 2 + 1.2 * d.x[0][i] - 0.5 * d.x[1][i]) + 0.2 * r.normal()); // tied to the error
    const fit = fitIv({ ...d, instruments: [d.instruments[0], bad], instrumentNames: ["Cost", "Leak"] });
    const chk = ivCheck(fit, { type: "HC1" });
    expect(chk.sargan).not.toBeNull();
    expect(chk.reading).toMatch(/Sargan rejects at 5% \(p = [\d.e-]+\): at least one instrument is invalid \(related to the error\), though the test cannot say which\./);
    const weakFit = fitIv({ ...d, instruments: [weakZ], instrumentNames: ["Noise"] });
    const w = ivCheck(weakFit, { type: "HC1" });
    expect(w.weak).toBe(true);
    expect(w.reading).toMatch(/^Weak instruments: the first-stage F is below 10 for Price \([\d.]+\) \(Staiger and Stock 1997; a rule of thumb, common practice\)/);
    expect(w.reading).toMatch(/Sargan needs more instruments than endogenous regressors \(exactly identified here\)\.$/);
  });
});
