/**
 * The pane's big-range results: what a ColumnFitSpec can take from the pane's choices (and the
 * sentence for the choices it cannot), the results as HTML (coefficients with their intervals,
 * rows used and left out by reason, Breusch–Pagan, the residual picture from the fit's thinned
 * sample, the cautions), and the values block written into the sheet with its registry entry.
 */
import type { ColumnFitResult, ColumnFitSpec } from "../functions/engine/columnFitTypes";
import type { ValuesBlock } from "./host";
import type { BigPlan, ColumnTally } from "./chunks";
import { intervalPlot, residualPlot, shortNumber, type IntervalRow } from "./charts";
import { CAUTIONS } from "./assumptions";
import type { Form } from "./check";

const esc = (s: unknown): string => String(s).replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");
const fmt = (n: number): string => n.toLocaleString("en-GB");
const percent = (level: number): string => `${Number((level * 100).toPrecision(6))}%`;
const pText = (p: number): string => (Number.isFinite(p) ? (p < 0.0001 ? "p < 0.0001" : `p = ${p.toFixed(4)}`) : "p not available");
const num = (v: number): string => (Number.isFinite(v) ? shortNumber(v) : "–");

/** The choices a big fit can take: least squares, the form, zeros stop/drop, classical or HC0–HC3, any level. */
export const BIG_SE = ["classical", "HC0", "HC1", "HC2", "HC3"];

export interface BigChoices {
  form: Form;
  estimator: string;
  se: string;
  zeros: string;
  level: string;
  /** Role choices in force (fixed effects, clusters, weights, an instrument), as option words. */
  roles: string[];
}

/** Why these choices cannot be fitted from blocks, in the analyst's words, or null when they can. */
export function bigRefusal(c: BigChoices, cells: number): string | null {
  const no: string[] = [];
  if (c.estimator !== "ols") no.push(`the estimator ${c.estimator === "ppml" ? "PPML" : c.estimator}`);
  if (c.zeros !== "stop" && c.zeros !== "drop") no.push(`zeros=${c.zeros}`);
  if (!BIG_SE.includes(c.se)) no.push(`${c.se} errors`);
  for (const w of c.roles) no.push(w);
  if (no.length === 0) return null;
  return `These ranges hold ${fmt(cells)} cells, more than one formula carries, so the pane reads them in blocks. Ranges this large take least squares with these choices: any form, zeros stop or drop (leave them out), classical or HC0–HC3 errors, any interval level; ${no.join(", ")} ${no.length === 1 ? "is" : "are"} not among them. Choose from those, or use formulas (ELX.FIT and the others) on ranges of up to 25,000 rows × 10 columns: formulas stay the way for everything a call can carry`;
}

export function specOf(c: BigChoices, plan: BigPlan): ColumnFitSpec {
  return { yName: plan.yName, xNames: plan.xNames, form: c.form, zeros: c.zeros === "drop" ? "drop" : "stop", se: c.se as ColumnFitSpec["se"], level: Number(c.level), intercept: true, firstRow: plan.firstRow };
}

export function specOptions(s: ColumnFitSpec): string {
  return `form=${s.form}; se=${s.se}; zeros=${s.zeros}; level=${s.level}`;
}

/** How a term's coefficient reads under the form (a binary column stays in levels under a log x side). */
export function readsAs(form: Form, term: string, binary: boolean): string {
  if (term === "(Intercept)") return "intercept";
  const logY = form.startsWith("log");
  const logX = form.endsWith("log") && !binary;
  if (logX) return logY ? "elasticity" : "change in y per 1% (coefficient ÷ 100)";
  if (binary) return logY ? "0/1: log-point effect" : "0/1: effect in y's units";
  return logY ? "semi-elasticity (per unit)" : "change per unit";
}

export function leftOutSentence(r: ColumnFitResult): string {
  const parts: string[] = [];
  if (r.leftOut.blank) parts.push(`${fmt(r.leftOut.blank)} with a blank cell`);
  if (r.leftOut.notNumber) parts.push(`${fmt(r.leftOut.notNumber)} with text or an error where a number was needed`);
  if (r.leftOut.nonPositive) parts.push(`${fmt(r.leftOut.nonPositive)} with a zero or negative under a log (zeros=drop)`);
  const total = r.leftOut.blank + r.leftOut.notNumber + r.leftOut.nonPositive;
  return total === 0 ? "no row left out" : `${fmt(total)} ${total === 1 ? "row" : "rows"} left out: ${parts.join("; ")}`;
}

