/**
 * ELX.BREAKTEST's engine side: the cells through intake, transforms and the least-squares
 * estimator (the pooled fit, for its design, its checks and the points elasticities are read at),
 * then the break tests of breaks.ts on that design.
 *
 * Where the second regime starts:
 * - `at` with time=: the first period of the second regime; the rows are taken in period order
 *   (stable: sheet order within a period), so that the second regime is a tail of that order, and
 *   sup-F looks only at breaks between periods;
 * - time= without `at`: the last period (does the latest period differ from the ones before?);
 * - `at` without time=: a 1-based data row (counting the rows the fit uses);
 * - neither: the break is unknown. sup-F searches every candidate; the Chow and Wald rows and the
 *   per-term changes are shown at the most likely break it finds, without p-values: a break chosen
 *   because it gives the largest statistic makes those p-values far too small (only sup-F's
 *   p-value, Hansen 1997, accounts for the search).
 *
 * Elasticities before and after are the coefficients of each regime converted by the rules of
 * ELX.ELASTICITIES (elasticity.ts), both at the same point: the means (or medians) of all rows
 * used. At one point the difference of the elasticities is the factor times the change of the
 * coefficient, so its error and p are those of the change itself; a change in the elasticity then
 * reflects a change in the coefficient, not a move along the curve.
 */
import { mapped, mappedInt } from "./blocks";
import { readYX, type Origin } from "./intake";
import { prepare } from "./transforms";
import { estimatorOf, seTypeOf } from "./estimators";
import { ElxProblem, fail } from "./problems";
import { modelKey, type Options } from "./options";
import { BoundedCache, hashCells, type Sized } from "./cache";
import { breakAt, supF, type BreakAtResult, type BreakCovariance, type BreakData, type SupFResult } from "./breaks";
import { breakByPeriod, breakByRow, periodsOfKey } from "./windows";
import { elasticityFactor } from "./elasticity";
import type { OlsFit } from "./fit";

const BREAK_SE: readonly BreakCovariance[] = ["classical", "HC0", "HC1", "HC2", "HC3", "HAC"];

export interface TermBreak {
  name: string;
  binary: boolean;
  /** Elasticities of the two regimes at the point below, their difference and its error and p. */
  before: number;
  after: number;
  difference: number;
  se: number;
  pValue: number;
  /** Where the elasticity is evaluated, in words. */
  at: string;
}

export interface BreakTestResult {
  /** How the second regime's start was given. */
  source: "at-period" | "last-period" | "at-row" | "search";
  /** Rows used. */
  n: number;
  k: number;
  /** Where the second regime starts: a period (time=) or a sheet row. */
  start: string | number;
  /** Rows before and from the break. */
  rowsBefore: number;
  rowsAfter: number;
  known: BreakAtResult;
  /** The unknown-break search (null when it could not run beside a known break: see searchProblem). */
  search: SupFResult | null;
  searchProblem: ElxProblem | null;
  /** The most likely break of the search: a period or a sheet row. */
  searchStart: string | number;
  terms: TermBreak[];
  timeName: string | null;
  /** The ordering rule of the periods, in words (with time=). */
  periodOrder: string;
  /** Where the second regime starts for a break after `point` rows: a period or a sheet row. */
  labelOf: (point: number) => string | number;
  leftOut: number;
  se: BreakCovariance;
}

/** The value of the `at` argument (a cell, a one-cell range or omitted). */
function atValue(at: unknown): unknown {
  let v = at;
  if (Array.isArray(v)) v = Array.isArray(v[0]) ? v[0][0] : v[0];
  if (typeof v === "string" && v.trim() === "") return null;
  return v ?? null;
}

/** Refuses the options that have no defined meaning for these tests (yet), saying what to do. */
function checkOptions(o: Options): BreakCovariance {
  if (o.estimator !== "ols") fail(`ELX.BREAKTEST tests least-squares fits; estimator=${o.estimator} has no break test here: remove estimator=, or compare windows with ELX.ROLLING`);
  if (o.absorb.length > 0) fail("ELX.BREAKTEST does not take absorb= (a break in every fixed effect is not defined here): put the key in factors= to give each value its own intercept, or remove absorb=");
  if (o.weights !== null) fail("ELX.BREAKTEST does not take weights=: remove weights=, or compare windows with ELX.ROLLING, which does");
  const se = seTypeOf(o);
  if (!(BREAK_SE as readonly string[]).includes(se)) {
    fail(`se=${se} is not offered by ELX.BREAKTEST: use se=HC3 (the default), HC0, HC1, HC2, HAC or classical${o.cluster.length > 0 ? "; remove cluster=" : ""}`);
  }
  if (se === "HAC" && o.panel !== null) fail("se=HAC with panel= is not offered by ELX.BREAKTEST (lags would run across units once rows are put in period order): use se=HC3");
  return se as BreakCovariance;
}

