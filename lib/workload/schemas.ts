// Zod schemas of the workload screen and the capacity planner: the queries a screen or an API caller
// sends, the supervisor's actions, and the answers (GET /api/v1/workload, GET /api/v1/capacity).
// Types are inferred from these.
import { z } from "zod";

const blankToUndefined = (value: unknown) => (typeof value === "string" && value.trim() === "" ? undefined : value);
const optionalNumber = (schema: z.ZodNumber) => z.preprocess(blankToUndefined, z.coerce.number({ error: "expected a number" }).pipe(schema).optional());

// ---------------------------------------------------------------------------------------------------
// Queries

/** GET /api/v1/workload?horizonHours=4&days=14 (and the Workload screen's URL). */
export const workloadQuerySchema = z.object({
  /** "Overdue within the next N hours". */
  horizonHours: z.preprocess(blankToUndefined, z.coerce.number({ error: "expected a whole number of hours" }).int("expected a whole number of hours").min(1, "at least 1 hour").max(48, "at most 48 hours").default(4)),
  /** Days of the arrived-versus-closed history, today included. */
  days: z.preprocess(blankToUndefined, z.coerce.number({ error: "expected a whole number of days" }).int("expected a whole number of days").min(7, "at least 7 days").max(60, "at most 60 days").default(14)),
});
export type WorkloadQuery = z.infer<typeof workloadQuerySchema>;

/**
 * GET /api/v1/capacity: the daily capacity K is `capacity`, or analysts × hours × 60 ÷ handling
 * minutes (default: the queue settings' expected handling minutes), or the metrics setting
 * dailyCapacity when neither is given. `days` of recent traffic describe a day.
 */
export const capacityQuerySchema = z
  .object({
    capacity: optionalNumber(z.number().int("expected a whole number of alerts a day").min(1, "at least 1 alert a day").max(1_000_000, "at most 1,000,000 alerts a day")),
    analysts: optionalNumber(z.number().int("expected a whole number of analysts").min(1, "at least 1 analyst").max(10_000, "at most 10,000 analysts")),
    hours: optionalNumber(z.number().positive("more than 0 hours").max(24, "at most 24 hours a day")),
    handlingMinutes: optionalNumber(z.number().positive("more than 0 minutes").max(600, "at most 600 minutes")),
    days: z.preprocess(blankToUndefined, z.coerce.number({ error: "expected a whole number of days" }).int("expected a whole number of days").min(1, "at least 1 day").max(60, "at most 60 days").default(14)),
    modelVersionId: z.preprocess(
      (value) => (value === undefined || value === "" ? [] : Array.isArray(value) ? value : [value]),
      z.array(z.uuid({ error: "expected a model version id (UUID)" })).max(20, "at most 20 model versions"),
    ),
  })
  .superRefine((query, ctx) => {
    const staffing = query.analysts !== undefined || query.hours !== undefined || query.handlingMinutes !== undefined;
    if (query.capacity !== undefined && staffing) {
      ctx.addIssue({ code: "custom", path: ["capacity"], message: "give either capacity, or analysts and hours, not both" });
    }
    if (staffing && (query.analysts === undefined || query.hours === undefined)) {
      ctx.addIssue({ code: "custom", path: [query.analysts === undefined ? "analysts" : "hours"], message: "analysts and hours go together (handlingMinutes is optional)" });
    }
  });
export type CapacityQuery = z.infer<typeof capacityQuerySchema>;

// ---------------------------------------------------------------------------------------------------
// Actions (server actions of the Workload screen)

/** The form sends confirm=yes only from its confirmation step, so a stray submit changes nothing. */
const confirmed = z.literal("yes", { error: "confirm the action first" });

export const releaseAnalystAlertsInputSchema = z.object({
  analystId: z.uuid({ error: "choose an analyst" }),
  reason: z.preprocess(blankToUndefined, z.string().trim().min(1).max(200, "at most 200 characters").optional()),
  confirm: confirmed,
});
export type ReleaseAnalystAlertsInput = z.infer<typeof releaseAnalystAlertsInputSchema>;

