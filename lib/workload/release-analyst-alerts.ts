// A supervisor puts every alert an analyst holds back in the queue (the analyst went home, fell ill,
// or holds alerts that others should take now). One transaction: the alerts return to `waiting` and
// each gets its alert.released audit event, or nothing happens. Safe to repeat: an analyst who holds
// nothing has nothing released.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditActorOf, type Actor, type UserActor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";

export interface ReleaseAnalystAlertsOptions {
  actor: Actor;
  analystId: string;
  now: Date;
  /** Why, in a few words; recorded in each audit event with the holder's id. */
  reason?: string;
  context?: AuditContext;
}

export interface ReleaseAnalystAlertsResult {
  released: { alertId: string; externalId: string }[];
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export function assertMayManageWorkload(actor: Actor): asserts actor is UserActor {
  if (actor.type !== "user" || !can(actor.role, "workload.manage")) {
    throw new AppError("forbidden", "Only a supervisor can release or reassign other people's alerts.");
  }
}

export async function releaseAnalystAlerts(db: DbOrTx, options: ReleaseAnalystAlertsOptions): Promise<ReleaseAnalystAlertsResult> {
  const { actor, analystId } = options;
  assertMayManageWorkload(actor);
  if (!UUID.test(analystId)) throw new AppError("not_found", "There is no such analyst.");
  const reason = (options.reason ?? "released by a supervisor").trim();
  if (reason.length < 1 || reason.length > 200) {
    throw new AppError("invalid_input", "The reason must be 1 to 200 characters.", [{ path: "reason", message: "1 to 200 characters" }]);
  }

  const run = async (tx: Prisma.TransactionClient): Promise<ReleaseAnalystAlertsResult> => {
    const [analyst] = await tx.$queryRaw<{ id: string }[]>`SELECT id FROM users WHERE id = ${analystId}::uuid`;
    if (!analyst) throw new AppError("not_found", "There is no such analyst.");
    // Row changes first, audit appends last (see lib/queue/claim-next-alert.ts on lock order). Waiting
    // for row locks is safe here because nothing has been audited yet; locking in id order keeps two
    // such releases from deadlocking, and an alert closed meanwhile no longer matches after the wait.
    const released = await tx.$queryRaw<{ alertId: string; externalId: string }[]>`
      WITH held AS (
        SELECT id FROM alerts
         WHERE assigned_to_id = ${analystId}::uuid AND state = 'in_review'
         ORDER BY id
           FOR UPDATE)
      UPDATE alerts a
         SET state = 'waiting', assigned_to_id = NULL, claimed_at = NULL, lease_expires_at = NULL
        FROM held
       WHERE a.id = held.id
      RETURNING a.id AS "alertId", a.external_id AS "externalId"`;
    released.sort((a, b) => a.externalId.localeCompare(b.externalId));
    for (const alert of released) {
      await recordAuditEvent(tx, {
        actor: auditActorOf(actor),
        // Same wording as a single release by a supervisor (lib/queue/release-alert.ts).
        event: { action: "alert.released", payload: { alertId: alert.alertId, externalId: alert.externalId, reason: `${reason} (held by ${analystId})` } },
        subject: { type: "alert", id: alert.alertId },
        context: options.context,
      });
    }
    return { released };
  };
  return inTransaction(db, run, CLAIM_TRANSACTION);
}
