/**
 * Through the host's door: FORMCHECK's Box–Cox does not depend on the units of y. With an intercept
 * the profile likelihood of the geometric-mean-scaled transform changes only by a constant when y is
 * multiplied by c (Box and Cox 1964, JRSS B 26: the Jacobian-scaled likelihood is unit-free), so
 * λ̂, its interval, both LR p-values, the PE test and the reading must agree for y, y·10^−8, y·10^8
 * and y·3·10^8. Datasets: R's trees, mtcars, LifeCycleSavings and airquality as stored in
 * test/reference/diagnostics.json (both log-y forms), and the twelve stores of the seeded demo data.
 * R's MASS::boxcox λ̂ for the unscaled data (diagnostics.json, from MASS 7.3) is checked on the
 * rescaled y too.
 */
import * as fs from "fs";
import * as path from "path";
import { call, HostError, loadFunctions } from "../harness/loadFunctions";

const reg = loadFunctions();
const ref = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../reference/diagnostics.json"), "utf8"));
const demo = JSON.parse(fs.readFileSync(path.resolve(__dirname, "../../data/demo.json"), "utf8")) as { columns: string[]; rows: unknown[][] };

interface Set { name: string; y: number[]; yName: string; x: unknown[][]; options: string; lambdaR?: number }

const sets: Set[] = [];
for (const [name, c] of Object.entries<any>(ref.cases)) {
  const ok = (c.data[c.y] as (number | null)[]).map((v, i) => v !== null && c.x.every((n: string) => c.data[n][i] !== null));
  const idx = ok.map((b, i) => (b ? i : -1)).filter((i) => i >= 0);
  for (const form of Object.keys(c.formcheck)) {
    sets.push({
      name: `${name} ${form}`,
      y: idx.map((i) => c.data[c.y][i]),
      yName: c.y,
      x: [c.x, ...idx.map((i) => c.x.map((n: string) => c.data[n][i]))],
      options: `form=${form}`,
      lambdaR: c.formcheck[form].boxcox.lambda_hat,
    });
  }
}
const col = (n: string) => demo.columns.indexOf(n);
for (const store of [...new Set(demo.rows.map((r) => r[col("Store")] as string))]) {
  const rs = demo.rows.filter((r) => r[col("Store")] === store && ["Units", "Price", "Footfall", "Promo", "Income"].every((n) => typeof r[col(n)] === "number") && (r[col("Units")] as number) > 0 && (r[col("Footfall")] as number) > 0);
  sets.push({ name: `demo ${store}`, y: rs.map((r) => r[col("Units")] as number), yName: "Units", x: [["Price", "Footfall", "Promo", "Income"], ...rs.map((r) => ["Price", "Footfall", "Promo", "Income"].map((n) => r[col(n)]))], options: "form=log-log" });
}

const SCALES = [1e-8, 1, 1e8, 3e8];
/** λ̂ is located to 1e-9 and the interval's ends to 1e-11; rescaling moves log y by rounding only. */
const LAMBDA_ABS = 1e-7;
const P_REL = 1e-6;

function formcheck(s: Set, scale: number): unknown[][] {
  const t = call(reg, "FORMCHECK", [[s.yName], ...s.y.map((v) => [v * scale])], s.x, s.options);
  if (t instanceof HostError) throw new Error(`${s.name} ×${scale}: ${t.code} ${t.message}`);
  return t as unknown[][];
}
const row = (t: unknown[][], label: string) => t.find((r) => r[0] === label) as unknown[];
const num = (v: unknown, what: string): number => {
  if (typeof v !== "number" || !Number.isFinite(v)) throw new Error(`${what}: expected a number, got ${JSON.stringify(v)}`);
  return v;
};

describe("Box–Cox in FORMCHECK is invariant to the units of y", () => {
  it(`covers ${sets.length} datasets`, () => expect(sets.length).toBe(20));

  for (const s of sets) {
    it(`${s.name}: λ̂, interval, LR p-values, PE test and reading agree for y × ${SCALES.join(", ")}`, () => {
      const base = formcheck(s, 1);
      for (const scale of SCALES) {
        const t = formcheck(s, scale);
        const where = `${s.name} ×${scale}`;
        for (const label of ["Box–Cox λ̂", "Box–Cox interval lower (95%)", "Box–Cox interval upper (95%)"]) {
          const a = row(t, label)[1];
          const b = row(base, label)[1];
          if (b instanceof HostError) expect((a as HostError).message).toBe(b.message);
          else expect(Math.abs(num(a, `${where} ${label}`) - num(b, label))).toBeLessThanOrEqual(LAMBDA_ABS);
        }
        for (const label of ["Box–Cox LR p-value", "PE test p-value"]) {
          for (const j of [1, 2]) {
            const a = num(row(t, label)[j], `${where} ${label}`);
            const b = num(row(base, label)[j], label);
            expect(Math.abs(a - b)).toBeLessThanOrEqual(Math.max(P_REL * b, 1e-300));
          }
        }
        expect(row(t, "Reading").slice(1)).toEqual(row(base, "Reading").slice(1));
      }
    });
  }

  it("R's MASS::boxcox λ̂ of the unscaled data is also ELX's λ̂ for y × 3·10^8 (the old transform gave other values)", () => {
    for (const s of sets.filter((v) => v.lambdaR !== undefined)) {
      const hat = num(row(formcheck(s, 3e8), "Box–Cox λ̂")[1], s.name);
      expect(Math.abs(hat - (s.lambdaR as number))).toBeLessThanOrEqual(1e-6);
    }
  });
});
