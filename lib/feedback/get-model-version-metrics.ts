// How each model version really performs over a window (DESIGN.md §4 Feedback-loop metrics): the
// numbers of the Model health screen and of GET /api/v1/metrics/model-versions.
//
// Counting happens in PostgreSQL: a handful of GROUP BY queries over the window's alerts return a few
// rows per model version (per bucket, per calibration bin, per day). lib/metrics then turns counts
// into rates with Wilson intervals. Two measures need the scores themselves — ROC AUC / average
// precision (ranks) and PSI (reference quantiles) — and for those each model version sends back
// about SCORE_SAMPLE_CAP scores per list at most: all of them when there are fewer, otherwise a
// Bernoulli sample drawn by a hash of the alert id (so the same data always gives the same sample).
// The answer says when a list was sampled and how long the whole list was.
//
// Scope of the alerted-range numbers: alerts received in the window, below-the-line samples left out
// (they are drawn on purpose from below the alert threshold at a known rate π and would distort
// precision, calibration, ranking and drift of the alerted population). The samples are reported
// apart, where every estimate over them weights each by 1/π (Horvitz–Thompson, in Hájek's ratio form).
import "server-only";
import type { DbOrTx } from "@/lib/db/client";
import { Prisma } from "@/lib/generated/prisma/client";
import { AppError } from "@/lib/errors";
import { getSettings } from "@/lib/settings/get-settings";
import {
  averagePrecision,
  populationStabilityIndex,
  PSI_ACT,
  PSI_WATCH,
  rate,
  realizedPrecision,
  rocAuc,
} from "@/lib/metrics";
import { CALIBRATION_BINS, calibrationInnerEdges, expectedCalibrationErrorOfBins, reliabilityBinsFromSums, type BinSums } from "@/lib/feedback/calibration-bins";
import { groundTruthExpression, latestExternalLabels } from "@/lib/feedback/ground-truth-sql";
import { bucketsOf, DAY_MS, resolveMetricsWindow, windowJson, type Bucket, type MetricsWindow } from "@/lib/feedback/metrics-window";
import type { ModelVersionMetrics, ModelVersionMetricsAnswer, ModelVersionMetricsQuery, WindowQuery } from "@/lib/feedback/schemas";

/**
 * A bucket of the drift series gets its own PSI only with at least this many scores. Two samples of
 * the same distribution still give PSI ≈ (bins − 1)·(1/n + 1/m) on average (PSI is the symmetric
 * Kullback–Leibler divergence, whose sampling distribution is close to a scaled χ² with bins − 1
 * degrees of freedom; from memory): 9/85 ≈ 0.11 for a day of 85 alerts, past the watch line with no
 * drift at all. From 500 scores the noise stays under about 0.02. Our rule, not a published one.
 */
export const MIN_SCORES_FOR_PSI_BUCKET = 500;

/** Score list length one model version sends back for AUC/AP, and per drift window for PSI, before sampling. */
export const SCORE_SAMPLE_CAP = 20_000;

export interface GetModelVersionMetricsOptions {
  query: WindowQuery & ModelVersionMetricsQuery;
  now: Date;
  /** For tests and benchmarks; defaults to SCORE_SAMPLE_CAP. */
  scoreSampleCap?: number;
}

interface VersionRow {
  id: string;
  modelName: string;
  version: string;
  scoreKind: "probability" | "anomaly";
  alertThreshold: number;
  active: boolean;
}

interface SummaryRow {
  modelVersionId: string;
  belowTheLine: boolean;
  received: number;
  closed: number;
  mixFraud: number;
  mixLegitimate: number;
  mixInconclusive: number;
  truthFraud: number;
  truthLegitimate: number;
  truthUnknown: number;
  overturned: number;
  calibrationAlerts: number;
  calibratedAlerts: number;
  brierSum: number | null;
  weightAll: number | null;
  weightResolved: number | null;
  weightFraud: number | null;
}