export interface BigRun {
  plan: BigPlan;
  spec: ColumnFitSpec;
  result: ColumnFitResult;
  tallies: ColumnTally[];
  y: string;
  x: string;
  computedAt: string;
  workers: number;
  fallbackNote: string;
}

function binaryOf(run: BigRun, term: string): boolean {
  const t = run.tallies.find((c) => c.role === "x" && c.name === term);
  return !!t && t.numbers > 0 && t.other === 0;
}

/** The per-column counts of the rows read (the big path's data check). */
export function talliesHtml(tallies: ColumnTally[], form: Form): string {
  const logY = form.startsWith("log");
  const logX = form.endsWith("log");
  const rows = tallies.map((t) => {
    const binary = t.role === "x" && t.numbers > 0 && t.other === 0;
    const logged = t.role === "y" ? logY : logX && !binary;
    return `<tr><th scope="row">${esc(t.name)}${t.role === "y" ? " (y)" : ""}</th><td>${fmt(t.numbers)}</td><td>${fmt(t.blank + t.text + t.error)}</td><td>${fmt(t.zeros)}</td><td>${fmt(t.negatives)}</td><td>${binary ? "binary" : logged ? "log" : "levels"}</td></tr>`;
  }).join("");
  const logical = tallies.filter((t) => t.logical > 0).map((t) => `${esc(t.name)} ${fmt(t.logical)}`);
  const note = logical.length ? `<p id="elx-big-logical" class="elx-muted">TRUE/FALSE cells, counted among the numbers and read as 1/0 (as formulas read them): ${logical.join("; ")}.</p>` : "";
  return `<div class="elx-table-wrap"><table id="elx-big-check" class="elx-compact"><caption>Per column, over the data rows read</caption><thead><tr><th scope="col">Column</th><th scope="col">Values</th><th scope="col">Blank, text or error</th><th scope="col">Zeros</th><th scope="col">Below zero</th><th scope="col">Taken as</th></tr></thead><tbody>${rows}</tbody></table></div>${note}`;
}

/** The results of a big fit as the pane shows them. */
export function resultsHtml(run: BigRun): string {
  const [text, elasticities, residuals] = resultsParts(run);
  return text.replace('<div id="elx-big-fig-el"></div>', `<div id="elx-big-fig-el">${elasticities}</div>`).replace('<div id="elx-big-fig-res"></div>', `<div id="elx-big-fig-res">${residuals}</div>`);
}

/**
 * The same in three parts, so the pane can draw them one at a time: the text and table (with empty
 * #elx-big-fig-el and #elx-big-fig-res holders), the elasticities' figure, the residual picture.
 */
