// Keeps the daily summaries of the feedback dashboards fresh (prisma/migrations/20261202100000_daily_summaries).
//
// Writers only append marks (triggers on alerts, labels and outcomes). Before a dashboard adds up a
// span of days, it calls one of these: under a lock, so that two viewers do not compute the same day
// twice, it takes the marks of the span, adds the days of the span that have no summary yet (or one
// computed for another k), and recomputes exactly those days from the rows, set-based, in one
// statement. The marks are deleted by an earlier statement than the one that reads the rows, so a
// change whose mark was taken is always seen; a change that commits later leaves its mark for the
// next view.
//
// The row-level definitions live here once: what a day of a model version counts, what a day of a
// reviewer counts. The readers (get-model-version-metrics.ts, get-reviewer-metrics.ts) only add up.
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { inTransaction } from "@/lib/db/in-transaction";
import { Prisma } from "@/lib/generated/prisma/client";
import { CALIBRATION_BINS, calibrationInnerEdges } from "@/lib/feedback/calibration-bins";
import { groundTruthExpression, latestExternalLabels } from "@/lib/feedback/ground-truth-sql";

/**
 * A first view of a long window computes every day of it (a year of a busy model version is a
 * second or more); later views recompute only the marked days.
 */
const REFRESH_TRANSACTION = { maxWait: 30_000, timeout: 300_000 };

/** Advisory lock class of the summary refresh (the queue's is 4_207_001, calibration's 4_207_002). */
const SUMMARY_LOCK_CLASS = 4_207_003;
const MODEL_VERSION_DAYS_KEY = 1;
const REVIEWER_DAYS_KEY = 2;

/**
 * The sample key of an alert: 20 bits of a hash of its id. The ranking measures and drift keep an
 * alert when key < 2^20 · cap / total (get-model-version-metrics.ts), the same alerts on every call.
 */
export const SAMPLE_KEY_SQL = (id: Prisma.Sql) => Prisma.sql`(hashtextextended(${id}::text, 0) & 1048575)::int`;

/** The order of outcomes in a reviewer day's agreement_pairs (row-major: first review × second review). */
export const OUTCOME_ORDER = ["confirmed_fraud", "legitimate", "inconclusive"] as const;

export interface DaySpan {
  /** UTC midnight of the first day. */
  from: Date;
  /** UTC midnight after the last day. */
  to: Date;
}

function dayText(date: Date): string {
  return date.toISOString().slice(0, 10);
}

/**
 * Recomputes the marked, missing and stale (other k) days of `span` for these model versions.
 * Returns how many (model version, day) pairs were recomputed.
 */
export async function refreshModelVersionDays(db: DbOrTx, options: { modelVersionIds: string[]; span: DaySpan; k: number }): Promise<number> {
  const { modelVersionIds: ids, span, k } = options;
  if (ids.length === 0) return 0;
  const from = dayText(span.from);
  const to = dayText(span.to);
  return inTransaction(db, async (tx) => {
    await tx.$executeRaw`SELECT pg_advisory_xact_lock(${SUMMARY_LOCK_CLASS}::int, ${MODEL_VERSION_DAYS_KEY}::int)`;
    // Marks of the span are taken; marks of days that have no summary at all are dropped too (such a
    // day is computed whole when it is first viewed), so marks of days nobody views do not pile up.
    const stale = await tx.$queryRaw<{ mv: string; day: string }[]>`
      WITH taken AS (
        DELETE FROM model_version_day_marks m
         WHERE m.model_version_id = ANY(${ids}::uuid[])
           AND ((m.day >= ${from}::date AND m.day < ${to}::date)
                OR NOT EXISTS (SELECT 1 FROM model_version_daily_summaries s WHERE s.model_version_id = m.model_version_id AND s.day = m.day))
        RETURNING m.model_version_id, m.day
      )
      SELECT DISTINCT x.mv::text AS mv, x.day::text AS day FROM (
        SELECT t.model_version_id AS mv, t.day FROM taken t WHERE t.day >= ${from}::date AND t.day < ${to}::date
        UNION ALL
        SELECT m.mv, d.day::date
          FROM unnest(${ids}::uuid[]) AS m(mv)
         CROSS JOIN generate_series(${from}::date, ${to}::date - 1, interval '1 day') AS d(day)
         WHERE NOT EXISTS (SELECT 1 FROM model_version_daily_summaries s
                            WHERE s.model_version_id = m.mv AND s.day = d.day::date AND NOT s.below_the_line AND s.top_k = ${k})
      ) x`;
    if (stale.length === 0) return 0;
    await tx.$executeRaw(recomputeModelVersionDaysSql(stale.map((row) => row.mv), stale.map((row) => row.day), k));
    return stale.length;
  }, REFRESH_TRANSACTION);
}

