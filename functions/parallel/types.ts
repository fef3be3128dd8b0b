/**
 * What the pane sees of a big fit: a session that takes the range's chunks as they are read, fits
 * them on every core (workers built from the same engine modules, or this thread when a worker cannot
 * start), reports progress and can be cancelled.
 */
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec } from "../engine/columnFitTypes";

export type BigOutcome = { ok: true; value: ColumnFitResult } | { ok: false; message: string; cancelled: boolean };

export interface BigFitSession {
  /** Workers in use (0: everything runs in this thread). */
  readonly workers: number;
  /** Why the session runs in this thread although workers were wanted ("" otherwise), in the analyst's words. */
  readonly fallbackNote: string;
  /** Hands one chunk to the parts (its buffers move; do not reuse them). */
  append(chunk: ColumnChunk): Promise<void>;
  /** Fits the rows appended so far; `progress(rowsDone, rowsTotal)` as the parts go through their passes. */
  estimate(spec: ColumnFitSpec, progress?: (rowsDone: number, rowsTotal: number) => void): Promise<BigOutcome>;
  /** Stops whatever is running: a pending fit resolves with cancelled = true; the session cannot be reused. */
  cancel(): void;
  /** Frees the workers and the rows. */
  close(): void;
}

export interface BigFitOpenOptions {
  /** Data rows the range holds (below the header), so the parts get equal contiguous shares. */
  rows: number;
  /** Workers wanted; default: the machine's cores, capped at 8; 0 forces this thread. */
  workers?: number;
}
