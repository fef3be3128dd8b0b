/** ELX.ROLLING and ELX.BREAKTEST: change over time, in windows and as break tests. */
import { getWindows, windowLength } from "../engine/rolling";
import { getBreakTest, type BreakTestResult } from "../engine/breakTest";
import { seTypeOf } from "../engine/estimators";
import { ElxProblem } from "../engine/problems";
import { EVERYWHERE } from "../engine/elasticity";
import type { Options } from "../engine/options";
import { guarded, hostError, levelLabel, num, options, originsOf, table, type Cell, type Table } from "./host";
import { BINARY_NOTE } from "./regression";
import { elasticityCells } from "./groups";

/** A note row of a table `width` wide: a label, then cells, then blanks. */
function noteRow(width: number, cells: Cell[]): Cell[] {
  const row = cells.slice();
  while (row.length < width) row.push("");
  return row;
}

export function rollingTable(y: unknown, x: unknown, windowArg: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const origins = originsOf(invocation);
    const length = windowLength(windowArg, o);
    const r = getWindows(y, x, length, o, origins[0] ?? null, origins[1] ?? null);
    const se = seTypeOf(o);
    const fitted = r.windows.filter((w) => w.fit);
    const binaryEverywhere = r.xNames.map((_, j) => fitted.length > 0 && fitted.every((w) => (w.fit as NonNullable<typeof w.fit>).data.binary[j]));
    const header = ["From", "To", "Observations"];
    r.xNames.forEach((n, j) => header.push(`Elasticity: ${n}${binaryEverywhere[j] ? ` (${BINARY_NOTE})` : ""}`, `Std. error: ${n}`));
    const width = header.length;
    const body: Table = r.windows.map((w) => {
      const row: Cell[] = [w.window.from, w.window.to, w.rows];
      const fit = w.fit;
      if (!fit) return noteRow(width, [...row, `cannot fit: ${(w.problem as ElxProblem).message}`]);
      row[2] = fit.n;
      row.push(...elasticityCells(fit, r.xNames.length, se, o, binaryEverywhere, "window"));
      return row;
    });
    const unit = r.layout.unit === "periods" ? "period" : "row";
    if (r.layout.notReached > 0) {
      const n = r.layout.notReached;
      body.push(noteRow(width, ["(not reached)", "", n, `the last ${n === 1 ? unit : `${n} ${unit}s`} come after the last window (window ${length}, step ${o.step}): a step that divides the rest evenly reaches them`]));
    }
    if (r.leftOut > 0) {
      body.push(noteRow(width, ["(left out)", "", r.leftOut, `${r.leftOutRows.phrase(5)} ${r.leftOut === 1 ? "has" : "have"} a blank, text or error cell in y, x${r.timeName ? ` or ${r.timeName}` : ""} and ${r.leftOut === 1 ? "is" : "are"} in no window`]));
    }
    if (r.leftOutWeight > 0) body.push(noteRow(width, ["(left out)", "", r.leftOutWeight, "rows whose weight is zero or negative are in no window"]));
    if (r.layout.unit === "periods") {
      body.push(noteRow(width, ["(periods)", "", "", `windows count ${r.layout.order}; within a window rows keep sheet order`]));
    }
    return table(header, body, o);
  });
}

/** A number in a reading: 4 significant digits. */
function short(v: number): string {
  if (!Number.isFinite(v)) return "not available";
  if (v === 0) return "0";
  const a = Math.abs(v);
  return a >= 1e-4 && a < 1e6 ? String(Number(v.toPrecision(4))) : v.toExponential(3);
}

function pText(p: number): string {
  return p < 1e-4 ? "p < 0.0001" : `p = ${short(p)}`;
}

function startText(r: BreakTestResult, v: string | number): string {
  return r.timeName ? `${r.timeName} ${v}` : `sheet row ${v}`;
}

export const BREAK_CAUTION = "Associations, not causes: a change in the elasticity may come from a change in who buys, in promotions, in competitors' prices or in how the data were collected; prices also react to demand.";

