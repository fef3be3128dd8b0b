/**
 * Cells of two-stage least squares: the SUMMARY rows of a 2SLS fit and ELX.IVCHECK.
 * The numbers come from engine/ivModel.ts and engine/ivCheck.ts.
 */
import { seTypeOf, type Options } from "../engine/options";
import { fail } from "../engine/problems";
import type { TwoStageFit } from "../engine/ivModel";
import { WEAK_F } from "../engine/ivCheck";
import { retransformFactor } from "../engine/retransform";
import type { OlsFit } from "../engine/fit";
import { fitFor } from "./regression";
import type { ElxProblem } from "../engine/problems";
import { guarded, hostError, num, options, safe, table, toHostError, type Cell, type Table } from "./host";

/** A chosen-covariance statistic, or the error value saying why it is undefined. */
function chosenCell(v: number, problem: ElxProblem | null): Cell {
  return problem ? toHostError(problem) : num(v);
}

/** What no test of the instruments can show, said wherever 2SLS results are read. */
export const IV_CAUTION = "No test can prove that an instrument has no direct effect on demand: that rests on knowing how prices are set. Associations, not causes; results depend on the sample and data quality.";

/** SUMMARY of a 2SLS fit: what was instrumented and by what, the first-stage F, R² with the structural residuals. */
export function ivSummaryRows(fit: TwoStageFit, o: Options, leftOut: [string, Cell][]): [string, Cell][] {
  const se = seTypeOf(o);
  const cov = fit.covariance(se, o.lags);
  const s = fit.statistics();
  const g = fit.data.yTransform;
  const rows: [string, Cell][] = [
    ["Form", `${o.form}${fit.intercept || fit.absorbed > 0 ? "" : ", no intercept"}`],
    ["Estimator", "two-stage least squares (2SLS)"],
    ["Instrumented", fit.instrumentedPhrase()],
    ["Exogenous (their own instruments)", [...(fit.intercept ? ["intercept"] : []), ...fit.data.xNames.filter((n) => !fit.endogenousNames.includes(n))].join(", ") || "none"],
    ["Std. errors", cov.label],
    ["Observations used", fit.n],
    ...leftOut,
  ];
  if (fit.absorber) {
    rows.push(["Fixed effects absorbed", fit.absorber.keyNames.join(", ")]);
    rows.push(["Absorbed parameters", fit.absorbed]);
  }
  let check: ReturnType<TwoStageFit["check"]> | null = null;
  let checkProblem: Cell | null = null;
  try {
    check = fit.check(se, o.lags);
  } catch (e) {
    checkProblem = safe(() => {
      throw e;
    });
  }
  fit.endogenousNames.forEach((name, j) => {
    rows.push([`First-stage F: ${name} (classical)`, check ? num(check.firstStages[j].f) : (checkProblem as Cell)]);
    rows.push([`First-stage F: ${name} (${cov.label})`, check ? chosenCell(check.firstStages[j].fChosen, check.firstStages[j].chosenProblem) : (checkProblem as Cell)]);
  });
  rows.push(["R² (structural residuals)", num(s.rSquared, "R² is undefined: y does not vary")]);
  rows.push(["Adjusted R²", num(s.adjRSquared, "adjusted R² is undefined: y does not vary")]);
  if (s.withinRSquared !== null) rows.push(["Within R²", num(s.withinRSquared)]);
  rows.push(["Residual std. error", num(s.sigma)]);
  if (g.kind === "level") {
    rows.push(["Smearing factor (Duan)", hostError("na", "y is in levels: predictions need no retransformation factor")]);
  } else {
    rows.push(["Smearing factor (Duan)", safe(() => num(retransformFactor(fit as unknown as OlsFit, "duan")))]);
  }
  rows.push(["Reading", "R² of 2SLS uses y − Xb with the actual regressors and can be negative; it is not a measure of the instruments. ELX.IVCHECK tests the instruments."]);
  rows.push(["Caution", IV_CAUTION]);
  return rows;
}

/** ELX.IVCHECK: first-stage strength per endogenous regressor, Wu–Hausman, Sargan, and a reading. */
export function ivCheckTable(y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    if (o.estimator !== "2sls") fail("ELX.IVCHECK checks a two-stage least squares fit: add estimator=2sls with endogenous= (the regressors that respond to y) and instruments= (the columns that move them)");
    const fit = fitFor(y, x, o, invocation) as TwoStageFit;
    const se = seTypeOf(o);
    const c = fit.check(se, o.lags);
    const label = c.seLabel;
    const body: Table = [];
    const weak = (f: number) => (f < WEAK_F ? `below ${WEAK_F}: weak instruments by the rule of thumb (Staiger and Stock 1997; common practice)` : `at or above ${WEAK_F}: not weak by the rule of thumb (Staiger and Stock 1997; common practice)`);
    for (const r of c.firstStages) {
      body.push([`First-stage F: ${r.name} (classical)`, num(r.f), `${r.df1}, ${r.df2}`, num(r.p), weak(r.f)]);
      body.push([`First-stage F: ${r.name} (${label})`, chosenCell(r.fChosen, r.chosenProblem), `${r.df1}, ${r.df2}`, chosenCell(r.pChosen, r.chosenProblem), r.chosenProblem ? r.chosenProblem.message : weak(r.fChosen)]);
      body.push([`Partial R²: ${r.name}`, num(r.partialR2), "", "", "share of its variation, apart from the exogenous regressors, that the instruments explain"]);
    }
    const w = c.wuHausman;
    const wuReading = (p: number) => (p < 0.05 ? "rejected: OLS and 2SLS differ beyond chance, so the regressors named endogenous look endogenous" : "not rejected: no sign that OLS and 2SLS differ; OLS is more precise if the regressors are in fact exogenous");
    body.push(["Wu–Hausman (classical)", num(w.f), `${w.df1}, ${w.df2}`, num(w.p), wuReading(w.p)]);
    body.push([`Wu–Hausman (${label})`, chosenCell(w.fChosen, w.chosenProblem), `${w.df1}, ${w.df2}`, chosenCell(w.pChosen, w.chosenProblem), w.chosenProblem ? w.chosenProblem.message : wuReading(w.pChosen)]);
    if (c.sargan) {
      const s = c.sargan;
      body.push(["Sargan (n·R²)", num(s.statistic), s.df, num(s.p), s.p < 0.05 ? "rejected: at least one instrument is invalid (related to the error), though the test cannot say which" : "not rejected: no sign that the instruments disagree (this cannot show them valid)"]);
    } else {
      const why = "Sargan needs more instruments than endogenous regressors: exactly identified here";
      body.push(["Sargan (n·R²)", hostError("na", why), "", "", why]);
    }
    body.push(["Reading", c.reading, "", "", ""]);
    body.push(["Caution", IV_CAUTION, "", "", ""]);
    return table(["Test", "Statistic", "df", "p-value", "Reading at the 5% level"], body, o);
  });
}
