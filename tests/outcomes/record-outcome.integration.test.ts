// Recording outcomes: only the holder closes an alert, a repeated submit never writes a second
// outcome, large cleared amounts go to a second person, and both reviews are kept and audited.
import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { recordOutcome } from "@/lib/outcomes/record-outcome";
import { recordSecondReview } from "@/lib/outcomes/record-second-review";
import { claimAlert } from "@/lib/queue/claim-alert";
import { releaseAlert } from "@/lib/queue/release-alert";
import { updateSettings } from "@/lib/settings/update-settings";
import { defaultSettings } from "@/lib/settings/schemas";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { maybeRefitAfterOutcomes } from "@/lib/calibration/maybe-refit-after-outcomes";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const minutesLater = (minutes: number) => new Date(NOW.getTime() + minutes * 60_000);
const SYSTEM = { type: "system" as const, id: null, label: "test" };
const FOUR_EYES = defaultSettings.queue.fourEyesExposureMinor; // 2,000.00 in minor units

let model: TestModelVersion;
let ines: UserActor;
let tomasz: UserActor;
let maren: UserActor;
let auditor: UserActor;

beforeAll(async () => {
  model = await createModelVersion(prisma);
  ines = await createUser(prisma, { role: "analyst", displayName: "Ines Varga" });
  tomasz = await createUser(prisma, { role: "analyst", displayName: "Tomasz Edlund" });
  maren = await createUser(prisma, { role: "supervisor", displayName: "Maren Okafor" });
  auditor = await createUser(prisma, { role: "auditor" });
});

beforeEach(async () => {
  await prisma.$executeRaw`DELETE FROM outcomes`;
  await prisma.$executeRaw`DELETE FROM alerts`;
  await prisma.$executeRaw`DELETE FROM calibration_maps`;
  await prisma.$executeRaw`DELETE FROM settings`;
});

/** An alert held by `holder` since NOW, with the given exposure. */
async function heldAlert(holder: UserActor, exposureMinor = 10_000): Promise<string> {
  const alert = await createAlert(prisma, model.id, {
    state: "in_review",
    assignedToId: holder.id,
    claimedAt: NOW,
    leaseExpiresAt: minutesLater(30),
    exposureMinor,
    expectedLossMinor: Math.round(exposureMinor / 2),
    probability: 0.5,
  });
  return alert.id;
}

async function expectAppError(promise: Promise<unknown>, code: AppError["code"], message: RegExp): Promise<void> {
  const error = await promise.then(
    () => null,
    (caught: unknown) => caught,
  );
  expect(error).toBeInstanceOf(AppError);
  expect((error as AppError).code).toBe(code);
  expect((error as AppError).message).toMatch(message);
}

const outcomesOf = (alertId: string) => prisma.outcome.findMany({ where: { alertId }, orderBy: { reviewRound: "asc" } });
const alertOf = (alertId: string) => prisma.alert.findUniqueOrThrow({ where: { id: alertId } });
const actionsOn = async (alertId: string) =>
  (await prisma.auditEvent.findMany({ where: { subjectId: alertId }, orderBy: { id: "asc" }, select: { action: true } })).map((event) => event.action);

