/**
 * Elasticities for every functional form, and percent effects of level regressors.
 *
 * With y transformed by g and x by h, dy/y per dx/x at the point (x̄, ȳ) in original units is
 * b · h′(x̄)x̄ / (g′(ȳ)ȳ): log-log b; log-level b·x̄; level-log b/ȳ; level-level b·x̄/ȳ; log(y+c) on y
 * b·(ȳ+c)/ȳ; asinh y with log x b·√(ȳ²+1)/ȳ (Bellemare and Wichman 2020). The point is held fixed,
 * so the delta-method standard error is |factor|·SE(b) and the interval is b's interval times the
 * factor. Percent effect of a level regressor in a log-y model: 100(e^b − 1); Kennedy (1981,
 * American Economic Review 71(4), p. 801) corrects it to 100(e^(b − V/2) − 1) with V = Var(b).
 */
import { relativeSlope, transformLabel } from "./transforms";
import type { Model, Term } from "./fit";
import type { AtPoint } from "./options";
import { standardError, type Covariance } from "./covariance";

export interface ElasticityRow {
  term: Term;
  estimate: number;
  se: number;
  lower: number;
  upper: number;
  factor: number;
  /** Where it was evaluated, in words (EVERYWHERE, "mean Price = 2.31"). */
  at: string;
}

function formatNumber(v: number): string {
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e-3 && a < 1e7) return String(Number(v.toPrecision(6)));
  return v.toExponential(4);
}

/** Where a constant elasticity (log x and log y, or a logged x under PPML) is evaluated: nowhere in particular. */
export const EVERYWHERE = "everywhere (constant elasticity)";

/** The factor that turns coefficient b of x column j into an elasticity, and its description. */
export function elasticityFactor(fit: Model, column: number, at: AtPoint): { factor: number; at: string } {
  const t = fit.data.xTransforms[column];
  const g = fit.meanTransform;
  const parts: string[] = [];
  let num = 1;
  if (t.kind !== "log") {
    const xc = fit.centre(column, at);
    num = relativeSlope(t, xc);
    parts.push(`${at} ${fit.data.xNames[column]} = ${formatNumber(xc)}`);
  }
  let den = 1;
  if (g.kind !== "log") {
    const yc = fit.centre(-1, at);
    den = relativeSlope(g, yc);
    parts.push(`${at} ${fit.data.yName} = ${formatNumber(yc)}`);
  }
  // Under zeros=shift or zeros=ihs on y the elasticity depends on that transform (and on y's
  // units, Bellemare and Wichman 2020): say which one was used.
  if (g.kind === "shift" || g.kind === "asinh") parts.push(`${fit.data.yName} taken as ${transformLabel(g)}`);
  return { factor: num / den, at: parts.length === 0 ? EVERYWHERE : parts.join(", ") };
}

/** Elasticity of y with respect to x column j, with its delta-method error and interval. */
export function elasticity(fit: Model, column: number, cov: Covariance, level: number, at: AtPoint): ElasticityRow {
  const idx = fit.coefIndex(column);
  const b = fit.coef[idx];
  const se = standardError(cov, idx);
  const crit = fit.criticalValue(level, cov);
  const { factor, at: where } = elasticityFactor(fit, column, at);
  const lo = (b - crit * se) * factor;
  const hi = (b + crit * se) * factor;
  return {
    term: fit.terms[idx],
    estimate: b * factor,
    se: Math.abs(factor) * se,
    lower: Math.min(lo, hi),
    upper: Math.max(lo, hi),
    factor,
    at: where,
  };
}

export interface EffectRow {
  term: Term;
  percent: number;
  corrected: number;
  lower: number;
  upper: number;
}

/** Percent effect of a level regressor in a log-y model, with Kennedy's correction. */
export function percentEffect(fit: Model, column: number, cov: Covariance, level: number): EffectRow {
  const idx = fit.coefIndex(column);
  const b = fit.coef[idx];
  const se = standardError(cov, idx);
  const V = se * se;
  const crit = fit.criticalValue(level, cov);
  // expm1 keeps digits for small coefficients
  return {
    term: fit.terms[idx],
    percent: 100 * Math.expm1(b),
    corrected: 100 * Math.expm1(b - V / 2),
    lower: 100 * Math.expm1(b - crit * se),
    upper: 100 * Math.expm1(b + crit * se),
  };
}
