/**
 * Helpers of the split-engine tests: the same rows through the single-thread cell path (the engine
 * ELX.FIT and ELX.HETEROTEST read) and through columnFit over parts, and the relative difference.
 */
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { breuschPaganKoenker } from "../../functions/engine/specTests";
import type { OlsFit } from "../../functions/engine/fit";
import { appendColumns, columnFit, localExecutor } from "../../functions/engine/columnFit";
import type { ColumnFitResult, ColumnFitSpec } from "../../functions/engine/columnFitTypes";
import { ElxProblem } from "../../functions/engine/problems";
import { Rng } from "../simulation/rng";
import { chiSquareSf, studentTwoSided } from "../../functions/engine/distributions";

/** The numbers a split fit returns, from the single-thread engine on the same rows. */
export interface Numbers {
  n: number;
  terms: string[];
  coefficients: number[];
  standardErrors: number[];
  t: number[];
  p: number[];
  lower: number[];
  upper: number[];
  rss: number;
  rSquared: number;
  bp: { statistic: number; p: number } | null;
  refined: boolean;
}

/** Column values as host cells: NaN → blank (null). */
function cell(v: number): number | null {
  return Number.isNaN(v) ? null : v;
}

/** ELX.FIT's engine (fitUncached, as a formula with these ranges), with ELX.HETEROTEST's bp. */
export function single(y: Float64Array, x: Float64Array[], spec: ColumnFitSpec): Numbers {
  const yRows: unknown[][] = [[spec.yName]];
  const xRows: unknown[][] = [spec.xNames.slice()];
  for (let i = 0; i < y.length; i++) {
    yRows.push([cell(y[i])]);
    xRows.push(x.map((c) => cell(c[i])));
  }
  const o = parseOptions(`form=${spec.form}; zeros=${spec.zeros}; se=${spec.se}; level=${spec.level}; intercept=${spec.intercept}`);
  const fit = fitUncached({ y: yRows, x: xRows, options: o, yOrigin: null, xOrigin: null }) as OlsFit;
  const cov = fit.covariance(spec.se);
  const se = Array.from(fit.standardErrors(cov));
  const b = Array.from(fit.coef);
  const crit = fit.criticalValue(spec.level, cov);
  const t = b.map((v, j) => v / se[j]);
  let bp: Numbers["bp"] = null;
  try {
    const r = breuschPaganKoenker(fit);
    bp = { statistic: r.statistic, p: r.pValue };
  } catch (e) {
    if (!(e instanceof ElxProblem)) throw e;
  }
  return {
    n: fit.n, terms: fit.terms.map((tm) => tm.name), coefficients: b, standardErrors: se, t,
    p: t.map((v) => fit.pValue(v, cov)), lower: b.map((v, j) => v - crit * se[j]), upper: b.map((v, j) => v + crit * se[j]),
    rss: fit.rss, rSquared: fit.statistics().rSquared, bp, refined: fit.qr.refined,
  };
}

/** Random sizes summing to n over `parts` parts (some may be 0 when `allowEmpty`). */
export function randomShares(n: number, parts: number, g: Rng, allowEmpty = true): number[] {
  if (parts === 1) return [n];
  const cuts = Array.from({ length: parts - 1 }, () => Math.floor(g.next() * (n + 1))).sort((a, b) => a - b);
  const out: number[] = [];
  let prev = 0;
  for (const c of [...cuts, n]) {
    out.push(c - prev);
    prev = c;
  }
  if (!allowEmpty && out.some((s) => s === 0)) return randomShares(n, parts, g, allowEmpty);
  return out;
}

/** Random chunk sizes from 1 to `most` rows. */
export function randomChunks(g: Rng, most: number, count = 16): number[] {
  return Array.from({ length: count }, () => 1 + Math.floor(g.next() * most));
}

/** The fit over `partRows.length` local parts with the given chunk sizes. */
export async function split(y: Float64Array, x: Float64Array[], spec: ColumnFitSpec, partRows: number[], chunkRows: number | number[]): Promise<ColumnFitResult> {
  const exec = localExecutor(partRows.length);
  await appendColumns(exec, Float64Array.from(y), x.map((c) => Float64Array.from(c)), partRows, chunkRows);
  return columnFit(exec, spec);
}

/** |a − b| / |b| (0 when both are 0; |a| when b = 0). */
export function rel(a: number, b: number): number {
  if (a === b) return 0;
  return b === 0 ? Math.abs(a) : Math.abs(a - b) / Math.abs(b);
}

