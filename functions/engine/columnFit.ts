/**
 * A least-squares fit from numeric column blocks, split by rows into parts (skeleton).
 */
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec, PartExecutor, PartOp } from "./columnFitTypes";
import { applyPartOp, newPartState, type PartState } from "./splitLeastSquares";

/** Thrown when isCancelled() answers true between two steps. */
export class FitCancelled extends Error {
  readonly cancelled = true;
  constructor() {
    super("the fit was stopped");
    this.name = "FitCancelled";
  }
}

/** Whether an error is the cancellation of a fit (also after a structured clone, by its name). */
export function isFitCancelled(e: unknown): boolean {
  return e instanceof FitCancelled || (typeof e === "object" && e !== null && (e as { name?: unknown }).name === "FitCancelled");
}

/** Parts kept in this thread (tests, and the page when no worker can start). */
export function localExecutor(parts: number): PartExecutor & { states: PartState[] } {
  const states = Array.from({ length: parts }, newPartState);
  return {
    parts,
    states,
    send(part: number, op: PartOp): Promise<unknown> {
      return new Promise((resolve) => resolve(applyPartOp(states[part], op).answer));
    },
  };
}

/**
 * Fits the rows appended to the executor's parts. `progress(done, total)` counts row passes;
 * `isCancelled` is asked between steps (a FitCancelled is thrown when it answers true).
 */
export async function columnFit(
  exec: PartExecutor,
  spec: ColumnFitSpec,
  progress?: (done: number, total: number) => void,
  isCancelled?: () => boolean,
): Promise<ColumnFitResult> {
  void exec; void spec; void progress; void isCancelled;
  throw new Error("not yet");
}

/** Splits full columns into chunks of `chunkRows` rows (tests; the pane reads chunks itself). */
export function chunksOf(y: Float64Array, x: Float64Array[], chunkRows: number, rowStart = 0): ColumnChunk[] {
  const out: ColumnChunk[] = [];
  for (let s = 0; s < y.length; s += chunkRows) {
    const e = Math.min(y.length, s + chunkRows);
    out.push({ rowStart: rowStart + s, y: y.slice(s, e), x: x.map((c) => c.slice(s, e)) });
  }
  return out;
}
