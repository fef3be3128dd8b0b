/**
 * The messages between the page and a fit worker (fitWorker.ts). The page sends one request per part
 * step; the worker answers each request exactly once, by its id, and may send progress before it.
 *
 *   page → worker   { id, op }                       op: a PartOp, its buffers transferred
 *   worker → page   { type: "ready" }                once, when the engine has loaded
 *                   { type: "answer", id, answer }   applyPartOp's answer, the buffers it lists transferred
 *                   { type: "failure", id, message, kind }
 *                                                    the step threw: kind "value"/"na" for an
 *                                                    ElxProblem (the analyst's message), "internal"
 *                                                    for anything else; id is null for a request
 *                                                    that could not be read at all
 *                   { type: "progress", id, rowsDone }
 *                                                    rows the running step has gone through (optional;
 *                                                    the driver reports progress between steps itself)
 */
import type { PartOp } from "../engine/columnFitTypes";

export interface PartRequest {
  id: number;
  op: PartOp;
}

export type WorkerMessage =
  | { type: "ready" }
  | { type: "answer"; id: number; answer: unknown }
  | { type: "failure"; id: number | null; message: string; kind: "value" | "na" | "internal" }
  | { type: "progress"; id: number; rowsDone: number };
