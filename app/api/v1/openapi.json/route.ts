// GET /api/v1/openapi.json — the OpenAPI 3.1 description of this API, generated from the request schemas and the route registry.
import { apiRoute } from "@/lib/http/api-route";
import { buildOpenApiDocument } from "@/lib/api-docs/openapi-document";
import { getSettings } from "@/lib/settings/get-settings";
import { db } from "@/lib/db/client";

export const GET = apiRoute("GET /api/v1/openapi.json", async () => {
  const settings = await getSettings(db());
  return buildOpenApiDocument({ channels: settings.ingest.channels });
});
