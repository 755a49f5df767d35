import { assertNonNegative, assertProbability } from "./argument-checks";

export interface ExpectedLossInput {
  /** Probability that the alert is fraud, in [0, 1]. */
  fraudProbability: number;
  /** Exposure in minor units, full precision (see computeExposure). */
  exposureMinor: number;
}

/**
 * Expected loss EL = p·E in minor units, full precision; callers round with Math.round when storing.
 * Ranking by EL rather than by score alone puts a likely small fraud behind a less likely large one
 * when the large one puts more money at risk.
 */
export function computeExpectedLoss({ fraudProbability, exposureMinor }: ExpectedLossInput): number {
  assertProbability(fraudProbability, "fraudProbability");
  assertNonNegative(exposureMinor, "exposureMinor");
  return fraudProbability * exposureMinor;
}
