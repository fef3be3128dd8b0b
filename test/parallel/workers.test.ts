/**
 * The real multi-threaded path in Node: the built dist/fitWorker.js in worker threads (run
 * `npm run build` first), driven by the pool and the big-fit session, against the same split engine
 * run in this thread (localExecutor). The numbers are the engine's own (the split engine's tests
 * check them against the single-thread cell path and its references); here they must not change by
 * moving the parts into workers: equal to 1e-12 relative to the same parts in this thread, for 1, 2,
 * 3 and 8 workers, and to one part in this thread (p-values there to 1e-12 absolute).
 *
 * The data are invented (a seeded log-log demand model with 10 regressors, a few unusable cells);
 * no statistical reference is claimed for them. No timing is asserted.
 */
import * as fs from "fs";
import { appendColumns, columnFit, equalShares, localExecutor } from "../../functions/engine/columnFit";
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec } from "../../functions/engine/columnFitTypes";
import { nodeSpawner, WORKER_BUNDLE, type NodeWorkerPort } from "../../functions/parallel/nodeWorker";
import { closeIdleWorkers, startPool, type SpawnWorker } from "../../functions/parallel/pool";
import { openBigFit, shareBounds } from "../../functions/parallel/session";
import { Rng } from "../simulation/rng";

beforeAll(() => {
  if (!fs.existsSync(WORKER_BUNDLE)) throw new Error(`${WORKER_BUNDLE} is missing: run npm run build first`);
});

const K = 10;
const SPEC: ColumnFitSpec = { yName: "Units", xNames: Array.from({ length: K }, (_, j) => `x${j + 1}`), form: "log-log", zeros: "drop", se: "HC3", level: 0.95, intercept: true };

/** n rows of a log-log model with heteroskedastic errors; rows 17 and 400 have a blank, row 250 a zero y. */
function data(n: number, seed = 12): { y: Float64Array; x: Float64Array[] } {
  const g = new Rng(seed);
  const x = Array.from({ length: K }, () => new Float64Array(n));
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let eta = 1.5;
    for (let j = 0; j < K; j++) {
      const v = Math.exp(0.5 * g.normal() + 0.1 * j);
      x[j][i] = v;
      eta += (j % 2 === 0 ? -0.4 : 0.3) * Math.log(v) / (j + 1);
    }
    y[i] = Math.exp(eta + 0.2 * (1 + Math.abs(Math.log(x[0][i]))) * g.normal());
  }
  if (n > 400) {
    y[17] = NaN;
    x[3][400] = NaN;
    y[250] = 0;
  }
  return { y, x };
}

/**
 * Every number of two results, relative difference, worst; the counts must be equal. The picture's
 * fitted values and residuals are compared relative to their column's largest value. p-values are
 * compared on their own scale (absolute difference) when `pAbsolute`: a p-value of 1e-170 at t = 30
 * changes by t² times t's relative rounding when the rows are grouped otherwise.
 */
