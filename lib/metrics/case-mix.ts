import { assertCount, assertNonNegative } from "./input-checks";

/**
 * Case-mix-adjusted hit rate of a reviewer: fraud they confirmed divided by the fraud expected from
 * the calibrated probabilities of the alerts they closed (the sum of p). A reviewer handed riskier
 * alerts finds more fraud for that reason alone; dividing by the expectation removes that, so 1.0
 * means "as many as the model predicted for that mix". Null when nothing was expected, because
 * any ratio over zero would be meaningless rather than large.
 */
export function observedOverExpected(input: { observedFraud: number; expectedFraud: number }): number | null {
  const { observedFraud, expectedFraud } = input;
  assertCount(observedFraud, "observedFraud");
  assertNonNegative(expectedFraud, "expectedFraud");
  if (expectedFraud === 0) return null;
  return observedFraud / expectedFraud;
}
