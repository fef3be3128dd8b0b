/**
 * Role columns in the pane: which columns of x look like keys (a store, a week), which could be
 * weights or a cost instrument, the option words the choices write, and what fixed effects,
 * clustering and an instrument assume, in plain words. Pure: the pane passes the x snapshot.
 */
import type { RangeSnapshot } from "./host";

/** One column of x that looks like a key: text, or whole numbers with few distinct values. */
export interface KeyColumn {
  name: string;
  kind: "text" | "whole numbers";
  distinct: number;
  /** Whole-number keys: the middle of the sorted distinct values (a default break point). */
  middle?: number;
}

export interface ColumnRoles {
  keys: KeyColumn[];
  /** Numeric, non-binary, non-key columns: candidates for weights and for an instrument. */
  numeric: string[];
  /** A column whose name says price (the regressor an instrument is for), or null. */
  price: string | null;
  /** Numeric columns whose name says cost, wholesale or input (plausible cost shifters). */
  costs: string[];
}

/** Names of the x columns (the header row when the first row is all text, else x1, x2, …). */
export function columnNames(x: RangeSnapshot): string[] {
  const first = x.values[0] ?? [];
  const header = first.length > 0 && first.every((v) => typeof v === "string" && v.trim() !== "");
  return first.map((v, j) => (header ? String(v).trim() : `x${j + 1}`));
}

/**
 * Finds the key columns of x: a column that holds text in most data rows, or whole numbers with at
 * most a quarter as many distinct values as rows (Store, Week), never a 0/1 column.
 */
export function detectRoles(x: RangeSnapshot): ColumnRoles {
  const names = columnNames(x);
  const first = x.values[0] ?? [];
  const header = first.length > 0 && first.every((v) => typeof v === "string" && v.trim() !== "");
  const rows = x.values.slice(header ? 1 : 0);
  const keys: KeyColumn[] = [];
  const numeric: string[] = [];
  names.forEach((name, j) => {
    let text = 0;
    let nums = 0;
    let whole = true;
    let binary = true;
    const seen = new Set<string>();
    for (const r of rows) {
      const v = r[j];
      if (typeof v === "string" && v.trim() !== "") {
        text++;
        seen.add(v.trim());
      } else if (typeof v === "number" && Number.isFinite(v)) {
        nums++;
        if (!Number.isInteger(v)) whole = false;
        if (v !== 0 && v !== 1) binary = false;
        seen.add(String(v));
      }
    }
    if (text > 0 && 2 * text > text + nums) keys.push({ name, kind: "text", distinct: seen.size });
    else if (nums > 0 && whole && !binary && seen.size >= 2 && 4 * seen.size <= nums) {
      const sorted = [...seen].map(Number).sort((a, b) => a - b);
      keys.push({ name, kind: "whole numbers", distinct: seen.size, middle: sorted[Math.floor(sorted.length / 2)] });
    }
    else if (nums > 0 && !binary) numeric.push(name);
  });
  const price = numeric.find((n) => /price/i.test(n)) ?? null;
  const costs = numeric.filter((n) => /cost|wholesale|input/i.test(n) && n !== price);
  return { keys, numeric, price, costs };
}

/** The role choices of the pane (empty text: none). */
export interface RoleChoices {
  absorb: string;
  cluster: string;
  weights: string;
  /** The excluded instrument for the price column (estimator=2sls); empty: least squares. */
  instrument: string;
}

export const NO_ROLES: RoleChoices = { absorb: "", cluster: "", weights: "", instrument: "" };

/** A column name as an option value (names with ; or = cannot be written; the pane does not offer them). */
export const optionSafe = (name: string): boolean => !/[;=]/.test(name);

/**
 * The option words of the role choices: absorb=, cluster= (which sets se=cluster: the pane writes it
 * in place of the chosen se), weights=, and the 2SLS words for an instrument of the price column.
 * Key columns of x that no choice names are named in time= when they are whole numbers (so they are
 * not read as a regressor) — at most one; a text key left unnamed is refused by the functions with a
 * message saying what to do.
 */
