// GET /api/v1/metrics/reviewers — per reviewer over a window: closed, outcome mix, hit rate, observed over expected, false-clear rate, median handling time, kappa with second reviewers; the Reviewer quality screen's numbers.
import { db } from "@/lib/db/client";
import { apiRoute } from "@/lib/http/api-route";
import { getReviewerMetrics } from "@/lib/feedback/get-reviewer-metrics";
import { parseWindowQuery } from "@/lib/feedback/parse-metrics-query";

export const GET = apiRoute("GET /api/v1/metrics/reviewers", async (request, { actor, now }) => {
  const answer = await getReviewerMetrics(db(), { query: parseWindowQuery(request.nextUrl.searchParams), now });
  if (actor.type === "user") return answer;
  // An API client's report gets the stable pseudonyms only: names stay with the supervisors and
  // auditors who may open the screen (DESIGN.md §5).
  return { ...answer, reviewers: answer.reviewers.map((row) => ({ ...row, reviewer: { ...row.reviewer, displayName: null } })) };
});
