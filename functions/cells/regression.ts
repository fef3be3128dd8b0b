/**
 * Cell functions of the fit: FIT, ELASTICITY, ELASTICITIES, EFFECTS, SUMMARY, ZEROS.
 * Each reads the one cached fit for its inputs and shapes a table; the numbers come from the engine.
 */
import { getFit, getOlsFit, type AnyFit } from "../engine/model";
import { seTypeOf, type Options } from "../engine/options";
import { ElxProblem, fail, quote, rowsPhrase, unavailable } from "../engine/problems";
import { retransformFactor } from "../engine/retransform";
import { conditionNumber, varianceInflation } from "../engine/collinearity";
import { resolveColumn, type Dataset } from "../engine/transforms";
import { elasticity, percentEffect } from "../engine/elasticity";
import { readRange, asMatrix, CellIssue, numericTextAdvice, uniqueNames } from "../engine/intake";
import type { OlsFit } from "../engine/fit";
import type { PpmlFit } from "../engine/ppml";
import { fewClustersNote, negativeVarianceReason } from "../engine/panelCovariance";
import type { Covariance } from "../engine/covariance";
import type { Model } from "../engine/fit";
import { guarded, hostError, intervalHeaders, num, options, originsOf, table, safe, type Cell, type Table } from "./host";

/** Fit for a cell function whose first two parameters are y and x. */
export function fitFor(y: unknown, x: unknown, o: Options, invocation: unknown): AnyFit {
  const [yo, xo] = originsOf(invocation);
  return getFit({ y, x, options: o, yOrigin: yo ?? null, xOrigin: xo ?? null });
}

/** The least-squares fit for functions that apply to OLS only (tests, retransformation factors). */
export function olsFor(y: unknown, x: unknown, o: Options, invocation: unknown, what: string): OlsFit {
  const [yo, xo] = originsOf(invocation);
  return getOlsFit({ y, x, options: o, yOrigin: yo ?? null, xOrigin: xo ?? null }, what);
}

export function fitTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const se = fit.standardErrors(cov);
    const crit = fit.criticalValue(o.level, cov);
    // An exact fit's standard errors are rounding noise: t and p would be huge numbers and zeros.
    const exact = fit.estimator === "ols" && fit.isExact() ? hostError("na", `${fit.exactReason()}; that leaves t and p undefined`) : null;
    const body: Table = fit.terms.map((t, j) => {
      const b = fit.coef[j];
      const tstat = b / se[j];
      const negative = cov.negative?.includes(j) ? negativeVarianceReason(t.name) : undefined;
      const why = negative ?? (se[j] === 0 ? "the standard error is zero (exact fit), so t and p are undefined" : undefined);
      return [
        t.name,
        fit.termLabel(t),
        num(b),
        num(se[j], negative),
        exact ?? num(tstat, why),
        exact ?? num(fit.pValue(tstat, cov), why),
        num(b - crit * se[j], negative),
        num(b + crit * se[j], negative),
      ];
    });
    return table(["Term", "Transform", "Coefficient", `Std. error (${cov.label})`, fit.info.statistic, "p-value", ...intervalHeaders(o.level)], body, o);
  });
}

/** The Evaluated-at text of a binary term's row, whose other cells are left empty. */
export const BINARY_NOTE = "binary: see ELX.EFFECTS";

function binaryMessage(name: string): string {
  return `${name} is binary (0/1): its effect is a percent change, not an elasticity; see ELX.EFFECTS`;
}

export function elasticityValue(y: unknown, x: unknown, term: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    const column = resolveColumn(term, fit.data.xNames);
    if (fit.data.binary[column]) unavailable(binaryMessage(fit.data.xNames[column]));
    const cov = fit.covariance(seTypeOf(o), o.lags);
    return [[num(elasticity(fit, column, cov, o.level, o.at).estimate)]];
  });
}

