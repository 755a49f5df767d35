// What the first and the second review share around their own rules: reading the submitted form,
// and committing then refitting. Each keeps its own checks (who may, which state, four eyes).
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction, isRootClient } from "@/lib/db/in-transaction";
import { AppError } from "@/lib/errors";
import type { AuditContext } from "@/lib/audit/schemas";
import { CLAIM_TRANSACTION } from "@/lib/queue/queue-actor";
import { outcomeSubmissionSchema, type OutcomeSubmission, type OutcomeValue, type RecordedOutcome } from "@/lib/outcomes/schemas";
import { refitAfterClosing, type AfterCommit } from "@/lib/outcomes/refit-after-closing";

/**
 * The submitted fields, checked. An alert id that is not a UUID cannot name an alert, so it reads as
 * "no such alert"; anything else wrong is listed field by field under `formName`.
 */
export function parseOutcomeSubmission(
  input: { alertId: string; outcome: OutcomeValue; reason: string; note?: string | null },
  formName: string,
): OutcomeSubmission {
  const parsed = outcomeSubmissionSchema.safeParse({ alertId: input.alertId, outcome: input.outcome, reason: input.reason, note: input.note ?? null });
  if (parsed.success) return parsed.data;
  if (parsed.error.issues.some((issue) => issue.path[0] === "alertId")) throw new AppError("not_found", "There is no such alert.");
  throw new AppError(
    "invalid_input",
    `The ${formName} is not complete.`,
    parsed.error.issues.map((issue) => ({ path: issue.path.join("."), message: issue.message })),
  );
}

/**
 * Runs `record` in a transaction of its own (or in the caller's, which then runs the refit itself),
 * then the model version's calibration refit when the alert closed with a new outcome (not when it
 * only found the same submission saved, nor when it sent the alert on to a second review: no label yet).
 */
export async function recordThenRefit<T extends RecordedOutcome>(
  db: DbOrTx,
  record: (tx: Prisma.TransactionClient) => Promise<{ recorded: T; modelVersionId: string }>,
  options: { now: Date; context?: AuditContext; afterCommit?: AfterCommit },
): Promise<T> {
  if (!isRootClient(db)) return (await record(db)).recorded;
  const { recorded, modelVersionId } = await inTransaction(db, record, CLAIM_TRANSACTION);
  if (!recorded.repeated && recorded.alertState === "closed") {
    await refitAfterClosing(db, { modelVersionId, now: options.now, context: options.context, afterCommit: options.afterCommit });
  }
  return recorded;
}
