// The ingest log: recent batches, newest first, with who sent them and what became of their rows.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import type { IngestChannel, IngestKind } from "@/lib/ingest/ingest-batch";

export interface IngestBatchSummary {
  id: string;
  kind: IngestKind;
  channel: IngestChannel;
  receivedAt: Date;
  /** The API client's name, the person's email, or "system" for the demo and other tools. */
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
           coalesce('api:' || c.name, u.email, 'system') AS sender, b.file_name AS "fileName",
           b.row_count AS "rowCount", b.accepted, b.duplicate, b.conflict, b.rejected,
           jsonb_array_length(b.errors) AS "problemCount"
      FROM ingest_batches b
      LEFT JOIN api_clients c ON c.id = b.api_client_id
      LEFT JOIN users u ON u.id = b.user_id
     WHERE ${kind}::text IS NULL OR b.kind = ${kind}
     ORDER BY b.received_at DESC, b.id
     LIMIT ${options.limit} OFFSET ${options.offset ?? 0}`;
  const [{ total }] = await db.$queryRaw<{ total: number }[]>`
    SELECT count(*)::int AS total FROM ingest_batches WHERE ${kind}::text IS NULL OR kind = ${kind}`;
  return { batches, total };
}
