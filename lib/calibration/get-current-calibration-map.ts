// The calibration map a model version's probabilities come from now: its latest fit, or null
// while it has none (DESIGN.md §4: until then the fallback applies and alerts show as uncalibrated).
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { assertIsotonicCalibrationMap, type IsotonicCalibrationMap } from "@/lib/risk";

export interface StoredCalibrationMap {
  id: string;
  modelVersionId: string;
  fittedAt: Date;
  /** Labelled outcomes the map was fitted on: confirmed_fraud plus legitimate. */
  labelCount: number;
  positiveCount: number;
  /** Mean squared error of the map's own predictions on the outcomes it was fitted on. */
  brierScore: number;
  map: IsotonicCalibrationMap;
}

interface Row {
  id: string;
  modelVersionId: string;
  fittedAt: Date;
  labelCount: number;
  positiveCount: number;
  brierScore: number;
  scorePoints: number[];
  probabilityPoints: number[];
}

export async function getCurrentCalibrationMap(db: DbOrTx, { modelVersionId }: { modelVersionId: string }): Promise<StoredCalibrationMap | null> {
  // calibration_maps_version_idx (model_version_id, fitted_at DESC): one index probe.
  const [row] = await db.$queryRaw<Row[]>`
    SELECT id, model_version_id AS "modelVersionId", fitted_at AS "fittedAt", label_count AS "labelCount",
           positive_count AS "positiveCount", brier_score AS "brierScore", score_points AS "scorePoints",
           probability_points AS "probabilityPoints"
      FROM calibration_maps
     WHERE model_version_id = ${modelVersionId}::uuid
     ORDER BY fitted_at DESC, id
     LIMIT 1`;
  return row ? toStoredCalibrationMap(row) : null;
}

export function toStoredCalibrationMap({ scorePoints, probabilityPoints, ...rest }: Row): StoredCalibrationMap {
  return { ...rest, map: assertIsotonicCalibrationMap({ scores: scorePoints, probabilities: probabilityPoints }) };
}
