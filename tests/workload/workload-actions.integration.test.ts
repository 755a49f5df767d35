// A supervisor's actions on the Workload screen: releasing everything an analyst holds, and moving
// one alert in review to someone else. Both are audited in the same transaction as the change, and
// both are refused to anyone without workload.manage.
import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { updateSettings } from "@/lib/settings/update-settings";
import { defaultSettings } from "@/lib/settings/schemas";
import { releaseAnalystAlerts } from "@/lib/workload/release-analyst-alerts";
import { reassignAlert } from "@/lib/workload/reassign-alert";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const minutesLater = (minutes: number) => new Date(NOW.getTime() + minutes * 60_000);

let model: TestModelVersion;
let ada: UserActor;
let ben: UserActor;
let supervisor: UserActor;
let auditor: UserActor;
let admin: UserActor;

beforeAll(async () => {
  model = await createModelVersion(prisma);
  ada = await createUser(prisma, { role: "analyst", displayName: "Ada Quill" });
  ben = await createUser(prisma, { role: "analyst", displayName: "Ben Marlow" });
  supervisor = await createUser(prisma, { role: "supervisor", displayName: "Sam Overton" });
  auditor = await createUser(prisma, { role: "auditor", displayName: "Quinn Ledger" });
  admin = await createUser(prisma, { role: "admin", displayName: "Ari Keys" });
});

beforeEach(async () => {
  await prisma.$executeRaw`DELETE FROM outcomes`;
  await prisma.$executeRaw`DELETE FROM alerts`;
  await prisma.$executeRaw`DELETE FROM settings`;
});

/** An alert in review held by `holder`, claimed 10 minutes ago with a 30-minute lease. */
function held(externalId: string, holder: UserActor) {
  return createAlert(prisma, model.id, {
    externalId,
    state: "in_review",
    assignedToId: holder.id,
    claimedAt: minutesLater(-10),
    leaseExpiresAt: minutesLater(20),
    expectedLossMinor: 10_000,
    dueAt: minutesLater(240),
  });
}

async function auditOf(alertId: string) {
  return prisma.$queryRaw<{ action: string; actorId: string | null; payload: Record<string, unknown> }[]>`
    SELECT action, actor_id AS "actorId", payload FROM audit_events WHERE subject_id = ${alertId} ORDER BY id`;
}

async function expectAppError(promise: Promise<unknown>, code: AppError["code"], message?: RegExp) {
  const error = await promise.then(
    () => null,
    (caught: unknown) => caught,
  );
  expect(error).toBeInstanceOf(AppError);
  expect((error as AppError).code).toBe(code);
  if (message) expect((error as AppError).message).toMatch(message);
}

describe("releasing an analyst's held alerts", () => {
  it("puts every alert they hold back in the queue, each with its own audit event", async () => {
    const first = await held("held-1", ada);
    const second = await held("held-2", ada);
    const bens = await held("held-ben", ben);

    const result = await releaseAnalystAlerts(prisma, { actor: supervisor, analystId: ada.id, now: NOW, reason: "shift ended" });
    expect(result.released.map((alert) => alert.externalId)).toEqual(["held-1", "held-2"]);

    for (const alert of [first, second]) {
      const row = await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } });
      expect(row).toMatchObject({ state: "waiting", assignedToId: null, claimedAt: null, leaseExpiresAt: null });
      const events = await auditOf(alert.id);
      expect(events).toEqual([{ action: "alert.released", actorId: supervisor.id, payload: { alertId: alert.id, externalId: alert.externalId, reason: `shift ended (held by ${ada.id})` } }]);
    }
    // Ben's alert is untouched.
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: bens.id } })).assignedToId).toBe(ben.id);
    expect((await verifyAuditChain(prisma)).intact).toBe(true);
  });

  it("is safe to repeat: a second release finds nothing and records nothing", async () => {
    await held("again", ada);
    await releaseAnalystAlerts(prisma, { actor: supervisor, analystId: ada.id, now: NOW });
    const before = await prisma.auditEvent.count();
    expect((await releaseAnalystAlerts(prisma, { actor: supervisor, analystId: ada.id, now: NOW })).released).toEqual([]);
    expect(await prisma.auditEvent.count()).toBe(before);
  });

  it("is refused to analysts, auditors and admins, and changes nothing", async () => {
    const alert = await held("kept", ada);
    for (const actor of [ben, ada, auditor, admin]) {
      await expectAppError(releaseAnalystAlerts(prisma, { actor, analystId: ada.id, now: NOW }), "forbidden");
    }
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).state).toBe("in_review");
    expect(await auditOf(alert.id)).toEqual([]);
  });

  it("joins the caller's transaction: when it rolls back, the release and its audit events go with it", async () => {
    const alert = await held("rolled-back", ada);
    const events = await prisma.auditEvent.count();
    await expect(
      prisma.$transaction(async (tx) => {
        await releaseAnalystAlerts(tx, { actor: supervisor, analystId: ada.id, now: NOW });
        throw new Error("the caller changed its mind");
      }),
    ).rejects.toThrow("the caller changed its mind");
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).state).toBe("in_review");
    expect(await prisma.auditEvent.count()).toBe(events);
  });

  it("rejects an unknown analyst and an overlong reason", async () => {
    await expectAppError(releaseAnalystAlerts(prisma, { actor: supervisor, analystId: "00000000-0000-4000-8000-000000000000", now: NOW }), "not_found");
    await expectAppError(releaseAnalystAlerts(prisma, { actor: supervisor, analystId: ada.id, now: NOW, reason: "x".repeat(201) }), "invalid_input");
  });
});

