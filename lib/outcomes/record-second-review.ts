// The second person's review under the four-eyes rule (DESIGN.md §3): on an alert in
// `second_review`, someone with alert.second_review who did not record the first outcome gives
// their own outcome. The same outcome as the first confirms it, another one overturns it. Both
// outcomes are kept (rounds 1 and 2, for the agreement metric); the alert's final outcome is the
// second one. The outcome row, the closed alert, outcome.recorded (round 2) and
// second_review.confirmed or .overturned commit in one transaction. Safe to repeat, like the first.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { auditActorOf, type Actor, type UserActor } from "@/lib/auth/actor";
import { can } from "@/lib/auth/permissions";
import { AppError } from "@/lib/errors";
import { recordAuditEvent } from "@/lib/audit/record-audit-event";
import type { AuditContext } from "@/lib/audit/schemas";
import { getSettings } from "@/lib/settings/get-settings";
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
  type StoredOutcome,
} from "@/lib/outcomes/outcome-rows";
import type { AfterCommit } from "@/lib/outcomes/refit-after-closing";
import { parseOutcomeSubmission, recordThenRefit } from "@/lib/outcomes/outcome-submission";

export interface RecordSecondReviewOptions {
  actor: Actor;
  alertId: string;
  /** The second person's own outcome: the first one again confirms it, any other overturns it. */
  outcome: OutcomeValue;
  reason: string;
  note?: string | null;
  /**
   * When the second person opened the alert (the page sends it): the start of their handling time.
   * Nobody claims an alert in second review, so this is the nearest thing to a claim. It is kept
   * between the first review's close and now; without it the handling time is 0 s, not invented.
   */
  startedAt?: Date | null;
  now: Date;
  context?: AuditContext;
  afterCommit?: AfterCommit;
}

export interface RecordedSecondReview extends RecordedOutcome {
  decision: "confirmed" | "overturned";
  firstOutcome: OutcomeValue;
}

function assertMaySecondReview(actor: Actor): asserts actor is UserActor {
  if (actor.type !== "user") throw new AppError("forbidden", "Only a signed-in person can give a second review.");
  if (!can(actor.role, "alert.second_review")) throw new AppError("forbidden", `Your role (${actor.role}) may not give second reviews.`);
}

export async function recordSecondReview(db: DbOrTx, options: RecordSecondReviewOptions): Promise<RecordedSecondReview> {
  const { actor, now } = options;
  assertMaySecondReview(actor);
  const submission = parseOutcomeSubmission(options, "second-review form");

  const run = async (tx: Prisma.TransactionClient): Promise<{ recorded: RecordedSecondReview; modelVersionId: string }> => {
    const alert = await lockAlertForOutcome(tx, submission.alertId);
    const stored = await readOutcomes(tx, alert.id);
    const first = stored.find((outcome) => outcome.round === 1);
    const second = stored.find((outcome) => outcome.round === 2);
    if (first && first.reviewerId === actor.id) {
      throw new AppError(
        "forbidden",
        `You recorded the first outcome on this alert (${outcomeWords(first.outcome)} at ${utcMinute(first.closedAt)}); under the four-eyes rule the second review must be someone else's.`,
      );
    }
    const decisionOf = (outcome: OutcomeValue) => (first && outcome === first.outcome ? "confirmed" : "overturned");
    if (first && second) {
      if (sameSubmission(second, { reviewerId: actor.id, ...submission })) {
        const repeated = toRecordedOutcome(alert, second, { state: alert.state, finalOutcome: alert.finalOutcome }, true);
        return { recorded: { ...repeated, decision: decisionOf(second.outcome), firstOutcome: first.outcome }, modelVersionId: alert.modelVersionId };
      }
      const who = second.reviewerId === actor.id ? "You" : second.reviewerName;
      throw new AppError(
        "conflict",
        `${who} already ${decisionOf(second.outcome)} the first outcome at ${utcMinute(second.closedAt)} (final outcome ${outcomeWords(second.outcome)}), so this second review was not saved.`,
      );
    }
    if (alert.state !== "second_review" || !first) {
      const what =
        alert.state === "closed"
          ? "it is already closed"
          : alert.state === "waiting"
            ? "it is waiting in the queue for a first review"
            : `${alert.holderName ?? "an analyst"} is reviewing it for the first time`;
      throw new AppError("conflict", `This alert is not waiting for a second review: ${what}.`);
    }
    // A supervisor may have handed the second review to one person (alert.reassigned).
    if (alert.assignedToId !== null && alert.assignedToId !== actor.id) {
      throw new AppError("conflict", `This second review is assigned to ${alert.holderName ?? "someone else"}, so yours was not saved.`);
    }

    const { queue } = await getSettings(tx);
    assertReasonAllowed(queue.outcomeReasons, submission.outcome, submission.reason, submission.note);
    const closedAt = now.getTime() < first.closedAt.getTime() ? first.closedAt : now;
    const started = options.startedAt ?? closedAt;
    const claimedAt = new Date(Math.min(closedAt.getTime(), Math.max(first.closedAt.getTime(), started.getTime())));
    const handlingSeconds = handlingSecondsBetween(claimedAt, closedAt);
    const decision = decisionOf(submission.outcome);

    const outcomeId = await insertOutcome(tx, {
      alertId: alert.id,
      round: 2,
      outcome: submission.outcome,
      reason: submission.reason,
      note: submission.note,
      reviewerId: actor.id,
      claimedAt,
      closedAt,
      handlingSeconds,
    });
    await tx.$executeRaw`
      UPDATE alerts SET state = 'closed', closed_at = ${closedAt}, final_outcome = ${submission.outcome}, lease_expires_at = NULL
       WHERE id = ${alert.id}::uuid`;
    const auditActor = auditActorOf(actor);
    const alertRef = { alertId: alert.id, externalId: alert.externalId };
    // Every outcome row has its outcome.recorded, as imported ones do; the second event says how
    // the two reviews relate.
    await recordAuditEvent(tx, {
      actor: auditActor,
      event: {
        action: "outcome.recorded",
        payload: { ...alertRef, outcome: submission.outcome, reason: submission.reason, round: 2, handlingSeconds, origin: "screen", sentToSecondReview: false },
      },
      subject: { type: "alert", id: alert.id },
      context: options.context,
    });
    await recordAuditEvent(tx, {
      actor: auditActor,
      event: {
        action: decision === "confirmed" ? "second_review.confirmed" : "second_review.overturned",
        payload: { ...alertRef, firstOutcome: first.outcome, secondOutcome: submission.outcome },
      },
      subject: { type: "alert", id: alert.id },
      context: options.context,
    });
    const written: StoredOutcome = { id: outcomeId, round: 2, ...submission, reviewerId: actor.id, reviewerName: actor.displayName, claimedAt, closedAt, handlingSeconds };
    const recorded = toRecordedOutcome(alert, written, { state: "closed", finalOutcome: submission.outcome }, false);
    return { recorded: { ...recorded, decision, firstOutcome: first.outcome }, modelVersionId: alert.modelVersionId };
  };

  return recordThenRefit(db, run, options);
}
