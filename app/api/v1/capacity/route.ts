// GET /api/v1/capacity?capacity=K — the capacity planner: per model version, the threshold for K alerts a day, precision, expected loss caught, score versus expected-loss order, and the curve.
import { db } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { planCapacity } from "@/lib/workload/plan-capacity";
import { parseCapacityQuery } from "@/lib/workload/parse-workload-query";

export const GET = apiRoute("GET /api/v1/capacity", async (request, { now }) => {
  const query = parseCapacityQuery(request.nextUrl.searchParams);
  return planCapacity(db(), { query, now });
});
