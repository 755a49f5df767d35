// The risk fields an alert carries in the queue, derived from its raw fields by the formulas of
// DESIGN.md §4 (lib/risk). Pure: no database, no clock. Ingest calls it on arrival; a calibration
// refit calls it again for the model version's waiting alerts, so both give the same numbers.
import type { Settings } from "@/lib/settings/schemas";
import { expectedHandlingMinutesFor } from "@/lib/settings/expected-handling-minutes";
import {
  computeExpectedLoss,
  computeExposure,
  dueAt as dueTime,
  fraudProbability,
  priorityValue,
  type IsotonicCalibrationMap,
  type ProbabilitySource,
  type ScoreKind,
} from "@/lib/risk";

export interface DeriveRiskFieldsInput {
  alert: {
    /** Transaction amount in integer minor units. */
    amountMinor: number;
    channel: string;
    score: number;
    /** Arrival at Triage Desk: the SLA clock starts here. */
    receivedAt: Date;
  };
  modelVersion: {
    scoreKind: ScoreKind;
    /** β: share of genuine examples kept when the training set was undersampled (1 = none). */
    negativeSamplingRate: number;
    priorHitRate: number | null;
  };
  /** The model version's current map (its latest fit), or null before one exists. Checked once on load. */
  calibrationMap: (IsotonicCalibrationMap & { id: string }) | null;
  settings: Pick<Settings, "costs" | "queue">;
}

export interface DerivedRiskFields {
  probability: number;
  calibrated: boolean;
  probabilitySource: ProbabilitySource;
  calibrationMapId: string | null;
  /** Rounded to whole minor units, as stored. */
  exposureMinor: number;
  /** Rounded to whole minor units, as stored. */
  expectedLossMinor: number;
  dueAt: Date;
  /** The queue's sort key after the overdue override, from the unrounded expected loss. */
  priority: number;
}

/**
 * probability (calibration map, else the undersampling-corrected score, else the prior hit rate),
 * exposure E = amount·(1 − r) + f, expected loss EL = p·E, due time = arrival + SLA hours of EL's
 * band, and the priority of the team's order mode.
 *
 * A channel without a configured recovery rate counts as recovering nothing (r = 0): the largest
 * exposure, so a forgotten setting cannot push an alert down the queue. Amounts are taken as they
 * come; the fixed cost is in the home currency and no exchange rates are applied.
 *
 * The SLA band is chosen from the rounded expected loss, the number people see on the screen, so an
 * alert shown with 50.00 is never due on the timetable of the band below 50.00.
 */
export function deriveRiskFields({ alert, modelVersion, calibrationMap, settings }: DeriveRiskFieldsInput): DerivedRiskFields {
  const { probability, calibrated, source } = fraudProbability({
    scoreKind: modelVersion.scoreKind,
    score: alert.score,
    negativeSamplingRate: modelVersion.negativeSamplingRate,
    priorHitRate: modelVersion.priorHitRate,
    calibrationMap,
  });
  const exposure = computeExposure({
    amountMinor: alert.amountMinor,
    recoveryRate: settings.costs.recoveryRateByChannel[alert.channel] ?? 0,
    fixedCostMinor: settings.costs.fixedCostPerFraudMinor,
  });
  const expectedLoss = computeExpectedLoss({ fraudProbability: probability, exposureMinor: exposure });
  const expectedLossMinor = Math.round(expectedLoss);
  return {
    probability,
    calibrated,
    probabilitySource: source,
    calibrationMapId: source === "calibration_map" && calibrationMap !== null ? calibrationMap.id : null,
    exposureMinor: Math.round(exposure),
    expectedLossMinor,
    dueAt: dueTime({ arrivedAt: alert.receivedAt, expectedLossMinor, bands: settings.queue.slaBands }),
    priority: priorityValue({
      expectedLossMinor: expectedLoss,
      expectedHandlingMinutes: expectedHandlingMinutesFor(settings.queue, alert.channel),
      orderMode: settings.queue.orderMode,
    }),
  };
}