export function breakTest(y: unknown, x: unknown, at: unknown, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): BreakTestResult {
  const se = checkOptions(o);
  const raw = readYX(y, x, yOrigin, xOrigin, o);
  const data = prepare(raw, o);
  const fit = estimatorOf(o).build(data, o) as OlsFit;
  const n = fit.n;
  const k = fit.k;
  const names = fit.terms.map((t) => t.name);
  const atv = atValue(at);
  const time = data.roles.time;
  let order: Int32Array | null = null;
  let point: number;
  let allowed: Uint8Array | null = null;
  let source: BreakTestResult["source"];
  let label: (p: number) => string | number;
  let periodOrder = "";
  if (time) {
    const periods = periodsOfKey(time, data.rowNumbers, data.roles.panel);
    periodOrder = periods.order.replace(/^periods of .*? in /, "in ");
    const b = breakByPeriod(periods, atv);
    order = b.order;
    point = b.point;
    allowed = b.allowed;
    source = atv === null ? "last-period" : "at-period";
    label = (p) => periods.labels[periods.rank[(order as Int32Array)[p]]];
  } else {
    const rows = data.rowNumbers;
    label = (p) => rows[p];
    if (atv === null) {
      point = -1;
      source = "search";
    } else {
      const v = typeof atv === "number" ? atv : typeof atv === "string" && /^\s*\d+\s*$/.test(atv) ? Number(atv) : NaN;
      if (!Number.isFinite(v)) fail(`at=${String(atv)} is not a row number: without time= give the data row (counting the rows used from 1) where the second regime starts, or name the period column in time=`);
      point = breakByRow(v, n);
      source = "at-row";
    }
  }
  const pick = (c: Float64Array) => (order ? mapped(order, (i) => c[i]) : c);
  const d: BreakData = {
    X: fit.design.map(pick),
    y: pick(data.y),
    names,
    rowNumbers: order ? mappedInt(order, (i) => data.rowNumbers[i]) : data.rowNumbers,
  };
  // With a known break, a search that cannot run (too few rows for the trim) keeps its reason in
  // its own row and the known-break tests still come.
  let search: SupFResult | null = null;
  let searchProblem: ElxProblem | null = null;
  try {
    search = supF(d, o.trim, allowed);
  } catch (e) {
    if (!(e instanceof ElxProblem) || point < 0) throw e;
    searchProblem = e;
  }
  if (point < 0) point = (search as SupFResult).point;
  const known = breakAt(d, point, se, o.lags);
  const terms: TermBreak[] = [];
  data.xNames.forEach((name, j) => {
    const idx = fit.coefIndex(j);
    const t = known.terms[idx];
    if (data.binary[j]) {
      terms.push({ name, binary: true, before: t.before, after: t.after, difference: t.difference, se: t.seDifference, pValue: t.pValue, at: "" });
      return;
    }
    const f = elasticityFactor(fit, j, o.at);
    terms.push({
      name, binary: false, before: t.before * f.factor, after: t.after * f.factor, difference: t.difference * f.factor,
      se: Math.abs(f.factor) * t.seDifference, pValue: t.pValue, at: f.at,
    });
  });
  return {
    source, n: d.y.length, k, start: label(point), rowsBefore: point, rowsAfter: d.y.length - point, known, search,
    searchStart: search ? label(search.point) : "", searchProblem, terms, timeName: time ? time.name : null, periodOrder, labelOf: label, leftOut: raw.leftOutBlank, se,
  };
}

const breakCache = new BoundedCache<{ r: BreakTestResult } & Sized>(8, 5_000_000);

/** The break tests for these cells, `at` and options, from the cache when seen before. */
export function getBreakTest(y: unknown, x: unknown, at: unknown, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): BreakTestResult {
  const p = (q: Origin | null) => (q ? `${q.row},${q.column}` : "-");
  const a = atValue(at);
  const key = [hashCells(y, 1), hashCells(x, 2), modelKey(o), typeof a + ":" + String(a), seTypeOf(o), o.lags ?? "", o.trim, o.at, p(yOrigin), p(xOrigin)].join("/");
  const hit = breakCache.get(key);
  if (hit) return hit.r;
  const r = breakTest(y, x, at, o, yOrigin, xOrigin);
  breakCache.set(key, { r, size: (r.search ? r.search.stats.length * 3 : 0) + r.n });
  return r;
}
