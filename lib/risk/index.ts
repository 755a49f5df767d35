// The risk formulas of DESIGN.md §4: pure functions, no database, no clock, no I/O.
export { correctUndersampledScore, type UndersamplingCorrectionInput } from "./undersampling-correction";
export {
  assertIsotonicCalibrationMap,
  fitIsotonicCalibration,
  fitIsotonicRegression,
  predictIsotonic,
  type CalibrationPoint,
  type IsotonicCalibrationMap,
} from "./isotonic-calibration";
export { hasEnoughLabelsToCalibrate, type CalibrationReadinessInput } from "./calibration-readiness";
export {
  fraudProbability,
  SCORE_KINDS,
  type FraudProbability,
  type FraudProbabilityInput,
  type ProbabilitySource,
  type ScoreKind,
} from "./fraud-probability";
export { computeExposure, type ExposureInput } from "./exposure";
export { computeExpectedLoss, type ExpectedLossInput } from "./expected-loss";
export {
  computeReviewCost,
  computeValueOfReview,
  shouldReview,
  type ReviewCostInput,
  type ValueOfReviewInput,
} from "./value-of-review";
export { assertSlaBands, dueAt, slaHoursForExpectedLoss, type SlaBand } from "./due-time";
export { priorityValue, QUEUE_ORDER_MODES, type PriorityInput, type QueueOrderMode } from "./queue-priority";
export { compareQueueOrder, type QueueOrderEntry } from "./queue-order";
