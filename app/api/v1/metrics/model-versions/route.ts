// GET /api/v1/metrics/model-versions — per model version over a window: received, closed, outcome mix, realized precision (overall and over time), calibration, ROC AUC and AP on reviewed alerts, PSI, precision at k; the Model health screen's numbers.
import { db } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { getModelVersionMetrics } from "@/lib/feedback/get-model-version-metrics";
import { parseModelVersionMetricsQuery } from "@/lib/feedback/parse-metrics-query";

export const GET = apiRoute("GET /api/v1/metrics/model-versions", async (request, { now }) =>
  getModelVersionMetrics(db(), { query: parseModelVersionMetricsQuery(request.nextUrl.searchParams), now }),
);
