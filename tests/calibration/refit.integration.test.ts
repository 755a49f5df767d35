// Calibration per model version: a map is fitted from reviewed outcomes once there are enough,
// stored with its quality, and the version's waiting alerts are re-derived from it at once.
import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { refitCalibration } from "@/lib/calibration/refit-calibration";
import { maybeRefitAfterOutcomes } from "@/lib/calibration/maybe-refit-after-outcomes";
import { getCurrentCalibrationMap } from "@/lib/calibration/get-current-calibration-map";
import { fitCalibrationMap } from "@/lib/calibration/fit-calibration-map";
import { recomputeWaitingAlerts } from "@/lib/queue/recompute-waiting-alerts";
import { getSettings } from "@/lib/settings/get-settings";
import { updateSettings } from "@/lib/settings/update-settings";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const SYSTEM = { type: "system" as const, id: null, label: "test" };

let supervisor: UserActor;
let model: TestModelVersion;

beforeAll(async () => {
  supervisor = await createUser(prisma, { role: "supervisor" });
});

beforeEach(async () => {
  await prisma.$executeRaw`DELETE FROM alerts`;
  await prisma.$executeRaw`DELETE FROM calibration_maps`;
  await prisma.$executeRaw`DELETE FROM settings`;
  await updateSettings(prisma, { actor: SYSTEM, key: "calibration", value: { minLabels: 20, minPerClass: 5, refitAfterNewOutcomes: 10 } });
  // β = 0.5: before calibration p is the corrected score β·s / (β·s − s + 1).
  model = await createModelVersion(prisma, { negativeSamplingRate: 0.5 });
});

/** `count` closed alerts at `score`, the first `fraud` of them confirmed fraud, the rest legitimate. */
async function reviewed(score: number, count: number, fraud: number, closedAt = new Date("2026-12-01T12:00:00Z")): Promise<void> {
  for (let i = 0; i < count; i++) {
    await createAlert(prisma, model.id, { score, state: "closed", closedAt, finalOutcome: i < fraud ? "confirmed_fraud" : "legitimate", probability: 0.123 });
  }
}

/**
 * Thirty reviewed alerts whose fraud rates already rise with the score, so pool-adjacent-violators
 * pools nothing and the map is the three group means (Zadrozny & Elkan 2002; scikit-learn gives
 * the same knots for these points):
 *   score 0.2: 10 reviewed, 2 fraud → 0.2     score 0.6: 10 reviewed, 5 fraud → 0.5
 *   score 0.8: 10 reviewed, 8 fraud → 0.8
 * Brier score on its own data = mean of the within-group variances p(1 − p):
 *   (0.2·0.8 + 0.5·0.5 + 0.8·0.2) / 3 = (0.16 + 0.25 + 0.16) / 3 = 0.19.
 */
async function thirtyReviewed(): Promise<void> {
  await reviewed(0.2, 10, 2);
  await reviewed(0.6, 10, 5);
  await reviewed(0.8, 10, 8);
}

async function deriveWaiting(): Promise<void> {
  const settings = await getSettings(prisma);
  await prisma.$transaction((tx) => recomputeWaitingAlerts(tx, { now: NOW, settings }));
}

