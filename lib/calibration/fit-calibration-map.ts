// Fits and stores a calibration map for one model version from its reviewed alerts (DESIGN.md §4):
// isotonic regression of the outcome (confirmed_fraud = 1, legitimate = 0) on the model's score,
// once the version has enough labels of each class. Inconclusive outcomes are not labels.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import { fitIsotonicCalibration, hasEnoughLabelsToCalibrate, predictIsotonic, type CalibrationPoint } from "@/lib/risk";
import { brierScore } from "@/lib/metrics";
import type { Settings } from "@/lib/settings/schemas";
import { toStoredCalibrationMap, type StoredCalibrationMap } from "@/lib/calibration/get-current-calibration-map";

export interface FitCalibrationMapOptions {
  modelVersionId: string;
  /** Stored as the map's fit time. */
  now: Date;
  minimums: Pick<Settings["calibration"], "minLabels" | "minPerClass">;
}

interface LabelledPairs {
  scores: number[];
  labels: number[];
  /** Inclusion probability π of a below-the-line sample, null for an ordinary alert. */
  inclusion: (number | null)[];
}

export async function fitCalibrationMap(db: DbOrTx, options: FitCalibrationMapOptions): Promise<StoredCalibrationMap> {
  const { modelVersionId, now, minimums } = options;
  // One query, three columns, aggregated into three parallel arrays (aggregates of one pass see the
  // rows in the same order); alerts_labelled_by_version_idx finds the rows.
  const [pairs] = await db.$queryRaw<LabelledPairs[]>`
    SELECT coalesce(array_agg(score), '{}') AS scores,
           coalesce(array_agg((final_outcome = 'confirmed_fraud')::int), '{}') AS labels,
           coalesce(array_agg(inclusion_probability), '{}') AS inclusion
      FROM alerts
     WHERE model_version_id = ${modelVersionId}::uuid AND state = 'closed'
       AND final_outcome IN ('confirmed_fraud', 'legitimate')`;
  const labelCount = pairs.scores.length;
  const positives = pairs.labels.reduce((sum, label) => sum + label, 0);
  const negatives = labelCount - positives;
  if (!hasEnoughLabelsToCalibrate({ labelCount, positives, negatives, ...minimums })) {
    throw new AppError(
      "conflict",
      `Not enough outcomes to calibrate this model version yet: ${labelCount} labelled (${positives} confirmed fraud, ${negatives} legitimate); ` +
        `it needs at least ${minimums.minLabels} with at least ${minimums.minPerClass} of each. Until then its alerts use the fallback probability.`,
    );
  }

  const points: CalibrationPoint[] = pairs.scores.map((score, i) => ({ score, label: pairs.labels[i] === 1 ? 1 : 0 }));
  // Horvitz–Thompson: a below-the-line sample drawn with probability π stands for 1/π alerts like
  // it, so the map is not biased towards the alerted score range by the sampling design.
  const weights = pairs.inclusion.map((pi) => (pi === null ? 1 : 1 / pi));
  const map = fitIsotonicCalibration(points, weights);
  // Fit quality on its own data, unweighted: the plain mean squared error over the reviewed pairs.
  const brier = brierScore(
    pairs.scores.map((score) => predictIsotonic(map, score)),
    pairs.labels,
  );

  const [row] = await db.$queryRaw<Parameters<typeof toStoredCalibrationMap>[0][]>`
    INSERT INTO calibration_maps (model_version_id, fitted_at, label_count, positive_count, brier_score, score_points, probability_points)
    VALUES (${modelVersionId}::uuid, ${now}, ${labelCount}, ${positives}, ${brier}, ${map.scores}::float8[], ${map.probabilities}::float8[])
    RETURNING id, model_version_id AS "modelVersionId", fitted_at AS "fittedAt", label_count AS "labelCount",
              positive_count AS "positiveCount", brier_score AS "brierScore", score_points AS "scorePoints",
              probability_points AS "probabilityPoints"`;
  return toStoredCalibrationMap(row);
}
