/**
 * Robustness of ELX.ROLLING and ELX.BREAKTEST through the host's door, as test/properties/robustness.test.ts
 * does for the other functions: seeded odd but host-shaped ranges, windows, break points and
 * options (the window and break vocabulary, valid and invalid) either give a rectangular table of
 * finite numbers, text and error values with messages, or #VALUE!/#N/A with a message; never an
 * uncaught exception, an internal error, NaN or Infinity. No reference values: an invariant.
 */
import { HostError, loadFunctions, type CellFn } from "../harness/loadFunctions";
import { Rng } from "../simulation/rng";

const reg = loadFunctions();
const r = new Rng(20261203);
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
function range(rows: number, cols: number, names: string[], header: boolean, clean = false): unknown[][] {
  const dirty = clean || r.next() < 0.7 ? 0 : r.next() * 0.3;
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
  null, "", "form=log-level", "se=HC1", "se=classical", "se=HAC", "se=HAC; lags=3", "zeros=drop", "estimator=ppml",
  "step=2", "step=5; expanding=true", "expanding=true", "trim=0.3", "trim=0.05", "trim=0.5", "time=Period", "time=Period; step=2",
  "time=2", "time=Nope", "window=4", "window=0", "step=0", "se=cluster", "se=DK", "absorb=Period", "headers=false", "level=0.9",
  "at=median", "intercept=false", "form=level-level", 7,
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

describe("ROLLING and BREAKTEST answer odd input with a table or an error value, never an exception", () => {
  it("800 seeded random calls", () => {
    const failures: string[] = [];
    let tables = 0;
    let total = 0;
    for (let t = 0; t < 400; t++) {
      const clean = r.next() < 0.5;
      const n = clean ? pick([40, 60]) : pick([3, 8, 20, 40, 60, 60, 60]);
      const k = pick([1, 2, 3]);
      const header = r.next() < 0.8;
      // half the calls are well-formed (clean numbers, a valid window and options), so that the
      // numeric paths are reached and not only the refusals
      const y = range(n, 1, ["Units"], header || clean, clean);
      const x = range(n, k, ["Price", "Footfall", "Promo"], header || clean, clean);
      // a period column: ascending numbers, text, repeats, blanks, or out of order
      const kind = clean ? pick([0, 1, 2]) : pick([0, 0, 1, 2, 3, 4]);
      x.forEach((row, i) => {
        const d = header || clean ? i - 1 : i;
        if ((header || clean) && i === 0) row.push("Period");
        else row.push(kind === 0 ? d : kind === 1 ? `W${Math.floor(d / 2)}` : kind === 2 ? Math.floor(d / 3) : kind === 3 ? (r.next() < 0.1 ? null : d) : n - d);
      });
      // the period column is a role column in most calls (else it is a regressor, or text to refuse)
      const drawn = clean ? pick(["", "se=HC1", "se=classical", "se=HAC", "step=2", "expanding=true", "trim=0.3", "at=median"]) : pick(OPTIONS);
      const o = typeof drawn === "string" && !/time=/.test(drawn) && (clean || r.next() < 0.7) ? `time=Period${drawn === "" ? "" : `; ${drawn}`}` : drawn;
      const inv = r.next() < 0.5 ? { parameterAddresses: ["Data!C1:C61", "Data!D1:G61", null, null] } : undefined;
      const calls: [string, unknown[]][] = [
        ["ROLLING", [y, x, clean ? pick([5, 8, 10, 20]) : pick([2, 4, 5, 8, 10, 10, 20, 30, 100, 0, 2.5, "ten", null, [[5]]]), o, inv]],
        ["BREAKTEST", [y, x, clean ? pick([null, 10, 20]) : pick([null, null, 2, 5, 10, 10, 30, 59, 0, 1000, "W3", 3.5, "", [[10]]]), o, inv]],
      ];
      for (const [id, args] of calls) {
        const out = call(reg.get(id) as CellFn, args);
        total++;
        if (!(out instanceof HostError)) tables++;
        const problem = check(id, out);
        if (problem) failures.push(`${problem}\n  args ${JSON.stringify(args.slice(2))}, x ${JSON.stringify(x).slice(0, 300)}`);
      }
    }
    expect(failures.slice(0, 5)).toEqual([]);
    // eslint-disable-next-line no-console
    console.log(`${total} calls: ${tables} tables, ${total - tables} error values`);
    expect(tables / total).toBeGreaterThan(0.15);
  });
});
