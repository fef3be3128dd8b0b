/**
 * The worker pool over Node worker threads running the built dist/fitWorker.js (run `npm run build`
 * first), and stand-in workers for the ways a worker fails (test/parallel/fixtures): a worker that
 * cannot start leaves the parts in this thread with a note saying why; a step that throws comes back
 * as a rejected send with the engine's message (an ElxProblem keeps its kind); a worker that dies
 * rejects its pending sends; cancel terminates the threads, even busy ones, and rejects as cancelled.
 * No timing is asserted: the start timeout is only made short so the silent worker is given up quickly.
 */
import * as fs from "fs";
import * as path from "path";
import { ElxProblem } from "../../functions/engine/problems";
import { serveParts } from "../../functions/parallel/fitWorker";
import { nodeSpawner, WORKER_BUNDLE, type NodeWorkerPort } from "../../functions/parallel/nodeWorker";
import { isFitCancelled, machineWorkers, startPool, WorkerPool, type WorkerPort } from "../../functions/parallel/pool";
import type { WorkerMessage } from "../../functions/parallel/protocol";

const FIXTURES = path.join(__dirname, "fixtures");

beforeAll(() => {
  if (!fs.existsSync(WORKER_BUNDLE)) throw new Error(`${WORKER_BUNDLE} is missing: run npm run build first`);
});

