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
import { byGroupTable } from "./cells/groups";
import { breakTestTable, rollingTable } from "./cells/time";
import { fitView, elasticitiesView, testsView, rollingView, breakView, makeCaller, cacheStats, kernelName, readColumns, type CellFunction, type ElasticellApi } from "./paneApi";
import { formCheckTable, heteroValue, normalValue, predictTable, smearingValue, testsTable } from "./cells/diagnostics";
import { ivCheckTable } from "./cells/iv";
import { wasmKernel } from "./engine/kernel";

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

/**
 * The factor that turns exp(fitted log y) into a prediction of the mean of y: Duan's smearing factor (mean of exp of the residuals) or, with retransform=normal, e^(s²/2).
 * @customfunction SMEARING
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "retransform=duan". Keys: form, levels, zeros, shift, retransform, intercept.
 * @requiresParameterAddresses
 * @returns The retransformation factor.
 */
export function smearing(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return smearingValue(y, x, options, invocation);
}

/**
 * Predicts y in its original units for new rows of x, retransformed to the mean (Duan by default); with interval=mean or individual also the interval's Low and High ends.
 * @customfunction PREDICT
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param new_x New rows with the same columns as x (a header row matches columns by name).
 * @param [options] Text like "retransform=duan; interval=individual; level=0.9". Keys: form, levels, se, zeros, shift, retransform, interval, level, intercept, headers.
 * @requiresParameterAddresses
 * @returns One prediction per row of new_x.
 */
export function predict(y: any[][], x: any[][], new_x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return predictTable(y, x, new_x, options, invocation);
}

/**
 * p-value of a test of constant error spread: bp (studentized Breusch–Pagan, default), bp-original, white (squares and cross-products) or white-special (fitted and fitted²).
 * @customfunction HETEROTEST
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [test] One of bp, bp-original, white, white-special.
 * @param [options] Text like "form=log-log". Keys: form, levels, zeros, shift, intercept.
 * @requiresParameterAddresses
 * @returns The p-value.
 */
export function heterotest(y: any[][], x: any[][], test?: string, options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return heteroValue(y, x, test, options, invocation);
}

/**
 * p-value of the Jarque–Bera test that the residuals are normal (skewness 0, kurtosis 3).
 * @customfunction NORMALTEST
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "form=log-log". Keys: form, levels, zeros, shift, intercept.
 * @requiresParameterAddresses
 * @returns The p-value.
 */
export function normaltest(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return normalValue(y, x, options, invocation);
}

/**
 * Table of specification tests: both Breusch–Pagan forms, White, White special, Jarque–Bera and RESET, with statistic, df, p-value and a plain reading at 5%.
 * @customfunction TESTS
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "form=log-level". Keys: form, levels, zeros, shift, intercept, headers.
 * @requiresParameterAddresses
 * @returns The test table.
 */
export function tests(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return testsTable(y, x, options, invocation);
}

/**
 * Logs or levels for y, with the same x side: Box–Cox λ with its interval and p-values of λ = 0 and 1, the PE test both ways, residual checks side by side, and a one-line reading.
 * @customfunction FORMCHECK
 * @param y Dependent variable: one column, above zero.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "form=log-log; level=0.95". The x side of form is used. Keys: form, levels, se, level, zeros, intercept, headers.
 * @requiresParameterAddresses
 * @returns The comparison table.
 */
export function formcheck(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return formCheckTable(y, x, options, invocation);
}

/**
 * Checks of a two-stage least squares fit (estimator=2sls): per endogenous regressor the first-stage F of the excluded instruments (classical and with the chosen errors), its p-value and partial R²; Wu–Hausman; Sargan when there are more instruments than endogenous regressors; a one-line reading.
 * @customfunction IVCHECK
 * @param y Dependent variable: one column.
 * @param x Regressors and the instrument columns: one or more columns, same rows as y.
 * @param [options] Text like "estimator=2sls; endogenous=Price; instruments=Flour cost". Keys: estimator, endogenous, instruments, form, levels, se, lags, zeros, absorb, cluster, weights, headers.
 * @requiresParameterAddresses
 * @returns The table of checks.
 */
