/**
 * Which big-fit session the pane opens: the worker session (functions/parallel/session.ts: the split
 * engine on every core, or this thread when no worker starts, saying why), or, while the split
 * engine is not complete in this build, the in-thread stand-in over the engine's own least squares
 * (taskpane/standInSession.ts). Both answer to functions/parallel/types.ts.
 */
import type { BigFitSession } from "../functions/parallel/types";
import { openBigFit } from "../functions/parallel/session";
import { openStandInSession } from "./standInSession";

/** Whether the split engine's driver is complete in this build (the worker session is then used). */
export const SPLIT_ENGINE_READY = true;

/** Options a test or the benchmark may set on globalThis.ElxBigFit: workers wanted, or the stand-in forced. */
interface Overrides {
  workers?: number;
  standIn?: boolean;
}

export async function openSession(rows: number): Promise<BigFitSession> {
  const o = (globalThis as unknown as { ElxBigFit?: Overrides }).ElxBigFit ?? {};
  if (!SPLIT_ENGINE_READY || o.standIn) return openStandInSession(rows);
  return openBigFit({ rows, workers: o.workers });
}
