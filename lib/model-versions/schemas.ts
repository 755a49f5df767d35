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
