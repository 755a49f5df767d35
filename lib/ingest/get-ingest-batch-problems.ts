// One batch's rejected and conflicting rows with their reasons, for the ingest log's CSV download.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import type { IngestKind, IngestProblem } from "@/lib/ingest/ingest-batch";

export interface StoredIngestProblem extends IngestProblem {
  kind: "rejected" | "conflict";
}

export interface IngestBatchProblems {
  id: string;
  kind: IngestKind;
  receivedAt: Date;
  fileName: string | null;
  rejected: number;
  conflict: number;
  problems: StoredIngestProblem[];
}

export async function getIngestBatchProblems(db: DbOrTx, options: { batchId: string }): Promise<IngestBatchProblems> {
  const batch = /^[0-9a-f-]{36}$/i.test(options.batchId)
    ? await db.ingestBatch.findUnique({
        where: { id: options.batchId },
        select: { id: true, kind: true, receivedAt: true, fileName: true, rejected: true, conflict: true, errors: true },
      })
    : null;
  if (!batch) throw new AppError("not_found", "No ingest batch with this id.");
  const { errors, ...rest } = batch;
  return { ...rest, kind: rest.kind as IngestKind, problems: errors as unknown as StoredIngestProblem[] };
}
