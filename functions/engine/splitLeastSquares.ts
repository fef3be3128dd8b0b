/**
 * The per-part steps of a least-squares fit split by rows (see columnFit.ts for the driver).
 * Skeleton: the op kinds and their answers; bodies follow.
 */
import type { ColumnChunk, PartOp } from "./columnFitTypes";

/** The state of one part's rows where the part lives (a worker or this thread). */
export interface PartState {
  /** Rows appended (all of them, usable or not). */
  rows: number;
  [field: string]: unknown;
}

/** A new, empty part. */
export function newPartState(): PartState {
  return { rows: 0 };
}

/** The op kinds a part understands. */
export type SplitOpKind = "append" | "scan" | "prepare" | "norms" | "factor" | "passes" | "refine" | "auxiliary" | "clear";

/** What applyPartOp gives back: the answer (structured-cloneable) and the buffers to move with it. */
export interface PartAnswer {
  answer: unknown;
  transfer?: ArrayBuffer[];
}

/** Appends a chunk's rows to a part (its buffers are copied into the part's storage). */
export function appendOp(chunk: ColumnChunk): PartOp {
  return { kind: "append", rowStart: chunk.rowStart, y: chunk.y, x: chunk.x, issues: chunk.issues ?? null };
}

/** Applies one step to the part it holds. Throws ElxProblem for data the analyst must fix. */
export function applyPartOp(state: PartState, op: PartOp): PartAnswer {
  switch (op.kind) {
    default:
      throw new Error(`unknown part step ${String(op.kind)}`);
  }
}
