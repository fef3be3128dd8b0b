/**
 * The fit worker (dist/fitWorker.js): one part of a big fit, living in a Web Worker (or a Node
 * worker thread through nodeWorker.ts). It keeps one part state, applies each requested step with
 * the same engine code the page would run in its own thread, and answers every request by message
 * (protocol.ts): an exception becomes a "failure" message, never an uncaught error. The buffers
 * applyPartOp lists with its answer move to the page instead of being copied.
 *
 * The bundle holds the engine modules only: no cell functions, no host registration, no DOM.
 */
import type { PartOp } from "../engine/columnFitTypes";
import { ElxProblem } from "../engine/problems";
import { newPartState, stepPart, warmUpParts } from "./engineLink";
import type { PartRequest, WorkerMessage } from "./protocol";

/** What the worker needs of its global scope: send a message, hear messages. */
export interface WorkerScope {
  postMessage(message: WorkerMessage, transfer?: ArrayBuffer[]): void;
  addEventListener(type: "message", listener: (event: { data: unknown }) => void): void;
}

/** Serves part steps on a scope: one part state for the scope's life. Returns the message handler (for tests). */
export function serveParts(scope: WorkerScope): (data: unknown) => void {
  let state = newPartState();
  const handle = (data: unknown): void => {
    const request = data as Partial<PartRequest> | null;
    const id = request && typeof request.id === "number" ? request.id : null;
    try {
      if (id === null || !request || !request.op || typeof (request.op as PartOp).kind !== "string") {
        scope.postMessage({ type: "failure", id, message: "the fit worker received a request it cannot read", kind: "internal" });
        return;
      }
      const op = request.op as PartOp;
      if (op.kind === "reset") {
        state = newPartState();
        scope.postMessage({ type: "answer", id, answer: null });
        return;
      }
      const { answer, transfer } = stepPart(state, op);
      scope.postMessage({ type: "answer", id, answer }, transfer ?? []);
    } catch (e) {
      const problem = e instanceof ElxProblem;
      const message = e !== null && typeof e === "object" && typeof (e as Error).message === "string" ? (e as Error).message : String(e);
      try {
        scope.postMessage({ type: "failure", id, message, kind: problem ? (e as ElxProblem).kind : "internal" });
      } catch {
        // an answer that cannot be cloned: say so without it
        scope.postMessage({ type: "failure", id, message: "the fit worker could not send its answer", kind: "internal" });
      }
    }
  };
  scope.addEventListener("message", (event) => handle(event.data));
  scope.postMessage({ type: "ready" });
  return handle;
}

// Started as a worker: a global scope with postMessage and no document.
declare const self: unknown;
const scope = typeof self !== "undefined" ? (self as Partial<WorkerScope> & { document?: unknown }) : undefined;
// It warms the engine up first (a failed warm-up only leaves the code cold), then says it is ready.
if (scope && typeof scope.postMessage === "function" && typeof scope.addEventListener === "function" && scope.document === undefined) {
  void warmUpParts()
    .catch(() => undefined)
    .then(() => serveParts(scope as WorkerScope));
}
