/**
 * A PartExecutor over N fit workers (fitWorker.ts), one part per worker, plus the in-thread fallback.
 *
 * Each send gets a message id; the op's large buffers move to the worker (transfer list) and the
 * answer's come back the same way. Workers start together and must each say "ready" within the
 * start timeout; if any cannot start (the constructor throws, the page's security policy refuses
 * it, it reports an error or exits first, or it stays silent), every worker is stopped and the
 * parts run in this thread instead, with a note saying why in the analyst's words.
 *
 * Cancel terminates the workers, which really stops their work, and rejects every pending send
 * with the engine's FitCancelled error (the driver's own, so it is recognised the same way).
 */
import type { PartExecutor, PartOp } from "../engine/columnFitTypes";
import { ElxProblem } from "../engine/problems";
import { FitCancelled, localExecutor } from "./engineLink";
import type { WorkerMessage } from "./protocol";

/** The most workers used unless asked for more. */
export const MAX_WORKERS = 8;
/** How long a worker may take to load before the parts run in this thread. */
export const START_TIMEOUT_MS = 15000;

/** An error's message by its shape (errors from a worker or a DOMException may come from another realm). */
export function messageOf(e: unknown): string {
  return e !== null && typeof e === "object" && typeof (e as { message?: unknown }).message === "string" ? (e as Error).message : String(e);
}

/** A started worker as the pool sees it (a Web Worker, a Node worker thread, or a test's stand-in). */
export interface WorkerPort {
  post(message: unknown, transfer: ArrayBuffer[]): void;
  /** Messages, and errors (a load failure, an uncaught exception, an exit) as sentences. */
  listen(onMessage: (data: unknown) => void, onError: (message: string) => void): void;
  terminate(): void;
  /** A resting worker (kept warm between fits) must not keep a Node process alive; optional. */
  rest?(resting: boolean): void;
}

/** Starts worker number `index`; may throw. */
export type SpawnWorker = (index: number) => WorkerPort;

export { FitCancelled, isFitCancelled } from "./engineLink";

/**
 * Workers for a machine with `cores` cores (default: the page's navigator.hardwareConcurrency; Node
 * callers pass os.cpus().length, see nodeWorker.ts): capped at MAX_WORKERS, one on a one-core machine.
 */
export function machineWorkers(cores?: number): number {
  const nav = (globalThis as { navigator?: { hardwareConcurrency?: number } }).navigator;
  const c = cores ?? (nav && typeof nav.hardwareConcurrency === "number" ? nav.hardwareConcurrency : 1);
  return Math.max(1, Math.min(MAX_WORKERS, Math.floor(c) || 1));
}

/** The page's workers: dist/fitWorker.js beside the page. */
const PAGE_SPAWNER: SpawnWorker = (index) => browserSpawner()(index);

/** Web Workers from a script address (the page's own dist/fitWorker.js by default). */
export function browserSpawner(url = "fitWorker.js"): SpawnWorker {
  return () => {
    const WorkerCtor = (globalThis as { Worker?: new (u: string) => Worker }).Worker;
    if (typeof WorkerCtor !== "function") throw new Error("this page cannot start background workers");
    const w = new WorkerCtor(url);
    return {
      post: (m, t) => w.postMessage(m, t),
      listen: (onMessage, onError) => {
        w.onmessage = (e) => onMessage(e.data);
        w.onerror = (e) => {
          e.preventDefault();
          onError(e.message || "the worker's script did not load (the page's security policy may refuse it)");
        };
        w.onmessageerror = () => onError("a message from the worker could not be read");
      },
      terminate: () => w.terminate(),
    };
  };
}

/** Request ids, unique across pools: a warm worker passed on may still answer its last pool's request. */
let requestIds = 1;

/**
 * Warm workers between fits, by the spawner that started them: the engine in a worker is compiled
 * by the first fit, and a later fit that reuses the thread skips that (about a second on a laptop).
 */
const resting = new Map<SpawnWorker, WorkerPort[]>();

/** Terminates the workers kept warm between fits. */
export function closeIdleWorkers(): void {
  for (const ports of resting.values()) for (const p of ports.splice(0)) stopPort(p);
  resting.clear();
}

function stopPort(port: WorkerPort): void {
  try {
    port.terminate();
  } catch {
    // already gone
  }
}

