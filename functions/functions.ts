/*
 * Elasticell custom functions (namespace ELX). Each declaration below is what the host registers:
 * the JSDoc text is what an analyst reads while typing the formula, and the metadata plugin turns it
 * into functions.json. The bodies are one line each: the work is in cells/ (shaping) and engine/
 * (statistics).
 *
 * Every function takes the invocation to learn its ranges' sheet addresses, so that messages and
 * reports name sheet rows; that needs matrix results, so single numbers come back as 1×1 tables.
 */
import { effectsTable, elasticitiesTable, elasticityValue, fitTable, summaryTable, zerosTable } from "./cells/regression";

/**
 * Fits a log model by least squares and returns the coefficient table: Term, Transform, Coefficient, Std. error (its type in the header), t, p-value and the interval. Default form log-log, HC3 errors.
 * @customfunction FIT
 * @param y Dependent variable: one column (a header cell on top is used as its name).
 * @param x Regressors: one or more columns, same rows as y (a header row gives the names).
 * @param [options] Text like "form=log-log; se=HC3; zeros=drop". Keys: form, levels, se, lags, level, zeros, shift, intercept, headers.
 * @requiresParameterAddresses
 * @returns The coefficient table.
 */
export function fit(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return fitTable(y, x, options, invocation);
}

/**
 * One elasticity of y with respect to a term: log-log b; log-level b·mean x; level-log b/mean y; level-level b·mean x/mean y.
 * @customfunction ELASTICITY
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param term The regressor: its header name or its column number in x.
 * @param [options] Text like "form=log-level; at=median". Keys: form, levels, se, lags, level, zeros, shift, at, intercept.
 * @requiresParameterAddresses
 * @returns The elasticity.
 */
export function elasticity(y: any[][], x: any[][], term: any, options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return elasticityValue(y, x, term, options, invocation);
}

/**
 * Elasticity of y with respect to every regressor, with delta-method standard errors and intervals, and the point where each is evaluated.
 * @customfunction ELASTICITIES
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "se=HAC; lags=4; at=mean". Keys: form, levels, se, lags, level, zeros, shift, at, intercept, headers.
 * @requiresParameterAddresses
 * @returns The elasticity table.
 */
export function elasticities(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return elasticitiesTable(y, x, options, invocation);
}

/**
 * Percent effects of regressors kept in levels (binary flags, levels=) in a log-y model: 100(e^b − 1), Kennedy's corrected value and the interval.
 * @customfunction EFFECTS
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "form=log-log; se=HC3". Keys: form, levels, se, lags, level, zeros, shift, intercept, headers.
 * @requiresParameterAddresses
 * @returns The percent-effect table.
 */
export function effects(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return effectsTable(y, x, options, invocation);
}

/**
 * Fit summary: observations used and left out (with reasons), R², adjusted R², residual std. error, F and its p-value, log-likelihood, AIC, BIC.
 * @customfunction SUMMARY
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "form=log-log; zeros=drop". Keys: form, levels, se, lags, zeros, shift, intercept, headers.
 * @requiresParameterAddresses
 * @returns A two-column table of statistics.
 */
export function summary(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return summaryTable(y, x, options, invocation);
}

/**
 * Counts, per column, the values, blank or non-numeric cells, zeros and negatives, and the rows a plain log would lose.
 * @customfunction ZEROS
 * @param range One or more columns (a header row gives the names).
 * @param [options] Text like "headers=false".
 * @returns The count table.
 */
export function zeros(range: any[][], options?: string): any[][] {
  return zerosTable(range, options);
}