describe("the first review", () => {
  it("closes an alert the analyst holds, with the handling time from claim to close and its audit event", async () => {
    const alertId = await heldAlert(ines);
    const result = await recordOutcome(prisma, {
      actor: ines,
      alertId,
      outcome: "confirmed_fraud",
      reason: "Cardholder denies the transaction",
      note: "Called the cardholder; not their purchase.",
      now: minutesLater(7),
    });
    expect(result).toMatchObject({ round: 1, outcome: "confirmed_fraud", alertState: "closed", finalOutcome: "confirmed_fraud", handlingSeconds: 420, repeated: false });

    const alert = await alertOf(alertId);
    expect(alert).toMatchObject({ state: "closed", finalOutcome: "confirmed_fraud", closedAt: minutesLater(7), leaseExpiresAt: null });
    const [outcome] = await outcomesOf(alertId);
    expect(outcome).toMatchObject({ reviewRound: 1, reviewerId: ines.id, claimedAt: NOW, closedAt: minutesLater(7), handlingSeconds: 420, origin: "screen", note: "Called the cardholder; not their purchase." });

    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "outcome.recorded", subjectId: alertId } });
    expect(event.actorId).toBe(ines.id);
    expect(event.payload).toMatchObject({ alertId, outcome: "confirmed_fraud", round: 1, handlingSeconds: 420, origin: "screen", sentToSecondReview: false });
  });

  it("the same outcome submitted twice is recorded once; the repeat gets the stored one back", async () => {
    const alertId = await heldAlert(ines);
    const submit = () => recordOutcome(prisma, { actor: ines, alertId, outcome: "inconclusive", reason: "Cardholder unreachable", now: minutesLater(3) });
    const first = await submit();
    const again = await submit();
    expect(again).toMatchObject({ outcomeId: first.outcomeId, repeated: true, alertState: "closed" });
    expect(await outcomesOf(alertId)).toHaveLength(1);
    expect((await actionsOn(alertId)).filter((action) => action === "outcome.recorded")).toHaveLength(1);
  });

  it("a double click (two submits at the same moment) writes one outcome", async () => {
    const alertId = await heldAlert(ines);
    const submit = () => recordOutcome(prisma, { actor: ines, alertId, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(2) });
    const results = await Promise.all([submit(), submit(), submit()]);
    expect(new Set(results.map((result) => result.outcomeId)).size).toBe(1);
    expect(results.filter((result) => !result.repeated)).toHaveLength(1);
    expect(await outcomesOf(alertId)).toHaveLength(1);
  });

  it("a different outcome from a stale page after the first is refused, and says what was recorded", async () => {
    const alertId = await heldAlert(ines);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(2) });
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId, outcome: "inconclusive", reason: "Insufficient information", now: minutesLater(3) }),
      "conflict",
      /You already recorded “Confirmed fraud” \(Known compromised card\) on this alert at 2026-12-02 12:02 UTC/,
    );
    expect(await outcomesOf(alertId)).toHaveLength(1);
  });

  it("refuses when someone else holds the alert, naming them", async () => {
    const alertId = await heldAlert(tomasz);
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(1) }),
      "conflict",
      /^Tomasz Edlund holds this alert \(taken at 2026-12-02 12:00 UTC\), so your outcome was not saved/,
    );
    expect(await outcomesOf(alertId)).toHaveLength(0);
    expect(await alertOf(alertId)).toMatchObject({ state: "in_review", assignedToId: tomasz.id });
  });

  it("refuses when another analyst already closed it, saying who and as what", async () => {
    const alertId = await heldAlert(tomasz);
    await recordOutcome(prisma, { actor: tomasz, alertId, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(4) });
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(5) }),
      "conflict",
      /^Tomasz Edlund already recorded “Confirmed fraud” on this alert at 2026-12-02 12:04 UTC/,
    );
  });

  it("refuses after the alert went back to the queue, and the outcome is not saved", async () => {
    const claimed = await createAlert(prisma, model.id, { exposureMinor: 10_000, probability: 0.5, priority: 10, expectedLossMinor: 5_000 });
    await claimAlert(prisma, { actor: ines, alertId: claimed.id, now: NOW });
    await releaseAlert(prisma, { actor: ines, alertId: claimed.id, now: minutesLater(1) });
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId: claimed.id, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(2) }),
      "conflict",
      /went back to the queue/,
    );
    expect(await outcomesOf(claimed.id)).toHaveLength(0);
  });

  it("an auditor may not record outcomes; an unknown alert is not found", async () => {
    const alertId = await heldAlert(ines);
    await expectAppError(recordOutcome(prisma, { actor: auditor, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: NOW }), "forbidden", /auditor/);
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId: "00000000-0000-4000-8000-000000000000", outcome: "legitimate", reason: "Usual spending pattern", now: NOW }),
      "not_found",
      /no such alert/,
    );
  });

  it("the reason must be on the current list for the outcome, and 'see note' reasons need a note", async () => {
    const alertId = await heldAlert(ines);
    await expectAppError(
      recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Known compromised card", now: minutesLater(1) }),
      "invalid_input",
      /not on the list of reasons for “Legitimate”/,
    );
    await expectAppError(recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Other (see note)", note: "  ", now: minutesLater(1) }), "invalid_input", /needs a note/);
    expect(await alertOf(alertId)).toMatchObject({ state: "in_review" });
  });
});