function breakBody(r: BreakTestResult, o: Options): { header: string[]; body: Table } {
  const alpha = levelLabel(1 - o.level);
  const a = 1 - o.level;
  const searched = r.source === "search";
  const noP = hostError("na", "the break was chosen by the search for its large statistic, so this p-value would overstate the evidence: read the sup-F row's p-value");
  const where = startText(r, r.start);
  const known = r.known;
  const width = 7;
  const header = ["Test", "Statistic", "df", "p-value", "Second regime from", "Errors", "Reading"];
  const df = `${known.chow.df1}, ${known.chow.df2}`;
  const chowReading = searched
    ? `at the most likely break found by the search (${where}): no p-value, since the break was chosen for its large statistic; read the sup-F row`
    : known.chow.pValue < a
      ? `the coefficients differ before and from ${where} at the ${alpha} level, if the spread of the errors is the same in both regimes (Chow's assumption${known.wald.covariance === "classical" ? "; a robust se= does not need it" : "; the next row does not need it"})`
      : `no change detected at the ${alpha} level with classical errors`;
  const waldReading = searched
    ? `the same break tested with ${known.wald.label} errors: no p-value (the break was chosen by the search)`
    : known.wald.pValue < a
      ? `the coefficients differ at the ${alpha} level with ${known.wald.label} errors, which allow the spread to differ between regimes`
      : `no change detected at the ${alpha} level with ${known.wald.label} errors`;
  const body: Table = [
    ["Chow F (classical errors)", num(known.chow.statistic), df, searched ? noP : num(known.chow.pValue), r.start, "classical", chowReading],
    [`Wald F (${known.wald.label} errors)`, num(known.wald.statistic), df, searched ? noP : num(known.wald.pValue), r.start, known.wald.label, waldReading],
  ];
  const s = r.search;
  if (s) {
    const range = `from ${startText(r, labelAt(r, s.from))} to ${startText(r, labelAt(r, s.to))}`;
    const found = s.pValue < a
      ? `a change somewhere among the breaks ${range} at the ${alpha} level (Hansen 1997 p-value), most likely from ${startText(r, r.searchStart)}`
      : `no change detected at the ${alpha} level among the breaks ${range}; the largest statistic is from ${startText(r, r.searchStart)}`;
    body.push([
      `sup-F (unknown break, trim ${o.trim})`, num(s.statistic), String(s.k), num(s.pValue), r.searchStart, "classical",
      `${found}. A break found by searching marks where the data changed most, not why: it is not a cause; check what happened then (a price list, a new product, a recount)`,
    ]);
  } else {
    const p = r.searchProblem as ElxProblem;
    body.push(noteRow(width, [`sup-F (unknown break, trim ${o.trim})`, hostError(p.kind, p.message), "", "", "", "", `cannot search: ${p.message}`]));
  }
  body.push(noteRow(width, []));
  body.push(["Term", "Elasticity before", "Elasticity after", "Difference", "Std. error", "p-value", "Reading"]);
  for (const t of r.terms) {
    if (t.binary) {
      body.push(noteRow(width, [t.name, "", "", "", "", "", `binary (0/1): its effect is a percent change, not an elasticity; see ELX.EFFECTS on each regime's rows`]));
      continue;
    }
    const point = t.at === EVERYWHERE ? "" : `; both at ${t.at}`;
    const reading = searched
      ? `from ${short(t.before)} to ${short(t.after)} at the break found by the search; no p-value (the break was chosen by the search)${point}`
      : t.pValue < a
        ? `the elasticity changed from ${short(t.before)} to ${short(t.after)} (${pText(t.pValue)}): a change at the ${alpha} level${point}`
        : `no clear change at the ${alpha} level (${short(t.before)} before, ${short(t.after)} after, ${pText(t.pValue)})${point}`;
    body.push([t.name, num(t.before), num(t.after), num(t.difference), num(t.se), searched ? noP : num(t.pValue), reading]);
  }
  if (r.leftOut > 0) {
    body.push(noteRow(width, ["(left out)", r.leftOut, "", "", "", "", `rows with a blank, text or error cell in y, x${r.timeName ? ` or ${r.timeName}` : ""} are in neither regime`]));
  }
  if (r.timeName) {
    body.push(noteRow(width, ["(periods)", "", "", "", "", "", `periods of ${r.timeName} count ${r.periodOrder}; the rows are taken in that order, and breaks fall between periods`]));
  }
  body.push(noteRow(width, ["(caution)", "", "", "", "", "", BREAK_CAUTION]));
  return { header, body };
}

function labelAt(r: BreakTestResult, point: number): string | number {
  return r.labelOf(point);
}

export function breakTestTable(y: unknown, x: unknown, at: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const origins = originsOf(invocation);
    const r = getBreakTest(y, x, at, o, origins[0] ?? null, origins[1] ?? null);
    const { header, body } = breakBody(r, o);
    return table(header, body, o);
  });
}
