/**
 * Real Web Workers in the preview page (headless Chromium, chosen by scripts/browser.js): the
 * big-fit session (dist/bigFitCheck.js puts it on window.ElxBigFit) starts two workers from
 * dist/fitWorker.js under the page's own Content-Security-Policy, fits 20,000 rows, and equals the
 * same two parts fitted in Node (localExecutor(2)) to 1e-12, as the page's own thread equals one
 * part in Node (how far one part and two parts may differ is the split engine's test); with a policy that refuses
 * workers, the session runs in the page's thread and says so. The data are invented (a seeded
 * log-log model); the numbers are the engine's own, checked against references by the engine tests.
 * No timing is asserted.
 */
import * as path from "path";
import type { Page } from "playwright-core";
import { launchBrowser, type LaunchedBrowser } from "../harness/browser";
import { appendColumns, columnFit, equalShares, localExecutor } from "../../functions/engine/columnFit";
import type { ColumnFitResult, ColumnFitSpec } from "../../functions/engine/columnFitTypes";
import { Rng } from "../simulation/rng";

// eslint-disable-next-line @typescript-eslint/no-var-requires
const { serve } = require("../../scripts/serve.js") as { serve: (o: { root: string; port?: number }) => Promise<{ url: string; close: () => Promise<void> }> };

const DIST = path.resolve(__dirname, "../../dist");
const K = 4;
const N = 20000;
const SPEC: ColumnFitSpec = { yName: "Units", xNames: ["Price", "Footfall", "Income", "Rival"], form: "log-log", zeros: "drop", se: "HC3", level: 0.95, intercept: true };

function data(): { y: number[]; x: number[][] } {
  const g = new Rng(31);
  const y: number[] = [];
  const x: number[][] = Array.from({ length: K }, () => []);
  for (let i = 0; i < N; i++) {
    let eta = 3;
    for (let j = 0; j < K; j++) {
      const v = Math.exp(0.3 * g.normal() + j);
      x[j].push(v);
      eta += (j === 0 ? -1.2 : 0.2) * Math.log(v);
    }
    y.push(Math.exp(eta + 0.3 * (1 + Math.abs(Math.log(x[0][i]))) * g.normal()));
  }
  y[123] = 0; // left out under zeros=drop, counted
  return { y, x };
}

interface PageFit {
  workers: number;
  fallbackNote: string;
  ok: boolean;
  message?: string;
  value?: Omit<ColumnFitResult, "sample"> & { sample: { fitted: number[]; residuals: number[]; rows: number[] } };
}

/** Fits in the page: a session with `workers`, chunks of 3,000 rows, the result as plain arrays. */
function fitInPage(page: Page, rows: { y: number[]; x: number[][] }, workers: number): Promise<PageFit> {
  return page.evaluate(
    async ({ y, x, workers, spec }) => {
      const { openBigFit } = (window as any).ElxBigFit;
      const session = await openBigFit({ rows: y.length, workers });
      for (let s = 0; s < y.length; s += 3000) {
        const e = Math.min(y.length, s + 3000);
        await session.append({ rowStart: s, y: Float64Array.from(y.slice(s, e)), x: x.map((c: number[]) => Float64Array.from(c.slice(s, e))) });
      }
      const out = await session.estimate(spec);
      session.close();
      (window as any).ElxBigFit.closeIdleWorkers();
      if (!out.ok) return { workers: session.workers, fallbackNote: session.fallbackNote, ok: false, message: out.message };
      const v = out.value;
      return {
        workers: session.workers,
        fallbackNote: session.fallbackNote,
        ok: true,
        value: { ...v, sample: { fitted: Array.from(v.sample.fitted as Float64Array), residuals: Array.from(v.sample.residuals as Float64Array), rows: Array.from(v.sample.rows as Int32Array) } },
      };
    },
    { y: rows.y, x: rows.x, workers, spec: SPEC },
  );
}

/** Worst relative difference over the result's numbers (p-values absolute: see test/parallel/workers.test.ts). */
function worst(a: NonNullable<PageFit["value"]>, b: ColumnFitResult | NonNullable<PageFit["value"]>): number {
  expect(a.n).toBe(b.n);
  expect(a.leftOut).toEqual(b.leftOut);
  expect(a.terms).toEqual(b.terms);
  expect(Array.from(a.sample.rows)).toEqual(Array.from(b.sample.rows));
  let w = 0;
  let what = "";
  const r = (u: number, v: number, name: string, scale = Math.abs(v)) => {
    const d = u === v ? 0 : Math.abs(u - v) / scale;
    if (d > w) [w, what] = [d, name];
  };
  for (const key of ["coefficients", "standardErrors", "t"] as const) a[key].forEach((u, j) => r(u, b[key][j], `${key}[${j}]`));
  // an interval's end near zero has no relative digits: measured against the coefficient's standard error
  for (const key of ["lower", "upper"] as const) a[key].forEach((u, j) => r(u, b[key][j], `${key}[${j}]`, Math.max(Math.abs(b[key][j]), b.standardErrors[j])));
  a.p.forEach((u, j) => r(u, b.p[j], `p[${j}]`, 1));
  r(a.rss, b.rss, "rss");
  r(a.rSquared, b.rSquared, "rSquared");
  if (a.breuschPagan && b.breuschPagan) {
    r(a.breuschPagan.statistic, b.breuschPagan.statistic, "Breusch–Pagan");
    r(a.breuschPagan.p, b.breuschPagan.p, "Breusch–Pagan p", 1);
  }
  const scale = Math.max(...Array.from(b.sample.residuals, Math.abs));
  Array.from(a.sample.residuals).forEach((u, i) => r(u, b.sample.residuals[i], `residual ${i}`, scale));
  if (w > 1e-12) throw new Error(`${what} differs by ${w} (relative; tolerance 1e-12)`);
  return w;
}

