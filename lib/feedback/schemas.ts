// Zod schemas of the feedback-loop metrics: the query a screen or an API caller sends (window,
// model versions, drift windows) and the answer both receive. Types are inferred from these.
import { z } from "zod";

// ---------------------------------------------------------------------------------------------------
// Query

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, { error: "expected a calendar date YYYY-MM-DD (UTC), e.g. 2026-11-30" })
  .refine((text) => !Number.isNaN(Date.parse(`${text}T00:00:00Z`)) && new Date(`${text}T00:00:00Z`).toISOString().startsWith(text), {
    error: "not a real calendar date",
  });

/** Longest custom window: two years of daily buckets is already 730 points per chart. */
export const MAX_WINDOW_DAYS = 731;

/**
 * The window a metric is computed over, as it travels in a URL:
 * - `window=day&date=D`: the UTC calendar day D (default today);
 * - `window=week&date=D`: the ISO week (Monday to Sunday, UTC) that holds D;
 * - `window=custom&from=A&to=B`: days A to B inclusive (default: the last 28 days, today included).
 * `bucket` is the step of the series over time (default: day up to 62 days, week beyond).
 */
export const windowQuerySchema = z
  .object({
    window: z.enum(["day", "week", "custom"], { error: "expected day, week or custom" }).default("custom"),
    date: isoDate.optional(),
    from: isoDate.optional(),
    to: isoDate.optional(),
    bucket: z.enum(["day", "week"], { error: "expected day or week" }).optional(),
  })
  .superRefine((query, ctx) => {
    if (query.window !== "custom" && (query.from !== undefined || query.to !== undefined)) {
      ctx.addIssue({ code: "custom", path: ["from"], message: "from and to go with window=custom; day and week windows take date" });
    }
    if (query.window === "custom" && query.date !== undefined) {
      ctx.addIssue({ code: "custom", path: ["date"], message: "date goes with window=day or window=week; a custom window takes from and to" });
    }
    if (query.from !== undefined && query.to !== undefined && query.from > query.to) {
      ctx.addIssue({ code: "custom", path: ["to"], message: "must not be earlier than from" });
    }
  });
export type WindowQuery = z.infer<typeof windowQuerySchema>;

const dayCount = (what: string) =>
  z.coerce
    .number({ error: `expected a whole number of days (${what})` })
    .int({ error: `expected a whole number of days (${what})` })
    .min(1, { error: `must be at least 1 day (${what})` })
    .max(365, { error: `must be at most 365 days (${what})` });

export const modelVersionMetricsQuerySchema = z.object({
  /** Only these model versions (repeat the parameter); default: every version with alerts in the window, and every active one. */
  modelVersionId: z.array(z.uuid({ error: "expected a model version id (UUID)" })).max(20).default([]),
  /** Score drift: the current window is the last `driftCurrentDays` of the metric window… */
  driftCurrentDays: dayCount("driftCurrentDays").default(14),
  /** …and the reference window the `driftReferenceDays` just before it. */
  driftReferenceDays: dayCount("driftReferenceDays").default(28),
});
export type ModelVersionMetricsQuery = z.infer<typeof modelVersionMetricsQuerySchema>;

// ---------------------------------------------------------------------------------------------------
// Answer pieces

/** A rate with its 95% Wilson score interval and the counts behind it (lib/metrics `rate`). */
export const rateSchema = z.object({
  value: z.number().nullable(),
  lower: z.number(),
  upper: z.number(),
  successes: z.number().int(),
  trials: z.number().int(),
});
export type RateJson = z.infer<typeof rateSchema>;

export const metricsWindowSchema = z.object({
  kind: z.enum(["day", "week", "custom"]),
  /** Inclusive start, UTC midnight. */
  from: z.iso.datetime(),
  /** Exclusive end, UTC midnight. */
  to: z.iso.datetime(),
  days: z.number().int(),
  bucket: z.enum(["day", "week"]),
  labelMaturityDays: z.number().int(),
  /** Windows ending at or before this instant (now − labelMaturityDays) have mature labels. */
  matureBefore: z.iso.datetime(),
  /** False while chargebacks and customer reports for the window may still arrive. */
  mature: z.boolean(),
});
export type MetricsWindowJson = z.infer<typeof metricsWindowSchema>;

