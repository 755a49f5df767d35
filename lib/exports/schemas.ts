// Label exports for retraining: the choices a model owner makes, and the columns of every row.
// The column list below is the data dictionary (README) and drives the CSV header, the JSON Lines
// keys and the Parquet schema, so the three formats cannot drift apart.
//
// Rules of the export (lib/exports/stream-label-export.ts implements them in one SQL query):
//
// - Rows: one per alert of the chosen model versions with occurred_at in [occurredFrom, occurredTo),
//   received by the desk at or before asOf, and old enough: occurred_at ≤ asOf − maturityDays.
// - As of: only what the desk knew at asOf. An analyst outcome counts when its closed_at ≤ asOf. A
//   chargeback or customer report counts when its received_at ≤ asOf. received_at, not observed_at,
//   because observed_at is the date of the event in the world (the dispute), which reaches the desk
//   days or weeks later: filtering on it would put labels into an "as of" export that nobody at that
//   time could have had, and the same export run twice could differ as late files arrive.
// - The analyst outcome is the second review's (round 2) when one was closed by asOf, else the first
//   review's. A first outcome still waiting for its second review at asOf is not final: the row has
//   no outcome (the alert was not yet cleared).
// - Label: an external label (chargeback or customer report) overrides the analyst outcome whatever
//   their order in time: it is the cardholder's or the dispute process's word, the ground truth the
//   desk's own false-clear rate is measured against (DESIGN.md §4, late labels). When several external
//   labels exist, the one with the latest observed_at wins (then the latest received_at, then the
//   source name, then its id, so the choice is deterministic). observed_at orders them because it is
//   when each fact became true; received_at only says when its file reached us. Without an external
//   label: confirmed_fraud → 1, legitimate → 0, inconclusive → empty.
// - Labels with source `analyst` in the labels table are the app's own copies of outcomes; the
//   export reads outcomes directly (they carry the review round and the reviewer) and ignores them.
import { z } from "zod";

export const EXPORT_FORMATS = ["csv", "jsonl", "parquet"] as const;
export const exportFormatSchema = z.enum(EXPORT_FORMATS, { error: `expected one of ${EXPORT_FORMATS.join(", ")}` });
export type ExportFormat = z.infer<typeof exportFormatSchema>;

export const FORMAT_EXTENSION: Record<ExportFormat, string> = { csv: "csv", jsonl: "jsonl", parquet: "parquet" };
export const FORMAT_MEDIA_TYPE: Record<ExportFormat, string> = {
  // RFC 4180 §3 registers text/csv; header=present says the first record names the fields.
  csv: "text/csv; charset=utf-8; header=present",
  jsonl: "application/jsonl; charset=utf-8",
  parquet: "application/vnd.apache.parquet",
};

const ZONELESS = /^\d{4}-\d{2}-\d{2}(T\d{2}:\d{2}(:\d{2}(\.\d{1,6})?)?)?$/;

/** A point in time: a Date, or an ISO 8601 string. A string without a zone is read as UTC (the
 * desk stores and shows UTC), never in the server's local zone. */
export const utcInstantSchema = z.preprocess(
  (value) => (typeof value === "string" && ZONELESS.test(value.trim()) ? new Date(value.trim().length === 10 ? value.trim() : `${value.trim()}Z`) : typeof value === "string" ? new Date(value.trim()) : value),
  z.date({ error: "expected a date and time in ISO 8601, e.g. 2026-03-01T00:00:00Z" }).refine((date) => !Number.isNaN(date.getTime()), { message: "expected a valid date and time (ISO 8601)" }),
);

export const labelExportChoicesSchema = z
  .object({
    modelVersionIds: z.array(z.uuid({ error: "expected a model version id (uuid)" })).min(1, { error: "choose at least one model version" }).max(50),
    /** Start of the occurred_at range, inclusive. */
    occurredFrom: utcInstantSchema,
    /** End of the occurred_at range, exclusive. */
    occurredTo: utcInstantSchema,
    /** Only what the desk knew at this moment; must not be in the future. */
    asOf: utcInstantSchema,
    /** Only alerts with occurred_at ≤ asOf − maturityDays (late labels have had time to arrive). */
    maturityDays: z.number().int().min(0).max(730),
    /** Keep alerts whose final analyst outcome is inconclusive and that have no external label (label empty). */
    keepInconclusive: z.boolean(),
    /** Keep alerts with no outcome and no external label by asOf (never cleared, or awaiting a second review). */
    keepUnreviewed: z.boolean(),
    /** Include below-the-line samples (weight 1/π). */
    includeBelowTheLine: z.boolean(),
    format: exportFormatSchema,
  })
  .refine((choices) => choices.occurredFrom < choices.occurredTo, { path: ["occurredTo"], message: "must be later than occurredFrom" });

export type LabelExportChoicesInput = z.input<typeof labelExportChoicesSchema>;
export type LabelExportChoices = z.output<typeof labelExportChoicesSchema>;

