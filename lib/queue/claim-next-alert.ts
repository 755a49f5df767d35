// "Take next": claims the waiting alert that DESIGN.md §4 puts first (overdue first, then priority,
// then older, then id) for one analyst, with a lease, in one SQL statement.
//
// Index: alerts_waiting_queue_idx (past_due DESC, priority DESC NULLS LAST, received_at, id)
// WHERE state = 'waiting' — the key is QUEUE_ORDER_BY (lib/queue/list-waiting-alerts.ts) column for
// column, so the candidate is the first entry of the index that no other claim has locked: no sort,
// no filter, however many alerts wait, and a waiting alert leaves the index the moment it is claimed.
// "Overdue" is a stored mark (past_due) because a predicate on the clock cannot be indexed; the
// sweep markOverdueAlerts runs just before, so the mark is exact at `now`. Without it the planner
// walked the priority index filtering on due_at and, with the overdue alerts among the low-EL ones,
// threw away 197,974 of 200,000 rows per claim.
//
// EXPLAIN (ANALYZE) of this statement on 200,000 waiting + 200,000 closed alerts, with 1% or 60%
// of the waiting ones overdue, and the overdue ones either random or the lowest-priority ones: the
// same plan in all four cases, under a millisecond, one row read from the queue index:
//   Update on alerts a (rows=1)
//     CTE next
//       ->  Limit (rows=1)
//             ->  LockRows (rows=1)
//                   ->  Index Scan using alerts_waiting_queue_idx on alerts a_1 (rows=1)
//     ->  Nested Loop (rows=1)
//           ->  CTE Scan on next (rows=1)
//           ->  Index Scan using alerts_pkey on alerts a (rows=1, Index Cond: id = next.id)
// The sweep before it (mark-overdue-alerts.ts) is a Bitmap Index Scan on
// alerts_waiting_unmarked_due_idx: 0.06 ms with nothing to mark, then the primary key per marked row.
//
// Concurrency: FOR UPDATE SKIP LOCKED makes a second claimer step over the row the first one is
// taking instead of waiting for it, so two analysts never receive the same alert and never queue
// behind each other. Lock order, to stay deadlock-free: row changes first, the audit append last.
// The append takes the audit chain's lock until commit, and a transaction that holds it must never
// wait for a row lock — every statement here skips locked rows instead of waiting.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { expireLeases } from "@/lib/queue/expire-leases";
import { markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";
import { QUEUE_ORDER_BY } from "@/lib/queue/list-waiting-alerts";
import { assertBelowHoldLimit } from "@/lib/queue/hold-limit";
import { assertMayWorkAlerts, CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";
import { CLAIMED_ALERT_COLUMNS, toClaimedAlert, type ClaimedAlertRow } from "@/lib/queue/claimed-alert-columns";
import type { ClaimedAlert } from "@/lib/queue/schemas";

export interface ClaimNextAlertOptions {
  actor: Actor;
  now: Date;
  context?: AuditContext;
}

/** The claimed alert, or null when no alert is waiting (or every waiting one is being claimed). */
export async function claimNextAlert(db: DbOrTx, options: ClaimNextAlertOptions): Promise<ClaimedAlert | null> {
  const { actor, now } = options;
  assertMayWorkAlerts(actor);
  // Housekeeping in their own short transactions, so the claim's locks are held as briefly as possible.
  await expireLeases(db, { now, context: options.context });
  await markOverdueAlerts(db, { now });

  const run = async (tx: Prisma.TransactionClient): Promise<ClaimedAlert | null> => {
    // Read per claim: a settings change takes effect for the very next claim.
    const { queue } = await getSettings(tx);
    await assertBelowHoldLimit(tx, { userId: actor.id, maxHeld: queue.maxHeldPerAnalyst });
    const leaseExpiresAt = new Date(now.getTime() + queue.claimLeaseMinutes * 60_000);
    const [row] = await tx.$queryRaw<ClaimedAlertRow[]>`
      WITH next AS (
        SELECT a.id FROM alerts a
         WHERE a.state = 'waiting'
         ORDER BY ${QUEUE_ORDER_BY}
         LIMIT 1
           FOR UPDATE SKIP LOCKED)
      UPDATE alerts a
         SET state = 'in_review', assigned_to_id = ${actor.id}::uuid, claimed_at = ${now}, lease_expires_at = ${leaseExpiresAt}
        FROM next
       WHERE a.id = next.id
      RETURNING ${CLAIMED_ALERT_COLUMNS}`;
    if (!row) return null;
    await recordAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: { action: "alert.claimed", payload: { alertId: row.id, externalId: row.externalId, leaseExpiresAt: leaseExpiresAt.toISOString(), how: "take_next" } },
      subject: { type: "alert", id: row.id },
      context: options.context,
    });
    return toClaimedAlert(row);
  };
  return inTransaction(db, run, CLAIM_TRANSACTION);
}
