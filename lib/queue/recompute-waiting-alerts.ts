// Re-derives the risk fields of waiting alerts (probability, calibrated, probability source, map,
// exposure, expected loss, due time, priority, overdue mark) after something they depend on changed:
// a calibration refit of their model version, or the queue or cost settings. The numbers come from
// deriveRiskFields, the same function ingest uses, so a recomputed alert looks exactly like one that
// arrived after the change. One SELECT of the inputs, one set-based UPDATE … FROM unnest(arrays).
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import { deriveRiskFields, type DeriveRiskFieldsInput } from "@/lib/alerts/derive-risk-fields";
import { assertIsotonicCalibrationMap, type ScoreKind } from "@/lib/risk";
import type { Settings } from "@/lib/settings/schemas";

export interface RecomputeWaitingAlertsOptions {
  now: Date;
  settings: Pick<Settings, "costs" | "queue">;
  /** Only this model version's alerts (after its refit); all waiting alerts when absent. */
  modelVersionId?: string;
}

// One-key advisory lock shared by every recompute: two recomputes updating overlapping rows in
// different orders could otherwise deadlock, and a recompute must not interleave with another one
// that started from other settings.
export const RECOMPUTE_LOCK_KEY = 740_213_772;

interface VersionRow {
  id: string;
  scoreKind: ScoreKind;
  negativeSamplingRate: number;
  priorHitRate: number | null;
  mapId: string | null;
  scorePoints: number[] | null;
  probabilityPoints: number[] | null;
}

interface AlertInputRow {
  id: string;
  modelVersionId: string;
  score: number;
  amountMinor: bigint;
  channel: string;
  receivedAt: Date;
}

/**
 * Returns how many waiting alerts were updated. Run it inside the transaction that made the change
 * and BEFORE that transaction's audit append: its UPDATE may wait for rows that a claim has locked,
 * and the claim in turn waits for the audit lock (see claim-next-alert.ts).
 */
export async function recomputeWaitingAlerts(tx: Prisma.TransactionClient, options: RecomputeWaitingAlertsOptions): Promise<number> {
  const { now, settings, modelVersionId } = options;
  await tx.$executeRaw`SELECT pg_advisory_xact_lock(${RECOMPUTE_LOCK_KEY}::bigint)`;

  // Each version with its current map: the latest fit, as ingest picks it.
  const versions = await tx.$queryRaw<VersionRow[]>`
    SELECT m.id, m.score_kind AS "scoreKind", m.negative_sampling_rate AS "negativeSamplingRate",
           m.prior_hit_rate AS "priorHitRate", c.id AS "mapId", c.score_points AS "scorePoints",
           c.probability_points AS "probabilityPoints"
      FROM model_versions m
      LEFT JOIN LATERAL (
        SELECT id, score_points, probability_points FROM calibration_maps
         WHERE model_version_id = m.id ORDER BY fitted_at DESC, id LIMIT 1
      ) c ON true
     WHERE ${modelVersionId ?? null}::uuid IS NULL OR m.id = ${modelVersionId ?? null}::uuid`;
  const inputs = new Map<string, Omit<DeriveRiskFieldsInput, "alert" | "settings">>();
  for (const version of versions) {
    inputs.set(version.id, {
      modelVersion: { scoreKind: version.scoreKind, negativeSamplingRate: version.negativeSamplingRate, priorHitRate: version.priorHitRate },
      calibrationMap:
        version.mapId === null
          ? null
          : { id: version.mapId, ...assertIsotonicCalibrationMap({ scores: version.scorePoints ?? [], probabilities: version.probabilityPoints ?? [] }) },
    });
  }

  const alerts = await tx.$queryRaw<AlertInputRow[]>`
    SELECT id, model_version_id AS "modelVersionId", score, amount_minor AS "amountMinor", channel, received_at AS "receivedAt"
      FROM alerts
     WHERE state = 'waiting' AND (${modelVersionId ?? null}::uuid IS NULL OR model_version_id = ${modelVersionId ?? null}::uuid)`;
  if (alerts.length === 0) return 0;

  const n = alerts.length;
  const ids: string[] = new Array(n);
  const probability: number[] = new Array(n);
  const calibrated: boolean[] = new Array(n);
  const source: string[] = new Array(n);
  const mapId: (string | null)[] = new Array(n);
  const exposure: string[] = new Array(n);
  const expectedLoss: string[] = new Array(n);
  const due: string[] = new Array(n);
  const priority: number[] = new Array(n);
  alerts.forEach((alert, i) => {
    const version = inputs.get(alert.modelVersionId);
    if (!version) throw new Error(`model version ${alert.modelVersionId} of alert ${alert.id} vanished during a recompute`);
    const fields = deriveRiskFields({
      ...version,
      alert: { amountMinor: Number(alert.amountMinor), channel: alert.channel, score: alert.score, receivedAt: alert.receivedAt },
      settings,
    });
    ids[i] = alert.id;
    probability[i] = fields.probability;
    calibrated[i] = fields.calibrated;
    source[i] = fields.probabilitySource;
    mapId[i] = fields.calibrationMapId;
    exposure[i] = String(fields.exposureMinor);
    expectedLoss[i] = String(fields.expectedLossMinor);
    due[i] = fields.dueAt.toISOString();
    priority[i] = fields.priority;
  });

  // `state = 'waiting'` again: an alert claimed since the SELECT keeps the numbers it was claimed with.
  return tx.$executeRaw`
    UPDATE alerts a
       SET probability = v.probability, calibrated = v.calibrated, probability_source = v.source,
           calibration_map_id = v.map_id, exposure_minor = v.exposure, expected_loss_minor = v.expected_loss,
           due_at = v.due_at, priority = v.priority, past_due = v.due_at <= ${now}
      FROM unnest(${ids}::uuid[], ${probability}::float8[], ${calibrated}::boolean[], ${source}::text[],
                  ${mapId}::uuid[], ${exposure}::bigint[], ${expectedLoss}::bigint[], ${due}::timestamptz[],
                  ${priority}::float8[])
           AS v(id, probability, calibrated, source, map_id, exposure, expected_loss, due_at, priority)
     WHERE a.id = v.id AND a.state = 'waiting'`;
}
