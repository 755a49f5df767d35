// "Take next": claims the waiting alert that DESIGN.md §4 puts first (overdue first, then priority,
// then older, then id) for one analyst, with a lease, in one SQL statement.
//
// Index: alerts_waiting_queue_idx (past_due DESC, priority DESC NULLS LAST, received_at, id)
// WHERE state = 'waiting' — the key is QUEUE_ORDER_BY (lib/queue/list-waiting-alerts.ts) column for
// column, so the candidate is the first entry of the index that no other claim has locked: no sort,
// no filter, however many alerts wait, and a waiting alert leaves the index the moment it is claimed.
// "Overdue" is a stored mark (past_due) because a predicate on the clock cannot be indexed; the
// sweep (MARK_OVERDUE_SQL) runs just before the claim, in the same message, so the mark is exact at `now`.
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
//   - one round trip in all: the overdue sweep, the settings and the claim travel as one message
//     (claimMessage below) instead of an interactive transaction of five statements, and the sweep
//     and the claim are statements prepared once per connection, run by name.
import "server-only";
import { createHash } from "node:crypto";
import pg from "pg";
import type { PrismaClient } from "@/lib/generated/prisma/client";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import type { AuditContext } from "@/lib/audit/schemas";
import { linkStagedAuditEventsSoon } from "@/lib/audit/staged-audit-events";
import { defaultSettings } from "@/lib/settings/schemas";
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

/** Transaction-local: how many alerts the claim message's sweep marked. */
const MARKED_SETTING = "triage_desk.overdue_marked";

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

function literal(value: string | null): string {
  return value === null ? "NULL" : pg.escapeLiteral(value);
}

/**
 * A whole-number queue setting read in SQL from the stored group (`q.queue`, jsonb), or its default
 * from code when the group lacks it. Stored groups are validated on write (updateSettings).
 */
function queueSettingSql(key: "maxHeldPerAnalyst" | "claimLeaseMinutes"): string {
  const fallback = defaultSettings.queue[key];
  if (!Number.isSafeInteger(fallback)) throw new AppError("invalid_input", `claim: the default ${key} is not a whole number`);
  return `coalesce(CASE WHEN jsonb_typeof(q.queue->'${key}') = 'number' THEN (q.queue->>'${key}')::int END, ${fallback})`;
}

/**
 * The statements of a claim, prepared once on each connection (PREPARE) and run by name, so that
 * PostgreSQL neither parses nor plans them on every claim: planning the claim and the sweep had
 * been 2 ms of each claim's PostgreSQL time against half a millisecond for the bare statement
 * (pg_stat_statements, 16 claimers on a 1,000,000-alert bench database). The names carry a hash of
 * the text, so a connection that outlives a change of it (a dev server's reload) prepares the new one.
 *
 * The sweep: MARK_OVERDUE_SQL ($1 = now; one probe of its partial index when nothing fell due),
 * leaving how many it marked in a transaction-local setting. A full batch means more fell due than
 * one statement marks (after a quiet night); reading the setting costs nothing, where probing the
 * unmarked-due index again did, right after a mass of alerts had been marked.
 */
const SWEEP_SQL = `
    WITH marked AS (${MARK_OVERDUE_SQL})
    SELECT set_config('${MARKED_SETTING}', count(*)::text, true) FROM marked`;

/**
 * The claim, with a snapshot taken after the hold lock (so another tab's claim that just committed
 * is counted): the queue settings, the held count, the claim if below the limit, and its staged
 * audit event (the alert.claimed event of lib/audit/schemas.ts;
 * tests/audit/staged-audit-events.integration.test.ts checks it parses).
 * $1 user id, $2 now, $3 after housekeeping (claim even when it is due), $4 actor type,
 * $5 actor label, $6 request id, $7 IP address.
 * It stands aside (`housekeepingDue`) when a lease has run out or the sweep marked a full batch:
 * the caller then does that housekeeping through the domain functions and sends the message again.
 * (A due alert another claimer's sweep holds locked is marked by that sweep.) When nothing was
 * claimed below the hold limit, `othersHoldWaiting` says whether alerts still wait (each locked by
 * another transaction, which SKIP LOCKED stepped over), so the caller can tell a busy queue from an
 * empty one. Settings are read per claim, so a change applies to the very next one.
 */
