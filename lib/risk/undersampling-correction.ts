import { assertFinite, assertProbability } from "./argument-checks";

export interface UndersamplingCorrectionInput {
  /** Probability output by a model trained on undersampled data, in [0, 1]. */
  score: number;
  /**
   * β: the probability that a negative (genuine) example was kept when the training set was
   * undersampled. 1 means no undersampling.
   */
  negativeSamplingRate: number;
}

/**
 * Undoes the shift in class prior caused by training on undersampled negatives:
 * p = β·s / (β·s − s + 1) (Dal Pozzolo, Caelen, Johnson, Bontempi 2015).
 *
 * A model that saw only a fraction β of the genuine transactions believes fraud is more common than
 * it is; its raw score overstates the fraud probability, and expected loss would overstate with it.
 */
export function correctUndersampledScore({ score, negativeSamplingRate: beta }: UndersamplingCorrectionInput): number {
  assertFinite(beta, "negativeSamplingRate");
  if (beta <= 0 || beta > 1) {
    // β = 0 would mean no negatives were kept at all; no model trained that way can be corrected.
    throw new RangeError(`negativeSamplingRate must be in (0, 1], got ${beta}`);
  }
  assertProbability(score, "score");
  if (beta === 1) return score;
  // Same value as β·s / (β·s − s + 1), grouped as β·s + (1 − s): both terms are >= 0, so nothing
  // cancels, the denominator is >= β > 0, and the quotient cannot round above 1 (written the other
  // way, s = 1 and β = 0.1 give 1.0000000000000002).
  const kept = beta * score;
  return kept / (kept + (1 - score));
}
