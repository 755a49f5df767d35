// A calibration refit of one model version, on demand (Model health, Settings, the API) or after
// enough new outcomes: fit and store a new map, re-derive the version's waiting alerts from it, and
// record calibration.refit — all in one transaction, so the queue never shows a map's alerts
// without the map, nor the other way round.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { recomputeWaitingAlerts } from "@/lib/queue/recompute-waiting-alerts";
import { fitCalibrationMap } from "@/lib/calibration/fit-calibration-map";
import { lockModelVersionCalibration } from "@/lib/calibration/calibration-lock";
import type { StoredCalibrationMap } from "@/lib/calibration/get-current-calibration-map";

export type RefitTrigger = "on_demand" | "automatic";

export interface RefitCalibrationOptions {
  actor: Actor;
  modelVersionId: string;
  trigger: RefitTrigger;
  now: Date;
  context?: AuditContext;
}

export interface RefitCalibrationResult {
  calibrationMap: StoredCalibrationMap;
  /** Waiting alerts of the version whose probability, expected loss, due time and priority were re-derived. */
  recomputedAlerts: number;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** Long enough for a recompute over a million waiting alerts. */
export const REFIT_TRANSACTION = { timeout: 300_000, maxWait: 10_000 } as const;

function assertMayRefit(actor: Actor): void {
  if (actor.type === "system") return;
  if (actor.type === "user" && can(actor.role, "calibration.refit")) return;
  throw new AppError("forbidden", "Only a supervisor or an admin may refit a calibration.");
}

export async function refitCalibration(db: DbOrTx, options: RefitCalibrationOptions): Promise<RefitCalibrationResult> {
  const { actor, modelVersionId, trigger, now } = options;
  assertMayRefit(actor);
  if (!UUID.test(modelVersionId)) throw new AppError("not_found", "There is no such model version.");

  const run = async (tx: Prisma.TransactionClient): Promise<RefitCalibrationResult> => {
    await lockModelVersionCalibration(tx, modelVersionId);
    const version = await tx.modelVersion.findUnique({ where: { id: modelVersionId }, select: { id: true } });
    if (!version) throw new AppError("not_found", "There is no such model version.");
    const settings = await getSettings(tx);
    const calibrationMap = await fitCalibrationMap(tx, { modelVersionId, now, minimums: settings.calibration });
    // Before the audit append: this UPDATE may wait for rows that claims hold, and they wait for the audit lock.
    const recomputedAlerts = await recomputeWaitingAlerts(tx, { now, settings, modelVersionId });
    await recordAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: {
        action: "calibration.refit",
        payload: {
          modelVersionId,
          calibrationMapId: calibrationMap.id,
          labelCount: calibrationMap.labelCount,
          brierScore: calibrationMap.brierScore,
          recomputedAlerts,
          trigger,
        },
      },
      subject: { type: "model_version", id: modelVersionId },
      context: options.context,
    });
    return { calibrationMap, recomputedAlerts };
  };
  return inTransaction(db, run, REFIT_TRANSACTION);
}
