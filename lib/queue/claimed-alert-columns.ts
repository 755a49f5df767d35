// The columns every claim and release returns, as SQL over `alerts a`, and their conversion.
import { Prisma } from "@/lib/generated/prisma/client";
import type { ClaimedAlert } from "@/lib/queue/schemas";

export const CLAIMED_ALERT_COLUMNS = Prisma.sql`
  a.id, a.external_id AS "externalId", a.model_version_id AS "modelVersionId", a.state,
  a.assigned_to_id AS "assignedToId", a.claimed_at AS "claimedAt", a.lease_expires_at AS "leaseExpiresAt",
  a.due_at AS "dueAt", a.priority, a.expected_loss_minor AS "expectedLossMinor"`;

export type ClaimedAlertRow = Omit<ClaimedAlert, "expectedLossMinor" | "state"> & { state: string; expectedLossMinor: bigint | null };

export function toClaimedAlert(row: ClaimedAlertRow): ClaimedAlert {
  return {
    ...row,
    state: row.state as ClaimedAlert["state"],
    expectedLossMinor: row.expectedLossMinor === null ? null : Number(row.expectedLossMinor),
  };
}
