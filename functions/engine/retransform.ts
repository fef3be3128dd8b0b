/**
 * Back to the original units: retransformation factors and predictions of y.
 *
 * exp of a fitted log is a prediction of the median of y, biased low for its mean. Duan (1983,
 * "Smearing estimate: a nonparametric retransformation method", JASA 78(383)) multiplies by the mean
 * of exp(e_i) over the log-scale residuals, whatever their distribution; under normal errors the
 * factor is exp(s²/2). Under zeros=shift (log(y + c)) the prediction is exp(x'b)·factor − c; under
 * zeros=ihs the smearing idea averages the inverse, mean_i sinh(x'b + e_i), which is not a single
 * factor; its normal-theory version is sinh(x'b)·exp(s²/2).
 *
 * Prediction intervals: interval=mean gives exp of the confidence bounds of x'b (with the chosen
 * covariance) times the factor; interval=individual gives exp(x'b ± t·sqrt(s² + x'Vx)) with the
 * classical V, an interval for one new observation that needs no factor since exp is increasing.
 */
import { expOf } from "./kernel";
import { unavailable } from "./problems";
import type { OlsFit } from "./fit";
import type { AnyFit } from "./model";
import { combinationError, type Covariance } from "./covariance";
import type { Retransform } from "./options";

/** Duan's smearing factor: mean of exp(e_i), summed with compensation. */
export function duanFactor(fit: OlsFit): number {
  return fit.memo("duan", () => {
    const ex = expOf(fit.resid);
    let s = 0;
    let c = 0;
    for (let i = 0; i < ex.length; i++) {
      const v = ex[i];
      const t = s + v;
      c += Math.abs(s) >= v ? s - t + v : v - t + s;
      s = t;
    }
    return (s + c) / ex.length;
  });
}

/** The normal-theory factor exp(s²/2), s² = RSS/(n − k). */
export function normalFactor(fit: OlsFit): number {
  return Math.exp(fit.s2 / 2);
}

/** The factor for `retransform`, for a log or shifted-log y; 1 for y in levels. */
export function retransformFactor(fit: OlsFit, how: Retransform): number {
  const g = fit.data.yTransform;
  if (g.kind === "level") return 1;
  if (how === "none") return 1;
  if (fit.data.roles.weights) {
    unavailable("the retransformation factors here (Duan's smearing, exp(s²/2)) assume unweighted least squares, and weights= makes the fit weighted: use retransform=none (the median-type prediction exp(x'b)), or fit without weights=");
  }
  fit.requireResidualVariation("the retransformation factor");
  if (g.kind === "asinh") {
    if (how === "normal") return normalFactor(fit);
    unavailable("under zeros=ihs the retransformation is not a single factor: ELX.PREDICT averages sinh(x'b + e) over the residuals");
  }
  return how === "duan" ? duanFactor(fit) : normalFactor(fit);
}

/** Back to y's units from a value m on the fitted scale, with retransformation. */
export function toLevels(model: AnyFit, m: number, how: Retransform): number {
  if (model.info.exponentialMean) return Math.exp(m); // the fit is the mean itself: no factor
  const fit = model as OlsFit; // every other estimator fits y's transform with a residual variance
  const g = fit.data.yTransform;
  switch (g.kind) {
    case "level":
      return m;
    case "log":
      return Math.exp(m) * retransformFactor(fit, how);
    case "shift":
      return Math.exp(m) * retransformFactor(fit, how) - g.c;
    case "asinh": {
      if (how === "none") return Math.sinh(m);
      if (how === "normal") return Math.sinh(m) * normalFactor(fit);
      fit.requireResidualVariation("the retransformation");
      const e = fit.resid;
      let s = 0;
      for (let i = 0; i < e.length; i++) s += Math.sinh(m + e[i]);
      return s / e.length;
    }
  }
}

export interface Prediction {
  value: number;
  lower: number;
  upper: number;
}

/**
 * The prediction for one transformed design row x0 and, when asked, its interval.
 * @param cov covariance for interval=mean (the chosen se); the individual interval uses the classical one
 * @param effect the absorbed fixed effects of the row (Model.absorbedEffect), added to x0'b
 */
export function predictRow(fit: AnyFit, x0: Float64Array, how: Retransform, interval: "none" | "mean" | "individual", level: number, cov: Covariance, effect = 0): Prediction {
  if (interval !== "none" && fit.absorbed > 0) {
    unavailable(`interval=${interval} is not offered with absorb=: the uncertainty of the estimated fixed effects is not computed here, so an interval would be too narrow; use interval=none`);
  }
  let m = effect;
  for (let j = 0; j < x0.length; j++) m += fit.coef[j] * x0[j];
  const value = toLevels(fit, m, how);
  if (interval === "none") return { value, lower: NaN, upper: NaN };
  const t = fit.criticalValue(level);
  if (interval === "mean") {
    const se = combinationError(cov, x0);
    return { value, lower: toLevels(fit, m - t * se, how), upper: toLevels(fit, m + t * se, how) };
  }
  if (!fit.info.residualVariance) unavailable(`interval=individual needs a distribution for single outcomes; ${fit.info.title} models only the mean: use interval=mean`);
  // in units of yUnit (both terms), so that neither square overflows for an extreme y
  const Vc = fit.covariance("classical");
  const m0 = combinationError(Vc, x0) / Vc.unit;
  const se = Math.sqrt((fit as OlsFit).qr.rss / fit.dfResid + m0 * m0) * Vc.unit;
  // no factor: exp (or the inverse transform) is increasing, so the ends map to the ends
  return { value, lower: toLevels(fit, m - t * se, "none"), upper: toLevels(fit, m + t * se, "none") };
}