const CLAIM_SQL = `
    WITH settings_now AS (
      SELECT ${queueSettingSql("maxHeldPerAnalyst")} AS max_held,
             $2 + make_interval(mins => ${queueSettingSql("claimLeaseMinutes")}) AS lease_expires_at,
             CASE WHEN $3 THEN false
                  ELSE EXISTS (SELECT 1 FROM alerts WHERE state = 'in_review' AND lease_expires_at <= $2)
                       OR current_setting('${MARKED_SETTING}')::int >= ${MARK_BATCH} END AS housekeeping_due
        FROM (SELECT (SELECT value FROM settings WHERE key = 'queue') AS queue) q),
    held AS (
      SELECT count(*)::int AS n FROM alerts WHERE assigned_to_id = $1 AND state = 'in_review'),
    next AS (
      SELECT a.id FROM alerts a
       WHERE a.state = 'waiting' AND (SELECT n FROM held) < (SELECT max_held FROM settings_now)
         AND NOT (SELECT housekeeping_due FROM settings_now)
       ORDER BY ${QUEUE_ORDER_BY.sql}
       LIMIT 1
         FOR UPDATE SKIP LOCKED),
    claimed AS (
      UPDATE alerts a
         SET state = 'in_review', assigned_to_id = $1, claimed_at = $2,
             lease_expires_at = (SELECT lease_expires_at FROM settings_now)
        FROM next
       WHERE a.id = next.id
      RETURNING ${CLAIMED_ALERT_COLUMNS.sql}),
    staged AS (
      INSERT INTO audit_events_staged (actor_type, actor_id, actor_label, action, subject_type, subject_id, payload, request_id, ip_address)
      SELECT $4, $1::text, $5, 'alert.claimed', 'alert', c.id::text,
             jsonb_build_object('alertId', c.id::text, 'externalId', c."externalId",
                                'leaseExpiresAt', to_char(c."leaseExpiresAt" AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"'),
                                'how', 'take_next'),
             $6, $7
        FROM claimed c)
    SELECT (SELECT n FROM held) AS held, s.max_held AS "maxHeld", s.housekeeping_due AS "housekeepingDue",
           CASE WHEN c.id IS NULL AND NOT s.housekeeping_due AND (SELECT n FROM held) < s.max_held
                THEN EXISTS (SELECT 1 FROM alerts WHERE state = 'waiting') ELSE false END AS "othersHoldWaiting",
           c.*
      FROM settings_now s LEFT JOIN claimed c ON true`;

const statementName = (role: string, text: string) => `triage_desk_${role}_${createHash("sha256").update(text).digest("hex").slice(0, 12)}`;
const SWEEP_STATEMENT = statementName("take_next_sweep", SWEEP_SQL);
const CLAIM_STATEMENT = statementName("take_next_claim", CLAIM_SQL);
const PREPARE_STATEMENTS = `
    PREPARE ${SWEEP_STATEMENT}(timestamptz) AS ${SWEEP_SQL};
    PREPARE ${CLAIM_STATEMENT}(uuid, timestamptz, boolean, text, text, text, text) AS ${CLAIM_SQL}`;

/** Connections (pg reuses a pooled connection's client object) on which the statements are prepared. */
const preparedOn = new WeakSet<pg.PoolClient>();

/**
 * The whole claim as one message of three statements, which PostgreSQL runs as one implicit
 * transaction, in one round trip: the sweep, the analyst's hold lock (the same key as
 * HOLD_LOCK_SQL), then the claim. A message of several statements cannot carry parameters, so
 * the values are literals: the user id checked as a UUID, text through pg's escapeLiteral.
 */
function claimMessage(values: {
  userId: string;
  now: Date;
  /** Claim even when housekeeping is due (the second attempt, after doing it). */
  afterHousekeeping: boolean;
  actorType: string;
  actorLabel: string;
  requestId: string | null;
  ipAddress: string | null;
}): string {
  if (!UUID.test(values.userId)) throw new AppError("invalid_input", "claim: the user id is not a UUID");
  const user = literal(values.userId);
  const now = literal(values.now.toISOString());
  return `
    EXECUTE ${SWEEP_STATEMENT}(${now});
    SELECT pg_advisory_xact_lock(${QUEUE_LOCK_CLASS}::int, hashtext(${user}::text));
    EXECUTE ${CLAIM_STATEMENT}(${user}, ${now}, ${values.afterHousekeeping}, ${literal(values.actorType)}, ${literal(values.actorLabel)},
                               ${literal(values.requestId)}, ${literal(values.ipAddress)})`;
}

