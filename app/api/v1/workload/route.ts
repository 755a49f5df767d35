// GET /api/v1/workload — the Workload screen's numbers: backlog by age and expected-loss band, overdue now and projected, analysts, history, age distribution.
import { db } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { getWorkload } from "@/lib/workload/get-workload";
import { parseWorkloadQuery } from "@/lib/workload/parse-workload-query";

export const GET = apiRoute("GET /api/v1/workload", async (request, { actor, now, context }) => {
  const query = parseWorkloadQuery(request.nextUrl.searchParams);
  const answer = await getWorkload(db(), { now, horizonHours: query.horizonHours, days: query.days, context: { requestId: context.requestId, ipAddress: context.ipAddress } });
  if (actor.type === "user") return answer;
  // An API client's report gets the stable pseudonyms only: names stay with the people who may open
  // the screen (DESIGN.md §5), as for GET /api/v1/metrics/reviewers.
  return {
    ...answer,
    analysts: answer.analysts.map((analyst) => ({ ...analyst, displayName: null })),
    assignees: answer.assignees.map((person) => ({ ...person, displayName: null })),
  };
});
