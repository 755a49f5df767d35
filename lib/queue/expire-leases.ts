// Returns claims whose lease has run out to the queue, one audited alert.lease_expired event per
// alert. Called before every claim (claim-next-alert.ts, claim-alert.ts) and by the workload screen.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction, isRootClient } from "@/lib/db/in-transaction";
import { systemActor, auditActorOf } from "@/lib/auth/actor";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";

export interface ExpireLeasesOptions {
  now: Date;
  context?: AuditContext;
}

export interface ExpiredLease {
  alertId: string;
  externalId: string;
  /** Who held it when the lease ran out. */
  heldBy: string;
  leaseExpiredAt: Date;
}

const LEASE_EXPIRY_ACTOR = auditActorOf(systemActor("lease-expiry"));

export async function expireLeases(db: DbOrTx, options: ExpireLeasesOptions): Promise<ExpiredLease[]> {
  const run = async (tx: Prisma.TransactionClient): Promise<ExpiredLease[]> => {
    // Set-based over alerts_in_review_lease_idx: lock the expired claims, then return them all to
    // the queue in one UPDATE on the primary key. SKIP LOCKED: an alert locked right now (its
    // holder is recording the outcome, or another sweep has it) is not waited for, so concurrent
    // sweeps neither block nor deadlock. The SELECT keeps the holder's id for the audit.
    const expired = await tx.$queryRaw<ExpiredLease[]>`
      SELECT id AS "alertId", external_id AS "externalId", assigned_to_id AS "heldBy", lease_expires_at AS "leaseExpiredAt"
        FROM alerts
       WHERE state = 'in_review' AND lease_expires_at <= ${options.now}
       ORDER BY lease_expires_at, id
         FOR UPDATE SKIP LOCKED`;
    if (expired.length === 0) return [];
    await tx.$executeRaw`
      UPDATE alerts SET state = 'waiting', assigned_to_id = NULL, claimed_at = NULL, lease_expires_at = NULL
       WHERE id = ANY (${expired.map((lease) => lease.alertId)}::uuid[])`;
    // Row changes first, audit after: the audit append serialises writers, and a transaction that
    // holds the audit lock must never wait for a row lock (see claim-next-alert.ts).
    for (const lease of expired) {
      await recordAuditEvent(tx, {
        actor: LEASE_EXPIRY_ACTOR,
        event: { action: "alert.lease_expired", payload: { alertId: lease.alertId, externalId: lease.externalId, heldBy: lease.heldBy } },
        subject: { type: "alert", id: lease.alertId },
        context: options.context,
      });
    }
    return expired;
  };
  if (isRootClient(db)) {
    // Almost always nothing has expired: one index probe instead of opening a transaction per claim.
    const [{ any }] = await db.$queryRaw<{ any: boolean }[]>`
      SELECT EXISTS (SELECT 1 FROM alerts WHERE state = 'in_review' AND lease_expires_at <= ${options.now}) AS any`;
    if (!any) return [];
  }
  return inTransaction(db, run);
}