export function elasticitiesTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const body: Table = fit.data.xNames.map((name, j) => {
      const t = fit.terms[fit.coefIndex(j)];
      if (fit.data.binary[j]) {
        // Empty, not #N/A: a binary term has no elasticity, and an error cell would break a sum.
        return [name, fit.termLabel(t), "", "", "", "", BINARY_NOTE];
      }
      const r = elasticity(fit, j, cov, o.level, o.at);
      const negative = cov.negative?.includes(fit.coefIndex(j)) ? negativeVarianceReason(name) : undefined;
      return [name, fit.termLabel(t), num(r.estimate), num(r.se, negative), num(r.lower, negative), num(r.upper, negative), r.at];
    });
    return table(["Term", "Transform", "Elasticity", `Std. error (${cov.label})`, ...intervalHeaders(o.level), "Evaluated at"], body, o);
  });
}

export function effectsTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    const g = fit.meanTransform;
    if (g.kind === "level") unavailable("percent effects need y in logs (form=log-log or form=log-level); with y in levels a coefficient is a change in units of y: read ELX.FIT");
    if (g.kind !== "log") unavailable(`percent effects need y in plain logs; here y is transformed by ${g.kind === "asinh" ? "asinh" : "log(y + c)"} (zeros=${g.kind === "asinh" ? "ihs" : "shift"}), whose coefficients are not percent changes of y: use zeros=drop or estimator=ppml`);
    const cols = fit.data.xTransforms.map((t, j) => (t.kind === "level" ? j : -1)).filter((j) => j >= 0);
    if (cols.length === 0) unavailable("no regressor is in levels here: under a log x side each coefficient is already an elasticity (ELX.ELASTICITIES); percent effects are for binary columns or those named in levels=");
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const body: Table = cols.map((j) => {
      const r = percentEffect(fit, j, cov, o.level);
      return [r.term.name, num(r.percent), num(r.corrected), num(r.lower), num(r.upper)];
    });
    return table(["Term", "Percent effect", "Corrected (Kennedy 1981)", ...intervalHeaders(o.level)], body, o);
  });
}

function retransformRows(fit: OlsFit): [string, Cell][] {
  if (fit.data.yTransform.kind === "level") {
    const why = "y is in levels: predictions need no retransformation factor";
    return [["Smearing factor (Duan)", hostError("na", why)], ["Normal-theory factor", hostError("na", why)]];
  }
  return [
    ["Smearing factor (Duan)", safe(() => num(retransformFactor(fit, "duan")))],
    ["Normal-theory factor", safe(() => num(retransformFactor(fit, "normal")))],
  ];
}

function collinearityRows(fit: OlsFit): [string, Cell][] {
  const vif = varianceInflation(fit);
  const rows: [string, Cell][] = [];
  if (vif === null) {
    rows.push(["Largest VIF", hostError("na", fit.absorbed > 0
      ? "VIFs are not computed with absorb=: their centred definition needs an intercept, which the fixed effects replace"
      : "VIFs are defined for a model with an intercept (intercept=true)")]);
  } else {
    rows.push(["Largest VIF", num(Math.max(...vif))]);
    vif.forEach((v, j) => rows.push([`VIF: ${fit.data.xNames[j]}`, num(v)]));
  }
  rows.push(["Condition number", safe(() => num(conditionNumber(fit)))]);
  return rows;
}

/**
 * What PPML under zeros=drop keeps of the rows the log of y lost: the zeros of y stay in, except in
 * rows that a logged regressor at or below zero leaves out as well.
 */
export function ppmlKeeps(kept: number, lost: number, yName: string): string {
  const zeros = (n: number) => `${n} ${n === 1 ? "row" : "rows"} with ${yName} = 0`;
  if (kept >= lost) return `keeps the ${zeros(lost)}`;
  const rest = lost - kept;
  return `keeps ${kept === 0 ? "none" : kept} of the ${zeros(lost)} (the other ${rest} ${rest === 1 ? "is" : "are"} left out of PPML too: a logged regressor is zero or negative in ${rest === 1 ? "that row" : "those rows"})`;
}

