/**
 * What the pane reads from the functions' runtime. In the shared runtime the pane and the custom
 * functions run in one page, but webpack bundles them as two scripts; so that the pane reads the
 * same cached fits as the cells, functions.js publishes this object on `globalThis.Elasticell` when it
 * loads (no DOM, no host API). The pane only reads: nothing here writes to a workbook.
 */
import { kernel } from "./engine/kernel";
import { getFit, cacheStats } from "./engine/model";
import { parseOptions, seTypeOf, type Estimator } from "./engine/options";
import { ElxProblem } from "./engine/problems";
import { transformLabel } from "./engine/transforms";
import { readYX, type Origin } from "./engine/intake";
import { elasticity } from "./engine/elasticity";
import { fewClustersNote } from "./engine/panelCovariance";
import { testRows, testsFit } from "./cells/diagnostics";
import { getWindows, windowLength } from "./engine/rolling";
import { getBreakTest } from "./engine/breakTest";

/** One window of ELX.ROLLING as numbers: its span, rows, and each term's elasticity and error. */
export interface WindowItem {
  from: string | number;
  to: string | number;
  rows: number;
  /** Per term (in `terms` order): null where the window could not be fitted or the term is binary. */
  estimates: (number | null)[];
  errors: (number | null)[];
  problem: string | null;
}

/** ELX.ROLLING's windows as numbers, from the same cached window set as the cells. */
export function rollingView(y: unknown[][], x: unknown[][], window: number, optionsText: string | null, yOrigin: Origin | null = null, xOrigin: Origin | null = null): Outcome<{ terms: string[]; windows: WindowItem[] }> {
  return outcome(() => {
    const o = parseOptions(optionsText);
    const r = getWindows(y, x, windowLength(window, o), o, yOrigin, xOrigin);
    const se = seTypeOf(o);
    const windows = r.windows.map((w): WindowItem => {
      const none = r.xNames.map(() => null);
      const fit = w.fit;
      if (!fit) return { from: w.window.from, to: w.window.to, rows: w.rows, estimates: none, errors: none, problem: w.problem ? w.problem.message : "not fitted" };
      let cov: ReturnType<typeof fit.covariance>;
      try {
        cov = fit.covariance(se, o.lags);
      } catch (e) {
        if (!(e instanceof ElxProblem)) throw e;
        return { from: w.window.from, to: w.window.to, rows: fit.n, estimates: none, errors: none, problem: e.message };
      }
      const est = r.xNames.map((_, j) => (fit.data.binary[j] ? null : elasticity(fit, j, cov, o.level, o.at)));
      return { from: w.window.from, to: w.window.to, rows: fit.n, estimates: est.map((e) => (e ? e.estimate : null)), errors: est.map((e) => (e ? e.se : null)), problem: null };
    });
    return { terms: r.xNames, windows };
  });
}

/** ELX.BREAKTEST's search for an unknown break as numbers: sup-F, its p-value and the most likely start. */
export function breakView(y: unknown[][], x: unknown[][], at: unknown, optionsText: string | null, yOrigin: Origin | null = null, xOrigin: Origin | null = null): Outcome<{ supF: { statistic: number; pValue: number; start: string | number } | null; problem: string | null }> {
  return outcome(() => {
    const o = parseOptions(optionsText);
    const r = getBreakTest(y, x, at, o, yOrigin, xOrigin);
    if (!r.search) return { supF: null, problem: r.searchProblem ? r.searchProblem.message : "the search did not run" };
    return { supF: { statistic: r.search.statistic, pValue: r.search.pValue, start: r.searchStart }, problem: null };
  });
}

/** One specification test as the pane reads it: its p-value and reading, or why it is not available. */
export interface TestItem {
  name: string;
  statistic: number | null;
  df: number[];
  pValue: number | null;
  rejected: boolean | null;
  reading: string;
}

/** The tests of ELX.TESTS as numbers and sentences, from the same cached fit and memoised tests. */
export function testsView(y: unknown[][], x: unknown[][], optionsText: string | null, yOrigin: Origin | null = null, xOrigin: Origin | null = null): Outcome<TestItem[]> {
  return outcome(() => {
    const o = parseOptions(optionsText);
    const inv = { parameterAddresses: [] as string[] };
    const fit = yOrigin || xOrigin ? testsFitAt(y, x, o, yOrigin, xOrigin) : testsFit(y, x, o, inv);
    return testRows(fit).map(({ label, result, problem }) => result
      ? { name: label, statistic: result.statistic, df: result.df, pValue: result.pValue, rejected: result.pValue < 0.05, reading: result.reading }
      : { name: label, statistic: null, df: [], pValue: null, rejected: null, reading: problem ? problem.message : "" });
  });
}

/** testsFit with the sheet origins the pane knows (so row numbers in messages are sheet rows). */
function testsFitAt(y: unknown[][], x: unknown[][], o: ReturnType<typeof parseOptions>, yOrigin: Origin | null, xOrigin: Origin | null) {
  const addr = (p: Origin | null) => (p ? `${columnLetters(p.column)}${p.row}` : "");
  return testsFit(y, x, o, { parameterAddresses: [addr(yOrigin), addr(xOrigin)] });
}

function columnLetters(c: number): string {
  let s = "";
  for (let n = c; n > 0; n = Math.floor((n - 1) / 26)) s = String.fromCharCode(65 + ((n - 1) % 26)) + s;
  return s;
}

export type Outcome<T> = { ok: true; value: T } | { ok: false; message: string; kind: "value" | "na" };

