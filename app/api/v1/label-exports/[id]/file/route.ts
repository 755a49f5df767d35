// GET /api/v1/label-exports/[id]/file — downloads the kept file of a finished label export.
import { Readable } from "node:stream";
import { db } from "@/lib/db/client";
import { apiRoute, type ApiHandlerContext } from "@/lib/http/api-route";
import { openLabelExportFile } from "@/lib/exports/open-label-export-file";

export const GET = apiRoute("GET /api/v1/label-exports/[id]/file", async (_request, { params }: ApiHandlerContext<{ id: string }>) => {
  const file = await openLabelExportFile(db(), { exportId: params.id });
  return new Response(Readable.toWeb(file.stream) as ReadableStream<Uint8Array>, {
    headers: {
      "content-type": file.contentType,
      "content-length": String(file.bytes),
      "content-disposition": `attachment; filename="${file.fileName}"`,
      "x-label-export-rows": String(file.rowCount),
    },
  });
});
