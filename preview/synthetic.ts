/**
 * A seeded synthetic sheet for the big-range path (preview.html?rows=1000000): an invented bakery
 * chain's weekly sales of one loaf across many stores, one row per store-week, Units in column A and
 * ten regressors in B:K. Invented data, for the preview, the browser tests and the pane benchmark only.
 *
 * Nothing is stored per cell: every value is a pure function of (seed, row, column), from a
 * counter-based hash, so a block of rows costs only its own arithmetic and a sheet of 10^6 rows × 11
 * columns holds no 10^7 JS values. The same module runs in Node (the browser test computes the same
 * fit through the cells from the same rows) and in the page.
 *
 * The model (log-log, multiplicative noise):
 *   log Units = 1 − 1.3 log Price + 0.7 log Footfall + 0.22 Promo + 0.5 log Income
 *               + 0.4 log RivalPrice + 0.15 log Temperature − 0.08 log RainHours + 0.12 Holiday
 *               + 0.3 log ShelfMetres + 0.25 log LoyaltyShare − 1.5 + u,
 *   u normal with sd 0.15 · (1 + 0.03 Promo) (the spread is a little larger in promotion weeks).
 * Units are rounded to whole loaves, and one row in 60 is a closed store-week with 0 units. One row in
 * 25,000 holds "n/a" (text) in Footfall and one in 40,000 a blank Price, so the reader's counts of
 * left-out rows have something to count.
 */
import type { CellValue } from "./workbook";

export const SYNTHETIC_COLUMNS = ["Units", "Price", "Footfall", "Promo", "Income", "RivalPrice", "Temperature", "RainHours", "Holiday", "ShelfMetres", "LoyaltyShare"];
export const SYNTHETIC_SEED = 20240607;

/** A 32-bit hash of (seed, row, column, draw) → uniform in (0, 1); splitmix-style mixing. */
function uniform(seed: number, row: number, column: number, draw: number): number {
  let h = (seed ^ Math.imul(row, 0x9e3779b1) ^ Math.imul(column + 1, 0x85ebca6b) ^ Math.imul(draw + 1, 0xc2b2ae35)) >>> 0;
  h = Math.imul(h ^ (h >>> 16), 0x7feb352d);
  h = Math.imul(h ^ (h >>> 15), 0x846ca68b);
  h ^= h >>> 16;
  // a second round over the row's high part keeps rows past 2^32 / 0x9e3779b1 distinct
  h = Math.imul(h ^ Math.floor(row / 4294967296), 0x27d4eb2d) ^ (h >>> 15);
  return ((h >>> 0) + 0.5) / 4294967296;
}

const round = (v: number, digits: number): number => {
  const f = 10 ** digits;
  return Math.round(v * f) / f;
};

/** One data row (0-based index below the header): the eleven values, numbers except the planted text and blank. */
export function syntheticRow(seed: number, i: number): CellValue[] {
  const u = (c: number, d = 0) => uniform(seed, i, c, d);
  const price = round(2 + 1.5 * u(1), 2);
  const footfall = round(60 + 120 * u(2), 1);
  const promo = u(3) < 0.15 ? 1 : 0;
  const income = round(80 + 40 * u(4), 1);
  const rival = round(1.8 + 1.8 * u(5), 2);
  const temperature = round(4 + 22 * u(6), 1);
  const rain = round(0.5 + 9.5 * u(7), 1);
  const holiday = u(8) < 0.06 ? 1 : 0;
  const shelf = round(1 + 4 * u(9), 2);
  const loyalty = round(0.05 + 0.6 * u(10), 3);
  // Box–Muller from two draws of column 0
  const z = Math.sqrt(-2 * Math.log(u(0, 1))) * Math.cos(2 * Math.PI * u(0, 2));
  const eta = 1 - 1.3 * Math.log(price) + 0.7 * Math.log(footfall) + 0.22 * promo + 0.5 * Math.log(income) + 0.4 * Math.log(rival) +
    0.15 * Math.log(temperature) - 0.08 * Math.log(rain) + 0.12 * holiday + 0.3 * Math.log(shelf) + 0.25 * Math.log(loyalty) - 1.5;
  const closed = u(0, 3) < 1 / 60;
  const units = closed ? 0 : Math.max(1, Math.round(Math.exp(eta + 0.15 * (1 + 0.03 * promo) * z)));
  const row: CellValue[] = [units, price, footfall, promo, income, rival, temperature, rain, holiday, shelf, loyalty];
  if (i % 25000 === 12345) row[2] = "n/a";
  if (i % 40000 === 31111) row[1] = null;
  return row;
}

/** The value of one cell of the synthetic sheet (1-based sheet row and column; row 1 is the header). */
export function syntheticCell(seed: number, rows: number, row: number, column: number): CellValue {
  if (column < 1 || column > SYNTHETIC_COLUMNS.length || row < 1 || row > rows + 1) return null;
  if (row === 1) return SYNTHETIC_COLUMNS[column - 1];
  return syntheticRow(seed, row - 2)[column - 1];
}
