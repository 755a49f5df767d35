// Inputs and outputs of recording outcomes: the analyst's first review and the second person's
// review under the four-eyes rule (DESIGN.md §3, §4). Types are inferred from these schemas.
import { z } from "zod";

export const OUTCOMES = ["confirmed_fraud", "legitimate", "inconclusive"] as const;
export const outcomeSchema = z.enum(OUTCOMES, { error: "choose an outcome: confirmed fraud, legitimate or inconclusive" });
export type OutcomeValue = z.infer<typeof outcomeSchema>;

/** The words the screens use for each outcome. */
export const outcomeLabels: Record<OutcomeValue, string> = {
  confirmed_fraud: "Confirmed fraud",
  legitimate: "Legitimate",
  inconclusive: "Inconclusive",
};

const blankToNull = (value: unknown) => (typeof value === "string" && value.trim() === "" ? null : value);

const uuid = z.string().uuid({ error: "not an alert id" });

/** What a person submits on the outcome form (first review) or the second-review form. */
export const outcomeSubmissionSchema = z.object({
  alertId: uuid,
  outcome: outcomeSchema,
  reason: z.string({ error: "choose a reason" }).trim().min(1, { error: "choose a reason" }).max(200, { error: "at most 200 characters" }),
  // The outcomes table allows 4,000 characters; the note is free text and may be left empty.
  note: z.preprocess(blankToNull, z.string().trim().max(4000, { error: "at most 4,000 characters" }).nullable().default(null)),
});
export type OutcomeSubmission = z.infer<typeof outcomeSubmissionSchema>;

/** The outcome form also lets the analyst ask for a second person even below the four-eyes amount. */
export const firstOutcomeFormSchema = outcomeSubmissionSchema.extend({
  requestSecondReview: z.preprocess((value) => value === "on" || value === "true" || value === true, z.boolean()).default(false),
});

/** The second-review form carries when the page was opened: the start of the second person's handling time. */
export const secondReviewFormSchema = outcomeSubmissionSchema.extend({
  startedAt: z.preprocess(blankToNull, z.coerce.date({ error: "not a time" }).nullable().default(null)),
});

export type AlertState = "waiting" | "in_review" | "second_review" | "closed";

export interface RecordedOutcome {
  outcomeId: string;
  alertId: string;
  externalId: string;
  round: 1 | 2;
  outcome: OutcomeValue;
  reason: string;
  note: string | null;
  reviewerId: string;
  claimedAt: Date;
  closedAt: Date;
  handlingSeconds: number;
  /** The alert's state after the outcome: closed, or second_review under the four-eyes rule. */
  alertState: AlertState;
  finalOutcome: OutcomeValue | null;
  /** True when this exact outcome had already been recorded (a double submit or a retry): nothing new was written. */
  repeated: boolean;
}
