/**
 * The estimator interface: every estimator is one entry here, and the rest of the engine asks the
 * entry instead of branching on the estimator's name.
 *
 * An entry says how a fit is built from a prepared dataset, which covariance types it offers and
 * which is its default, whether it takes the form's log of y, whether its fit has a residual
 * variance (so that retransformation factors, residual tests and single-outcome intervals apply),
 * and which reference distribution its t (or z) ratios use. Degrees of freedom and summary rows
 * belong to the fit object (Model), which every estimator's fit extends.
 *
 * To add an estimator: a class extending Model in its own module with an EstimatorInfo beside it,
 * one line in ESTIMATORS, and its name in options.ts's Estimator type and choices.
 */
import type { Estimator, Options, SeType } from "./options";
import type { Dataset } from "./transforms";
import type { Model } from "./fit";
import { OlsFit, OLS_INFO } from "./fit";
import { PpmlFit, PPML_INFO } from "./ppml";
import { fail } from "./problems";

/** What the engine needs to know about an estimator besides its fit. */
export interface EstimatorInfo {
  readonly id: Estimator;
  /** For messages: "least squares", "PPML". */
  readonly title: string;
  readonly seTypes: readonly SeType[];
  readonly defaultSe: SeType;
  /** Whether y takes the form's log (PPML keeps y in levels and models log E[y | x]). */
  readonly logsY: boolean;
  /** Whether y may be negative (PPML models a mean that cannot be). */
  readonly negativeY: boolean;
  /** Whether the fit has a residual variance on the fitted scale: smearing, residual tests, FORMCHECK. */
  readonly residualVariance: boolean;
  /** Whether the fitted value is the mean of y itself through exp (PPML): no retransformation factor. */
  readonly exponentialMean: boolean;
  /** Header of the ratio b/se: "t" (Student, df from the fit) or "z" (normal). */
  readonly statistic: "t" | "z";
  /** What to say when a function needs a residual variance this estimator does not have. */
  readonly noResidualVariance: string;
}

export interface EstimatorEntry extends EstimatorInfo {
  build(data: Dataset, o: Options): Model;
}

export const ESTIMATORS: Readonly<Record<Estimator, EstimatorEntry>> = Object.freeze({
  ols: { ...OLS_INFO, build: (data: Dataset, o: Options) => new OlsFit(data, o.intercept) },
  ppml: { ...PPML_INFO, build: (data: Dataset, o: Options) => new PpmlFit(data, o.intercept) },
});

/** The estimator named by the options. */
export function estimatorOf(o: Options): EstimatorEntry {
  return ESTIMATORS[o.estimator];
}

/**
 * The covariance type in force: the one asked for, else cluster when cluster= is given, else the
 * estimator's default — HC1 in place of a default HC2/HC3 when two keys are absorbed, where each
 * row's exact leverage is not available.
 */
export function seTypeOf(o: Options): SeType {
  if (o.se) return o.se;
  if (o.cluster.length > 0) return "cluster";
  const d = ESTIMATORS[o.estimator].defaultSe;
  return o.absorb.length === 2 && (d === "HC2" || d === "HC3") ? "HC1" : d;
}

/** Refuses a covariance type the estimator does not offer, listing the ones it does. */
export function requireSeType(info: EstimatorInfo, type: SeType): void {
  if (info.seTypes.includes(type)) return;
  const others = info.seTypes.filter((t) => t !== info.defaultSe).map((t) => `se=${t}`);
  const list = others.length === 0 ? "" : others.length === 1 ? ` or ${others[0]}` : `, ${others.slice(0, -1).join(", ")} or ${others[others.length - 1]}`;
  fail(`se=${type} is not offered with estimator=${info.id}: use se=${info.defaultSe} (the default)${list}`);
}
