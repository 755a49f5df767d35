import { describe, expect, it } from "vitest";
import { observedOverExpected } from "@/lib/metrics";

describe("case-mix-adjusted hit rate", () => {
  it("divides the fraud found by the fraud the calibrated probabilities expected", () => {
    // Hand-worked: a reviewer closed alerts with calibrated p = 0.9, 0.8, 0.5, 0.3 (expected 2.5
    // fraud) and confirmed 2 → 2 / 2.5 = 0.8.
    const expected = 0.9 + 0.8 + 0.5 + 0.3;
    expect(observedOverExpected({ observedFraud: 2, expectedFraud: expected })).toBeCloseTo(0.8, 12);
  });

  it("ranks a reviewer with easy alerts above one with hard alerts when both match their expectation", () => {
    // Hand-worked: A got risky alerts (expected 8, found 8), B got low-risk alerts (expected 2,
    // found 2). Raw hit counts say A is 4× better; adjusted for case mix they are equal.
    const a = observedOverExpected({ observedFraud: 8, expectedFraud: 8 });
    const b = observedOverExpected({ observedFraud: 2, expectedFraud: 2 });
    expect(a).toBe(1);
    expect(b).toBe(1);
  });

  it("has no value when nothing was expected", () => {
    expect(observedOverExpected({ observedFraud: 0, expectedFraud: 0 })).toBeNull();
    expect(observedOverExpected({ observedFraud: 1, expectedFraud: 0 })).toBeNull();
  });

  it("rejects impossible inputs", () => {
    expect(() => observedOverExpected({ observedFraud: -1, expectedFraud: 1 })).toThrow(RangeError);
    expect(() => observedOverExpected({ observedFraud: 1, expectedFraud: -0.5 })).toThrow(/expectedFraud/);
    expect(() => observedOverExpected({ observedFraud: 1, expectedFraud: Number.NaN })).toThrow(RangeError);
  });
});
