// Alerts waiting for a second person under the four-eyes rule, oldest first, with the first review:
// the Queue screen's list for people who may give second reviews. The viewer's own first reviews
// are marked, since they may not review those again.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import type { OutcomeValue } from "@/lib/outcomes/schemas";

export interface SecondReviewItem {
  id: string;
  externalId: string;
  amountMinor: number;
  currency: string;
  exposureMinor: number | null;
  firstOutcome: OutcomeValue;
  firstReason: string;
  firstReviewerId: string;
  firstReviewerName: string;
  sentAt: Date;
  /** The viewer recorded the first outcome: they may not give the second review. */
  ownFirstReview: boolean;
}

type Row = Omit<SecondReviewItem, "amountMinor" | "exposureMinor" | "ownFirstReview"> & { amountMinor: bigint; exposureMinor: bigint | null };

export async function listSecondReviews(db: DbOrTx, { viewerId, limit = 50 }: { viewerId: string; limit?: number }): Promise<SecondReviewItem[]> {
  const rows = await db.$queryRaw<Row[]>`
    SELECT a.id, a.external_id AS "externalId", a.amount_minor AS "amountMinor", a.currency, a.exposure_minor AS "exposureMinor",
           o.outcome AS "firstOutcome", o.reason AS "firstReason", o.reviewer_id AS "firstReviewerId",
           u.display_name AS "firstReviewerName", o.closed_at AS "sentAt"
      FROM alerts a
      JOIN outcomes o ON o.alert_id = a.id AND o.review_round = 1
      JOIN users u ON u.id = o.reviewer_id
     WHERE a.state = 'second_review'
     ORDER BY o.closed_at, a.id
     LIMIT ${limit}`;
  return rows.map((row) => ({
    ...row,
    amountMinor: Number(row.amountMinor),
    exposureMinor: row.exposureMinor === null ? null : Number(row.exposureMinor),
    ownFirstReview: row.firstReviewerId === viewerId,
  }));
}
