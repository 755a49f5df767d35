// Everything the Alert page shows about one alert, except its entity history and its timeline:
// the transaction facts, the model's view (raw score, version, probability and how it was obtained),
// the expected-loss arithmetic in numbers (DESIGN.md §4), the reason codes ranked by contribution,
// who holds it, and its outcomes and labels.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { computeExpectedLoss, computeExposure, computeReviewCost, computeValueOfReview, type ProbabilitySource, type ScoreKind } from "@/lib/risk";
import { getSettings } from "@/lib/settings/get-settings";
import { expectedHandlingMinutesFor } from "@/lib/settings/expected-handling-minutes";
import { merchantCategory, type MerchantCategory } from "@/lib/alerts/merchant-categories";
import { maskEntityRef } from "@/lib/alerts/mask-entity-ref";
import type { AlertState, OutcomeValue } from "@/lib/outcomes/schemas";

export interface GetAlertDetailOptions {
  alertId: string;
  now: Date;
}

/** How the alert's probability was obtained. */
export type ProbabilityDerivation =
  | {
      source: "calibration_map";
      map: { id: string; fittedAt: Date; labelCount: number; positiveCount: number; brierScore: number };
      /** False when the version has been refitted since this alert's numbers were derived. */
      isLatestMap: boolean;
    }
  | { source: "corrected_score"; negativeSamplingRate: number }
  | { source: "prior_hit_rate"; priorHitRate: number | null }
  | { source: null };

export interface ExpectedLossArithmetic {
  amountMinor: number;
  /** r: expected recovery rate of the alert's channel (Settings → costs). */
  recoveryRate: number;
  /** f: fixed cost of a confirmed fraud, in minor units of the home currency. */
  fixedCostMinor: number;
  homeCurrency: string;
  /** E = amount·(1 − r) + f, as stored on the alert. */
  exposureMinor: number | null;
  probability: number | null;
  /** EL = p·E, as stored on the alert. */
  expectedLossMinor: number | null;
  /** E and EL from today's settings; they differ from the stored ones when costs changed since. */
  recomputed: { exposureMinor: number; expectedLossMinor: number | null };
  storedMatchesSettings: boolean;
  /** c = expected handling minutes × cost per minute, and V = EL − c (Elkan 2001). */
  expectedHandlingMinutes: number;
  reviewCostMinor: number;
  valueOfReviewMinor: number | null;
}

export interface RankedReasonCode {
  code: string;
  contribution: number;
  /** |contribution| as a share of the sum of |contribution| over the alert's codes. */
  share: number;
}

export interface AlertOutcomeView {
  round: 1 | 2;
  outcome: OutcomeValue;
  reason: string;
  note: string | null;
  reviewerId: string;
  reviewerName: string;
  claimedAt: Date;
  closedAt: Date;
  handlingSeconds: number;
  origin: "screen" | "imported";
}

export interface AlertLabelView {
  label: "fraud" | "genuine";
  source: "analyst" | "chargeback" | "customer_report";
  observedAt: Date;
  reference: string;
}

