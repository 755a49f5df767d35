// POST /api/v1/labels — ingest late labels (chargebacks, customer reports); labels for alerts not yet received are kept and reported as unmatched.
import { apiRoute } from "@/lib/http/api-route";
import { answerIngestRequest } from "@/lib/ingest/answer-ingest-request";

export const POST = apiRoute("POST /api/v1/labels", (request, { actor, context, now }) => answerIngestRequest(request, { kind: "labels", actor, context, now }));