export const outcomeNameSchema = z.enum(["confirmed_fraud", "legitimate", "inconclusive"]);

export const outcomeMixSchema = z.object({
  confirmedFraud: z.number().int(),
  legitimate: z.number().int(),
  inconclusive: z.number().int(),
});

const seriesPointBase = z.object({
  from: z.iso.datetime(),
  to: z.iso.datetime(),
  mature: z.boolean(),
});

export const precisionPointSchema = seriesPointBase.extend({
  received: z.number().int(),
  closed: z.number().int(),
  realizedPrecision: rateSchema.extend({ inconclusive: z.number().int() }),
});

export const precisionAtKDaySchema = seriesPointBase.extend({
  /** min(k, alerts that day): fewer than k means a quiet day, and the rate divides by this. */
  considered: z.number().int(),
  /** Of the considered alerts, those with a known ground truth (the rest count as not fraud). */
  resolved: z.number().int(),
  precision: rateSchema,
});

export const reliabilityBinSchema = z.object({
  lower: z.number(),
  upper: z.number(),
  n: z.number().int(),
  meanPredicted: z.number().nullable(),
  observedRate: z.number().nullable(),
});

export const driftPointSchema = seriesPointBase.extend({
  scores: z.number().int(),
  /** Null without a reference window, or with fewer than 500 scores in the bucket (PSI's own noise would be past 0.02). */
  psi: z.number().nullable(),
});

export const psiBinSchema = z.object({
  lower: z.number().nullable(),
  upper: z.number().nullable(),
  expectedShare: z.number(),
  actualShare: z.number(),
});

/** How many values a score list held, and whether it was a sample of a longer list. */
export const sampleSchema = z.object({ used: z.number().int(), total: z.number().int(), sampled: z.boolean() });

/** A Horvitz–Thompson-weighted share: no Wilson interval, because its trials are weights, not counts. */
export const weightedEstimateSchema = z.object({
  value: z.number().nullable(),
  weightedSuccesses: z.number(),
  weightedTrials: z.number(),
  /** Alerts behind the estimate (unweighted). */
  alerts: z.number().int(),
});

export const modelVersionMetricsSchema = z.object({
  modelVersion: z.object({
    id: z.uuid(),
    modelName: z.string(),
    version: z.string(),
    scoreKind: z.enum(["probability", "anomaly"]),
    alertThreshold: z.number(),
    active: z.boolean(),
  }),
  /** Alerts of the version received in the window, below-the-line samples excluded. */
  received: z.number().int(),
  closed: z.number().int(),
  /** Final analyst outcomes of the closed alerts. */
  outcomeMix: outcomeMixSchema,
  /** Closed alerts whose chargeback or customer report disagrees with the analyst's outcome. */
  overturnedByLabel: z.number().int(),
  /** F / (F + L) on the ground truth of closed alerts; inconclusive without a label counted apart. */
  realizedPrecision: rateSchema.extend({ inconclusive: z.number().int() }),
  series: z.array(precisionPointSchema),
  calibration: z.object({
    /** Closed alerts with a probability and a known ground truth. */
    alerts: z.number().int(),
    /** Of those, how many had a probability from a fitted calibration map. */
    calibratedAlerts: z.number().int(),
    bins: z.array(reliabilityBinSchema),
    brierScore: z.number().nullable(),
    /** Binned ECE of Naeini, Cooper & Hauskrecht (2015) on p itself, not the top-label variant. */
    expectedCalibrationError: z.number().nullable(),
  }),
  discrimination: z.object({
    measuredOnReviewedAlertsOnly: z.literal(true),
    rocAuc: z.number().nullable(),
    averagePrecision: z.number().nullable(),
    positives: z.number().int(),
    negatives: z.number().int(),
    sample: sampleSchema,
  }),
  drift: z.object({
    reference: z.object({ from: z.iso.datetime(), to: z.iso.datetime(), sample: sampleSchema }),
    current: z.object({ from: z.iso.datetime(), to: z.iso.datetime(), sample: sampleSchema }),
    psi: z.number().nullable(),
    level: z.enum(["stable", "watch", "act"]).nullable(),
    watchLine: z.number(),
    actLine: z.number(),
    bins: z.array(psiBinSchema),
    /** Days of the current window when an average day has 500 scores or more, otherwise 7-day blocks. */
    step: z.enum(["day", "week"]),
    series: z.array(driftPointSchema),
  }),
  precisionAtK: z.object({
    k: z.number().int(),
    /** All considered alerts of the window's days pooled. */
    overall: rateSchema,
    days: z.array(precisionAtKDaySchema),
  }),
  belowTheLine: z.object({
    /** Below-the-line samples received in the window, and how many were closed with a ground truth. */
    sampled: z.number().int(),
    resolved: z.number().int(),
    /** Unweighted fraud share among resolved samples. */
    sampleFraudRate: rateSchema,
    /** Σ 1/π over the samples: how many below-the-line transactions they stand for. */
    represents: z.number(),
    /** Fraud share below the line, each resolved sample weighted by 1/π. */
    weightedFraudRate: weightedEstimateSchema,
    /** Fraud share over alerted plus below-the-line traffic (alerts weight 1, samples 1/π). */
    weightedPopulationFraudRate: weightedEstimateSchema,
  }),
});
export type ModelVersionMetrics = z.infer<typeof modelVersionMetricsSchema>;

