import { assertMinorUnits, assertProbability } from "./argument-checks";

export interface ExposureInput {
  /** Transaction amount in integer minor units (cents, pence). */
  amountMinor: number;
  /** Share of a fraudulent amount expected to come back for the alert's channel (chargeback, recall), in [0, 1]. */
  recoveryRate: number;
  /** Fixed cost of a confirmed fraud in integer minor units: card reissue, handling. */
  fixedCostMinor: number;
}

/**
 * Money a fraudulent alert would cost: E = amount·(1 − r) + f (DESIGN.md §4).
 *
 * Returned in minor units at full precision (0.35 × 1999 is not whole); callers round with
 * Math.round only when they store the number, so that rounding happens once, at the edge.
 */
export function computeExposure({ amountMinor, recoveryRate, fixedCostMinor }: ExposureInput): number {
  assertMinorUnits(amountMinor, "amountMinor");
  assertProbability(recoveryRate, "recoveryRate");
  assertMinorUnits(fixedCostMinor, "fixedCostMinor");
  return amountMinor * (1 - recoveryRate) + fixedCostMinor;
}