export interface AlertDetail {
  id: string;
  externalId: string;
  state: AlertState;
  receivedAt: Date;
  occurredAt: Date;
  amountMinor: number;
  currency: string;
  channel: string;
  merchantCategory: MerchantCategory;
  merchantCountry: string;
  entityRefMasked: string;
  belowTheLine: boolean;
  inclusionProbability: number | null;
  dueAt: Date | null;
  overdue: boolean;
  holder: { id: string; displayName: string } | null;
  claimedAt: Date | null;
  leaseExpiresAt: Date | null;
  closedAt: Date | null;
  finalOutcome: OutcomeValue | null;
  model: {
    modelVersionId: string;
    modelName: string;
    version: string;
    scoreKind: ScoreKind;
    score: number;
    alertThreshold: number;
    probability: number | null;
    calibrated: boolean;
    derivation: ProbabilityDerivation;
  };
  expectedLoss: ExpectedLossArithmetic;
  reasonCodes: RankedReasonCode[];
  outcomes: AlertOutcomeView[];
  labels: AlertLabelView[];
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function getAlertDetail(db: DbOrTx, { alertId, now }: GetAlertDetailOptions): Promise<AlertDetail> {
  if (!UUID.test(alertId)) throw new AppError("not_found", "There is no such alert.");
  const alert = await db.alert.findUnique({
    where: { id: alertId },
    include: {
      modelVersion: true,
      calibrationMap: { select: { id: true, fittedAt: true, labelCount: true, positiveCount: true, brierScore: true } },
      assignedTo: { select: { id: true, displayName: true } },
      outcomes: { orderBy: { reviewRound: "asc" }, include: { reviewer: { select: { displayName: true } } } },
      labels: { orderBy: { observedAt: "asc" }, select: { label: true, source: true, observedAt: true, reference: true } },
    },
  });
  if (!alert) throw new AppError("not_found", "There is no such alert.");
  const [settings, latestMap] = await Promise.all([
    getSettings(db),
    alert.probabilitySource === "calibration_map"
      ? db.calibrationMap.findFirst({ where: { modelVersionId: alert.modelVersionId }, orderBy: [{ fittedAt: "desc" }, { id: "asc" }], select: { id: true } })
      : Promise.resolve(null),
  ]);

  const amountMinor = Number(alert.amountMinor);
  const exposureMinor = alert.exposureMinor === null ? null : Number(alert.exposureMinor);
  const expectedLossMinor = alert.expectedLossMinor === null ? null : Number(alert.expectedLossMinor);
  const recoveryRate = settings.costs.recoveryRateByChannel[alert.channel] ?? 0;
  const fixedCostMinor = settings.costs.fixedCostPerFraudMinor;
  // Unrounded E into EL, as deriveRiskFields does, so the comparison with the stored numbers is exact.
  const exposureFull = computeExposure({ amountMinor, recoveryRate, fixedCostMinor });
  const exposureNow = Math.round(exposureFull);
  const expectedLossNow = alert.probability === null ? null : Math.round(computeExpectedLoss({ fraudProbability: alert.probability, exposureMinor: exposureFull }));
  const expectedHandlingMinutes = expectedHandlingMinutesFor(settings.queue, alert.channel);
  const reviewCostMinor = computeReviewCost({ handlingMinutes: expectedHandlingMinutes, costPerMinuteMinor: settings.costs.reviewCostPerMinuteMinor });

  // The holder of an alert in review; a closed alert keeps assigned_to_id as a record, not a hold.
  const holds = alert.state === "in_review" && alert.assignedTo !== null;
  return {
    id: alert.id,
    externalId: alert.externalId,
    state: alert.state as AlertState,
    receivedAt: alert.receivedAt,
    occurredAt: alert.occurredAt,
    amountMinor,
    currency: alert.currency,
    channel: alert.channel,
    merchantCategory: merchantCategory(alert.merchantCategoryCode),
    merchantCountry: alert.merchantCountry,
    entityRefMasked: maskEntityRef(alert.entityRef),
    belowTheLine: alert.belowTheLine,
    inclusionProbability: alert.inclusionProbability,
    dueAt: alert.dueAt,
    overdue: alert.state !== "closed" && alert.dueAt !== null && alert.dueAt.getTime() <= now.getTime(),
    holder: holds ? alert.assignedTo : null,
    claimedAt: holds ? alert.claimedAt : null,
    leaseExpiresAt: holds ? alert.leaseExpiresAt : null,
    closedAt: alert.closedAt,
    finalOutcome: alert.finalOutcome as OutcomeValue | null,
    model: {
      modelVersionId: alert.modelVersionId,
      modelName: alert.modelVersion.modelName,
      version: alert.modelVersion.version,
      scoreKind: alert.modelVersion.scoreKind as ScoreKind,
      score: alert.score,
      alertThreshold: alert.modelVersion.alertThreshold,
      probability: alert.probability,
      calibrated: alert.calibrated,
      derivation: derivationOf(alert.probabilitySource as ProbabilitySource | null, {
        map: alert.calibrationMap,
        latestMapId: latestMap?.id ?? null,
        negativeSamplingRate: alert.modelVersion.negativeSamplingRate,
        priorHitRate: alert.modelVersion.priorHitRate,
      }),
    },
    expectedLoss: {
      amountMinor,
      recoveryRate,
      fixedCostMinor,
      homeCurrency: settings.costs.homeCurrency,
      exposureMinor,
      probability: alert.probability,
      expectedLossMinor,
      recomputed: { exposureMinor: exposureNow, expectedLossMinor: expectedLossNow },
      storedMatchesSettings: exposureMinor === exposureNow && expectedLossMinor === expectedLossNow,
      expectedHandlingMinutes,
      reviewCostMinor,
      valueOfReviewMinor: expectedLossMinor === null ? null : computeValueOfReview({ expectedLossMinor, reviewCostMinor }),
    },
    reasonCodes: rankReasonCodes(alert.reasonCodes),
    outcomes: alert.outcomes.map((outcome) => ({
      round: outcome.reviewRound as 1 | 2,
      outcome: outcome.outcome as OutcomeValue,
      reason: outcome.reason,
      note: outcome.note,
      reviewerId: outcome.reviewerId,
      reviewerName: outcome.reviewer.displayName,
      claimedAt: outcome.claimedAt,
      closedAt: outcome.closedAt,
      handlingSeconds: outcome.handlingSeconds,
      origin: outcome.origin as "screen" | "imported",
    })),
    labels: alert.labels.map((label) => ({ ...label, label: label.label as AlertLabelView["label"], source: label.source as AlertLabelView["source"] })),
  };
}

function derivationOf(
  source: ProbabilitySource | null,
  inputs: {
    map: { id: string; fittedAt: Date; labelCount: number; positiveCount: number; brierScore: number } | null;
    latestMapId: string | null;
    negativeSamplingRate: number;
    priorHitRate: number | null;
  },
): ProbabilityDerivation {
  switch (source) {
    case "calibration_map":
      return inputs.map ? { source, map: inputs.map, isLatestMap: inputs.map.id === inputs.latestMapId } : { source: null };
    case "corrected_score":
      return { source, negativeSamplingRate: inputs.negativeSamplingRate };
    case "prior_hit_rate":
      return { source, priorHitRate: inputs.priorHitRate };
    default:
      return { source: null };
  }
}

/** Largest absolute contribution first; codes that are not {code, contribution} are left out. */
export function rankReasonCodes(raw: unknown): RankedReasonCode[] {
  if (!Array.isArray(raw)) return [];
  const codes = raw.filter(
    (item): item is { code: string; contribution: number } =>
      typeof item === "object" && item !== null && typeof item.code === "string" && typeof item.contribution === "number" && Number.isFinite(item.contribution),
  );
  const total = codes.reduce((sum, item) => sum + Math.abs(item.contribution), 0);
  return codes
    .map((item) => ({ code: item.code, contribution: item.contribution, share: total > 0 ? Math.abs(item.contribution) / total : 0 }))
    .sort((a, b) => Math.abs(b.contribution) - Math.abs(a.contribution) || a.code.localeCompare(b.code));
}
