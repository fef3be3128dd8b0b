/**
 * The one place the page-side parallel code meets the split engine: the per-part step, a fresh part
 * state, the driver and the in-thread executor. The worker (fitWorker.ts), the pool and the session
 * import these names from here only, so the engine can rename or move them with one edit.
 *
 * STAND-IN until the split engine lands: parts keep their appended rows, and answer "rows" and
 * "sums" (column sums and y'x), enough to test the workers' plumbing.
 */
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec, PartExecutor, PartOp } from "../engine/columnFitTypes";
import { fail } from "../engine/problems";

export interface PartState {
  chunks: ColumnChunk[];
}

export function newPartState(): PartState {
  return { chunks: [] };
}

export function applyPartOp(state: PartState, op: PartOp): unknown {
  switch (op.kind) {
    case "append": {
      const chunk = op.chunk as ColumnChunk;
      state.chunks.push(chunk);
      return { rows: chunk.y.length };
    }
    case "rows":
      return { rows: state.chunks.reduce((s, c) => s + c.y.length, 0) };
    case "sums": {
      const k = state.chunks.length ? state.chunks[0].x.length : 0;
      const sums = new Float64Array(k + 1);
      for (const c of state.chunks) {
        for (let i = 0; i < c.y.length; i++) {
          sums[0] += c.y[i];
          for (let j = 0; j < k; j++) sums[j + 1] += c.x[j][i] * c.y[i];
        }
      }
      return { sums };
    }
    default:
      return fail(`unknown step ${String(op.kind)}`);
  }
}

/** Parts in this thread. */
export function localExecutor(parts: number): PartExecutor {
  const states = Array.from({ length: parts }, () => newPartState());
  return {
    parts,
    send: async (part: number, op: PartOp) => applyPartOp(states[part], op),
  };
}

export async function columnFit(
  _exec: PartExecutor,
  _spec: ColumnFitSpec,
  _progress?: (rowsDone: number, rowsTotal: number) => void,
  _isCancelled?: () => boolean,
): Promise<ColumnFitResult> {
  return fail("the column-block fit is not built yet");
}

/** One step on one part, with the step's progress (rows gone through) for long passes. */
export function stepPart(state: PartState, op: PartOp, _progress?: (rowsDone: number) => void): unknown {
  return applyPartOp(state, op);
}