function worstDifference(a: ColumnFitResult, b: ColumnFitResult, pAbsolute = false): number {
  expect(a.n).toBe(b.n);
  expect(a.rowsRead).toBe(b.rowsRead);
  expect(a.leftOut).toEqual(b.leftOut);
  expect(a.terms).toEqual(b.terms);
  expect(a.seLabel).toBe(b.seLabel);
  expect(a.dfResid).toBe(b.dfResid);
  const pairs: [number, number][] = [];
  const add = (u: number[], v: number[]) => u.forEach((x, j) => pairs.push([x, v[j]]));
  add(a.coefficients, b.coefficients);
  add(a.standardErrors, b.standardErrors);
  add(a.t, b.t);
  const ps: [number, number][] = a.p.map((v, j) => [v, b.p[j]]);
  if (a.breuschPagan && b.breuschPagan) ps.push([a.breuschPagan.p, b.breuschPagan.p]);
  if (!pAbsolute) pairs.push(...ps);
  add(a.lower, b.lower);
  add(a.upper, b.upper);
  pairs.push([a.rss, b.rss], [a.rSquared, b.rSquared], [a.condition, b.condition]);
  expect(a.breuschPagan === null).toBe(b.breuschPagan === null);
  if (a.breuschPagan && b.breuschPagan) pairs.push([a.breuschPagan.statistic, b.breuschPagan.statistic]);
  expect(Array.from(a.sample.rows)).toEqual(Array.from(b.sample.rows));
  let worst = 0;
  // the picture's values relative to their column's largest (a residual near zero has no relative digits)
  for (const [u, v] of [[a.sample.fitted, b.sample.fitted], [a.sample.residuals, b.sample.residuals]]) {
    const scale = v.reduce((m, z) => Math.max(m, Math.abs(z)), 0);
    u.forEach((z, i) => {
      worst = Math.max(worst, Math.abs(z - v[i]) / scale);
    });
  }
  for (const [u, v] of pairs) {
    expect(Number.isFinite(u)).toBe(true);
    worst = Math.max(worst, u === v ? 0 : Math.abs(u - v) / Math.max(Math.abs(v), 1e-300));
  }
  if (pAbsolute) for (const [u, v] of ps) worst = Math.max(worst, Math.abs(u - v));
  return worst;
}

const N = 3001;
const { y, x } = data(N);
let inThread: ColumnFitResult;

beforeAll(async () => {
  const exec = localExecutor(1);
  await appendColumns(exec, y.slice(), x.map((c) => c.slice()), [N], 500);
  inThread = await columnFit(exec, SPEC);
  expect(inThread.n).toBe(N - 3);
});

describe("the pool over worker threads equals the in-thread parts", () => {
  it.each([1, 2, 3, 8])("%i workers: every number to 1e-12 (against the same parts in this thread and against one part)", async (workers) => {
    const start = await startPool({ workers, spawn: nodeSpawner() });
    try {
      expect(start.workers).toBe(workers);
      expect(start.fallbackNote).toBe("");
      const shares = equalShares(N, workers);
      await appendColumns(start.executor, y.slice(), x.map((c) => c.slice()), shares, 701);
      const threaded = await columnFit(start.executor, SPEC);
      expect(threaded.parts).toBe(workers);
      const local = localExecutor(workers);
      await appendColumns(local, y.slice(), x.map((c) => c.slice()), shares, 701);
      const same = await columnFit(local, SPEC);
      expect(worstDifference(threaded, same)).toBeLessThanOrEqual(1e-12);
      expect(worstDifference(threaded, inThread, true)).toBeLessThanOrEqual(1e-12);
    } finally {
      start.executor.close();
    }
  });
});

/** The rows as the pane reads them: chunks of `rows` rows, fresh buffers each. */
function chunks(rows: number): ColumnChunk[] {
  const out: ColumnChunk[] = [];
  for (let s = 0; s < N; s += rows) {
    const e = Math.min(N, s + rows);
    out.push({ rowStart: s, y: y.slice(s, e), x: x.map((c) => c.slice(s, e)) });
  }
  return out;
}

