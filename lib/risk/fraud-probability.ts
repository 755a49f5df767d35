import { assertFinite, assertProbability } from "./argument-checks";
import { type IsotonicCalibrationMap, predictIsotonic } from "./isotonic-calibration";
import { correctUndersampledScore } from "./undersampling-correction";

/** `probability`: a supervised classifier's output in [0, 1]. `anomaly`: any real-valued detector score. */
export type ScoreKind = "probability" | "anomaly";

export const SCORE_KINDS: readonly ScoreKind[] = ["probability", "anomaly"];

export type ProbabilitySource = "calibration_map" | "corrected_score" | "prior_hit_rate";

export interface FraudProbabilityInput {
  scoreKind: ScoreKind;
  score: number;
  /** β of the model version; 1 when its training data was not undersampled. */
  negativeSamplingRate: number;
  /** Share of the model version's alerts expected to be fraud; needed for anomaly kinds until a map exists. */
  priorHitRate: number | null;
  /** The model version's current map, or null before enough labels exist. Validate it once on load with assertIsotonicCalibrationMap. */
  calibrationMap: IsotonicCalibrationMap | null;
}

export interface FraudProbability {
  probability: number;
  /** True only when the probability comes from a map fitted on this model version's own outcomes. */
  calibrated: boolean;
  source: ProbabilitySource;
}

/**
 * The fraud probability used for expected loss (DESIGN.md §4, Probability of fraud for an alert).
 *
 * A calibration map fitted on real outcomes wins for every score kind. Without one, a probability
 * score is only corrected for undersampling, which fixes the class prior but not a model's other
 * miscalibration; an anomaly score has no probabilistic meaning at all, so every alert of the model
 * version gets the same prior hit rate and the queue falls back to ordering by exposure. Both
 * fallbacks are reported as uncalibrated so the screen can say so.
 */
export function fraudProbability({
  scoreKind,
  score,
  negativeSamplingRate,
  priorHitRate,
  calibrationMap,
}: FraudProbabilityInput): FraudProbability {
  if (scoreKind !== "probability" && scoreKind !== "anomaly") {
    throw new RangeError(`scoreKind must be one of ${SCORE_KINDS.join(", ")}, got ${String(scoreKind)}`);
  }
  assertFinite(score, "score");
  if (scoreKind === "probability") assertProbability(score, "score");
  // β and the prior are model-version settings; a bad one is a configuration error even on a path
  // that does not use it today, so it is reported as soon as it is seen.
  assertFinite(negativeSamplingRate, "negativeSamplingRate");
  if (negativeSamplingRate <= 0 || negativeSamplingRate > 1) {
    throw new RangeError(`negativeSamplingRate must be in (0, 1], got ${negativeSamplingRate}`);
  }
  if (priorHitRate !== null) assertProbability(priorHitRate, "priorHitRate");

  if (calibrationMap !== null) {
    return { probability: predictIsotonic(calibrationMap, score), calibrated: true, source: "calibration_map" };
  }
  if (scoreKind === "probability") {
    return {
      probability: correctUndersampledScore({ score, negativeSamplingRate }),
      calibrated: false,
      source: "corrected_score",
    };
  }
  if (priorHitRate === null) {
    throw new RangeError("an anomaly-score model version needs a prior hit rate until it has a calibration map");
  }
  return { probability: priorHitRate, calibrated: false, source: "prior_hit_rate" };
}
