/**
 * What the chosen form assumes, in plain words, and what the tests say for the data in hand. Pure:
 * the pane passes the test table it got from ELX.TESTS (or its error message).
 */
import type { Estimator, Form } from "./check";
import { shortNumber } from "./charts";

export interface Paragraph {
  heading: string;
  text: string;
}

/**
 * Duan's factor f read as a gap in percent. exp(fitted log y) times f is the mean, so exp(fitted log y)
 * alone is 100(1 − 1/f)% below the mean (6.4% for f = 1.0682), and multiplying by f raises it by
 * 100(f − 1)% (6.82%): two different percentages, both said.
 */
export function smearingNote(f: number): string {
  const head = `Duan's smearing factor is ${shortNumber(f)}`;
  if (f === 1) return `${head}: exp(fitted log y) already predicts the mean of y here.`;
  const gap = shortNumber(Math.abs(100 * (1 - 1 / f)));
  const step = shortNumber(Math.abs(100 * (f - 1)));
  return f > 1
    ? `${head}: exp(fitted log y) alone is about ${gap}% below the mean of y here; multiplying by the factor raises it by ${step}% to the mean.`
    : `${head}: exp(fitted log y) alone is about ${gap}% above the mean of y here; multiplying by the factor lowers it by ${step}% to the mean.`;
}

/** The meaning of a coefficient and the assumptions that come with the form. */
export function formAssumptions(form: Form, estimator: Estimator, se: string): Paragraph[] {
  const out: Paragraph[] = [];
  if (estimator === "ppml") {
    out.push({ heading: "What a coefficient means", text: "PPML models the mean of y (in levels, zeros allowed) as exp(x'b). For a logged regressor the coefficient is the elasticity of the mean; for a regressor in levels, 100(e^b − 1) is the percent change in the mean per unit." });
    out.push({ heading: "What it assumes", text: "Only that the mean is exponential in the regressors: the spread may change with the level, and no normality is needed. Predictions come out in units of y directly, with no retransformation factor. The errors are robust (HC1 by default)." });
    return out;
  }
  const yLog = form === "log-log" || form === "log-level";
  const xLog = form === "log-log" || form === "level-log";
  const meaning: Record<Form, string> = {
    "log-log": "Each coefficient on a logged regressor is an elasticity: the percent change in y for a 1% change in that regressor, the same at every point of the data (a constant elasticity). Binary columns stay in levels: 100(e^b − 1) is their percent effect.",
    "log-level": "Each coefficient is a semi-elasticity: 100·b is about the percent change in y per unit of the regressor (exactly 100(e^b − 1)); the elasticity b·x̄ grows with the level of x.",
    "level-log": "Each coefficient is the change in y, in its units, for a 100% change in the regressor (b/100 per 1%); the elasticity b/ȳ depends on where it is evaluated.",
    "level-level": "Each coefficient is the change in y, in its units, per unit of the regressor; the elasticity b·x̄/ȳ changes along the data and is evaluated at the means (or medians).",
  };
  out.push({ heading: "What a coefficient means", text: meaning[form] });
  if (yLog) {
    out.push({
      heading: "What it assumes",
      text: "Errors multiply y rather than add to it, so the spread of y grows with its level; the log of y is linear in the regressors. exp(fitted log y) predicts the geometric mean of y (its median when the errors are symmetric), not its mean: a prediction of the mean needs a retransformation factor (Duan's smearing, ELX.SMEARING), and a log cannot take a zero or negative y.",
    });
  } else {
    out.push({ heading: "What it assumes", text: `Errors add to y in its own units; y is linear in ${xLog ? "the logs of the regressors" : "the regressors"}. Predictions need no retransformation, but a spread that grows with the level is common in sales data and shows as a fan in the residual picture.` });
  }
  out.push({ heading: "Standard errors", text: `${se} errors. ${se === "classical" ? "Classical errors assume the spread is the same in every row; the robust ones (HC3) do not." : se === "HAC" ? "HAC errors allow for spread that changes and for correlation between nearby rows in sheet order (weekly data)." : se === "cluster" ? "Clustered errors allow any correlation between the rows of one cluster (see below)." : "Robust to a spread that changes across rows; they do not allow for correlation between rows (use se=HAC for weekly series)."}` });
  return out;
}

/** Sentences from the ELX.TESTS table (rows: Test, Statistic, df, p-value, Reading). */
/** One specification test as the pane receives it (globalThis.Elasticell.testsView). */
export interface TestReadingItem {
  name: string;
  pValue: number | null;
  rejected: boolean | null;
  reading: string;
}

/** Sentences from the tests of ELX.TESTS, read as numbers (never from a spilled table's columns). */
export function testReadings(items: TestReadingItem[] | null, error: string | null): string[] {
  if (!items) return [`The specification tests could not be run for these ranges: ${error ?? "no fit"}.`];
  return items.map((t) => {
    const p = t.pValue;
    const pText = p !== null && Number.isFinite(p) ? (p < 0.0001 ? "p < 0.0001" : `p = ${p.toFixed(4)}`) : "p not available";
    const verdict = t.rejected === null ? "" : t.rejected ? "rejected: " : "not rejected: ";
    return `${t.name}: ${pText}${t.reading !== "" ? `, ${verdict}${t.reading}` : ""}.`;
  });
}

/** The cautions shown wherever results are shown: associations, not causes; prices react to demand; sample and data quality; the decision stays with the analyst. */
export const CAUTIONS: string[] = [
  "These are associations, not causes: a coefficient says how y moved with x in these rows, not what a change of x would do.",
  "Price often responds to demand (prices raised after strong weeks, cut after weak ones), which biases a price elasticity from sales data; an estimate here is not a clean demand response.",
  "Results depend on the sample and on the data's quality: closures, stock-outs, blanks and recording faults change them, as the data check shows.",
  "Decisions stay with the analyst and their organisation's review.",
];
