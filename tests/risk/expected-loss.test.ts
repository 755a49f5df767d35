import { describe, expect, it } from "vitest";
import { computeExpectedLoss } from "@/lib/risk/expected-loss";

// Formula from DESIGN.md §4: EL = p·E.
describe("expected loss of an alert", () => {
  it("matches hand-worked examples", () => {
    // p = 0.2, E = 8500 → 1700.
    expect(computeExpectedLoss({ fraudProbability: 0.2, exposureMinor: 8_500 })).toBeCloseTo(1_700, 9);
    // p = 0.045, E = 1299.35 → 58.47075 (full precision; stored as 58).
    const el = computeExpectedLoss({ fraudProbability: 0.045, exposureMinor: 1_299.35 });
    expect(el).toBeCloseTo(58.47075, 9);
    expect(Math.round(el)).toBe(58);
    // Certain fraud loses the whole exposure; certain genuine loses nothing.
    expect(computeExpectedLoss({ fraudProbability: 1, exposureMinor: 4_000 })).toBe(4_000);
    expect(computeExpectedLoss({ fraudProbability: 0, exposureMinor: 4_000 })).toBe(0);
  });

  it("rejects probabilities outside [0, 1] and negative or non-finite exposure", () => {
    for (const input of [
      { fraudProbability: 1.01, exposureMinor: 100 },
      { fraudProbability: -0.1, exposureMinor: 100 },
      { fraudProbability: Number.NaN, exposureMinor: 100 },
      { fraudProbability: 0.5, exposureMinor: -1 },
      { fraudProbability: 0.5, exposureMinor: Number.POSITIVE_INFINITY },
    ]) {
      expect(() => computeExpectedLoss(input)).toThrow(RangeError);
    }
  });
});
