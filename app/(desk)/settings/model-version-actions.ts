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
    const { modelVersion, created, changes } = await saveModelVersion(db(), {
      actor: user,
      input: modelVersionInputFromForm(form),
      context: { requestId: context.requestId, ipAddress: context.ipAddress },
    });
    revalidatePath("/settings");
    const name = `${modelVersion.modelName} ${modelVersion.version}`;
    if (created) return { message: `Registered ${name}. The scoring service can send its alerts now.` };
    const changed = Object.keys(changes);
    return { message: changed.length === 0 ? `${name} was already saved like this; nothing changed.` : `Saved ${name}: ${changed.join(", ")} changed.` };
  },
  { keep: ["modelName", "version", "scoreKind", "negativeSamplingRate", "priorHitRate", "alertThreshold"] },
);
