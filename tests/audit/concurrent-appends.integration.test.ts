import { describe, expect, it } from "vitest";
import type { Prisma } from "@/lib/generated/prisma/client";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import { verifyAuditChain } from "@/lib/audit/verify-audit-chain";
import { useTestDatabase } from "@/tests/support/test-database";
import { createAlerts, createUser } from "@/tests/audit/audit-fixtures";

const database = await useTestDatabase();
const { prisma, pool } = database;
const transactionOptions = { maxWait: 10_000, timeout: 30_000 };

// A minimal claim and close, written here so that this test depends only on the audit module:
// the state change and its audit event commit in one transaction, as every real action does.
async function claimNext(tx: Prisma.TransactionClient, reviewer: { id: string; email: string }) {
  const [claimed] = await tx.$queryRaw<{ id: string; external_id: string; lease_expires_at: Date }[]>`
    UPDATE alerts SET state = 'in_review', assigned_to_id = ${reviewer.id}::uuid, claimed_at = now(),
                      lease_expires_at = now() + interval '15 minutes'
     WHERE id = (SELECT id FROM alerts WHERE state = 'waiting'
                  ORDER BY priority DESC NULLS LAST, received_at, id LIMIT 1 FOR UPDATE SKIP LOCKED)
    RETURNING id::text, external_id, lease_expires_at`;
  if (!claimed) return null;
  await recordAuditEvent(tx, {
    actor: { type: "user", id: reviewer.id, label: reviewer.email },
    event: { action: "alert.claimed", payload: { alertId: claimed.id, externalId: claimed.external_id, leaseExpiresAt: claimed.lease_expires_at.toISOString(), how: "take_next" } },
    subject: { type: "alert", id: claimed.id },
  });
  return claimed;
}

async function close(tx: Prisma.TransactionClient, reviewer: { id: string; email: string }, alert: { id: string; external_id: string }) {
  const changed = await tx.$executeRaw`
    UPDATE alerts SET state = 'closed', closed_at = now(), final_outcome = 'legitimate'
     WHERE id = ${alert.id}::uuid AND state = 'in_review' AND assigned_to_id = ${reviewer.id}::uuid`;
  if (changed !== 1) throw new Error(`alert ${alert.id} was not held by ${reviewer.email}`);
  await recordAuditEvent(tx, {
    actor: { type: "user", id: reviewer.id, label: reviewer.email },
    event: {
      action: "outcome.recorded",
      payload: { alertId: alert.id, externalId: alert.external_id, outcome: "legitimate", reason: "pattern matches the customer's history", round: 1, handlingSeconds: 60, origin: "screen", sentToSecondReview: false },
    },
    subject: { type: "alert", id: alert.id },
  });
}

