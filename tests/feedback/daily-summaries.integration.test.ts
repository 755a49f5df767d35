// The dashboards add up daily summaries that triggers mark stale (prisma/migrations/20261202100000_daily_summaries).
// The property checked here: after every kind of change a team makes — new alerts in a day already
// summarised, outcomes from the screen and from back-fill, second reviews, late labels, a label that
// arrives before its alert, a new k, re-derived priorities — the numbers a view shows equal the
// numbers computed from nothing (summaries and marks emptied). The change must also move the
// numbers, so a missing mark cannot pass unnoticed. That the numbers themselves are right is checked
// against lib/metrics and scikit-learn in sql-agrees-with-metrics and feedback-scenario.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createUser } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { systemActor } from "@/lib/auth/actor";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { ingestAlerts } from "@/lib/ingest/ingest-alerts";
import { ingestLabels } from "@/lib/ingest/ingest-labels";
import { ingestOutcomes } from "@/lib/ingest/ingest-outcomes";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { recordOutcome } from "@/lib/outcomes/record-outcome";
import { updateSettings } from "@/lib/settings/update-settings";
import { defaultSettings } from "@/lib/settings/schemas";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { getReviewerMetrics } from "@/lib/feedback/get-reviewer-metrics";
import { parseModelVersionMetricsQuery, parseWindowQuery } from "@/lib/feedback/parse-metrics-query";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-07-09T15:00:00Z");
const actor = systemActor("daily-summaries-test");
const SYSTEM = { type: "system" as const, id: null, label: "test" };

let modelVersionId = "";
let ada: UserActor;
let ben: UserActor;

const windowQuery = { window: "custom", from: "2026-07-05", to: "2026-07-09" };

function alertRows(prefix: string, day: string, count: number, scoreOf: (i: number) => number) {
  return Array.from({ length: count }, (_, i) => ({
    externalId: `${prefix}-${i}`,
    occurredAt: `${day}T0${i % 9}:00:00Z`,
    receivedAt: `${day}T0${i % 9}:0${i % 6}:0${i % 10}Z`,
    amountMinor: 10_000 + 500 * i,
    currency: "EUR",
    channel: "card_not_present",
    merchantCategoryCode: "5999",
    merchantCountry: "NL",
    entityRef: `tok_${prefix}_${i}`,
    modelName: "summary-check",
    modelVersion: "1",
    score: scoreOf(i),
    belowTheLine: false,
    inclusionProbability: null,
  }));
}

async function addAlerts(prefix: string, day: string, count: number, scoreOf: (i: number) => number): Promise<void> {
  const answer = await ingestAlerts(prisma, { actor, rows: alertRows(prefix, day, count, scoreOf), channel: "command_line", now: NOW, allowReceivedAt: true, atomic: true });
  expect(answer.accepted).toBe(count);
}

async function backfill(rows: { externalId: string; outcome: string; by: UserActor; closedAt: string; second?: { by: UserActor; outcome: string } }[]): Promise<void> {
  const answer = await ingestOutcomes(prisma, {
    actor,
    channel: "command_line",
    now: NOW,
    atomic: true,
    rows: rows.map((row) => ({
      externalId: row.externalId,
      outcome: row.outcome,
      reason: "Back-fill",
      reviewerEmail: row.by.email,
      claimedAt: new Date(new Date(row.closedAt).getTime() - 300_000).toISOString(),
      closedAt: row.closedAt,
      secondReviewerEmail: row.second?.by.email ?? null,
      secondOutcome: row.second?.outcome ?? null,
    })),
  });
  expect(answer.accepted).toBe(rows.length);
}

async function addLabels(rows: { externalId: string; label: "fraud" | "genuine" }[]): Promise<void> {
  const answer = await ingestLabels(prisma, {
    actor,
    channel: "command_line",
    now: NOW,
    atomic: true,
    rows: rows.map((row) => ({ ...row, source: "chargeback", observedAt: "2026-07-08T10:00:00Z", reference: `CB-${row.externalId}` })),
  });
  expect(answer.accepted).toBe(rows.length);
}

