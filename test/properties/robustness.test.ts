/**
 * Robustness through the host's door: every function, called thousands of times with odd but
 * host-shaped arguments (seeded random ranges of numbers, zeros, negatives, blanks as null, undefined
 * or "", text, TRUE/FALSE, error cells, non-finite numbers, header rows, odd widths and heights, and
 * options drawn from the valid and invalid vocabulary), either returns a rectangular table whose
 * numbers are all finite, or answers with #VALUE!/#N/A and a message. Never an uncaught exception,
 * never an "internal error", never NaN or Infinity shown as a number. No reference values: this is
 * an invariant of the cell layer.
 */
import { HostError, loadFunctions, type CellFn } from "../harness/loadFunctions";
import { Rng } from "../simulation/rng";

const reg = loadFunctions();
const r = new Rng(424242);
const pick = <T>(a: readonly T[]): T => a[Math.floor(r.next() * a.length)];

function cell(kind: number): unknown {
  switch (kind) {
    case 0: return Math.exp(r.normal());
    case 1: return 0;
    case 2: return -Math.exp(r.normal());
    case 3: return pick([null, undefined, "", " "]);
    case 4: return pick(["n/a", "12", "TRUE", "Price"]);
    case 5: return r.next() < 0.5;
    case 6: return { code: pick(["#DIV/0!", "#N/A", "#REF!"]) };
    case 7: return pick([NaN, Infinity, -Infinity]);
    case 8: return r.next() < 0.5 ? 0 : 1;
    default: return Math.round(10 * r.next());
  }
}

/** A range: mostly clean positive numbers, sometimes with odd cells, sometimes a header row. */
function range(rows: number, cols: number, names: string[], header: boolean): unknown[][] {
  const dirty = r.next() < 0.7 ? 0 : r.next() * 0.3;
  const out: unknown[][] = [];
  if (header) out.push(names.slice(0, cols).concat(Array.from({ length: Math.max(0, cols - names.length) }, (_, j) => `c${j}`)));
  const binaryCol = Math.floor(r.next() * (cols + 1));
  for (let i = 0; i < rows; i++) {
    const row: unknown[] = [];
    for (let j = 0; j < cols; j++) row.push(r.next() < dirty ? cell(Math.floor(r.next() * 10)) : j === binaryCol ? cell(8) : cell(0));
    out.push(row);
  }
  return out;
}

const OPTIONS = [
  null, "", "form=log-level", "form=level-log; se=HC1", "form=level-level; se=classical", "se=HAC", "se=HAC; lags=3",
  "zeros=drop", "zeros=shift; shift=0.5", "zeros=ihs", "estimator=ppml", "estimator=ppml; zeros=drop", "estimator=ppml; se=HC3",
  "at=median", "level=0.9", "intercept=false", "headers=false", "levels=1", "levels=Nope", "retransform=normal", "interval=mean",
  "interval=individual", "retransform=none", "se=HC4", "frm=log-log", "lags=-2", "level=2", "shift=0", "se", ";;", 7,
];

function check(id: string, out: unknown): string | null {
  if (out instanceof HostError) {
    if (out.code !== "#VALUE!" && out.code !== "#N/A") return `${id}: error code ${out.code}`;
    if (!out.message || /internal error/.test(out.message)) return `${id}: ${out.message}`;
    return null;
  }
  if (!Array.isArray(out) || out.length === 0) return `${id}: not a 2-D array: ${JSON.stringify(out)}`;
  const w = (out[0] as unknown[]).length;
  for (const row of out as unknown[][]) {
    if (!Array.isArray(row) || row.length !== w) return `${id}: ragged result`;
    for (const v of row) {
      if (typeof v === "number" && !Number.isFinite(v)) return `${id}: ${v} shown as a number`;
      if (v === null || v === undefined) return `${id}: null in a result (shows as 0)`;
      if (v instanceof HostError && /internal error/.test(v.message ?? "")) return `${id}: ${v.message}`;
    }
  }
  return null;
}

function call(fn: CellFn, args: unknown[]): unknown {
  try {
    return fn(...args);
  } catch (e) {
    if (e instanceof HostError) return e;
    return new HostError("uncaught", String(e instanceof Error ? e.stack : e));
  }
}

describe("every function answers odd input with a table or an error value, never an exception", () => {
  it("2,600 seeded random calls", () => {
    const failures: string[] = [];
    let tables = 0;
    let total = 0;
    for (let t = 0; t < 200; t++) {
      const n = pick([1, 3, 8, 20, 40, 60, 60]);
      const k = pick([1, 1, 2, 3, 4]);
      const header = r.next() < 0.7; // the same for y and x, except now and then
      const y = range(n + (r.next() < 0.1 ? 1 : 0), 1, ["Units"], header);
      const x = range(n, k, ["Price", "Footfall", "Promo", "Income"], r.next() < 0.9 ? header : !header);
      const keys = y.map((_, i) => [i === 0 && typeof y[0][0] === "string" ? "Store" : pick(["North", "South", "", 3])]);
      const newX = range(pick([1, 3]), k + (r.next() < 0.1 ? 1 : 0), ["Price", "Footfall", "Promo", "Income"], r.next() < 0.5);
      const o = pick(OPTIONS);
      const inv = r.next() < 0.5 ? { parameterAddresses: ["Data!C1:C61", "Data!D1:G61", null, null] } : undefined;
      const calls: [string, unknown[]][] = [
        ["FIT", [y, x, o, inv]], ["ELASTICITY", [y, x, pick([1, 2, "Price", "Nope", 9, null]), o, inv]], ["ELASTICITIES", [y, x, o, inv]],
        ["EFFECTS", [y, x, o, inv]], ["SUMMARY", [y, x, o, inv]], ["ZEROS", [x, o]], ["SMEARING", [y, x, o, inv]],
        ["PREDICT", [y, x, newX, o, inv]], ["HETEROTEST", [y, x, pick([null, "bp", "white", "white-special", "bp-original", "nope"]), o, inv]],
        ["NORMALTEST", [y, x, o, inv]], ["TESTS", [y, x, o, inv]], ["FORMCHECK", [y, x, o, inv]], ["BYGROUP", [keys, y, x, o, inv]],
      ];
      for (const [id, args] of calls) {
        const out = call(reg.get(id) as CellFn, args);
        total++;
        if (!(out instanceof HostError)) tables++;
        const problem = check(id, out);
        if (problem) failures.push(`${problem}\n  options ${JSON.stringify(o)}, y ${JSON.stringify(y).slice(0, 200)}, x ${JSON.stringify(x).slice(0, 200)}`);
      }
    }
    expect(failures.slice(0, 5)).toEqual([]);
    // the draws reach the numeric paths, not only the refusals
    console.log(`${total} calls: ${tables} tables, ${total - tables} error values`);
    expect(tables / total).toBeGreaterThan(0.2);
  });
});
