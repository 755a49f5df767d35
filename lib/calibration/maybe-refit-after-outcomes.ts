// The automatic refit: after an outcome is recorded, refit the model version's calibration when
// Settings → calibration → refitAfterNewOutcomes labelled outcomes have arrived since its last map
// (or, before its first map, as soon as the minimums are met).
//
// Call it AFTER the outcome's transaction has committed, with the client, not a transaction handle:
// the refit's recompute waits for rows that claims hold, and a claim waits for the audit lock that
// an outcome transaction already holds — inside that transaction, the two would deadlock.
import "server-only";
import type { Db } from "@/lib/db/client";
import { systemActor } from "@/lib/auth/actor";
import { isAppError } from "@/lib/errors";
import type { AuditContext } from "@/lib/audit/schemas";
import { hasEnoughLabelsToCalibrate } from "@/lib/risk";
import { getSettings } from "@/lib/settings/get-settings";
import { lockModelVersionCalibration } from "@/lib/calibration/calibration-lock";
import { refitCalibration, REFIT_TRANSACTION, type RefitCalibrationResult } from "@/lib/calibration/refit-calibration";

export interface MaybeRefitAfterOutcomesOptions {
  modelVersionId: string;
  now: Date;
  context?: AuditContext;
}

export type MaybeRefitResult =
  | { refitted: true; newOutcomes: number; result: RefitCalibrationResult }
  | { refitted: false; newOutcomes: number; reason: string };

const AUTOMATIC = systemActor("calibration");

export async function maybeRefitAfterOutcomes(db: Db, options: MaybeRefitAfterOutcomesOptions): Promise<MaybeRefitResult> {
  const { modelVersionId, now } = options;
  return db.$transaction(async (tx): Promise<MaybeRefitResult> => {
    // Under the version's lock: two outcomes recorded at once cannot both decide to refit.
    await lockModelVersionCalibration(tx, modelVersionId);
    const { calibration } = await getSettings(tx);
    const [last] = await tx.$queryRaw<{ fittedAt: Date }[]>`
      SELECT fitted_at AS "fittedAt" FROM calibration_maps
       WHERE model_version_id = ${modelVersionId}::uuid ORDER BY fitted_at DESC, id LIMIT 1`;
    // Counted on alerts_labelled_by_version_idx: outcomes closed after the last fit (all of them before the first).
    const [counts] = await tx.$queryRaw<{ positives: number; negatives: number }[]>`
      SELECT count(*) FILTER (WHERE final_outcome = 'confirmed_fraud')::int AS positives,
             count(*) FILTER (WHERE final_outcome = 'legitimate')::int AS negatives
        FROM alerts
       WHERE model_version_id = ${modelVersionId}::uuid AND state = 'closed'
         AND final_outcome IN ('confirmed_fraud', 'legitimate')
         AND (${last?.fittedAt ?? null}::timestamptz IS NULL OR closed_at > ${last?.fittedAt ?? null}::timestamptz)`;
    const newOutcomes = counts.positives + counts.negatives;

    if (!last) {
      const ready = hasEnoughLabelsToCalibrate({ labelCount: newOutcomes, positives: counts.positives, negatives: counts.negatives, ...calibration });
      if (!ready) return { refitted: false, newOutcomes, reason: "not enough labelled outcomes for a first map yet" };
    } else if (newOutcomes < calibration.refitAfterNewOutcomes) {
      return { refitted: false, newOutcomes, reason: `${newOutcomes} of ${calibration.refitAfterNewOutcomes} new outcomes since the last map` };
    }
    try {
      const result = await refitCalibration(tx, { actor: AUTOMATIC, modelVersionId, trigger: "automatic", now, context: options.context });
      return { refitted: true, newOutcomes, result };
    } catch (error) {
      // The minimums may have been raised since the last map: then there is nothing to do yet.
      if (isAppError(error) && error.code === "conflict") return { refitted: false, newOutcomes, reason: error.message };
      throw error;
    }
  }, REFIT_TRANSACTION);
}
