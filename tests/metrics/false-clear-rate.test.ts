import { describe, expect, it } from "vitest";
import { falseClearRate, wilsonInterval } from "@/lib/metrics";

describe("false-clear rate", () => {
  it("is the share of cleared alerts that later proved to be fraud, with its interval", () => {
    // Interval: Newcombe (1998) Table I, method 3, 1/29 → 0.0061–0.1718 (from memory of Newcombe
    // 1998 Table I).
    const r = falseClearRate({ falseClears: 1, clearedLegitimate: 29 });
    expect(r.value).toBeCloseTo(1 / 29, 12);
    expect(r.lower).toBeCloseTo(0.0061, 4);
    expect(r.upper).toBeCloseTo(0.1718, 4);
  });

  it("shows a zero rate with a non-zero upper bound", () => {
    // Newcombe (1998) Table I, method 3, 0/20 → 0–0.1611 (from memory of Newcombe 1998 Table I).
    const r = falseClearRate({ falseClears: 0, clearedLegitimate: 20 });
    expect(r.value).toBe(0);
    expect(r.lower).toBe(0);
    expect(r.upper).toBeCloseTo(0.1611, 4);
    expect(r).toMatchObject(wilsonInterval(0, 20));
  });

  it("rejects more false clears than cleared alerts", () => {
    expect(() => falseClearRate({ falseClears: 3, clearedLegitimate: 2 })).toThrow(/cannot exceed/);
  });
});