export function ivcheck(y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return ivCheckTable(y, x, options, invocation);
}

// Published for the pane (shared runtime): the same module instances, so the same fit cache.
const cellFunctions = {
  FIT: fit, ELASTICITY: elasticity, ELASTICITIES: elasticities, EFFECTS: effects, SUMMARY: summary, ZEROS: zeros,
  SMEARING: smearing, PREDICT: predict, HETEROTEST: heterotest, NORMALTEST: normaltest, TESTS: tests, FORMCHECK: formcheck, BYGROUP: bygroup,
  ROLLING: rolling, BREAKTEST: breaktest,
  IVCHECK: ivcheck,
};
const published: ElasticellApi = {
  functions: cellFunctions as unknown as Record<string, CellFunction>,
  call: makeCaller(cellFunctions as unknown as Record<string, CellFunction>),
  fitView,
  elasticitiesView,
  testsView,
  rollingView,
  breakView,
  readColumns,
  cacheStats,
  kernelName,
};
(globalThis as unknown as { Elasticell: ElasticellApi }).Elasticell = published;
// The WebAssembly kernel compiles now, not at the first formula: on a page's main thread it compiles
// in the background, and the first fits use the JavaScript kernel (the same numbers) until it is ready.
wasmKernel();

/**
 * One row per distinct key (product, store, region): Group, Observations, then the elasticity and its standard error for each regressor, R² and the Breusch–Pagan p. A group that cannot be fitted shows why; the others still come.
 * @customfunction BYGROUP
 * @param keys The segment of each row: one column, same rows as y (keys compare by their text; blank or error keys are left out and counted).
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [options] Text like "se=HC3; zeros=drop" or "estimator=ppml". All model options apply to every group.
 * @requiresParameterAddresses
 * @returns The table of segments.
 */
export function bygroup(keys: any[][], y: any[][], x: any[][], options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return byGroupTable(keys, y, x, options, invocation);
}

/**
 * One row per window of consecutive usable rows (or, with time=, of consecutive periods): From, To, Observations, then the elasticity and its standard error for each regressor. Each window is fitted as a separate call on its rows would be; a window that cannot be fitted shows why and the others still come.
 * @customfunction ROLLING
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param window Rows per window (with time=, periods per window), for example 52.
 * @param [options] Text like "step=4; se=HAC" or "time=Week; expanding=true". Keys: step, expanding, time, panel and every model option.
 * @requiresParameterAddresses
 * @returns The table of windows.
 */
export function rolling(y: any[][], x: any[][], window: any, options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return rollingTable(y, x, window, options, invocation);
}

/**
 * Whether the model changed: Chow F (classical errors), the same hypothesis as a Wald F with the chosen errors (HC3 by default), sup-F over unknown breaks with Hansen's (1997) p-value and the most likely break; then per regressor the elasticity before, after, the difference, its standard error and p, with a plain reading.
 * @customfunction BREAKTEST
 * @param y Dependent variable: one column.
 * @param x Regressors: one or more columns, same rows as y.
 * @param [at] Where the second regime starts: a period of the time= column, else a data row counted from 1. Omitted: the last period with time=, else only the search for an unknown break.
 * @param [options] Text like "time=Week; se=HAC" or "trim=0.2". Keys: time, panel, trim, se, lags, level, at, form, levels, zeros, factors, intercept, headers.
 * @requiresParameterAddresses
 * @returns The table of tests and changes.
 */
export function breaktest(y: any[][], x: any[][], at?: any, options?: string, invocation?: CustomFunctions.Invocation): any[][] {
  return breakTestTable(y, x, at, options, invocation);
}
