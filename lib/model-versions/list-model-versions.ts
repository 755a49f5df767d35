// The model-version registry with each version's calibration state, for the Settings screen and
// GET /api/v1/model-versions.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import type { ModelVersionView } from "@/lib/model-versions/schemas";

export interface ListModelVersionsOptions {
  /** Only versions that are still scoring. */
  activeOnly?: boolean;
}

interface ModelVersionRow extends Omit<ModelVersionView, "scoreKind"> {
  scoreKind: string;
}

export async function listModelVersions(db: DbOrTx, options: ListModelVersionsOptions = {}): Promise<ModelVersionView[]> {
  const rows = await db.$queryRaw<ModelVersionRow[]>`
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.negative_sampling_rate AS "negativeSamplingRate", m.prior_hit_rate AS "priorHitRate",
           m.alert_threshold AS "alertThreshold", m.active, m.created_at AS "createdAt",
           c.fitted_at AS "calibratedAt", c.label_count AS "calibrationLabelCount"
      FROM model_versions m
      LEFT JOIN LATERAL (
        SELECT fitted_at, label_count FROM calibration_maps
         WHERE model_version_id = m.id ORDER BY fitted_at DESC LIMIT 1
      ) c ON true
     WHERE ${options.activeOnly ?? false} = false OR m.active
     ORDER BY m.model_name, m.created_at DESC, m.version`;
  return rows.map((row) => ({ ...row, scoreKind: row.scoreKind as ModelVersionView["scoreKind"] }));
}