/** A plain view of one fit, for the pane's pictures and sentences. */
export interface FitView {
  n: number;
  yName: string;
  xNames: string[];
  yTransform: string;
  xTransforms: string[];
  binary: boolean[];
  coefficients: number[];
  standardErrors: number[];
  seLabel: string;
  residuals: Float64Array;
  fitted: Float64Array;
  leftOutBlank: number;
  leftOutNonPositive: number;
}

function outcome<T>(run: () => T): Outcome<T> {
  try {
    return { ok: true, value: run() };
  } catch (e) {
    if (e instanceof ElxProblem) return { ok: false, message: e.message, kind: e.kind };
    return { ok: false, message: `internal error in Elasticell (${e instanceof Error ? e.message : String(e)})`, kind: "value" };
  }
}

/** The (cached) fit of y on x under the options text, as a plain view. */
export function fitView(y: unknown[][], x: unknown[][], optionsText: string | null, yOrigin: Origin | null = null, xOrigin: Origin | null = null): Outcome<FitView> {
  return outcome(() => {
    const o = parseOptions(optionsText);
    const fit = getFit({ y, x, options: o, yOrigin, xOrigin });
    const cov = fit.covariance(seTypeOf(o), o.lags);
    return {
      n: fit.n,
      yName: fit.data.yName,
      xNames: fit.data.xNames.slice(),
      yTransform: transformLabel(fit.data.yTransform),
      xTransforms: fit.data.xTransforms.map(transformLabel),
      binary: fit.data.binary.slice(),
      coefficients: Array.from(fit.coef),
      standardErrors: Array.from(fit.standardErrors(cov)),
      seLabel: cov.label,
      residuals: fit.resid,
      fitted: fit.fitted,
      leftOutBlank: fit.data.leftOutBlank,
      leftOutNonPositive: fit.data.leftOutNonPositive,
    };
  });
}

/** One regressor's elasticity with its interval (binary columns carry no elasticity: see ELX.EFFECTS). */
export interface ElasticityItem {
  term: string;
  binary: boolean;
  estimate: number;
  se: number;
  lower: number;
  upper: number;
}

/** The elasticities ELX.ELASTICITIES shows, as numbers: the pane reads these, never the table's headers or columns. */
export interface ElasticitiesView {
  /** Confidence level of the intervals (the level option). */
  level: number;
  /** The covariance type, as the table's header names it (HC3, HC1, classical, HAC with its lags). */
  seLabel: string;
  estimator: Estimator;
  items: ElasticityItem[];
  /** A caution to show beside clustered errors with fewer than about 30 clusters (null otherwise). */
  clusterCaution: string | null;
}

/** The (cached) fit's elasticities under the options text. */
export function elasticitiesView(y: unknown[][], x: unknown[][], optionsText: string | null, yOrigin: Origin | null = null, xOrigin: Origin | null = null): Outcome<ElasticitiesView> {
  return outcome(() => {
    const o = parseOptions(optionsText);
    const fit = getFit({ y, x, options: o, yOrigin, xOrigin });
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const items = fit.data.xNames.map((term, j): ElasticityItem => {
      if (fit.data.binary[j]) return { term, binary: true, estimate: NaN, se: NaN, lower: NaN, upper: NaN };
      const r = elasticity(fit, j, cov, o.level, o.at);
      return { term, binary: false, estimate: r.estimate, se: r.se, lower: r.lower, upper: r.upper };
    });
    const clusterCaution = cov.type === "cluster" ? fewClustersNote(fit.data.roles.cluster.map((c) => c.name), cov.groups) : null;
    return { level: o.level, seLabel: cov.label, estimator: fit.estimator, items, clusterCaution };
  });
}

/**
 * Reads y and x into columns the way every fit does (headers, listwise deletion) and reports the
 * counts: the pane's data check, and the benchmark of the host-rows-to-columns conversion.
 */
export function readColumns(y: unknown[][], x: unknown[][]): Outcome<{ rows: number; leftOutBlank: number; yName: string; xNames: string[] }> {
  return outcome(() => {
    const r = readYX(y, x, null, null);
    return { rows: r.y.length, leftOutBlank: r.leftOutBlank, yName: r.yName, xNames: r.xNames };
  });
}

export type CellFunction = (...args: unknown[]) => unknown;

/** Calls a cell function by its id (FIT, ZEROS, …) as a cell would; errors come back as outcomes. */
export function makeCaller(functions: Record<string, CellFunction>) {
  return (id: string, ...args: unknown[]): Outcome<unknown> => {
    const f = functions[id];
    if (!f) return { ok: false, message: `no function ${id}`, kind: "value" };
    try {
      return { ok: true, value: f(...args) };
    } catch (e) {
      const m = e && typeof e === "object" && "message" in e ? String((e as { message: unknown }).message) : String(e);
      return { ok: false, message: m, kind: "value" };
    }
  };
}

export { cacheStats };

/** The engine's kernel now in force ("wasm" once the WebAssembly module is compiled, else "js"). */
export function kernelName(): string {
  return kernel().name;
}

/** The object functions.js publishes on globalThis.Elasticell (the pane reads it by this type). */
export interface ElasticellApi {
  functions: Record<string, CellFunction>;
  call(id: string, ...args: unknown[]): Outcome<unknown>;
  fitView: typeof fitView;
  elasticitiesView: typeof elasticitiesView;
  testsView: typeof testsView;
  rollingView: typeof rollingView;
  breakView: typeof breakView;
  readColumns: typeof readColumns;
  cacheStats: typeof cacheStats;
  kernelName: typeof kernelName;
}
