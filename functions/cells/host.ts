/**
 * The edge between the engine and the host: problems → error values, numbers → safe cells, and the
 * shape of spilled tables. No statistics here.
 */
import { ElxProblem } from "../engine/problems";
import { originOf, type Origin } from "../engine/intake";
import { parseOptions, type Options } from "../engine/options";

export type Cell = number | string | boolean | CustomFunctions.Error;
export type Table = Cell[][];

/** The host's error value for a message the analyst must read (#VALUE! or #N/A carry messages). */
export function hostError(kind: "value" | "na", message: string): CustomFunctions.Error {
  const code = kind === "na" ? CustomFunctions.ErrorCode.notAvailable : CustomFunctions.ErrorCode.invalidValue;
  return new CustomFunctions.Error(code, message);
}

/** Any exception → the host's error value. Problems keep their message; bugs say so plainly. */
export function toHostError(e: unknown): CustomFunctions.Error {
  if (e instanceof ElxProblem) return hostError(e.kind, e.message);
  if (e && typeof e === "object" && "code" in e && typeof (e as { code: unknown }).code === "string" && String((e as { code: string }).code).startsWith("#")) {
    return e as CustomFunctions.Error;
  }
  const detail = e instanceof Error ? e.message : String(e);
  return hostError("value", `internal error in Elasticell (${detail}); please report it with the data shape`);
}

/** Runs a cell function body; every failure becomes a thrown host error value. */
export function guarded<T>(body: () => T): T {
  try {
    return body();
  } catch (e) {
    throw toHostError(e);
  }
}

/** A number for a cell, or #N/A with a reason when it is not finite (never NaN or Infinity). */
export function num(v: number | null | undefined, why = "this value cannot be computed for these data"): Cell {
  if (typeof v === "number" && Number.isFinite(v)) return v === 0 ? 0 : v; // no −0 in cells
  return hostError("na", why);
}

/** Origins of the parameters, from the invocation's parameter addresses (null where unknown). */
export function originsOf(invocation: unknown): (Origin | null)[] {
  const addrs = (invocation as { parameterAddresses?: unknown } | null | undefined)?.parameterAddresses;
  if (!Array.isArray(addrs)) return [];
  return addrs.map((a) => originOf(a));
}

export function options(text: unknown): Options {
  return parseOptions(text);
}

/** A spilled table, with or without its header row (headers=false). */
export function table(header: string[], body: Table, o: Options): Table {
  return o.headers ? [header, ...body] : body.length > 0 ? body : [header.map(() => "")];
}

/** A level as a percent label: 0.95 → "95%", 0.975 → "97.5%". */
export function levelLabel(level: number): string {
  return `${Number((level * 100).toPrecision(6))}%`;
}

/** The headers of an interval's two ends, naming the level: "Low (95%)", "High (95%)". */
export function intervalHeaders(level: number): [string, string] {
  const lv = levelLabel(level);
  return [`Low (${lv})`, `High (${lv})`];
}

/** A cell from a computation that may meet a data problem: the value, or the problem's error value. */
export function safe(compute: () => Cell): Cell {
  try {
    return compute();
  } catch (e) {
    if (e instanceof ElxProblem) return hostError(e.kind, e.message);
    throw e;
  }
}
