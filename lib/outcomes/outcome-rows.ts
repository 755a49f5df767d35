// The reads and writes shared by record-outcome.ts and record-second-review.ts: the alert locked
// for an outcome (with its holder's name), its stored outcomes (with reviewers' names), and the
// words of the conflict messages, which say who did what and when.
import type { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";
import { outcomeLabels, type AlertState, type OutcomeValue, type RecordedOutcome } from "@/lib/outcomes/schemas";

export interface LockedAlert {
  id: string;
  externalId: string;
  state: AlertState;
  assignedToId: string | null;
  holderName: string | null;
  claimedAt: Date | null;
  leaseExpiresAt: Date | null;
  exposureMinor: bigint | null;
  modelVersionId: string;
  finalOutcome: OutcomeValue | null;
  closedAt: Date | null;
}

export interface StoredOutcome {
  id: string;
  round: 1 | 2;
  outcome: OutcomeValue;
  reason: string;
  note: string | null;
  reviewerId: string;
  reviewerName: string;
  claimedAt: Date;
  closedAt: Date;
  handlingSeconds: number;
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * The alert, locked FOR UPDATE until the transaction ends. Waiting for the lock is safe: nothing
 * has been appended to the audit chain yet in this transaction (lock order of claim-next-alert.ts:
 * rows first, the audit append last). A second submit of the same form waits here for the first
 * one to commit, then sees its outcome.
 */
export async function lockAlertForOutcome(tx: Prisma.TransactionClient, alertId: string): Promise<LockedAlert> {
  if (!UUID.test(alertId)) throw new AppError("not_found", "There is no such alert.");
  const [alert] = await tx.$queryRaw<LockedAlert[]>`
    SELECT a.id, a.external_id AS "externalId", a.state, a.assigned_to_id AS "assignedToId", u.display_name AS "holderName",
           a.claimed_at AS "claimedAt", a.lease_expires_at AS "leaseExpiresAt", a.exposure_minor AS "exposureMinor",
           a.model_version_id AS "modelVersionId", a.final_outcome AS "finalOutcome", a.closed_at AS "closedAt"
      FROM alerts a LEFT JOIN users u ON u.id = a.assigned_to_id
     WHERE a.id = ${alertId}::uuid
       FOR UPDATE OF a`;
  if (!alert) throw new AppError("not_found", "There is no such alert.");
  return alert;
}

export async function readOutcomes(tx: Prisma.TransactionClient, alertId: string): Promise<StoredOutcome[]> {
  return tx.$queryRaw<StoredOutcome[]>`
    SELECT o.id, o.review_round::int AS round, o.outcome, o.reason, o.note, o.reviewer_id AS "reviewerId",
           u.display_name AS "reviewerName", o.claimed_at AS "claimedAt", o.closed_at AS "closedAt",
           o.handling_seconds AS "handlingSeconds"
      FROM outcomes o JOIN users u ON u.id = o.reviewer_id
     WHERE o.alert_id = ${alertId}::uuid
     ORDER BY o.review_round`;
}

export interface NewOutcome {
  alertId: string;
  round: 1 | 2;
  outcome: OutcomeValue;
  reason: string;
  note: string | null;
  reviewerId: string;
  claimedAt: Date;
  closedAt: Date;
  handlingSeconds: number;
}

/** Inserts one outcome. UNIQUE (alert_id, review_round) is the last guard against a second row. */
export async function insertOutcome(tx: Prisma.TransactionClient, outcome: NewOutcome): Promise<string> {
  const [row] = await tx.$queryRaw<{ id: string }[]>`
    INSERT INTO outcomes (alert_id, review_round, outcome, reason, note, reviewer_id, claimed_at, closed_at, handling_seconds, origin)
    VALUES (${outcome.alertId}::uuid, ${outcome.round}::smallint, ${outcome.outcome}, ${outcome.reason}, ${outcome.note},
            ${outcome.reviewerId}::uuid, ${outcome.claimedAt}, ${outcome.closedAt}, ${outcome.handlingSeconds}, 'screen')
    ON CONFLICT (alert_id, review_round) DO NOTHING
    RETURNING id`;
  if (!row) throw new AppError("conflict", "An outcome for this review round was recorded at the same moment; reload the alert to see it.");
  return row.id;
}

/** Handling time in whole seconds from start to close, never negative. */
export function handlingSecondsBetween(start: Date, end: Date): number {
  return Math.max(0, Math.round((end.getTime() - start.getTime()) / 1000));
}

/** "2026-12-02 14:03 UTC": the conflict messages name a time everyone reads the same way. */
export function utcMinute(date: Date): string {
  return `${date.toISOString().slice(0, 16).replace("T", " ")} UTC`;
}

export function outcomeWords(outcome: OutcomeValue): string {
  return `“${outcomeLabels[outcome]}”`;
}

/** True when a stored outcome is the one being submitted again (a double submit or a retry). */
export function sameSubmission(stored: StoredOutcome, submitted: { reviewerId: string; outcome: OutcomeValue; reason: string; note: string | null }): boolean {
  return (
    stored.reviewerId === submitted.reviewerId &&
    stored.outcome === submitted.outcome &&
    stored.reason === submitted.reason &&
    (stored.note ?? null) === (submitted.note ?? null)
  );
}

export function toRecordedOutcome(alert: Pick<LockedAlert, "id" | "externalId">, stored: StoredOutcome, after: { state: AlertState; finalOutcome: OutcomeValue | null }, repeated: boolean): RecordedOutcome {
  return {
    outcomeId: stored.id,
    alertId: alert.id,
    externalId: alert.externalId,
    round: stored.round,
    outcome: stored.outcome,
    reason: stored.reason,
    note: stored.note,
    reviewerId: stored.reviewerId,
    claimedAt: stored.claimedAt,
    closedAt: stored.closedAt,
    handlingSeconds: stored.handlingSeconds,
    alertState: after.state,
    finalOutcome: after.finalOutcome,
    repeated,
  };
}

/** The reason must be on the current list for the outcome (Settings → queue → outcome reasons). */
export function assertReasonAllowed(reasons: Record<OutcomeValue, string[]>, outcome: OutcomeValue, reason: string, note: string | null): void {
  if (!reasons[outcome].includes(reason)) {
    throw new AppError("invalid_input", `“${reason}” is not on the list of reasons for ${outcomeWords(outcome)}; the list may have changed since the page was opened. Choose one of the reasons shown.`, [
      { path: "reason", message: `choose one of: ${reasons[outcome].join("; ")}` },
    ]);
  }
  // A reason that points at the note ("Other (see note)") is empty without one.
  if (/see note/i.test(reason) && !note) {
    throw new AppError("invalid_input", "This reason needs a note that says what happened.", [{ path: "note", message: "write a short note for this reason" }]);
  }
}
