/**
 * NIST StRD linear least squares (test/data/nist-strd/strd.json, public domain, certified values
 * to 15 digits): all eleven problems through ELX.FIT and ELX.SUMMARY in level-level form, classical
 * standard errors (NIST certifies the usual OLS standard deviations), polynomial columns built from x,
 * NoInt1 and NoInt2 without intercept. Scored by the log relative error (LRE) as the StRD README
 * defines it, capped at the printed digits.
 */
import * as crypto from "crypto";
import * as fs from "fs";
import * as path from "path";
import { call, HostError, loadFunctions, lookup } from "../harness/loadFunctions";
import { lre, strd, STRD_PATH as strdPath } from "../harness/nistStrd";


describe("fixture guard: the committed NIST files", () => {
  it("each of the eleven .dat files has the sha256 and size strd.json records (byte copies of the NIST originals)", () => {
    expect(strd.datasets.map((d) => d.name)).toEqual(["Norris", "Pontius", "NoInt1", "NoInt2", "Filip", "Longley", "Wampler1", "Wampler2", "Wampler3", "Wampler4", "Wampler5"]);
    for (const set of strd.datasets) {
      const bytes = fs.readFileSync(path.join(path.dirname(strdPath), set.file));
      expect({ file: set.file, bytes: bytes.length, sha256: crypto.createHash("sha256").update(bytes).digest("hex") }).toEqual({ file: set.file, bytes: set.bytes, sha256: set.sha256 });
    }
  });
});

const reg = loadFunctions();
const table: Record<string, { coef: number; sd: number; resSd: number; r2: number }> = {};

describe("NIST StRD linear regression, certified values (LRE)", () => {
  for (const set of strd.datasets) {
    it(`${set.name}: coefficients, standard deviations, residual SD and R² to the required digits`, () => {
      const n = set.data.y.length;
      const terms = set.design.terms.filter((t) => t.power !== 0);
      const yRows = set.data.y.map((v) => [v]);
      const xRows: number[][] = [];
      for (let i = 0; i < n; i++) {
        xRows.push(terms.map((t) => Math.pow(set.data.x[t.variable as string][i], t.power)));
      }
      const opts = `form=level-level; se=classical; intercept=${set.design.intercept}; headers=false`;
      const fit = call(reg, "FIT", yRows, xRows, opts) as unknown[][];
      expect(fit).not.toBeInstanceOf(HostError);
      const summary = call(reg, "SUMMARY", yRows, xRows, opts) as unknown[][];
      const cert = set.certified;
      let coefLre = Infinity;
      let sdLre = Infinity;
      cert.coefficients.forEach((c, j) => {
        coefLre = Math.min(coefLre, lre(fit[j][2] as number, c.estimate, c.estimateText));
        sdLre = Math.min(sdLre, lre(fit[j][3] as number, c.standardDeviation, c.standardDeviationText));
      });
      const resSd = lre(lookup(summary, "Residual std. error") as number, cert.residualStandardDeviation, cert.residualStandardDeviationText);
      const r2label = summary.find((r) => String(r[0]).startsWith("R²"))![0] as string;
      const r2 = lre(lookup(summary, r2label) as number, cert.rSquared, cert.rSquaredText);
      table[set.name] = { coef: +coefLre.toFixed(1), sd: +sdLre.toFixed(1), resSd: +resSd.toFixed(1), r2: +r2.toFixed(1) };
      const need = set.name === "Filip" ? 7 : 9;
      expect(coefLre).toBeGreaterThanOrEqual(need);
      expect(sdLre).toBeGreaterThanOrEqual(need);
      expect(resSd).toBeGreaterThanOrEqual(need);
      expect(r2).toBeGreaterThanOrEqual(need);
    });
  }
  afterAll(() => {
    // The LRE table (smallest per quantity and set), printed for the record.
    console.log("NIST StRD log relative errors (min per quantity)\n" + JSON.stringify(table, null, 1));
  });
});