async function views() {
  const [models, reviewers] = await Promise.all([
    getModelVersionMetrics(prisma, { query: parseModelVersionMetricsQuery(new URLSearchParams({ ...windowQuery, modelVersionId, driftCurrentDays: "2", driftReferenceDays: "2" })), now: NOW }),
    getReviewerMetrics(prisma, { query: parseWindowQuery(new URLSearchParams(windowQuery)), now: NOW }),
  ]);
  return { models, reviewers };
}

/**
 * Every number to 12 significant digits: sums of per-day sums add the same terms in another order,
 * so a Brier score may differ in its last binary digits (0.18718875931324908 against …913).
 */
function rounded<T>(value: T): T {
  if (typeof value === "number") return (Number.isFinite(value) ? Number(value.toPrecision(12)) : value) as T;
  if (Array.isArray(value)) return value.map(rounded) as T;
  if (value && typeof value === "object") return Object.fromEntries(Object.entries(value).map(([key, item]) => [key, rounded(item)])) as T;
  return value;
}

/** The view as it is now (summaries brought up to date from the marks), and as computed from nothing. */
async function incrementalAndFromScratch() {
  const incremental = rounded(await views());
  await prisma.$executeRaw`TRUNCATE model_version_daily_summaries, model_version_day_marks, reviewer_daily_summaries, reviewer_summary_days, reviewer_day_marks`;
  const fromScratch = rounded(await views());
  return { incremental, fromScratch };
}

async function markCounts(): Promise<{ versionMarks: number; reviewerMarks: number }> {
  const [row] = await prisma.$queryRaw<{ versionMarks: number; reviewerMarks: number }[]>`
    SELECT (SELECT count(*)::int FROM model_version_day_marks) AS "versionMarks", (SELECT count(*)::int FROM reviewer_day_marks) AS "reviewerMarks"`;
  return row;
}

beforeAll(async () => {
  const saved = await saveModelVersion(prisma, { actor, input: { modelName: "summary-check", version: "1", scoreKind: "probability", alertThreshold: 0 } });
  modelVersionId = saved.modelVersion.id;
  ada = await createUser(prisma, { role: "analyst", displayName: "Ada Fenwick" });
  ben = await createUser(prisma, { role: "analyst", displayName: "Ben Okafor" });
  await addAlerts("d5", "2026-07-05", 12, (i) => (i + 1) / 14);
  await addAlerts("d6", "2026-07-06", 12, (i) => ((i * 7) % 12) / 12 + 0.02);
  await backfill([
    { externalId: "d5-0", outcome: "legitimate", by: ada, closedAt: "2026-07-05T12:00:00Z" },
    { externalId: "d5-11", outcome: "confirmed_fraud", by: ada, closedAt: "2026-07-05T12:30:00Z", second: { by: ben, outcome: "confirmed_fraud" } },
    { externalId: "d6-3", outcome: "legitimate", by: ben, closedAt: "2026-07-06T13:00:00Z" },
  ]);
  // The first view computes every day of the span and consumes the marks.
  await views();
});

