// The numbers at the top of the Queue screen: waiting, of which overdue, in review, waiting for a
// second review, and when the last alert arrived (for the empty queue's message).
import type { DbOrTx } from "@/lib/db/client";
import { markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";

export interface QueueCounts {
  waiting: number;
  overdue: number;
  inReview: number;
  secondReview: number;
  lastArrivalAt: Date | null;
}

export async function getQueueCounts(db: DbOrTx, { now }: { now: Date }): Promise<QueueCounts> {
  await markOverdueAlerts(db, { now });
  // Each count reads a partial index of open alerts (alerts_waiting_*, alerts_in_review_lease_idx,
  // alerts_assigned_idx), never the closed history.
  const [counts] = await db.$queryRaw<Omit<QueueCounts, "lastArrivalAt">[]>`
    SELECT (SELECT count(*) FROM alerts WHERE state = 'waiting')::int AS waiting,
           (SELECT count(*) FROM alerts WHERE state = 'waiting' AND due_at <= ${now})::int AS overdue,
           (SELECT count(*) FROM alerts WHERE state = 'in_review')::int AS "inReview",
           (SELECT count(*) FROM alerts WHERE state = 'second_review')::int AS "secondReview"`;
  // The newest arrival per model version from alerts_model_version_received_idx: one index probe
  // per version instead of reading every alert.
  const [{ lastArrivalAt }] = await db.$queryRaw<{ lastArrivalAt: Date | null }[]>`
    SELECT max(latest.received_at) AS "lastArrivalAt"
      FROM model_versions m
      CROSS JOIN LATERAL (SELECT received_at FROM alerts WHERE model_version_id = m.id ORDER BY received_at DESC LIMIT 1) latest`;
  return { ...counts, lastArrivalAt };
}
