// The ground truth of an alert, as SQL pieces every feedback query shares, so the definition lives once:
//
//   the latest `chargeback` or `customer_report` label of the alert, when there is one
//   (fraud → 1, genuine → 0); otherwise the final analyst outcome (confirmed_fraud → 1,
//   legitimate → 0); otherwise unknown (NULL): open alerts, and inconclusive outcomes without a label.
//
// `analyst` labels are made inside the app from outcomes, so they add nothing here. "Latest" is by
// observed_at, then by arrival, so a corrected report replaces the first one.
import { Prisma } from "@/lib/generated/prisma/client";

/**
 * SELECT of (alert_id, label): the latest external label of each alert whose id `alertIds` (a
 * subquery) yields. labels_external_latest_idx serves both a hash semi-join and per-alert probes.
 */
export function latestExternalLabels(alertIds: Prisma.Sql): Prisma.Sql {
  return Prisma.sql`SELECT DISTINCT ON (lbl.alert_id) lbl.alert_id, lbl.label
      FROM labels lbl
     WHERE lbl.source IN ('chargeback', 'customer_report') AND lbl.alert_id IS NOT NULL AND lbl.alert_id IN (${alertIds})
     ORDER BY lbl.alert_id, lbl.observed_at DESC, lbl.received_at DESC, lbl.id DESC`;
}

/** 1, 0 or NULL: the ground truth from an alert's final outcome and its latest external label. */
export function groundTruthExpression(finalOutcome: Prisma.Sql, externalLabel: Prisma.Sql): Prisma.Sql {
  return Prisma.sql`(CASE WHEN ${externalLabel} = 'fraud' THEN 1
              WHEN ${externalLabel} = 'genuine' THEN 0
              WHEN ${finalOutcome} = 'confirmed_fraud' THEN 1
              WHEN ${finalOutcome} = 'legitimate' THEN 0 END)`;
}
