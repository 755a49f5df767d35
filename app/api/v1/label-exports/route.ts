// GET /api/v1/label-exports — streams a label export for retraining (CSV, JSON Lines or Parquet) built from the query's choices, and records it in label_exports and the audit trail.
import { PassThrough, Readable } from "node:stream";
import { db, pool } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { createLabelExport } from "@/lib/exports/create-label-export";
import { resolveLabelExportParams } from "@/lib/exports/resolve-label-export-params";
import { FORMAT_EXTENSION, FORMAT_MEDIA_TYPE } from "@/lib/exports/schemas";

export const GET = apiRoute("GET /api/v1/label-exports", async (request, { actor, context, now }) => {
  const url = request.nextUrl.searchParams;
  const params: Record<string, string | string[]> = {};
  for (const name of new Set(url.keys())) {
    const values = url.getAll(name);
    params[name] = values.length === 1 ? values[0] : values;
  }
  const choices = await resolveLabelExportParams(db(), { params, now });
  const sink = new PassThrough();
  // Not awaited: the rows flow into `sink` while the response streams it; the job marks the export
  // done (with its audit event) or failed, and breaks the stream on failure.
  const started = await createLabelExport(
    { prisma: db(), pool: pool() },
    { actor, choices, now, destination: { kind: "stream", sink }, context: { requestId: context.requestId, ipAddress: context.ipAddress } },
  );
  const stamp = started.choices.asOf.toISOString().slice(0, 10).replaceAll("-", "");
  return new Response(Readable.toWeb(sink) as ReadableStream<Uint8Array>, {
    headers: {
      "content-type": FORMAT_MEDIA_TYPE[started.choices.format],
      "content-disposition": `attachment; filename="label-export-${stamp}-${started.exportId}.${FORMAT_EXTENSION[started.choices.format]}"`,
      "x-label-export-id": started.exportId,
    },
  });
});
