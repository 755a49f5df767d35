import { describe, expect, it } from "vitest";
import { computeReviewCost, computeValueOfReview, shouldReview } from "@/lib/risk/value-of-review";
import { seededRandom } from "./seeded-random";

describe("value of review", () => {
  it("matches hand-worked examples", () => {
    // 6 minutes at 80 minor units a minute: c = 480. With EL = 1700, V = 1700 − 480 = 1220.
    const c = computeReviewCost({ handlingMinutes: 6, costPerMinuteMinor: 80 });
    expect(c).toBe(480);
    expect(computeValueOfReview({ expectedLossMinor: 1_700, reviewCostMinor: c })).toBe(1_220);
    expect(shouldReview({ expectedLossMinor: 1_700, reviewCostMinor: c })).toBe(true);
    // EL = 58.47 against the same 480: V = −421.53, not worth an analyst's time.
    expect(computeValueOfReview({ expectedLossMinor: 58.47075, reviewCostMinor: 480 })).toBeCloseTo(-421.52925, 9);
    expect(shouldReview({ expectedLossMinor: 58.47075, reviewCostMinor: 480 })).toBe(false);
    // Break-even is not a reason to review.
    expect(shouldReview({ expectedLossMinor: 480, reviewCostMinor: 480 })).toBe(false);
  });

  it("reviews exactly when p exceeds Elkan's optimal threshold p* = c / E", () => {
    // Elkan 2001, "The Foundations of Cost-Sensitive Learning", §2 (from memory): predict class 1
    // when P(1|x) > p* = (C10 − C00) / (C10 − C00 + C01 − C11), C(i, j) = cost of acting i when the
    // truth is j. Here acting 1 = review, truth 1 = fraud, and a review stops the loss:
    // C00 = 0, C01 = E (fraud waved through), C10 = c, C11 = c, so p* = c / (c + E − c) = c / E.
    const random = seededRandom(2001);
    for (let i = 0; i < 2000; i++) {
      const exposure = 100 + random() * 1_000_000;
      const reviewCost = random() * exposure;
      const [c00, c01, c10, c11] = [0, exposure, reviewCost, reviewCost];
      const pStar = (c10 - c00) / (c10 - c00 + c01 - c11);
      const above = Math.min(1, pStar * (1 + 1e-6) + 1e-12);
      const below = pStar * (1 - 1e-6);
      expect(shouldReview({ expectedLossMinor: above * exposure, reviewCostMinor: reviewCost })).toBe(true);
      expect(shouldReview({ expectedLossMinor: below * exposure, reviewCostMinor: reviewCost })).toBe(false);
    }
  });

  it("rejects negative or non-finite inputs", () => {
    expect(() => computeReviewCost({ handlingMinutes: -1, costPerMinuteMinor: 80 })).toThrow(RangeError);
    expect(() => computeReviewCost({ handlingMinutes: 6, costPerMinuteMinor: Number.NaN })).toThrow(RangeError);
    expect(() => computeValueOfReview({ expectedLossMinor: -1, reviewCostMinor: 0 })).toThrow(RangeError);
    expect(() => shouldReview({ expectedLossMinor: 10, reviewCostMinor: Number.POSITIVE_INFINITY })).toThrow(RangeError);
  });
});
