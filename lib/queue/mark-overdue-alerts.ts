// Sets `past_due` on waiting alerts whose due time has passed, so that the queue index can put them
// first (see prisma/migrations/20261202040000_queue_overdue_mark). Run before every claim and every
// listing; with nothing newly overdue it is one probe of alerts_waiting_unmarked_due_idx.
import type { DbOrTx } from "@/lib/db/client";

export interface MarkOverdueAlertsOptions {
  now: Date;
}

/** Alerts marked per statement; the sweep repeats until a statement marks fewer. */
export const MARK_BATCH = 1_000;

/**
 * $1 = now; returns the marked ids. SKIP LOCKED: a row locked by a claim or by another sweep is
 * left to that transaction, so two sweeps never wait for each other and never deadlock; a row
 * skipped here is marked next time. `= ANY (ARRAY(…))` keeps the update on the primary key:
 * written as a join, the planner guessed from due_at's statistics that thousands would match and
 * scanned the whole table (a second, on 400,000 rows) to mark 80.
 * ORDER BY due_at LIMIT keeps the inner read on alerts_waiting_unmarked_due_idx. Without it the
 * planner, whose statistics said most waiting alerts were unmarked (true just before a mass of them
 * fell due), read the whole table on every claim: 17 ms at 30,000 alerts, 400 ms of every claim's
 * time at 100,000 with 16 claimers (npm run bench). An ordered index scan also marks the index
 * entries of the rows' old versions dead as it passes them, which a bitmap scan does not.
 * The first due time among unmarked waiting alerts, read first (one probe of the same index, in
 * due order), switches the scan off when nothing has fallen due — the usual case, before every claim.
 * Without it the planner, whose picture of the index was of the moment after a mass of alerts had
 * been marked (many empty pages, few entries), scanned the unmarked part of the queue index instead
 * and filtered it: 2–3 ms of every claim (EXPLAIN on a 1,000,000-alert bench database).
 */
export const MARK_OVERDUE_SQL = `
  UPDATE alerts SET past_due = true
   WHERE id = ANY (ARRAY(SELECT id FROM alerts
                          WHERE state = 'waiting' AND NOT past_due AND due_at <= $1
                            AND (SELECT due_at FROM alerts WHERE state = 'waiting' AND NOT past_due ORDER BY due_at LIMIT 1) <= $1
                          ORDER BY due_at
                          LIMIT ${MARK_BATCH}
                            FOR UPDATE SKIP LOCKED))
  RETURNING id`;

/** Returns how many alerts were newly marked. */
export async function markOverdueAlerts(db: DbOrTx, { now }: MarkOverdueAlertsOptions): Promise<number> {
  let marked = 0;
  for (;;) {
    const count = await db.$executeRawUnsafe(MARK_OVERDUE_SQL, now);
    marked += count;
    if (count < MARK_BATCH) return marked;
  }
}
