// GET /api/v1/model-versions — the model-version registry; POST — create or update one model version (admins).
import { db } from "@/lib/db/client";
import { apiRoute, readJsonBody } from "@/lib/http/api-route";
import { listModelVersions } from "@/lib/model-versions/list-model-versions";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";

export const GET = apiRoute("GET /api/v1/model-versions", async (request) => {
  const activeOnly = new URL(request.url).searchParams.get("active") === "true";
  return { modelVersions: await listModelVersions(db(), { activeOnly }) };
});

export const POST = apiRoute("POST /api/v1/model-versions", async (request, { actor, context, now }) => {
  const result = await saveModelVersion(db(), { actor, input: await readJsonBody(request), context, now });
  return Response.json(result, { status: result.created ? 201 : 200 });
});
