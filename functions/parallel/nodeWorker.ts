/**
 * Fit workers as Node worker threads running the built browser bundle dist/fitWorker.js unchanged:
 * a few lines of adapter give the thread the Web Worker's `self`, `postMessage` and
 * `addEventListener("message")`, then load the bundle. Used by the Jest tests and the benchmark
 * (scripts/bench-workers.js) to run the real multi-threaded path in Node. Never bundled for the page.
 */
import * as os from "os";
import * as path from "path";
import { Worker } from "worker_threads";
import { machineWorkers, type SpawnWorker, type WorkerPort } from "./pool";

/** dist/fitWorker.js of this repository. */
export const WORKER_BUNDLE = path.resolve(__dirname, "../../dist/fitWorker.js");

/** What runs first in the thread: the Web Worker's global names over the thread's message port. */
const ADAPTER = `
const { parentPort, workerData } = require("worker_threads");
const listeners = [];
globalThis.self = globalThis;
globalThis.postMessage = (message, transfer) => parentPort.postMessage(message, transfer);
globalThis.addEventListener = (type, fn) => { if (type === "message") listeners.push(fn); };
parentPort.on("message", (data) => { for (const fn of listeners) fn({ data }); });
require(workerData.bundle);
`;

/** The machine's cores as Node sees them, capped as for the page. */
export function nodeMachineWorkers(): number {
  const cores = typeof (os as { availableParallelism?: () => number }).availableParallelism === "function" ? (os as { availableParallelism: () => number }).availableParallelism() : os.cpus().length;
  return machineWorkers(cores);
}

/** A worker thread's port, with the thread's end (its exit code) for callers that wait for it. */
export interface NodeWorkerPort extends WorkerPort {
  exited: Promise<number>;
}

/** Worker threads loading `bundle` (default dist/fitWorker.js; run `npm run build` first). */
export function nodeSpawner(bundle = WORKER_BUNDLE, started?: NodeWorkerPort[]): SpawnWorker {
  return () => {
    const worker = new Worker(ADAPTER, { eval: true, workerData: { bundle } });
    const exited = new Promise<number>((resolve) => worker.once("exit", resolve));
    let onMessage: (data: unknown) => void = () => undefined;
    let onError: (message: string) => void = () => undefined;
    worker.on("message", (data) => onMessage(data));
    // an Error from the thread may come from another realm: read its message by shape
    worker.on("error", (e: unknown) => onError(e && typeof (e as Error).message === "string" ? (e as Error).message : String(e)));
    worker.on("messageerror", () => onError("a message from the worker could not be read"));
    worker.on("exit", (code) => onError(`the worker thread ended (exit code ${code})`));
    const port: NodeWorkerPort = {
      exited,
      post: (m, t) => worker.postMessage(m, t),
      listen: (m, e) => {
        onMessage = m;
        onError = e;
      },
      terminate: () => {
        onError = () => undefined;
        void worker.terminate();
      },
      rest: (yes) => (yes ? worker.unref() : worker.ref()),
    };
    if (started) started.push(port);
    return port;
  };
}