/**
 * For a log-y OLS fit that dropped zero rows of y: how many the log lost, and whether PPML on the same
 * data, which keeps them, gives an elasticity outside the OLS interval.
 */
function ppmlContrastRows(fit: OlsFit, o: Options, y: unknown, x: unknown, invocation: unknown): [string, Cell][] {
  if (o.zeros !== "drop" || fit.data.yTransform.kind !== "log" || fit.data.yNonPositive === 0) return [];
  const zeros = fit.data.yNonPositive - fit.data.yNegative;
  const rows: [string, Cell][] = [[`Rows the log of ${fit.data.yName} lost (zero or blank)`, zeros]];
  if (fit.data.yNegative > 0) rows.push([`Rows the log of ${fit.data.yName} lost (negative)`, fit.data.yNegative]);
  let text: string;
  try {
    const p = fitFor(y, x, { ...o, estimator: "ppml", se: null }, invocation);
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const pc = p.covariance("HC1");
    const differ: string[] = [];
    const fmt = (v: number) => Number(v.toPrecision(4)).toString();
    fit.data.xNames.forEach((name, j) => {
      if (fit.data.binary[j]) return;
      const a = elasticity(fit, j, cov, o.level, o.at);
      const b = elasticity(p, j, pc, o.level, o.at);
      if (b.estimate < a.lower || b.estimate > a.upper) differ.push(`${name} ${fmt(b.estimate)} against ${fmt(a.estimate)} [${fmt(a.lower)}, ${fmt(a.upper)}]`);
    });
    const keeps = ppmlKeeps(p.data.yZerosUsed, fit.data.yNonPositive, fit.data.yName);
    text = differ.length > 0
      ? `PPML, which ${keeps}, gives a materially different elasticity (outside the OLS interval): ${differ.join("; ")}; the dropped zeros or heteroskedasticity may bias the log fit: compare with estimator=ppml`
      : `PPML, which ${keeps}, gives elasticities inside the OLS intervals`;
  } catch (e) {
    if (!(e instanceof ElxProblem)) throw e;
    text = `PPML on the same rows could not be fitted: ${e.message}`;
  }
  rows.push(["PPML contrast", text]);
  return rows;
}

/**
 * The rows SUMMARY gives for what the intake and the log left out: blank or non-numeric (with the
 * rows holding numbers stored as text named, when there are any), zero and negative apart, and the
 * columns whose header cell was empty.
 */
function leftOutRows(d: Dataset): [string, Cell][] {
  const rows: [string, Cell][] = [["Rows left out: blank or non-numeric", d.leftOutBlank]];
  const e = d.numericTextExample;
  if (d.numericTextRows.count > 0 && e !== null) {
    rows.push(["Of these, numbers stored as text", `${rowsPhrase(d.numericTextRows)} (for example ${quote(e.text)} in ${e.column}, row ${e.row}): ${numericTextAdvice(e.text)}`]);
  }
  rows.push(["Rows left out: zero or blank under a log", d.leftOutNonPositive - d.leftOutNegative]);
  rows.push(["Rows left out: negative under a log", d.leftOutNegative]);
  if (d.unnamed.length > 0) {
    rows.push(["Columns without a header", `${d.unnamed.join(", ")}: ${d.unnamed.length === 1 ? "its header cell is" : "their header cells are"} empty, so ${d.unnamed.length === 1 ? "it is" : "they are"} named by ${d.unnamed.length === 1 ? "its" : "their"} place`]);
  }
  return rows;
}

/**
 * SUMMARY's rows for the role columns: the fixed effects absorbed (values per key, absorbed parameters,
 * connected components of two keys), the rows they left out (singletons; PPML's values with y = 0 in
 * every row), the weights and the rows they left out, and the clusters of a clustered covariance with
 * the df of its t; empty for a fit without any of these.
 */