/** The choices as stored in label_exports.choices and in the audit event: JSON with ISO strings,
 * plus what they resolved to (model version names, the maturity cut-off). */
export function choicesRecord(choices: LabelExportChoices, modelVersions: readonly { id: string; modelName: string; version: string }[]): Record<string, unknown> {
  return {
    modelVersionIds: choices.modelVersionIds,
    modelVersions: modelVersions.map((version) => `${version.modelName} ${version.version}`),
    occurredFrom: choices.occurredFrom.toISOString(),
    occurredTo: choices.occurredTo.toISOString(),
    asOf: choices.asOf.toISOString(),
    maturityDays: choices.maturityDays,
    maturityCutoff: maturityCutoff(choices).toISOString(),
    keepInconclusive: choices.keepInconclusive,
    keepUnreviewed: choices.keepUnreviewed,
    includeBelowTheLine: choices.includeBelowTheLine,
    format: choices.format,
  };
}

/** asOf − maturityDays: alerts that occurred later are too young for their late labels. */
export function maturityCutoff(choices: Pick<LabelExportChoices, "asOf" | "maturityDays">): Date {
  return new Date(choices.asOf.getTime() - choices.maturityDays * 86_400_000);
}

// ---------------------------------------------------------------------------------------------------
// One row of an export. Times are ISO 8601 UTC strings with milliseconds ("2026-03-01T12:00:00.000Z").

const instant = z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);
export const LABEL_SOURCES = ["analyst", "chargeback", "customer_report"] as const;
export const OUTCOMES = ["confirmed_fraud", "legitimate", "inconclusive"] as const;

export const labelExportRowSchema = z.object({
  alert_id: z.uuid(),
  external_id: z.string(),
  model_name: z.string(),
  model_version: z.string(),
  score: z.number(),
  probability: z.number().nullable(),
  amount_minor: z.number().int(),
  currency: z.string().length(3),
  channel: z.string(),
  merchant_category_code: z.string().length(4),
  merchant_country: z.string().length(2),
  occurred_at: instant,
  closed_at: instant.nullable(),
  label: z.union([z.literal(0), z.literal(1)]).nullable(),
  label_source: z.enum(LABEL_SOURCES).nullable(),
  label_at: instant.nullable(),
  label_received_at: instant.nullable(),
  overrides_outcome: z.boolean(),
  outcome: z.enum(OUTCOMES).nullable(),
  second_review: z.boolean(),
  reviewer_id: z.string().nullable(),
  below_the_line: z.boolean(),
  inclusion_probability: z.number().nullable(),
  weight: z.number().positive(),
});
export type LabelExportRow = z.infer<typeof labelExportRowSchema>;
export type LabelExportColumn = keyof LabelExportRow;

/** Column order of every format: the order of the row schema. */
export const LABEL_EXPORT_COLUMNS = Object.keys(labelExportRowSchema.shape) as LabelExportColumn[];

export type ColumnType = "string" | "double" | "int64" | "int32" | "boolean" | "timestamp";

export interface ColumnInfo {
  type: ColumnType;
  nullable: boolean;
  meaning: string;
}

