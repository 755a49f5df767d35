"use server";
import { revalidatePath } from "next/cache";
import { db } from "@/lib/db/client";
import { formAction } from "@/lib/http/server-action";
import { saveModelVersion } from "@/lib/model-versions/save-model-version";
import { modelVersionFormSchema, modelVersionInputFromForm } from "@/lib/model-versions/schemas";

export const saveModelVersionAction = formAction(
  "app/(desk)/settings/model-version-actions.ts#saveModelVersionAction",
  modelVersionFormSchema,
  async (form, { user, context }) => {
    const { modelVersion, created, changes, recomputedAlerts } = await saveModelVersion(db(), {
      actor: user,
      input: modelVersionInputFromForm(form),
      context: { requestId: context.requestId, ipAddress: context.ipAddress },
    });
    revalidatePath("/settings");
    const name = `${modelVersion.modelName} ${modelVersion.version}`;
    if (created) return { message: `Registered ${name}. The scoring service can send its alerts now.` };
    const changed = Object.keys(changes);
    if (changed.length === 0) return { message: `${name} was already saved like this; nothing changed.` };
    const requeued = recomputedAlerts > 0 ? ` ${recomputedAlerts} waiting ${recomputedAlerts === 1 ? "alert was" : "alerts were"} re-derived and re-ordered in the queue.` : "";
    return { message: `Saved ${name}: ${changed.join(", ")} changed.${requeued}` };
  },
  { keep: ["modelName", "version", "scoreKind", "negativeSamplingRate", "priorHitRate", "alertThreshold"] },
);
