/**
 * Loads the built bundle dist/functions.js the way the host does: through a global
 * `CustomFunctions` whose `associate(id, fn)` fills a registry, with the host's `Error` class and
 * `ErrorCode` values. Tests then call functions by their formula id with row-major 2-D arrays.
 */
import * as fs from "fs";
import * as path from "path";

export type CellFn = (...args: unknown[]) => unknown;

/** Stand-in for the host's CustomFunctions.Error: a code such as "#VALUE!" and a message. */
export class HostError {
  constructor(public code: string, public message?: string) {}
}

export const ERROR_CODES = {
  invalidValue: "#VALUE!",
  notAvailable: "#N/A",
  divisionByZero: "#DIV/0!",
  invalidNumber: "#NUM!",
  nullReference: "#NULL!",
  invalidName: "#NAME?",
  invalidReference: "#REF!",
} as const;

export const DIST = path.resolve(__dirname, "../../dist");

export function installShim(registry: Map<string, CellFn>): void {
  (globalThis as any).CustomFunctions = {
    associate(a: string | Record<string, CellFn>, f?: CellFn) {
      if (typeof a === "string") registry.set(a, f as CellFn);
      else for (const k of Object.keys(a)) registry.set(k, a[k]);
    },
    Error: HostError,
    ErrorCode: ERROR_CODES,
  };
}

/** Evaluates dist/functions.js (built by `npm run build`) and returns the id → function registry. */
export function loadFunctions(bundlePath = path.join(DIST, "functions.js")): Map<string, CellFn> {
  if (!fs.existsSync(bundlePath)) throw new Error(`${bundlePath} is missing: run npm run build first`);
  const registry = new Map<string, CellFn>();
  installShim(registry);
  const resolved = require.resolve(bundlePath);
  delete require.cache[resolved];
  if (typeof (globalThis as any).jest !== "undefined") {
    jest.isolateModules(() => require(resolved));
  } else {
    require(resolved);
  }
  return registry;
}

/** The function ids listed in dist/functions.json. */
export function metadataIds(): string[] {
  const meta = JSON.parse(fs.readFileSync(path.join(DIST, "functions.json"), "utf8"));
  return meta.functions.map((f: { id: string }) => f.id);
}

/** Calls a registered function as the host does; returns its value or the HostError it threw. */
export function call(registry: Map<string, CellFn>, id: string, ...args: unknown[]): unknown {
  const fn = registry.get(id);
  if (!fn) throw new Error(`function ${id} is not registered`);
  try {
    return fn(...args);
  } catch (e) {
    if (e instanceof HostError) return e;
    throw e;
  }
}

/** Turns columns into the host's row-major 2-D array, optionally with a header row. */
export function rows(columns: unknown[][], header?: string[]): unknown[][] {
  const n = columns[0].length;
  const out: unknown[][] = header ? [header.slice()] : [];
  for (let i = 0; i < n; i++) out.push(columns.map((c) => c[i]));
  return out;
}

/** Finds the row of a two-column (label, value) table by its label. */
export function lookup(table: unknown[][], label: string): unknown {
  const row = table.find((r) => r[0] === label);
  if (!row) throw new Error(`no row labelled ${label}; labels: ${table.map((r) => r[0]).join(" | ")}`);
  return row[1];
}

/** Relative closeness with an absolute floor, for reference comparisons. */
export function expectClose(actual: unknown, expected: number, rel: number, abs = 1e-12, what = ""): void {
  if (typeof actual !== "number" || !Number.isFinite(actual)) {
    throw new Error(`${what}: expected a finite number near ${expected}, got ${JSON.stringify(actual)}`);
  }
  const err = Math.abs(actual - expected);
  if (!(err <= Math.max(rel * Math.abs(expected), abs))) {
    throw new Error(`${what}: ${actual} differs from ${expected} by ${err} (rel ${err / Math.abs(expected)}, tolerance ${rel})`);
  }
}
