/**
 * The pane's smearing note: Duan's factor f multiplies exp(fitted log y) up to the mean, so
 * exp(fitted log y) alone is 100(1 − 1/f)% below the mean and the factor raises it by 100(f − 1)%.
 * Arithmetic from the definition of the factor (Duan 1983, JASA 78); no data.
 */
import { smearingNote } from "../../taskpane/assumptions";

describe("smearingNote", () => {
  it("f = 1.0682: 6.38% below the mean, raised by 6.82% (not 'understates by 6.82%')", () => {
    const text = smearingNote(1.0682);
    // 1 − 1/1.0682 = 0.063845…, 1.0682 − 1 = 0.0682
    expect(text).toBe("Duan's smearing factor is 1.07: exp(fitted log y) alone is about 6.38% below the mean of y here; multiplying by the factor raises it by 6.82% to the mean.");
    expect(text).not.toMatch(/understates/);
  });

  it("a factor below 1 (possible without an intercept) reads as above the mean", () => {
    // 1 − 1/0.95 = −0.0526…, 0.95 − 1 = −0.05
    expect(smearingNote(0.95)).toBe("Duan's smearing factor is 0.95: exp(fitted log y) alone is about 5.26% above the mean of y here; multiplying by the factor lowers it by 5% to the mean.");
  });

  it("a factor of exactly 1 needs no correction", () => {
    expect(smearingNote(1)).toMatch(/already predicts the mean/);
  });
});
