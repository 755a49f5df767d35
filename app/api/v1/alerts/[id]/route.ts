// GET /api/v1/alerts/{id} — one alert as the Alert page shows it: facts, the model's view with how the probability was obtained, the expected-loss arithmetic, ranked reason codes, outcomes, labels, and the entity's other alerts of the last 90 days.
import { db } from "@/lib/db/client";
import { apiRoute, type ApiHandlerContext } from "@/lib/http/api-route";
import { getAlertDetail } from "@/lib/alerts/get-alert-detail";
import { findEntityHistory } from "@/lib/alerts/find-entity-history";

export const GET = apiRoute("GET /api/v1/alerts/[id]", async (_request, { params, now }: ApiHandlerContext<{ id: string }>) => {
  const [alert, entityHistory] = await Promise.all([getAlertDetail(db(), { alertId: params.id, now }), findEntityHistory(db(), { alertId: params.id, now })]);
  return { alert, entityHistory };
});
