// Appends one event to the hash-chained audit log inside the caller's transaction, so the
// change and its record commit or roll back together.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditEventHash, GENESIS_HASH, type HashedAuditFields } from "@/lib/audit/audit-hash";
import { auditEventSchema, type AuditActor, type AuditContext, type AuditEventInput } from "@/lib/audit/schemas";

// Appends are serialised with a transaction-scoped advisory lock: the next writer waits until
// this transaction commits, so it reads our hash as its predecessor and the chain stays linear.
export const AUDIT_CHAIN_LOCK_KEY = 740_213_771;

export interface RecordAuditEventOptions {
  actor: AuditActor;
  event: AuditEventInput;
  subject?: { type: string; id: string } | null;
  context?: AuditContext;
  /** Defaults to the database clock at the time of the append. */
  occurredAt?: Date;
}

export async function recordAuditEvent(tx: Prisma.TransactionClient, options: RecordAuditEventOptions): Promise<{ id: bigint; hash: string }> {
  const [recorded] = await recordAuditEvents(tx, [options]);
  return recorded;
}

/**
 * Appends several events in order with one lock, one read of the chain head and one INSERT —
 * for batch work (ingest back-fills) where one event per row would cost a round trip each.
 */
export async function recordAuditEvents(tx: Prisma.TransactionClient, events: readonly RecordAuditEventOptions[]): Promise<{ id: bigint; hash: string }[]> {
  if (events.length === 0) return [];
  const parsedEvents = events.map((options) => parseAuditEvent(options.event));
  const head = await lockChainHead(tx);
  return appendToChain(
    tx,
    head.hash,
    events.map((options, index) => ({
      // Millisecond precision: the value must survive the round trip through JavaScript's Date unchanged.
      occurredAt: new Date((options.occurredAt ?? head.now).getTime()),
      actorType: options.actor.type,
      actorId: options.actor.id,
      actorLabel: options.actor.label,
      action: parsedEvents[index].action,
      subjectType: options.subject?.type ?? null,
      subjectId: options.subject?.id ?? null,
      payload: parsedEvents[index].payload,
      requestId: options.context?.requestId ?? null,
      ipAddress: options.context?.ipAddress ?? null,
    })),
  );
}

/** The event checked against its schema; a wrong one is a programming error named by its action. */
export function parseAuditEvent(event: AuditEventInput): AuditEventInput {
  const parsed = auditEventSchema.safeParse(event);
  if (!parsed.success) {
    throw new AppError("invalid_input", `audit event ${event.action}: ${parsed.error.issues.map((issue) => `${issue.path.join(".")}: ${issue.message}`).join("; ")}`);
  }
  return parsed.data;
}

/**
 * Takes the chain's lock (held until the transaction ends) and reads the head: the hash the next
 * event links to, and the database clock.
 */
export async function lockChainHead(tx: Prisma.TransactionClient): Promise<{ hash: string; now: Date }> {
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(${AUDIT_CHAIN_LOCK_KEY}::bigint)`;
  const [head] = await tx.$queryRaw<{ hash: string | null; now: Date }[]>`
    SELECT (SELECT hash FROM audit_events ORDER BY id DESC LIMIT 1) AS hash, clock_timestamp() AS now`;
  return { hash: head.hash ?? GENESIS_HASH, now: head.now };
}

/** Hashes the events in order after `headHash` and inserts them in one statement; the caller holds the lock. */
export async function appendToChain(tx: Prisma.TransactionClient, headHash: string, events: readonly HashedAuditFields[]): Promise<{ id: bigint; hash: string }[]> {
  if (events.length === 0) return [];
  let prevHash = headHash;
  const columns = {
    occurredAt: [] as Date[],
    actorType: [] as string[],
    actorId: [] as (string | null)[],
    actorLabel: [] as string[],
    action: [] as string[],
    subjectType: [] as (string | null)[],
    subjectId: [] as (string | null)[],
    payload: [] as string[],
    requestId: [] as (string | null)[],
    ipAddress: [] as (string | null)[],
    prevHash: [] as string[],
    hash: [] as string[],
  };
  for (const fields of events) {
    const hash = auditEventHash(prevHash, fields);
    columns.occurredAt.push(fields.occurredAt);
    columns.actorType.push(fields.actorType);
    columns.actorId.push(fields.actorId);
    columns.actorLabel.push(fields.actorLabel);
    columns.action.push(fields.action);
    columns.subjectType.push(fields.subjectType);
    columns.subjectId.push(fields.subjectId);
    columns.payload.push(JSON.stringify(fields.payload));
    columns.requestId.push(fields.requestId);
    columns.ipAddress.push(fields.ipAddress);
    columns.prevHash.push(prevHash);
    columns.hash.push(hash);
    prevHash = hash;
  }
  // unnest(...) WITH ORDINALITY keeps the given order, so identity ids follow the chain order.
  const rows = await tx.$queryRaw<{ id: bigint; hash: string }[]>`
    INSERT INTO audit_events (occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id,
                              payload, request_id, ip_address, prev_hash, hash)
    SELECT occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id,
           payload::jsonb, request_id, ip_address, prev_hash, hash
      FROM unnest(${columns.occurredAt}::timestamptz[], ${columns.actorType}::text[], ${columns.actorId}::text[],
                  ${columns.actorLabel}::text[], ${columns.action}::text[], ${columns.subjectType}::text[],
                  ${columns.subjectId}::text[], ${columns.payload}::text[], ${columns.requestId}::text[],
                  ${columns.ipAddress}::text[], ${columns.prevHash}::text[], ${columns.hash}::text[])
           WITH ORDINALITY AS e(occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id,
                                payload, request_id, ip_address, prev_hash, hash, position)
     ORDER BY position
    RETURNING id, hash`;
  const idByHash = new Map(rows.map((row) => [row.hash, row.id]));
  return columns.hash.map((hash) => ({ id: idByHash.get(hash) as bigint, hash }));
}

/** For callers that are not already in a transaction: the event alone, in its own transaction. */
export async function recordStandaloneAuditEvent(db: DbOrTx, options: RecordAuditEventOptions): Promise<{ id: bigint; hash: string }> {
  return inTransaction(db, (tx) => recordAuditEvent(tx, options));
}

