import { assertFinite, assertValidDate } from "./argument-checks";

export interface QueueOrderEntry {
  id: string;
  dueAt: Date;
  arrivedAt: Date;
  /** From priorityValue: higher is worked first. */
  priority: number;
}

/**
 * The queue's order (DESIGN.md §4, Queue order), as an Array.prototype.sort comparator:
 * 1. overdue first (dueAt <= now), so a breached SLA is never starved by a stream of larger alerts;
 * 2. priority, highest first;
 * 3. older arrival first, so equal alerts are served first come, first served;
 * 4. id ascending, by UTF-16 code units, so the order is total and repeatable.
 *
 * This is the reference the SQL ORDER BY is tested against. The id tie-break matches PostgreSQL only
 * under a byte-order collation (COLLATE "C") for ASCII ids such as UUIDs.
 */
export function compareQueueOrder(a: QueueOrderEntry, b: QueueOrderEntry, now: Date): number {
  assertValidDate(now, "now");
  checkEntry(a, "a");
  checkEntry(b, "b");

  const nowMs = now.getTime();
  const aOverdue = a.dueAt.getTime() <= nowMs;
  const bOverdue = b.dueAt.getTime() <= nowMs;
  if (aOverdue !== bOverdue) return aOverdue ? -1 : 1;

  if (a.priority !== b.priority) return a.priority > b.priority ? -1 : 1;

  const arrivedDifference = a.arrivedAt.getTime() - b.arrivedAt.getTime();
  if (arrivedDifference !== 0) return arrivedDifference < 0 ? -1 : 1;

  if (a.id === b.id) return 0;
  return a.id < b.id ? -1 : 1;
}

function checkEntry(entry: QueueOrderEntry, name: string): void {
  if (typeof entry.id !== "string") {
    throw new RangeError(`${name}.id must be a string, got ${typeof entry.id}`);
  }
  assertValidDate(entry.dueAt, `${name}.dueAt`);
  assertValidDate(entry.arrivedAt, `${name}.arrivedAt`);
  assertFinite(entry.priority, `${name}.priority`);
}
