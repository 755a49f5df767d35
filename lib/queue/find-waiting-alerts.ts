// The waiting alerts of the Queue screen: the order "take next" hands them out (QUEUE_ORDER_BY), narrowed
// by the screen's filters (model version, channel, amount range, overdue only), one page at a time,
// with the number that match. The filters live in the URL, so this module also parses them.
import { z } from "zod";
import { Prisma } from "@/lib/generated/prisma/client";
import type { DbOrTx } from "@/lib/db/client";
import { markOverdueAlerts } from "@/lib/queue/mark-overdue-alerts";
import { QUEUE_ORDER_BY, type WaitingAlertRow } from "@/lib/queue/list-waiting-alerts";

export const QUEUE_PAGE_SIZE = 50;

const blankToUndefined = (value: unknown) => (typeof value === "string" && value.trim() === "" ? undefined : Array.isArray(value) ? value[0] : value);
// Amounts are typed in major units (120.50); alerts store minor units. Two decimals, as in EUR, GBP
// and USD: a portfolio in a currency with other minor units would need the currency in the filter.
const majorAmount = z.preprocess(
  blankToUndefined,
  z
    .string()
    .trim()
    .regex(/^\d{1,12}([.,]\d{1,2})?$/, { error: "an amount such as 120 or 120.50" })
    .transform((value) => Math.round(Number(value.replace(",", ".")) * 100))
    .optional(),
);

/** The Queue screen's URL: ?model=<uuid>&channel=atm&min=100&max=2500.50&overdue=1&page=2 */
export const waitingAlertFilterSchema = z
  .object({
    model: z.preprocess(blankToUndefined, z.string().uuid({ error: "not a model version" }).optional()),
    channel: z.preprocess(blankToUndefined, z.string().regex(/^[a-z][a-z0-9_]{0,39}$/, { error: "not a channel" }).optional()),
    min: majorAmount,
    max: majorAmount,
    overdue: z.preprocess((value) => blankToUndefined(value) === "1" || blankToUndefined(value) === "on", z.boolean()),
    page: z.preprocess(blankToUndefined, z.coerce.number().int().min(1).max(10_000).default(1)),
  })
  .refine((filter) => filter.min === undefined || filter.max === undefined || filter.min <= filter.max, {
    path: ["max"],
    error: "the largest amount must not be below the smallest",
  });

export interface WaitingAlertFilter {
  modelVersionId?: string;
  channel?: string;
  amountMinMinor?: number;
  amountMaxMinor?: number;
  overdueOnly?: boolean;
}

export interface FindWaitingAlertsOptions {
  now: Date;
  filter?: WaitingAlertFilter;
  limit?: number;
  offset?: number;
}

/**
 * Matching alerts are counted up to this many, walking the queue's own index in queue order. An
 * exact count of a large queue reads every waiting alert that matches (300 ms with 200,000 waiting,
 * `npm run bench -- --scale 1000000`); past a thousand the screen says "1,000 or more", which is all
 * a page of fifty needs to know.
 */
export const WAITING_COUNT_CAP = 1_000;

export interface WaitingAlertPage {
  alerts: WaitingAlertRow[];
  /** Waiting alerts that match the filter, over all pages, counted up to WAITING_COUNT_CAP. */
  total: number;
  /** There are more than `total`: the count stopped at WAITING_COUNT_CAP. */
  totalIsCapped: boolean;
}

type RawRow = Omit<WaitingAlertRow, "amountMinor" | "exposureMinor" | "expectedLossMinor"> & {
  amountMinor: bigint;
  exposureMinor: bigint | null;
  expectedLossMinor: bigint | null;
};

export async function findWaitingAlerts(db: DbOrTx, options: FindWaitingAlertsOptions): Promise<WaitingAlertPage> {
  const { now, filter = {} } = options;
  // Marking first makes the listed order the order take-next would hand out at `now`.
  await markOverdueAlerts(db, { now });
  const conditions: Prisma.Sql[] = [Prisma.sql`a.state = 'waiting'`];
  if (filter.modelVersionId) conditions.push(Prisma.sql`a.model_version_id = ${filter.modelVersionId}::uuid`);
  if (filter.channel) conditions.push(Prisma.sql`a.channel = ${filter.channel}`);
  if (filter.amountMinMinor !== undefined) conditions.push(Prisma.sql`a.amount_minor >= ${filter.amountMinMinor}`);
  if (filter.amountMaxMinor !== undefined) conditions.push(Prisma.sql`a.amount_minor <= ${filter.amountMaxMinor}`);
  if (filter.overdueOnly) conditions.push(Prisma.sql`a.past_due`);
  const where = Prisma.join(conditions, " AND ");

  const [rows, [{ total }]] = await Promise.all([
    db.$queryRaw<RawRow[]>`
      SELECT a.id, a.external_id AS "externalId", a.received_at AS "receivedAt", a.occurred_at AS "occurredAt",
             a.amount_minor AS "amountMinor", a.currency, a.channel, a.model_version_id AS "modelVersionId",
             m.model_name AS "modelName", m.version AS "modelVersion",
             a.score, a.probability, a.calibrated, a.probability_source AS "probabilitySource",
             a.exposure_minor AS "exposureMinor", a.expected_loss_minor AS "expectedLossMinor", a.priority,
             a.due_at AS "dueAt", coalesce(a.due_at <= ${now}, false) AS overdue
        FROM alerts a JOIN model_versions m ON m.id = a.model_version_id
       WHERE ${where}
       ORDER BY ${QUEUE_ORDER_BY}
       LIMIT ${options.limit ?? QUEUE_PAGE_SIZE} OFFSET ${options.offset ?? 0}`,
    db.$queryRaw<{ total: number }[]>`
      SELECT count(*)::int AS total
        FROM (SELECT 1 FROM alerts a WHERE ${where} ORDER BY ${QUEUE_ORDER_BY} LIMIT ${WAITING_COUNT_CAP + 1}) AS matching`,
  ]);
  return {
    total: Math.min(total, WAITING_COUNT_CAP),
    totalIsCapped: total > WAITING_COUNT_CAP,
    alerts: rows.map((row) => ({
      ...row,
      amountMinor: Number(row.amountMinor),
      exposureMinor: row.exposureMinor === null ? null : Number(row.exposureMinor),
      expectedLossMinor: row.expectedLossMinor === null ? null : Number(row.expectedLossMinor),
    })),
  };
}
