/**
 * NIST StRD linear least squares (test/data/nist-strd/strd.json, public domain, certified values
 * to 15 digits), read once for every test that scores against them, and the log relative error
 * (LRE) as the StRD README defines it, capped at the printed digits.
 */
import * as fs from "fs";
import * as path from "path";

export interface Coef { estimate: number; estimateText: string; standardDeviation: number; standardDeviationText: string }
export interface StrdSet {
  name: string;
  file: string;
  sha256: string;
  bytes: number;
  design: { intercept: boolean; terms: { variable?: string; power: number }[] };
  certified: { coefficients: Coef[]; residualStandardDeviation: number; residualStandardDeviationText: string; rSquared: number; rSquaredText: string };
  data: { y: number[]; x: Record<string, number[]> };
}

export const STRD_PATH = path.resolve(__dirname, "../data/nist-strd/strd.json");
export const strd: { datasets: StrdSet[] } = JSON.parse(fs.readFileSync(STRD_PATH, "utf8"));

/** Significant digits printed; a certified zero such as 0.00000000000000E+00 counts every digit shown. */
export function digits(text: string): number {
  const all = text.replace(/^[-+]/, "").split(/[eE]/)[0].replace(".", "");
  const significant = all.replace(/^0+/, "");
  return significant === "" ? all.length : significant.length;
}

/** LRE = −log10(|q − c|/|c|), or −log10|q| when c = 0; capped at the certified digits. */
export function lre(q: number, c: number, text: string): number {
  const cap = digits(text);
  const err = c === 0 ? Math.abs(q) : Math.abs(q - c) / Math.abs(c);
  if (err === 0) return cap;
  return Math.min(cap, -Math.log10(err));
}
