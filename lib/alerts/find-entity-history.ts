// The other alerts of the same entity (card token, account) over the last days, newest first, with
// their outcomes and labels: a card that was confirmed as fraud last week, or has a chargeback,
// stands out while the analyst looks at today's alert.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { AppError } from "@/lib/errors";
import type { AlertState, OutcomeValue } from "@/lib/outcomes/schemas";

export const ENTITY_HISTORY_DAYS = 90;

export interface FindEntityHistoryOptions {
  /** The alert whose entity is looked up; it is left out of the list. */
  alertId: string;
  now: Date;
  days?: number;
  limit?: number;
}

export interface EntityHistoryLabel {
  label: "fraud" | "genuine";
  source: "chargeback" | "customer_report" | "analyst";
  observedAt: Date;
}

export interface EntityHistoryAlert {
  id: string;
  externalId: string;
  occurredAt: Date;
  amountMinor: number;
  currency: string;
  channel: string;
  merchantCategoryCode: string;
  merchantCountry: string;
  state: AlertState;
  /** The first review's outcome, and the final one (they differ when a second review overturned it). */
  firstOutcome: OutcomeValue | null;
  finalOutcome: OutcomeValue | null;
  closedAt: Date | null;
  labels: EntityHistoryLabel[];
}

export interface EntityHistory {
  since: Date;
  days: number;
  alerts: EntityHistoryAlert[];
  /** More alerts exist in the window than were returned. */
  more: boolean;
  /** Over the whole window, not only the returned rows. */
  summary: { alerts: number; confirmedFraud: number; fraudLabels: number };
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

type Row = Omit<EntityHistoryAlert, "amountMinor" | "labels"> & { amountMinor: bigint; labels: { label: string; source: string; observedAt: string }[] | null };

export async function findEntityHistory(db: DbOrTx, options: FindEntityHistoryOptions): Promise<EntityHistory> {
  const days = options.days ?? ENTITY_HISTORY_DAYS;
  const limit = options.limit ?? 50;
  const since = new Date(options.now.getTime() - days * 86_400_000);
  if (!UUID.test(options.alertId)) throw new AppError("not_found", "There is no such alert.");
  const [self] = await db.$queryRaw<{ entityRef: string; portfolioKey: string }[]>`
    SELECT entity_ref AS "entityRef", portfolio_key AS "portfolioKey" FROM alerts WHERE id = ${options.alertId}::uuid`;
  if (!self) throw new AppError("not_found", "There is no such alert.");

  // alerts_entity_idx (entity_ref, occurred_at DESC): one range scan of the entity's recent alerts.
  const rows = await db.$queryRaw<Row[]>`
    SELECT a.id, a.external_id AS "externalId", a.occurred_at AS "occurredAt", a.amount_minor AS "amountMinor",
           a.currency, a.channel, a.merchant_category_code AS "merchantCategoryCode", a.merchant_country AS "merchantCountry",
           a.state, a.final_outcome AS "finalOutcome", a.closed_at AS "closedAt",
           (SELECT o.outcome FROM outcomes o WHERE o.alert_id = a.id AND o.review_round = 1) AS "firstOutcome",
           (SELECT json_agg(json_build_object('label', l.label, 'source', l.source, 'observedAt', l.observed_at) ORDER BY l.observed_at)
              FROM labels l WHERE l.alert_id = a.id) AS labels
      FROM alerts a
     WHERE a.entity_ref = ${self.entityRef} AND a.portfolio_key = ${self.portfolioKey}
       AND a.occurred_at >= ${since} AND a.id <> ${options.alertId}::uuid
     ORDER BY a.occurred_at DESC, a.id
     LIMIT ${limit + 1}`;
  const [summary] = await db.$queryRaw<{ alerts: number; confirmedFraud: number; fraudLabels: number }[]>`
    SELECT count(*)::int AS alerts,
           count(*) FILTER (WHERE a.final_outcome = 'confirmed_fraud')::int AS "confirmedFraud",
           count(*) FILTER (WHERE EXISTS (SELECT 1 FROM labels l WHERE l.alert_id = a.id AND l.label = 'fraud'))::int AS "fraudLabels"
      FROM alerts a
     WHERE a.entity_ref = ${self.entityRef} AND a.portfolio_key = ${self.portfolioKey}
       AND a.occurred_at >= ${since} AND a.id <> ${options.alertId}::uuid`;

  return {
    since,
    days,
    more: rows.length > limit,
    summary,
    alerts: rows.slice(0, limit).map((row) => ({
      ...row,
      amountMinor: Number(row.amountMinor),
      labels: (row.labels ?? []).map((label) => ({
        label: label.label as EntityHistoryLabel["label"],
        source: label.source as EntityHistoryLabel["source"],
        observedAt: new Date(label.observedAt),
      })),
    })),
  };
}