let server: { url: string; close: () => Promise<void> };
let browser: LaunchedBrowser;
const rows = data();
/** The same fit in Node with one part, and with the two parts the two workers hold. */
let inNode: ColumnFitResult;
let inNodeTwoParts: ColumnFitResult;

beforeAll(async () => {
  server = await serve({ root: DIST });
  browser = await launchBrowser({ viewport: { width: 1200, height: 800 } });
  const exec = localExecutor(1);
  await appendColumns(exec, Float64Array.from(rows.y), rows.x.map((c) => Float64Array.from(c)), [N], 3000);
  inNode = await columnFit(exec, SPEC);
  const two = localExecutor(2);
  await appendColumns(two, Float64Array.from(rows.y), rows.x.map((c) => Float64Array.from(c)), equalShares(N, 2), 3000);
  inNodeTwoParts = await columnFit(two, SPEC);
}, 90000);

afterAll(async () => {
  if (browser) await browser.close();
  if (server) await server.close();
});

async function previewPage(policy?: (csp: string) => string): Promise<{ page: Page; problems: string[] }> {
  const page = await browser.context.newPage();
  const problems: string[] = [];
  page.on("console", (m) => {
    if (m.type() === "error") problems.push(m.text());
  });
  page.on("pageerror", (e) => problems.push(`page error: ${e.message}`));
  if (policy) {
    await page.route(`${server.url}/preview.html`, async (route) => {
      const res = await route.fetch();
      const body = (await res.text()).replace(/(http-equiv="?Content-Security-Policy"?\s+content=")([^"]+)"/, (_m, head: string, csp: string) => `${head}${policy(csp)}"`);
      await route.fulfill({ response: res, body });
    });
  }
  await page.goto(`${server.url}/preview.html`);
  await page.waitForFunction(() => (window as any).ElxPreview && (window as any).ElxPane, null, { timeout: 30000 });
  await page.addScriptTag({ url: `${server.url}/bigFitCheck.js` });
  return { page, problems };
}

describe("the big fit in Web Workers in the preview", () => {
  it("two workers start under the page's policy and equal the same parts fitted in Node to 1e-12", async () => {
    const { page, problems } = await previewPage();
    const cores = await page.evaluate(() => navigator.hardwareConcurrency);
    expect(cores).toBeGreaterThanOrEqual(1);
    const threaded = await fitInPage(page, rows, 2);
    expect(threaded.fallbackNote).toBe("");
    expect(threaded.workers).toBe(2);
    if (!threaded.ok || !threaded.value) throw new Error(threaded.message);
    expect(threaded.value.parts).toBe(2);
    expect(threaded.value.n).toBe(N - 1);
    expect(threaded.value.leftOut.nonPositive).toBe(1);
    const own = await fitInPage(page, rows, 0);
    expect(own.workers).toBe(0);
    if (!own.ok || !own.value) throw new Error(own.message);
    // the workers hold the same two parts as Node's localExecutor(2); the page's own thread one part
    expect(worst(threaded.value, inNodeTwoParts)).toBeLessThanOrEqual(1e-12);
    expect(worst(own.value, inNode)).toBeLessThanOrEqual(1e-12);
    expect(problems).toEqual([]);
    await page.close();
  }, 120000);

  it("a policy that refuses workers: the fit runs in the page's thread, says so, and gives the same numbers", async () => {
    const { page } = await previewPage((csp) => csp.replace("worker-src 'self'", "worker-src 'none'"));
    const policy = await page.evaluate(() => document.querySelector('meta[http-equiv="Content-Security-Policy"]')?.getAttribute("content") ?? "");
    expect(policy).toMatch(/worker-src 'none'/);
    const out = await fitInPage(page, rows, 2);
    expect(out.workers).toBe(0);
    expect(out.fallbackNote).toMatch(/runs on this page's own thread instead of in the background/);
    if (!out.ok || !out.value) throw new Error(out.message);
    expect(worst(out.value, inNode)).toBeLessThanOrEqual(1e-12);
    await page.close();
  }, 120000);
});
