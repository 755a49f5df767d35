// POST /api/v1/model-versions/{id}/refit — refit the model version's calibration from its reviewed outcomes now and re-derive its waiting alerts.
import { db } from "@/lib/db/client";
import { apiRoute, type ApiHandlerContext } from "@/lib/http/api-route";
import { refitCalibration } from "@/lib/calibration/refit-calibration";

export const POST = apiRoute("POST /api/v1/model-versions/[id]/refit", async (_request, { actor, params, now, context }: ApiHandlerContext<{ id: string }>) => {
  const { calibrationMap, recomputedAlerts } = await refitCalibration(db(), {
    actor,
    modelVersionId: params.id,
    trigger: "on_demand",
    now,
    context: { requestId: context.requestId, ipAddress: context.ipAddress },
  });
  return {
    calibrationMap: {
      id: calibrationMap.id,
      modelVersionId: calibrationMap.modelVersionId,
      fittedAt: calibrationMap.fittedAt.toISOString(),
      labelCount: calibrationMap.labelCount,
      positiveCount: calibrationMap.positiveCount,
      brierScore: calibrationMap.brierScore,
      scores: calibrationMap.map.scores,
      probabilities: calibrationMap.map.probabilities,
    },
    recomputedAlerts,
  };
});
