import { appendColumns, columnFit, equalShares } from "../../functions/engine/columnFit";
import { applyPartOp, newPartState } from "../../functions/engine/splitLeastSquares";
import type { PartOp } from "../../functions/engine/columnFitTypes";
import { Rng } from "../simulation/rng";
test("prof", async () => {
  const n = 100000, k = 10;
  const g = new Rng(1);
  const x = Array.from({ length: k - 1 }, () => Float64Array.from({ length: n }, () => 1 + g.next()));
  const y = Float64Array.from({ length: n }, (_, i) => Math.exp(x.reduce((s, c) => s + 0.3 * Math.log(c[i]), 1) + 0.1 * g.normal()));
  const sp = { yName: "y", xNames: x.map((_, j) => `x${j}`), form: "log-log" as const, zeros: "stop" as const, se: "HC3" as const, level: 0.95, intercept: true };
  const times: Record<string, number> = {};
  const states = [newPartState()];
  const exec = { parts: 1, async send(p: number, op: PartOp) { const t = performance.now(); const a = applyPartOp(states[p], op).answer; times[op.kind] = (times[op.kind] ?? 0) + performance.now() - t; return a; } };
  await appendColumns(exec, y, x, equalShares(n, 1), 65536);
  const t0 = performance.now();
  await columnFit(exec, sp);
  console.log(performance.now() - t0, JSON.stringify(times));
});
