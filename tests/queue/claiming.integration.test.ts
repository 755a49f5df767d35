// Claiming: two analysts never get the same alert, leases run out, releases and hold limits work,
// and only the holder may close an alert.
import { beforeAll, beforeEach, describe, expect, it } from "vitest";
import pg from "pg";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlert, createModelVersion, createUser, createWaitingAlerts, type TestModelVersion } from "@/tests/support/factories";
import type { UserActor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { claimNextAlert } from "@/lib/queue/claim-next-alert";
import { claimAlert } from "@/lib/queue/claim-alert";
import { releaseAlert } from "@/lib/queue/release-alert";
import { expireLeases } from "@/lib/queue/expire-leases";
import { getHeldAlerts } from "@/lib/queue/get-held-alerts";
import { assertHeldBy } from "@/lib/queue/assert-held-by";
import { updateSettings } from "@/lib/settings/update-settings";
import { defaultSettings } from "@/lib/settings/schemas";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { backgroundLinkingSettled } from "@/lib/audit/staged-audit-events";

const database = await useTestDatabase();
const prisma = database.prisma;
const NOW = new Date("2026-12-02T12:00:00Z");
const minutesLater = (minutes: number) => new Date(NOW.getTime() + minutes * 60_000);
const SYSTEM = { type: "system" as const, id: null, label: "test" };

let model: TestModelVersion;
let ada: UserActor;
let ben: UserActor;
let supervisor: UserActor;

beforeAll(async () => {
  model = await createModelVersion(prisma);
  ada = await createUser(prisma, { role: "analyst", displayName: "Ada Quill" });
  ben = await createUser(prisma, { role: "analyst", displayName: "Ben Marlow" });
  supervisor = await createUser(prisma, { role: "supervisor" });
});

beforeEach(async () => {
  await prisma.$executeRaw`DELETE FROM alerts`;
  await prisma.$executeRaw`DELETE FROM settings`;
});

async function setQueue(change: Partial<typeof defaultSettings.queue>): Promise<void> {
  await updateSettings(prisma, { actor: SYSTEM, key: "queue", value: { ...defaultSettings.queue, ...change } });
}

/** Three waiting alerts with distinct priorities: high (3,000), middle (2,000), low (1,000). */
async function threeAlerts(): Promise<{ high: string; middle: string; low: string }> {
  const make = (externalId: string, priority: number) =>
    createAlert(prisma, model.id, { externalId, priority, expectedLossMinor: priority, dueAt: minutesLater(24 * 60), probability: 0.5 });
  return { high: (await make("high", 3_000)).id, middle: (await make("middle", 2_000)).id, low: (await make("low", 1_000)).id };
}

async function stateOf(alertId: string) {
  return prisma.alert.findUniqueOrThrow({ where: { id: alertId }, select: { state: true, assignedToId: true, claimedAt: true, leaseExpiresAt: true } });
}

describe("sixteen analysts taking the next alert at once", () => {
  let analysts: UserActor[];
  beforeAll(async () => {
    analysts = [];
    for (let i = 0; i < 16; i++) analysts.push(await createUser(prisma, { role: "analyst" }));
  });

  const claimersWithWork: number[] = [];

  it.each([1, 2, 3, 4, 5])(
    "round %i: each of 2,000 waiting alerts is claimed exactly once and none is lost",
    async (round) => {
      const ids = await createWaitingAlerts(prisma, { modelVersionId: model.id, count: 2_000, receivedFrom: new Date("2026-12-01T00:00:00Z"), prefix: `round-${round}` });

      // Each claimer is its own promise with its own pooled connection: take next, close it (the
      // outcome form's part, done here in SQL), repeat until the queue is empty.
      const claimedBy = await Promise.all(
        analysts.map(async (analyst) => {
          const mine: string[] = [];
          for (;;) {
            const alert = await claimNextAlert(database, { actor: analyst, now: NOW });
            if (!alert) return mine;
            expect(alert.assignedToId).toBe(analyst.id);
            mine.push(alert.id);
            const closed = await prisma.$executeRaw`
              UPDATE alerts SET state = 'closed', closed_at = ${NOW}, final_outcome = 'inconclusive', lease_expires_at = NULL
               WHERE id = ${alert.id}::uuid AND state = 'in_review' AND assigned_to_id = ${analyst.id}::uuid`;
            expect(closed).toBe(1);
          }
        }),
      );

      const claimed = claimedBy.flat();
      expect(claimed).toHaveLength(2_000);
      expect(new Set(claimed).size).toBe(2_000);
      expect([...claimed].sort()).toEqual([...ids].sort());
      // How many claimers got work this round; on a very busy machine one claimer can win a whole
      // round, so that the claimers really ran side by side is checked over all rounds below.
      claimersWithWork.push(claimedBy.filter((mine) => mine.length > 0).length);
      const [{ waiting }] = await prisma.$queryRaw<{ waiting: number }[]>`SELECT count(*)::int AS waiting FROM alerts WHERE state <> 'closed'`;
      expect(waiting).toBe(0);
      // Claims stage their audit events and link them into the chain in the background.
      await backgroundLinkingSettled();
      const audited = await prisma.auditEvent.count({ where: { action: "alert.claimed", subjectId: { in: ids } } });
      expect(audited).toBe(2_000);
      if (round === 5) expect((await verifyAuditChain(prisma)).intact).toBe(true);
    },
    600_000,
  );

  it("shares the work between claimers that really ran side by side", () => {
    expect(claimersWithWork).toHaveLength(5);
    expect(Math.max(...claimersWithWork)).toBeGreaterThan(1);
  });
});

describe("claiming one alert", () => {
  it("take next gives the analyst the top alert with a lease of claimLeaseMinutes", async () => {
    await setQueue({ claimLeaseMinutes: 20 });
    const { high } = await threeAlerts();
    const claimed = await claimNextAlert(database, { actor: ada, now: NOW });
    expect(claimed).toMatchObject({ id: high, state: "in_review", assignedToId: ada.id, claimedAt: NOW, leaseExpiresAt: minutesLater(20) });
    await backgroundLinkingSettled();
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "alert.claimed", subjectId: high } });
    expect(event.actorId).toBe(ada.id);
    expect(event.payload).toMatchObject({ how: "take_next", leaseExpiresAt: minutesLater(20).toISOString() });
  });

  it("returns null when nothing is waiting", async () => {
    expect(await claimNextAlert(database, { actor: ada, now: NOW })).toBeNull();
  });

  it("an analyst can open and claim a particular waiting alert; a second click changes nothing", async () => {
    const { low } = await threeAlerts();
    const first = await claimAlert(prisma, { actor: ada, alertId: low, now: NOW });
    expect(first).toMatchObject({ id: low, state: "in_review", assignedToId: ada.id });
    const again = await claimAlert(prisma, { actor: ada, alertId: low, now: minutesLater(1) });
    expect(again).toEqual(first);
    await backgroundLinkingSettled();
    expect(await prisma.auditEvent.count({ where: { action: "alert.claimed", subjectId: low } })).toBe(1);
    await expect(claimAlert(prisma, { actor: ben, alertId: low, now: NOW })).rejects.toThrow(/Another analyst holds this alert/);
  });

  it("refuses to claim a closed alert or one that does not exist", async () => {
    const closed = await createAlert(prisma, model.id, { state: "closed", finalOutcome: "legitimate" });
    await expect(claimAlert(prisma, { actor: ada, alertId: closed.id, now: NOW })).rejects.toThrow(/already closed/);
    await expect(claimAlert(prisma, { actor: ada, alertId: "00000000-0000-4000-8000-000000000000", now: NOW })).rejects.toMatchObject({ code: "not_found" });
    await expect(claimAlert(prisma, { actor: ada, alertId: "not-a-uuid", now: NOW })).rejects.toMatchObject({ code: "not_found" });
  });

  it("people who may not work alerts cannot claim", async () => {
    await threeAlerts();
    const auditor = await createUser(prisma, { role: "auditor" });
    await expect(claimNextAlert(database, { actor: auditor, now: NOW })).rejects.toMatchObject({ code: "forbidden" });
    await expect(claimNextAlert(database, { actor: { type: "system", id: null, name: "job" }, now: NOW })).rejects.toMatchObject({ code: "forbidden" });
  });
});

