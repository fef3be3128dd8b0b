/**
 * The big-fit session the pane drives (types.ts): the range's rows split into contiguous, equal
 * shares, one per part (a chunk that straddles a share boundary is cut there); chunks move to their
 * parts as they are read, each part's in row order whatever order they are read in; fit runs the column-block driver over the parts with progress; cancel
 * stops the workers at once. When workers are not wanted (workers = 0) or cannot start, the session
 * runs in this thread and says why in fallbackNote.
 */
import type { ColumnChunk, ColumnFitSpec, PartOp } from "../engine/columnFitTypes";
import { ElxProblem, fail } from "../engine/problems";
import { appendOp, columnFit, FitCancelled, isFitCancelled } from "./engineLink";
import { machineWorkers, messageOf, startPool, type PoolOptions, type StoppableExecutor } from "./pool";
import type { BigFitOpenOptions, BigFitSession, BigOutcome } from "./types";

/** How a session starts its workers (the page's defaults unless a test or Node caller says otherwise). */
export type BigFitStartOptions = BigFitOpenOptions & Pick<PoolOptions, "spawn" | "startTimeoutMs" | "keepWarm">;

/** Rows [from, to) of one part's share, ready to send. */
interface Piece {
  from: number;
  to: number;
  op: PartOp;
  transfer: ArrayBuffer[];
}

const OTHER_TRANSFORMS = "These rows were read and transformed for a fit with another form, zeros choice, intercept or columns: to fit them that way, read the range again (another se= or level needs no new reading).";

/** What a fit does to the parts' rows: another fit of one reading must keep it. */
function transformsOf(spec: ColumnFitSpec): string {
  return JSON.stringify([spec.form, spec.zeros, spec.intercept, spec.xNames.length, spec.firstRow ?? 1]);
}

const CANCELLED: BigOutcome = { ok: false, cancelled: true, message: "The fit was stopped (Cancel); nothing was written." };

/** The first row of each part's share and the end: part p holds rows [bounds[p], bounds[p + 1]). */
export function shareBounds(rows: number, parts: number): number[] {
  const bounds: number[] = [];
  for (let p = 0; p <= parts; p++) bounds.push(Math.floor((p * rows) / parts));
  return bounds;
}

/** A column's rows [from, to) ready to move: the array itself when it is all of its own buffer, else a copy. */
function movable<T extends Float64Array | Uint8Array>(column: T, from: number, to: number, whole: boolean): T {
  if (whole && column.byteOffset === 0 && column.byteLength === column.buffer.byteLength) return column;
  return column.slice(from, to) as T;
}

/** An ArrayBuffer (not a SharedArrayBuffer), by its tag: typed arrays may come from another realm. */
function isArrayBuffer(b: ArrayBufferLike): b is ArrayBuffer {
  return Object.prototype.toString.call(b) === "[object ArrayBuffer]";
}