interface Pending {
  part: number;
  resolve: (v: unknown) => void;
  reject: (e: unknown) => void;
}

/** A PartExecutor over started workers, with cancel and close. */
export class WorkerPool implements PartExecutor {
  readonly parts: number;
  private readonly pending = new Map<number, Pending>();
  private readonly dead: (string | null)[];
  private stopped: FitCancelled | Error | null = null;
  /** Rows gone through by the running step of each part, as the workers report them. */
  onProgress: ((part: number, rowsDone: number) => void) | null = null;

  /** `release`: where close() hands idle, healthy workers (kept warm) instead of terminating them. */
  constructor(private readonly ports: WorkerPort[], private readonly release?: (ports: WorkerPort[]) => void) {
    this.parts = ports.length;
    this.dead = ports.map(() => null);
    ports.forEach((port, part) =>
      port.listen(
        (data) => this.hear(part, data as WorkerMessage),
        (message) => this.lose(part, message),
      ),
    );
  }

  send(part: number, op: PartOp, transfer: ArrayBuffer[] = []): Promise<unknown> {
    if (this.stopped) return Promise.reject(this.stopped);
    if (!(part >= 0 && part < this.parts && Number.isInteger(part))) return Promise.reject(new Error(`there is no part ${part} (parts 0 to ${this.parts - 1})`));
    const lost = this.dead[part];
    if (lost !== null) return Promise.reject(new Error(lost));
    const id = requestIds++;
    return new Promise((resolve, reject) => {
      this.pending.set(id, { part, resolve, reject });
      try {
        this.ports[part].post({ id, op }, transfer);
      } catch (e) {
        this.pending.delete(id);
        reject(new Error(`the rows could not be handed to background worker ${part + 1}: ${messageOf(e)}`));
      }
    });
  }

  /** Terminates every worker (their work stops at once) and rejects all pending sends as cancelled. */
  cancel(): void {
    this.stop(new FitCancelled());
  }

  /**
   * Ends the pool; pending sends reject. Workers that are idle and healthy go back to be kept warm
   * (their part state cleared) when the pool was started so; the others are terminated.
   */
  close(): void {
    const reusable = !this.stopped && this.release !== undefined && this.pending.size === 0 && this.dead.every((d) => d === null);
    if (!reusable) {
      this.stop(new Error("the big-fit session was closed"));
      return;
    }
    this.stopped = new Error("the big-fit session was closed");
    for (const port of this.ports) port.post({ id: requestIds++, op: { kind: "reset" } }, []);
    (this.release as (p: WorkerPort[]) => void)(this.ports);
  }

  private stop(reason: Error): void {
    if (this.stopped) return;
    this.stopped = reason;
    for (const port of this.ports) stopPort(port);
    const pending = [...this.pending.values()];
    this.pending.clear();
    for (const p of pending) p.reject(reason);
  }

  private hear(part: number, m: WorkerMessage): void {
    if (!m || typeof m !== "object") return;
    if (m.type === "progress") {
      if (this.onProgress && this.pending.has(m.id)) this.onProgress(part, m.rowsDone);
      return;
    }
    if (m.type !== "answer" && m.type !== "failure") return;
    if (m.id === null) {
      if (m.type === "failure") this.lose(part, m.message);
      return;
    }
    const p = this.pending.get(m.id);
    if (!p) return;
    this.pending.delete(m.id);
    if (m.type === "answer") p.resolve(m.answer);
    else if (m.kind === "internal") p.reject(new Error(m.message));
    else p.reject(new ElxProblem(m.message, m.kind));
  }

  /** A worker that failed after it started: its pending and later sends reject with the reason. */
  private lose(part: number, message: string): void {
    if (this.dead[part] !== null || this.stopped) return;
    const reason = `background worker ${part + 1} stopped (${message}); the fit cannot go on without its rows: start it again`;
    this.dead[part] = reason;
    for (const [id, p] of [...this.pending]) {
      if (p.part !== part) continue;
      this.pending.delete(id);
      p.reject(new Error(reason));
    }
  }
}

export interface PoolOptions {
  /** Workers wanted: default machineWorkers(); 0 runs the parts in this thread. */
  workers?: number;
  /** How workers start: default Web Workers from fitWorker.js. */
  spawn?: SpawnWorker;
  startTimeoutMs?: number;
  /** Parts of the in-thread fallback (default 1). */
  localParts?: number;
  /** Keep the workers warm for the next fit when closed (default: yes for the page's own workers, no for a given spawner). */
  keepWarm?: boolean;
}

