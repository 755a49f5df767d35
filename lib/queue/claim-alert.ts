// Claims one particular waiting alert, opened from the queue or a link, for the analyst who opened
// it. Safe to repeat: claiming an alert one already holds returns it unchanged.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction, isRootClient } from "@/lib/db/in-transaction";
import type { Actor } from "@/lib/auth/actor";
import { auditActorOf } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { linkStagedAuditEventsSoon, stageAuditEvent } from "@/lib/audit/staged-audit-events";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { expireLeases } from "@/lib/queue/expire-leases";
import { assertBelowHoldLimit } from "@/lib/queue/hold-limit";
import { assertMayWorkAlerts, CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";
import { CLAIMED_ALERT_COLUMNS, toClaimedAlert, type ClaimedAlertRow } from "@/lib/queue/claimed-alert-columns";
import type { ClaimedAlert } from "@/lib/queue/schemas";

export interface ClaimAlertOptions {
  actor: Actor;
  alertId: string;
  now: Date;
  context?: AuditContext;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

export async function claimAlert(db: DbOrTx, options: ClaimAlertOptions): Promise<ClaimedAlert> {
  const { actor, alertId, now } = options;
  assertMayWorkAlerts(actor);
  if (!UUID.test(alertId)) throw new AppError("not_found", "There is no such alert.");
  await expireLeases(db, { now, context: options.context });

  const run = async (tx: Prisma.TransactionClient): Promise<ClaimedAlert> => {
    const { queue } = await getSettings(tx);
    // SKIP LOCKED, not a wait: a row locked now is being claimed or closed by someone else; say so
    // at once rather than queue behind them.
    const [current] = await tx.$queryRaw<ClaimedAlertRow[]>`
      SELECT ${CLAIMED_ALERT_COLUMNS} FROM alerts a WHERE a.id = ${alertId}::uuid FOR UPDATE SKIP LOCKED`;
    if (!current) {
      const [exists] = await tx.$queryRaw<{ id: string }[]>`SELECT id FROM alerts WHERE id = ${alertId}::uuid`;
      if (!exists) throw new AppError("not_found", "There is no such alert.");
      throw new AppError("conflict", "Someone else is claiming or closing this alert right now. Reload to see who has it.");
    }
    if (current.state === "in_review" && current.assignedToId === actor.id) return toClaimedAlert(current);
    if (current.state === "in_review") {
      throw new AppError("conflict", "Another analyst holds this alert. It returns to the queue if they release it or their lease runs out.");
    }
    if (current.state === "second_review") throw new AppError("conflict", "This alert is waiting for a second review, not in the queue.");
    if (current.state === "closed") throw new AppError("conflict", "This alert is already closed.");

    await assertBelowHoldLimit(tx, { userId: actor.id, maxHeld: queue.maxHeldPerAnalyst });
    const leaseExpiresAt = new Date(now.getTime() + queue.claimLeaseMinutes * 60_000);
    const [row] = await tx.$queryRaw<ClaimedAlertRow[]>`
      UPDATE alerts a
         SET state = 'in_review', assigned_to_id = ${actor.id}::uuid, claimed_at = ${now}, lease_expires_at = ${leaseExpiresAt}
       WHERE a.id = ${alertId}::uuid AND a.state = 'waiting'
      RETURNING ${CLAIMED_ALERT_COLUMNS}`;
    await stageAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: { action: "alert.claimed", payload: { alertId: row.id, externalId: row.externalId, leaseExpiresAt: leaseExpiresAt.toISOString(), how: "direct" } },
      subject: { type: "alert", id: row.id },
      context: options.context,
    });
    return toClaimedAlert(row);
  };
  const claimed = await inTransaction(db, run, CLAIM_TRANSACTION);
  // Committed: link the staged event into the audit chain in the background. Inside a caller's
  // transaction the commit is still to come; the next run or reader of the trail links it then.
  if (claimed && isRootClient(db)) linkStagedAuditEventsSoon(db);
  return claimed;
}
