/**
 * The one place the page-side parallel code meets the split engine: the per-part step, a fresh part
 * state, the append step, the driver, the in-thread executor and the cancellation error. The worker
 * (fitWorker.ts), the pool and the session import these names from here only.
 */
import { mapped } from "../engine/blocks";
import type { PartOp } from "../engine/columnFitTypes";
import { applyPartOp, appendOp, type PartAnswer, type PartState } from "../engine/splitLeastSquares";
import { columnFit, localExecutor } from "../engine/columnFit";

export { appendOp, newPartState, type PartState, type PartAnswer } from "../engine/splitLeastSquares";
export { columnFit, FitCancelled, isFitCancelled, localExecutor } from "../engine/columnFit";

/** One step on one part: applyPartOp's answer and the buffers it may move to the page. */
export function stepPart(state: PartState, op: PartOp): PartAnswer {
  return applyPartOp(state, op);
}

/** Rows, x columns and fits of the warm-up (about 20–40 ms of one core on a laptop). */
const WARM_ROWS = 8192;
const WARM_COLUMNS = 4;
const WARM_FITS = 4;

/**
 * A few small fits on invented rows (a seeded sequence, positive values, log-log with HC3 and the
 * Breusch–Pagan test) in a part state of their own, so that the engine's loops and the WebAssembly
 * kernel are compiled before the first real fit: a fresh worker otherwise spends its first fit's time
 * compiling (measured: DEVELOPERS.md). Leaves nothing behind but the compiled code.
 */
export async function warmUpParts(): Promise<void> {
  let s = 12345;
  const next = () => {
    s = (Math.imul(s, 1103515245) + 12345) >>> 0;
    return 0.5 + s / 4294967296;
  };
  const spec = { yName: "y", xNames: Array.from({ length: WARM_COLUMNS }, (_, j) => `x${j + 1}`), form: "log-log" as const, zeros: "stop" as const, se: "HC3" as const, level: 0.95, intercept: true };
  for (let f = 0; f < WARM_FITS; f++) {
    const x = Array.from({ length: WARM_COLUMNS }, () => mapped({ length: WARM_ROWS }, next));
    const y = mapped({ length: WARM_ROWS }, (_, i) => x[0][i] * next());
    const exec = localExecutor(1);
    await exec.send(0, appendOp({ rowStart: 0, y, x }));
    await columnFit(exec, spec);
  }
}
