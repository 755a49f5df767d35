// POST /api/v1/alerts — ingest scored alerts (JSON array, NDJSON or CSV); answers counts, rejected rows and the batch id; ?atomic=true for all or nothing.
import { apiRoute } from "@/lib/http/api-route";
import { answerIngestRequest } from "@/lib/ingest/answer-ingest-request";

export const POST = apiRoute("POST /api/v1/alerts", (request, { actor, context, now }) => answerIngestRequest(request, { kind: "alerts", actor, context, now }));
