// POST /api/v1/outcomes — back-fill historical outcomes: each row closes an ingested alert with its imported review(s).
import { apiRoute } from "@/lib/http/api-route";
import { answerIngestRequest } from "@/lib/ingest/answer-ingest-request";

export const POST = apiRoute("POST /api/v1/outcomes", (request, { actor, context, now }) => answerIngestRequest(request, { kind: "outcomes", actor, context, now }));
