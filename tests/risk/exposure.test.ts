import { describe, expect, it } from "vitest";
import { computeExposure } from "@/lib/risk/exposure";

// Formula from DESIGN.md §4: E = amount·(1 − r) + f, amounts in integer minor units.
describe("exposure of an alert", () => {
  it("matches hand-worked examples", () => {
    // 100.00 at 30 % recovery plus 15.00 fixed cost: 10000 × 0.7 + 1500 = 7000 + 1500 = 8500.
    expect(computeExposure({ amountMinor: 10_000, recoveryRate: 0.3, fixedCostMinor: 1_500 })).toBeCloseTo(8_500, 9);
    // No recovery: the whole amount plus the fixed cost, 2500 + 1500 = 4000.
    expect(computeExposure({ amountMinor: 2_500, recoveryRate: 0, fixedCostMinor: 1_500 })).toBe(4_000);
    // Full recovery: only the fixed cost remains.
    expect(computeExposure({ amountMinor: 987_654, recoveryRate: 1, fixedCostMinor: 1_500 })).toBe(1_500);
  });

  it("keeps full precision and leaves rounding to whoever stores it", () => {
    // 19.99 at 35 % recovery: 1999 × 0.65 = 1299.35 minor units, stored as Math.round → 1299.
    const exposure = computeExposure({ amountMinor: 1_999, recoveryRate: 0.35, fixedCostMinor: 0 });
    expect(exposure).toBeCloseTo(1_299.35, 9);
    expect(Math.round(exposure)).toBe(1_299);
  });

  it("rejects fractional or negative minor units and recovery rates outside [0, 1]", () => {
    const base = { amountMinor: 10_000, recoveryRate: 0.3, fixedCostMinor: 1_500 };
    for (const override of [
      { amountMinor: 100.5 },
      { amountMinor: -1 },
      { amountMinor: Number.NaN },
      { amountMinor: 2 ** 53 },
      { fixedCostMinor: 0.1 },
      { fixedCostMinor: -5 },
      { recoveryRate: -0.01 },
      { recoveryRate: 1.2 },
      { recoveryRate: Number.NaN },
    ]) {
      expect(() => computeExposure({ ...base, ...override })).toThrow(RangeError);
    }
  });
});
