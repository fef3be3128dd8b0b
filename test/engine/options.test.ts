/**
 * How cluster= and se= combine (interface rules of README's options table; no statistical number here).
 */
import { parseOptions } from "../../functions/engine/options";
import { seTypeOf } from "../../functions/engine/estimators";

describe("cluster= and se=", () => {
  it("cluster= alone sets se=cluster", () => {
    expect(seTypeOf(parseOptions("cluster=Store"))).toBe("cluster");
  });

  it("cluster= beside another se= keeps that se (the column stays a role column, not a regressor; the header names the errors)", () => {
    const o = parseOptions("se=HC3; cluster=Branch");
    expect(seTypeOf(o)).toBe("HC3");
    expect(o.cluster).toEqual(["Branch"]);
  });

  it("se=cluster with cluster= is accepted", () => {
    const o = parseOptions("se=cluster; cluster=Store");
    expect([o.se, o.cluster]).toEqual(["cluster", ["Store"]]);
  });
});