export function roleOptions(r: RoleChoices, roles: ColumnRoles): string[] {
  const out: string[] = [];
  if (r.absorb) out.push(`absorb=${r.absorb}`);
  if (r.cluster) out.push(`cluster=${r.cluster}`);
  if (r.weights) out.push(`weights=${r.weights}`);
  const named = new Set([r.absorb, r.cluster]);
  const spare = roles.keys.filter((k) => k.kind === "whole numbers" && !named.has(k.name));
  if (spare.length === 1) out.push(`time=${spare[0].name}`);
  if (r.instrument && roles.price) out.push("estimator=2sls", `endogenous=${roles.price}`, `instruments=${r.instrument}`);
  return out;
}

/** Columns the chosen roles take out of the regressors (the data check does not log or test them). */
export function roleColumns(r: RoleChoices, roles: ColumnRoles): Set<string> {
  const out = new Set<string>();
  for (const w of roleOptions(r, roles)) {
    const m = /^(absorb|cluster|weights|time|instruments)=(.*)$/.exec(w);
    if (m) out.add(m[2]);
  }
  return out;
}

/** One sentence naming the key columns found (for the data check). */
export function keySentence(roles: ColumnRoles): string | null {
  if (roles.keys.length === 0) return null;
  const list = roles.keys.map((k) => `${k.name} (${k.kind}, ${k.distinct.toLocaleString("en-GB")} values)`);
  const text = list.length > 1 ? `${list.slice(0, -1).join(", ")} and ${list[list.length - 1]}` : list[0];
  return `${text} ${roles.keys.length === 1 ? "looks like a key column" : "look like key columns"}: not regressors. Choose ${roles.keys.length === 1 ? "it" : "them"} under fixed effects or clustering below; a text key named by no choice stops the fit, and one whole-number key left over is named in time= so that it is not read as a regressor.`;
}

export interface Paragraph {
  heading: string;
  text: string;
}

/** What fixed effects, clustering and weights assume, for the choices made. */
export function roleAssumptions(r: RoleChoices, roles: ColumnRoles): Paragraph[] {
  const out: Paragraph[] = [];
  if (r.absorb) {
    out.push({ heading: "What fixed effects assume", text: `absorb=${r.absorb} gives every ${r.absorb} its own intercept, so the slopes compare rows within the same ${r.absorb} only. That removes only differences between them that do not change over time (a busy location, a richer area); anything that changes within a ${r.absorb} over the weeks (a rival opening, a refit) stays in the error and can still bias the slopes. A regressor that barely moves within a ${r.absorb} is then estimated from little variation and gets a wide interval.` });
  }
  if (r.cluster) {
    const g = roles.keys.find((k) => k.name === r.cluster)?.distinct ?? 0;
    const few = g > 0 && g < 30;
    out.push({ heading: "What clustered errors assume", text: `cluster=${r.cluster} lets the errors of rows in the same ${r.cluster} be correlated in any way (the weeks of one store), but assumes the ${r.cluster} clusters are independent of each other; intervals use Student t with G − 1 degrees of freedom.${g > 0 ? ` Here G = ${g}.` : ""}${few ? " With fewer than about 30 clusters these errors are themselves unreliable, usually too small (Cameron and Miller 2015; the threshold is common practice): read the intervals as rough." : ""}` });
  }
  if (r.weights) {
    out.push({ heading: "What weights assume", text: `weights=${r.weights} counts each row in proportion to ${r.weights} (weighted least squares); the elasticities are at weighted means. Rows with a zero, negative or blank weight are left out and counted. Weights that follow the spread of the errors make the fit more precise; weights chosen for another reason change what the average means.` });
  }
  return out;
}

/** What an instrument must satisfy, and what is on offer (pane text). */
export function instrumentParagraph(price: string, cost: string, registered: boolean): Paragraph {
  return {
    heading: "Prices that react to demand: an instrument",
    text: `${price} may be set in response to demand (raised after strong weeks), which biases its elasticity. A cost column such as ${cost} can serve as an instrument for ${price} if it satisfies two conditions: relevance — it moves ${price} (the first-stage F says how strongly; below about 10 reads as weak, Staiger and Stock 1997, a rule of thumb) — and no direct effect on demand: it changes sales only through ${price}. No test can prove the second condition; it is an argument about the business (a cost that also moves rivals' prices or the quality of the product breaks it). ${registered ? `Choose ${cost} under "Instrument for the price" and check again to write estimator=2sls; a table then compares least squares and 2SLS.` : "Two-stage least squares (estimator=2sls) is not in this build of the functions, so it is not offered."}`,
  };
}