export const reassignAlertInputSchema = z.object({
  alertId: z.uuid({ error: "choose an alert" }),
  toUserId: z.uuid({ error: "choose who should take the alert" }),
  confirm: confirmed,
});
export type ReassignAlertInput = z.infer<typeof reassignAlertInputSchema>;

// ---------------------------------------------------------------------------------------------------
// Workload answer

/** Money is summed per currency: exposure and expected loss are in each alert's own currency. */
export const moneySchema = z.object({ currency: z.string(), minor: z.number() });
export type Money = z.infer<typeof moneySchema>;

const backlogCountsSchema = z.object({
  open: z.number().int(),
  waiting: z.number().int(),
  inReview: z.number().int(),
  secondReview: z.number().int(),
  /** Open alerts past their due time at `now`. */
  overdue: z.number().int(),
  expectedLoss: z.array(moneySchema),
});
export type BacklogCounts = z.infer<typeof backlogCountsSchema>;

export const ageBandSchema = z.object({ label: z.string(), fromHours: z.number(), toHours: z.number().nullable() });
export type AgeBand = z.infer<typeof ageBandSchema>;

export const expectedLossBandSchema = z.object({
  /** The SLA band's lower bound in minor units (inclusive); null for open alerts without an expected loss (not priced yet). */
  minExpectedLossMinor: z.number().nullable(),
  /** The next band's lower bound (exclusive); null for the top band. */
  maxExpectedLossMinor: z.number().nullable(),
  slaHours: z.number().nullable(),
});
export type ExpectedLossBand = z.infer<typeof expectedLossBandSchema>;

export const heldAlertSchema = z.object({
  alertId: z.uuid(),
  externalId: z.string(),
  claimedAt: z.date(),
  leaseExpiresAt: z.date(),
  dueAt: z.date().nullable(),
  expectedLossMinor: z.number().nullable(),
  currency: z.string(),
});

export const analystWorkloadSchema = z.object({
  userId: z.uuid(),
  /** GET /api/v1/workload sends null here to API tokens: reports get the pseudonym (DESIGN.md §5). */
  displayName: z.string(),
  /** The person's stable pseudonymous id, as in label exports. */
  pseudonym: z.string(),
  role: z.string(),
  active: z.boolean(),
  /** A claim or a close in the last `onShiftHours`. */
  onShift: z.boolean(),
  lastActivityAt: z.date().nullable(),
  /** Alerts in review held by them now, oldest claim first. */
  held: z.array(heldAlertSchema),
  /** Reviews (outcomes, first or second) they recorded since midnight UTC. */
  closedToday: z.number().int(),
  reviewsInRateWindow: z.number().int(),
  hoursAtWork: z.number(),
  closingRatePerHour: z.number(),
  /** Median of claim → close over their screen reviews of the last `handlingWindowDays` (percentile_cont). */
  medianHandlingSeconds: z.number().nullable(),
  handledInHandlingWindow: z.number().int(),
});
export type AnalystWorkload = z.infer<typeof analystWorkloadSchema>;

export const workloadSchema = z.object({
  now: z.date(),
  /** The cost settings' home currency: the SLA bands' bounds are shown in it. */
  homeCurrency: z.string(),
  parameters: z.object({
    horizonHours: z.number(),
    days: z.number().int(),
    rateWindowHours: z.number(),
    onShiftHours: z.number(),
    handlingWindowDays: z.number(),
    claimLeaseMinutes: z.number(),
    maxHeldPerAnalyst: z.number().int(),
  }),
  totals: backlogCountsSchema.extend({
    overdueWaiting: z.number().int(),
    /** Open alerts not yet due that will pass their due time within `horizonHours` at the team's rate. */
    projectedOverdue: z.number().int(),
    expectedLossWaiting: z.array(moneySchema),
    /** Open alerts without an expected loss (no band, no due time). */
    unpriced: z.number().int(),
  }),
  team: z.object({
    analystsOnShift: z.number().int(),
    /** Sum of the on-shift analysts' closing rates. */
    closingRatePerHour: z.number(),
    /** Alerts closed since midnight UTC. */
    closedToday: z.number().int(),
    /** Open alerts ÷ the team's rate; null when nobody on shift is closing anything. */
    timeToClearHours: z.number().nullable(),
  }),
  byAge: z.array(backlogCountsSchema.extend({ band: ageBandSchema })),
  byExpectedLoss: z.array(backlogCountsSchema.extend({ band: expectedLossBandSchema })),
  analysts: z.array(analystWorkloadSchema),
  /** People who may be given an alert (active, with a role that works alerts), with how many they hold. */
  assignees: z.array(z.object({ userId: z.uuid(), displayName: z.string(), pseudonym: z.string(), role: z.string(), heldCount: z.number().int() })),
  /** One entry per UTC day, oldest first, today last (up to `now`). */
  history: z.array(z.object({ day: z.string(), arrived: z.number().int(), closed: z.number().int(), openAtEnd: z.number().int() })),
  /** Open alerts by age in whole hours; the last bin holds everything at least `fromHours` old. */
  ageDistribution: z.array(z.object({ fromHours: z.number(), toHours: z.number().nullable(), notOverdue: z.number().int(), overdue: z.number().int() })),
});
export type Workload = z.infer<typeof workloadSchema>;