function panelRows(fit: Model, cov: Covariance): [string, Cell][] {
  const d = fit.data;
  const rows: [string, Cell][] = [];
  const keys = d.roles.absorb;
  if (keys.length > 0) {
    const ab = fit.absorber;
    rows.push(["Fixed effects absorbed", keys.map((k) => `${k.name} (${k.labels.length} values)`).join(" and ")]);
    rows.push(["Absorbed parameters", fit.absorbed]);
    if (keys.length === 2 && ab) rows.push(["Connected components of the two keys", ab.components]);
    rows.push(["Rows left out: singletons (a value in one row only)", d.leftOutSingleton]);
    if (fit.info.exponentialMean) {
      rows.push([`Values left out: ${d.yName} = 0 in every row (no finite effect)`, d.allZeroValues]);
      rows.push([`Rows left out: those values' rows`, d.leftOutAllZero]);
    }
  }
  if (d.roles.weightsName !== null) {
    rows.push(["Weights", d.roles.weightsName]);
    rows.push(["Rows left out: zero or negative weight", d.leftOutWeight]);
  }
  if (cov.type === "cluster" && cov.groups) {
    const names = d.roles.cluster.map((c) => c.name);
    const parts = names.map((n, m) => `${n}: ${cov.groups![m]}`);
    if (names.length === 2 && cov.groups.length > 2) parts.push(`pairs: ${cov.groups[2]}`);
    rows.push(["Clusters", parts.join("; ")]);
  }
  if (cov.df !== undefined) rows.push([`Degrees of freedom of ${fit.info.statistic}`, fit.info.statistic === "z" ? "normal (z)" : cov.df]);
  return rows;
}

/** The caution row: the general caution, then what fixed effects and clusters do not do. */
function cautionText(fit: Model, cov: Covariance): string {
  const parts = [CAUTION];
  if (fit.data.roles.absorb.length > 0) {
    parts.push(`Fixed effects remove only differences that stay the same over the rows of each ${fit.data.roles.absorb.map((k) => k.name).join(" and each ")} (such as a store's location); whatever changes within them (promotions, competitors) still confounds the estimates.`);
  }
  if (cov.type === "cluster") {
    parts.push("Clustered errors assume rows in different clusters are independent.");
    const few = fewClusters(fit, cov);
    if (few) parts.push(few);
  }
  return parts.join(" ");
}

/** The message for a clustered covariance with fewer than FEW_CLUSTERS clusters in some cluster= column (null otherwise). */
export function fewClusters(fit: Model, cov: Covariance): string | null {
  return cov.type === "cluster" ? fewClustersNote(fit.data.roles.cluster.map((c) => c.name), cov.groups) : null;
}

function ppmlSummaryRows(fit: PpmlFit, o: Options): [string, Cell][] {
  const s = fit.statistics();
  const cov = fit.covariance(seTypeOf(o), o.lags);
  return [
    ["Form", `${o.form}${fit.intercept || fit.absorbed > 0 ? "" : ", no intercept"}`],
    ["Estimator", "PPML (Poisson pseudo-maximum likelihood, mean exp(x'b), y in levels)"],
    ["Std. errors", cov.label],
    ["Observations used", fit.n],
    ...leftOutRows(fit.data),
    ...panelRows(fit, cov),
    [`Zeros kept in ${fit.data.yName}`, s.zerosKept],
    ["Deviance", num(s.deviance)],
    ["Pseudo R² (squared correlation of y and fitted)", num(s.pseudoRSquared, "pseudo R² is undefined: the fitted values do not vary")],
    ["Pearson dispersion", num(s.dispersion)],
    ["Iterations", s.iterations],
    ["Caution", cautionText(fit, cov)],
  ];
}

const CAUTION = "Associations, not causes: prices often respond to demand, and results depend on the sample and data quality; decisions stay with the analyst and their organisation's review.";

