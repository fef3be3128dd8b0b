/**
 * The pane's pictures as SVG text: residuals against fitted values, a normal quantile plot of the
 * residuals, and elasticities with their intervals. No charting library: a few marks, scaled to a
 * viewBox so that they fit the pane's narrow width. Each picture carries a title and a description for
 * screen readers; the numbers behind it are also given as text by the pane.
 *
 * Large fits are thinned for drawing (at most MAX_POINTS points, an even stride through the rows,
 * and the caption says so); the statistics in the captions always use every row.
 */

export const MAX_POINTS = 2500;
const INK = "#1b1b1b";
const GRID = "#c8c8c8";
const POINT = "#1d5a96";
const ACCENT = "#a8321c";

let serial = 0;
const esc = (s: string): string => s.replace(/&/g, "&amp;").replace(/</g, "&lt;").replace(/>/g, "&gt;").replace(/"/g, "&quot;");

/** A short number for axis ticks and labels. */
export function shortNumber(v: number): string {
  if (!Number.isFinite(v)) return "–";
  if (v === 0) return "0";
  const a = Math.abs(v);
  if (a >= 1e5 || a < 1e-3) return v.toExponential(1).replace("e+", "e");
  return String(Number(v.toPrecision(3))).replace("-", "−");
}

/** About `count` round tick values covering [lo, hi]. */
export function ticks(lo: number, hi: number, count = 4): number[] {
  if (!(hi > lo)) return [lo];
  const raw = (hi - lo) / count;
  const p = Math.pow(10, Math.floor(Math.log10(raw)));
  const m = raw / p;
  const step = (m < 1.5 ? 1 : m < 3 ? 2 : m < 7 ? 5 : 10) * p;
  const out: number[] = [];
  for (let t = Math.ceil(lo / step) * step; t <= hi + step * 1e-9; t += step) out.push(Math.abs(t) < step * 1e-9 ? 0 : t);
  return out;
}

function extent(values: ArrayLike<number>, idx?: ArrayLike<number>): [number, number] {
  let lo = Infinity;
  let hi = -Infinity;
  const n = idx ? idx.length : values.length;
  for (let i = 0; i < n; i++) {
    const v = values[idx ? idx[i] : i];
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  if (!(hi > lo)) {
    lo -= 1;
    hi += 1;
  }
  const pad = (hi - lo) * 0.05;
  return [lo - pad, hi + pad];
}

/** Row indices to draw: all when few, else an even stride (deterministic). */
export function thin(n: number, max = MAX_POINTS): Int32Array {
  if (n <= max) return Int32Array.from({ length: n }, (_, i) => i);
  const out = new Int32Array(max);
  for (let i = 0; i < max; i++) out[i] = Math.floor((i * n) / max);
  return out;
}

interface Frame {
  w: number;
  h: number;
  left: number;
  right: number;
  top: number;
  bottom: number;
  x: (v: number) => number;
  y: (v: number) => number;
  xd: [number, number];
  yd: [number, number];
}

function frame(w: number, h: number, xd: [number, number], yd: [number, number]): Frame {
  const left = 34;
  const right = 6;
  const top = 8;
  const bottom = 28;
  const x = (v: number) => left + ((v - xd[0]) / (xd[1] - xd[0])) * (w - left - right);
  const y = (v: number) => h - bottom - ((v - yd[0]) / (yd[1] - yd[0])) * (h - top - bottom);
  return { w, h, left, right, top, bottom, x, y, xd, yd };
}

function axes(f: Frame, xLabel: string, yLabel: string): string {
  const parts: string[] = [];
  for (const t of ticks(f.xd[0], f.xd[1], 3)) {
    const px = f.x(t).toFixed(1);
    parts.push(`<line x1="${px}" x2="${px}" y1="${f.top}" y2="${f.h - f.bottom}" stroke="${GRID}" stroke-width="0.5"/>`);
    parts.push(`<text x="${px}" y="${f.h - f.bottom + 10}" font-size="8" text-anchor="middle" fill="${INK}">${esc(shortNumber(t))}</text>`);
  }
  for (const t of ticks(f.yd[0], f.yd[1], 4)) {
    const py = f.y(t).toFixed(1);
    parts.push(`<line x1="${f.left}" x2="${f.w - f.right}" y1="${py}" y2="${py}" stroke="${GRID}" stroke-width="0.5"/>`);
    parts.push(`<text x="${f.left - 3}" y="${(Number(py) + 3).toFixed(1)}" font-size="8" text-anchor="end" fill="${INK}">${esc(shortNumber(t))}</text>`);
  }
  parts.push(`<rect x="${f.left}" y="${f.top}" width="${f.w - f.left - f.right}" height="${f.h - f.top - f.bottom}" fill="none" stroke="${INK}" stroke-width="0.6"/>`);
  parts.push(`<text x="${(f.left + f.w - f.right) / 2}" y="${f.h - 4}" font-size="8.5" text-anchor="middle" fill="${INK}">${esc(xLabel)}</text>`);
  parts.push(`<text transform="translate(9 ${(f.top + f.h - f.bottom) / 2}) rotate(-90)" font-size="8.5" text-anchor="middle" fill="${INK}">${esc(yLabel)}</text>`);
  return parts.join("");
}

function svg(w: number, h: number, title: string, desc: string, body: string): string {
  const id = `elx-svg-${++serial}`;
  return `<svg viewBox="0 0 ${w} ${h}" width="100%" role="img" aria-labelledby="${id}-t ${id}-d" focusable="false" xmlns="http://www.w3.org/2000/svg">` +
    `<title id="${id}-t">${esc(title)}</title><desc id="${id}-d">${esc(desc)}</desc>${body}</svg>`;
}

export interface ScatterSpec {
  fitted: ArrayLike<number>;
  residuals: ArrayLike<number>;
  title: string;
  xLabel: string;
  yLabel: string;
  width?: number;
  height?: number;
}

/** Residuals against fitted values, with the zero line. */
export function residualPlot(s: ScatterSpec): { svg: string; drawn: number } {
  const w = s.width ?? 170;
  const h = s.height ?? 150;
  const n = s.fitted.length;
  const idx = thin(n);
  const f = frame(w, h, extent(s.fitted, idx), extent(s.residuals, idx));
  const pts: string[] = [];
  for (let i = 0; i < idx.length; i++) {
    const r = idx[i];
    pts.push(`M${f.x(s.fitted[r]).toFixed(1)} ${f.y(s.residuals[r]).toFixed(1)}h0`);
  }
  const zero = f.y(0).toFixed(1);
  const body = axes(f, s.xLabel, s.yLabel) +
    `<path d="${pts.join("")}" stroke="${POINT}" stroke-opacity="${idx.length > 800 ? 0.35 : 0.7}" stroke-width="2.6" stroke-linecap="round" fill="none"/>` +
    `<line x1="${f.left}" x2="${w - f.right}" y1="${zero}" y2="${zero}" stroke="${ACCENT}" stroke-width="1"/>`;
  const desc = `Scatter of ${idx.length} of ${n} residuals (vertical) against fitted values (horizontal); a red line marks zero. A fan or curve means the spread or the form is not constant.`;
  return { svg: svg(w, h, s.title, desc, body), drawn: idx.length };
}

/** Inverse standard normal CDF (Acklam's rational approximation, relative error below 1.2e-9; ample for a plot). */
export function normalQuantile(p: number): number {
  const a = [-39.69683028665376, 220.9460984245205, -275.9285104469687, 138.357751867269, -30.66479806614716, 2.506628277459239];
  const b = [-54.47609879822406, 161.5858368580409, -155.6989798598866, 66.80131188771972, -13.28068155288572];
  const c = [-0.007784894002430293, -0.3223964580411365, -2.400758277161838, -2.549732539343734, 4.374664141464968, 2.938163982698783];
  const d = [0.007784695709041462, 0.3224671290700398, 2.445134137142996, 3.754408661907416];
  const pl = 0.02425;
  if (p < pl) {
    const q = Math.sqrt(-2 * Math.log(p));
    return (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) / ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  if (p > 1 - pl) return -normalQuantile(1 - p);
  const q = p - 0.5;
  const r = q * q;
  return ((((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q) / (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
}

/** Normal quantile plot: sorted standardised residuals against normal quantiles, with the line y = x. */
export function quantilePlot(residuals: ArrayLike<number>, title: string): { svg: string; points: number } {
  const w = 340;
  const h = 170;
  const n = residuals.length;
  const sorted = Float64Array.from(residuals).sort();
  let mean = 0;
  for (let i = 0; i < n; i++) mean += sorted[i];
  mean /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (sorted[i] - mean) ** 2;
  const sd = Math.sqrt(ss / Math.max(1, n - 1)) || 1;
  const m = Math.min(n, 400);
  const qx = new Float64Array(m);
  const qy = new Float64Array(m);
  for (let i = 0; i < m; i++) {
    // Evenly spaced plotting positions (i + 0.5)/m, read off the sorted residuals (all rows used).
    const p = (i + 0.5) / m;
    qx[i] = normalQuantile(p);
    qy[i] = (sorted[Math.min(n - 1, Math.floor(p * n))] - mean) / sd;
  }
  const lo = Math.min(qx[0], qy[0]);
  const hi = Math.max(qx[m - 1], qy[m - 1]);
  const f = frame(w, h, extent([qx[0], qx[m - 1]]), extent([lo, hi]));
  const pts: string[] = [];
  for (let i = 0; i < m; i++) pts.push(`M${f.x(qx[i]).toFixed(1)} ${f.y(qy[i]).toFixed(1)}h0`);
  const a = Math.max(f.xd[0], f.yd[0]);
  const b = Math.min(f.xd[1], f.yd[1]);
  const body = axes(f, "Normal quantile", "Standardised residual") +
    `<line x1="${f.x(a).toFixed(1)}" y1="${f.y(a).toFixed(1)}" x2="${f.x(b).toFixed(1)}" y2="${f.y(b).toFixed(1)}" stroke="${ACCENT}" stroke-width="1"/>` +
    `<path d="${pts.join("")}" stroke="${POINT}" stroke-width="3" stroke-linecap="round" fill="none"/>`;
  const desc = `Quantiles of ${n} standardised residuals (${m} points shown) against normal quantiles; points on the red line mean normal residuals; bends at the ends mean skew or heavy tails.`;
  return { svg: svg(w, h, title, desc, body), points: m };
}

export interface IntervalRow {
  term: string;
  estimate: number;
  lower: number;
  upper: number;
}

/** Elasticities as dots with interval whiskers, and a line at zero. */
export function intervalPlot(rows: IntervalRow[], title: string, levelLabel: string): string {
  const w = 340;
  const rowH = 22;
  const h = 30 + rows.length * rowH;
  let lo = 0;
  let hi = 0;
  for (const r of rows) {
    lo = Math.min(lo, r.lower, r.estimate);
    hi = Math.max(hi, r.upper, r.estimate);
  }
  const pad = (hi - lo) * 0.08 || 1;
  const xd: [number, number] = [lo - pad, hi + pad];
  const left = 92;
  const right = 10;
  const x = (v: number) => left + ((v - xd[0]) / (xd[1] - xd[0])) * (w - left - right);
  const parts: string[] = [];
  for (const t of ticks(xd[0], xd[1], 4)) {
    const px = x(t).toFixed(1);
    parts.push(`<line x1="${px}" x2="${px}" y1="6" y2="${h - 20}" stroke="${GRID}" stroke-width="0.5"/>`);
    parts.push(`<text x="${px}" y="${h - 9}" font-size="8" text-anchor="middle" fill="${INK}">${esc(shortNumber(t))}</text>`);
  }
  parts.push(`<line x1="${x(0).toFixed(1)}" x2="${x(0).toFixed(1)}" y1="6" y2="${h - 20}" stroke="${INK}" stroke-width="0.8"/>`);
  rows.forEach((r, i) => {
    const cy = 16 + i * rowH;
    const name = r.term.length > 16 ? `${r.term.slice(0, 15)}…` : r.term;
    parts.push(`<text x="${left - 6}" y="${cy + 3}" font-size="9" text-anchor="end" fill="${INK}">${esc(name)}</text>`);
    parts.push(`<line x1="${x(r.lower).toFixed(1)}" x2="${x(r.upper).toFixed(1)}" y1="${cy}" y2="${cy}" stroke="${POINT}" stroke-width="2"/>`);
    parts.push(`<circle cx="${x(r.estimate).toFixed(1)}" cy="${cy}" r="3.4" fill="${ACCENT}"/>`);
  });
  const desc = rows.map((r) => `${r.term}: ${shortNumber(r.estimate)} (${levelLabel} interval ${shortNumber(r.lower)} to ${shortNumber(r.upper)})`).join("; ");
  return svg(w, h, title, desc || "no elasticities", parts.join(""));
}

/** One window of a rolling fit: where it is drawn (its middle period or row) and its estimate with a band. */
export interface PathPoint {
  at: number;
  estimate: number;
  lower: number;
  upper: number;
}

/**
 * An estimate's path over rolling windows: the band (lower to upper) shaded, the estimates joined by
 * a line, and, when given, a dashed vertical line at a break.
 */
export function pathPlot(points: PathPoint[], title: string, xLabel: string, yLabel: string, breakAt: number | null = null): string {
  const w = 340;
  const h = 200;
  const xs = points.map((p) => p.at);
  const ys = points.flatMap((p) => [p.lower, p.upper, p.estimate]);
  const xd: [number, number] = [Math.min(...xs), Math.max(...xs)];
  if (xd[0] === xd[1]) xd[1] = xd[0] + 1;
  let [lo, hi] = [Math.min(...ys), Math.max(...ys)];
  const pad = (hi - lo) * 0.08 || 1;
  lo -= pad;
  hi += pad;
  const f = frame(w, h, xd, [lo, hi]);
  const parts: string[] = [axes(f, xLabel, yLabel)];
  const band = [...points.map((p) => `${f.x(p.at).toFixed(1)},${f.y(p.upper).toFixed(1)}`), ...points.slice().reverse().map((p) => `${f.x(p.at).toFixed(1)},${f.y(p.lower).toFixed(1)}`)].join(" ");
  parts.push(`<polygon points="${band}" fill="${POINT}" fill-opacity="0.22" stroke="none"/>`);
  parts.push(`<polyline points="${points.map((p) => `${f.x(p.at).toFixed(1)},${f.y(p.estimate).toFixed(1)}`).join(" ")}" fill="none" stroke="${ACCENT}" stroke-width="1.6"/>`);
  for (const p of points) parts.push(`<circle cx="${f.x(p.at).toFixed(1)}" cy="${f.y(p.estimate).toFixed(1)}" r="2.4" fill="${ACCENT}"/>`);
  if (breakAt !== null && breakAt >= xd[0] && breakAt <= xd[1]) {
    const bx = f.x(breakAt).toFixed(1);
    parts.push(`<line x1="${bx}" x2="${bx}" y1="${f.top}" y2="${h - f.bottom}" stroke="${INK}" stroke-width="1" stroke-dasharray="3 2"/>`);
  }
  const desc = points.map((p) => `at ${shortNumber(p.at)}: ${shortNumber(p.estimate)} (${shortNumber(p.lower)} to ${shortNumber(p.upper)})`).join("; ");
  return svg(w, h, title, desc || "no windows", parts.join(""));
}
