// The Alert page's numbers: the expected-loss arithmetic, how the probability was obtained, the
// ranked reason codes, and the history of the same entity.
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { getAlertDetail, rankReasonCodes } from "@/lib/alerts/get-alert-detail";
import { findEntityHistory } from "@/lib/alerts/find-entity-history";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const daysAgo = (days: number) => new Date(NOW.getTime() - days * 86_400_000);

let model: TestModelVersion;
let ines: UserActor;

beforeAll(async () => {
  model = await createModelVersion(prisma, { modelName: "card-risk", version: "4.2.0", negativeSamplingRate: 0.1 });
  ines = await createUser(prisma, { role: "analyst", displayName: "Ines Varga" });
});

describe("the alert's detail", () => {
  it("shows the expected-loss arithmetic with the default costs: E = amount·(1 − r) + f, EL = p·E", async () => {
    // card_present: r = 0.3, f = 15.00 EUR (defaults). E = 100.00 × 0.7 + 15.00 = 85.00; EL = 0.5 × 85.00 = 42.50.
    const { id } = await createAlert(prisma, model.id, {
      amountMinor: 10_000,
      channel: "card_present",
      score: 0.9,
      probability: 0.5,
      probabilitySource: "corrected_score",
      exposureMinor: 8_500,
      expectedLossMinor: 4_250,
      dueAt: daysAgo(0.5),
      entityRef: "tok_5a17c0",
    });
    await prisma.alert.update({
      where: { id },
      data: { reasonCodes: [{ code: "new_device", contribution: 0.1 }, { code: "velocity_1h", contribution: -0.3 }, { code: "geo_distance", contribution: 0.1 }] },
    });
    const detail = await getAlertDetail(prisma, { alertId: id, now: NOW });
    expect(detail).toMatchObject({
      state: "waiting",
      amountMinor: 10_000,
      currency: "EUR",
      merchantCategory: { code: "5411", known: true },
      entityRefMasked: "tok_••••17c0",
      overdue: true,
      holder: null,
      model: { modelName: "card-risk", version: "4.2.0", scoreKind: "probability", score: 0.9, probability: 0.5, calibrated: false, derivation: { source: "corrected_score", negativeSamplingRate: 0.1 } },
      expectedLoss: {
        amountMinor: 10_000,
        recoveryRate: 0.3,
        fixedCostMinor: 1_500,
        exposureMinor: 8_500,
        expectedLossMinor: 4_250,
        storedMatchesSettings: true,
        // c = 6 min × 0.80 = 4.80; V = 42.50 − 4.80 = 37.70
        reviewCostMinor: 480,
        valueOfReviewMinor: 3_770,
      },
    });
    expect(detail.reasonCodes.map((code) => code.code)).toEqual(["velocity_1h", "geo_distance", "new_device"]);
    expect(detail.reasonCodes[0].share).toBeCloseTo(0.6, 10);
    expect(JSON.stringify(detail)).not.toContain("tok_5a17c0");
  });

  it("names the calibration map and its fit date, and says when a newer map exists", async () => {
    const map = await prisma.calibrationMap.create({
      data: { modelVersionId: model.id, fittedAt: daysAgo(10), labelCount: 400, positiveCount: 60, brierScore: 0.08, scorePoints: [0, 1], probabilityPoints: [0.01, 0.9] },
    });
    const { id } = await createAlert(prisma, model.id, { probability: 0.42, calibrated: true, probabilitySource: "calibration_map", exposureMinor: 8_500, expectedLossMinor: 3_570 });
    await prisma.alert.update({ where: { id }, data: { calibrationMapId: map.id } });
    const first = await getAlertDetail(prisma, { alertId: id, now: NOW });
    expect(first.model.derivation).toEqual({
      source: "calibration_map",
      map: { id: map.id, fittedAt: daysAgo(10), labelCount: 400, positiveCount: 60, brierScore: 0.08 },
      isLatestMap: true,
    });
    await prisma.calibrationMap.create({
      data: { modelVersionId: model.id, fittedAt: daysAgo(1), labelCount: 500, positiveCount: 70, brierScore: 0.07, scorePoints: [0, 1], probabilityPoints: [0.01, 0.9] },
    });
    expect((await getAlertDetail(prisma, { alertId: id, now: NOW })).model.derivation).toMatchObject({ source: "calibration_map", isLatestMap: false });
  });

  it("shows the holder and the outcomes with reviewers' names", async () => {
    const { id } = await createAlert(prisma, model.id, { state: "closed", finalOutcome: "confirmed_fraud", closedAt: daysAgo(1), assignedToId: ines.id });
    await prisma.outcome.create({
      data: { alertId: id, reviewRound: 1, outcome: "confirmed_fraud", reason: "Known compromised card", reviewerId: ines.id, claimedAt: daysAgo(1.01), closedAt: daysAgo(1), handlingSeconds: 864 },
    });
    const detail = await getAlertDetail(prisma, { alertId: id, now: NOW });
    expect(detail.holder).toBeNull(); // a closed alert is held by nobody
    expect(detail.outcomes).toEqual([expect.objectContaining({ round: 1, outcome: "confirmed_fraud", reviewerName: "Ines Varga", origin: "screen" })]);
  });

  it("an unknown or malformed id is not found", async () => {
    await expect(getAlertDetail(prisma, { alertId: "00000000-0000-4000-8000-000000000000", now: NOW })).rejects.toBeInstanceOf(AppError);
    await expect(getAlertDetail(prisma, { alertId: "nope", now: NOW })).rejects.toMatchObject({ code: "not_found" });
  });

  it("ranks reason codes by absolute contribution and skips malformed ones", () => {
    expect(rankReasonCodes([{ code: "a", contribution: 0.2 }, { code: "b" }, "c", { code: "d", contribution: 0.5 }]).map((code) => code.code)).toEqual(["d", "a"]);
    expect(rankReasonCodes(null)).toEqual([]);
  });
});