describe("the four-eyes rule", () => {
  it("legitimate at or above the four-eyes exposure goes to second review, held by nobody", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    const result = await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Cardholder confirmed the transaction", now: minutesLater(5) });
    expect(result).toMatchObject({ alertState: "second_review", finalOutcome: null });
    expect(await alertOf(alertId)).toMatchObject({ state: "second_review", assignedToId: null, claimedAt: null, leaseExpiresAt: null, finalOutcome: null, closedAt: null });
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "outcome.recorded", subjectId: alertId } });
    expect(event.payload).toMatchObject({ sentToSecondReview: true });
  });

  it("below the amount, or with another outcome, the alert closes at once", async () => {
    const below = await heldAlert(ines, FOUR_EYES - 1);
    expect(await recordOutcome(prisma, { actor: ines, alertId: below, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(1) })).toMatchObject({ alertState: "closed" });
    const fraud = await heldAlert(ines, FOUR_EYES * 10);
    expect(await recordOutcome(prisma, { actor: ines, alertId: fraud, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(1) })).toMatchObject({ alertState: "closed" });
  });

  it("the threshold comes from Settings, and an analyst may ask for a second person below it", async () => {
    await updateSettings(prisma, { actor: SYSTEM, key: "queue", value: { ...defaultSettings.queue, fourEyesExposureMinor: 5_000 } });
    const above = await heldAlert(ines, 5_000);
    expect(await recordOutcome(prisma, { actor: ines, alertId: above, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(1) })).toMatchObject({ alertState: "second_review" });
    const asked = await heldAlert(ines, 100);
    const result = await recordOutcome(prisma, { actor: ines, alertId: asked, outcome: "inconclusive", reason: "Insufficient information", requestSecondReview: true, now: minutesLater(1) });
    expect(result).toMatchObject({ alertState: "second_review" });
  });

  it("the first reviewer cannot give the second review", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(5) });
    await expectAppError(
      recordSecondReview(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(9) }),
      "forbidden",
      /You recorded the first outcome on this alert .* the second review must be someone else's/,
    );
    expect(await alertOf(alertId)).toMatchObject({ state: "second_review" });
    await expectAppError(recordSecondReview(prisma, { actor: auditor, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(9) }), "forbidden", /auditor/);
  });

  it("a second person confirms: the alert closes as legitimate, both rounds are kept and audited", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Cardholder confirmed the transaction", now: minutesLater(5) });
    const second = await recordSecondReview(prisma, {
      actor: maren,
      alertId,
      outcome: "legitimate",
      reason: "Usual spending pattern",
      note: "Same merchant every month.",
      startedAt: minutesLater(20),
      now: minutesLater(23),
    });
    expect(second).toMatchObject({ round: 2, decision: "confirmed", firstOutcome: "legitimate", alertState: "closed", finalOutcome: "legitimate", handlingSeconds: 180 });

    const rounds = await outcomesOf(alertId);
    expect(rounds.map((row) => [row.reviewRound, row.outcome, row.reviewerId])).toEqual([
      [1, "legitimate", ines.id],
      [2, "legitimate", maren.id],
    ]);
    expect(rounds[1]).toMatchObject({ claimedAt: minutesLater(20), closedAt: minutesLater(23) });
    expect(await alertOf(alertId)).toMatchObject({ state: "closed", finalOutcome: "legitimate", closedAt: minutesLater(23) });
    expect(await actionsOn(alertId)).toEqual(["outcome.recorded", "outcome.recorded", "second_review.confirmed"]);
    const confirmed = await prisma.auditEvent.findFirstOrThrow({ where: { action: "second_review.confirmed", subjectId: alertId } });
    expect(confirmed).toMatchObject({ actorId: maren.id, payload: { alertId, firstOutcome: "legitimate", secondOutcome: "legitimate" } });
  });

  it("a second person overturns: the final outcome is theirs, the first is kept", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(5) });
    const second = await recordSecondReview(prisma, { actor: tomasz, alertId, outcome: "confirmed_fraud", reason: "Merchant pattern matches fraud", now: minutesLater(8) });
    expect(second).toMatchObject({ decision: "overturned", firstOutcome: "legitimate", finalOutcome: "confirmed_fraud" });
    expect((await outcomesOf(alertId)).map((row) => row.outcome)).toEqual(["legitimate", "confirmed_fraud"]);
    expect(await alertOf(alertId)).toMatchObject({ state: "closed", finalOutcome: "confirmed_fraud" });
    expect(await actionsOn(alertId)).toEqual(["outcome.recorded", "outcome.recorded", "second_review.overturned"]);
  });

  it("a repeated second review is recorded once; a third person afterwards is told who decided", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(5) });
    const submit = () => recordSecondReview(prisma, { actor: maren, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(8) });
    const [a, b] = await Promise.all([submit(), submit()]);
    expect(a.outcomeId).toBe(b.outcomeId);
    expect([a.repeated, b.repeated].sort()).toEqual([false, true]);
    expect(await outcomesOf(alertId)).toHaveLength(2);
    await expectAppError(
      recordSecondReview(prisma, { actor: tomasz, alertId, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(9) }),
      "conflict",
      /^Maren Okafor already confirmed the first outcome at 2026-12-02 12:08 UTC/,
    );
    // The first analyst's retry of their own submit still gets their outcome back.
    const retry = await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(10) });
    expect(retry).toMatchObject({ repeated: true, round: 1, alertState: "closed", finalOutcome: "legitimate" });
  });

  it("a second review needs an alert that waits for one", async () => {
    const alertId = await heldAlert(ines);
    await expectAppError(
      recordSecondReview(prisma, { actor: maren, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(1) }),
      "conflict",
      /not waiting for a second review: Ines Varga is reviewing it/,
    );
  });

  it("the audit chain stays intact through all of it", async () => {
    expect((await verifyAuditChain(prisma)).intact).toBe(true);
  });
});

