/**
 * The pane's role columns: key detection (text, or whole numbers with few distinct values, never a
 * 0/1 column), the option words the choices write, and the wording of what they assume. Rules of
 * the pane itself (taskpane/roles.ts); the cluster threshold of about 30 is common practice
 * (Cameron and Miller 2015), tested here only as the text the pane shows.
 */
import { detectRoles, instrumentParagraph, roleAssumptions, roleColumns, roleOptions } from "../../taskpane/roles";
import type { RangeSnapshot } from "../../taskpane/host";

function snapshot(values: unknown[][]): RangeSnapshot {
  return { values, types: values.map((r) => r.map((v) => (typeof v === "number" ? "Double" : typeof v === "string" ? "String" : "Empty"))), address: "S!D1:H9", requested: "S!D1:H9", clipped: false, area: { top: 1, left: 4, bottom: 9, right: 8 } } as unknown as RangeSnapshot;
}

const rows: unknown[][] = [["Price", "Promo", "Branch", "Week", "FlourCost"]];
for (let i = 0; i < 24; i++) rows.push([2 + i / 10, i % 2, ["North", "South", "East"][i % 3], 1 + (i % 4), 100 + i]);

describe("detectRoles", () => {
  it("finds a text key and a whole-number key with few values, not the 0/1 column", () => {
    const r = detectRoles(snapshot(rows));
    expect(r.keys).toEqual([{ name: "Branch", kind: "text", distinct: 3 }, { name: "Week", kind: "whole numbers", distinct: 4, middle: 3 }]);
    expect(r.numeric).toEqual(["Price", "FlourCost"]);
    expect(r.price).toBe("Price");
    expect(r.costs).toEqual(["FlourCost"]);
  });

  it("writes the role options: cluster, the leftover whole-number key in time=, the 2SLS words", () => {
    const r = detectRoles(snapshot(rows));
    const c = { absorb: "Branch", cluster: "Branch", weights: "", instrument: "FlourCost" };
    expect(roleOptions(c, r)).toEqual(["absorb=Branch", "cluster=Branch", "time=Week", "estimator=2sls", "endogenous=Price", "instruments=FlourCost"]);
    expect([...roleColumns(c, r)]).toEqual(["Branch", "Week", "FlourCost"]);
  });
});

describe("what the roles assume", () => {
  it("fixed effects remove only differences that do not change over time; few clusters are unreliable", () => {
    const r = detectRoles(snapshot(rows));
    const text = roleAssumptions({ absorb: "Branch", cluster: "Branch", weights: "", instrument: "" }, r).map((p) => p.text).join(" ");
    expect(text).toContain("removes only differences between them that do not change over time");
    expect(text).toContain("Here G = 3. With fewer than about 30 clusters these errors are themselves unreliable");
    expect(text).toContain("Cameron and Miller 2015");
  });

  it("an instrument: relevance and no direct effect on demand, which no test can prove", () => {
    const t = instrumentParagraph("Price", "FlourCost", false).text;
    expect(t).toContain("relevance — it moves Price");
    expect(t).toContain("no direct effect on demand");
    expect(t).toContain("No test can prove the second condition");
    expect(t).toContain("not in this build");
  });
});
