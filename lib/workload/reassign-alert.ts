// A supervisor moves an alert in review from the analyst who holds it to another one. The lease rule
// holds for the new holder as for any claim: a fresh lease of claimLeaseMinutes from now, and the
// hold limit (maxHeldPerAnalyst) checked under the same per-analyst lock that claims take
// (lib/queue/hold-limit.ts). The four-eyes rule holds too: nobody is given an alert they already
// reviewed. Audited (alert.reassigned) in the same transaction. Safe to repeat: moving an alert to
// the person who already holds it changes nothing.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { can, isRole } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { assertBelowHoldLimit } from "@/lib/queue/hold-limit";
import { CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";
import { CLAIMED_ALERT_COLUMNS, toClaimedAlert, type ClaimedAlertRow } from "@/lib/queue/claimed-alert-columns";
import type { ClaimedAlert } from "@/lib/queue/schemas";
import { assertMayManageWorkload } from "@/lib/workload/release-analyst-alerts";

export interface ReassignAlertOptions {
  actor: Actor;
  alertId: string;
  toUserId: string;
  now: Date;
  context?: AuditContext;
}

export interface ReassignAlertResult {
  alert: ClaimedAlert;
  /** Who held it before; equal to toUserId when nothing changed. */
  fromUserId: string | null;
  /** False when the alert was already held by toUserId (a repeated request). */
  reassigned: boolean;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function reassignAlert(db: DbOrTx, options: ReassignAlertOptions): Promise<ReassignAlertResult> {
  const { actor, alertId, toUserId, now } = options;
  assertMayManageWorkload(actor);
  if (!UUID.test(alertId)) throw new AppError("not_found", "There is no such alert.");
  if (!UUID.test(toUserId)) throw new AppError("invalid_input", "Choose who should take the alert.", [{ path: "toUserId", message: "not a person" }]);

  const run = async (tx: Prisma.TransactionClient): Promise<ReassignAlertResult> => {
    const { queue } = await getSettings(tx);
    const [target] = await tx.$queryRaw<{ id: string; displayName: string; role: string; active: boolean }[]>`
      SELECT id, display_name AS "displayName", role, active FROM users WHERE id = ${toUserId}::uuid`;
    if (!target) throw new AppError("invalid_input", "There is no such person.", [{ path: "toUserId", message: "not a person" }]);
    if (!target.active) throw new AppError("conflict", `${target.displayName} is deactivated and cannot take alerts.`);
    if (!isRole(target.role) || !can(target.role, "alert.work")) {
      throw new AppError("conflict", `${target.displayName} is ${target.role === "admin" || target.role === "auditor" ? "an" : "a"} ${target.role}; only analysts and supervisors work alerts.`);
    }

    // Row lock before the audit append (lock order: lib/queue/claim-next-alert.ts); waiting is safe here.
    const [current] = await tx.$queryRaw<ClaimedAlertRow[]>`
      SELECT ${CLAIMED_ALERT_COLUMNS} FROM alerts a WHERE a.id = ${alertId}::uuid FOR UPDATE`;
    if (!current) throw new AppError("not_found", "There is no such alert.");
    if (current.state !== "in_review") {
      const why =
        current.state === "waiting"
          ? "it is waiting in the queue; anyone can claim it"
          : current.state === "closed"
            ? "it is already closed"
            : "it is waiting for a second review and nobody holds it";
      throw new AppError("conflict", `Only an alert in review can be reassigned: ${why}.`);
    }
    if (current.assignedToId === toUserId) return { alert: toClaimedAlert(current), fromUserId: toUserId, reassigned: false };

    const [reviewedBefore] = await tx.$queryRaw<{ one: number }[]>`
      SELECT 1 AS one FROM outcomes WHERE alert_id = ${alertId}::uuid AND reviewer_id = ${toUserId}::uuid LIMIT 1`;
    if (reviewedBefore) {
      throw new AppError("conflict", `${target.displayName} already reviewed this alert; a second review must be someone else's (four-eyes rule).`);
    }
    await assertBelowHoldLimit(tx, { userId: toUserId, maxHeld: queue.maxHeldPerAnalyst }).catch((error: unknown) => {
      if (error instanceof AppError && error.code === "conflict") {
        throw new AppError("conflict", `${target.displayName} already holds the most alerts an analyst may hold at once (${queue.maxHeldPerAnalyst}).`);
      }
      throw error;
    });

    const leaseExpiresAt = new Date(now.getTime() + queue.claimLeaseMinutes * 60_000);
    const [row] = await tx.$queryRaw<ClaimedAlertRow[]>`
      UPDATE alerts a SET assigned_to_id = ${toUserId}::uuid, claimed_at = ${now}, lease_expires_at = ${leaseExpiresAt}
       WHERE a.id = ${alertId}::uuid
      RETURNING ${CLAIMED_ALERT_COLUMNS}`;
    await recordAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: { action: "alert.reassigned", payload: { alertId: row.id, externalId: row.externalId, from: current.assignedToId, to: toUserId } },
      subject: { type: "alert", id: row.id },
      context: options.context,
    });
    return { alert: toClaimedAlert(row), fromUserId: current.assignedToId, reassigned: true };
  };
  return inTransaction(db, run, CLAIM_TRANSACTION);
}
