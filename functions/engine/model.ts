/**
 * From cells to a cached fit: intake → transforms → estimator, once per distinct input.
 */
import { BoundedCache, hashCells, type Sized } from "./cache";
import { readGrid, readYX, type CellGrid, type Origin } from "./intake";
import { modelKey, type Options } from "./options";
import { ElxProblem, fail } from "./problems";
import { prepare } from "./transforms";
import type { OlsFit } from "./fit";
import type { PpmlFit } from "./ppml";
import type { TwoStageFit } from "./ivModel";
import { estimatorOf } from "./estimators";

export type AnyFit = OlsFit | PpmlFit | TwoStageFit;

/** At most this many fits are kept (each cell function of a block reads the same one). */
export const CACHE_ENTRIES = 32;
/** And at most this many doubles in all (about 400 MB), so large ranges do not pile up. */
export const CACHE_DOUBLES = 50_000_000;

type Entry = Sized & ({ fit: AnyFit; problem?: undefined } | { fit?: undefined; problem: ElxProblem });

const cache = new BoundedCache<Entry>(CACHE_ENTRIES, CACHE_DOUBLES);

export interface ModelInput {
  y: unknown;
  x: unknown;
  options: Options;
  yOrigin: Origin | null;
  xOrigin: Origin | null;
}

/** The ranges read by readGrid, when they are rectangular 2-D arrays. */
interface Grids {
  y: CellGrid | null;
  x: CellGrid | null;
}

function keyOf(input: ModelInput): string {
  const o = (p: Origin | null) => (p ? `${p.row},${p.column}` : "-");
  return [hashCells(input.y, 1), hashCells(input.x, 2), modelKey(input.options), o(input.yOrigin), o(input.xOrigin)].join("/");
}

/** Fits without the cache (for tests and for callers that build their own data). */
export function fitUncached(input: ModelInput, grids: Grids | null = null): AnyFit {
  const raw = readYX(input.y, input.x, input.yOrigin, input.xOrigin, input.options, grids);
  const data = prepare(raw, input.options);
  return estimatorOf(input.options).build(data, input.options) as AnyFit;
}

/**
 * The fit for these cells and options, from the cache when the same content was fitted before.
 * A hit costs one hash pass over the cells; a miss then reads them into columns with readGrid.
 */
export function getFit(input: ModelInput): AnyFit {
  const key = keyOf(input);
  const hit = cache.get(key);
  if (hit) {
    if (hit.problem) throw hit.problem;
    return hit.fit as AnyFit;
  }
  try {
    const fit = fitUncached(input, { y: readGrid(input.y), x: readGrid(input.x) });
    cache.set(key, { fit, size: fit.n * (fit.k + 6) });
    return fit;
  } catch (e) {
    if (e instanceof ElxProblem) cache.set(key, { problem: e, size: 1 });
    throw e;
  }
}

export function cacheStats(): { hits: number; misses: number; entries: number } {
  return { hits: cache.hits, misses: cache.misses, entries: cache.entries };
}

export function clearCache(): void {
  cache.clear();
}

/** The least-squares fit, refusing estimators without a residual variance for functions that need one. */
export function getOlsFit(input: ModelInput, what: string): OlsFit {
  const info = estimatorOf(input.options);
  if (!info.residualVariance) fail(`${what} applies to least-squares fits of log or level y; ${info.noResidualVariance}`);
  return getFit(input) as OlsFit;
}
