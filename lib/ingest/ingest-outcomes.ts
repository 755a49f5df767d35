// Back-fill of historical outcomes: a team that starts with Triage Desk brings months of decisions
// made before it. Each row closes an ingested alert with its first review (round 1) and, when the
// four-eyes rule applied, the second person's review (round 2), both marked origin 'imported' so
// they count in metrics and calibration like outcomes made on screen while staying recognisable.
//
// Idempotent per alert: the same outcome again is a duplicate; an alert already closed otherwise,
// or being worked on the desk right now, is a conflict. The batch reads its reviewers and alerts in
// two set-based queries (the alerts locked FOR UPDATE so that nobody claims one meanwhile), then
// writes all outcomes with one INSERT and closes all alerts with one UPDATE. Every outcome gets its
// outcome.recorded audit event in the same transaction, and a second review its
// second_review.confirmed or .overturned, as on screen. After the commit, each model version whose
// alerts were closed gets the same automatic calibration refit check as after an outcome on screen.
import "server-only";
import type { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { auditActorOf } from "@/lib/auth/actor";
import { isRootClient } from "@/lib/db/in-transaction";
import { refitAfterClosing } from "@/lib/outcomes/refit-after-closing";
import { recordAuditEvents, type RecordAuditEventOptions } from "@/lib/audit/record-audit-event";
import { outcomeRowSchema, type Outcome, type OutcomeRow } from "@/lib/ingest/schemas";
import { validateRows } from "@/lib/ingest/validate-rows";
import {
  closeIngestBatch,
  DEFAULT_PORTFOLIO,
  inBatchTransaction,
  openIngestBatch,
  ProblemList,
  type IngestAnswer,
  type IngestCommonOptions,
} from "@/lib/ingest/ingest-batch";

export type IngestOutcomesOptions = IngestCommonOptions;

export interface IngestOutcomesAnswer extends IngestAnswer {
  /** Alerts closed by this batch (equal to `accepted`). */
  closedAlerts: number;
  /** Outcomes written: one per accepted row, two where a second review was given. */
  outcomesRecorded: number;
  rolledBack: boolean;
}

interface StoredOutcome {
  round: number;
  outcome: string;
  reason: string;
  reviewerId: string;
  claimedAt: string;
  closedAt: string;
}

interface StoredAlert {
  id: string;
  externalId: string;
  modelVersionId: string;
  state: string;
  outcomes: StoredOutcome[] | null;
}

interface Review {
  round: 1 | 2;
  outcome: Outcome;
  reason: string;
  note: string | null;
  reviewerId: string;
  claimedAt: Date;
  closedAt: Date;
}

interface Closing {
  row: number;
  alert: StoredAlert;
  reviews: Review[];
}

const sameInstant = (a: string | Date, b: Date) => new Date(a).getTime() === b.getTime();

/** Handling time of a review: claim to close, in whole seconds. */
function handlingSeconds(review: Review): number {
  return Math.round((review.closedAt.getTime() - review.claimedAt.getTime()) / 1000);
}

/**
 * The reviews a row describes. The back-fill format carries one claim and close time; the second
 * review is taken to start and end when the first one closed (its handling time is unknown, so it
 * is recorded as 0 seconds rather than invented).
 */
function reviewsOf(value: OutcomeRow, reviewerIds: Map<string, string>): Review[] {
  const first: Review = {
    round: 1,
    outcome: value.outcome,
    reason: value.reason,
    note: value.note,
    reviewerId: reviewerIds.get(value.reviewerEmail.toLowerCase())!,
    claimedAt: value.claimedAt,
    closedAt: value.closedAt,
  };
  if (value.secondReviewerEmail === null || value.secondOutcome === null) return [first];
  return [
    first,
    {
      round: 2,
      outcome: value.secondOutcome,
      reason: value.reason,
      note: null,
      reviewerId: reviewerIds.get(value.secondReviewerEmail.toLowerCase())!,
      claimedAt: value.closedAt,
      closedAt: value.closedAt,
    },
  ];
}

/** True when the stored reviews are exactly the ones this row describes. */
function sameReviews(stored: StoredOutcome[], reviews: Review[]): boolean {
  if (stored.length !== reviews.length) return false;
  return reviews.every((review) => {
    const match = stored.find((outcome) => outcome.round === review.round);
    return (
      match !== undefined &&
      match.outcome === review.outcome &&
      match.reviewerId === review.reviewerId &&
      (review.round === 2 || (match.reason === review.reason && sameInstant(match.claimedAt, review.claimedAt) && sameInstant(match.closedAt, review.closedAt)))
    );
  });
}

export async function ingestOutcomes(db: DbOrTx, options: IngestOutcomesOptions): Promise<IngestOutcomesAnswer> {
  const { rows, now } = options;
  const offset = options.rowOffset ?? 0;
  const errors = new ProblemList(rows, offset);
  const conflicts = new ProblemList(rows, offset);
  const validation = validateRows(rows, outcomeRowSchema);
  for (const error of validation.errors) errors.add(error);

  const checked: { row: number; value: OutcomeRow }[] = [];
  for (const item of validation.valid) {
    if (item.value.closedAt.getTime() > now.getTime()) errors.add({ row: item.row, path: "closedAt", message: "must not be later than the time of the upload" });
    else checked.push(item);
  }

  const { answer, modelVersionIds } = await inBatchTransaction(db, async (tx) => {
    const batchId = await openIngestBatch(tx, { kind: "outcomes", channel: options.channel, actor: options.actor, fileName: options.fileName, now, rowCount: rows.length });

    const emails = new Set<string>();
    for (const { value } of checked) {
      emails.add(value.reviewerEmail.toLowerCase());
      if (value.secondReviewerEmail !== null) emails.add(value.secondReviewerEmail.toLowerCase());
    }
    const reviewerIds = await reviewersByEmail(tx, [...emails]);
    const alerts = await lockAlerts(tx, [...new Set(checked.map(({ value }) => value.externalId))]);

    let duplicate = 0;
    const closings: Closing[] = [];
    const firstByAlert = new Map<string, { row: number; reviews: Review[] }>();
    for (const { row, value } of checked) {
      const missing = [
        ...(reviewerIds.has(value.reviewerEmail.toLowerCase()) ? [] : [{ path: "reviewerEmail", email: value.reviewerEmail }]),
        ...(value.secondReviewerEmail !== null && !reviewerIds.has(value.secondReviewerEmail.toLowerCase()) ? [{ path: "secondReviewerEmail", email: value.secondReviewerEmail }] : []),
      ];
      for (const { path, email } of missing) errors.add({ row, path, message: `no user with the email ${email}: an admin creates the account first (it may stay deactivated)` });
      const alert = alerts.get(value.externalId);
      if (!alert) errors.add({ row, path: "externalId", message: "no alert with this externalId: ingest the alert before its outcome" });
      if (missing.length > 0 || !alert) continue;

      const reviews = reviewsOf(value, reviewerIds);
      const earlier = firstByAlert.get(alert.id);
      if (earlier) {
        if (sameReviews(earlier.reviews.map(asStored), reviews)) duplicate += 1;
        else conflicts.add({ row, path: "externalId", message: `conflict: row ${earlier.row + offset} of this request closes the same alert differently` });
        continue;
      }
      firstByAlert.set(alert.id, { row, reviews });

      if (alert.state === "closed") {
        if (sameReviews(alert.outcomes ?? [], reviews)) duplicate += 1;
        else conflicts.add({ row, path: "externalId", message: "conflict: this alert was already closed with a different outcome; it was kept unchanged" });
      } else if (alert.state !== "waiting" || (alert.outcomes ?? []).length > 0) {
        conflicts.add({ row, path: "externalId", message: `conflict: this alert is being reviewed on the desk (${alert.state.replace("_", " ")}); it was kept unchanged` });
      } else {
        closings.push({ row, alert, reviews });
      }
    }

    let rolledBack = false;
    if (options.atomic && (errors.rowCount > 0 || conflicts.rowCount > 0)) {
      rolledBack = true;
    } else if (closings.length > 0) {
      await insertOutcomes(tx, closings, now);
      await closeAlerts(tx, closings);
      const actor = auditActorOf(options.actor);
      // One batch append for the whole back-fill: one chain lock and one insert instead of a
      // round trip per event (20,000 outcomes took minutes the other way).
      const events: RecordAuditEventOptions[] = [];
      for (const { alert, reviews } of closings) {
        for (const review of reviews) {
          events.push({
            actor,
            event: {
              action: "outcome.recorded",
              payload: {
                alertId: alert.id,
                externalId: alert.externalId,
                outcome: review.outcome,
                reason: review.reason,
                round: review.round,
                handlingSeconds: handlingSeconds(review),
                origin: "imported",
                sentToSecondReview: review.round === 1 && reviews.length === 2,
              },
            },
            subject: { type: "alert", id: alert.id },
            context: options.context,
          });
        }
        if (reviews.length === 2) {
          const [first, second] = reviews;
          events.push({
            actor,
            event: {
              action: second.outcome === first.outcome ? "second_review.confirmed" : "second_review.overturned",
              payload: { alertId: alert.id, externalId: alert.externalId, firstOutcome: first.outcome, secondOutcome: second.outcome },
            },
            subject: { type: "alert", id: alert.id },
            context: options.context,
          });
        }
      }
      await recordAuditEvents(tx, events);
    }

    const conflict = conflicts.rowCount;
    const counts = rolledBack
      ? { accepted: 0, duplicate: 0, conflict, rejected: rows.length - conflict }
      : { accepted: closings.length, duplicate, conflict, rejected: errors.rowCount };
    await closeIngestBatch(tx, {
      batchId,
      kind: "outcomes",
      channel: options.channel,
      actor: options.actor,
      rowCount: rows.length,
      counts,
      errors: errors.items,
      conflicts: conflicts.items,
      context: options.context,
    });
    const answer: IngestOutcomesAnswer = {
      batchId,
      ...counts,
      errors: errors.items,
      conflicts: conflicts.items,
      problemsTruncated: errors.truncated || conflicts.truncated,
      closedAlerts: counts.accepted,
      outcomesRecorded: rolledBack ? 0 : closings.reduce((sum, closing) => sum + closing.reviews.length, 0),
      rolledBack,
    };
    return { answer, modelVersionIds: rolledBack ? [] : [...new Set(closings.map((closing) => closing.alert.modelVersionId))] };
  });

  // Outside the batch transaction, after its commit; inside a caller's transaction the refit is theirs to run.
  if (isRootClient(db)) {
    for (const modelVersionId of modelVersionIds) await refitAfterClosing(db, { modelVersionId, now, context: options.context });
  }
  return answer;
}

function asStored(review: Review): StoredOutcome {
  return { ...review, claimedAt: review.claimedAt.toISOString(), closedAt: review.closedAt.toISOString() };
}

async function reviewersByEmail(tx: Prisma.TransactionClient, emails: string[]): Promise<Map<string, string>> {
  if (emails.length === 0) return new Map();
  const rows = await tx.$queryRaw<{ id: string; email: string }[]>`
    SELECT u.id, u.email FROM users u JOIN json_array_elements_text(${JSON.stringify(emails)}::json) AS e(email) ON u.email = e.email`;
  return new Map(rows.map((row) => [row.email, row.id]));
}

/** The batch's alerts with their outcomes so far, locked until the batch commits. */
async function lockAlerts(tx: Prisma.TransactionClient, externalIds: string[]): Promise<Map<string, StoredAlert>> {
  if (externalIds.length === 0) return new Map();
  const rows = await tx.$queryRaw<StoredAlert[]>`
    SELECT a.id, a.external_id AS "externalId", a.model_version_id AS "modelVersionId", a.state,
           (SELECT json_agg(json_build_object('round', o.review_round, 'outcome', o.outcome, 'reason', o.reason,
                                              'reviewerId', o.reviewer_id, 'claimedAt', o.claimed_at, 'closedAt', o.closed_at)
                            ORDER BY o.review_round)
              FROM outcomes o WHERE o.alert_id = a.id) AS outcomes
      FROM alerts a
      JOIN json_array_elements_text(${JSON.stringify(externalIds)}::json) AS e(external_id)
        ON a.portfolio_key = ${DEFAULT_PORTFOLIO} AND a.external_id = e.external_id
       FOR UPDATE OF a`;
  return new Map(rows.map((row) => [row.externalId, row]));
}

async function insertOutcomes(tx: Prisma.TransactionClient, closings: Closing[], now: Date): Promise<void> {
  const records = closings.flatMap(({ alert, reviews }) =>
    reviews.map((review) => ({
      alert_id: alert.id,
      review_round: review.round,
      outcome: review.outcome,
      reason: review.reason,
      note: review.note,
      reviewer_id: review.reviewerId,
      claimed_at: review.claimedAt.toISOString(),
      closed_at: review.closedAt.toISOString(),
      handling_seconds: handlingSeconds(review),
    })),
  );
  await tx.$executeRaw`
    INSERT INTO outcomes (alert_id, review_round, outcome, reason, note, reviewer_id, claimed_at, closed_at, handling_seconds, origin, created_at)
    SELECT r.alert_id, r.review_round, r.outcome, r.reason, r.note, r.reviewer_id, r.claimed_at, r.closed_at, r.handling_seconds, 'imported', ${now}
      FROM json_to_recordset(${JSON.stringify(records)}::json) AS r(
             alert_id uuid, review_round smallint, outcome text, reason text, note text, reviewer_id uuid,
             claimed_at timestamptz, closed_at timestamptz, handling_seconds integer)`;
}

/**
 * Closes each alert with its final outcome: the second review's when there was one, else the first's.
 * The claim columns end as they do on screen: a single review leaves its reviewer and claim time on
 * the alert; a second review leaves both empty (the alert went back to the pool between the rounds).
 */
async function closeAlerts(tx: Prisma.TransactionClient, closings: Closing[]): Promise<void> {
  const records = closings.map(({ alert, reviews }) => {
    const last = reviews[reviews.length - 1];
    const single = reviews.length === 1;
    return {
      alert_id: alert.id,
      claimed_at: single ? reviews[0].claimedAt.toISOString() : null,
      assigned_to_id: single ? reviews[0].reviewerId : null,
      closed_at: last.closedAt.toISOString(),
      final_outcome: last.outcome,
    };
  });
  const updated = await tx.$executeRaw`
    UPDATE alerts a
       SET state = 'closed', final_outcome = r.final_outcome, claimed_at = r.claimed_at, closed_at = r.closed_at,
           assigned_to_id = r.assigned_to_id, lease_expires_at = NULL
      FROM json_to_recordset(${JSON.stringify(records)}::json)
           AS r(alert_id uuid, claimed_at timestamptz, assigned_to_id uuid, closed_at timestamptz, final_outcome text)
     WHERE a.id = r.alert_id AND a.state = 'waiting'`;
  if (updated !== records.length) {
    // The alerts were locked and checked above; anything else is a bug, and the batch must not commit.
    throw new Error(`closing imported outcomes: expected to close ${records.length} alerts, closed ${updated}`);
  }
}
