// Sets `past_due` on waiting alerts whose due time has passed, so that the queue index can put them
// first (see prisma/migrations/20261202040000_queue_overdue_mark). Run before every claim and every
// listing; with nothing newly overdue it is one probe of alerts_waiting_unmarked_due_idx.
import type { DbOrTx } from "@/lib/db/client";

export interface MarkOverdueAlertsOptions {
  now: Date;
}

/** Returns how many alerts were newly marked. */
export async function markOverdueAlerts(db: DbOrTx, { now }: MarkOverdueAlertsOptions): Promise<number> {
  // SKIP LOCKED: a row locked by a claim or by another sweep is left to that transaction, so two
  // sweeps never wait for each other and never deadlock. A row skipped here is marked next time.
  // `= ANY (ARRAY(…))` keeps the update on the primary key: written as a join, the planner guessed
  // from due_at's statistics that thousands would match and scanned the whole table (a second, on
  // 400,000 rows) to mark 80.
  return db.$executeRaw`
    UPDATE alerts SET past_due = true
     WHERE id = ANY (ARRAY(SELECT id FROM alerts
                            WHERE state = 'waiting' AND NOT past_due AND due_at <= ${now}
                              FOR UPDATE SKIP LOCKED))`;
}
