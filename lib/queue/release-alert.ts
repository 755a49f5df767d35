// Puts a claimed alert back in the queue by hand: its holder gives it up, or a supervisor frees it
// (workload.manage). Safe to repeat: releasing an alert that is already waiting changes nothing.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { assertMayWorkAlerts, CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";
import { CLAIMED_ALERT_COLUMNS, toClaimedAlert, type ClaimedAlertRow } from "@/lib/queue/claimed-alert-columns";
import { releaseReasonSchema, type ClaimedAlert } from "@/lib/queue/schemas";

export interface ReleaseAlertOptions {
  actor: Actor;
  alertId: string;
  now: Date;
  /** Why, in a few words; recorded in the audit event. */
  reason?: string;
  context?: AuditContext;
}

export interface ReleaseAlertResult {
  alert: ClaimedAlert;
  /** False when the alert was already back in the queue (a repeated release). */
  released: boolean;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function releaseAlert(db: DbOrTx, options: ReleaseAlertOptions): Promise<ReleaseAlertResult> {
  const { actor, alertId } = options;
  assertMayWorkAlerts(actor);
  if (!UUID.test(alertId)) throw new AppError("not_found", "There is no such alert.");
  const reason = releaseReasonSchema.safeParse(options.reason ?? "released by hand");
  if (!reason.success) throw new AppError("invalid_input", "The reason must be 1 to 200 characters.", [{ path: "reason", message: "1 to 200 characters" }]);

  const run = async (tx: Prisma.TransactionClient): Promise<ReleaseAlertResult> => {
    // Waiting for the row lock is safe here: nothing has been audited yet in this transaction.
    const [current] = await tx.$queryRaw<ClaimedAlertRow[]>`
      SELECT ${CLAIMED_ALERT_COLUMNS} FROM alerts a WHERE a.id = ${alertId}::uuid FOR UPDATE`;
    if (!current) throw new AppError("not_found", "There is no such alert.");
    if (current.state === "waiting") return { alert: toClaimedAlert(current), released: false };
    if (current.state !== "in_review") {
      throw new AppError("conflict", current.state === "closed" ? "This alert is already closed." : "This alert is waiting for a second review; it is not held by anyone.");
    }
    const ownHold = current.assignedToId === actor.id;
    if (!ownHold && !can(actor.role, "workload.manage")) {
      throw new AppError("conflict", "Another analyst holds this alert; only they or a supervisor can release it.");
    }
    const [row] = await tx.$queryRaw<ClaimedAlertRow[]>`
      UPDATE alerts a SET state = 'waiting', assigned_to_id = NULL, claimed_at = NULL, lease_expires_at = NULL
       WHERE a.id = ${alertId}::uuid
      RETURNING ${CLAIMED_ALERT_COLUMNS}`;
    await recordAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: {
        action: "alert.released",
        payload: { alertId: row.id, externalId: row.externalId, reason: ownHold ? reason.data : `${reason.data} (held by ${current.assignedToId})` },
      },
      subject: { type: "alert", id: row.id },
      context: options.context,
    });
    return { alert: toClaimedAlert(row), released: true };
  };
  return inTransaction(db, run, CLAIM_TRANSACTION);
}