describe("after an alert closes", () => {
  it("a refit passed to afterCommit is not run before the caller runs it", async () => {
    const alertId = await heldAlert(ines);
    const tasks: (() => Promise<void>)[] = [];
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "inconclusive", reason: "Cardholder unreachable", now: minutesLater(1), afterCommit: (task) => tasks.push(task) });
    expect(tasks).toHaveLength(1);
    await tasks[0]();
  });

  it("nothing is refitted for an alert that goes to second review", async () => {
    const alertId = await heldAlert(ines, FOUR_EYES);
    const tasks: (() => Promise<void>)[] = [];
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "legitimate", reason: "Usual spending pattern", now: minutesLater(1), afterCommit: (task) => tasks.push(task) });
    expect(tasks).toHaveLength(0);
  });

  it("the automatic calibration refit runs once enough outcomes exist", async () => {
    await updateSettings(prisma, { actor: SYSTEM, key: "calibration", value: { minLabels: 4, minPerClass: 2, refitAfterNewOutcomes: 100 } });
    for (const [i, score] of [0.2, 0.4, 0.7].entries()) {
      await createAlert(prisma, model.id, { score, state: "closed", finalOutcome: i === 2 ? "confirmed_fraud" : "legitimate", closedAt: NOW });
    }
    const alertId = (await createAlert(prisma, model.id, { score: 0.9, state: "in_review", assignedToId: ines.id, claimedAt: NOW, leaseExpiresAt: minutesLater(30), exposureMinor: 100 })).id;
    expect(await prisma.calibrationMap.count({ where: { modelVersionId: model.id } })).toBe(0);
    await recordOutcome(prisma, { actor: ines, alertId, outcome: "confirmed_fraud", reason: "Known compromised card", now: minutesLater(1) });
    expect(await prisma.calibrationMap.count({ where: { modelVersionId: model.id } })).toBe(1);
  });

  // Regression: a nested Prisma transaction with shared options once left every later refit unable to start.
  it("after one automatic refit, the next refit check in the same process still runs", async () => {
    await maybeRefitAfterOutcomes(prisma, { modelVersionId: model.id, now: minutesLater(2) });
  });
});