describe("concurrent writers keep one linear chain", () => {
  it("16 reviewers claiming and closing at once: the chain is whole and every action is there exactly once", async () => {
    const writers = 16;
    const alertsPerWriter = 13; // 26 events per writer, 416 in all
    const alerts = await createAlerts(pool, writers * alertsPerWriter);
    const reviewers = await Promise.all(Array.from({ length: writers }, () => createUser(pool)));
    const before = await prisma.auditEvent.count();

    await Promise.all(
      reviewers.map(async (reviewer) => {
        for (let index = 0; index < alertsPerWriter; index += 1) {
          const claimed = await prisma.$transaction((tx) => claimNext(tx, reviewer), transactionOptions);
          if (!claimed) throw new Error("ran out of alerts");
          await prisma.$transaction((tx) => close(tx, reviewer, claimed), transactionOptions);
        }
      }),
    );

    const report = await verifyAuditChain(prisma, { batchSize: 50 });
    expect(report).toMatchObject({ intact: true, verified: before + writers * alertsPerWriter * 2 });

    // No fork: two events never share a predecessor.
    const { rows: forks } = await pool.query("SELECT prev_hash FROM audit_events GROUP BY prev_hash HAVING count(*) > 1");
    expect(forks).toEqual([]);

    // Every alert was claimed once and closed once, by the same person who holds it in the table,
    // and the claim comes before the close in the chain.
    const { rows } = await pool.query<{ alert_id: string; claims: number; closes: number; claimer: string; closer: string; assigned: string; in_order: boolean; state: string }>(`
      SELECT a.id::text AS alert_id, a.state, a.assigned_to_id::text AS assigned,
             count(*) FILTER (WHERE e.action = 'alert.claimed')::int AS claims,
             count(*) FILTER (WHERE e.action = 'outcome.recorded')::int AS closes,
             min(e.actor_id) FILTER (WHERE e.action = 'alert.claimed') AS claimer,
             min(e.actor_id) FILTER (WHERE e.action = 'outcome.recorded') AS closer,
             min(e.id) FILTER (WHERE e.action = 'alert.claimed') < min(e.id) FILTER (WHERE e.action = 'outcome.recorded') AS in_order
        FROM alerts a LEFT JOIN audit_events e ON e.subject_type = 'alert' AND e.subject_id = a.id::text
       WHERE a.id = ANY($1::uuid[])
       GROUP BY a.id`, [alerts.map((alert) => alert.id)]);
    expect(rows).toHaveLength(alerts.length);
    for (const alert of rows) {
      expect(alert).toMatchObject({ state: "closed", claims: 1, closes: 1, claimer: alert.assigned, closer: alert.assigned, in_order: true });
    }
    const perReviewer = await pool.query<{ actor_id: string; n: number }>(
      "SELECT actor_id, count(*)::int AS n FROM audit_events WHERE action IN ('alert.claimed', 'outcome.recorded') GROUP BY actor_id",
    );
    expect(perReviewer.rows.map((entry) => entry.n)).toEqual(Array(writers).fill(alertsPerWriter * 2));
  });
});

describe("a rolled-back action leaves no audit event behind", () => {
  it("when the transaction fails after the event was appended, neither the change nor the event remain", async () => {
    const [alert] = await createAlerts(pool, 1, "RB");
    const reviewer = await createUser(pool);
    const headBefore = await verifyAuditChain(prisma);
    if (!headBefore.intact) throw new Error("the chain should verify before the test");
    const countBefore = await prisma.auditEvent.count();

    await expect(
      prisma.$transaction(async (tx) => {
        await claimNext(tx, reviewer);
        throw new Error("the screen's request was cancelled");
      }),
    ).rejects.toThrow("cancelled");

    expect(await prisma.auditEvent.count()).toBe(countBefore);
    expect(await pool.query("SELECT count(*)::int AS n FROM audit_events WHERE actor_id = $1", [reviewer.id])).toMatchObject({ rows: [{ n: 0 }] });
    expect((await pool.query("SELECT state FROM alerts WHERE id = $1", [alert.id])).rows[0].state).toBe("waiting");

    // The next append links to the last committed event, not to the hash that was rolled back.
    const claimed = await prisma.$transaction((tx) => claimNext(tx, reviewer));
    expect(claimed?.id).toBe(alert.id);
    const { rows } = await pool.query("SELECT prev_hash FROM audit_events ORDER BY id DESC LIMIT 1");
    expect(rows[0].prev_hash).toBe(headBefore.headHash);
    expect(await verifyAuditChain(prisma)).toMatchObject({ intact: true, verified: countBefore + 1 });
  });

  it("when the database itself rejects the change after the event, the event goes with it", async () => {
    const [alert] = await createAlerts(pool, 1, "RC");
    const reviewer = await createUser(pool);
    const countBefore = await prisma.auditEvent.count();
    await expect(
      prisma.$transaction(async (tx) => {
        const claimed = await claimNext(tx, reviewer);
        // Breaks the CHECK that a closed alert has an outcome.
        await tx.$executeRaw`UPDATE alerts SET state = 'closed', closed_at = now() WHERE id = ${claimed!.id}::uuid`;
      }),
    ).rejects.toThrow();
    expect(await prisma.auditEvent.count()).toBe(countBefore);
    expect((await pool.query("SELECT state FROM alerts WHERE id = $1", [alert.id])).rows[0].state).toBe("waiting");
    expect(await verifyAuditChain(prisma)).toMatchObject({ intact: true, verified: countBefore });
  });
});
