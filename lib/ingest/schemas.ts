// Zod schemas for what the scoring service and supervisors send to ingest: alerts, late labels,
// historical outcomes, and model versions. Types are inferred from these schemas, never written twice.
// Unknown keys are stripped (zod's default for z.object). The card-number guard runs before these
// schemas (see validate-rows.ts), so no message produced here can echo a card number.
import { z } from "zod";

// ---------------------------------------------------------------------------------------------------
// Shared pieces

/**
 * A message function for a schema's `error` option: "required" when the field is missing, the given
 * explanation otherwise. A schema-level `error` replaces zod's message for every issue of that schema,
 * including the missing-field one, hence the split.
 */
function expected(explanation: string) {
  return (issue: { input?: unknown }) => (issue.input === undefined ? "required" : explanation);
}

/**
 * Like `expected`, but only for a wrong type; range and format issues of the same schema keep their own
 * messages (a too-large whole number should not be told it is not a whole number).
 */
function expectedType(explanation: string) {
  return (issue: { code?: string; input?: unknown }) => {
    if (issue.code !== "invalid_type") return undefined;
    return issue.input === undefined ? "required" : explanation;
  };
}

const ISO_DATE_TIME_HINT =
  "expected an ISO 8601 date-time with seconds and a UTC offset, e.g. 2025-03-01T14:05:00Z or 2025-03-01T15:05:00+01:00";

/** ISO 8601 date-time that names its offset (a local time without one is ambiguous), parsed to a Date. */
const dateTimeWithOffset = z.iso
  .datetime({ offset: true, error: expected(ISO_DATE_TIME_HINT) })
  .transform((text) => new Date(text));

const externalId = z.string().min(1).max(200);
const modelName = z.string().min(1).max(100);
const modelVersionName = z.string().min(1).max(100);

/** Fraction of the scale (0, 1]: a probability that cannot be zero. */
const probabilityAboveZero = (what: string) =>
  z.number({ error: expectedType(`expected ${what}: a number greater than 0 and at most 1`) })
    .gt(0, { error: `must be greater than 0 (${what})` })
    .lte(1, { error: `must be at most 1 (${what})` });

// ---------------------------------------------------------------------------------------------------
// Words of DESIGN.md §3

export const OUTCOMES = ["confirmed_fraud", "legitimate", "inconclusive"] as const;
export const outcomeSchema = z.enum(OUTCOMES, { error: expected(`expected one of ${OUTCOMES.join(", ")}`) });
export type Outcome = z.infer<typeof outcomeSchema>;

export const LABEL_VALUES = ["fraud", "genuine"] as const;
/** Label sources that arrive from outside; `analyst` labels are made inside the app from outcomes. */
export const EXTERNAL_LABEL_SOURCES = ["chargeback", "customer_report"] as const;

export const SCORE_KINDS = ["probability", "anomaly"] as const;
export type ScoreKind = (typeof SCORE_KINDS)[number];

// ---------------------------------------------------------------------------------------------------
// Alert

export const reasonCodeSchema = z.object({
  code: z.string().min(1).max(100),
  contribution: z.number(), // zod 4 numbers are finite: NaN and ±Infinity are rejected
});
export type ReasonCode = z.infer<typeof reasonCodeSchema>;

export interface AlertRowSchemaOptions {
  /** The channels configured in Settings, e.g. ["card_present", "card_not_present", "atm"]. */
  channels: readonly string[];
}

/**
 * One incoming alert from the scoring service. `channels` come from Settings, so the schema is built
 * per request. Below-the-line samples (alerts sent on purpose from below the alert threshold) must carry
 * their inclusion probability π so that estimates can weight them by 1/π (DESIGN.md §4); other alerts
 * must not carry one.
 */
export function alertRowSchema(options: AlertRowSchemaOptions) {
  const channels = [...options.channels];
  if (channels.length === 0) throw new Error("alertRowSchema: at least one channel must be configured");
  const channelList = channels.join(", ");

  return z
    .object({
      externalId,
      occurredAt: dateTimeWithOffset,
      amountMinor: z
        .int({ error: expectedType("expected the amount in minor units (cents): a whole number") })
        .min(0, { error: "must be 0 or more (amount in minor units)" }),
      currency: z
        .string()
        .regex(/^[A-Z]{3}$/, { error: "expected an ISO 4217 alphabetic currency code: three capital letters, e.g. EUR" }),
      channel: z.enum(channels as [string, ...string[]], { error: expected(`expected one of ${channelList}`) }),
      merchantCategoryCode: z
        .string({ error: expectedType('expected the ISO 18245 merchant category code as a string of 4 digits, e.g. "5411"') })
        .regex(/^[0-9]{4}$/, { error: 'expected the ISO 18245 merchant category code as a string of 4 digits, e.g. "5411"' }),
      merchantCountry: z
        .string()
        .regex(/^[A-Z]{2}$/, { error: "expected an ISO 3166-1 alpha-2 country code: two capital letters, e.g. DE" }),
      entityRef: z.string().min(1).max(100),
      modelName,
      modelVersion: modelVersionName,
      score: z.number(),
      reasonCodes: z.array(reasonCodeSchema).max(100).default([]),
      belowTheLine: z.boolean().default(false),
      inclusionProbability: probabilityAboveZero("the inclusion probability").nullable().default(null),
    })
    .superRefine((alert, ctx) => {
      if (alert.belowTheLine && alert.inclusionProbability === null) {
        ctx.addIssue({
          code: "custom",
          path: ["inclusionProbability"],
          message:
            "required when belowTheLine is true: the probability (greater than 0, at most 1) with which this alert was drawn into the below-the-line sample",
        });
      }
      if (!alert.belowTheLine && alert.inclusionProbability !== null) {
        ctx.addIssue({
          code: "custom",
          path: ["inclusionProbability"],
          message: "must be absent or null when belowTheLine is false: only below-the-line samples carry an inclusion probability",
        });
      }
    });
}

