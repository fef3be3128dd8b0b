/** ELX.BYGROUP: one row of elasticities per segment. */
import { getGroups } from "../engine/byGroup";
import { estimatorOf, seTypeOf } from "../engine/estimators";
import { ElxProblem } from "../engine/problems";
import { elasticity } from "../engine/elasticity";
import { breuschPaganKoenker } from "../engine/specTests";
import type { OlsFit } from "../engine/fit";
import { guarded, hostError, num, options, originsOf, table, safe, type Cell, type Table } from "./host";
import { BINARY_NOTE } from "./regression";

export function byGroupTable(keys: unknown, y: unknown, x: unknown, opts: unknown, invocation: unknown): Table {
  return guarded(() => {
    const o = options(opts);
    const origins = originsOf(invocation);
    const g = getGroups(keys, y, x, o, origins[1] ?? null, origins[2] ?? null);
    const info = estimatorOf(o);
    const ppml = info.exponentialMean;
    const se = seTypeOf(o);
    // A term binary in every group fitted has no elasticity anywhere: its header says where to look
    // and its cells stay empty (never #N/A, which would break a sum over the column).
    const fitted = g.groups.filter((grp) => grp.fit);
    const binaryEverywhere = g.xNames.map((_, j) => fitted.length > 0 && fitted.every((grp) => (grp.fit as NonNullable<typeof grp.fit>).data.binary[j]));
    const header = ["Group", "Observations"];
    g.xNames.forEach((n, j) => header.push(`Elasticity: ${n}${binaryEverywhere[j] ? ` (${BINARY_NOTE})` : ""}`, `Std. error: ${n}`));
    header.push(ppml ? "Pseudo R²" : "R²");
    if (!ppml) header.push("Breusch–Pagan p");
    const noBp = info.residualVariance ? null : hostError("na", `Breusch–Pagan reads least-squares residuals; ${info.noResidualVariance}`);
    const width = header.length;
    const body: Table = g.groups.map((grp) => {
      const row: Cell[] = [grp.key, grp.rows];
      const fit = grp.fit;
      if (!fit) {
        row.push(`cannot fit: ${(grp.problem as ElxProblem).message}`);
        while (row.length < width) row.push("");
        return row;
      }
      row[1] = fit.n;
      let cov: ReturnType<typeof fit.covariance> | null = null;
      let covProblem: Cell | null = null;
      try {
        cov = fit.covariance(se, o.lags);
      } catch (e) {
        if (!(e instanceof ElxProblem)) throw e;
        covProblem = hostError(e.kind, e.message);
      }
      g.xNames.forEach((_, j) => {
        if (fit.data.binary[j]) row.push(binaryEverywhere[j] ? "" : `binary in this group: see ELX.EFFECTS`, "");
        else if (!cov) row.push(covProblem as Cell, covProblem as Cell);
        else {
          const r = elasticity(fit, j, cov, o.level, o.at);
          row.push(num(r.estimate), num(r.se));
        }
      });
      if (fit.estimator === "ppml") row.push(num(fit.statistics().pseudoRSquared)); // narrows the fit's type
      else {
        row.push(num(fit.statistics().rSquared, "R² is undefined: y does not vary in this group"));
        row.push(noBp ?? safe(() => num(fit.memo("test:bp", () => breuschPaganKoenker(fit as OlsFit)).pValue)));
      }
      return row;
    });
    if (g.blankKeys > 0) {
      const row: Cell[] = ["(blank key)", g.blankKeys, "rows whose key is blank or an error are left out"];
      while (row.length < width) row.push("");
      body.push(row);
    }
    return table(header, body, o);
  });
}