function recomputeModelVersionDaysSql(versions: string[], days: string[], k: number): Prisma.Sql {
  const truth = groundTruthExpression(Prisma.sql`a.final_outcome`, Prisma.sql`ext.label`);
  const topTruth = groundTruthExpression(Prisma.sql`top.final_outcome`, Prisma.sql`ext.label`);
  // width_bucket counts the thresholds ≤ its operand; on negated edges that is the count of edges ≥ p,
  // so (bins − 1) minus it is the count of edges < p: the (lower, upper] bin lib/metrics uses.
  const negatedEdges = calibrationInnerEdges().map((edge) => -edge).reverse();
  return Prisma.sql`
    WITH days AS (SELECT * FROM unnest(${versions}::uuid[], ${days}::date[]) AS d(mv, day)),
    -- Per day a range read of alerts_model_version_received_idx. OFFSET 0 keeps the subquery per day:
    -- flattened into a join, the planner read all 1,000,000 alerts to meet three days (1.3 s).
    a AS MATERIALIZED (
      SELECT a.id, a.model_version_id, d.day, a.below_the_line, a.inclusion_probability, a.state, a.final_outcome,
             a.probability, a.calibrated, a.score
        FROM days d
       CROSS JOIN LATERAL (
         SELECT x.* FROM alerts x
          WHERE x.model_version_id = d.mv
            AND x.received_at >= (d.day::timestamp AT TIME ZONE 'UTC')
            AND x.received_at < ((d.day + 1)::timestamp AT TIME ZONE 'UTC')
         OFFSET 0) a
    ),
    ext AS (${latestExternalLabels(Prisma.sql`SELECT id FROM a`)}),
    t AS MATERIALIZED (
      SELECT a.id, a.model_version_id AS mv, a.day, a.below_the_line AS btl, a.inclusion_probability AS pi,
             a.state = 'closed' AS closed, a.final_outcome, a.probability AS p, a.calibrated, a.score,
             ext.label, ${truth} AS y
        FROM a
        LEFT JOIN ext ON ext.alert_id = a.id
    ),
    sums AS (
      SELECT mv, day, btl,
             count(*) AS received,
             count(*) FILTER (WHERE closed) AS closed,
             count(*) FILTER (WHERE final_outcome = 'confirmed_fraud') AS mix_fraud,
             count(*) FILTER (WHERE final_outcome = 'legitimate') AS mix_legitimate,
             count(*) FILTER (WHERE final_outcome = 'inconclusive') AS mix_inconclusive,
             count(*) FILTER (WHERE closed AND y = 1) AS truth_fraud,
             count(*) FILTER (WHERE closed AND y = 0) AS truth_legitimate,
             count(*) FILTER (WHERE closed AND y IS NULL) AS truth_unknown,
             count(*) FILTER (WHERE closed AND ((label = 'fraud' AND final_outcome = 'legitimate')
                                             OR (label = 'genuine' AND final_outcome = 'confirmed_fraud'))) AS overturned,
             count(*) FILTER (WHERE closed AND y IS NOT NULL AND p IS NOT NULL) AS calibration_alerts,
             count(*) FILTER (WHERE closed AND y IS NOT NULL AND p IS NOT NULL AND calibrated) AS calibrated_alerts,
             sum((p - y) ^ 2) FILTER (WHERE closed AND y IS NOT NULL) AS brier_sum,
             sum(1 / pi) AS weight_all,
             sum(1 / pi) FILTER (WHERE closed AND y IS NOT NULL) AS weight_resolved,
             sum(1 / pi) FILTER (WHERE closed AND y = 1) AS weight_fraud
        FROM t GROUP BY mv, day, btl
    ),
    bin_sums AS (
      SELECT mv, day, ${CALIBRATION_BINS - 1} - width_bucket(-p, ${negatedEdges}::float8[]) AS bin,
             count(*) AS n, sum(p) AS sum_p, sum(y) AS sum_y
        FROM t WHERE NOT btl AND closed AND p IS NOT NULL AND y IS NOT NULL GROUP BY 1, 2, 3
    ),
    bins AS (
      SELECT d.mv, d.day,
             array_agg(coalesce(b.n, 0)::int ORDER BY g.bin) AS counts,
             array_agg(coalesce(b.sum_p, 0)::float8 ORDER BY g.bin) AS sum_p,
             array_agg(coalesce(b.sum_y, 0)::float8 ORDER BY g.bin) AS sum_y
        FROM days d
       CROSS JOIN generate_series(0, ${CALIBRATION_BINS - 1}) AS g(bin)
        LEFT JOIN bin_sums b ON b.mv = d.mv AND b.day = d.day AND b.bin = g.bin
       GROUP BY d.mv, d.day
    ),
    -- Each day's scores in sample-key order (see the migration), all alerted ones and the labelled ones.
    score_lists AS (
      SELECT mv, day,
             array_agg(score ORDER BY key, id) AS scores,
             array_agg(key ORDER BY key, id) AS sample_keys,
             coalesce(array_agg(score ORDER BY key, id) FILTER (WHERE closed AND y IS NOT NULL), '{}') AS labelled_scores,
             coalesce(array_agg(key ORDER BY key, id) FILTER (WHERE closed AND y IS NOT NULL), '{}') AS labelled_keys,
             coalesce(array_agg(y::smallint ORDER BY key, id) FILTER (WHERE closed AND y IS NOT NULL), '{}') AS labelled_truths
        FROM (SELECT t.*, ${SAMPLE_KEY_SQL(Prisma.sql`t.id`)} AS key FROM t WHERE NOT t.btl) keyed
       GROUP BY mv, day
    ),
    -- The k highest-priority alerts of each version and day, read from alerts_daily_priority_idx in
    -- the queue's order, k entries per (version, day).
    top_k AS (
      SELECT d.mv, d.day, count(top.id) AS considered,
             count(*) FILTER (WHERE ${topTruth} = 1) AS fraud, count(${topTruth}) AS resolved
        FROM days d
       CROSS JOIN LATERAL (
         SELECT x.id, x.final_outcome FROM alerts x
          WHERE x.model_version_id = d.mv AND (x.received_at AT TIME ZONE 'UTC')::date = d.day AND NOT x.below_the_line
          ORDER BY x.priority DESC NULLS LAST, x.received_at, x.id
          LIMIT ${k}) top
        LEFT JOIN ext ON ext.alert_id = top.id
       GROUP BY d.mv, d.day
    )
    INSERT INTO model_version_daily_summaries AS s (
      model_version_id, day, below_the_line, received, closed, mix_fraud, mix_legitimate, mix_inconclusive,
      truth_fraud, truth_legitimate, truth_unknown, overturned, calibration_alerts, calibrated_alerts,
      brier_sum, weight_all, weight_resolved, weight_fraud, bin_counts, bin_sum_p, bin_sum_y,
      top_k, top_considered, top_resolved, top_fraud, scores, sample_keys, labelled_scores, labelled_keys,
      labelled_truths, computed_at)
    SELECT d.mv, d.day, side.btl,
           coalesce(u.received, 0), coalesce(u.closed, 0), coalesce(u.mix_fraud, 0), coalesce(u.mix_legitimate, 0),
           coalesce(u.mix_inconclusive, 0), coalesce(u.truth_fraud, 0), coalesce(u.truth_legitimate, 0),
           coalesce(u.truth_unknown, 0), coalesce(u.overturned, 0), coalesce(u.calibration_alerts, 0),
           coalesce(u.calibrated_alerts, 0), u.brier_sum, u.weight_all, u.weight_resolved, u.weight_fraud,
           CASE WHEN side.btl THEN '{}' ELSE b.counts END, CASE WHEN side.btl THEN '{}' ELSE b.sum_p END,
           CASE WHEN side.btl THEN '{}' ELSE b.sum_y END,
           ${k}, CASE WHEN side.btl THEN 0 ELSE coalesce(tk.considered, 0) END,
           CASE WHEN side.btl THEN 0 ELSE coalesce(tk.resolved, 0) END, CASE WHEN side.btl THEN 0 ELSE coalesce(tk.fraud, 0) END,
           CASE WHEN side.btl THEN '{}' ELSE coalesce(l.scores, '{}') END,
           CASE WHEN side.btl THEN '{}' ELSE coalesce(l.sample_keys, '{}') END,
           CASE WHEN side.btl THEN '{}' ELSE coalesce(l.labelled_scores, '{}') END,
           CASE WHEN side.btl THEN '{}' ELSE coalesce(l.labelled_keys, '{}') END,
           CASE WHEN side.btl THEN '{}' ELSE coalesce(l.labelled_truths, '{}') END,
           now()
      FROM days d
     CROSS JOIN (VALUES (false), (true)) AS side(btl)
      LEFT JOIN sums u ON u.mv = d.mv AND u.day = d.day AND u.btl = side.btl
      LEFT JOIN bins b ON b.mv = d.mv AND b.day = d.day
      LEFT JOIN top_k tk ON tk.mv = d.mv AND tk.day = d.day
      LEFT JOIN score_lists l ON l.mv = d.mv AND l.day = d.day
    ON CONFLICT (model_version_id, day, below_the_line) DO UPDATE SET
      received = EXCLUDED.received, closed = EXCLUDED.closed, mix_fraud = EXCLUDED.mix_fraud,
      mix_legitimate = EXCLUDED.mix_legitimate, mix_inconclusive = EXCLUDED.mix_inconclusive,
      truth_fraud = EXCLUDED.truth_fraud, truth_legitimate = EXCLUDED.truth_legitimate, truth_unknown = EXCLUDED.truth_unknown,
      overturned = EXCLUDED.overturned, calibration_alerts = EXCLUDED.calibration_alerts, calibrated_alerts = EXCLUDED.calibrated_alerts,
      brier_sum = EXCLUDED.brier_sum, weight_all = EXCLUDED.weight_all, weight_resolved = EXCLUDED.weight_resolved,
      weight_fraud = EXCLUDED.weight_fraud, bin_counts = EXCLUDED.bin_counts, bin_sum_p = EXCLUDED.bin_sum_p,
      bin_sum_y = EXCLUDED.bin_sum_y, top_k = EXCLUDED.top_k, top_considered = EXCLUDED.top_considered,
      top_resolved = EXCLUDED.top_resolved, top_fraud = EXCLUDED.top_fraud, scores = EXCLUDED.scores,
      sample_keys = EXCLUDED.sample_keys, labelled_scores = EXCLUDED.labelled_scores, labelled_keys = EXCLUDED.labelled_keys,
      labelled_truths = EXCLUDED.labelled_truths, computed_at = EXCLUDED.computed_at`;
}

