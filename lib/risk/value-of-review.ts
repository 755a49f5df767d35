import { assertNonNegative } from "./argument-checks";

export interface ReviewCostInput {
  /** Expected analyst time for the alert, in minutes. */
  handlingMinutes: number;
  /** Loaded cost of one analyst minute, in minor units (may be fractional). */
  costPerMinuteMinor: number;
}

/** Review cost c = handling minutes × cost per minute, in minor units, full precision. */
export function computeReviewCost({ handlingMinutes, costPerMinuteMinor }: ReviewCostInput): number {
  assertNonNegative(handlingMinutes, "handlingMinutes");
  assertNonNegative(costPerMinuteMinor, "costPerMinuteMinor");
  return handlingMinutes * costPerMinuteMinor;
}

export interface ValueOfReviewInput {
  /** Expected loss in minor units, full precision (see computeExpectedLoss). */
  expectedLossMinor: number;
  /** Review cost in minor units, full precision (see computeReviewCost). */
  reviewCostMinor: number;
}

/**
 * Value of review V = EL − c in minor units; negative when reviewing costs more than it is expected
 * to save. Full precision; callers round with Math.round when storing.
 */
export function computeValueOfReview({ expectedLossMinor, reviewCostMinor }: ValueOfReviewInput): number {
  assertNonNegative(expectedLossMinor, "expectedLossMinor");
  assertNonNegative(reviewCostMinor, "reviewCostMinor");
  return expectedLossMinor - reviewCostMinor;
}

/**
 * Expected-cost decision rule (Elkan 2001, "The Foundations of Cost-Sensitive Learning"): review
 * when doing so has the lower expected cost, i.e. when V > 0. At V = 0 both choices cost the same
 * and we do not spend analyst time on a coin toss.
 */
export function shouldReview(input: ValueOfReviewInput): boolean {
  return computeValueOfReview(input) > 0;
}