/** The largest relative difference between a split fit and the single-thread numbers, per quantity. */
export function worst(s: ColumnFitResult, r: Numbers): Record<string, number> {
  const m = (a: number[], b: number[]) => a.reduce((w, v, j) => Math.max(w, rel(v, b[j])), 0);
  const out: Record<string, number> = {
    coefficients: m(s.coefficients, r.coefficients),
    standardErrors: m(s.standardErrors, r.standardErrors),
    t: m(s.t, r.t),
    p: m(s.p, r.p),
    // an interval's end near zero (b ≈ q·se) is the difference of two numbers: measured on the
    // scale of |b| + q·se = max(|low|, |high|), the size of the numbers it is computed from
    intervals: s.lower.reduce((w, v, j) => {
      const size = Math.max(Math.abs(r.lower[j]), Math.abs(r.upper[j]));
      return Math.max(w, Math.abs(v - r.lower[j]) / size, Math.abs(s.upper[j] - r.upper[j]) / size);
    }, 0),
    rss: rel(s.rss, r.rss),
    rSquared: rel(s.rSquared, r.rSquared),
  };
  if (r.bp && s.breuschPagan) {
    out.bpStatistic = rel(s.breuschPagan.statistic, r.bp.statistic);
    out.bpP = rel(s.breuschPagan.p, r.bp.p);
  }
  return out;
}

export function spec(yName: string, xNames: string[], over: Partial<ColumnFitSpec> = {}): ColumnFitSpec {
  return { yName, xNames, form: "log-log", zeros: "stop", se: "HC3", level: 0.95, intercept: true, ...over };
}

/** |d log p / d log x| of p = f(x), by central differences: how much p magnifies its statistic's last bits. */
export function pCondition(f: (x: number) => number, x: number): number {
  const h = 1e-5;
  const a = f(x * (1 + h));
  const b = f(x * (1 - h));
  return a > 0 && b > 0 ? Math.abs(Math.log(a) - Math.log(b)) / (2 * h) : Infinity;
}

/**
 * Asserts that a split fit agrees with the single-thread numbers: coefficients, RSS, R² and the
 * Breusch–Pagan statistic to 1e-12 relative; standard errors, t and intervals to 1e-12 or κ·ε where
 * the design's condition κ makes that larger (two backward-stable factorisations differ there by
 * about κ·ε: Higham 2002, Accuracy and Stability of Numerical Algorithms, ch. 19–20); p-values to
 * that tolerance times their condition number. Records the worst differences in `record`.
 */
export function agree(s: ColumnFitResult, one: Numbers, record: Record<string, number> = {}): void {
  const w = worst(s, one);
  const kappaEps = Math.max(1e-12, s.condition * Number.EPSILON);
  // Breusch–Pagan of a fit that needed refinement (or has κ ≥ 1e6) comes from its auxiliary
  // regression on the same ill-conditioned columns, solved once without refinement in both engines
  // (as R's lm.fit): its RSS carries about κ·ε of rounding, and the statistic n·R²_aux magnifies
  // that by 1/R²_aux. Elsewhere it reuses the fit's factor and agrees to 1e-12.
  const auxNoise = s.breuschPagan && (s.refined || s.condition >= 1e6) ? kappaEps / (s.breuschPagan.statistic / s.n) : 0;
  const limits: Record<string, number> = { coefficients: 1e-12, rss: 1e-12, rSquared: 1e-12, bpStatistic: Math.max(1e-12, auxNoise), standardErrors: kappaEps, t: kappaEps, intervals: kappaEps };
  for (const [q, lim] of Object.entries(limits)) {
    if (w[q] === undefined) continue;
    record[q] = Math.max(record[q] ?? 0, w[q]);
    expect({ q, v: w[q], ok: w[q] <= lim }).toEqual({ q, v: w[q], ok: true });
  }
  s.p.forEach((pv, j) => {
    const k = pCondition((t) => studentTwoSided(t, s.dfResid), Math.abs(one.t[j]));
    expect(rel(pv, one.p[j])).toBeLessThanOrEqual(Math.max(1e-12, kappaEps) * Math.max(1, k));
  });
  if (one.bp) {
    expect(s.breuschPagan).not.toBeNull();
    const k = pCondition((v) => chiSquareSf(v, s.breuschPagan!.df), one.bp.statistic);
    expect(rel(s.breuschPagan!.p, one.bp.p)).toBeLessThanOrEqual(Math.max(1e-12, auxNoise) * Math.max(1, k));
  } else expect(s.breuschPagan).toBeNull();
}