/** An executor with a way to stop it. */
export interface StoppableExecutor extends PartExecutor {
  cancel(): void;
  close(): void;
}

export interface PoolStart {
  executor: StoppableExecutor;
  /** Workers in use (0: this thread). */
  workers: number;
  /** Why the parts run in this thread although workers were wanted ("" otherwise). */
  fallbackNote: string;
  /** The worker pool, when workers started. */
  pool: WorkerPool | null;
}

/** The in-thread executor with cancel and close: both refuse later sends and let the parts' rows go. */
function inThread(parts: number): StoppableExecutor {
  let local: PartExecutor | null = localExecutor(parts);
  let stopped: Error | null = null;
  const stop = (reason: Error) => {
    stopped = stopped || reason;
    local = null;
  };
  return {
    parts,
    send: (part, op, transfer) => (stopped || !local ? Promise.reject(stopped) : local.send(part, op, transfer)),
    cancel: () => stop(new FitCancelled()),
    close: () => stop(new Error("the big-fit session was closed")),
  };
}

function note(reason: string): string {
  return `The fit runs on this page's own thread instead of in the background (${reason}); the results are the same, but the spreadsheet may respond slowly until it finishes.`;
}

/** Starts the workers and waits for each to be ready; falls back to this thread when any cannot start. */
export async function startPool(options: PoolOptions = {}): Promise<PoolStart> {
  const wanted = options.workers === undefined ? machineWorkers() : Math.floor(options.workers);
  const inThreadStart = (fallbackNote: string): PoolStart => ({ executor: inThread(Math.max(1, options.localParts ?? 1)), workers: 0, fallbackNote, pool: null });
  const local = (reason: string): PoolStart => inThreadStart(note(reason));
  if (!(wanted >= 1)) return inThreadStart("");
  const spawn = options.spawn ?? PAGE_SPAWNER;
  const keepWarm = options.keepWarm ?? options.spawn === undefined;
  const timeout = options.startTimeoutMs ?? START_TIMEOUT_MS;
  // warm workers first, then new ones
  const warm = (resting.get(spawn) ?? []).splice(0, wanted);
  warm.forEach((p) => p.rest?.(false));
  const ports: WorkerPort[] = [];
  const stopAll = () => [...warm, ...ports].forEach(stopPort);

  const readiness: Promise<void>[] = [];
  const timers: ReturnType<typeof setTimeout>[] = [];
  for (let i = warm.length; i < wanted; i++) {
    let port: WorkerPort;
    try {
      port = spawn(i);
    } catch (e) {
      stopAll();
      return local(`a background worker could not be started: ${messageOf(e)}`);
    }
    ports.push(port);
    readiness.push(
      new Promise<void>((resolve, reject) => {
        let settled = false;
        const timer = setTimeout(() => {
          if (!settled) {
            settled = true;
            reject(new Error(`a background worker did not load within ${Math.round(timeout / 1000)} s`));
          }
        }, timeout);
        timers.push(timer);
        port.listen(
          (data) => {
            if (!settled && (data as WorkerMessage)?.type === "ready") {
              settled = true;
              clearTimeout(timer);
              resolve();
            }
          },
          (message) => {
            if (!settled) {
              settled = true;
              clearTimeout(timer);
              reject(new Error(`a background worker could not load: ${message}`));
            }
          },
        );
      }),
    );
  }
  try {
    await Promise.all(readiness);
  } catch (e) {
    timers.forEach(clearTimeout);
    stopAll();
    return local(messageOf(e));
  }
  const release = (done: WorkerPort[]) => {
    const list = resting.get(spawn) ?? [];
    for (const p of done) {
      if (list.length >= MAX_WORKERS) stopPort(p);
      else {
        p.rest?.(true);
        // a resting worker that fails is dropped, never handed to the next fit
        p.listen(() => undefined, () => {
          const at = list.indexOf(p);
          if (at >= 0) list.splice(at, 1);
          stopPort(p);
        });
        list.push(p);
      }
    }
    resting.set(spawn, list);
  };
  const pool = new WorkerPool([...warm, ...ports], keepWarm ? release : undefined);
  return { executor: pool, workers: wanted, fallbackNote: "", pool };
}
