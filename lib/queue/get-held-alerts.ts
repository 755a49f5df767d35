// The alerts an analyst holds right now (in review, assigned to them), oldest claim first, with
// how long each lease has left: the "My alerts" strip of the queue screen.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";

export interface HeldAlert {
  id: string;
  externalId: string;
  amountMinor: number;
  currency: string;
  channel: string;
  probability: number | null;
  calibrated: boolean;
  expectedLossMinor: number | null;
  dueAt: Date | null;
  overdue: boolean;
  claimedAt: Date;
  leaseExpiresAt: Date;
  leaseExpired: boolean;
}

export interface GetHeldAlertsOptions {
  userId: string;
  now: Date;
}

type RawRow = Omit<HeldAlert, "amountMinor" | "expectedLossMinor"> & { amountMinor: bigint; expectedLossMinor: bigint | null };

export async function getHeldAlerts(db: DbOrTx, { userId, now }: GetHeldAlertsOptions): Promise<HeldAlert[]> {
  const rows = await db.$queryRaw<RawRow[]>`
    SELECT a.id, a.external_id AS "externalId", a.amount_minor AS "amountMinor", a.currency, a.channel,
           a.probability, a.calibrated, a.expected_loss_minor AS "expectedLossMinor", a.due_at AS "dueAt",
           coalesce(a.due_at <= ${now}, false) AS overdue, a.claimed_at AS "claimedAt",
           a.lease_expires_at AS "leaseExpiresAt", a.lease_expires_at <= ${now} AS "leaseExpired"
      FROM alerts a
     WHERE a.assigned_to_id = ${userId}::uuid AND a.state = 'in_review'
     ORDER BY a.claimed_at, a.id`;
  return rows.map((row) => ({
    ...row,
    amountMinor: Number(row.amountMinor),
    expectedLossMinor: row.expectedLossMinor === null ? null : Number(row.expectedLossMinor),
  }));
}
