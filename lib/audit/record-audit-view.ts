// Records that someone looked at the audit trail (the screen or GET /api/v1/audit/events).
//
// At most one `audit.viewed` per person, per filter, per minute. Every reload, every page of
// the same result and every re-render after a network hiccup is a "view"; recording each would
// let an ordinary afternoon of paging bury the decisions the trail exists for, and would let
// anyone flood the chain by holding F5. What an auditor asks of these events is "who looked at
// the trail of this alert or this reviewer, and when", which a minute's resolution answers. The
// filter (not the page) is the key: paging through one result is one view, a new question is a
// new view. Exports are never folded this way; each one is recorded (export-audit-events.ts).
import { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { compactAuditFilter } from "@/lib/audit/audit-query";
import { AUDIT_CHAIN_LOCK_KEY, recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditContext, AuditFilter } from "@/lib/audit/schemas";

export const AUDIT_VIEW_WINDOW_SECONDS = 60;

export interface RecordAuditViewOptions {
  actor: AuditActor;
  filter: AuditFilter;
  context?: AuditContext;
  /** Tests shorten it; the app uses the default. */
  windowSeconds?: number;
}

export async function recordAuditView(db: DbOrTx, options: RecordAuditViewOptions): Promise<{ recorded: boolean; eventId: string }> {
  const filter = compactAuditFilter(options.filter);
  const run = async (tx: Prisma.TransactionClient) => {
    // Taken before the check, so two reloads racing each other cannot both find nothing and both
    // append; recordAuditEvent() takes the same lock again, which PostgreSQL allows in one transaction.
    await tx.$executeRaw`SELECT pg_advisory_xact_lock(${AUDIT_CHAIN_LOCK_KEY}::bigint)`;
    const [recent] = await tx.$queryRaw<{ id: bigint }[]>`
      SELECT id FROM audit_events
       WHERE action = 'audit.viewed'
         AND ${options.actor.id === null ? Prisma.sql`actor_id IS NULL AND actor_label = ${options.actor.label}` : Prisma.sql`actor_id = ${options.actor.id}`}
         AND payload->'filter' = ${JSON.stringify(filter)}::jsonb
         AND occurred_at > clock_timestamp() - make_interval(secs => ${options.windowSeconds ?? AUDIT_VIEW_WINDOW_SECONDS})
       ORDER BY id DESC LIMIT 1`;
    if (recent) return { recorded: false, eventId: recent.id.toString() };
    const { id } = await recordAuditEvent(tx, { actor: options.actor, event: { action: "audit.viewed", payload: { filter } }, context: options.context });
    return { recorded: true, eventId: id.toString() };
  };
  return inTransaction(db, run);
}