interface SeriesRow {
  modelVersionId: string;
  /** Start of the bucket, as PostgreSQL writes a timestamptz in JSON. */
  bucketFrom: string;
  received: number;
  closed: number;
  truthFraud: number;
  truthLegitimate: number;
  truthUnknown: number;
}

interface BinRow extends BinSums {
  modelVersionId: string;
}

interface ScoreListRow {
  modelVersionId: string;
  total: number;
  scores: number[];
  labels: number[];
}

interface PrecisionAtKRow {
  modelVersionId: string;
  dayFrom: string;
  considered: number;
  fraud: number;
  resolved: number;
}

/** What the main statement returns: one row of JSON arrays, one per aggregation. */
interface WindowAggregates {
  summaries: SummaryRow[];
  series: SeriesRow[];
  bins: BinRow[];
  scoreLists: ScoreListRow[];
  topK: PrecisionAtKRow[];
}

interface DriftRow {
  modelVersionId: string;
  current: boolean;
  total: number;
  scores: number[];
  days: number[];
}

/**
 * Keeps every row when the list has at most `cap` entries, otherwise a Bernoulli sample of rate
 * cap / total decided by a hash of the alert id: no sort, the same rows on every call, and a size
 * that varies around `cap` by about √cap (±1% at 20,000).
 */
function sampled(id: Prisma.Sql, total: Prisma.Sql, cap: number): Prisma.Sql {
  return Prisma.sql`(${total} <= ${cap} OR (hashtextextended(${id}::text, 0) & 1048575) < 1048576::float8 * ${cap} / ${total})`;
}

function weighted(successes: number, trials: number, alerts: number) {
  return { value: trials > 0 ? successes / trials : null, weightedSuccesses: successes, weightedTrials: trials, alerts };
}

function finiteOrNull(value: number): number | null {
  return Number.isFinite(value) ? value : null;
}

async function findModelVersions(db: DbOrTx, window: MetricsWindow, ids: string[]): Promise<VersionRow[]> {
  const condition =
    ids.length > 0
      ? Prisma.sql`m.id = ANY(${ids}::uuid[])`
      : Prisma.sql`(m.active OR EXISTS (SELECT 1 FROM alerts a WHERE a.model_version_id = m.id
                                          AND a.received_at >= ${window.from} AND a.received_at < ${window.to}))`;
  const rows = await db.$queryRaw<VersionRow[]>(Prisma.sql`
    SELECT m.id, m.model_name AS "modelName", m.version, m.score_kind AS "scoreKind",
           m.alert_threshold AS "alertThreshold", m.active
      FROM model_versions m
     WHERE ${condition}
     ORDER BY m.model_name, m.created_at, m.version`);
  const missing = ids.filter((id) => !rows.some((row) => row.id === id));
  if (missing.length > 0) {
    throw new AppError("not_found", `No model version with id ${missing.join(", ")}.`, [
      { path: "modelVersionId", message: `unknown model version id ${missing.join(", ")}` },
    ]);
  }
  // Keep the caller's order when ids were given: champion first, then challenger.
  return ids.length > 0 ? ids.map((id) => rows.find((row) => row.id === id)!) : rows;
}

