// "Take next": claims the waiting alert that DESIGN.md §4 puts first (overdue first, then priority,
// then older, then id) for one analyst, with a lease, in one SQL statement.
//
// Index: alerts_waiting_queue_idx (past_due DESC, priority DESC NULLS LAST, received_at, id)
// WHERE state = 'waiting' — the key is QUEUE_ORDER_BY (lib/queue/list-waiting-alerts.ts) column for
// column, so the candidate is the first entry of the index that no other claim has locked: no sort,
// no filter, however many alerts wait, and a waiting alert leaves the index the moment it is claimed.
// "Overdue" is a stored mark (past_due) because a predicate on the clock cannot be indexed; the
// sweep markOverdueAlerts runs just before, so the mark is exact at `now`.
//
// EXPLAIN (ANALYZE) of the claim on 200,000 waiting + 200,000 closed alerts, with 1% or 60% of the
// waiting ones overdue, random or the lowest-priority ones: the same plan in all four cases, under
// a millisecond, one row read from the queue index:
//   Update on alerts a (rows=1)
//     CTE next
//       ->  Limit (rows=1)
//             ->  LockRows (rows=1)
//                   ->  Index Scan using alerts_waiting_queue_idx on alerts a_1 (rows=1)
//     ->  Nested Loop (rows=1)
//           ->  CTE Scan on next (rows=1)
//           ->  Index Scan using alerts_pkey on alerts a (rows=1, Index Cond: id = next.id)
//
// Concurrency: FOR UPDATE SKIP LOCKED makes a second claimer step over the row the first one is
// taking instead of waiting for it, so two analysts never receive the same alert and never queue
// behind each other. Two things that once made every claimer wait for the others are gone:
//   - the audit event is staged in the same statement (lib/audit/staged-audit-events.ts), not
//     appended to the chain under its one lock held until commit;
//   - the claim runs on `pg` directly, not through Prisma: with sixteen claimers in one Node
//     process, Prisma's per-query work (about 0.3 ms of CPU each, eight queries a claim) was the
//     queue they all stood in — 250 claims/s against 1,800 for the bare statement (npm run bench).
import "server-only";
import type pg from "pg";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import type { AuditContext } from "@/lib/audit/schemas";
import { linkStagedAuditEventsSoon } from "@/lib/audit/staged-audit-events";
import { settingsGroupOf } from "@/lib/settings/get-settings";
import { expireLeases } from "@/lib/queue/expire-leases";
import { MARK_BATCH, MARK_OVERDUE_SQL, markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";
import { QUEUE_ORDER_BY } from "@/lib/queue/list-waiting-alerts";
import { HOLD_LOCK_SQL, HELD_COUNT_SQL, holdLimitReached } from "@/lib/queue/hold-limit";
import { assertMayWorkAlerts } from "@/lib/queue/queue-actor";
import { CLAIMED_ALERT_COLUMNS, toClaimedAlert, type ClaimedAlertRow } from "@/lib/queue/claimed-alert-columns";
import type { ClaimedAlert } from "@/lib/queue/schemas";

export interface ClaimNextAlertOptions {
  actor: Actor;
  now: Date;
  context?: AuditContext;
}

/** Both handles of the app (lib/db/client): the claim itself on `pool`, the rare lease expiry and the audit linking on `prisma`. */
export interface ClaimDatabases {
  prisma: PrismaClient;
  pool: pg.Pool;
}

// One round trip before the transaction: mark what fell due, say whether any lease ran out, and
// read the queue settings (per claim: a change takes effect for the very next claim).
const PREPARE_SQL = `
  WITH marked AS (${MARK_OVERDUE_SQL})
  SELECT (SELECT count(*) FROM marked)::int AS marked,
         EXISTS (SELECT 1 FROM alerts WHERE state = 'in_review' AND lease_expires_at <= $1) AS "leasesExpired",
         (SELECT value FROM settings WHERE key = 'queue') AS queue`;

// The claim and its staged audit event in one statement. The payload is the alert.claimed event of
// lib/audit/schemas.ts; tests/audit/staged-audit-events.integration.test.ts checks that it parses.
const CLAIM_SQL = `
  WITH next AS (
    SELECT a.id FROM alerts a
     WHERE a.state = 'waiting'
     ORDER BY ${QUEUE_ORDER_BY.sql}
     LIMIT 1
       FOR UPDATE SKIP LOCKED),
  claimed AS (
    UPDATE alerts a
       SET state = 'in_review', assigned_to_id = $1::uuid, claimed_at = $2, lease_expires_at = $3
      FROM next
     WHERE a.id = next.id
    RETURNING ${CLAIMED_ALERT_COLUMNS.sql}),
  staged AS (
    INSERT INTO audit_events_staged (actor_type, actor_id, actor_label, action, subject_type, subject_id, payload, request_id, ip_address)
    SELECT $4, $1, $5, 'alert.claimed', 'alert', c.id::text,
           jsonb_build_object('alertId', c.id::text, 'externalId', c."externalId", 'leaseExpiresAt', $6::text, 'how', 'take_next'),
           $7, $8
      FROM claimed c)
  SELECT * FROM claimed`;

/** The claimed alert, or null when no alert is waiting (or every waiting one is being claimed). */
export async function claimNextAlert(databases: ClaimDatabases, options: ClaimNextAlertOptions): Promise<ClaimedAlert | null> {
  const { actor, now } = options;
  assertMayWorkAlerts(actor);
  const { prisma, pool } = databases;

  const [prepared] = (await pool.query<{ marked: number; leasesExpired: boolean; queue: unknown }>(PREPARE_SQL, [now])).rows;
  // Expired leases go back to the queue first, audited one by one (rare: through the domain function).
  if (prepared.leasesExpired) await expireLeases(prisma, { now, context: options.context });
  // More fell due than one statement marks (after a quiet night), or leases returned alerts.
  if (prepared.leasesExpired || prepared.marked >= MARK_BATCH) await markOverdueAlerts(prisma, { now });
  const queue = settingsGroupOf("queue", prepared.queue ?? undefined);
  const leaseExpiresAt = new Date(now.getTime() + queue.claimLeaseMinutes * 60_000);
  const auditActor = auditActorOf(actor);

  const client = await pool.connect();
  let row: ClaimedAlertRow | undefined;
  try {
    await client.query("BEGIN");
    await client.query(HOLD_LOCK_SQL, [actor.id]);
    const [{ held }] = (await client.query<{ held: number }>(HELD_COUNT_SQL, [actor.id])).rows;
    const refusal = holdLimitReached(held, queue.maxHeldPerAnalyst);
    if (refusal) throw refusal;
    [row] = (
      await client.query<ClaimedAlertRow>(CLAIM_SQL, [
        actor.id,
        now,
        leaseExpiresAt,
        auditActor.type,
        auditActor.label,
        leaseExpiresAt.toISOString(),
        options.context?.requestId ?? null,
        options.context?.ipAddress ?? null,
      ])
    ).rows;
    await client.query("COMMIT");
  } catch (error) {
    await client.query("ROLLBACK").catch(() => undefined);
    throw error;
  } finally {
    client.release();
  }
  if (!row) return null;
  // Committed: link the staged event into the audit chain in the background.
  linkStagedAuditEventsSoon(prisma);
  return toClaimedAlert(row);
}