describe("daily summaries stay equal to a computation from nothing", () => {
  it("a view consumes the marks of its span", async () => {
    expect(await markCounts()).toEqual({ versionMarks: 0, reviewerMarks: 0 });
  });

  it("after new alerts arrive in a day already summarised", async () => {
    const before = await views();
    await addAlerts("d5b", "2026-07-05", 5, (i) => 0.5 + i / 20);
    expect((await markCounts()).versionMarks).toBeGreaterThan(0);
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental.models.modelVersions[0].received).toBe(before.models.modelVersions[0].received + 5);
    expect(incremental).toEqual(fromScratch);
  });

  it("after back-filled outcomes with a second review that disagrees", async () => {
    const before = await views();
    await backfill([
      { externalId: "d6-0", outcome: "legitimate", by: ada, closedAt: "2026-07-06T14:00:00Z", second: { by: ben, outcome: "confirmed_fraud" } },
      { externalId: "d6-1", outcome: "inconclusive", by: ben, closedAt: "2026-07-07T09:00:00Z" },
    ]);
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental.models.modelVersions[0].closed).toBe(before.models.modelVersions[0].closed + 2);
    expect(incremental.reviewers.team.secondReviews).toBe(before.reviewers.team.secondReviews + 1);
    expect(incremental).toEqual(fromScratch);
  });

  it("after a disagreeing pair of reviews on a day that had none", async () => {
    await addAlerts("d7", "2026-07-07", 2, (i) => 0.3 + i / 10);
    await backfill([{ externalId: "d7-0", outcome: "confirmed_fraud", by: ada, closedAt: "2026-07-07T10:00:00Z", second: { by: ben, outcome: "legitimate" } }]);
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    const adaRow = incremental.reviewers.reviewers.find((row) => row.reviewer.id === ada.id)!;
    expect(adaRow.agreement.pairs).toContainEqual({ first: "confirmed_fraud", second: "legitimate", n: 1 });
    expect(incremental).toEqual(fromScratch);
  });

  it("after late chargebacks that overturn an analyst and make a false clear", async () => {
    const before = await views();
    await addLabels([{ externalId: "d6-3", label: "fraud" }]);
    const marks = await markCounts();
    expect(marks.versionMarks).toBeGreaterThan(0);
    expect(marks.reviewerMarks).toBeGreaterThan(0);
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental.models.modelVersions[0].overturnedByLabel).toBe(before.models.modelVersions[0].overturnedByLabel + 1);
    expect(incremental.reviewers.team.falseClearRate.successes).toBe(before.reviewers.team.falseClearRate.successes + 1);
    expect(incremental).toEqual(fromScratch);
  });

  it("after a label that arrived before its alert is matched when the alert comes", async () => {
    await addLabels([{ externalId: "d8-0", label: "fraud" }]);
    await addAlerts("d8", "2026-07-08", 3, (i) => 0.6 + i / 10);
    await backfill([{ externalId: "d8-0", outcome: "legitimate", by: ben, closedAt: "2026-07-08T11:00:00Z" }]);
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    const benRow = incremental.reviewers.reviewers.find((row) => row.reviewer.id === ben.id)!;
    expect(benRow.falseClearRate.successes).toBeGreaterThanOrEqual(2);
    expect(incremental).toEqual(fromScratch);
  });

  it("after an analyst closes alerts on the screen (claim and outcome)", async () => {
    const before = await views();
    const claimed = await claimNextAlert(database, { actor: ada, now: NOW });
    expect(claimed).not.toBeNull();
    await recordOutcome(prisma, { actor: ada, alertId: claimed!.id, outcome: "confirmed_fraud", reason: defaultSettings.queue.outcomeReasons.confirmed_fraud[0], now: new Date(NOW.getTime() + 60_000) });
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental.models.modelVersions[0].closed).toBe(before.models.modelVersions[0].closed + 1);
    expect(incremental).toEqual(fromScratch);
  });

  it("after the daily capacity k changes (precision at k is recomputed for the new k)", async () => {
    await updateSettings(prisma, { actor: SYSTEM, key: "metrics", value: { ...defaultSettings.metrics, dailyCapacity: 2 } });
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental.models.modelVersions[0].precisionAtK.k).toBe(2);
    expect(Math.max(...incremental.models.modelVersions[0].precisionAtK.days.map((day) => day.considered))).toBe(2);
    expect(incremental).toEqual(fromScratch);
  });

  it("after waiting alerts' priorities change (precision at k counts the day's highest priorities, open ones too)", async () => {
    await prisma.$executeRaw`UPDATE alerts SET priority = 1000 - priority WHERE state = 'waiting'`;
    const { incremental, fromScratch } = await incrementalAndFromScratch();
    expect(incremental).toEqual(fromScratch);
  });
});

describe("what does not mark a day", () => {
  it("claiming and the overdue sweep change nothing the summaries count, so they add no marks", async () => {
    await views();
    const claimed = await claimNextAlert(database, { actor: ben, now: new Date("2026-07-30T00:00:00Z") });
    expect(claimed).not.toBeNull();
    expect(await markCounts()).toEqual({ versionMarks: 0, reviewerMarks: 0 });
  });
});
