// The export's one SQL query, read through a server-side cursor in batches so that a million rows
// never sit in memory at once, and written to a stream in the chosen format. The rules it
// implements (as of, maturity, override order) are written out in lib/exports/schemas.ts.
import "server-only";
import type { Writable } from "node:stream";
import pg from "pg";
import Cursor from "pg-cursor";
import { createLabelExportWriter } from "@/lib/exports/label-export-writers";
import { LABEL_EXPORT_COLUMNS, maturityCutoff, type LabelExportChoices, type LabelExportColumn, type LabelExportRow } from "@/lib/exports/schemas";

/**
 * Rows per cursor read: one round trip per batch, and the most a text format holds at once. With the
 * export read in two parts (below), PostgreSQL's work is ahead of Node's and a round trip costs
 * little, so small batches lose no time and leave less garbage to outlive a collection. Measured on a
 * 1,000,000-row CSV export (kept npm run bench database, two runs each, peak RSS of the export's
 * process): 2,500 → 15–20 s, 292–338 MiB; 1,000 → 17 s, 267–297 MiB; 500 → 16–22 s, 243–252 MiB;
 * 250 → 18–19 s, 230–231 MiB. (As one cursor, before: 5,000 → 21–23 s, 335–343 MiB; 2,500 → 21–24 s,
 * 262–276 MiB.)
 */
export const DEFAULT_BATCH_SIZE = 500;

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
  closed_at: "r.closed_at_text",
  label: `CASE WHEN r.ext_source IS NOT NULL THEN CASE r.ext_label WHEN 'fraud' THEN 1 ELSE 0 END
               WHEN r.outcome = 'confirmed_fraud' THEN 1 WHEN r.outcome = 'legitimate' THEN 0 END`,
  label_source: `CASE WHEN r.ext_source IS NOT NULL THEN r.ext_source WHEN r.outcome IN ('confirmed_fraud', 'legitimate') THEN 'analyst' END`,
  label_at: `CASE WHEN r.ext_source IS NOT NULL THEN ${iso("r.ext_observed_at")} WHEN ${HAS_LABEL} THEN r.closed_at_text END`,
  label_received_at: `CASE WHEN r.ext_source IS NOT NULL THEN ${iso("r.ext_received_at")} WHEN ${HAS_LABEL} THEN r.closed_at_text END`,
  overrides_outcome: "(r.ext_source IS NOT NULL AND r.outcome IS NOT NULL)",
  outcome: "r.outcome",
  second_review: "r.second_review",
  reviewer_id: "r.reviewer_id",
  below_the_line: "r.below_the_line",
  inclusion_probability: "r.inclusion_probability",
  weight: "CASE WHEN r.below_the_line THEN 1 / r.inclusion_probability ELSE 1::double precision END",
};

// The selection of alerts: the rows' own, and the progress count's.
const SELECTED_ALERTS = (alias: string) => `
        ${alias}.model_version_id = ANY($1::uuid[])
        AND ${alias}.occurred_at >= $2 AND ${alias}.occurred_at < $3
        AND ${alias}.occurred_at <= $5
        AND ${alias}.received_at <= $4
        AND ($8 OR NOT ${alias}.below_the_line)`;

/**
 * The export as one statement: $1 model version ids, $2 occurredFrom, $3 occurredTo, $4 asOf,
 * $5 maturity cut-off, $6 keepInconclusive, $7 keepUnreviewed, $8 includeBelowTheLine.
 *
 * Written with plain joins (outcomes are unique per alert and round) and one DISTINCT ON for the
 * latest external label, so that PostgreSQL can choose hash joins for a million-row export and
 * index lookups for a small one; LATERAL … LIMIT 1 subqueries would force a lookup per alert.
 */
