/**
 * The Box–Cox profile of the engine (functions/engine/formCheck.ts) directly: invariant to the units
 * of y with an intercept (Box and Cox 1964, JRSS B 26), equal to R's MASS::boxcox λ̂ on
 * datasets::trees (test/reference/diagnostics.json, MASS 7.3), and still defined without an intercept.
 */
import * as fs from "fs";
import * as path from "path";
import { fitUncached } from "../../functions/engine/model";
import { parseOptions } from "../../functions/engine/options";
import { boxCox, readEvidence } from "../../functions/engine/formCheck";
import type { OlsFit } from "../../functions/engine/fit";

const ref = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../reference/diagnostics.json"), "utf8"));
const trees = ref.cases.trees;

function levelFit(scale: number, options = "form=level-log"): OlsFit {
  const y = [["Volume"], ...trees.data.Volume.map((v: number) => [v * scale])];
  const x = [["Girth", "Height"], ...trees.data.Girth.map((g: number, i: number) => [g, trees.data.Height[i]])];
  return fitUncached({ y, x, options: parseOptions(options), yOrigin: null, xOrigin: null }) as OlsFit;
}

describe("Box–Cox profile", () => {
  const base = boxCox(levelFit(1), 0.95);

  it("trees (Volume ~ log Girth + log Height): λ̂ equals MASS::boxcox's to 1e-7", () => {
    // R: optimize(<MASS::boxcox profile>, c(-2, 2), maximum = TRUE, tol = 1e-10)$maximum (diagnostics.R)
    expect(Math.abs(base.lambda - trees.formcheck["log-log"].boxcox.lambda_hat)).toBeLessThan(1e-7);
    expect(Math.abs((base.lower as number) - trees.formcheck["log-log"].boxcox.interval95.lower)).toBeLessThan(1e-9);
    expect(Math.abs((base.upper as number) - trees.formcheck["log-log"].boxcox.interval95.upper)).toBeLessThan(1e-9);
  });

  it.each([1e-8, 1e8, 3e8, 1e-150, 1e150])("y × %s gives the same λ̂, interval and LR p-values (cancellation in (y^λ − 1)/λ avoided)", (scale) => {
    const bc = boxCox(levelFit(scale), 0.95);
    expect(Math.abs(bc.lambda - base.lambda)).toBeLessThan(1e-7);
    expect(Math.abs((bc.lower as number) - (base.lower as number))).toBeLessThan(1e-9);
    expect(Math.abs((bc.upper as number) - (base.upper as number))).toBeLessThan(1e-9);
    expect(Math.abs(bc.pLog - base.pLog)).toBeLessThanOrEqual(1e-7 * base.pLog);
    expect(Math.abs(bc.pLevels - base.pLevels)).toBeLessThanOrEqual(1e-7 * base.pLevels);
  });

  it("the profile's differences in λ are unchanged by rescaling y (only a constant moves)", () => {
    const a = levelFit(1);
    const b = levelFit(3e8);
    const la = boxCox(a, 0.95).logLik;
    const lb = boxCox(b, 0.95).logLik;
    for (const l of [-2, -1, -0.3, 0, 0.5, 1, 2]) expect(Math.abs((la(l) - la(1)) - (lb(l) - lb(1)))).toBeLessThan(1e-8);
  });

  it("without an intercept the transform keeps MASS's constant (so the result depends on the units) and stays finite", () => {
    const bc = boxCox(levelFit(1, "form=level-log; intercept=false"), 0.95);
    expect(Number.isFinite(bc.lambda)).toBe(true);
    const other = boxCox(levelFit(1e3, "form=level-log; intercept=false"), 0.95);
    expect(Math.abs(other.lambda - bc.lambda)).toBeGreaterThan(1e-3);
  });
});

describe("FORMCHECK's reading", () => {
  const pe = (pl: number, pv: number) => ({ logs: { t: 1, p: pl, leftOut: 0 }, levels: { t: 1, p: pv, leftOut: 0 } });
  const bc = (pLog: number) => ({ lambda: 0.1, lower: -0.2, upper: 0.4, pLog, pLevels: 1e-9, onBoundary: false, logLik: () => 0 });

  it("never shows NaN: a result that cannot be computed gives no reading, and says why", () => {
    const r = readEvidence(bc(NaN), pe(0.3, 0.01));
    expect(r.verdict).toBe("no reading");
    expect(`${r.verdict} ${r.why}`).not.toMatch(/NaN|Infinity/);
  });

  it("reads the evidence at 5% when every number is there (logs kept, levels rejected)", () => {
    expect(readEvidence(bc(0.4), pe(0.3, 0.01)).verdict).toBe("logs preferred");
  });
});
