// Records an analyst's outcome on an alert they hold (DESIGN.md §3): the first review, round 1.
//
// - Only the holder may close it; anyone else gets a conflict that says who has it or what happened.
// - Safe to repeat: the same outcome submitted again (a double click, a retry after a lost answer, a
//   second tab) returns the stored one and writes nothing. UNIQUE (alert_id, review_round) makes a
//   second row impossible even if two submits race; the row lock makes the second one wait and see
//   the first.
// - Handling time runs from the claim to the close.
// - Four-eyes rule: `legitimate` at or above Settings → queue → fourEyesExposureMinor (or whenever
//   the analyst asks for it) moves the alert to `second_review` instead of closing it. An alert
//   whose exposure was never derived counts as above the amount: the rule errs towards a second look.
// - The outcome row, the alert's new state and outcome.recorded commit in one transaction.
// - After the alert closes, the automatic calibration refit runs (lib/calibration), outside that
//   transaction as it requires.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { auditActorOf, type Actor } from "@/lib/auth/actor";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
import { assertHeldBy } from "@/lib/queue/assert-held-by";
import { assertMayWorkAlerts } from "@/lib/queue/queue-actor";
import type { OutcomeValue, RecordedOutcome } from "@/lib/outcomes/schemas";
import {
  assertReasonAllowed,
  handlingSecondsBetween,
  insertOutcome,
  lockAlertForOutcome,
  outcomeWords,
  readOutcomes,
  sameSubmission,
  toRecordedOutcome,
  utcMinute,
  type LockedAlert,
  type StoredOutcome,
} from "@/lib/outcomes/outcome-rows";
import type { AfterCommit } from "@/lib/outcomes/refit-after-closing";
import { parseOutcomeSubmission, recordThenRefit } from "@/lib/outcomes/outcome-submission";

export interface RecordOutcomeOptions {
  actor: Actor;
  alertId: string;
  outcome: OutcomeValue;
  /** One of Settings → queue → outcomeReasons for the outcome. */
  reason: string;
  note?: string | null;
  /** The analyst asks for a second person whatever the exposure. */
  requestSecondReview?: boolean;
  now: Date;
  context?: AuditContext;
  /** How to run the calibration refit after the commit; by default it is awaited. Pages pass Next's after(). */
  afterCommit?: AfterCommit;
}

