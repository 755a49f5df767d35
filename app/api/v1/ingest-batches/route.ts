// GET /api/v1/ingest-batches — the ingest log as JSON: recent batches with sender and counts (?limit, ?offset, ?kind).
import { db } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { apiRoute } from "@/lib/http/api-route";
import { INGEST_KINDS, type IngestKind } from "@/lib/ingest/ingest-batch";
import { listIngestBatches } from "@/lib/ingest/list-ingest-batches";

export const GET = apiRoute("GET /api/v1/ingest-batches", async (request) => {
  const params = new URL(request.url).searchParams;
  const limit = Number(params.get("limit") ?? 50);
  const offset = Number(params.get("offset") ?? 0);
  const kind = params.get("kind");
  if (!Number.isInteger(limit) || limit < 1 || limit > 500) throw new AppError("invalid_input", "limit must be a whole number from 1 to 500");
  if (!Number.isInteger(offset) || offset < 0) throw new AppError("invalid_input", "offset must be a whole number of 0 or more");
  if (kind !== null && !(INGEST_KINDS as readonly string[]).includes(kind)) throw new AppError("invalid_input", `kind must be one of ${INGEST_KINDS.join(", ")}`);
  return listIngestBatches(db(), { limit, offset, kind: (kind ?? undefined) as IngestKind | undefined });
});
