// CSV (RFC 4180) of a filtered view of the audit trail, streamed oldest first, every column
// exactly as stored so that the hashes can be recomputed from the file alone:
//   hash = SHA-256(prev_hash || canonical JSON of the event), see lib/audit/audit-hash.ts.
//
// The export is recorded (`audit.exported`, with its filter and row count) *before* the first
// byte leaves: a file can never exist without its record, even if the download is cut short.
// The row count is known up front because the log is append-only and appends are serialised
// by the chain lock, so ids are handed out in commit order: every event with an id up to the
// current maximum is already committed and will never change. The export reads exactly those.
//
// Values are written as stored, with no leading apostrophe against spreadsheet formulas (OWASP's
// "CSV injection" advice): an audit export must be byte-faithful to be verifiable. Open it in a
// spreadsheet through a text import, not by double-clicking.
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { canonicalJson } from "@/lib/audit/canonical-json";
import { compactAuditFilter } from "@/lib/audit/audit-query";
import { auditFilterSql, resolveAuditFilter, selectAuditEvents, type AuditEventView } from "@/lib/audit/find-audit-events";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditActor, AuditContext, AuditFilter } from "@/lib/audit/schemas";
import { Prisma } from "@/lib/generated/prisma/client";
import { csvField, csvRecord } from "@/lib/csv/rfc4180";
import { linkStagedAuditEvents } from "@/lib/audit/staged-audit-events";
import { inTransaction } from "@/lib/db/in-transaction";

export const AUDIT_CSV_COLUMNS = [
  "id",
  "occurred_at",
  "actor_type",
  "actor_id",
  "actor_label",
  "action",
  "subject_type",
  "subject_id",
  "payload",
  "request_id",
  "ip_address",
  "prev_hash",
  "hash",
] as const;

// RFC 4180 writing lives in lib/csv (the label exports use the same); re-exported for callers.
export { csvField, csvRecord };

export function auditEventCsvRecord(event: AuditEventView): string {
  return csvRecord([
    event.id,
    event.occurredAt.toISOString(),
    event.actorType,
    event.actorId,
    event.actorLabel,
    event.action,
    event.subjectType,
    event.subjectId,
    canonicalJson(event.payload),
    event.requestId,
    event.ipAddress,
    event.prevHash,
    event.hash,
  ]);
}

export interface ExportAuditEventsOptions {
  actor: AuditActor;
  filter: AuditFilter;
  context?: AuditContext;
  /** Rows read per query while streaming. */
  batchSize?: number;
  now?: Date;
}

export interface AuditCsvExport {
  fileName: string;
  contentType: string;
  rowCount: number;
  /** The newest event the export could contain; null when the log was empty. */
  throughEventId: string | null;
  /** The `audit.exported` event that records this export. */
  exportEventId: string;
  stream: ReadableStream<Uint8Array>;
}

/** `db` must outlive the returned stream: pass the app's client, not a transaction. */
export async function exportAuditEvents(db: DbOrTx, options: ExportAuditEventsOptions): Promise<AuditCsvExport> {
  const batchSize = options.batchSize ?? 2000;
  await linkStagedAuditEvents(db);
  const resolved = await resolveAuditFilter(db, options.filter);
  const [head] = await db.$queryRaw<{ id: bigint | null }[]>`SELECT max(id) AS id FROM audit_events`;
  const through = head.id ?? BigInt(0);
  const [counted] = await db.$queryRaw<{ count: number }[]>`
    SELECT count(*)::int AS count FROM audit_events WHERE ${auditFilterSql(resolved)} AND id <= ${through}`;
  const rowCount = counted.count;
  const throughEventId = head.id === null ? null : head.id.toString();

  const record = (tx: Prisma.TransactionClient) =>
    recordAuditEvent(tx, {
      actor: options.actor,
      event: { action: "audit.exported", payload: { filter: compactAuditFilter(options.filter), rowCount, throughEventId, format: "csv" } },
      context: options.context,
    });
  const recorded = await inTransaction(db, record);

  const encoder = new TextEncoder();
  let lastId: string | undefined = undefined;
  let written = 0;
  let headerSent = false;
  const stream = new ReadableStream<Uint8Array>({
    async pull(controller) {
      if (!headerSent) {
        headerSent = true;
        controller.enqueue(encoder.encode(csvRecord([...AUDIT_CSV_COLUMNS])));
        return;
      }
      const rows = through === BigInt(0) ? [] : await selectAuditEvents(db, resolved, { order: "asc", afterId: lastId, beforeId: (through + BigInt(1)).toString(), limit: batchSize });
      if (rows.length === 0) {
        if (written !== rowCount) {
          // Cannot happen while the table is append-only; if it does, the file must not look complete.
          controller.error(new AppError("conflict", `The audit export found ${written} rows where ${rowCount} were counted; the log changed underneath it.`));
          return;
        }
        controller.close();
        return;
      }
      written += rows.length;
      lastId = rows[rows.length - 1].id;
      controller.enqueue(encoder.encode(rows.map(auditEventCsvRecord).join("")));
    },
  });

  const stamp = (options.now ?? new Date()).toISOString().slice(0, 19).replaceAll(":", "").replace("T", "-");
  return {
    fileName: `audit-trail-${stamp}Z.csv`,
    // RFC 4180 §3: the registered media type with its optional parameters.
    contentType: "text/csv; charset=utf-8; header=present",
    rowCount,
    throughEventId,
    exportEventId: recorded.id.toString(),
    stream,
  };
}
