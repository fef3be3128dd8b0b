/**
 * The split fit on seeded random designs, ill-conditioned on purpose, against the single-thread
 * engine (ELX.FIT and ELX.HETEROTEST's engine on the same rows; the engine itself is checked against
 * NIST StRD and R in test/host/nist.test.ts and test/reference/). Invented data: a simulation input,
 * not a statistical reference. For 1 to 8 parts of random sizes (some empty) and random chunk sizes:
 * coefficients, RSS, R² and the Breusch–Pagan statistic to 1e-12 relative (the statistic: see
 * auxNoise below for designs that need refinement); standard errors, t and
 * intervals to 1e-12 or κ·ε where the design's condition κ makes that larger (two backward-stable
 * factorisations differ there by about κ·ε: Higham 2002, ch. 19–20); p-values to 1e-12 times their
 * condition number |d log p / d log statistic|.
 */
import { agree, randomChunks, randomShares, single, spec, split } from "./splitHelpers";
import { Rng } from "../simulation/rng";
import type { ColumnFitSpec } from "../../functions/engine/columnFitTypes";

interface Design {
  name: string;
  y: Float64Array;
  x: Float64Array[];
  spec: ColumnFitSpec;
}

/** Near-collinear log-log demand: Price and a second price that is the first plus a little noise. */
function collinear(seed: number, n: number, closeness: number): Design {
  const g = new Rng(seed);
  const p = new Float64Array(n);
  const p2 = new Float64Array(n);
  const f = new Float64Array(n);
  const promo = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    p[i] = 1 + 3 * g.next();
    p2[i] = p[i] * Math.exp(closeness * g.normal());
    f[i] = 20 + 200 * g.next();
    promo[i] = g.next() < 0.25 ? 1 : 0;
    y[i] = Math.exp(4 - 1.3 * Math.log(p[i]) + 0.2 * Math.log(p2[i]) + 0.7 * Math.log(f[i]) + 0.15 * promo[i] + (0.1 + 0.2 * promo[i]) * g.normal());
  }
  return { name: `log-log, two prices ${closeness} apart (seed ${seed}, n ${n})`, y, x: [p, p2, f, promo], spec: spec("Units", ["Price", "Price2", "Footfall", "Promo"]) };
}

/** A polynomial in a shifted variable (as NIST Filip and Longley): refinement is needed. */
function polynomial(seed: number, n: number, degree: number, shift: number): Design {
  const g = new Rng(seed);
  const t = Float64Array.from({ length: n }, () => shift + g.next());
  const x = Array.from({ length: degree }, (_, d) => Float64Array.from(t, (v) => Math.pow(v, d + 1)));
  const y = Float64Array.from(t, (v, i) => {
    let s = 1;
    for (let d = 0; d < degree; d++) s += Math.pow(-1, d) * x[d][i] / (d + 1);
    return s + 1e-3 * g.normal() * (1 + v - shift);
  });
  return { name: `level-level polynomial of degree ${degree} in x + ${shift} (seed ${seed}, n ${n})`, y, x, spec: spec("y", x.map((_, d) => `x^${d + 1}`), { form: "level-level", se: "HC1" }) };
}

/** Columns of very different magnitudes, y near 1e120 and one x near 1e−120: the units of y and of the tests are rescaled. */
function extreme(seed: number, n: number): Design {
  const g = new Rng(seed);
  const a = Float64Array.from({ length: n }, () => 1e-120 * (1 + g.next()));
  const b = Float64Array.from({ length: n }, () => 1e6 * g.normal());
  const c = Float64Array.from({ length: n }, () => g.next());
  const y = Float64Array.from({ length: n }, (_, i) => 1e120 * (3 + 2e119 * a[i] - 1e-7 * b[i] + c[i] + (0.2 + c[i]) * g.normal()));
  return { name: `level-level, y ≈ 1e120, x from 1e−120 to 1e6 (seed ${seed}, n ${n})`, y, x: [a, b, c], spec: spec("y", ["a", "b", "c"], { form: "level-level", se: "HC2" }) };
}

/**
 * Columns whose Σx² leaves [1e-280, 1e280] (x near 1e150 and 1e-145), and one whose parts' sums are
 * each safe but whose total is not (x near 3e139 over 120 rows): the column lengths are combined
 * from the parts' scaled sums as leastSquares.ts norm2 rescales.
 */
function hugeColumns(seed: number, n: number): Design {
  const g = new Rng(seed);
  const a = Float64Array.from({ length: n }, () => 1e150 * (1 + g.next()));
  const b = Float64Array.from({ length: n }, () => 1e-145 * (1 + g.next()));
  const c = Float64Array.from({ length: n }, () => 3e139 * (1 + g.next()));
  const y = Float64Array.from({ length: n }, (_, i) => 1 + 1e-150 * a[i] - 2e145 * b[i] + 1e-139 * c[i] + 0.3 * g.normal());
  return { name: `level-level, x near 1e150, 1e-145 and 3e139 (seed ${seed}, n ${n})`, y, x: [a, b, c], spec: spec("y", ["a", "b", "c"], { form: "level-level", se: "HC3" }) };
}

/** Without an intercept (the test's auxiliary regression then adds one). */
function noIntercept(seed: number, n: number): Design {
  const d = collinear(seed, n, 0.05);
  return { ...d, name: `log-log without intercept (seed ${seed}, n ${n})`, spec: { ...d.spec, intercept: false, se: "HC0" } };
}

const DESIGNS: Design[] = [
  collinear(1, 600, 0.01),
  collinear(2, 5000, 1e-4),
  collinear(3, 3000, 1e-6),
  polynomial(4, 800, 5, 10),
  polynomial(5, 3000, 6, 3),
  extreme(6, 1500),
  hugeColumns(9, 120),
  noIntercept(7, 1200),
  { ...collinear(8, 2000, 0.1), spec: { ...collinear(8, 10, 0.1).spec, se: "classical", form: "log-level" } },
];

const table: Record<string, Record<string, number>> = {};

describe("split fit on seeded ill-conditioned designs equals the single-thread engine", () => {
  for (const d of DESIGNS) {
    it(`${d.name}, se=${d.spec.se}: 1–8 parts, random part and chunk sizes`, async () => {
      const one = single(d.y, d.x, d.spec);
      const g = new Rng(d.y.length + d.x.length);
      table[d.name] = {};
      let cond = 0;
      for (let P = 1; P <= 8; P++) {
        const chunks = P === 5 ? 1 : randomChunks(g, P % 2 ? 700 : 40);
        const s = await split(d.y, d.x, d.spec, randomShares(d.y.length, P, g), chunks);
        expect(s.refined).toBe(one.refined);
        cond = s.condition;
        if (P === 1) {
          // one part: the single-thread factor, bit for bit
          expect(s.coefficients).toEqual(one.coefficients);
          expect(s.standardErrors).toEqual(one.standardErrors);
        }
        agree(s, one, table[d.name]);
      }
      table[d.name].condition = cond;
      table[d.name].refined = one.refined ? 1 : 0;
    });
  }
  afterAll(() => {
    console.log("random designs: worst relative difference, split vs single-thread, over 1–8 parts\n" + JSON.stringify(table, null, 1));
  });
});
