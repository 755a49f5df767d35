// Staging an audit event instead of appending it: for the hottest write, taking an alert, where the
// chain's lock (held until commit) would make every claimer wait for every other one's commit.
//
// stageAuditEvent writes the event into audit_events_staged inside the caller's transaction — no
// lock, so claims commit in parallel — and the change and its record still commit or roll back
// together. linkStagedAuditEvents then moves what is staged into the chain, in staging order, under
// the chain's lock, in one short transaction of its own. Two ways it runs:
//   - linkStagedAuditEventsSoon, right after the claim commits, in the background of the process
//     that claimed (coalesced: one run at a time per process, and one more if work arrived during it);
//   - awaited by every reader of the trail before it reads (verify, the Audit trail screen and its
//     export, an alert's history), so an auditor never reads a trail with an event still staged.
// Chain order is therefore linking order: a staged event can follow an event appended directly
// slightly after it. Each event keeps the time it happened (occurred_at, set at staging).
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import type { HashedAuditFields } from "@/lib/audit/audit-hash";
import { appendToChain, lockChainHead, parseAuditEvent, type RecordAuditEventOptions } from "@/lib/audit/record-audit-event";

/** Events linked per transaction: bounds the lock's hold and the memory of one run. */
const LINK_BATCH = 5_000;

export async function stageAuditEvent(tx: Prisma.TransactionClient, options: Omit<RecordAuditEventOptions, "occurredAt">): Promise<void> {
  const event = parseAuditEvent(options.event);
  await tx.$executeRaw`
    INSERT INTO audit_events_staged (actor_type, actor_id, actor_label, action, subject_type, subject_id, payload, request_id, ip_address)
    VALUES (${options.actor.type}, ${options.actor.id}, ${options.actor.label}, ${event.action}, ${options.subject?.type ?? null},
            ${options.subject?.id ?? null}, ${JSON.stringify(event.payload)}::jsonb, ${options.context?.requestId ?? null},
            ${options.context?.ipAddress ?? null})`;
}

/**
 * Links every event staged so far into the chain; returns how many. Waits for the chain's lock:
 * whoever holds it (a direct append, another linker) commits within milliseconds.
 */
export async function linkStagedAuditEvents(db: DbOrTx): Promise<number> {
  let linked = 0;
  for (;;) {
    // The usual answer is "nothing staged": find that out with one probe, before any transaction
    // or lock (every view of the trail and of an alert's history starts here).
    const [{ any }] = await db.$queryRaw<{ any: boolean }[]>`SELECT EXISTS (SELECT 1 FROM audit_events_staged) AS any`;
    if (!any) return linked;
    const moved = await inTransaction(db, async (tx) => {
      const head = await lockChainHead(tx);
      // Under the lock only linkers delete here, so these rows cannot be taken twice. The payload
      // is hashed as jsonb gives it back, exactly as verify will read it.
      const rows = await tx.$queryRaw<HashedAuditFields[]>`
        WITH taken AS (
          DELETE FROM audit_events_staged
           WHERE id IN (SELECT id FROM audit_events_staged ORDER BY id LIMIT ${LINK_BATCH})
          RETURNING *)
        SELECT occurred_at AS "occurredAt", actor_type AS "actorType", actor_id AS "actorId", actor_label AS "actorLabel",
               action, subject_type AS "subjectType", subject_id AS "subjectId", payload, request_id AS "requestId",
               ip_address AS "ipAddress"
          FROM taken ORDER BY id`;
      await appendToChain(tx, head.hash, rows);
      return rows.length;
    });
    linked += moved;
    if (moved < LINK_BATCH) return linked;
  }
}

/**
 * How long a background run waits before it starts, so that under load one run links the events of
 * many claims: each run costs a lock, a read of the head and two statements however few it links.
 */
const LINK_DELAY_MS = 20;

let running: Promise<void> | null = null;
let again = false;

/**
 * Starts linking in the background of this process and returns at once. Called after the staging
 * transaction has committed: the run (or the one queued behind a run already going) starts after
 * that commit, so it sees the event. A failure is logged; the event stays staged and the next run
 * or reader links it.
 */
export function linkStagedAuditEventsSoon(db: DbOrTx): void {
  if (running) {
    again = true;
    return;
  }
  running = (async () => {
    do {
      again = false;
      await new Promise((resolve) => setTimeout(resolve, LINK_DELAY_MS));
      try {
        await linkStagedAuditEvents(db);
      } catch (error) {
        console.error(`audit: linking staged events failed, they stay staged for the next run: ${(error as Error).message}`);
      }
    } while (again);
  })().finally(() => {
    running = null;
  });
}

/** Resolves when this process's background linking has finished (for commands and tests that then read). */
export async function backgroundLinkingSettled(): Promise<void> {
  while (running) await running;
}