/** The data dictionary. The README's table is this, word for word. */
export const LABEL_EXPORT_DICTIONARY = {
  alert_id: { type: "string", nullable: false, meaning: "Triage Desk's id of the alert (UUID)." },
  external_id: { type: "string", nullable: false, meaning: "The scoring service's id of the alert, unique within its portfolio." },
  model_name: { type: "string", nullable: false, meaning: "Name of the model that raised the alert." },
  model_version: { type: "string", nullable: false, meaning: "Version of that model." },
  score: { type: "double", nullable: false, meaning: "The model's raw score as sent by the scoring service (a probability or an anomaly score, per the model version's score kind)." },
  probability: {
    type: "double",
    nullable: true,
    meaning:
      "The desk's fraud probability for the alert (calibration map, else undersampling-corrected score, else prior hit rate). Empty when the calibration map that produced it was fitted after asOf: the value held at asOf is not kept.",
  },
  amount_minor: { type: "int64", nullable: false, meaning: "Transaction amount in integer minor units of `currency` (cents for EUR)." },
  currency: { type: "string", nullable: false, meaning: "ISO 4217 currency code of the amount." },
  channel: { type: "string", nullable: false, meaning: "Payment channel, e.g. card_present, card_not_present, atm." },
  merchant_category_code: { type: "string", nullable: false, meaning: "Merchant category code (ISO 18245), four digits, kept as text." },
  merchant_country: { type: "string", nullable: false, meaning: "Merchant country, ISO 3166-1 alpha-2." },
  occurred_at: { type: "timestamp", nullable: false, meaning: "When the transaction happened (UTC)." },
  closed_at: { type: "timestamp", nullable: true, meaning: "When the analyst outcome in `outcome` was recorded (UTC); empty when there is none as of asOf." },
  label: { type: "int32", nullable: true, meaning: "Training label: 1 fraud, 0 genuine, empty unknown (inconclusive or not reviewed)." },
  label_source: { type: "string", nullable: true, meaning: "Where the label comes from: analyst (the outcome), chargeback or customer_report; empty when the label is empty." },
  label_at: { type: "timestamp", nullable: true, meaning: "When the labelled fact was observed: the outcome's closed_at for analyst labels, the observed_at of a chargeback or customer report." },
  label_received_at: {
    type: "timestamp",
    nullable: true,
    meaning: "When the desk learned the label: the outcome's closed_at, or the external label's received_at. Always ≤ asOf.",
  },
  overrides_outcome: {
    type: "boolean",
    nullable: false,
    meaning: "true when the label comes from a chargeback or customer report while an analyst outcome existed: the external label replaced it. Compare `outcome` and `label` to see whether the value changed.",
  },
  outcome: {
    type: "string",
    nullable: true,
    meaning: "The analyst outcome as of asOf: confirmed_fraud, legitimate or inconclusive (the second review's when there was one); empty when none was final.",
  },
  second_review: { type: "boolean", nullable: false, meaning: "true when `outcome` is a second person's (four-eyes rule, review round 2)." },
  reviewer_id: {
    type: "string",
    nullable: true,
    meaning: "Stable pseudonymous id of the person who recorded `outcome` (never a name or an email); empty without an outcome.",
  },
  below_the_line: { type: "boolean", nullable: false, meaning: "true for a below-the-line sample: sent for review on purpose from below the model's alert threshold." },
  inclusion_probability: { type: "double", nullable: true, meaning: "π, the probability with which a below-the-line sample was drawn; empty for ordinary alerts." },
  weight: {
    type: "double",
    nullable: false,
    meaning:
      "Horvitz–Thompson weight: 1/π for below-the-line samples, 1 for ordinary alerts. A weighted sum over the rows estimates the total over the scored transactions they were drawn from: an ordinary alert stands for itself, a sample for 1/π transactions below the threshold.",
  },
} as const satisfies Record<LabelExportColumn, ColumnInfo>;

// ---------------------------------------------------------------------------------------------------
// The choices as text: the screen's form fields and the API's query parameters use the same names.
//   modelVersion (repeatable: an id, or "<model name>@<version>" in the API), from, to, asOf,
//   maturityDays, keepInconclusive, keepUnreviewed, includeBelowTheLine, format.

const flag = (fallback: boolean) =>
  z.preprocess(
    (value) => (Array.isArray(value) ? value.at(-1) : value),
    z
      .enum(["on", "true", "1", "false", "0", ""], { error: "expected true or false" })
      .optional()
      .transform((value) => (value === undefined ? fallback : value === "on" || value === "true" || value === "1")),
  );

/** One value of a field that a query string or form may repeat (the last wins); "" counts as absent. */
const single = <T extends z.ZodType>(schema: T) => z.preprocess((value) => (Array.isArray(value) ? value.at(-1) : value === "" ? undefined : value), schema);

export const labelExportParamsSchema = z.object({
  modelVersion: z.preprocess(
    (value) => (value === undefined || value === "" ? [] : Array.isArray(value) ? value : [value]),
    z.array(z.string().min(1).max(200)).min(1, { error: "choose at least one model version" }).max(50),
  ),
  from: single(z.string({ error: "expected the start of the range (a date, UTC)" })),
  /** Defaults to asOf. */
  to: single(z.string().optional()),
  /** Defaults to now. */
  asOf: single(z.string().optional()),
  /** Defaults to the Settings' label maturity (metrics.labelMaturityDays). */
  maturityDays: single(z.string().regex(/^\d{1,3}$/, { error: "expected whole days, 0–730" }).optional()),
  keepInconclusive: flag(false),
  keepUnreviewed: flag(false),
  includeBelowTheLine: flag(true),
  format: single(exportFormatSchema.optional()),
});
export type LabelExportParams = z.output<typeof labelExportParamsSchema>;

/** Params (with model versions already resolved to ids) → choices for labelExportChoicesSchema. */
export function choicesFromParams(params: LabelExportParams, resolved: { modelVersionIds: string[]; now: Date; defaultMaturityDays: number }): LabelExportChoicesInput {
  const asOf = params.asOf ?? resolved.now.toISOString();
  return {
    modelVersionIds: resolved.modelVersionIds,
    occurredFrom: params.from,
    occurredTo: params.to ?? asOf,
    asOf,
    maturityDays: params.maturityDays === undefined ? resolved.defaultMaturityDays : Number(params.maturityDays),
    keepInconclusive: params.keepInconclusive,
    keepUnreviewed: params.keepUnreviewed,
    includeBelowTheLine: params.includeBelowTheLine,
    format: params.format ?? "csv",
  };
}
