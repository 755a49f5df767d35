"use server";
import { revalidatePath } from "next/cache";
import { z } from "zod";
import { db } from "@/lib/db/client";
import { AppError, isAppError } from "@/lib/errors";
import { formAction } from "@/lib/http/server-action";
import { refitCalibration } from "@/lib/calibration/refit-calibration";
import { changeSettings, type EditableSettingsKey } from "@/lib/settings/change-settings";
import { getSettings } from "@/lib/settings/get-settings";
import {
  calibrationSettingsFromForm,
  costSettingsFromForm,
  formFieldForSettingsPath,
  queueSettingsFromForm,
  rawFormSchema,
  type FormConversion,
} from "@/lib/settings/settings-forms";
import type { Settings } from "@/lib/settings/schemas";
import type { UserActor } from "@/lib/auth/actor";

const audit = (context: { requestId: string; ipAddress: string }) => ({ requestId: context.requestId, ipAddress: context.ipAddress });

async function save<K extends EditableSettingsKey>(
  key: K,
  conversion: FormConversion<Settings[K]>,
  { user, context, now }: { user: UserActor; context: { requestId: string; ipAddress: string }; now: Date },
): Promise<{ message: string }> {
  if (!conversion.ok) throw new AppError("invalid_input", "Some fields need another look; nothing was saved.", conversion.issues);
  try {
    const result = await changeSettings(db(), { actor: user, key, value: conversion.value, now, context: audit(context) });
    revalidatePath("/settings");
    revalidatePath("/queue");
    if (key === "calibration") return { message: "Saved. The next refit, on demand or automatic, uses these minimums." };
    const count = result.recomputedAlerts;
    return { message: `Saved. ${count} waiting alert${count === 1 ? "" : "s"} re-derived under the new settings; the next claim follows them.` };
  } catch (error) {
    if (isAppError(error) && error.code === "invalid_input") {
      throw new AppError("invalid_input", "Some fields need another look; nothing was saved.", error.issues.map((issue) => ({ ...issue, path: formFieldForSettingsPath(issue.path) })));
    }
    throw error;
  }
}

export const saveQueueSettingsAction = formAction("app/(desk)/settings/actions.ts#saveQueueSettingsAction", rawFormSchema, async (raw, action) => {
  const settings = await getSettings(db());
  return save("queue", queueSettingsFromForm(raw, { currency: settings.costs.homeCurrency, channels: settings.ingest.channels }), action);
});

export const saveCostSettingsAction = formAction("app/(desk)/settings/actions.ts#saveCostSettingsAction", rawFormSchema, async (raw, action) => {
  const settings = await getSettings(db());
  return save("costs", costSettingsFromForm(raw, { current: settings.costs, channels: settings.ingest.channels }), action);
});

export const refitCalibrationAction = formAction(
  "app/(desk)/settings/actions.ts#refitCalibrationAction",
  z.object({ modelVersionId: z.string().uuid("Choose a model version.") }),
  async ({ modelVersionId }, { user, context, now }) => {
    const { calibrationMap, recomputedAlerts } = await refitCalibration(db(), { actor: user, modelVersionId, trigger: "on_demand", now, context: audit(context) });
    revalidatePath("/settings");
    revalidatePath("/queue");
    return {
      message:
        `Refitted on ${calibrationMap.labelCount} outcomes (${calibrationMap.positiveCount} confirmed fraud), Brier score ${calibrationMap.brierScore.toFixed(4)}; ` +
        `${recomputedAlerts} waiting alert${recomputedAlerts === 1 ? "" : "s"} re-derived.`,
    };
  },
);

export const saveCalibrationSettingsAction = formAction("app/(desk)/settings/actions.ts#saveCalibrationSettingsAction", rawFormSchema, async (raw, action) =>
  save("calibration", calibrationSettingsFromForm(raw), action),
);