describe("the big-fit session", () => {
  it("cuts the rows into contiguous, nearly equal shares", () => {
    expect(shareBounds(10, 3)).toEqual([0, 3, 6, 10]);
    expect(shareBounds(3001, 2)).toEqual([0, 1500, 3001]);
    expect(shareBounds(5, 1)).toEqual([0, 5]);
  });

  it("with 3 workers, chunks that straddle the shares' boundaries, out of order: the in-thread numbers, progress up to the total", async () => {
    const started: NodeWorkerPort[] = [];
    const session = await openBigFit({ rows: N, workers: 3, spawn: nodeSpawner(undefined, started) });
    try {
      expect(session.workers).toBe(3);
      expect(session.fallbackNote).toBe("");
      const list = chunks(437); // 1000 and 2000 fall inside chunks
      for (const c of [...list.slice(3), ...list.slice(0, 3)]) await session.append(c);
      // the buffers moved to the workers
      expect(list[0].y.length).toBe(0);
      const seen: [number, number][] = [];
      const out = await session.estimate(SPEC, (d, t) => seen.push([d, t]));
      if (!out.ok) throw new Error(out.message);
      expect(out.value.parts).toBe(3);
      expect(worstDifference(out.value, inThread, true)).toBeLessThanOrEqual(1e-12);
      expect(seen.length).toBeGreaterThan(0);
      const [lastDone, lastTotal] = seen[seen.length - 1];
      expect(lastDone).toBe(lastTotal);
      expect(seen.every(([d, t]) => d >= 0 && d <= t)).toBe(true);
    } finally {
      session.close();
    }
    await Promise.all(started.map((p) => p.exited));
  });

  it("appends that are not awaited are still all in the fit", async () => {
    const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner() });
    try {
      for (const c of chunks(1000)) void session.append(c);
      const out = await session.estimate(SPEC);
      if (!out.ok) throw new Error(out.message);
      expect(worstDifference(out.value, inThread, true)).toBeLessThanOrEqual(1e-12);
    } finally {
      session.close();
    }
  });

  it("workers = 0: this thread, no note, the same numbers", async () => {
    const session = await openBigFit({ rows: N, workers: 0 });
    try {
      expect(session.workers).toBe(0);
      expect(session.fallbackNote).toBe("");
      for (const c of chunks(999)) await session.append(c);
      const out = await session.estimate(SPEC);
      if (!out.ok) throw new Error(out.message);
      expect(worstDifference(out.value, inThread, true)).toBeLessThanOrEqual(1e-12);
    } finally {
      session.close();
    }
  });

  it("a worker that cannot start: the session runs in this thread, says so, and gives the same numbers", async () => {
    const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner("/nonexistent/fitWorker.js") });
    try {
      expect(session.workers).toBe(0);
      expect(session.fallbackNote).toMatch(/runs on this page's own thread instead of in the background/);
      for (const c of chunks(1200)) await session.append(c);
      const out = await session.estimate(SPEC);
      if (!out.ok) throw new Error(out.message);
      expect(worstDifference(out.value, inThread, true)).toBeLessThanOrEqual(1e-12);
    } finally {
      session.close();
    }
  });

  it("cancel mid-fit: the fit resolves as cancelled, the worker threads end, the session refuses more", async () => {
    const started: NodeWorkerPort[] = [];
    const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner(undefined, started) });
    for (const c of chunks(1000)) await session.append(c);
    let calls = 0;
    const out = await session.estimate(SPEC, () => {
      calls++;
      if (calls === 1) session.cancel();
    });
    expect(out).toEqual({ ok: false, cancelled: true, message: expect.stringMatching(/stopped \(Cancel\); nothing was written/) });
    await Promise.all(started.map((p) => p.exited));
    expect(await session.estimate(SPEC)).toMatchObject({ ok: false, cancelled: true });
    await expect(session.append(chunks(1000)[0])).rejects.toMatchObject({ name: "FitCancelled" });
    session.close();
  });

  it("cancel in this thread (workers = 0) stops between steps", async () => {
    const session = await openBigFit({ rows: N, workers: 0 });
    for (const c of chunks(1000)) await session.append(c);
    const out = await session.estimate(SPEC, () => session.cancel());
    expect(out).toMatchObject({ ok: false, cancelled: true });
    session.close();
  });

  it("the engine's refusal comes back from the workers as the analyst's message, not an exception", async () => {
    const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner() });
    try {
      for (const c of chunks(1000)) await session.append(c);
      const out = await session.estimate({ ...SPEC, zeros: "stop" });
      expect(out.ok).toBe(false);
      if (out.ok) return;
      expect(out.cancelled).toBe(false);
      // row 250 (0-based) holds a zero y: the message names the row counted from 1 and says what to do
      expect(out.message).toMatch(/zero/);
      expect(out.message).toMatch(/zeros=drop/);
      expect(out.message).toMatch(/251/);
    } finally {
      session.close();
    }
  });

  it("closed sessions leave their workers warm for the next: no new thread, the same numbers, rows cleared", async () => {
    const base = nodeSpawner();
    let spawned = 0;
    const spawn: SpawnWorker = (i) => {
      spawned++;
      return base(i);
    };
    try {
      const results: ColumnFitResult[] = [];
      for (let round = 0; round < 2; round++) {
        const session = await openBigFit({ rows: N, workers: 2, spawn, keepWarm: true });
        expect(session.workers).toBe(2);
        for (const c of chunks(800)) await session.append(c);
        const out = await session.estimate(SPEC);
        session.close();
        if (!out.ok) throw new Error(out.message);
        results.push(out.value);
      }
      expect(spawned).toBe(2);
      // the second session's parts held only its own rows: the same n, the same numbers
      expect(worstDifference(results[1], results[0])).toBe(0);
    } finally {
      closeIdleWorkers();
    }
  });

  it("a second fit of one reading: another se= gives the engine's numbers; another form is refused with a sentence", async () => {
    const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner() });
    try {
      for (const c of chunks(1000)) await session.append(c);
      expect((await session.estimate(SPEC)).ok).toBe(true);
      const hc1 = await session.estimate({ ...SPEC, se: "HC1", level: 0.9 });
      if (!hc1.ok) throw new Error(hc1.message);
      const local = localExecutor(2);
      await appendColumns(local, y.slice(), x.map((c) => c.slice()), equalShares(N, 2), 1000);
      expect(worstDifference(hc1.value, await columnFit(local, { ...SPEC, se: "HC1", level: 0.9 }))).toBeLessThanOrEqual(1e-12);
      expect(await session.estimate({ ...SPEC, form: "log-level" })).toMatchObject({ ok: false, cancelled: false, message: expect.stringMatching(/another form.*read the range again/) });
    } finally {
      session.close();
    }
  });

  describe("bad input", () => {
    it("a range without data rows", async () => {
      await expect(openBigFit({ rows: 0, workers: 0 })).rejects.toThrow(/no data rows below the header/);
    });

    it("a chunk outside the range, columns of different lengths, a changed column count", async () => {
      const session = await openBigFit({ rows: 10, workers: 0 });
      const col = (n: number) => new Float64Array(n).fill(2);
      await expect(session.append({ rowStart: 8, y: col(3), x: [col(3)] })).rejects.toThrow(/rows \(9 to 11\) lies outside the range's 10 data rows/);
      await expect(session.append({ rowStart: 0, y: col(3), x: [col(2)] })).rejects.toThrow(/columns of different lengths/);
      await session.append({ rowStart: 0, y: col(3), x: [col(3)] });
      await expect(session.append({ rowStart: 3, y: col(3), x: [col(3), col(3)] })).rejects.toThrow(/has 2 x columns where the first had 1/);
      const out = await session.estimate({ ...SPEC, xNames: ["x1"] });
      // the refused blocks are not silently left out: the fit refuses too
      expect(out).toMatchObject({ ok: false, cancelled: false, message: expect.stringMatching(/lies outside the range's 10 data rows.*needs every block/) });
      session.close();
    });

    it("rows handed over twice", async () => {
      const session = await openBigFit({ rows: N, workers: 2, spawn: nodeSpawner() });
      try {
        const list = chunks(500);
        await session.append(list[2]);
        await expect(session.append({ ...list[2], y: list[3].y.slice(0, 500), x: list[3].x.map((c) => c.slice(0, 500)) })).rejects.toThrow(/Rows 1001 to 1500 of the range were handed over twice/);
      } finally {
        session.close();
      }
    });

    it("a second fit while one runs is refused with a sentence; a closed session refuses to fit", async () => {
      const session = await openBigFit({ rows: N, workers: 1, spawn: nodeSpawner() });
      for (const c of chunks(1500)) await session.append(c);
      const first = session.estimate(SPEC);
      const second = await session.estimate(SPEC);
      expect(second).toMatchObject({ ok: false, cancelled: false, message: expect.stringMatching(/already running/) });
      expect((await first).ok).toBe(true);
      session.close();
      expect(await session.estimate(SPEC)).toMatchObject({ ok: false, message: expect.stringMatching(/closed/) });
    });
  });
});