describe("hold limit", () => {
  it("refuses a claim beyond maxHeldPerAnalyst with a clear message, and allows it after a release", async () => {
    await setQueue({ maxHeldPerAnalyst: 2 });
    const { high, middle, low } = await threeAlerts();
    expect((await claimNextAlert(database, { actor: ada, now: NOW }))!.id).toBe(high);
    expect((await claimNextAlert(database, { actor: ada, now: NOW }))!.id).toBe(middle);

    const refused = await claimNextAlert(database, { actor: ada, now: NOW }).catch((error: unknown) => error);
    expect(refused).toBeInstanceOf(AppError);
    expect(refused).toMatchObject({ code: "conflict" });
    expect((refused as AppError).message).toMatch(/already hold 2 alerts, the most an analyst may hold at once \(2\)/);
    await expect(claimAlert(prisma, { actor: ada, alertId: low, now: NOW })).rejects.toMatchObject({ code: "conflict" });
    expect((await stateOf(low)).state).toBe("waiting");

    // Another analyst is not held back by Ada's limit.
    expect((await claimNextAlert(database, { actor: ben, now: NOW }))!.id).toBe(low);
    await releaseAlert(prisma, { actor: ada, alertId: middle, now: NOW });
    expect((await claimNextAlert(database, { actor: ada, now: NOW }))!.id).toBe(middle);
  });

  it("a lowered limit applies to the very next claim", async () => {
    await threeAlerts();
    await claimNextAlert(database, { actor: ada, now: NOW });
    await setQueue({ maxHeldPerAnalyst: 1 });
    await expect(claimNextAlert(database, { actor: ada, now: NOW })).rejects.toMatchObject({ code: "conflict" });
  });
});

