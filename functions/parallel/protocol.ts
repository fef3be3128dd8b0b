/**
 * The messages between the page and a fit worker (fitWorker.ts). The page sends one request per part
 * step; the worker answers each request exactly once, by its id, and may send progress before it.
 *
 *   page → worker   { id, op }                       op: a PartOp, its buffers transferred
 *   worker → page   { type: "ready" }                once, when the engine has loaded
 *                   { type: "answer", id, answer }   applyPartOp's answer, large buffers transferred
 *                   { type: "failure", id, message, kind }
 *                                                    the step threw: kind "value"/"na" for an
 *                                                    ElxProblem (the analyst's message), "internal"
 *                                                    for anything else; id is null for a request
 *                                                    that could not be read at all
 *                   { type: "progress", id, rowsDone }
 *                                                    rows the running step has gone through
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

/** Typed arrays at least this large travel by transfer; smaller ones are copied (cheaper than a detach). */
export const TRANSFER_BYTES = 1 << 14;

/**
 * The buffers of the typed arrays found in a value (objects and arrays searched, each buffer once),
 * for a transfer list. Only whole, unshared ArrayBuffers of at least TRANSFER_BYTES are listed.
 */
export function transferables(value: unknown, out: ArrayBuffer[] = [], depth = 0): ArrayBuffer[] {
  if (value === null || typeof value !== "object" || depth > 6) return out;
  if (ArrayBuffer.isView(value)) {
    const buffer = value.buffer;
    if (buffer instanceof ArrayBuffer && buffer.byteLength >= TRANSFER_BYTES && !out.includes(buffer)) out.push(buffer);
    return out;
  }
  if (value instanceof ArrayBuffer) {
    if (value.byteLength >= TRANSFER_BYTES && !out.includes(value)) out.push(value);
    return out;
  }
  const items = Array.isArray(value) ? value : Object.values(value as Record<string, unknown>);
  for (const item of items) transferables(item, out, depth + 1);
  return out;
}
