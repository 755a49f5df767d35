// The export's one SQL query, read through a server-side cursor in batches so that a million rows
// never sit in memory at once, and written to a stream in the chosen format. The rules it
// implements (as of, maturity, override order) are written out in lib/exports/schemas.ts.
import "server-only";
import type { Writable } from "node:stream";
import type pg from "pg";
import Cursor from "pg-cursor";
import { createLabelExportWriter } from "@/lib/exports/label-export-writers";
import { LABEL_EXPORT_COLUMNS, maturityCutoff, type LabelExportChoices, type LabelExportColumn, type LabelExportRow } from "@/lib/exports/schemas";

/** Rows per cursor read: one round trip per batch, and the most a text format holds at once. */
export const DEFAULT_BATCH_SIZE = 5_000;

/** UTC, milliseconds, "Z": the same text as JavaScript's toISOString(), formatted by PostgreSQL. */
const iso = (expression: string) => `to_char(${expression} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;

const HAS_LABEL = "(r.ext_source IS NOT NULL OR r.outcome IN ('confirmed_fraud', 'legitimate'))";

// Each output column from the inner query `r`; the outer SELECT lists them in LABEL_EXPORT_COLUMNS
// order so that the row objects pg builds are already in the order of every format.
const OUTPUT: Record<LabelExportColumn, string> = {
  alert_id: "r.alert_id::text",
  external_id: "r.external_id",
  model_name: "r.model_name",
  model_version: "r.model_version",
  score: "r.score",
  probability: "r.probability",
  amount_minor: "r.amount_minor",
  currency: "r.currency",
  channel: "r.channel",
  merchant_category_code: "r.merchant_category_code",
  merchant_country: "r.merchant_country",
  occurred_at: iso("r.occurred_at"),
  closed_at: iso("r.closed_at"),
  label: `CASE WHEN r.ext_source IS NOT NULL THEN CASE r.ext_label WHEN 'fraud' THEN 1 ELSE 0 END
               WHEN r.outcome = 'confirmed_fraud' THEN 1 WHEN r.outcome = 'legitimate' THEN 0 END`,
  label_source: `CASE WHEN r.ext_source IS NOT NULL THEN r.ext_source WHEN r.outcome IN ('confirmed_fraud', 'legitimate') THEN 'analyst' END`,
  label_at: `CASE WHEN r.ext_source IS NOT NULL THEN ${iso("r.ext_observed_at")} WHEN ${HAS_LABEL} THEN ${iso("r.closed_at")} END`,
  label_received_at: `CASE WHEN r.ext_source IS NOT NULL THEN ${iso("r.ext_received_at")} WHEN ${HAS_LABEL} THEN ${iso("r.closed_at")} END`,
  overrides_outcome: "(r.ext_source IS NOT NULL AND r.outcome IS NOT NULL)",
  outcome: "r.outcome",
  second_review: "coalesce(r.second_review, false)",
  reviewer_id: "r.reviewer_id",
  below_the_line: "r.below_the_line",
  inclusion_probability: "r.inclusion_probability",
  weight: "CASE WHEN r.below_the_line THEN 1 / r.inclusion_probability ELSE 1::double precision END",
};

/** The export as one statement: $1 model version ids, $2 occurredFrom, $3 occurredTo, $4 asOf,
 * $5 maturity cut-off, $6 keepInconclusive, $7 keepUnreviewed, $8 includeBelowTheLine. */
export function labelExportQuery(choices: LabelExportChoices): { text: string; values: unknown[] } {
  const text = `
    SELECT ${LABEL_EXPORT_COLUMNS.map((column) => `${OUTPUT[column]} AS ${column}`).join(",\n           ")}
    FROM (
      SELECT a.id AS alert_id, a.external_id, mv.model_name, mv.version AS model_version, a.score,
             -- A probability from a calibration map fitted after asOf was not what the desk held then.
             CASE WHEN cm.fitted_at > $4 THEN NULL ELSE a.probability END AS probability,
             -- Exact as a double below 2^53 minor units, so pg hands JavaScript a number.
             a.amount_minor::double precision AS amount_minor,
             a.currency::text AS currency, a.channel, a.merchant_category_code::text AS merchant_category_code,
             a.merchant_country::text AS merchant_country, a.occurred_at,
             fo.outcome, fo.closed_at, fo.second_review, fo.reviewer_id,
             ext.label AS ext_label, ext.source AS ext_source, ext.observed_at AS ext_observed_at, ext.received_at AS ext_received_at,
             a.below_the_line, a.inclusion_probability
      FROM alerts a
      JOIN model_versions mv ON mv.id = a.model_version_id
      LEFT JOIN calibration_maps cm ON cm.id = a.calibration_map_id
      -- The analyst outcome as of asOf: round 2 if closed by then, else round 1 unless round 1 was
      -- still waiting for its second review at asOf (a round 2 exists now, or the alert waits for one).
      LEFT JOIN LATERAL (
        SELECT o.outcome, o.closed_at, o.review_round = 2 AS second_review, u.pseudonym AS reviewer_id
        FROM outcomes o
        JOIN users u ON u.id = o.reviewer_id
        WHERE o.alert_id = a.id AND o.closed_at <= $4
          AND (o.review_round = 2 OR NOT (a.state = 'second_review'
               OR EXISTS (SELECT 1 FROM outcomes later WHERE later.alert_id = a.id AND later.review_round = 2)))
        ORDER BY o.review_round DESC
        LIMIT 1
      ) fo ON true
      -- The external label known at asOf (received_at ≤ asOf); the latest observed wins.
      LEFT JOIN LATERAL (
        SELECT l.label, l.source, l.observed_at, l.received_at
        FROM labels l
        WHERE l.alert_id = a.id AND l.source IN ('chargeback', 'customer_report') AND l.received_at <= $4
        ORDER BY l.observed_at DESC, l.received_at DESC, l.source, l.id DESC
        LIMIT 1
      ) ext ON true
      WHERE a.model_version_id = ANY($1::uuid[])
        AND a.occurred_at >= $2 AND a.occurred_at < $3
        AND a.occurred_at <= $5
        AND a.received_at <= $4
        AND ($8 OR NOT a.below_the_line)
    ) r
    WHERE ${HAS_LABEL}
       OR ($6 AND r.outcome = 'inconclusive')
       OR ($7 AND r.outcome IS NULL)
    ORDER BY r.occurred_at, r.alert_id`;
  return {
    text,
    values: [
      choices.modelVersionIds,
      choices.occurredFrom,
      choices.occurredTo,
      choices.asOf,
      maturityCutoff(choices),
      choices.keepInconclusive,
      choices.keepUnreviewed,
      choices.includeBelowTheLine,
    ],
  };
}

/** How many rows the export will have (for progress; a separate snapshot, so it may differ by a few
 * rows from the export itself if outcomes are being recorded at the same moment). */
export async function countLabelExportRows(pool: pg.Pool, options: { choices: LabelExportChoices }): Promise<number> {
  const { text, values } = labelExportQuery(options.choices);
  const result = await pool.query<{ n: string }>(`SELECT count(*) AS n FROM (${text}) export_rows`, values);
  return Number(result.rows[0].n);
}

/** The export's rows in batches, read with a cursor on one pooled connection (one snapshot). */
export async function* streamLabelExportRows(pool: pg.Pool, options: { choices: LabelExportChoices; batchSize?: number }): AsyncGenerator<LabelExportRow[]> {
  const { text, values } = labelExportQuery(options.choices);
  const client = await pool.connect();
  const cursor = client.query(new Cursor<LabelExportRow>(text, values));
  let failed = false;
  try {
    for (;;) {
      const rows = await cursor.read(options.batchSize ?? DEFAULT_BATCH_SIZE);
      if (rows.length === 0) return;
      yield rows;
    }
  } catch (error) {
    failed = true;
    throw error;
  } finally {
    await cursor.close().catch(() => undefined);
    // A connection whose query failed mid-stream is dropped rather than handed to the next caller.
    client.release(failed);
  }
}

export interface WriteLabelExportOptions {
  choices: LabelExportChoices;
  sink: Writable;
  batchSize?: number;
  rowGroupRows?: number;
  /** Footer metadata of a Parquet file. */
  metadata?: Record<string, string>;
  /** Called after each batch with the rows written so far. */
  onProgress?: (rowsWritten: number) => void | Promise<void>;
}

/** Streams the whole export into `sink` (which it does not end) and returns the row count. */
export async function writeLabelExport(pool: pg.Pool, options: WriteLabelExportOptions): Promise<{ rowCount: number }> {
  const writer = createLabelExportWriter(options.choices.format, options.sink, { metadata: options.metadata, rowGroupRows: options.rowGroupRows });
  let rowCount = 0;
  for await (const rows of streamLabelExportRows(pool, { choices: options.choices, batchSize: options.batchSize })) {
    await writer.write(rows);
    rowCount += rows.length;
    await options.onProgress?.(rowCount);
  }
  await writer.finish();
  return { rowCount };
}
