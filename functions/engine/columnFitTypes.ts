/**
 * The contract of a fit computed from numeric column blocks rather than from a cell range: what the
 * pane reads from a big range in chunks, how the rows are split into parts (one per worker, or all
 * in this thread), and what comes back. The engine side (split least squares, the per-part steps and
 * the driver) and the page side (workers, the pane's chunked reading) both code against these types.
 */
import type { Form } from "./options";

/** The options a column-block fit supports: least squares with a functional form and robust errors. */
export interface ColumnFitSpec {
  yName: string;
  xNames: string[];
  form: Form;
  /** "stop": a logged value ≤ 0 refuses the fit (counted and named); "drop": those rows are left out and counted. */
  zeros: "stop" | "drop";
  se: "classical" | "HC0" | "HC1" | "HC2" | "HC3";
  /** Interval level, 0.95 unless the analyst chose another. */
  level: number;
  intercept: boolean;
  /** Sheet row of the first data row, for the rows named in messages (default 1: data rows counted from 1). */
  firstRow?: number;
}

/**
 * One block of consecutive data rows as read from the sheet: y and every x column as doubles, with
 * NaN where the cell was not a number (its kind is counted in `notNumber`/`blank` by whoever read it).
 */
export interface ColumnChunk {
  /** 0-based index of the block's first row among the range's data rows (below the header). */
  rowStart: number;
  y: Float64Array;
  x: Float64Array[];
  /**
   * Optional, per row: why the row is not usable as read (0 usable, 1 a blank cell, 2 or more text,
   * a logical, an error or a non-finite number; the codes of intake.ts CellIssue). Without it, a row
   * with NaN counts as blank and one with ±Infinity as not a number.
   */
  issues?: Uint8Array;
}

/** A serialisable step applied to one part's rows where the part lives (a worker or this thread). */
export interface PartOp {
  kind: string;
  [field: string]: unknown;
}

/**
 * Where the parts live. `send` applies one step to one part and resolves with that step's answer;
 * buffers listed in `transfer` move to the part instead of being copied.
 */
export interface PartExecutor {
  readonly parts: number;
  send(part: number, op: PartOp, transfer?: ArrayBuffer[]): Promise<unknown>;
}

/** Rows left out, by reason, each counted once (a row's first reason). */
export interface LeftOut {
  /** A blank cell in y or an x column. */
  blank: number;
  /** Text or an error value where a number was needed (TRUE/FALSE are read as 1/0). */
  notNumber: number;
  /** A logged value ≤ 0 under zeros=drop. */
  nonPositive: number;
}

/** The numbers of a column-block fit, in the same units and meaning as ELX.FIT's. */
export interface ColumnFitResult {
  rowsRead: number;
  n: number;
  leftOut: LeftOut;
  terms: string[];
  coefficients: number[];
  standardErrors: number[];
  t: number[];
  p: number[];
  lower: number[];
  upper: number[];
  seLabel: string;
  dfResid: number;
  rss: number;
  rSquared: number;
  /** Studentized Breusch–Pagan on the fit's own regressors, or null when it cannot be computed. */
  breuschPagan: { statistic: number; df: number; p: number } | null;
  /** Why the Breusch–Pagan test could not be computed, in the analyst's words (when breuschPagan is null). */
  breuschPaganNote?: string;
  /** At most a few thousand evenly spaced rows' fitted values and residuals, for the picture. */
  /** `rows`: each sampled row's 0-based index among the data rows (as ColumnChunk.rowStart counts them). */
  sample: { fitted: Float64Array; residuals: Float64Array; rows: Int32Array };
  condition: number;
  refined: boolean;
  parts: number;
  /**
   * Set when the fit is exact (every residual zero up to rounding): why, in the analyst's words. t
   * and p are then NaN, which must not be shown: show this reason in their place (as ELX.FIT shows
   * #N/A there); Breusch–Pagan is null.
   */
  exact?: string;
}
