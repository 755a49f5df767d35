// The waiting alerts in the order "take next" hands them out (DESIGN.md §4 Queue order):
// overdue first, then priority (expected loss, or EL per handling minute), then older, then id.
import type { DbOrTx } from "@/lib/db/client";

export interface WaitingAlertRow {
  id: string;
  externalId: string;
  receivedAt: Date;
  occurredAt: Date;
  amountMinor: number;
  currency: string;
  channel: string;
  modelName: string;
  modelVersion: string;
  score: number;
  probability: number | null;
  calibrated: boolean;
  exposureMinor: number | null;
  expectedLossMinor: number | null;
  dueAt: Date | null;
  overdue: boolean;
}

export interface ListWaitingAlertsOptions {
  now: Date;
  limit: number;
  offset?: number;
}

export async function listWaitingAlerts(db: DbOrTx, options: ListWaitingAlertsOptions): Promise<WaitingAlertRow[]> {
  const rows = await db.$queryRaw<(Omit<WaitingAlertRow, "amountMinor" | "exposureMinor" | "expectedLossMinor"> & {
    amountMinor: bigint;
    exposureMinor: bigint | null;
    expectedLossMinor: bigint | null;
  })[]>`
    SELECT a.id, a.external_id AS "externalId", a.received_at AS "receivedAt", a.occurred_at AS "occurredAt",
           a.amount_minor AS "amountMinor", a.currency, a.channel, m.model_name AS "modelName", m.version AS "modelVersion",
           a.score, a.probability, a.calibrated, a.exposure_minor AS "exposureMinor",
           a.expected_loss_minor AS "expectedLossMinor", a.due_at AS "dueAt",
           coalesce(a.due_at <= ${options.now}, false) AS overdue
      FROM alerts a JOIN model_versions m ON m.id = a.model_version_id
     WHERE a.state = 'waiting'
     ORDER BY coalesce(a.due_at <= ${options.now}, false) DESC, a.priority DESC NULLS LAST, a.received_at, a.id
     LIMIT ${options.limit} OFFSET ${options.offset ?? 0}`;
  return rows.map((row) => ({
    ...row,
    amountMinor: Number(row.amountMinor),
    exposureMinor: row.exposureMinor === null ? null : Number(row.exposureMinor),
    expectedLossMinor: row.expectedLossMinor === null ? null : Number(row.expectedLossMinor),
  }));
}
