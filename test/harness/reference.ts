/**
 * Comparing the bundle's cells with reference values: a relative tolerance with an absolute floor,
 * the worst error seen per quantity group (printed after the suite), and readable failures.
 */
import { HostError } from "./loadFunctions";

export class ReferenceChecker {
  private readonly worst = new Map<string, { rel: number; where: string }>();
  constructor(private readonly rel: number, private readonly abs: number) {}

  /** Throws unless |actual − expected| ≤ max(rel·|expected|, abs); records the relative error. */
  check(actual: unknown, expected: number, group: string, where: string, rel = this.rel): void {
    if (typeof actual !== "number" || !Number.isFinite(actual)) {
      throw new Error(`${where}: expected a finite number near ${expected} (R), got ${actual instanceof HostError ? `${actual.code} ${actual.message}` : JSON.stringify(actual)}`);
    }
    const err = Math.abs(actual - expected);
    const r = expected === 0 ? err : err / Math.abs(expected);
    const w = this.worst.get(group);
    if (!w || r > w.rel) this.worst.set(group, { rel: r, where });
    if (!(err <= Math.max(rel * Math.abs(expected), this.abs))) {
      throw new Error(`${where}: got ${actual}, R gives ${expected} (abs ${err.toExponential(3)}, rel ${r.toExponential(3)}; tolerance ${rel} rel / ${this.abs} abs)`);
    }
  }

  /** The table of worst relative errors per group. */
  report(title: string, width = 34): string {
    const lines = [...this.worst.entries()].map(([k, v]) => `${k.padEnd(width)} ${v.rel.toExponential(2)}  (${v.where})`);
    return `${title}\n${lines.join("\n")}`;
  }
}

/** Asserts a #N/A error cell. */
export function expectNa(cell: unknown, where: string): void {
  if (!(cell instanceof HostError) || cell.code !== "#N/A") throw new Error(`${where}: expected a #N/A error cell, got ${JSON.stringify(cell)}`);
}

/** The 2-D result of a call, or a failure that shows the error value it returned. */
export function table(result: unknown, where: string): unknown[][] {
  if (result instanceof HostError) throw new Error(`${where}: the function returned ${result.code} ${result.message}`);
  if (!Array.isArray(result)) throw new Error(`${where}: expected a 2-D array, got ${JSON.stringify(result)}`);
  return result as unknown[][];
}