describe("the worker bundle", () => {
  it("holds the engine only: no cell-function registration, no host API", () => {
    const text = fs.readFileSync(WORKER_BUNDLE, "utf8");
    expect(text).not.toMatch(/CustomFunctions|associate\(|Office\.|Excel\./);
  });
});

describe("worker count", () => {
  it("is the cores, capped at 8, and one on a one-core machine", () => {
    expect(machineWorkers(1)).toBe(1);
    expect(machineWorkers(2)).toBe(2);
    expect(machineWorkers(6)).toBe(6);
    expect(machineWorkers(64)).toBe(8);
    expect(machineWorkers(0)).toBe(1);
  });
});

describe("a worker that cannot start", () => {
  it("whose constructor throws: the parts run in this thread, and the note says so", async () => {
    const start = await startPool({
      workers: 2,
      spawn: () => {
        throw new Error("the page's security policy refuses workers");
      },
    });
    expect(start.workers).toBe(0);
    expect(start.pool).toBeNull();
    expect(start.executor.parts).toBe(1);
    expect(start.fallbackNote).toMatch(/this page's own thread/);
    expect(start.fallbackNote).toMatch(/security policy refuses workers/);
    expect(start.fallbackNote).toMatch(/the results are the same/);
  });

  it("whose script fails while loading (an error before ready): every started thread is stopped", async () => {
    const started: NodeWorkerPort[] = [];
    const start = await startPool({ workers: 2, spawn: nodeSpawner(path.join(FIXTURES, "failingWorker.js"), started) });
    expect(start.workers).toBe(0);
    expect(start.fallbackNote).toMatch(/could not load: the engine modules are missing from this build/);
    expect(started).toHaveLength(2);
    await Promise.all(started.map((p) => p.exited));
  });

  it("whose script is missing", async () => {
    const start = await startPool({ workers: 1, spawn: nodeSpawner(path.join(FIXTURES, "noSuchWorker.js")) });
    expect(start.workers).toBe(0);
    expect(start.fallbackNote).toMatch(/could not load/);
  });

  it("that never says it is ready: given up after the start timeout", async () => {
    const started: NodeWorkerPort[] = [];
    const start = await startPool({ workers: 2, spawn: nodeSpawner(path.join(FIXTURES, "silentWorker.js"), started), startTimeoutMs: 300 });
    expect(start.workers).toBe(0);
    expect(start.fallbackNote).toMatch(/did not load within/);
    await Promise.all(started.map((p) => p.exited));
  });

  it("workers = 0 asks for this thread: no note", async () => {
    const start = await startPool({ workers: 0, spawn: () => { throw new Error("must not be called"); } });
    expect(start.workers).toBe(0);
    expect(start.fallbackNote).toBe("");
  });
});

describe("errors as messages", () => {
  it("a step the engine refuses comes back as a rejected send with its message; the worker goes on", async () => {
    const start = await startPool({ workers: 2, spawn: nodeSpawner() });
    try {
      expect(start.workers).toBe(2);
      const e1 = await start.executor.send(1, { kind: "no-such-step" }).catch((e) => e);
      expect(e1).toBeInstanceOf(Error);
      expect((e1 as Error).message).toMatch(/unknown part step no-such-step/);
      // the same worker answers the next request: the error did not take it down
      const e2 = await start.executor.send(1, { kind: "another-step" }).catch((e) => e);
      expect((e2 as Error).message).toMatch(/unknown part step another-step/);
    } finally {
      start.executor.close();
    }
  });

  it("the worker's handler turns an ElxProblem into a failure message with its kind, and an unreadable request into one too", () => {
    const posted: WorkerMessage[] = [];
    const handle = serveParts({ postMessage: (m) => posted.push(m), addEventListener: () => undefined });
    expect(posted[0]).toEqual({ type: "ready" });
    handle({ id: 7, op: { kind: "no-such-step" } });
    expect(posted[1]).toMatchObject({ type: "failure", id: 7, kind: "internal" });
    handle("not a request");
    expect(posted[2]).toMatchObject({ type: "failure", id: null, kind: "internal" });
    handle({ id: 8, op: { kind: "reset" } });
    expect(posted[3]).toEqual({ type: "answer", id: 8, answer: null });
  });

  it("a failure message of kind value/na becomes an ElxProblem of that kind on the page", async () => {
    let hear: (d: unknown) => void = () => undefined;
    const port: WorkerPort = { post: (m) => queueMicrotask(() => hear({ type: "failure", id: (m as { id: number }).id, message: "y has no usable rows", kind: "na" })), listen: (m) => { hear = m; }, terminate: () => undefined };
    const pool = new WorkerPool([port]);
    const e = await pool.send(0, { kind: "scan" }).catch((x) => x);
    expect(e).toBeInstanceOf(ElxProblem);
    expect((e as ElxProblem).kind).toBe("na");
    expect((e as ElxProblem).message).toBe("y has no usable rows");
  });

  it("a worker that dies after starting rejects its pending sends with a sentence, and later ones too", async () => {
    const start = await startPool({ workers: 1, spawn: nodeSpawner(path.join(FIXTURES, "crashingWorker.js")) });
    try {
      expect(start.workers).toBe(1);
      const e = await start.executor.send(0, { kind: "append" }).catch((x) => x);
      expect((e as Error).message).toMatch(/background worker 1 stopped \(out of memory in the part's rows\)/);
      const later = await start.executor.send(0, { kind: "append" }).catch((x) => x);
      expect((later as Error).message).toMatch(/background worker 1 stopped/);
    } finally {
      start.executor.close();
    }
  });
});

describe("cancel", () => {
  it("terminates busy workers (their threads end) and rejects pending and later sends as cancelled", async () => {
    const started: NodeWorkerPort[] = [];
    const start = await startPool({ workers: 2, spawn: nodeSpawner(path.join(FIXTURES, "busyWorker.js"), started) });
    expect(start.workers).toBe(2);
    const pending = [start.executor.send(0, { kind: "factor" }), start.executor.send(1, { kind: "factor" })].map((p) => p.catch((e) => e));
    start.executor.cancel();
    const errors = await Promise.all(pending);
    expect(errors.every((e) => isFitCancelled(e))).toBe(true);
    // both threads really end although they never return from their loop
    await Promise.all(started.map((p) => p.exited));
    const later = await start.executor.send(0, { kind: "factor" }).catch((e) => e);
    expect(isFitCancelled(later)).toBe(true);
  });
});
