// What every ingest (alerts, labels, outcomes) shares: the ingest_batches row opened at the start
// of the batch transaction and closed at its end with the counts, the rejected rows' reasons and an
// ingest.batch_received audit event — all in the same transaction as the rows themselves.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { looksLikeFullCardNumber } from "@/lib/ingest/card-number-guard";
import type { RowError } from "@/lib/ingest/validate-rows";

export const INGEST_CHANNELS = ["api", "upload", "command_line", "demo"] as const;
export type IngestChannel = (typeof INGEST_CHANNELS)[number];
export const INGEST_KINDS = ["alerts", "labels", "outcomes"] as const;
export type IngestKind = (typeof INGEST_KINDS)[number];

/** The portfolio every row goes to until portfolios are configurable (DESIGN.md §6). */
export const DEFAULT_PORTFOLIO = "default";

/** At most this many problems are kept per batch (answer and ingest log); counts stay exact. */
export const MAX_REPORTED_PROBLEMS = 10_000;

/**
 * A batch commits in one transaction; large back-fills (tens of thousands of rows with an audit
 * event each) need longer than Prisma's 5-second default.
 */
export const BATCH_TRANSACTION_OPTIONS = { maxWait: 30_000, timeout: 15 * 60_000 } as const;

export interface IngestProblem extends RowError {
  /** The row's external id when it had a usable one, so people can find the row in their file. */
  externalId?: string;
}

export interface IngestAnswer {
  batchId: string;
  accepted: number;
  duplicate: number;
  conflict: number;
  rejected: number;
  /** Rejected rows: row index (0-based in the request), field path and what was expected. */
  errors: IngestProblem[];
  /** Rows whose external id exists with different content; path "externalId". */
  conflicts: IngestProblem[];
  /** True when more than MAX_REPORTED_PROBLEMS errors or conflicts occurred and the rest were left out. */
  problemsTruncated: boolean;
}

export interface IngestCommonOptions {
  actor: Actor;
  rows: readonly unknown[];
  channel: IngestChannel;
  /** All rows or none: any rejected or conflicting row rolls back the whole batch. */
  atomic?: boolean;
  fileName?: string | null;
  now: Date;
  context?: AuditContext;
  /** Added to every reported row index: the position of this request's first row in a larger file. */
  rowOffset?: number;
}

/**
 * Runs `work` in its own transaction, or inside the caller's when `db` already is one (told apart
 * as lib/db/in-transaction.ts does: Prisma 7's transaction handle has `$transaction` too).
 */
export function inBatchTransaction<T>(db: DbOrTx, work: (tx: Prisma.TransactionClient) => Promise<T>): Promise<T> {
  return inTransaction(db, work, BATCH_TRANSACTION_OPTIONS);
}

/** The external id of a raw row when it is a plain, safe string (never a card-number look-alike). */
export function externalIdOf(raw: unknown): string | undefined {
  if (typeof raw !== "object" || raw === null) return undefined;
  const value = (raw as Record<string, unknown>).externalId;
  if (typeof value !== "string" || value.length === 0 || value.length > 200) return undefined;
  return looksLikeFullCardNumber(value) ? undefined : value;
}

/** Collects problems with row numbers shifted by the request's offset, keeping at most the cap. */
export class ProblemList {
  readonly items: IngestProblem[] = [];
  truncated = false;
  private readonly rowsWithProblems = new Set<number>();

  constructor(
    private readonly rows: readonly unknown[],
    private readonly rowOffset: number,
  ) {}

  add(problem: RowError): void {
    this.rowsWithProblems.add(problem.row);
    if (this.items.length >= MAX_REPORTED_PROBLEMS) {
      this.truncated = true;
      return;
    }
    const externalId = externalIdOf(this.rows[problem.row]);
    this.items.push({ ...problem, row: problem.row + this.rowOffset, ...(externalId === undefined ? {} : { externalId }) });
  }

  has(row: number): boolean {
    return this.rowsWithProblems.has(row);
  }

  /** Rows (not problems) counted. */
  get rowCount(): number {
    return this.rowsWithProblems.size;
  }
}

export async function openIngestBatch(
  tx: Prisma.TransactionClient,
  options: { kind: IngestKind; channel: IngestChannel; actor: Actor; fileName?: string | null; now: Date; rowCount: number },
): Promise<string> {
  const batch = await tx.ingestBatch.create({
    data: {
      kind: options.kind,
      channel: options.channel,
      apiClientId: options.actor.type === "api_client" ? options.actor.id : null,
      userId: options.actor.type === "user" ? options.actor.id : null,
      fileName: options.fileName ?? null,
      receivedAt: options.now,
      rowCount: options.rowCount,
    },
    select: { id: true },
  });
  return batch.id;
}

export interface BatchCounts {
  accepted: number;
  duplicate: number;
  conflict: number;
  rejected: number;
}

/** Stores the counts and problems on the batch row and appends its ingest.batch_received event. */
export async function closeIngestBatch(
  tx: Prisma.TransactionClient,
  options: {
    batchId: string;
    kind: IngestKind;
    channel: IngestChannel;
    actor: Actor;
    rowCount: number;
    counts: BatchCounts;
    errors: IngestProblem[];
    conflicts: IngestProblem[];
    context?: AuditContext;
  },
): Promise<void> {
  const stored = [
    ...options.errors.map((problem) => ({ kind: "rejected", ...problem })),
    ...options.conflicts.map((problem) => ({ kind: "conflict", ...problem })),
  ].slice(0, MAX_REPORTED_PROBLEMS);
  await tx.ingestBatch.update({
    where: { id: options.batchId },
    data: { ...options.counts, errors: stored as Prisma.InputJsonValue },
  });
  await recordAuditEvent(tx, {
    actor: auditActorOf(options.actor),
    event: {
      action: "ingest.batch_received",
      payload: { kind: options.kind, channel: options.channel, rows: options.rowCount, ...options.counts },
    },
    subject: { type: "ingest_batch", id: options.batchId },
    context: options.context,
  });
}