describe("every waiting alert locked by another transaction for a moment", () => {
  /** Locks the waiting alerts in a transaction of its own (as a sweep, a refit or claims in flight do); `end` commits it. */
  async function lockWaitingAlerts(change?: string) {
    // A connection of its own, so that the claim finds the pool's warm connection idle.
    const client = new pg.Client({ connectionString: database.url });
    await client.connect();
    await client.query("BEGIN");
    await client.query("SELECT id FROM alerts WHERE state = 'waiting' FOR UPDATE");
    if (change) await client.query(change);
    return {
      end: async () => {
        await client.query("COMMIT");
        await client.end();
      },
    };
  }

  // A claim on the empty queue first, so that the claim under test reaches the database well within
  // the 30 ms the lock is held (a first claim also opens its pooled connection).
  beforeEach(async () => {
    expect(await claimNextAlert(database, { actor: ada, now: NOW })).toBeNull();
  });

  it("waits for a sweep that holds them and takes the top alert, instead of saying nothing waits", async () => {
    const { high } = await threeAlerts();
    const lock = await lockWaitingAlerts();
    const claim = claimNextAlert(database, { actor: ada, now: NOW });
    await new Promise((resolve) => setTimeout(resolve, 30));
    await lock.end();
    expect((await claim)?.id).toBe(high);
  });

  it("when the ones held were being claimed, says nothing waits once those claims commit", async () => {
    await threeAlerts();
    const lock = await lockWaitingAlerts(`UPDATE alerts SET state = 'in_review', assigned_to_id = '${ben.id}', claimed_at = now(), lease_expires_at = now() + interval '1 hour'`);
    const claim = claimNextAlert(database, { actor: ada, now: NOW });
    await new Promise((resolve) => setTimeout(resolve, 30));
    await lock.end();
    expect(await claim).toBeNull();
  });

  it("held longer than its tries: refuses with a conflict that says the queue is busy, not empty", async () => {
    const { high } = await threeAlerts();
    const lock = await lockWaitingAlerts();
    try {
      await expect(claimNextAlert(database, { actor: ada, now: NOW })).rejects.toMatchObject({ code: "conflict", message: expect.stringMatching(/someone else at this moment/) });
    } finally {
      await lock.end();
    }
    expect((await claimNextAlert(database, { actor: ada, now: NOW }))?.id).toBe(high);
  });
});