describe("fitting a map", () => {
  it("fits isotonic regression on confirmed_fraud = 1 / legitimate = 0 and stores its label count and Brier score", async () => {
    await thirtyReviewed();
    // Inconclusive outcomes are not labels.
    await createAlert(prisma, model.id, { score: 0.9, state: "closed", finalOutcome: "inconclusive" });
    const map = await fitCalibrationMap(prisma, { modelVersionId: model.id, now: NOW, minimums: { minLabels: 20, minPerClass: 5 } });
    expect(map.map.scores).toEqual([0.2, 0.6, 0.8]);
    expect(map.map.probabilities.map((p) => Number(p.toFixed(12)))).toEqual([0.2, 0.5, 0.8]);
    expect(map).toMatchObject({ modelVersionId: model.id, labelCount: 30, positiveCount: 15, fittedAt: NOW });
    expect(map.brierScore).toBeCloseTo(0.19, 12);
    expect(await getCurrentCalibrationMap(prisma, { modelVersionId: model.id })).toEqual(map);
  });

  it("weights a below-the-line sample by 1/π (Horvitz–Thompson)", async () => {
    await thirtyReviewed();
    // One fraud at score 0.2 sampled from below the line with π = 0.25 counts as 4 alerts:
    // group 0.2 becomes (2 + 4) / (10 + 4) = 6/14 = 0.428571…, still below 0.5, so nothing pools.
    await createAlert(prisma, model.id, { score: 0.2, state: "closed", finalOutcome: "confirmed_fraud", inclusionProbability: 0.25 });
    const map = await fitCalibrationMap(prisma, { modelVersionId: model.id, now: NOW, minimums: { minLabels: 20, minPerClass: 5 } });
    expect(map.map.probabilities[0]).toBeCloseTo(6 / 14, 12);
    expect(map.labelCount).toBe(31);
  });

  it("refuses with the counts when the minimums are not met, and stores nothing", async () => {
    await reviewed(0.2, 10, 2);
    await reviewed(0.8, 9, 8); // 19 labels, 10 fraud, 9 legitimate
    await expect(refitCalibration(prisma, { actor: supervisor, modelVersionId: model.id, trigger: "on_demand", now: NOW })).rejects.toThrow(
      /19 labelled \(10 confirmed fraud, 9 legitimate\); it needs at least 20 with at least 5 of each/,
    );
    expect(await prisma.calibrationMap.count()).toBe(0);
    expect(await prisma.auditEvent.count({ where: { action: "calibration.refit" } })).toBe(0);
  });
});

describe("refit and recompute", () => {
  it("re-derives the version's waiting alerts from the new map in one go, leaves the rest alone, and audits it", async () => {
    await thirtyReviewed();
    const other = await createModelVersion(prisma);
    const waitingLow = await createAlert(prisma, model.id, { score: 0.4, amountMinor: 100_000, channel: "card_not_present" });
    const waitingHigh = await createAlert(prisma, model.id, { score: 0.9, amountMinor: 100_000, channel: "card_not_present" });
    const otherVersion = await createAlert(prisma, other.id, { score: 0.4, amountMinor: 100_000, channel: "card_not_present" });
    await deriveWaiting();
    const analyst = await createUser(prisma);
    const inReview = await createAlert(prisma, model.id, { score: 0.4, state: "in_review", assignedToId: analyst.id, probability: 0.321 });

    // Before: the corrected score. β = 0.5, s = 0.4: p = 0.2 / (0.2 + 0.6) = 0.25.
    const before = await prisma.alert.findUniqueOrThrow({ where: { id: waitingLow.id } });
    expect(before).toMatchObject({ probability: 0.25, calibrated: false, probabilitySource: "corrected_score", calibrationMapId: null });

    const { calibrationMap, recomputedAlerts } = await refitCalibration(prisma, { actor: supervisor, modelVersionId: model.id, trigger: "on_demand", now: NOW });
    expect(recomputedAlerts).toBe(2);

    // After: s = 0.4 lies between knots (0.2, 0.2) and (0.6, 0.5): p = 0.2 + (0.4 − 0.2)/(0.6 − 0.2)·0.3 = 0.35.
    // E = 100,000·(1 − 0.10) + 1,500 = 91,500; EL = 0.35·91,500 = 32,025 (24 h band: due a day after arrival).
    const low = await prisma.alert.findUniqueOrThrow({ where: { id: waitingLow.id } });
    expect(low.probability).toBeCloseTo(0.35, 12);
    expect(low).toMatchObject({ calibrated: true, probabilitySource: "calibration_map", calibrationMapId: calibrationMap.id });
    expect(Number(low.exposureMinor)).toBe(91_500);
    expect(Number(low.expectedLossMinor)).toBe(32_025);
    expect(low.priority).toBeCloseTo(32_025, 6);
    expect(low.dueAt).toEqual(new Date(low.receivedAt.getTime() + 24 * 3_600_000));
    // s = 0.9 is above the last knot: clipped to 0.8 (scikit-learn out_of_bounds="clip").
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: waitingHigh.id } })).probability).toBeCloseTo(0.8, 12);

    // Untouched: another version's waiting alert, an alert in review, the closed ones.
    expect(await prisma.alert.findUniqueOrThrow({ where: { id: otherVersion.id } })).toMatchObject({ probability: 0.4, calibrated: false });
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: inReview.id } })).probability).toBe(0.321);
    expect(await prisma.alert.count({ where: { state: "closed", probability: 0.123 } })).toBe(30);

    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "calibration.refit" } });
    expect(event).toMatchObject({ actorId: supervisor.id, subjectType: "model_version", subjectId: model.id });
    expect(event.payload).toEqual({
      modelVersionId: model.id,
      calibrationMapId: calibrationMap.id,
      labelCount: 30,
      brierScore: calibrationMap.brierScore,
      recomputedAlerts: 2,
      trigger: "on_demand",
    });
  });

  it("only supervisors, admins and the system may refit", async () => {
    await thirtyReviewed();
    const analyst = await createUser(prisma, { role: "analyst" });
    await expect(refitCalibration(prisma, { actor: analyst, modelVersionId: model.id, trigger: "on_demand", now: NOW })).rejects.toMatchObject({ code: "forbidden" });
    await expect(
      refitCalibration(prisma, { actor: supervisor, modelVersionId: "00000000-0000-4000-8000-000000000000", trigger: "on_demand", now: NOW }),
    ).rejects.toMatchObject({ code: "not_found" });
  });

  it("keeps every map, so each alert's probability can be traced to the one that produced it", async () => {
    await thirtyReviewed();
    const first = await refitCalibration(prisma, { actor: supervisor, modelVersionId: model.id, trigger: "on_demand", now: NOW });
    const later = new Date(NOW.getTime() + 3_600_000);
    const second = await refitCalibration(prisma, { actor: supervisor, modelVersionId: model.id, trigger: "on_demand", now: later });
    expect(await prisma.calibrationMap.count({ where: { modelVersionId: model.id } })).toBe(2);
    expect((await getCurrentCalibrationMap(prisma, { modelVersionId: model.id }))!.id).toBe(second.calibrationMap.id);
    expect(first.calibrationMap.id).not.toBe(second.calibrationMap.id);
  });
});