export const modelVersionMetricsAnswerSchema = z.object({
  window: metricsWindowSchema,
  generatedAt: z.iso.datetime(),
  modelVersions: z.array(modelVersionMetricsSchema),
});
export type ModelVersionMetricsAnswer = z.infer<typeof modelVersionMetricsAnswerSchema>;

/** Where a reviewer's interval lies against the team's rate: only a whole interval beyond it counts. */
export const standsOutSchema = z.enum(["above", "below"]).nullable();

export const reviewerNumbersSchema = z.object({
  /** First reviews (round 1) closed in the window. */
  closed: z.number().int(),
  outcomeMix: outcomeMixSchema,
  /** F / (F + L) of the reviewer's own first-review outcomes. */
  hitRate: rateSchema.extend({ inconclusive: z.number().int() }),
  observedOverExpected: z.object({
    value: z.number().nullable(),
    observedFraud: z.number().int(),
    /** Σ p over the closed alerts that carry a probability. */
    expectedFraud: z.number(),
    alertsWithProbability: z.number().int(),
    calibratedAlerts: z.number().int(),
  }),
  /** Of the alerts cleared `legitimate`, those whose latest chargeback/customer report says fraud. */
  falseClearRate: rateSchema,
  medianHandlingSeconds: z.number().nullable(),
  agreement: z.object({
    /** Cohen's kappa between this first review and the second review of the same alert. */
    kappa: z.number().nullable(),
    /** Share of double-reviewed alerts where both outcomes matched. */
    agreementRate: rateSchema,
    /**
     * The pairs behind both: how often each (first, second) outcome occurred. When every first
     * outcome is the same (the four-eyes rule sends only `legitimate` ones to a second person),
     * chance agreement equals observed agreement and kappa is 0 by construction.
     */
    pairs: z.array(z.object({ first: outcomeNameSchema, second: outcomeNameSchema, n: z.number().int() })),
  }),
  /** Second reviews done in the window on other people's alerts. */
  secondReviews: z.number().int(),
});

export type ReviewerNumbers = z.infer<typeof reviewerNumbersSchema>;

export const reviewerMetricsSchema = reviewerNumbersSchema.extend({
  reviewer: z.object({
    id: z.uuid(),
    /** Stable pseudonymous id (DESIGN.md §5). */
    pseudonym: z.string(),
    /** Shown to signed-in supervisors and auditors; null for API clients. */
    displayName: z.string().nullable(),
  }),
  standsOut: z.object({ hitRate: standsOutSchema, falseClearRate: standsOutSchema, agreementRate: standsOutSchema }),
});
export type ReviewerMetrics = z.infer<typeof reviewerMetricsSchema>;

export const reviewerMetricsAnswerSchema = z.object({
  window: metricsWindowSchema,
  generatedAt: z.iso.datetime(),
  team: reviewerNumbersSchema,
  reviewers: z.array(reviewerMetricsSchema),
});
export type ReviewerMetricsAnswer = z.infer<typeof reviewerMetricsAnswerSchema>;
