// The Queue screen's reads: waiting alerts narrowed by the URL's filters in take-next order, the
// counts at the top, and the alerts waiting for a second person.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, createWaitingAlerts, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { findWaitingAlerts, WAITING_COUNT_CAP, waitingAlertFilterSchema } from "@/lib/queue/find-waiting-alerts";
import { getQueueCounts } from "@/lib/queue/get-queue-counts";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { listSecondReviews } from "@/lib/outcomes/list-second-reviews";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const hoursFromNow = (hours: number) => new Date(NOW.getTime() + hours * 3_600_000);

let gbm: TestModelVersion;
let autoencoder: TestModelVersion;
let ines: UserActor;
let tomasz: UserActor;
const ids: Record<string, string> = {};

beforeAll(async () => {
  gbm = await createModelVersion(prisma, { modelName: "card-risk-gbm" });
  autoencoder = await createModelVersion(prisma, { modelName: "spend-pattern-ae", scoreKind: "anomaly" });
  ines = await createUser(prisma, { displayName: "Ines Varga" });
  tomasz = await createUser(prisma, { displayName: "Tomasz Edlund" });
  const make = async (name: string, model: TestModelVersion, fields: { amountMinor: number; channel: string; priority: number; dueInHours: number; receivedAt?: Date }) => {
    const alert = await createAlert(prisma, model.id, {
      externalId: name,
      amountMinor: fields.amountMinor,
      channel: fields.channel,
      priority: fields.priority,
      expectedLossMinor: fields.priority,
      exposureMinor: fields.amountMinor,
      probability: 0.3,
      dueAt: hoursFromNow(fields.dueInHours),
      receivedAt: fields.receivedAt,
    });
    ids[name] = alert.id;
  };
  await make("big-cnp", gbm, { amountMinor: 250_000, channel: "card_not_present", priority: 9_000, dueInHours: 3 });
  await make("mid-cp", gbm, { amountMinor: 40_000, channel: "card_present", priority: 5_000, dueInHours: 20 });
  await make("late-small", autoencoder, { amountMinor: 1_500, channel: "card_present", priority: 100, dueInHours: -2 });
  await make("atm", autoencoder, { amountMinor: 20_000, channel: "atm", priority: 3_000, dueInHours: 10, receivedAt: hoursFromNow(-1) });
});

const names = (alerts: { id: string }[]) => alerts.map((alert) => Object.keys(ids).find((name) => ids[name] === alert.id));

describe("waiting alerts on the Queue screen", () => {
  it("come in take-next order: overdue first, then expected loss", async () => {
    const page = await findWaitingAlerts(prisma, { now: NOW });
    expect(names(page.alerts)).toEqual(["late-small", "big-cnp", "mid-cp", "atm"]);
    expect(page.total).toBe(4);
    expect(page.alerts[0]).toMatchObject({ overdue: true, modelName: "spend-pattern-ae" });
  });

  it("narrow by model version, channel, amount range and overdue only, and count what matches", async () => {
    expect(names((await findWaitingAlerts(prisma, { now: NOW, filter: { modelVersionId: gbm.id } })).alerts)).toEqual(["big-cnp", "mid-cp"]);
    expect(names((await findWaitingAlerts(prisma, { now: NOW, filter: { channel: "card_present" } })).alerts)).toEqual(["late-small", "mid-cp"]);
    const range = await findWaitingAlerts(prisma, { now: NOW, filter: { amountMinMinor: 20_000, amountMaxMinor: 40_000 } });
    expect(names(range.alerts)).toEqual(["mid-cp", "atm"]);
    expect(range.total).toBe(2);
    expect(names((await findWaitingAlerts(prisma, { now: NOW, filter: { overdueOnly: true } })).alerts)).toEqual(["late-small"]);
  });

  it("page through the order", async () => {
    const second = await findWaitingAlerts(prisma, { now: NOW, limit: 2, offset: 2 });
    expect(names(second.alerts)).toEqual(["mid-cp", "atm"]);
    expect(second.total).toBe(4);
  });

  it("read their filters from the URL in major units, and refuse nonsense", () => {
    expect(waitingAlertFilterSchema.parse({ min: "200", max: "400.5", overdue: "1", page: "2", channel: "atm" })).toEqual({
      min: 20_000,
      max: 40_050,
      overdue: true,
      page: 2,
      channel: "atm",
      model: undefined,
    });
    expect(waitingAlertFilterSchema.parse({ min: "", model: "" })).toMatchObject({ min: undefined, model: undefined, overdue: false, page: 1 });
    expect(waitingAlertFilterSchema.safeParse({ min: "500", max: "100" }).success).toBe(false);
    expect(waitingAlertFilterSchema.safeParse({ min: "12abc" }).success).toBe(false);
    expect(waitingAlertFilterSchema.safeParse({ model: "not-a-uuid" }).success).toBe(false);
  });
});

describe("the counts and the second reviews", () => {
  it("count waiting, overdue, in review and second review, and know the last arrival", async () => {
    const claimed = await claimNextAlert(database, { actor: ines, now: NOW });
    expect(claimed?.id).toBe(ids["late-small"]);
    const counts = await getQueueCounts(prisma, { now: NOW });
    expect(counts).toEqual({ waiting: 3, overdue: 0, inReview: 1, secondReview: 0, lastArrivalAt: hoursFromNow(-1) });
  });

  it("list alerts waiting for a second review with the first review, marking the viewer's own", async () => {
    const alert = await createAlert(prisma, gbm.id, { externalId: "second", exposureMinor: 300_000 });
    await prisma.alert.update({ where: { id: alert.id }, data: { state: "second_review" } });
    await prisma.outcome.create({
      data: { alertId: alert.id, reviewRound: 1, outcome: "legitimate", reason: "Usual spending pattern", reviewerId: ines.id, claimedAt: NOW, closedAt: hoursFromNow(0.1), handlingSeconds: 360 },
    });
    const forInes = await listSecondReviews(prisma, { viewerId: ines.id });
    expect(forInes).toEqual([expect.objectContaining({ externalId: "second", firstOutcome: "legitimate", firstReviewerName: "Ines Varga", exposureMinor: 300_000, ownFirstReview: true })]);
    expect((await listSecondReviews(prisma, { viewerId: tomasz.id }))[0].ownFirstReview).toBe(false);
    expect((await getQueueCounts(prisma, { now: NOW })).secondReview).toBe(1);
  });
});

describe("a very long queue", () => {
  it("counts matching alerts up to WAITING_COUNT_CAP and says when there are more", async () => {
    const other = await createModelVersion(prisma, { modelName: "long-queue-gbm" });
    await createWaitingAlerts(prisma, { modelVersionId: other.id, count: WAITING_COUNT_CAP + 5, receivedFrom: new Date("2026-11-01T00:00:00Z"), prefix: "long" });
    const capped = await findWaitingAlerts(prisma, { now: NOW, filter: { modelVersionId: other.id } });
    expect(capped).toMatchObject({ total: WAITING_COUNT_CAP, totalIsCapped: true });
    expect(capped.alerts).toHaveLength(50);
    // Below the cap the count is exact.
    const exact = await findWaitingAlerts(prisma, { now: NOW, filter: { modelVersionId: other.id, amountMaxMinor: 10_000 + 20 } });
    expect(exact).toMatchObject({ total: 20, totalIsCapped: false });
  });
});
