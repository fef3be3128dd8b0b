/**
 * Collinearity: variance inflation factors and the scaled condition number.
 *
 * VIF_j = 1/(1 − R²_j), R²_j from regressing x_j on the other regressors with an intercept; with an
 * intercept in the model it equals [(XᵀX)⁻¹]_jj · Σ(x_ij − x̄_j)², read here from R⁻¹ of the fit's QR
 * (no auxiliary regressions, no normal equations). The condition number is the ratio of the largest
 * to the smallest singular value of the design with every column, the intercept's included, scaled
 * to unit length (Belsley, Kuh and Welsch 1980, Regression Diagnostics, ch. 3); those are the
 * singular values of the k×k factor R, found with ml-matrix's SVD. Rules of thumb (common practice):
 * VIF above 10, or a condition number above 30, signal collinearity worth a look.
 */
import { SingularValueDecomposition, Matrix } from "ml-matrix";
import type { OlsFit } from "./fit";
import { working } from "./scaling";

/** VIFs of the x columns, in order; null without an intercept (the centred definition needs one). */
export function varianceInflation(fit: OlsFit): number[] | null {
  if (!fit.intercept) return null;
  return fit.memo("vif", () => {
    const { k, qr } = fit;
    return fit.data.x.map((c0, j) => {
      const idx = fit.coefIndex(j);
      let d = 0;
      for (let m = idx; m < k; m++) d += qr.Rinv[idx * k + m] * qr.Rinv[idx * k + m];
      // d·Σ(x − x̄)²/Σx², with an extreme column scaled by a power of two so that no square overflows
      // (the ratio does not depend on the column's units; qr.scale[idx]² = Σx²)
      const c = working(c0);
      let mean = 0;
      for (let i = 0; i < c.length; i++) mean += c[i];
      mean /= c.length;
      let ss = 0;
      let sq = 0;
      for (let i = 0; i < c.length; i++) {
        ss += (c[i] - mean) * (c[i] - mean);
        sq += c[i] * c[i];
      }
      return (d * ss) / sq;
    });
  });
}

/** Condition number of the unit-scaled design (Belsley, Kuh and Welsch). */
export function conditionNumber(fit: OlsFit): number {
  return fit.memo("condition", () => {
    const k = fit.k;
    const rows: number[][] = [];
    for (let i = 0; i < k; i++) {
      const r: number[] = [];
      for (let j = 0; j < k; j++) r.push(j >= i ? fit.qr.R[i * k + j] : 0);
      rows.push(r);
    }
    const sv = new SingularValueDecomposition(new Matrix(rows), { computeLeftSingularVectors: false, computeRightSingularVectors: false }).diagonal;
    const max = Math.max(...sv);
    const min = Math.min(...sv);
    return max / min;
  });
}

/** Common-practice thresholds for the notes in the summary. */
export const VIF_NOTE = 10;
export const CONDITION_NOTE = 30;
