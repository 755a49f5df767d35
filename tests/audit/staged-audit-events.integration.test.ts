// Staged audit events (the claim's): recorded with the change or not at all, linked into the chain
// after commit, in staging order, and never missed by a reader of the trail. The chain itself is
// checked by verifyAuditChain, which recomputes every SHA-256 link (FIPS 180-4, node:crypto).
import { beforeAll, describe, expect, it } from "vitest";
import { useTestDatabase } from "@/tests/support/test-database";
import { createModelVersion, createUser, createWaitingAlerts, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import { recordStandaloneAuditEvent } from "@/lib/audit/record-audit-event";
import { backgroundLinkingSettled, linkStagedAuditEvents, stageAuditEvent } from "@/lib/audit/staged-audit-events";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { findAuditEvents } from "@/lib/audit/find-audit-events";
import { auditEventSchema } from "@/lib/audit/schemas";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { getSettings } from "@/lib/settings/get-settings";
import { updateSettings } from "@/lib/settings/update-settings";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");

let model: TestModelVersion;
let analyst: UserActor;

beforeAll(async () => {
  model = await createModelVersion(prisma);
  analyst = await createUser(prisma, { role: "analyst", displayName: "Wren Abara" });
});

const stagedCount = async () => (await prisma.$queryRaw<{ n: number }[]>`SELECT count(*)::int AS n FROM audit_events_staged`)[0].n;
const claimedEvent = (alertId: string) => ({
  actor: auditActorOf(analyst),
  event: { action: "alert.claimed" as const, payload: { alertId, externalId: `X-${alertId.slice(0, 8)}`, leaseExpiresAt: NOW.toISOString(), how: "direct" as const } },
  subject: { type: "alert", id: alertId },
});

describe("staged audit events", () => {
  it("a staged event rolls back with its transaction: nothing staged, nothing linked", async () => {
    const before = await prisma.auditEvent.count();
    await expect(
      prisma.$transaction(async (tx) => {
        await stageAuditEvent(tx, claimedEvent("00000000-0000-4000-8000-000000000001"));
        throw new Error("the change failed after the event was staged");
      }),
    ).rejects.toThrow(/the change failed/);
    expect(await stagedCount()).toBe(0);
    expect(await linkStagedAuditEvents(prisma)).toBe(0);
    expect(await prisma.auditEvent.count()).toBe(before);
  });

  it("links staged events after the chain's head in staging order, and verify then finds the chain whole", async () => {
    await recordStandaloneAuditEvent(prisma, { actor: { type: "system", id: null, label: "test" }, event: { action: "settings.changed", payload: { key: "queue", before: null, after: null } } });
    const ids = ["00000000-0000-4000-8000-0000000000a1", "00000000-0000-4000-8000-0000000000a2", "00000000-0000-4000-8000-0000000000a3"];
    for (const id of ids) await prisma.$transaction((tx) => stageAuditEvent(tx, claimedEvent(id)));
    expect(await stagedCount()).toBe(3);
    // Not linked yet: the trail's table does not have them.
    expect(await prisma.auditEvent.count({ where: { subjectId: { in: ids } } })).toBe(0);

    expect(await linkStagedAuditEvents(prisma)).toBe(3);
    expect(await stagedCount()).toBe(0);
    const linked = await prisma.auditEvent.findMany({ where: { subjectId: { in: ids } }, orderBy: { id: "asc" } });
    expect(linked.map((event) => event.subjectId)).toEqual(ids);
    // Each links to the one before it.
    expect(linked[1].prevHash).toBe(linked[0].hash);
    expect(linked[2].prevHash).toBe(linked[1].hash);
    // The time each happened is the time it was staged, not the time it was linked.
    expect(linked[0].occurredAt.getTime()).toBeLessThanOrEqual(linked[2].occurredAt.getTime());
    const report = await verifyAuditChain(prisma);
    expect(report.intact).toBe(true);
  });

  it("a reader of the trail links what is still staged before it reads", async () => {
    const id = "00000000-0000-4000-8000-0000000000b1";
    await prisma.$transaction((tx) => stageAuditEvent(tx, claimedEvent(id)));
    const page = await findAuditEvents(prisma, { filter: { alert: id }, page: { limit: 50 } });
    expect(page.events.map((event) => event.action)).toEqual(["alert.claimed"]);
    expect(await stagedCount()).toBe(0);
  });

  it("16 analysts taking next while others append directly: every claim is in the chain once, and the chain is whole", async () => {
    const analysts: UserActor[] = [];
    for (let i = 0; i < 16; i++) analysts.push(await createUser(prisma, { role: "analyst" }));
    const alertIds = await createWaitingAlerts(prisma, { modelVersionId: model.id, count: 320, receivedFrom: new Date("2026-12-01T00:00:00Z"), prefix: "staged" });
    const queue = (await getSettings(prisma)).queue;
    await updateSettings(prisma, { actor: { type: "system", id: null, label: "test" }, key: "queue", value: { ...queue, maxHeldPerAnalyst: 20 } });
    // Four writers appending directly to the chain, ten events each, while the claims stage theirs.
    const direct = Array.from({ length: 4 }, async (_, writer) => {
      for (let index = 0; index < 10; index++) {
        await recordStandaloneAuditEvent(prisma, {
          actor: { type: "system", id: null, label: "test" },
          event: { action: "settings.changed", payload: { key: `w${writer}-${index}`, before: null, after: null } },
        });
      }
    });
    const claims = analysts.map(async (actor) => {
      const mine: string[] = [];
      for (let i = 0; i < 20; i++) {
        const alert = await claimNextAlert(database, { actor, now: NOW });
        if (alert) mine.push(alert.id);
      }
      return mine;
    });
    const claimed = (await Promise.all(claims)).flat();
    await Promise.all(direct);
    expect(new Set(claimed).size).toBe(320);

    await backgroundLinkingSettled();
    expect(await stagedCount()).toBe(0);
    const [{ n }] = await prisma.$queryRaw<{ n: number }[]>`
      SELECT count(DISTINCT subject_id)::int AS n FROM audit_events WHERE action = 'alert.claimed' AND subject_id = ANY (${alertIds}::text[])`;
    expect(n).toBe(320);
    const claimEvents = await prisma.auditEvent.findMany({ where: { action: "alert.claimed", subjectId: { in: alertIds } } });
    expect(claimEvents).toHaveLength(320);
    // Take next writes its event in SQL: each must still be the alert.claimed event of the schema.
    for (const event of claimEvents) {
      expect(auditEventSchema.safeParse({ action: event.action, payload: event.payload }).success).toBe(true);
      expect(event.payload).toMatchObject({ alertId: event.subjectId, how: "take_next" });
    }
    const report = await verifyAuditChain(prisma);
    expect(report.intact).toBe(true);
    expect(await prisma.auditEvent.count({ where: { action: "settings.changed", actorLabel: "test" } })).toBeGreaterThanOrEqual(41);
  }, 300_000);
});
