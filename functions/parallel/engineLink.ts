/**
 * The one place the page-side parallel code meets the split engine: the per-part step, a fresh part
 * state, the append step, the driver, the in-thread executor and the cancellation error. The worker
 * (fitWorker.ts), the pool and the session import these names from here only.
 */
import type { PartOp } from "../engine/columnFitTypes";
import { applyPartOp, type PartAnswer, type PartState } from "../engine/splitLeastSquares";

export { appendOp, newPartState, type PartState, type PartAnswer } from "../engine/splitLeastSquares";
export { columnFit, FitCancelled, isFitCancelled, localExecutor } from "../engine/columnFit";

/** One step on one part: applyPartOp's answer and the buffers it may move to the page. */
export function stepPart(state: PartState, op: PartOp): PartAnswer {
  return applyPartOp(state, op);
}
