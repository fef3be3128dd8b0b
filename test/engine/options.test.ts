/**
 * Option combinations that would otherwise be silently ignored are refused with what to do
 * (interface rules of README's options table; no statistical number here).
 */
import { parseOptions } from "../../functions/engine/options";
import { seTypeOf } from "../../functions/engine/estimators";
import { ElxProblem } from "../../functions/engine/problems";

function message(f: () => unknown): string {
  try {
    f();
  } catch (e) {
    if (e instanceof ElxProblem) return e.message;
    throw e;
  }
  throw new Error("no problem was raised");
}

describe("cluster= and se=", () => {
  it("cluster= alone sets se=cluster", () => {
    expect(seTypeOf(parseOptions("cluster=Store"))).toBe("cluster");
  });

  it("cluster= beside another se= is refused, naming both", () => {
    expect(message(() => parseOptions("se=HC3; cluster=Branch"))).toBe("cluster=Branch asks for errors clustered by that column, but se=HC3 is also given: use se=cluster (or leave se= out), or remove cluster=");
    expect(message(() => parseOptions("cluster=Store,Week; se=DK"))).toMatch(/^cluster=Store,Week asks for errors clustered by those columns, but se=DK/);
  });

  it("se=cluster with cluster= is accepted", () => {
    const o = parseOptions("se=cluster; cluster=Store");
    expect([o.se, o.cluster]).toEqual(["cluster", ["Store"]]);
  });
});