/** Recomputes the marked and missing days of `span` for every reviewer. Returns how many days were recomputed. */
export async function refreshReviewerDays(db: DbOrTx, options: { span: DaySpan }): Promise<number> {
  const from = dayText(options.span.from);
  const to = dayText(options.span.to);
  return inTransaction(db, async (tx) => {
    await tx.$executeRaw`SELECT pg_advisory_xact_lock(${SUMMARY_LOCK_CLASS}::int, ${REVIEWER_DAYS_KEY}::int)`;
    const stale = await tx.$queryRaw<{ day: string }[]>`
      WITH taken AS (
        DELETE FROM reviewer_day_marks m
         WHERE (m.day >= ${from}::date AND m.day < ${to}::date)
            OR NOT EXISTS (SELECT 1 FROM reviewer_summary_days s WHERE s.day = m.day)
        RETURNING m.day
      )
      SELECT DISTINCT x.day::text AS day FROM (
        SELECT t.day FROM taken t WHERE t.day >= ${from}::date AND t.day < ${to}::date
        UNION ALL
        SELECT d.day::date FROM generate_series(${from}::date, ${to}::date - 1, interval '1 day') AS d(day)
         WHERE NOT EXISTS (SELECT 1 FROM reviewer_summary_days s WHERE s.day = d.day::date)
      ) x`;
    if (stale.length === 0) return 0;
    const days = stale.map((row) => row.day);
    await tx.$executeRaw`DELETE FROM reviewer_daily_summaries WHERE day = ANY(${days}::date[])`;
    await tx.$executeRaw(recomputeReviewerDaysSql(days));
    await tx.$executeRaw`
      INSERT INTO reviewer_summary_days (day, computed_at) SELECT d, now() FROM unnest(${days}::date[]) AS d
      ON CONFLICT (day) DO UPDATE SET computed_at = EXCLUDED.computed_at`;
    return days.length;
  }, REFRESH_TRANSACTION);
}