export type AlertRowSchema = ReturnType<typeof alertRowSchema>;
export type AlertRow = z.infer<AlertRowSchema>;
export type AlertRowInput = z.input<AlertRowSchema>;

// ---------------------------------------------------------------------------------------------------
// Late label (chargeback, customer report)

export const labelRowSchema = z.object({
  externalId,
  label: z.enum(LABEL_VALUES, { error: expected(`expected one of ${LABEL_VALUES.join(", ")}`) }),
  source: z.enum(EXTERNAL_LABEL_SOURCES, { error: expected(`expected one of ${EXTERNAL_LABEL_SOURCES.join(", ")}`) }),
  observedAt: dateTimeWithOffset,
  reference: z.string().max(200).nullable().default(null),
});
export type LabelRow = z.infer<typeof labelRowSchema>;
export type LabelRowInput = z.input<typeof labelRowSchema>;

// ---------------------------------------------------------------------------------------------------
// Historical outcome (back-fill of reviews done before Triage Desk)

export const outcomeRowSchema = z
  .object({
    externalId,
    outcome: outcomeSchema,
    reason: z.string().min(1).max(200),
    reviewerEmail: z.email({ error: expected("expected an email address") }),
    claimedAt: dateTimeWithOffset,
    closedAt: dateTimeWithOffset,
    note: z.string().max(2000).nullable().default(null),
    secondReviewerEmail: z.email({ error: expected("expected an email address") }).nullable().default(null),
    secondOutcome: outcomeSchema.nullable().default(null),
  })
  .superRefine((row, ctx) => {
    if (row.closedAt.getTime() < row.claimedAt.getTime()) {
      ctx.addIssue({ code: "custom", path: ["closedAt"], message: "must not be earlier than claimedAt" });
    }
    if (row.secondReviewerEmail !== null && row.secondOutcome === null) {
      ctx.addIssue({
        code: "custom",
        path: ["secondOutcome"],
        message: "required when secondReviewerEmail is given (send both or neither)",
      });
    }
    if (row.secondOutcome !== null && row.secondReviewerEmail === null) {
      ctx.addIssue({
        code: "custom",
        path: ["secondReviewerEmail"],
        message: "required when secondOutcome is given (send both or neither)",
      });
    }
    if (row.secondReviewerEmail !== null && row.secondReviewerEmail.toLowerCase() === row.reviewerEmail.toLowerCase()) {
      ctx.addIssue({
        code: "custom",
        path: ["secondReviewerEmail"],
        message: "must be a different person from reviewerEmail",
      });
    }
  });
export type OutcomeRow = z.infer<typeof outcomeRowSchema>;
export type OutcomeRowInput = z.input<typeof outcomeRowSchema>;

// ---------------------------------------------------------------------------------------------------
// Model version

/**
 * A model build that scores transactions. For probability scores from a model trained on undersampled
 * data, β (negativeSamplingRate) is the probability that a genuine example was kept; β = 1 means no
 * undersampling (Dal Pozzolo et al. 2015, DESIGN.md §4). Anomaly scores are not probabilities: until
 * enough labels exist, their alerts take the configured prior hit rate.
 */
export const modelVersionInputSchema = z
  .object({
    modelName,
    version: modelVersionName,
    scoreKind: z.enum(SCORE_KINDS, { error: expected(`expected one of ${SCORE_KINDS.join(", ")}`) }),
    negativeSamplingRate: probabilityAboveZero("β, the share of genuine examples kept when undersampling").default(1),
    priorHitRate: z
      .number({ error: expectedType("expected a number from 0 to 1") })
      .min(0, { error: "must be at least 0" })
      .max(1, { error: "must be at most 1" })
      .nullable()
      .default(null),
    alertThreshold: z.number(),
    active: z.boolean().default(true),
  })
  .superRefine((model, ctx) => {
    if (model.scoreKind === "anomaly" && model.priorHitRate === null) {
      ctx.addIssue({
        code: "custom",
        path: ["priorHitRate"],
        message: "required for anomaly scores: the share of alerts expected to be confirmed as fraud until enough labels exist",
      });
    }
    if (model.scoreKind === "anomaly" && model.negativeSamplingRate !== 1) {
      ctx.addIssue({
        code: "custom",
        path: ["negativeSamplingRate"],
        message: "applies only to probability scores; leave it out (or 1) for anomaly scores",
      });
    }
  });
export type ModelVersionInput = z.infer<typeof modelVersionInputSchema>;
export type ModelVersionInputRaw = z.input<typeof modelVersionInputSchema>;
