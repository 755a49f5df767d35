import { describe, expect, it } from "vitest";
import { PSI_ACT, PSI_EMPTY_BIN_SHARE, PSI_WATCH, populationStabilityIndex } from "@/lib/metrics";

describe("population stability index", () => {
  it("computes the hand-worked four-bin example", () => {
    // Hand-worked. Reference 1..8, 4 bins at its quartiles (linear interpolation, h = 7q):
    //   q 0.25 → 2 + 0.75·(3 − 2) = 2.75;  q 0.5 → 4.5;  q 0.75 → 6 + 0.25·(7 − 6) = 6.25.
    // Bins (−∞, 2.75] (2.75, 4.5] (4.5, 6.25] (6.25, ∞): reference shares 1/4 each.
    // Current [1, 2, 3, 5, 7, 8, 8, 8]: shares 2/8, 1/8, 1/8, 4/8.
    // PSI = 0 + 2·(0.125 − 0.25)·ln(0.5) + (0.5 − 0.25)·ln(2) = 0.25·ln 2 + 0.25·ln 2 = 0.5·ln 2
    //     = 0.34657…, past the act line 0.25 (common practice).
    const result = populationStabilityIndex([1, 2, 3, 4, 5, 6, 7, 8], [1, 2, 3, 5, 7, 8, 8, 8], 4);
    expect(result.psi).toBeCloseTo(0.5 * Math.LN2, 12);
    expect(result.level).toBe("act");
    expect(result.bins).toEqual([
      { lower: Number.NEGATIVE_INFINITY, upper: 2.75, expectedShare: 0.25, actualShare: 0.25 },
      { lower: 2.75, upper: 4.5, expectedShare: 0.25, actualShare: 0.125 },
      { lower: 4.5, upper: 6.25, expectedShare: 0.25, actualShare: 0.125 },
      { lower: 6.25, upper: Number.POSITIVE_INFINITY, expectedShare: 0.25, actualShare: 0.5 },
    ]);
  });

  it("floors an empty bin's share at the documented epsilon in the sum only", () => {
    // Hand-worked, 2 bins. Reference [0, 1, 2, 3]: median 1.5; bins (−∞, 1.5] (1.5, ∞), shares ½, ½.
    // Current [0, 0, 0, 0]: shares 1, 0 → 0 replaced by 1e-4 (common practice).
    // PSI = (1 − 0.5)·ln(1/0.5) + (1e-4 − 0.5)·ln(1e-4/0.5) = 0.5·ln 2 + 0.4999·ln 5000 ≈ 4.6043.
    const result = populationStabilityIndex([0, 1, 2, 3], [0, 0, 0, 0], 2);
    expect(PSI_EMPTY_BIN_SHARE).toBe(1e-4);
    expect(result.psi).toBeCloseTo(0.5 * Math.LN2 + 0.4999 * Math.log(5000), 12);
    expect(result.bins[1].actualShare).toBe(0);
    expect(result.level).toBe("act");
  });

  it("collapses duplicate quantile edges when the reference has many tied scores", () => {
    // Hand-worked. Reference eight 0s, then 1 and 2 (sorted, indices 0–9); deciles with h = 9q:
    //   q = 0.1 … 0.7 → h ≤ 6.3, between two 0s → 0 (seven equal edges, collapsed to one)
    //   q = 0.8 → h = 7.2 → 0 + 0.2·(1 − 0) = 0.2;   q = 0.9 → h = 8.1 → 1 + 0.1·(2 − 1) = 1.1
    // Edges {0, 0.2, 1.1}: bins (−∞, 0] (0, 0.2] (0.2, 1.1] (1.1, ∞), reference shares 0.8, 0, 0.1, 0.1.
    const reference = [0, 0, 0, 0, 0, 0, 0, 0, 1, 2];
    const result = populationStabilityIndex(reference, reference);
    const uppers = result.bins.map((b) => b.upper);
    expect(uppers).toHaveLength(4);
    expect(uppers[0]).toBe(0);
    expect(uppers[1]).toBeCloseTo(0.2, 12);
    expect(uppers[2]).toBeCloseTo(1.1, 12);
    expect(uppers[3]).toBe(Number.POSITIVE_INFINITY);
    expect(result.bins.map((b) => b.expectedShare)).toEqual([0.8, 0, 0.1, 0.1]);
    // An empty bin in both windows adds (1e-4 − 1e-4)·ln 1 = 0.
    expect(result.psi).toBe(0);
  });

  it("is zero for identical windows and for the same distribution in a different order", () => {
    const reference = Array.from({ length: 200 }, (_, i) => Math.sin(i) * 10);
    expect(populationStabilityIndex(reference, reference).psi).toBe(0);
    expect(populationStabilityIndex(reference, [...reference].reverse()).psi).toBe(0);
    expect(populationStabilityIndex(reference, reference).level).toBe("stable");
  });

  it("grows as the current window shifts further from the reference", () => {
    const reference = Array.from({ length: 1000 }, (_, i) => (i + 0.5) / 1000);
    const shifted = (by: number) => reference.map((x) => x + by);
    const psis = [0, 0.02, 0.05, 0.1, 0.2, 0.4].map((by) => populationStabilityIndex(reference, shifted(by)).psi);
    for (let i = 1; i < psis.length; i++) expect(psis[i]).toBeGreaterThan(psis[i - 1]);
    expect(psis[0]).toBe(0);
  });

  it("labels the result with the 0.1 and 0.25 lines", () => {
    // 0.1 watch and 0.25 act: common practice in model monitoring, not a published standard.
    expect(PSI_WATCH).toBe(0.1);
    expect(PSI_ACT).toBe(0.25);
    // Hand-worked, 2 bins, reference [0, 1, 2, 3] (shares ½, ½). Current with share s in the first
    // bin: PSI = (s − ½)·ln(2s) + (½ − s)·ln(2(1 − s)).
    //   s = 0.6: 0.1·ln 1.2 − 0.1·ln 0.8 = 0.1·ln 1.5 = 0.0405 → stable
    //   s = 0.7: 0.2·ln(1.4/0.6) = 0.1695 → watch
    //   s = 0.8: 0.3·ln 4 = 0.4159 → act
    const current = (s: number) => [...new Array(s * 10).fill(0), ...new Array(10 - s * 10).fill(3)];
    const at = (s: number) => populationStabilityIndex([0, 1, 2, 3], current(s), 2);
    expect(at(0.6).psi).toBeCloseTo(0.1 * Math.log(1.5), 12);
    expect(at(0.6).level).toBe("stable");
    expect(at(0.7).psi).toBeCloseTo(0.2 * Math.log(1.4 / 0.6), 12);
    expect(at(0.7).level).toBe("watch");
    expect(at(0.8).psi).toBeCloseTo(0.3 * Math.log(4), 12);
    expect(at(0.8).level).toBe("act");
  });

  it("rejects empty windows and scores that are not numbers", () => {
    expect(() => populationStabilityIndex([], [1])).toThrow(/reference/);
    expect(() => populationStabilityIndex([1], [])).toThrow(/current/);
    expect(() => populationStabilityIndex([1, Number.NaN], [1])).toThrow(/reference\[1\]/);
    expect(() => populationStabilityIndex([1], [Number.POSITIVE_INFINITY])).toThrow(RangeError);
    expect(() => populationStabilityIndex([1], [1], 0)).toThrow(/bins/);
  });
});
