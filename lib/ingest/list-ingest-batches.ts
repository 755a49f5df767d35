// The ingest log: recent batches, newest first, with who sent them and what became of their rows.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import type { IngestChannel, IngestKind } from "@/lib/ingest/ingest-batch";

export interface IngestBatchSummary {
  id: string;
  kind: IngestKind;
  channel: IngestChannel;
  receivedAt: Date;
  /** "api:<client name>", the person's email, or the command's or demo's actor name (cli:<os user>, demo-loader). */
  sender: string;
  fileName: string | null;
  rowCount: number;
  accepted: number;
  duplicate: number;
  conflict: number;
  rejected: number;
  /** Problems kept for the rejected-rows download (at most MAX_REPORTED_PROBLEMS). */
  problemCount: number;
}

export interface ListIngestBatchesOptions {
  limit: number;
  offset?: number;
  kind?: IngestKind;
}

export async function listIngestBatches(db: DbOrTx, options: ListIngestBatchesOptions): Promise<{ batches: IngestBatchSummary[]; total: number }> {
  const kind = options.kind ?? null;
  const batches = await db.$queryRaw<IngestBatchSummary[]>`
    SELECT b.id, b.kind, b.channel, b.received_at AS "receivedAt",
           coalesce('api:' || c.name, u.email, e.actor_label, 'system') AS sender, b.file_name AS "fileName",
           b.row_count AS "rowCount", b.accepted, b.duplicate, b.conflict, b.rejected,
           jsonb_array_length(b.errors) AS "problemCount"
      FROM ingest_batches b
      LEFT JOIN api_clients c ON c.id = b.api_client_id
      LEFT JOIN users u ON u.id = b.user_id
      -- Commands and the demo act as system actors with a name (cli:<os user>, demo-loader); their
      -- batch's audit event keeps it (audit_events_subject_idx finds it).
      LEFT JOIN audit_events e ON e.subject_type = 'ingest_batch' AND e.subject_id = b.id::text AND e.action = 'ingest.batch_received'
     WHERE ${kind}::text IS NULL OR b.kind = ${kind}
     ORDER BY b.received_at DESC, b.id
     LIMIT ${options.limit} OFFSET ${options.offset ?? 0}`;
  const [{ total }] = await db.$queryRaw<{ total: number }[]>`
    SELECT count(*)::int AS total FROM ingest_batches WHERE ${kind}::text IS NULL OR kind = ${kind}`;
  return { batches, total };
}
