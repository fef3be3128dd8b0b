/**
 * A big-fit session in this thread, over the engine's own least squares (OlsFit, its covariances and
 * the studentized Breusch–Pagan test), with the same contract as the worker session
 * (functions/parallel/types.ts): chunks in, one fit out, progress, Cancel. It holds the rows as
 * doubles only (never as cells) and answers exactly as ELX.FIT would for the same rows and options.
 * The pane uses it when the worker session is not in the build (see taskpane/bigSession.ts).
 */
import { mappedInt } from "../functions/engine/blocks";
import type { BigFitSession, BigOutcome } from "../functions/parallel/types";
import type { ColumnChunk, ColumnFitResult, ColumnFitSpec } from "../functions/engine/columnFitTypes";
import { parseOptions } from "../functions/engine/options";
import { prepare } from "../functions/engine/transforms";
import { OlsFit } from "../functions/engine/fit";
import { breuschPaganKoenker } from "../functions/engine/specTests";
import { ElxProblem, RowList } from "../functions/engine/problems";
import type { RawData } from "../functions/engine/intake";

const SAMPLE = 2500;
const pause = (): Promise<void> => new Promise((r) => setTimeout(r, 0));

export function openStandInSession(rows: number, note = ""): BigFitSession {
  const chunks: ColumnChunk[] = [];
  let cancelled = false;
  let closed = false;
  return {
    workers: 0,
    fallbackNote: note,
    async append(chunk: ColumnChunk): Promise<void> {
      if (cancelled || closed) return;
      chunks.push(chunk);
    },
    async estimate(spec: ColumnFitSpec, progress?: (done: number, total: number) => void): Promise<BigOutcome> {
      const stopped: BigOutcome = { ok: false, message: "the fit was cancelled", cancelled: true };
      if (cancelled) return stopped;
      chunks.sort((a, b) => a.rowStart - b.rowStart);
      const total = chunks.reduce((s, c) => s + c.y.length, 0);
      const k = spec.xNames.length;
      // usable rows: every column a finite number (the reader put NaN where a cell was not a number)
      let n = 0;
      for (const c of chunks) for (let i = 0; i < c.y.length; i++) if (usable(c, i, k)) n++;
      const y = new Float64Array(n);
      const x = spec.xNames.map(() => new Float64Array(n));
      const rowNumbers = new Int32Array(n);
      let at = 0;
      let done = 0;
      const blankRows = new RowList();
      let notNumber = 0;
      for (const c of chunks) {
        for (let i = 0; i < c.y.length; i++) {
          if (!usable(c, i, k)) {
            blankRows.add(c.rowStart + i + 1);
            const issue = c.issues ? c.issues[i] : Number.isNaN(c.y[i]) || c.x.some((col) => Number.isNaN(col[i])) ? 1 : 4;
            if (issue > 1) notNumber++;
            continue;
          }
          y[at] = c.y[i];
          for (let j = 0; j < k; j++) x[j][at] = c.x[j][i];
          rowNumbers[at] = c.rowStart + i + 1;
          at++;
        }
        done += c.y.length;
        progress?.(Math.round(done / 2), total);
        await pause();
        if (cancelled) return stopped;
      }
      const raw: RawData = {
        yName: spec.yName, xNames: [...spec.xNames], columnNames: [...spec.xNames], regressorOf: mappedInt(spec.xNames, (_, j) => j),
        roles: { absorb: [], factors: [], cluster: [], panel: null, time: null, weights: null, weightsName: null, instruments: [], instrumentNames: [] },
        leftOutWeight: 0, leftOutWeightRows: new RowList(), y, x, rowNumbers, leftOutBlank: total - n, leftOutBlankRows: blankRows,
        numericTextRows: new RowList(), numericTextExample: null, unnamed: [], trailingBlank: 0, firstRow: 1, dataRows: total, yHeader: true,
      };
      try {
        const o = parseOptions(`form=${spec.form}; zeros=${spec.zeros}; se=${spec.se}; level=${spec.level}; intercept=${spec.intercept}`);
        const data = prepare(raw, o);
        const fit = new OlsFit(data, spec.intercept);
        progress?.(Math.round(total * 0.8), total);
        await pause();
        if (cancelled) return stopped;
        const cov = fit.covariance(spec.se);
        const se = fit.standardErrors(cov);
        const crit = fit.criticalValue(spec.level, cov);
        const coef = Array.from(fit.coef);
        const t = coef.map((b, j) => b / se[j]);
        let bp: ColumnFitResult["breuschPagan"] = null;
        try {
          const r = breuschPaganKoenker(fit);
          bp = { statistic: r.statistic, df: r.df[0], p: r.pValue };
        } catch (e) {
          if (!(e instanceof ElxProblem)) throw e;
        }
        const fitted = fit.fitted;
        const resid = fit.resid;
        const step = Math.max(1, Math.ceil(fit.n / SAMPLE));
        const m = Math.ceil(fit.n / step);
        const sample = { fitted: new Float64Array(m), residuals: new Float64Array(m), rows: new Int32Array(m) };
        for (let i = 0, s = 0; s < m; i += step, s++) {
          sample.fitted[s] = fitted[i];
          sample.residuals[s] = resid[i];
          sample.rows[s] = data.rowNumbers[i] - 1;
        }
        const stats = fit.statistics();
        progress?.(total, total);
        const value: ColumnFitResult = {
          rowsRead: total,
          n: fit.n,
          leftOut: { blank: total - n - notNumber, notNumber, nonPositive: data.leftOutNonPositive },
          terms: fit.terms.map((term) => term.name),
          coefficients: coef,
          standardErrors: Array.from(se),
          t,
          p: t.map((v) => fit.pValue(v, cov)),
          lower: coef.map((b, j) => b - crit * se[j]),
          upper: coef.map((b, j) => b + crit * se[j]),
          seLabel: cov.label,
          dfResid: fit.dfResid,
          rss: fit.rss,
          rSquared: stats.rSquared,
          breuschPagan: bp,
          sample,
          condition: fit.qr.condition,
          refined: fit.qr.refined,
          parts: 1,
        };
        return { ok: true, value };
      } catch (e) {
        if (e instanceof ElxProblem) return { ok: false, message: e.message, cancelled: false };
        throw e;
      }
    },
    cancel(): void {
      cancelled = true;
    },
    close(): void {
      closed = true;
      chunks.length = 0;
    },
  };
  function usable(c: ColumnChunk, i: number, k: number): boolean {
    if (!Number.isFinite(c.y[i])) return false;
    for (let j = 0; j < k; j++) if (!Number.isFinite(c.x[j][i])) return false;
    return true;
  }
  void rows;
}