export function summaryTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const fit = fitFor(y, x, o, invocation);
    if (fit.estimator === "ppml") return table(["Statistic", "Value"], ppmlSummaryRows(fit, o), o);
    const s = fit.statistics();
    const cov = fit.covariance(seTypeOf(o), o.lags);
    const g = fit.data.yTransform;
    const scale = g.kind === "level" ? "y" : g.kind === "log" ? "log y" : g.kind === "shift" ? `log(y+${g.c})` : "asinh(y)";
    const noF = "no regressor besides the intercept, or an exact fit: the F test is undefined";
    const rows: [string, Cell][] = [
      ["Form", `${o.form}${fit.intercept || fit.absorbed > 0 ? "" : ", no intercept"}`],
      ["Std. errors", cov.label],
      ["Fit statistics on the scale of", scale],
      ["Observations used", fit.n],
      ...leftOutRows(fit.data),
      ...panelRows(fit, cov),
      [fit.absorbed > 0 ? "R² (full model, fixed effects included)" : "R²", num(s.rSquared, "R² is undefined: y does not vary")],
      ...(fit.absorbed > 0 ? [["Within R² (after absorbing the fixed effects)", num(s.withinRSquared, "the within R² is undefined: y does not vary within the fixed effects")] as [string, Cell]] : []),
      ["Adjusted R²", num(s.adjRSquared, "adjusted R² is undefined: y does not vary")],
      ["Residual std. error", num(s.sigma)],
      ["F statistic", s.fStatistic === null ? hostError("na", noF) : num(s.fStatistic)],
      ["F p-value", s.fPValue === null ? hostError("na", noF) : num(s.fPValue)],
      ["Log-likelihood", num(s.logLik, "the log-likelihood is unbounded for an exact fit")],
      ["AIC", num(s.aic, "AIC is undefined for an exact fit")],
      ["BIC", num(s.bic, "BIC is undefined for an exact fit")],
      ...retransformRows(fit),
      ...collinearityRows(fit),
      ...ppmlContrastRows(fit, o, y, x, invocation),
      ["Caution", cautionText(fit, cov)],
    ];
    return table(["Statistic", "Value"], rows, o);
  });
}

export function zerosTable(range: unknown, opts: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const m = asMatrix(range, "range");
    const r = readRange(m, (j) => (m[0].length === 1 ? "y" : `column ${j + 1}`), 1);
    r.names = uniqueNames(r.names);
    if (r.rows === 0) fail("the range has a header row but no data rows below it");
    const k = r.columns.length;
    const anyLost = new Uint8Array(r.rows);
    const body: Table = [];
    for (let j = 0; j < k; j++) {
      const c = r.columns[j];
      let values = 0;
      let blank = 0;
      let zeros = 0;
      let negatives = 0;
      let binary = true;
      for (let i = 0; i < r.rows; i++) {
        const v = c[i];
        if (Number.isNaN(v)) {
          blank++;
          continue;
        }
        values++;
        if (v === 0) zeros++;
        else if (v < 0) negatives++;
        if (v !== 0 && v !== 1) binary = false;
      }
      binary = binary && values > 0;
      if (!binary) for (let i = 0; i < r.rows; i++) if (c[i] <= 0) anyLost[i] = 1;
      body.push([binary ? `${r.names[j]} (binary: kept in levels)` : r.names[j], values, blank, zeros, negatives, binary ? 0 : zeros + negatives]);
    }
    if (k > 1) {
      let lost = 0;
      for (let i = 0; i < r.rows; i++) lost += anyLost[i];
      let blankRows = 0;
      for (let i = 0; i < r.rows; i++) if (r.issues[i] !== CellIssue.None) blankRows++;
      body.push(["All columns (rows)", r.rows - blankRows, blankRows, "", "", lost]);
    }
    return table(["Column", "Values", "Blank or non-numeric", "Zeros", "Negatives", "Rows a plain log would lose"], body, o);
  });
}
