import { describe, expect, it } from "vitest";
import { Z_95, wilsonInterval } from "@/lib/metrics";

describe("Wilson score interval", () => {
  it("reproduces Newcombe's worked examples for the score interval without continuity correction", () => {
    // Newcombe (1998), "Two-sided confidence intervals for the single proportion: comparison of
    // seven methods", Statistics in Medicine 17:857–872, Table I, method 3.
    // Values from memory of Newcombe 1998 Table I (4 decimals).
    const cases: [number, number, number, number][] = [
      [81, 263, 0.2553, 0.3662],
      [15, 148, 0.0624, 0.1605],
      [0, 20, 0.0, 0.1611],
      [1, 29, 0.0061, 0.1718],
    ];
    for (const [k, n, lower, upper] of cases) {
      const ci = wilsonInterval(k, n);
      expect(ci.lower).toBeCloseTo(lower, 4);
      expect(ci.upper).toBeCloseTo(upper, 4);
    }
  });

  it("agrees with R's prop.test (no correction) as recorded in SciPy's own tests", () => {
    // scipy/stats/tests/test_morestats.py lines 958–982 (SciPy 1.10.1): "Expected results are from
    // the prop.test function in R 3.6.2", k successes of n = 10, two-sided, correct = FALSE.
    // Line 963: k = 3, 95%
    expect(wilsonInterval(3, 10).lower).toBeCloseTo(0.1077913, 7);
    expect(wilsonInterval(3, 10).upper).toBeCloseTo(0.6032219, 7);
    // Line 964: k = 3, 99%; z = 2.5758293035489004 is scipy.special.ndtri(0.995).
    const z99 = 2.5758293035489004;
    expect(wilsonInterval(3, 10, z99).lower).toBeCloseTo(0.07956632, 7);
    expect(wilsonInterval(3, 10, z99).upper).toBeCloseTo(0.6799753, 7);
    // Line 975: k = 0
    expect(wilsonInterval(0, 10)).toEqual({ lower: 0, upper: expect.closeTo(0.2775328, 7) });
    // Line 982: k = 10
    expect(wilsonInterval(10, 10)).toEqual({ lower: expect.closeTo(0.7224672, 7), upper: 1 });
  });

  it("uses the two-sided 95% normal quantile by default", () => {
    // scipy.special.ndtri(0.975) printed by /usr/bin/python3 (SciPy 1.10.1): 1.959963984540054
    expect(Z_95).toBe(1.959963984540054);
    expect(wilsonInterval(7, 40)).toEqual(wilsonInterval(7, 40, Z_95));
  });

  it("says nothing is known when there were no trials", () => {
    expect(wilsonInterval(0, 0)).toEqual({ lower: 0, upper: 1 });
  });

  it("always contains the observed proportion and stays inside [0, 1]", () => {
    for (let n = 1; n <= 60; n++) {
      for (let k = 0; k <= n; k++) {
        const { lower, upper } = wilsonInterval(k, n);
        expect(lower).toBeGreaterThanOrEqual(0);
        expect(upper).toBeLessThanOrEqual(1);
        expect(lower).toBeLessThanOrEqual(k / n);
        expect(upper).toBeGreaterThanOrEqual(k / n);
      }
    }
  });

  it("narrows as the same proportion is seen on more alerts", () => {
    const small = wilsonInterval(3, 10);
    const large = wilsonInterval(300, 1000);
    expect(large.upper - large.lower).toBeLessThan(small.upper - small.lower);
  });

  it("rejects counts that cannot happen", () => {
    expect(() => wilsonInterval(5, 4)).toThrow(RangeError);
    expect(() => wilsonInterval(-1, 4)).toThrow(/successes must be a non-negative integer/);
    expect(() => wilsonInterval(1.5, 4)).toThrow(RangeError);
    expect(() => wilsonInterval(1, Number.NaN)).toThrow(RangeError);
    expect(() => wilsonInterval(1, 4, 0)).toThrow(/z must be/);
  });
});
