// Saving one settings group from the Settings screen: who may change which group, and what a change
// sets in motion. Queue and cost settings feed every waiting alert's expected loss, due time and
// priority, so those alerts are re-derived in the same transaction: the next claim already follows
// the new settings, and no alert keeps numbers computed under the old ones.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { can, type Permission } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { updateSettings } from "@/lib/settings/update-settings";
import { settingsSchemas, type Settings } from "@/lib/settings/schemas";
import { recomputeWaitingAlerts } from "@/lib/queue/recompute-waiting-alerts";
import { REFIT_TRANSACTION } from "@/lib/calibration/refit-calibration";

export type EditableSettingsKey = "queue" | "costs" | "calibration";

/** Queue: supervisors and admins. Costs: admins (they are the institution's money figures). Calibration
 * minimums: whoever may refit a calibration, since they decide when a map may be trusted. */
export const settingsEditPermission: Record<EditableSettingsKey, Permission> = {
  queue: "settings.queue.edit",
  costs: "settings.costs.edit",
  calibration: "calibration.refit",
};

export interface ChangeSettingsOptions<K extends EditableSettingsKey> {
  actor: Actor;
  key: K;
  value: unknown;
  now: Date;
  context?: AuditContext;
}

export interface ChangeSettingsResult<K extends EditableSettingsKey> {
  settings: Settings[K];
  /** Waiting alerts re-derived under the new settings (0 for calibration minimums). */
  recomputedAlerts: number;
}

export async function changeSettings<K extends EditableSettingsKey>(db: DbOrTx, options: ChangeSettingsOptions<K>): Promise<ChangeSettingsResult<K>> {
  const { actor, key, now } = options;
  if (actor.type !== "user" || !can(actor.role, settingsEditPermission[key])) {
    throw new AppError("forbidden", `Your role may not change the ${key} settings.`);
  }
  const parsed = settingsSchemas[key].safeParse(options.value);
  if (!parsed.success) {
    throw new AppError(
      "invalid_input",
      `The ${key} settings are not valid`,
      parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
    );
  }
  const run = async (tx: Prisma.TransactionClient): Promise<ChangeSettingsResult<K>> => {
    let recomputedAlerts = 0;
    if (key === "queue" || key === "costs") {
      const next = { ...(await getSettings(tx)), [key]: parsed.data };
      // Before updateSettings' audit append: the recompute may wait for rows that claims hold.
      recomputedAlerts = await recomputeWaitingAlerts(tx, { now, settings: next });
    }
    const saved = await updateSettings(tx, { actor: auditActorOf(actor), key, value: parsed.data, context: options.context });
    return { settings: saved, recomputedAlerts };
  };
  return inTransaction(db, run, REFIT_TRANSACTION);
}