function recomputeReviewerDaysSql(days: string[]): Prisma.Sql {
  return Prisma.sql`
    WITH days AS (SELECT d AS day FROM unnest(${days}::date[]) AS d),
    first AS MATERIALIZED (
      -- Each outcome's alert by its primary key. LIMIT 1 keeps the lookup per row: as a plain join
      -- the planner hashed the whole alerts table (a sequential read of 1,000,000 rows) to meet the
      -- day's outcomes (npm run bench -- --scale 1000000 --explain).
      SELECT o.reviewer_id, d.day, o.alert_id, o.outcome, o.handling_seconds, a.probability, a.calibrated
        FROM days d
       CROSS JOIN LATERAL (
         SELECT y.* FROM outcomes y
          WHERE y.closed_at >= (d.day::timestamp AT TIME ZONE 'UTC') AND y.closed_at < ((d.day + 1)::timestamp AT TIME ZONE 'UTC')
            AND y.review_round = 1
         OFFSET 0) o
       CROSS JOIN LATERAL (SELECT x.probability, x.calibrated FROM alerts x WHERE x.id = o.alert_id LIMIT 1) a
    ),
    -- Only an alert cleared legitimate can be a false clear, so only those need their label.
    ext AS (${latestExternalLabels(Prisma.sql`SELECT alert_id FROM first WHERE outcome = 'legitimate'`)}),
    first_reviews AS (
      SELECT f.reviewer_id, f.day,
             count(*) AS closed,
             count(*) FILTER (WHERE f.outcome = 'confirmed_fraud') AS fraud,
             count(*) FILTER (WHERE f.outcome = 'legitimate') AS legitimate,
             count(*) FILTER (WHERE f.outcome = 'inconclusive') AS inconclusive,
             count(f.probability) AS with_probability,
             count(f.probability) FILTER (WHERE f.outcome = 'confirmed_fraud') AS fraud_with_probability,
             sum(f.probability) AS expected_fraud,
             count(f.probability) FILTER (WHERE f.calibrated) AS calibrated,
             count(*) FILTER (WHERE f.outcome = 'legitimate' AND ext.label = 'fraud') AS false_clears,
             array_agg(f.handling_seconds ORDER BY f.handling_seconds) AS handling_seconds
        FROM first f
        LEFT JOIN ext ON ext.alert_id = f.alert_id
       GROUP BY f.reviewer_id, f.day
    ),
    pair_counts AS (
      SELECT f.reviewer_id, f.day, array_position(${[...OUTCOME_ORDER]}::text[], f.outcome) AS i,
             array_position(${[...OUTCOME_ORDER]}::text[], s.outcome) AS j, count(*) AS n
        FROM first f
        JOIN outcomes s ON s.alert_id = f.alert_id AND s.review_round = 2
       GROUP BY 1, 2, 3, 4
    ),
    pairs AS (
      SELECT r.reviewer_id, r.day, array_agg(coalesce(p.n, 0)::int ORDER BY g.cell) AS cells
        FROM (SELECT DISTINCT reviewer_id, day FROM pair_counts) r
       CROSS JOIN generate_series(0, 8) AS g(cell)
        LEFT JOIN pair_counts p ON p.reviewer_id = r.reviewer_id AND p.day = r.day AND (p.i - 1) * 3 + (p.j - 1) = g.cell
       GROUP BY r.reviewer_id, r.day
    ),
    second_reviews AS (
      SELECT o.reviewer_id, d.day, count(*) AS n
        FROM days d
       CROSS JOIN LATERAL (
         SELECT y.reviewer_id FROM outcomes y
          WHERE y.closed_at >= (d.day::timestamp AT TIME ZONE 'UTC') AND y.closed_at < ((d.day + 1)::timestamp AT TIME ZONE 'UTC')
            AND y.review_round = 2
         OFFSET 0) o
       GROUP BY 1, 2
    ),
    keys AS (
      SELECT reviewer_id, day FROM first_reviews UNION SELECT reviewer_id, day FROM second_reviews
    )
    INSERT INTO reviewer_daily_summaries (
      reviewer_id, day, closed, fraud, legitimate, inconclusive, with_probability, fraud_with_probability,
      expected_fraud, calibrated, false_clears, handling_seconds, agreement_pairs, second_reviews)
    SELECT k.reviewer_id, k.day, coalesce(f.closed, 0), coalesce(f.fraud, 0), coalesce(f.legitimate, 0),
           coalesce(f.inconclusive, 0), coalesce(f.with_probability, 0), coalesce(f.fraud_with_probability, 0),
           f.expected_fraud, coalesce(f.calibrated, 0), coalesce(f.false_clears, 0), coalesce(f.handling_seconds, '{}'),
           coalesce(p.cells, '{0,0,0,0,0,0,0,0,0}'), coalesce(s.n, 0)
      FROM keys k
      LEFT JOIN first_reviews f ON f.reviewer_id = k.reviewer_id AND f.day = k.day
      LEFT JOIN pairs p ON p.reviewer_id = k.reviewer_id AND p.day = k.day
      LEFT JOIN second_reviews s ON s.reviewer_id = k.reviewer_id AND s.day = k.day`;
}
