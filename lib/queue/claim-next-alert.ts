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
//     queue they all stood in — 250 claims/s against 1,800 for the bare statement (npm run bench);
//   - two round trips in all: housekeeping with the settings, then the claim as one message
//     (claimMessage below) instead of an interactive transaction of five.
import "server-only";
import pg from "pg";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import type { AuditContext } from "@/lib/audit/schemas";
import { linkStagedAuditEventsSoon } from "@/lib/audit/staged-audit-events";
import { settingsGroupOf } from "@/lib/settings/get-settings";
import { expireLeases } from "@/lib/queue/expire-leases";
import { MARK_BATCH, MARK_OVERDUE_SQL, markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";
import { QUEUE_ORDER_BY } from "@/lib/queue/list-waiting-alerts";
import { holdLimitReached } from "@/lib/queue/hold-limit";
import { assertMayWorkAlerts, QUEUE_LOCK_CLASS } from "@/lib/queue/queue-actor";
import { AppError } from "@/lib/errors";
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

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function literal(value: string | null): string {
  return value === null ? "NULL" : pg.escapeLiteral(value);
}

/**
 * The claim as one message of two statements, which PostgreSQL runs as one implicit transaction:
 * the analyst's hold lock (the same key as HOLD_LOCK_SQL), then — with a snapshot taken after the
 * lock, so another tab's claim that just committed is counted — the held count, the claim if below
 * the limit, and its staged audit event (the alert.claimed event of lib/audit/schemas.ts;
 * tests/audit/staged-audit-events.integration.test.ts checks it parses). One round trip instead of
 * BEGIN, lock, count, claim and COMMIT. A message of several statements cannot carry parameters, so
 * the values are written as literals: the user id checked as a UUID, numbers from the parsed
 * settings, text through pg's escapeLiteral.
 */
function claimMessage(values: {
  userId: string;
  maxHeld: number;
  now: Date;
  leaseExpiresAt: Date;
  actorType: string;
  actorLabel: string;
  requestId: string | null;
  ipAddress: string | null;
}): string {
  if (!UUID.test(values.userId)) throw new AppError("invalid_input", "claim: the user id is not a UUID");
  if (!Number.isSafeInteger(values.maxHeld)) throw new AppError("invalid_input", "claim: the hold limit is not a whole number");
  const user = literal(values.userId);
  const leaseExpiresAt = literal(values.leaseExpiresAt.toISOString());
  return `
    SELECT pg_advisory_xact_lock(${QUEUE_LOCK_CLASS}::int, hashtext(${user}::text));
    WITH held AS (
      SELECT count(*)::int AS n FROM alerts WHERE assigned_to_id = ${user}::uuid AND state = 'in_review'),
    next AS (
      SELECT a.id FROM alerts a
       WHERE a.state = 'waiting' AND (SELECT n FROM held) < ${values.maxHeld}
       ORDER BY ${QUEUE_ORDER_BY.sql}
       LIMIT 1
         FOR UPDATE SKIP LOCKED),
    claimed AS (
      UPDATE alerts a
         SET state = 'in_review', assigned_to_id = ${user}::uuid, claimed_at = ${literal(values.now.toISOString())}::timestamptz,
             lease_expires_at = ${leaseExpiresAt}::timestamptz
        FROM next
       WHERE a.id = next.id
      RETURNING ${CLAIMED_ALERT_COLUMNS.sql}),
    staged AS (
      INSERT INTO audit_events_staged (actor_type, actor_id, actor_label, action, subject_type, subject_id, payload, request_id, ip_address)
      SELECT ${literal(values.actorType)}, ${user}, ${literal(values.actorLabel)}, 'alert.claimed', 'alert', c.id::text,
             jsonb_build_object('alertId', c.id::text, 'externalId', c."externalId", 'leaseExpiresAt', ${leaseExpiresAt}::text, 'how', 'take_next'),
             ${literal(values.requestId)}, ${literal(values.ipAddress)}
        FROM claimed c)
    SELECT (SELECT n FROM held) AS held, c.* FROM (SELECT 1) AS one LEFT JOIN claimed c ON true`;
}

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

  const results = (await pool.query(
    claimMessage({
      userId: actor.id,
      maxHeld: queue.maxHeldPerAnalyst,
      now,
      leaseExpiresAt,
      actorType: auditActor.type,
      actorLabel: auditActor.label,
      requestId: options.context?.requestId ?? null,
      ipAddress: options.context?.ipAddress ?? null,
    }),
  )) as unknown as pg.QueryResult<ClaimedAlertRow & { held: number; id: string | null }>[];
  const [{ held, ...claimed }] = results[1].rows;
  if (claimed.id === null) {
    const refusal = holdLimitReached(held, queue.maxHeldPerAnalyst);
    if (refusal) throw refusal;
    return null;
  }
  // Committed: link the staged event into the audit chain in the background.
  linkStagedAuditEventsSoon(prisma);
  return toClaimedAlert(claimed as ClaimedAlertRow);
}
