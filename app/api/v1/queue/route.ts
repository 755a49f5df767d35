// GET /api/v1/queue?limit=N&offset=M — the waiting alerts in the order "take next" hands them out, with probability, expected loss and due time.
import { db } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { apiRoute } from "@/lib/http/api-route";
import { getSettings } from "@/lib/settings/get-settings";
import { listWaitingAlerts } from "@/lib/queue/list-waiting-alerts";
import { queueListQuerySchema } from "@/lib/queue/schemas";

export const GET = apiRoute("GET /api/v1/queue", async (request, { now }) => {
  const parsed = queueListQuerySchema.safeParse(Object.fromEntries(request.nextUrl.searchParams));
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      "The query is not valid",
      parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
    );
  }
  const [alerts, settings] = await Promise.all([listWaitingAlerts(db(), { now, ...parsed.data }), getSettings(db())]);
  return {
    now: now.toISOString(),
    orderMode: settings.queue.orderMode,
    limit: parsed.data.limit,
    offset: parsed.data.offset,
    alerts: alerts.map((alert, index) => ({
      position: parsed.data.offset + index + 1,
      id: alert.id,
      externalId: alert.externalId,
      receivedAt: alert.receivedAt.toISOString(),
      amountMinor: alert.amountMinor,
      currency: alert.currency,
      channel: alert.channel,
      modelVersion: { id: alert.modelVersionId, modelName: alert.modelName, version: alert.modelVersion },
      score: alert.score,
      probability: alert.probability,
      calibrated: alert.calibrated,
      probabilitySource: alert.probabilitySource,
      exposureMinor: alert.exposureMinor,
      expectedLossMinor: alert.expectedLossMinor,
      priority: alert.priority,
      dueAt: alert.dueAt?.toISOString() ?? null,
      overdue: alert.overdue,
    })),
  };
});