describe("the entity's history", () => {
  it("lists the entity's other alerts of the last 90 days, newest first, with outcomes and labels", async () => {
    const card = "tok_history_1";
    const current = await createAlert(prisma, model.id, { entityRef: card, occurredAt: daysAgo(0) });
    const fraudLastWeek = await createAlert(prisma, model.id, { entityRef: card, occurredAt: daysAgo(7), state: "closed", finalOutcome: "confirmed_fraud", closedAt: daysAgo(6) });
    await prisma.outcome.create({
      data: { alertId: fraudLastWeek.id, reviewRound: 1, outcome: "confirmed_fraud", reason: "Known compromised card", reviewerId: ines.id, claimedAt: daysAgo(6.1), closedAt: daysAgo(6), handlingSeconds: 300 },
    });
    const clearedLastMonth = await createAlert(prisma, model.id, { entityRef: card, occurredAt: daysAgo(30), state: "closed", finalOutcome: "legitimate", closedAt: daysAgo(29) });
    await prisma.label.create({ data: { alertExternalId: clearedLastMonth.externalId, alertId: clearedLastMonth.id, label: "fraud", source: "chargeback", observedAt: daysAgo(3), reference: "CB-1" } });
    await createAlert(prisma, model.id, { entityRef: card, occurredAt: daysAgo(91) }); // outside the window
    await createAlert(prisma, model.id, { entityRef: "tok_someone_else", occurredAt: daysAgo(1) });

    const history = await findEntityHistory(prisma, { alertId: current.id, now: NOW });
    expect(history.since).toEqual(daysAgo(90));
    expect(history.alerts.map((alert) => alert.id)).toEqual([fraudLastWeek.id, clearedLastMonth.id]);
    expect(history.alerts[0]).toMatchObject({ firstOutcome: "confirmed_fraud", finalOutcome: "confirmed_fraud", labels: [] });
    expect(history.alerts[1]).toMatchObject({ firstOutcome: null, finalOutcome: "legitimate", labels: [{ label: "fraud", source: "chargeback", observedAt: daysAgo(3) }] });
    expect(history.summary).toEqual({ alerts: 2, confirmedFraud: 1, fraudLabels: 1 });
    expect(history.more).toBe(false);

    const limited = await findEntityHistory(prisma, { alertId: current.id, now: NOW, limit: 1 });
    expect(limited).toMatchObject({ more: true, summary: { alerts: 2 } });
    expect(limited.alerts).toHaveLength(1);
  });
});
