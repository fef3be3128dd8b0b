/** ELX.BYGROUP: one row of elasticities per segment. */
import { getGroups } from "../engine/byGroup";
import { estimatorOf, seTypeOf } from "../engine/estimators";
import { ElxProblem } from "../engine/problems";
import { elasticity } from "../engine/elasticity";
import { breuschPaganKoenker } from "../engine/specTests";
import type { OlsFit } from "../engine/fit";
import type { AnyFit } from "../engine/model";
import type { Options, SeType } from "../engine/options";
import type { Covariance } from "../engine/covariance";
import { guarded, hostError, num, options, originsOf, table, safe, type Cell, type Table } from "./host";
import { BINARY_NOTE } from "./regression";

/**
 * Elasticity and Std. error cells, term by term, of one fit of a segment (a BYGROUP group, a ROLLING
 * window): a binary term's cells are empty (with a pointer when it is binary only in this `part`),
 * and a covariance that cannot be computed puts its error value in every term's cells.
 */
export function elasticityCells(fit: AnyFit, terms: number, se: SeType, o: Options, binaryEverywhere: boolean[], part: string): Cell[] {
  const out: Cell[] = [];
  let cov: Covariance | null = null;
  let covProblem: Cell | null = null;
  try {
    cov = fit.covariance(se, o.lags);
  } catch (e) {
    if (!(e instanceof ElxProblem)) throw e;
    covProblem = hostError(e.kind, e.message);
  }
  for (let j = 0; j < terms; j++) {
    if (fit.data.binary[j]) out.push(binaryEverywhere[j] ? "" : `binary in this ${part}: see ELX.EFFECTS`, "");
    else if (!cov) out.push(covProblem as Cell, covProblem as Cell);
    else {
      const r = elasticity(fit, j, cov, o.level, o.at);
      out.push(num(r.estimate), num(r.se));
    }
  }
  return out;
}

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
      row.push(...elasticityCells(fit, g.xNames.length, se, o, binaryEverywhere, "group"));
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