// ---------------------------------------------------------------------------------------------------
// Capacity answer

const workedCapacitySchema = z.object({
  capacityPerDay: z.number(),
  reviewedPerDay: z.number(),
  expectedFraudsPerDay: z.number(),
  expectedLossCaughtPerDayMinor: z.number(),
  precision: z.number().nullable(),
  lowestScoreReached: z.number().nullable(),
  capacityExceedsPool: z.boolean(),
});

export const modelVersionCapacitySchema = z.object({
  modelVersionId: z.uuid(),
  modelName: z.string(),
  version: z.string(),
  scoreKind: z.enum(["probability", "anomaly"]),
  active: z.boolean(),
  currentThreshold: z.number(),
  calibration: z.object({
    source: z.enum(["calibration_map", "corrected_score", "prior_hit_rate"]),
    calibrationMapId: z.uuid().nullable(),
    fittedAt: z.date().nullable(),
    labelCount: z.number().int().nullable(),
    /** Lowest and highest labelled score the map was fitted on; outside it the map is clipped. */
    scoreRange: z.tuple([z.number(), z.number()]).nullable(),
  }),
  observed: z.object({
    /** Days the recent traffic is spread over (the window, or less for a version that started inside it). */
    days: z.number(),
    alerts: z.number().int(),
    belowTheLineSamples: z.number().int(),
    alertsPerDay: z.number(),
    /** Transactions a day the alerts and the weighted samples stand for. */
    trafficPerDay: z.number(),
    currencies: z.array(z.string()),
    /** Alerts left out because they have no exposure yet. */
    withoutExposure: z.number().int(),
  }),
  threshold: workedCapacitySchema.extend({
    threshold: z.number().nullable(),
    alertsPerDayAtThreshold: z.number(),
    reachesBelowCurrentAlerts: z.boolean(),
    /** False when the threshold lies below the lowest labelled score of the calibration map. */
    inCalibratedRange: z.boolean(),
  }),
  queuePerDay: z.number(),
  queueExpectedLossPerDayMinor: z.number(),
  queueByScore: workedCapacitySchema,
  queueByExpectedLoss: workedCapacitySchema,
  orderingGainPerDayMinor: z.number(),
  curve: z.array(
    z.object({
      capacityPerDay: z.number(),
      thresholdForCapacityMinor: z.number(),
      queueByScoreMinor: z.number(),
      queueByExpectedLossMinor: z.number(),
    }),
  ),
});
export type ModelVersionCapacity = z.infer<typeof modelVersionCapacitySchema>;

export const capacityPlanSchema = z.object({
  now: z.date(),
  capacity: z.object({
    perDay: z.number().int(),
    source: z.enum(["given", "staffing", "setting"]),
    staffing: z.object({ analysts: z.number(), hoursPerAnalyst: z.number(), handlingMinutes: z.number() }).nullable(),
  }),
  window: z.object({ from: z.date(), to: z.date(), days: z.number().int() }),
  /** The currency money figures are shown in (the home currency of the cost settings). */
  homeCurrency: z.string(),
  assumptions: z.array(z.string()),
  modelVersions: z.array(modelVersionCapacitySchema),
});
export type CapacityPlanAnswer = z.infer<typeof capacityPlanSchema>;