describe("the claim's prepared statements", () => {
  it("are prepared again when the server has dropped them (a pooler in front of it, DISCARD ALL), and the claim goes through", async () => {
    const { high, middle } = await threeAlerts();
    // One connection, so that the statements are dropped on the very connection the next claim uses.
    const pool = new pg.Pool({ connectionString: database.url, max: 1 });
    try {
      const handles = { prisma, pool };
      expect((await claimNextAlert(handles, { actor: ada, now: NOW }))?.id).toBe(high);
      const [{ n: before }] = (await pool.query<{ n: number }>("SELECT count(*)::int AS n FROM pg_prepared_statements WHERE name LIKE 'triage_desk_take_next_%'")).rows;
      expect(before).toBe(2);
      await pool.query("DEALLOCATE ALL");
      expect((await claimNextAlert(handles, { actor: ada, now: NOW }))?.id).toBe(middle);
    } finally {
      await pool.end();
    }
  });
});

describe("more fell due than one sweep marks", () => {
  it("marks every due alert before claiming, so the most urgent overdue alert is taken, not one of the first thousand marked", async () => {
    // 1,004 low-priority alerts fell due two hours ago; the sweep marks a thousand at a time in due
    // order, so one sweep would leave the last ones — and the high-priority alert due a minute ago —
    // unmarked, and the claim would take a marked low-priority alert ahead of it.
    const ids = await createWaitingAlerts(prisma, { modelVersionId: model.id, count: 1_004, receivedFrom: new Date("2026-11-29T00:00:00Z"), dueAt: minutesLater(-120) });
    await prisma.$executeRaw`UPDATE alerts SET priority = 1 WHERE id = ANY(${ids}::uuid[])`;
    const urgent = await createAlert(prisma, model.id, { externalId: "urgent-late", dueAt: minutesLater(-1) });
    await prisma.$executeRaw`UPDATE alerts SET priority = 1000000 WHERE id = ${urgent.id}::uuid`;
    const taken = await claimNextAlert(database, { actor: ada, now: NOW });
    expect(taken!.id).toBe(urgent.id);
    const [{ unmarked }] = await prisma.$queryRaw<{ unmarked: number }[]>`
      SELECT count(*)::int AS unmarked FROM alerts WHERE state = 'waiting' AND NOT past_due AND due_at <= ${NOW}`;
    expect(unmarked).toBe(0);
  });
});

