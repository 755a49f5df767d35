import { describe, expect, it } from "vitest";
import { rate, realizedPrecision } from "@/lib/metrics";

describe("rate", () => {
  it("carries the counts and the Wilson interval with the value", () => {
    // Interval values: Newcombe (1998) Table I, method 3, 81/263 → 0.2553–0.3662 (from memory of
    // Newcombe 1998 Table I).
    const r = rate(81, 263);
    expect(r.value).toBeCloseTo(81 / 263, 12);
    expect(r.lower).toBeCloseTo(0.2553, 4);
    expect(r.upper).toBeCloseTo(0.3662, 4);
    expect(r.successes).toBe(81);
    expect(r.trials).toBe(263);
  });

  it("has no value but the full interval when there were no trials", () => {
    expect(rate(0, 0)).toEqual({ value: null, lower: 0, upper: 1, successes: 0, trials: 0 });
  });

  it("rejects more successes than trials", () => {
    expect(() => rate(3, 2)).toThrow(RangeError);
  });
});

describe("realized precision", () => {
  it("is confirmed fraud over fraud plus legitimate, with inconclusive kept apart", () => {
    // Hand-worked: F = 15, L = 133 → 15/148; the interval is Newcombe (1998) Table I, method 3,
    // 15/148 → 0.0624–0.1605 (from memory of Newcombe 1998 Table I).
    const p = realizedPrecision({ confirmedFraud: 15, legitimate: 133, inconclusive: 9 });
    expect(p.value).toBeCloseTo(15 / 148, 12);
    expect(p.trials).toBe(148);
    expect(p.inconclusive).toBe(9);
    expect(p.lower).toBeCloseTo(0.0624, 4);
    expect(p.upper).toBeCloseTo(0.1605, 4);
  });

  it("does not move when only inconclusive outcomes are added", () => {
    const without = realizedPrecision({ confirmedFraud: 4, legitimate: 6, inconclusive: 0 });
    const withMany = realizedPrecision({ confirmedFraud: 4, legitimate: 6, inconclusive: 50 });
    expect(withMany.value).toBe(without.value);
    expect(withMany.lower).toBe(without.lower);
    expect(withMany.upper).toBe(without.upper);
  });

  it("has no value for a window with only inconclusive outcomes", () => {
    expect(realizedPrecision({ confirmedFraud: 0, legitimate: 0, inconclusive: 3 }).value).toBeNull();
  });

  it("rejects negative or fractional counts", () => {
    expect(() => realizedPrecision({ confirmedFraud: -1, legitimate: 2, inconclusive: 0 })).toThrow(RangeError);
    expect(() => realizedPrecision({ confirmedFraud: 1, legitimate: 2.5, inconclusive: 0 })).toThrow(RangeError);
    expect(() => realizedPrecision({ confirmedFraud: 1, legitimate: 2, inconclusive: -3 })).toThrow(/inconclusive/);
  });
});