export function labelExportQuery(choices: LabelExportChoices): { text: string; countText: string; values: unknown[] } {
  const unordered = `
    SELECT ${LABEL_EXPORT_COLUMNS.map((column) => `${OUTPUT[column]} AS ${column}`).join(",\n           ")}
    FROM (
      SELECT j.*,
             CASE j.final_round WHEN 2 THEN j.o2_outcome WHEN 1 THEN j.o1_outcome END AS outcome,
             CASE j.final_round WHEN 2 THEN j.o2_closed_at WHEN 1 THEN j.o1_closed_at END AS closed_at,
             ${iso("CASE j.final_round WHEN 2 THEN j.o2_closed_at WHEN 1 THEN j.o1_closed_at END")} AS closed_at_text,
             coalesce(j.final_round = 2, false) AS second_review,
             CASE j.final_round WHEN 2 THEN j.o2_reviewer WHEN 1 THEN j.o1_reviewer END AS reviewer_id
      FROM (
        SELECT a.id AS alert_id, a.external_id, mv.model_name, mv.version AS model_version, a.score,
               -- A probability from a calibration map fitted after asOf was not what the desk held then.
               CASE WHEN cm.fitted_at > $4 THEN NULL ELSE a.probability END AS probability,
               -- Exact as a double below 2^53 minor units, so pg hands JavaScript a number.
               a.amount_minor::double precision AS amount_minor,
               a.currency::text AS currency, a.channel, a.merchant_category_code::text AS merchant_category_code,
               a.merchant_country::text AS merchant_country, a.occurred_at,
               -- The analyst outcome as of asOf: round 2 if closed by then; else round 1 if closed by
               -- then and not waiting for a second review at asOf (a round 2 exists, closed later, or
               -- the alert still waits for one).
               CASE WHEN o2.closed_at <= $4 THEN 2
                    WHEN o1.closed_at <= $4 AND o2.id IS NULL AND a.state <> 'second_review' THEN 1 END AS final_round,
               o1.outcome AS o1_outcome, o1.closed_at AS o1_closed_at, u1.pseudonym AS o1_reviewer,
               o2.outcome AS o2_outcome, o2.closed_at AS o2_closed_at, u2.pseudonym AS o2_reviewer,
               ext.label AS ext_label, ext.source AS ext_source, ext.observed_at AS ext_observed_at, ext.received_at AS ext_received_at,
               a.below_the_line, a.inclusion_probability
        FROM alerts a
        JOIN model_versions mv ON mv.id = a.model_version_id
        LEFT JOIN calibration_maps cm ON cm.id = a.calibration_map_id
        LEFT JOIN outcomes o1 ON o1.alert_id = a.id AND o1.review_round = 1
        LEFT JOIN users u1 ON u1.id = o1.reviewer_id
        LEFT JOIN outcomes o2 ON o2.alert_id = a.id AND o2.review_round = 2
        LEFT JOIN users u2 ON u2.id = o2.reviewer_id
        -- The external label known at asOf (received_at ≤ asOf); the latest observed wins. Every
        -- such label is read, not only the selected alerts' (the join keeps those): limiting them
        -- by a semi-join with the selection cost a second scan of the alerts and a sort of their
        -- ids (about a second at 1,000,000 rows, and once per worker in a parallel plan), where
        -- the labels, a few in a hundred alerts, take a fraction of that even for a small export.
        LEFT JOIN (
          SELECT DISTINCT ON (l.alert_id) l.alert_id, l.label, l.source, l.observed_at, l.received_at
          FROM labels l
          WHERE l.source IN ('chargeback', 'customer_report') AND l.received_at <= $4 AND l.alert_id IS NOT NULL
          ORDER BY l.alert_id, l.observed_at DESC, l.received_at DESC, l.source, l.id DESC
        ) ext ON ext.alert_id = a.id
        WHERE ${SELECTED_ALERTS("a")}
      ) j
      -- A fence: without it PostgreSQL folds r into the outer SELECT and formats closed_at_text once
      -- for each of the three columns that show it (closed_at, and label_at and label_received_at of
      -- an analyst label): 1.6 million to_char calls more in a 1,000,000-row export.
      OFFSET 0
    ) r
    WHERE ${HAS_LABEL}
       OR ($6 AND r.outcome = 'inconclusive')
       OR ($7 AND r.outcome IS NULL)`;
  return {
    text: `${unordered}
    ORDER BY r.occurred_at, r.alert_id`,
    countText: labelExportCountQuery(choices, unordered),
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

/**
 * The count for the progress bar. It needs neither the order nor the output columns: without the
 * ORDER BY, PostgreSQL skips sorting a million rows it would only count. When inconclusive and
 * unreviewed alerts are both kept, every selected alert is a row (the joins neither add rows —
 * outcomes are unique per alert and round, one latest label per alert — nor, being outer joins,
 * remove any), so the count is that of the selected alerts, without the joins. $6 and $7 stay in
 * the text so that the same values array fits.
 */
function labelExportCountQuery(choices: LabelExportChoices, unordered: string): string {
  if (choices.keepInconclusive && choices.keepUnreviewed) {
    return `SELECT count(*) AS n FROM alerts a WHERE ${SELECTED_ALERTS("a")} AND $6::boolean AND $7::boolean`;
  }
  return `SELECT count(*) AS n FROM (${unordered}) export_rows`;
}

export interface StreamLabelExportOptions {
  choices: LabelExportChoices;
  batchSize?: number;
  /** Called once, before the first batch, with the number of rows the export will have. */
  onCount?: (rowCount: number) => void | Promise<void>;
  /** Read in two parts from this many rows (TWO_PARTS_FROM_ROWS); only when the count is asked for. */
  twoPartsFromRows?: number;
}

/**
 * From this many rows an export is read as two parts, earlier and later occurred_at, each a cursor on
 * a connection of its own: PostgreSQL does most of a cursor's work before its first row (the joins
 * and the final sort, 8 s of one core at 1,000,000 rows, and a cursor gets no parallel workers), so
 * the later part is computed on the other core while Node writes out the earlier one.
 */
export const TWO_PARTS_FROM_ROWS = 200_000;

/** The occurred_at ranges read one after the other: [from, middle) and [middle, to), or the whole. */
export function occurredParts(choices: Pick<LabelExportChoices, "occurredFrom" | "occurredTo" | "asOf" | "maturityDays">, parts: 1 | 2): { from: Date; to: Date }[] {
  const from = choices.occurredFrom;
  const to = choices.occurredTo;
  // Rows end at the maturity cut-off when it comes first: halve the time that can hold rows.
  const end = Math.min(to.getTime(), maturityCutoff(choices).getTime());
  if (parts === 1 || end - from.getTime() < 2) return [{ from, to }];
  const middle = new Date(from.getTime() + Math.floor((end - from.getTime()) / 2));
  return [{ from, to: middle }, { from: middle, to }];
}

/**
 * The export's rows in batches, read with cursors on pooled connections. The count and the rows come
 * from one snapshot (REPEATABLE READ; the second part's connection imports the first's snapshot with
 * SET TRANSACTION SNAPSHOT), so the count is exactly the number of rows that follow even while
 * outcomes are being recorded. Each part is in (occurred_at, alert_id) order and the parts follow each
 * other in time, so the whole is in that order.
 */
export async function* streamLabelExportRows(pool: pg.Pool, options: StreamLabelExportOptions): AsyncGenerator<LabelExportRow[]> {
  const { text, countText, values } = labelExportQuery(options.choices);
  const batchSize = options.batchSize ?? DEFAULT_BATCH_SIZE;
  const connections: { client: pg.PoolClient; open: boolean }[] = [];
  const cursors: Cursor<LabelExportRow>[] = [];
  let broken = false;
  const begin = async (snapshot?: string) => {
    const connection = { client: await pool.connect(), open: false };
    connections.push(connection);
    await connection.client.query("BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY");
    connection.open = true;
    if (snapshot) await connection.client.query(`SET TRANSACTION SNAPSHOT ${pg.escapeLiteral(snapshot)}`);
    // The final sort of a large export (and its hash joins) stays in memory instead of spilling in
    // 4 MB runs (the default); the setting ends with this transaction.
    await connection.client.query("SET LOCAL work_mem = '64MB'");
    return connection.client;
  };
  try {
    const first = await begin();
    let rowCount: number | undefined;
    if (options.onCount) {
      const counted = await first.query<{ n: string }>(countText, values);
      rowCount = Number(counted.rows[0].n);
      await options.onCount(rowCount);
    }
    // Two parts take two connections at once: not from a pool that has only one.
    const twoParts = rowCount !== undefined && rowCount >= (options.twoPartsFromRows ?? TWO_PARTS_FROM_ROWS) && (pool.options.max ?? 10) >= 2;
    const parts = occurredParts(options.choices, twoParts ? 2 : 1);
    const clients = [first];
    if (parts.length > 1) {
      const { rows } = await first.query<{ snapshot: string }>("SELECT pg_export_snapshot() AS snapshot");
      clients.push(await begin(rows[0].snapshot));
    }
    // Every part's first read is asked for now, so that PostgreSQL computes the later part while the
    // earlier one is written out.
    const firstReads = parts.map((part, index) => {
      // The same statement; only the occurred_at range of its values differs.
      const partValues = labelExportQuery({ ...options.choices, occurredFrom: part.from, occurredTo: part.to }).values;
      const cursor = clients[index].query(new Cursor<LabelExportRow>(text, partValues));
      cursors.push(cursor);
      const read = cursor.read(batchSize);
      read.catch(() => undefined); // raised when its turn comes
      return read;
    });
    for (const [index, cursor] of cursors.entries()) {
      for (let rows = await firstReads[index]; rows.length > 0; rows = await cursor.read(batchSize)) yield rows;
    }
    for (const cursor of cursors.splice(0)) await cursor.close();
    for (const connection of connections) {
      await connection.client.query("COMMIT");
      connection.open = false;
    }
  } catch (error) {
    broken = true;
    throw error;
  } finally {
    // Also reached when the consumer stops early (an abandoned download): close and roll back.
    for (const cursor of cursors) await cursor.close().catch(() => undefined);
    for (const connection of connections) {
      if (connection.open) await connection.client.query("ROLLBACK").catch(() => (broken = true));
      // A connection whose query failed mid-stream is dropped rather than handed to the next caller.
      connection.client.release(broken);
    }
  }
}

export interface WriteLabelExportOptions {
  choices: LabelExportChoices;
  sink: Writable;
  batchSize?: number;
  rowGroupRows?: number;
  /** Footer metadata of a Parquet file. */
  metadata?: Record<string, string>;
  /** Called once before the first batch with the number of rows to come. */
  onCount?: (rowCount: number) => void | Promise<void>;
  /** Called after each batch with the rows written so far. */
  onProgress?: (rowsWritten: number) => void | Promise<void>;
}

/** Streams the whole export into `sink` (which it does not end) and returns the row count. */
export async function writeLabelExport(pool: pg.Pool, options: WriteLabelExportOptions): Promise<{ rowCount: number }> {
  const writer = createLabelExportWriter(options.choices.format, options.sink, { metadata: options.metadata, rowGroupRows: options.rowGroupRows });
  let rowCount = 0;
  for await (const rows of streamLabelExportRows(pool, { choices: options.choices, batchSize: options.batchSize, onCount: options.onCount })) {
    await writer.write(rows);
    rowCount += rows.length;
    await options.onProgress?.(rowCount);
  }
  await writer.finish();
  return { rowCount };
}
