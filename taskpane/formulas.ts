/**
 * The block of ELX formulas the pane writes into the sheet: a title, then for each function a label
 * row, the formula, and room for its spilled result, then a caution line. Pure: the pane measures
 * each result's size (by calling the same function through the shared runtime) and this module lays
 * the block out.
 */
import type { FormulaBlock, BlockCell } from "./host";

export interface BlockItem {
  /** Label written above the formula. */
  label: string;
  /** Function id without namespace: FIT, ELASTICITIES, … */
  id: string;
  /** Extra arguments between x and the options text, already written as formula text. */
  extra?: string[];
  /** Options text of this formula when it differs from the block's (windows and breaks take their own). */
  options?: string;
  /** Rows and columns to keep free for the result (the pane takes the shape the function returns for these columns and options, also when it returns an error today). */
  height: number;
  width: number;
}

export interface BlockSpec {
  /** Absolute, sheet-qualified addresses, e.g. Sales!$C$1:$C$1249. */
  y: string;
  x: string;
  options: string;
  title: string;
  items: BlockItem[];
}

/** The caution written under every block: associations, not causes; prices react to demand; the decision stays with the analyst. */
export const CAUTION_LINE =
  "Caution: these are associations, not causes; prices often respond to demand; results depend on the sample and the data's quality; decisions stay with the analyst and their organisation's review.";

/** Text as a formula string literal ("" doubles a quote). */
export function stringLiteral(text: string): string {
  return `"${text.replace(/"/g, '""')}"`;
}

/** One cell formula: =ELX.ID(y, x, extra…, "options"). */
export function formulaText(id: string, y: string, x: string, options: string, extra: string[] = []): string {
  const args = [y, x, ...extra];
  if (options.trim() !== "") args.push(stringLiteral(options));
  return `=ELX.${id}(${args.join(", ")})`;
}

/**
 * Lays out the block.
 * @example buildBlock({ y: "S!$C$1:$C$9", x: "S!$D$1:$D$9", options: "", title: "t", items: [{ label: "Fit", id: "FIT", height: 3, width: 8 }] })
 *   // cells: title at (0,0), "Fit" at (2,0), the formula at (3,0); height 8, width 8
 */
export function buildBlock(spec: BlockSpec): FormulaBlock {
  const cells: BlockCell[] = [{ row: 0, column: 0, content: spec.title }];
  let row = 2;
  let width = 1;
  for (const item of spec.items) {
    cells.push({ row, column: 0, content: item.label });
    cells.push({ row: row + 1, column: 0, content: formulaText(item.id, spec.y, spec.x, item.options ?? spec.options, item.extra) });
    row += 1 + Math.max(1, item.height) + 1;
    width = Math.max(width, item.width);
  }
  cells.push({ row, column: 0, content: CAUTION_LINE });
  return { height: row + 1, width, cells };
}
