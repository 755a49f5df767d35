// The team's settings, one JSON document per group in the `settings` table. Defaults apply to
// any group that was never saved, so a fresh database works without a set-up step.
import { z } from "zod";

const outcomeReasonList = z.array(z.string().min(1).max(200)).min(1).max(20);

export const queueSettingsSchema = z.object({
  /** "expected_loss": highest EL first; "loss_per_minute": EL ÷ expected handling minutes (Smith's rule). */
  orderMode: z.enum(["expected_loss", "loss_per_minute"]),
  /** SLA hours per expected-loss band; the band with the greatest minimum ≤ EL applies. */
  slaBands: z
    .array(z.object({ minExpectedLossMinor: z.number().int().min(0), slaHours: z.number().positive().max(24 * 30) }))
    .min(1)
    .refine((bands) => bands.some((band) => band.minExpectedLossMinor === 0), { message: "one band must start at 0" })
    .refine((bands) => new Set(bands.map((band) => band.minExpectedLossMinor)).size === bands.length, {
      message: "two bands start at the same expected loss; which one would apply?",
    }),
  expectedHandlingMinutes: z.number().positive().max(600),
  /** Expected analyst minutes for a channel whose alerts take longer or shorter than the usual; the
   * others take `expectedHandlingMinutes`. Smith's rule changes the order only where these differ. */
  handlingMinutesByChannel: z.record(z.string().regex(/^[a-z][a-z0-9_]{0,39}$/), z.number().positive().max(600)).default({}),
  claimLeaseMinutes: z.number().int().min(1).max(24 * 60),
  maxHeldPerAnalyst: z.number().int().min(1).max(50),
  /** A `legitimate` outcome at or above this exposure needs a second person (four-eyes rule). */
  fourEyesExposureMinor: z.number().int().min(0),
  outcomeReasons: z.object({
    confirmed_fraud: outcomeReasonList,
    legitimate: outcomeReasonList,
    inconclusive: outcomeReasonList,
  }),
});

export const costSettingsSchema = z.object({
  /** Share of a fraudulent amount expected to be recovered, per channel (0–1). */
  recoveryRateByChannel: z.record(z.string(), z.number().min(0).max(1)),
  /** Fixed cost of a confirmed fraud (card reissue, handling), in minor units of the home currency. */
  fixedCostPerFraudMinor: z.number().int().min(0),
  /** Cost of one minute of review, in minor units of the home currency. */
  reviewCostPerMinuteMinor: z.number().min(0),
  homeCurrency: z.string().regex(/^[A-Z]{3}$/),
});

export const calibrationSettingsSchema = z.object({
  minLabels: z.number().int().min(2),
  minPerClass: z.number().int().min(1),
  refitAfterNewOutcomes: z.number().int().min(1),
});

export const ingestSettingsSchema = z.object({
  channels: z.array(z.string().regex(/^[a-z][a-z0-9_]{0,39}$/)).min(1),
  maxRowsPerRequest: z.number().int().min(1).max(100_000),
});

export const metricsSettingsSchema = z.object({
  /** Disputes can arrive months later; 120 days is common practice in card fraud. */
  labelMaturityDays: z.number().int().min(0).max(730),
  dailyCapacity: z.number().int().min(1),
});

export const settingsSchemas = {
  queue: queueSettingsSchema,
  costs: costSettingsSchema,
  calibration: calibrationSettingsSchema,
  ingest: ingestSettingsSchema,
  metrics: metricsSettingsSchema,
} as const;

export type SettingsKey = keyof typeof settingsSchemas;
export type Settings = { [K in SettingsKey]: z.infer<(typeof settingsSchemas)[K]> };

export const defaultSettings: Settings = {
  queue: {
    orderMode: "expected_loss",
    slaBands: [
      { minExpectedLossMinor: 0, slaHours: 48 },
      { minExpectedLossMinor: 5_000, slaHours: 24 },
      { minExpectedLossMinor: 50_000, slaHours: 4 },
    ],
    expectedHandlingMinutes: 6,
    handlingMinutesByChannel: {},
    claimLeaseMinutes: 30,
    maxHeldPerAnalyst: 3,
    fourEyesExposureMinor: 200_000,
    outcomeReasons: {
      confirmed_fraud: ["Cardholder denies the transaction", "Known compromised card", "Merchant pattern matches fraud", "Other (see note)"],
      legitimate: ["Cardholder confirmed the transaction", "Usual spending pattern", "Trusted merchant relationship", "Other (see note)"],
      inconclusive: ["Cardholder unreachable", "Insufficient information", "Other (see note)"],
    },
  },
  costs: {
    recoveryRateByChannel: { card_present: 0.3, card_not_present: 0.1, atm: 0.0 },
    fixedCostPerFraudMinor: 1_500,
    reviewCostPerMinuteMinor: 80,
    homeCurrency: "EUR",
  },
  calibration: { minLabels: 200, minPerClass: 20, refitAfterNewOutcomes: 100 },
  ingest: { channels: ["card_present", "card_not_present", "atm"], maxRowsPerRequest: 10_000 },
  metrics: { labelMaturityDays: 120, dailyCapacity: 300 },
};
