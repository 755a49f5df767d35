// Model versions: the input schema lives with the other ingest schemas (lib/ingest/schemas.ts), since
// the scoring service's alerts name a model version; this module re-exports it and adds the view.
import { z } from "zod";
import { SCORE_KINDS } from "@/lib/ingest/schemas";

export { modelVersionInputSchema, type ModelVersionInput, type ModelVersionInputRaw } from "@/lib/ingest/schemas";

/** One model version as the registry shows it (GET /api/v1/model-versions). */
export const modelVersionViewSchema = z.object({
  id: z.string().uuid(),
  modelName: z.string(),
  version: z.string(),
  scoreKind: z.enum(SCORE_KINDS),
  negativeSamplingRate: z.number(),
  priorHitRate: z.number().nullable(),
  alertThreshold: z.number(),
  active: z.boolean(),
  createdAt: z.date(),
  /** Fit time of the latest calibration map, or null while the version is uncalibrated. */
  calibratedAt: z.date().nullable(),
  calibrationLabelCount: z.number().int().nullable(),
});
export type ModelVersionView = z.infer<typeof modelVersionViewSchema>;

/** Fields an admin may edit; everything else identifies the version. */
export const MODEL_VERSION_EDITABLE_FIELDS = ["scoreKind", "negativeSamplingRate", "priorHitRate", "alertThreshold", "active"] as const;

/** The Settings screen's model-version form: every field arrives as text (checkbox "on" when ticked). */
export const modelVersionFormSchema = z.object({
  modelName: z.string().default(""),
  version: z.string().default(""),
  scoreKind: z.string().default(""),
  negativeSamplingRate: z.string().default(""),
  priorHitRate: z.string().default(""),
  alertThreshold: z.string().default(""),
  active: z.string().optional(),
});
export type ModelVersionForm = z.infer<typeof modelVersionFormSchema>;

/** A number when the text is plainly one; otherwise the text itself, so validation names the field. */
function formNumber(text: string): number | string | undefined {
  const trimmed = text.trim();
  if (trimmed === "") return undefined;
  const value = Number(trimmed);
  return Number.isFinite(value) ? value : trimmed;
}

/** The form's text as the input saveModelVersion validates: empty β means 1, empty prior means none. */
export function modelVersionInputFromForm(form: ModelVersionForm): Record<string, unknown> {
  return {
    modelName: form.modelName.trim(),
    version: form.version.trim(),
    scoreKind: form.scoreKind,
    negativeSamplingRate: formNumber(form.negativeSamplingRate),
    priorHitRate: formNumber(form.priorHitRate) ?? null,
    alertThreshold: formNumber(form.alertThreshold),
    active: form.active === "on",
  };
}