export async function getModelVersionMetrics(db: DbOrTx, options: GetModelVersionMetricsOptions): Promise<ModelVersionMetricsAnswer> {
  const { query, now } = options;
  const cap = options.scoreSampleCap ?? SCORE_SAMPLE_CAP;
  const settings = await getSettings(db);
  const window = resolveMetricsWindow(query, { now, labelMaturityDays: settings.metrics.labelMaturityDays });
  const versions = await findModelVersions(db, window, [...new Set(query.modelVersionId)]);
  const ids = versions.map((version) => version.id);
  const k = settings.metrics.dailyCapacity;

  const driftCurrentFrom = new Date(window.to.getTime() - query.driftCurrentDays * DAY_MS);
  const driftReferenceFrom = new Date(driftCurrentFrom.getTime() - query.driftReferenceDays * DAY_MS);
  const seriesBuckets = bucketsOf(window, window.bucket);
  const days = bucketsOf(window, "day");
  const driftSpan = { from: driftCurrentFrom, to: window.to, matureBefore: window.matureBefore };

  const truth = groundTruthExpression(Prisma.sql`a.final_outcome`, Prisma.sql`ext.label`);
  // width_bucket counts the thresholds ≤ its operand; on negated edges that is the count of edges ≥ p,
  // so (bins − 1) minus it is the count of edges < p: the (lower, upper] bin lib/metrics uses.
  const negatedEdges = calibrationInnerEdges().map((edge) => -edge).reverse();
  const step = window.bucket === "day" ? "1 day" : "7 days";
  const dayList = days.map((day) => day.from.toISOString().slice(0, 10));
  const topTruth = groundTruthExpression(Prisma.sql`top.final_outcome`, Prisma.sql`ext.label`);

  // One statement: the window's alerts and their ground truth are read once (`t`), then aggregated
  // five ways. Each aggregation comes back as a JSON array of a few rows per model version.
  const [aggregateRows, drift] = await Promise.all([
    db.$queryRaw<[WindowAggregates]>(Prisma.sql`
      WITH a AS MATERIALIZED (
        SELECT a.id, a.model_version_id, a.received_at, a.below_the_line, a.inclusion_probability, a.state, a.final_outcome,
               a.probability, a.calibrated, a.score, a.priority
          FROM alerts a
         WHERE a.model_version_id = ANY(${ids}::uuid[]) AND a.received_at >= ${window.from} AND a.received_at < ${window.to}
      ),
      -- The labels of the window's alerts, looked up from the rows just read: naming the window
      -- again here made the planner read the alerts a second time (a seventh of the statement).
      ext AS (${latestExternalLabels(Prisma.sql`SELECT id FROM a`)}),
      t AS MATERIALIZED (
        SELECT a.id, a.model_version_id AS mv, a.received_at, a.below_the_line AS btl, a.inclusion_probability AS pi,
               a.state = 'closed' AS closed, a.final_outcome, a.probability AS p, a.calibrated, a.score, a.priority,
               ext.label, ${truth} AS y
          FROM a
          LEFT JOIN ext ON ext.alert_id = a.id
      ),
      summaries AS (
        SELECT mv AS "modelVersionId", btl AS "belowTheLine",
               count(*) AS received,
               count(*) FILTER (WHERE closed) AS closed,
               count(*) FILTER (WHERE final_outcome = 'confirmed_fraud') AS "mixFraud",
               count(*) FILTER (WHERE final_outcome = 'legitimate') AS "mixLegitimate",
               count(*) FILTER (WHERE final_outcome = 'inconclusive') AS "mixInconclusive",
               count(*) FILTER (WHERE closed AND y = 1) AS "truthFraud",
               count(*) FILTER (WHERE closed AND y = 0) AS "truthLegitimate",
               count(*) FILTER (WHERE closed AND y IS NULL) AS "truthUnknown",
               count(*) FILTER (WHERE closed AND ((label = 'fraud' AND final_outcome = 'legitimate')
                                               OR (label = 'genuine' AND final_outcome = 'confirmed_fraud'))) AS overturned,
               count(*) FILTER (WHERE closed AND y IS NOT NULL AND p IS NOT NULL) AS "calibrationAlerts",
               count(*) FILTER (WHERE closed AND y IS NOT NULL AND p IS NOT NULL AND calibrated) AS "calibratedAlerts",
               sum((p - y) ^ 2) FILTER (WHERE closed AND y IS NOT NULL) AS "brierSum",
               sum(1 / pi) AS "weightAll",
               sum(1 / pi) FILTER (WHERE closed AND y IS NOT NULL) AS "weightResolved",
               sum(1 / pi) FILTER (WHERE closed AND y = 1) AS "weightFraud"
          FROM t GROUP BY mv, btl
      ),
      series AS (
        SELECT mv AS "modelVersionId", date_bin(${step}::interval, received_at, ${window.from}::timestamptz) AS "bucketFrom",
               count(*) AS received,
               count(*) FILTER (WHERE closed) AS closed,
               count(*) FILTER (WHERE closed AND y = 1) AS "truthFraud",
               count(*) FILTER (WHERE closed AND y = 0) AS "truthLegitimate",
               count(*) FILTER (WHERE closed AND y IS NULL) AS "truthUnknown"
          FROM t WHERE NOT btl GROUP BY 1, 2
      ),
      bins AS (
        SELECT mv AS "modelVersionId", ${CALIBRATION_BINS - 1} - width_bucket(-p, ${negatedEdges}::float8[]) AS bin,
               count(*) AS n, sum(p) AS "sumP", sum(y) AS "sumY"
          FROM t WHERE NOT btl AND closed AND p IS NOT NULL AND y IS NOT NULL GROUP BY 1, 2
      ),
      labelled AS (SELECT mv, count(*) AS total FROM t WHERE NOT btl AND closed AND y IS NOT NULL GROUP BY mv),
      score_lists AS (
        SELECT t.mv AS "modelVersionId", max(l.total) AS total, array_agg(t.score ORDER BY t.score DESC, t.id) AS scores,
               array_agg(t.y ORDER BY t.score DESC, t.id) AS labels
          FROM t JOIN labelled l ON l.mv = t.mv
         WHERE NOT t.btl AND t.closed AND t.y IS NOT NULL AND ${sampled(Prisma.sql`t.id`, Prisma.sql`l.total`, cap)}
         GROUP BY 1
      ),
      -- The k highest-priority alerts of each version and UTC day (windows are whole UTC days), read
      -- from alerts_daily_priority_idx in the queue's order, k entries per (version, day).
      top_k AS (
        SELECT m.mv AS "modelVersionId", (d.day::timestamp AT TIME ZONE 'UTC') AS "dayFrom", count(*) AS considered,
               count(*) FILTER (WHERE ${topTruth} = 1) AS fraud, count(${topTruth}) AS resolved
          FROM unnest(${ids}::uuid[]) AS m(mv)
         CROSS JOIN unnest(${dayList}::date[]) AS d(day)
         CROSS JOIN LATERAL (
           SELECT x.id, x.final_outcome FROM alerts x
            WHERE x.model_version_id = m.mv AND (x.received_at AT TIME ZONE 'UTC')::date = d.day AND NOT x.below_the_line
            ORDER BY x.priority DESC NULLS LAST, x.received_at, x.id
            LIMIT ${k}) top
          LEFT JOIN ext ON ext.alert_id = top.id
         GROUP BY 1, 2
      )
      SELECT (SELECT coalesce(json_agg(summaries), '[]') FROM summaries) AS summaries,
             (SELECT coalesce(json_agg(series), '[]') FROM series) AS series,
             (SELECT coalesce(json_agg(bins), '[]') FROM bins) AS bins,
             (SELECT coalesce(json_agg(score_lists), '[]') FROM score_lists) AS "scoreLists",
             (SELECT coalesce(json_agg(top_k), '[]') FROM top_k) AS "topK"`),
    // Drift reads a different span (reference and current windows) and needs no labels.
    db.$queryRaw<DriftRow[]>(Prisma.sql`
      WITH counts AS (
        SELECT a.model_version_id AS mv, a.received_at >= ${driftCurrentFrom} AS current, count(*) AS total
          FROM alerts a
         WHERE a.model_version_id = ANY(${ids}::uuid[]) AND NOT a.below_the_line
           AND a.received_at >= ${driftReferenceFrom} AND a.received_at < ${window.to}
         GROUP BY 1, 2
      )
      SELECT c.mv AS "modelVersionId", c.current, c.total::int AS total, array_agg(a.score ORDER BY a.score, a.id) AS scores,
             array_agg(floor(extract(epoch FROM a.received_at - ${driftCurrentFrom}::timestamptz) / 86400)::int ORDER BY a.score, a.id) AS days
        FROM alerts a
        JOIN counts c ON c.mv = a.model_version_id AND c.current = (a.received_at >= ${driftCurrentFrom})
       WHERE a.model_version_id = ANY(${ids}::uuid[]) AND NOT a.below_the_line
         AND a.received_at >= ${driftReferenceFrom} AND a.received_at < ${window.to}
         AND ${sampled(Prisma.sql`a.id`, Prisma.sql`c.total`, cap)}
       GROUP BY 1, 2, 3`),
  ]);
  const { summaries, series, bins, scoreLists, topK } = aggregateRows[0];
  // Score lists arrive sorted (AUC/AP lists by score descending, drift lists ascending): lib/metrics
  // sorts its own copy, and a sorted input makes that sort linear, which matters for the PSI of each bucket.
  const startOf = (text: string) => new Date(text).getTime();

  const modelVersions: ModelVersionMetrics[] = versions.map((version) => {
    const mine = <T extends { modelVersionId: string }>(rows: T[]) => rows.filter((row) => row.modelVersionId === version.id);
    const alerted = summaries.find((row) => row.modelVersionId === version.id && !row.belowTheLine);
    const below = summaries.find((row) => row.modelVersionId === version.id && row.belowTheLine);

    const precision = realizedPrecision({
      confirmedFraud: alerted?.truthFraud ?? 0,
      legitimate: alerted?.truthLegitimate ?? 0,
      inconclusive: alerted?.truthUnknown ?? 0,
    });

    const seriesRows = mine(series);
    const seriesPoints = seriesBuckets.map((bucket) => {
      const row = seriesRows.find((candidate) => startOf(candidate.bucketFrom) === bucket.from.getTime());
      return {
        ...bucketJson(bucket),
        received: row?.received ?? 0,
        closed: row?.closed ?? 0,
        realizedPrecision: realizedPrecision({
          confirmedFraud: row?.truthFraud ?? 0,
          legitimate: row?.truthLegitimate ?? 0,
          inconclusive: row?.truthUnknown ?? 0,
        }),
      };
    });

    const reliability = reliabilityBinsFromSums(mine(bins));
    const calibrationAlerts = alerted?.calibrationAlerts ?? 0;

    const list = mine(scoreLists)[0];
    const scores = list?.scores ?? [];
    const labels = list?.labels ?? [];
    const positives = labels.filter((y) => y === 1).length;

    const driftRows = mine(drift);
    const reference = driftRows.find((row) => !row.current);
    const current = driftRows.find((row) => row.current);
    const stability = reference && current ? populationStabilityIndex(reference.scores, current.scores) : null;
    // Days when a typical day has enough scores for its own PSI, otherwise weeks.
    const driftStep = (current?.scores.length ?? 0) >= MIN_SCORES_FOR_PSI_BUCKET * query.driftCurrentDays ? "day" : "week";
    const driftBuckets = bucketsOf(driftSpan, driftStep);
    const scoresByBucket = driftBuckets.map(() => [] as number[]);
    current?.scores.forEach((score, i) => scoresByBucket[Math.floor(current.days[i] / (driftStep === "day" ? 1 : 7))]?.push(score));
    const driftSeries = driftBuckets.map((bucket, index) => {
      const bucketScores = scoresByBucket[index];
      return {
        ...bucketJson(bucket),
        scores: bucketScores.length,
        psi: reference && bucketScores.length >= MIN_SCORES_FOR_PSI_BUCKET ? populationStabilityIndex(reference.scores, bucketScores).psi : null,
      };
    });

    const topKRows = mine(topK);
    const topKDays = days.map((day) => {
      const row = topKRows.find((candidate) => startOf(candidate.dayFrom) === day.from.getTime());
      return { ...bucketJson(day), considered: row?.considered ?? 0, resolved: row?.resolved ?? 0, precision: rate(row?.fraud ?? 0, row?.considered ?? 0) };
    });
    const pooledFraud = topKRows.reduce((sum, row) => sum + row.fraud, 0);
    const pooledConsidered = topKRows.reduce((sum, row) => sum + row.considered, 0);

    const alertedResolved = (alerted?.truthFraud ?? 0) + (alerted?.truthLegitimate ?? 0);
    const belowResolved = (below?.truthFraud ?? 0) + (below?.truthLegitimate ?? 0);
    const weightResolved = below?.weightResolved ?? 0;
    const weightFraud = below?.weightFraud ?? 0;

    return {
      modelVersion: version,
      received: alerted?.received ?? 0,
      closed: alerted?.closed ?? 0,
      outcomeMix: {
        confirmedFraud: alerted?.mixFraud ?? 0,
        legitimate: alerted?.mixLegitimate ?? 0,
        inconclusive: alerted?.mixInconclusive ?? 0,
      },
      overturnedByLabel: alerted?.overturned ?? 0,
      realizedPrecision: precision,
      series: seriesPoints,
      calibration: {
        alerts: calibrationAlerts,
        calibratedAlerts: alerted?.calibratedAlerts ?? 0,
        bins: reliability,
        brierScore: calibrationAlerts > 0 && alerted?.brierSum != null ? alerted.brierSum / calibrationAlerts : null,
        expectedCalibrationError: expectedCalibrationErrorOfBins(reliability),
      },
      discrimination: {
        measuredOnReviewedAlertsOnly: true as const,
        rocAuc: rocAuc(scores, labels),
        averagePrecision: averagePrecision(scores, labels),
        positives,
        negatives: labels.length - positives,
        sample: { used: scores.length, total: list?.total ?? 0, sampled: (list?.total ?? 0) > scores.length },
      },
      drift: {
        reference: {
          from: driftReferenceFrom.toISOString(),
          to: driftCurrentFrom.toISOString(),
          sample: { used: reference?.scores.length ?? 0, total: reference?.total ?? 0, sampled: (reference?.total ?? 0) > (reference?.scores.length ?? 0) },
        },
        current: {
          from: driftCurrentFrom.toISOString(),
          to: window.to.toISOString(),
          sample: { used: current?.scores.length ?? 0, total: current?.total ?? 0, sampled: (current?.total ?? 0) > (current?.scores.length ?? 0) },
        },
        psi: stability?.psi ?? null,
        level: stability?.level ?? null,
        watchLine: PSI_WATCH,
        actLine: PSI_ACT,
        bins: (stability?.bins ?? []).map((bin) => ({ ...bin, lower: finiteOrNull(bin.lower), upper: finiteOrNull(bin.upper) })),
        step: driftStep,
        series: driftSeries,
      },
      precisionAtK: { k, overall: rate(pooledFraud, pooledConsidered), days: topKDays },
      belowTheLine: {
        sampled: below?.received ?? 0,
        resolved: belowResolved,
        sampleFraudRate: rate(below?.truthFraud ?? 0, belowResolved),
        represents: below?.weightAll ?? 0,
        weightedFraudRate: weighted(weightFraud, weightResolved, belowResolved),
        weightedPopulationFraudRate: weighted(
          (alerted?.truthFraud ?? 0) + weightFraud,
          alertedResolved + weightResolved,
          alertedResolved + belowResolved,
        ),
      },
    };
  });

  return { window: windowJson(window), generatedAt: now.toISOString(), modelVersions };
}

function bucketJson(bucket: Bucket): { from: string; to: string; mature: boolean } {
  return { from: bucket.from.toISOString(), to: bucket.to.toISOString(), mature: bucket.mature };
}
