// Pure metric functions for the feedback-loop and workload screens (DESIGN.md §4). No database,
// no clock, no I/O: callers aggregate in PostgreSQL and pass counts or arrays in.
export { Z_95, wilsonInterval, type Interval } from "./wilson-interval";
export { rate, realizedPrecision, type Rate, type RealizedPrecision } from "./rate";
export { observedOverExpected } from "./case-mix";
export { precisionAtK, type AlertOfDay, type PrecisionAtK } from "./precision-at-k";
export { falseClearRate } from "./false-clear-rate";
export { cohenKappa } from "./cohen-kappa";
export {
  reliabilityTable,
  brierScore,
  expectedCalibrationError,
  type ReliabilityBin,
} from "./calibration-report";
export { rocAuc, averagePrecision } from "./ranking";
export {
  populationStabilityIndex,
  PSI_EMPTY_BIN_SHARE,
  PSI_WATCH,
  PSI_ACT,
  type PopulationStability,
  type PsiBin,
} from "./population-stability";
export { median, timeToClearHours, projectedBreaches } from "./workload";
