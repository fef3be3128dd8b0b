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
    intervals: Math.max(m(s.lower, r.lower), m(s.upper, r.upper)),
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