export function resultsParts(run: BigRun): [string, string, string] {
  const r = run.result;
  const lv = percent(run.spec.level);
  const body = r.terms.map((term, j) => `<tr data-term="${esc(term)}"><th scope="row">${esc(term)}</th><td>${esc(readsAs(run.spec.form, term, binaryOf(run, term)))}</td><td>${esc(num(r.coefficients[j]))}</td><td>${esc(num(r.standardErrors[j]))}</td><td>${esc(num(r.lower[j]))}</td><td>${esc(num(r.upper[j]))}</td><td>${esc(pText(r.p[j]))}</td></tr>`).join("");
  const rows: IntervalRow[] = r.terms.map((term, j) => ({ term, estimate: r.coefficients[j], lower: r.lower[j], upper: r.upper[j] }))
    .filter((row) => row.term !== "(Intercept)" && readsAs(run.spec.form, row.term, binaryOf(run, row.term)) === "elasticity" && [row.estimate, row.lower, row.upper].every(Number.isFinite));
  const bp = r.breuschPagan;
  const bpText = bp ? `Breusch–Pagan (studentized, on the fit's regressors): ${shortNumber(bp.statistic)} on ${bp.df} df, ${pText(bp.p)}${bp.p < 0.05 ? ": the spread of the residuals changes with the regressors, so prefer robust (HC) errors" : ": no evidence here that the spread changes with the regressors"}.` : "Breusch–Pagan could not be computed for this fit.";
  const logY = run.spec.form.startsWith("log");
  const picture = () => residualPlot({ fitted: r.sample.fitted, residuals: r.sample.residuals, title: `Residuals against fitted values, ${run.spec.form}`, xLabel: `Fitted ${logY ? `log ${run.spec.yName}` : run.spec.yName}`, yLabel: "Residual" });
  const plot = picture();
  const text = `<p id="elx-big-summary">${esc(run.spec.yName)} on ${esc(run.spec.xNames.join(", "))} (${esc(specOptions(run.spec))}): <strong>${esc(fmt(r.n))} rows used</strong> of ${esc(fmt(r.rowsRead))} read; <span id="elx-big-leftout">${esc(leftOutSentence(r))}</span>. Errors: ${esc(r.seLabel)}. R² ${esc(num(r.rSquared))}.</p>` +
    (run.fallbackNote ? `<p id="elx-big-fallback" class="elx-message elx-warned">${esc(run.fallbackNote)}</p>` : "") +
    '<div id="elx-big-fig-el"></div>' +
    `<div class="elx-table-wrap"><table id="elx-big-table" class="elx-compact"><caption>Coefficients (${esc(r.seLabel)} errors)</caption><thead><tr><th scope="col">Term</th><th scope="col">Reads as</th><th scope="col">Coefficient</th><th scope="col">Std. error</th><th scope="col">Low (${esc(lv)})</th><th scope="col">High (${esc(lv)})</th><th scope="col">p-value</th></tr></thead><tbody>${body}</tbody></table></div>` +
    `<p id="elx-big-bp">${esc(bpText)}</p>` +
    '<div id="elx-big-fig-res"></div>' +
    `<ul class="elx-cautions">${CAUTIONS.slice(0, 3).map((c) => `<li>${esc(c)}</li>`).join("")}</ul>`;
  const elasticities = rows.length ? `<figure id="elx-big-elasticities">${intervalPlot(rows, "Elasticities with their intervals", lv)}<figcaption>Dots are elasticities, bars their ${esc(lv)} intervals (${esc(r.seLabel)} errors); the black line is zero.</figcaption></figure>` : "";
  const residuals = `<figure id="elx-big-residuals">${plot.svg}<figcaption>${esc(fmt(plot.drawn))} evenly spaced rows of the ${esc(fmt(r.n))} used: a fan or a curve says the spread or the form is not what the model assumes.</figcaption></figure>`;
  return [text, elasticities, residuals];
}

/** The caution line that heads every values block. */
export const VALUES_CAUTION = "Associations, not causes; prices react to demand; results depend on the sample and the data's quality.";

/** The values block of a big fit: what it is (ranges, options, rows used and left out, when), then the numbers. */
export function valuesBlock(run: BigRun): ValuesBlock {
  const r = run.result;
  const lv = percent(run.spec.level);
  const out: ValuesBlock = [
    [`Elasticell values (not formulas): ${run.spec.yName} on ${run.spec.xNames.join(", ")}. Refresh from the pane's list of values blocks.`],
    ["y", run.y],
    ["x", run.x],
    ["Options", specOptions(run.spec)],
    ["Rows used", r.n, "of", r.rowsRead],
    ["Rows left out", leftOutSentence(r)],
    ["Computed", `at ${run.computedAt}`],
    ["Term", "Reads as", "Coefficient", `Std. error (${r.seLabel})`, "p-value", `Low (${lv})`, `High (${lv})`],
  ];
  const n = (v: number): string | number => (Number.isFinite(v) ? v : "n/a");
  r.terms.forEach((term, j) => out.push([term, readsAs(run.spec.form, term, binaryOf(run, term)), n(r.coefficients[j]), n(r.standardErrors[j]), n(r.p[j]), n(r.lower[j]), n(r.upper[j])]));
  out.push(["R²", n(r.rSquared)]);
  out.push(r.breuschPagan ? ["Breusch–Pagan (studentized)", n(r.breuschPagan.statistic), "df", r.breuschPagan.df, "p-value", n(r.breuschPagan.p)] : ["Breusch–Pagan (studentized)", "n/a"]);
  out.push([VALUES_CAUTION]);
  return out;
}

/** One values block the pane wrote, as kept in the document's settings. */
export interface ValuesEntry {
  id: string;
  /** The block's cells, sheet-qualified. */
  area: string;
  y: string;
  x: string;
  spec: ColumnFitSpec;
  computedAt: string;
  written: ValuesBlock;
}

export const REGISTRY_KEY = "elasticell.valuesBlocks";

/** The time a values block was computed, as its heading shows it ("2026-12-03 12:34 UTC"). */
export function stamp(d = new Date()): string {
  return `${d.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}