export async function openBigFit(options: BigFitStartOptions): Promise<BigFitSession> {
  const rows = options.rows;
  if (!(Number.isInteger(rows) && rows >= 1)) fail("There are no data rows below the header to fit: choose a range with a header row and at least one row of numbers.");
  // Never more workers than rows.
  const wanted = options.workers === undefined ? undefined : Math.min(Math.max(0, Math.floor(options.workers)), rows);
  const start = await startPool({ workers: wanted === undefined ? Math.min(machineWorkers(), rows) : wanted, spawn: options.spawn, startTimeoutMs: options.startTimeoutMs, keepWarm: options.keepWarm, localParts: 1 });
  const executor: StoppableExecutor = start.executor;
  const parts = executor.parts;
  const bounds = shareBounds(rows, parts);
  let columns: number | null = null;
  let cancelled = false;
  let closed = false;
  let fitting = false;
  let fittedWith: string | null = null;
  let onCancel: (() => void) | null = null;
  // Each part receives its rows in order (the engine keeps them in the order they arrive, and the
  // picture's rows and the rows named in messages follow it): a piece that arrives before the rows
  // above it in its share waits here until they come, or until the fit starts.
  const next = bounds.slice(0, parts);
  const waiting: Piece[][] = Array.from({ length: parts }, () => []);
  /** Every send to a part (each already has a handler, so none is reported unhandled; the fit awaits them all). */
  const flights: Promise<unknown>[] = [];
  /** The first chunk refused: the fit refuses too, rather than fit without those rows. */
  let refused: string | null = null;

  const dispatch = (p: number, piece: Piece): Promise<unknown> => {
    const sent = executor.send(p, piece.op, start.workers > 0 ? piece.transfer : []);
    sent.catch(() => undefined);
    flights.push(sent);
    next[p] = piece.to;
    return sent;
  };

  const appendOne = async (chunk: ColumnChunk): Promise<void> => {
    if (cancelled) throw new FitCancelled();
    if (closed) fail("This big fit was closed: start a new one.");
    try {
      const n = chunk && chunk.y instanceof Float64Array ? chunk.y.length : -1;
      if (n < 0 || !Array.isArray(chunk.x) || chunk.x.some((c) => !(c instanceof Float64Array) || c.length !== n) || (chunk.issues != null && !(chunk.issues instanceof Uint8Array && chunk.issues.length === n))) {
        fail("A block of rows read from the range has columns of different lengths: read the range again.");
      }
      if (columns !== null && chunk.x.length !== columns) fail(`A block of rows read from the range has ${chunk.x.length} x columns where the first had ${columns}: read the range again.`);
      const first = chunk.rowStart;
      if (!(Number.isInteger(first) && first >= 0 && first + n <= rows)) {
        fail(`A block of rows (${first + 1} to ${first + n}) lies outside the range's ${rows} data rows: read the range again.`);
      }
      // every piece checked before any moves, so a refused chunk leaves nothing behind
      const pieces: { p: number; from: number; to: number }[] = [];
      for (let p = 0; p < parts && n > 0; p++) {
        const from = Math.max(first, bounds[p]);
        const to = Math.min(first + n, bounds[p + 1]);
        if (from >= to) continue;
        if (from < next[p] || waiting[p].some((w) => w.from < to && from < w.to)) {
          fail(`Rows ${first + 1} to ${first + n} of the range were handed over twice: read the range again.`);
        }
        pieces.push({ p, from, to });
      }
      if (columns === null) {
        columns = chunk.x.length;
        // Each part's share is known: room for all of it at once, so appending never regrows its columns.
        for (let p = 0; p < parts; p++) {
          const sent = executor.send(p, { kind: "reserve", rows: bounds[p + 1] - bounds[p], kx: columns });
          sent.catch(() => undefined);
          flights.push(sent);
        }
      }
      const sends: Promise<unknown>[] = [];
      for (const { p, from, to } of pieces) {
        const whole = from === first && to === first + n;
        const y = movable(chunk.y, from - first, to - first, whole);
        const x = chunk.x.map((c) => movable(c, from - first, to - first, whole));
        const issues = chunk.issues ? movable(chunk.issues, from - first, to - first, whole) : undefined;
        const transfer: ArrayBuffer[] = [];
        for (const a of [y, ...x, ...(issues ? [issues] : [])]) if (isArrayBuffer(a.buffer) && !transfer.includes(a.buffer)) transfer.push(a.buffer);
        const piece: Piece = { from, to, op: appendOp({ rowStart: from, y, x, issues }), transfer };
        if (from !== next[p]) {
          const at = waiting[p].findIndex((w) => w.from > from);
          waiting[p].splice(at < 0 ? waiting[p].length : at, 0, piece);
          continue;
        }
        sends.push(dispatch(p, piece));
        while (waiting[p].length > 0 && waiting[p][0].from === next[p]) sends.push(dispatch(p, waiting[p].shift() as Piece));
      }
      await Promise.all(sends);
    } catch (e) {
      if (refused === null && e instanceof ElxProblem) refused = e.message;
      throw e;
    }
  };

  const session: BigFitSession = {
    workers: start.workers,
    fallbackNote: start.fallbackNote,
    append(chunk) {
      const done = appendOne(chunk);
      // a caller that does not wait for the append still hears of a refusal from the fit
      done.catch(() => undefined);
      return done;
    },
    async estimate(spec: ColumnFitSpec, progress?: (rowsDone: number, rowsTotal: number) => void): Promise<BigOutcome> {
      if (cancelled) return CANCELLED;
      if (closed) return { ok: false, cancelled: false, message: "This big fit was closed: start a new one." };
      if (fitting) return { ok: false, cancelled: false, message: "A fit is already running for this range: wait for it or press Cancel." };
      // The parts transform their rows in place (logs) as they fit them: another fit of the same
      // reading may change se= or the level, not the transforms.
      const key = transformsOf(spec);
      if (fittedWith !== null && fittedWith !== key) return { ok: false, cancelled: false, message: OTHER_TRANSFORMS };
      fitting = true;
      const stop = new Promise<BigOutcome>((resolve) => {
        onCancel = () => resolve(CANCELLED);
      });
      try {
        const run = (async (): Promise<BigOutcome> => {
          if (refused !== null) return { ok: false, cancelled: false, message: `${refused} (The fit needs every block of the range.)` };
          // rows still waiting for the rows above them go now: the fit takes the rows appended so far
          for (let p = 0; p < parts; p++) while (waiting[p].length > 0) dispatch(p, waiting[p].shift() as Piece);
          await Promise.all(flights);
          const value = await columnFit(executor, spec, progress, () => cancelled);
          fittedWith = key;
          return { ok: true, value };
        })();
        return await Promise.race([run, stop]);
      } catch (e) {
        if (cancelled || isFitCancelled(e)) return CANCELLED;
        if (e instanceof ElxProblem) return { ok: false, cancelled: false, message: e.message };
        const why = messageOf(e);
        if (/already transformed/.test(why)) return { ok: false, cancelled: false, message: OTHER_TRANSFORMS };
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
