/**
 * One fit per segment: the rows of y and x split by a key column (product, store, region).
 *
 * The cells are read once; rows are bucketed by key in one pass (first-appearance order), and each
 * bucket goes through the same transforms and estimator as a fit of that segment's rows alone, so a
 * group's numbers equal ELX.ELASTICITIES on its rows. A group that cannot be fitted keeps its reason
 * and the others still come. Rows with a blank or error key are left out and counted (groupKey).
 */
import { mapped, mappedInt } from "./blocks";
import { readYX, asMatrix, keyText, subsetRoles, type Origin, type RawData } from "./intake";
import { prepare } from "./transforms";
import { estimatorOf } from "./estimators";
import { ElxProblem, count, fail, RowList } from "./problems";
import { modelKey, type Options } from "./options";
import { BoundedCache, hashCells, type Sized } from "./cache";
import type { AnyFit } from "./model";

export interface GroupFit {
  key: string;
  /** Usable rows of the group (before any zeros=drop). */
  rows: number;
  fit: AnyFit | null;
  problem: ElxProblem | null;
}

export interface Groups {
  groups: GroupFit[];
  blankKeys: number;
  xNames: string[];
  yName: string;
}

/**
 * The key of one cell, the one rule by which keys compare (here and for role columns): see keyText
 * in intake.ts. A number is its shortest text, so 1 and "1" are one key (1.5 and "1.50" are not);
 * text is trimmed of spaces at both ends and keeps its case ("North" and "north" are two keys);
 * TRUE/FALSE are "TRUE"/"FALSE". A blank cell, white space only, and an error cell have no key (null):
 * their rows are left out and counted.
 */
export const groupKey = keyText;

/**
 * Splits the rows by key and fits each group.
 * @param keys one column, same height as y (with a header row when y has one)
 */
export function fitGroups(keys: unknown, y: unknown, x: unknown, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): Groups {
  const km = asMatrix(keys, "keys");
  if (km[0].length !== 1) fail(`keys must be one column (it has ${km[0].length}); give the column of product, store or region names`);
  const raw = readYX(y, x, yOrigin, xOrigin, o);
  const start = raw.yHeader ? 1 : 0;
  const keyRows = km.length - start;
  if (keyRows < raw.dataRows || keyRows > raw.dataRows + raw.trailingBlank) {
    fail(`keys has ${count(km.length, "row")} but y has ${raw.dataRows + raw.trailingBlank + start}; give keys the same rows as y`);
  }
  // Bucket the usable rows by key, in first-appearance order over all rows.
  const order: string[] = [];
  const members = new Map<string, number[]>();
  const leftOut = new Map<string, number>();
  const used = new Uint8Array(raw.dataRows);
  for (let w = 0; w < raw.rowNumbers.length; w++) used[raw.rowNumbers[w] - raw.firstRow] = 1;
  const usedPos = new Int32Array(raw.dataRows).fill(-1);
  for (let w = 0; w < raw.rowNumbers.length; w++) usedPos[raw.rowNumbers[w] - raw.firstRow] = w;
  let blankKeys = 0;
  for (let i = 0; i < raw.dataRows; i++) {
    const key = groupKey(km[i + start][0]);
    if (key === null) {
      blankKeys++;
      continue;
    }
    if (!members.has(key)) {
      members.set(key, []);
      leftOut.set(key, 0);
      order.push(key);
    }
    if (used[i]) (members.get(key) as number[]).push(usedPos[i]);
    else leftOut.set(key, (leftOut.get(key) as number) + 1);
  }
  if (order.length === 0) fail("every key is blank or an error: give keys the product, store or region of each row");
  const groups = order.map((key): GroupFit => {
    const idx = members.get(key) as number[];
    const pick = (c: Float64Array) => mapped(idx, (w) => c[w]);
    const sub: RawData = {
      ...raw,
      y: pick(raw.y),
      x: raw.x.map(pick),
      rowNumbers: mappedInt(idx, (w) => raw.rowNumbers[w]),
      roles: subsetRoles(raw.roles, idx),
      leftOutBlank: leftOut.get(key) as number,
      leftOutBlankRows: new RowList(),
      numericTextRows: new RowList(),
      numericTextExample: null,
    };
    try {
      if (idx.length === 0) fail("no usable row: every row of this group has a blank, text or error cell");
      const data = prepare(sub, o);
      const fit = estimatorOf(o).build(data, o) as AnyFit;
      return { key, rows: idx.length, fit, problem: null };
    } catch (e) {
      if (!(e instanceof ElxProblem)) throw e;
      return { key, rows: idx.length, fit: null, problem: e };
    }
  });
  return { groups, blankKeys, xNames: raw.xNames, yName: raw.yName };
}

const groupCache = new BoundedCache<Groups & Sized>(8, 20_000_000);

/** The grouped fits for these cells and model options, from the cache when seen before. */
export function getGroups(keys: unknown, y: unknown, x: unknown, o: Options, yOrigin: Origin | null, xOrigin: Origin | null): Groups {
  const p = (q: Origin | null) => (q ? `${q.row},${q.column}` : "-");
  const key = [hashCells(keys, 3), hashCells(y, 1), hashCells(x, 2), modelKey(o), p(yOrigin), p(xOrigin)].join("/");
  const hit = groupCache.get(key);
  if (hit) return hit;
  const g = fitGroups(keys, y, x, o, yOrigin, xOrigin);
  const size = g.groups.reduce((s, e) => s + (e.fit ? e.fit.n * (e.fit.k + 6) : 1), 0);
  groupCache.set(key, { ...g, size });
  return g;
}
