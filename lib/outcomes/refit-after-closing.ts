// After an outcome closes an alert, the automatic calibration refit of its model version
// (lib/calibration/maybe-refit-after-outcomes.ts). It must run after the outcome's transaction has
// committed and outside it; a failure there does not undo the outcome, which is already saved.
import "server-only";
import type { Db, DbOrTx } from "@/lib/db/client";
import { isRootClient } from "@/lib/db/in-transaction";
import type { AuditContext } from "@/lib/audit/schemas";
import { maybeRefitAfterOutcomes } from "@/lib/calibration/maybe-refit-after-outcomes";

/** Runs a task after the response: pages pass Next's `after`; by default the task is awaited. */
export type AfterCommit = (task: () => Promise<void>) => void;

export interface RefitAfterClosingOptions {
  modelVersionId: string;
  now: Date;
  context?: AuditContext;
  afterCommit?: AfterCommit;
}

export async function refitAfterClosing(db: DbOrTx, options: RefitAfterClosingOptions): Promise<void> {
  // A transaction handle means the caller's transaction is still open: the refit is theirs to run after it.
  if (!isRootClient(db)) return;
  const client: Db = db;
  const task = async () => {
    try {
      await maybeRefitAfterOutcomes(client, { modelVersionId: options.modelVersionId, now: options.now, context: options.context });
    } catch (error) {
      console.error(`[${options.context?.requestId ?? "no request id"}] automatic calibration refit of model version ${options.modelVersionId} failed:`, error);
    }
  };
  if (options.afterCommit) options.afterCommit(task);
  else await task();
}