describe("reassigning an alert in review", () => {
  it("gives it to the other analyst with a fresh lease, audited with from and to", async () => {
    const alert = await held("move-me", ada);
    const result = await reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: ben.id, now: NOW });
    expect(result).toMatchObject({ reassigned: true, fromUserId: ada.id });
    // Lease rule: the new holder's lease runs claimLeaseMinutes (30 by default) from now.
    const row = await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } });
    expect(row).toMatchObject({ state: "in_review", assignedToId: ben.id, claimedAt: NOW, leaseExpiresAt: minutesLater(30) });
    expect(await auditOf(alert.id)).toEqual([
      { action: "alert.reassigned", actorId: supervisor.id, payload: { alertId: alert.id, externalId: "move-me", from: ada.id, to: ben.id } },
    ]);
    expect((await verifyAuditChain(prisma)).intact).toBe(true);
  });

  it("follows the lease setting", async () => {
    await updateSettings(prisma, { actor: { type: "system", id: null, label: "test" }, key: "queue", value: { ...defaultSettings.queue, claimLeaseMinutes: 45 } });
    const alert = await held("lease-45", ada);
    await reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: ben.id, now: NOW });
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).leaseExpiresAt).toEqual(minutesLater(45));
  });

  it("is safe to repeat: moving it to its current holder changes nothing", async () => {
    const alert = await held("stay", ben);
    const result = await reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: ben.id, now: NOW });
    expect(result.reassigned).toBe(false);
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).claimedAt).toEqual(minutesLater(-10));
    expect(await auditOf(alert.id)).toEqual([]);
  });

  it("respects the hold limit of the new holder", async () => {
    // Default maxHeldPerAnalyst = 3: Ben already holds 3.
    for (const ref of ["b1", "b2", "b3"]) await held(ref, ben);
    const alert = await held("one-too-many", ada);
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: ben.id, now: NOW }), "conflict", /most alerts an analyst may hold at once \(3\)/);
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).assignedToId).toBe(ada.id);
    expect(await auditOf(alert.id)).toEqual([]);
  });

  it("never gives an alert to someone who already reviewed it (four-eyes rule)", async () => {
    const alert = await held("second-look", ada);
    await prisma.outcome.create({
      data: { alertId: alert.id, reviewRound: 1, outcome: "legitimate", reason: "Usual spending pattern", reviewerId: ben.id, claimedAt: minutesLater(-60), closedAt: minutesLater(-50), handlingSeconds: 600 },
    });
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: ben.id, now: NOW }), "conflict", /four-eyes/);
  });

  it("only moves alerts in review, and only to active analysts or supervisors", async () => {
    const waiting = await createAlert(prisma, model.id, { externalId: "in-queue", state: "waiting" });
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: waiting.id, toUserId: ben.id, now: NOW }), "conflict", /waiting in the queue/);
    const closed = await createAlert(prisma, model.id, { externalId: "done", state: "closed" });
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: closed.id, toUserId: ben.id, now: NOW }), "conflict", /already closed/);

    const alert = await held("target-check", ada);
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: auditor.id, now: NOW }), "conflict", /only analysts and supervisors/);
    const gone = await createUser(prisma, { role: "analyst", displayName: "Gone Away", active: false });
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: gone.id, now: NOW }), "conflict", /deactivated/);
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: "00000000-0000-4000-8000-000000000000", now: NOW }), "invalid_input");
    await expectAppError(reassignAlert(prisma, { actor: supervisor, alertId: "00000000-0000-4000-8000-000000000000", toUserId: ben.id, now: NOW }), "not_found");
    // A supervisor may take it themselves.
    await reassignAlert(prisma, { actor: supervisor, alertId: alert.id, toUserId: supervisor.id, now: NOW });
    expect((await prisma.alert.findUniqueOrThrow({ where: { id: alert.id } })).assignedToId).toBe(supervisor.id);
  });

  it("is refused to anyone without workload.manage", async () => {
    const alert = await held("not-yours", ada);
    for (const actor of [ben, auditor, admin]) {
      await expectAppError(reassignAlert(prisma, { actor, alertId: alert.id, toUserId: ben.id, now: NOW }), "forbidden");
    }
    expect(await auditOf(alert.id)).toEqual([]);
  });
});
