// GET /api/v1/workload — the Workload screen's numbers: backlog by age and expected-loss band, overdue now and projected, analysts, history, age distribution.
import { db } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { getWorkload } from "@/lib/workload/get-workload";
import { parseWorkloadQuery } from "@/lib/workload/parse-workload-query";

export const GET = apiRoute("GET /api/v1/workload", async (request, { now, context }) => {
  const query = parseWorkloadQuery(request.nextUrl.searchParams);
  return getWorkload(db(), { now, horizonHours: query.horizonHours, days: query.days, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
});