describe("leases", () => {
  it("an expired lease returns the alert to the queue, audited, and someone else can take it", async () => {
    await setQueue({ claimLeaseMinutes: 30 });
    const { high } = await threeAlerts();
    await claimNextAlert(database, { actor: ada, now: NOW });

    expect(await expireLeases(prisma, { now: minutesLater(29) })).toEqual([]);
    expect((await stateOf(high)).state).toBe("in_review");

    const expired = await expireLeases(prisma, { now: minutesLater(30) });
    expect(expired).toEqual([{ alertId: high, externalId: "high", heldBy: ada.id, leaseExpiredAt: minutesLater(30) }]);
    expect(await stateOf(high)).toEqual({ state: "waiting", assignedToId: null, claimedAt: null, leaseExpiresAt: null });
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "alert.lease_expired", subjectId: high } });
    expect(event).toMatchObject({ actorType: "system", actorLabel: "lease-expiry", payload: { alertId: high, externalId: "high", heldBy: ada.id } });
    expect(await expireLeases(prisma, { now: minutesLater(31) })).toEqual([]);

    // Claiming sweeps expired leases first: Ben gets the alert Ada let lapse.
    await claimNextAlert(database, { actor: ada, now: minutesLater(31) }); // Ada takes it again…
    const taken = await claimNextAlert(database, { actor: ben, now: minutesLater(62) }); // …and lets it lapse again.
    expect(taken!.id).toBe(high);
    expect(taken!.assignedToId).toBe(ben.id);
  });

  it("lists an analyst's own alerts in review with their leases", async () => {
    const { high, middle } = await threeAlerts();
    await claimNextAlert(database, { actor: ada, now: NOW });
    await claimNextAlert(database, { actor: ada, now: minutesLater(5) });
    await claimNextAlert(database, { actor: ben, now: NOW });
    const held = await getHeldAlerts(prisma, { userId: ada.id, now: minutesLater(32) });
    expect(held.map((alert) => [alert.id, alert.leaseExpired])).toEqual([
      [high, true],
      [middle, false],
    ]);
  });
});

describe("releasing", () => {
  it("the holder releases by hand, audited; releasing again changes nothing", async () => {
    const { high } = await threeAlerts();
    await claimNextAlert(database, { actor: ada, now: NOW });
    const released = await releaseAlert(prisma, { actor: ada, alertId: high, now: NOW, reason: "need a colleague's view" });
    expect(released.released).toBe(true);
    expect(released.alert).toMatchObject({ state: "waiting", assignedToId: null, leaseExpiresAt: null });
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "alert.released", subjectId: high } });
    expect(event.payload).toMatchObject({ reason: "need a colleague's view" });

    expect((await releaseAlert(prisma, { actor: ada, alertId: high, now: NOW })).released).toBe(false);
    expect(await prisma.auditEvent.count({ where: { action: "alert.released", subjectId: high } })).toBe(1);
    // Back at the front of the queue.
    expect((await claimNextAlert(database, { actor: ben, now: NOW }))!.id).toBe(high);
  });

  it("another analyst cannot release it; a supervisor can", async () => {
    const { high } = await threeAlerts();
    await claimNextAlert(database, { actor: ada, now: NOW });
    await expect(releaseAlert(prisma, { actor: ben, alertId: high, now: NOW })).rejects.toThrow(/only they or a supervisor/);
    const released = await releaseAlert(prisma, { actor: supervisor, alertId: high, now: NOW, reason: "Ada is off sick" });
    expect(released.released).toBe(true);
    const event = await prisma.auditEvent.findFirstOrThrow({ where: { action: "alert.released", subjectId: high } });
    expect(event.actorId).toBe(supervisor.id);
    expect((event.payload as { reason: string }).reason).toContain(ada.id);
  });
});

describe("closing needs the hold", () => {
  const inReviewBy = (id: string | null) => ({ id: "a", state: "in_review", assignedToId: id });

  it("the holder may close", () => {
    expect(() => assertHeldBy(inReviewBy(ada.id), ada)).not.toThrow();
  });

  it("anyone else is refused with a clear message", () => {
    expect(() => assertHeldBy(inReviewBy(ada.id), ben)).toThrow(/Another analyst holds this alert, so you cannot close it/);
    expect(() => assertHeldBy(inReviewBy(ada.id), supervisor)).toThrow(AppError);
    expect(() => assertHeldBy({ id: "a", state: "waiting", assignedToId: null }, ada)).toThrow(/Claim this alert before recording an outcome/);
    expect(() => assertHeldBy({ id: "a", state: "closed", assignedToId: ada.id }, ada)).toThrow(/already closed/);
  });
});
