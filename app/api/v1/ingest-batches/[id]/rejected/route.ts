// GET /api/v1/ingest-batches/[id]/rejected — a batch's rejected and conflicting rows with their reasons, as a CSV download.
import { db } from "@/lib/db/client";
import { apiRoute, type ApiHandlerContext } from "@/lib/http/api-route";
import { getIngestBatchProblems } from "@/lib/ingest/get-ingest-batch-problems";
import { problemsCsv } from "@/lib/ingest/problems-csv";

export const GET = apiRoute("GET /api/v1/ingest-batches/[id]/rejected", async (_request, { params }: ApiHandlerContext<{ id: string }>) => {
  const batch = await getIngestBatchProblems(db(), { batchId: params.id });
  const stamp = batch.receivedAt.toISOString().slice(0, 19).replaceAll(":", "").replace("T", "-");
  return new Response(problemsCsv(batch.problems), {
    headers: {
      "content-type": "text/csv; charset=utf-8",
      "content-disposition": `attachment; filename="rejected-${batch.kind}-${stamp}.csv"`,
    },
  });
});