export async function recordOutcome(db: DbOrTx, options: RecordOutcomeOptions): Promise<RecordedOutcome> {
  const { actor, now } = options;
  assertMayWorkAlerts(actor);
  const submission = parseOutcomeSubmission(options, "outcome form");

  const run = async (tx: Prisma.TransactionClient): Promise<{ recorded: RecordedOutcome; modelVersionId: string }> => {
    const alert = await lockAlertForOutcome(tx, submission.alertId);
    const stored = await readOutcomes(tx, alert.id);
    const first = stored.find((outcome) => outcome.round === 1);
    if (first) {
      if (sameSubmission(first, { reviewerId: actor.id, ...submission })) {
        return { recorded: toRecordedOutcome(alert, first, { state: alert.state, finalOutcome: alert.finalOutcome }, true), modelVersionId: alert.modelVersionId };
      }
      throw alreadyReviewed(alert, first, actor.id);
    }
    assertStillHeld(alert, actor);

    const { queue } = await getSettings(tx);
    assertReasonAllowed(queue.outcomeReasons, submission.outcome, submission.reason, submission.note);
    const claimedAt = alert.claimedAt!; // in_review guarantees it (CHECK in the core migration)
    const closedAt = now.getTime() < claimedAt.getTime() ? claimedAt : now;
    const handlingSeconds = handlingSecondsBetween(claimedAt, closedAt);
    const aboveFourEyesAmount = alert.exposureMinor === null || alert.exposureMinor >= BigInt(queue.fourEyesExposureMinor);
    const toSecondReview = options.requestSecondReview === true || (submission.outcome === "legitimate" && aboveFourEyesAmount);

    const outcomeId = await insertOutcome(tx, {
      alertId: alert.id,
      round: 1,
      outcome: submission.outcome,
      reason: submission.reason,
      note: submission.note,
      reviewerId: actor.id,
      claimedAt,
      closedAt,
      handlingSeconds,
    });
    // Nobody holds an alert that waits for a second review: any eligible person may take it up.
    // A closed alert keeps assigned_to_id and claimed_at as a record of whose hands it was in.
    if (toSecondReview) {
      await tx.$executeRaw`
        UPDATE alerts SET state = 'second_review', assigned_to_id = NULL, claimed_at = NULL, lease_expires_at = NULL
         WHERE id = ${alert.id}::uuid`;
    } else {
      await tx.$executeRaw`
        UPDATE alerts SET state = 'closed', closed_at = ${closedAt}, final_outcome = ${submission.outcome}, lease_expires_at = NULL
         WHERE id = ${alert.id}::uuid`;
    }
    await recordAuditEvent(tx, {
      actor: auditActorOf(actor),
      event: {
        action: "outcome.recorded",
        payload: {
          alertId: alert.id,
          externalId: alert.externalId,
          outcome: submission.outcome,
          reason: submission.reason,
          round: 1,
          handlingSeconds,
          origin: "screen",
          sentToSecondReview: toSecondReview,
        },
      },
      subject: { type: "alert", id: alert.id },
      context: options.context,
    });
    const written: StoredOutcome = { id: outcomeId, round: 1, ...submission, reviewerId: actor.id, reviewerName: actor.displayName, claimedAt, closedAt, handlingSeconds };
    const after = toSecondReview ? ({ state: "second_review", finalOutcome: null } as const) : ({ state: "closed", finalOutcome: submission.outcome } as const);
    return { recorded: toRecordedOutcome(alert, written, after, false), modelVersionId: alert.modelVersionId };
  };

  // Inside a caller's transaction the caller runs the refit after its commit (see refit-after-closing.ts).
  return recordThenRefit(db, run, options);
}

function alreadyReviewed(alert: LockedAlert, first: StoredOutcome, actorId: string): AppError {
  const after =
    alert.state === "second_review"
      ? " It is waiting for a second review."
      : alert.state === "closed" && alert.finalOutcome && alert.finalOutcome !== first.outcome
        ? ` A second review changed it to ${outcomeWords(alert.finalOutcome)}.`
        : "";
  if (first.reviewerId === actorId) {
    return new AppError(
      "conflict",
      `You already recorded ${outcomeWords(first.outcome)} (${first.reason}) on this alert at ${utcMinute(first.closedAt)}; a recorded outcome is not changed by a second submit, so this one was not saved.${after}`,
    );
  }
  return new AppError(
    "conflict",
    `${first.reviewerName} already recorded ${outcomeWords(first.outcome)} on this alert at ${utcMinute(first.closedAt)}, so your outcome was not saved.${after}`,
  );
}

/** Says who has the alert or what became of it; assertHeldBy is the rule itself. */
function assertStillHeld(alert: LockedAlert, actor: Actor & { type: "user" }): void {
  if (alert.state === "in_review" && alert.assignedToId === actor.id) {
    assertHeldBy(alert, actor);
    return;
  }
  if (alert.state === "in_review") {
    throw new AppError(
      "conflict",
      `${alert.holderName ?? "Another analyst"} holds this alert (taken at ${utcMinute(alert.claimedAt!)}), so your outcome was not saved. It returns to the queue if they release it or their claim runs out.`,
    );
  }
  if (alert.state === "waiting") {
    throw new AppError(
      "conflict",
      "This alert went back to the queue (it was released, or its claim ran out) before your outcome arrived, so it was not saved. Take it again to record an outcome.",
    );
  }
  assertHeldBy(alert, actor);
}
