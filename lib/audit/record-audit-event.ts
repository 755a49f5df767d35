// Appends one event to the hash-chained audit log inside the caller's transaction, so the
// change and its record commit or roll back together.
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { auditEventHash, GENESIS_HASH } from "@/lib/audit/audit-hash";
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
  const parsed = auditEventSchema.safeParse(options.event);
  if (!parsed.success) {
    throw new AppError("invalid_input", `audit event ${options.event.action}: ${parsed.error.issues.map((issue) => `${issue.path.join(".")}: ${issue.message}`).join("; ")}`);
  }
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(${AUDIT_CHAIN_LOCK_KEY}::bigint)`;
  const [head] = await tx.$queryRaw<{ hash: string; now: Date }[]>`
    SELECT (SELECT hash FROM audit_events ORDER BY id DESC LIMIT 1) AS hash, clock_timestamp() AS now`;
  const prevHash = head?.hash ?? GENESIS_HASH;
  // Millisecond precision: the value must survive the round trip through JavaScript's Date unchanged.
  const occurredAt = new Date((options.occurredAt ?? head.now).getTime());
  const fields = {
    occurredAt,
    actorType: options.actor.type,
    actorId: options.actor.id,
    actorLabel: options.actor.label,
    action: parsed.data.action,
    subjectType: options.subject?.type ?? null,
    subjectId: options.subject?.id ?? null,
    payload: parsed.data.payload,
    requestId: options.context?.requestId ?? null,
    ipAddress: options.context?.ipAddress ?? null,
  };
  const hash = auditEventHash(prevHash, fields);
  const [row] = await tx.$queryRaw<{ id: bigint }[]>`
    INSERT INTO audit_events (occurred_at, actor_type, actor_id, actor_label, action, subject_type, subject_id,
                              payload, request_id, ip_address, prev_hash, hash)
    VALUES (${occurredAt}, ${fields.actorType}, ${fields.actorId}, ${fields.actorLabel}, ${fields.action},
            ${fields.subjectType}, ${fields.subjectId}, ${JSON.stringify(fields.payload)}::jsonb,
            ${fields.requestId}, ${fields.ipAddress}, ${prevHash}, ${hash})
    RETURNING id`;
  return { id: row.id, hash };
}

/** For callers that are not already in a transaction: the event alone, in its own transaction. */
export async function recordStandaloneAuditEvent(db: DbOrTx, options: RecordAuditEventOptions): Promise<{ id: bigint; hash: string }> {
  if ("$transaction" in db) return db.$transaction((tx) => recordAuditEvent(tx, options));
  return recordAuditEvent(db, options);
}

