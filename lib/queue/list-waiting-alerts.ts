// The waiting alerts in the order "take next" hands them out (DESIGN.md §4 Queue order):
// overdue first, then priority (expected loss, or EL per handling minute), then older, then id.
// QUEUE_ORDER_BY below is the one place that order is written; claim-next-alert.ts uses it too.
import { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";

/**
 * The queue order over `alerts a`, column for column the key of alerts_waiting_queue_idx, so that
 * PostgreSQL reads it straight from that index. `past_due` stands for "due_at <= now" once
 * markOverdueAlerts has run at `now`; lib/risk's compareQueueOrder is the reference it is tested
 * against (a uuid sorts in PostgreSQL as its lower-case text sorts in JavaScript). An alert without
 * a priority yet (its risk fields not derived) comes last.
 */
export const QUEUE_ORDER_BY = Prisma.sql`a.past_due DESC, a.priority DESC NULLS LAST, a.received_at, a.id`;

export interface WaitingAlertRow {
  id: string;
  externalId: string;
  receivedAt: Date;
  occurredAt: Date;
  amountMinor: number;
  currency: string;
  channel: string;
  modelVersionId: string;
  modelName: string;
  modelVersion: string;
  score: number;
  probability: number | null;
  calibrated: boolean;
  probabilitySource: string | null;
  exposureMinor: number | null;
  expectedLossMinor: number | null;
  priority: number | null;
  dueAt: Date | null;
  overdue: boolean;
}

export interface ListWaitingAlertsOptions {
  now: Date;
  limit: number;
  offset?: number;
}

type RawRow = Omit<WaitingAlertRow, "amountMinor" | "exposureMinor" | "expectedLossMinor"> & {
  amountMinor: bigint;
  exposureMinor: bigint | null;
  expectedLossMinor: bigint | null;
};

export async function listWaitingAlerts(db: DbOrTx, options: ListWaitingAlertsOptions): Promise<WaitingAlertRow[]> {
  // Marking first makes the listed order the order take-next would hand out at `now`.
  await markOverdueAlerts(db, { now: options.now });
  const rows = await db.$queryRaw<RawRow[]>`
    SELECT a.id, a.external_id AS "externalId", a.received_at AS "receivedAt", a.occurred_at AS "occurredAt",
           a.amount_minor AS "amountMinor", a.currency, a.channel, a.model_version_id AS "modelVersionId",
           m.model_name AS "modelName", m.version AS "modelVersion",
           a.score, a.probability, a.calibrated, a.probability_source AS "probabilitySource",
           a.exposure_minor AS "exposureMinor", a.expected_loss_minor AS "expectedLossMinor", a.priority,
           a.due_at AS "dueAt", coalesce(a.due_at <= ${options.now}, false) AS overdue
      FROM alerts a JOIN model_versions m ON m.id = a.model_version_id
     WHERE a.state = 'waiting'
     ORDER BY ${QUEUE_ORDER_BY}
     LIMIT ${options.limit} OFFSET ${options.offset ?? 0}`;
  return rows.map((row) => ({
    ...row,
    amountMinor: Number(row.amountMinor),
    exposureMinor: row.exposureMinor === null ? null : Number(row.exposureMinor),
    expectedLossMinor: row.expectedLossMinor === null ? null : Number(row.expectedLossMinor),
  }));
}