/** PostgreSQL's codes: the prepared statement already exists; it does not exist (a pooler in front of the server dropped it). */
const DUPLICATE_PREPARED_STATEMENT = "42P05";
const NO_SUCH_PREPARED_STATEMENT = "26000";

/** Sends the claim message on a connection that has the statements prepared, preparing them first when it has not. */
async function sendClaimMessage(pool: pg.Pool, message: string): Promise<pg.QueryResult[]> {
  const client = await pool.connect();
  let broken = false;
  const prepare = async () => {
    try {
      await client.query(PREPARE_STATEMENTS);
    } catch (error) {
      // Prepared under these very names (so this very text) before this module was loaded.
      if ((error as { code?: string }).code !== DUPLICATE_PREPARED_STATEMENT) throw error;
    }
    preparedOn.add(client);
  };
  try {
    if (!preparedOn.has(client)) await prepare();
    try {
      return (await client.query(message)) as unknown as pg.QueryResult[];
    } catch (error) {
      if ((error as { code?: string }).code !== NO_SUCH_PREPARED_STATEMENT) throw error;
      // The message failed as a whole (one implicit transaction), so nothing of it stands: prepare again and resend.
      preparedOn.delete(client);
      await prepare();
      return (await client.query(message)) as unknown as pg.QueryResult[];
    }
  } catch (error) {
    broken = !(error instanceof pg.DatabaseError);
    throw error;
  } finally {
    client.release(broken);
  }
}

type ClaimAnswer = ClaimedAlertRow & { held: number; maxHeld: number; housekeepingDue: boolean; othersHoldWaiting: boolean; id: string | null };

/**
 * Pauses (ms) before sending the claim again when alerts wait but every one of them is locked by
 * another transaction: claims in flight (whose alerts are no longer waiting once they commit), a
 * sweep marking a batch that just fell due (it holds them until its claim commits), a refit
 * re-deriving priorities. Without a second try, sixteen analysts starting on a batch that fell due
 * at once were told nothing was waiting while hundreds were. About 1.3 s in all, short for someone
 * who clicked, long for a lock held by another claim; after that the analyst is told the queue is
 * busy, not that it is empty.
 */
const BUSY_QUEUE_PAUSES_MS = [2, 5, 10, 20, 40, 80, 160, 320, 640] as const;

const pause = (ms: number) => new Promise<void>((resolve) => setTimeout(resolve, ms));

/**
 * The claimed alert, or null when no alert is waiting. When alerts wait but others hold every one of
 * them locked, it tries again (BUSY_QUEUE_PAUSES_MS) and then refuses with a conflict.
 */
export async function claimNextAlert(databases: ClaimDatabases, options: ClaimNextAlertOptions): Promise<ClaimedAlert | null> {
  const { actor, now } = options;
  assertMayWorkAlerts(actor);
  const { prisma, pool } = databases;

  const auditActor = auditActorOf(actor);
  const send = async (afterHousekeeping: boolean): Promise<ClaimAnswer> => {
    const message = claimMessage({
      userId: actor.id,
      now,
      afterHousekeeping,
      actorType: auditActor.type,
      actorLabel: auditActor.label,
      requestId: options.context?.requestId ?? null,
      ipAddress: options.context?.ipAddress ?? null,
    });
    const results = await sendClaimMessage(pool, message);
    return results[2].rows[0] as ClaimAnswer;
  };

  let answer = await send(false);
  if (answer.housekeepingDue) {
    // Rare: expired leases go back to the queue, audited one by one, and everything that fell due is
    // marked, through the domain functions; then the claim is sent again.
    await expireLeases(prisma, { now, context: options.context });
    await markOverdueAlerts(prisma, { now });
    answer = await send(true);
  }
  for (const ms of BUSY_QUEUE_PAUSES_MS) {
    if (!answer.othersHoldWaiting) break;
    await pause(ms);
    answer = await send(true);
  }
  const { held, maxHeld, housekeepingDue, othersHoldWaiting, ...claimed } = answer;
  if (claimed.id === null) {
    const refusal = holdLimitReached(held, maxHeld);
    if (refusal) throw refusal;
    if (othersHoldWaiting) {
      throw new AppError("conflict", "Every waiting alert is being taken or updated by someone else at this moment. Try again in a few seconds.");
    }
    return null;
  }
  // Committed: link the staged event into the audit chain in the background.
  linkStagedAuditEventsSoon(prisma);
  return toClaimedAlert(claimed as ClaimedAlertRow);
}
