import { assertCount } from "./argument-checks";

export interface CalibrationReadinessInput {
  /** Labelled (score, outcome) pairs usable for fitting: confirmed_fraud plus legitimate. */
  labelCount: number;
  /** Pairs labelled confirmed_fraud. */
  positives: number;
  /** Pairs labelled legitimate. */
  negatives: number;
  /** Minimum number of pairs before a map may replace the fallback. */
  minLabels: number;
  /** Minimum number of pairs of each class; at least 1. */
  minPerClass: number;
}

/**
 * Whether a model version has enough outcomes for an isotonic map to be trusted. Isotonic
 * regression has no parametric form to lean on, so with few labels it follows noise in steps
 * (Niculescu-Mizil & Caruana 2005 found it overfits small calibration sets; from memory);
 * with no example of one class it predicts a constant 0 or 1 for every alert, which would silently
 * empty or flood the queue. Hence both a total and a per-class minimum.
 */
export function hasEnoughLabelsToCalibrate({
  labelCount,
  positives,
  negatives,
  minLabels,
  minPerClass,
}: CalibrationReadinessInput): boolean {
  assertCount(labelCount, "labelCount");
  assertCount(positives, "positives");
  assertCount(negatives, "negatives");
  assertCount(minLabels, "minLabels");
  assertCount(minPerClass, "minPerClass");
  if (positives + negatives !== labelCount) {
    throw new RangeError(
      `labelCount must equal positives + negatives (inconclusive outcomes are not labels for calibration), got ${labelCount} ≠ ${positives} + ${negatives}`,
    );
  }
  if (minPerClass < 1) {
    throw new RangeError("minPerClass must be at least 1: a map fitted on one class predicts a constant");
  }
  return labelCount >= minLabels && positives >= minPerClass && negatives >= minPerClass;
}
