// Loads a small feedback-loop scenario (model versions, reviewers, alerts with first and second
// reviews, late labels) into a test database. The scenario itself, with every expected number worked
// by hand, lives in the test file that uses it.
import type { PrismaClient } from "@/lib/generated/prisma/client";
import { systemActor } from "@/lib/auth/actor";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";

export type OutcomeName = "confirmed_fraud" | "legitimate" | "inconclusive";

export interface ScenarioReview {
  by: string;
  outcome: OutcomeName;
  /** Seconds between claim and close. */
  handlingSeconds: number;
}

export interface ScenarioAlert {
  ref: string;
  version: string;
  /** Received at this instant (UTC, ISO 8601). */
  receivedAt: string;
  score: number;
  /** Inclusion probability π of a below-the-line sample; absent for alerted transactions. */
  belowTheLine?: number;
  first?: ScenarioReview;
  second?: ScenarioReview;
  label?: { label: "fraud" | "genuine"; source: "chargeback" | "customer_report"; observedAt: string };
}

export interface Scenario {
  /** key → model version (probability scores, β = 1, so p = score). */
  versions: Record<string, { modelName: string; version: string; alertThreshold: number }>;
  /** key → reviewer. */
  reviewers: Record<string, { email: string; displayName: string; role: "analyst" | "supervisor" }>;
  alerts: ScenarioAlert[];
  /** Every alert has the same amount and channel, so the queue priority (expected loss) follows p. */
  amountMinor: number;
}

export interface LoadedScenario {
  versionIds: Record<string, string>;
  reviewerIds: Record<string, string>;
  alertIds: Record<string, string>;
}

const MINUTE = 60_000;

/** The times of each review: claimed an hour after arrival; a second review 10 minutes after the first closes. */
export function reviewTimes(alert: ScenarioAlert) {
  const received = new Date(alert.receivedAt).getTime();
  const firstClaimed = received + 60 * MINUTE;
  const firstClosed = firstClaimed + (alert.first?.handlingSeconds ?? 0) * 1000;
  const secondClaimed = firstClosed + 10 * MINUTE;
  const secondClosed = secondClaimed + (alert.second?.handlingSeconds ?? 0) * 1000;
  return {
    firstClaimed: new Date(firstClaimed),
    firstClosed: new Date(firstClosed),
    secondClaimed: new Date(secondClaimed),
    secondClosed: new Date(secondClosed),
  };
}

/**
 * Brings the scenario in as production does: model versions registered with saveModelVersion, then
 * alerts, historical outcomes (with second reviews) and late labels through the ingest functions
 * behind POST /api/v1/alerts, /outcomes and /labels. Risk fields are derived by ingest itself.
 */
export async function loadScenarioThroughIngest(prisma: PrismaClient, scenario: Scenario, now: Date): Promise<LoadedScenario> {
  const actor = systemActor("feedback-scenario");
  const versionIds: Record<string, string> = {};
  for (const [key, version] of Object.entries(scenario.versions)) {
    const saved = await saveModelVersion(prisma, {
      actor,
      input: { modelName: version.modelName, version: version.version, scoreKind: "probability", alertThreshold: version.alertThreshold },
    });
    versionIds[key] = saved.modelVersion.id;
  }
  const reviewerIds: Record<string, string> = {};
  for (const [key, reviewer] of Object.entries(scenario.reviewers)) {
    const row = await prisma.user.create({ data: { email: reviewer.email, displayName: reviewer.displayName, role: reviewer.role } });
    reviewerIds[key] = row.id;
  }

  const alertRows = scenario.alerts.map((alert) => ({
    externalId: alert.ref,
    occurredAt: new Date(new Date(alert.receivedAt).getTime() - 5 * MINUTE).toISOString(),
    receivedAt: alert.receivedAt,
    amountMinor: scenario.amountMinor,
    currency: "EUR",
    channel: "card_not_present",
    merchantCategoryCode: "5999",
    merchantCountry: "NL",
    entityRef: `tok_${alert.ref}`,
    modelName: scenario.versions[alert.version].modelName,
    modelVersion: scenario.versions[alert.version].version,
    score: alert.score,
    belowTheLine: alert.belowTheLine !== undefined,
    inclusionProbability: alert.belowTheLine ?? null,
  }));
  const alerts = await ingestAlerts(prisma, { actor, rows: alertRows, channel: "command_line", now, allowReceivedAt: true, atomic: true });
  if (alerts.accepted !== alertRows.length) throw new Error(`alerts not all accepted: ${JSON.stringify(alerts.errors)}`);

  const email = (key: string) => scenario.reviewers[key].email;
  const outcomeRows = scenario.alerts
    .filter((alert) => alert.first)
    .map((alert) => {
      const times = reviewTimes(alert);
      return {
        externalId: alert.ref,
        outcome: alert.first!.outcome,
        reason: "Scenario",
        reviewerEmail: email(alert.first!.by),
        claimedAt: times.firstClaimed.toISOString(),
        closedAt: times.firstClosed.toISOString(),
        secondReviewerEmail: alert.second ? email(alert.second.by) : null,
        secondOutcome: alert.second?.outcome ?? null,
      };
    });
  const outcomes = await ingestOutcomes(prisma, { actor, rows: outcomeRows, channel: "command_line", now, atomic: true });
  if (outcomes.accepted !== outcomeRows.length) throw new Error(`outcomes not all accepted: ${JSON.stringify(outcomes.errors)} ${JSON.stringify(outcomes.conflicts)}`);

  const labelRows = scenario.alerts
    .filter((alert) => alert.label)
    .map((alert) => ({ externalId: alert.ref, ...alert.label!, reference: `REF-${alert.ref}` }));
  const labels = await ingestLabels(prisma, { actor, rows: labelRows, channel: "command_line", now, atomic: true });
  if (labels.accepted !== labelRows.length) throw new Error(`labels not all accepted: ${JSON.stringify(labels.errors)}`);

  const stored = await prisma.alert.findMany({ select: { id: true, externalId: true } });
  return { versionIds, reviewerIds, alertIds: Object.fromEntries(stored.map((row) => [row.externalId, row.id])) };
}