describe("automatic refit after new outcomes", () => {
  it("fits the first map once the minimums are met, then again after refitAfterNewOutcomes more", async () => {
    const waiting = await createAlert(prisma, model.id, { score: 0.4 });
    await reviewed(0.2, 10, 2);
    await reviewed(0.6, 9, 5);
    const early = await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: NOW });
    expect(early).toMatchObject({ refitted: false, newOutcomes: 19 });

    await reviewed(0.6, 1, 0); // the 20th label
    const first = await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: NOW });
    expect(first.refitted).toBe(true);
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: waiting.id } })).calibrated).toBe(true);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "calibration.refit" }, orderBy: { id: "desc" } });
    expect(event).toMatchObject({ actorType: "system", actorLabel: "calibration", payload: { trigger: "automatic" } });

    // Outcomes closed after the map's fit time count as new; nine are not enough, the tenth is.
    const afterFit = new Date(NOW.getTime() + 60_000);
    await reviewed(0.8, 9, 8, afterFit);
    expect(await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: afterFit })).toMatchObject({ refitted: false, newOutcomes: 9 });
    await reviewed(0.8, 1, 0, afterFit);
    const second = await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: afterFit });
    expect(second).toMatchObject({ refitted: true, newOutcomes: 10 });
    expect(await prisma.calibrationMap.count({ where: { modelVersionId: model.id } })).toBe(2);
  });

  it("does nothing for a model version whose outcomes are all one class", async () => {
    await reviewed(0.5, 30, 0);
    // A map fitted on one class would predict 0 for every alert and empty the queue of this version.
    expect(await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: NOW })).toMatchObject({ refitted: false, newOutcomes: 30 });
    expect(await prisma.calibrationMap.count()).toBe(0);
  });
});
