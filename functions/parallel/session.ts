/**
 * The big-fit session the pane drives (types.ts): the range's rows split into contiguous, equal
 * shares, one per part (a chunk that straddles a share boundary is cut there); chunks move to their
 * parts as they are read; fit runs the column-block driver over the parts with progress; cancel
 * stops the workers at once. When workers are not wanted (workers = 0) or cannot start, the session
 * runs in this thread and says why in fallbackNote.
 */
import type { ColumnChunk, ColumnFitSpec } from "../engine/columnFitTypes";
import { ElxProblem, fail } from "../engine/problems";
import { columnFit } from "./engineLink";
import { FitCancelled, isCancelled, startPool, type PoolOptions, type StoppableExecutor } from "./pool";
import type { BigFitOpenOptions, BigFitSession, BigOutcome } from "./types";

/** How a session starts its workers (the page's defaults unless a test or Node caller says otherwise). */
export type BigFitStartOptions = BigFitOpenOptions & Pick<PoolOptions, "spawn" | "startTimeoutMs">;

const CANCELLED: BigOutcome = { ok: false, cancelled: true, message: "The fit was stopped (Cancel); nothing was written." };

/** The first row of each part's share and the end: part p holds rows [bounds[p], bounds[p + 1]). */
export function shareBounds(rows: number, parts: number): number[] {
  const bounds: number[] = [];
  for (let p = 0; p <= parts; p++) bounds.push(Math.floor((p * rows) / parts));
  return bounds;
}

/** A column's rows [from, to) ready to move: the array itself when it is all of its own buffer, else a copy. */
function movable(column: Float64Array, from: number, to: number, whole: boolean): Float64Array {
  if (whole && column.byteOffset === 0 && column.byteLength === column.buffer.byteLength) return column;
  return column.slice(from, to);
}

export async function openBigFit(options: BigFitStartOptions): Promise<BigFitSession> {
  const rows = options.rows;
  if (!(Number.isInteger(rows) && rows >= 1)) fail("There are no data rows below the header to fit: choose a range with a header row and at least one row of numbers.");
  const start = await startPool({ workers: options.workers, spawn: options.spawn, startTimeoutMs: options.startTimeoutMs, localParts: 1 });
  const executor: StoppableExecutor = start.executor;
  // Never more parts than rows.
  const parts = Math.min(executor.parts, rows);
  const bounds = shareBounds(rows, parts);
  const appends: Promise<void>[] = [];
  let columns: number | null = null;
  let cancelled = false;
  let closed = false;
  let fitting = false;
  let onCancel: (() => void) | null = null;

  const appendOne = async (chunk: ColumnChunk): Promise<void> => {
    if (cancelled) throw new FitCancelled();
    if (closed) fail("This big fit was closed: start a new one.");
    const n = chunk && chunk.y instanceof Float64Array ? chunk.y.length : -1;
    if (n < 0 || !Array.isArray(chunk.x) || chunk.x.some((c) => !(c instanceof Float64Array) || c.length !== n)) {
      fail("A block of rows read from the range has columns of different lengths: read the range again.");
    }
    if (columns === null) columns = chunk.x.length;
    else if (chunk.x.length !== columns) fail(`A block of rows read from the range has ${chunk.x.length} x columns where the first had ${columns}: read the range again.`);
    const first = chunk.rowStart;
    if (!(Number.isInteger(first) && first >= 0 && first + n <= rows)) {
      fail(`A block of rows (${first + 1} to ${first + n}) lies outside the range's ${rows} data rows: read the range again.`);
    }
    const sends: Promise<unknown>[] = [];
    for (let p = 0; p < parts && n > 0; p++) {
      const from = Math.max(first, bounds[p]);
      const to = Math.min(first + n, bounds[p + 1]);
      if (from >= to) continue;
      const whole = from === first && to === first + n;
      const y = movable(chunk.y, from - first, to - first, whole);
      const x = chunk.x.map((c) => movable(c, from - first, to - first, whole));
      const transfer: ArrayBuffer[] = [];
      for (const a of [y, ...x]) if (a.buffer instanceof ArrayBuffer && !transfer.includes(a.buffer)) transfer.push(a.buffer);
      sends.push(executor.send(p, { kind: "append", chunk: { rowStart: from, y, x } }, start.workers > 0 ? transfer : []));
    }
    await Promise.all(sends);
  };

  const session: BigFitSession = {
    workers: start.workers,
    fallbackNote: start.fallbackNote,
    append(chunk) {
      const done = appendOne(chunk);
      // the fit waits for every append; an append's failure is reported by the fit as well
      appends.push(done.catch(() => undefined));
      return done;
    },
    async fit(spec: ColumnFitSpec, progress?: (rowsDone: number, rowsTotal: number) => void): Promise<BigOutcome> {
      if (cancelled) return CANCELLED;
      if (closed) return { ok: false, cancelled: false, message: "This big fit was closed: start a new one." };
      if (fitting) return { ok: false, cancelled: false, message: "A fit is already running for this range: wait for it or press Cancel." };
      fitting = true;
      const stop = new Promise<BigOutcome>((resolve) => {
        onCancel = () => resolve(CANCELLED);
      });
      try {
        const run = (async (): Promise<BigOutcome> => {
          await Promise.all(appends);
          const value = await columnFit(executor, spec, progress, () => cancelled);
          return { ok: true, value };
        })();
        return await Promise.race([run, stop]);
      } catch (e) {
        if (cancelled || isCancelled(e)) return CANCELLED;
        if (e instanceof ElxProblem) return { ok: false, cancelled: false, message: e.message };
        const why = e instanceof Error ? e.message : String(e);
        return { ok: false, cancelled: false, message: `The fit stopped unexpectedly (${why}). Nothing was written; try again, and if it happens again, report it with the range's size.` };
      } finally {
        fitting = false;
        onCancel = null;
      }
    },
    cancel() {
      if (cancelled || closed) return;
      cancelled = true;
      executor.cancel();
      if (onCancel) onCancel();
    },
    close() {
      if (closed) return;
      closed = true;
      executor.close();
      if (onCancel) onCancel();
    },
  };
  return session;
}
